//! Reads and writes wirerank's weather CSV (format `# wirerank weather 1`).
//!
//! Reading happens in three passes over the text. Our own line scan parses the `#` header
//! (`key = value`, unknown keys rejected), checks the column names and records which file
//! line each data row sits on, and hands polars the body alone (column names and data
//! lines, trimmed, blank lines dropped, so that polars row k is data line k — polars reads a
//! blank line as a row of nulls); polars tokenises it, every column as text;
//! finally each cell is parsed here, so that every message can name the 1-based file line
//! and the column (`ridge.csv line 4389: air_temp_c = "abc" is not a number`). polars'
//! own float parsing would report a byte offset and turn "NaN" into a number silently,
//! which is why cells are read as strings. The resulting [`UncheckedWeather`] is then
//! validated by `weather.rs` (ranges, order, gaps, repairs).
//!
//! This module does not resolve the site against the plan, does not check irradiance
//! against the sun (that needs the resolved site) and does not read the open typical-year
//! format that building-energy tools exchange (a separate importer).

use std::io::Cursor;
use std::path::Path;
use std::sync::Arc;

use chrono::NaiveDateTime;
use polars::prelude::{
    CsvParseOptions, CsvReadOptions, DataFrame, DataType, Field, Schema, SerReader,
};

use crate::error::WeatherError;
use crate::input::weather::{
    check_interval_min, StampConvention, UncheckedWeather, Weather, WeatherSite,
};

/// The first line of every file in this format.
pub const FORMAT_LINE: &str = "# wirerank weather 1";

/// Header keys this format defines, in the order the writer puts them.
pub const HEADER_KEYS: [&str; 7] = [
    "site_name",
    "latitude_deg",
    "longitude_deg",
    "elevation_m",
    "utc_offset_h",
    "interval_min",
    "stamp",
];

/// Column names this format defines, in the order the writer puts them.
pub const COLUMNS: [&str; 8] = [
    "time_local",
    "ghi_w_m2",
    "dni_w_m2",
    "dhi_w_m2",
    "air_temp_c",
    "wind_m_s",
    "albedo_frac",
    "pressure_hpa",
];

const REQUIRED_COLUMNS: [&str; 3] = ["time_local", "ghi_w_m2", "air_temp_c"];

/// Reads and validates a weather CSV file.
///
/// The file name as given is used in every message.
///
/// # Errors
/// [`WeatherError::Read`] when the file cannot be read (or is not UTF-8), otherwise as
/// [`parse_weather_csv`].
pub fn read_weather_csv(path: &Path) -> Result<Weather, WeatherError> {
    let name = crate::text::escape_line(&path.display().to_string()).into_owned();
    let text = crate::io::read_input_text(path, crate::io::WEATHER_MAX_BYTES, "weather file")
        .map_err(|source| WeatherError::Read {
            file: name.clone(),
            source,
        })?;
    parse_weather_csv(&text, &name)
}

/// Parses and validates weather CSV text (the demo weather is embedded with `include_str!`).
///
/// `source_name` stands for the file in messages.
///
/// # Errors
/// The first problem found, as a [`WeatherError`] naming `source_name`, the 1-based line
/// and the header key or column.
pub fn parse_weather_csv(text: &str, source_name: &str) -> Result<Weather, WeatherError> {
    let file = source_name.to_string();
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    if text.trim().is_empty() {
        return Err(WeatherError::Empty { file });
    }
    refuse_control_characters(text, &file)?;
    let layout = scan_lines(text, &file)?;
    let frame = read_cells_with_polars(&layout, &file)?;
    let unchecked = parse_cells(&frame, &layout, &file)?;
    unchecked.validate()
}

/// Refuses a control character (other than tab) anywhere in a weather file, naming its
/// line and column, so that no raw control character reaches a message.
///
/// # Errors
/// [`WeatherError::ControlCharacter`].
pub(crate) fn refuse_control_characters(text: &str, file: &str) -> Result<(), WeatherError> {
    match crate::input::weather::first_control_character(text) {
        Some((line, column, code)) => Err(WeatherError::ControlCharacter {
            file: file.to_string(),
            line,
            column,
            code,
        }),
        None => Ok(()),
    }
}

