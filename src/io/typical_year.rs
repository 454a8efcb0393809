//! Import of the open typical-year format that building-energy tools exchange.
//!
//! The format is comma-separated text: eight header records (LOCATION, DESIGN CONDITIONS,
//! TYPICAL/EXTREME PERIODS, GROUND TEMPERATURES, HOLIDAYS/DAYLIGHT SAVINGS, COMMENTS 1,
//! COMMENTS 2, DATA PERIODS), then one row per hour of 35 fields: year, month, day, hour
//! (1–24, the END of the hour: hour 1 covers 00:00–01:00), minute, data-source flags, dry
//! bulb temperature (°C), …, station pressure (Pa, field 10), …, global, direct normal and
//! diffuse horizontal radiation (Wh/m² over the preceding hour, fields 14–16), …, wind speed
//! (m/s, field 22), …; a value at or above the field's missing-value marker (99.9 for
//! temperatures, 9999 for radiation, 999 for wind, 999999 for pressure) means "missing".
//! Field numbers, units and markers follow the format's published data dictionary.
//!
//! Mapping onto [`UncheckedWeather`], then [`UncheckedWeather::validate`]:
//! - stamps are the END of each hour (`stamp = end`); hourly files only (DATA PERIODS
//!   records per hour = 1), the minute field is not used;
//! - the site (name, latitude, longitude, time zone, elevation) comes from LOCATION;
//! - a typical year mixes source years month by month. When every row carries the same year
//!   (and that year's calendar fits: a leap year must then include 29 February) the rows keep
//!   it; otherwise every row is mapped onto the one non-leap year [`TYPICAL_YEAR`] and rows
//!   of 29 February are dropped (counted in the notes);
//! - radiation in Wh/m² over an hour is numerically the hour's mean in W/m²;
//! - GHI and dry bulb temperature are required in every row (a missing marker is an error
//!   naming the line); direct normal and diffuse are used only when every row has both,
//!   wind and pressure only when every row has them (otherwise the column is dropped with a
//!   note).
//!
//! It deliberately does not read sub-hourly files, the albedo field (files often carry 0 or
//! the missing marker: set albedo in the plan), humidity, sky cover or precipitation, and
//! it does not check irradiance against the sun (the caller does, once the site is known).

use std::path::Path;

use chrono::NaiveDate;

use crate::error::WeatherError;
use crate::input::weather::{StampConvention, UncheckedWeather, Weather, WeatherSite};
use crate::io::weather_csv::parse_weather_csv;

/// The header records in their required order (matched case-insensitively, as the start of
/// the line up to the first comma).
pub const HEADER_RECORDS: [&str; 8] = [
    "LOCATION",
    "DESIGN CONDITIONS",
    "TYPICAL/EXTREME PERIODS",
    "GROUND TEMPERATURES",
    "HOLIDAYS/DAYLIGHT SAVINGS",
    "COMMENTS 1",
    "COMMENTS 2",
    "DATA PERIODS",
];

/// Fields of a data row in the published layout.
pub const DATA_FIELDS: usize = 35;

/// Fewest fields a row may have: everything up to wind speed (field 22), the last field
/// this importer reads. Older files stop before the last few fields.
pub const MIN_DATA_FIELDS: usize = 22;

/// The calendar year a typical year (rows from several source years) is mapped onto: a
/// non-leap year, so that a year of 8760 rows fits without a gap at 29 February.
pub const TYPICAL_YEAR: i32 = 2025;

/// What an import produced: the validated weather and notes on what was dropped or mapped.
#[derive(Clone, Debug)]
pub struct Imported {
    pub weather: Weather,
    /// Lower-case sentences for the user (mapping of years, dropped rows or columns).
    pub notes: Vec<String>,
}

/// True when `text` starts like the open typical-year format (first record `LOCATION,`).
pub fn looks_like_typical_year(text: &str) -> bool {
    let first = text
        .strip_prefix('\u{feff}')
        .unwrap_or(text)
        .lines()
        .next()
        .unwrap_or("");
    first
        .trim_start()
        .get(..9)
        .is_some_and(|s| s.eq_ignore_ascii_case("LOCATION,"))
}

