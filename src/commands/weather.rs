//! The `wirerank weather …` commands: synthesize a year from monthly means, inspect a weather
//! file, import the open typical-year format.
//!
//! Each command is one function returning an [`Outcome`] (text for stdout, warnings for
//! stderr); the binary only parses flags and calls them. Orchestration only: the maths lives
//! in `weather_gen::synth` (pure), the per-month summary in `results::weather_summary`, and
//! the file formats (the monthly-inputs TOML, weather CSV, typical-year files, plots) in
//! `io/`. It never overwrites a command's input file, and writes outputs atomically.

use std::fmt::Write as _;
use std::path::Path;

use crate::commands::Outcome;
use crate::error::Error;
use crate::io;
use crate::io::atomic::same_file;
use crate::io::monthly_toml::parse_monthly_climate;
use crate::io::terminal::summary_text;
use crate::io::typical_year::{parse_typical_year, read_any_weather};
use crate::io::weather_csv::write_weather_csv;
use crate::io::weather_plot::{write_daily_irradiation_png, write_daily_irradiation_svg};
use crate::results::weather_summary::summarize;
use crate::weather_gen::synth::MONTH_NAMES;
use crate::weather_gen::synth::{synthesize, SynthError};

fn refuse_overwrite(input: &Path, out: &Path) -> Result<(), Error> {
    if same_file(input, out) {
        return Err(Error::Usage(format!(
            "--out {} is the input file; choose another output name (the input is never overwritten)",
            out.display()
        )));
    }
    Ok(())
}

/// `wirerank weather synth <input.monthly.toml> --seed N --out <out.csv>`: synthesizes an
/// hourly year from monthly means and writes it in the crate's CSV format.
///
/// # Errors
/// [`Error::Usage`] for bad inputs (naming line, key and month) or `out` = `input`;
/// [`Error::Weather`] when the input cannot be read or the output cannot be written.
pub fn synth_from_file(input: &Path, seed: u64, out: &Path) -> Result<Outcome, Error> {
    refuse_overwrite(input, out)?;
    let file = input.display().to_string();
    let text = io::read_weather_text(input)?;
    let climate = parse_monthly_climate(&text, &file)?;
    let synthesis = synthesize(&climate, seed, &out.display().to_string())
        .map_err(|e: SynthError| Error::Usage(format!("{file}: {e}")))?;
    let w = &synthesis.weather;
    w.check_against_extraterrestrial(
        climate.latitude_deg(),
        climate.longitude_deg(),
        climate.utc_offset_h(),
    )?;
    write_weather_csv(w, out)?;

    let summary = summarize(w);
    let mut text = String::new();
    let _ = writeln!(
        text,
        "wrote {}: {} hourly rows for {} ({}), seed {seed}",
        out.display(),
        w.len(),
        climate.name(),
        climate.year()
    );
    let _ = writeln!(
        text,
        "methods: Aguiar et al. 1988 daily Markov matrices, TAG hourly clearness (Aguiar & Collares-Pereira 1992), Haurwitz clear sky + 10 %, Erbs split, Parton & Logan 1981 daily temperature cycle"
    );
    let _ = writeln!(text);
    let _ = writeln!(
        text,
        "month   GHI kWh/m²/day     mean °C       daily min °C   daily max °C"
    );
    let _ = writeln!(
        text,
        "        input  output   input output   input output   input output"
    );
    let (lo, hi) = climate.air_min_max_c();
    for m in &summary.months {
        let i = m.month as usize - 1;
        let _ = writeln!(
            text,
            "{:<6} {:>6.2} {:>7.2} {:>7.1} {:>6.1} {:>7.1} {:>6.1} {:>7.1} {:>6.1}",
            &MONTH_NAMES[i][..3],
            climate.ghi_kwh_m2_day()[i],
            m.ghi_kwh_m2_day,
            climate.air_mean_c()[i],
            m.air_mean_c,
            lo[i],
            m.air_daily_min_c,
            hi[i],
            m.air_daily_max_c
        );
    }
    Ok(Outcome {
        stdout: text,
        warnings: w.warnings.iter().map(ToString::to_string).collect(),
        nothing_passed: false,
    })
}

/// `wirerank weather inspect <file> [--plot-dir DIR]`: monthly irradiation and temperatures,
/// repairs, extremes; with a folder, also `<stem>-daily-ghi.png` and `.svg` there.
///
/// # Errors
/// [`Error::Weather`] for an unreadable or invalid file, [`Error::Output`] when a plot
/// cannot be written.
pub fn inspect(path: &Path, plot_dir: Option<&Path>) -> Result<Outcome, Error> {
    let w = read_any_weather(path)?;
    let summary = summarize(&w);
    let mut text = summary_text(&w, &summary);
    if let Some(dir) = plot_dir {
        io::create_output_dir(dir)?;
        let stem = path
            .file_stem()
            .map_or_else(|| "weather".into(), |s| s.to_string_lossy().into_owned());
        let title = format!(
            "{}: daily global horizontal irradiation",
            w.site.name.as_deref().unwrap_or(&stem)
        );
        let png = dir.join(format!("{stem}-daily-ghi.png"));
        let svg = dir.join(format!("{stem}-daily-ghi.svg"));
        write_daily_irradiation_png(&summary.days, &title, &png)?;
        write_daily_irradiation_svg(&summary.days, &title, &svg)?;
        let _ = writeln!(text, "\nplots: {} and {}", png.display(), svg.display());
    }
    Ok(Outcome {
        stdout: text,
        warnings: w.warnings.iter().map(ToString::to_string).collect(),
        nothing_passed: false,
    })
}

/// `wirerank weather import <file> --out <out.csv>`: converts the open typical-year format
/// into the crate's CSV (validated, checked against the sun at the file's LOCATION).
///
/// # Errors
/// [`Error::Usage`] when `out` = `input`; [`Error::Weather`] for an unreadable or invalid
/// input or an output that cannot be written.
pub fn import(input: &Path, out: &Path) -> Result<Outcome, Error> {
    refuse_overwrite(input, out)?;
    let file = input.display().to_string();
    let text = io::read_weather_text(input)?;
    let imported = parse_typical_year(&text, &file)?;
    let w = &imported.weather;
    if let (Some(lat), Some(lon), Some(utc)) = (
        w.site.latitude_deg,
        w.site.longitude_deg,
        w.site.utc_offset_h,
    ) {
        w.check_against_extraterrestrial(lat, lon, utc)?;
    }
    write_weather_csv(w, out)?;
    let summary = summarize(w);
    let total: f64 = summary.months.iter().map(|m| m.ghi_kwh_m2).sum();
    let mut stdout = String::new();
    let _ = writeln!(
        stdout,
        "imported {file} into {}: {} hourly rows ({} … {}), site {}, {:.1} kWh/m² global horizontal",
        out.display(),
        w.len(),
        w.stamp_text(0),
        w.stamp_text(w.len() - 1),
        w.site.name.as_deref().unwrap_or("without a name"),
        total
    );
    let mut warnings = imported.notes.clone();
    warnings.extend(w.warnings.iter().map(ToString::to_string));
    Ok(Outcome {
        stdout,
        warnings,
        nothing_passed: false,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn synth_refuses_to_write_over_its_input() {
        let dir = tempfile::tempdir().unwrap();
        let a = dir.path().join("x.monthly.toml");
        std::fs::write(&a, "").unwrap();
        let msg = synth_from_file(&a, 1, &dir.path().join(".").join("x.monthly.toml"))
            .unwrap_err()
            .to_string();
        assert!(msg.contains("is the input file"), "{msg}");
    }
}
