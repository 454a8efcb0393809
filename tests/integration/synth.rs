//! Weather tools: synthesis from monthly means and the four invented sample sites, the
//! `inspect` summary and plot, and the import of the open typical-year format.
//!
//! The sample weather files are regenerated here through the same library function the
//! `weather synth` command calls and compared byte for byte; `WIRERANK_BLESS=1` rewrites
//! them (after an intended change of the method or of `rand`).

use std::path::{Path, PathBuf};

use crate::support::fixture;
use wirerank::commands::weather::{import, inspect, synth_from_file};
use wirerank::input::weather::Weather;
use wirerank::io::monthly_toml::parse_monthly_climate;
use wirerank::io::typical_year::{
    looks_like_typical_year, parse_typical_year, read_any_weather, read_typical_year, TYPICAL_YEAR,
};
use wirerank::io::weather_csv::{read_weather_csv, weather_csv_text};
use wirerank::results::weather_summary::summarize;

/// The four invented sample sites and the seeds their committed files were made with.
const SAMPLE_SITES: [(&str, u64); 4] = [
    ("northmere-cabin", 6301),
    ("highcol-hut", 2480),
    ("dunewell-pump", 2760),
    ("southvale-farm", 3190),
];

fn samples() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("weather-samples")
}

/// Monthly mean daily GHI (kWh/m²), mean temperature and mean daily min/max (°C).
fn monthly(w: &Weather) -> Vec<(f64, f64, f64, f64)> {
    summarize(w)
        .months
        .iter()
        .map(|m| {
            (
                m.ghi_kwh_m2_day,
                m.air_mean_c,
                m.air_daily_min_c,
                m.air_daily_max_c,
            )
        })
        .collect()
}

#[test]
fn sample_sites_are_what_the_synthesizer_makes() {
    let bless = std::env::var_os("WIRERANK_BLESS").is_some();
    let dir = tempfile::tempdir().unwrap();
    for (site, seed) in SAMPLE_SITES {
        let input = samples().join(format!("{site}.monthly.toml"));
        let committed = samples().join(format!("{site}.csv"));
        if bless {
            synth_from_file(&input, seed, &committed).unwrap();
        }
        let out = dir.path().join(format!("{site}.csv"));
        let outcome = synth_from_file(&input, seed, &out).unwrap();
        assert!(
            outcome.warnings.is_empty(),
            "{site}: {:?}",
            outcome.warnings
        );
        let made = std::fs::read(&out).unwrap();
        let kept = std::fs::read(&committed).unwrap_or_default();
        assert!(
            made == kept,
            "weather-samples/{site}.csv is not what `wirerank weather synth {site}.monthly.toml --seed {seed}` makes; \
             regenerate it (WIRERANK_BLESS=1 cargo test --release --test integration synth::) if the change is intended"
        );
    }
}

#[test]
fn sample_sites_reproduce_their_monthly_inputs() {
    for (site, _) in SAMPLE_SITES {
        let toml = std::fs::read_to_string(samples().join(format!("{site}.monthly.toml"))).unwrap();
        let climate = parse_monthly_climate(&toml, site).unwrap();
        let w = read_weather_csv(&samples().join(format!("{site}.csv"))).unwrap();
        assert_eq!(w.len(), 8760, "{site}");
        assert!(w.warnings.is_empty(), "{site}: {:?}", w.warnings);
        w.check_against_extraterrestrial(
            climate.latitude_deg(),
            climate.longitude_deg(),
            climate.utc_offset_h(),
        )
        .unwrap();
        let (lo, hi) = climate.air_min_max_c();
        for (m, (ghi, mean, day_min, day_max)) in monthly(&w).into_iter().enumerate() {
            // Source: the task's requirement (issue text): irradiation within 2 %, mean
            // temperature within 0.5 °C.
            let g = climate.ghi_kwh_m2_day()[m];
            assert!(
                (ghi - g).abs() <= 0.02 * g,
                "{site} month {m}: {ghi} vs {g}"
            );
            let t = climate.air_mean_c()[m];
            assert!((mean - t).abs() <= 0.5, "{site} month {m}: {mean} vs {t}");
            // Source: common practice, no source: the Parton & Logan cycle's own shape puts
            // the mean a little off the middle of minimum and maximum, so the daily extremes
            // follow the inputs only to about a kelvin; 1.5 K is this crate's stated bound.
            assert!(
                (day_min - lo[m]).abs() <= 1.5,
                "{site} month {m}: min {day_min} vs {}",
                lo[m]
            );
            assert!(
                (day_max - hi[m]).abs() <= 1.5,
                "{site} month {m}: max {day_max} vs {}",
                hi[m]
            );
        }
    }
}

