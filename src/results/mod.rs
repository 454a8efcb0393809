//! Results: what each run produced, computed once, for every writer to format. Ranking,
//! P50/P90, the monthly light sums and the sun-path views live here.

pub mod explain;
pub mod light;
pub mod rank;
pub mod recommend;
pub mod shade_view;
pub mod summary;
pub mod uncertainty;
pub mod weather_summary;

use crate::design::candidates::Candidates;
use crate::design::rules;
use crate::design::sizing::{ModuleSizing, Sizing};
use crate::input::Loaded;

/// Everything a ranking run produced, for the report writers.
#[derive(Clone, Debug)]
pub struct RankResult {
    pub loaded: Loaded,
    pub criterion: rank::Criterion,
    pub temps: rules::DesignTemperatures,
    pub horizontal_kwh_m2: [f64; 12],
    pub months_present: [bool; 12],
    pub winter_months: Vec<usize>,
    pub light: Vec<light::GroupMonthly>,
    /// Ranked layouts first (best first), then rejected ones.
    pub outcomes: Vec<rank::LayoutOutcome>,
    /// Layouts listed in the plan (the rest were enumerated).
    pub listed: usize,
    /// Enumerated input choices skipped for breaking a hard limit on their own, by rule.
    pub pruned: crate::design::candidates::PrunedCounts,
    /// With a load and a battery: the smallest battery for the best layout.
    pub sizing: Option<Sizing>,
    /// With a load and a battery: the fewest extra modules for the best layout.
    pub module_sizing: Option<ModuleSizing>,
    /// The layout to build and why (`None` when nothing passes).
    pub recommendation: Option<recommend::Recommendation>,
    /// Years of weather the figures are the mean of (1 for a typical year).
    pub years: f64,
    /// What module assignment did; `None` when every group's modules are interchangeable or
    /// the plan lists its layouts.
    pub assignment: Option<AssignmentReport>,
    /// With a battery model and more passing enumerated layouts than
    /// `model.coupled_layouts`: how they were screened before the battery-coupled year.
    pub screening: Option<Screening>,
}

/// Passing layouts screened on the energy their controllers offer at the plan's fixed
/// charging voltage, before the year coupled to the battery model runs for the best
/// (notebooks-free-docs/method-battery.md, "Screening").
#[derive(Clone, Debug)]
pub struct Screening {
    /// Passing enumerated layouts screened (the plan's listed layouts are never screened
    /// out).
    pub screened: usize,
    /// The best of them by the screening, run with the battery and ranked.
    pub coupled: usize,
    /// The fixed charging voltage of the screening, V.
    pub charge_v: f64,
}

impl RankResult {
    /// The recommended layout's outcome.
    pub fn recommended(&self) -> Option<&rank::LayoutOutcome> {
        let id = &self.recommendation.as_ref()?.layout;
        self.outcomes.iter().find(|o| &o.layout.id == id)
    }
}

/// What choosing which modules share a string did (enumerated layouts of a plan whose
/// modules of one group see different shade; notebooks-free-docs/method-assignment.md).
#[derive(Clone, Debug, Default)]
pub struct AssignmentReport {
    /// Enumerated layouts whose modules were chosen by the seed instead of taken in id order.
    pub seeded: usize,
    /// Whether the swap search ran: not on a weather file long enough that its curves are
    /// computed block by block (`sim::curves::HELD_MAX_INTERVALS`), where every swap tried
    /// would be a sweep of the whole file; the seed then stands.
    pub swap_search: bool,
    /// The best few layouts searched further by swaps, and how many of them a swap improved.
    pub searched: usize,
    pub improved: usize,
    /// Simulations the swap search ran.
    pub evaluations: usize,
    /// The recommended layout against the same shape with modules in id order.
    pub recommended: Option<AssignmentGain>,
}

/// The recommended layout's figures with its chosen modules and in id order.
#[derive(Clone, Debug)]
pub struct AssignmentGain {
    pub layout: String,
    /// The ranking criterion's figure (kWh; for `unmet`, minus the unmet kWh).
    pub score_kwh: f64,
    pub id_order_score_kwh: f64,
    pub offered_kwh: f64,
    pub id_order_offered_kwh: f64,
}

/// What `check` read: the plan with its weather and site, or the plan alone when its weather
/// file is not there and the plan's design temperatures stand in for the weather's extremes.
#[derive(Clone, Debug)]
pub enum CheckInput {
    Loaded(Box<Loaded>),
    PlanOnly {
        plan: Box<crate::input::plan::Plan>,
        /// Why the weather was not read (the file and the reason), for the header.
        weather_note: String,
    },
}

impl CheckInput {
    pub fn plan(&self) -> &crate::input::plan::Plan {
        match self {
            CheckInput::Loaded(l) => &l.plan,
            CheckInput::PlanOnly { plan, .. } => plan,
        }
    }
}

/// Every candidate layout with its limit findings, without simulating.
#[derive(Clone, Debug)]
pub struct CheckResult {
    pub input: CheckInput,
    pub temps: rules::DesignTemperatures,
    pub candidates: Candidates,
    /// Findings per layout, in `candidates.layouts` order.
    pub findings: Vec<Vec<rules::Finding>>,
}

/// Direct light lost to shade, per module and month.
#[derive(Clone, Debug)]
pub struct ShadeResult {
    pub loaded: Loaded,
    /// Per module: per month (direct Wh/m², lost Wh/m²).
    pub direct: Vec<[(f64, f64); 12]>,
    pub months_present: [bool; 12],
    /// The sky seen from each placed group (sun-path pictures).
    pub views: Vec<shade_view::SunPathView>,
}

/// Which layouts `check` lists.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum CheckShow {
    #[default]
    All,
    /// Only those that break a hard limit.
    Failing,
    /// Only those that pass every hard limit.
    Passing,
}
