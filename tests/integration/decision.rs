//! The decision: the recommendation, offered versus delivered energy, per-year figures and
//! the explanation of differences by cause.

use std::path::Path;
use std::process::Command;
use std::sync::OnceLock;

use crate::support::fixture;
use wirerank::commands::rank::simulate_and_rank;
use wirerank::commands::PlanSource;
use wirerank::results::explain::Cause;
use wirerank::results::RankResult;
use wirerank::sim::year::RunOptions;

fn run(source: PlanSource) -> RankResult {
    simulate_and_rank(&source, None, RunOptions::default()).expect("the plan runs")
}

fn demo() -> &'static RankResult {
    static DEMO: OnceLock<RankResult> = OnceLock::new();
    DEMO.get_or_init(|| run(PlanSource::Demo))
}

/// Low-sun energy is part of the energy it belongs to: offered within offered and delivered
/// within delivered, in every month of every ranked layout.
/// Source: definition (low-sun hours are a subset of all hours; common practice, no source).
fn check_low_sun_within_totals(r: &RankResult) {
    let mut checked = 0;
    for o in r.outcomes.iter().filter(|o| o.rank.is_some()) {
        let s = o.summary.as_ref().expect("a ranked layout has figures");
        for m in 0..12 {
            assert!(
                s.low_sun_offered_kwh[m] <= s.offered_kwh[m] + 1e-9,
                "{} month {}: low-sun offered {} > offered {}",
                o.layout.id,
                m + 1,
                s.low_sun_offered_kwh[m],
                s.offered_kwh[m]
            );
            assert!(
                s.low_sun_delivered_kwh[m] <= s.delivered_kwh[m] + 1e-9,
                "{} month {}: low-sun delivered {} > delivered {}",
                o.layout.id,
                m + 1,
                s.low_sun_delivered_kwh[m],
                s.delivered_kwh[m]
            );
            assert!(s.low_sun_delivered_kwh[m] >= -1e-9);
            checked += 1;
        }
    }
    assert!(checked >= 12);
}

#[test]
fn low_sun_never_exceeds_its_total_on_the_demo() {
    check_low_sun_within_totals(demo());
}

#[test]
fn low_sun_never_exceeds_its_total_with_a_tiny_battery() {
    // A 20 Ah battery is full most sunny hours: much of the low-sun harvest is turned away.
    let r = run(PlanSource::File(fixture("plan_tiny_battery.toml")));
    check_low_sun_within_totals(&r);
    let o = r
        .outcomes
        .iter()
        .find(|o| o.rank == Some(1))
        .expect("ranked");
    let s = o.summary.as_ref().expect("figures");
    assert!(s.annual_low_sun_delivered_kwh() < s.annual_low_sun_offered_kwh());
}

#[test]
fn the_demo_recommends_a_ranked_layout_and_explains_the_tie() {
    let r = demo();
    let rec = r.recommendation.as_ref().expect("a recommendation");
    let chosen = r.recommended().expect("the recommended layout exists");
    assert!(chosen.rank.is_some(), "the recommended layout is ranked");
    // The demo has a load: the default criterion is unmet load.
    assert_eq!(rec.criterion.key(), "unmet");
    let runner = rec.runner_up.as_ref().expect("a runner-up");
    assert_ne!(runner, &rec.layout);
    // Source: the demo's top layouts leave 0.6-0.9 kWh a year unmet on 7 days each (the
    // golden report), closer than the 0.5 % of the load the tie band allows: a tie, broken
    // by a named figure.
    assert!(rec.tie, "{rec:?}");
    assert!(rec.tie_break.is_some(), "{rec:?}");
    assert!(rec.reason.contains(&chosen.layout.display_name()));
}

