//! The `weather inspect` plot: daily global horizontal irradiation over the whole file, with
//! each month's mean day drawn over it, as PNG or SVG.
//!
//! Text is drawn with the embedded Noto Sans font through plotters' `ab_glyph` backend, so
//! no system fonts are needed; the font is registered once per process (registering it again
//! elsewhere is harmless). Files are written atomically (a temporary file, then a rename).
//! This module only draws: the daily values come from the caller (`weather_tools.rs`), and
//! it knows nothing about the weather format.

use std::path::Path;
use std::sync::OnceLock;

use plotters::prelude::*;
use plotters::style::FontStyle;

use crate::error::Error;
use crate::results::weather_summary::DayPoint;
use crate::time::LocalTime;

/// Pixel size of the plot.
pub const PLOT_SIZE: (u32, u32) = (900, 360);

const MONTH_ABBR: [&str; 12] = [
    "Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec",
];

/// Registers the embedded font under "sans-serif" once; the outcome is remembered.
fn ensure_font() -> Result<(), String> {
    static FONT: OnceLock<Result<(), String>> = OnceLock::new();
    FONT.get_or_init(|| {
        plotters::style::register_font("sans-serif", FontStyle::Normal, notosans::REGULAR_TTF)
            .map_err(|_| "the embedded Noto Sans font could not be loaded".to_string())
    })
    .clone()
}

/// Draws the chart on any backend.
fn draw<DB: DrawingBackend>(
    area: DrawingArea<DB, plotters::coord::Shift>,
    days: &[DayPoint],
    title: &str,
) -> Result<(), String>
where
    DB::ErrorType: 'static,
{
    let fail = |e: DrawingAreaErrorKind<DB::ErrorType>| format!("drawing failed: {e}");
    area.fill(&WHITE).map_err(fail)?;
    let n = days.len().max(1) as f64;
    let top = days
        .iter()
        .map(|d| d.ghi_kwh_m2)
        .fold(0.0_f64, f64::max)
        .max(0.5)
        * 1.08;
    let first = days.first().map_or(0, |d| d.day_start_s);
    let multi_year = days
        .last()
        .is_some_and(|d| civil_of(d.day_start_s).0 != civil_of(first).0);
    // Month labels go at the first day of each month (every second or third month on long
    // files), drawn by hand because the axis' own labels fall on round numbers of days.
    let starts: Vec<(usize, String)> = days
        .iter()
        .enumerate()
        .filter(|(_, d)| civil_of(d.day_start_s).2 == 1)
        .map(|(i, d)| {
            let (y, m, _) = civil_of(d.day_start_s);
            let name = MONTH_ABBR[m as usize - 1];
            let label = if multi_year && m == 1 {
                format!("{name} {y}")
            } else {
                name.to_string()
            };
            (i, label)
        })
        .collect();
    let stride = starts.len().div_ceil(13).max(1);
    let mut chart = ChartBuilder::on(&area)
        .caption(title, ("sans-serif", 20))
        .margin(12)
        .x_label_area_size(32)
        .y_label_area_size(56)
        .build_cartesian_2d(0.0..n, 0.0..top)
        .map_err(fail)?;
    chart
        .configure_mesh()
        .disable_x_mesh()
        .light_line_style(TRANSPARENT)
        .x_labels(0)
        .y_labels(8)
        .y_desc("kWh/m² per day")
        .label_style(("sans-serif", 13))
        .axis_desc_style(("sans-serif", 14))
        .draw()
        .map_err(fail)?;
    let label_style = TextStyle::from(("sans-serif", 13).into_font()).pos(
        plotters::style::text_anchor::Pos::new(
            plotters::style::text_anchor::HPos::Left,
            plotters::style::text_anchor::VPos::Top,
        ),
    );
    for (i, label) in starts.iter().step_by(stride) {
        let (px, py) = chart.backend_coord(&(*i as f64, 0.0));
        area.draw(&PathElement::new(
            vec![(px, py), (px, py + 5)],
            BLACK.stroke_width(1),
        ))
        .map_err(fail)?;
        area.draw(&Text::new(
            label.clone(),
            (px + 3, py + 7),
            label_style.clone(),
        ))
        .map_err(fail)?;
    }
    let bar = RGBColor(240, 170, 40);
    chart
        .draw_series(days.iter().enumerate().map(|(i, d)| {
            Rectangle::new(
                [(i as f64, 0.0), (i as f64 + 1.0, d.ghi_kwh_m2)],
                bar.mix(0.85).filled(),
            )
        }))
        .map_err(fail)?
        .label("daily")
        .legend(move |(x, y)| Rectangle::new([(x, y - 5), (x + 14, y + 5)], bar.filled()));

    // Each month's mean day as a step over the bars.
    let mut steps: Vec<(f64, f64)> = Vec::new();
    let mut i = 0;
    while i < days.len() {
        let key = month_key(days[i].day_start_s);
        let mut j = i;
        while j < days.len() && month_key(days[j].day_start_s) == key {
            j += 1;
        }
        let mean = days[i..j].iter().map(|d| d.ghi_kwh_m2).sum::<f64>() / (j - i) as f64;
        steps.push((i as f64, mean));
        steps.push((j as f64, mean));
        i = j;
    }
    let line = RGBColor(30, 70, 150);
    chart
        .draw_series(LineSeries::new(steps, line.stroke_width(2)))
        .map_err(fail)?
        .label("monthly mean")
        .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 14, y)], line.stroke_width(2)));
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::UpperRight)
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK.mix(0.3))
        .label_font(("sans-serif", 13))
        .draw()
        .map_err(fail)?;
    area.present().map_err(fail)
}

