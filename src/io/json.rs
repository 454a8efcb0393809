//! JSON on stdout (`rank --format json`): the schema is documented in
//! notebooks-free-docs/json-output.md.

use serde_json::{json, Map, Value};

use crate::design::cautions::CAUTIONS;
use crate::design::rules::Severity;
use crate::design::sizing::ModuleAnswer;
use crate::error::Error;
use crate::results::explain::totals;
use crate::results::RankResult;
use crate::sim::energy::Step;

/// Schema version of the JSON output; bumped on any incompatible change.
pub const JSON_SCHEMA_VERSION: u32 = 2;

/// Rounds to a fixed number of decimals so that output is stable and readable.
fn r3(x: f64) -> f64 {
    (x * 1000.0).round() / 1000.0
}

/// The ranking as one JSON document.
///
/// # Errors
/// Never in practice (serialising plain values); kept for the output error path.
/// The sizing helper's answers for the best layout, or null without a load and a battery.
fn sizing_json(r: &RankResult) -> Value {
    if r.sizing.is_none() && r.module_sizing.is_none() {
        return Value::Null;
    }
    let battery = r.sizing.as_ref().map(|s| {
        json!({
            "layout": s.layout,
            "target_unmet_kwh": r3(s.target_unmet_kwh),
            "step_ah": s.step_ah,
            "planned_ah": s.planned_ah,
            "smallest_ah": s.battery_ah,
            "set_by": s.set_by.map(|c| c.key()),
            "search_limit_ah": s.limit_ah,
            "constraints": {
                "unmet_target_ah": s.unmet_ah,
                "autonomy_days": s.autonomy_days,
                "heaviest_day_wh": r3(s.heaviest_day_wh),
                "autonomy_ah": s.autonomy_ah,
                "peak_charge_a": r3(s.peak_charge_a),
                "charge_rate_c": s.charge_rate_c,
                "charge_rate_ah": s.charge_rate_ah,
                "peak_load_w": r3(s.peak_load_w),
                "discharge_rate_c": s.discharge_rate_c,
                "discharge_rate_ah": s.discharge_rate_ah,
            },
        })
    });
    let modules = r.module_sizing.as_ref().map(|m| {
        let mut v = json!({
            "layout": m.layout,
            "target_unmet_kwh": r3(m.target_unmet_kwh),
            "unmet_kwh": r3(m.unmet_kwh),
        });
        match &m.answer {
            ModuleAnswer::NoneNeeded => {
                v["answer"] = json!("none_needed");
                v["extra_modules"] = json!(0);
            }
            ModuleAnswer::Found {
                modules,
                strings,
                code,
                unmet_kwh,
            } => {
                v["answer"] = json!("found");
                v["extra_modules"] = json!(modules);
                v["extra_strings"] = json!(strings);
                v["code"] = json!(code);
                v["unmet_kwh_after"] = json!(r3(*unmet_kwh));
            }
            ModuleAnswer::NotReached {
                tried_modules,
                unmet_kwh,
                stopped,
            } => {
                v["answer"] = json!("not_reached");
                v["extra_modules"] = Value::Null;
                v["tried_modules"] = json!(tried_modules);
                v["unmet_kwh_after"] = json!(r3(*unmet_kwh));
                v["stopped"] = json!(stopped);
            }
        }
        v
    });
    json!({ "battery": battery, "modules": modules })
}

