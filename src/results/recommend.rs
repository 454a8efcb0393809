//! The decision: which layout to build, why, what separates it from the runner-up, and for
//! every other ranked layout the difference from it in kWh, split by cause.
//!
//! Leaders closer than the model can tell apart tie: energy criteria within
//! [`TIE_BAND_FRAC`] of the leader's score, the unmet criterion with the same days short and
//! unmet load within [`UNMET_TIE_FRAC_OF_LOAD`] of the year's load. A tie is broken by the
//! next thing that separates the tied layouts, in a fixed order ([`TieBreak`]), and the
//! report names it. The method is written out in notebooks-free-docs/method-accounting.md.

use crate::results::rank::{Criterion, LayoutOutcome};
use crate::results::summary::LayoutSummary;

/// Two energy scores within this fraction of the leader's tie. A documented band (common
/// practice, no source): a difference below 1 % of the criterion is far inside the 5 %
/// model uncertainty that P50/P90 carry (notebooks-free-docs/method-p90.md), so the ranking
/// cannot claim it as a difference between wirings.
pub const TIE_BAND_FRAC: f64 = 0.01;

/// Unmet loads within this fraction of the year's load tie (with the same days short).
pub const UNMET_TIE_FRAC_OF_LOAD: f64 = 0.005;

/// Days short closer than this tie (several-year files give fractional means).
const DAYS_TIE: f64 = 0.5;

/// What breaks a tie, in order: the first that separates the tied layouts decides.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum TieBreak {
    /// More energy offered in the three darkest months (by more than the tie band).
    WinterOffered,
    /// Fewer days short of energy.
    DaysShort,
    /// Fewer inputs with three or more parallel strings (no string fuses to fit).
    StringFuses,
    /// Lower cable voltage drop at STC (by more than half a percentage point).
    VoltageDrop,
    /// Fewer controller inputs.
    Controllers,
}

impl TieBreak {
    pub const ORDER: [TieBreak; 5] = [
        TieBreak::WinterOffered,
        TieBreak::DaysShort,
        TieBreak::StringFuses,
        TieBreak::VoltageDrop,
        TieBreak::Controllers,
    ];

    /// A value to minimise, and how far apart two values must be to separate layouts.
    fn key(self, s: &LayoutSummary) -> (f64, f64) {
        match self {
            TieBreak::WinterOffered => (
                -s.winter_offered_kwh,
                TIE_BAND_FRAC * s.winter_offered_kwh.abs(),
            ),
            TieBreak::DaysShort => (s.annual_days_short(), DAYS_TIE),
            TieBreak::StringFuses => (s.fused_inputs as f64, 0.5),
            TieBreak::VoltageDrop => (s.voltage_drop_frac, 0.005),
            TieBreak::Controllers => (s.controllers_used as f64, 0.5),
        }
    }

    /// Why the winner beats a loser on this key, in words with the numbers.
    fn describe(self, win: &LayoutSummary, lose: &LayoutSummary) -> String {
        match self {
            TieBreak::WinterOffered => format!(
                "more energy offered in the darkest months ({:.1} vs {:.1} kWh)",
                win.winter_offered_kwh, lose.winter_offered_kwh
            ),
            TieBreak::DaysShort => format!(
                "fewer days short ({:.0} vs {:.0} a year)",
                win.annual_days_short(),
                lose.annual_days_short()
            ),
            TieBreak::StringFuses => format!(
                "fewer parallel strings needing string fuses ({} vs {} inputs with three or more strings)",
                win.fused_inputs, lose.fused_inputs
            ),
            TieBreak::VoltageDrop => format!(
                "lower cable voltage drop ({:.1} % vs {:.1} % at STC)",
                win.voltage_drop_frac * 100.0,
                lose.voltage_drop_frac * 100.0
            ),
            TieBreak::Controllers => format!(
                "fewer controller inputs ({} vs {})",
                win.controllers_used, lose.controllers_used
            ),
        }
    }
}

/// The layout to build and why.
#[derive(Clone, Debug, PartialEq)]
pub struct Recommendation {
    /// Id of the recommended layout.
    pub layout: String,
    pub criterion: Criterion,
    /// One or two sentences: why this layout.
    pub reason: String,
    /// Id of the runner-up, if any other layout is ranked.
    pub runner_up: Option<String>,
    /// What separates the runner-up from the recommended layout, in the criterion's units.
    pub runner_up_gap: Option<String>,
    /// The leaders tie on the criterion.
    pub tie: bool,
    /// What broke the tie, when something did.
    pub tie_break: Option<String>,
}

/// True when `b` ties with the leader `a` on the criterion.
fn ties(a: &LayoutSummary, b: &LayoutSummary, c: Criterion, annual_load_kwh: f64) -> bool {
    match c {
        Criterion::Unmet => {
            (a.annual_days_short() - b.annual_days_short()).abs() < DAYS_TIE
                && (a.annual_unmet_kwh() - b.annual_unmet_kwh()).abs()
                    <= UNMET_TIE_FRAC_OF_LOAD * annual_load_kwh
        }
        _ => {
            let (x, y) = (
                crate::results::rank::score_kwh(a, c),
                crate::results::rank::score_kwh(b, c),
            );
            (x - y).abs() <= TIE_BAND_FRAC * x.abs().max(y.abs())
        }
    }
}

