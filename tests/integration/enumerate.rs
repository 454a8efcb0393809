//! Enumeration of every wiring (`layouts = "all"`).

use std::path::Path;

use wirerank::design::candidates::{
    enumerate, enumerate_pruned, TooManyLayouts, MAX_CANDIDATES, MAX_CHOICES_SKIPPED,
};
use wirerank::design::rules::{input_hard_limit, DesignTemperatures};
use wirerank::input::plan::{EnumerateOptions, Plan};
use wirerank::io::plan_toml::parse_plan;

/// A plan with the given groups (name, count, azimuth) and controller inputs, no listed layouts.
/// Inputs differ in their main-run length (so they are not interchangeable) unless their
/// names start with "same".
fn plan(groups: &[(&str, usize, f64)], inputs: &[&str]) -> Plan {
    let mut t = String::from(
        r#"layouts = "all"
[weather]
file = "unused.csv"
[module_type.m]
pmax_w = 120
voc_v = 22.4
isc_a = 7.05
vmp_v = 18.2
imp_a = 6.60
alpha_isc_pct_k = 0.05
beta_voc_pct_k = -0.30
gamma_pmax_pct_k = -0.40
cells_in_series = 36
bypass_diodes = 2
noct_c = 45
length_m = 1.2
width_m = 0.54
max_system_v = 1000
max_series_fuse_a = 15
[battery]
nominal_v = 12
[cables]
string_lead_length_m = 5
string_lead_mm2 = 4
"#,
    );
    for (name, count, az) in groups {
        t.push_str(&format!(
            "[group.{name}]\nmodule_type = \"m\"\ncount = {count}\ntilt_deg = 30\nazimuth_deg = {az}\n"
        ));
    }
    for (k, c) in inputs.iter().enumerate() {
        let run_m = if c.starts_with("same") { 5 } else { 5 + k };
        t.push_str(&format!(
            "[controller.{c}]\nkind = \"mppt\"\nmax_input_v = 150\nmax_input_a = 50\nmax_charge_a = 40\nmppt_min_v = 15\nmain_run_length_m = {run_m}\nmain_run_mm2 = 10\n"
        ));
    }
    parse_plan(&t, "test plan", Path::new("")).expect("test plan is valid")
}

#[test]
fn twelve_modules_on_one_input_give_the_six_divisor_layouts() {
    // Source: common practice, no source — s·p = 12 has exactly the divisor pairs
    // 1×12, 2×6, 3×4, 4×3, 6×2, 12×1.
    let p = plan(&[("roof", 12, 180.0)], &["mppt"]);
    let found = enumerate(&p, EnumerateOptions::default()).expect("tractable");
    let mut codes: Vec<String> = found.iter().map(|l| l.code.clone()).collect();
    codes.sort();
    assert_eq!(codes, ["12s1p", "1s12p", "2s6p", "3s4p", "4s3p", "6s2p"]);
}

#[test]
fn two_inputs_count_matches_the_hand_count() {
    // Source: hand count — 4 modules over inputs A and B (either may stay empty, not both,
    // every module used): splits (nA, nB) = (0,4) (1,3) (2,2) (3,1) (4,0) give
    // d(0)·d(4) + d(1)·d(3) + d(2)·d(2) + d(3)·d(1) + d(4)·d(0) with d(0) = 1 (empty),
    // d(1) = 1, d(2) = 2, d(3) = 2, d(4) = 3: 3 + 2 + 4 + 2 + 3 = 14.
    let p = plan(&[("roof", 4, 180.0)], &["a", "b"]);
    let found = enumerate(&p, EnumerateOptions::default()).expect("tractable");
    assert_eq!(found.len(), 14);
    // Two inputs with the same hardware are interchangeable: unordered pairs remain —
    // {4, 0}: 3; {1, 3}: 1·2 = 2; {2, 2}: pairs with repetition from 2 choices = 3 → 8.
    let same = plan(&[("roof", 4, 180.0)], &["same_a", "same_b"]);
    assert_eq!(
        enumerate(&same, EnumerateOptions::default())
            .expect("ok")
            .len(),
        8
    );
    // No layout appears twice.
    for (i, x) in found.iter().enumerate() {
        for y in &found[i + 1..] {
            assert_ne!(x.canonical(), y.canonical());
        }
    }
}

#[test]
fn mixed_strings_only_when_allowed_and_marked() {
    // Source: hand count — groups of 2 (east) and 2 (west) on one input, all used, no mixing:
    // s = 1: 4 strings (1 way); s = 2: one string from each group (1 way) → 2 layouts.
    // With mixing: + s = 2 with (1 east + 1 west) × p = 2; s = 4: (2 + 2) × 1; s = 3 cannot
    // use all four; s = 1 compositions are single-group only → 4 layouts.
    let p = plan(&[("east", 2, 90.0), ("west", 2, 270.0)], &["mppt"]);
    let plain = enumerate(&p, EnumerateOptions::default()).expect("tractable");
    assert_eq!(plain.len(), 2);
    assert!(plain.iter().all(|l| !l.mixed_orientation));
    let mixed = enumerate(
        &p,
        EnumerateOptions {
            allow_mixed_orientation: true,
            allow_unused_modules: false,
        },
    )
    .expect("tractable");
    assert_eq!(mixed.len(), 4);
    assert_eq!(mixed.iter().filter(|l| l.mixed_orientation).count(), 2);
}