/// What the line scan found: header values, the column names and the data lines.
struct Layout {
    site: WeatherSite,
    interval_s: i64,
    stamp: StampConvention,
    columns: Vec<String>,
    columns_line: usize,
    /// 1-based file line of each data row, in order.
    data_lines: Vec<usize>,
    /// What polars reads: the column names, then the data lines, trimmed, without blank
    /// lines or the `#` header, so that polars row k is exactly `data_lines[k]`.
    body: String,
}

/// First pass: header block, column names, data line numbers, field counts.
fn scan_lines(text: &str, file: &str) -> Result<Layout, WeatherError> {
    let mut lines = text.lines().enumerate().map(|(i, l)| (i + 1, l));
    let (first_no, first) = lines
        .by_ref()
        .find(|(_, l)| !l.trim().is_empty())
        .ok_or_else(|| WeatherError::Empty {
            file: file.to_string(),
        })?;
    check_format_line(first_no, first.trim(), file)?;

    let mut seen: Vec<(String, String, usize)> = Vec::new();
    let mut columns_line = None;
    for (no, raw) in lines.by_ref() {
        let line = raw.trim();
        if line.is_empty() {
            continue;
        }
        let Some(body) = line.strip_prefix('#') else {
            columns_line = Some((no, line));
            break;
        };
        if body.starts_with('#') || body.trim().is_empty() {
            continue; // free comment or empty `#` line
        }
        let Some((key, value)) = body.split_once('=') else {
            return Err(WeatherError::HeaderSyntax {
                file: file.to_string(),
                line: no,
                text: line.to_string(),
            });
        };
        let (key, value) = (key.trim(), value.trim());
        if key.is_empty() {
            return Err(WeatherError::HeaderSyntax {
                file: file.to_string(),
                line: no,
                text: line.to_string(),
            });
        }
        if !HEADER_KEYS.contains(&key) {
            return Err(WeatherError::UnknownHeaderKey {
                file: file.to_string(),
                line: no,
                key: key.to_string(),
                known: HEADER_KEYS.join(", "),
            });
        }
        if let Some((_, _, first_line)) = seen.iter().find(|(k, _, _)| k == key) {
            return Err(WeatherError::DuplicateHeaderKey {
                file: file.to_string(),
                line: no,
                key: key.to_string(),
                first_line: *first_line,
            });
        }
        seen.push((key.to_string(), value.to_string(), no));
    }

    let (site, interval_s, stamp) = header_values(&seen, file)?;

    let Some((columns_line, names_text)) = columns_line else {
        return Err(WeatherError::NoColumnNames {
            file: file.to_string(),
        });
    };
    let columns = check_columns(names_text, columns_line, file)?;

    let mut data_lines = Vec::new();
    let mut body = columns.join(",");
    body.push('\n');
    for (no, raw) in lines {
        let line = raw.trim();
        if line.is_empty() {
            continue;
        }
        if line.starts_with('#') {
            return Err(WeatherError::HeaderAfterColumns {
                file: file.to_string(),
                line: no,
            });
        }
        let found = count_fields(line);
        if found != columns.len() {
            return Err(WeatherError::FieldCount {
                file: file.to_string(),
                line: no,
                found,
                expected: columns.len(),
            });
        }
        data_lines.push(no);
        crate::input::weather::check_interval_count(file, data_lines.len())?;
        body.push_str(line);
        body.push('\n');
    }
    if data_lines.is_empty() {
        return Err(WeatherError::NoData {
            file: file.to_string(),
        });
    }
    Ok(Layout {
        site,
        interval_s,
        stamp,
        columns,
        columns_line,
        data_lines,
        body,
    })
}

fn check_format_line(line_no: usize, line: &str, file: &str) -> Result<(), WeatherError> {
    let words: Vec<&str> = line
        .strip_prefix('#')
        .map(|b| b.split_whitespace().collect())
        .unwrap_or_default();
    match words.as_slice() {
        ["wirerank", "weather", "1"] => Ok(()),
        ["wirerank", "weather", version] => Err(WeatherError::UnsupportedVersion {
            file: file.to_string(),
            line: line_no,
            version: version.to_string(),
        }),
        _ => {
            let hint = if line.starts_with("LOCATION,") {
                " (this looks like the open typical-year format with an 8-line header, \
                 which needs its own importer)"
            } else if line.contains("time_local") {
                " (the header block is missing: see notebooks-free-docs/weather-format.md)"
            } else {
                ""
            };
            let found: String = line.chars().take(60).collect();
            Err(WeatherError::NotWeatherFile {
                file: file.to_string(),
                line: line_no,
                found,
                hint: hint.to_string(),
            })
        }
    }
}

