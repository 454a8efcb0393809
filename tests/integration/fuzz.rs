//! Property-based fuzzing of the three input readers: the plan parser, the weather CSV reader
//! and the typical-year importer (issue 17). Inputs are valid files mutated (bit flips, lines
//! dropped, doubled or swapped, numbers swapped for extremes such as 1e308, -0, nan, inf and
//! huge integers, keys renamed, truncation, inserted bytes including control characters) and
//! random text from each format's own tokens.
//!
//! The property: the reader never panics; it returns a value whose numbers are finite, or an
//! error whose message is non-empty and holds no raw control character.
//!
//! Bounded in `cargo test` (`FUZZ_CASES_DEFAULT` cases per target, deterministic seed); longer
//! on demand with `WIRERANK_FUZZ_CASES=N` or `WIRERANK_FUZZ_SECONDS=S` (random seeds, one
//! target at a time with `--exact`), as DEVELOPERS.md shows. A case that ever fails is kept
//! as a fixed regression case in `REGRESSIONS` below.

use std::path::Path;
use std::time::{Duration, Instant};

use proptest::prelude::*;
use proptest::test_runner::{Config, TestCaseError, TestRunner};

/// Cases per target in a plain `cargo test` run (each target stays well under 20 s in a
/// release build).
const FUZZ_CASES_DEFAULT: u32 = 2000;

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

fn fixture(name: &str) -> String {
    std::fs::read_to_string(root().join("tests/fixtures").join(name)).expect("fixture reads")
}

/// Numbers a mutation may put in place of a number (or any token that starts with a digit).
const EXTREMES: [&str; 20] = [
    "1e308",
    "-1e308",
    "1e309",
    "-0",
    "-0.0",
    "nan",
    "NaN",
    "inf",
    "-inf",
    "+inf",
    "9223372036854775807",
    "-9223372036854775808",
    "99999999999999999999999",
    "0",
    "4.9e-324",
    "1e-320",
    "0x10",
    "1_000",
    "",
    "1.7976931348623157e308",
];

/// Keys of every format, for renames (a key of another table, another format, or a typo).
const KEYS: [&str; 24] = [
    "footprint_m",
    "radius_m",
    "east_m",
    "height_m",
    "daily_wh",
    "capacity_ah",
    "count",
    "tilt_deg",
    "kind",
    "strings",
    "layouts",
    "horizon",
    "ghi_w_m2",
    "dni_w_m2",
    "dhi_w_m2",
    "air_temp_c",
    "time_local",
    "interval_min",
    "stamp",
    "utc_offset_h",
    "LOCATION",
    "DATA PERIODS",
    "module_type",
    "x",
];

/// One edit of a text; positions are taken modulo the text's length, line or token count.
#[derive(Clone, Debug)]
enum Mutation {
    FlipBit(usize, u8),
    DropLine(usize),
    DuplicateLine(usize),
    SwapLines(usize, usize),
    Extreme(usize, usize),
    RenameKey(usize, usize),
    Truncate(usize),
    Insert(usize, Vec<u8>),
}

fn mutation() -> impl Strategy<Value = Mutation> {
    prop_oneof![
        (any::<usize>(), 0u8..8).prop_map(|(p, b)| Mutation::FlipBit(p, b)),
        any::<usize>().prop_map(Mutation::DropLine),
        any::<usize>().prop_map(Mutation::DuplicateLine),
        (any::<usize>(), any::<usize>()).prop_map(|(a, b)| Mutation::SwapLines(a, b)),
        (any::<usize>(), 0..EXTREMES.len()).prop_map(|(p, e)| Mutation::Extreme(p, e)),
        (any::<usize>(), 0..KEYS.len()).prop_map(|(p, k)| Mutation::RenameKey(p, k)),
        any::<usize>().prop_map(Mutation::Truncate),
        (
            any::<usize>(),
            prop::collection::vec(
                prop_oneof![
                    Just(0u8),
                    Just(0x1b),
                    Just(b'\n'),
                    Just(b'\r'),
                    Just(b','),
                    Just(b'"'),
                    Just(b'['),
                    Just(b'='),
                    Just(0xff),
                    Just(0xc2),
                    Just(0x9b),
                    any::<u8>()
                ],
                1..8
            )
        )
            .prop_map(|(p, b)| Mutation::Insert(p, b)),
    ]
}

