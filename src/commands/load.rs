//! Loading a plan: the plan file (or the embedded demo), its weather file, and the site they
//! describe together.

use std::path::Path;

use crate::commands::PlanSource;
use crate::error::Error;
use crate::input::plan::Plan;
use crate::input::site::resolve_site;
use crate::input::weather::Weather;
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
    let plan = read_plan(source)?;
    let weather = read_weather(source, &plan)?;
    with_weather(source, plan, weather)
}

/// Reads and validates the plan alone.
///
/// # Errors
/// Any validation error of the plan.
pub fn read_plan(source: &PlanSource) -> Result<Plan, Error> {
    Ok(match source {
        PlanSource::Demo => io::plan_toml::parse_plan(DEMO_PLAN, "demo plan", Path::new(""))?,
        PlanSource::File(path) => io::plan_toml::read_plan(path)?,
    })
}

/// Reads and validates the plan's weather file (the embedded year for the demo).
///
/// # Errors
/// The file cannot be read or is not valid weather.
pub fn read_weather(source: &PlanSource, plan: &Plan) -> Result<Weather, Error> {
    Ok(match source {
        PlanSource::Demo => io::weather_csv::parse_weather_csv(DEMO_WEATHER, "larchwood-2025.csv")?,
        PlanSource::File(_) => io::typical_year::read_any_weather(&plan.weather_path)?,
    })
}

/// The plan and its weather together: the site they describe, checked, and the inputs'
/// hashes (provenance).
///
/// # Errors
/// A site conflict between them, or irradiance above what the sun gives there.
pub fn with_weather(source: &PlanSource, plan: Plan, weather: Weather) -> Result<Loaded, Error> {
    let (plan_sha256, weather_sha256) = match source {
        PlanSource::Demo => (
            io::sha256_hex(DEMO_PLAN.as_bytes()),
            io::sha256_hex(DEMO_WEATHER.as_bytes()),
        ),
        PlanSource::File(path) => (
            io::file_sha256(path).unwrap_or_default(),
            io::file_sha256(&plan.weather_path).unwrap_or_default(),
        ),
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
