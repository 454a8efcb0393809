//! The `--out DIR` files of a ranking run: CSV tables (written with polars), a provenance
//! record and the charts, replaced atomically.
//!
//! Every file is first produced whole (CSV and SVG in memory), then the set is written into
//! a fresh folder beside the target and put in place of the previous set in one step
//! ([`crate::io::outset`]): a killed, failed or concurrent run leaves either the old complete
//! set or the new one, and a folder holding anything else is refused. The files' columns
//! are documented in notebooks-free-docs/output-files.md and listed here as constants that
//! the tests share.
//!
//! This module formats numbers that arrive computed; it does not simulate, rank or decide
//! what a chart shows (see [`crate::io::plots`]). It never writes over the plan or the
//! weather file that produced the run.

use std::fmt::Write as _;
use std::io;
use std::path::{Path, PathBuf};

use polars::prelude::{Column, CsvWriter, DataFrame, PolarsError, SerWriter};

use crate::design::cautions::CAUTIONS;
use crate::design::rules::Severity;
use crate::error::Error;
use crate::io::atomic::same_file;
use crate::io::outset::OutputSet;
use crate::io::plots;
use crate::io::report_html::{self, REPORT_HTML};
use crate::physics::controller::{ControllerModel, TrackerMode};
use crate::physics::thermal::CellTemperatureModel;
use crate::results::rank::{Criterion, LayoutOutcome};
use crate::results::RankResult;
use crate::sim::energy::{LayoutEnergy, Step};

pub const MONTHLY_CSV: &str = "monthly.csv";
pub const SUMMARY_CSV: &str = "summary.csv";
pub const LOSSES_CSV: &str = "losses.csv";
pub const HOURLY_CSV: &str = "hourly.csv";
pub const DIFFERENCES_CSV: &str = "differences.csv";
pub const WIRING_CSV: &str = "wiring.csv";
pub const PROVENANCE_TXT: &str = "provenance.txt";

/// Columns of monthly.csv, in order.
pub const MONTHLY_COLUMNS: [&str; 16] = [
    "id",
    "layout",
    "rank",
    "month",
    "energy_kwh",
    "offered_kwh",
    "low_sun_kwh",
    "low_sun_delivered_kwh",
    "awake_h",
    "clipped_kwh",
    "harvested_kwh",
    "curtailed_kwh",
    "used_kwh",
    "unmet_kwh",
    "unmet_days",
    "lowest_soc_pct",
];
/// Columns of summary.csv, in order.
pub const SUMMARY_COLUMNS: [&str; 27] = [
    "id",
    "recommended",
    "rank",
    "layout",
    "code",
    "status",
    "score_kwh",
    "offered_kwh",
    "annual_kwh",
    "worst_month",
    "worst_month_kwh",
    "low_sun_kwh",
    "low_sun_delivered_kwh",
    "awake_h",
    "p90_1y_kwh",
    "p90_10y_kwh",
    "harvested_kwh",
    "curtailed_kwh",
    "used_kwh",
    "unmet_kwh",
    "unmet_days",
    "lowest_soc_pct",
    "modules_used",
    "mixed_orientation",
    "reasons",
    "warnings",
    "cautions",
];
/// Columns of losses.csv, in order.
pub const LOSSES_COLUMNS: [&str; 6] = [
    "id",
    "layout",
    "step",
    "energy_kwh",
    "share_pct",
    "decided_by",
];
/// Columns of differences.csv, in order: each ranked layout's difference from the
/// recommended one by cause (kWh a year; the causes add up to the delivered difference).
pub const DIFFERENCES_COLUMNS: [&str; 4] = ["id", "layout", "cause", "difference_kwh"];
/// Columns of wiring.csv, in order: every module of every candidate layout, where it goes.
pub const WIRING_COLUMNS: [&str; 6] = ["id", "input", "string", "position", "module", "group"];
/// Columns of hourly.csv, in order.
pub const HOURLY_COLUMNS: [&str; 8] = [
    "id",
    "layout",
    "time_local",
    "potential_w",
    "available_w",
    "delivered_w",
    "clipped_w",
    "awake",
];
/// Decimals of every floating-point cell (kWh to the Wh, W to the mW).
pub const FLOAT_DECIMALS: usize = 3;
/// The `step` value of the first and last rows of each layout in losses.csv.
pub const POTENTIAL_STEP: &str = "potential";
pub const DELIVERED_STEP: &str = "delivered";
/// Separator of several reasons or warnings in one summary.csv cell.
pub const LIST_SEPARATOR: &str = " | ";

