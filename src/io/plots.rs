//! Charts of a ranking run, drawn with plotters as PNG and SVG.
//!
//! The pictures of a ranking run: the monthly energy of the best few layouts, where the best
//! layout gains or loses against the runner-up by month and hour of day, what the site, the
//! wiring and the battery take from the sunlight on the recommended layout's modules, the
//! daily state of charge, the monthly unmet load and the wiring diagram. The data of each chart is gathered first into a plain struct
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

use crate::io::colour::lab_to_srgb;
use crate::results::RankResult;
use crate::sim::energy::{DecidedBy, LayoutEnergy, Step, STEPS};

/// Picture width, pixels.
pub const WIDTH_PX: u32 = 1000;
/// Picture height, pixels.
pub const HEIGHT_PX: u32 = 600;
/// At most this many ranked layouts in the monthly charts (more bars per group
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

/// Who takes what from the sunlight on the recommended layout's modules: each cause of loss
/// with the party that decides it (site, wiring, battery), and what is delivered.
#[derive(Clone, Debug, PartialEq)]
pub struct Losses {
    /// The layout's id and name.
    pub id: String,
    pub name: String,
    /// The sunlight on the wired modules at datasheet (STC) efficiency over the run, kWh:
    /// where the accounting starts (`potential` in losses.csv).
    pub sunlight_kwh: f64,
    /// Delivered to the battery and the load, kWh.
    pub delivered_kwh: f64,
    /// (who decides, what, kWh lost over the run; negative = gained), in the order of
    /// [`loss_causes`].
    pub causes: Vec<(DecidedBy, &'static str, f64)>,
    /// The plan has a battery model (otherwise nothing can be turned away).
    pub battery_model: bool,
}

/// A layout's losses by cause, each with who decides it: the loss steps, with the window
/// and start-up step split into the MPPT start-up and window part and the PWM clamp (as in
/// the differences by cause), kWh over the run. They add up to sunlight − delivered.
pub fn loss_causes(e: &LayoutEnergy) -> Vec<(DecidedBy, &'static str, f64)> {
    // Below half a watt-hour over the run is rounding in the sums, not a loss or a gain.
    let clean = |wh: f64| if wh.abs() < 0.5 { 0.0 } else { wh / 1000.0 };
    let kwh = |s: Step| clean(e.step_total_wh(s));
    let pwm = clean(e.pwm_clamp_wh.iter().sum::<f64>());
    let mut out = Vec::with_capacity(STEPS + 1);
    for s in Step::ALL {
        match s {
            Step::WindowStartup => {
                let startup = clean(e.step_total_wh(s) - 1000.0 * pwm);
                out.push((s.decided_by(), cause_label(s), startup));
                out.push((
                    DecidedBy::Wiring,
                    "PWM holding the array at battery voltage",
                    pwm,
                ));
            }
            _ => out.push((s.decided_by(), cause_label(s), kwh(s))),
        }
    }
    out
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
    let to_build = r
        .recommended()
        .and_then(|o| o.energy.as_ref().map(|e| (o, e)));
    match to_build {
        Some((o, e)) => charts.push(Chart::Losses(Losses {
            id: o.layout.id.clone(),
            name: shorten(&o.layout.display_name(), 70),
            sunlight_kwh: e.potential_wh.iter().sum::<f64>() / 1000.0,
            delivered_kwh: e.annual_delivered_kwh(),
            causes: loss_causes(e),
            battery_model: r.loaded.plan.battery.model.is_some(),
        })),
        None => skipped.push("losses: not drawn, no layout is recommended".to_string()),
    }
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

/// What each loss step is called in the losses chart (the CSV uses `Step::key`).
fn cause_label(s: Step) -> &'static str {
    match s {
        Step::Incidence => "light reflected at a slant (incidence)",
        Step::Soiling => "dirt and snow",
        Step::Shading => "shade",
        Step::TemperatureLowLight => "heat and weak light",
        Step::Mismatch => "mismatch between modules and strings",
        Step::Cables => "cables",
        Step::WindowStartup => "controller start-up and voltage window",
        Step::InputLimit => "controller input-current limit",
        Step::Clipping => "output clipping (charge-current limit)",
        Step::Conversion => "conversion in the controller",
        Step::Curtailed => "turned away by a full battery",
    }
}

/// The colour of what is delivered in the losses chart. With [`party_colour`], our own
/// picks: the four layout colours in a new role (the chart shows one layout), dark blue for
/// what is delivered, pale gold for the site, burnt orange for the wiring, sky blue for the
/// battery; their greyscale values stay at least 47 of 255 apart (see [`LAYOUT_COLOURS`]).
const DELIVERED_COLOUR: RGBColor = LAYOUT_COLOURS[0];

fn party_colour(d: DecidedBy) -> RGBColor {
    match d {
        DecidedBy::Site => LAYOUT_COLOURS[3],
        DecidedBy::Wiring => LAYOUT_COLOURS[1],
        DecidedBy::Battery => LAYOUT_COLOURS[2],
    }
}

/// A party's heading and what it decides, in words.
fn party_words(d: DecidedBy) -> (&'static str, &'static str) {
    match d {
        DecidedBy::Site => ("The site", "where the modules sit, face and are mounted"),
        DecidedBy::Wiring => (
            "The wiring",
            "how the modules are wired, into which controller",
        ),
        DecidedBy::Battery => ("The battery", "how much it can take"),
    }
}

/// "184.1 kWh (15.7 %)": the energy and its share of the sunlight figure.
fn kwh_share(kwh: f64, of: f64) -> String {
    if of > 0.0 {
        format!("{kwh:.1} kWh ({:.1} %)", 100.0 * kwh / of)
    } else {
        format!("{kwh:.1} kWh")
    }
}

/// Black or white text, whichever reads on `fill` (Rec. 601 luma).
fn ink_on(fill: RGBColor) -> RGBColor {
    let luma = 0.299 * fill.0 as f64 + 0.587 * fill.1 as f64 + 0.114 * fill.2 as f64;
    if luma < 128.0 {
        WHITE
    } else {
        BLACK
    }
}

/// Vertical pitch of one cause in a party's panel, pixels.
const CAUSE_ROW_PX: i32 = 46;

/// One strip for the whole sunlight figure, split into what is delivered and what each
/// party takes; under it, a panel per party listing its causes with their own bars.
fn draw_losses<DB: DrawingBackend>(root: &DrawingArea<DB, Shift>, c: &Losses) -> DrawResult<DB> {
    let (w, _) = root.dim_in_pixel();
    let w = w as i32;
    let left = |s: f64| font(s).pos(Pos::new(HPos::Left, VPos::Center));
    let right = |s: f64| font(s).pos(Pos::new(HPos::Right, VPos::Center));
    let centre = |s: f64| font(s).pos(Pos::new(HPos::Center, VPos::Center));
    root.draw(&Text::new(
        "What the site, the wiring and the battery take from the sunlight".to_string(),
        (24, 8),
        bold(24.0),
    ))?;
    root.draw(&Text::new(
        format!(
            "{} {} (the layout to build): sunlight on its modules at datasheet efficiency, {:.1} kWh over the year = 100 %",
            c.id, c.name, c.sunlight_kwh
        ),
        (24, 42),
        font(15.0),
    ))?;

    // The strip: delivered first, then the three parties; a party's net gain is not drawn.
    let party_total =
        |d: DecidedBy| -> f64 { c.causes.iter().filter(|x| x.0 == d).map(|x| x.2).sum() };
    let mut parts: Vec<(String, f64, RGBColor)> =
        vec![("delivered".to_string(), c.delivered_kwh, DELIVERED_COLOUR)];
    for d in DecidedBy::ALL {
        let name = match d {
            DecidedBy::Battery if !c.battery_model => "the battery (no battery model)",
            _ => party_words(d).0,
        };
        parts.push((name.to_lowercase(), party_total(d), party_colour(d)));
    }
    let drawn: f64 = parts.iter().map(|p| p.1.max(0.0)).sum();
    let (x0, x1, y0, y1) = (24, w - 24, 76, 116);
    let mut x = x0 as f64;
    for (_, kwh, colour) in &parts {
        if *kwh <= 0.0 || drawn <= 0.0 {
            continue;
        }
        let dx = (x1 - x0) as f64 * kwh / drawn;
        let (a, b) = (x.round() as i32, (x + dx).round() as i32);
        root.draw(&Rectangle::new([(a, y0), (b, y1)], colour.filled()))?;
        if b - a >= 56 && c.sunlight_kwh > 0.0 {
            root.draw(&Text::new(
                format!("{:.0} %", 100.0 * kwh / c.sunlight_kwh),
                ((a + b) / 2, (y0 + y1) / 2),
                centre(15.0).color(&ink_on(*colour)),
            ))?;
        }
        x += dx;
    }
    root.draw(&Rectangle::new([(x0, y0), (x1, y1)], BLACK))?;
    // The strip's key, on one line: each part with its energy and share.
    let mut kx = x0;
    for (name, kwh, colour) in &parts {
        let label = if *kwh < 0.0 {
            format!("{name}: {:.1} kWh gained (not drawn)", -kwh)
        } else {
            format!("{name}: {}", kwh_share(*kwh, c.sunlight_kwh))
        };
        root.draw(&Rectangle::new(
            [(kx, 128), (kx + 16, 144)],
            colour.filled(),
        ))?;
        root.draw(&Rectangle::new([(kx, 128), (kx + 16, 144)], BLACK))?;
        let (tw, _) = root
            .estimate_text_size(&label, &font(14.0))
            .unwrap_or((200, 14));
        root.draw(&Text::new(label, (kx + 22, 136), left(14.0)))?;
        kx += 22 + tw as i32 + 22;
    }
    let offered = if c.battery_model {
        format!(
            "offered by the controllers: {:.1} kWh = delivered + what a full battery turned away",
            c.delivered_kwh + party_total(DecidedBy::Battery)
        )
    } else {
        format!(
            "offered by the controllers: {:.1} kWh, all of it delivered (without a battery model nothing is turned away)",
            c.delivered_kwh
        )
    };
    root.draw(&Text::new(offered, (x0, 162), left(14.0)))?;

    // One panel per party; a panel's bars share one scale (the strip compares the parties).
    let (top, gap) = (186, 14);
    let panel_w = (w - 2 * 24 - 2 * gap) / 3;
    for (k, d) in DecidedBy::ALL.into_iter().enumerate() {
        let px = 24 + k as i32 * (panel_w + gap);
        let colour = party_colour(d);
        let (head, what) = party_words(d);
        root.draw(&Rectangle::new(
            [(px, top), (px + panel_w, top + 30)],
            colour.filled(),
        ))?;
        root.draw(&Text::new(
            format!("{head}: {:.1} kWh", party_total(d)),
            (px + 8, top + 15),
            bold(16.0)
                .pos(Pos::new(HPos::Left, VPos::Center))
                .color(&ink_on(colour)),
        ))?;
        root.draw(&Text::new(what.to_string(), (px + 8, top + 44), left(13.0)))?;
        let rows: Vec<&(DecidedBy, &str, f64)> = c.causes.iter().filter(|x| x.0 == d).collect();
        let lo = rows.iter().map(|x| x.2).fold(0.0, f64::min);
        let hi = rows.iter().map(|x| x.2).fold(0.0, f64::max);
        let span = if hi - lo > 0.0 { hi - lo } else { 1.0 };
        let (bx0, bx1) = (px + 8, px + panel_w - 8);
        let at = |v: f64| bx0 + ((bx1 - bx0) as f64 * (v - lo) / span).round() as i32;
        for (i, (_, label, kwh)) in rows.iter().enumerate() {
            let y = top + 62 + i as i32 * CAUSE_ROW_PX;
            root.draw(&Text::new(label.to_string(), (bx0, y + 8), left(14.0)))?;
            let value = if *kwh < 0.0 {
                format!("{:.1} kWh gained", -kwh)
            } else {
                kwh_share(*kwh, c.sunlight_kwh)
            };
            let (a, b) = (at(0.0), at(*kwh));
            let bar = [(a.min(b), y + 18), (a.max(b).max(a.min(b) + 1), y + 34)];
            let fill = if *kwh < 0.0 {
                colour.mix(0.45)
            } else {
                colour.mix(1.0)
            };
            root.draw(&Rectangle::new(bar, fill.filled()))?;
            root.draw(&Rectangle::new(bar, BLACK))?;
            // The value at the right of the label's line.
            root.draw(&Text::new(value, (bx1, y + 8), right(13.0)))?;
        }
        if d == DecidedBy::Battery {
            let note: &[&str] = if c.battery_model {
                &[
                    "what the controllers offered that a full",
                    "battery could not take (beyond what the",
                    "load used at the time)",
                ]
            } else {
                &["no battery model in the plan:", "nothing is turned away"]
            };
            for (i, line) in note.iter().enumerate() {
                root.draw(&Text::new(
                    line.to_string(),
                    (bx0, top + 62 + CAUSE_ROW_PX + 8 + 18 * i as i32),
                    left(13.0),
                ))?;
            }
        }
        if lo < 0.0 {
            // The zero line, so that a gain (a bar to its left) reads as one.
            root.draw(&PathElement::new(
                vec![
                    (at(0.0), top + 76),
                    (at(0.0), top + 62 + rows.len() as i32 * CAUSE_ROW_PX),
                ],
                BLACK,
            ))?;
        }
    }
    root.draw(&Text::new(
        "Bars compare the causes within a panel (each panel has its own scale); the strip compares the parties. Per step: losses.csv.".to_string(),
        (24, 584),
        left(13.0),
    ))?;
    Ok(())
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
    // Sun paths: an orange-to-dark-blue ramp from December to June; its greyscale value falls
    // steadily (luma 162 to 58), so it also reads on a black-and-white print.
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

    /// A layout whose cells gain from the cold and a plan without a battery model: the chart
    /// draws, says "gained" for the gain and "nothing is turned away" for the battery.
    #[test]
    fn losses_chart_shows_a_gain_and_a_missing_battery_model() {
        let causes = vec![
            (
                DecidedBy::Site,
                "light reflected at a slant (incidence)",
                30.0,
            ),
            (DecidedBy::Site, "heat and weak light", -12.5),
            (DecidedBy::Wiring, "cables", 8.0),
            (DecidedBy::Battery, "turned away by a full battery", 0.0),
        ];
        let c = Chart::Losses(Losses {
            id: "L1".into(),
            name: "mppt:2s2p".into(),
            sunlight_kwh: 500.0,
            delivered_kwh: 474.5,
            causes,
            battery_model: false,
        });
        let svg = c.to_svg().expect("drawn");
        if let Some(dir) = std::env::var_os("WIRERANK_CHART_DIR") {
            c.to_png(&std::path::Path::new(&dir).join("losses_gain.png"))
                .expect("png");
        }
        // Source: definition (a negative loss is a gain; worked by hand: 12.5 kWh).
        assert!(svg.contains("12.5 kWh gained"), "{svg}");
        assert!(svg.contains("nothing is turned away"));
        // Source: worked by hand: 474.5 / 500 = 94.9 %.
        assert!(svg.contains("474.5 kWh (94.9 %)"));
    }

    #[test]
    fn shorten_keeps_short_names_and_marks_cut_ones() {
        assert_eq!(shorten("mppt:2s4p", 20), "mppt:2s4p");
        assert_eq!(shorten("abcdefghij", 5), "abcd…");
        assert_eq!(shorten("abcdefghij", 5).chars().count(), 5);
    }
}