#[test]
fn sample_sites_have_the_character_they_were_invented_for() {
    let load = |site: &str| read_weather_csv(&samples().join(format!("{site}.csv"))).unwrap();
    let lowest = |w: &Weather| w.air_temp_c.iter().cloned().fold(f64::INFINITY, f64::min);

    // Source: the invented sites' design targets (weather-samples/README.md), not
    // measurements.
    let cabin = load("northmere-cabin");
    assert!(cabin.site.latitude_deg.unwrap() >= 60.0);
    let s = summarize(&cabin);
    assert!(
        s.months[11].ghi_kwh_m2 < 3.0,
        "december {}",
        s.months[11].ghi_kwh_m2
    );
    assert!(lowest(&cabin) < -20.0, "coldest {}", lowest(&cabin));

    let hut = load("highcol-hut");
    assert!(hut.site.elevation_m.unwrap() >= 2000.0);
    let mean = hut.air_temp_c.iter().sum::<f64>() / hut.len() as f64;
    assert!(mean < 0.0, "annual mean {mean}");
    assert!(lowest(&hut) < -15.0, "coldest {}", lowest(&hut));

    let desert = load("dunewell-pump");
    assert!(desert.site.latitude_deg.unwrap() <= 33.0);
    let july = &summarize(&desert).months[6];
    assert!(
        july.air_daily_max_c >= 40.0,
        "july afternoons {}",
        july.air_daily_max_c
    );
    // Hot afternoons: the warmest hour of the day comes after noon on most July days.
    let afternoon_peaks = (181..212)
        .filter(|d| {
            let day = &desert.air_temp_c[d * 24..(d + 1) * 24];
            let peak = (0..24).max_by(|&a, &b| day[a].total_cmp(&day[b])).unwrap();
            (12..=17).contains(&peak)
        })
        .count();
    assert!(afternoon_peaks >= 28, "{afternoon_peaks} of 31");

    let farm = load("southvale-farm");
    assert!(farm.site.latitude_deg.unwrap() < 0.0);
    let s = summarize(&farm);
    let darkest = (0..12)
        .min_by(|&a, &b| {
            s.months[a]
                .ghi_kwh_m2_day
                .total_cmp(&s.months[b].ghi_kwh_m2_day)
        })
        .unwrap();
    assert_eq!(darkest, 5, "june is the southern winter");
    assert!(lowest(&farm) < 0.0, "winter frost {}", lowest(&farm));
}

#[test]
fn synth_refuses_bad_inputs_naming_file_line_and_month() {
    let dir = tempfile::tempdir().unwrap();
    let good = std::fs::read_to_string(samples().join("highcol-hut.monthly.toml")).unwrap();
    let bad = good.replace(
        "ghi_kwh_m2_day = [1.75, 2.85, 4.2",
        "ghi_kwh_m2_day = [1.75, 2.85, -4.2",
    );
    let input = dir.path().join("bad.monthly.toml");
    std::fs::write(&input, bad).unwrap();
    let msg = synth_from_file(&input, 1, &dir.path().join("out.csv"))
        .unwrap_err()
        .to_string();
    // Line 12 of the sample holds ghi_kwh_m2_day; march's value starts at column 31.
    let want = format!(
        "{}:12:31 ghi_kwh_m2_day for march = -4.2 is outside 0..",
        input.display()
    );
    assert!(msg.starts_with(&want), "got: {msg}\nwant: {want}");
    assert!(!dir.path().join("out.csv").exists());

    let missing = dir.path().join("missing.monthly.toml");
    std::fs::write(
        &missing,
        good.replace(
            "wind_m_s = [6.5, 6.3, 6.2, 5.8, 5.2, 4.8, 4.6, 4.5, 4.9, 5.6, 6.3, 6.6]",
            "wind_m_s = [6.5, 6.3, 6.2, 5.8, 5.2, 4.8, 4.6, 4.5, 4.9, 5.6, 6.3]",
        ),
    )
    .unwrap();
    let msg = synth_from_file(&missing, 1, &dir.path().join("out.csv"))
        .unwrap_err()
        .to_string();
    assert!(
        msg.contains("wind_m_s has 11 values; one per month is needed, january to december (december has no value)"),
        "{msg}"
    );
}