/// The runner-up's figure on the criterion against the recommended layout's, in its units.
fn gap_text(win: &LayoutSummary, lose: &LayoutSummary, c: Criterion) -> String {
    match c {
        Criterion::Unmet => format!(
            "{:.0} days short and {:.1} kWh unmet a year, against {:.0} and {:.1}",
            lose.annual_days_short(),
            lose.annual_unmet_kwh(),
            win.annual_days_short(),
            win.annual_unmet_kwh()
        ),
        _ => {
            let (x, y) = (
                crate::results::rank::score_kwh(win, c),
                crate::results::rank::score_kwh(lose, c),
            );
            let pct = if x > 0.0 { (y / x - 1.0) * 100.0 } else { 0.0 };
            format!("{y:.1} kWh {}, against {x:.1} ({pct:+.1} %)", c.short())
        }
    }
}

/// Chooses the layout to build among the ranked `outcomes` (rank order). `None` when nothing
/// is ranked.
pub fn recommend(outcomes: &[LayoutOutcome], c: Criterion) -> Option<Recommendation> {
    let ranked: Vec<(&LayoutOutcome, &LayoutSummary)> = outcomes
        .iter()
        .filter(|o| o.rank.is_some())
        .filter_map(|o| o.summary.as_ref().map(|s| (o, s)))
        .collect();
    let (leader, lead) = *ranked.first()?;
    let annual_load_kwh = lead.annual_load_kwh();
    let mut group: Vec<(&LayoutOutcome, &LayoutSummary)> = ranked
        .iter()
        .copied()
        .filter(|(_, s)| ties(lead, s, c, annual_load_kwh))
        .collect();
    if group.len() < 2 {
        let runner = ranked.get(1);
        let name = leader.layout.display_name();
        let reason = match runner {
            Some((ro, rs)) => format!(
                "{name} ranks first on {}; the runner-up {} has {}.",
                c.short(),
                ro.layout.id,
                gap_text(lead, rs, c)
            ),
            None => format!("{name} is the only layout that passes the limits."),
        };
        return Some(Recommendation {
            layout: leader.layout.id.clone(),
            criterion: c,
            reason,
            runner_up: runner.map(|(o, _)| o.layout.id.clone()),
            runner_up_gap: runner.map(|(_, rs)| gap_text(lead, rs, c)),
            tie: false,
            tie_break: None,
        });
    }
    // Narrow the tied group key by key; the key that leaves one layout decides.
    let tied_ids: Vec<String> = group.iter().map(|(o, _)| o.layout.id.clone()).collect();
    let mut decided: Option<(TieBreak, &LayoutSummary)> = None;
    let mut runner: Option<(&LayoutOutcome, &LayoutSummary)> = None;
    for tb in TieBreak::ORDER {
        let best = group
            .iter()
            .map(|(_, s)| tb.key(s).0)
            .fold(f64::INFINITY, f64::min);
        let keep: Vec<_> = group
            .iter()
            .copied()
            .filter(|(_, s)| {
                let (v, band) = tb.key(s);
                v - best <= band
            })
            .collect();
        if keep.len() < group.len() {
            if keep.len() == 1 {
                // The best-ranked of those this key removed is the runner-up.
                runner = group
                    .iter()
                    .copied()
                    .find(|(o, _)| o.layout.id != keep[0].0.layout.id);
                decided = runner.map(|(_, rs)| (tb, rs));
            }
            group = keep;
        }
        if group.len() == 1 {
            break;
        }
    }
    let (chosen, cs) = group[0];
    let runner = runner.or_else(|| group.get(1).copied());
    let others = tied_ids.len() - 1;
    let name = chosen.layout.display_name();
    let (tie_break, reason) = match (decided, runner) {
        (Some((tb, rs)), Some((ro, _))) => {
            let why = tb.describe(cs, rs);
            (
                Some(why.clone()),
                format!(
                    "{name} ties with {others} other layout{} on {} (closer than the model can tell apart) and has {why} than {}.",
                    if others == 1 { "" } else { "s" },
                    c.short(),
                    ro.layout.id
                ),
            )
        }
        _ => (
            None,
            format!(
                "{name} ties with {others} other layout{} on {} and nothing else separates them; it is first by the criterion itself.",
                if others == 1 { "" } else { "s" },
                c.short()
            ),
        ),
    };
    Some(Recommendation {
        layout: chosen.layout.id.clone(),
        criterion: c,
        reason,
        runner_up: runner.map(|(o, _)| o.layout.id.clone()),
        runner_up_gap: runner.map(|(_, rs)| gap_text(cs, rs, c)),
        tie: true,
        tie_break,
    })
}
