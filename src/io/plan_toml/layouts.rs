//! `[[layout]]` tables: the listed wirings, each as parallel strings of named modules on
//! each controller input.
//!
//! Enumerating every wiring (`layouts = "all"`) happens in `design::candidates`; whether a
//! layout breaks a limit is `design::rules`.

use crate::error::PlanError;
use crate::input::plan::{ControllerInput, LayoutSpec, Module};

use super::ctx::Ctx;
use super::raw::{RawLayout, S};

pub(super) fn validate_layout(
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
