//! Wind, step 6 of the synthesis: gamma-distributed daily means, an autoregressive hourly
//! factor and an afternoon maximum, each month scaled to its input mean.
//!
//! Common practice, no source; it deliberately models no direction, gusts or link to the
//! weather of the day, and leaves rounding to the assembly (`assemble.rs`).

use std::f64::consts::PI;

use rand::distr::Distribution as _;
use rand::rngs::StdRng;
use statrs::distribution::{Gamma, Normal};

use super::inputs::MonthlyClimate;

/// Gamma shape of the daily mean wind factor (mean 1, coefficient of variation 1/√shape).
const WIND_DAY_SHAPE: f64 = 4.0;

/// Step 6 of [`synthesize`]: hourly wind speed, m/s, before rounding.
///
/// [`synthesize`]: super::synthesize
pub(super) fn synthesize_wind(
    climate: &MonthlyClimate,
    monthly: &[f64; 12],
    month_days: &[usize; 12],
    rng: &mut StdRng,
) -> Vec<f64> {
    let days = climate.days;
    let standard = Normal::standard();
    let day_factor =
        // ok: constant parameters, checked by a unit test.
        Gamma::new(WIND_DAY_SHAPE, WIND_DAY_SHAPE).expect("constant gamma parameters are valid");
    let mut wind = Vec::with_capacity(days * 24);
    let mut z: f64 = 0.0;
    for d in 0..days {
        let g = day_factor.sample(rng);
        let m = climate.day_month[d];
        for h in 0..24 {
            z = 0.8 * z + 0.6 * standard.sample(rng);
            let diurnal = 1.0 + 0.2 * (2.0 * PI * (h as f64 + 0.5 - 14.0) / 24.0).cos();
            wind.push(monthly[m] * g * (1.0 + 0.25 * z).max(0.05) * diurnal);
        }
    }
    let mut first = 0;
    for m in 0..12 {
        let slot = first..first + month_days[m] * 24;
        first = slot.end;
        let mean = wind[slot.clone()].iter().sum::<f64>() / slot.len() as f64;
        let f = if mean > 0.0 { monthly[m] / mean } else { 0.0 };
        for w in &mut wind[slot] {
            *w = (*w * f).min(40.0);
        }
    }
    wind
}
