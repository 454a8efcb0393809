//! Daily clearness: the Aguiar, Collares-Pereira & Conde 1988 Markov chain over the matrix
//! of the month's class, and step 1 of the synthesis, which keeps the month's sequence
//! closest to its mean clearness and scales it to the input irradiation.
//!
//! It deliberately says nothing about the hours inside a day (`hourly.rs`) and holds no
//! table (`aguiar_tables.rs`).

use rand::rngs::StdRng;
use rand::RngExt;

use super::aguiar_tables::{AGUIAR_KT_MAX, AGUIAR_KT_MIN, AGUIAR_MATRICES};

/// Attempts at a month's daily clearness sequence; the one whose mean is closest to K̄T is
/// kept (then scaled). Stops early within [`MONTH_MEAN_ACCEPT`].
const MONTH_ATTEMPTS: usize = 20;
const MONTH_MEAN_ACCEPT: f64 = 0.005;

/// Which Aguiar matrix serves a month of mean clearness index `kt_month` (0..=9).
///
/// # Source
/// Aguiar, Collares-Pereira & Conde 1988: classes K̄T ≤ 0.30, then steps of 0.05 up to 0.70,
/// then K̄T > 0.70 (upper bounds inclusive).
pub fn aguiar_class(kt_month: f64) -> usize {
    (0..9)
        .find(|&k| kt_month <= f64::from(30 + 5 * k as u32) / 100.0)
        .unwrap_or(9)
}

/// The next day's clearness index from the previous day's, given a uniform number `u` in
/// [0, 1).
///
/// # Formula
/// Δ = (Kt,max − Kt,min)/10; row i = ⌊(Kt_prev − Kt,min)/Δ⌋ clamped to 0..=9; the row's
/// probabilities pᵢⱼ (divided by their sum) are stacked on [0, 1); `u` falls in state j at
/// fraction f of its band; Kt = Kt,min + (j + f)·Δ (uniform within the state).
///
/// # Source
/// Aguiar, Collares-Pereira & Conde 1988, Solar Energy 40(3) (the procedure and
/// [`AGUIAR_MATRICES`]).
pub fn aguiar_next_clearness(class: usize, previous_kt: f64, u: f64) -> f64 {
    let class = class.min(9);
    let (lo, hi) = (AGUIAR_KT_MIN[class], AGUIAR_KT_MAX[class]);
    let step = (hi - lo) / 10.0;
    let row = ((previous_kt - lo) / step).floor().clamp(0.0, 9.0) as usize;
    let p = &AGUIAR_MATRICES[class][row];
    let total: f64 = p.iter().sum();
    let target = u.clamp(0.0, 1.0) * total;
    let mut cum = 0.0;
    let mut last = 0;
    for (j, &pj) in p.iter().enumerate() {
        if pj > 0.0 {
            if target < cum + pj {
                return lo + (j as f64 + (target - cum) / pj) * step;
            }
            last = j;
        }
        cum += pj;
    }
    lo + (last as f64 + 1.0) * step
}

/// A raw sequence of `days` daily clearness indices for a month of mean clearness
/// `kt_month`, starting from the previous day's `previous_kt` (one uniform draw per day).
/// [`synthesize`] draws several and keeps the one closest to K̄T before scaling it.
///
/// [`synthesize`]: super::synthesize
pub fn aguiar_month_sequence(
    kt_month: f64,
    previous_kt: f64,
    days: usize,
    rng: &mut StdRng,
) -> Vec<f64> {
    let class = aguiar_class(kt_month);
    let mut prev = previous_kt;
    (0..days)
        .map(|_| {
            prev = aguiar_next_clearness(class, prev, rng.random_range(0.0..1.0));
            prev
        })
        .collect()
}

