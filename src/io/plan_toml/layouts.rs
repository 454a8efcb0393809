//! `[[layout]]` tables: the listed wirings, each as parallel strings of named modules on
//! each controller input; and the `layouts` and `[enumerate]` switches that ask for every
//! wiring instead.
//!
//! Enumerating every wiring (`layouts = "all"`) happens in `design::candidates`; whether a
//! layout breaks a limit is `design::rules`.

use crate::error::PlanError;
use crate::input::plan::{ControllerInput, EnumerateOptions, LayoutSpec, Module};

use super::ctx::Ctx;
use super::raw::{RawEnumerate, RawLayout, S};

/// `layouts`: "all" enumerates every regular wiring, "listed" (the default) compares only
/// the `[[layout]]` tables.
pub(super) fn enumerate_all(
    ctx: &Ctx,
    raw: Option<&S<String>>,
    modules: &[Module],
) -> Result<bool, PlanError> {
    match raw {
        None => Ok(false),
        Some(v) if v.get_ref() == "all" && modules.len() > MAX_ENUMERATED_MODULES => {
            Err(ctx.err(
                v.span(),
                "layouts",
                format!(
                    "layouts = \"all\" enumerates the wirings of at most {MAX_ENUMERATED_MODULES} modules and the plan has {}; list the layouts to compare as [[layout]] tables (layouts = \"listed\")",
                    modules.len()
                ),
            ))
        }
        Some(v) if v.get_ref() == "all" => Ok(true),
        Some(v) if v.get_ref() == "listed" => Ok(false),
        Some(v) => Err(ctx.err(
            v.span(),
            "layouts",
            format!(
                "layouts = {:?} is not known; use \"all\" (every regular wiring) or \"listed\" (only the [[layout]] tables)",
                v.get_ref()
            ),
        )),
    }
}

/// Most modules `layouts = "all"` enumerates: a plan of 500 modules in three groups ran
/// more than two minutes and 2 GB before any candidate was simulated, while 100 modules are
/// enumerated or refused by the search's own limits in seconds
/// (notebooks-free-docs/limits-and-file-safety.md).
pub const MAX_ENUMERATED_MODULES: usize = 100;

/// Most `[[layout]]` tables in one plan (enumeration has its own limit,
/// `design::candidates::MAX_CANDIDATES`).
pub const MAX_LISTED_LAYOUTS: usize = 1000;

/// Every `[[layout]]`, in file order; at least one unless `layouts = "all"`.
pub(super) fn validate_layouts(
    ctx: &Ctx,
    raw: &[S<RawLayout>],
    enumerate_all: bool,
    modules: &[Module],
    controllers: &[ControllerInput],
) -> Result<Vec<LayoutSpec>, PlanError> {
    if let Some(l) = raw.get(MAX_LISTED_LAYOUTS) {
        return Err(ctx.err(
            l.span(),
            "layout",
            format!(
                "the plan lists {} [[layout]] tables, above the limit of {MAX_LISTED_LAYOUTS}; \
                 keep the wirings you want to compare, or use layouts = \"all\" to try every \
                 regular wiring",
                raw.len()
            ),
        ));
    }
    let mut layouts = Vec::new();
    for (k, l) in raw.iter().enumerate() {
        layouts.push(validate_layout(ctx, k, l, modules, controllers)?);
    }
    if layouts.is_empty() && !enumerate_all {
        return Err(PlanError::Missing {
            file: ctx.file.clone(),
            key: "layout".into(),
            hint: "add [[layout]] tables, or layouts = \"all\" to try every wiring".into(),
        });
    }
    Ok(layouts)
}

/// `[enumerate]`: both options off unless set.
pub(super) fn enumerate_options(raw: Option<&RawEnumerate>) -> EnumerateOptions {
    EnumerateOptions {
        allow_unused_modules: raw.and_then(|e| e.allow_unused_modules).unwrap_or(false),
        allow_mixed_orientation: raw.and_then(|e| e.allow_mixed_orientation).unwrap_or(false),
    }
}

fn validate_layout(
    ctx: &Ctx,
    k: usize,
    l: &S<RawLayout>,
    modules: &[Module],
    controllers: &[ControllerInput],
) -> Result<LayoutSpec, PlanError> {
    let r = l.get_ref();
    let mut used = vec![false; modules.len()];
    let mut inputs = Vec::new();
    if r.strings.is_empty() {
        return Err(ctx.err(
            l.span(),
            &format!("layout[{}].strings", k + 1),
            format!(
                "layout[{}] has no strings; write strings.<controller> = [[\"group-1\", ...], ...]",
                k + 1
            ),
        ));
    }
    for (cid, strings) in &r.strings {
        let key = format!("layout[{}].strings.{cid}", k + 1);
        let ci = controllers
            .iter()
            .position(|c| &c.id == cid)
            .ok_or_else(|| {
                let known: Vec<&str> = controllers.iter().map(|c| c.id.as_str()).collect();
                ctx.err(
                    strings.span(),
                    &key,
                    format!(
                        "{key}: {cid:?} names no [controller] table; known: {}",
                        known.join(", ")
                    ),
                )
            })?;
        let list = strings.get_ref();
        if list.is_empty() {
            return Err(ctx.err(strings.span(), &key, format!("{key} has no strings")));
        }
        let mut out = Vec::new();
        for (si, st) in list.iter().enumerate() {
            if st.is_empty() {
                return Err(ctx.err(
                    strings.span(),
                    &key,
                    format!("{key} string {} is empty", si + 1),
                ));
            }
            if st.len() != list[0].len() {
                return Err(ctx.err(
                    strings.span(),
                    &key,
                    format!("{key} string {} has {} modules but string 1 has {}; parallel strings on one input must have the same series count", si + 1, st.len(), list[0].len()),
                ));
            }
            let mut idx = Vec::new();
            for id in st {
                let m = modules.iter().position(|m| &m.id == id).ok_or_else(|| {
                    ctx.err(strings.span(), &key, format!("{key} names module {id:?}, which the plan does not have (ids are <group>-<n>)"))
                })?;
                if used[m] {
                    return Err(ctx.err(
                        strings.span(),
                        &key,
                        format!("{key} uses module {id:?} twice in one layout"),
                    ));
                }
                used[m] = true;
                idx.push(m);
            }
            out.push(idx);
        }
        inputs.push((ci, out));
    }
    Ok(LayoutSpec {
        name: r.name.clone(),
        inputs,
    })
}