/// What to write besides the files that are always written.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct ExportOptions {
    /// Also write hourly.csv (needs a run made with interval rows kept).
    pub hourly: bool,
    /// Layout ids whose wiring diagram to draw besides the recommended layout's.
    pub diagrams: Vec<String>,
    /// A headless browser to print report.html to report.pdf with (`--pdf`), inside the set.
    pub pdf_browser: Option<PathBuf>,
}

/// Writes monthly.csv, summary.csv, losses.csv (and hourly.csv when asked) plus
/// provenance.txt and the charts into `dir` (created if missing), replacing an earlier run's
/// set as a whole. Returns the paths written, in writing order.
///
/// The gain map needs the run's interval rows (`simulate_and_rank(.., hourly = true)`);
/// without them it is skipped and provenance.txt says why.
///
/// # Errors
/// - [`Error::Usage`] when `opts.hourly` is set but the run kept no interval rows.
/// - [`Error::Output`] naming the path when the folder cannot be created, a file cannot be
///   written, the folder holds files that are not an earlier run's set, another run is
///   writing it, or an output would replace the run's plan or weather file. Nothing is left
///   behind in that case (no temporary, no folder this call created) and an earlier set is
///   as it was.
pub fn write_outputs(
    r: &RankResult,
    dir: &Path,
    opts: &ExportOptions,
) -> Result<Vec<PathBuf>, Error> {
    let ranked = ranked(r);
    if opts.hourly {
        let n = r.loaded.weather.len();
        if let Some(o) = ranked
            .iter()
            .find(|o| o.energy.as_ref().is_none_or(|e| e.hourly.len() != n))
        {
            return Err(Error::Usage(format!(
                "hourly.csv needs the interval rows of every ranked layout, and the run kept none for {}; simulate with hourly rows kept",
                o.layout.display_name()
            )));
        }
    }

    // Everything is produced in memory first, so that a failure here leaves no trace.
    let polars_error = |name: &str| {
        let path = dir.join(name);
        move |e: PolarsError| output_error(&path, io::Error::other(e.to_string()))
    };
    let mut files: Vec<(String, Vec<u8>)> = vec![
        (
            MONTHLY_CSV.into(),
            monthly_frame(r)
                .and_then(csv_bytes)
                .map_err(polars_error(MONTHLY_CSV))?,
        ),
        (
            SUMMARY_CSV.into(),
            summary_frame(r)
                .and_then(csv_bytes)
                .map_err(polars_error(SUMMARY_CSV))?,
        ),
        (
            LOSSES_CSV.into(),
            losses_frame(r)
                .and_then(csv_bytes)
                .map_err(polars_error(LOSSES_CSV))?,
        ),
        (
            DIFFERENCES_CSV.into(),
            differences_frame(r)
                .and_then(csv_bytes)
                .map_err(polars_error(DIFFERENCES_CSV))?,
        ),
        (
            WIRING_CSV.into(),
            wiring_frame(r)
                .and_then(csv_bytes)
                .map_err(polars_error(WIRING_CSV))?,
        ),
    ];
    if opts.hourly {
        files.push((
            HOURLY_CSV.into(),
            hourly_frame(r)
                .and_then(csv_bytes)
                .map_err(polars_error(HOURLY_CSV))?,
        ));
    }
    let planned = plots::plan_charts(r, &opts.diagrams);
    let mut svgs: Vec<(String, String)> = Vec::new();
    for chart in &planned.charts {
        let name = format!("{}.svg", chart.stem());
        let svg = chart
            .to_svg()
            .map_err(|m| output_error(&dir.join(&name), io::Error::other(m)))?;
        svgs.push((chart.stem(), svg));
    }
    for (stem, svg) in &svgs {
        files.push((format!("{stem}.svg"), svg.clone().into_bytes()));
    }
    let mut names: Vec<String> = files.iter().map(|(n, _)| n.clone()).collect();
    names.extend(planned.charts.iter().map(|c| format!("{}.png", c.stem())));
    names.push(REPORT_HTML.into());
    let provenance_text = provenance(r, &names, &planned.skipped);
    let report = report_html::render(r, &report_html::Pictures { svgs: &svgs }, &provenance_text)
        .map_err(|m| output_error(&dir.join(REPORT_HTML), io::Error::other(m)))?;
    files.push((REPORT_HTML.into(), report.into_bytes()));
    files.push((PROVENANCE_TXT.into(), provenance_text.into_bytes()));
    names.push(PROVENANCE_TXT.into());

    refuse_inputs(r, dir, &names)?;

    let mut stage = OutputSet::begin(dir, &inputs_of(&r.loaded))?;
    for (name, bytes) in &files {
        stage.write(name, bytes)?;
    }
    for chart in &planned.charts {
        stage.png(chart)?;
    }
    if let Some(browser) = &opts.pdf_browser {
        stage.produce(crate::io::report_pdf::REPORT_PDF, |pdf| {
            crate::io::report_pdf::print_pdf_into(browser, &pdf.with_file_name(REPORT_HTML), pdf)
        })?;
    }
    stage.commit()
}