/// Byte ranges of the tokens that start with a digit (or a sign before one), to end at the
/// next separator.
fn number_tokens(b: &[u8]) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    let mut i = 0;
    while i < b.len() {
        let starts = b[i].is_ascii_digit()
            || ((b[i] == b'-' || b[i] == b'+') && b.get(i + 1).is_some_and(u8::is_ascii_digit));
        let after_word = i > 0 && (b[i - 1].is_ascii_alphanumeric() || b[i - 1] == b'_');
        if starts && !after_word {
            let start = i;
            i += 1;
            while i < b.len() && (b[i].is_ascii_alphanumeric() || b"._+-:".contains(&b[i])) {
                i += 1;
            }
            out.push((start, i));
        } else {
            i += 1;
        }
    }
    out
}

/// Byte ranges of words of at least three letters, digits or `_` that start with a letter.
fn key_tokens(b: &[u8]) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    let mut i = 0;
    while i < b.len() {
        if b[i].is_ascii_alphabetic() && (i == 0 || !(b[i - 1].is_ascii_alphanumeric())) {
            let start = i;
            while i < b.len() && (b[i].is_ascii_alphanumeric() || b[i] == b'_') {
                i += 1;
            }
            if i - start >= 3 {
                out.push((start, i));
            }
        } else {
            i += 1;
        }
    }
    out
}

fn splice(b: &mut Vec<u8>, (s, e): (usize, usize), with: &[u8]) {
    b.splice(s..e, with.iter().copied());
}

fn apply(mut b: Vec<u8>, m: &Mutation) -> Vec<u8> {
    let lines =
        |b: &[u8]| -> Vec<Vec<u8>> { b.split(|&c| c == b'\n').map(<[u8]>::to_vec).collect() };
    match m {
        Mutation::FlipBit(p, bit) if !b.is_empty() => {
            let n = b.len();
            b[p % n] ^= 1 << bit;
        }
        Mutation::DropLine(p) => {
            let mut l = lines(&b);
            let n = l.len();
            l.remove(p % n);
            b = l.join(&b'\n');
        }
        Mutation::DuplicateLine(p) => {
            let mut l = lines(&b);
            let n = l.len();
            let dup = l[p % n].clone();
            l.insert(p % n, dup);
            b = l.join(&b'\n');
        }
        Mutation::SwapLines(x, y) => {
            let mut l = lines(&b);
            let n = l.len();
            l.swap(x % n, y % n);
            b = l.join(&b'\n');
        }
        Mutation::Extreme(p, e) => {
            let t = number_tokens(&b);
            if !t.is_empty() {
                splice(&mut b, t[p % t.len()], EXTREMES[*e].as_bytes());
            }
        }
        Mutation::RenameKey(p, k) => {
            let t = key_tokens(&b);
            if !t.is_empty() {
                splice(&mut b, t[p % t.len()], KEYS[*k].as_bytes());
            }
        }
        Mutation::Truncate(p) => {
            let n = b.len() + 1;
            b.truncate(p % n);
        }
        Mutation::Insert(p, bytes) => {
            let n = b.len() + 1;
            let at = p % n;
            b.splice(at..at, bytes.iter().copied());
        }
        _ => {}
    }
    b
}

/// A mutated seed file, or random text from the format's tokens (one case in five).
fn input(seeds: Vec<String>, tokens: &'static [&'static str]) -> impl Strategy<Value = Vec<u8>> {
    let n = seeds.len();
    let mutated = (0..n, prop::collection::vec(mutation(), 1..6))
        .prop_map(move |(i, ms)| ms.iter().fold(seeds[i].clone().into_bytes(), apply));
    let random = prop::collection::vec(
        prop_oneof![
            (0..tokens.len()).prop_map(move |i| tokens[i].as_bytes().to_vec()),
            (0..EXTREMES.len()).prop_map(|i| EXTREMES[i].as_bytes().to_vec()),
            any::<u8>().prop_map(|b| vec![b]),
        ],
        0..200,
    )
    .prop_map(|parts| parts.concat());
    prop_oneof![4 => mutated, 1 => random]
}

/// The property on an error message.
fn clean(message: &str) -> Result<(), TestCaseError> {
    prop_assert!(!message.trim().is_empty(), "empty error message");
    let raw = message
        .chars()
        .find(|c| c.is_control() && *c != '\n' && *c != '\t');
    prop_assert!(raw.is_none(), "raw control {raw:?} in {message:?}");
    Ok(())
}

