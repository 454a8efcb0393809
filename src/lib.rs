//! wirerank: ranks the ways to wire a small solar array into battery charge controllers.
//!
//! Data flows one way:
//!
//! ```text
//! plan.toml ──► io::plan_toml ──► Plan ─┐
//!                                        ├─► simulate::phase1 (sun, sky, IAM, soiling, cell T)
//! weather.csv ─► io::weather_csv ─► Weather ┘        │ shared by every layout
//!                                                    ▼
//!                                  per layout: curves, wiring, controller (phase 2)
//!                                                    ▼
//!                                    tally ──► rank ──► report / export
//! ```
//!
//! Physics (`physics/`) is pure; only `io/` touches files. Each public function below is one
//! command of the binary.

pub mod error;
pub mod io;
pub mod layouts;
pub mod limits;
pub mod phase2;
pub mod physics;
pub mod plan;
pub mod rank;
pub mod report;
pub mod sample_weather;
pub mod simulate;
pub mod synth;
pub mod tally;
pub mod uncertainty;
pub mod weather;
pub mod weather_tools;

use std::path::{Path, PathBuf};

use crate::error::Error;
use crate::plan::Plan;
use crate::simulate::Site;
use crate::weather::Weather;

/// The bundled demo plan (an invented cabin and system).
pub const DEMO_PLAN: &str = include_str!("../weather-samples/larchwood-plan.toml");
/// The bundled demo weather year (an invented site, made by `examples/make_sample_weather.rs`).
pub const DEMO_WEATHER: &str = sample_weather::LARCHWOOD_2025_CSV;
/// A commented starter plan (`wirerank template`).
pub const TEMPLATE_PLAN: &str = include_str!("template.toml");

/// Where a plan comes from.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum PlanSource {
    File(PathBuf),
    /// The plan and weather embedded in the binary.
    Demo,
}

/// How results go to stdout.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum OutputFormat {
    Table,
    Json,
}

/// `wirerank rank` (and the no-argument demo).
#[derive(Clone, Debug)]
pub struct RankRequest {
    pub plan: PlanSource,
    pub format: OutputFormat,
    pub criterion: rank::Criterion,
    pub quiet: bool,
}

/// `wirerank sunpath`.
#[derive(Clone, Debug)]
pub struct SunpathRequest {
    pub plan: Option<PathBuf>,
    pub latitude_deg: Option<f64>,
    pub longitude_deg: Option<f64>,
    pub elevation_m: Option<f64>,
    pub utc_offset_h: Option<f64>,
    pub from: String,
    pub to: Option<String>,
    pub step_min: u32,
    pub include_night: bool,
    pub csv: bool,
}

/// What `wirerank curve` draws.
#[derive(Clone, Debug)]
pub enum CurveTarget {
    /// One module type (the plan's first when `None`) at an irradiance and cell temperature.
    Module {
        module_type: Option<String>,
        irradiance_w_m2: f64,
        cell_temp_c: f64,
    },
    /// A layout's array at one weather interval (its stamp as written in the file).
    Layout { layout: String, at: String },
}

/// `wirerank curve`.
#[derive(Clone, Debug)]
pub struct CurveRequest {
    pub plan: PlanSource,
    pub target: CurveTarget,
    pub points: usize,
    pub csv: bool,
}

/// One command, as the binary asks for it.
#[derive(Clone, Debug)]
pub enum Request {
    Rank(RankRequest),
    /// `wirerank curve`.
    Curve(CurveRequest),
    /// `wirerank check`: limits only.
    Check(PlanSource),
    Template,
    Sunpath(SunpathRequest),
}

/// What a command produced: text for stdout, warnings for stderr, and how it ended.
#[derive(Clone, Debug, Default)]
pub struct Outcome {
    pub stdout: String,
    pub warnings: Vec<String>,
    /// True when the command ran but found no acceptable answer (exit code 1).
    pub nothing_passed: bool,
}

/// Runs one command.
///
/// # Errors
/// Bad input (plan, weather, arguments) or an output that cannot be written.
pub fn run(request: Request) -> Result<Outcome, Error> {
    match request {
        Request::Rank(r) => rank(&r),
        Request::Check(source) => check(&source),
        Request::Curve(r) => report::curve(&r),
        Request::Template => Ok(Outcome {
            stdout: TEMPLATE_PLAN.to_string(),
            ..Outcome::default()
        }),
        Request::Sunpath(r) => report::sunpath(&r),
    }
}

