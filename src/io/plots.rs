//! Charts of a ranking run, drawn with plotters as PNG and SVG.
//!
//! Three pictures: the monthly energy of the best few layouts, where the best layout gains
//! or loses against the runner-up by month and hour of day, and the loss steps of the best
//! few layouts. The data of each chart is gathered first into a plain struct
//! ([`plan_charts`]), so that drawing cannot change a number. The fonts are the Noto Sans
//! faces compiled into the binary (registered once): no system font is ever looked up.
//!
//! This module does not decide where files go or how they are replaced: [`crate::io::export`]
//! gives it a path (PNG) or takes its text (SVG) and does the atomic renaming.

use std::path::Path;
use std::sync::OnceLock;

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use crate::results::RankResult;
use crate::sim::energy::{Step, STEPS};

/// Picture width, pixels.
pub const WIDTH_PX: u32 = 1000;
/// Picture height, pixels.
pub const HEIGHT_PX: u32 = 600;
/// At most this many ranked layouts in the monthly and loss charts (more bars per group
/// stop being readable, and four colours stay apart in greyscale).
pub const MAX_LAYOUTS: usize = 4;

const MONTHS: [&str; 12] = [
    "Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec",
];

/// Layout colours, best first. Our own picks: dark blue, burnt orange, sky blue, pale gold.
/// Blue against orange/gold survives the common colour-vision deficiencies (no red–green
/// pair), and the greyscale values (Rec. 601 luma 58, 106, 171, 221 of 255) are at least
/// 47 apart, so the bars stay apart on a black-and-white print too.
pub const LAYOUT_COLOURS: [RGBColor; MAX_LAYOUTS] = [
    RGBColor(0x1d, 0x3f, 0x6e),
    RGBColor(0xb5, 0x53, 0x1a),
    RGBColor(0x7d, 0xb8, 0xe0),
    RGBColor(0xf6, 0xe0, 0x8a),
];

/// Stops of the diverging gain ramp in CIELAB (L*, a*, b*), from the largest loss to the
/// largest gain. L* rises monotonically (28 → 85), so a greyscale print still orders the
/// cells from loss (dark) to gain (light); hue adds the sign on screen: blue = loss,
/// neutral grey = no difference, orange → gold = gain. Every stop is inside the sRGB gamut.
const GAIN_RAMP_LAB: [(f64, f64, f64); 5] = [
    (28.0, 15.0, -45.0),
    (44.0, 8.0, -25.0),
    (58.0, 0.0, 0.0),
    (72.0, 22.0, 50.0),
    (85.0, 0.0, 65.0),
];

/// Registers the embedded Noto Sans faces as "sans-serif" once per process. Text layout
/// needs font metrics even for SVG, so every chart calls this first.
fn fonts() -> Result<(), String> {
    static REGISTERED: OnceLock<Result<(), String>> = OnceLock::new();
    REGISTERED
        .get_or_init(|| {
            plotters::style::register_font("sans-serif", FontStyle::Normal, notosans::REGULAR_TTF)
                .map_err(|_| "the embedded regular font cannot be loaded".to_string())?;
            plotters::style::register_font("sans-serif", FontStyle::Bold, notosans::BOLD_TTF)
                .map_err(|_| "the embedded bold font cannot be loaded".to_string())
        })
        .clone()
}

/// Monthly energy delivered (into the battery, and to the load if any) of the best few
/// ranked layouts.
#[derive(Clone, Debug, PartialEq)]
pub struct MonthlyEnergy {
    /// (legend label, kWh per month January first), best first.
    pub layouts: Vec<(String, [f64; 12])>,
    /// How many layouts were ranked in all (the title says "best n of N").
    pub ranked: usize,
    /// The plan has a load: the energy went to the battery and the load.
    pub with_load: bool,
}

/// Month × hour-of-day difference between the best layout and the runner-up.
#[derive(Clone, Debug, PartialEq)]
pub struct GainMap {
    pub best: String,
    pub runner_up: String,
    /// Best minus runner-up, energy into the battery summed over the month's days in that
    /// hour of day (local standard time), Wh. `[month 0..12][hour 0..24]`.
    pub diff_wh: [[f64; 24]; 12],
    /// False where neither layout delivered anything (night, or a month the weather lacks):
    /// drawn blank rather than as "no difference".
    pub active: [[bool; 24]; 12],
}

/// The loss steps (kWh over the run) of the best few ranked layouts.
#[derive(Clone, Debug, PartialEq)]
pub struct Losses {
    /// (legend label, kWh per step in `Step::ALL` order), best first.
    pub layouts: Vec<(String, [f64; STEPS])>,
    pub ranked: usize,
}

/// State of charge at the end of each day for the best two layouts (with a battery model).
#[derive(Clone, Debug, PartialEq)]
pub struct DailySoc {
    /// (legend label, state of charge at the end of each day of the weather file, %).
    pub layouts: Vec<(String, Vec<f64>)>,
    /// The lowest state of charge the battery may reach (100 − usable depth), %.
    pub floor_pct: f64,
    pub ranked: usize,
}

/// Load left unserved per month for the best few layouts (with a load).
#[derive(Clone, Debug, PartialEq)]
pub struct MonthlyUnmet {
    /// (legend label, unmet kWh per month January first), best first.
    pub layouts: Vec<(String, [f64; 12])>,
    pub ranked: usize,
}

