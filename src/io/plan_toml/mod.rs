//! The plan file: a TOML mirror (serde) and its validation into [`crate::input::plan::Plan`].
//!
//! Every error names the file, the line and column, the key and what was expected. Unknown
//! keys are rejected so that a typo never silently falls back to a default. Nothing past
//! this module sees serde or an unvalidated value.

use std::collections::BTreeMap;
use std::path::{Path, PathBuf};

use serde::Deserialize;
use toml::Spanned;

use crate::error::PlanError;
use crate::input::plan::*;
use crate::physics::controller::{ControllerModel, TrackerMode};
use crate::physics::diode::{fit_de_soto, Datasheet, BYPASS_DROP_DEFAULT_V};
use crate::physics::shade::{HorizonProfile, ModulePlacement, Obstacle};
use crate::physics::sky::{GlassCover, SkyModel};
use crate::physics::thermal::CellTemperatureModel;
use crate::physics::wiring::{awg_to_mm2, Conductor};

type S<T> = Spanned<T>;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawPlan {
    site: Option<RawSite>,
    weather: RawWeather,
    model: Option<RawModel>,
    module_type: BTreeMap<String, S<RawModuleType>>,
    group: BTreeMap<String, S<RawGroup>>,
    controller: Option<BTreeMap<String, S<RawController>>>,
    battery: Option<RawBattery>,
    load: Option<S<RawLoad>>,
    cables: Option<RawCables>,
    #[serde(default)]
    shade: Vec<S<RawShade>>,
    #[serde(default)]
    layout: Vec<S<RawLayout>>,
    layouts: Option<S<String>>,
    enumerate: Option<RawEnumerate>,
    #[serde(default)]
    obstacle: Vec<S<RawObstacle>>,
    #[serde(default)]
    module_horizon: Vec<S<RawModuleHorizon>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawObstacle {
    name: Option<String>,
    kind: S<String>,
    east_m: Option<S<f64>>,
    north_m: Option<S<f64>>,
    radius_m: Option<S<f64>>,
    footprint_m: Option<S<Vec<Vec<f64>>>>,
    base_m: Option<S<f64>>,
    height_m: S<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawModuleHorizon {
    module: S<String>,
    points: S<Vec<Vec<f64>>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawEnumerate {
    allow_unused_modules: Option<bool>,
    allow_mixed_orientation: Option<bool>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSite {
    name: Option<String>,
    latitude_deg: Option<S<f64>>,
    longitude_deg: Option<S<f64>>,
    elevation_m: Option<S<f64>>,
    utc_offset_h: Option<S<f64>>,
    albedo_frac: Option<S<OneOrMonthly>>,
    design_min_air_c: Option<S<f64>>,
    design_max_air_c: Option<S<f64>>,
    horizon: Option<S<Vec<Vec<f64>>>>,
}

#[derive(Deserialize, Clone)]
#[serde(untagged)]
enum OneOrMonthly {
    One(f64),
    Monthly(Vec<f64>),
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawWeather {
    file: S<String>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawModel {
    irradiance_variability_pct: Option<S<f64>>,
    model_uncertainty_pct: Option<S<f64>>,
    sky: Option<S<String>>,
    low_sun_elevation_deg: Option<S<f64>>,
    delta_t_s: Option<S<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawModuleType {
    pmax_w: S<f64>,
    voc_v: S<f64>,
    isc_a: S<f64>,
    vmp_v: S<f64>,
    imp_a: S<f64>,
    alpha_isc_pct_k: S<f64>,
    beta_voc_pct_k: S<f64>,
    gamma_pmax_pct_k: S<f64>,
    cells_in_series: S<i64>,
    bypass_diodes: S<i64>,
    bypass_drop_v: Option<S<f64>>,
    noct_c: S<f64>,
    length_m: S<f64>,
    width_m: S<f64>,
    max_system_v: S<f64>,
    max_series_fuse_a: S<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawGroup {
    module_type: S<String>,
    count: S<i64>,
    tilt_deg: S<f64>,
    azimuth_deg: S<f64>,
    thermal: Option<S<String>>,
    faiman_u0_w_m2k: Option<S<f64>>,
    faiman_u1_w_s_m3k: Option<S<f64>>,
    soiling_pct: Option<S<OneOrMonthly>>,
    horizon: Option<S<Vec<Vec<f64>>>>,
    centre_m: Option<S<Vec<f64>>>,
    rows: Option<S<i64>>,
    columns: Option<S<i64>>,
    row_gap_m: Option<S<f64>>,
    column_gap_m: Option<S<f64>>,
    landscape: Option<bool>,
    substrings_along_long_side: Option<bool>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawController {
    kind: S<String>,
    max_input_v: S<f64>,
    max_input_a: S<f64>,
    max_charge_a: S<f64>,
    mppt_min_v: Option<S<f64>>,
    mppt_max_v: Option<S<f64>>,
    headroom_v: Option<S<f64>>,
    start_offset_v: Option<S<f64>>,
    stop_offset_v: Option<S<f64>>,
    tracking: Option<S<String>>,
    efficiency: Option<S<Vec<Vec<f64>>>>,
    switch_drop_v: Option<S<f64>>,
    main_run_length_m: S<f64>,
    main_run_mm2: Option<S<f64>>,
    main_run_awg: Option<S<i64>>,
    main_run_conductor: Option<S<String>>,
    main_run_ampacity_a: Option<S<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawBattery {
    nominal_v: S<f64>,
    charge_v: Option<S<f64>>,
    capacity_ah: Option<S<f64>>,
    chemistry: Option<S<String>>,
    usable_dod_pct: Option<S<f64>>,
    round_trip_efficiency_pct: Option<S<f64>>,
    initial_soc_pct: Option<S<f64>>,
    absorption_v: Option<S<f64>>,
    float_v: Option<S<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawLoad {
    daily_wh: Option<S<Vec<f64>>>,
    monthly_wh: Option<S<Vec<Vec<f64>>>>,
    weekend_daily_wh: Option<S<Vec<f64>>>,
    battery_step_ah: Option<S<f64>>,
    unmet_target_kwh: Option<S<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawCables {
    string_lead_length_m: S<f64>,
    string_lead_mm2: Option<S<f64>>,
    string_lead_awg: Option<S<i64>>,
    conductor: Option<S<String>>,
    string_lead_ampacity_a: Option<S<f64>>,
    conductor_rise_dk: Option<S<f64>>,
    voltage_drop_target_pct: Option<S<f64>>,
    blocking_diode_v: Option<S<f64>>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawShade {
    module: S<String>,
    substrings: Option<S<Vec<i64>>>,
    months: Option<S<Vec<i64>>>,
    hours: Option<S<Vec<i64>>>,
    beam_blocked_pct: S<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawLayout {
    name: Option<String>,
    strings: BTreeMap<String, S<Vec<Vec<String>>>>,
}

/// Where errors point: the file's display name and its text (for line/column).
struct Ctx<'a> {
    file: String,
    text: &'a str,
}

impl Ctx<'_> {
    fn line_col(&self, offset: usize) -> (usize, usize) {
        let offset = offset.min(self.text.len());
        let before = &self.text[..offset];
        let line = before.matches('\n').count() + 1;
        let col = before.rsplit('\n').next().map_or(0, |l| l.chars().count()) + 1;
        (line, col)
    }

    fn err(&self, span: std::ops::Range<usize>, key: &str, message: String) -> PlanError {
        let (line, column) = self.line_col(span.start);
        PlanError::Invalid {
            file: self.file.clone(),
            line,
            column,
            key: key.to_string(),
            message,
        }
    }

    /// A finite number inside `lo..=hi`.
    fn range(&self, v: &S<f64>, key: &str, lo: f64, hi: f64) -> Result<f64, PlanError> {
        let x = *v.get_ref();
        if !x.is_finite() || x < lo || x > hi {
            return Err(self.err(v.span(), key, format!("{key} = {x} is outside {lo}..={hi}")));
        }
        Ok(x)
    }

    /// A finite number strictly above `lo` and at most `hi`.
    fn above(&self, v: &S<f64>, key: &str, lo: f64, hi: f64) -> Result<f64, PlanError> {
        let x = *v.get_ref();
        if !x.is_finite() || x <= lo || x > hi {
            return Err(self.err(
                v.span(),
                key,
                format!("{key} = {x} must be above {lo} and at most {hi}"),
            ));
        }
        Ok(x)
    }

    fn opt_range(
        &self,
        v: &Option<S<f64>>,
        key: &str,
        lo: f64,
        hi: f64,
        default: f64,
    ) -> Result<f64, PlanError> {
        match v {
            Some(v) => self.range(v, key, lo, hi),
            None => Ok(default),
        }
    }

    fn int_range(&self, v: &S<i64>, key: &str, lo: i64, hi: i64) -> Result<i64, PlanError> {
        let x = *v.get_ref();
        if x < lo || x > hi {
            return Err(self.err(v.span(), key, format!("{key} = {x} is outside {lo}..={hi}")));
        }
        Ok(x)
    }

    fn monthly(
        &self,
        v: &S<OneOrMonthly>,
        key: &str,
        lo: f64,
        hi: f64,
        scale: f64,
    ) -> Result<[f64; 12], PlanError> {
        let values: Vec<f64> = match v.get_ref() {
            OneOrMonthly::One(x) => vec![*x; 12],
            OneOrMonthly::Monthly(m) => {
                if m.len() != 12 {
                    return Err(self.err(
                        v.span(),
                        key,
                        format!(
                            "{key} has {} values; give one number or 12 (January first)",
                            m.len()
                        ),
                    ));
                }
                m.clone()
            }
        };
        let mut out = [0.0; 12];
        for (k, x) in values.iter().enumerate() {
            if !x.is_finite() || *x < lo || *x > hi {
                return Err(self.err(
                    v.span(),
                    key,
                    format!("{key}: month {} = {x} is outside {lo}..={hi}", k + 1),
                ));
            }
            out[k] = x * scale;
        }
        Ok(out)
    }
}

/// Reads and validates a plan file. Relative paths in it are taken from the plan's folder.
///
/// # Errors
/// The file cannot be read, is not valid TOML, has unknown keys, or a value is out of range.
pub fn read_plan(path: &Path) -> Result<Plan, PlanError> {
    let text = std::fs::read_to_string(path).map_err(|e| PlanError::Read {
        path: path.display().to_string(),
        source: e,
    })?;
    let base = path.parent().unwrap_or_else(|| Path::new(""));
    parse_plan(&text, &path.display().to_string(), base)
}

/// Parses and validates plan text; `file_name` appears in messages, `base_dir` resolves the
/// weather file.
///
/// # Errors
/// As [`read_plan`], less the reading.
pub fn parse_plan(text: &str, file_name: &str, base_dir: &Path) -> Result<Plan, PlanError> {
    let ctx = Ctx {
        file: file_name.to_string(),
        text,
    };
    let raw: RawPlan = toml::from_str(text).map_err(|e| {
        let (line, column) = e.span().map_or((0, 0), |s| ctx.line_col(s.start));
        PlanError::Syntax {
            file: ctx.file.clone(),
            line,
            column,
            message: e.message().trim().to_string(),
        }
    })?;
    validate(&ctx, raw, base_dir)
}

fn validate(ctx: &Ctx, raw: RawPlan, base_dir: &Path) -> Result<Plan, PlanError> {
    let site = validate_site(ctx, raw.site.as_ref())?;
    let albedo = match raw.site.as_ref().and_then(|s| s.albedo_frac.as_ref()) {
        None => Albedo::Constant(0.2),
        Some(v) => match v.get_ref() {
            OneOrMonthly::One(_) => {
                Albedo::Constant(ctx.monthly(v, "site.albedo_frac", 0.0, 1.0, 1.0)?[0])
            }
            OneOrMonthly::Monthly(_) => {
                Albedo::Monthly(ctx.monthly(v, "site.albedo_frac", 0.0, 1.0, 1.0)?)
            }
        },
    };

    let weather_file = raw.weather.file.get_ref();
    if weather_file.trim().is_empty() {
        return Err(ctx.err(
            raw.weather.file.span(),
            "weather.file",
            "weather.file is empty; give the weather CSV's path relative to the plan".into(),
        ));
    }
    let weather_path = base_dir.join(weather_file);

    let model = validate_model(ctx, raw.model.as_ref(), albedo)?;

    // Module types, in a stable order (BTreeMap: by id).
    let mut module_types = Vec::new();
    for (id, mt) in &raw.module_type {
        module_types.push(validate_module_type(ctx, id, mt)?);
    }
    if module_types.is_empty() {
        return Err(PlanError::Missing {
            file: ctx.file.clone(),
            key: "module_type".into(),
            hint: "add a [module_type.NAME] table with the datasheet values".into(),
        });
    }

    let mut groups = Vec::new();
    let mut modules = Vec::new();
    for (id, g) in &raw.group {
        let group = validate_group(ctx, id, g, &module_types)?;
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

    let battery = match &raw.battery {
        Some(b) => validate_battery(ctx, b)?,
        None => {
            return Err(PlanError::Missing {
                file: ctx.file.clone(),
                key: "battery".into(),
                hint: "add [battery] with nominal_v = 12, 24 or 48".into(),
            })
        }
    };

    let consumption = raw
        .load
        .as_ref()
        .map(|l| validate_load(ctx, l))
        .transpose()?;
    if consumption.is_some() && battery.model.is_none() {
        return Err(ctx.err(
            raw.load.as_ref().map_or(0..0, |l| l.span()),
            "battery.capacity_ah",
            "[load] needs a battery model: give battery.capacity_ah (and chemistry)".into(),
        ));
    }

    let mut controllers = Vec::new();
    if let Some(cs) = &raw.controller {
        for (id, c) in cs {
            controllers.push(validate_controller(ctx, id, c, &battery)?);
        }
    }
    if controllers.is_empty() {
        return Err(PlanError::Missing {
            file: ctx.file.clone(),
            key: "controller".into(),
            hint: "add a [controller.NAME] table (kind = \"mppt\" or \"pwm\")".into(),
        });
    }

    let cables = match &raw.cables {
        Some(c) => validate_cables(ctx, c)?,
        None => {
            return Err(PlanError::Missing {
                file: ctx.file.clone(),
                key: "cables".into(),
                hint: "add [cables] with string_lead_length_m and string_lead_mm2".into(),
            })
        }
    };

    let mut shade = Vec::new();
    for (k, s) in raw.shade.iter().enumerate() {
        shade.push(validate_shade(ctx, k, s, &modules, &module_types)?);
    }

    let enumerate_all = match &raw.layouts {
        None => false,
        Some(v) if v.get_ref() == "all" => true,
        Some(v) if v.get_ref() == "listed" => false,
        Some(v) => {
            return Err(ctx.err(
                v.span(),
                "layouts",
                format!(
                    "layouts = {:?} is not known; use \"all\" (every regular wiring) or \"listed\" (only the [[layout]] tables)",
                    v.get_ref()
                ),
            ))
        }
    };
    let mut layouts = Vec::new();
    for (k, l) in raw.layout.iter().enumerate() {
        layouts.push(validate_layout(ctx, k, l, &modules, &controllers)?);
    }
    if layouts.is_empty() && !enumerate_all {
        return Err(PlanError::Missing {
            file: ctx.file.clone(),
            key: "layout".into(),
            hint: "add [[layout]] tables, or layouts = \"all\" to try every wiring".into(),
        });
    }

    let geometry = validate_geometry(ctx, &raw, &groups, &modules, &module_types)?;

    Ok(Plan {
        source: PathBuf::from(&ctx.file),
        site,
        weather_path,
        model,
        module_types,
        groups,
        modules,
        controllers,
        battery,
        consumption,
        cables,
        shade,
        geometry,
        layouts,
        enumerate_all,
        enumerate: crate::input::plan::EnumerateOptions {
            allow_unused_modules: raw
                .enumerate
                .as_ref()
                .and_then(|e| e.allow_unused_modules)
                .unwrap_or(false),
            allow_mixed_orientation: raw
                .enumerate
                .as_ref()
                .and_then(|e| e.allow_mixed_orientation)
                .unwrap_or(false),
        },
    })
}

fn validate_site(ctx: &Ctx, raw: Option<&RawSite>) -> Result<SiteSpec, PlanError> {
    let Some(s) = raw else {
        return Ok(SiteSpec::default());
    };
    let opt = |v: &Option<S<f64>>, key: &str, lo, hi| -> Result<Option<f64>, PlanError> {
        v.as_ref().map(|v| ctx.range(v, key, lo, hi)).transpose()
    };
    let site = SiteSpec {
        name: s.name.clone(),
        latitude_deg: opt(&s.latitude_deg, "site.latitude_deg", -90.0, 90.0)?,
        longitude_deg: opt(&s.longitude_deg, "site.longitude_deg", -180.0, 180.0)?,
        elevation_m: opt(&s.elevation_m, "site.elevation_m", -500.0, 9000.0)?,
        utc_offset_h: opt(&s.utc_offset_h, "site.utc_offset_h", -12.0, 14.0)?,
        design_min_air_c: opt(&s.design_min_air_c, "site.design_min_air_c", -90.0, 60.0)?,
        design_max_air_c: opt(&s.design_max_air_c, "site.design_max_air_c", -90.0, 60.0)?,
    };
    if let (Some(off), Some(v)) = (site.utc_offset_h, &s.utc_offset_h) {
        if ((off * 4.0).round() - off * 4.0).abs() > 1e-9 {
            return Err(ctx.err(
                v.span(),
                "site.utc_offset_h",
                format!("site.utc_offset_h = {off} is not a whole number of quarter hours"),
            ));
        }
    }
    if let (Some(lo), Some(hi), Some(v)) = (
        site.design_min_air_c,
        site.design_max_air_c,
        &s.design_max_air_c,
    ) {
        if hi <= lo {
            return Err(ctx.err(
                v.span(),
                "site.design_max_air_c",
                format!("site.design_max_air_c = {hi} must be above site.design_min_air_c = {lo}"),
            ));
        }
    }
    Ok(site)
}

fn validate_model(
    ctx: &Ctx,
    raw: Option<&RawModel>,
    albedo: Albedo,
) -> Result<ModelOptions, PlanError> {
    let mut model = ModelOptions {
        sky: SkyModel::Perez,
        glass: GlassCover::DE_SOTO_2006,
        low_sun_elevation_deg: 15.0,
        delta_t_s: crate::physics::sun::DELTA_T_DEFAULT_S,
        albedo,
        uncertainty: crate::results::uncertainty::P90Inputs::TYPICAL,
    };
    if let Some(m) = raw {
        let t = crate::results::uncertainty::P90Inputs::TYPICAL;
        model.uncertainty = crate::results::uncertainty::P90Inputs {
            variability_frac: ctx.opt_range(
                &m.irradiance_variability_pct,
                "model.irradiance_variability_pct",
                0.0,
                50.0,
                t.variability_frac * 100.0,
            )? / 100.0,
            model_frac: ctx.opt_range(
                &m.model_uncertainty_pct,
                "model.model_uncertainty_pct",
                0.0,
                50.0,
                t.model_frac * 100.0,
            )? / 100.0,
        };
        if let Some(sky) = &m.sky {
            model.sky = match sky.get_ref().as_str() {
                "perez" => SkyModel::Perez,
                "hay-davies" => SkyModel::HayDavies,
                "isotropic" => SkyModel::Isotropic,
                other => {
                    return Err(ctx.err(
                        sky.span(),
                        "model.sky",
                        format!("model.sky = {other:?} is not known; use \"perez\", \"hay-davies\" or \"isotropic\""),
                    ))
                }
            };
        }
        model.low_sun_elevation_deg = ctx.opt_range(
            &m.low_sun_elevation_deg,
            "model.low_sun_elevation_deg",
            0.0,
            90.0,
            15.0,
        )?;
        model.delta_t_s = ctx.opt_range(
            &m.delta_t_s,
            "model.delta_t_s",
            -1000.0,
            1000.0,
            model.delta_t_s,
        )?;
    }
    Ok(model)
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
    let beta_pct = ctx.range(&r.beta_voc_pct_k, &k("beta_voc_pct_k"), -1.0, 0.0)?;
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

    // The datasheet's own consistency, before the fit sees it.
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
    let area = length_m * width_m;
    let eff = pmax_w / (1000.0 * area);
    if !(0.02..=0.30).contains(&eff) {
        return Err(ctx.err(
            r.length_m.span(),
            &k("length_m"),
            format!("module area {area:.3} m² gives an STC efficiency of {:.1} %, outside 2..30 %; check length_m and width_m", eff * 100.0),
        ));
    }

    let datasheet = Datasheet {
        voc_v,
        isc_a,
        vmp_v,
        imp_a,
        alpha_isc_a_k: alpha_pct / 100.0 * isc_a,
        beta_voc_v_k: beta_pct / 100.0 * voc_v,
        cells_in_series: cells,
    };
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
    let thermal_name = r
        .thermal
        .as_ref()
        .map_or("sandia-open-rack-glass-polymer", |t| t.get_ref().as_str());
    let thermal = match thermal_name {
        "sandia-open-rack-glass-glass" => CellTemperatureModel::SANDIA_GLASS_GLASS_OPEN_RACK,
        "sandia-close-roof-glass-glass" => CellTemperatureModel::SANDIA_GLASS_GLASS_CLOSE_ROOF,
        "sandia-open-rack-glass-polymer" => CellTemperatureModel::SANDIA_GLASS_POLYMER_OPEN_RACK,
        "sandia-insulated-back-glass-polymer" => {
            CellTemperatureModel::SANDIA_GLASS_POLYMER_INSULATED_BACK
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
            noct_c: types[module_type].noct_c,
        },
        other => {
            let span = r.thermal.as_ref().map_or(g.span(), |t| t.span());
            return Err(ctx.err(
                span,
                &k("thermal"),
                format!(
                    "{} = {other:?} is not known; use sandia-open-rack-glass-glass, sandia-close-roof-glass-glass, sandia-open-rack-glass-polymer, sandia-insulated-back-glass-polymer, faiman or noct",
                    k("thermal")
                ),
            ));
        }
    };
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

fn conductor(ctx: &Ctx, v: &Option<S<String>>, key: &str) -> Result<Conductor, PlanError> {
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
fn cross_section(
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
    let spec =
        BatterySpec::new(p).map_err(|e| ctx.err(cap.span(), "battery", format!("battery.{e}")))?;
    Ok(Battery {
        nominal_v,
        charge_v,
        model: Some(spec),
    })
}

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
        if !w.is_finite() || *w < 0.0 {
            return Err(ctx.err(
                v.span(),
                key,
                format!("{key}: hour {h} = {w} must be a finite number ≥ 0 (Wh)"),
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
    })
}

fn validate_controller(
    ctx: &Ctx,
    id: &str,
    c: &S<RawController>,
    battery: &Battery,
) -> Result<ControllerInput, PlanError> {
    let k = |name: &str| format!("controller.{id}.{name}");
    let r = c.get_ref();
    let max_input_v = ctx.above(&r.max_input_v, &k("max_input_v"), 0.0, 1500.0)?;
    let max_input_a = ctx.above(&r.max_input_a, &k("max_input_a"), 0.0, 500.0)?;
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
    let mppt_only = [
        (&r.mppt_min_v, "mppt_min_v"),
        (&r.mppt_max_v, "mppt_max_v"),
        (&r.headroom_v, "headroom_v"),
    ];
    let model = match r.kind.get_ref().as_str() {
        "mppt" => {
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
            let headroom_v = ctx.opt_range(&r.headroom_v, &k("headroom_v"), 0.0, 50.0, 1.0)?;
            let tracking = match r.tracking.as_ref().map(|t| t.get_ref().as_str()) {
                None | Some("global") => TrackerMode::Global,
                Some("local") => TrackerMode::Local,
                Some(other) => {
                    let span = r.tracking.as_ref().map_or(c.span(), |t| t.span());
                    return Err(ctx.err(
                        span,
                        &k("tracking"),
                        format!(
                            "{} = {other:?} is not known; use \"global\" or \"local\"",
                            k("tracking")
                        ),
                    ));
                }
            };
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
            ControllerModel::Mppt {
                mppt_min_v,
                mppt_max_v,
                headroom_v,
                efficiency_curve,
                tracking,
                start_offset_v,
                stop_offset_v,
                max_input_a,
                max_charge_a,
            }
        }
        "pwm" => {
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
            ControllerModel::Pwm {
                switch_drop_v: ctx.opt_range(
                    &r.switch_drop_v,
                    &k("switch_drop_v"),
                    0.0,
                    5.0,
                    0.2,
                )?,
                max_input_a,
                max_charge_a,
            }
        }
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
    let (cross_section_mm2, awg) = cross_section(
        ctx,
        &r.main_run_mm2,
        &r.main_run_awg,
        &k("main_run"),
        c.span(),
    )?;
    let main_run = CableRun {
        length_m: ctx.range(&r.main_run_length_m, &k("main_run_length_m"), 0.0, 1000.0)?,
        cross_section_mm2,
        awg,
        conductor: conductor(ctx, &r.main_run_conductor, &k("main_run_conductor"))?,
        ampacity_a: r
            .main_run_ampacity_a
            .as_ref()
            .map(|v| ctx.above(v, &k("main_run_ampacity_a"), 0.0, 1000.0))
            .transpose()?,
    };
    Ok(ControllerInput {
        id: id.to_string(),
        model,
        max_input_v,
        main_run,
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
            return Err(ctx.err(e.span(), key, format!("{key} point {} = [{f}, {eta}]: output fraction must be in 0..=1 and efficiency in (0, 1]", n + 1)));
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
                        format!("{key} contains {x}, outside {lo}..={hi}"),
                    ));
                }
            }
            Ok(list.get_ref().clone())
        }
    }
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

fn horizon(ctx: &Ctx, v: &S<Vec<Vec<f64>>>, key: &str) -> Result<HorizonProfile, PlanError> {
    let mut pts = Vec::new();
    for (n, p) in v.get_ref().iter().enumerate() {
        if p.len() != 2 {
            return Err(ctx.err(
                v.span(),
                key,
                format!(
                    "{key} point {} has {} numbers; write [azimuth_deg, elevation_deg]",
                    n + 1,
                    p.len()
                ),
            ));
        }
        pts.push((p[0], p[1]));
    }
    HorizonProfile::new(&pts).map_err(|e| ctx.err(v.span(), key, format!("{key}: {e}")))
}

fn validate_geometry(
    ctx: &Ctx,
    raw: &RawPlan,
    groups: &[Group],
    modules: &[Module],
    types: &[ModuleType],
) -> Result<Geometry, PlanError> {
    let site_horizon = raw
        .site
        .as_ref()
        .and_then(|s| s.horizon.as_ref())
        .map(|h| horizon(ctx, h, "site.horizon"))
        .transpose()?;
    let mut group_horizon = Vec::new();
    let mut placements: Vec<Option<ModulePlacement>> = vec![None; modules.len()];
    for (gi, (id, g)) in raw.group.iter().enumerate() {
        let r = g.get_ref();
        let k = |name: &str| format!("group.{id}.{name}");
        group_horizon.push(
            r.horizon
                .as_ref()
                .map(|h| horizon(ctx, h, &k("horizon")))
                .transpose()?,
        );
        let Some(centre) = &r.centre_m else {
            for (v, name) in [(&r.rows, "rows"), (&r.columns, "columns")] {
                if let Some(v) = v {
                    return Err(ctx.err(
                        v.span(),
                        &k(name),
                        format!("{} needs {} (where the group sits)", k(name), k("centre_m")),
                    ));
                }
            }
            continue;
        };
        let c = centre.get_ref();
        if c.len() != 3 || c.iter().any(|x| !x.is_finite()) {
            return Err(ctx.err(
                centre.span(),
                &k("centre_m"),
                format!(
                    "{} must be [east_m, north_m, up_m], three finite numbers",
                    k("centre_m")
                ),
            ));
        }
        let group = &groups[gi];
        let t = &types[group.module_type];
        let rows = r
            .rows
            .as_ref()
            .map(|v| ctx.int_range(v, &k("rows"), 1, 200))
            .transpose()?
            .unwrap_or(1) as u32;
        let columns = r
            .columns
            .as_ref()
            .map(|v| ctx.int_range(v, &k("columns"), 1, 200))
            .transpose()?
            .unwrap_or(group.count as i64) as u32;
        if (rows * columns) as usize != group.count {
            let span = r
                .rows
                .as_ref()
                .or(r.columns.as_ref())
                .map_or(centre.span(), |v| v.span());
            return Err(ctx.err(
                span,
                &k("rows"),
                format!(
                    "{} × {} = {} places, but the group has count = {}",
                    k("rows"),
                    k("columns"),
                    rows * columns,
                    group.count
                ),
            ));
        }
        let (length_m, width_m) = if r.landscape.unwrap_or(false) {
            (t.width_m.min(t.length_m), t.width_m.max(t.length_m))
        } else {
            (t.width_m.max(t.length_m), t.width_m.min(t.length_m))
        };
        let template = ModulePlacement {
            centre_e_m: c[0],
            centre_n_m: c[1],
            centre_up_m: c[2],
            tilt_deg: group.tilt_deg,
            azimuth_deg: group.azimuth_deg,
            length_m,
            width_m,
            substrings: t.bypass_diodes,
            substrings_along_long_side: r.substrings_along_long_side.unwrap_or(true),
        };
        let row_gap = ctx.opt_range(&r.row_gap_m, &k("row_gap_m"), 0.0, 50.0, 0.02)?;
        let column_gap = ctx.opt_range(&r.column_gap_m, &k("column_gap_m"), 0.0, 50.0, 0.02)?;
        let grid =
            crate::physics::shade::layout_grid(&template, rows, columns, row_gap, column_gap)
                .map_err(|e| {
                    ctx.err(
                        centre.span(),
                        &format!("group.{id}"),
                        format!("group.{id}: {e}"),
                    )
                })?;
        let mut n = 0;
        for (mi, m) in modules.iter().enumerate() {
            if m.group == gi {
                placements[mi] = grid.get(n).copied();
                n += 1;
            }
        }
    }
    let mut module_horizon: Vec<Option<HorizonProfile>> = vec![None; modules.len()];
    for (k, mh) in raw.module_horizon.iter().enumerate() {
        let r = mh.get_ref();
        let key = format!("module_horizon[{}]", k + 1);
        let m = modules
            .iter()
            .position(|m| &m.id == r.module.get_ref())
            .ok_or_else(|| {
                ctx.err(
                    r.module.span(),
                    &format!("{key}.module"),
                    format!(
                        "{key}.module = {:?} names no module (ids are <group>-<n>)",
                        r.module.get_ref()
                    ),
                )
            })?;
        module_horizon[m] = Some(horizon(ctx, &r.points, &format!("{key}.points"))?);
    }
    let mut obstacles = Vec::new();
    for (k, o) in raw.obstacle.iter().enumerate() {
        let r = o.get_ref();
        let key = |name: &str| format!("obstacle[{}].{name}", k + 1);
        let need = |v: &Option<S<f64>>, name: &str| -> Result<f64, PlanError> {
            match v {
                Some(v) if v.get_ref().is_finite() => Ok(*v.get_ref()),
                Some(v) => Err(ctx.err(
                    v.span(),
                    &key(name),
                    format!("{} = {} is not a finite number", key(name), v.get_ref()),
                )),
                None => Err(ctx.err(
                    o.span(),
                    &key(name),
                    format!("{} is missing for kind = {:?}", key(name), r.kind.get_ref()),
                )),
            }
        };
        let obstacle = match r.kind.get_ref().as_str() {
            "pole" => Obstacle::Pole {
                base_e_m: need(&r.east_m, "east_m")?,
                base_n_m: need(&r.north_m, "north_m")?,
                radius_m: need(&r.radius_m, "radius_m")?,
                height_m: *r.height_m.get_ref(),
            },
            "box" => {
                let Some(fp) = &r.footprint_m else {
                    return Err(ctx.err(
                        o.span(),
                        &key("footprint_m"),
                        format!(
                            "{} is missing for kind = \"box\" (four [east_m, north_m] corners)",
                            key("footprint_m")
                        ),
                    ));
                };
                let pts = fp.get_ref();
                if pts.len() != 4 || pts.iter().any(|p| p.len() != 2) {
                    return Err(ctx.err(
                        fp.span(),
                        &key("footprint_m"),
                        format!(
                            "{} must be four [east_m, north_m] corners",
                            key("footprint_m")
                        ),
                    ));
                }
                Obstacle::Box {
                    footprint: [
                        (pts[0][0], pts[0][1]),
                        (pts[1][0], pts[1][1]),
                        (pts[2][0], pts[2][1]),
                        (pts[3][0], pts[3][1]),
                    ],
                    base_m: r.base_m.as_ref().map_or(0.0, |v| *v.get_ref()),
                    height_m: *r.height_m.get_ref(),
                }
            }
            other => {
                return Err(ctx.err(
                    r.kind.span(),
                    &key("kind"),
                    format!(
                        "{} = {other:?} is not known; use \"pole\" or \"box\"",
                        key("kind")
                    ),
                ));
            }
        };
        obstacle.validate().map_err(|e| {
            ctx.err(
                o.span(),
                &format!("obstacle[{}]", k + 1),
                format!("obstacle[{}]: {e}", k + 1),
            )
        })?;
        let name = r
            .name
            .clone()
            .unwrap_or_else(|| format!("{} {}", obstacle.kind(), k + 1));
        obstacles.push((name, obstacle));
    }
    if !obstacles.is_empty() {
        if placements.iter().all(Option::is_none) {
            return Err(PlanError::Missing {
                file: ctx.file.clone(),
                key: "group.<name>.centre_m".into(),
                hint: "obstacles need to know where the modules are: give centre_m (and rows/columns) for the groups they may shade".into(),
            });
        }
        let placed: Vec<(usize, ModulePlacement)> = placements
            .iter()
            .enumerate()
            .filter_map(|(i, p)| p.map(|p| (i, p)))
            .collect();
        let just: Vec<ModulePlacement> = placed.iter().map(|(_, p)| *p).collect();
        let obs: Vec<Obstacle> = obstacles.iter().map(|(_, o)| *o).collect();
        crate::physics::shade::validate_scene(&just, &obs).map_err(|e| {
            ctx.err(
                raw.obstacle[0].span(),
                "obstacle",
                rename_scene_error(&e, &placed, modules, &obstacles),
            )
        })?;
    }
    Ok(Geometry {
        site_horizon,
        group_horizon,
        module_horizon,
        placements,
        obstacles,
    })
}

/// Turns `modules[i]`/`obstacles[j]` in a scene message into module ids and obstacle names.
fn rename_scene_error(
    e: &str,
    placed: &[(usize, ModulePlacement)],
    modules: &[Module],
    obstacles: &[(String, Obstacle)],
) -> String {
    let mut s = e.to_string();
    for (i, (mi, _)) in placed.iter().enumerate().rev() {
        s = s.replace(
            &format!("modules[{i}]"),
            &format!("module {}", modules[*mi].id),
        );
    }
    for (j, (name, _)) in obstacles.iter().enumerate().rev() {
        s = s.replace(&format!("obstacles[{j}]"), &format!("obstacle {name:?}"));
    }
    s
}