/// Header values checked and typed. Required keys are never guessed.
fn header_values(
    seen: &[(String, String, usize)],
    file: &str,
) -> Result<(WeatherSite, i64, StampConvention), WeatherError> {
    let get = |key: &str| seen.iter().find(|(k, _, _)| k == key);
    let bad = |key: &str, value: &str, line: usize, reason: &str| WeatherError::BadHeaderValue {
        file: file.to_string(),
        line,
        key: key.to_string(),
        value: value.to_string(),
        reason: reason.to_string(),
    };
    let number = |key: &str, lo: f64, hi: f64| -> Result<Option<f64>, WeatherError> {
        let Some((_, value, line)) = get(key) else {
            return Ok(None);
        };
        let v: f64 = value
            .parse()
            .map_err(|_| bad(key, value, *line, "is not a number"))?;
        if !(v.is_finite() && (lo..=hi).contains(&v)) {
            return Err(bad(key, value, *line, &format!("is outside {lo} to {hi}")));
        }
        Ok(Some(v))
    };

    let name = match get("site_name") {
        Some((_, value, line)) if value.is_empty() => {
            return Err(bad(
                "site_name",
                value,
                *line,
                "is empty; drop the line or name the site",
            ))
        }
        Some((_, value, _)) => Some(value.clone()),
        None => None,
    };
    let utc_offset_h = number("utc_offset_h", -12.0, 14.0)?;
    if let (Some(v), Some((_, value, line))) = (utc_offset_h, get("utc_offset_h")) {
        if (v * 4.0).fract() != 0.0 {
            return Err(bad(
                "utc_offset_h",
                value,
                *line,
                "is not a whole number of quarter hours (e.g. 1, -5, 5.5, 5.75)",
            ));
        }
    }
    let site = WeatherSite {
        name,
        latitude_deg: number("latitude_deg", -90.0, 90.0)?,
        longitude_deg: number("longitude_deg", -180.0, 180.0)?,
        elevation_m: number("elevation_m", -500.0, 9000.0)?,
        utc_offset_h,
        key_lines: [
            "latitude_deg",
            "longitude_deg",
            "elevation_m",
            "utc_offset_h",
        ]
        .into_iter()
        .filter_map(|k| get(k).map(|(_, _, line)| (k, *line)))
        .collect(),
    };

    let Some((_, interval_text, interval_line)) = get("interval_min") else {
        return Err(WeatherError::MissingHeaderKey {
            file: file.to_string(),
            key: "interval_min".to_string(),
            hint: "add `# interval_min = 60` for hourly rows (the minutes each row averages)"
                .to_string(),
        });
    };
    let interval_min: i64 = interval_text.parse().map_err(|_| {
        bad(
            "interval_min",
            interval_text,
            *interval_line,
            "is not a whole number of minutes",
        )
    })?;
    check_interval_min(interval_min)
        .map_err(|reason| bad("interval_min", interval_text, *interval_line, &reason))?;

    let Some((_, stamp_text, stamp_line)) = get("stamp") else {
        return Err(WeatherError::MissingHeaderKey {
            file: file.to_string(),
            key: "stamp".to_string(),
            hint: "add `# stamp = start` if the row stamped 12:00 averages 12:00–13:00, or \
                   `# stamp = end` if it averages 11:00–12:00; it is never guessed"
                .to_string(),
        });
    };
    let stamp = match stamp_text.as_str() {
        "start" => StampConvention::Start,
        "end" => StampConvention::End,
        _ => {
            return Err(bad(
                "stamp",
                stamp_text,
                *stamp_line,
                "is neither `start` nor `end`",
            ))
        }
    };
    Ok((site, interval_min * 60, stamp))
}

