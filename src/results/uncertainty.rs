//! P50/P90: how much energy a layout delivers in a median year and in a poor one.
//!
//! The simulation of one typical year gives the P50 (the median expectation, taking the
//! typical year as the median). Two uncertainties spread the outcome around it, treated as
//! independent and normal and combined in quadrature: the year-to-year variability of the
//! solar resource, and the uncertainty of the model chain itself (weather data, sky model,
//! temperatures, electrical model). The P90 is the energy exceeded with 90 % probability:
//! P90 = P50 − z₀.₉ · σ · P50. Over ten years the resource variability of the ten-year mean
//! shrinks by √10 while the model uncertainty (a bias, the same every year) does not.
//! When the weather holds several whole years, the empirical spread of their annual sums can
//! stand in for the default variability.
//!
//! Pure maths (statrs for the normal quantile); it does not simulate, read files or decide
//! which inputs apply. It does not model skewed distributions, degradation or availability
//! losses, and the normal approximation says nothing about a single exceptionally dull year.
//! The method is written out in `notebooks-free-docs/method-p90.md`.

use statrs::distribution::{ContinuousCDF, Normal};

pub use crate::input::uncertainty::{
    P90Inputs, DEFAULT_MODEL_FRAC, DEFAULT_VARIABILITY_FRAC, FRACTION_RANGE,
};

/// P50 and the P90 values, in the unit of the P50 given (kWh in reports).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct P90 {
    /// The median expectation (the input).
    pub p50: f64,
    /// Exceeded with 90 % probability in any single year.
    pub p90_1y: f64,
    /// Exceeded with 90 % probability by the mean of ten years.
    pub p90_10y: f64,
}

/// The one-sided 90 % quantile of the standard normal distribution, z₀.₉ ≈ 1.2816.
///
/// # Source
/// Inverse of the standard normal CDF (statrs); tabulated as 1.2816 in standard normal tables
/// (e.g. Abramowitz & Stegun 1964, Table 26.5).
pub fn z_90() -> f64 {
    Normal::standard().inverse_cdf(0.9)
}

/// P90 values from a P50 and the two uncertainties.
///
/// # Formula
/// P90₁ = P50 · (1 − z₀.₉ σ₁), P90₁₀ = P50 · (1 − z₀.₉ σ₁₀), with σ₁ and σ₁₀ from
/// [`P90Inputs::sigma_1y_frac`] and [`P90Inputs::sigma_10y_frac`], floored at 0.
///
/// # Source
/// Normal approximation with independent uncertainties combined in quadrature (JCGM 100:2008,
/// the GUM, §5.1 for uncorrelated inputs); the P50/P90 convention of energy-yield reports.
///
/// # Validity
/// `p50` ≥ 0 from a simulation; inputs validated by [`P90Inputs::new`] (σ ≤ 0.71, so the
/// floor only matters at the extreme of the range).
pub fn p50_p90(p50: f64, inputs: &P90Inputs) -> P90 {
    let z = z_90();
    P90 {
        p50,
        p90_1y: (p50 * (1.0 - z * inputs.sigma_1y_frac())).max(0.0),
        p90_10y: (p50 * (1.0 - z * inputs.sigma_10y_frac())).max(0.0),
    }
}

/// The spread of several whole years' annual totals.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct YearSpread {
    pub years: usize,
    pub mean: f64,
    /// Sample standard deviation (n − 1) over the mean, fraction.
    pub sd_frac: f64,
}

