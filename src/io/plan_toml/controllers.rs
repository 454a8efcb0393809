//! `[controller.NAME]`: an MPPT or PWM charge controller with its input limits, start and
//! stop offsets, tracker and efficiency curve, and the main cable run to the battery.
//!
//! Whether a layout fits a controller's limits is decided later by `design::rules`; here
//! only the controller's own values are checked (and that it can charge the battery).

use std::collections::BTreeMap;

use crate::error::PlanError;
use crate::input::plan::{Battery, CableRun, ControllerInput, CurrentAssumed};
use crate::physics::controller::{ControllerModel, OutputDerating, TrackerMode};

use super::cables::{conductor, cross_section};
use super::ctx::Ctx;
use super::raw::{RawController, S};

/// Every `[controller.NAME]` (at least one), in a stable order (BTreeMap: by id).
pub(super) fn validate_controllers(
    ctx: &Ctx,
    raw: Option<&BTreeMap<String, S<RawController>>>,
    battery: &Battery,
) -> Result<Vec<ControllerInput>, PlanError> {
    let mut controllers = Vec::new();
    if let Some(cs) = raw {
        for (id, c) in cs {
            controllers.push(validate_controller(ctx, id, c, battery)?);
        }
    }
    if controllers.is_empty() {
        return Err(PlanError::Missing {
            file: ctx.file.clone(),
            key: "controller".into(),
            hint: "add a [controller.NAME] table (kind = \"mppt\" or \"pwm\")".into(),
        });
    }
    Ok(controllers)
}

/// The values every kind of controller has, checked before the kind's own.
struct InputLimits {
    max_input_v: f64,
    max_input_a: f64,
    max_array_isc_a: f64,
    current_assumed: Option<CurrentAssumed>,
    max_charge_a: f64,
    start_offset_v: f64,
    stop_offset_v: f64,
    derating: Option<OutputDerating>,
}

fn validate_controller(
    ctx: &Ctx,
    id: &str,
    c: &S<RawController>,
    battery: &Battery,
) -> Result<ControllerInput, PlanError> {
    let k = |name: &str| format!("controller.{id}.{name}");
    let r = c.get_ref();
    let limits = input_limits(ctx, id, c)?;
    let model = match r.kind.get_ref().as_str() {
        "mppt" => mppt_model(ctx, id, c, &limits)?,
        "pwm" => pwm_model(ctx, id, c, &limits)?,
        other => {
            return Err(ctx.err(
                r.kind.span(),
                &k("kind"),
                format!(
                    "{} = {other:?} is not known; use \"mppt\" or \"pwm\"",
                    k("kind")
                ),
            ));
        }
    };
    let max_input_v = limits.max_input_v;
    if max_input_v <= battery.charge_v {
        return Err(ctx.err(
            r.max_input_v.span(),
            &k("max_input_v"),
            format!(
                "{} = {max_input_v} is not above the battery charging voltage {:.1} V",
                k("max_input_v"),
                battery.charge_v
            ),
        ));
    }
    let main_run = main_run(ctx, id, c)?;
    Ok(ControllerInput {
        id: id.to_string(),
        model,
        max_input_v,
        max_array_isc_a: limits.max_array_isc_a,
        current_assumed: limits.current_assumed,
        main_run,
    })
}