/// A plan with its weather and the merged site, ready to simulate.
#[derive(Clone, Debug)]
pub struct Loaded {
    pub plan: Plan,
    pub weather: Weather,
    pub site: Site,
    /// SHA-256 of the plan and weather files as read (provenance).
    pub plan_sha256: String,
    pub weather_sha256: String,
}

/// Reads and validates a plan, its weather file and the site they describe together.
///
/// # Errors
/// Any validation error of the plan or the weather file, or a site conflict between them.
pub fn load(source: &PlanSource) -> Result<Loaded, Error> {
    let (plan, weather, plan_sha256, weather_sha256) = match source {
        PlanSource::Demo => {
            let plan = io::plan_toml::parse_plan(DEMO_PLAN, "demo plan", Path::new(""))?;
            let weather = io::weather_csv::parse_weather_csv(DEMO_WEATHER, "larchwood-2025.csv")?;
            let hashes = (
                io::sha256_hex(DEMO_PLAN.as_bytes()),
                io::sha256_hex(DEMO_WEATHER.as_bytes()),
            );
            (plan, weather, hashes.0, hashes.1)
        }
        PlanSource::File(path) => {
            let plan = io::plan_toml::read_plan(path)?;
            let weather = io::weather_csv::read_weather_csv(&plan.weather_path)?;
            let plan_hash = io::file_sha256(path).unwrap_or_default();
            let weather_hash = io::file_sha256(&plan.weather_path).unwrap_or_default();
            (plan, weather, plan_hash, weather_hash)
        }
    };
    let site = simulate::resolve_site(&plan, &weather)?;
    weather.check_against_extraterrestrial(
        site.latitude_deg,
        site.longitude_deg,
        site.utc_offset_h,
    )?;
    Ok(Loaded {
        plan,
        weather,
        site,
        plan_sha256,
        weather_sha256,
    })
}

/// Everything a ranking run produced, for the report writers.
#[derive(Clone, Debug)]
pub struct RankResult {
    pub loaded: Loaded,
    pub criterion: rank::Criterion,
    pub temps: limits::DesignTemperatures,
    pub horizontal_kwh_m2: [f64; 12],
    pub months_present: [bool; 12],
    pub winter_months: Vec<usize>,
    pub light: Vec<tally::GroupMonthly>,
    /// Ranked layouts first (best first), then rejected ones.
    pub outcomes: Vec<rank::LayoutOutcome>,
    /// Layouts listed in the plan (the rest were enumerated).
    pub listed: usize,
    /// Enumerated input choices skipped for breaking a hard limit on their own, by rule.
    pub pruned: Vec<(&'static str, usize)>,
}

/// The temperatures the limit checks use: the weather's extremes widened by the plan's design
/// values.
pub fn design_temperatures(plan: &Plan, weather: &Weather) -> limits::DesignTemperatures {
    let (lo, hi) = weather
        .air_temp_c
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &t| {
            (a.min(t), b.max(t))
        });
    limits::DesignTemperatures {
        min_air_c: plan.site.design_min_air_c.map_or(lo, |d| d.min(lo)),
        max_air_c: plan.site.design_max_air_c.map_or(hi, |d| d.max(hi)),
    }
}