/// At most this many layouts in the daily state-of-charge chart (two lines stay readable
/// over 365 days; more become a tangle).
pub const MAX_SOC_LAYOUTS: usize = 2;

/// One chart with its data.
#[derive(Clone, Debug, PartialEq)]
pub enum Chart {
    MonthlyEnergy(MonthlyEnergy),
    /// Boxed: its month × hour grid is far larger than the other charts' data.
    GainMap(Box<GainMap>),
    Losses(Losses),
    DailySoc(DailySoc),
    MonthlyUnmet(MonthlyUnmet),
    /// Sun paths, horizon and obstacles seen from one group (the shade report).
    SunPath(Box<crate::results::shade_view::SunPathView>),
    /// The wiring diagram of one layout (`wiring_<id>`).
    Wiring(Box<crate::io::diagram::WiringDiagram>),
}

/// The charts a run can draw, and a line for each one it cannot (for provenance.txt).
#[derive(Clone, Debug, PartialEq)]
pub struct PlannedCharts {
    pub charts: Vec<Chart>,
    pub skipped: Vec<String>,
}

impl Chart {
    /// File name without extension.
    pub fn stem(&self) -> String {
        match self {
            Chart::MonthlyEnergy(_) => "monthly_energy".into(),
            Chart::GainMap(_) => "gain_map".into(),
            Chart::Losses(_) => "losses".into(),
            Chart::DailySoc(_) => "daily_soc".into(),
            Chart::MonthlyUnmet(_) => "monthly_unmet".into(),
            Chart::SunPath(_) => "sun_path".into(),
            Chart::Wiring(d) => format!("wiring_{}", d.id),
        }
    }

    /// Picture size in pixels.
    pub fn size(&self) -> (u32, u32) {
        match self {
            Chart::Wiring(d) => d.size(),
            _ => (WIDTH_PX, HEIGHT_PX),
        }
    }

    /// Renders the chart as SVG text.
    ///
    /// # Errors
    /// The embedded fonts cannot be loaded, or plotters fails to lay the chart out.
    pub fn to_svg(&self) -> Result<String, String> {
        fonts()?;
        let mut buf = String::new();
        {
            let root = SVGBackend::with_string(&mut buf, self.size()).into_drawing_area();
            self.draw(&root)?;
            root.present().map_err(|e| e.to_string())?;
        }
        Ok(buf)
    }

    /// Renders the chart as a PNG file at `path` (the path must end in `.png`: the encoder
    /// picks the format from the extension).
    ///
    /// # Errors
    /// The fonts cannot be loaded, or the file cannot be encoded or written.
    pub fn to_png(&self, path: &Path) -> Result<(), String> {
        fonts()?;
        let root = BitMapBackend::new(path, self.size()).into_drawing_area();
        self.draw(&root)?;
        root.present().map_err(|e| e.to_string())
    }

    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Result<(), String> {
        root.fill(&WHITE).map_err(|e| e.to_string())?;
        match self {
            Chart::MonthlyEnergy(c) => draw_monthly(root, c),
            Chart::GainMap(c) => draw_gain_map(root, c),
            Chart::Losses(c) => draw_losses(root, c),
            Chart::DailySoc(c) => draw_daily_soc(root, c),
            Chart::MonthlyUnmet(c) => draw_monthly_unmet(root, c),
            Chart::SunPath(v) => draw_sun_path(root, v),
            Chart::Wiring(d) => return crate::io::diagram::draw(root, d),
        }
        .map_err(|e| e.to_string())
    }
}

/// Gathers the data of every chart the run allows.
pub fn plan_charts(r: &RankResult, diagrams: &[String]) -> PlannedCharts {
    let ranked: Vec<_> = r
        .outcomes
        .iter()
        .filter(|o| o.rank.is_some())
        .filter_map(|o| o.energy.as_ref().map(|e| (o, e)))
        .collect();
    let mut charts = Vec::new();
    let mut skipped = Vec::new();
    if ranked.is_empty() {
        skipped.push(
            "monthly_energy, gain_map, losses, daily_soc, monthly_unmet: not drawn, no layout passes the limits"
                .to_string(),
        );
        return PlannedCharts { charts, skipped };
    }
    let label = |o: &crate::results::rank::LayoutOutcome| {
        format!("{} {}", o.layout.id, shorten(&o.layout.display_name(), 80))
    };
    // The wiring diagram of the recommended layout, then of each layout asked for by id.
    let mut drawn: Vec<&str> = Vec::new();
    let asked = r.recommended().into_iter().chain(
        diagrams
            .iter()
            .filter_map(|id| r.outcomes.iter().find(|o| &o.layout.id == id)),
    );
    for o in asked {
        if drawn.contains(&o.layout.id.as_str()) {
            continue;
        }
        drawn.push(&o.layout.id);
        charts.push(Chart::Wiring(Box::new(
            crate::io::diagram::WiringDiagram::new(&r.loaded.plan, &o.layout, &r.temps),
        )));
    }
    let best: Vec<_> = ranked.iter().take(MAX_LAYOUTS).collect();
    charts.push(Chart::MonthlyEnergy(MonthlyEnergy {
        layouts: best
            .iter()
            .map(|(o, e)| {
                let offered: [f64; 12] = std::array::from_fn(|m| e.offered_wh(m) / 1000.0);
                (label(o), offered)
            })
            .collect(),
        ranked: ranked.len(),
        with_load: r.loaded.plan.consumption.is_some(),
    }));
    match gain_map(r, &ranked) {
        Ok(g) => charts.push(Chart::GainMap(Box::new(g))),
        Err(why) => skipped.push(format!("gain_map: not drawn, {why}")),
    }
    charts.push(Chart::Losses(Losses {
        layouts: best
            .iter()
            .map(|(o, e)| (label(o), Step::ALL.map(|s| e.step_total_wh(s) / 1000.0)))
            .collect(),
        ranked: ranked.len(),
    }));
    let plan = &r.loaded.plan;
    match &plan.battery.model {
        Some(spec) => charts.push(Chart::DailySoc(DailySoc {
            layouts: ranked
                .iter()
                .take(MAX_SOC_LAYOUTS)
                .map(|(o, e)| {
                    (
                        label(o),
                        e.daily_soc_frac.iter().map(|f| 100.0 * f).collect(),
                    )
                })
                .collect(),
            floor_pct: 100.0 * spec.floor_soc_frac(),
            ranked: ranked.len(),
        })),
        None => skipped.push(
            "daily_soc: not drawn, the plan has no battery model (battery.capacity_ah)".to_string(),
        ),
    }
    if plan.consumption.is_some() {
        charts.push(Chart::MonthlyUnmet(MonthlyUnmet {
            layouts: best
                .iter()
                .map(|(o, e)| (label(o), e.unmet_wh.map(|w| w / 1000.0)))
                .collect(),
            ranked: ranked.len(),
        }));
    } else {
        skipped.push("monthly_unmet: not drawn, the plan has no [load] table".to_string());
    }
    PlannedCharts { charts, skipped }
}

