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
use crate::input::plan::*;

use ctx::Ctx;
use raw::{OneOrMonthly, RawPlan};

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
    let site = site_model::validate_site(ctx, raw.site.as_ref())?;
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

    let model = site_model::validate_model(ctx, raw.model.as_ref(), albedo)?;

    // Module types, in a stable order (BTreeMap: by id).
    let mut module_types = Vec::new();
    for (id, mt) in &raw.module_type {
        module_types.push(modules::validate_module_type(ctx, id, mt)?);
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
        let group = modules::validate_group(ctx, id, g, &module_types)?;
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
        Some(b) => battery_load::validate_battery(ctx, b)?,
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
        .map(|l| battery_load::validate_load(ctx, l))
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
            controllers.push(controllers::validate_controller(ctx, id, c, &battery)?);
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
        Some(c) => cables::validate_cables(ctx, c)?,
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
        shade.push(shade::validate_shade(ctx, k, s, &modules, &module_types)?);
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
        layouts.push(layouts::validate_layout(ctx, k, l, &modules, &controllers)?);
    }
    if layouts.is_empty() && !enumerate_all {
        return Err(PlanError::Missing {
            file: ctx.file.clone(),
            key: "layout".into(),
            hint: "add [[layout]] tables, or layouts = \"all\" to try every wiring".into(),
        });
    }

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
