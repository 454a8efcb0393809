//! `[module_type.NAME]` and `[group.NAME]`: datasheet values checked for range and for their
//! own consistency, then fitted to the single-diode model; groups with their orientation,
//! thermal model and soiling.
//!
//! Where a group sits (centre, rows, columns) and its horizon are geometry (`geometry.rs`);
//! which modules are wired together is in `layouts.rs`.

use std::collections::BTreeMap;

use crate::error::PlanError;
use crate::input::plan::{Group, Module, ModuleType};
use crate::num::Num;
use crate::physics::diode::{fit_de_soto, Datasheet, BETA_REL_RANGE_PER_K, BYPASS_DROP_DEFAULT_V};
use crate::physics::thermal::{Back, CellTemperatureModel, Mounting, KING_2004_SETS};

use super::ctx::Ctx;
use super::raw::{RawGroup, RawModuleType, S};

/// Every `[module_type.NAME]`, in a stable order (BTreeMap: by id); at least one.
pub(super) fn validate_module_types(
    ctx: &Ctx,
    raw: &BTreeMap<String, S<RawModuleType>>,
) -> Result<Vec<ModuleType>, PlanError> {
    let mut module_types = Vec::new();
    for (id, mt) in raw {
        module_types.push(validate_module_type(ctx, id, mt)?);
    }
    if module_types.is_empty() {
        return Err(PlanError::Missing {
            file: ctx.file.clone(),
            key: "module_type".into(),
            hint: "add a [module_type.NAME] table with the datasheet values".into(),
        });
    }
    Ok(module_types)
}

/// Most modules in one plan (all groups together). Memory and time grow with the modules
/// wired in some layout (notebooks-free-docs/limits-and-file-safety.md).
pub const MAX_MODULES: usize = 500;

/// Every `[group.NAME]` (at least one) and its modules, numbered `<group>-1`, `<group>-2`, …
pub(super) fn validate_groups(
    ctx: &Ctx,
    raw: &BTreeMap<String, S<RawGroup>>,
    module_types: &[ModuleType],
) -> Result<(Vec<Group>, Vec<Module>), PlanError> {
    let mut groups = Vec::new();
    let mut modules = Vec::new();
    for (id, g) in raw {
        let group = validate_group(ctx, id, g, module_types)?;
        if modules.len() + group.count > MAX_MODULES {
            return Err(ctx.err(
                g.span(),
                &format!("group.{id}.count"),
                format!(
                    "group.{id} brings the plan to {} modules, above the limit of {MAX_MODULES}; \
                     wirerank compares wirings of small arrays (a few dozen modules on a few \
                     controllers): split a larger array into several plans, one per battery",
                    modules.len() + group.count
                ),
            ));
        }
        for n in 1..=group.count {
            modules.push(Module {
                id: format!("{id}-{n}"),
                group: groups.len(),
                module_type: group.module_type,
            });
        }
        groups.push(group);
    }
    if groups.is_empty() {
        return Err(PlanError::Missing {
            file: ctx.file.clone(),
            key: "group".into(),
            hint: "add a [group.NAME] table (module_type, count, tilt_deg, azimuth_deg)".into(),
        });
    }
    Ok((groups, modules))
}