fn gain_map(
    r: &RankResult,
    ranked: &[(
        &crate::results::rank::LayoutOutcome,
        &crate::sim::energy::LayoutEnergy,
    )],
) -> Result<GainMap, String> {
    let [(o1, e1), (o2, e2), ..] = ranked else {
        return Err("only one layout is ranked, so there is no runner-up to compare".into());
    };
    let w = &r.loaded.weather;
    if e1.hourly.is_empty() || e2.hourly.is_empty() {
        return Err("the run kept no interval rows (simulate with hourly rows to draw it)".into());
    }
    if e1.hourly.len() != w.len() || e2.hourly.len() != w.len() {
        return Err(format!(
            "the run kept {} interval rows for {} weather rows",
            e1.hourly.len(),
            w.len()
        ));
    }
    let interval_h = w.interval_s as f64 / 3600.0;
    let mut diff_wh = [[0.0; 24]; 12];
    let mut active = [[false; 24]; 12];
    for (k, (a, b)) in e1.hourly.iter().zip(&e2.hourly).enumerate() {
        let m = w.local_month(k) as usize - 1;
        let h = w.local_hour(k) as usize;
        diff_wh[m][h] += (a.delivered_w as f64 - b.delivered_w as f64) * interval_h;
        active[m][h] |= a.delivered_w > 0.0 || b.delivered_w > 0.0;
    }
    Ok(GainMap {
        best: shorten(&o1.layout.display_name(), 60),
        runner_up: shorten(&o2.layout.display_name(), 60),
        diff_wh,
        active,
    })
}

/// Cuts a long layout name so the legend stays on the picture.
fn shorten(s: &str, max_chars: usize) -> String {
    if s.chars().count() <= max_chars {
        s.to_string()
    } else {
        let mut t: String = s.chars().take(max_chars - 1).collect();
        t.push('…');
        t
    }
}

/// "best 4 of 9 ranked layouts", "all 3 ranked layouts" or "the one ranked layout".
fn which_layouts(shown: usize, ranked: usize) -> String {
    match (shown, ranked) {
        (_, 1) => "the one ranked layout".to_string(),
        (s, r) if s == r => format!("all {r} ranked layouts"),
        (s, r) => format!("best {s} of {r} ranked layouts"),
    }
}

/// CIELAB (D65) to 8-bit sRGB, and whether the colour was inside the gamut before clamping.
///
/// # Formula
/// f_y = (L* + 16)/116, f_x = f_y + a*/500, f_z = f_y − b*/200; X,Y,Z = white · f⁻¹(f), with
/// f⁻¹(t) = t³ above 6/29, else 3·(6/29)²·(t − 4/29); linear sRGB = M·XYZ; then the sRGB
/// transfer curve (12.92·c below 0.0031308, else 1.055·c^(1/2.4) − 0.055).
///
/// # Source
/// CIE 15:2004 (CIELAB); IEC 61966-2-1:1999 (sRGB matrix and transfer curve), from memory.
///
/// # Validity
/// Any input; out-of-gamut channels are clamped to 0..=255.
pub fn lab_to_srgb(l: f64, a: f64, b: f64) -> (RGBColor, bool) {
    const D: f64 = 6.0 / 29.0;
    let finv = |t: f64| {
        if t > D {
            t * t * t
        } else {
            3.0 * D * D * (t - 4.0 / 29.0)
        }
    };
    let fy = (l + 16.0) / 116.0;
    let x = 0.950_47 * finv(fy + a / 500.0);
    let y = finv(fy);
    let z = 1.088_83 * finv(fy - b / 200.0);
    let lin = [
        3.2406 * x - 1.5372 * y - 0.4986 * z,
        -0.9689 * x + 1.8758 * y + 0.0415 * z,
        0.0557 * x - 0.2040 * y + 1.0570 * z,
    ];
    let mut inside = true;
    let c = lin.map(|c| {
        let g = if c <= 0.003_130_8 {
            12.92 * c
        } else {
            1.055 * c.powf(1.0 / 2.4) - 0.055
        };
        // A hair of tolerance for rounding in the matrix.
        inside &= (-1e-3..=1.0 + 1e-3).contains(&g);
        (g.clamp(0.0, 1.0) * 255.0).round() as u8
    });
    (RGBColor(c[0], c[1], c[2]), inside)
}

