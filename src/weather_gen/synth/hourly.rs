//! Hourly clearness inside a day: the TAG model of Aguiar & Collares-Pereira 1992
//! (time-dependent, autoregressive, Gaussian), the water-filling fit of hours to a total
//! under clear-sky caps, and steps 2–3 of the synthesis that make the year's hourly global
//! irradiance from the daily clearness.
//!
//! It deliberately neither chooses the days' clearness (`daily.rs`) nor splits beam from
//! diffuse or rounds (`assemble.rs`).

use rand::distr::Distribution as _;
use rand::rngs::StdRng;
use statrs::distribution::Normal;

use super::textbook_sun::HourSun;

/// No synthesized hour exceeds the Haurwitz clear-sky irradiance by more than this fraction
/// (before rounding to 0.1 W/m²).
///
/// # Source
/// Common practice, no source: Haurwitz has no elevation or turbidity term, so it is low for
/// dry, high or very clean air, and hourly means under broken cloud can exceed the clear sky
/// (cloud-edge enhancement). 10 % covers both without allowing absurd hours.
pub const CLEAR_SKY_MARGIN_FRAC: f64 = 0.10;

/// Redraws of one hour's TAG innovation before the clearness is clamped to its bounds.
const TAG_REDRAWS: usize = 20;

/// Parameters of the TAG model for one day of clearness index Kt.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TagParams {
    /// Lag-one autocorrelation φ₁ of the normalised hourly deviations.
    pub phi: f64,
    pub lambda: f64,
    pub eta: f64,
    pub kappa: f64,
    /// Scale A and slope B of the standard deviation.
    pub a: f64,
    pub b: f64,
}

/// TAG parameters for a day of clearness index `kt_day`.
///
/// # Formula
/// φ₁ = 0.38 + 0.06 cos(7.4 Kt − 2.5);
/// λ = −0.19 + 1.12 Kt + 0.24 e^(−8 Kt); η = 0.32 − 1.6 (Kt − 0.5)²;
/// κ = 0.19 + 2.27 Kt² − 2.51 Kt³;
/// A = 0.14 e^(−20 (Kt − 0.35)²); B = 3 (Kt − 0.45)² + 16 Kt⁵.
///
/// # Source
/// Aguiar & Collares-Pereira 1992, "TAG: a time-dependent, autoregressive, Gaussian model
/// for generating synthetic hourly radiation", Solar Energy 49(3), 167–174. (One public
/// reproduction prints B with 0.16 Kt⁵; two others and the paper's behaviour — low noise
/// at noon on clear days, much more at low sun — agree on 16 Kt⁵.)
pub fn tag_params(kt_day: f64) -> TagParams {
    let k = kt_day;
    TagParams {
        phi: 0.38 + 0.06 * (7.4 * k - 2.5).cos(),
        lambda: -0.19 + 1.12 * k + 0.24 * (-8.0 * k).exp(),
        eta: 0.32 - 1.6 * (k - 0.5).powi(2),
        kappa: 0.19 + 2.27 * k * k - 2.51 * k.powi(3),
        a: 0.14 * (-20.0 * (k - 0.35).powi(2)).exp(),
        b: 3.0 * (k - 0.45).powi(2) + 16.0 * k.powi(5),
    }
}

impl TagParams {
    /// Mean hourly clearness at solar elevation h: λ + η e^(−κ / sin h).
    ///
    /// # Source
    /// Aguiar & Collares-Pereira 1992 (as [`tag_params`]).
    pub fn mean_kt(&self, sin_elevation: f64) -> f64 {
        self.lambda + self.eta * (-self.kappa / sin_elevation.max(1e-3)).exp()
    }

    /// Standard deviation of the hourly clearness at solar elevation h: A e^(B (1 − sin h)).
    ///
    /// # Source
    /// Aguiar & Collares-Pereira 1992 (as [`tag_params`]).
    pub fn sigma_kt(&self, sin_elevation: f64) -> f64 {
        self.a * (self.b * (1.0 - sin_elevation.clamp(0.0, 1.0))).exp()
    }
}

/// Scales `values` so that they sum to `target` without any exceeding its cap, keeping their
/// shape where the caps allow: values at their cap stay there and the rest is spread over
/// the others in proportion (water filling). With `target` at or above the sum of the caps
/// every value is its cap; with all values zero the caps give the shape.
pub fn fit_to_total(values: &mut [f64], caps: &[f64], target: f64) {
    if target <= 0.0 {
        values.iter_mut().for_each(|v| *v = 0.0);
        return;
    }
    let cap_total: f64 = caps.iter().sum();
    if target >= cap_total {
        values.copy_from_slice(caps);
        return;
    }
    let mut sum: f64 = values.iter().sum();
    if sum <= 0.0 {
        values.copy_from_slice(caps);
        sum = cap_total;
    }
    let f = target / sum;
    values.iter_mut().for_each(|v| *v *= f);
    for _ in 0..200 {
        let mut excess = 0.0;
        let mut free = 0.0;
        for (v, &c) in values.iter_mut().zip(caps) {
            if *v >= c {
                excess += *v - c;
                *v = c;
            } else {
                free += *v;
            }
        }
        if excess <= 1e-12 * target || free <= 0.0 {
            break;
        }
        let f = (free + excess) / free;
        for (v, &c) in values.iter_mut().zip(caps) {
            if *v < c {
                *v *= f;
            }
        }
    }
}

