//! Command-line definitions (clap) and their translation into typed requests.
//!
//! Only this file and `main.rs` know clap; the library sees `wirerank::Request` values.

use std::path::PathBuf;

use clap::{Args, Parser, Subcommand, ValueEnum};

use wirerank::commands::{
    CheckShow, CurveRequest, CurveTarget, LayoutRef, OutputFormat, PlanSource, RankRequest,
    Request, SunpathRequest, WeatherRequest,
};
use wirerank::results::rank::Criterion;

/// Ranks the ways to wire a small solar array into battery charge controllers.
///
/// With no command, runs the bundled demo (an invented cabin) and prints its ranking.
#[derive(Debug, Parser)]
#[command(name = "wirerank", version, args_conflicts_with_subcommands = true)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Option<Command>,
    #[command(flatten)]
    pub demo: OutputArgs,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Simulate the plan's layouts over the weather year and rank them.
    Rank(RankArgs),
    /// Check every layout against the electrical limits only (no simulation).
    Check(CheckArgs),
    /// Print current–voltage points and maximum power points: of one module type at a given
    /// irradiance and cell temperature, or of a layout's array as each controller sees it in
    /// one interval of the weather file.
    Curve(CurveArgs),
    /// Share of direct light each module loses to shade (horizon, obstacles, schedule), by month.
    Shade(ShadeArgs),
    /// Weather files: make a typical year from monthly means, inspect one, import the open
    /// typical-year format.
    #[command(subcommand)]
    Weather(WeatherCommand),
    /// Print a commented starter plan to copy and edit.
    Template,
    /// Print the sun's elevation and azimuth for a site over a date or a range of dates.
    Sunpath(SunpathArgs),
}

#[derive(Debug, Args)]
pub struct RankArgs {
    /// The plan file (TOML); `demo` runs the bundled demo plan.
    pub plan: PathBuf,
    #[command(flatten)]
    pub output: OutputArgs,
}

#[derive(Debug, Args)]
pub struct CurveArgs {
    /// The plan file (TOML); `demo` uses the bundled demo plan.
    pub plan: PathBuf,
    /// A module type of the plan (with --irradiance-w-m2 and --cell-temp-c).
    #[arg(long, conflicts_with_all = ["layout", "rank", "at"])]
    pub module_type: Option<String>,
    /// Effective irradiance on the module, W/m².
    #[arg(long, default_value_t = 1000.0)]
    pub irradiance_w_m2: f64,
    /// Cell temperature, °C.
    #[arg(long, default_value_t = 25.0, allow_hyphen_values = true)]
    pub cell_temp_c: f64,
    /// A layout: its id as the reports print it (L1, E3, …), its code or its name.
    #[arg(long, requires = "at", conflicts_with = "rank")]
    pub layout: Option<String>,
    /// A layout by its rank in `rank PLAN` with the plan's default criterion (1 = best).
    #[arg(long, requires = "at")]
    pub rank: Option<usize>,
    /// The weather interval, as its stamp in the file (YYYY-MM-DDTHH:MM, local).
    #[arg(long)]
    pub at: Option<String>,
    /// Points to print per curve.
    #[arg(long, default_value_t = 25)]
    pub points: usize,
    /// CSV on stdout: curve,voltage_v,current_a,power_w.
    #[arg(long)]
    pub csv: bool,
}

#[derive(Debug, Subcommand)]
pub enum WeatherCommand {
    /// Generate an hourly typical year in our CSV format from 12 monthly means (TOML).
    Synth {
        /// Monthly inputs (see notebooks-free-docs/method-synth.md).
        input: PathBuf,
        /// Random seed: the same seed gives the same file.
        #[arg(long, default_value_t = 1)]
        seed: u64,
        /// The CSV to write.
        #[arg(long)]
        out: PathBuf,
    },
    /// Monthly irradiation and temperatures, gaps and repairs, extremes; a daily plot.
    Inspect {
        /// A weather file (our CSV or the open typical-year format).
        file: PathBuf,
        /// Write the daily irradiation plot (PNG and SVG) into this folder.
        #[arg(long)]
        plot_dir: Option<PathBuf>,
    },
    /// Convert a file in the open typical-year format (8-line header) into our CSV.
    Import {
        file: PathBuf,
        /// The CSV to write.
        #[arg(long)]
        out: PathBuf,
    },
}