/// Empirical year-to-year variability from per-year totals (of irradiation or of simulated
/// energy, same unit for all).
///
/// # Formula
/// mean = Σx/n, s = √(Σ(x − mean)² / (n − 1)), sd_frac = s / mean.
///
/// # Validity
/// `None` with fewer than two years, a non-finite total, or a mean ≤ 0. With few years the
/// estimate is itself uncertain (with n = 5 its own relative standard error is about 35 %);
/// the report should say how many years it rests on.
pub fn empirical_variability(annual_totals: &[f64]) -> Option<YearSpread> {
    let n = annual_totals.len();
    if n < 2 || annual_totals.iter().any(|x| !x.is_finite()) {
        return None;
    }
    let mean = annual_totals.iter().sum::<f64>() / n as f64;
    if mean <= 0.0 {
        return None;
    }
    let var = annual_totals
        .iter()
        .map(|x| (x - mean).powi(2))
        .sum::<f64>()
        / (n - 1) as f64;
    Some(YearSpread {
        years: n,
        mean,
        sd_frac: var.sqrt() / mean,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn check_p90(p50: f64, var: f64, model: f64, expected_1y: f64, expected_10y: f64) {
        let r = p50_p90(p50, &P90Inputs::new(var, model).unwrap());
        assert_eq!(r.p50, p50);
        assert!(
            (r.p90_1y - expected_1y).abs() <= 0.005,
            "1y {} vs {expected_1y}",
            r.p90_1y
        );
        assert!(
            (r.p90_10y - expected_10y).abs() <= 0.005,
            "10y {} vs {expected_10y}",
            r.p90_10y
        );
    }

    #[test]
    fn normal_quantile_matches_the_published_table() {
        // Source: standard normal table (Abramowitz & Stegun 1964, Table 26.5): z(0.90) =
        // 1.2816 to 4 decimals, tolerance half a unit in the last place.
        assert!((z_90() - 1.2816).abs() <= 5e-5, "{}", z_90());
        // Source: same table, z(0.10) = −1.2816 (symmetry); statrs gives −1.281552.
        assert!((Normal::standard().inverse_cdf(0.1) + 1.2816).abs() <= 5e-5);
    }

    #[test]
    fn p90_values() {
        // Source: recomputed from the formula (regression guard), σ₁ = √(0.05² + 0.05²) =
        // 0.0707107, σ₁₀ = √(0.05²/10 + 0.05²) = 0.0524404, z = 1.2815516:
        // 1000·(1 − 0.0906194) = 909.381, 1000·(1 − 0.0672051) = 932.795 (to 0.005).
        check_p90(1000.0, 0.05, 0.05, 909.381, 932.795);
        // Source: recomputed from the formula (regression guard): no uncertainty, P90 = P50.
        check_p90(250.0, 0.0, 0.0, 250.0, 250.0);
        // Source: recomputed from the formula (regression guard): resource only, 4.5 %:
        // 1 − 1.2815516·0.045 = 0.9423302; ten years 1 − 1.2815516·0.045/√10 = 0.9817632.
        check_p90(100.0, 0.045, 0.0, 94.23302, 98.17632);
    }

    #[test]
    fn ten_year_p90_is_never_below_one_year_p90() {
        // Source: common practice, no source: averaging years can only narrow the spread.
        for var in [0.0, 0.02, 0.05, 0.1, 0.3] {
            for model in [0.0, 0.03, 0.1, 0.5] {
                let r = p50_p90(500.0, &P90Inputs::new(var, model).unwrap());
                assert!(r.p90_10y >= r.p90_1y - 1e-9 && r.p90_1y <= r.p50);
            }
        }
    }

    #[test]
    fn inputs_are_checked() {
        assert!(P90Inputs::new(-0.01, 0.05).is_err());
        assert!(P90Inputs::new(0.05, f64::NAN).is_err());
        let msg = P90Inputs::new(5.0, 0.05).unwrap_err();
        assert!(
            msg.starts_with("variability_frac = 5 is outside 0 to 0.5"),
            "{msg}"
        );
        assert_eq!(P90Inputs::new(0.045, 0.05).unwrap(), P90Inputs::TYPICAL);
    }

    #[test]
    fn empirical_spread_of_annual_sums() {
        // Source: recomputed by hand (regression guard): 90, 100, 110 → mean 100,
        // s = √((100 + 0 + 100)/2) = 10, 10 %.
        let s = empirical_variability(&[90.0, 100.0, 110.0]).unwrap();
        assert_eq!(s.years, 3);
        assert!((s.mean - 100.0).abs() < 1e-12);
        assert!((s.sd_frac - 0.1).abs() < 1e-12);
        assert!(empirical_variability(&[100.0]).is_none());
        assert!(empirical_variability(&[0.0, 0.0]).is_none());
        assert!(empirical_variability(&[1.0, f64::NAN]).is_none());
    }
}