/// The candidate layouts of a plan and what enumeration skipped.
#[derive(Clone, Debug)]
pub struct Candidates {
    pub layouts: Vec<layouts::Layout>,
    /// How many were listed in the plan.
    pub listed: usize,
    /// Enumerated input choices skipped because they break a hard limit on their own, by rule.
    pub pruned: Vec<(&'static str, usize)>,
}

/// The plan's listed layouts, then (with `layouts = "all"`) every enumerated one that is not
/// already listed. Enumeration skips input choices that break a hard limit by themselves
/// (counted by rule); listed layouts are always kept and checked.
///
/// # Errors
/// Enumeration beyond [`layouts::MAX_CANDIDATES`].
pub fn candidate_layouts(
    plan: &Plan,
    temps: &limits::DesignTemperatures,
) -> Result<Candidates, Error> {
    let mut all = layouts::listed(plan);
    let listed = all.len();
    let mut pruned = Vec::new();
    if plan.enumerate_all {
        let reject = |p: &Plan, d: &layouts::InputDraft| limits::input_hard_limit(p, temps, d);
        let (found, skipped) = layouts::enumerate_pruned(plan, plan.enumerate, &reject).map_err(|e| {
            Error::Usage(format!(
                "{}: layouts = \"all\" gives more than {} candidate layouts; list the layouts you want instead, or turn off [enumerate] allow_unused_modules / allow_mixed_orientation",
                plan.source.display(),
                e.limit
            ))
        })?;
        pruned = skipped;
        for l in found {
            let key = l.canonical();
            if !all.iter().any(|x| x.canonical() == key) {
                all.push(l);
            }
        }
    }
    Ok(Candidates {
        layouts: all,
        listed,
        pruned,
    })
}

/// Loads, checks, simulates and ranks.
///
/// # Errors
/// As [`load`].
pub fn simulate_and_rank(
    source: &PlanSource,
    criterion: rank::Criterion,
    parallel: bool,
    hourly: bool,
) -> Result<RankResult, Error> {
    let loaded = load(source)?;
    let plan = &loaded.plan;
    let temps = design_temperatures(plan, &loaded.weather);
    let candidates = candidate_layouts(plan, &temps)?;
    let mut outcomes: Vec<rank::LayoutOutcome> = candidates
        .layouts
        .into_iter()
        .map(|layout| rank::LayoutOutcome {
            findings: limits::check_layout(plan, &layout, &temps),
            layout,
            energy: None,
            rank: None,
            score_kwh: None,
        })
        .collect();
    let conditions = simulate::phase1(plan, &loaded.weather, &loaded.site);
    let passing: Vec<&layouts::Layout> = outcomes
        .iter()
        .filter(|o| !o.rejected())
        .map(|o| &o.layout)
        .collect();
    let energies = phase2::run(plan, &conditions, &passing, parallel, hourly);
    let mut energies = energies.into_iter();
    for o in outcomes.iter_mut().filter(|o| !o.rejected()) {
        o.energy = energies.next();
    }
    let group_ids: Vec<String> = plan.groups.iter().map(|g| g.id.clone()).collect();
    let light = tally::group_monthly(&conditions, &group_ids);
    let horizontal_kwh_m2 = tally::horizontal_monthly_kwh_m2(&conditions);
    let months_present = tally::months_present(&conditions);
    let winter_months = rank::winter_months(&horizontal_kwh_m2, &months_present);
    rank::rank(&mut outcomes, criterion, &months_present, &winter_months);
    Ok(RankResult {
        loaded,
        criterion,
        temps,
        horizontal_kwh_m2,
        months_present,
        winter_months,
        light,
        outcomes,
        listed: candidates.listed,
        pruned: candidates.pruned,
    })
}

fn rank(r: &RankRequest) -> Result<Outcome, Error> {
    let result = simulate_and_rank(&r.plan, r.criterion, true, false)?;
    let nothing_passed = result.outcomes.iter().all(|o| o.rank.is_none());
    let stdout = match r.format {
        OutputFormat::Table => report::ranking(&result),
        OutputFormat::Json => io::json::ranking_json(&result)?,
    };
    Ok(Outcome {
        stdout,
        warnings: result
            .loaded
            .weather
            .warnings
            .iter()
            .map(|w| w.to_string())
            .collect(),
        nothing_passed,
    })
}

/// Every candidate layout with its limit findings, without simulating.
#[derive(Clone, Debug)]
pub struct CheckResult {
    pub loaded: Loaded,
    pub temps: limits::DesignTemperatures,
    pub candidates: Candidates,
    /// Findings per layout, in `candidates.layouts` order.
    pub findings: Vec<Vec<limits::Finding>>,
}

/// Loads the plan and weather and checks every candidate layout's limits.
///
/// # Errors
/// As [`load`] and [`candidate_layouts`].
pub fn check_limits(source: &PlanSource) -> Result<CheckResult, Error> {
    let loaded = load(source)?;
    let temps = design_temperatures(&loaded.plan, &loaded.weather);
    let candidates = candidate_layouts(&loaded.plan, &temps)?;
    let findings = candidates
        .layouts
        .iter()
        .map(|l| limits::check_layout(&loaded.plan, l, &temps))
        .collect();
    Ok(CheckResult {
        loaded,
        temps,
        candidates,
        findings,
    })
}

fn check(source: &PlanSource) -> Result<Outcome, Error> {
    let r = check_limits(source)?;
    let passed = r
        .findings
        .iter()
        .filter(|f| f.iter().all(|x| x.severity != limits::Severity::Reject))
        .count();
    Ok(Outcome {
        stdout: report::check(&r),
        warnings: r
            .loaded
            .weather
            .warnings
            .iter()
            .map(|w| w.to_string())
            .collect(),
        nothing_passed: passed == 0,
    })
}
