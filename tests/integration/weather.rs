//! Weather ingest: our CSV format, validation errors, repairs.
//!
//! Every bad fixture must give an error (never a panic) whose message names the file, the
//! line and the column or header key. Good fixtures check the repairs, sub-hourly and
//! leap-year handling, the stamp convention, and the bundled demo year.

use std::path::{Path, PathBuf};

use chrono::Datelike;

use crate::support::fixture;
use wirerank::input::weather::{StampConvention, WeatherWarning};
use wirerank::io::weather_csv::{parse_weather_csv, read_weather_csv, weather_csv_text};
use wirerank::weather_gen::sample::{generate, larchwood_2025, LARCHWOOD_2025_CSV, LARCHWOOD_SEED};

fn demo_path() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("weather-samples/larchwood-2025.csv")
}

/// Reads `bad_weather_<kind>.csv` and expects an error message containing
/// `bad_weather_<kind>.csv` followed by `expected`.
fn check_bad(kind: &str, expected: &str) {
    let name = format!("bad_weather_{kind}.csv");
    let err = read_weather_csv(&fixture(&name)).expect_err(&name);
    let msg = err.to_string();
    let wanted = format!("{name}{expected}");
    assert!(
        msg.contains(&wanted),
        "{kind}:\n  got:  {msg}\n  want: {wanted}"
    );
    assert!(
        !msg.ends_with('.'),
        "{kind}: message ends with a period: {msg}"
    );
}

// Line numbers in the expected messages are counted by hand in each fixture (8 header
// lines, column names on line 9, data from line 10); value limits are those documented in
// notebooks-free-docs/weather-format.md.

#[test]
fn rejects_empty_file() {
    check_bad("empty", " is empty");
}

#[test]
fn rejects_header_problems_naming_line_and_key() {
    check_bad("not_format", " line 1: expected `# wirerank weather 1`");
    check_bad(
        "version",
        " line 1: weather format version \"2\" is not supported",
    );
    check_bad(
        "header_syntax",
        " line 5: header line \"# elevation_m 900\" is not `# key = value`",
    );
    check_bad("unknown_key", " line 6: unknown header key \"timezone\"");
    check_bad(
        "duplicate_key",
        " line 9: header key \"interval_min\" is given again (first on line 7)",
    );
    check_bad(
        "header_value",
        " line 3: latitude_deg = \"147.2\" is outside -90 to 90",
    );
    check_bad("interval", " line 7: interval_min = \"45\" must divide 60");
    check_bad(
        "stamp_key",
        " line 8: stamp = \"middle\" is neither `start` nor `end`",
    );
    check_bad(
        "missing_interval",
        ": header key \"interval_min\" is missing; add `# interval_min = 60`",
    );
    check_bad(
        "missing_stamp",
        ": header key \"stamp\" is missing; add `# stamp = start`",
    );
    check_bad(
        "header_after_columns",
        " line 12: `#` lines must come before the column names",
    );
}

#[test]
fn rejects_column_problems_naming_line_and_column() {
    check_bad("no_columns", ": no line of column names");
    check_bad(
        "unknown_column",
        " line 9: unknown column \"wind_kmh\" (column 4)",
    );
    check_bad(
        "duplicate_column",
        " line 9: column \"ghi_w_m2\" appears twice",
    );
    check_bad(
        "missing_column",
        " line 9: required column \"air_temp_c\" is missing",
    );
    check_bad(
        "unpaired_dni",
        " line 9: dni_w_m2 is given without dhi_w_m2",
    );
    check_bad(
        "unpaired_dhi_values",
        " line 9: dni_w_m2 with values is given without values for dhi_w_m2",
    );
    check_bad("field_count", " line 13: 3 fields, expected 4");
    check_bad("no_data", ": no data rows after the column names");
}

#[test]
fn rejects_cell_problems_naming_line_and_column() {
    check_bad(
        "empty_cell",
        " line 14: air_temp_c is empty; every row needs a value",
    );
    check_bad(
        "not_number",
        " line 14: air_temp_c = \"abc\" is not a number",
    );
    check_bad(
        "not_finite",
        " line 12: ghi_w_m2 = \"NaN\" is not a finite number",
    );
    check_bad(
        "stamp",
        " line 12: time_local = \"01/06/2025 10:00\" is not a time like 2025-01-01T00:00",
    );
    check_bad(
        "feb29",
        " line 12: time_local = \"2025-02-29T12:00\" is not a time",
    );
}

