//! `wirerank curve`: the current–voltage points of a module type, or of a layout's array as
//! each controller input sees it in one weather interval.

use std::fmt::Write as _;

use crate::commands::load::load;
use crate::commands::{CurveRequest, CurveTarget, LayoutRef, Outcome};
use crate::design::candidates::candidate_layouts;
use crate::design::rules::design_temperatures;
use crate::error::Error;
use crate::physics::wiring::ArrayCurve;

/// Points of one curve, evenly spaced in voltage from 0 to Voc, as (V, I, P).
fn sample_curve(voc_v: f64, n: usize, current_at: impl Fn(f64) -> f64) -> Vec<(f64, f64, f64)> {
    let n = n.max(2);
    (0..n)
        .map(|k| {
            let v = voc_v * k as f64 / (n - 1) as f64;
            let i = current_at(v).max(0.0);
            (v, i, v * i)
        })
        .collect()
}

fn print_points(out: &mut String, label: &str, pts: &[(f64, f64, f64)], csv: bool) {
    for (v, i, p) in pts {
        if csv {
            let _ = writeln!(out, "{label},{v:.4},{i:.4},{p:.4}");
        } else {
            let _ = writeln!(out, "  {v:>9.3} {i:>9.4} {p:>10.3}");
        }
    }
}

/// `wirerank curve`: I–V and P–V points with the maximum power point(s).
///
/// # Errors
/// A plan that fails to load, an unknown module type, layout or stamp, or out-of-range values.
pub fn curve(r: &CurveRequest) -> Result<Outcome, Error> {
    if r.points < 2 || r.points > 10_000 {
        return Err(Error::Usage(format!(
            "--points = {} is outside 2 to 10000",
            r.points
        )));
    }
    let mut out = String::new();
    let mut warnings = Vec::new();
    if r.csv {
        out.push_str("curve,voltage_v,current_a,power_w\n");
    }
    match &r.target {
        CurveTarget::Module {
            module_type,
            irradiance_w_m2,
            cell_temp_c,
        } => {
            let plan = match &r.plan {
                crate::commands::PlanSource::Demo => crate::io::plan_toml::parse_plan(
                    crate::commands::load::DEMO_PLAN,
                    "demo plan",
                    std::path::Path::new(""),
                )?,
                crate::commands::PlanSource::File(p) => crate::io::plan_toml::read_plan(p)?,
            };
            warnings.extend(plan.warnings.iter().cloned());
            if !(0.0..=2000.0).contains(irradiance_w_m2) {
                return Err(Error::Usage(format!(
                    "--irradiance-w-m2 = {irradiance_w_m2} is outside 0 to 2000"
                )));
            }
            if !(-60.0..=100.0).contains(cell_temp_c) {
                return Err(Error::Usage(format!(
                    "--cell-temp-c = {cell_temp_c} is outside -60 to 100"
                )));
            }
            let t = match module_type {
                Some(id) => plan
                    .module_types
                    .iter()
                    .find(|t| &t.id == id)
                    .ok_or_else(|| {
                        let known: Vec<&str> =
                            plan.module_types.iter().map(|t| t.id.as_str()).collect();
                        Error::Usage(format!(
                            "--module-type {id:?} is not in the plan; known: {}",
                            known.join(", ")
                        ))
                    })?,
                None => &plan.module_types[0],
            };
            let op = t.reference.at(*irradiance_w_m2, *cell_temp_c);
            let mpp = op.max_power_point();
            let pts = sample_curve(op.voc_v(), r.points, |v| op.current_at(v));
            if !r.csv {
                let _ = writeln!(
                    out,
                    "module type {} at {irradiance_w_m2:.0} W/m², cell {cell_temp_c:.1} °C (De Soto 2006 single-diode fit)",
                    t.id
                );
                let _ = writeln!(
                    out,
                    "  Voc {:.3} V  Isc {:.4} A  MPP {:.3} V × {:.4} A = {:.2} W   (datasheet STC: Voc {} V, Isc {} A, Vmp {} V, Imp {} A)",
                    op.voc_v(),
                    op.isc_a(),
                    mpp.v,
                    mpp.i,
                    mpp.p,
                    t.datasheet.voc_v,
                    t.datasheet.isc_a,
                    t.datasheet.vmp_v,
                    t.datasheet.imp_a
                );
                let _ = writeln!(out, "  {:>9} {:>9} {:>10}", "V", "A", "W");
            }
            print_points(&mut out, &t.id, &pts, r.csv);
        }
        CurveTarget::Layout { layout, at } => {
            let loaded = load(&r.plan)?;
            warnings = loaded.warning_texts();
            let plan = &loaded.plan;
            let temps = design_temperatures(plan, &loaded.weather);
            let candidates = candidate_layouts(plan, &temps)?;
            let chosen = match layout {
                LayoutRef::Id(name) => candidates
                    .layouts
                    .iter()
                    .find(|l| &l.id == name)
                    .or_else(|| {
                        candidates.layouts.iter().find(|l| {
                            &l.code == name || l.label.as_deref() == Some(name.as_str())
                        })
                    })
                    .ok_or_else(|| {
                        Error::Usage(format!(
                            "--layout {} is not a layout of the plan: give its id as the reports print it ({}), its code or its name, or use --rank N",
                            crate::io::terminal::quoted(name),
                            id_range(&candidates.layouts)
                        ))
                    })?,
                LayoutRef::Rank(n) => {
                    let ranked = crate::commands::rank::simulate_and_rank(
                        &r.plan,
                        None,
                        crate::sim::year::RunOptions::default(),
                    )?;
                    let id = ranked
                        .outcomes
                        .iter()
                        .find(|o| o.rank == Some(*n))
                        .map(|o| o.layout.id.clone())
                        .ok_or_else(|| {
                            let count = ranked.outcomes.iter().filter(|o| o.rank.is_some()).count();
                            Error::Usage(format!(
                                "--rank {n}: the plan has {count} ranked layout{}",
                                if count == 1 { "" } else { "s" }
                            ))
                        })?;
                    candidates
                        .layouts
                        .iter()
                        .find(|l| l.id == id)
                        .ok_or_else(|| Error::Usage(format!("layout {id} is not a candidate")))?
                }
            };
            let rejected: Vec<String> = crate::design::rules::check_layout(plan, chosen, &temps)
                .into_iter()
                .filter(|f| f.severity == crate::design::rules::Severity::Reject)
                .map(|f| format!("{}: {}", f.rule, f.message))
                .collect();
            if !rejected.is_empty() && !r.csv {
                let _ = writeln!(
                    out,
                    "note: {} is rejected by the limits and never ranked ({}); its curve is shown for study only",
                    chosen.id,
                    rejected.join("; ")
                );
            }
            let k = (0..loaded.weather.len())
                .find(|&k| &loaded.weather.stamp_text(k) == at)
                .ok_or_else(|| {
                    Error::Usage(format!(
                        "--at {at:?} is not a stamp of {} (write it as in the file, e.g. {})",
                        loaded.weather.source,
                        loaded.weather.stamp_text(0)
                    ))
                })?;
            let cond = crate::sim::conditions::phase1(plan, &loaded.weather, &loaded.site);
            if !r.csv {
                let _ = writeln!(
                    out,
                    "layout {} {} at {at} (weather line {}), as each controller input sees it (cables included)",
                    chosen.id,
                    chosen.display_name(),
                    loaded.weather.source_line.get(k).copied().unwrap_or(0)
                );
            }
            match crate::sim::year::layout_curves_at(plan, &cond, chosen, k) {
                None => {
                    if !r.csv {
                        let _ = writeln!(out, "  no light on the modules in this interval");
                    }
                }
                Some(curves) => {
                    for (c, curve) in curves {
                        let ctl = &plan.controllers[c];
                        print_array(&mut out, &ctl.id, &curve, r.points, r.csv);
                    }
                }
            }
        }
    }
    Ok(Outcome {
        stdout: out,
        warnings,
        ..Outcome::default()
    })
}