#[test]
fn unused_modules_only_when_allowed() {
    // Source: hand count — 3 modules, one input: all used → 1s3p, 3s1p (2); with unused
    // allowed: + 1s1p, 1s2p, 2s1p (any s·p ≤ 3) → 5.
    let p = plan(&[("roof", 3, 180.0)], &["mppt"]);
    assert_eq!(
        enumerate(&p, EnumerateOptions::default())
            .expect("ok")
            .len(),
        2
    );
    let with_unused = enumerate(
        &p,
        EnumerateOptions {
            allow_unused_modules: true,
            allow_mixed_orientation: false,
        },
    )
    .expect("ok");
    assert_eq!(with_unused.len(), 5);
}

#[test]
fn forty_modules_on_four_inputs_stay_tractable() {
    // Source: the issue's bound (≤ 40 modules, ≤ 4 inputs must stay tractable).
    let p = plan(&[("south", 12, 180.0), ("west", 12, 270.0)], &["a", "b"]);
    let n = enumerate(&p, EnumerateOptions::default())
        .expect("24 modules, 2 inputs")
        .len();
    eprintln!("24 modules, 2 inputs: {n} candidates");
    // 40 modules on 4 interchangeable inputs, enumerated as the ranking command does: input
    // choices that break a hard limit on their own are skipped (here input current: at most
    // 5 strings of 7.05 A per 50 A input; cold Voc: at most 6 modules per 150 V input at
    // −10 °C). Without that pruning the walk passes the 20 000-candidate cap. Measured
    // (debug build, 2-core machine): 10 072 candidates in about 12 s. Any error fails.
    let p = plan(
        &[("south", 24, 180.0), ("west", 16, 270.0)],
        &["same_a", "same_b", "same_c", "same_d"],
    );
    let temps = DesignTemperatures {
        min_air_c: -10.0,
        max_air_c: 40.0,
    };
    let (found, pruned) = enumerate_pruned(&p, EnumerateOptions::default(), &|p, d| {
        input_hard_limit(p, &temps, d)
    })
    .unwrap_or_else(|e| panic!("40 modules, 4 inputs: {}", e.advice(&p)));
    eprintln!(
        "40 modules, 4 inputs: {} candidates, pruned {pruned:?}",
        found.len()
    );
    assert!(!found.is_empty() && found.len() <= MAX_CANDIDATES);
    assert!(found.iter().all(|l| l.modules_used == 40));
}

/// Every candidate of the 20-module enumeration has its own id, even where codes repeat, and
/// layouts that share a code differ in their wiring lists.
/// Source: definition (ids are the join key of every file; common practice, no source).
#[test]
fn ids_are_unique_on_the_20_module_enumeration_and_shared_codes_differ_in_wiring() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/plan_20_modules.toml");
    let text = std::fs::read_to_string(&path).expect("fixture");
    let p = parse_plan(&text, "plan_20_modules.toml", &path).expect("parses");
    let temps = DesignTemperatures {
        min_air_c: -20.0,
        max_air_c: 34.0,
    };
    let c = wirerank::design::candidates::candidate_layouts(&p, &temps).expect("tractable");
    assert!(c.layouts.len() > 50, "{} candidates", c.layouts.len());
    let ids: std::collections::BTreeSet<&str> = c.layouts.iter().map(|l| l.id.as_str()).collect();
    assert_eq!(ids.len(), c.layouts.len(), "ids are unique");
    assert!(ids.iter().all(|id| id.is_ascii()), "ASCII-safe join keys");
    let mut shared = 0;
    for (i, a) in c.layouts.iter().enumerate() {
        for b in &c.layouts[i + 1..] {
            if a.code == b.code {
                shared += 1;
                assert_ne!(a.wiring_rows(&p), b.wiring_rows(&p), "{} {}", a.id, b.id);
            }
        }
    }
    assert!(
        shared > 0,
        "the fixture repeats codes (it exists to test that)"
    );
}

/// Four orientation groups of 15 modules on two inputs where almost every choice breaks a
/// limit: the walk used to skip hundreds of millions of choices for a handful of layouts.
/// It now stops after [`MAX_CHOICES_SKIPPED`] choices with advice that names only the
/// options that are on (here neither enumerate option is, so neither is suggested).
/// Source: definition (the budget), common practice, no source.
#[test]
fn a_walk_that_mostly_skips_stops_at_its_budget_with_advice() {
    let p = plan(
        &[
            ("a", 15, 180.0),
            ("b", 15, 90.0),
            ("c", 15, 270.0),
            ("d", 15, 200.0),
        ],
        &["in1", "in2"],
    );
    let temps = DesignTemperatures {
        min_air_c: -10.0,
        max_air_c: 40.0,
    };
    let e = enumerate_pruned(&p, EnumerateOptions::default(), &|p, d| {
        input_hard_limit(p, &temps, d)
    })
    .expect_err("60 modules in 4 groups cannot be walked within the budget");
    assert_eq!(
        e,
        TooManyLayouts::Choices {
            limit: MAX_CHOICES_SKIPPED
        }
    );
    let advice = e.advice(&p);
    assert!(
        advice.contains("[[layout]]")
            && advice.contains("merge orientation groups")
            && !advice.contains("allow_unused_modules")
            && !advice.contains("allow_mixed_orientation"),
        "{advice}"
    );
    // With the options on, the advice names them.
    let mut q = p.clone();
    q.enumerate.allow_unused_modules = true;
    assert!(e.advice(&q).contains("allow_unused_modules = false"));
}