/// Column names by name: known, unique, required ones present, beam and diffuse paired.
fn check_columns(text: &str, line: usize, file: &str) -> Result<Vec<String>, WeatherError> {
    let names: Vec<String> = text.split(',').map(|s| s.trim().to_string()).collect();
    for (i, name) in names.iter().enumerate() {
        if !COLUMNS.contains(&name.as_str()) {
            return Err(WeatherError::UnknownColumn {
                file: file.to_string(),
                line,
                column: name.clone(),
                position: i + 1,
                known: COLUMNS.join(", "),
            });
        }
        if names[..i].contains(name) {
            return Err(WeatherError::DuplicateColumn {
                file: file.to_string(),
                line,
                column: name.clone(),
            });
        }
    }
    for required in REQUIRED_COLUMNS {
        if !names.iter().any(|n| n == required) {
            return Err(WeatherError::MissingColumn {
                file: file.to_string(),
                line,
                column: required.to_string(),
            });
        }
    }
    let has = |c: &str| names.iter().any(|n| n == c);
    if has("dni_w_m2") != has("dhi_w_m2") {
        let (present, missing) = if has("dni_w_m2") {
            ("dni_w_m2", "dhi_w_m2")
        } else {
            ("dhi_w_m2", "dni_w_m2")
        };
        return Err(WeatherError::UnpairedBeamDiffuse {
            file: file.to_string(),
            line,
            present: present.to_string(),
            missing: missing.to_string(),
        });
    }
    Ok(names)
}

/// Fields on a line, commas inside double quotes not counting (as the CSV reader sees them).
fn count_fields(line: &str) -> usize {
    let mut in_quotes = false;
    let mut count = 1;
    for c in line.chars() {
        match c {
            '"' => in_quotes = !in_quotes,
            ',' if !in_quotes => count += 1,
            _ => {}
        }
    }
    count
}

/// Second pass: polars tokenises the body, every column as text, so that number and time
/// parsing (and their messages) stay here. The body has no blank lines (polars would read
/// them as rows of nulls) and no `#` lines; the comment prefix is set anyway as a guard.
fn read_cells_with_polars(layout: &Layout, file: &str) -> Result<DataFrame, WeatherError> {
    let schema: Schema = layout
        .columns
        .iter()
        .map(|name| Field::new(name.as_str().into(), DataType::String))
        .collect();
    let frame = CsvReadOptions::default()
        .with_has_header(true)
        .with_infer_schema_length(Some(0))
        .with_schema_overwrite(Some(Arc::new(schema)))
        .with_parse_options(
            CsvParseOptions::default()
                .with_comment_prefix(Some("#"))
                .with_missing_is_null(true),
        )
        .into_reader_with_file_handle(Cursor::new(layout.body.as_bytes()))
        .finish()
        .map_err(|e| WeatherError::Csv {
            file: file.to_string(),
            message: e.to_string(),
        })?;
    if frame.height() != layout.data_lines.len() {
        return Err(WeatherError::Csv {
            file: file.to_string(),
            message: format!(
                "read {} rows but the file has {} data lines (quoted line breaks are not supported)",
                frame.height(),
                layout.data_lines.len()
            ),
        });
    }
    Ok(frame)
}

