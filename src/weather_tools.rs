//! The `wirerank weather …` commands: synthesize a year from monthly means, inspect a weather
//! file, import the open typical-year format.
//!
//! Each command is one function returning an [`Outcome`] (text for stdout, warnings for
//! stderr); the binary only parses flags and calls them. This module also owns the small
//! TOML format of the synthesizer's monthly inputs (`<site>.monthly.toml`, documented in
//! `notebooks-free-docs/method-synth.md`) and the per-month summary that `inspect` prints.
//! It never overwrites a command's input file, and writes outputs atomically. The maths lives
//! in `synth.rs` (pure) and the file formats in `io/`.

use std::fmt::Write as _;
use std::ops::Range;
use std::path::{Path, PathBuf};

use serde::Deserialize;
use toml::Spanned;

use crate::error::{Error, WeatherError};
use crate::io::typical_year::{parse_typical_year, read_any_weather};
use crate::io::weather_csv::write_weather_csv;
use crate::io::weather_plot::{write_daily_irradiation_png, write_daily_irradiation_svg, DayPoint};
use crate::synth::{synthesize, MonthlyClimate, MonthlyInputs, SynthError, MONTH_NAMES};
use crate::uncertainty::empirical_variability;
use crate::weather::{civil_from_local_s, format_local_s, Weather, WeatherWarning};
use crate::Outcome;

type Monthly = Spanned<Vec<Spanned<f64>>>;

/// The monthly-inputs file as written (see `notebooks-free-docs/method-synth.md`).
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawMonthly {
    name: Spanned<String>,
    latitude_deg: Spanned<f64>,
    longitude_deg: Spanned<f64>,
    elevation_m: Spanned<f64>,
    utc_offset_h: Spanned<f64>,
    year: Spanned<i64>,
    ghi_kwh_m2_day: Monthly,
    air_mean_c: Monthly,
    air_min_c: Option<Monthly>,
    air_max_c: Option<Monthly>,
    air_range_dk: Option<Monthly>,
    air_day_sd_dk: Option<Monthly>,
    wind_m_s: Option<Monthly>,
}