#[test]
fn rejects_implausible_values_with_a_hint() {
    // Source: notebooks-free-docs/weather-format.md ranges (−90..60 °C); the rest are this crate's documented limits.
    check_bad(
        "temperature",
        " line 11: air_temp_c = 291.6 is outside -90 to 60 °C (is it in kelvin",
    );
    check_bad("wind", " line 11: wind_m_s = -1.2 is outside 0 to 75 m/s");
    check_bad(
        "albedo",
        " line 12: albedo_frac = 20 is outside 0 to 1 (a fraction, not a percentage)",
    );
    check_bad(
        "pressure",
        " line 11: pressure_hpa = 91250 is outside 300 to 1100 hPa (is it in Pa",
    );
    check_bad(
        "negative",
        " line 13: ghi_w_m2 = -25.3 is negative beyond the 10 W/m²",
    );
    check_bad(
        "dhi_above_ghi",
        " line 12: dhi_w_m2 = 180 is above ghi_w_m2 = 150 by more than 5 W/m²",
    );
    check_bad(
        "dni_above_extraterrestrial",
        " line 12: dni_w_m2 = 1500 is outside 0 to ",
    );
}

#[test]
fn rejects_stamp_sequence_problems() {
    check_bad(
        "off_grid",
        " line 12: time_local = 2025-06-01T10:30 is not on the 60-minute grid",
    );
    check_bad(
        "duplicate_stamp",
        " line 13: time_local = 2025-06-01T10:00 repeats line 12",
    );
    check_bad(
        "out_of_order",
        " line 13: time_local = 2025-06-01T09:00 comes before 2025-06-01T10:00 on line 12",
    );
    check_bad(
        "gap",
        " line 14: 4 intervals are missing between 2025-06-01T09:00 and 2025-06-01T14:00 (at most 3",
    );
}

#[test]
fn rejects_ghi_above_extraterrestrial_once_the_site_is_known() {
    let path = fixture("bad_weather_above_extraterrestrial.csv");
    let w = read_weather_csv(&path).expect("reads: the rule needs the site");
    let site = &w.site;
    let err = w
        .check_against_extraterrestrial(
            site.latitude_deg.unwrap(),
            site.longitude_deg.unwrap(),
            site.utc_offset_h.unwrap(),
        )
        .unwrap_err()
        .to_string();
    assert!(
        err.contains("bad_weather_above_extraterrestrial.csv line 12: ghi_w_m2 = 350 at 2025-06-01T02:00 is above 1.5 × extraterrestrial"),
        "{err}"
    );
}