#[test]
fn typical_year_import_matches_the_equivalent_csv() {
    let imported = read_typical_year(&fixture("typical_year_48h.csv")).unwrap();
    let ours = read_weather_csv(&fixture("typical_year_48h_equivalent.csv")).unwrap();
    let w = &imported.weather;
    assert_eq!(w.len(), 48);
    // Source: the format's published data dictionary: hour 1–24 is the END of the hour, and
    // Wh/m² over an hour is the hour's mean W/m²; the equivalent file writes the same hours
    // by hand, so every value and stamp must agree exactly.
    assert_eq!(w.local_start_s, ours.local_start_s);
    assert_eq!(w.ghi_w_m2, ours.ghi_w_m2);
    assert_eq!(w.dni_w_m2, ours.dni_w_m2);
    assert_eq!(w.dhi_w_m2, ours.dhi_w_m2);
    assert_eq!(w.air_temp_c, ours.air_temp_c);
    assert_eq!(w.wind_m_s, ours.wind_m_s);
    assert_eq!(w.pressure_hpa, ours.pressure_hpa);
    assert_eq!(w.site, ours.site);
    let (a, b) = (summarize(w), summarize(&ours));
    assert_eq!(a.months, b.months);
    // Source: recomputed by hand from the fixture: 31 January sums 20 + 60 + 130 + 190 +
    // 220 + 215 + 180 + 120 + 50 + 3 = 1188 Wh/m²; 1 February 25 + 110 + 230 + 320 + 370 +
    // 365 + 310 + 210 + 90 + 6 = 2036 Wh/m².
    assert_eq!(a.months.len(), 2);
    assert!((a.months[0].ghi_kwh_m2 - 1.188).abs() < 1e-12);
    assert!((a.months[1].ghi_kwh_m2 - 2.036).abs() < 1e-12);
    // Rows from 1995 and 2003 make a typical year: mapped onto the documented year.
    assert_eq!(w.stamp_text(0), format!("{TYPICAL_YEAR}-01-31T01:00"));
    assert!(
        imported
            .notes
            .iter()
            .any(|n| n.contains("1995–2003") && n.contains("mapped onto 2025")),
        "{:?}",
        imported.notes
    );
}

#[test]
fn import_command_writes_our_csv_and_never_its_input() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("testville.csv");
    let outcome = import(&fixture("typical_year_48h.csv"), &out).unwrap();
    assert!(
        outcome.stdout.contains("48 hourly rows"),
        "{}",
        outcome.stdout
    );
    let back = read_weather_csv(&out).unwrap();
    let ours = read_weather_csv(&fixture("typical_year_48h_equivalent.csv")).unwrap();
    assert_eq!(weather_csv_text(&back), weather_csv_text(&ours));
    // No temporary is left beside the file (io/atomic.rs writes through a hidden folder).
    let left: Vec<String> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(left, ["testville.csv"]);

    let copy = dir.path().join("copy-typical.csv");
    std::fs::copy(fixture("typical_year_48h.csv"), &copy).unwrap();
    let msg = import(&copy, &copy).unwrap_err().to_string();
    assert!(msg.contains("is the input file"), "{msg}");
    assert_eq!(
        std::fs::read(&copy).unwrap(),
        std::fs::read(fixture("typical_year_48h.csv")).unwrap()
    );
}

#[test]
fn typical_year_drops_29_february_when_mapping_onto_one_year() {
    let imported = read_typical_year(&fixture("typical_year_feb29.csv")).unwrap();
    let w = &imported.weather;
    // Source: the documented mapping (rows of 2004 and 1999 → 2025, no 29 February).
    assert_eq!(w.len(), 48);
    assert_eq!(w.stamp_text(0), "2025-02-28T01:00");
    assert_eq!(w.stamp_text(24), "2025-03-01T01:00");
    assert!(
        imported
            .notes
            .iter()
            .any(|n| n.starts_with("24 rows of 29 february were dropped")),
        "{:?}",
        imported.notes
    );
}

fn check_bad_typical_year(name: &str, expected: &str) {
    let path = fixture(name);
    let msg = read_typical_year(&path).unwrap_err().to_string();
    let want = format!("{}{expected}", path.display());
    assert!(msg.starts_with(&want), "got:  {msg}\nwant: {want}");
    assert!(!msg.ends_with('.'), "{msg}");
}

