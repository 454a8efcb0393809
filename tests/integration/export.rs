//! `rank --out DIR`: the CSV tables, provenance.txt and the charts of the demo run, read back
//! with polars; atomic writing and the refusals (unwritable folder, plan or weather file in
//! the way, hourly rows missing).

use std::collections::BTreeSet;
use std::fs;
use std::path::{Path, PathBuf};
use std::sync::OnceLock;

use polars::prelude::{CsvReadOptions, DataFrame, DataType, SerReader};

use wirerank::commands::PlanSource;
use wirerank::error::Error;
use wirerank::io::export::{
    write_outputs, ExportOptions, DELIVERED_STEP, DIFFERENCES_COLUMNS, DIFFERENCES_CSV,
    HOURLY_COLUMNS, HOURLY_CSV, LOSSES_COLUMNS, LOSSES_CSV, MONTHLY_COLUMNS, MONTHLY_CSV,
    POTENTIAL_STEP, PROVENANCE_TXT, SUMMARY_COLUMNS, SUMMARY_CSV, WIRING_COLUMNS, WIRING_CSV,
};
use wirerank::io::plots::loss_causes;
use wirerank::results::rank::Criterion;
use wirerank::results::RankResult;
use wirerank::sim::energy::{DecidedBy, Step};

/// Half a unit of the last printed decimal of every CSV number (3 decimals).
const HALF_LAST_DIGIT: f64 = 0.0005;

/// The demo ranked by annual energy with interval rows kept, simulated once for all tests.
fn demo() -> &'static RankResult {
    static DEMO: OnceLock<RankResult> = OnceLock::new();
    DEMO.get_or_init(|| {
        wirerank::commands::rank::simulate_and_rank(
            &PlanSource::Demo,
            Some(Criterion::Annual),
            wirerank::sim::year::RunOptions {
                parallel: true,
                hourly: true,
                on_layout_done: None,
            },
        )
        .expect("the demo runs")
    })
}

/// The demo written once into a temporary folder (kept alive for the whole test binary).
fn written() -> &'static (tempfile::TempDir, Vec<PathBuf>) {
    static OUT: OnceLock<(tempfile::TempDir, Vec<PathBuf>)> = OnceLock::new();
    OUT.get_or_init(|| {
        let dir = tempfile::tempdir().expect("a temporary folder");
        let out = dir.path().join("run");
        let paths = write_outputs(
            demo(),
            &out,
            &ExportOptions {
                hourly: true,
                ..ExportOptions::default()
            },
        )
        .expect("the demo's files are written");
        (dir, paths)
    })
}

fn out_dir() -> PathBuf {
    written().0.path().join("run")
}

fn listing(dir: &Path) -> BTreeSet<String> {
    fs::read_dir(dir)
        .expect("folder listing")
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .collect()
}

fn read_csv(name: &str) -> DataFrame {
    let path = out_dir().join(name);
    CsvReadOptions::default()
        .with_has_header(true)
        .with_infer_schema_length(None)
        .try_into_reader_with_file_path(Some(path.clone()))
        .and_then(|r| r.finish())
        .unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

fn names(df: &DataFrame) -> Vec<String> {
    df.get_column_names()
        .iter()
        .map(|s| s.to_string())
        .collect()
}

fn f64s(df: &DataFrame, name: &str) -> Vec<Option<f64>> {
    let c = df
        .column(name)
        .and_then(|c| c.cast(&DataType::Float64))
        .unwrap_or_else(|e| panic!("{name}: {e}"));
    c.f64().expect("float column").iter().collect()
}

fn texts(df: &DataFrame, name: &str) -> Vec<String> {
    let c = df
        .column(name)
        .and_then(|c| c.cast(&DataType::String))
        .unwrap_or_else(|e| panic!("{name}: {e}"));
    c.str()
        .expect("text column")
        .iter()
        .map(|s| s.unwrap_or("").to_string())
        .collect()
}

/// Column names of one file as the documentation's table lists them (first cell, in
/// backticks, of each row under the file's `## name` heading).
fn documented_columns(file: &str) -> Vec<String> {
    let doc = fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("notebooks-free-docs/output-files.md"),
    )
    .expect("output-files.md");
    let mut in_section = false;
    let mut cols = Vec::new();
    for line in doc.lines() {
        if let Some(h) = line.strip_prefix("## ") {
            in_section = h.split_whitespace().next() == Some(file);
            continue;
        }
        if in_section {
            if let Some(rest) = line.strip_prefix("| `") {
                cols.push(rest.split('`').next().unwrap_or("").to_string());
            }
        }
    }
    cols
}