#[test]
fn repairs_are_made_and_counted() {
    let w = read_weather_csv(&fixture("weather_repairs.csv")).unwrap();
    assert_eq!(w.len(), 72);
    // Source: hand count of the fixture: ghi −1.5, −2 (1 June 01:00, 02:00), −0.4 (3 June
    // 02:00); dhi −0.8; dhi above ghi by 3.0 and 1.5 (1 June 09:00, 10:00); gaps at
    // 2 June 12:00–13:00 and 23:00.
    let expected = [
        WeatherWarning::ClampedNegativeIrradiance {
            column: "ghi_w_m2".to_string(),
            count: 3,
            most_negative_w_m2: -2.0,
        },
        WeatherWarning::ClampedNegativeIrradiance {
            column: "dhi_w_m2".to_string(),
            count: 1,
            most_negative_w_m2: -0.8,
        },
        WeatherWarning::FilledGaps {
            gaps: 2,
            intervals: 3,
            first_missing: "2025-06-02T12:00".to_string(),
        },
    ];
    for e in &expected {
        assert!(w.warnings.contains(e), "missing {e:?} in {:?}", w.warnings);
    }
    assert!(w.warnings.iter().any(|x| matches!(x,
        WeatherWarning::ClampedDiffuseAboveGlobal { count: 2, largest_excess_w_m2 }
            if (largest_excess_w_m2 - 3.0).abs() < 1e-9)));
    assert!(w
        .warnings
        .iter()
        .any(|x| matches!(x, WeatherWarning::MonthsMissing { missing } if missing.len() == 11)));
    assert!(w.warnings[0]
        .to_string()
        .starts_with("clamped 3 small negative ghi_w_m2 values to 0"));

    // Row 36 is 2025-06-02T12:00 (24 rows of day 1, then 12 of day 2).
    assert_eq!(w.stamp_text(36), "2025-06-02T12:00");
    assert_eq!(w.source_line[36..38], [0, 0]);
    let dhi = w.dhi_w_m2.as_ref().unwrap();
    let dni = w.dni_w_m2.as_ref().unwrap();
    // Source: recomputed by hand from the fixture (regression guard): same clock time on
    // 1 and 3 June, (652.1 + 747.1)/2 = 699.6, (326.1 + 373.6)/2 = 349.85,
    // (195.6 + 224.1)/2 = 209.85; 13:00: (629.7 + 721.7)/2 = 675.7.
    assert!((w.ghi_w_m2[36] - 699.6).abs() < 1e-9);
    assert!((dni[36] - 349.85).abs() < 1e-9);
    assert!((dhi[36] - 209.85).abs() < 1e-9);
    assert!((w.ghi_w_m2[37] - 675.7).abs() < 1e-9);
    // Source: recomputed by hand (regression guard): temperature on the straight line from
    // 12.1 °C at 11:00 to 12.4 °C at 14:00; 23:00 between 13.2 (22:00) and 12.0 (00:00).
    assert!((w.air_temp_c[36] - 12.2).abs() < 1e-9);
    assert!((w.air_temp_c[37] - 12.3).abs() < 1e-9);
    assert!((w.air_temp_c[47] - 12.6).abs() < 1e-9);
    assert_eq!(w.ghi_w_m2[47], 0.0);
    // Clamped values.
    assert_eq!(w.ghi_w_m2[1], 0.0);
    assert_eq!(dhi[3], 0.0);
    assert_eq!(dhi[9], w.ghi_w_m2[9]);
    assert!(dhi.iter().zip(&w.ghi_w_m2).all(|(d, g)| d <= g));
    let site = &w.site;
    w.check_against_extraterrestrial(
        site.latitude_deg.unwrap(),
        site.longitude_deg.unwrap(),
        site.utc_offset_h.unwrap(),
    )
    .unwrap();
}

#[test]
fn reads_quarter_hour_file() {
    let w = read_weather_csv(&fixture("weather_15min.csv")).unwrap();
    // Source: common practice, no source: 24 h × 4 quarter hours = 96 rows; row 5 starts at 01:15.
    assert_eq!(w.len(), 96);
    assert_eq!(w.interval_s, 900);
    assert_eq!(w.local_hour(5), 1);
    assert_eq!(w.stamp_text(95), "2025-06-21T23:45");
    assert!(w.local_start_s.windows(2).all(|p| p[1] - p[0] == 900));
    w.check_against_extraterrestrial(47.2, 9.6, 1.0).unwrap();
}

#[test]
fn reads_leap_year_with_29_february() {
    // A whole hourly 2024, written to a temporary file and read back from disk.
    let mut text = String::from(
        "# wirerank weather 1\n# interval_min = 60\n# stamp = start\ntime_local,ghi_w_m2,air_temp_c\n",
    );
    let mut day = chrono::NaiveDate::from_ymd_opt(2024, 1, 1).unwrap();
    while day.year() == 2024 {
        for h in 0..24 {
            text.push_str(&format!("{}T{h:02}:00,0,5\n", day.format("%Y-%m-%d")));
        }
        day = day.succ_opt().unwrap();
    }
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("leap.csv");
    std::fs::write(&path, &text).unwrap();
    let w = read_weather_csv(&path).unwrap();
    // Source: common practice, no source: 366 days × 24 h = 8784 h in a leap year.
    assert_eq!(w.len(), 8784);
    let feb29 = (0..w.len())
        .find(|&k| w.stamp_text(k) == "2024-02-29T12:00")
        .expect("29 February present");
    assert_eq!(w.local_month(feb29), 2);
    assert_eq!(w.local_day_of_year(feb29), 60);
    assert_eq!(w.local_day_of_year(w.len() - 1), 366);
    assert!(w.warnings.is_empty(), "{:?}", w.warnings);
}

