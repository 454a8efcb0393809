//! `[battery]` and `[load]`: the battery's voltages and, when a capacity is given, its
//! model (chemistry, depth of discharge, efficiency, charge stages); the daily load profile.
//!
//! The battery's behaviour over the year is `physics::battery`; this file only checks the
//! numbers and builds its parameters.

use crate::error::PlanError;
use crate::input::plan::{Battery, Consumption, DEFAULT_AUTONOMY_DAYS};
use crate::num::Num;

use super::ctx::Ctx;
use super::raw::{RawBattery, RawLoad, S};

/// `[battery]`, which every plan needs.
pub(super) fn require_battery(ctx: &Ctx, raw: Option<&RawBattery>) -> Result<Battery, PlanError> {
    match raw {
        Some(b) => validate_battery(ctx, b),
        None => Err(PlanError::Missing {
            file: ctx.file.clone(),
            key: "battery".into(),
            hint: "add [battery] with nominal_v = 12, 24 or 48".into(),
        }),
    }
}

/// `[load]`, if given; it needs the battery model (`battery.capacity_ah`).
pub(super) fn validate_optional_load(
    ctx: &Ctx,
    raw: Option<&S<RawLoad>>,
    battery: &Battery,
) -> Result<Option<Consumption>, PlanError> {
    let consumption = raw.map(|l| validate_load(ctx, l)).transpose()?;
    if consumption.is_some() && battery.model.is_none() {
        return Err(ctx.err(
            raw.map_or(0..0, |l| l.span()),
            "battery.capacity_ah",
            "[load] needs a battery model: give battery.capacity_ah (and chemistry)".into(),
        ));
    }
    Ok(consumption)
}

fn validate_battery(ctx: &Ctx, b: &RawBattery) -> Result<Battery, PlanError> {
    use crate::physics::battery::{split_round_trip, BatteryParams, BatterySpec, Chemistry};
    let nominal_v = ctx.range(&b.nominal_v, "battery.nominal_v", 6.0, 60.0)?;
    // Common practice, no source: lead-acid charging at 2.267 V per 2 V cell (13.6 V on 12 V).
    let default_charge = nominal_v * 13.6 / 12.0;
    let charge_v = ctx.opt_range(
        &b.charge_v,
        "battery.charge_v",
        nominal_v * 0.9,
        nominal_v * 1.35,
        default_charge,
    )?;
    let model_keys = [
        (&b.usable_dod_pct, "usable_dod_pct"),
        (&b.round_trip_efficiency_pct, "round_trip_efficiency_pct"),
        (&b.initial_soc_pct, "initial_soc_pct"),
        (&b.absorption_v, "absorption_v"),
        (&b.float_v, "float_v"),
        (&b.max_charge_rate_c, "max_charge_rate_c"),
        (&b.max_discharge_rate_c, "max_discharge_rate_c"),
        (&b.min_charge_air_c, "min_charge_air_c"),
    ];
    let Some(cap) = &b.capacity_ah else {
        for (v, name) in model_keys {
            if let Some(v) = v {
                return Err(ctx.err(
                    v.span(),
                    &format!("battery.{name}"),
                    format!("battery.{name} needs battery.capacity_ah (the battery model)"),
                ));
            }
        }
        return Ok(Battery {
            nominal_v,
            charge_v,
            model: None,
        });
    };
    let capacity_ah = ctx.above(cap, "battery.capacity_ah", 0.0, 1e9)?;
    let chemistry = match b.chemistry.as_ref().map(|c| c.get_ref().as_str()) {
        None | Some("lead-acid") => Chemistry::LeadAcid,
        Some("lifepo4") => Chemistry::LiFePo4,
        Some(other) => {
            let span = b.chemistry.as_ref().map_or(cap.span(), |c| c.span());
            return Err(ctx.err(
                span,
                "battery.chemistry",
                format!(
                    "battery.chemistry = {other:?} is not known; use \"lead-acid\" or \"lifepo4\""
                ),
            ));
        }
    };
    let mut p = BatteryParams::defaults(chemistry, capacity_ah, nominal_v).map_err(|e| {
        ctx.err(
            b.nominal_v.span(),
            "battery.nominal_v",
            format!("battery.{e}"),
        )
    })?;
    if let Some(v) = &b.usable_dod_pct {
        p.usable_dod_frac = ctx.above(v, "battery.usable_dod_pct", 0.0, 100.0)? / 100.0;
    }
    if let Some(v) = &b.round_trip_efficiency_pct {
        let rt = ctx.above(v, "battery.round_trip_efficiency_pct", 0.0, 100.0)? / 100.0;
        let (c, d) = split_round_trip(rt).map_err(|e| {
            ctx.err(
                v.span(),
                "battery.round_trip_efficiency_pct",
                format!("battery.{e}"),
            )
        })?;
        p.charge_efficiency_frac = c;
        p.discharge_efficiency_frac = d;
    }
    if let Some(v) = &b.initial_soc_pct {
        p.initial_soc_frac = ctx.range(v, "battery.initial_soc_pct", 0.0, 100.0)? / 100.0;
    }
    if let Some(v) = &b.absorption_v {
        p.absorption_v = ctx.above(v, "battery.absorption_v", 0.0, 100.0)?;
    }
    if let Some(v) = &b.float_v {
        p.float_v = ctx.above(v, "battery.float_v", 0.0, 100.0)?;
    }
    if let Some(v) = &b.max_charge_rate_c {
        p.max_charge_rate_c = ctx.above(v, "battery.max_charge_rate_c", 0.0, 10.0)?;
    }
    if let Some(v) = &b.max_discharge_rate_c {
        p.max_discharge_rate_c = ctx.above(v, "battery.max_discharge_rate_c", 0.0, 10.0)?;
    }
    if let Some(v) = &b.min_charge_air_c {
        p.min_charge_air_c = Some(ctx.range(v, "battery.min_charge_air_c", -40.0, 25.0)?);
    }
    let spec =
        BatterySpec::new(p).map_err(|e| ctx.err(cap.span(), "battery", format!("battery.{e}")))?;
    Ok(Battery {
        nominal_v,
        charge_v,
        model: Some(spec),
    })
}