#[derive(Debug, Args)]
pub struct ShadeArgs {
    /// The plan file (TOML); `demo` uses the bundled demo plan.
    pub plan: PathBuf,
    /// Also write shade.csv into this folder.
    #[arg(long)]
    pub out: Option<PathBuf>,
}

#[derive(Debug, Args)]
pub struct CheckArgs {
    /// The plan file (TOML); `demo` checks the bundled demo plan.
    pub plan: PathBuf,
    /// List only the layouts that break a hard limit.
    #[arg(long, conflicts_with = "passing")]
    pub failing: bool,
    /// List only the layouts that pass every hard limit.
    #[arg(long)]
    pub passing: bool,
}

#[derive(Debug, Args, Default)]
pub struct OutputArgs {
    /// Output on stdout: a terminal table or JSON.
    #[arg(long, value_enum, default_value_t = FormatArg::Table)]
    pub format: FormatArg,
    /// What the ranking decides on (default: unmet when the plan has a load, else annual).
    /// Energy criteria rank on energy offered by the controllers.
    #[arg(long, value_enum)]
    pub by: Option<ByArg>,
    /// Write report.html (the whole answer on one page), monthly.csv, summary.csv,
    /// losses.csv, differences.csv, wiring.csv, provenance.txt and the plots (PNG and SVG)
    /// into this folder (created if missing).
    #[arg(long)]
    pub out: Option<PathBuf>,
    /// Show at most N ranked layouts in the report (default: every listed layout; for an
    /// enumeration the best 20 and the recommended one). The files always hold every layout.
    #[arg(long, value_name = "N")]
    pub top: Option<usize>,
    /// With --out, also draw the wiring diagram of this layout (its id, e.g. L2; repeatable).
    #[arg(long = "diagram", value_name = "ID", requires = "out")]
    pub diagrams: Vec<String>,
    /// List the wiring, module by module, of every candidate layout (the report lists the
    /// recommended and the plan's listed layouts; the files always hold every layout).
    #[arg(long)]
    pub wiring: bool,
    /// With --out, also write hourly.csv (one row per layout and weather interval).
    #[arg(long, requires = "out")]
    pub hourly: bool,
    /// With --out, also print report.html to report.pdf with a headless Chromium
    /// (`chromium` or `chromium-browser` on the PATH, or the program WIRERANK_CHROMIUM
    /// names). Without one, nothing is written and the command says so.
    #[arg(long, requires = "out")]
    pub pdf: bool,
    /// Print nothing on stderr (no progress, no warnings).
    #[arg(long, short)]
    pub quiet: bool,
}

#[derive(Debug, Clone, Copy, ValueEnum, Default, PartialEq, Eq)]
pub enum ByArg {
    /// Energy offered by the controllers over the year.
    #[default]
    Annual,
    /// Energy offered in the layout's worst month.
    WorstMonth,
    /// Energy offered in the three months with the least horizontal insolation.
    Winter,
    /// Energy offered while the sun is low (below the plan's low-sun elevation).
    LowSun,
    /// Fewest days short, then least unmet load, then most winter energy offered (a plan
    /// with [load] and a battery model; its default).
    Unmet,
}

impl From<ByArg> for Criterion {
    fn from(b: ByArg) -> Self {
        match b {
            ByArg::Annual => Criterion::Annual,
            ByArg::WorstMonth => Criterion::WorstMonth,
            ByArg::Winter => Criterion::Winter,
            ByArg::LowSun => Criterion::LowSun,
            ByArg::Unmet => Criterion::Unmet,
        }
    }
}

#[derive(Debug, Clone, Copy, ValueEnum, Default, PartialEq, Eq)]
pub enum FormatArg {
    #[default]
    Table,
    Json,
}

#[derive(Debug, Args)]
pub struct SunpathArgs {
    /// Take the site from this plan (and its weather file header).
    #[arg(long)]
    pub plan: Option<PathBuf>,
    /// Latitude, degrees north positive.
    #[arg(long, allow_hyphen_values = true)]
    pub latitude_deg: Option<f64>,
    /// Longitude, degrees east positive.
    #[arg(long, allow_hyphen_values = true)]
    pub longitude_deg: Option<f64>,
    /// Elevation above sea level, m.
    #[arg(long, allow_hyphen_values = true)]
    pub elevation_m: Option<f64>,
    /// Local standard time offset from UTC, hours (no daylight saving).
    #[arg(long, allow_hyphen_values = true)]
    pub utc_offset_h: Option<f64>,
    /// First date, YYYY-MM-DD (local).
    #[arg(long)]
    pub date: String,
    /// Last date, YYYY-MM-DD (local); defaults to --date.
    #[arg(long)]
    pub to: Option<String>,
    /// Step between rows, minutes.
    #[arg(long, default_value_t = 60)]
    pub step_min: u32,
    /// Also list hours with the sun below the horizon.
    #[arg(long)]
    pub all: bool,
    /// CSV on stdout: time_local,zenith_deg,elevation_deg,azimuth_deg.
    #[arg(long)]
    pub csv: bool,
}