/// Steps 2–3 of [`synthesize`]: hourly global horizontal irradiance, W/m², before rounding.
/// Each day of clearness `daily_kt` > 0 gets TAG hours ([`tag_day`]) scaled to
/// Kt_d · H0_d, then each month to its input irradiation, all capped at
/// (1 + [`CLEAR_SKY_MARGIN_FRAC`]) · Haurwitz.
///
/// [`synthesize`]: super::synthesize
pub(super) fn hourly_ghi(
    hours: &[HourSun],
    daily_kt: &[f64],
    day_h0_wh: &[f64],
    month_days: &[usize; 12],
    ghi_kwh_m2_day: &[f64; 12],
    rng: &mut StdRng,
) -> Vec<f64> {
    let caps: Vec<f64> = hours
        .iter()
        .map(|h| (1.0 + CLEAR_SKY_MARGIN_FRAC) * h.clear_sky_w_m2)
        .collect();
    let mut ghi = vec![0.0; hours.len()];
    let standard = Normal::standard();
    for d in 0..daily_kt.len() {
        let kt_day = daily_kt[d];
        let slot = d * 24..(d + 1) * 24;
        if kt_day <= 0.0 || day_h0_wh[d] <= 0.0 {
            continue;
        }
        tag_day(
            &hours[slot.clone()],
            kt_day,
            &standard,
            rng,
            &mut ghi[slot.clone()],
        );
        fit_to_total(&mut ghi[slot.clone()], &caps[slot], kt_day * day_h0_wh[d]);
    }
    let mut first_hour = 0;
    for (&count, &h_month) in month_days.iter().zip(ghi_kwh_m2_day) {
        let slot = first_hour..first_hour + count * 24;
        first_hour = slot.end;
        fit_to_total(
            &mut ghi[slot.clone()],
            &caps[slot],
            h_month * 1000.0 * count as f64,
        );
    }
    ghi
}

/// Step 2 of [`synthesize`] for one day of clearness `kt_day`: the TAG hourly clearness of
/// each hour with extraterrestrial irradiance, redrawn up to [`TAG_REDRAWS`] times until it
/// lies between 0 and the clear sky's clearness and then clamped there, times the hour's
/// extraterrestrial irradiance, written into `ghi` (the day's hours, W/m²).
///
/// [`synthesize`]: super::synthesize
fn tag_day(hours: &[HourSun], kt_day: f64, standard: &Normal, rng: &mut StdRng, ghi: &mut [f64]) {
    let p = tag_params(kt_day);
    let innovation_sd = (1.0 - p.phi * p.phi).max(0.0).sqrt();
    let mut y: Option<f64> = None;
    for (h, g) in hours.iter().zip(ghi.iter_mut()) {
        if h.extraterrestrial_w_m2 <= 0.0 {
            continue;
        }
        let kt_clear = h.clear_sky_w_m2 / h.extraterrestrial_w_m2;
        let mean = p.mean_kt(h.cos_zenith_sunlit);
        let sigma = p.sigma_kt(h.cos_zenith_sunlit);
        let mut kt = 0.0;
        let mut y_new = 0.0;
        for _ in 0..TAG_REDRAWS {
            y_new = match y {
                None => standard.sample(rng),
                Some(prev) => p.phi * prev + innovation_sd * standard.sample(rng),
            };
            kt = mean + sigma * y_new;
            if (0.0..=kt_clear).contains(&kt) {
                break;
            }
        }
        y = Some(y_new);
        *g = kt.clamp(0.0, kt_clear) * h.extraterrestrial_w_m2;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn check_tag(kt: f64, expected: [f64; 6]) {
        let p = tag_params(kt);
        let got = [p.phi, p.lambda, p.eta, p.kappa, p.a, p.b];
        for (g, e) in got.iter().zip(expected) {
            assert!((g - e).abs() <= 5e-7, "kt {kt}: {got:?} vs {expected:?}");
        }
    }

    #[test]
    fn tag_parameters() {
        // Source: recomputed from Aguiar & Collares-Pereira 1992 (regression guard), to 6
        // decimals: φ, λ, η, κ, A, B.
        check_tag(0.5, [0.401741, 0.374396, 0.32, 0.44375, 0.089268, 0.5075]);
        check_tag(0.7, [0.326279, 0.594887, 0.256, 0.44137, 0.012081, 2.87662]);
        // Source: Aguiar & Collares-Pereira 1992 (text): clear days vary little at noon and
        // much more at low sun.
        let p = tag_params(0.7);
        assert!(p.sigma_kt(0.1) > 5.0 * p.sigma_kt(0.95));
    }

    #[test]
    fn fit_to_total_keeps_shape_and_caps() {
        // Source: recomputed from the rule (regression guard).
        let mut v = [1.0, 2.0, 3.0];
        fit_to_total(&mut v, &[10.0, 10.0, 10.0], 12.0);
        assert_eq!(v, [2.0, 4.0, 6.0]);
        let mut v = [1.0, 2.0, 3.0];
        fit_to_total(&mut v, &[10.0, 3.0, 10.0], 12.0);
        assert!((v[0] - 2.25).abs() < 1e-12 && v[1] == 3.0 && (v[2] - 6.75).abs() < 1e-12);
        let mut v = [1.0, 2.0];
        fit_to_total(&mut v, &[3.0, 4.0], 100.0);
        assert_eq!(v, [3.0, 4.0]);
        let mut v = [0.0, 0.0];
        fit_to_total(&mut v, &[1.0, 3.0], 2.0);
        assert_eq!(v, [0.5, 1.5]);
        let mut v = [1.0, 2.0];
        fit_to_total(&mut v, &[3.0, 4.0], 0.0);
        assert_eq!(v, [0.0, 0.0]);
    }
}
