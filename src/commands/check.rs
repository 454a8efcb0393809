//! `wirerank check`: every candidate layout against the electrical limits, no simulation.

use crate::commands::load::load;
use crate::commands::{CheckShow, Outcome, PlanSource};
use crate::design::candidates::candidate_layouts;
use crate::design::rules::{self, design_temperatures};
use crate::error::Error;
use crate::io;
use crate::results::CheckResult;

/// Loads the plan and weather and checks every candidate layout's limits.
///
/// # Errors
/// As [`load`] and [`candidate_layouts`].
pub fn check_limits(source: &PlanSource) -> Result<CheckResult, Error> {
    let loaded = load(source)?;
    let temps = design_temperatures(&loaded.plan, &loaded.weather);
    let candidates = candidate_layouts(&loaded.plan, &temps)?;
    let findings = candidates
        .layouts
        .iter()
        .map(|l| rules::check_layout(&loaded.plan, l, &temps))
        .collect();
    Ok(CheckResult {
        loaded,
        temps,
        candidates,
        findings,
    })
}

pub fn check(source: &PlanSource, show: CheckShow) -> Result<Outcome, Error> {
    let r = check_limits(source)?;
    let passed = r
        .findings
        .iter()
        .filter(|f| f.iter().all(|x| x.severity != rules::Severity::Reject))
        .count();
    Ok(Outcome {
        stdout: io::terminal::check(&r, show),
        warnings: r.loaded.warning_texts(),
        nothing_passed: passed == 0,
    })
}
