//! Speed targets (criterion): one orientation's sun + sky + temperature over an hourly year
//! (target ≤ 5 ms), and the demo plan's whole year single-threaded (target ≤ 0.25 s), split
//! into curve solving and combination; and a 24-module plan with every layout enumerated
//! (target ≤ 1 s on both cores).

use criterion::{criterion_group, criterion_main, Criterion};
use std::hint::black_box;

use wirerank::commands::load::load;
use wirerank::commands::PlanSource;
use wirerank::design::rules;
use wirerank::input::layout;
use wirerank::physics::sky::{self, SkyModel, SkyState, Surface};
use wirerank::physics::sun::{self, Atmosphere, Observer};
use wirerank::physics::thermal::{Back, CellTemperatureModel, Mounting};
use wirerank::sim::{conditions, curves, year};

fn one_orientation_year(c: &mut Criterion) {
    let loaded = load(&PlanSource::Demo).expect("demo loads");
    let w = &loaded.weather;
    let site = &loaded.site;
    let obs = Observer {
        latitude_deg: site.latitude_deg,
        longitude_deg: site.longitude_deg,
        elevation_m: site.elevation_m,
    };
    let surface = Surface {
        tilt_deg: 40.0,
        azimuth_deg: 180.0,
    }
    .prepare();
    let glass = sky::GlassCover::DE_SOTO_2006;
    let factors = sky::iam_factors(&glass, 40.0);
    let thermal =
        CellTemperatureModel::king(Mounting::OpenRack, Back::Polymer).expect("a King 2004 set");
    let p = sun::pressure_from_elevation_hpa(site.elevation_m);
    c.bench_function("sun+sky+temperature, one orientation, hourly year", |b| {
        b.iter(|| {
            let mut acc = 0.0;
            let off = site.utc_offset_h * 3600.0;
            let eph = sun::SunEphemeris::new(
                w.local_start_s[0] as f64 - off,
                w.local_start_s[w.len() - 1] as f64 - off + 3600.0,
                sun::DELTA_T_DEFAULT_S,
            );
            let prepared = obs.prepare();
            for k in 0..w.len() {
                let start = w.local_start_s[k] as f64 - site.utc_offset_h * 3600.0;
                let atm = Atmosphere {
                    pressure_hpa: p,
                    temperature_c: w.air_temp_c[k],
                };
                let Some(s) = eph.interval_sun_prepared(start, start + 3600.0, &prepared, &atm)
                else {
                    continue;
                };
                let ghi = w.ghi_w_m2[k];
                if ghi <= 0.0 {
                    continue;
                }
                let g_on = sun::extraterrestrial_normal_w_m2(
                    wirerank::time::UtcTime(s.eval_unix_s).day_of_year_frac(),
                );
                let z = s.position.zenith_deg;
                let split = sky::erbs_split(ghi, z, g_on);
                let state = SkyState {
                    ghi_w_m2: ghi,
                    dni_w_m2: split.dni_w_m2,
                    dhi_w_m2: split.dhi_w_m2,
                    extraterrestrial_normal_w_m2: g_on,
                    zenith_deg: z,
                    azimuth_deg: s.position.azimuth_deg,
                    air_mass_relative: sun::air_mass_relative(z).unwrap_or(0.0),
                };
                let poa = sky::poa_parts_prepared(SkyModel::Perez, &surface, &state, 0.2);
                let eff = sky::apply_iam(&poa, &glass, &factors);
                acc += eff.total_w_m2()
                    + thermal.cell_temperature_c(poa.total_w_m2(), w.air_temp_c[k], 1.0);
            }
            black_box(acc)
        })
    });
}

fn demo_year(c: &mut Criterion) {
    let loaded = load(&PlanSource::Demo).expect("demo loads");
    let plan = &loaded.plan;
    let temps = rules::design_temperatures(plan, &loaded.weather);
    let all = passing_layouts(plan, &temps);
    let passing: Vec<&layout::Layout> = all.iter().collect();
    let mut g = c.benchmark_group("demo year, single thread");
    g.sample_size(10);
    g.bench_function("phase 1 (all orientations)", |b| {
        b.iter(|| black_box(conditions::phase1(plan, &loaded.weather, &loaded.site)))
    });
    let cond = conditions::phase1(plan, &loaded.weather, &loaded.site);
    g.bench_function("phase 2: curve solving", |b| {
        b.iter(|| black_box(curves::all_interval_curves(plan, &cond, false)))
    });
    let curves = curves::CurveSet::Held(curves::all_interval_curves(plan, &cond, false));
    g.bench_function("phase 2: combination and controllers", |b| {
        b.iter(|| {
            black_box(year::simulate_layouts(
                plan,
                &cond,
                &curves,
                &passing,
                year::RunOptions::default(),
            ))
        })
    });
    g.bench_function("whole run: phase 1 + phase 2", |b| {
        b.iter(|| {
            let cond = conditions::phase1(plan, &loaded.weather, &loaded.site);
            black_box(year::run(
                plan,
                &cond,
                &passing,
                year::RunOptions::default(),
            ))
        })
    });
    g.finish();
}