#[test]
fn writes_every_file_and_leaves_no_temporaries() {
    let (_, paths) = written();
    let expected: BTreeSet<String> = [
        MONTHLY_CSV,
        SUMMARY_CSV,
        LOSSES_CSV,
        DIFFERENCES_CSV,
        WIRING_CSV,
        HOURLY_CSV,
        PROVENANCE_TXT,
        "monthly_energy.png",
        "monthly_energy.svg",
        "gain_map.png",
        "gain_map.svg",
        "losses.png",
        "losses.svg",
        "daily_soc.png",
        "daily_soc.svg",
        "monthly_unmet.png",
        "monthly_unmet.svg",
        "wiring_L1.png",
        "wiring_L1.svg",
        wirerank::io::report_html::REPORT_HTML,
    ]
    .map(String::from)
    .into();
    let mut on_disk = listing(&out_dir());
    // Source: output-files.md (the set's manifest, a hidden file beside the set).
    assert!(
        on_disk.remove(wirerank::io::outset::MANIFEST),
        "{on_disk:?}"
    );
    assert_eq!(on_disk, expected);
    // Beside the folder: only its lock file, no temporary.
    assert_eq!(
        listing(written().0.path()),
        BTreeSet::from(["run".to_string(), ".run.wirerank-lock".to_string()])
    );
    let returned: BTreeSet<String> = paths
        .iter()
        .map(|p| {
            assert_eq!(p.parent(), Some(out_dir().as_path()), "{}", p.display());
            p.file_name()
                .expect("file name")
                .to_string_lossy()
                .into_owned()
        })
        .collect();
    assert_eq!(returned, expected);
}

#[test]
fn csv_columns_match_the_code_and_the_documentation() {
    for (file, cols) in [
        (MONTHLY_CSV, &MONTHLY_COLUMNS[..]),
        (SUMMARY_CSV, &SUMMARY_COLUMNS[..]),
        (LOSSES_CSV, &LOSSES_COLUMNS[..]),
        (HOURLY_CSV, &HOURLY_COLUMNS[..]),
        (DIFFERENCES_CSV, &DIFFERENCES_COLUMNS[..]),
        (WIRING_CSV, &WIRING_COLUMNS[..]),
    ] {
        assert_eq!(names(&read_csv(file)), cols, "{file} header");
        assert_eq!(documented_columns(file), cols, "{file} in output-files.md");
    }
}