/// Third pass: each cell parsed, row by row so that the first problem in the file is the
/// one reported.
fn parse_cells(
    frame: &DataFrame,
    layout: &Layout,
    file: &str,
) -> Result<UncheckedWeather, WeatherError> {
    let csv_error = |e: polars::prelude::PolarsError| WeatherError::Csv {
        file: file.to_string(),
        message: e.to_string(),
    };
    let mut cells: Vec<Vec<Option<&str>>> = Vec::with_capacity(layout.columns.len());
    for name in &layout.columns {
        let column = frame.column(name).map_err(csv_error)?;
        let strings = column.str().map_err(csv_error)?;
        cells.push(
            strings
                .iter()
                .map(|c| c.map(str::trim).filter(|c| !c.is_empty()))
                .collect(),
        );
    }
    let n = layout.data_lines.len();
    // An optional column with no value at all counts as absent; one with some values must
    // have all of them (an empty cell there would otherwise mean a silent default).
    let present: Vec<bool> = cells
        .iter()
        .map(|c| c.iter().any(Option::is_some))
        .collect();
    let index_of = |name: &str| layout.columns.iter().position(|c| c == name);
    let used =
        |name: &str| index_of(name).filter(|&i| present[i] || REQUIRED_COLUMNS.contains(&name));

    if let (Some(dni), Some(dhi)) = (index_of("dni_w_m2"), index_of("dhi_w_m2")) {
        if present[dni] != present[dhi] {
            let (p, m) = if present[dni] {
                ("dni_w_m2", "dhi_w_m2")
            } else {
                ("dhi_w_m2", "dni_w_m2")
            };
            return Err(WeatherError::UnpairedBeamDiffuse {
                file: file.to_string(),
                line: layout.columns_line,
                present: format!("{p} with values"),
                missing: format!("values for {m}"),
            });
        }
    }

    let mut stamp_s = Vec::with_capacity(n);
    let mut values: Vec<Vec<f64>> = vec![Vec::with_capacity(n); layout.columns.len()];
    for (k, &line) in layout.data_lines.iter().enumerate() {
        for (i, name) in layout.columns.iter().enumerate() {
            if used(name).is_none() {
                continue;
            }
            let Some(text) = cells[i][k] else {
                let hint = if REQUIRED_COLUMNS.contains(&name.as_str()) {
                    "; every row needs a value"
                } else {
                    "; fill every row of this column or leave all of its cells empty"
                };
                return Err(WeatherError::EmptyCell {
                    file: file.to_string(),
                    line,
                    column: name.clone(),
                    hint: hint.to_string(),
                });
            };
            if name == "time_local" {
                stamp_s.push(parse_stamp(text).ok_or_else(|| WeatherError::BadStamp {
                    file: file.to_string(),
                    line,
                    value: text.to_string(),
                })?);
            } else {
                values[i].push(parse_number(text, file, line, name)?);
            }
        }
    }

    let mut take = |name: &str| used(name).map(|i| std::mem::take(&mut values[i]));
    Ok(UncheckedWeather {
        source: file.to_string(),
        site: layout.site.clone(),
        interval_s: layout.interval_s,
        stamp: layout.stamp,
        stamp_s,
        line: layout.data_lines.clone(),
        ghi_w_m2: take("ghi_w_m2").unwrap_or_default(),
        dni_w_m2: take("dni_w_m2"),
        dhi_w_m2: take("dhi_w_m2"),
        air_temp_c: take("air_temp_c").unwrap_or_default(),
        wind_m_s: take("wind_m_s"),
        albedo_frac: take("albedo_frac"),
        pressure_hpa: take("pressure_hpa"),
    })
}

/// `YYYY-MM-DDTHH:MM` or `YYYY-MM-DDTHH:MM:SS` → naive seconds since 1970-01-01T00:00.
/// chrono decides which dates exist (29 February only in leap years).
fn parse_stamp(text: &str) -> Option<i64> {
    ["%Y-%m-%dT%H:%M", "%Y-%m-%dT%H:%M:%S"]
        .iter()
        .find_map(|f| NaiveDateTime::parse_from_str(text, f).ok())
        .map(|t| t.and_utc().timestamp())
}

fn parse_number(text: &str, file: &str, line: usize, column: &str) -> Result<f64, WeatherError> {
    let value: f64 = text.parse().map_err(|_| WeatherError::NotANumber {
        file: file.to_string(),
        line,
        column: column.to_string(),
        value: text.to_string(),
    })?;
    if !value.is_finite() {
        return Err(WeatherError::NotFinite {
            file: file.to_string(),
            line,
            column: column.to_string(),
            value: text.to_string(),
        });
    }
    Ok(value)
}

