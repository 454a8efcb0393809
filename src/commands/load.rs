//! Loading a plan: the plan file (or the embedded demo), its weather file, and the site they
//! describe together.

use std::path::Path;

use crate::commands::PlanSource;
use crate::error::Error;
use crate::input::site::resolve_site;
use crate::input::Loaded;
use crate::io;

/// The bundled demo plan (an invented cabin and system).
pub const DEMO_PLAN: &str = include_str!("../../weather-samples/larchwood-plan.toml");
/// The bundled demo weather year (an invented site, made by `examples/make_sample_weather.rs`).
pub const DEMO_WEATHER: &str = crate::weather_gen::sample::LARCHWOOD_2025_CSV;

/// Reads and validates a plan, its weather file and the site they describe together.
///
/// # Errors
/// Any validation error of the plan or the weather file, or a site conflict between them.
pub fn load(source: &PlanSource) -> Result<Loaded, Error> {
    let (plan, weather, plan_sha256, weather_sha256) = match source {
        PlanSource::Demo => {
            let plan = io::plan_toml::parse_plan(DEMO_PLAN, "demo plan", Path::new(""))?;
            let weather = io::weather_csv::parse_weather_csv(DEMO_WEATHER, "larchwood-2025.csv")?;
            let hashes = (
                io::sha256_hex(DEMO_PLAN.as_bytes()),
                io::sha256_hex(DEMO_WEATHER.as_bytes()),
            );
            (plan, weather, hashes.0, hashes.1)
        }
        PlanSource::File(path) => {
            let plan = io::plan_toml::read_plan(path)?;
            let weather = io::typical_year::read_any_weather(&plan.weather_path)?;
            let plan_hash = io::file_sha256(path).unwrap_or_default();
            let weather_hash = io::file_sha256(&plan.weather_path).unwrap_or_default();
            (plan, weather, plan_hash, weather_hash)
        }
    };
    let site = resolve_site(&plan, &weather)?;
    weather.check_against_extraterrestrial(
        site.latitude_deg,
        site.longitude_deg,
        site.utc_offset_h,
    )?;
    Ok(Loaded {
        plan,
        weather,
        site,
        plan_sha256,
        weather_sha256,
    })
}