/// The two input current ratings: the current the controller draws (`max_input_a`, a
/// simulated limit) and the array short-circuit current it withstands (`max_array_isc_a`, a
/// hard limit). At least one is needed; a missing one is taken from the other and the
/// plan's controller says which (`CurrentAssumed`).
fn current_ratings(
    ctx: &Ctx,
    id: &str,
    c: &S<RawController>,
) -> Result<(f64, f64, Option<CurrentAssumed>), PlanError> {
    let k = |name: &str| format!("controller.{id}.{name}");
    let r = c.get_ref();
    let input = r
        .max_input_a
        .as_ref()
        .map(|v| ctx.above(v, &k("max_input_a"), 0.0, 500.0))
        .transpose()?;
    let isc = r
        .max_array_isc_a
        .as_ref()
        .map(|v| ctx.above(v, &k("max_array_isc_a"), 0.0, 500.0))
        .transpose()?;
    match (input, isc) {
        (Some(i), Some(s)) if s < i => {
            let span = r.max_array_isc_a.as_ref().map_or(c.span(), |v| v.span());
            Err(ctx.err(
                span,
                &k("max_array_isc_a"),
                format!(
                    "{} = {s} is below max_input_a = {i}: a controller cannot use more current than the array short-circuit current it withstands; check the two figures on the datasheet",
                    k("max_array_isc_a")
                ),
            ))
        }
        (Some(i), Some(s)) => Ok((i, s, None)),
        (Some(i), None) => Ok((i, i, Some(CurrentAssumed::ArrayIscFromInput))),
        (None, Some(s)) => Ok((s, s, Some(CurrentAssumed::InputFromArrayIsc))),
        (None, None) => Err(ctx.err(
            c.span(),
            &k("max_input_a"),
            format!(
                "{} is missing: give max_input_a (the most current the controller draws from the array; for PWM its rated current) and, if the datasheet has it, max_array_isc_a (the array short-circuit current it withstands)",
                k("max_input_a")
            ),
        )),
    }
}

/// `output_derating_from_c` and `output_derating_pct_per_k`: both or neither (off).
fn derating(
    ctx: &Ctx,
    id: &str,
    c: &S<RawController>,
) -> Result<Option<OutputDerating>, PlanError> {
    let k = |name: &str| format!("controller.{id}.{name}");
    let r = c.get_ref();
    match (&r.output_derating_from_c, &r.output_derating_pct_per_k) {
        (None, None) => Ok(None),
        (Some(from), Some(pct)) => Ok(Some(OutputDerating {
            from_air_c: ctx.range(from, &k("output_derating_from_c"), -40.0, 80.0)?,
            frac_per_k: ctx.above(pct, &k("output_derating_pct_per_k"), 0.0, 100.0)? / 100.0,
        })),
        (Some(v), None) | (None, Some(v)) => Err(ctx.err(
            v.span(),
            &k("output_derating_from_c"),
            format!(
                "{} and {} go together: the air temperature above which the output current is reduced, and the reduction in % of max_charge_a per kelvin above it",
                k("output_derating_from_c"),
                k("output_derating_pct_per_k")
            ),
        )),
    }
}

/// Input voltage and current, charge current, and the start/stop offsets (stop ≤ start).
fn input_limits(ctx: &Ctx, id: &str, c: &S<RawController>) -> Result<InputLimits, PlanError> {
    let k = |name: &str| format!("controller.{id}.{name}");
    let r = c.get_ref();
    let max_input_v = ctx.above(&r.max_input_v, &k("max_input_v"), 0.0, 1500.0)?;
    let (max_input_a, max_array_isc_a, current_assumed) = current_ratings(ctx, id, c)?;
    let max_charge_a = ctx.above(&r.max_charge_a, &k("max_charge_a"), 0.0, 500.0)?;
    let start_offset_v = ctx.opt_range(&r.start_offset_v, &k("start_offset_v"), 0.0, 50.0, 5.0)?;
    let stop_offset_v = ctx.opt_range(&r.stop_offset_v, &k("stop_offset_v"), 0.0, 50.0, 1.0)?;
    if stop_offset_v > start_offset_v {
        let span = r.stop_offset_v.as_ref().map_or(c.span(), |v| v.span());
        return Err(ctx.err(
            span,
            &k("stop_offset_v"),
            format!(
                "{} = {stop_offset_v} must not exceed start_offset_v = {start_offset_v}",
                k("stop_offset_v")
            ),
        ));
    }
    Ok(InputLimits {
        max_input_v,
        max_input_a,
        max_array_isc_a,
        current_assumed,
        max_charge_a,
        start_offset_v,
        stop_offset_v,
        derating: derating(ctx, id, c)?,
    })
}