/// The CSV text for a weather series: header, column names, one row per interval.
///
/// Numbers use the shortest text that reads back to the same f64 (`-0` written as `0`), so
/// writing and re-reading is exact and the same series always gives the same bytes. Stamps
/// follow the series' own convention. Rows that were filled to repair a gap are written like
/// any other row.
pub fn weather_csv_text(w: &Weather) -> String {
    let mut out = String::with_capacity(64 * (w.len() + 12));
    out.push_str(FORMAT_LINE);
    out.push('\n');
    if let Some(name) = &w.site.name {
        let one_line: String = name
            .chars()
            .map(|c| if c.is_control() { ' ' } else { c })
            .collect();
        out.push_str(&format!("# site_name = {}\n", one_line.trim()));
    }
    let site_numbers = [
        ("latitude_deg", w.site.latitude_deg),
        ("longitude_deg", w.site.longitude_deg),
        ("elevation_m", w.site.elevation_m),
        ("utc_offset_h", w.site.utc_offset_h),
    ];
    for (key, value) in site_numbers {
        if let Some(v) = value {
            out.push_str(&format!("# {key} = {}\n", number_text(v)));
        }
    }
    out.push_str(&format!("# interval_min = {}\n", w.interval_s / 60));
    out.push_str(&format!("# stamp = {}\n", w.stamp.as_str()));

    let columns: Vec<(&str, Option<&Vec<f64>>)> = vec![
        ("ghi_w_m2", Some(&w.ghi_w_m2)),
        ("dni_w_m2", w.dni_w_m2.as_ref()),
        ("dhi_w_m2", w.dhi_w_m2.as_ref()),
        ("air_temp_c", Some(&w.air_temp_c)),
        ("wind_m_s", w.wind_m_s.as_ref()),
        ("albedo_frac", w.albedo_frac.as_ref()),
        ("pressure_hpa", w.pressure_hpa.as_ref()),
    ];
    let columns: Vec<(&str, &Vec<f64>)> = columns
        .into_iter()
        .filter_map(|(name, v)| v.map(|v| (name, v)))
        .collect();
    out.push_str("time_local");
    for (name, _) in &columns {
        out.push(',');
        out.push_str(name);
    }
    out.push('\n');
    for k in 0..w.len() {
        out.push_str(&w.stamp_text(k));
        for (_, values) in &columns {
            out.push(',');
            out.push_str(&number_text(values[k]));
        }
        out.push('\n');
    }
    out
}

/// Writes a weather series as CSV, atomically: `<path>.tmp` first, then a rename, so a
/// reader never sees half a file and a failed write leaves the old file in place.
///
/// # Errors
/// [`WeatherError::Write`] naming the file when writing or renaming fails.
pub fn write_weather_csv(w: &Weather, path: &Path) -> Result<(), WeatherError> {
    crate::io::atomic::write_atomic(path, weather_csv_text(w).as_bytes()).map_err(|source| {
        WeatherError::Write {
            file: path.display().to_string(),
            source,
        }
    })
}

