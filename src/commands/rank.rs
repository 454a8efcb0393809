//! `wirerank rank` (and the no-argument demo): load, check, simulate, rank, size, write.

use crate::commands::load::load;
use crate::commands::{Outcome, OutputFormat, PlanSource, RankRequest};
use crate::design::assign;
use crate::design::candidates::candidate_layouts;
use crate::design::rules::{self, design_temperatures};
use crate::design::sizing::size_best;
use crate::error::Error;
use crate::input::layout;
use crate::io;
use crate::results::explain::difference_by_cause;
use crate::results::light;
use crate::results::recommend::recommend;
use crate::results::summary::LayoutSummary;
use crate::results::{rank, uncertainty, AssignmentGain, AssignmentReport, RankResult};
use crate::sim::conditions;
use crate::sim::{curves, year};

/// Loads, checks, simulates and ranks.
///
/// # Errors
/// As [`load`].
pub fn simulate_and_rank(
    source: &PlanSource,
    criterion: Option<rank::Criterion>,
    opts: year::RunOptions,
) -> Result<RankResult, Error> {
    let loaded = load(source)?;
    let plan = &loaded.plan;
    let criterion = criterion.unwrap_or(rank::Criterion::default_for(plan.consumption.is_some()));
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
            summary: None,
            rank: None,
            score_kwh: None,
            p90: None,
            difference: Vec::new(),
        })
        .collect();
    let conditions = conditions::phase1(plan, &loaded.weather, &loaded.site);
    // The substring curves are shared by the ranking and the battery sizing below (held for
    // a file of up to a leap year of 10-minute data, computed block by block for a longer
    // one).
    let curves = curves::CurveSet::for_run(plan, &conditions, opts.parallel);
    // Which modules share a string: enumerated layouts take the seed assignment where shade
    // makes modules of one group differ (the plan's listed layouts are kept as written).
    let profiles = plan
        .enumerate_all
        .then(|| curves::shade_profiles(plan, &conditions, &curves));
    let assigning = profiles.as_ref().is_some_and(|p| p.any_choice(plan));
    let profiles = profiles.unwrap_or_default();
    let mut id_order: Vec<(String, layout::Layout)> = Vec::new();
    if assigning {
        for o in outcomes
            .iter_mut()
            .filter(|o| !o.rejected() && o.layout.id.starts_with('E'))
        {
            let seeded = assign::seed(plan, &profiles, &o.layout);
            if seeded.inputs != o.layout.inputs {
                id_order.push((
                    o.layout.id.clone(),
                    std::mem::replace(&mut o.layout, seeded),
                ));
            }
        }
    }
    // Every figure is per mean year: a weather file of several years is scaled to one.
    let per_year = conditions.per_year_factor();
    let group_ids: Vec<String> = plan.groups.iter().map(|g| g.id.clone()).collect();
    let mut light = light::group_monthly(&conditions, &group_ids);
    light.iter_mut().for_each(|g| g.scale(per_year));
    let horizontal_kwh_m2 = light::horizontal_monthly_kwh_m2(&conditions).map(|x| x * per_year);
    let months_present = light::months_present(&conditions);
    let winter_months = rank::winter_months(&horizontal_kwh_m2, &months_present);
    let screening = screen(
        plan,
        (&conditions, &curves),
        (&temps, &months_present, &winter_months),
        criterion,
        &mut outcomes,
        opts,
    );
    let coupled_total = screening.as_ref().map(|x| x.screened + x.coupled);
    let tick = |_: usize| {
        if let (Some(done), Some(total)) = (opts.on_layout_done, coupled_total) {
            done(total);
        }
    };
    let passing: Vec<&layout::Layout> = outcomes
        .iter()
        .filter(|o| !o.rejected())
        .map(|o| &o.layout)
        .collect();
    let run_opts = match coupled_total {
        Some(_) => year::RunOptions {
            on_layout_done: opts
                .on_layout_done
                .map(|_| &tick as &(dyn Fn(usize) + Sync)),
            ..opts
        },
        None => opts,
    };
    // On a long file (curves streamed), the battery sizing reads the best layout's harvest
    // kept from this sweep instead of sweeping the file again, when that is small.
    let keep_harvest = curves.held().is_none()
        && plan.battery.model.is_some()
        && plan.consumption.is_some()
        && passing.len() * conditions.intervals.len() <= HARVEST_KEPT_MAX;
    let mut harvests: std::collections::HashMap<String, Vec<f32>> = Default::default();
    let energies = if keep_harvest {
        year::simulate_streamed(plan, &conditions, &curves, &passing, run_opts, true)
            .into_iter()
            .zip(&passing)
            .map(|((e, h), l)| {
                if let Some(h) = h {
                    harvests.insert(l.id.clone(), h);
                }
                e
            })
            .collect()
    } else {
        year::simulate_layouts(plan, &conditions, &curves, &passing, run_opts)
    };
    let mut energies = energies.into_iter();
    let fill = |o: &mut rank::LayoutOutcome, mut e: crate::sim::energy::LayoutEnergy| {
        e.scale_to_mean_year(per_year);
        rules::price_warnings(&mut o.findings, &e);
        let s = LayoutSummary::new(plan, &o.layout, &e, &temps, &months_present, &winter_months);
        // P50/P90 apply to the energy offered (what separates wirings).
        o.p90 = Some(uncertainty::p50_p90(
            s.annual_offered_kwh(),
            &plan.model.uncertainty,
        ));
        o.summary = Some(s);
        o.energy = Some(e);
    };
    for o in outcomes.iter_mut().filter(|o| !o.rejected()) {
        fill(o, energies.next().expect("one energy per passing layout"));
    }
    rank::rank(&mut outcomes, criterion);
    let summary_of = |l: &layout::Layout, mut e: crate::sim::energy::LayoutEnergy| {
        e.scale_to_mean_year(per_year);
        LayoutSummary::new(plan, l, &e, &temps, &months_present, &winter_months)
    };
    // One layout simulated alone, summarised (the id-order figures).
    let summarise = |l: &layout::Layout| {
        summary_of(l, year::simulate_one(plan, &conditions, &curves, l, false))
    };
    // A batch of layouts (a round of the swap search) simulated together, so that they share
    // their per-input work, and their keys on the ranking criterion.
    let eval = |ls: &[layout::Layout]| -> Vec<[f64; 4]> {
        let refs: Vec<&layout::Layout> = ls.iter().collect();
        let run = year::RunOptions {
            parallel: opts.parallel,
            hourly: false,
            on_layout_done: None,
        };
        year::simulate_layouts(plan, &conditions, &curves, &refs, run)
            .into_iter()
            .zip(ls)
            .map(|(e, l)| rank::sort_key(&summary_of(l, e), criterion))
            .collect()
    };
    let assignment = assigning.then(|| {
        let mut report = AssignmentReport {
            seeded: id_order.len(),
            // Each swap is a simulation of the whole file: only where the curves are held.
            swap_search: curves.held().is_some(),
            ..AssignmentReport::default()
        };
        // The swap search on the best few enumerated layouts (the rest keep the seed).
        let best: Vec<usize> = outcomes
            .iter()
            .enumerate()
            .filter(|(_, o)| o.rank.is_some() && o.layout.id.starts_with('E'))
            .map(|(k, _)| k)
            .take(if report.swap_search { SWAP_SEARCHED } else { 0 })
            .collect();
        for k in best {
            let o = &outcomes[k];
            let Some(s) = &o.summary else { continue };
            let start_key = rank::sort_key(s, criterion);
            // The search starts from the shape in id order (its seed is the current layout,
            // whose key is known).
            let shape = id_order
                .iter()
                .find(|(id, _)| *id == o.layout.id)
                .map_or(&o.layout, |(_, l)| l);
            let found = assign::search(plan, &profiles, shape, start_key, &eval, SWAP_EVALUATIONS);
            report.searched += 1;
            report.evaluations += found.evaluations;
            // Better than the seed, whether by swaps or from another start.
            if found.key > start_key {
                report.improved += 1;
                let o = &mut outcomes[k];
                if !id_order.iter().any(|(id, _)| *id == o.layout.id) {
                    id_order.push((o.layout.id.clone(), o.layout.clone()));
                }
                o.layout = found.layout;
                let e = year::simulate_one(plan, &conditions, &curves, &o.layout, opts.hourly);
                fill(o, e);
            }
        }
        report
    });
    if assignment.as_ref().is_some_and(|a| a.improved > 0) {
        rank::rank(&mut outcomes, criterion);
    }
    let recommendation = recommend(&outcomes, criterion);
    // Every other ranked layout against the recommended one, by cause.
    let best_id = recommendation.as_ref().map(|r| r.layout.clone());
    let best_energy = outcomes
        .iter()
        .find(|o| Some(&o.layout.id) == best_id.as_ref())
        .and_then(|o| o.energy.clone());
    if let Some(best) = &best_energy {
        for o in outcomes.iter_mut() {
            if let Some(e) = o
                .energy
                .as_ref()
                .filter(|_| Some(&o.layout.id) != best_id.as_ref())
            {
                o.difference = difference_by_cause(best, e);
            }
        }
    }
    let recommended = recommendation
        .as_ref()
        .and_then(|r| outcomes.iter().find(|o| o.layout.id == r.layout));
    // What choosing the modules gained for the recommended layout over id order.
    let assignment = assignment.map(|mut a| {
        a.recommended = recommended.and_then(|best| {
            let (_, plain) = id_order.iter().find(|(id, _)| *id == best.layout.id)?;
            let s = best.summary.as_ref()?;
            let p = summarise(plain);
            Some(AssignmentGain {
                layout: best.layout.id.clone(),
                score_kwh: rank::score_kwh(s, criterion),
                id_order_score_kwh: rank::score_kwh(&p, criterion),
                offered_kwh: s.annual_offered_kwh(),
                id_order_offered_kwh: p.annual_offered_kwh(),
            })
        });
        a
    });
    let (sizing, module_sizing) = match recommended {
        Some(best) => size_best(
            plan,
            &conditions,
            &curves,
            &temps,
            &best.layout,
            best.energy.as_ref(),
            harvests
                .get(&best.layout.id)
                .zip(best.energy.as_ref())
                .map(|(h, e)| (h.as_slice(), e.peak_charge_a)),
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
        recommendation,
        years: 1.0 / per_year,
        assignment,
        screening,
    })
}

