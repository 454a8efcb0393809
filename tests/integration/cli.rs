//! The binary end to end: the demo, JSON, templates, exit codes and error messages.

use crate::support::{fixture, wirerank};
use std::path::{Path, PathBuf};
use std::process::Output;

fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

#[test]
fn demo_without_arguments_ranks_and_rejects_with_reasons() {
    let out = wirerank(&[]);
    assert_eq!(out.status.code(), Some(0), "stderr: {}", text(&out.stderr));
    let s = text(&out.stdout);
    // With a load the default criterion is unmet load; the report opens with the decision.
    assert!(s.contains("Ranked by unmet load"), "{s}");
    assert!(s.contains("Build L"), "{s}");
    assert!(s.contains("  Why: "), "{s}");
    // The demo's 4s2p string is too long for a cold morning on a 100 V controller.
    assert!(s.contains("cold-voc"), "{s}");
    assert!(s.contains("Rejected (never ranked)"), "{s}");
    assert!(s.contains("licensed professional"), "{s}");
    assert!(s.contains("    1  "), "a rank-1 row: {s}");
}

#[test]
fn json_output_follows_the_documented_schema_and_balances_energy() {
    let out = wirerank(&["rank", "demo", "--format", "json"]);
    assert_eq!(out.status.code(), Some(0), "stderr: {}", text(&out.stderr));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("stdout is only JSON");
    let layouts = v["layouts"].as_array().expect("layouts array");
    assert!(layouts.len() >= 6);
    let mut ranked = 0;
    let mut rejected = 0;
    for l in layouts {
        for key in [
            "name",
            "status",
            "rank",
            "reasons",
            "annual_kwh",
            "monthly_kwh",
            "low_sun_kwh",
            "awake_hours",
            "losses_kwh",
            "harvested_kwh",
            "curtailed_kwh",
            "used_kwh",
            "unmet_kwh",
            "unmet_days",
            "lowest_soc_pct",
        ] {
            assert!(l.get(key).is_some(), "layout lacks {key}: {l}");
        }
        match l["status"].as_str() {
            Some("ranked") => {
                ranked += 1;
                assert!(l["rank"].is_u64());
                let monthly = l["monthly_kwh"].as_array().expect("12 months");
                assert_eq!(monthly.len(), 12);
                let sum: f64 = monthly.iter().map(|m| m.as_f64().unwrap_or(f64::NAN)).sum();
                let annual = l["annual_kwh"].as_f64().unwrap_or(f64::NAN);
                // Source: common practice, no source (months add up to the year; each is
                // rounded to 0.001 kWh in the JSON).
                assert!((sum - annual).abs() < 0.01, "{sum} vs {annual}");
                // Energy balance (issue requirement): potential = Σ losses + delivered,
                // to 0.1 %.
                let potential = l["potential_kwh"].as_f64().unwrap_or(f64::NAN);
                let losses: f64 = l["losses_kwh"]
                    .as_object()
                    .expect("losses by step")
                    .values()
                    .map(|x| x.as_f64().unwrap_or(f64::NAN))
                    .sum();
                assert!(
                    ((losses + annual) / potential - 1.0).abs() < 1e-3,
                    "{} balance: {losses} + {annual} vs {potential}",
                    l["name"]
                );
                // Source: definition (json-output.md: harvested = annual + curtailed), to the
                // rounding of three numbers at 0.001.
                let f = |k: &str| l[k].as_f64().unwrap_or(f64::NAN);
                assert!((f("harvested_kwh") - annual - f("curtailed_kwh")).abs() < 0.002);
                // Source: the battery model's bounds (the demo's floor is 50 %).
                assert!((50.0..=100.0).contains(&f("lowest_soc_pct")));
            }
            Some("rejected") => {
                rejected += 1;
                assert!(l["rank"].is_null());
                assert!(!l["reasons"].as_array().expect("reasons").is_empty());
            }
            other => panic!("unexpected status {other:?}"),
        }
    }
    assert!(
        ranked >= 1 && rejected >= 1,
        "{ranked} ranked, {rejected} rejected"
    );
    // Source: json-output.md (the demo has a load and a battery, so both sizing answers
    // are given, for the best layout).
    let sizing = &v["sizing"];
    assert_eq!(sizing["battery"]["layout"], layouts[0]["name"]);
    assert!(sizing["battery"]["smallest_ah"].is_number(), "{sizing}");
    let modules = &sizing["modules"];
    assert_eq!(modules["layout"], layouts[0]["name"]);
    assert!(
        ["none_needed", "found", "not_reached"].contains(&modules["answer"].as_str().unwrap_or("")),
        "{modules}"
    );
}