/// The gain ramp at t in 0..=1 (0 = largest loss, ½ = no difference, 1 = largest gain),
/// interpolated linearly in CIELAB between [`GAIN_RAMP_LAB`] stops.
pub fn gain_colour(t: f64) -> RGBColor {
    let lab = gain_lab(t);
    lab_to_srgb(lab.0, lab.1, lab.2).0
}

/// The CIELAB value of the gain ramp at t (clamped to 0..=1).
pub fn gain_lab(t: f64) -> (f64, f64, f64) {
    let t = if t.is_finite() {
        t.clamp(0.0, 1.0)
    } else {
        0.5
    };
    let n = GAIN_RAMP_LAB.len() - 1;
    let x = t * n as f64;
    let i = (x.floor() as usize).min(n - 1);
    let f = x - i as f64;
    let (p, q) = (GAIN_RAMP_LAB[i], GAIN_RAMP_LAB[i + 1]);
    (
        p.0 + (q.0 - p.0) * f,
        p.1 + (q.1 - p.1) * f,
        p.2 + (q.2 - p.2) * f,
    )
}

type DrawResult<DB> = Result<(), DrawingAreaErrorKind<<DB as DrawingBackend>::ErrorType>>;

fn font(size: f64) -> TextStyle<'static> {
    ("sans-serif", size).into_font().into()
}

fn bold(size: f64) -> TextStyle<'static> {
    ("sans-serif", size, FontStyle::Bold).into_font().into()
}

/// The legend strip under a chart: one swatch and label per layout, one per line so that
/// long layout names fit.
fn draw_legend<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    entries: &[(String, RGBColor)],
) -> DrawResult<DB> {
    for (i, (label, colour)) in entries.iter().enumerate() {
        let (x, y) = (70, 4 + i as i32 * LEGEND_ROW_PX);
        let swatch = [(x, y + 2), (x + 22, y + 17)];
        area.draw(&Rectangle::new(swatch, colour.filled()))?;
        area.draw(&Rectangle::new(swatch, BLACK))?;
        area.draw(&Text::new(label.clone(), (x + 32, y + 1), font(16.0)))?;
    }
    Ok(())
}

const LEGEND_ROW_PX: i32 = 22;

fn legend_height(n: usize) -> u32 {
    8 + LEGEND_ROW_PX as u32 * n as u32
}

fn draw_monthly<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    c: &MonthlyEnergy,
) -> DrawResult<DB> {
    let (what, axis) = if c.with_load {
        (
            "Monthly energy offered by the controllers (before a full battery turns any away)",
            "energy offered, kWh",
        )
    } else {
        (
            "Monthly energy offered by the controllers",
            "energy offered, kWh",
        )
    };
    let title = format!("{what}, {}", which_layouts(c.layouts.len(), c.ranked));
    draw_month_bars(root, &title, axis, &c.layouts)
}

fn draw_monthly_unmet<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    c: &MonthlyUnmet,
) -> DrawResult<DB> {
    let none = c.layouts.iter().all(|(_, m)| m.iter().all(|&v| v <= 0.0));
    let title = format!(
        "Load left unserved per month, {}{}",
        which_layouts(c.layouts.len(), c.ranked),
        if none {
            " (none: every hour's load is met)"
        } else {
            ""
        }
    );
    draw_month_bars(root, &title, "unmet load, kWh", &c.layouts)
}