/// Reads a weather file in either format: the open typical-year format when its first line
/// starts with `LOCATION,`, otherwise the crate's own CSV (`# wirerank weather 1`).
///
/// # Errors
/// [`WeatherError::Read`] when the file cannot be read, otherwise as
/// [`parse_typical_year`] or [`parse_weather_csv`].
pub fn read_any_weather(path: &Path) -> Result<Weather, WeatherError> {
    let name = crate::text::escape_line(&path.display().to_string()).into_owned();
    let text = crate::io::read_input_text(path, crate::io::WEATHER_MAX_BYTES, "weather file")
        .map_err(|source| WeatherError::Read {
            file: name.clone(),
            source,
        })?;
    if looks_like_typical_year(&text) {
        parse_typical_year(&text, &name).map(|i| i.weather)
    } else {
        parse_weather_csv(&text, &name)
    }
}

/// Reads and validates a file in the open typical-year format.
///
/// # Errors
/// [`WeatherError::Read`] when the file cannot be read, otherwise as [`parse_typical_year`].
pub fn read_typical_year(path: &Path) -> Result<Imported, WeatherError> {
    let name = crate::text::escape_line(&path.display().to_string()).into_owned();
    let text = crate::io::read_input_text(path, crate::io::WEATHER_MAX_BYTES, "weather file")
        .map_err(|source| WeatherError::Read {
            file: name.clone(),
            source,
        })?;
    parse_typical_year(&text, &name)
}

/// One data field this importer reads.
struct Field {
    /// 0-based position in the row.
    index: usize,
    /// Name for messages, with the 1-based field number.
    name: &'static str,
    /// Values at or above this are the format's missing-value marker.
    missing_at: f64,
}

const DRY_BULB: Field = Field {
    index: 6,
    name: "dry bulb temperature (field 7)",
    missing_at: 99.9,
};
const PRESSURE: Field = Field {
    index: 9,
    name: "station pressure (field 10)",
    missing_at: 999_999.0,
};
const GLOBAL: Field = Field {
    index: 13,
    name: "global horizontal radiation (field 14)",
    missing_at: 9999.0,
};
const DIRECT: Field = Field {
    index: 14,
    name: "direct normal radiation (field 15)",
    missing_at: 9999.0,
};
const DIFFUSE: Field = Field {
    index: 15,
    name: "diffuse horizontal radiation (field 16)",
    missing_at: 9999.0,
};
const WIND: Field = Field {
    index: 21,
    name: "wind speed (field 22)",
    missing_at: 999.0,
};

/// One data row as read.
struct Row {
    line: usize,
    year: i32,
    month: u32,
    day: u32,
    hour: u32,
    air_temp_c: f64,
    ghi_w_m2: f64,
    dni_w_m2: Option<f64>,
    dhi_w_m2: Option<f64>,
    wind_m_s: Option<f64>,
    pressure_hpa: Option<f64>,
}

