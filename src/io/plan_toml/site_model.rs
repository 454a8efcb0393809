//! The `[site]` and `[model]` sections: the site as the plan states it (coordinates, clock,
//! design temperatures), and the model options (sky model, low-sun limit, ΔT, P90 inputs).
//!
//! The `[weather]` section's file path is resolved here too, against the plan's folder.
//!
//! It does not merge the plan's site with the weather file's header (that happens once
//! the weather is read, in `input::site`), and it does not check the weather file itself.

use std::path::{Path, PathBuf};

use crate::error::PlanError;
use crate::input::plan::{Albedo, ModelOptions, SiteSpec};
use crate::physics::sky::{GlassCover, SkyModel};

use super::ctx::Ctx;
use super::raw::{OneOrMonthly, RawModel, RawSite, RawWeather, S};

pub(super) fn validate_site(ctx: &Ctx, raw: Option<&RawSite>) -> Result<SiteSpec, PlanError> {
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
        key_lines: [
            ("latitude_deg", &s.latitude_deg),
            ("longitude_deg", &s.longitude_deg),
            ("elevation_m", &s.elevation_m),
            ("utc_offset_h", &s.utc_offset_h),
        ]
        .into_iter()
        .filter_map(|(k, v)| v.as_ref().map(|v| (k, ctx.line_col(v.span().start).0)))
        .collect(),
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

/// `site.albedo_frac`: one number for the year or 12 monthly values; 0.2 when absent.
pub(super) fn validate_albedo(ctx: &Ctx, raw: Option<&RawSite>) -> Result<Albedo, PlanError> {
    Ok(match raw.and_then(|s| s.albedo_frac.as_ref()) {
        None => Albedo::Constant(0.2),
        Some(v) => match v.get_ref() {
            OneOrMonthly::One(_) => {
                Albedo::Constant(ctx.monthly(v, "site.albedo_frac", 0.0, 1.0, 1.0)?[0])
            }
            OneOrMonthly::Monthly(_) => {
                Albedo::Monthly(ctx.monthly(v, "site.albedo_frac", 0.0, 1.0, 1.0)?)
            }
        },
    })
}

/// `weather.file`, taken relative to the plan's folder (`base_dir`); only its emptiness is
/// checked here, the file itself is read later.
pub(super) fn weather_path(
    ctx: &Ctx,
    raw: &RawWeather,
    base_dir: &Path,
) -> Result<PathBuf, PlanError> {
    let weather_file = raw.file.get_ref();
    if weather_file.trim().is_empty() {
        return Err(ctx.err(
            raw.file.span(),
            "weather.file",
            "weather.file is empty; give the weather CSV's path relative to the plan".into(),
        ));
    }
    Ok(base_dir.join(weather_file))
}

pub(super) fn validate_model(
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
        coupled_layouts: crate::input::plan::COUPLED_LAYOUTS_DEFAULT,
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
        if let Some(k) = &m.coupled_layouts {
            let n = ctx.range(k, "model.coupled_layouts", 1.0, 100_000.0)?;
            if n.fract() != 0.0 {
                return Err(ctx.err(
                    k.span(),
                    "model.coupled_layouts",
                    format!("model.coupled_layouts = {n} must be a whole number of layouts (1 to 100000)"),
                ));
            }
            model.coupled_layouts = n as usize;
        }
    }
    Ok(model)
}