/// The explanation lines add up: for every ranked layout the causes sum to its difference
/// in delivered energy from the recommended layout, and all but the full battery to its
/// difference in offered energy.
/// Source: definition (delivered = potential − Σ losses, per layout; the issue asks 0.1 kWh).
#[test]
fn differences_by_cause_add_up_to_the_difference() {
    let r = demo();
    let best = r
        .recommended()
        .and_then(|o| o.summary.as_ref())
        .expect("figures");
    let mut explained = 0;
    for o in r.outcomes.iter().filter(|o| o.rank.is_some()) {
        let s = o.summary.as_ref().expect("figures");
        if o.difference.is_empty() {
            assert_eq!(o.layout.id, r.recommendation.as_ref().unwrap().layout);
            continue;
        }
        let delivered: f64 = o.difference.iter().map(|(_, v)| v).sum();
        let offered: f64 = o
            .difference
            .iter()
            .filter(|(c, _)| *c != Cause::Curtailment)
            .map(|(_, v)| v)
            .sum();
        let d_del = s.annual_delivered_kwh() - best.annual_delivered_kwh();
        let d_off = s.annual_offered_kwh() - best.annual_offered_kwh();
        assert!(
            (delivered - d_del).abs() < 0.1,
            "{}: {delivered} vs {d_del}",
            o.layout.id
        );
        assert!(
            (offered - d_off).abs() < 0.1,
            "{}: {offered} vs {d_off}",
            o.layout.id
        );
        assert_eq!(o.difference.len(), Cause::ALL.len());
        explained += 1;
    }
    assert!(explained >= 3);
}

/// The demo's PWM layout loses to the recommended MPPT one mainly at the PWM clamp.
/// Source: physics of PWM charging (the array held at battery voltage, far below its maximum
/// power point; common practice, no source); the golden report shows about 39 kWh.
#[test]
fn the_pwm_layout_loses_most_to_the_pwm_clamp() {
    let r = demo();
    let pwm = r
        .outcomes
        .iter()
        .find(|o| o.layout.code.contains("pwm:"))
        .expect("the demo lists a PWM layout");
    let (cause, kwh) = pwm
        .difference
        .iter()
        .filter(|(c, _)| *c != Cause::Curtailment)
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .expect("causes");
    assert_eq!(*cause, Cause::PwmClamp, "{:?}", pwm.difference);
    assert!(*kwh < -20.0, "{kwh}");
}

#[test]
fn a_battery_without_a_load_is_simulated_ranked_on_offered_energy_and_noted() {
    let r = run(PlanSource::File(fixture("plan_huge_battery.toml")));
    assert!(r.loaded.plan.consumption.is_none());
    assert!(r.loaded.plan.battery.model.is_some());
    assert_eq!(r.criterion.key(), "annual");
    let ranked: Vec<_> = r.outcomes.iter().filter(|o| o.rank.is_some()).collect();
    assert!(ranked.len() >= 2);
    for w in ranked.windows(2) {
        let (a, b) = (
            w[0].summary.as_ref().unwrap(),
            w[1].summary.as_ref().unwrap(),
        );
        assert!(a.annual_offered_kwh() >= b.annual_offered_kwh());
        assert!(a.annual_offered_kwh() > 0.0, "never a silent 0 kWh");
    }
    let text = wirerank::io::terminal::ranking(&r);
    assert!(text.contains("battery model but no [load]"), "{text}");
}

#[test]
fn several_years_of_weather_report_per_year_figures() {
    let two = run(PlanSource::File(fixture("plan_two_years.toml")));
    assert!((two.years - 2.0).abs() < 0.01, "{}", two.years);
    let one = demo();
    // Source: the file's construction — the demo year, then the same year with 15 % less
    // sunshine — so the mean year offers about 7.5 % less than the demo's single year (a
    // little more or less: energy is not proportional to sunshine), never twice as much.
    let id = &one.recommendation.as_ref().unwrap().layout;
    let a = one
        .outcomes
        .iter()
        .find(|o| &o.layout.id == id)
        .and_then(|o| o.summary.as_ref())
        .unwrap();
    let b = two
        .outcomes
        .iter()
        .find(|o| &o.layout.id == id)
        .and_then(|o| o.summary.as_ref())
        .unwrap();
    let ratio = b.annual_offered_kwh() / a.annual_offered_kwh();
    assert!(
        (0.85..0.97).contains(&ratio),
        "per-year offered ratio {ratio}"
    );
    let text = wirerank::io::terminal::ranking(&two);
    assert!(text.contains("the mean of the 2.0 years"), "{text}");
}