/// With a battery model and more passing enumerated layouts than `model.coupled_layouts`
/// (K): screens every passing enumerated layout on the energy its controllers offer at the
/// plan's fixed charging
/// voltage (the shared per-input path), keeps the best K by the ranking criterion on that
/// energy (for `unmet`: winter, then annual offered energy) and drops the rest from
/// `outcomes`, which the battery-coupled year then runs for
/// (notebooks-free-docs/method-battery.md, "Screening"). `None` when nothing was screened.
fn screen(
    plan: &crate::input::plan::Plan,
    (conditions, curves): (&conditions::Conditions, &curves::CurveSet),
    (temps, months_present, winter_months): (&rules::DesignTemperatures, &[bool; 12], &[usize]),
    criterion: rank::Criterion,
    outcomes: &mut Vec<rank::LayoutOutcome>,
    opts: year::RunOptions,
) -> Option<crate::results::Screening> {
    let keep = plan.model.coupled_layouts;
    // The plan's listed layouts are always run with the battery: only enumerated ones
    // are screened.
    let passing: Vec<usize> = (0..outcomes.len())
        .filter(|&k| !outcomes[k].rejected() && outcomes[k].layout.id.starts_with('E'))
        .collect();
    if plan.battery.model.is_none() || passing.len() <= keep {
        return None;
    }
    let layouts: Vec<&layout::Layout> = passing.iter().map(|&k| &outcomes[k].layout).collect();
    let total = passing.len() + keep;
    let tick = |_: usize| {
        if let Some(done) = opts.on_layout_done {
            done(total);
        }
    };
    let energies = year::simulate_fixed_voltage(
        plan,
        conditions,
        curves,
        &layouts,
        year::RunOptions {
            parallel: opts.parallel,
            hourly: false,
            on_layout_done: opts
                .on_layout_done
                .map(|_| &tick as &(dyn Fn(usize) + Sync)),
        },
    );
    let per_year = conditions.per_year_factor();
    let keys: Vec<[f64; 4]> = energies
        .into_iter()
        .zip(&layouts)
        .map(|(mut e, l)| {
            e.scale_to_mean_year(per_year);
            let s = LayoutSummary::new(plan, l, &e, temps, months_present, winter_months);
            match criterion {
                rank::Criterion::Unmet => [s.winter_offered_kwh, s.annual_offered_kwh(), 0.0, 0.0],
                c => rank::sort_key(&s, c),
            }
        })
        .collect();
    let mut order: Vec<usize> = (0..passing.len()).collect();
    order.sort_by(|&a, &b| {
        keys[b]
            .iter()
            .zip(&keys[a])
            .map(|(x, y)| x.total_cmp(y))
            .find(|o| o.is_ne())
            .unwrap_or(std::cmp::Ordering::Equal)
            .then(a.cmp(&b))
    });
    let dropped: std::collections::HashSet<usize> =
        order[keep..].iter().map(|&j| passing[j]).collect();
    let mut k = 0;
    outcomes.retain(|_| {
        k += 1;
        !dropped.contains(&(k - 1))
    });
    Some(crate::results::Screening {
        screened: passing.len(),
        coupled: keep,
        charge_v: plan.battery.charge_v,
    })
}

