//! `wirerank shade`: the share of direct light each module loses, month by month.

use std::path::Path;

use crate::commands::load::load;
use crate::commands::{Outcome, PlanSource};
use crate::error::Error;
use crate::io;
use crate::results::{light, shade_view, ShadeResult};
use crate::sim::{conditions, curves};
use crate::time::LocalTime;

/// Runs phase 1 and the shading of phase 2 for every module.
///
/// # Errors
/// As [`load`].
pub fn shade_losses(source: &PlanSource) -> Result<ShadeResult, Error> {
    let loaded = load(source)?;
    let cond = conditions::phase1(&loaded.plan, &loaded.weather, &loaded.site);
    let scene = curves::ShadeScene::every_module(&loaded.plan);
    let curves = curves::all_interval_curves_in(&loaded.plan, &cond, &scene, true);
    let direct = curves::direct_light_lost(&loaded.plan, &cond, &curves);
    let months_present = light::months_present(&cond);
    // The year of the file's first stamp (the sun paths are drawn for it).
    let year = loaded
        .weather
        .local_start_s
        .first()
        .map_or(2025, |&s| LocalTime(s).year() as i32);
    let views = shade_view::sun_path_views(
        &loaded.plan,
        &loaded.site,
        year,
        loaded.plan.model.delta_t_s,
    );
    Ok(ShadeResult {
        loaded,
        direct,
        months_present,
        views,
    })
}

pub fn shade(source: &PlanSource, out: Option<&Path>) -> Result<Outcome, Error> {
    let r = shade_losses(source)?;
    let mut stdout = io::terminal::shade(&r);
    if let Some(dir) = out {
        for path in io::export::write_shade_csv(&r, dir)? {
            stdout.push_str(&format!("\nWrote {}", path.display()));
        }
        stdout.push('\n');
    }
    Ok(Outcome {
        stdout,
        warnings: r.loaded.warning_texts(),
        nothing_passed: false,
    })
}