fn output_error(path: &Path, source: io::Error) -> Error {
    Error::Output {
        path: path.display().to_string(),
        source,
    }
}

fn ranked(r: &RankResult) -> Vec<&LayoutOutcome> {
    r.outcomes
        .iter()
        .filter(|o| o.rank.is_some() && o.energy.is_some())
        .collect()
}

fn csv_bytes(mut df: DataFrame) -> Result<Vec<u8>, PolarsError> {
    let mut buf = Vec::new();
    CsvWriter::new(&mut buf)
        .include_header(true)
        .with_float_precision(Some(FLOAT_DECIMALS))
        .finish(&mut df)?;
    Ok(buf)
}

fn frame(names: &[&str], columns: Vec<Column>) -> Result<DataFrame, PolarsError> {
    debug_assert_eq!(
        names,
        columns
            .iter()
            .map(|c| c.name().as_str())
            .collect::<Vec<_>>()
    );
    DataFrame::new_infer_height(columns)
}

fn col<T, P: ?Sized>(name: &str, values: T) -> Column
where
    polars::prelude::Series: polars::prelude::NamedFrom<T, P>,
{
    Column::new(name.into(), values)
}

/// The battery-and-load figures of one layout in one month (or the year, `None`): cells
/// that stay empty without a load (used, unmet, days) or without a battery model (lowest
/// state of charge).
struct BatteryCells {
    harvested_kwh: f64,
    curtailed_kwh: f64,
    used_kwh: Option<f64>,
    unmet_kwh: Option<f64>,
    unmet_days: Option<i64>,
    lowest_soc_pct: Option<f64>,
}

fn battery_cells(r: &RankResult, e: &LayoutEnergy, month: Option<usize>) -> BatteryCells {
    let months: Vec<usize> = match month {
        Some(m) => vec![m],
        None => (0..12).collect(),
    };
    let sum = |v: &[f64; 12]| months.iter().map(|&m| v[m]).sum::<f64>();
    let curtailed = sum(&e.losses_wh[Step::Curtailed]);
    let with_load = r.loaded.plan.consumption.is_some();
    // NaN marks a month without intervals (or no battery model): no lowest value there.
    let lowest = months
        .iter()
        .map(|&m| e.min_soc_frac[m])
        .filter(|x| !x.is_nan())
        .fold(None, |a: Option<f64>, x| Some(a.map_or(x, |a| a.min(x))));
    BatteryCells {
        harvested_kwh: months.iter().map(|&m| e.offered_wh(m)).sum::<f64>() / 1000.0,
        curtailed_kwh: curtailed / 1000.0,
        used_kwh: with_load.then(|| sum(&e.load_served_wh) / 1000.0),
        unmet_kwh: with_load.then(|| sum(&e.unmet_wh) / 1000.0),
        unmet_days: with_load.then(|| months.iter().map(|&m| i64::from(e.unmet_days[m])).sum()),
        lowest_soc_pct: lowest
            .filter(|_| r.loaded.plan.battery.model.is_some())
            .map(|x| 100.0 * x),
    }
}

/// Columns of [`BatteryCells`], filled row by row.
#[derive(Default)]
struct BatteryColumns {
    harvested: Vec<Option<f64>>,
    curtailed: Vec<Option<f64>>,
    used: Vec<Option<f64>>,
    unmet: Vec<Option<f64>>,
    unmet_days: Vec<Option<i64>>,
    lowest_soc: Vec<Option<f64>>,
}

