//! Scale figures (criterion), the whole `rank` pipeline on both cores (issue targets in
//! brackets; measured figures are in DEVELOPERS.md):
//! - the 20-module plan in 3 groups with every layout enumerated, on 2 inputs and on 3
//!   (≤ 5 s and ≤ 200 MB on 3 inputs), and on 3 inputs with four modules shaded by branches
//!   at some hours, so that module assignment works (its seed and swap search);
//! - the shaded 8-module plan whose enumerated layouts choose their modules;
//! - 48 modules on 3 inputs, every layout (≤ 20 s);
//! - 24 modules with a mast and a shed against the same plan without them (≤ 2×);
//! - the demo on 10 years of 10-minute weather, made from the bundled sample (≤ 10 s).
//!
//! The slow ones run with criterion's smallest sample (10): `cargo bench --bench scale`
//! takes several minutes; pick one with `cargo bench --bench scale -- "48 modules"`.

use std::fmt::Write as _;
use std::path::{Path, PathBuf};

use criterion::{criterion_group, criterion_main, Criterion};

use wirerank::commands::rank::simulate_and_rank;
use wirerank::commands::PlanSource;
use wirerank::results::rank::Criterion as By;
use wirerank::sim::year::RunOptions;

fn rank_path(path: PathBuf, by: Option<By>) -> usize {
    let r = simulate_and_rank(
        &PlanSource::File(path),
        by,
        RunOptions {
            parallel: true,
            ..Default::default()
        },
    )
    .expect("plan ranks");
    r.outcomes.len()
}

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

fn rank(name: &str) -> usize {
    rank_path(root().join("tests/fixtures").join(name), Some(By::Annual))
}

fn rank_bench_plan(name: &str) -> usize {
    rank_path(root().join("benches/data").join(name), Some(By::Annual))
}