/// Decodes like the file readers do: invalid UTF-8 is a clean error naming the line.
fn decode(bytes: &[u8], what: &str) -> Result<Option<String>, TestCaseError> {
    match wirerank::io::decode_input_text(bytes.to_vec(), what) {
        Ok(t) => Ok(Some(t)),
        Err(e) => {
            clean(&e.to_string())?;
            prop_assert!(e.to_string().contains("line "), "{e}");
            Ok(None)
        }
    }
}

fn finite_weather(w: &wirerank::input::weather::Weather) -> Result<bool, TestCaseError> {
    let columns = [
        Some(&w.ghi_w_m2),
        w.dni_w_m2.as_ref(),
        w.dhi_w_m2.as_ref(),
        Some(&w.air_temp_c),
        w.wind_m_s.as_ref(),
        w.albedo_frac.as_ref(),
        w.pressure_hpa.as_ref(),
    ];
    for c in columns.into_iter().flatten() {
        prop_assert!(
            c.iter().all(|x| x.is_finite()),
            "a value that is not finite"
        );
    }
    prop_assert!(w.len() <= wirerank::input::weather::MAX_INTERVALS);
    Ok(true)
}

fn check_plan(bytes: &[u8]) -> Result<bool, TestCaseError> {
    let Some(text) = decode(bytes, "plan")? else {
        return Ok(false);
    };
    match wirerank::io::plan_toml::parse_plan(&text, "fuzz.toml", Path::new("/nonexistent")) {
        Ok(plan) => {
            prop_assert!(plan.modules.len() <= 500);
            for w in &plan.warnings {
                clean(w)?;
            }
            Ok(true)
        }
        Err(e) => clean(&e.to_string()).map(|_| false),
    }
}

fn check_weather_csv(bytes: &[u8]) -> Result<bool, TestCaseError> {
    let Some(text) = decode(bytes, "weather file")? else {
        return Ok(false);
    };
    match wirerank::io::weather_csv::parse_weather_csv(&text, "fuzz.csv") {
        Ok(w) => finite_weather(&w),
        Err(e) => clean(&e.to_string()).map(|_| false),
    }
}

fn check_typical_year(bytes: &[u8]) -> Result<bool, TestCaseError> {
    let Some(text) = decode(bytes, "weather file")? else {
        return Ok(false);
    };
    match wirerank::io::typical_year::parse_typical_year(&text, "fuzz.csv") {
        Ok(i) => {
            for n in &i.notes {
                clean(n)?;
            }
            finite_weather(&i.weather)
        }
        Err(e) => clean(&e.to_string()).map(|_| false),
    }
}

/// Runs one target: the regression cases, then the bounded or on-demand cases. Returns the
/// number of generated cases run.
fn fuzz(
    name: &str,
    strategy: impl Strategy<Value = Vec<u8>>,
    check: fn(&[u8]) -> Result<bool, TestCaseError>,
) -> u64 {
    for (target, case) in REGRESSIONS {
        if *target == name {
            check(case).unwrap_or_else(|e| panic!("{name} regression {case:?}: {e}"));
        }
    }
    let env = |k: &str| std::env::var(k).ok().and_then(|v| v.parse::<u64>().ok());
    let seconds = env("WIRERANK_FUZZ_SECONDS");
    let cases = env("WIRERANK_FUZZ_CASES");
    let on_demand = seconds.is_some() || cases.is_some();
    let batch = cases.unwrap_or(u64::from(FUZZ_CASES_DEFAULT)).min(5000) as u32;
    let config = Config {
        cases: batch,
        failure_persistence: None,
        max_shrink_iters: 2000,
        ..Config::default()
    };
    let deadline = seconds.map(|s| Instant::now() + Duration::from_secs(s));
    let mut total = 0u64;
    let accepted = std::sync::atomic::AtomicU64::new(0);
    loop {
        let mut runner = if on_demand {
            TestRunner::new(config.clone())
        } else {
            TestRunner::new_with_rng(
                config.clone(),
                proptest::test_runner::TestRng::deterministic_rng(config.rng_algorithm),
            )
        };
        let result = runner.run(&strategy, |b| {
            if check(&b)? {
                accepted.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
            }
            Ok(())
        });
        if let Err(e) = result {
            panic!("{name}: {e}");
        }
        total += u64::from(batch);
        match deadline {
            Some(d) if Instant::now() < d => continue,
            _ => break,
        }
    }
    if on_demand {
        eprintln!(
            "fuzz {name}: {total} cases, no failure ({} accepted, the rest refused with a clean message)",
            accepted.into_inner()
        );
    }
    total
}