/// Parses and validates text in the open typical-year format; `source_name` stands for the
/// file in messages.
///
/// # Errors
/// The first problem, naming the file and the 1-based line: a header record missing or out
/// of order, a LOCATION or DATA PERIODS value that does not parse or is out of range, a data
/// row with too few or too many fields, a field that is not a number, out of range or the
/// missing-value marker in a required field; then any [`UncheckedWeather::validate`] error.
pub fn parse_typical_year(text: &str, source_name: &str) -> Result<Imported, WeatherError> {
    let file = source_name.to_string();
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    if text.trim().is_empty() {
        return Err(WeatherError::Empty { file });
    }
    crate::io::weather_csv::refuse_control_characters(text, &file)?;
    let lines: Vec<&str> = text.lines().collect();
    for (i, record) in HEADER_RECORDS.iter().enumerate() {
        let line = lines.get(i).copied().unwrap_or("");
        check_header_record(&file, i + 1, line, record)?;
    }
    let site = parse_location(&file, lines[0])?;
    check_data_periods(&file, lines[7])?;

    let mut rows = Vec::with_capacity(8760);
    for (i, raw) in lines.iter().enumerate().skip(HEADER_RECORDS.len()) {
        let line = i + 1;
        let trimmed = raw.trim();
        if trimmed.is_empty() {
            continue;
        }
        rows.push(parse_row(&file, line, trimmed)?);
        crate::input::weather::check_interval_count(&file, rows.len())?;
    }
    if rows.is_empty() {
        return Err(WeatherError::NoData { file });
    }

    let mut notes = Vec::new();
    let first_year = rows[0].year;
    let one_year = rows.iter().all(|r| r.year == first_year);
    let has_feb29 = rows.iter().any(|r| r.month == 2 && r.day == 29);
    let keep_year = one_year && (!crate::time::is_leap_year(i64::from(first_year)) || has_feb29);
    let year = if keep_year { first_year } else { TYPICAL_YEAR };
    if !keep_year {
        let (lo, hi) = rows.iter().fold((i32::MAX, i32::MIN), |(lo, hi), r| {
            (lo.min(r.year), hi.max(r.year))
        });
        let span = if lo == hi {
            format!("{lo} without 29 february")
        } else {
            format!("{lo}–{hi}")
        };
        notes.push(format!(
            "rows from the years {span} (a typical year) were mapped onto {TYPICAL_YEAR}, a non-leap year"
        ));
        let before = rows.len();
        rows.retain(|r| !(r.month == 2 && r.day == 29));
        let dropped = before - rows.len();
        if dropped > 0 {
            notes.push(format!(
                "{dropped} rows of 29 february were dropped ({TYPICAL_YEAR} has no such day)"
            ));
        }
        if rows.is_empty() {
            return Err(WeatherError::NoData { file });
        }
    }

    let mut stamp_s = Vec::with_capacity(rows.len());
    for r in &rows {
        let date = NaiveDate::from_ymd_opt(year, r.month, r.day).ok_or_else(|| {
            WeatherError::OutOfRange {
                file: file.clone(),
                line: r.line,
                column: "day (field 3)".to_string(),
                value: f64::from(r.day),
                range: format!("the days of month {} in {year}", r.month),
                hint: String::new(),
            }
        })?;
        let midnight = date
            .and_hms_opt(0, 0, 0)
            .map(|t| t.and_utc().timestamp())
            .unwrap_or_default();
        stamp_s.push(midnight + 3600 * i64::from(r.hour));
    }

    let n = rows.len();
    let complete = |get: &dyn Fn(&Row) -> Option<f64>| -> Option<Vec<f64>> {
        rows.iter().map(get).collect::<Option<Vec<f64>>>()
    };
    let missing_note = |what: &str, get: &dyn Fn(&Row) -> Option<f64>, consequence: &str| {
        let missing: Vec<usize> = rows
            .iter()
            .filter(|r| get(r).is_none())
            .map(|r| r.line)
            .collect();
        format!(
            "{what} is missing in {} of {n} rows (first on line {}); {consequence}",
            missing.len(),
            missing.first().copied().unwrap_or(0)
        )
    };
    let dni = complete(&|r| r.dni_w_m2);
    let dhi = complete(&|r| r.dhi_w_m2);
    let (dni, dhi) = match (dni, dhi) {
        (Some(a), Some(b)) => (Some(a), Some(b)),
        _ => {
            notes.push(missing_note(
                "direct normal or diffuse radiation",
                &|r| r.dni_w_m2.and(r.dhi_w_m2),
                "both columns were left out and the simulation splits global radiation itself",
            ));
            (None, None)
        }
    };
    let wind = complete(&|r| r.wind_m_s);
    if wind.is_none() {
        notes.push(missing_note(
            "wind speed",
            &|r| r.wind_m_s,
            "the column was left out and the cell temperature models use their default wind",
        ));
    }
    let pressure = complete(&|r| r.pressure_hpa);
    if pressure.is_none() {
        notes.push(missing_note(
            "station pressure",
            &|r| r.pressure_hpa,
            "the column was left out and the pressure follows from the elevation",
        ));
    }

    let weather = UncheckedWeather {
        source: file,
        site,
        interval_s: 3600,
        stamp: StampConvention::End,
        stamp_s,
        line: rows.iter().map(|r| r.line).collect(),
        ghi_w_m2: rows.iter().map(|r| r.ghi_w_m2).collect(),
        dni_w_m2: dni,
        dhi_w_m2: dhi,
        air_temp_c: rows.iter().map(|r| r.air_temp_c).collect(),
        wind_m_s: wind,
        albedo_frac: None,
        pressure_hpa: pressure,
    }
    .validate()?;
    Ok(Imported { weather, notes })
}