#[test]
fn bad_typical_year_files_name_line_and_field() {
    // Line numbers counted in each fixture: 8 header records, data from line 9.
    check_bad_typical_year(
        "typical_year_bad_header.csv",
        " line 3: header record = \"GROUND TEMPERATURES,0\" should start with `TYPICAL/EXTREME PERIODS,`",
    );
    check_bad_typical_year(
        "typical_year_bad_location.csv",
        " line 1: LOCATION latitude (field 7) = \"north\" is not a number",
    );
    check_bad_typical_year(
        "typical_year_subhourly.csv",
        " line 8: DATA PERIODS records per hour (field 3) = \"4\" is not 1; only hourly files are imported",
    );
    check_bad_typical_year(
        "typical_year_bad_field_count.csv",
        " line 11: 20 fields, expected 35",
    );
    check_bad_typical_year(
        "typical_year_bad_value.csv",
        " line 12: dry bulb temperature (field 7) = \"abc\" is not a number",
    );
    check_bad_typical_year(
        "typical_year_missing_value.csv",
        " line 21: global horizontal radiation (field 14) = 9999 is outside its valid values (9999 and above is the format's missing-value marker",
    );
}

#[test]
fn a_missing_optional_value_drops_its_column_with_a_note() {
    let imported = read_typical_year(&fixture("typical_year_missing_wind.csv")).unwrap();
    assert!(imported.weather.wind_m_s.is_none());
    assert!(imported.weather.dni_w_m2.is_some() && imported.weather.pressure_hpa.is_some());
    assert!(
        imported
            .notes
            .iter()
            .any(|n| n.starts_with("wind speed is missing in 1 of 24 rows (first on line 15)")),
        "{:?}",
        imported.notes
    );
}

#[test]
fn read_any_weather_sniffs_the_format() {
    let typical = read_any_weather(&fixture("typical_year_48h.csv")).unwrap();
    let ours = read_any_weather(&fixture("typical_year_48h_equivalent.csv")).unwrap();
    assert_eq!(typical.ghi_w_m2, ours.ghi_w_m2);
    assert!(looks_like_typical_year("\u{feff}LOCATION,x,,,,,1,2,0,0\n"));
    assert!(!looks_like_typical_year("# wirerank weather 1\n"));
    let text = std::fs::read_to_string(fixture("typical_year_48h.csv")).unwrap();
    assert_eq!(parse_typical_year(&text, "t").unwrap().weather.len(), 48);
}

#[test]
fn inspect_reports_months_repairs_extremes_and_draws_the_plot() {
    let dir = tempfile::tempdir().unwrap();
    let out = inspect(
        &samples().join("dunewell-pump.csv"),
        Some(&dir.path().join("plots")),
    )
    .unwrap();
    for text in [
        "site: Dunewell pump station (invented)",
        "rows: 8760 of 60 min",
        "repairs: 0 gaps filled (0 intervals), 0 values clamped",
        "jan ",
        "dec ",
        "lowest air temperature:",
        "highest air temperature:",
    ] {
        assert!(
            out.stdout.contains(text),
            "missing {text:?} in\n{}",
            out.stdout
        );
    }
    let png = dir.path().join("plots/dunewell-pump-daily-ghi.png");
    let bytes = std::fs::read(&png).unwrap();
    // Source: the PNG specification's 8-byte signature.
    assert_eq!(&bytes[..8], b"\x89PNG\r\n\x1a\n");
    let svg =
        std::fs::read_to_string(dir.path().join("plots/dunewell-pump-daily-ghi.svg")).unwrap();
    assert!(svg.contains("Dunewell pump station (invented)"));
    if let Some(keep) = std::env::var_os("WIRERANK_KEEP_PLOT") {
        std::fs::copy(&png, PathBuf::from(keep)).unwrap();
    }

    // Source: hand count of weather_repairs.csv (see weather.rs): 2 gaps of 3 intervals,
    // 3 + 1 negative irradiance values and 2 diffuse-above-global rows clamped.
    let s = summarize(&read_any_weather(&fixture("weather_repairs.csv")).unwrap());
    assert_eq!(
        (s.filled_gaps, s.filled_intervals, s.clamped_values),
        (2, 3, 6)
    );
}