/// Bars per month, one per layout side by side, with the legend under the chart.
fn draw_month_bars<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    title: &str,
    y_desc: &str,
    layouts: &[(String, [f64; 12])],
) -> DrawResult<DB> {
    let n = layouts.len().max(1);
    let (top, legend) = root.split_vertically(HEIGHT_PX - legend_height(layouts.len()));
    let y_max = layouts
        .iter()
        .flat_map(|(_, m)| m.iter().copied())
        .fold(0.0, f64::max);
    let y_max = if y_max > 0.0 { y_max * 1.08 } else { 1.0 };
    // Small values (a few kWh of unmet load) need a decimal on the axis.
    let decimals = if y_max < 8.0 { 1 } else { 0 };
    let mut chart = ChartBuilder::on(&top)
        .caption(title, bold(24.0))
        .margin(12)
        .x_label_area_size(50)
        .y_label_area_size(70)
        .build_cartesian_2d(-0.5f64..11.5f64, 0f64..y_max)?;
    chart
        .configure_mesh()
        .disable_x_mesh()
        .x_labels(12)
        .x_label_formatter(&|x| {
            let m = x.round();
            if (x - m).abs() < 1e-6 && (0.0..12.0).contains(&m) {
                MONTHS[m as usize].to_string()
            } else {
                String::new()
            }
        })
        .y_labels(8)
        .y_label_formatter(&|y| format!("{y:.decimals$}"))
        .x_desc("month")
        .y_desc(y_desc)
        .label_style(font(17.0))
        .axis_desc_style(font(18.0))
        .max_light_lines(0)
        .bold_line_style(RGBColor(0xdd, 0xdd, 0xdd))
        .draw()?;
    // Bars of one month side by side, filling 80 % of the month's width.
    let bar_w = 0.8 / n as f64;
    for (i, (_, monthly)) in layouts.iter().enumerate() {
        let colour = LAYOUT_COLOURS[i % MAX_LAYOUTS];
        for (m, &v) in monthly.iter().enumerate() {
            let x0 = m as f64 - 0.4 + i as f64 * bar_w;
            let rect = [(x0, 0.0), (x0 + bar_w, v.max(0.0))];
            chart.draw_series([
                Rectangle::new(rect, colour.filled()),
                Rectangle::new(rect, BLACK.stroke_width(1)),
            ])?;
        }
    }
    let entries: Vec<(String, RGBColor)> = layouts
        .iter()
        .enumerate()
        .map(|(i, (l, _))| (l.clone(), LAYOUT_COLOURS[i % MAX_LAYOUTS]))
        .collect();
    draw_legend(&legend, &entries)
}

/// First day (0-based) of each month in a year of 365 days.
const MONTH_START_DAY: [u32; 13] = [0, 31, 59, 90, 120, 151, 181, 212, 243, 273, 304, 334, 365];

/// Day of a one-year file (0-based, the end of day `d` at `d + 1`) as a month coordinate:
/// month k spans k..k+1, so month names sit at k + 0.5 whatever the month's length.
fn day_to_month_x(day_end: f64) -> f64 {
    let d = day_end.clamp(0.0, 365.0);
    let k = MONTH_START_DAY[1..]
        .iter()
        .position(|&s| d <= f64::from(s))
        .unwrap_or(11);
    let (a, b) = (
        f64::from(MONTH_START_DAY[k]),
        f64::from(MONTH_START_DAY[k + 1]),
    );
    k as f64 + (d - a) / (b - a)
}

fn draw_daily_soc<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    c: &DailySoc,
) -> DrawResult<DB> {
    let (top, legend) = root.split_vertically(HEIGHT_PX - legend_height(c.layouts.len() + 1));
    let days = c
        .layouts
        .iter()
        .map(|(_, d)| d.len())
        .max()
        .unwrap_or(0)
        .max(1);
    let title = format!(
        "State of charge at the end of each day, {}",
        which_layouts(c.layouts.len(), c.ranked)
    );
    // A year (365 or 366 days) is drawn on a month axis; longer files on a day count.
    let one_year = days <= 366;
    let x_of = |d: usize| {
        if one_year {
            day_to_month_x((d + 1) as f64 * 365.0 / days.max(365) as f64)
        } else {
            (d + 1) as f64
        }
    };
    let x_max = if one_year { 12.0 } else { days as f64 };
    let mut chart = ChartBuilder::on(&top)
        .caption(title, bold(24.0))
        .margin(12)
        .margin_right(24)
        .x_label_area_size(50)
        .y_label_area_size(70)
        .build_cartesian_2d(0f64..x_max, 0f64..100f64)?;
    chart
        .configure_mesh()
        .disable_x_mesh()
        .x_labels(if one_year { 25 } else { 10 })
        .x_label_formatter(&|x| {
            if one_year {
                // Month names at the middle of each month.
                let k = (x - 0.5).round();
                if (x - 0.5 - k).abs() < 1e-6 && (0.0..12.0).contains(&k) {
                    MONTHS[k as usize].to_string()
                } else {
                    String::new()
                }
            } else {
                format!("{x:.0}")
            }
        })
        .y_labels(11)
        .y_label_formatter(&|y| format!("{y:.0}"))
        .x_desc(if one_year {
            "end of each day, by month"
        } else {
            "day of the weather file"
        })
        .y_desc("state of charge, %")
        .label_style(font(17.0))
        .axis_desc_style(font(18.0))
        .max_light_lines(0)
        .bold_line_style(RGBColor(0xdd, 0xdd, 0xdd))
        .draw()?;
    if one_year {
        // Month boundaries as faint lines.
        for k in 1..12 {
            let x = k as f64;
            chart.draw_series([PathElement::new(
                vec![(x, 0.0), (x, 100.0)],
                RGBColor(0xdd, 0xdd, 0xdd),
            )])?;
        }
    }
    // The floor: the battery never goes below it; load is left unmet there.
    let floor = RGBColor(0x80, 0x80, 0x80);
    chart.draw_series(DashedLineSeries::new(
        [(0.0, c.floor_pct), (x_max, c.floor_pct)],
        8,
        6,
        floor.stroke_width(2),
    ))?;
    // The best layout last, so that its line is on top where the two overlap.
    for (i, (_, soc)) in c.layouts.iter().enumerate().rev() {
        let colour = LAYOUT_COLOURS[i % MAX_LAYOUTS];
        let points = soc.iter().enumerate().map(|(d, &v)| (x_of(d), v));
        let width = if i == 0 { 2 } else { 3 };
        chart.draw_series(LineSeries::new(points, colour.stroke_width(width)))?;
    }
    let mut entries: Vec<(String, RGBColor)> = c
        .layouts
        .iter()
        .enumerate()
        .map(|(i, (l, _))| (l.clone(), LAYOUT_COLOURS[i % MAX_LAYOUTS]))
        .collect();
    entries.push((
        format!(
            "floor: {:.0} % (the usable depth of discharge ends here; load goes unmet)",
            c.floor_pct
        ),
        floor,
    ));
    draw_legend(&legend, &entries)
}