/// Step 1 of [`synthesize`]: each day's clearness index. Month by month (the chain runs on
/// from the previous month's last day; the year starts from December's K̄T, or 0.5 when
/// December is dark), the closest of several Aguiar sequences to the month's K̄T, scaled by
/// one factor so that Σ Kt_d · H0_d equals the input irradiation of the month. Months with
/// K̄T = 0 (polar night, or no irradiation) stay 0.
///
/// [`synthesize`]: super::synthesize
pub(super) fn daily_clearness(
    clearness: &[f64; 12],
    ghi_kwh_m2_day: &[f64; 12],
    month_days: &[usize; 12],
    day_h0_wh: &[f64],
    rng: &mut StdRng,
) -> Vec<f64> {
    let mut daily_kt = vec![0.0; day_h0_wh.len()];
    let mut previous = if clearness[11] > 0.0 {
        clearness[11]
    } else {
        0.5
    };
    let mut first_day = 0;
    for m in 0..12 {
        let count = month_days[m];
        let range = first_day..first_day + count;
        first_day += count;
        if clearness[m] <= 0.0 {
            continue; // polar night or a month of zero irradiation: every day stays 0
        }
        let seq = closest_month_sequence(clearness[m], previous, count, rng);
        previous = *seq.last().unwrap_or(&clearness[m]);
        let target_wh = ghi_kwh_m2_day[m] * 1000.0 * count as f64;
        let got_wh: f64 = range
            .clone()
            .zip(&seq)
            .map(|(d, kt)| kt * day_h0_wh[d])
            .sum();
        let f = if got_wh > 0.0 {
            target_wh / got_wh
        } else {
            0.0
        };
        for (d, kt) in range.zip(seq) {
            daily_kt[d] = kt * f;
        }
    }
    daily_kt
}

/// Up to [`MONTH_ATTEMPTS`] sequences from [`aguiar_month_sequence`], all starting from
/// `previous_kt`; the one whose mean is closest to `kt_month` (the first within
/// [`MONTH_MEAN_ACCEPT`] ends the search).
fn closest_month_sequence(
    kt_month: f64,
    previous_kt: f64,
    days: usize,
    rng: &mut StdRng,
) -> Vec<f64> {
    let mut best: Option<(f64, Vec<f64>)> = None;
    for _ in 0..MONTH_ATTEMPTS {
        let seq = aguiar_month_sequence(kt_month, previous_kt, days, rng);
        let err = (seq.iter().sum::<f64>() / days as f64 - kt_month).abs();
        let better = best.as_ref().is_none_or(|(e, _)| err < *e);
        if better {
            best = Some((err, seq));
        }
        if err <= MONTH_MEAN_ACCEPT {
            break;
        }
    }
    best.map(|(_, s)| s).unwrap_or_default()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn aguiar_class_boundaries() {
        // Source: Aguiar et al. 1988 class limits (upper bounds inclusive).
        for (kt, class) in [
            (0.1, 0),
            (0.30, 0),
            (0.300_001, 1),
            (0.35, 1),
            (0.40, 2),
            (0.45, 3),
            (0.5, 4),
            (0.500_001, 5),
            (0.70, 8),
            (0.700_001, 9),
            (0.9, 9),
        ] {
            assert_eq!(aguiar_class(kt), class, "{kt}");
        }
    }

    #[test]
    fn aguiar_next_clearness_stays_in_the_class_range() {
        // Source: the procedure of Aguiar et al. 1988: u = 0 lands at the bottom of the
        // first possible state, u → 1 at the top of the last; every value inside the class.
        let (lo, hi) = (AGUIAR_KT_MIN[4], AGUIAR_KT_MAX[4]);
        assert!((aguiar_next_clearness(4, 0.0, 0.0) - lo).abs() < 1e-12);
        assert!((aguiar_next_clearness(4, 0.0, 1.0) - hi).abs() < 1e-9);
        // Class 8, row 0 has all its weight in state 8: Kt,min + 8Δ … + 9Δ.
        let step = (AGUIAR_KT_MAX[8] - AGUIAR_KT_MIN[8]) / 10.0;
        let v = aguiar_next_clearness(8, 0.0, 0.5);
        assert!((v - (AGUIAR_KT_MIN[8] + 8.5 * step)).abs() < 1e-12, "{v}");
        for i in 0..1000 {
            let u = i as f64 / 1000.0;
            for class in 0..10 {
                let v = aguiar_next_clearness(class, 0.5, u);
                assert!(v >= AGUIAR_KT_MIN[class] && v <= AGUIAR_KT_MAX[class]);
            }
        }
    }
}