/// A key, its whole value's byte span and (for lists) each month's span.
type KeySpans = (&'static str, Range<usize>, Vec<Range<usize>>);

/// Where each key (and each month's value) sits in the file, for messages.
struct Spans {
    keys: Vec<KeySpans>,
}

impl Spans {
    fn find(&self, key: Option<&str>, month: Option<usize>) -> Option<Range<usize>> {
        let (_, whole, months) = self.keys.iter().find(|(k, _, _)| Some(*k) == key)?;
        Some(
            month
                .and_then(|m| months.get(m).cloned())
                .unwrap_or_else(|| whole.clone()),
        )
    }
}

fn line_col(text: &str, offset: usize) -> (usize, usize) {
    let before = &text[..offset.min(text.len())];
    let line = before.matches('\n').count() + 1;
    let column = before.len() - before.rfind('\n').map_or(0, |i| i + 1) + 1;
    (line, column)
}

/// Parses the monthly-inputs TOML text (not yet validated); `file` names it in messages.
///
/// # Errors
/// [`Error::Usage`] with `file:line:column` for TOML syntax, unknown keys, missing keys or
/// values of the wrong type.
pub fn parse_monthly_toml(text: &str, file: &str) -> Result<MonthlyInputs, Error> {
    parse_monthly_with_spans(text, file).map(|(inputs, _)| inputs)
}

fn parse_monthly_with_spans(text: &str, file: &str) -> Result<(MonthlyInputs, Spans), Error> {
    let raw: RawMonthly = toml::from_str(text).map_err(|e| {
        let (line, column) = e.span().map_or((1, 1), |s| line_col(text, s.start));
        Error::Usage(format!(
            "{file}:{line}:{column} {}",
            e.message().trim().trim_end_matches('.')
        ))
    })?;
    let year = i32::try_from(*raw.year.get_ref()).map_err(|_| {
        let (line, column) = line_col(text, raw.year.span().start);
        Error::Usage(format!(
            "{file}:{line}:{column} year = {} is not a calendar year",
            raw.year.get_ref()
        ))
    })?;
    let mut spans = Spans { keys: Vec::new() };
    let mut scalar =
        |key: &'static str, span: Range<usize>| spans.keys.push((key, span, Vec::new()));
    scalar("name", raw.name.span());
    scalar("latitude_deg", raw.latitude_deg.span());
    scalar("longitude_deg", raw.longitude_deg.span());
    scalar("elevation_m", raw.elevation_m.span());
    scalar("utc_offset_h", raw.utc_offset_h.span());
    scalar("year", raw.year.span());
    let mut list = |key: &'static str, v: &Option<Monthly>| -> Option<Vec<f64>> {
        let v = v.as_ref()?;
        spans.keys.push((
            key,
            v.span(),
            v.get_ref().iter().map(Spanned::span).collect(),
        ));
        Some(v.get_ref().iter().map(|x| *x.get_ref()).collect())
    };
    let ghi = list("ghi_kwh_m2_day", &Some(raw.ghi_kwh_m2_day)).unwrap_or_default();
    let air_mean = list("air_mean_c", &Some(raw.air_mean_c)).unwrap_or_default();
    let inputs = MonthlyInputs {
        name: raw.name.get_ref().clone(),
        latitude_deg: *raw.latitude_deg.get_ref(),
        longitude_deg: *raw.longitude_deg.get_ref(),
        elevation_m: *raw.elevation_m.get_ref(),
        utc_offset_h: *raw.utc_offset_h.get_ref(),
        year,
        ghi_kwh_m2_day: ghi,
        air_mean_c: air_mean,
        air_min_c: list("air_min_c", &raw.air_min_c),
        air_max_c: list("air_max_c", &raw.air_max_c),
        air_range_dk: list("air_range_dk", &raw.air_range_dk),
        air_day_sd_dk: list("air_day_sd_dk", &raw.air_day_sd_dk),
        wind_m_s: list("wind_m_s", &raw.wind_m_s),
    };
    Ok((inputs, spans))
}

/// Parses and validates the monthly-inputs TOML text.
///
/// # Errors
/// [`Error::Usage`] naming `file:line:column`, the key and the month of the first problem.
pub fn parse_monthly_climate(text: &str, file: &str) -> Result<MonthlyClimate, Error> {
    let (inputs, spans) = parse_monthly_with_spans(text, file)?;
    inputs.validate().map_err(|e| {
        let place = spans
            .find(e.key(), e.month())
            .map(|s| {
                let (line, column) = line_col(text, s.start);
                format!(":{line}:{column}")
            })
            .unwrap_or_default();
        Error::Usage(format!("{file}{place} {e}"))
    })
}

/// True when `a` and `b` name the same file (also when `b` does not exist yet).
fn same_file(a: &Path, b: &Path) -> bool {
    if a == b {
        return true;
    }
    let canonical = |p: &Path| -> Option<PathBuf> {
        if let Ok(c) = p.canonicalize() {
            return Some(c);
        }
        let parent = match p.parent() {
            Some(x) if !x.as_os_str().is_empty() => x.to_path_buf(),
            _ => PathBuf::from("."),
        };
        Some(parent.canonicalize().ok()?.join(p.file_name()?))
    };
    matches!((canonical(a), canonical(b)), (Some(x), Some(y)) if x == y)
}

fn refuse_overwrite(input: &Path, out: &Path) -> Result<(), Error> {
    if same_file(input, out) {
        return Err(Error::Usage(format!(
            "--out {} is the input file; choose another output name (the input is never overwritten)",
            out.display()
        )));
    }
    Ok(())
}

fn read_text(path: &Path) -> Result<String, Error> {
    std::fs::read_to_string(path).map_err(|source| {
        Error::Weather(WeatherError::Read {
            file: path.display().to_string(),
            source,
        })
    })
}