fn validate_module_type(
    ctx: &Ctx,
    id: &str,
    m: &S<RawModuleType>,
) -> Result<ModuleType, PlanError> {
    let k = |name: &str| format!("module_type.{id}.{name}");
    let r = m.get_ref();
    let pmax_w = ctx.above(&r.pmax_w, &k("pmax_w"), 0.0, 2000.0)?;
    let voc_v = ctx.above(&r.voc_v, &k("voc_v"), 0.0, 200.0)?;
    let isc_a = ctx.above(&r.isc_a, &k("isc_a"), 0.0, 50.0)?;
    let vmp_v = ctx.above(&r.vmp_v, &k("vmp_v"), 0.0, 200.0)?;
    let imp_a = ctx.above(&r.imp_a, &k("imp_a"), 0.0, 50.0)?;
    let alpha_pct = ctx.range(&r.alpha_isc_pct_k, &k("alpha_isc_pct_k"), -0.1, 0.3)?;
    // The range the single-diode fit accepts (physics::diode::BETA_REL_RANGE_PER_K), in
    // the plan's %/K, so that the message speaks the plan's units.
    let (beta_lo, beta_hi) = (
        100.0 * BETA_REL_RANGE_PER_K.0,
        100.0 * BETA_REL_RANGE_PER_K.1,
    );
    let beta_pct = *r.beta_voc_pct_k.get_ref();
    if !(beta_pct.is_finite() && (beta_lo..=beta_hi).contains(&beta_pct)) {
        return Err(ctx.err(
            r.beta_voc_pct_k.span(),
            &k("beta_voc_pct_k"),
            format!(
                "{} = {beta_pct} %/K is outside {} to {} %/K: silicon modules print about -0.25 to -0.45 %/K and none loses less than 0.05 % of Voc per kelvin; check the sign and that the value is in per cent per kelvin",
                k("beta_voc_pct_k"),
                Num(beta_lo),
                Num(beta_hi)
            ),
        ));
    }
    let gamma_pct = ctx.range(&r.gamma_pmax_pct_k, &k("gamma_pmax_pct_k"), -1.5, 0.0)?;
    let cells = ctx.int_range(&r.cells_in_series, &k("cells_in_series"), 1, 300)? as u32;
    let bypass = ctx.int_range(&r.bypass_diodes, &k("bypass_diodes"), 1, 12)? as u32;
    if !cells.is_multiple_of(bypass) {
        return Err(ctx.err(
            r.bypass_diodes.span(),
            &k("bypass_diodes"),
            format!(
                "{} = {bypass} does not divide cells_in_series = {cells} into equal substrings",
                k("bypass_diodes")
            ),
        ));
    }
    let bypass_drop_v = ctx.opt_range(
        &r.bypass_drop_v,
        &k("bypass_drop_v"),
        0.1,
        2.0,
        BYPASS_DROP_DEFAULT_V,
    )?;
    let noct_c = ctx.range(&r.noct_c, &k("noct_c"), 30.0, 70.0)?;
    let length_m = ctx.above(&r.length_m, &k("length_m"), 0.0, 5.0)?;
    let width_m = ctx.above(&r.width_m, &k("width_m"), 0.0, 5.0)?;
    let max_system_v = ctx.above(&r.max_system_v, &k("max_system_v"), 0.0, 2000.0)?;
    let max_series_fuse_a = ctx.above(&r.max_series_fuse_a, &k("max_series_fuse_a"), 0.0, 100.0)?;

    let datasheet = Datasheet {
        voc_v,
        isc_a,
        vmp_v,
        imp_a,
        alpha_isc_a_k: alpha_pct / 100.0 * isc_a,
        beta_voc_v_k: beta_pct / 100.0 * voc_v,
        cells_in_series: cells,
    };
    // The datasheet's own consistency, before the fit sees it.
    check_datasheet(ctx, id, r, &datasheet, pmax_w, length_m * width_m)?;
    let reference = fit_de_soto(&datasheet).map_err(|e| {
        ctx.err(
            m.span(),
            &format!("module_type.{id}"),
            format!("module_type.{id}: the datasheet cannot be fitted: {e}"),
        )
    })?;
    let substring = reference.substring(bypass);
    Ok(ModuleType {
        id: id.to_string(),
        pmax_w,
        datasheet,
        gamma_pmax_frac_k: gamma_pct / 100.0,
        bypass_diodes: bypass,
        bypass_drop_v,
        noct_c,
        length_m,
        width_m,
        max_system_v,
        max_series_fuse_a,
        reference,
        substring,
    })
}

/// The datasheet's own consistency: Vmp below Voc, Imp below Isc, Pmax close to Vmp × Imp
/// and a plausible efficiency for the module's `area` (m²).
fn check_datasheet(
    ctx: &Ctx,
    id: &str,
    r: &RawModuleType,
    datasheet: &Datasheet,
    pmax_w: f64,
    area: f64,
) -> Result<(), PlanError> {
    let k = |name: &str| format!("module_type.{id}.{name}");
    let (voc_v, isc_a, vmp_v, imp_a) = (
        datasheet.voc_v,
        datasheet.isc_a,
        datasheet.vmp_v,
        datasheet.imp_a,
    );
    if vmp_v >= voc_v {
        return Err(ctx.err(
            r.vmp_v.span(),
            &k("vmp_v"),
            format!("{} = {vmp_v} must be below voc_v = {voc_v}", k("vmp_v")),
        ));
    }
    if imp_a >= isc_a {
        return Err(ctx.err(
            r.imp_a.span(),
            &k("imp_a"),
            format!("{} = {imp_a} must be below isc_a = {isc_a}", k("imp_a")),
        ));
    }
    let p_check = vmp_v * imp_a;
    if (p_check - pmax_w).abs() > 0.03 * pmax_w {
        return Err(ctx.err(
            r.pmax_w.span(),
            &k("pmax_w"),
            format!("{} = {pmax_w} differs from vmp_v × imp_a = {p_check:.1} by more than 3 %; check the datasheet", k("pmax_w")),
        ));
    }
    let eff = pmax_w / (1000.0 * area);
    if !(0.02..=0.30).contains(&eff) {
        return Err(ctx.err(
            r.length_m.span(),
            &k("length_m"),
            format!("module area {area:.3} m² gives an STC efficiency of {:.1} %, outside 2 to 30 %; check length_m and width_m", eff * 100.0),
        ));
    }
    Ok(())
}