#[test]
fn monthly_rows_add_up_to_the_summary_annual_energy() {
    let monthly = read_csv(MONTHLY_CSV);
    let summary = read_csv(SUMMARY_CSV);
    let ranked: Vec<_> = demo()
        .outcomes
        .iter()
        .filter(|o| o.rank.is_some())
        .collect();
    // Source: output-files.md (12 rows per ranked layout).
    assert_eq!(monthly.height(), 12 * ranked.len());
    let (layout, month, energy) = (
        texts(&monthly, "layout"),
        f64s(&monthly, "month"),
        f64s(&monthly, "energy_kwh"),
    );
    let (s_layout, s_annual) = (texts(&summary, "layout"), f64s(&summary, "annual_kwh"));
    for (i, o) in ranked.iter().enumerate() {
        let name = o.layout.display_name();
        let rows = i * 12..(i + 1) * 12;
        assert!(layout[rows.clone()].iter().all(|l| *l == name), "{name}");
        let months: Vec<f64> = month[rows.clone()]
            .iter()
            .map(|m| m.unwrap_or(0.0))
            .collect();
        assert_eq!(months, (1..=12).map(f64::from).collect::<Vec<_>>());
        let sum: f64 = energy[rows].iter().map(|v| v.expect("energy")).sum();
        let k = s_layout
            .iter()
            .position(|l| *l == name)
            .expect("in summary");
        let annual = s_annual[k].expect("annual of a ranked layout");
        // Source: recomputed from the formula (annual = Σ months), to the CSV rounding:
        // twelve rounded monthly cells plus the rounded annual cell, 13 × 0.0005 kWh.
        assert!(
            (sum - annual).abs() <= 13.0 * HALF_LAST_DIGIT + 1e-9,
            "{name}: Σ months {sum} vs annual {annual}"
        );
        // Source: recomputed from the formula (the run's own total, rounded to 3 decimals).
        let exact = o.energy.as_ref().expect("energy").annual_delivered_kwh();
        assert!((annual - exact).abs() <= HALF_LAST_DIGIT + 1e-9);
    }
}

#[test]
fn monthly_battery_columns_balance_and_add_up_to_the_summary() {
    let monthly = read_csv(MONTHLY_CSV);
    let summary = read_csv(SUMMARY_CSV);
    let r = demo();
    let floor_pct = 100.0
        * r.loaded
            .plan
            .battery
            .model
            .as_ref()
            .expect("the demo has a battery model")
            .floor_soc_frac();
    let col = |df: &DataFrame, name: &str| -> Vec<f64> {
        f64s(df, name)
            .into_iter()
            .map(|v| v.unwrap_or_else(|| panic!("{name}: empty cell in the demo")))
            .collect()
    };
    let (energy, harvested, curtailed) = (
        col(&monthly, "energy_kwh"),
        col(&monthly, "harvested_kwh"),
        col(&monthly, "curtailed_kwh"),
    );
    let (used, unmet, days, soc) = (
        col(&monthly, "used_kwh"),
        col(&monthly, "unmet_kwh"),
        col(&monthly, "unmet_days"),
        col(&monthly, "lowest_soc_pct"),
    );
    let s_layout = texts(&summary, "layout");
    let ranked: Vec<_> = r.outcomes.iter().filter(|o| o.rank.is_some()).collect();
    for (i, o) in ranked.iter().enumerate() {
        let e = o.energy.as_ref().expect("energy");
        for m in 0..12 {
            let k = i * 12 + m;
            // Source: definition (output-files.md: harvested = energy + curtailed), to the
            // rounding of three printed cells.
            assert!((harvested[k] - energy[k] - curtailed[k]).abs() <= 3.0 * HALF_LAST_DIGIT);
            // Source: energy balance of the battery model (notebooks-free-docs/method-battery.md): the load is
            // served or unmet, so used + unmet = the load of the month, to the rounding.
            let load_kwh = (e.load_served_wh[m] + e.unmet_wh[m]) / 1000.0;
            assert!((used[k] + unmet[k] - load_kwh).abs() <= 2.0 * HALF_LAST_DIGIT + 1e-9);
            // Source: definition (a day with unmet load has some unmet energy, and no month
            // has more than 31 days).
            assert!(days[k] >= 0.0 && days[k] <= 31.0);
            assert_eq!(days[k] > 0.0, unmet[k] > 0.0 || e.unmet_wh[m] > 0.0);
            // Source: the battery model's bounds (never below its floor nor above full).
            assert!(soc[k] >= floor_pct - HALF_LAST_DIGIT && soc[k] <= 100.0 + HALF_LAST_DIGIT);
        }
        let rows = i * 12..(i + 1) * 12;
        let j = s_layout
            .iter()
            .position(|l| *l == o.layout.display_name())
            .expect("in summary");
        for (name, monthly_sum) in [
            ("harvested_kwh", harvested[rows.clone()].iter().sum::<f64>()),
            ("curtailed_kwh", curtailed[rows.clone()].iter().sum()),
            ("used_kwh", used[rows.clone()].iter().sum()),
            ("unmet_kwh", unmet[rows.clone()].iter().sum()),
            ("unmet_days", days[rows.clone()].iter().sum()),
        ] {
            let year = f64s(&summary, name)[j].expect("a ranked layout's cell");
            // Source: recomputed from the formula (the year is the sum of its months), to
            // the rounding of 13 printed cells.
            assert!(
                (year - monthly_sum).abs() <= 13.0 * HALF_LAST_DIGIT + 1e-9,
                "{name}: {year} vs {monthly_sum}"
            );
        }
        let year_soc = f64s(&summary, "lowest_soc_pct")[j].expect("lowest");
        let monthly_min = soc[rows].iter().copied().fold(f64::INFINITY, f64::min);
        // Source: definition (the year's lowest is the lowest of its months).
        assert!((year_soc - monthly_min).abs() <= HALF_LAST_DIGIT);
    }
}