/// `kind = "mppt"`: the tracking window, headroom, tracker mode and efficiency curve; a
/// PWM-only key is an error.
fn mppt_model(
    ctx: &Ctx,
    id: &str,
    c: &S<RawController>,
    limits: &InputLimits,
) -> Result<ControllerModel, PlanError> {
    let k = |name: &str| format!("controller.{id}.{name}");
    let r = c.get_ref();
    let (mppt_min_v, mppt_max_v) = mppt_window(ctx, id, c, limits.max_input_v)?;
    let headroom_v = ctx.opt_range(&r.headroom_v, &k("headroom_v"), 0.0, 50.0, 1.0)?;
    let tracking = tracking_mode(ctx, id, c)?;
    let efficiency_curve = match &r.efficiency {
        // From memory of typical small MPPT units (notebooks-free-docs/method-controller.md): flat 96 %.
        None => vec![(0.0, 0.96), (1.0, 0.96)],
        Some(e) => efficiency_curve(ctx, e, &k("efficiency"))?,
    };
    if let Some(v) = &r.switch_drop_v {
        return Err(ctx.err(
            v.span(),
            &k("switch_drop_v"),
            format!("{} applies to kind = \"pwm\" only", k("switch_drop_v")),
        ));
    }
    Ok(ControllerModel::Mppt {
        mppt_min_v,
        mppt_max_v,
        headroom_v,
        efficiency_curve,
        tracking,
        start_offset_v: limits.start_offset_v,
        stop_offset_v: limits.stop_offset_v,
        max_input_a: limits.max_input_a,
        max_charge_a: limits.max_charge_a,
        derating: limits.derating,
    })
}

/// `mppt_min_v` (required) and `mppt_max_v` (default `max_input_v`), min below max.
fn mppt_window(
    ctx: &Ctx,
    id: &str,
    c: &S<RawController>,
    max_input_v: f64,
) -> Result<(f64, f64), PlanError> {
    let k = |name: &str| format!("controller.{id}.{name}");
    let r = c.get_ref();
    let mppt_min_v = match &r.mppt_min_v {
        Some(v) => ctx.range(v, &k("mppt_min_v"), 0.0, max_input_v)?,
        None => {
            return Err(ctx.err(
                c.span(),
                &k("mppt_min_v"),
                format!(
                    "{} is missing (the lowest input voltage the tracker works at)",
                    k("mppt_min_v")
                ),
            ))
        }
    };
    let mppt_max_v = match &r.mppt_max_v {
        Some(v) => ctx.range(v, &k("mppt_max_v"), mppt_min_v, max_input_v)?,
        None => max_input_v,
    };
    if mppt_max_v <= mppt_min_v {
        let span = r.mppt_max_v.as_ref().map_or(c.span(), |v| v.span());
        return Err(ctx.err(
            span,
            &k("mppt_max_v"),
            format!(
                "{} = {mppt_max_v} must be above mppt_min_v = {mppt_min_v}",
                k("mppt_max_v")
            ),
        ));
    }
    Ok((mppt_min_v, mppt_max_v))
}

/// `tracking`: "global" (the default) or "local".
fn tracking_mode(ctx: &Ctx, id: &str, c: &S<RawController>) -> Result<TrackerMode, PlanError> {
    let k = |name: &str| format!("controller.{id}.{name}");
    let r = c.get_ref();
    match r.tracking.as_ref().map(|t| t.get_ref().as_str()) {
        None | Some("global") => Ok(TrackerMode::Global),
        Some("local") => Ok(TrackerMode::Local),
        Some(other) => {
            let span = r.tracking.as_ref().map_or(c.span(), |t| t.span());
            Err(ctx.err(
                span,
                &k("tracking"),
                format!(
                    "{} = {other:?} is not known; use \"global\" or \"local\"",
                    k("tracking")
                ),
            ))
        }
    }
}