fn validate_group(
    ctx: &Ctx,
    id: &str,
    g: &S<RawGroup>,
    types: &[ModuleType],
) -> Result<Group, PlanError> {
    let k = |name: &str| format!("group.{id}.{name}");
    let r = g.get_ref();
    if id.is_empty() || !id.chars().all(|c| c.is_ascii_alphanumeric() || c == '_') {
        return Err(ctx.err(
            g.span(),
            &format!("group.{id}"),
            format!("group name {id:?} must be letters, digits or _ (module ids are <group>-<n>)"),
        ));
    }
    let module_type = types
        .iter()
        .position(|t| &t.id == r.module_type.get_ref())
        .ok_or_else(|| {
            let known: Vec<&str> = types.iter().map(|t| t.id.as_str()).collect();
            ctx.err(
                r.module_type.span(),
                &k("module_type"),
                format!(
                    "{} = {:?} names no [module_type] table; known: {}",
                    k("module_type"),
                    r.module_type.get_ref(),
                    known.join(", ")
                ),
            )
        })?;
    let count = ctx.int_range(&r.count, &k("count"), 1, 200)? as usize;
    let tilt_deg = ctx.range(&r.tilt_deg, &k("tilt_deg"), 0.0, 90.0)?;
    let azimuth_deg = ctx.range(&r.azimuth_deg, &k("azimuth_deg"), 0.0, 360.0)?;
    let thermal = thermal_model(ctx, id, g, &types[module_type])?;
    let soiling_frac = match &r.soiling_pct {
        None => [0.0; 12],
        Some(v) => ctx.monthly(v, &k("soiling_pct"), 0.0, 100.0, 0.01)?,
    };
    Ok(Group {
        id: id.to_string(),
        module_type,
        count,
        tilt_deg,
        azimuth_deg,
        thermal,
        soiling_frac,
    })
}

/// The plan's words for the cell-temperature model (`group.<id>.thermal`).
const THERMAL_MODELS: [&str; 3] = ["king", "faiman", "noct"];

/// The spellings of the first plan format, each with the King 2004 set it named. Accepted
/// for one release with a warning pointing at the new form.
const OLD_THERMAL_NAMES: [(&str, Mounting, Back); 4] = [
    (
        "sandia-open-rack-glass-glass",
        Mounting::OpenRack,
        Back::Glass,
    ),
    (
        "sandia-close-roof-glass-glass",
        Mounting::CloseRoof,
        Back::Glass,
    ),
    (
        "sandia-open-rack-glass-polymer",
        Mounting::OpenRack,
        Back::Polymer,
    ),
    (
        "sandia-insulated-back-glass-polymer",
        Mounting::InsulatedBack,
        Back::Polymer,
    ),
];

/// The combinations King 2004 gives, as the plan writes them.
fn king_sets_text() -> String {
    KING_2004_SETS
        .iter()
        .map(|s| format!("{} with a {} back", s.0.key(), s.1.key()))
        .collect::<Vec<_>>()
        .join(", ")
}