#[test]
fn summary_lists_rejected_layouts_with_reasons_and_carries_the_cautions() {
    let s = read_csv(SUMMARY_CSV);
    assert_eq!(s.height(), demo().outcomes.len());
    let (rank, status, reasons, annual) = (
        f64s(&s, "rank"),
        texts(&s, "status"),
        texts(&s, "reasons"),
        f64s(&s, "annual_kwh"),
    );
    let n_rejected = status.iter().filter(|x| *x == "rejected").count();
    // Source: the demo plan (weather-samples/larchwood-plan.toml): its 4s2p string is too
    // long for a cold morning and 1s8p's short-circuit current is above what the controller
    // withstands (its hot Vmp below the window only warns); the terminal table lists both.
    assert_eq!(n_rejected, 2);
    let mut next_rank = 1.0;
    for i in 0..s.height() {
        match status[i].as_str() {
            "ranked" => {
                assert_eq!(rank[i], Some(next_rank));
                next_rank += 1.0;
                assert!(reasons[i].is_empty(), "{}", reasons[i]);
                assert!(annual[i].is_some());
            }
            "rejected" => {
                assert_eq!(rank[i], None);
                assert!(annual[i].is_none());
                assert!(!reasons[i].is_empty(), "row {i} has no reasons");
            }
            other => panic!("status {other:?}"),
        }
    }
    assert!(reasons.iter().any(|r| r.starts_with("cold-voc: ")));
    assert!(reasons.iter().any(|r| r.starts_with("array-isc: ")));
    let warnings = texts(&s, "warnings");
    assert!(
        warnings.iter().any(|w| w.contains(" | ")),
        "two warnings joined"
    );
    assert!(
        (0..s.height()).any(|i| status[i] == "rejected" && warnings[i].starts_with("hot-vmp: ")),
        "a rejected layout keeps its warnings in the file"
    );
    let cautions = texts(&s, "cautions");
    assert!(
        cautions[0].contains("licensed professional"),
        "{}",
        cautions[0]
    );
    // On every row, so that a row copied on its own still carries them.
    assert!(cautions.iter().all(|c| c == &cautions[0]));
}

