//! The commands of the binary, one file each: orchestration only. A command loads its
//! inputs through `io/`, runs the stages (`sim/`, `design/`, `results/`) and hands the
//! result to a writer in `io/`; it computes no figure itself and formats no table.
//!
//! This file holds the typed requests the binary builds from its flags and the [`Outcome`]
//! every command returns.

pub mod check;
pub mod curve;
pub mod load;
pub mod rank;
pub mod shade;
pub mod sunpath;
pub mod weather;

use std::path::PathBuf;

use crate::results::rank::Criterion;

/// A commented starter plan (`wirerank template`).
pub const TEMPLATE_PLAN: &str = include_str!("../template.toml");

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
    /// `None`: the plan's default ([`Criterion::default_for`]).
    pub criterion: Option<Criterion>,
    /// Folder for the CSV files and plots.
    pub out: Option<PathBuf>,
    /// Also write hourly.csv.
    pub hourly: bool,
    /// With `out`: also print report.html to report.pdf with a headless browser.
    pub pdf: bool,
    /// List the wiring of every candidate in the report.
    pub wiring: bool,
    /// At most this many ranked layouts in the report (`None`: the default).
    pub top: Option<usize>,
    /// With `out`: layout ids whose wiring diagram to draw besides the recommended one's.
    pub diagrams: Vec<String>,
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
    Layout { layout: LayoutRef, at: String },
}

pub use crate::results::CheckShow;

/// How a command names one layout.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum LayoutRef {
    /// Its id (`L1`, `E3`), code or name.
    Id(String),
    /// Its rank with the plan's default criterion (1 = best).
    Rank(usize),
}

/// `wirerank curve`.
#[derive(Clone, Debug)]
pub struct CurveRequest {
    pub plan: PlanSource,
    pub target: CurveTarget,
    pub points: usize,
    pub csv: bool,
}

/// `wirerank weather synth | inspect | import`.
#[derive(Clone, Debug)]
pub enum WeatherRequest {
    Synth {
        input: PathBuf,
        seed: u64,
        out: PathBuf,
    },
    Inspect {
        file: PathBuf,
        plot_dir: Option<PathBuf>,
    },
    Import {
        file: PathBuf,
        out: PathBuf,
    },
}

/// One command, as the binary asks for it.
#[derive(Clone, Debug)]
pub enum Request {
    Rank(RankRequest),
    /// `wirerank curve`.
    Curve(CurveRequest),
    /// `wirerank check`: limits only.
    Check(PlanSource, CheckShow),
    /// `wirerank weather ...`.
    Weather(WeatherRequest),
    /// `wirerank shade`: share of direct light lost per module and month.
    Shade(PlanSource, Option<PathBuf>),
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