fn month_key(day_start_s: i64) -> (i64, u32) {
    let (y, m, _) = civil_of(day_start_s);
    (y, m)
}

/// The chart as SVG text.
///
/// # Errors
/// A lower-case message when the font cannot be loaded or drawing fails.
pub fn daily_irradiation_svg(days: &[DayPoint], title: &str) -> Result<String, String> {
    ensure_font()?;
    let mut buf = String::new();
    {
        let area = SVGBackend::with_string(&mut buf, PLOT_SIZE).into_drawing_area();
        draw(area, days, title)?;
    }
    Ok(buf)
}

/// Writes the chart as a PNG file, atomically.
///
/// # Errors
/// [`Error::Output`] naming the file when drawing or writing fails.
pub fn write_daily_irradiation_png(
    days: &[DayPoint],
    title: &str,
    path: &Path,
) -> Result<(), Error> {
    let output = |message: String| Error::Output {
        path: path.display().to_string(),
        source: std::io::Error::other(message),
    };
    ensure_font().map_err(output)?;
    // The bitmap encoder picks the format from the extension, so the temporary file keeps
    // `.png` at the end.
    crate::io::atomic::produce_atomic(path, |tmp| {
        let area = BitMapBackend::new(tmp, PLOT_SIZE).into_drawing_area();
        draw(area, days, title).map_err(std::io::Error::other)
    })
    .map_err(|source| Error::Output {
        path: path.display().to_string(),
        source,
    })
}

/// Writes the chart as an SVG file, atomically.
///
/// # Errors
/// [`Error::Output`] naming the file when drawing or writing fails.
pub fn write_daily_irradiation_svg(
    days: &[DayPoint],
    title: &str,
    path: &Path,
) -> Result<(), Error> {
    let svg = daily_irradiation_svg(days, title).map_err(|message| Error::Output {
        path: path.display().to_string(),
        source: std::io::Error::other(message),
    })?;
    crate::io::atomic::write_atomic(path, svg.as_bytes()).map_err(|source| Error::Output {
        path: path.display().to_string(),
        source,
    })
}

fn civil_of(local_s: i64) -> (i64, u32, u32) {
    LocalTime(local_s).civil()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn year(days: usize) -> Vec<DayPoint> {
        let start = chrono::NaiveDate::from_ymd_opt(2025, 1, 1)
            .unwrap()
            .and_hms_opt(0, 0, 0)
            .unwrap()
            .and_utc()
            .timestamp();
        (0..days)
            .map(|d| DayPoint {
                day_start_s: start + 86_400 * d as i64,
                ghi_kwh_m2: 3.0 + 2.0 * (d as f64 / 58.0).sin(),
            })
            .collect()
    }

    #[test]
    fn svg_has_title_axis_and_months() {
        let svg = daily_irradiation_svg(&year(365), "Testfield 2025").unwrap();
        assert!(svg.starts_with("<svg"), "{}", &svg[..40]);
        for text in [
            "Testfield 2025",
            "kWh/m² per day",
            "Jan",
            "Jul",
            "monthly mean",
        ] {
            assert!(svg.contains(text), "missing {text}");
        }
    }

    #[test]
    fn empty_or_single_day_series_still_draws() {
        assert!(daily_irradiation_svg(&[], "empty").is_ok());
        assert!(daily_irradiation_svg(&year(1), "one").is_ok());
    }
}
