//! The site: the plan's `[site]` merged with the weather file's header.

use crate::error::SiteError;
use crate::input::plan::Plan;
use crate::input::weather::Weather;

/// The site after merging the plan and the weather header.
#[derive(Clone, Debug, PartialEq)]
pub struct Site {
    pub name: String,
    pub latitude_deg: f64,
    pub longitude_deg: f64,
    pub elevation_m: f64,
    pub utc_offset_h: f64,
}

/// Merges the plan's site with the weather header's; a value given by both must agree.
///
/// # Errors
/// Latitude, longitude or UTC offset given by neither, or a conflict beyond a small tolerance
/// (0.01° for angles, 25 m for elevation, exactly for the UTC offset).
pub fn resolve_site(plan: &Plan, weather: &Weather) -> Result<Site, SiteError> {
    let pick = |key: &'static str,
                p: Option<f64>,
                w: Option<f64>,
                tol: f64|
     -> Result<Option<f64>, SiteError> {
        match (p, w) {
            (Some(a), Some(b)) if (a - b).abs() > tol => Err(SiteError::Conflict {
                key,
                plan_value: a,
                plan: plan.source.display().to_string(),
                plan_line: line_of(&plan.site.key_lines, key),
                weather_value: b,
                weather: weather.source.clone(),
                weather_line: line_of(&weather.site.key_lines, key),
            }),
            (Some(a), _) => Ok(Some(a)),
            (None, b) => Ok(b),
        }
    };
    let missing = |key: &'static str| SiteError::Missing {
        key,
        weather: weather.source.clone(),
    };
    let ws = &weather.site;
    let ps = &plan.site;
    Ok(Site {
        name: ps
            .name
            .clone()
            .or_else(|| ws.name.clone())
            .unwrap_or_else(|| "unnamed site".to_string()),
        latitude_deg: pick("latitude_deg", ps.latitude_deg, ws.latitude_deg, 0.01)?
            .ok_or_else(|| missing("latitude_deg"))?,
        longitude_deg: pick("longitude_deg", ps.longitude_deg, ws.longitude_deg, 0.01)?
            .ok_or_else(|| missing("longitude_deg"))?,
        elevation_m: pick("elevation_m", ps.elevation_m, ws.elevation_m, 25.0)?.unwrap_or(0.0),
        utc_offset_h: pick("utc_offset_h", ps.utc_offset_h, ws.utc_offset_h, 1e-9)?
            .ok_or_else(|| missing("utc_offset_h"))?,
    })
}

/// The recorded line of `key`, if any.
fn line_of(lines: &[(&'static str, usize)], key: &str) -> Option<usize> {
    lines.iter().find(|(k, _)| *k == key).map(|(_, l)| *l)
}