fn check_header_record(
    file: &str,
    line_no: usize,
    line: &str,
    record: &str,
) -> Result<(), WeatherError> {
    let first = line.split(',').next().unwrap_or("").trim();
    // The published dictionary spells the fifth record "HOLIDAYS/DAYLIGHT SAVING", files
    // "…SAVINGS": accept both.
    let ok = first.eq_ignore_ascii_case(record)
        || (record == HEADER_RECORDS[4] && first.eq_ignore_ascii_case("HOLIDAYS/DAYLIGHT SAVING"));
    if ok && line.contains(',') {
        return Ok(());
    }
    let found: String = line.chars().take(40).collect();
    let hint = if line_no == 1 && line.trim_start().starts_with('#') {
        " (this looks like wirerank's own weather csv, which needs no import)"
    } else {
        ""
    };
    Err(WeatherError::BadHeaderValue {
        file: file.to_string(),
        line: line_no,
        key: "header record".to_string(),
        value: found,
        reason: format!(
            "should start with `{record},`: the open typical-year format has 8 header records \
             in the order {}{hint}",
            HEADER_RECORDS.join(", ")
        ),
    })
}

/// LOCATION,city,region,country,source,WMO,latitude,longitude,time zone,elevation
fn parse_location(file: &str, line: &str) -> Result<WeatherSite, WeatherError> {
    let fields: Vec<&str> = line.split(',').map(str::trim).collect();
    if fields.len() < 10 {
        return Err(WeatherError::FieldCount {
            file: file.to_string(),
            line: 1,
            found: fields.len(),
            expected: 10,
        });
    }
    let bad = |key: &str, value: &str, reason: String| WeatherError::BadHeaderValue {
        file: file.to_string(),
        line: 1,
        key: format!("LOCATION {key}"),
        value: value.to_string(),
        reason,
    };
    let number = |index: usize, key: &str, lo: f64, hi: f64| -> Result<f64, WeatherError> {
        let text = fields[index];
        let v: f64 = text
            .parse()
            .map_err(|_| bad(key, text, "is not a number".to_string()))?;
        if v.is_finite() && (lo..=hi).contains(&v) {
            Ok(v)
        } else {
            Err(bad(key, text, format!("is outside {lo} to {hi}")))
        }
    };
    let latitude_deg = number(6, "latitude (field 7)", -90.0, 90.0)?;
    let longitude_deg = number(7, "longitude (field 8)", -180.0, 180.0)?;
    let utc_offset_h = number(8, "time zone (field 9)", -12.0, 14.0)?;
    if (utc_offset_h * 4.0).fract() != 0.0 {
        return Err(bad(
            "time zone (field 9)",
            fields[8],
            "is not a whole number of quarter hours".to_string(),
        ));
    }
    let elevation_m = number(9, "elevation (field 10)", -500.0, 9000.0)?;
    let parts: Vec<&str> = fields[1..4]
        .iter()
        .copied()
        .filter(|p| !p.is_empty() && *p != "-")
        .collect();
    let name = if parts.is_empty() {
        None
    } else {
        Some(parts.join(", "))
    };
    Ok(WeatherSite {
        name,
        latitude_deg: Some(latitude_deg),
        longitude_deg: Some(longitude_deg),
        elevation_m: Some(elevation_m),
        utc_offset_h: Some(utc_offset_h),
        key_lines: [
            "latitude_deg",
            "longitude_deg",
            "elevation_m",
            "utc_offset_h",
        ]
        .into_iter()
        .map(|k| (k, 1))
        .collect(),
    })
}