pub fn ranking_json(r: &RankResult) -> Result<String, Error> {
    let plan = &r.loaded.plan;
    let site = &r.loaded.site;
    let layouts: Vec<Value> = r
        .outcomes
        .iter()
        .map(|o| {
            let reasons: Vec<String> = o
                .findings
                .iter()
                .filter(|f| f.severity == Severity::Reject)
                .map(|f| format!("{}: {}", f.rule, f.message))
                .collect();
            let warnings: Vec<String> = o
                .findings
                .iter()
                .filter(|f| f.severity == Severity::Warn)
                .map(|f| format!("{}: {}", f.rule, f.text()))
                .collect();
            let warning_costs: Vec<Value> = o
                .findings
                .iter()
                .filter_map(|f| {
                    let c = f.cost.as_ref()?;
                    Some(json!({
                        "rule": f.rule.key(),
                        "controller": o.layout.inputs.get(f.input).map(|w| plan.controllers[w.controller].id.clone()),
                        "step": c.step.key(),
                        "kwh": r3(c.kwh),
                    }))
                })
                .collect();
            let mut v = json!({
                "id": o.layout.id,
                "name": o.layout.display_name(),
                "code": o.layout.code,
                "status": if o.rank.is_some() { "ranked" } else { "rejected" },
                "rank": o.rank,
                "reasons": reasons,
                "warnings": warnings,
                "warning_costs": warning_costs,
                "modules_used": o.layout.modules_used,
                "mixed_orientation": o.layout.mixed_orientation,
                "inputs": o.layout.inputs.iter().map(|w| json!({
                    "controller": plan.controllers[w.controller].id,
                    "series": w.series(),
                    "parallel": w.parallel(),
                    "strings": w.strings.iter().map(|s| s.iter().map(|&m| plan.modules[m].id.clone()).collect::<Vec<_>>()).collect::<Vec<_>>(),
                })).collect::<Vec<_>>(),
                "wiring": o.layout.wiring_rows(plan).iter().map(|w| json!({
                    "input": w.input,
                    "string": w.string,
                    "position": w.position,
                    "module": w.module,
                    "group": w.group,
                })).collect::<Vec<_>>(),
                "score_kwh": o.score_kwh.map(r3),
                "offered_kwh": Value::Null,
                "delivered_kwh": Value::Null,
                "monthly_offered_kwh": Value::Null,
                "monthly_delivered_kwh": Value::Null,
                "low_sun_offered_kwh": Value::Null,
                "low_sun_delivered_kwh": Value::Null,
                "worst_month": Value::Null,
                "days_short": Value::Null,
                "difference_from_recommended_kwh": Value::Null,
                "annual_kwh": Value::Null,
                "monthly_kwh": Value::Null,
                "low_sun_kwh": Value::Null,
                "awake_hours": Value::Null,
                "potential_kwh": Value::Null,
                "other_tracking_kwh": Value::Null,
                "p90_1y_kwh": o.p90.map(|p| r3(p.p90_1y)),
                "p90_10y_kwh": o.p90.map(|p| r3(p.p90_10y)),
                "harvested_kwh": Value::Null,
                "curtailed_kwh": Value::Null,
                "used_kwh": Value::Null,
                "unmet_kwh": Value::Null,
                "unmet_days": Value::Null,
                "lowest_soc_pct": Value::Null,
                "losses_kwh": Value::Null,
            });
            if let Some(s) = &o.summary {
                v["offered_kwh"] = json!(r3(s.annual_offered_kwh()));
                v["delivered_kwh"] = json!(r3(s.annual_delivered_kwh()));
                v["monthly_offered_kwh"] = json!(s.offered_kwh.map(r3));
                v["monthly_delivered_kwh"] = json!(s.delivered_kwh.map(r3));
                v["low_sun_offered_kwh"] = json!(r3(s.annual_low_sun_offered_kwh()));
                v["low_sun_delivered_kwh"] = json!(r3(s.annual_low_sun_delivered_kwh()));
                v["worst_month"] = json!(s.worst_month.map(|m| m + 1));
                if plan.consumption.is_some() {
                    v["days_short"] = json!(r3(s.annual_days_short()));
                }
            }
            if !o.difference.is_empty() {
                let mut d = Map::new();
                for (c, kwh) in &o.difference {
                    d.insert(c.key().to_string(), json!(r3(*kwh)));
                }
                let (offered, delivered) = totals(&o.difference);
                d.insert("total_offered".to_string(), json!(r3(offered)));
                d.insert("total_delivered".to_string(), json!(r3(delivered)));
                v["difference_from_recommended_kwh"] = Value::Object(d);
            }
            if let Some(e) = &o.energy {
                let mut losses = Map::new();
                for s in Step::ALL {
                    losses.insert(s.key().to_string(), json!(r3(e.step_total_wh(s) / 1000.0)));
                }
                v["annual_kwh"] = json!(r3(e.annual_delivered_kwh()));
                v["monthly_kwh"] = json!(e.monthly_kwh().map(r3));
                v["low_sun_kwh"] = json!(r3(e.low_sun_offered_wh.iter().sum::<f64>() / 1000.0));
                v["awake_hours"] = json!(r3(e.awake_h.iter().sum::<f64>()));
                v["potential_kwh"] = json!(r3(e.potential_wh.iter().sum::<f64>() / 1000.0));
                v["curtailed_kwh"] = json!(r3(e.step_total_wh(Step::Curtailed) / 1000.0));
                v["harvested_kwh"] = json!(r3(e.annual_offered_kwh()));
                if plan.consumption.is_some() {
                    v["used_kwh"] = json!(r3(e.load_served_wh.iter().sum::<f64>() / 1000.0));
                    v["unmet_kwh"] = json!(r3(e.unmet_wh.iter().sum::<f64>() / 1000.0));
                    v["unmet_days"] = json!(e.unmet_days.iter().sum::<u32>());
                }
                if plan.battery.model.is_some() {
                    let lowest = e
                        .min_soc_frac
                        .iter()
                        .copied()
                        .filter(|x| !x.is_nan())
                        .fold(f64::INFINITY, f64::min);
                    if lowest.is_finite() {
                        v["lowest_soc_pct"] = json!(r3(100.0 * lowest));
                    }
                }
                v["other_tracking_kwh"] = json!(r3(e.other_tracking_wh.iter().sum::<f64>() / 1000.0));
                v["losses_kwh"] = Value::Object(losses);
            }
            v
        })
        .collect();
    let doc = json!({
        "schema_version": JSON_SCHEMA_VERSION,
        "wirerank_version": env!("CARGO_PKG_VERSION"),
        "plan": plan.source.display().to_string(),
        "weather": r.loaded.weather.source,
        "site": {
            "name": site.name,
            "latitude_deg": site.latitude_deg,
            "longitude_deg": site.longitude_deg,
            "elevation_m": site.elevation_m,
            "utc_offset_h": site.utc_offset_h,
        },
        "criterion": r.criterion.key(),
        "criterion_text": r.criterion.describe(),
        "years_averaged": r3(r.years),
        "recommendation": r.recommendation.as_ref().map(|rec| json!({
            "layout": rec.layout,
            "criterion": rec.criterion.key(),
            "reason": rec.reason,
            "runner_up": rec.runner_up,
            "tie": rec.tie,
            "tie_break": rec.tie_break,
        })),
        "screening": r.screening.as_ref().map(|x| json!({
            "screened_layouts": x.screened,
            "coupled_layouts": x.coupled,
            "charge_v": x.charge_v,
        })),
        "assignment": r.assignment.as_ref().map(|a| json!({
            "seeded_layouts": a.seeded,
            "swap_search": a.swap_search,
            "searched_layouts": a.searched,
            "improved_layouts": a.improved,
            "simulations": a.evaluations,
            "recommended": a.recommended.as_ref().map(|g| json!({
                "layout": g.layout,
                "score_kwh": r3(g.score_kwh),
                "id_order_score_kwh": r3(g.id_order_score_kwh),
                "offered_kwh": r3(g.offered_kwh),
                "id_order_offered_kwh": r3(g.id_order_offered_kwh),
            })),
        })),
        "winter_months": r.winter_months.iter().map(|m| m + 1).collect::<Vec<_>>(),
        "months_present": r.months_present,
        "limit_temperatures_c": { "min_air": r.temps.min_air_c, "max_air": r.temps.max_air_c },
        "battery_charge_v": plan.battery.charge_v,
        "notes": crate::design::rules::current_rating_notes(plan),
        "p90_inputs": {
            "irradiance_variability_frac": plan.model.uncertainty.variability_frac,
            "model_uncertainty_frac": plan.model.uncertainty.model_frac,
            "method": "normal approximation: P90 = P50 − 1.2816 σ; σ₁ = √(variability² + model²); σ₁₀ = √(variability²/10 + model²)"
        },
        "layouts": layouts,
        "sizing": sizing_json(r),
        "cautions": CAUTIONS.replace('\n', " "),
    });
    serde_json::to_string_pretty(&doc)
        .map(|s| s + "\n")
        .map_err(|e| Error::Usage(format!("cannot format JSON: {e}")))
}
