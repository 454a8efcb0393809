//! Cable runs: the conductor material, the cross-section (mm² or AWG, exactly one), and
//! the `[cables]` section (string leads, conductor temperature rise, voltage-drop target,
//! blocking diodes).
//!
//! The controller's main run is read in `controllers.rs` with the helpers here; this file
//! computes no losses (that is `physics::wiring`).

use crate::error::PlanError;
use crate::input::plan::{CableRun, Cables};
use crate::physics::wiring::{awg_to_mm2, Conductor};

use super::ctx::Ctx;
use super::raw::{RawCables, S};

pub(super) fn conductor(
    ctx: &Ctx,
    v: &Option<S<String>>,
    key: &str,
) -> Result<Conductor, PlanError> {
    match v {
        None => Ok(Conductor::Copper),
        Some(s) => match s.get_ref().as_str() {
            "copper" => Ok(Conductor::Copper),
            "aluminium" | "aluminum" => Ok(Conductor::Aluminium),
            other => Err(ctx.err(
                s.span(),
                key,
                format!("{key} = {other:?} is not known; use \"copper\" or \"aluminium\""),
            )),
        },
    }
}

/// Cross-section from either `<prefix>_mm2` or `<prefix>_awg` (exactly one).
pub(super) fn cross_section(
    ctx: &Ctx,
    mm2: &Option<S<f64>>,
    awg: &Option<S<i64>>,
    key_prefix: &str,
    whole: std::ops::Range<usize>,
) -> Result<(f64, Option<i32>), PlanError> {
    match (mm2, awg) {
        (Some(m), None) => Ok((
            ctx.range(m, &format!("{key_prefix}_mm2"), 0.5, 400.0)?,
            None,
        )),
        (None, Some(a)) => {
            let g = ctx.int_range(a, &format!("{key_prefix}_awg"), -3, 20)? as i32;
            Ok((awg_to_mm2(g), Some(g)))
        }
        (Some(m), Some(_)) => Err(ctx.err(
            m.span(),
            &format!("{key_prefix}_mm2"),
            format!("give {key_prefix}_mm2 or {key_prefix}_awg, not both"),
        )),
        (None, None) => Err(ctx.err(
            whole,
            &format!("{key_prefix}_mm2"),
            format!("{key_prefix}_mm2 (or {key_prefix}_awg) is missing"),
        )),
    }
}

/// `[cables]`, which every plan needs.
pub(super) fn require_cables(ctx: &Ctx, raw: Option<&RawCables>) -> Result<Cables, PlanError> {
    match raw {
        Some(c) => validate_cables(ctx, c),
        None => Err(PlanError::Missing {
            file: ctx.file.clone(),
            key: "cables".into(),
            hint: "add [cables] with string_lead_length_m and string_lead_mm2".into(),
        }),
    }
}

fn validate_cables(ctx: &Ctx, c: &RawCables) -> Result<Cables, PlanError> {
    let whole = c.string_lead_length_m.span();
    let (cross_section_mm2, awg) = cross_section(
        ctx,
        &c.string_lead_mm2,
        &c.string_lead_awg,
        "cables.string_lead",
        whole,
    )?;
    Ok(Cables {
        string_lead: CableRun {
            length_m: ctx.range(
                &c.string_lead_length_m,
                "cables.string_lead_length_m",
                0.0,
                1000.0,
            )?,
            cross_section_mm2,
            awg,
            conductor: conductor(ctx, &c.conductor, "cables.conductor")?,
            ampacity_a: c
                .string_lead_ampacity_a
                .as_ref()
                .map(|v| ctx.above(v, "cables.string_lead_ampacity_a", 0.0, 1000.0))
                .transpose()?,
        },
        conductor_rise_dk: ctx.opt_range(
            &c.conductor_rise_dk,
            "cables.conductor_rise_dk",
            0.0,
            80.0,
            20.0,
        )?,
        voltage_drop_target_frac: ctx.opt_range(
            &c.voltage_drop_target_pct,
            "cables.voltage_drop_target_pct",
            0.1,
            20.0,
            3.0,
        )? / 100.0,
        blocking_diode_v: c
            .blocking_diode_v
            .as_ref()
            .map(|v| ctx.range(v, "cables.blocking_diode_v", 0.0, 2.0))
            .transpose()?,
    })
}