#[test]
fn losses_run_from_potential_to_delivered_in_step_order() {
    let l = read_csv(LOSSES_CSV);
    let ranked: Vec<_> = demo()
        .outcomes
        .iter()
        .filter(|o| o.rank.is_some())
        .collect();
    let per = Step::ALL.len() + 2;
    // Source: output-files.md (potential, one row per step, delivered).
    assert_eq!(l.height(), per * ranked.len());
    let (step, energy, share) = (
        texts(&l, "step"),
        f64s(&l, "energy_kwh"),
        f64s(&l, "share_pct"),
    );
    let mut keys = vec![POTENTIAL_STEP.to_string()];
    keys.extend(Step::ALL.iter().map(|s| s.key().to_string()));
    keys.push(DELIVERED_STEP.to_string());
    for i in 0..ranked.len() {
        let rows = i * per..(i + 1) * per;
        assert_eq!(step[rows.clone()], keys[..]);
        let e: Vec<f64> = energy[rows.clone()]
            .iter()
            .map(|v| v.expect("energy"))
            .collect();
        let (potential, delivered) = (e[0], e[per - 1]);
        let lost: f64 = e[1..per - 1].iter().sum();
        // Source: energy balance (potential = Σ losses + delivered), to 0.1 % as in the
        // JSON output's test, plus the CSV rounding of 12 cells.
        assert!(
            (potential - lost - delivered).abs() <= 1e-3 * potential + 12.0 * HALF_LAST_DIGIT,
            "{potential} − {lost} vs {delivered}"
        );
        // Source: recomputed from the formula (share = 100 × energy / potential, printed to
        // 3 decimals; the energies are exact here, so the error is the share's rounding).
        // Source: definition (the potential is 100 % of itself, printed as 100.000).
        assert_eq!(share[i * per], Some(100.0));
        for k in 0..per {
            let exact = 100.0 * e[k] / potential;
            let s = share[i * per + k].expect("share");
            assert!(
                (s - exact).abs() <= HALF_LAST_DIGIT + 100.0 * HALF_LAST_DIGIT / potential * 2.0,
                "{s} vs {exact}"
            );
        }
    }
}

/// Every loss step of losses.csv names who decides it; the potential and delivered rows
/// name nobody. The chart's causes add up, party by party, to the same steps.
#[test]
fn losses_name_who_decides_each_step_and_the_chart_adds_up_to_them() {
    let l = read_csv(LOSSES_CSV);
    let (step, by) = (texts(&l, "step"), texts(&l, "decided_by"));
    for (s, b) in step.iter().zip(&by) {
        let expected = match Step::ALL.iter().find(|x| x.key() == s) {
            Some(x) => x.decided_by().key(),
            None => "",
        };
        // Source: output-files.md (the site: incidence, soiling, shading, temperature and
        // low light; the wiring: mismatch to conversion; the battery: curtailed).
        assert_eq!(b, expected, "{s}");
    }
    // Source: output-files.md, the grouping table, counted by hand (4 site, 6 wiring, 1
    // battery steps).
    let count = |d: DecidedBy| Step::ALL.iter().filter(|s| s.decided_by() == d).count();
    assert_eq!(
        (
            count(DecidedBy::Site),
            count(DecidedBy::Wiring),
            count(DecidedBy::Battery)
        ),
        (4, 6, 1)
    );
    for o in demo().outcomes.iter().filter(|o| o.rank.is_some()) {
        let e = o.energy.as_ref().expect("energy");
        let causes = loss_causes(e);
        let potential = e.potential_wh.iter().sum::<f64>() / 1000.0;
        let lost: f64 = causes.iter().map(|c| c.2).sum();
        // Source: energy balance (potential = Σ losses + delivered, method-accounting.md);
        // tolerance: 0.1 % as the JSON balance, plus half a Wh per cause dropped as rounding.
        assert!(
            (potential - lost - e.annual_delivered_kwh()).abs() <= 1e-3 * potential + 12.0 * 0.0005,
            "{}: {potential} − {lost} vs {}",
            o.layout.id,
            e.annual_delivered_kwh()
        );
        for d in DecidedBy::ALL {
            let party: f64 = causes.iter().filter(|c| c.0 == d).map(|c| c.2).sum();
            let steps: f64 = Step::ALL
                .iter()
                .filter(|s| s.decided_by() == d)
                .map(|&s| e.step_total_wh(s) / 1000.0)
                .sum();
            // Source: definition (the PWM clamp is part of the window and start-up step, so
            // splitting it off keeps each party's total); 7 × 0.5 Wh rounding.
            assert!(
                (party - steps).abs() <= 0.004,
                "{} {d:?}: {party} vs {steps}",
                o.layout.id
            );
        }
        let pwm = causes
            .iter()
            .find(|c| c.1.starts_with("PWM"))
            .expect("a PWM cause");
        // Source: definition (the PWM cause is the layout's PWM clamp share).
        assert!((pwm.2 - e.pwm_clamp_wh.iter().sum::<f64>() / 1000.0).abs() <= 0.0005);
    }
}

