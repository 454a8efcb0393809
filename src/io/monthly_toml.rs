//! The small TOML format of the synthesizer's monthly inputs (`<site>.monthly.toml`,
//! documented in `notebooks-free-docs/method-synth.md`), with line and column in errors.

use std::ops::Range;

use serde::Deserialize;
use toml::Spanned;

use crate::error::Error;
use crate::weather_gen::synth::{MonthlyClimate, MonthlyInputs};

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
            crate::io::plain_toml_message(e.message())
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
            "site.monthly.toml:8:30 air_mean_c for april = -99 is outside -60 to 50",
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
            "site.monthly.toml:2:16 latitude_deg = 145 is outside -90 to 90",
        );
        check_toml_error(("year = 2025", "yaer = 2025"), "site.monthly.toml:");
        check_toml_error(
            ("elevation_m = 300", "elevation_m = \"high\""),
            "site.monthly.toml:4:15 invalid type",
        );
    }
}