/// Largest load in one hour of the day, Wh: 100 kWh in an hour is a hundred times what a
/// battery system of this size serves; the bound keeps every sum finite.
pub(super) const MAX_HOURLY_LOAD_WH: f64 = 100_000.0;

fn hours24(ctx: &Ctx, v: &S<Vec<f64>>, key: &str) -> Result<[f64; 24], PlanError> {
    let x = v.get_ref();
    if x.len() != 24 {
        return Err(ctx.err(
            v.span(),
            key,
            format!(
                "{key} has {} values; give 24 (Wh in each hour of the day, from 00–01)",
                x.len()
            ),
        ));
    }
    let mut out = [0.0; 24];
    for (h, w) in x.iter().enumerate() {
        if !w.is_finite() || *w < 0.0 || *w > MAX_HOURLY_LOAD_WH {
            return Err(ctx.err(
                v.span(),
                key,
                format!(
                    "{key}: hour {h} = {} is outside 0 to {} Wh (the energy the load takes in that hour)",
                    crate::num::Typed(*w),
                    Num(MAX_HOURLY_LOAD_WH)
                ),
            ));
        }
        out[h] = *w;
    }
    Ok(out)
}

fn validate_load(ctx: &Ctx, l: &S<RawLoad>) -> Result<Consumption, PlanError> {
    use crate::physics::battery::LoadProfile;
    let r = l.get_ref();
    let weekday: [[f64; 24]; 12] = match (&r.daily_wh, &r.monthly_wh) {
        (Some(d), None) => [hours24(ctx, d, "load.daily_wh")?; 12],
        (None, Some(m)) => {
            let rows = m.get_ref();
            if rows.len() != 12 {
                return Err(ctx.err(m.span(), "load.monthly_wh", format!("load.monthly_wh has {} rows; give 12 (January first), each of 24 hourly Wh", rows.len())));
            }
            let mut out = [[0.0; 24]; 12];
            for (k, row) in rows.iter().enumerate() {
                let spanned = S::new(m.span(), row.clone());
                out[k] = hours24(ctx, &spanned, &format!("load.monthly_wh[{}]", k + 1))?;
            }
            out
        }
        (Some(d), Some(_)) => {
            return Err(ctx.err(
                d.span(),
                "load.daily_wh",
                "give load.daily_wh or load.monthly_wh, not both".into(),
            ))
        }
        (None, None) => {
            return Err(ctx.err(
                l.span(),
                "load.daily_wh",
                "load.daily_wh (24 hourly Wh) or load.monthly_wh (12 × 24) is missing".into(),
            ))
        }
    };
    let weekend = r
        .weekend_daily_wh
        .as_ref()
        .map(|w| hours24(ctx, w, "load.weekend_daily_wh"))
        .transpose()?
        .map(|w| [w; 12]);
    let load = LoadProfile::new(weekday, weekend)
        .map_err(|e| ctx.err(l.span(), "load", format!("load.{e}")))?;
    Ok(Consumption {
        load,
        battery_step_ah: ctx.opt_range(
            &r.battery_step_ah,
            "load.battery_step_ah",
            1.0,
            10_000.0,
            10.0,
        )?,
        unmet_target_wh: ctx.opt_range(
            &r.unmet_target_kwh,
            "load.unmet_target_kwh",
            0.0,
            1e6,
            0.0,
        )? * 1000.0,
        autonomy_days: ctx.opt_range(
            &r.autonomy_days,
            "load.autonomy_days",
            0.0,
            30.0,
            DEFAULT_AUTONOMY_DAYS,
        )?,
    })
}
