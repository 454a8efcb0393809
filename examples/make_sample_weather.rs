//! Writes the bundled demo weather year (Larchwood cabin, invented) to a CSV file.
//!
//! `cargo run --release --example make_sample_weather -- weather-samples/larchwood-2025.csv`
//!
//! The numbers come from `wirerank::weather_gen::sample` with its fixed seed, so running this
//! again gives the same bytes. It only writes; it does not check the file into anything.

use std::path::PathBuf;
use std::process::ExitCode;

use wirerank::io::weather_csv::write_weather_csv;
use wirerank::weather_gen::sample::{generate, larchwood_2025, LARCHWOOD_SEED};

fn main() -> ExitCode {
    let mut args = std::env::args_os().skip(1);
    let (Some(out), None) = (args.next(), args.next()) else {
        eprintln!("usage: make_sample_weather <out.csv>");
        return ExitCode::from(2);
    };
    let out = PathBuf::from(out);
    let weather = match generate(&larchwood_2025(), LARCHWOOD_SEED) {
        Ok(w) => w,
        Err(e) => {
            eprintln!("error: {e}");
            return ExitCode::from(2);
        }
    };
    if let Err(e) = write_weather_csv(&weather, &out) {
        eprintln!("error: {e}");
        return ExitCode::from(2);
    }
    let ghi_kwh_m2: f64 = weather.ghi_w_m2.iter().sum::<f64>() / 1000.0;
    let (t_min, t_max) = weather
        .air_temp_c
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &t| {
            (lo.min(t), hi.max(t))
        });
    eprintln!(
        "wrote {} hourly rows to {}: GHI {ghi_kwh_m2:.0} kWh/m² a year, air {t_min:.1} to {t_max:.1} °C",
        weather.len(),
        out.display()
    );
    ExitCode::SUCCESS
}
