//! wirerank: ranks the ways to wire a small solar array into battery charge controllers.
//!
//! The tree reads as the pipeline; data flows one way, top to bottom:
//!
//! ```text
//! io::plan_toml, io::weather_csv, io::typical_year      files → validated values
//!   └─► input      the plan, the weather series, the site, layouts as wirings of modules
//!         └─► sim       phase 1: sun, sky, shade, temperature per interval (once per run);
//!                       shared substring curves per interval; the per-layout year loop
//!                       with controller and battery; energy and the loss steps
//!               └─► design    candidate layouts, the limit rules, the sizing searches
//!                     └─► results   ranking, P50/P90, light sums, computed once
//!                           └─► io     terminal tables, JSON, CSV files, charts
//! commands   one file per command: orchestration only
//! physics    pure models used by sim and design (sun, sky, shade, thermal, diode,
//!            wiring, controller, battery)
//! weather_gen  synthesis of a year from monthly means; the demo year
//! time       local-standard and UTC instants, the one civil calendar
//! num        numbers in messages without floating-point noise
//! text       user text in messages with control characters escaped
//! ```
//!
//! Only `io/` touches files and knows file formats; only the binary knows command-line flags.
//! [`run`] is the one entry point: a typed request in, text and an exit status out.

pub mod commands;
pub mod design;
pub mod error;
pub mod input;
pub mod io;
pub mod num;
pub mod physics;
pub mod results;
pub mod sim;
pub mod text;
pub mod time;
pub mod weather_gen;

use crate::commands::{Outcome, Request, WeatherRequest};
use crate::error::Error;

/// Runs one command. `on_layout_done` is called once per simulated layout, with the number
/// of layouts being simulated (the binary's
/// progress display); it must not affect results.
///
/// # Errors
/// Bad input (plan, weather, arguments) or an output that cannot be written.
pub fn run(request: Request, on_layout_done: &(dyn Fn(usize) + Sync)) -> Result<Outcome, Error> {
    match request {
        Request::Rank(r) => commands::rank::rank(&r, on_layout_done),
        Request::Check(source, show) => commands::check::check(&source, show),
        Request::Weather(w) => match w {
            WeatherRequest::Synth { input, seed, out } => {
                commands::weather::synth_from_file(&input, seed, &out)
            }
            WeatherRequest::Inspect { file, plot_dir } => {
                commands::weather::inspect(&file, plot_dir.as_deref())
            }
            WeatherRequest::Import { file, out } => commands::weather::import(&file, &out),
        },
        Request::Shade(source, out) => commands::shade::shade(&source, out.as_deref()),
        Request::Curve(r) => commands::curve::curve(&r),
        Request::Template => Ok(Outcome {
            stdout: commands::TEMPLATE_PLAN.to_string(),
            ..Outcome::default()
        }),
        Request::Sunpath(r) => commands::sunpath::sunpath(&r),
    }
}