fn number_text(v: f64) -> String {
    if v == 0.0 {
        "0".to_string()
    } else {
        format!("{v}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const HEAD: &str = "# wirerank weather 1\n# interval_min = 60\n# stamp = start\n";

    // Line numbers below are counted by hand in each test's text (3 header lines, then the
    // column names on line 4, data from line 5).

    fn parse(body: &str) -> Result<Weather, WeatherError> {
        parse_weather_csv(&format!("{HEAD}{body}"), "t.csv")
    }

    fn check_error(body: &str, expected_start: &str) {
        let msg = parse(body).unwrap_err().to_string();
        assert!(msg.starts_with(expected_start), "got: {msg}");
    }

    #[test]
    fn reads_minimal_file() {
        let w = parse(
            "time_local,ghi_w_m2,air_temp_c\n2025-01-01T00:00,0,-6.2\n2025-01-01T01:00,0,-6.5\n",
        )
        .unwrap();
        assert_eq!(w.len(), 2);
        assert_eq!(w.air_temp_c, vec![-6.2, -6.5]);
        assert_eq!(w.source_line, vec![5, 6]);
        assert!(w.wind_m_s.is_none());
    }

    #[test]
    fn crlf_blank_lines_bom_and_free_comments_are_accepted() {
        let text = "\u{feff}# wirerank weather 1\r\n## made by hand\r\n#\r\n# interval_min = 60\r\n# stamp = end\r\n\r\ntime_local,ghi_w_m2,air_temp_c\r\n2025-01-01T01:00,0,1.5\r\n\r\n2025-01-01T02:00,0,2\r\n";
        let w = parse_weather_csv(text, "t.csv").unwrap();
        assert_eq!(w.air_temp_c, vec![1.5, 2.0]);
        assert_eq!(w.source_line, vec![8, 10]);
    }

    #[test]
    fn blank_lines_spaces_and_missing_final_newline_are_accepted() {
        let text = "# wirerank weather 1\n# interval_min = 60\n\n# stamp = start\n\ntime_local, ghi_w_m2 , air_temp_c\n2025-01-01T00:00, 0, 1.5\n   \n2025-01-01T01:00,0 ,2\n\n\n";
        let w = parse_weather_csv(text, "t.csv").unwrap();
        assert_eq!(w.air_temp_c, vec![1.5, 2.0]);
        assert_eq!(w.source_line, vec![7, 9]);
        let w = parse_weather_csv(text.trim_end(), "t.csv").unwrap();
        assert_eq!(w.len(), 2);
    }

    #[test]
    fn quoted_values_are_read_without_quotes() {
        let w =
            parse("time_local,ghi_w_m2,air_temp_c\n\"2025-01-01T00:00\",\"0\",\"1.5\"\n").unwrap();
        assert_eq!(w.air_temp_c, vec![1.5]);
        assert_eq!(w.stamp_text(0), "2025-01-01T00:00");
    }

    #[test]
    fn cell_errors_name_line_and_column() {
        let cols = "time_local,ghi_w_m2,air_temp_c,wind_m_s\n";
        check_error(
            &format!("{cols}2025-01-01T00:00,0,1,2\n2025-01-01T01:00,0,abc,2\n"),
            "t.csv line 6: air_temp_c = \"abc\" is not a number",
        );
        check_error(
            &format!("{cols}2025-01-01T00:00,0,NaN,2\n"),
            "t.csv line 5: air_temp_c = \"NaN\" is not a finite number",
        );
        check_error(
            &format!("{cols}2025-01-01T00:00,,1,2\n"),
            "t.csv line 5: ghi_w_m2 is empty",
        );
        check_error(
            &format!("{cols}2025-01-01T00:00,0,1,2\n2025-01-01T01:00,0,1,\n"),
            "t.csv line 6: wind_m_s is empty; fill every row",
        );
        check_error(
            &format!("{cols}2025-13-01T00:00,0,1,2\n"),
            "t.csv line 5: time_local = \"2025-13-01T00:00\" is not a time",
        );
        check_error(
            &format!("{cols}2025-02-29T00:00,0,1,2\n"),
            "t.csv line 5: time_local = \"2025-02-29T00:00\" is not a time",
        );
        check_error(
            &format!("{cols}2025-01-01T00:00,0,1\n"),
            "t.csv line 5: 3 fields, expected 4",
        );
    }

    #[test]
    fn empty_optional_column_counts_as_absent() {
        let w = parse(
            "time_local,ghi_w_m2,air_temp_c,albedo_frac,pressure_hpa\n2025-01-01T00:00,0,1,,\n",
        )
        .unwrap();
        assert!(w.albedo_frac.is_none() && w.pressure_hpa.is_none());
    }

    #[test]
    fn header_errors_name_the_line_and_key() {
        let msg = parse_weather_csv(
            "# wirerank weather 1\n# interval_min = 60\n# colour = red\n",
            "t.csv",
        )
        .unwrap_err()
        .to_string();
        assert!(
            msg.starts_with("t.csv line 3: unknown header key \"colour\""),
            "{msg}"
        );
        let msg = parse_weather_csv("# wirerank weather 2\n", "t.csv")
            .unwrap_err()
            .to_string();
        assert!(msg.contains("version \"2\""), "{msg}");
        let msg = parse_weather_csv("# wirerank weather 1\n# interval_min = 45\n# stamp = start\ntime_local,ghi_w_m2,air_temp_c\n", "t.csv")
            .unwrap_err()
            .to_string();
        assert!(
            msg.starts_with("t.csv line 2: interval_min = \"45\" must divide 60"),
            "{msg}"
        );
    }

    #[test]
    fn write_then_read_is_exact() {
        let w = parse("time_local,ghi_w_m2,dni_w_m2,dhi_w_m2,air_temp_c,wind_m_s,albedo_frac,pressure_hpa\n2025-06-01T12:00,812.4,700.25,150,23.1,3.3,0.2,912.5\n2025-06-01T13:00,-0.0,0,0,-0.05,0,1,1000\n")
            .unwrap();
        let text = weather_csv_text(&w);
        let again = parse_weather_csv(&text, "t2.csv").unwrap();
        assert_eq!(weather_csv_text(&again), text);
        assert_eq!(again.dni_w_m2, w.dni_w_m2);
        assert_eq!(again.air_temp_c, w.air_temp_c);
        assert!(
            text.contains("\n2025-06-01T13:00,0,0,0,-0.05,0,1,1000\n"),
            "{text}"
        );
    }
}