/// `group.<id>.thermal` (`king`, `faiman` or `noct`; `king` when absent), for `king` the
/// group's `mounting` (default `open-rack`) and `back` (default `polymer`), and the Faiman
/// coefficients, which are only accepted with `thermal = "faiman"`.
fn thermal_model(
    ctx: &Ctx,
    id: &str,
    g: &S<RawGroup>,
    module_type: &ModuleType,
) -> Result<CellTemperatureModel, PlanError> {
    let k = |name: &str| format!("group.{id}.{name}");
    let r = g.get_ref();
    let given = r.thermal.as_ref().map(|t| t.get_ref().as_str());
    let span = r.thermal.as_ref().map_or(g.span(), |t| t.span());
    let old = given.and_then(|n| OLD_THERMAL_NAMES.iter().find(|o| o.0 == n));
    let thermal_name = match (given, old) {
        (_, Some(&(old_name, mounting, back))) => {
            if let Some(v) = r.mounting.as_ref().or(r.back.as_ref()) {
                return Err(ctx.err(
                    v.span(),
                    &k("thermal"),
                    format!(
                        "{} = {old_name:?} is the old form and already names the mounting and the back; write thermal = \"king\" with mounting and back instead",
                        k("thermal")
                    ),
                ));
            }
            ctx.warn(
                span.clone(),
                format!(
                    "{} = {old_name:?} is the old form of this choice, accepted in this release only; write thermal = \"king\", mounting = \"{}\", back = \"{}\" instead",
                    k("thermal"),
                    mounting.key(),
                    back.key()
                ),
            );
            "king"
        }
        (None, None) => "king",
        (Some(name), None) => name,
    };
    let thermal = match thermal_name {
        "king" => {
            let (mounting, back) = match old {
                Some(&(_, m, b)) => (m, b),
                None => (
                    choose(
                        ctx,
                        &r.mounting,
                        &k("mounting"),
                        &Mounting::ALL,
                        Mounting::key,
                    )?
                    .unwrap_or(Mounting::OpenRack),
                    choose(ctx, &r.back, &k("back"), &Back::ALL, Back::key)?
                        .unwrap_or(Back::Polymer),
                ),
            };
            CellTemperatureModel::king(mounting, back).ok_or_else(|| {
                let at = r.mounting.as_ref().or(r.back.as_ref()).map_or(span.clone(), |v| v.span());
                let defaulted = match (&r.mounting, &r.back) {
                    (None, _) => " (mounting defaults to open-rack)",
                    (_, None) => " (back defaults to polymer)",
                    _ => "",
                };
                ctx.err(
                    at,
                    &k("mounting"),
                    format!(
                        "{} = {:?} with back = {:?}{defaulted} has no coefficient set in King et al. 2004; it gives: {}; or choose thermal = \"faiman\" or \"noct\"",
                        k("mounting"),
                        mounting.key(),
                        back.key(),
                        king_sets_text()
                    ),
                )
            })?
        }
        "faiman" => CellTemperatureModel::Faiman {
            u0: ctx.opt_range(&r.faiman_u0_w_m2k, &k("faiman_u0_w_m2k"), 1.0, 100.0, 25.0)?,
            u1: ctx.opt_range(
                &r.faiman_u1_w_s_m3k,
                &k("faiman_u1_w_s_m3k"),
                0.0,
                50.0,
                6.84,
            )?,
        },
        "noct" => CellTemperatureModel::Noct {
            noct_c: module_type.noct_c,
        },
        other => {
            return Err(ctx.err(
                span,
                &k("thermal"),
                format!(
                    "{} = {other:?} is not known; use {} (with mounting and back for king: {})",
                    k("thermal"),
                    THERMAL_MODELS.join(", "),
                    king_sets_text()
                ),
            ));
        }
    };
    if thermal_name != "king" {
        for (v, name) in [(&r.mounting, "mounting"), (&r.back, "back")] {
            if let Some(v) = v {
                return Err(ctx.err(
                    v.span(),
                    &k(name),
                    format!(
                        "{} is only used with thermal = \"king\" (here thermal = {thermal_name:?})",
                        k(name)
                    ),
                ));
            }
        }
    }
    if thermal_name != "faiman" {
        for (v, name) in [
            (&r.faiman_u0_w_m2k, "faiman_u0_w_m2k"),
            (&r.faiman_u1_w_s_m3k, "faiman_u1_w_s_m3k"),
        ] {
            if let Some(v) = v {
                return Err(ctx.err(
                    v.span(),
                    &k(name),
                    format!("{} is only used with thermal = \"faiman\"", k(name)),
                ));
            }
        }
    }
    Ok(thermal)
}

/// One of a few words, or `None` when the key is absent.
fn choose<T: Copy>(
    ctx: &Ctx,
    v: &Option<S<String>>,
    key: &str,
    all: &[T],
    word: fn(T) -> &'static str,
) -> Result<Option<T>, PlanError> {
    let Some(v) = v else { return Ok(None) };
    let given = v.get_ref().as_str();
    match all.iter().find(|&&t| word(t) == given) {
        Some(&t) => Ok(Some(t)),
        None => Err(ctx.err(
            v.span(),
            key,
            format!(
                "{key} = {given:?} is not known; use {}",
                all.iter().map(|&t| word(t)).collect::<Vec<_>>().join(", ")
            ),
        )),
    }
}
