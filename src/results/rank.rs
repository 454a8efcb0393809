//! Ranking: orders the layouts that pass the limits by what matters to the owner.
//!
//! Rejected layouts are never ranked. Ties break by annual offered energy, then by name, so
//! the order is deterministic.

use crate::design::rules::{Finding, Severity};
use crate::input::layout::Layout;
use crate::results::summary::LayoutSummary;
use crate::sim::energy::LayoutEnergy;

/// What the ranking maximises. Energy criteria rank on energy *offered* by the controllers
/// (before a full battery turns any away), which is what separates wirings; with a load the
/// default is the load's unmet share.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Criterion {
    /// Energy offered over the year.
    Annual,
    /// Energy offered in the layout's worst month (of the months the weather covers).
    WorstMonth,
    /// Energy offered in the three months with the least horizontal insolation.
    Winter,
    /// Energy offered while the sun is low.
    LowSun,
    /// Fewest days short, then least unmet load, then most winter offered energy (needs a
    /// load and a battery).
    Unmet,
}

impl Criterion {
    /// The criterion used when none is asked for: unmet load when the plan has a load,
    /// annual offered energy otherwise.
    pub fn default_for(has_load: bool) -> Criterion {
        if has_load {
            Criterion::Unmet
        } else {
            Criterion::Annual
        }
    }

    pub fn describe(self) -> &'static str {
        match self {
            Criterion::Annual => "energy offered over the year",
            Criterion::WorstMonth => "energy offered in the worst month",
            Criterion::Winter => "energy offered in the three darkest months",
            Criterion::LowSun => "energy offered in low-sun hours",
            Criterion::Unmet => "unmet load (fewest days short, then least kWh unmet, then most winter energy offered)",
        }
    }

    /// A few words for sentences: `unmet load`, `annual offered energy`, ….
    pub fn short(self) -> &'static str {
        match self {
            Criterion::Annual => "annual offered energy",
            Criterion::WorstMonth => "offered energy in the worst month",
            Criterion::Winter => "winter offered energy",
            Criterion::LowSun => "low-sun offered energy",
            Criterion::Unmet => "unmet load",
        }
    }

    /// The key used in JSON and on the command line.
    pub fn key(self) -> &'static str {
        match self {
            Criterion::Annual => "annual",
            Criterion::WorstMonth => "worst-month",
            Criterion::Winter => "winter",
            Criterion::LowSun => "low-sun",
            Criterion::Unmet => "unmet",
        }
    }
}

/// A layout with its verdict and, when it passed, its energy, figures and rank.
#[derive(Clone, Debug)]
pub struct LayoutOutcome {
    pub layout: Layout,
    pub findings: Vec<Finding>,
    pub energy: Option<LayoutEnergy>,
    /// The figures every report shows, computed once (with `energy`).
    pub summary: Option<LayoutSummary>,
    /// 1-based; `None` when rejected.
    pub rank: Option<usize>,
    /// The value the criterion ranked on, kWh (for `Unmet`, −unmet kWh).
    pub score_kwh: Option<f64>,
    /// Annual offered energy exceeded with 90 % probability (one year, ten-year mean), kWh.
    pub p90: Option<crate::results::uncertainty::P90>,
    /// The difference from the recommended layout by cause, kWh a year (empty for the
    /// recommended layout itself and for rejected ones).
    pub difference: Vec<(crate::results::explain::Cause, f64)>,
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

/// The criterion's value for one layout, kWh (for `Unmet`, −unmet kWh: higher is better).
pub fn score_kwh(s: &LayoutSummary, c: Criterion) -> f64 {
    match c {
        Criterion::Annual => s.annual_offered_kwh(),
        Criterion::WorstMonth => s.worst_month_kwh(),
        Criterion::Winter => s.winter_offered_kwh,
        Criterion::LowSun => s.annual_low_sun_offered_kwh(),
        Criterion::Unmet => -s.annual_unmet_kwh(),
    }
}

/// Orders two summaries by a criterion, best first.
/// The criterion as one key, higher better, ordered as [`compare`] orders layouts (arrays
/// compare element by element): for `unmet` fewer days short, then less unmet load, then
/// more winter energy offered; otherwise the criterion's kWh; then the annual offered energy.
pub fn sort_key(s: &LayoutSummary, c: Criterion) -> [f64; 4] {
    match c {
        Criterion::Unmet => [
            -s.annual_days_short(),
            -s.annual_unmet_kwh(),
            s.winter_offered_kwh,
            s.annual_offered_kwh(),
        ],
        _ => [score_kwh(s, c), s.annual_offered_kwh(), 0.0, 0.0],
    }
}

pub fn compare(a: &LayoutSummary, b: &LayoutSummary, c: Criterion) -> std::cmp::Ordering {
    let primary = match c {
        Criterion::Unmet => a
            .annual_days_short()
            .total_cmp(&b.annual_days_short())
            .then(a.annual_unmet_kwh().total_cmp(&b.annual_unmet_kwh()))
            .then(b.winter_offered_kwh.total_cmp(&a.winter_offered_kwh)),
        _ => score_kwh(b, c).total_cmp(&score_kwh(a, c)),
    };
    primary.then(b.annual_offered_kwh().total_cmp(&a.annual_offered_kwh()))
}

/// Sets `rank` and `score_kwh` on every passing layout and sorts: ranked first (best first),
/// then rejected ones in plan order. Ties break by annual offered energy, then by name,
/// then by candidate order.
pub fn rank(outcomes: &mut Vec<LayoutOutcome>, c: Criterion) {
    for o in outcomes.iter_mut() {
        o.score_kwh = o.summary.as_ref().map(|s| score_kwh(s, c));
    }
    let mut idx: Vec<usize> = (0..outcomes.len()).collect();
    idx.sort_by(|&a, &b| {
        let (oa, ob) = (&outcomes[a], &outcomes[b]);
        match (&oa.summary, &ob.summary) {
            (Some(x), Some(y)) => compare(x, y, c)
                .then_with(|| oa.layout.display_name().cmp(&ob.layout.display_name()))
                .then_with(|| a.cmp(&b)),
            (Some(_), None) => std::cmp::Ordering::Less,
            (None, Some(_)) => std::cmp::Ordering::Greater,
            (None, None) => a.cmp(&b),
        }
    });
    let mut sorted: Vec<LayoutOutcome> = idx.into_iter().map(|i| outcomes[i].clone()).collect();
    let mut r = 0;
    for o in sorted.iter_mut() {
        if o.summary.is_some() {
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