#[test]
fn stamp_end_shifts_starts_back_by_one_interval() {
    let start = read_weather_csv(&fixture("weather_stamp_start.csv")).unwrap();
    let end = read_weather_csv(&fixture("weather_stamp_end.csv")).unwrap();
    assert_eq!(start.stamp, StampConvention::Start);
    assert_eq!(end.stamp, StampConvention::End);
    // Same values, stamps one hour later in the end file: the same intervals.
    assert_eq!(start.local_start_s, end.local_start_s);
    assert_eq!(start.ghi_w_m2, end.ghi_w_m2);
    // Source: the stamp convention's definition (notebooks-free-docs/weather-format.md): the row stamped
    // 2025-03-02T00:00 (end) is 1 March 23:00–24:00, day 60 of 2025.
    assert_eq!(end.stamp_text(23), "2025-03-02T00:00");
    assert_eq!(end.local_month(23), 3);
    assert_eq!(end.local_hour(23), 23);
    assert_eq!(end.local_day_of_year(23), 60);
}

#[test]
fn demo_year_reads_whole_and_its_ghi_sum_matches_the_raw_text() {
    let w = read_weather_csv(&demo_path()).unwrap();
    // Source: common practice, no source: 365 days × 24 h = 8760 h in 2025.
    assert_eq!(w.len(), 8760);
    assert_eq!(w.months_covered(), [true; 12]);
    assert!(w.warnings.is_empty(), "{:?}", w.warnings);
    assert_eq!(w.site.name.as_deref(), Some("Larchwood cabin (invented)"));
    assert_eq!(w.site.latitude_deg, Some(47.2));
    assert_eq!(w.site.utc_offset_h, Some(1.0));

    // Independent of polars: split the text by hand, find the column by name, add up.
    let text = std::fs::read_to_string(demo_path()).unwrap();
    let mut lines = text.lines().filter(|l| !l.starts_with('#'));
    let names: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = names.iter().position(|n| *n == "ghi_w_m2").unwrap();
    let raw_sum: f64 = lines
        .map(|l| l.split(',').nth(col).unwrap().parse::<f64>().unwrap())
        .sum();
    let read_sum: f64 = w.ghi_w_m2.iter().sum();
    // Source: recomputed from the raw CSV text in this test; same values, same order.
    assert!(
        (raw_sum - read_sum).abs() <= 1e-9 * raw_sum,
        "{raw_sum} vs {read_sum}"
    );
    w.check_against_extraterrestrial(47.2, 9.6, 1.0).unwrap();
}

#[test]
fn demo_year_file_is_what_the_generator_makes() {
    // If this fails after a dependency update (rand's StdRng stream), regenerate with
    // `cargo run --release --example make_sample_weather -- weather-samples/larchwood-2025.csv`.
    let made = weather_csv_text(&generate(&larchwood_2025(), LARCHWOOD_SEED).unwrap());
    let on_disk = std::fs::read_to_string(demo_path()).unwrap();
    assert!(
        made == on_disk,
        "weather-samples/larchwood-2025.csv is stale"
    );
    assert!(LARCHWOOD_2025_CSV == on_disk);
    let embedded = parse_weather_csv(LARCHWOOD_2025_CSV, "larchwood-2025.csv").unwrap();
    assert_eq!(embedded.len(), 8760);
}

#[test]
fn write_is_atomic_and_round_trips() {
    let w = read_weather_csv(&fixture("weather_repairs.csv")).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("copy.csv");
    wirerank::io::weather_csv::write_weather_csv(&w, &out).unwrap();
    // No temporary is left beside the file (io/atomic.rs writes through a hidden folder).
    let left: Vec<String> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(left, ["copy.csv"]);
    let again = read_weather_csv(&out).unwrap();
    assert_eq!(again.len(), w.len());
    assert_eq!(again.ghi_w_m2, w.ghi_w_m2);
    assert_eq!(again.dhi_w_m2, w.dhi_w_m2);
    assert_eq!(again.air_temp_c, w.air_temp_c);
    // Repairs were written as plain rows: nothing left to repair.
    assert!(again
        .warnings
        .iter()
        .all(|x| matches!(x, WeatherWarning::MonthsMissing { .. })));
    let missing_dir = dir.path().join("no/such/dir/x.csv");
    let err = wirerank::io::weather_csv::write_weather_csv(&w, &missing_dir).unwrap_err();
    assert!(err.to_string().starts_with("cannot write "), "{err}");
}