#[test]
fn json_has_a_recommendation_ids_and_offered_and_delivered() {
    let out = Command::new(env!("CARGO_BIN_EXE_wirerank"))
        .args(["rank", "demo", "--format", "json"])
        .env_remove("RUST_BACKTRACE")
        .output()
        .expect("runs");
    assert_eq!(out.status.code(), Some(0));
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("JSON");
    let rec = &v["recommendation"];
    for key in [
        "layout",
        "criterion",
        "reason",
        "runner_up",
        "tie",
        "tie_break",
    ] {
        assert!(
            rec.get(key).is_some(),
            "recommendation.{key} missing: {rec}"
        );
    }
    let layouts = v["layouts"].as_array().expect("layouts");
    let ids: std::collections::BTreeSet<&str> = layouts
        .iter()
        .map(|l| l["id"].as_str().expect("id"))
        .collect();
    assert_eq!(ids.len(), layouts.len(), "ids are unique");
    assert!(ids.contains(rec["layout"].as_str().unwrap()));
    for l in layouts.iter().filter(|l| l["status"] == "ranked") {
        let (off, del) = (
            l["offered_kwh"].as_f64().unwrap(),
            l["delivered_kwh"].as_f64().unwrap(),
        );
        assert!(del <= off + 1e-9, "delivered {del} above offered {off}");
    }
}

#[test]
fn the_report_names_months_and_opens_with_the_decision() {
    let text = wirerank::io::terminal::ranking(demo());
    let first_block: String = text.lines().take(12).collect::<Vec<_>>().join("\n");
    assert!(first_block.contains("Build "), "{first_block}");
    assert!(first_block.contains("Why: "), "{first_block}");
    // Worst months by name ("23.9 Dec"), never a bare initial.
    assert!(
        text.lines()
            .any(|l| l.contains(" Dec ") || l.contains(" Jan ") || l.contains(" Nov ")),
        "{text}"
    );
}

/// A group facing north at 47° N gets far less than the horizontal sunlight: the report and
/// stderr say so.
/// Source: geometry of the sun's path (a plane tilted 40° towards the pole at 47° N sees
/// well under the horizontal insolation; common practice, no source).
#[test]
fn a_plane_facing_away_from_the_sun_is_flagged() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let weather = Path::new(env!("CARGO_MANIFEST_DIR")).join("weather-samples/larchwood-2025.csv");
    let plan = wirerank::commands::load::DEMO_PLAN
        .replace(
            "file = \"larchwood-2025.csv\"",
            &format!("file = {:?}", weather.to_str().expect("utf-8")),
        )
        .replacen("azimuth_deg = 180", "azimuth_deg = 0", 1);
    let path = dir.path().join("north.toml");
    std::fs::write(&path, plan).expect("write");
    let out = Command::new(env!("CARGO_BIN_EXE_wirerank"))
        .args(["rank", path.to_str().expect("utf-8")])
        .env_remove("RUST_BACKTRACE")
        .output()
        .expect("runs");
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let stdout = String::from_utf8_lossy(&out.stdout);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(
        stdout.contains("faces away from the sun's path"),
        "{stdout}"
    );
    assert!(stderr.contains("group roof"), "{stderr}");
    // The demo as written (south roof, south-west shed wall) is not flagged.
    assert!(!wirerank::io::terminal::ranking(demo()).contains("faces away"));
}