/// Cases that once failed, and hand-made cases of the hostile-input campaign. Each is
/// (target, input bytes).
const REGRESSIONS: &[(&str, &[u8])] = &[
    // Found by the on-demand typical-year run (2026-12-03): a lone carriage return at the end
    // of the text was echoed raw in the header message.
    ("typical-year", b"1e308\r"),
    ("weather", b"# wirerank weather 1\r"),
    ("plan", b"a = 1\r"),
    // Hand-made cases of the hostile-input campaign, kept here as fixed inputs.
    ("plan", b"[site]\nname = \"a\\u001b[31m\"\n"),
    ("plan", b"[load]\ndaily_wh = [1e308]\n"),
    ("plan", b"\xff\xfe[site]"),
    ("plan", b"[[obstacle]]\nkind = \"pole\"\nfootprint_m = 1\n"),
    (
        "weather",
        b"# wirerank weather 1\n# interval_min = 60\n\x00\n",
    ),
    (
        "weather",
        b"# wirerank weather 1\ntime_local,ghi_w_m2,air_temp_c\n2025-01-01T00:00,1e308,nan\n",
    ),
    ("typical-year", b"LOCATION,\x1b,-,XX,x,0,1e308,inf,1,1\n"),
];

const PLAN_TOKENS: [&str; 22] = [
    "[site]",
    "[[layout]]",
    "[[obstacle]]",
    "[group.a]",
    "[load]",
    "[battery]",
    " = ",
    "\n",
    "\"",
    "[",
    "]",
    ",",
    "1",
    "-2.5",
    "true",
    "kind",
    "strings.a",
    "count",
    "#",
    "'''",
    "\\u0000",
    "{ a = 1 }",
];
const CSV_TOKENS: [&str; 16] = [
    "# wirerank weather 1\n",
    "# interval_min = 60\n",
    "# latitude_deg = 47\n",
    "time_local,ghi_w_m2,air_temp_c\n",
    "2025-01-01T00:00",
    ",",
    "\n",
    "# ",
    "=",
    "12.5",
    "-3",
    "ghi_w_m2",
    "dni_w_m2",
    "2025-02-29T00:00",
    "T",
    ":",
];
const TYPICAL_TOKENS: [&str; 12] = [
    "LOCATION,A,-,XX,x,0,45,7,1,300\n",
    "DESIGN CONDITIONS,0\n",
    "DATA PERIODS,1,1,Data,Sunday, 1/ 1,12/31\n",
    "1995,1,1,1,60,A7A7A7A7,",
    ",",
    "\n",
    "9999",
    "99.9",
    "-3.0",
    "0",
    "999999",
    "COMMENTS 1,x\n",
];

fn plan_seeds() -> Vec<String> {
    let mut v = vec![
        wirerank::commands::load::DEMO_PLAN.to_string(),
        wirerank::commands::TEMPLATE_PLAN.to_string(),
    ];
    for f in [
        "plan_20_modules.toml",
        "plan_assign_shaded.toml",
        "plan_pwm_vs_mppt.toml",
        "plan_three_inputs.toml",
    ] {
        v.push(fixture(f));
    }
    v
}

#[test]
fn fuzz_plan_parser() {
    fuzz("plan", input(plan_seeds(), &PLAN_TOKENS), check_plan);
}

#[test]
fn fuzz_weather_csv_reader() {
    let seeds = [
        "weather_15min.csv",
        "weather_repairs.csv",
        "weather_stamp_end.csv",
        "weather_stamp_start.csv",
    ]
    .iter()
    .map(|f| fixture(f))
    .collect();
    fuzz("weather", input(seeds, &CSV_TOKENS), check_weather_csv);
}

#[test]
fn fuzz_typical_year_importer() {
    let seeds = [
        "typical_year_48h.csv",
        "typical_year_subhourly.csv",
        "typical_year_missing_wind.csv",
    ]
    .iter()
    .map(|f| fixture(f))
    .collect();
    fuzz(
        "typical-year",
        input(seeds, &TYPICAL_TOKENS),
        check_typical_year,
    );
}