/// Ten years (2015–2024) of 10-minute weather from the bundled hourly sample: each hour's
/// irradiation is spread over its six 10-minute steps in proportion to the sine of the
/// sun's elevation at their middles (Spencer 1971 declination, equation of time; a rough
/// position is enough for test data), so no step has light with the sun down; leap days
/// repeat 28 February. Written once per bench run, beside the demo plan pointing at it.
fn ten_year_demo_plan() -> PathBuf {
    let dir = PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join("scale-ten-years");
    std::fs::create_dir_all(&dir).expect("bench folder");
    let csv = dir.join("ten_years_10min.csv");
    let plan = dir.join("plan.toml");
    let sample = std::fs::read_to_string(root().join("weather-samples/larchwood-2025.csv"))
        .expect("sample weather");
    let mut header = String::new();
    let mut rows: Vec<(f64, f64, f64)> = Vec::new();
    for line in sample.lines() {
        if line.starts_with('#') {
            let line = if line.starts_with("# interval_min") {
                "# interval_min = 10"
            } else {
                line
            };
            writeln!(header, "{line}").unwrap();
        } else if line.starts_with("time_local") {
            writeln!(header, "{line}").unwrap();
        } else {
            let f: Vec<f64> = line
                .split(',')
                .skip(1)
                .map(|x| x.parse().expect("number"))
                .collect();
            rows.push((f[0], f[1], f[2]));
        }
    }
    let (lat, lon, tz) = (47.2_f64.to_radians(), 9.6, 1.0);
    let sin_el = |doy: f64, hour: f64| {
        let g = 2.0 * std::f64::consts::PI / 365.0 * (doy + (hour - 12.0) / 24.0);
        let d = 0.006918 - 0.399912 * g.cos() + 0.070257 * g.sin() - 0.006758 * (2.0 * g).cos()
            + 0.000907 * (2.0 * g).sin()
            - 0.002697 * (3.0 * g).cos()
            + 0.00148 * (3.0 * g).sin();
        let eot = 229.18
            * (0.000075 + 0.001868 * g.cos()
                - 0.032077 * g.sin()
                - 0.014615 * (2.0 * g).cos()
                - 0.040849 * (2.0 * g).sin());
        let ha = ((hour * 60.0 + eot + 4.0 * lon - 60.0 * tz) / 4.0 - 180.0).to_radians();
        (lat.sin() * d.sin() + lat.cos() * d.cos() * ha.cos()).max(0.0)
    };
    let mut out = header;
    let days_in = [31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31];
    for year in 2015..2025 {
        let leap = year % 4 == 0;
        let mut doy_file = 0usize;
        for (mi, &days) in days_in.iter().enumerate() {
            let days = if leap && mi == 1 { 29 } else { days };
            for day in 1..=days {
                // The sample has no 29 February: repeat the 28th.
                let doy = if leap && mi == 1 && day == 29 {
                    doy_file - 1
                } else {
                    doy_file
                };
                for hour in 0..24 {
                    let (ghi, air, wind) = rows[(doy * 24 + hour).min(rows.len() - 1)];
                    let s: Vec<f64> = (0..6)
                        .map(|j| sin_el(doy as f64, hour as f64 + (j as f64 * 10.0 + 5.0) / 60.0))
                        .collect();
                    let mean = s.iter().sum::<f64>() / 6.0;
                    for (j, sj) in s.iter().enumerate() {
                        let g = if mean > 0.0 { ghi * sj / mean } else { 0.0 };
                        writeln!(
                            out,
                            "{year}-{:02}-{day:02}T{hour:02}:{:02},{g:.1},{air},{wind}",
                            mi + 1,
                            j * 10
                        )
                        .unwrap();
                    }
                }
                if !(leap && mi == 1 && day == 29) {
                    doy_file += 1;
                }
            }
        }
    }
    std::fs::write(&csv, out).expect("writes the weather");
    let demo = std::fs::read_to_string(root().join("weather-samples/larchwood-plan.toml"))
        .expect("demo plan");
    let plan_text: String = demo
        .lines()
        .map(|l| {
            if l.starts_with("file = ") {
                format!("file = \"{}\"\n", csv.display())
            } else {
                format!("{l}\n")
            }
        })
        .collect();
    std::fs::write(&plan, plan_text).expect("writes the plan");
    plan
}

fn scale(c: &mut Criterion) {
    let mut g = c.benchmark_group("rank");
    g.sample_size(10);
    g.bench_function("20 modules, 3 groups, every layout (119)", |b| {
        b.iter(|| rank("plan_20_modules.toml"))
    });
    g.bench_function("8 shaded modules, every layout with assignment", |b| {
        b.iter(|| rank("plan_assign_shaded.toml"))
    });
    g.bench_function("24 modules, six layouts, no obstacles", |b| {
        b.iter(|| rank_bench_plan("plan_24_no_obstacles.toml"))
    });
    g.bench_function("24 modules, six layouts, mast and shed", |b| {
        b.iter(|| rank_bench_plan("plan_24_obstacles.toml"))
    });
    g.bench_function(
        "20 modules, 3 groups on 3 inputs, every layout (5,622)",
        |b| b.iter(|| rank_bench_plan("plan_20_modules_3_inputs.toml")),
    );
    g.bench_function(
        "20 modules, 3 groups on 3 inputs, shaded, every layout with assignment",
        |b| b.iter(|| rank_bench_plan("plan_20_modules_3_inputs_shaded.toml")),
    );
    g.bench_function("48 modules on 3 inputs, every layout (1,715)", |b| {
        b.iter(|| rank_bench_plan("plan_48_modules_3_inputs.toml"))
    });
    let ten_years = ten_year_demo_plan();
    g.bench_function("demo on 10 years of 10-minute weather", |b| {
        b.iter(|| rank_path(ten_years.clone(), None))
    });
    g.finish();
}

criterion_group!(benches, scale);
criterion_main!(benches);