/// `wirerank weather synth <input.monthly.toml> --seed N --out <out.csv>`: synthesizes an
/// hourly year from monthly means and writes it in the crate's CSV format.
///
/// # Errors
/// [`Error::Usage`] for bad inputs (naming line, key and month) or `out` = `input`;
/// [`Error::Weather`] when the input cannot be read or the output cannot be written.
pub fn synth_from_file(input: &Path, seed: u64, out: &Path) -> Result<Outcome, Error> {
    refuse_overwrite(input, out)?;
    let file = input.display().to_string();
    let text = read_text(input)?;
    let climate = parse_monthly_climate(&text, &file)?;
    let synthesis = synthesize(&climate, seed, &out.display().to_string())
        .map_err(|e: SynthError| Error::Usage(format!("{file}: {e}")))?;
    let w = &synthesis.weather;
    w.check_against_extraterrestrial(
        climate.latitude_deg(),
        climate.longitude_deg(),
        climate.utc_offset_h(),
    )?;
    write_weather_csv(w, out)?;

    let summary = summarize(w);
    let mut text = String::new();
    let _ = writeln!(
        text,
        "wrote {}: {} hourly rows for {} ({}), seed {seed}",
        out.display(),
        w.len(),
        climate.name(),
        climate.year()
    );
    let _ = writeln!(
        text,
        "methods: Aguiar et al. 1988 daily Markov matrices, TAG hourly clearness (Aguiar & Collares-Pereira 1992), Haurwitz clear sky + 10 %, Erbs split, Parton & Logan 1981 daily temperature cycle"
    );
    let _ = writeln!(text);
    let _ = writeln!(
        text,
        "month   GHI kWh/m²/day     mean °C       daily min °C   daily max °C"
    );
    let _ = writeln!(
        text,
        "        input  output   input output   input output   input output"
    );
    let (lo, hi) = climate.air_min_max_c();
    for m in &summary.months {
        let i = m.month as usize - 1;
        let _ = writeln!(
            text,
            "{:<6} {:>6.2} {:>7.2} {:>7.1} {:>6.1} {:>7.1} {:>6.1} {:>7.1} {:>6.1}",
            &MONTH_NAMES[i][..3],
            climate.ghi_kwh_m2_day()[i],
            m.ghi_kwh_m2_day,
            climate.air_mean_c()[i],
            m.air_mean_c,
            lo[i],
            m.air_daily_min_c,
            hi[i],
            m.air_daily_max_c
        );
    }
    Ok(Outcome {
        stdout: text,
        warnings: w.warnings.iter().map(ToString::to_string).collect(),
        nothing_passed: false,
    })
}

/// One month of a weather file, as `inspect` reports it.
#[derive(Clone, Debug, PartialEq)]
pub struct MonthSummary {
    /// Calendar year and month (1..=12) of the intervals' starts.
    pub year: i64,
    pub month: u32,
    /// Days covered (intervals × length / 24 h).
    pub days: f64,
    pub ghi_kwh_m2: f64,
    pub ghi_kwh_m2_day: f64,
    pub air_mean_c: f64,
    /// Mean of the daily minima and maxima (days as in the file, partial days included).
    pub air_daily_min_c: f64,
    pub air_daily_max_c: f64,
    pub air_lowest_c: f64,
    pub air_highest_c: f64,
}

/// What `inspect` reports about a weather file.
#[derive(Clone, Debug, PartialEq)]
pub struct WeatherSummary {
    pub rows: usize,
    pub interval_s: i64,
    /// One entry per calendar month present, in file order.
    pub months: Vec<MonthSummary>,
    /// Global horizontal irradiation of each calendar day present.
    pub days: Vec<DayPoint>,
    /// Lowest and highest air temperature with the stamp as the file writes it.
    pub lowest: (f64, String),
    pub highest: (f64, String),
    /// Intervals filled to repair gaps, and in how many gaps.
    pub filled_intervals: usize,
    pub filled_gaps: usize,
    /// Values clamped while reading (small negative irradiance, diffuse above global).
    pub clamped_values: usize,
    /// Annual irradiation of each calendar year with all twelve months present, kWh/m².
    pub complete_years: Vec<(i64, f64)>,
}

