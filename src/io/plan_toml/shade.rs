//! `[[shade]]` rules: a share of one module's beam light blocked on given substrings,
//! months and hours.
//!
//! Shade computed from the scene (horizons, obstacles) is in `geometry.rs`.

use crate::error::PlanError;
use crate::input::plan::{Module, ModuleType, ShadeRule};

use super::ctx::Ctx;
use super::raw::{RawShade, S};

fn int_list(
    ctx: &Ctx,
    v: &Option<S<Vec<i64>>>,
    key: &str,
    lo: i64,
    hi: i64,
    all: std::ops::RangeInclusive<i64>,
) -> Result<Vec<i64>, PlanError> {
    match v {
        None => Ok(all.collect()),
        Some(list) => {
            if list.get_ref().is_empty() {
                return Err(ctx.err(
                    list.span(),
                    key,
                    format!("{key} is empty; leave it out to mean all"),
                ));
            }
            for &x in list.get_ref() {
                if x < lo || x > hi {
                    return Err(ctx.err(
                        list.span(),
                        key,
                        format!("{key} contains {x}, outside {lo} to {hi}"),
                    ));
                }
            }
            Ok(list.get_ref().clone())
        }
    }
}

/// Every `[[shade]]` rule, in file order.
pub(super) fn validate_shades(
    ctx: &Ctx,
    raw: &[S<RawShade>],
    modules: &[Module],
    types: &[ModuleType],
) -> Result<Vec<ShadeRule>, PlanError> {
    let mut shade = Vec::new();
    for (k, s) in raw.iter().enumerate() {
        shade.push(validate_shade(ctx, k, s, modules, types)?);
    }
    Ok(shade)
}

fn validate_shade(
    ctx: &Ctx,
    k: usize,
    s: &S<RawShade>,
    modules: &[Module],
    types: &[ModuleType],
) -> Result<ShadeRule, PlanError> {
    let r = s.get_ref();
    let key = |name: &str| format!("shade[{}].{name}", k + 1);
    let module = modules
        .iter()
        .position(|m| &m.id == r.module.get_ref())
        .ok_or_else(|| {
            ctx.err(
                r.module.span(),
                &key("module"),
                format!(
                    "{} = {:?} names no module (module ids are <group>-<n>, e.g. {})",
                    key("module"),
                    r.module.get_ref(),
                    modules.first().map_or("", |m| m.id.as_str())
                ),
            )
        })?;
    let b = types[modules[module].module_type].bypass_diodes as i64;
    let substrings = int_list(ctx, &r.substrings, &key("substrings"), 1, b, 1..=b)?
        .into_iter()
        .map(|x| (x - 1) as usize)
        .collect();
    let months = int_list(ctx, &r.months, &key("months"), 1, 12, 1..=12)?
        .into_iter()
        .map(|x| x as u32)
        .collect();
    let hours = int_list(ctx, &r.hours, &key("hours"), 0, 23, 0..=23)?
        .into_iter()
        .map(|x| x as u32)
        .collect();
    let beam_blocked_frac =
        ctx.range(&r.beam_blocked_pct, &key("beam_blocked_pct"), 0.0, 100.0)? / 100.0;
    Ok(ShadeRule {
        module,
        substrings,
        months,
        hours,
        beam_blocked_frac,
    })
}