fn every_layout_24_modules(c: &mut Criterion) {
    let plan =
        std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("benches/data/plan_24_modules.toml");
    let source = PlanSource::File(plan);
    let mut g = c.benchmark_group("24 modules, 2 orientations, 2 inputs, every layout");
    g.sample_size(10);
    for parallel in [true, false] {
        let name = if parallel { "both cores" } else { "one thread" };
        g.bench_function(name, |b| {
            b.iter(|| {
                black_box(
                    wirerank::commands::rank::simulate_and_rank(
                        &source,
                        Some(wirerank::results::rank::Criterion::Annual),
                        year::RunOptions {
                            parallel,
                            ..Default::default()
                        },
                    )
                    .expect("bench plan runs"),
                )
            })
        });
    }
    g.finish();
}

/// The demo's passing layouts, with phase 1 and the shared curves of a plan.
fn passing_layouts(
    plan: &wirerank::input::plan::Plan,
    temps: &rules::DesignTemperatures,
) -> Vec<layout::Layout> {
    layout::listed(plan)
        .into_iter()
        .filter(|l| {
            rules::check_layout(plan, l, temps)
                .iter()
                .all(|f| f.severity != rules::Severity::Reject)
        })
        .collect()
}

/// Issue 7: the demo with its battery and load against the same plan without the battery
/// model (target: ≤ 1.5×), both single-threaded, phase 1 + phase 2 for all passing layouts;
/// and the sizing search for the best layout (target ≤ 5 s).
fn battery_model_cost(c: &mut Criterion) {
    let loaded = load(&PlanSource::Demo).expect("demo loads");
    let with = loaded.plan.clone();
    let mut without = loaded.plan.clone();
    without.battery.model = None;
    without.consumption = None;
    let temps = rules::design_temperatures(&with, &loaded.weather);
    let layouts = passing_layouts(&with, &temps);
    let refs: Vec<&layout::Layout> = layouts.iter().collect();
    let mut g = c.benchmark_group("demo year with and without the battery model, single thread");
    g.sample_size(10);
    for (name, plan) in [
        ("without battery model", &without),
        ("with battery and load", &with),
    ] {
        g.bench_function(name, |b| {
            b.iter(|| {
                let cond = conditions::phase1(plan, &loaded.weather, &loaded.site);
                black_box(year::run(plan, &cond, &refs, year::RunOptions::default()))
            })
        });
    }
    let cond = conditions::phase1(&with, &loaded.weather, &loaded.site);
    let curves = curves::CurveSet::Held(curves::all_interval_curves(&with, &cond, false));
    let result = wirerank::commands::rank::simulate_and_rank(
        &PlanSource::Demo,
        Some(wirerank::results::rank::Criterion::Annual),
        year::RunOptions::default(),
    )
    .expect("demo runs");
    let best = result
        .outcomes
        .iter()
        .find(|o| o.rank == Some(1))
        .expect("a best layout");
    g.bench_function("sizing search (battery and extra modules)", |b| {
        b.iter(|| {
            black_box(wirerank::design::sizing::size_best(
                &with,
                &cond,
                &curves,
                &temps,
                &best.layout,
                best.energy.as_ref(),
                None,
            ))
        })
    });
    g.finish();
}

/// Issue 5: the demo with and without its shading geometry (target: shading adds ≤ 50 %),
/// whole ranking run single-threaded.
fn shading_cost(c: &mut Criterion) {
    let unshaded = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("benches/data/plan_demo_unshaded.toml");
    let mut g = c.benchmark_group("demo ranking with and without shading geometry, single thread");
    g.sample_size(10);
    for (name, source) in [
        (
            "without horizon, placements and obstacles",
            PlanSource::File(unshaded),
        ),
        ("as shipped", PlanSource::Demo),
    ] {
        g.bench_function(name, |b| {
            b.iter(|| {
                black_box(
                    wirerank::commands::rank::simulate_and_rank(
                        &source,
                        Some(wirerank::results::rank::Criterion::Annual),
                        year::RunOptions::default(),
                    )
                    .expect("bench plan runs"),
                )
            })
        });
    }
    g.finish();
}

/// Issue 6: one synthesized hourly year from monthly means (target ≤ 50 ms).
fn synth_year(c: &mut Criterion) {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("weather-samples/northmere-cabin.monthly.toml");
    let text = std::fs::read_to_string(&path).expect("sample monthly means");
    let climate =
        wirerank::io::monthly_toml::parse_monthly_toml(&text, "northmere-cabin.monthly.toml")
            .expect("sample parses")
            .validate()
            .expect("sample is valid");
    c.bench_function("weather synth, one hourly year", |b| {
        b.iter(|| {
            black_box(
                wirerank::weather_gen::synth::synthesize(&climate, 7, "bench")
                    .expect("synthesizes"),
            )
        })
    });
}

criterion_group!(
    benches,
    one_orientation_year,
    demo_year,
    every_layout_24_modules,
    battery_model_cost,
    shading_cost,
    synth_year
);
criterion_main!(benches);