/// Monthly and daily sums of a validated weather series.
pub fn summarize(w: &Weather) -> WeatherSummary {
    let hours = w.interval_s as f64 / 3600.0;
    let mut months: Vec<MonthSummary> = Vec::new();
    let mut days: Vec<DayPoint> = Vec::new();
    // Daily extremes per month: (sum of minima, sum of maxima, days).
    let mut extremes: Vec<(f64, f64, usize)> = Vec::new();
    let mut day_min = f64::INFINITY;
    let mut day_max = f64::NEG_INFINITY;
    let mut lowest = (f64::INFINITY, String::new());
    let mut highest = (f64::NEG_INFINITY, String::new());
    for k in 0..w.len() {
        let start = w.local_start_s[k];
        let day_start = start.div_euclid(86_400) * 86_400;
        let (year, month, _) = civil_from_local_s(start);
        let ghi_kwh = w.ghi_w_m2[k] * hours / 1000.0;
        let t = w.air_temp_c[k];
        if t < lowest.0 {
            lowest = (t, w.stamp_text(k));
        }
        if t > highest.0 {
            highest = (t, w.stamp_text(k));
        }
        let new_month = months
            .last()
            .is_none_or(|m| (m.year, m.month) != (year, month));
        let new_day = days.last().is_none_or(|d| d.day_start_s != day_start);
        if new_day {
            if let Some(e) = extremes.last_mut() {
                if day_min.is_finite() {
                    e.0 += day_min;
                    e.1 += day_max;
                    e.2 += 1;
                }
            }
            day_min = f64::INFINITY;
            day_max = f64::NEG_INFINITY;
            days.push(DayPoint {
                day_start_s: day_start,
                ghi_kwh_m2: 0.0,
            });
        }
        if new_month {
            months.push(MonthSummary {
                year,
                month,
                days: 0.0,
                ghi_kwh_m2: 0.0,
                ghi_kwh_m2_day: 0.0,
                air_mean_c: 0.0,
                air_daily_min_c: 0.0,
                air_daily_max_c: 0.0,
                air_lowest_c: f64::INFINITY,
                air_highest_c: f64::NEG_INFINITY,
            });
            extremes.push((0.0, 0.0, 0));
        }
        day_min = day_min.min(t);
        day_max = day_max.max(t);
        if let Some(d) = days.last_mut() {
            d.ghi_kwh_m2 += ghi_kwh;
        }
        if let Some(m) = months.last_mut() {
            m.days += hours / 24.0;
            m.ghi_kwh_m2 += ghi_kwh;
            m.air_mean_c += t;
            m.air_lowest_c = m.air_lowest_c.min(t);
            m.air_highest_c = m.air_highest_c.max(t);
        }
    }
    if let Some(e) = extremes.last_mut() {
        if day_min.is_finite() {
            e.0 += day_min;
            e.1 += day_max;
            e.2 += 1;
        }
    }
    for (m, (sum_min, sum_max, n)) in months.iter_mut().zip(&extremes) {
        let rows = m.days * 24.0 / hours;
        m.air_mean_c /= rows;
        m.ghi_kwh_m2_day = m.ghi_kwh_m2 / m.days;
        if *n > 0 {
            m.air_daily_min_c = sum_min / *n as f64;
            m.air_daily_max_c = sum_max / *n as f64;
        }
    }

    let mut filled_intervals = 0;
    let mut filled_gaps = 0;
    let mut clamped_values = 0;
    for warning in &w.warnings {
        match warning {
            WeatherWarning::FilledGaps {
                gaps, intervals, ..
            } => {
                filled_gaps += gaps;
                filled_intervals += intervals;
            }
            WeatherWarning::ClampedNegativeIrradiance { count, .. }
            | WeatherWarning::ClampedDiffuseAboveGlobal { count, .. } => clamped_values += count,
            WeatherWarning::MonthsMissing { .. } => {}
        }
    }
    let mut complete_years: Vec<(i64, f64)> = Vec::new();
    let mut year = months.first().map_or(0, |m| m.year);
    let last = months.last().map_or(-1, |m| m.year);
    while year <= last {
        let of_year: Vec<&MonthSummary> = months.iter().filter(|m| m.year == year).collect();
        if of_year.len() == 12 {
            complete_years.push((year, of_year.iter().map(|m| m.ghi_kwh_m2).sum()));
        }
        year += 1;
    }
    WeatherSummary {
        rows: w.len(),
        interval_s: w.interval_s,
        months,
        days,
        lowest,
        highest,
        filled_intervals,
        filled_gaps,
        clamped_values,
        complete_years,
    }
}