fn draw_gain_map<DB: DrawingBackend>(root: &DrawingArea<DB, Shift>, c: &GainMap) -> DrawResult<DB> {
    let (main, key) = root.split_horizontally(WIDTH_PX - 150);
    let v_max = c
        .diff_wh
        .iter()
        .zip(&c.active)
        .flat_map(|(d, a)| d.iter().zip(a).filter(|(_, &on)| on).map(|(v, _)| v.abs()))
        .fold(0.0, f64::max);
    // A symmetric scale so that equal colours mean equal Wh on either side.
    let v_max = if v_max > 0.0 { v_max } else { 1.0 };
    let (head, body) = main.split_vertically(80);
    head.draw(&Text::new(
        "Where the best layout gains or loses against the runner-up".to_string(),
        (24, 8),
        bold(26.0),
    ))?;
    head.draw(&Text::new(
        format!("best: {}   minus   runner-up: {}", c.best, c.runner_up),
        (24, 42),
        font(16.0),
    ))?;
    let mut chart = ChartBuilder::on(&body)
        .margin_left(12)
        .margin_right(16)
        .margin_bottom(12)
        .x_label_area_size(50)
        .y_label_area_size(60)
        .build_cartesian_2d(0f64..24f64, -0.5f64..11.5f64)?;
    chart
        .configure_mesh()
        .disable_mesh()
        .x_labels(13)
        .x_label_formatter(&|x| format!("{:02}", x.round() as i64))
        .y_labels(12)
        .y_label_formatter(&|y| {
            let k = y.round();
            if (y - k).abs() < 1e-6 && (0.0..12.0).contains(&k) {
                // January at the top.
                MONTHS[11 - k as usize].to_string()
            } else {
                String::new()
            }
        })
        .x_desc("hour of day, local standard time (start of the hour)")
        .label_style(font(17.0))
        .axis_desc_style(font(18.0))
        .draw()?;
    let mut cells = Vec::with_capacity(12 * 24);
    for m in 0..12 {
        let y = (11 - m) as f64;
        for h in 0..24 {
            let rect = [(h as f64, y - 0.5), (h as f64 + 1.0, y + 0.5)];
            let fill = if c.active[m][h] {
                gain_colour(0.5 + 0.5 * c.diff_wh[m][h] / v_max)
            } else {
                WHITE
            };
            cells.push(Rectangle::new(rect, fill.filled()));
            // A hairline grid keeps blank (night) cells and equal cells apart.
            cells.push(Rectangle::new(
                rect,
                RGBColor(0xe4, 0xe4, 0xe4).stroke_width(1),
            ));
        }
    }
    chart.draw_series(cells)?;

    // Colour key.
    let (_, key_body) = key.split_vertically(80);
    let mut k = ChartBuilder::on(&key_body)
        .margin_top(0)
        .margin_bottom(62)
        .margin_right(8)
        .y_label_area_size(70)
        .build_cartesian_2d(0f64..1f64, -v_max..v_max)?;
    k.configure_mesh()
        .disable_mesh()
        .disable_x_axis()
        .y_labels(9)
        .y_label_formatter(&|v| {
            if v.abs() < 0.5 {
                "0".to_string()
            } else {
                format!("{v:+.0}")
            }
        })
        .y_desc("best − runner-up, Wh per month-hour")
        .label_style(font(15.0))
        .axis_desc_style(font(15.0))
        .draw()?;
    let steps = 120;
    k.draw_series((0..steps).map(|i| {
        let t0 = i as f64 / steps as f64;
        let t1 = (i + 1) as f64 / steps as f64;
        Rectangle::new(
            [
                (0.0, -v_max + 2.0 * v_max * t0),
                (1.0, -v_max + 2.0 * v_max * t1),
            ],
            gain_colour((t0 + t1) / 2.0).filled(),
        )
    }))?;
    k.draw_series([Rectangle::new([(0.0, -v_max), (1.0, v_max)], BLACK)])?;
    let (kw, kh) = key_body.dim_in_pixel();
    let centre = Pos::new(HPos::Center, VPos::Top);
    key_body.draw(&Text::new(
        "white: no output".to_string(),
        (kw as i32 / 2, kh as i32 - 52),
        font(14.0).pos(centre),
    ))?;
    key_body.draw(&Text::new(
        "from either".to_string(),
        (kw as i32 / 2, kh as i32 - 34),
        font(14.0).pos(centre),
    ))?;
    Ok(())
}

/// Readable step names for the losses chart (the CSV uses `Step::key`).
fn step_label(s: Step) -> &'static str {
    match s {
        Step::Incidence => "incidence angle",
        Step::Soiling => "soiling, snow",
        Step::Shading => "shading",
        Step::TemperatureLowLight => "temperature, low light",
        Step::Mismatch => "mismatch",
        Step::Cables => "cables",
        Step::WindowStartup => "window, start-up",
        Step::InputLimit => "input current limit",
        Step::Clipping => "output clipping",
        Step::Conversion => "conversion",
        Step::Curtailed => "curtailed (battery full)",
    }
}