impl From<FormatArg> for OutputFormat {
    fn from(f: FormatArg) -> Self {
        match f {
            FormatArg::Table => OutputFormat::Table,
            FormatArg::Json => OutputFormat::Json,
        }
    }
}

impl Cli {
    /// Turns the parsed arguments into a request for the library.
    pub fn into_request(self) -> Request {
        match self.command {
            None => Request::Rank(RankRequest {
                plan: PlanSource::Demo,
                format: self.demo.format.into(),
                criterion: self.demo.by.map(Into::into),
                out: self.demo.out,
                hourly: self.demo.hourly,
                pdf: self.demo.pdf,
                wiring: self.demo.wiring,
                top: self.demo.top,
                diagrams: self.demo.diagrams,
                quiet: self.demo.quiet,
            }),
            Some(Command::Rank(a)) => Request::Rank(RankRequest {
                plan: if a.plan.as_os_str() == "demo" {
                    PlanSource::Demo
                } else {
                    PlanSource::File(a.plan)
                },
                format: a.output.format.into(),
                criterion: a.output.by.map(Into::into),
                out: a.output.out,
                hourly: a.output.hourly,
                pdf: a.output.pdf,
                wiring: a.output.wiring,
                top: a.output.top,
                diagrams: a.output.diagrams,
                quiet: a.output.quiet,
            }),
            Some(Command::Check(a)) => Request::Check(
                if a.plan.as_os_str() == "demo" {
                    PlanSource::Demo
                } else {
                    PlanSource::File(a.plan)
                },
                if a.failing {
                    CheckShow::Failing
                } else if a.passing {
                    CheckShow::Passing
                } else {
                    CheckShow::All
                },
            ),
            Some(Command::Curve(a)) => Request::Curve(CurveRequest {
                plan: if a.plan.as_os_str() == "demo" {
                    PlanSource::Demo
                } else {
                    PlanSource::File(a.plan)
                },
                target: match (a.module_type, a.layout, a.rank, a.at) {
                    (_, Some(layout), _, Some(at)) => CurveTarget::Layout {
                        layout: LayoutRef::Id(layout),
                        at,
                    },
                    (_, None, Some(rank), Some(at)) => CurveTarget::Layout {
                        layout: LayoutRef::Rank(rank),
                        at,
                    },
                    (module_type, _, _, _) => CurveTarget::Module {
                        module_type,
                        irradiance_w_m2: a.irradiance_w_m2,
                        cell_temp_c: a.cell_temp_c,
                    },
                },
                points: a.points,
                csv: a.csv,
            }),
            Some(Command::Shade(a)) => Request::Shade(
                if a.plan.as_os_str() == "demo" {
                    PlanSource::Demo
                } else {
                    PlanSource::File(a.plan)
                },
                a.out,
            ),
            Some(Command::Weather(w)) => Request::Weather(match w {
                WeatherCommand::Synth { input, seed, out } => {
                    WeatherRequest::Synth { input, seed, out }
                }
                WeatherCommand::Inspect { file, plot_dir } => {
                    WeatherRequest::Inspect { file, plot_dir }
                }
                WeatherCommand::Import { file, out } => WeatherRequest::Import { file, out },
            }),
            Some(Command::Template) => Request::Template,
            Some(Command::Sunpath(a)) => Request::Sunpath(SunpathRequest {
                plan: a.plan,
                latitude_deg: a.latitude_deg,
                longitude_deg: a.longitude_deg,
                elevation_m: a.elevation_m,
                utc_offset_h: a.utc_offset_h,
                from: a.date,
                to: a.to,
                step_min: a.step_min,
                include_night: a.all,
                csv: a.csv,
            }),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::CommandFactory;

    #[test]
    fn clap_definition_is_consistent() {
        Cli::command().debug_assert();
    }
}