#[test]
fn hourly_rows_follow_the_weather_stamps_and_add_up_to_the_year() {
    let h = read_csv(HOURLY_CSV);
    let r = demo();
    let w = &r.loaded.weather;
    let ranked: Vec<_> = r.outcomes.iter().filter(|o| o.rank.is_some()).collect();
    // Source: output-files.md (one row per ranked layout and weather interval).
    assert_eq!(h.height(), w.len() * ranked.len());
    let (time, delivered) = (texts(&h, "time_local"), f64s(&h, "delivered_w"));
    assert_eq!(time[0], w.stamp_text(0));
    assert_eq!(time[w.len() - 1], w.stamp_text(w.len() - 1));
    assert_eq!(time[w.len()], w.stamp_text(0), "second layout starts again");
    let interval_h = w.interval_s as f64 / 3600.0;
    for (i, o) in ranked.iter().enumerate() {
        let kwh: f64 = delivered[i * w.len()..(i + 1) * w.len()]
            .iter()
            .map(|v| v.expect("power") * interval_h / 1000.0)
            .sum();
        let annual = o.energy.as_ref().expect("energy").annual_delivered_kwh();
        // Source: recomputed from the formula (Σ power × interval = energy); tolerance: the
        // 3-decimal rounding of 8760 cells (8760 × 0.0005 Wh = 0.0044 kWh) plus the f32
        // storage of the rows (relative 6e-8 of ≈ 1 MWh), rounded up to 0.005 kWh.
        assert!(
            (kwh - annual).abs() <= 0.005,
            "{}: {kwh} vs {annual}",
            o.layout.display_name()
        );
    }
}