/// The `inspect` report as text.
pub fn summary_text(w: &Weather, s: &WeatherSummary) -> String {
    let mut out = String::new();
    let _ = writeln!(out, "weather: {}", w.source);
    let site = &w.site;
    let number =
        |v: Option<f64>, unit: &str| v.map_or("not given".to_string(), |v| format!("{v}{unit}"));
    let _ = writeln!(
        out,
        "site: {} (latitude {}, longitude {}, elevation {}, UTC offset {})",
        site.name.as_deref().unwrap_or("no name"),
        number(site.latitude_deg, "°"),
        number(site.longitude_deg, "°"),
        number(site.elevation_m, " m"),
        number(site.utc_offset_h, " h"),
    );
    if let (Some(first), Some(last)) = (w.local_start_s.first(), w.local_start_s.last()) {
        let _ = writeln!(
            out,
            "rows: {} of {} min (stamps mark the {}), {} … {}",
            s.rows,
            s.interval_s / 60,
            w.stamp.as_str(),
            format_local_s(*first),
            format_local_s(*last)
        );
    }
    let mut columns = vec!["ghi_w_m2"];
    for (name, present) in [
        ("dni_w_m2", w.dni_w_m2.is_some()),
        ("dhi_w_m2", w.dhi_w_m2.is_some()),
        ("air_temp_c", true),
        ("wind_m_s", w.wind_m_s.is_some()),
        ("albedo_frac", w.albedo_frac.is_some()),
        ("pressure_hpa", w.pressure_hpa.is_some()),
    ] {
        if present {
            columns.push(name);
        }
    }
    let _ = writeln!(out, "columns: {}", columns.join(", "));
    let _ = writeln!(
        out,
        "repairs: {} gaps filled ({} intervals), {} values clamped",
        s.filled_gaps, s.filled_intervals, s.clamped_values
    );
    let _ = writeln!(out);
    let multi_year = s
        .months
        .first()
        .zip(s.months.last())
        .is_some_and(|(a, b)| a.year != b.year);
    let _ = writeln!(
        out,
        "{:<9} {:>5} {:>8} {:>9} {:>7} {:>9} {:>9} {:>7} {:>7}",
        "month", "days", "GHI", "GHI/day", "mean", "day min", "day max", "lowest", "highest"
    );
    let _ = writeln!(
        out,
        "{:<9} {:>5} {:>8} {:>9} {:>7} {:>9} {:>9} {:>7} {:>7}",
        "", "", "kWh/m²", "kWh/m²", "°C", "°C", "°C", "°C", "°C"
    );
    for m in &s.months {
        let label = if multi_year {
            format!("{} {}", &MONTH_NAMES[m.month as usize - 1][..3], m.year)
        } else {
            MONTH_NAMES[m.month as usize - 1][..3].to_string()
        };
        let _ = writeln!(
            out,
            "{:<9} {:>5.1} {:>8.1} {:>9.2} {:>7.1} {:>9.1} {:>9.1} {:>7.1} {:>7.1}",
            label,
            m.days,
            m.ghi_kwh_m2,
            m.ghi_kwh_m2_day,
            m.air_mean_c,
            m.air_daily_min_c,
            m.air_daily_max_c,
            m.air_lowest_c,
            m.air_highest_c
        );
    }
    let total: f64 = s.months.iter().map(|m| m.ghi_kwh_m2).sum();
    let days: f64 = s.months.iter().map(|m| m.days).sum();
    let _ = writeln!(out, "{:<9} {:>5.1} {:>8.1}", "total", days, total);
    let _ = writeln!(out);
    let _ = writeln!(
        out,
        "lowest air temperature: {:.1} °C at {}",
        s.lowest.0, s.lowest.1
    );
    let _ = writeln!(
        out,
        "highest air temperature: {:.1} °C at {}",
        s.highest.0, s.highest.1
    );
    let totals: Vec<f64> = s.complete_years.iter().map(|y| y.1).collect();
    if let Some(spread) = empirical_variability(&totals) {
        let _ = writeln!(
            out,
            "year-to-year: {} complete years, mean {:.1} kWh/m², standard deviation {:.1} % (usable for P90 instead of the default)",
            spread.years,
            spread.mean,
            spread.sd_frac * 100.0
        );
    }
    out
}

