//! `wirerank check`: every candidate layout against the electrical limits, no simulation.

use crate::commands::load::{read_plan, read_weather, with_weather};
use crate::commands::{CheckShow, Outcome, PlanSource};
use crate::design::candidates::candidate_layouts;
use crate::design::rules::{self, design_temperatures, DesignTemperatures};
use crate::error::{Error, WeatherError};
use crate::io;
use crate::results::{CheckInput, CheckResult};

/// Loads the plan and weather and checks every candidate layout's limits.
///
/// When the plan's weather file does not exist yet but the plan gives both
/// `site.design_min_air_c` and `site.design_max_air_c`, the check goes on with those two
/// temperatures (the limits need nothing else from the weather) and says so.
///
/// # Errors
/// As [`crate::commands::load::load`] and [`candidate_layouts`].
pub fn check_limits(source: &PlanSource) -> Result<CheckResult, Error> {
    let plan = read_plan(source)?;
    let (input, temps) = match read_weather(source, &plan) {
        Ok(weather) => {
            let loaded = with_weather(source, plan, weather)?;
            let temps = design_temperatures(&loaded.plan, &loaded.weather);
            (CheckInput::Loaded(Box::new(loaded)), temps)
        }
        Err(Error::Weather(WeatherError::Read { file, source: e }))
            if e.kind() == std::io::ErrorKind::NotFound =>
        {
            let (Some(lo), Some(hi)) = (plan.site.design_min_air_c, plan.site.design_max_air_c)
            else {
                return Err(Error::Usage(format!(
                    "cannot read {file}: {e}; give the weather file, or give site.design_min_air_c and site.design_max_air_c in {} to check the limits without it",
                    plan.source.display()
                )));
            };
            let temps = DesignTemperatures {
                min_air_c: lo,
                max_air_c: hi,
            };
            let note =
                format!("{file} not found; limits checked at the plan's design temperatures");
            (
                CheckInput::PlanOnly {
                    plan: Box::new(plan),
                    weather_note: note,
                },
                temps,
            )
        }
        Err(e) => return Err(e),
    };
    let plan = input.plan();
    let candidates = candidate_layouts(plan, &temps)?;
    let findings = candidates
        .layouts
        .iter()
        .map(|l| rules::check_layout(plan, l, &temps))
        .collect();
    Ok(CheckResult {
        input,
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
        warnings: match &r.input {
            CheckInput::Loaded(l) => l.warning_texts(),
            CheckInput::PlanOnly { plan, .. } => plan.warnings.clone(),
        },
        nothing_passed: passed == 0,
    })
}