fn draw_losses<DB: DrawingBackend>(root: &DrawingArea<DB, Shift>, c: &Losses) -> DrawResult<DB> {
    // Rows from the bottom: the last step at 0, the first at the top.
    const LAST_STEP: f64 = (STEPS - 1) as f64;
    let n = c.layouts.len().max(1);
    let (top, legend) = root.split_vertically(HEIGHT_PX - legend_height(c.layouts.len()));
    let values = c.layouts.iter().flat_map(|(_, s)| s.iter().copied());
    let (lo, hi) = values.fold((0.0f64, 0.0f64), |(a, b), v| (a.min(v), b.max(v)));
    let pad = 0.06 * (hi - lo).max(1e-9);
    let x_lo = if lo < 0.0 { lo - pad } else { 0.0 };
    let x_hi = if hi > 0.0 { hi + pad } else { 1.0 };
    let title = format!(
        "Where the energy goes: loss steps of {}",
        which_layouts(c.layouts.len(), c.ranked)
    );
    let mut chart = ChartBuilder::on(&top)
        .caption(title, bold(26.0))
        .margin(12)
        .margin_right(24)
        .x_label_area_size(50)
        .y_label_area_size(200)
        .build_cartesian_2d(x_lo..x_hi, -0.5f64..LAST_STEP + 0.5)?;
    chart
        .configure_mesh()
        .disable_y_mesh()
        .y_labels(STEPS)
        .y_label_formatter(&|y| {
            let k = y.round();
            if (y - k).abs() < 1e-6 && (0.0..=LAST_STEP).contains(&k) {
                // The first step at the top, as energy flows.
                step_label(Step::ALL[STEPS - 1 - k as usize]).to_string()
            } else {
                String::new()
            }
        })
        .x_labels(10)
        .x_label_formatter(&|x| format!("{x:.0}"))
        .x_desc("energy lost over the run, kWh (negative = gained, e.g. cells colder than 25 °C)")
        .label_style(font(17.0))
        .axis_desc_style(font(17.0))
        .max_light_lines(0)
        .bold_line_style(RGBColor(0xdd, 0xdd, 0xdd))
        .draw()?;
    let bar_h = 0.8 / n as f64;
    for (i, (_, steps)) in c.layouts.iter().enumerate() {
        let colour = LAYOUT_COLOURS[i % MAX_LAYOUTS];
        for (k, &v) in steps.iter().enumerate() {
            let y_top = (STEPS - 1 - k) as f64 + 0.4 - i as f64 * bar_h;
            let rect = [(0.0, y_top - bar_h), (v, y_top)];
            chart.draw_series([
                Rectangle::new(rect, colour.filled()),
                Rectangle::new(rect, BLACK.stroke_width(1)),
            ])?;
        }
    }
    // The zero line, so that a gain (bar to the left) reads as one.
    chart.draw_series([Rectangle::new(
        [(0.0, -0.5), (0.0, LAST_STEP + 0.5)],
        BLACK.stroke_width(1),
    )])?;
    let entries: Vec<(String, RGBColor)> = c
        .layouts
        .iter()
        .enumerate()
        .map(|(i, (l, _))| (l.clone(), LAYOUT_COLOURS[i % MAX_LAYOUTS]))
        .collect();
    draw_legend(&legend, &entries)
}

