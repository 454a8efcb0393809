//! JSON on stdout (`rank --format json`): the schema is documented in
//! notebooks-free-docs/json-output.md.

use serde_json::{json, Map, Value};

use crate::error::Error;
use crate::limits::Severity;
use crate::phase2::Step;
use crate::report::CAUTIONS;
use crate::RankResult;

/// Schema version of the JSON output; bumped on any incompatible change.
pub const JSON_SCHEMA_VERSION: u32 = 1;

/// Rounds to a fixed number of decimals so that output is stable and readable.
fn r3(x: f64) -> f64 {
    (x * 1000.0).round() / 1000.0
}

/// The ranking as one JSON document.
///
/// # Errors
/// Never in practice (serialising plain values); kept for the output error path.
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
                .map(|f| format!("{}: {}", f.rule, f.message))
                .collect();
            let mut v = json!({
                "name": o.layout.display_name(),
                "code": o.layout.code,
                "status": if o.rank.is_some() { "ranked" } else { "rejected" },
                "rank": o.rank,
                "reasons": reasons,
                "warnings": warnings,
                "modules_used": o.layout.modules_used,
                "mixed_orientation": o.layout.mixed_orientation,
                "inputs": o.layout.inputs.iter().map(|w| json!({
                    "controller": plan.controllers[w.controller].id,
                    "series": w.series(),
                    "parallel": w.parallel(),
                    "strings": w.strings.iter().map(|s| s.iter().map(|&m| plan.modules[m].id.clone()).collect::<Vec<_>>()).collect::<Vec<_>>(),
                })).collect::<Vec<_>>(),
                "score_kwh": o.score_kwh.map(r3),
                "annual_kwh": Value::Null,
                "monthly_kwh": Value::Null,
                "low_sun_kwh": Value::Null,
                "awake_hours": Value::Null,
                "potential_kwh": Value::Null,
                "other_tracking_kwh": Value::Null,
                "p90_1y_kwh": o.p90.map(|p| r3(p.p90_1y)),
                "p90_10y_kwh": o.p90.map(|p| r3(p.p90_10y)),
                "unmet_kwh": Value::Null,
                "losses_kwh": Value::Null,
            });
            if let Some(e) = &o.energy {
                let mut losses = Map::new();
                for (k, s) in Step::ALL.iter().enumerate() {
                    losses.insert(s.key().to_string(), json!(r3(e.step_total_wh(k) / 1000.0)));
                }
                v["annual_kwh"] = json!(r3(e.annual_delivered_kwh()));
                v["monthly_kwh"] = json!(e.monthly_kwh().map(r3));
                v["low_sun_kwh"] = json!(r3(e.low_sun_wh.iter().sum::<f64>() / 1000.0));
                v["awake_hours"] = json!(r3(e.awake_h.iter().sum::<f64>()));
                v["potential_kwh"] = json!(r3(e.potential_wh.iter().sum::<f64>() / 1000.0));
                if plan.consumption.is_some() {
                    v["unmet_kwh"] = json!(r3(e.unmet_wh.iter().sum::<f64>() / 1000.0));
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
        "criterion": r.criterion.describe(),
        "winter_months": r.winter_months.iter().map(|m| m + 1).collect::<Vec<_>>(),
        "months_present": r.months_present,
        "limit_temperatures_c": { "min_air": r.temps.min_air_c, "max_air": r.temps.max_air_c },
        "battery_charge_v": plan.battery.charge_v,
        "p90_inputs": {
            "irradiance_variability_frac": plan.model.uncertainty.variability_frac,
            "model_uncertainty_frac": plan.model.uncertainty.model_frac,
            "method": "normal approximation: P90 = P50 − 1.2816 σ; σ₁ = √(variability² + model²); σ₁₀ = √(variability²/10 + model²)"
        },
        "layouts": layouts,
        "cautions": CAUTIONS.replace('\n', " "),
    });
    serde_json::to_string_pretty(&doc)
        .map(|s| s + "\n")
        .map_err(|e| Error::Usage(format!("cannot format JSON: {e}")))
}
