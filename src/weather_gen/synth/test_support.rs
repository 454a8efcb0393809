//! Shared by the unit tests of the synthesizer's files: an invented mid-latitude climate and
//! the stationary distribution of an Aguiar class's chain. Compiled for tests only; nothing
//! here is part of the library.

use super::{MonthlyInputs, AGUIAR_KT_MAX, AGUIAR_KT_MIN, AGUIAR_MATRICES};

/// An invented mid-latitude climate (no real station): K̄T about 0.4–0.6.
pub(super) fn base_inputs() -> MonthlyInputs {
    MonthlyInputs {
        name: "Testfield (invented)".to_string(),
        latitude_deg: 45.0,
        longitude_deg: 7.0,
        elevation_m: 300.0,
        utc_offset_h: 1.0,
        year: 2025,
        ghi_kwh_m2_day: vec![1.4, 2.3, 3.6, 4.7, 5.6, 6.2, 6.4, 5.5, 4.2, 2.7, 1.6, 1.2],
        air_mean_c: vec![
            0.5, 2.0, 6.5, 10.5, 15.0, 19.0, 21.5, 21.0, 16.5, 11.0, 5.5, 1.5,
        ],
        air_min_c: Some(vec![
            -3.0, -2.0, 1.5, 5.0, 9.5, 13.0, 15.5, 15.0, 11.5, 6.5, 2.0, -2.0,
        ]),
        air_max_c: Some(vec![
            4.5, 6.5, 12.0, 16.0, 20.5, 25.0, 28.0, 27.5, 22.0, 16.0, 9.5, 5.0,
        ]),
        air_range_dk: None,
        air_day_sd_dk: None,
        wind_m_s: Some(vec![
            2.5, 2.7, 3.0, 3.1, 2.8, 2.5, 2.4, 2.3, 2.4, 2.5, 2.6, 2.5,
        ]),
    }
}

/// Mean and standard deviation of the stationary distribution of a class's chain
/// (uniform within each state), by power iteration.
pub(super) fn stationary(class: usize) -> (f64, f64) {
    let m = &AGUIAR_MATRICES[class];
    let mut pi = [0.1; 10];
    for _ in 0..5000 {
        let mut next = [0.0; 10];
        for i in 0..10 {
            let total: f64 = m[i].iter().sum();
            for j in 0..10 {
                next[j] += pi[i] * m[i][j] / total;
            }
        }
        pi = next;
    }
    let (lo, hi) = (AGUIAR_KT_MIN[class], AGUIAR_KT_MAX[class]);
    let step = (hi - lo) / 10.0;
    let mid = |j: usize| lo + (j as f64 + 0.5) * step;
    let mean: f64 = (0..10).map(|j| pi[j] * mid(j)).sum();
    let m2: f64 = (0..10)
        .map(|j| pi[j] * (mid(j).powi(2) + step * step / 12.0))
        .sum();
    (mean, (m2 - mean * mean).sqrt())
}
