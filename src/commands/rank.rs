//! `wirerank rank` (and the no-argument demo): load, check, simulate, rank, size, write.

use crate::commands::load::load;
use crate::commands::{Outcome, OutputFormat, PlanSource, RankRequest};
use crate::design::candidates::candidate_layouts;
use crate::design::rules::{self, design_temperatures};
use crate::design::sizing::size_best;
use crate::error::Error;
use crate::input::layout;
use crate::io;
use crate::results::light;
use crate::results::{rank, uncertainty, RankResult};
use crate::sim::conditions;
use crate::sim::{curves, year};

/// Loads, checks, simulates and ranks.
///
/// # Errors
/// As [`load`].
pub fn simulate_and_rank(
    source: &PlanSource,
    criterion: rank::Criterion,
    opts: year::RunOptions,
) -> Result<RankResult, Error> {
    let loaded = load(source)?;
    let plan = &loaded.plan;
    if criterion == rank::Criterion::Unmet && plan.consumption.is_none() {
        return Err(Error::Usage(format!(
            "--by unmet needs a [load] table and a battery model (battery.capacity_ah) in {}",
            plan.source.display()
        )));
    }
    let temps = design_temperatures(plan, &loaded.weather);
    let candidates = candidate_layouts(plan, &temps)?;
    let mut outcomes: Vec<rank::LayoutOutcome> = candidates
        .layouts
        .into_iter()
        .map(|layout| rank::LayoutOutcome {
            findings: rules::check_layout(plan, &layout, &temps),
            layout,
            energy: None,
            rank: None,
            score_kwh: None,
            p90: None,
        })
        .collect();
    let conditions = conditions::phase1(plan, &loaded.weather, &loaded.site);
    let passing: Vec<&layout::Layout> = outcomes
        .iter()
        .filter(|o| !o.rejected())
        .map(|o| &o.layout)
        .collect();
    // The substring curves are shared by the ranking and the battery sizing below.
    let curves = curves::all_interval_curves(plan, &conditions, opts.parallel);
    let energies = year::simulate_layouts(plan, &conditions, &curves, &passing, opts);
    let mut energies = energies.into_iter();
    // P50 is a mean year: a weather file of several years is scaled to one.
    let per_year = conditions.per_year_factor();
    for o in outcomes.iter_mut().filter(|o| !o.rejected()) {
        o.energy = energies.next();
        o.p90 = o.energy.as_ref().map(|e| {
            uncertainty::p50_p90(e.annual_delivered_kwh() * per_year, &plan.model.uncertainty)
        });
    }
    let group_ids: Vec<String> = plan.groups.iter().map(|g| g.id.clone()).collect();
    let light = light::group_monthly(&conditions, &group_ids);
    let horizontal_kwh_m2 = light::horizontal_monthly_kwh_m2(&conditions);
    let months_present = light::months_present(&conditions);
    let winter_months = rank::winter_months(&horizontal_kwh_m2, &months_present);
    rank::rank(&mut outcomes, criterion, &months_present, &winter_months);
    let (sizing, module_sizing) = match outcomes.iter().find(|o| o.rank == Some(1)) {
        Some(best) => size_best(
            plan,
            &conditions,
            &curves,
            &temps,
            &best.layout,
            best.energy.as_ref(),
        ),
        None => (None, None),
    };
    Ok(RankResult {
        loaded,
        criterion,
        temps,
        horizontal_kwh_m2,
        months_present,
        winter_months,
        light,
        outcomes,
        listed: candidates.listed,
        pruned: candidates.pruned,
        sizing,
        module_sizing,
    })
}

pub fn rank(r: &RankRequest, on_layout_done: &(dyn Fn() + Sync)) -> Result<Outcome, Error> {
    // The month × hour gain picture needs the per-interval rows, so any export keeps them.
    let result = simulate_and_rank(
        &r.plan,
        r.criterion,
        year::RunOptions {
            parallel: true,
            hourly: r.out.is_some(),
            on_layout_done: Some(on_layout_done),
        },
    )?;
    let nothing_passed = result.outcomes.iter().all(|o| o.rank.is_none());
    let mut stdout = match r.format {
        OutputFormat::Table => io::terminal::ranking(&result),
        OutputFormat::Json => io::json::ranking_json(&result)?,
    };
    if let Some(dir) = &r.out {
        let written = io::export::write_outputs(
            &result,
            dir,
            &io::export::ExportOptions { hourly: r.hourly },
        )?;
        if r.format == OutputFormat::Table {
            stdout.push_str(&format!(
                "\nWrote {} files to {}:\n",
                written.len(),
                dir.display()
            ));
            for p in &written {
                let name = p.file_name().map_or_else(
                    || p.display().to_string(),
                    |n| n.to_string_lossy().into_owned(),
                );
                stdout.push_str(&format!("  {name}\n"));
            }
        }
    }
    Ok(Outcome {
        stdout,
        warnings: result.loaded.warning_texts(),
        nothing_passed,
    })
}