/// The sun's paths over the year seen from a group, with the horizon and the obstacles.
fn draw_sun_path<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    v: &crate::results::shade_view::SunPathView,
) -> DrawResult<DB> {
    let top = v
        .days
        .iter()
        .flat_map(|(_, p)| p.iter().map(|x| x.1))
        .fold(10.0_f64, f64::max)
        .ceil()
        + 5.0;
    let mut chart = ChartBuilder::on(root)
        .caption(
            format!(
                "Sun paths over the horizon and obstacles, seen from group {}",
                v.group
            ),
            bold(22.0),
        )
        .margin(16)
        .x_label_area_size(48)
        .y_label_area_size(56)
        .build_cartesian_2d(0.0..360.0, 0.0..top)?;
    chart
        .configure_mesh()
        .x_desc("azimuth, degrees clockwise from north (90 E, 180 S, 270 W)")
        .y_desc("elevation above the horizontal, degrees")
        .x_labels(13)
        .label_style(font(14.0))
        .axis_desc_style(font(15.0))
        .light_line_style(RGBColor(0xee, 0xee, 0xee))
        .draw()?;
    // Horizon: the ground and hills below the line, mid grey.
    if !v.horizon.is_empty() {
        let mut area: Vec<(f64, f64)> = vec![(0.0, 0.0)];
        area.extend(v.horizon.iter().map(|&(a, e)| (a, e.max(0.0))));
        area.push((360.0, 0.0));
        chart
            .draw_series(std::iter::once(Polygon::new(
                area,
                RGBColor(0xa8, 0xa8, 0xa8).filled(),
            )))?
            .label("horizon")
            .legend(|(x, y)| {
                Rectangle::new(
                    [(x, y - 6), (x + 14, y + 6)],
                    RGBColor(0xa8, 0xa8, 0xa8).filled(),
                )
            });
    }
    // Obstacles: dark, outlined.
    for (name, poly) in &v.obstacles {
        let pts: Vec<(f64, f64)> = poly.iter().map(|&(a, e)| (a, e.max(0.0))).collect();
        if pts.len() < 3 {
            continue;
        }
        chart.draw_series(std::iter::once(Polygon::new(
            pts.clone(),
            RGBColor(0x3a, 0x3a, 0x3a).filled(),
        )))?;
        let (ax, ay) = pts.iter().fold((0.0, f64::NEG_INFINITY), |acc, &(a, e)| {
            if e > acc.1 {
                (a, e)
            } else {
                acc
            }
        });
        chart.draw_series(std::iter::once(Text::new(
            name.clone(),
            (ax, (ay + 1.0).min(top - 2.0)),
            font(13.0),
        )))?;
    }
    // Sun paths: a light-to-dark blue ramp from December to June, readable in greyscale.
    let n = v.days.len().max(2) as f64;
    for (k, (label, pts)) in v.days.iter().enumerate() {
        let t = k as f64 / (n - 1.0);
        let c = RGBColor(
            (0xe0 as f64 * (1.0 - t) + 0x1d as f64 * t) as u8,
            (0x9a as f64 * (1.0 - t) + 0x3f as f64 * t) as u8,
            (0x2a as f64 * (1.0 - t) + 0x6e as f64 * t) as u8,
        );
        chart
            .draw_series(LineSeries::new(pts.iter().copied(), c.stroke_width(2)))?
            .label(label.clone())
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 16, y)], c.stroke_width(2)));
    }
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::UpperRight)
        .label_font(font(13.0))
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .draw()?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Rec. 601 luma of a colour, 0..=255 (what a greyscale print keeps).
    fn luma(c: RGBColor) -> f64 {
        0.299 * c.0 as f64 + 0.587 * c.1 as f64 + 0.114 * c.2 as f64
    }

    fn check_lab(lab: (f64, f64, f64), rgb: (u8, u8, u8)) {
        let (c, _) = lab_to_srgb(lab.0, lab.1, lab.2);
        for (got, want) in [(c.0, rgb.0), (c.1, rgb.1), (c.2, rgb.2)] {
            assert!(
                (got as i32 - want as i32).abs() <= 1,
                "{lab:?} → {c:?}, expected {rgb:?}"
            );
        }
    }

    #[test]
    fn lab_to_srgb_reproduces_reference_colours() {
        // Source: common practice, no source — the sRGB white point and black are the ends
        // of the scale by definition (tolerance ±1 of 255 for 8-bit rounding).
        check_lab((100.0, 0.0, 0.0), (255, 255, 255));
        check_lab((0.0, 0.0, 0.0), (0, 0, 0));
        // Source: from memory (widely quoted conversion tables): sRGB mid grey #777777 is
        // L* = 50.0 (±1 of 255 for the two decimals the tables print).
        check_lab((50.0, 0.0, 0.0), (119, 119, 119));
        // Source: from memory (widely quoted): pure sRGB red #FF0000 is
        // L*a*b* = (53.24, 80.09, 67.20) to two decimals.
        check_lab((53.24, 80.09, 67.20), (255, 0, 0));
    }

    #[test]
    fn gain_ramp_is_in_gamut_with_rising_lightness_and_neutral_middle() {
        // Source: common practice, no source (design rule of the chart: monotone lightness
        // for greyscale, neutral at zero).
        let mut last = -1.0;
        for i in 0..=100 {
            let t = i as f64 / 100.0;
            let (l, a, b) = gain_lab(t);
            assert!(lab_to_srgb(l, a, b).1, "t = {t} out of gamut");
            assert!(l > last, "lightness not rising at t = {t}");
            last = l;
        }
        let mid = gain_colour(0.5);
        assert!(mid.0 == mid.1 && mid.1 == mid.2, "{mid:?} is not grey");
        // Loss end blue-dominant, gain end red+green dominant (orange/gold).
        let (lo, hi) = (gain_colour(0.0), gain_colour(1.0));
        assert!(lo.2 > lo.0 && lo.2 > lo.1, "{lo:?}");
        assert!(hi.0 > hi.2 && hi.1 > hi.2, "{hi:?}");
    }

    #[test]
    fn layout_colours_stay_apart_in_greyscale() {
        // Source: common practice, no source (≥ 40 of 255 luma between neighbours reads as
        // distinct on paper; our chosen threshold).
        let mut l: Vec<f64> = LAYOUT_COLOURS.iter().map(|&c| luma(c)).collect();
        l.sort_by(f64::total_cmp);
        for w in l.windows(2) {
            assert!(w[1] - w[0] >= 40.0, "{l:?}");
        }
    }

    #[test]
    fn titles_say_which_layouts_are_shown() {
        assert_eq!(which_layouts(1, 1), "the one ranked layout");
        assert_eq!(which_layouts(3, 3), "all 3 ranked layouts");
        assert_eq!(which_layouts(4, 9), "best 4 of 9 ranked layouts");
    }

    #[test]
    fn shorten_keeps_short_names_and_marks_cut_ones() {
        assert_eq!(shorten("mppt:2s4p", 20), "mppt:2s4p");
        assert_eq!(shorten("abcdefghij", 5), "abcd…");
        assert_eq!(shorten("abcdefghij", 5).chars().count(), 5);
    }
}
