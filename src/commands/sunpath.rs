//! `wirerank sunpath`: where the sun is over a range of dates (NREL SPA).

use std::fmt::Write as _;

use chrono::{Duration, NaiveDate, NaiveDateTime};

use crate::commands::load::load;
use crate::commands::{Outcome, SunpathRequest};
use crate::error::Error;
use crate::physics::sun::{self, Atmosphere, Observer};
use crate::time::LocalTime;

fn parse_date(s: &str, what: &str) -> Result<NaiveDate, Error> {
    NaiveDate::parse_from_str(s, "%Y-%m-%d")
        .map_err(|_| Error::Usage(format!("{what} = {s:?} is not a date; write YYYY-MM-DD")))
}

/// `wirerank sunpath`: the sun's position over a date range at a fixed step.
///
/// # Errors
/// Missing or out-of-range site values, bad dates, or a plan that fails to load.
pub fn sunpath(r: &SunpathRequest) -> Result<Outcome, Error> {
    let from_plan = match &r.plan {
        Some(p) => Some(load(&crate::commands::PlanSource::File(p.clone()))?.site),
        None => None,
    };
    let pick = |given: Option<f64>,
                plan: Option<f64>,
                key: &str,
                lo: f64,
                hi: f64|
     -> Result<f64, Error> {
        let v = given.or(plan).ok_or_else(|| {
            Error::Usage(format!(
                "--{} is missing (or give --plan)",
                key.replace('_', "-")
            ))
        })?;
        if !v.is_finite() || v < lo || v > hi {
            return Err(Error::Usage(format!(
                "--{} = {v} is outside {lo} to {hi}",
                key.replace('_', "-")
            )));
        }
        Ok(v)
    };
    let lat = pick(
        r.latitude_deg,
        from_plan.as_ref().map(|s| s.latitude_deg),
        "latitude_deg",
        -90.0,
        90.0,
    )?;
    let lon = pick(
        r.longitude_deg,
        from_plan.as_ref().map(|s| s.longitude_deg),
        "longitude_deg",
        -180.0,
        180.0,
    )?;
    let offset = pick(
        r.utc_offset_h,
        from_plan.as_ref().map(|s| s.utc_offset_h),
        "utc_offset_h",
        -12.0,
        14.0,
    )?;
    let elev = r
        .elevation_m
        .or(from_plan.as_ref().map(|s| s.elevation_m))
        .unwrap_or(0.0);
    if !(-500.0..=9000.0).contains(&elev) {
        return Err(Error::Usage(format!(
            "--elevation-m = {elev} is outside -500 to 9000"
        )));
    }
    if r.step_min == 0 || r.step_min > 1440 {
        return Err(Error::Usage(format!(
            "--step-min = {} is outside 1 to 1440",
            r.step_min
        )));
    }
    let from = parse_date(&r.from, "--date")?;
    let to = match &r.to {
        Some(t) => parse_date(t, "--to")?,
        None => from,
    };
    if to < from {
        return Err(Error::Usage(format!("--to {to} is before --date {from}")));
    }
    if (to - from).num_days() > 366 {
        return Err(Error::Usage(
            "--date .. --to spans more than 366 days".into(),
        ));
    }
    let observer = Observer {
        latitude_deg: lat,
        longitude_deg: lon,
        elevation_m: elev,
    };
    let atmosphere = Atmosphere {
        pressure_hpa: sun::pressure_from_elevation_hpa(elev),
        temperature_c: 12.0,
    };
    let mut out = String::new();
    if r.csv {
        out.push_str("time_local,zenith_deg,elevation_deg,azimuth_deg\n");
    } else {
        let _ = writeln!(
            out,
            "Sun at {lat:.4}°, {lon:.4}°, {elev:.0} m; local standard time UTC{offset:+} (no daylight saving)"
        );
        let _ = writeln!(
            out,
            "{:<17} {:>10} {:>11}",
            "time", "elevation°", "azimuth°"
        );
    }
    let start: NaiveDateTime = from.and_hms_opt(0, 0, 0).unwrap_or_default();
    let end: NaiveDateTime = to.and_hms_opt(0, 0, 0).unwrap_or_default() + Duration::days(1);
    let step = Duration::minutes(r.step_min as i64);
    let mut t = start;
    while t < end {
        let unix = LocalTime(t.and_utc().timestamp()).to_utc(offset).0;
        let p = sun::solar_position(
            unix,
            &observer,
            &atmosphere,
            crate::physics::sun::DELTA_T_DEFAULT_S,
        );
        let el = p.elevation_deg();
        if el <= 0.0 && !r.include_night {
            // Below the horizon: listed only with --all.
        } else if r.csv {
            let _ = writeln!(
                out,
                "{},{:.4},{:.4},{:.4}",
                t.format("%Y-%m-%dT%H:%M"),
                p.zenith_deg,
                el,
                p.azimuth_deg
            );
        } else {
            let _ = writeln!(
                out,
                "{:<17} {:>10.2} {:>11.2}",
                t.format("%Y-%m-%d %H:%M"),
                el,
                p.azimuth_deg
            );
        }
        t += step;
    }
    Ok(Outcome {
        stdout: out,
        ..Outcome::default()
    })
}