/// DATA PERIODS,number of periods,records per hour,…: only hourly files are read.
fn check_data_periods(file: &str, line: &str) -> Result<(), WeatherError> {
    let fields: Vec<&str> = line.split(',').map(str::trim).collect();
    let per_hour = fields.get(2).copied().unwrap_or("");
    match per_hour.parse::<u32>() {
        Ok(1) => Ok(()),
        Ok(_) => Err(WeatherError::BadHeaderValue {
            file: file.to_string(),
            line: 8,
            key: "DATA PERIODS records per hour (field 3)".to_string(),
            value: per_hour.to_string(),
            reason: "is not 1; only hourly files are imported".to_string(),
        }),
        Err(_) => Err(WeatherError::BadHeaderValue {
            file: file.to_string(),
            line: 8,
            key: "DATA PERIODS records per hour (field 3)".to_string(),
            value: per_hour.to_string(),
            reason: "is not a whole number".to_string(),
        }),
    }
}

fn parse_row(file: &str, line: usize, text: &str) -> Result<Row, WeatherError> {
    let fields: Vec<&str> = text.split(',').map(str::trim).collect();
    if !(MIN_DATA_FIELDS..=DATA_FIELDS).contains(&fields.len()) {
        return Err(WeatherError::FieldCount {
            file: file.to_string(),
            line,
            found: fields.len(),
            expected: DATA_FIELDS,
        });
    }
    let integer = |index: usize, name: &str, lo: i64, hi: i64| -> Result<i64, WeatherError> {
        let t = fields[index];
        let v: i64 = t.parse().map_err(|_| WeatherError::NotANumber {
            file: file.to_string(),
            line,
            column: name.to_string(),
            value: t.to_string(),
        })?;
        if (lo..=hi).contains(&v) {
            Ok(v)
        } else {
            Err(WeatherError::OutOfRange {
                file: file.to_string(),
                line,
                column: name.to_string(),
                value: v as f64,
                range: format!("{lo} to {hi}"),
                hint: String::new(),
            })
        }
    };
    // A value, or None at the missing-value marker.
    let value = |f: &Field| -> Result<Option<f64>, WeatherError> {
        let t = fields.get(f.index).copied().unwrap_or("");
        let v: f64 = t.parse().map_err(|_| WeatherError::NotANumber {
            file: file.to_string(),
            line,
            column: f.name.to_string(),
            value: t.to_string(),
        })?;
        if !v.is_finite() {
            return Err(WeatherError::NotFinite {
                file: file.to_string(),
                line,
                column: f.name.to_string(),
                value: t.to_string(),
            });
        }
        Ok((v < f.missing_at).then_some(v))
    };
    let required = |f: &Field| -> Result<f64, WeatherError> {
        value(f)?.ok_or_else(|| WeatherError::OutOfRange {
            file: file.to_string(),
            line,
            column: f.name.to_string(),
            value: fields[f.index].parse().unwrap_or(f.missing_at),
            range: "its valid values".to_string(),
            hint: format!(
                " ({} and above is the format's missing-value marker; this importer needs a \
                 value in every hour, so fill the gap first)",
                f.missing_at
            ),
        })
    };

    let year = integer(0, "year (field 1)", 1, 9999)? as i32;
    let month = integer(1, "month (field 2)", 1, 12)? as u32;
    let day = integer(2, "day (field 3)", 1, 31)? as u32;
    let hour = integer(3, "hour (field 4)", 1, 24)? as u32;
    integer(4, "minute (field 5)", 0, 60)?;
    let air_temp_c = required(&DRY_BULB)?;
    let ghi_w_m2 = required(&GLOBAL)?;
    Ok(Row {
        line,
        year,
        month,
        day,
        hour,
        air_temp_c,
        ghi_w_m2,
        dni_w_m2: value(&DIRECT)?,
        dhi_w_m2: value(&DIFFUSE)?,
        wind_m_s: value(&WIND)?,
        pressure_hpa: value(&PRESSURE)?.map(|pa| pa / 100.0),
    })
}