/// `wirerank weather inspect <file> [--plot-dir DIR]`: monthly irradiation and temperatures,
/// repairs, extremes; with a folder, also `<stem>-daily-ghi.png` and `.svg` there.
///
/// # Errors
/// [`Error::Weather`] for an unreadable or invalid file, [`Error::Output`] when a plot
/// cannot be written.
pub fn inspect(path: &Path, plot_dir: Option<&Path>) -> Result<Outcome, Error> {
    let w = read_any_weather(path)?;
    let summary = summarize(&w);
    let mut text = summary_text(&w, &summary);
    if let Some(dir) = plot_dir {
        std::fs::create_dir_all(dir).map_err(|source| Error::Output {
            path: dir.display().to_string(),
            source,
        })?;
        let stem = path
            .file_stem()
            .map_or_else(|| "weather".into(), |s| s.to_string_lossy().into_owned());
        let title = format!(
            "{}: daily global horizontal irradiation",
            w.site.name.as_deref().unwrap_or(&stem)
        );
        let png = dir.join(format!("{stem}-daily-ghi.png"));
        let svg = dir.join(format!("{stem}-daily-ghi.svg"));
        write_daily_irradiation_png(&summary.days, &title, &png)?;
        write_daily_irradiation_svg(&summary.days, &title, &svg)?;
        let _ = writeln!(text, "\nplots: {} and {}", png.display(), svg.display());
    }
    Ok(Outcome {
        stdout: text,
        warnings: w.warnings.iter().map(ToString::to_string).collect(),
        nothing_passed: false,
    })
}