fn print_array(out: &mut String, label: &str, curve: &ArrayCurve, points: usize, csv: bool) {
    let voc = curve.voc_v();
    let pts = sample_curve(voc, points, |v| curve.current_at(v));
    if !csv {
        let maxima = curve.local_maxima(0.0, voc);
        let _ = writeln!(
            out,
            "input {label}: Voc {voc:.2} V, {} local power maxim{}",
            maxima.len(),
            if maxima.len() == 1 { "um" } else { "a" }
        );
        for m in &maxima {
            let _ = writeln!(
                out,
                "  maximum at {:.2} V × {:.3} A = {:.1} W",
                m.v, m.i, m.p
            );
        }
        let _ = writeln!(out, "  {:>9} {:>9} {:>10}", "V", "A", "W");
    }
    print_points(out, label, &pts, csv);
}

/// `L1–L6, E1–E40` for an error message.
fn id_range(layouts: &[crate::input::layout::Layout]) -> String {
    let span = |prefix: &str| {
        let n = layouts.iter().filter(|l| l.id.starts_with(prefix)).count();
        match n {
            0 => None,
            1 => Some(format!("{prefix}1")),
            _ => Some(format!("{prefix}1–{prefix}{n}")),
        }
    };
    [span("L"), span("E")]
        .into_iter()
        .flatten()
        .collect::<Vec<_>>()
        .join(", ")
}