/// `kind = "pwm"`: the switch drop; an MPPT-only key is an error.
fn pwm_model(
    ctx: &Ctx,
    id: &str,
    c: &S<RawController>,
    limits: &InputLimits,
) -> Result<ControllerModel, PlanError> {
    let k = |name: &str| format!("controller.{id}.{name}");
    let r = c.get_ref();
    let mppt_only = [
        (&r.mppt_min_v, "mppt_min_v"),
        (&r.mppt_max_v, "mppt_max_v"),
        (&r.headroom_v, "headroom_v"),
    ];
    for (v, name) in mppt_only {
        if let Some(v) = v {
            return Err(ctx.err(
                v.span(),
                &k(name),
                format!("{} applies to kind = \"mppt\" only", k(name)),
            ));
        }
    }
    for (present, name, span) in [
        (
            r.tracking.is_some(),
            "tracking",
            r.tracking.as_ref().map(|t| t.span()),
        ),
        (
            r.efficiency.is_some(),
            "efficiency",
            r.efficiency.as_ref().map(|t| t.span()),
        ),
    ] {
        if present {
            return Err(ctx.err(span.unwrap_or(c.span()), &k(name), format!("{} applies to kind = \"mppt\" only (a PWM controller has no tracker and no conversion)", k(name))));
        }
    }
    Ok(ControllerModel::Pwm {
        switch_drop_v: ctx.opt_range(&r.switch_drop_v, &k("switch_drop_v"), 0.0, 5.0, 0.2)?,
        max_input_a: limits.max_input_a,
        max_charge_a: limits.max_charge_a,
        derating: limits.derating,
    })
}

/// The main run from the controller to the battery: cross-section, length, conductor and
/// optional ampacity, checked in that order.
fn main_run(ctx: &Ctx, id: &str, c: &S<RawController>) -> Result<CableRun, PlanError> {
    let k = |name: &str| format!("controller.{id}.{name}");
    let r = c.get_ref();
    let (cross_section_mm2, awg) = cross_section(
        ctx,
        &r.main_run_mm2,
        &r.main_run_awg,
        &k("main_run"),
        c.span(),
    )?;
    Ok(CableRun {
        length_m: ctx.range(&r.main_run_length_m, &k("main_run_length_m"), 0.0, 1000.0)?,
        cross_section_mm2,
        awg,
        conductor: conductor(ctx, &r.main_run_conductor, &k("main_run_conductor"))?,
        ampacity_a: r
            .main_run_ampacity_a
            .as_ref()
            .map(|v| ctx.above(v, &k("main_run_ampacity_a"), 0.0, 1000.0))
            .transpose()?,
    })
}

fn efficiency_curve(
    ctx: &Ctx,
    e: &S<Vec<Vec<f64>>>,
    key: &str,
) -> Result<Vec<(f64, f64)>, PlanError> {
    let mut pts = Vec::new();
    for (n, p) in e.get_ref().iter().enumerate() {
        if p.len() != 2 {
            return Err(ctx.err(
                e.span(),
                key,
                format!(
                    "{key} point {} has {} numbers; write [output_fraction, efficiency]",
                    n + 1,
                    p.len()
                ),
            ));
        }
        let (f, eta) = (p[0], p[1]);
        if !((0.0..=1.0).contains(&f) && eta > 0.0 && eta <= 1.0) {
            return Err(ctx.err(e.span(), key, format!("{key} point {} = [{f}, {eta}]: output fraction must be in 0 to 1 and efficiency in (0, 1]", n + 1)));
        }
        if let Some(&(last, _)) = pts.last() {
            if f <= last {
                return Err(ctx.err(
                    e.span(),
                    key,
                    format!(
                        "{key} output fractions must increase (point {} = {f})",
                        n + 1
                    ),
                ));
            }
        }
        pts.push((f, eta));
    }
    if pts.is_empty() {
        return Err(ctx.err(
            e.span(),
            key,
            format!("{key} is empty; give at least one [output_fraction, efficiency] point"),
        ));
    }
    Ok(pts)
}
