//! The plan file: a TOML mirror (serde) and its validation into [`crate::input::plan::Plan`].
//!
//! Every error names the file, the line and column, the key and what was expected. Unknown
//! keys are rejected so that a typo never silently falls back to a default. Nothing past
//! this module sees serde or an unvalidated value.
//!
//! This file holds the public entry points and the order in which the plan's sections are
//! validated (the first problem in that order is the one reported). The TOML mirror is in
//! `raw.rs`, the error-location helpers in `ctx.rs`, and each section's rules in its own file.

mod battery_load;
mod cables;
mod controllers;
mod ctx;
mod geometry;
mod layouts;
mod modules;
mod raw;
mod shade;
mod site_model;

use std::path::{Path, PathBuf};

use crate::error::PlanError;
use crate::input::plan::Plan;

use ctx::Ctx;
use raw::RawPlan;

/// Reads and validates a plan file. Relative paths in it are taken from the plan's folder.
///
/// # Errors
/// The file cannot be read, is not valid TOML, has unknown keys, or a value is out of range.
pub fn read_plan(path: &Path) -> Result<Plan, PlanError> {
    let name = crate::text::escape_line(&path.display().to_string()).into_owned();
    let text =
        crate::io::read_input_text(path, crate::io::PLAN_MAX_BYTES, "plan").map_err(|e| {
            PlanError::Read {
                path: name.clone(),
                source: e,
            }
        })?;
    let base = path.parent().unwrap_or_else(|| Path::new(""));
    parse_plan(&text, &name, base)
}

/// Parses and validates plan text; `file_name` appears in messages, `base_dir` resolves the
/// weather file.
///
/// # Errors
/// As [`read_plan`], less the reading.
pub fn parse_plan(text: &str, file_name: &str, base_dir: &Path) -> Result<Plan, PlanError> {
    let ctx = Ctx {
        file: crate::text::escape_line(file_name).into_owned(),
        text,
        warnings: Default::default(),
    };
    let raw: RawPlan = toml::from_str(text).map_err(|e| {
        let (line, column) = e.span().map_or((0, 0), |s| ctx.line_col(s.start));
        PlanError::Syntax {
            file: ctx.file.clone(),
            line,
            column,
            message: crate::text::escape_line(&crate::io::plain_toml_message(e.message()))
                .into_owned(),
        }
    })?;
    validate(&ctx, raw, base_dir)
}

/// Validates the sections in a fixed order; the first problem in that order is reported, so
/// a later section may rely on the ones before it (groups on module types, loads and
/// controllers on the battery, shade rules and layouts on the modules and controllers).
fn validate(ctx: &Ctx, raw: RawPlan, base_dir: &Path) -> Result<Plan, PlanError> {
    let site = site_model::validate_site(ctx, raw.site.as_ref())?;
    let albedo = site_model::validate_albedo(ctx, raw.site.as_ref())?;
    let weather_path = site_model::weather_path(ctx, &raw.weather, base_dir)?;
    let model = site_model::validate_model(ctx, raw.model.as_ref(), albedo)?;
    let module_types = modules::validate_module_types(ctx, &raw.module_type)?;
    let (groups, modules) = modules::validate_groups(ctx, &raw.group, &module_types)?;
    let battery = battery_load::require_battery(ctx, raw.battery.as_ref())?;
    let consumption = battery_load::validate_optional_load(ctx, raw.load.as_ref(), &battery)?;
    let controllers = controllers::validate_controllers(ctx, raw.controller.as_ref(), &battery)?;
    let cables = cables::require_cables(ctx, raw.cables.as_ref())?;
    let shade = shade::validate_shades(ctx, &raw.shade, &modules, &module_types)?;
    let enumerate_all = layouts::enumerate_all(ctx, raw.layouts.as_ref(), &modules)?;
    let layouts =
        layouts::validate_layouts(ctx, &raw.layout, enumerate_all, &modules, &controllers)?;
    let geometry = geometry::validate_geometry(ctx, &raw, &groups, &modules, &module_types)?;

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
        enumerate: layouts::enumerate_options(raw.enumerate.as_ref()),
        warnings: ctx.warnings.take(),
    })
}