#[test]
fn charts_are_png_and_svg_of_the_documented_size() {
    for stem in [
        "monthly_energy",
        "gain_map",
        "losses",
        "daily_soc",
        "monthly_unmet",
    ] {
        let png = fs::read(out_dir().join(format!("{stem}.png"))).expect("png");
        assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n", "{stem}.png magic");
        // Source: PNG specification (ISO/IEC 15948), IHDR width and height big-endian at
        // bytes 16..24; the size is the documented 1000 × 600 (output-files.md).
        let w = u32::from_be_bytes(png[16..20].try_into().expect("4 bytes"));
        let h = u32::from_be_bytes(png[20..24].try_into().expect("4 bytes"));
        assert_eq!((w, h), (1000, 600), "{stem}.png size");
        let svg = fs::read_to_string(out_dir().join(format!("{stem}.svg"))).expect("svg");
        assert!(svg.contains("<svg"), "{stem}.svg");
        // Source: output-files.md (documented size).
        assert!(
            svg.contains(r#"width="1000" height="600""#),
            "{stem}.svg size"
        );
        assert!(svg.trim_end().ends_with("</svg>"), "{stem}.svg is complete");
    }
}

#[test]
fn provenance_names_version_inputs_models_criterion_and_cautions() {
    let p = fs::read_to_string(out_dir().join(PROVENANCE_TXT)).expect("provenance");
    let r = demo();
    for needle in [
        env!("CARGO_PKG_VERSION"),
        r.loaded.plan_sha256.as_str(),
        r.loaded.weather_sha256.as_str(),
        "larchwood-2025.csv",
        "sky:             perez",
        "De Soto 2006",
        "group roof: King et al. 2004 (close-roof mounting, glass back)",
        "controller mppt: MPPT",
        "controller pwm: PWM",
        "ranking criterion: energy offered over the year",
        // Source: the demo plan's design temperatures (-20 °C, 34 °C), which the terminal
        // table prints too.
        "coldest air -20.0 °C, hottest air 34.0 °C",
        wirerank::design::cautions::CAUTIONS,
    ] {
        assert!(p.contains(needle), "provenance lacks {needle:?}:\n{p}");
    }
    // Source: FIPS 180-4 (SHA-256 digests are 256 bits = 64 hex digits).
    assert_eq!(r.loaded.plan_sha256.len(), 64);
    for f in [
        MONTHLY_CSV,
        SUMMARY_CSV,
        LOSSES_CSV,
        HOURLY_CSV,
        "gain_map.png",
    ] {
        assert!(p.contains(&format!("  {f}\n")), "{f} listed");
    }
}

#[test]
fn the_same_run_gives_the_same_bytes() {
    let tmp = tempfile::tempdir().expect("temporary folder");
    // A folder inside the temporary one, so that the lock file beside it goes with it.
    let dir = tmp.path().join("out");
    write_outputs(
        demo(),
        dir.as_path(),
        &ExportOptions {
            hourly: true,
            ..ExportOptions::default()
        },
    )
    .expect("written");
    for name in listing(&out_dir()) {
        let a = fs::read(out_dir().join(&name)).expect("first");
        let b = fs::read(dir.as_path().join(&name)).expect("second");
        assert!(a == b, "{name} differs between two writes of the same run");
    }
}

#[test]
fn unwritable_folder_is_an_output_error_and_leaves_nothing() {
    // Tests run as root, so permissions cannot stop a write: a folder under a regular file
    // can never be created.
    let dir = tempfile::tempdir().expect("temporary folder");
    let blocker = dir.path().join("blocker");
    fs::write(&blocker, "not a folder").expect("blocker file");
    let out = blocker.join("runs").join("one");
    match write_outputs(
        demo(),
        &out,
        &ExportOptions {
            hourly: true,
            ..ExportOptions::default()
        },
    ) {
        Err(Error::Output { path, .. }) => assert!(path.contains("blocker"), "{path}"),
        other => panic!("expected an output error, got {other:?}"),
    }
    assert_eq!(listing(dir.path()), BTreeSet::from(["blocker".to_string()]));
    assert_eq!(fs::read(&blocker).expect("blocker"), b"not a folder");
}

#[test]
fn a_folder_holding_other_files_is_refused_and_kept_whole() {
    // A folder where monthly.csv should go, and a file of the user's: replacing the folder
    // as a whole would lose them, so nothing is written (output-files.md, "How the files
    // are written").
    let dir = tempfile::tempdir().expect("temporary folder");
    fs::create_dir_all(dir.path().join(MONTHLY_CSV).join("keep")).expect("blocking folder");
    fs::write(dir.path().join("notes.txt"), "mine").expect("user file");
    match write_outputs(
        demo(),
        dir.path(),
        &ExportOptions {
            hourly: false,
            ..ExportOptions::default()
        },
    ) {
        Err(Error::Output { source, .. }) => {
            let m = source.to_string();
            assert!(
                m.contains("2 entries") && m.contains("monthly.csv and notes.txt"),
                "{m}"
            );
            assert!(m.contains("choose an empty or new folder"), "{m}");
        }
        other => panic!("expected an output error, got {other:?}"),
    }
    assert_eq!(
        listing(dir.path()),
        BTreeSet::from([MONTHLY_CSV.to_string(), "notes.txt".to_string()])
    );
    assert!(dir.path().join(MONTHLY_CSV).join("keep").is_dir());
    assert_eq!(
        fs::read(dir.path().join("notes.txt")).expect("kept"),
        b"mine"
    );
}

#[test]
fn refuses_to_write_over_the_plan_or_the_weather_file() {
    let dir = tempfile::tempdir().expect("temporary folder");
    for (name, what) in [(SUMMARY_CSV, "plan"), (LOSSES_CSV, "weather")] {
        let input = dir.path().join(name);
        fs::write(&input, "precious input").expect("input file");
        let mut r = demo().clone();
        if what == "plan" {
            r.loaded.plan.source = input.clone();
        } else {
            r.loaded.plan.weather_path = input.clone();
        }
        let err = write_outputs(&r, dir.path(), &ExportOptions::default())
            .expect_err("refuses to replace an input");
        let msg = err.to_string();
        assert!(matches!(err, Error::Output { .. }), "{msg}");
        assert!(msg.contains(name) && msg.contains(what), "{msg}");
        assert_eq!(fs::read(&input).expect("input"), b"precious input");
        assert_eq!(listing(dir.path()), BTreeSet::from([name.to_string()]));
        fs::remove_file(&input).expect("clean");
    }
}

#[test]
fn without_interval_rows_the_gain_map_is_skipped_and_hourly_csv_refused() {
    let mut r = demo().clone();
    for o in &mut r.outcomes {
        if let Some(e) = &mut o.energy {
            e.hourly.clear();
        }
    }
    let dir = tempfile::tempdir().expect("temporary folder");
    let out = dir.path().join("out");
    match write_outputs(
        &r,
        &out,
        &ExportOptions {
            hourly: true,
            ..ExportOptions::default()
        },
    ) {
        Err(Error::Usage(m)) => assert!(m.contains("hourly"), "{m}"),
        other => panic!("expected a usage error, got {other:?}"),
    }
    assert!(!out.exists(), "nothing is created when refusing");
    write_outputs(
        &r,
        &out,
        &ExportOptions {
            hourly: false,
            ..ExportOptions::default()
        },
    )
    .expect("written");
    let files = listing(&out);
    assert!(!files.contains("gain_map.png") && !files.contains(HOURLY_CSV));
    assert!(files.contains("monthly_energy.png") && files.contains("losses.svg"));
    let p = fs::read_to_string(out.join(PROVENANCE_TXT)).expect("provenance");
    assert!(p.contains("gain_map: not drawn"), "{p}");
}

/// wiring.csv lists every wired module of every candidate exactly once, numbered from 1
/// along each string, and every id is unique.
/// Source: definition (a layout wires each module at most once; common practice, no source).
#[test]
fn wiring_lists_every_used_module_exactly_once_per_layout() {
    let w = read_csv(WIRING_CSV);
    let (ids, modules) = (texts(&w, "id"), texts(&w, "module"));
    let positions = w
        .column("position")
        .expect("position")
        .i64()
        .expect("integers")
        .into_no_null_iter()
        .collect::<Vec<_>>();
    for o in &demo().outcomes {
        let mine: Vec<usize> = (0..ids.len()).filter(|&k| ids[k] == o.layout.id).collect();
        assert_eq!(mine.len(), o.layout.modules_used, "{}", o.layout.id);
        let mut seen: Vec<&str> = mine.iter().map(|&k| modules[k].as_str()).collect();
        seen.sort_unstable();
        seen.dedup();
        assert_eq!(seen.len(), mine.len(), "{}: a module twice", o.layout.id);
        assert!(mine.iter().all(|&k| positions[k] >= 1));
    }
}

/// The wiring diagram of the recommended layout exists as SVG and PNG and names every module
/// of the layout, the controller input and the figures the checks used.
/// Source: definition (what the diagram is for; common practice, no source).
#[test]
fn the_wiring_diagram_names_every_module_of_the_recommended_layout() {
    let r = demo();
    let rec = r.recommended().expect("a recommended layout");
    let stem = format!("wiring_{}", rec.layout.id);
    let svg = fs::read_to_string(out_dir().join(format!("{stem}.svg"))).expect("SVG written");
    let png = fs::read(out_dir().join(format!("{stem}.png"))).expect("PNG written");
    // Source: the PNG signature (ISO/IEC 15948, 8 bytes).
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    for w in rec.layout.wiring_rows(&r.loaded.plan) {
        // plotters writes each text on a line of its own between the tags.
        assert!(
            svg.lines().any(|l| l.trim() == w.module),
            "{} missing from {stem}.svg",
            w.module
        );
    }
    for needle in [
        "string Voc at",
        "1.25 × Isc",
        "voltage drop at STC",
        "battery",
    ] {
        assert!(svg.contains(needle), "{needle} missing");
    }
}
