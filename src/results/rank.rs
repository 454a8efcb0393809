//! Ranking: orders the layouts that pass the limits by what matters to the owner.
//!
//! Rejected layouts are never ranked. Ties break by annual energy, then by name, so the order
//! is deterministic.

use crate::design::rules::{Finding, Severity};
use crate::input::layout::Layout;
use crate::sim::energy::LayoutEnergy;

/// What the ranking maximises.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Criterion {
    /// Energy delivered over the year.
    Annual,
    /// Energy in the layout's worst month (of the months the weather covers).
    WorstMonth,
    /// Energy in the three months with the least horizontal insolation.
    Winter,
    /// Energy delivered while the sun is low.
    LowSun,
    /// Least unmet load over the year (needs a load and a battery); ranked on −unmet.
    Unmet,
}

impl Criterion {
    pub fn describe(self) -> &'static str {
        match self {
            Criterion::Annual => "annual energy",
            Criterion::WorstMonth => "energy in the worst month",
            Criterion::Winter => "energy in the three darkest months",
            Criterion::LowSun => "energy in low-sun hours",
            Criterion::Unmet => "least unmet load (score = −unmet kWh)",
        }
    }
}

/// A layout with its verdict and, when it passed, its energy and rank.
#[derive(Clone, Debug)]
pub struct LayoutOutcome {
    pub layout: Layout,
    pub findings: Vec<Finding>,
    pub energy: Option<LayoutEnergy>,
    /// 1-based; `None` when rejected.
    pub rank: Option<usize>,
    /// The value the criterion ranked on, kWh.
    pub score_kwh: Option<f64>,
    /// Annual energy exceeded with 90 % probability (one year, ten-year mean), kWh.
    pub p90: Option<crate::results::uncertainty::P90>,
}

impl LayoutOutcome {
    pub fn rejected(&self) -> bool {
        self.findings.iter().any(|f| f.severity == Severity::Reject)
    }
}

/// The three months (indices 0..12) with the least horizontal insolation among those present.
pub fn winter_months(horizontal_kwh_m2: &[f64; 12], present: &[bool; 12]) -> Vec<usize> {
    let mut months: Vec<usize> = (0..12).filter(|&m| present[m]).collect();
    months.sort_by(|&a, &b| {
        horizontal_kwh_m2[a]
            .total_cmp(&horizontal_kwh_m2[b])
            .then(a.cmp(&b))
    });
    months.truncate(3);
    months.sort_unstable();
    months
}

/// The criterion's value for one layout's energy, kWh.
pub fn score_kwh(e: &LayoutEnergy, c: Criterion, present: &[bool; 12], winter: &[usize]) -> f64 {
    let kwh = e.monthly_kwh();
    match c {
        Criterion::Annual => e.annual_delivered_kwh(),
        Criterion::WorstMonth => (0..12)
            .filter(|&m| present[m])
            .map(|m| kwh[m])
            .fold(f64::INFINITY, f64::min),
        // With a load, winter counts what reached the load (notebooks-free-docs/method-battery.md outlook).
        Criterion::Winter if e.load_served_wh.iter().any(|&x| x > 0.0) => {
            winter.iter().map(|&m| e.load_served_wh[m] / 1000.0).sum()
        }
        Criterion::Winter => winter.iter().map(|&m| kwh[m]).sum(),
        Criterion::Unmet => -e.unmet_wh.iter().sum::<f64>() / 1000.0,
        Criterion::LowSun => e.low_sun_offered_wh.iter().sum::<f64>() / 1000.0,
    }
}

/// Sets `rank` and `score_kwh` on every passing layout and sorts: ranked first (best first),
/// then rejected ones in plan order.
pub fn rank(
    outcomes: &mut Vec<LayoutOutcome>,
    c: Criterion,
    present: &[bool; 12],
    winter: &[usize],
) {
    for o in outcomes.iter_mut() {
        o.score_kwh = o.energy.as_ref().map(|e| score_kwh(e, c, present, winter));
    }
    let mut idx: Vec<usize> = (0..outcomes.len()).collect();
    idx.sort_by(|&a, &b| {
        let (oa, ob) = (&outcomes[a], &outcomes[b]);
        match (oa.score_kwh, ob.score_kwh) {
            (Some(x), Some(y)) => y
                .total_cmp(&x)
                .then_with(|| {
                    let ea = oa
                        .energy
                        .as_ref()
                        .map_or(0.0, LayoutEnergy::annual_delivered_kwh);
                    let eb = ob
                        .energy
                        .as_ref()
                        .map_or(0.0, LayoutEnergy::annual_delivered_kwh);
                    eb.total_cmp(&ea)
                })
                .then_with(|| oa.layout.display_name().cmp(&ob.layout.display_name())),
            (Some(_), None) => std::cmp::Ordering::Less,
            (None, Some(_)) => std::cmp::Ordering::Greater,
            (None, None) => a.cmp(&b),
        }
    });
    let mut sorted: Vec<LayoutOutcome> = idx.into_iter().map(|i| outcomes[i].clone()).collect();
    let mut r = 0;
    for o in sorted.iter_mut() {
        if o.score_kwh.is_some() {
            r += 1;
            o.rank = Some(r);
        }
    }
    *outcomes = sorted;
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn winter_is_the_three_darkest_present_months() {
        // Source: common practice, no source (definition in the issue: the three months with
        // the least horizontal insolation in the weather file).
        let h = [
            20.0, 35.0, 70.0, 110.0, 140.0, 150.0, 155.0, 130.0, 90.0, 55.0, 25.0, 15.0,
        ];
        assert_eq!(winter_months(&h, &[true; 12]), vec![0, 10, 11]);
        let mut present = [true; 12];
        present[11] = false;
        assert_eq!(winter_months(&h, &present), vec![0, 1, 10]);
    }
}