/// Most interval values (layouts × intervals, 4 bytes each) of controller output kept from
/// a streamed ranking sweep for the battery sizing: 16 M, 64 MB.
const HARVEST_KEPT_MAX: usize = 16_000_000;

/// How many of the best enumerated layouts the swap search refines, and its simulation
/// budget per layout (notebooks-free-docs/method-assignment.md).
pub const SWAP_SEARCHED: usize = 3;
pub const SWAP_EVALUATIONS: usize = 400;

pub fn rank(r: &RankRequest, on_layout_done: &(dyn Fn(usize) + Sync)) -> Result<Outcome, Error> {
    // The browser is looked for first: without one, --pdf fails before anything is written.
    let browser = if r.pdf {
        let found = io::report_pdf::find_chromium().map_err(|why| {
            Error::Usage(format!(
                "--pdf: {why}. Nothing was written; without --pdf, --out still writes report.html, which any browser can print"
            ))
        })?;
        Some(found)
    } else {
        None
    };
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
        OutputFormat::Table => io::terminal::ranking_with(&result, r.wiring, r.top),
        OutputFormat::Json => io::json::ranking_json(&result)?,
    };
    if let Some(dir) = &r.out {
        let written = io::export::write_outputs(
            &result,
            dir,
            &io::export::ExportOptions {
                hourly: r.hourly,
                diagrams: r.diagrams.clone(),
                pdf_browser: browser,
            },
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
        warnings: {
            let mut w = result.loaded.warning_texts();
            w.extend(io::terminal::facing_away_notes(&result));
            w
        },
        nothing_passed,
    })
}