/// `wirerank weather import <file> --out <out.csv>`: converts the open typical-year format
/// into the crate's CSV (validated, checked against the sun at the file's LOCATION).
///
/// # Errors
/// [`Error::Usage`] when `out` = `input`; [`Error::Weather`] for an unreadable or invalid
/// input or an output that cannot be written.
pub fn import(input: &Path, out: &Path) -> Result<Outcome, Error> {
    refuse_overwrite(input, out)?;
    let file = input.display().to_string();
    let text = read_text(input)?;
    let imported = parse_typical_year(&text, &file)?;
    let w = &imported.weather;
    if let (Some(lat), Some(lon), Some(utc)) = (
        w.site.latitude_deg,
        w.site.longitude_deg,
        w.site.utc_offset_h,
    ) {
        w.check_against_extraterrestrial(lat, lon, utc)?;
    }
    write_weather_csv(w, out)?;
    let summary = summarize(w);
    let total: f64 = summary.months.iter().map(|m| m.ghi_kwh_m2).sum();
    let mut stdout = String::new();
    let _ = writeln!(
        stdout,
        "imported {file} into {}: {} hourly rows ({} … {}), site {}, {:.1} kWh/m² global horizontal",
        out.display(),
        w.len(),
        w.stamp_text(0),
        w.stamp_text(w.len() - 1),
        w.site.name.as_deref().unwrap_or("without a name"),
        total
    );
    let mut warnings = imported.notes.clone();
    warnings.extend(w.warnings.iter().map(ToString::to_string));
    Ok(Outcome {
        stdout,
        warnings,
        nothing_passed: false,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    const GOOD: &str = r#"name = "Testfield (invented)"
latitude_deg = 45.0
longitude_deg = 7.0
elevation_m = 300
utc_offset_h = 1
year = 2025
ghi_kwh_m2_day = [1.4, 2.3, 3.6, 4.7, 5.6, 6.2, 6.4, 5.5, 4.2, 2.7, 1.6, 1.2]
air_mean_c = [0.5, 2.0, 6.5, 10.5, 15.0, 19.0, 21.5, 21.0, 16.5, 11.0, 5.5, 1.5]
air_range_dk = [8, 8, 9, 10, 11, 12, 12, 12, 11, 9, 8, 7]
"#;

    fn check_toml_error(change: (&str, &str), expected: &str) {
        let text = GOOD.replace(change.0, change.1);
        let msg = parse_monthly_climate(&text, "site.monthly.toml")
            .unwrap_err()
            .to_string();
        assert!(msg.starts_with(expected), "got: {msg}\nwant: {expected}");
        assert!(!msg.ends_with('.'), "{msg}");
    }

    #[test]
    fn monthly_toml_parses() {
        let c = parse_monthly_climate(GOOD, "site.monthly.toml").unwrap();
        assert_eq!(c.year(), 2025);
        assert_eq!(c.ghi_kwh_m2_day()[6], 6.4);
        let (lo, hi) = c.air_min_max_c();
        assert_eq!((lo[0], hi[0]), (-3.5, 4.5));
    }

    #[test]
    fn monthly_toml_errors_name_line_column_key_and_month() {
        // Line and column counted by hand in GOOD: line 8 is air_mean_c; its fourth value
        // (april) starts at column 30; line 7's sixth value (june) at column 44.
        check_toml_error(
            ("10.5, 15.0", "-99, 15.0"),
            "site.monthly.toml:8:30 air_mean_c for april = -99 is outside -60..=50",
        );
        check_toml_error(
            ("5.6, 6.2, 6.4", "5.6, -6.2, 6.4"),
            "site.monthly.toml:7:44 ghi_kwh_m2_day for june = -6.2 is outside 0..",
        );
        check_toml_error(
            (", 1.6, 1.2]", ", 1.6]"),
            "site.monthly.toml:7:18 ghi_kwh_m2_day has 11 values; one per month is needed, january to december (december has no value)",
        );
        check_toml_error(
            ("latitude_deg = 45.0", "latitude_deg = 145.0"),
            "site.monthly.toml:2:16 latitude_deg = 145 is outside -90..=90",
        );
        check_toml_error(("year = 2025", "yaer = 2025"), "site.monthly.toml:");
        check_toml_error(
            ("elevation_m = 300", "elevation_m = \"high\""),
            "site.monthly.toml:4:15 invalid type",
        );
    }

    #[test]
    fn same_file_sees_through_relative_paths() {
        let dir = std::env::temp_dir().join(format!("wirerank-same-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let a = dir.join("x.toml");
        std::fs::write(&a, GOOD).unwrap();
        assert!(same_file(&a, &dir.join(".").join("x.toml")));
        assert!(!same_file(&a, &dir.join("y.csv")));
        let msg = synth_from_file(&a, 1, &a).unwrap_err().to_string();
        assert!(msg.contains("is the input file"), "{msg}");
        let _ = std::fs::remove_dir_all(&dir);
    }
}