#[test]
fn template_is_a_valid_plan() {
    let out = wirerank(&["template"]);
    assert_eq!(out.status.code(), Some(0));
    let plan =
        wirerank::io::plan_toml::parse_plan(&text(&out.stdout), "template.toml", Path::new(""));
    assert!(plan.is_ok(), "{:?}", plan.err());
}

/// `template > p.toml && rank p.toml` runs as it is beside the bundled samples.
#[cfg(unix)]
#[test]
fn the_template_ranks_as_written_beside_the_samples() {
    let dir = tempfile::tempdir().expect("temporary folder");
    std::os::unix::fs::symlink(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("weather-samples"),
        dir.path().join("weather-samples"),
    )
    .expect("link the samples");
    let plan = dir.path().join("p.toml");
    std::fs::write(&plan, wirerank(&["template"]).stdout).expect("write the plan");
    let out = wirerank(&["rank", plan.to_str().expect("utf-8"), "--quiet"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert!(
        text(&out.stdout).contains("Build L1"),
        "{}",
        text(&out.stdout)
    );
}

#[test]
fn sunpath_csv_has_the_documented_columns() {
    let out = wirerank(&[
        "sunpath",
        "--latitude-deg",
        "47.2",
        "--longitude-deg",
        "15",
        "--utc-offset-h",
        "1",
        "--date",
        "2025-03-20",
        "--step-min",
        "30",
        "--csv",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    let mut lines = s.lines();
    assert_eq!(
        lines.next(),
        Some("time_local,zenith_deg,elevation_deg,azimuth_deg")
    );
    let noon = s
        .lines()
        .find(|l| l.starts_with("2025-03-20T12:00"))
        .expect("a noon row");
    let field = |i: usize| -> f64 {
        noon.split(',')
            .nth(i)
            .and_then(|x| x.parse().ok())
            .expect("a number")
    };
    let (elev, azimuth) = (field(2), field(3));
    // Source: PyEphem 4.2.1 (general-purpose astronomy library, the reference of
    // tests/reference/sun_ephem.py): apparent altitude and azimuth of the sun at
    // 2025-03-20 11:00 UTC, 47.2° N, 15° E, 0 m, 1013.25 hPa, 12 °C (the command's
    // atmosphere): 42.82046°, 177.48737° (ephem.Sun(o).alt, .az). Tolerance 0.01°: PyEphem
    // and SPA differ by at most 0.0038° in apparent zenith with the sun above 5° (the
    // sun_ephem comparison), the CSV prints 4 decimals; here they differ by 0.0007°.
    assert!((elev - 42.82046).abs() <= 0.01, "{elev}");
    assert!((azimuth - 177.48737).abs() <= 0.01, "{azimuth}");
}

#[test]
fn bad_plans_name_the_key_and_exit_2() {
    let cases = [
        ("bad_plan_unknown_key.toml", "tilt_degree"),
        (
            "bad_plan_tilt_out_of_range.toml",
            "group.roof.tilt_deg = 120 is outside 0 to 90",
        ),
        ("bad_plan_unknown_module_in_layout.toml", "roof-9"),
        ("bad_plan_module_used_twice.toml", "twice"),
        ("bad_plan_series_mismatch.toml", "same series count"),
        ("bad_plan_vmp_above_voc.toml", "module_type.m120.vmp_v"),
        (
            "bad_plan_negative_cable_length.toml",
            "cables.string_lead_length_m",
        ),
        (
            "bad_plan_controller_current_zero.toml",
            "controller.mppt.max_input_a",
        ),
        (
            "bad_plan_unknown_controller_kind.toml",
            "controller.pwm.kind",
        ),
        ("bad_plan_not_toml.toml", "bad_plan_not_toml.toml:"),
        ("bad_plan_negative_load.toml", "load.daily_wh"),
        (
            "bad_plan_efficiency_out_of_range.toml",
            "battery.round_trip_efficiency_pct",
        ),
        ("bad_plan_unknown_chemistry.toml", "battery.chemistry"),
        ("bad_plan_capacity_zero.toml", "battery.capacity_ah"),
        ("bad_plan_horizon_out_of_order.toml", "site.horizon"),
        ("bad_plan_obstacle_negative_radius.toml", "obstacle[1]"),
        ("bad_plan_module_inside_obstacle.toml", "shed-1"),
    ];
    for (file, needle) in cases {
        let path = fixture(file);
        let out = wirerank(&["rank", path.to_str().expect("utf-8 path")]);
        let err = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{file}: {err}");
        assert!(err.starts_with("error: "), "{file}: {err}");
        assert!(err.contains(needle), "{file}: expected {needle:?} in {err}");
        assert!(
            err.contains(file),
            "{file}: the message names the file: {err}"
        );
        assert!(!err.contains("panicked"), "{file}: {err}");
        assert!(out.stdout.is_empty(), "{file}: nothing on stdout");
    }
}

#[test]
fn a_missing_plan_file_is_an_error_not_a_panic() {
    let out = wirerank(&["rank", "no-such-plan.toml"]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("no-such-plan.toml"));
}

#[test]
fn curve_of_a_module_at_stc_reproduces_the_datasheet() {
    let out = wirerank(&["curve", "demo", "--points", "5"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    // Source: the demo datasheet (invented): Vmp 18.2 V × Imp 6.60 A = 120.1 W; the fit must
    // reproduce Pmax within 0.5 % (notebooks-free-docs/method-diode.md).
    let p: f64 = s
        .split(" W ")
        .next()
        .and_then(|head| head.rsplit("= ").next())
        .and_then(|x| x.trim().parse().ok())
        .expect("MPP power printed");
    assert!((p / 120.12 - 1.0).abs() < 0.005, "{p}");
}

#[test]
fn curve_of_a_shaded_string_shows_two_maxima() {
    // The demo shades the lower substring of roof-1 on winter mornings (08–10 h): the 2s4p
    // layout's array then has a second, lower hump (bypass diode conducting).
    let out = wirerank(&[
        "curve",
        "demo",
        "--layout",
        "L1",
        "--at",
        "2025-01-15T09:00",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    assert!(s.contains("2 local power maxima"), "{s}");
    // The same layout by its rank (the recommended L1 ranks first on the demo).
    let by_rank = wirerank(&["curve", "demo", "--rank", "1", "--at", "2025-01-15T09:00"]);
    assert_eq!(by_rank.status.code(), Some(0), "{}", text(&by_rank.stderr));
    assert!(
        text(&by_rank.stdout).contains("layout L1 "),
        "{}",
        text(&by_rank.stdout)
    );
}

#[test]
fn curve_of_a_rejected_layout_says_so_and_a_bare_number_is_refused() {
    // L2 of the demo (4s2p) breaks cold-voc.
    let out = wirerank(&[
        "curve",
        "demo",
        "--layout",
        "L2",
        "--at",
        "2025-01-15T09:00",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert!(
        text(&out.stdout).contains("L2 is rejected"),
        "{}",
        text(&out.stdout)
    );
    let out = wirerank(&["curve", "demo", "--layout", "1", "--at", "2025-01-15T09:00"]);
    assert_eq!(out.status.code(), Some(2));
    let e = text(&out.stderr);
    assert!(e.contains("L1–L6") && e.contains("--rank"), "{e}");
}

#[test]
fn curve_rejects_an_unknown_stamp_naming_it() {
    let out = wirerank(&[
        "curve",
        "demo",
        "--layout",
        "L1",
        "--at",
        "2025-13-01T09:00",
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(text(&out.stderr).contains("2025-13-01T09:00"));
}

#[test]
fn a_plan_whose_weather_file_is_malformed_exits_2_naming_the_line() {
    let out = wirerank(&[
        "rank",
        fixture("plan_bad_weather.toml").to_str().expect("utf-8"),
    ]);
    let err = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("bad_weather_not_number.csv"), "{err}");
    assert!(err.contains("line"), "{err}");
}

#[test]
fn check_lists_every_layout_and_exits_1_when_none_passes() {
    let out = wirerank(&["check", "demo"]);
    assert_eq!(out.status.code(), Some(0));
    let s = text(&out.stdout);
    assert!(
        s.contains("reject  L2   mppt:4s2p") && s.contains("4 of 6 layouts pass"),
        "{s}"
    );
    let out = wirerank(&[
        "check",
        fixture("plan_nothing_passes.toml").to_str().expect("utf-8"),
    ]);
    assert_eq!(out.status.code(), Some(1), "{}", text(&out.stderr));
    // When nothing passes, the report says which limit rejects how many layouts and what
    // would lift it, and which plan option would admit more wirings.
    let s = text(&out.stdout);
    assert!(
        s.contains("cold-voc rejects 6 layouts: try fewer modules in series"),
        "{s}"
    );
    assert!(s.contains("layouts = \"all\""), "{s}");
}

#[test]
fn shade_report_lists_every_module_and_writes_shade_csv() {
    let tmp = tempfile::tempdir().expect("temp dir");
    // A folder inside the temporary one, so that the lock file beside it goes with it.
    let dir = tmp.path().join("out");
    let out = wirerank(&[
        "shade",
        "demo",
        "--out",
        dir.as_path().to_str().expect("utf-8"),
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    for id in ["roof-1", "roof-6", "shed-1", "shed-2"] {
        assert!(s.contains(id), "{id} in {s}");
    }
    let csv = std::fs::read_to_string(dir.as_path().join("shade.csv")).expect("shade.csv");
    assert!(csv.starts_with("module,month,direct_kwh_m2,direct_lost_kwh_m2,direct_lost_pct\n"));
    // 8 modules × 12 months + the header.
    assert_eq!(csv.lines().count(), 8 * 12 + 1);
    for line in csv.lines().skip(1) {
        let pct: f64 = line
            .rsplit(',')
            .next()
            .and_then(|x| x.parse().ok())
            .unwrap_or(0.0);
        // Source: definition — a share of the direct light lies in 0..=100 %.
        assert!((0.0..=100.0).contains(&pct), "{line}");
    }
}

#[test]
fn without_battery_model_or_load_the_battery_columns_are_empty_and_the_charts_skipped() {
    let tmp = tempfile::tempdir().expect("temp dir");
    // A folder inside the temporary one, so that the lock file beside it goes with it.
    let dir = tmp.path().join("out");
    let out = wirerank(&[
        "rank",
        fixture("plan_pwm_vs_mppt.toml").to_str().expect("utf-8"),
        "--quiet",
        "--out",
        dir.as_path().to_str().expect("utf-8"),
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let monthly = std::fs::read_to_string(dir.as_path().join("monthly.csv")).expect("monthly.csv");
    let header: Vec<&str> = monthly.lines().next().expect("header").split(',').collect();
    let row: Vec<&str> = monthly.lines().nth(1).expect("a row").split(',').collect();
    let cell = |name: &str| row[header.iter().position(|h| *h == name).expect(name)];
    // Source: output-files.md (no [load]: used, unmet and days are empty; no battery
    // model: no lowest state of charge, nothing curtailed, harvest = energy).
    for empty in ["used_kwh", "unmet_kwh", "unmet_days", "lowest_soc_pct"] {
        assert_eq!(cell(empty), "", "{empty} in {monthly}");
    }
    assert_eq!(cell("curtailed_kwh"), "0.000");
    assert_eq!(cell("harvested_kwh"), cell("energy_kwh"));
    let names: Vec<String> = std::fs::read_dir(dir.as_path())
        .expect("listing")
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .collect();
    assert!(!names
        .iter()
        .any(|n| n.starts_with("daily_soc") || n.starts_with("monthly_unmet")));
    let prov = std::fs::read_to_string(dir.as_path().join("provenance.txt")).expect("provenance");
    assert!(
        prov.contains("daily_soc: not drawn, the plan has no battery model"),
        "{prov}"
    );
    assert!(prov.contains("monthly_unmet: not drawn, the plan has no [load] table"));
    assert!(!text(&out.stdout).contains("Fewest extra modules"));
}

#[test]
fn top_limits_the_ranked_rows_and_says_how_many_are_hidden() {
    let out = wirerank(&["rank", "demo", "--top", "2"]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let s = text(&out.stdout);
    // Source: the demo ranks 4 layouts (golden report); 2 shown, 2 hidden.
    assert!(s.contains("… and 2 more ranked layouts"), "{s}");
    assert!(!s.contains("    4  "), "rank 4 is hidden: {s}");
}

#[test]
fn check_can_list_only_failing_or_only_passing_layouts() {
    let failing = text(&wirerank(&["check", "demo", "--failing"]).stdout);
    let passing = text(&wirerank(&["check", "demo", "--passing"]).stdout);
    // Source: the demo's 6 layouts, 2 rejected (golden check report).
    assert_eq!(failing.matches("\nreject  ").count(), 2, "{failing}");
    assert!(
        !failing.contains("\npass  ") && !failing.contains("\nwarn  "),
        "{failing}"
    );
    assert_eq!(passing.matches("\nreject  ").count(), 0, "{passing}");
    assert!(passing.contains("4 of 6 layouts pass"), "{passing}");
}

/// `--diagram ID` draws another layout's wiring besides the recommended one's; a three-input
/// plan draws every input.
#[test]
fn diagram_option_draws_a_chosen_layout_of_a_three_input_plan() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let out_dir = dir.path().join("r");
    let out = wirerank(&[
        "rank",
        fixture("plan_three_inputs.toml").to_str().expect("utf-8"),
        "--quiet",
        "--out",
        out_dir.to_str().expect("utf-8"),
        "--diagram",
        "L2",
    ]);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    let svg = std::fs::read_to_string(out_dir.join("wiring_L2.svg")).expect("L2 drawn");
    assert!(
        out_dir.join("wiring_L1.png").exists(),
        "the recommended layout too"
    );
    for input in ["in1 (MPPT", "in2 (MPPT", "pwm3 (PWM"] {
        assert!(svg.contains(input), "{input} missing");
    }
}

/// Messages speak of numbers and ranges, not of programming-language types and syntax.
#[test]
fn plan_errors_use_plain_words_for_types_and_ranges() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let p = dir.path().join("p.toml");
    let template = text(&wirerank(&["template"]).stdout);
    std::fs::write(
        &p,
        template.replace("latitude_deg = 47.2", "latitude_deg = \"north\""),
    )
    .expect("write");
    let e = text(&wirerank(&["check", p.to_str().expect("utf-8")]).stderr);
    assert!(e.contains("expected a number") && !e.contains("f64"), "{e}");
    std::fs::write(
        &p,
        template.replace("latitude_deg = 47.2", "latitude_deg = 95"),
    )
    .expect("write");
    let e = text(&wirerank(&["check", p.to_str().expect("utf-8")]).stderr);
    assert!(
        e.contains("is outside -90 to 90") && !e.contains("..="),
        "{e}"
    );
}

/// A plan written beside a link to the bundled samples, from the template with `edits`.
#[cfg(unix)]
fn template_plan_with(dir: &Path, edits: &[(&str, &str)]) -> PathBuf {
    let samples = dir.join("weather-samples");
    if !samples.exists() {
        std::os::unix::fs::symlink(
            Path::new(env!("CARGO_MANIFEST_DIR")).join("weather-samples"),
            samples,
        )
        .expect("link the samples");
    }
    let mut plan = text(&wirerank(&["template"]).stdout);
    for (from, to) in edits {
        assert!(plan.contains(from), "the template has {from:?}");
        plan = plan.replace(from, to);
    }
    let p = dir.join("p.toml");
    std::fs::write(&p, plan).expect("write the plan");
    p
}

/// −0.03 %/K is inside what a loose reading of the docs allows but outside what the fit
/// accepts: the message gives the enforced range in the plan's own units (%/K), without
/// the fit's V/K figure or its "is it given in %/K instead of V/K?" hint.
#[cfg(unix)]
#[test]
fn a_small_voc_coefficient_is_refused_in_the_plans_units() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let p = template_plan_with(
        dir.path(),
        &[("beta_voc_pct_k = -0.30", "beta_voc_pct_k = -0.03")],
    );
    let out = wirerank(&["check", p.to_str().expect("utf-8")]);
    let e = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{e}");
    assert!(
        e.contains("beta_voc_pct_k = -0.03 %/K is outside -1 to -0.05 %/K") && !e.contains("V/K"),
        "{e}"
    );
    assert!(!e.contains("0000000"), "no float noise: {e}");
}

/// A latitude given twice and differently names the plan's line and the weather file's line.
#[cfg(unix)]
#[test]
fn a_site_conflict_names_both_files_and_lines() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let p = template_plan_with(
        dir.path(),
        &[("latitude_deg = 47.2 ", "latitude_deg = 40.2 ")],
    );
    let out = wirerank(&["check", p.to_str().expect("utf-8")]);
    let e = text(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{e}");
    // Line 13 of the template holds latitude_deg; line 3 of the sample's header holds it.
    assert!(
        e.contains("p.toml line 13 says 40.2") && e.contains("larchwood-2025.csv line 3 says 47.2"),
        "{e}"
    );
}

/// `check` before there is a weather file: the plan's design temperatures stand in, and
/// the report says which temperatures it used; without them the error says what to add.
#[cfg(unix)]
#[test]
fn check_runs_without_a_weather_file_when_the_plan_gives_design_temperatures() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let p = template_plan_with(
        dir.path(),
        &[(
            "file = \"weather-samples/larchwood-2025.csv\"",
            "file = \"not-made-yet.csv\"",
        )],
    );
    let out = wirerank(&["check", p.to_str().expect("utf-8")]);
    let o = text(&out.stdout);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert!(
        o.contains("not-made-yet.csv not found; limits checked at the plan's design temperatures")
            && o.contains("limits checked at -20 °C (coldest) and 35 °C (hottest air)"),
        "{o}"
    );
    assert!(o.contains("pass"), "{o}");
    // rank still needs the weather.
    let out = wirerank(&["rank", p.to_str().expect("utf-8"), "--quiet"]);
    assert_eq!(out.status.code(), Some(2));
    // Without the design temperatures, check says what would let it run.
    let p = template_plan_with(
        dir.path(),
        &[
            (
                "file = \"weather-samples/larchwood-2025.csv\"",
                "file = \"not-made-yet.csv\"",
            ),
            ("design_min_air_c = -20 ", "# design_min_air_c = -20 "),
        ],
    );
    let out = wirerank(&["check", p.to_str().expect("utf-8")]);
    let e = text(&out.stderr);
    assert_ne!(out.status.code(), Some(0));
    assert!(
        e.contains("not-made-yet.csv")
            && e.contains("site.design_min_air_c and site.design_max_air_c"),
        "{e}"
    );
}

/// Values are echoed as the plan wrote them: a 25.6 V LiFePO4 bank prints as 25.6 V (not
/// 26 V) and chemistry names keep the plan's spelling.
#[cfg(unix)]
#[test]
fn the_report_echoes_battery_values_as_written() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let p = template_plan_with(
        dir.path(),
        &[
            ("nominal_v = 12 ", "nominal_v = 25.6 "),
            ("charge_v = 13.6 ", "charge_v = 28.8 "),
            ("# capacity_ah = 200", "capacity_ah = 100"),
            ("# chemistry = \"lead-acid\"", "chemistry = \"lifepo4\""),
        ],
    );
    let out = wirerank(&["rank", p.to_str().expect("utf-8"), "--quiet"]);
    let o = text(&out.stdout);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert!(o.contains("battery 100 Ah 25.6 V lifepo4"), "{o}");
    let p = template_plan_with(
        dir.path(),
        &[
            ("# capacity_ah = 200", "capacity_ah = 200"),
            ("# chemistry = \"lead-acid\"", "chemistry = \"lead-acid\""),
        ],
    );
    let o = text(&wirerank(&["rank", p.to_str().expect("utf-8"), "--quiet"]).stdout);
    assert!(
        o.contains("battery 200 Ah 12 V lead-acid") && !o.contains("lead_acid"),
        "{o}"
    );
}

/// The template's cell-temperature choice, as the template writes it.
#[cfg(unix)]
const TEMPLATE_THERMAL: &str = "thermal = \"king\"\n";
#[cfg(unix)]
const TEMPLATE_MOUNTING: &str = "mounting = \"open-rack\"";
#[cfg(unix)]
const TEMPLATE_BACK: &str = "back = \"polymer\"";

/// A plan in the first format's single `thermal` value still runs, with a warning on stderr
/// that names the file, line and key and gives the new keys; it ranks exactly as the new form.
#[cfg(unix)]
#[test]
fn an_old_thermal_value_runs_with_a_warning_giving_the_new_keys() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let old = template_plan_with(
        dir.path(),
        &[
            (
                TEMPLATE_THERMAL,
                "thermal = \"sandia-close-roof-glass-glass\"\n",
            ),
            (TEMPLATE_MOUNTING, "# mounting"),
            (TEMPLATE_BACK, "# back"),
        ],
    );
    let line = 1 + std::fs::read_to_string(&old)
        .expect("read")
        .lines()
        .position(|l| l.starts_with("thermal = "))
        .expect("a thermal line");
    let out_old = wirerank(&["rank", old.to_str().expect("utf-8"), "--format", "json"]);
    let e = text(&out_old.stderr);
    assert_eq!(out_old.status.code(), Some(0), "{e}");
    // Source: plan-format.md (the old form is read in this release with a warning giving
    // the three keys that replace it, naming the file, line and key).
    assert!(e.starts_with("warning: "), "{e}");
    assert!(e.contains(&format!("p.toml:{line}:")), "{e}");
    assert!(
        e.contains("group.roof.thermal")
            && e.contains(
                "thermal = \"king\", mounting = \"close-roof\", back = \"glass\" instead"
            ),
        "{e}"
    );
    // --quiet silences it like every other warning.
    let quiet = wirerank(&["rank", old.to_str().expect("utf-8"), "--quiet"]);
    assert_eq!(quiet.status.code(), Some(0));
    assert!(text(&quiet.stderr).is_empty(), "{}", text(&quiet.stderr));
    let new = template_plan_with(
        dir.path(),
        &[
            (TEMPLATE_MOUNTING, "mounting = \"close-roof\""),
            (TEMPLATE_BACK, "back = \"glass\""),
        ],
    );
    let out_new = wirerank(&["rank", new.to_str().expect("utf-8"), "--format", "json"]);
    assert_eq!(out_new.status.code(), Some(0), "{}", text(&out_new.stderr));
    assert!(
        !text(&out_new.stderr).contains("thermal"),
        "{}",
        text(&out_new.stderr)
    );
    // Source: definition (the old value names the same King 2004 set): the same layouts
    // with the same energies, and a different energy than the default open-rack set.
    let layouts = |o: &Output| -> serde_json::Value {
        let v: serde_json::Value = serde_json::from_slice(&o.stdout).expect("JSON");
        v["layouts"].clone()
    };
    assert_eq!(layouts(&out_old), layouts(&out_new));
    let default = template_plan_with(dir.path(), &[]);
    let out_default = wirerank(&["rank", default.to_str().expect("utf-8"), "--format", "json"]);
    assert_ne!(layouts(&out_default), layouts(&out_new));
    // The check command without the simulation gives the warning too.
    let old_check = template_plan_with(
        dir.path(),
        &[
            (
                TEMPLATE_THERMAL,
                "thermal = \"sandia-insulated-back-glass-polymer\"\n",
            ),
            (TEMPLATE_MOUNTING, "# mounting"),
            (TEMPLATE_BACK, "# back"),
        ],
    );
    let e = text(&wirerank(&["check", old_check.to_str().expect("utf-8")]).stderr);
    assert!(
        e.contains("mounting = \"insulated-back\", back = \"polymer\""),
        "{e}"
    );
}

/// Combinations King 2004 gives no set for, words it does not know, and keys that belong to
/// another model are refused with the file, the key and what to write instead.
#[cfg(unix)]
#[test]
fn thermal_choices_outside_king_2004_are_refused_with_the_sets_it_gives() {
    let dir = tempfile::tempdir().expect("temporary folder");
    type Edits<'a> = &'a [(&'a str, &'a str)];
    let cases: [(Edits, &[&str]); 5] = [
        (
            // Source: King et al. 2004, Table 1 (no close-roof set with a polymer back).
            &[(TEMPLATE_MOUNTING, "mounting = \"close-roof\"")],
            &[
                "group.roof.mounting = \"close-roof\" with back = \"polymer\"",
                "has no coefficient set in King et al. 2004",
                "open-rack with a glass back, close-roof with a glass back, open-rack with a polymer back, insulated-back with a polymer back",
            ],
        ),
        (
            // Source: King et al. 2004, Table 1 (no insulated-back set with a glass back);
            // the message says which of the two keys was left at its default.
            &[
                (TEMPLATE_MOUNTING, "mounting = \"insulated-back\""),
                (TEMPLATE_BACK, "back = \"glass\""),
            ],
            &["\"insulated-back\" with back = \"glass\" has no coefficient set"],
        ),
        (
            &[(TEMPLATE_MOUNTING, "mounting = \"roof\"")],
            &["group.roof.mounting = \"roof\" is not known; use open-rack, close-roof, insulated-back"],
        ),
        (
            &[(TEMPLATE_THERMAL, "thermal = \"noct\"\n")],
            &["group.roof.mounting is only used with thermal = \"king\" (here thermal = \"noct\")"],
        ),
        (
            &[(TEMPLATE_THERMAL, "thermal = \"sandia\"\n")],
            &["group.roof.thermal = \"sandia\" is not known; use king, faiman, noct"],
        ),
    ];
    for (edits, needles) in cases {
        let p = template_plan_with(dir.path(), edits);
        let out = wirerank(&["check", p.to_str().expect("utf-8")]);
        let e = text(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{edits:?}: {e}");
        assert!(e.starts_with("error: ") && e.contains("p.toml:"), "{e}");
        for n in needles {
            assert!(e.contains(n), "{edits:?}: expected {n:?} in {e}");
        }
    }
}
