//! Plans with a battery model and many layouts: every passing layout is screened on the
//! energy offered at the fixed charging voltage, and the battery-coupled year runs for the
//! best `model.coupled_layouts` (issue 14; notebooks-free-docs/method-battery.md,
//! "Screening").

use crate::support::{edited, stdout_ok, wirerank};
use wirerank::commands::rank::simulate_and_rank;
use wirerank::commands::PlanSource;
use wirerank::results::rank::Criterion;
use wirerank::results::RankResult;
use wirerank::sim::year::RunOptions;

const PLAN: &str = "plan_screening_battery.toml";

fn rank(coupled: &str, criterion: Option<Criterion>) -> RankResult {
    let (_dir, path) = edited(PLAN, &[("coupled_layouts = 12", coupled)]);
    simulate_and_rank(
        &PlanSource::File(path),
        criterion,
        RunOptions {
            parallel: true,
            ..RunOptions::default()
        },
    )
    .expect("the plan runs")
}

fn passing(r: &RankResult) -> usize {
    r.outcomes.iter().filter(|o| !o.rejected()).count()
}

/// Screening keeps the layouts that the battery-coupled year ranks first: with 12 of 119
/// kept, the recommendation is the one a coupled year of all 119 gives, and every kept
/// layout's figures are those of the full run, bit for bit (the coupled year of a layout
/// does not depend on which others run). Checked for the default criterion (unmet load)
/// and for annual offered energy. Source: self-consistency (common practice, no source).
#[test]
fn screening_keeps_the_coupled_best() {
    for criterion in [None, Some(Criterion::Annual)] {
        let screened = rank("coupled_layouts = 12", criterion);
        let full = rank("coupled_layouts = 100000", criterion);
        let s = screened
            .screening
            .as_ref()
            .expect("the layouts were screened");
        assert_eq!((s.screened, s.coupled), (119, 12), "{criterion:?}");
        assert_eq!(s.charge_v, 13.6, "the plan's charge_v");
        assert!(full.screening.is_none());
        assert_eq!(passing(&screened), 12);
        assert_eq!(passing(&full), 119);
        let rec = |r: &RankResult| r.recommendation.as_ref().map(|x| x.layout.clone());
        assert_eq!(rec(&screened), rec(&full), "{criterion:?}");
        for o in screened.outcomes.iter().filter(|o| !o.rejected()) {
            let f = full
                .outcomes
                .iter()
                .find(|x| x.layout.id == o.layout.id)
                .expect("the full run has every layout");
            assert_eq!(o.layout.inputs, f.layout.inputs);
            assert_eq!(o.energy, f.energy, "{}", o.layout.id);
        }
    }
}

/// A layout the plan lists is never screened out, however little it offers: only
/// enumerated layouts are. Source: the rule is ours (method-battery.md, "Screening").
#[test]
fn listed_layouts_are_never_screened_out() {
    let (_dir, path) = edited(
        PLAN,
        &[(
            "allow_mixed_orientation = true",
            "allow_mixed_orientation = true\n\n[[layout]]\nname = \"east only\"\nstrings.in1 = [[\"east-1\", \"east-2\", \"east-3\", \"east-4\"]]",
        )],
    );
    let r = simulate_and_rank(
        &PlanSource::File(path),
        Some(Criterion::Annual),
        RunOptions {
            parallel: true,
            ..RunOptions::default()
        },
    )
    .expect("the plan runs");
    let s = r
        .screening
        .as_ref()
        .expect("the enumerated layouts were screened");
    assert_eq!((s.screened, s.coupled), (119, 12));
    let listed = r
        .outcomes
        .iter()
        .find(|o| o.layout.id == "L1")
        .expect("the listed layout is in the ranking");
    assert!(listed.rank.is_some(), "and ranked");
    assert_eq!(passing(&r), 13, "12 enumerated and the listed one");
}

/// The terminal report says how many layouts were screened and how many coupled.
/// Source: the wording is ours (no source).
#[test]
fn the_report_says_what_was_screened() {
    let (_dir, path) = edited(PLAN, &[]);
    let text = stdout_ok(&["rank", path.to_str().expect("utf-8 path"), "--top", "3"]);
    assert!(text.contains("119 candidate layouts"), "{text}");
    assert!(
        text.contains(
            "screening: 119 passing enumerated layouts were simulated charging at a fixed 13.6 V; the best 12"
        ),
        "{text}"
    );
    let json = stdout_ok(&[
        "rank",
        path.to_str().expect("utf-8 path"),
        "--format",
        "json",
    ]);
    let v: serde_json::Value = serde_json::from_str(&json).expect("json");
    assert_eq!(v["screening"]["screened_layouts"], 119);
    assert_eq!(v["screening"]["coupled_layouts"], 12);
}

/// `model.coupled_layouts` takes a whole number from 1 to 100000.
/// Source: the plan format (notebooks-free-docs/plan-format.md).
#[test]
fn coupled_layouts_is_a_whole_number() {
    for (value, expect) in [
        ("2.5", "must be a whole number"),
        ("0", "model.coupled_layouts"),
    ] {
        let (_dir, path) = edited(
            PLAN,
            &[(
                "coupled_layouts = 12",
                &format!("coupled_layouts = {value}"),
            )],
        );
        let out = wirerank(&["check", path.to_str().expect("utf-8 path")]);
        assert!(!out.status.success(), "{value} refused");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains(expect), "{value}: {err}");
    }
}
