//! Scale figures (criterion), the whole `rank` pipeline on both cores: the 20-module plan
//! with every layout enumerated (issue target for 20 modules in 3 groups on 3 inputs with
//! assignment: ≤ 5 s), and the shaded 8-module plan whose enumerated layouts choose their
//! modules (seed and swap search). Measured figures are in DEVELOPERS.md.

use std::path::Path;

use criterion::{criterion_group, criterion_main, Criterion};

use wirerank::commands::rank::simulate_and_rank;
use wirerank::commands::PlanSource;
use wirerank::results::rank::Criterion as By;
use wirerank::sim::year::RunOptions;

fn rank(name: &str) -> usize {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures")
        .join(name);
    let r = simulate_and_rank(
        &PlanSource::File(path),
        Some(By::Annual),
        RunOptions {
            parallel: true,
            ..Default::default()
        },
    )
    .expect("fixture ranks");
    r.outcomes.len()
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
    g.finish();
}

criterion_group!(benches, scale);
criterion_main!(benches);