impl BatteryColumns {
    fn push(&mut self, c: Option<BatteryCells>) {
        self.harvested.push(c.as_ref().map(|c| c.harvested_kwh));
        self.curtailed.push(c.as_ref().map(|c| c.curtailed_kwh));
        self.used.push(c.as_ref().and_then(|c| c.used_kwh));
        self.unmet.push(c.as_ref().and_then(|c| c.unmet_kwh));
        self.unmet_days.push(c.as_ref().and_then(|c| c.unmet_days));
        self.lowest_soc
            .push(c.as_ref().and_then(|c| c.lowest_soc_pct));
    }

    /// The six columns under the names `names` (harvested, curtailed, used, unmet, unmet
    /// days, lowest state of charge).
    fn columns(self, names: &[&str]) -> [Column; 6] {
        [
            col(names[0], self.harvested),
            col(names[1], self.curtailed),
            col(names[2], self.used),
            col(names[3], self.unmet),
            col(names[4], self.unmet_days),
            col(names[5], self.lowest_soc),
        ]
    }
}

fn monthly_frame(r: &RankResult) -> Result<DataFrame, PolarsError> {
    let (mut id, mut layout, mut rank, mut month) =
        (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    let (mut energy, mut offered, mut low_sun, mut low_sun_delivered) =
        (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    let (mut awake, mut clipped) = (Vec::new(), Vec::new());
    let mut battery = BatteryColumns::default();
    for o in ranked(r) {
        let (Some(e), Some(s)) = (&o.energy, &o.summary) else {
            continue;
        };
        for m in 0..12 {
            id.push(o.layout.id.clone());
            layout.push(safe_cell(&o.layout.display_name()));
            rank.push(o.rank.map_or(0, |k| k as i64));
            month.push(m as i64 + 1);
            energy.push(s.delivered_kwh[m]);
            offered.push(s.offered_kwh[m]);
            low_sun.push(s.low_sun_offered_kwh[m]);
            low_sun_delivered.push(s.low_sun_delivered_kwh[m]);
            awake.push(e.awake_h[m]);
            clipped.push(e.losses_wh[Step::Clipping][m] / 1000.0);
            battery.push(Some(battery_cells(r, e, Some(m))));
        }
    }
    let c = &MONTHLY_COLUMNS;
    let mut columns = vec![
        col(c[0], id),
        col(c[1], layout),
        col(c[2], rank),
        col(c[3], month),
        col(c[4], energy),
        col(c[5], offered),
        col(c[6], low_sun),
        col(c[7], low_sun_delivered),
        col(c[8], awake),
        col(c[9], clipped),
    ];
    columns.extend(battery.columns(&c[10..16]));
    frame(c, columns)
}

/// Findings of one severity as `rule: message` joined by [`LIST_SEPARATOR`].
fn findings(o: &LayoutOutcome, severity: Severity) -> String {
    o.findings
        .iter()
        .filter(|f| f.severity == severity)
        .map(|f| format!("{}: {}", f.rule, f.text()))
        .collect::<Vec<_>>()
        .join(LIST_SEPARATOR)
}

pub use crate::design::cautions::cautions_one_line;

fn summary_frame(r: &RankResult) -> Result<DataFrame, PolarsError> {
    let n = r.outcomes.len();
    let mut rank: Vec<Option<i64>> = Vec::with_capacity(n);
    let (mut id, mut recommended) = (Vec::new(), Vec::new());
    let (mut layout, mut code, mut status) = (Vec::new(), Vec::new(), Vec::new());
    let rec_id = r.recommendation.as_ref().map(|x| x.layout.as_str());
    let mut offered: Vec<Option<f64>> = Vec::with_capacity(n);
    let mut low_sun_delivered: Vec<Option<f64>> = Vec::with_capacity(n);
    // Optional cells: empty for a rejected layout.
    let mut score: Vec<Option<f64>> = Vec::with_capacity(n);
    let mut annual: Vec<Option<f64>> = Vec::with_capacity(n);
    let mut worst: Vec<Option<i64>> = Vec::with_capacity(n);
    let mut worst_kwh: Vec<Option<f64>> = Vec::with_capacity(n);
    let mut low_sun: Vec<Option<f64>> = Vec::with_capacity(n);
    let mut awake: Vec<Option<f64>> = Vec::with_capacity(n);
    let mut p90_1y: Vec<Option<f64>> = Vec::with_capacity(n);
    let mut p90_10y: Vec<Option<f64>> = Vec::with_capacity(n);
    let mut battery = BatteryColumns::default();
    let (mut modules, mut mixed, mut reasons, mut warnings) =
        (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    let mut cautions: Vec<Option<String>> = Vec::with_capacity(n);
    for o in &r.outcomes {
        id.push(o.layout.id.clone());
        recommended.push(if Some(o.layout.id.as_str()) == rec_id {
            "yes"
        } else {
            ""
        });
        rank.push(o.rank.map(|k| k as i64));
        layout.push(safe_cell(&o.layout.display_name()));
        code.push(safe_cell(&o.layout.code));
        status.push(if o.rank.is_some() {
            "ranked"
        } else {
            "rejected"
        });
        score.push(o.score_kwh);
        let e = o.energy.as_ref().filter(|_| o.rank.is_some());
        let sm = o.summary.as_ref().filter(|_| o.rank.is_some());
        offered.push(sm.map(|s| s.annual_offered_kwh()));
        annual.push(sm.map(|s| s.annual_delivered_kwh()));
        // The month with the least offered energy among those the weather covers.
        let w = sm.and_then(|s| s.worst_month.map(|m| (m, s.offered_kwh[m])));
        worst.push(w.map(|(m, _)| m as i64 + 1));
        worst_kwh.push(w.map(|(_, v)| v));
        low_sun.push(sm.map(|s| s.annual_low_sun_offered_kwh()));
        low_sun_delivered.push(sm.map(|s| s.annual_low_sun_delivered_kwh()));
        awake.push(e.map(|e| e.awake_h.iter().sum::<f64>()));
        p90_1y.push(o.p90.map(|p| p.p90_1y));
        p90_10y.push(o.p90.map(|p| p.p90_10y));
        battery.push(e.map(|e| battery_cells(r, e, None)));
        modules.push(o.layout.modules_used as i64);
        mixed.push(o.layout.mixed_orientation);
        reasons.push(safe_cell(&findings(o, Severity::Reject)));
        warnings.push(safe_cell(&findings(o, Severity::Warn)));
        // On every row, so that a row copied on its own still carries them.
        cautions.push(Some(cautions_one_line()));
    }
    let c = &SUMMARY_COLUMNS;
    let mut columns = vec![
        col(c[0], id),
        col(c[1], recommended),
        col(c[2], rank),
        col(c[3], layout),
        col(c[4], code),
        col(c[5], status),
        col(c[6], score),
        col(c[7], offered),
        col(c[8], annual),
        col(c[9], worst),
        col(c[10], worst_kwh),
        col(c[11], low_sun),
        col(c[12], low_sun_delivered),
        col(c[13], awake),
        col(c[14], p90_1y),
        col(c[15], p90_10y),
    ];
    columns.extend(battery.columns(&c[16..22]));
    columns.extend([
        col(c[22], modules),
        col(c[23], mixed),
        col(c[24], reasons),
        col(c[25], warnings),
        col(c[26], cautions),
    ]);
    frame(c, columns)
}

fn losses_frame(r: &RankResult) -> Result<DataFrame, PolarsError> {
    let mut id = Vec::new();
    let (mut layout, mut step, mut energy) = (Vec::new(), Vec::new(), Vec::new());
    let mut share: Vec<Option<f64>> = Vec::new();
    let mut decided_by: Vec<Option<&str>> = Vec::new();
    for o in ranked(r) {
        let Some(e) = &o.energy else { continue };
        let potential_kwh = e.potential_wh.iter().sum::<f64>() / 1000.0;
        let mut rows: Vec<(&str, f64, Option<&str>)> = vec![(POTENTIAL_STEP, potential_kwh, None)];
        rows.extend(Step::ALL.iter().map(|&s| {
            (
                s.key(),
                e.step_total_wh(s) / 1000.0,
                Some(s.decided_by().key()),
            )
        }));
        rows.push((DELIVERED_STEP, e.annual_delivered_kwh(), None));
        for (s, kwh, by) in rows {
            id.push(o.layout.id.clone());
            layout.push(safe_cell(&o.layout.display_name()));
            step.push(s);
            energy.push(kwh);
            // No share of nothing: a layout whose modules saw no light gets empty cells.
            share.push((potential_kwh > 0.0).then(|| 100.0 * kwh / potential_kwh));
            decided_by.push(by);
        }
    }
    let c = &LOSSES_COLUMNS;
    frame(
        c,
        vec![
            col(c[0], id),
            col(c[1], layout),
            col(c[2], step),
            col(c[3], energy),
            col(c[4], share),
            col(c[5], decided_by),
        ],
    )
}

fn wiring_frame(r: &RankResult) -> Result<DataFrame, PolarsError> {
    let plan = &r.loaded.plan;
    let (mut id, mut input, mut string, mut position, mut module, mut group) = (
        Vec::new(),
        Vec::new(),
        Vec::new(),
        Vec::new(),
        Vec::new(),
        Vec::new(),
    );
    for o in &r.outcomes {
        for row in o.layout.wiring_rows(plan) {
            id.push(o.layout.id.clone());
            input.push(safe_cell(&row.input));
            string.push(row.string as i64);
            position.push(row.position as i64);
            module.push(safe_cell(&row.module));
            group.push(safe_cell(&row.group));
        }
    }
    let c = &WIRING_COLUMNS;
    frame(
        c,
        vec![
            col(c[0], id),
            col(c[1], input),
            col(c[2], string),
            col(c[3], position),
            col(c[4], module),
            col(c[5], group),
        ],
    )
}

/// User text for a CSV cell that a spreadsheet program will not read as a formula: a text
/// starting with `=`, `+`, `-`, `@`, a tab or a carriage return gets a leading `'`
/// (common practice against formula injection, no source).
pub fn safe_cell(s: &str) -> String {
    if s.starts_with(['=', '+', '-', '@', '\t', '\r']) {
        format!("'{s}")
    } else {
        s.to_string()
    }
}

fn differences_frame(r: &RankResult) -> Result<DataFrame, PolarsError> {
    let (mut id, mut layout, mut cause, mut kwh) = (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    for o in ranked(r) {
        for (c, v) in &o.difference {
            id.push(o.layout.id.clone());
            layout.push(safe_cell(&o.layout.display_name()));
            cause.push(c.key());
            kwh.push(*v);
        }
    }
    let c = &DIFFERENCES_COLUMNS;
    frame(
        c,
        vec![
            col(c[0], id),
            col(c[1], layout),
            col(c[2], cause),
            col(c[3], kwh),
        ],
    )
}

fn hourly_frame(r: &RankResult) -> Result<DataFrame, PolarsError> {
    let w = &r.loaded.weather;
    let stamps: Vec<String> = (0..w.len()).map(|k| w.stamp_text(k)).collect();
    let (mut id, mut layout, mut time) = (Vec::new(), Vec::new(), Vec::new());
    let (mut potential, mut available, mut delivered, mut clipped) =
        (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    let mut awake = Vec::new();
    for o in ranked(r) {
        let Some(e) = &o.energy else { continue };
        let name = o.layout.display_name();
        for (row, stamp) in e.hourly.iter().zip(&stamps) {
            id.push(o.layout.id.clone());
            layout.push(safe_cell(&name));
            time.push(stamp.clone());
            potential.push(row.potential_w as f64);
            available.push(row.available_w as f64);
            delivered.push(row.delivered_w as f64);
            clipped.push(row.clipped_w as f64);
            awake.push(row.awake);
        }
    }
    let c = &HOURLY_COLUMNS;
    frame(
        c,
        vec![
            col(c[0], id),
            col(c[1], layout),
            col(c[2], time),
            col(c[3], potential),
            col(c[4], available),
            col(c[5], delivered),
            col(c[6], clipped),
            col(c[7], awake),
        ],
    )
}

fn thermal_text(m: &CellTemperatureModel) -> String {
    match *m {
        CellTemperatureModel::King { a, b, delta_t_dk } => {
            let set = m.king_set().map_or(String::new(), |(mounting, back)| {
                format!(" ({} mounting, {} back)", mounting.key(), back.key())
            });
            format!("King et al. 2004{set}, a = {a}, b = {b} s/m, ΔT = {delta_t_dk} K")
        }
        CellTemperatureModel::Faiman { u0, u1 } => {
            format!("Faiman 2008, U0 = {u0} W/(m²·K), U1 = {u1} W·s/(m³·K)")
        }
        CellTemperatureModel::Noct { noct_c } => {
            format!("linear rise from NOCT = {noct_c} °C (wind ignored)")
        }
    }
}

fn controller_text(m: &ControllerModel) -> String {
    let kind = match m {
        ControllerModel::Mppt {
            mppt_min_v,
            mppt_max_v,
            tracking,
            ..
        } => format!(
            "MPPT, {} tracking, window {mppt_min_v} to {mppt_max_v} V",
            match tracking {
                TrackerMode::Global => "global",
                TrackerMode::Local => "local (first maximum from open circuit)",
            }
        ),
        ControllerModel::Pwm { .. } => "PWM (array clamped to the battery)".to_string(),
    };
    match m.derating() {
        Some(d) => format!(
            "{kind}; output current derated above {} °C air by {} % per K",
            crate::num::Num(d.from_air_c),
            crate::num::Num(d.frac_per_k * 100.0)
        ),
        None => kind,
    }
}

const MONTH_NAMES: [&str; 12] = [
    "Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec",
];

/// provenance.txt: what produced these files, and with which models. No clock time is
/// recorded, so the same inputs give the same bytes. User text (names, paths) has its control
/// characters escaped, like everything printed on a terminal.
fn provenance(r: &RankResult, files: &[String], skipped: &[String]) -> String {
    let l = &r.loaded;
    let plan = &l.plan;
    let w = &l.weather;
    let s = &l.site;
    let mut out = String::new();
    let _ = writeln!(
        out,
        "wirerank {}: provenance of the files written beside this one",
        env!("CARGO_PKG_VERSION")
    );
    let _ = writeln!(out);
    let _ = writeln!(out, "plan:    {}", plan.source.display());
    let _ = writeln!(out, "         sha256 {}", l.plan_sha256);
    let _ = writeln!(
        out,
        "weather: {} ({} intervals of {} min)",
        plan.weather_path.display(),
        w.len(),
        w.interval_s / 60
    );
    let _ = writeln!(out, "         sha256 {}", l.weather_sha256);
    let _ = writeln!(
        out,
        "site:    {} ({:.4}°, {:.4}°, {:.0} m, UTC{:+})",
        s.name, s.latitude_deg, s.longitude_deg, s.elevation_m, s.utc_offset_h
    );
    let _ = writeln!(out);
    let _ = writeln!(out, "models");
    let _ = writeln!(out, "  sun position:    NREL SPA");
    let _ = writeln!(out, "  sky:             {}", plan.model.sky.name());
    let g = &plan.model.glass;
    let _ = writeln!(
        out,
        "  incidence:       glass cover n = {}, K = {} 1/m, L = {} m",
        g.refractive_index, g.extinction_per_m, g.thickness_m
    );
    for grp in &plan.groups {
        let _ = writeln!(
            out,
            "  cell temperature, group {}: {}",
            grp.id,
            thermal_text(&grp.thermal)
        );
    }
    let _ = writeln!(
        out,
        "  module curves:   De Soto 2006 single-diode, fitted per module type"
    );
    for c in &plan.controllers {
        let _ = writeln!(out, "  controller {}: {}", c.id, controller_text(&c.model));
    }
    let _ = writeln!(out);
    let criterion = match r.criterion {
        Criterion::Winter => format!(
            "{} ({})",
            r.criterion.describe(),
            r.winter_months
                .iter()
                .map(|&m| MONTH_NAMES[m])
                .collect::<Vec<_>>()
                .join(", ")
        ),
        c => c.describe().to_string(),
    };
    let _ = writeln!(out, "ranking criterion: {criterion}");
    let _ = writeln!(
        out,
        "low-sun hours:     sun above 0° and below {}°",
        plan.model.low_sun_elevation_deg
    );
    let _ = writeln!(
        out,
        "limit temperatures: coldest air {:.1} °C, hottest air {:.1} °C",
        r.temps.min_air_c, r.temps.max_air_c
    );
    let n_ranked = r.outcomes.iter().filter(|o| o.rank.is_some()).count();
    let _ = writeln!(
        out,
        "layouts: {} ({} ranked, {} rejected)",
        r.outcomes.len(),
        n_ranked,
        r.outcomes.len() - n_ranked
    );
    let _ = writeln!(out);
    let _ = writeln!(
        out,
        "files (columns: see the wirerank docs, output-files.md)"
    );
    for f in files {
        let _ = writeln!(out, "  {f}");
    }
    for line in skipped {
        let _ = writeln!(out, "  {line}");
    }
    let _ = writeln!(out);
    let _ = writeln!(out, "{CAUTIONS}");
    crate::text::escape_controls(&out).into_owned()
}

/// Refuses any output name that is the run's plan or weather file ([`OutputSet::begin`]
/// also refuses a folder that holds one under any name).
fn refuse_inputs(r: &RankResult, dir: &Path, names: &[String]) -> Result<(), Error> {
    refuse_loaded_inputs(&r.loaded, dir, names)
}

fn refuse_loaded_inputs(
    loaded: &crate::input::Loaded,
    dir: &Path,
    names: &[String],
) -> Result<(), Error> {
    let inputs = inputs_of(loaded);
    for name in names {
        let path = dir.join(name);
        for &(input, what) in &inputs {
            if same_file(&path, input) {
                return Err(output_error(
                    &path,
                    io::Error::new(
                        io::ErrorKind::InvalidInput,
                        format!(
                            "it is the {what} file of this run and would be replaced; choose another output folder"
                        ),
                    ),
                ));
            }
        }
    }
    Ok(())
}

/// The run's input files and what they are, never replaced by an output.
fn inputs_of(loaded: &crate::input::Loaded) -> [(&Path, &'static str); 2] {
    [
        (loaded.plan.source.as_path(), "plan"),
        (loaded.plan.weather_path.as_path(), "weather"),
    ]
}

/// File name of the shade report's CSV.
pub const SHADE_CSV: &str = "shade.csv";
/// Columns of shade.csv.
pub const SHADE_COLUMNS: [&str; 5] = [
    "module",
    "month",
    "direct_kwh_m2",
    "direct_lost_kwh_m2",
    "direct_lost_pct",
];

/// Writes `shade.csv` (one row per module and month) and the sun-path pictures into `dir`,
/// replacing an earlier run's set as a whole ([`crate::io::outset`]).
///
/// # Errors
/// [`Error::Output`] naming the path; nothing is left behind.
pub fn write_shade_csv(r: &crate::results::ShadeResult, dir: &Path) -> Result<Vec<PathBuf>, Error> {
    let mut module = Vec::new();
    let mut month = Vec::new();
    let mut direct = Vec::new();
    let mut lost = Vec::new();
    let mut pct: Vec<Option<f64>> = Vec::new();
    for (m, months) in r.loaded.plan.modules.iter().zip(&r.direct) {
        for (k, (d, l)) in months.iter().enumerate() {
            if !r.months_present[k] {
                continue;
            }
            module.push(m.id.clone());
            month.push((k + 1) as i32);
            direct.push(d / 1000.0);
            lost.push(l / 1000.0);
            pct.push((*d > 0.0).then(|| l / d * 100.0));
        }
    }
    let path = dir.join(SHADE_CSV);
    let df = DataFrame::new_infer_height(vec![
        Column::new(SHADE_COLUMNS[0].into(), module),
        Column::new(SHADE_COLUMNS[1].into(), month),
        Column::new(SHADE_COLUMNS[2].into(), direct),
        Column::new(SHADE_COLUMNS[3].into(), lost),
        Column::new(SHADE_COLUMNS[4].into(), pct),
    ])
    .and_then(csv_bytes)
    .map_err(|e| output_error(&path, io::Error::other(e.to_string())))?;
    // One sun-path picture per placed group: sun_path_<group>.png / .svg.
    let charts: Vec<(String, plots::Chart)> = r
        .views
        .iter()
        .map(|v| {
            (
                format!("sun_path_{}", v.group),
                plots::Chart::SunPath(Box::new(v.clone())),
            )
        })
        .collect();
    let mut names = vec![SHADE_CSV.to_string()];
    let mut svgs = Vec::new();
    for (stem, chart) in &charts {
        let name = format!("{stem}.svg");
        let svg = chart
            .to_svg()
            .map_err(|m| output_error(&dir.join(&name), io::Error::other(m)))?;
        names.push(name.clone());
        names.push(format!("{stem}.png"));
        svgs.push((name, svg));
    }
    refuse_loaded_inputs(&r.loaded, dir, &names)?;
    let mut stage = OutputSet::begin(dir, &inputs_of(&r.loaded))?;
    stage.write(SHADE_CSV, &df)?;
    for (name, svg) in &svgs {
        stage.write(name, svg.as_bytes())?;
    }
    for (stem, chart) in &charts {
        stage.png_named(stem, chart)?;
    }
    let _ = path;
    stage.commit()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cautions_fit_on_one_line() {
        let c = cautions_one_line();
        assert!(!c.contains('\n'));
        assert!(c.contains("licensed professional"));
    }
}
