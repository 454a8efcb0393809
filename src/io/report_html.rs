//! `report.html`: the whole answer of a ranking run on one self-contained page, for the
//! person who builds the system and the one who keeps its papers.
//!
//! The page has inline styles and inline SVG pictures only: no script, no web font, no
//! image file, no link that loads anything, so it opens the same anywhere, offline, and
//! prints on A4 or Letter. Its sections and their order are described in
//! notebooks-free-docs/report-html.md.
//!
//! Formatting only, like the terminal report: every number arrives computed in
//! [`RankResult`], and every sentence the terminal report also prints comes from the same
//! function in [`crate::io::terminal`]. The page is rendered with minijinja from
//! `templates/report.html`; its automatic HTML escaping covers every string from the plan
//! (ids, names, notes, file paths). The pictures are SVG from our own drawing code, whose
//! text plotters escapes; they are the only markup passed through unescaped.

use serde::Serialize;

use crate::design::rules::{input_numbers, nothing_passes_advice, Severity};
use crate::io::terminal::{self, RecommendationText};
use crate::physics::controller::ControllerModel;
use crate::results::rank::LayoutOutcome;
use crate::results::RankResult;

/// The report's file name in the `--out` folder.
pub const REPORT_HTML: &str = "report.html";

/// The template, embedded in the binary.
const TEMPLATE: &str = include_str!("templates/report.html");

const MONTHS: [&str; 12] = [
    "Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec",
];

/// The pictures the page shows, by chart stem (`wiring_L1`, `monthly_energy`, …), as SVG.
pub struct Pictures<'a> {
    pub svgs: &'a [(String, String)],
}

impl Pictures<'_> {
    fn get(&self, stem: &str) -> Option<&str> {
        self.svgs
            .iter()
            .find(|(s, _)| s == stem)
            .map(|(_, svg)| svg.as_str())
    }
}

/// Renders the page.
///
/// `pictures` are the run's charts as SVG (the same text as the `.svg` files), `provenance`
/// the text of provenance.txt.
///
/// # Errors
/// The template cannot be rendered (a bug, reported with minijinja's message).
pub fn render(r: &RankResult, pictures: &Pictures, provenance: &str) -> Result<String, String> {
    let page = page(r, provenance);
    let svg = |stem: &str| {
        pictures
            .get(stem)
            .map(|s| minijinja::Value::from_safe_string(inline_svg(s)))
    };
    let wiring_stem = r.recommended().map(|o| format!("wiring_{}", o.layout.id));
    let mut env = minijinja::Environment::new();
    env.add_template("report.html", TEMPLATE)
        .map_err(|e| e.to_string())?;
    let tmpl = env.get_template("report.html").map_err(|e| e.to_string())?;
    tmpl.render(minijinja::context! {
        page => minijinja::value::Serde(&page),
        wiring_svg => wiring_stem.as_deref().and_then(svg),
        monthly_svg => svg("monthly_energy"),
        unmet_svg => svg("monthly_unmet"),
        soc_svg => svg("daily_soc"),
        losses_svg => svg("losses"),
    })
    .map_err(|e| e.to_string())
}

/// An SVG document as an element inside the page: without the XML declaration, scaled to
/// the column's width (the `viewBox` keeps its proportions).
fn inline_svg(svg: &str) -> String {
    let body = match svg.find("<svg") {
        Some(k) => &svg[k..],
        None => svg,
    };
    body.replacen("<svg ", "<svg class=\"picture\" role=\"img\" ", 1)
}

/// Everything the template shows, as text.
#[derive(Serialize)]
struct Page {
    version: &'static str,
    title: String,
    site_line: String,
    run_lines: Vec<String>,
    cautions: String,
    decision: Option<Decision>,
    nothing_passes: Vec<String>,
    wiring: Option<Wiring>,
    monthly: Option<Monthly>,
    outlook: Option<Outlook>,
    ranking: Ranking,
    rejected: Vec<Rejected>,
    warnings: Vec<Warned>,
    p90: Option<P90>,
    checks: Vec<InputChecks>,
    provenance: String,
}

#[derive(Serialize)]
struct Decision {
    build: String,
    why: String,
    assignment: Option<String>,
    screening: Option<String>,
    runner_up: Option<String>,
    runner_up_difference: Option<String>,
    tie: Option<String>,
}

impl From<RecommendationText> for Decision {
    fn from(t: RecommendationText) -> Self {
        Decision {
            build: t.build,
            why: t.why,
            assignment: t.assignment,
            screening: t.screening,
            runner_up: t.runner_up,
            runner_up_difference: t.runner_up_difference,
            tie: t.tie,
        }
    }
}

#[derive(Serialize)]
struct Wiring {
    id: String,
    name: String,
    strings: Vec<WiredString>,
    not_wired: String,
}

#[derive(Serialize)]
struct WiredString {
    input: String,
    string: usize,
    modules: String,
    count: usize,
    groups: String,
}

#[derive(Serialize)]
struct Monthly {
    id: String,
    with_load: bool,
    battery_model: bool,
    rows: Vec<MonthRow>,
    total: MonthRow,
}

/// One month of the layout to build: offered, delivered, turned away, load and unmet, kWh.
#[derive(Serialize)]
struct MonthRow {
    month: String,
    offered: String,
    delivered: String,
    turned_away: String,
    load: String,
    unmet: String,
}

#[derive(Serialize)]
struct Outlook {
    title: String,
    rows: Vec<OutlookRow>,
    notes: Vec<String>,
    battery: Option<String>,
    battery_rows: Vec<(String, String)>,
    modules: Option<String>,
}

#[derive(Serialize)]
struct OutlookRow {
    recommended: bool,
    id: String,
    name: String,
    served: String,
    unmet: String,
    days_short: String,
    lowest_soc: String,
    low_sun: String,
    year_unmet: String,
    year_turned_away: String,
    year_days_short: String,
}

#[derive(Serialize)]
struct Ranking {
    title: String,
    legend: String,
    unmet_criterion: bool,
    rows: Vec<RankRow>,
    hidden: usize,
}

#[derive(Serialize)]
struct RankRow {
    recommended: bool,
    id: String,
    rank: usize,
    name: String,
    score: String,
    offered: String,
    delivered: String,
    worst: String,
    low_sun: String,
    awake: String,
    notes: String,
    difference: Option<String>,
}

#[derive(Serialize)]
struct Rejected {
    id: String,
    name: String,
    findings: Vec<Found>,
}

#[derive(Serialize)]
struct Found {
    rule: String,
    text: String,
}

#[derive(Serialize)]
struct Warned {
    id: String,
    rule: String,
    text: String,
}

#[derive(Serialize)]
struct P90 {
    intro: String,
    rows: Vec<P90Row>,
}

#[derive(Serialize)]
struct P90Row {
    id: String,
    name: String,
    p50: String,
    p90_1y: String,
    p90_10y: String,
    empirical: Option<String>,
}

/// The limit checks of one controller input of the layout to build.
#[derive(Serialize)]
struct InputChecks {
    input: String,
    rows: Vec<CheckRow>,
    findings: Vec<Found>,
}

#[derive(Serialize)]
struct CheckRow {
    what: String,
    value: String,
    limit: String,
    margin: String,
    /// `ok`, or what happens when the limit is crossed.
    state: String,
    within: bool,
}

fn kwh(x: f64) -> String {
    format!("{x:.1}")
}

fn page(r: &RankResult, provenance: &str) -> Page {
    // As the terminal report: of an enumeration the best 20 and the layout to build.
    let (ranked, hidden) = terminal::shown_ranked(r, None);
    let rejected: Vec<&LayoutOutcome> = r.outcomes.iter().filter(|o| o.rank.is_none()).collect();
    let nothing_passes = if ranked.is_empty() {
        let findings: Vec<&[crate::design::rules::Finding]> =
            r.outcomes.iter().map(|o| o.findings.as_slice()).collect();
        nothing_passes_advice(&r.loaded.plan, &findings)
    } else {
        Vec::new()
    };
    Page {
        version: env!("CARGO_PKG_VERSION"),
        title: format!("Wiring report: {}", r.loaded.site.name),
        site_line: terminal::site_line(&r.loaded),
        run_lines: terminal::header_lines(r),
        cautions: crate::design::cautions::cautions_one_line()
            .trim_start_matches("Cautions: ")
            .to_string(),
        decision: terminal::recommendation_text(r).map(Decision::from),
        nothing_passes,
        wiring: wiring(r),
        monthly: monthly(r),
        outlook: outlook(r, &ranked),
        ranking: ranking(r, &ranked, hidden, rejected.len()),
        rejected: rejected
            .iter()
            .map(|o| Rejected {
                id: o.layout.id.clone(),
                name: o.layout.display_name(),
                findings: o
                    .findings
                    .iter()
                    .filter(|f| f.severity == Severity::Reject)
                    .map(|f| Found {
                        rule: f.rule.to_string(),
                        text: f.message.clone(),
                    })
                    .collect(),
            })
            .collect(),
        warnings: ranked
            .iter()
            .flat_map(|o| {
                o.findings
                    .iter()
                    .filter(|f| f.severity == Severity::Warn)
                    .map(|f| Warned {
                        id: o.layout.id.clone(),
                        rule: f.rule.to_string(),
                        text: f.text(),
                    })
            })
            .collect(),
        p90: p90(r, &ranked),
        checks: checks(r),
        provenance: provenance.to_string(),
    }
}

fn wiring(r: &RankResult) -> Option<Wiring> {
    let o = r.recommended()?;
    let w = terminal::wired_strings(o, &r.loaded.plan);
    Some(Wiring {
        id: o.layout.id.clone(),
        name: o.layout.display_name(),
        strings: w
            .strings
            .into_iter()
            .map(|s| WiredString {
                input: s.input,
                string: s.string,
                count: s.modules.len(),
                modules: s.modules.join(" – "),
                groups: s.groups.join(" + "),
            })
            .collect(),
        not_wired: w.not_wired.join(", "),
    })
}

fn monthly(r: &RankResult) -> Option<Monthly> {
    let o = r.recommended()?;
    let s = o.summary.as_ref()?;
    let plan = &r.loaded.plan;
    let with_load = plan.consumption.is_some();
    let cell = |present: bool, x: f64| if present { kwh(x) } else { "–".to_string() };
    let rows = (0..12)
        .map(|m| {
            let p = r.months_present[m];
            MonthRow {
                month: MONTHS[m].to_string(),
                offered: cell(p, s.offered_kwh[m]),
                delivered: cell(p, s.delivered_kwh[m]),
                turned_away: cell(p, s.curtailed_kwh[m]),
                load: cell(p, s.load_kwh[m]),
                unmet: cell(p, s.unmet_kwh[m]),
            }
        })
        .collect();
    Some(Monthly {
        id: o.layout.id.clone(),
        with_load,
        battery_model: plan.battery.model.is_some(),
        rows,
        total: MonthRow {
            month: "Year".to_string(),
            offered: kwh(s.annual_offered_kwh()),
            delivered: kwh(s.annual_delivered_kwh()),
            turned_away: kwh(s.annual_curtailed_kwh()),
            load: kwh(s.annual_load_kwh()),
            unmet: kwh(s.annual_unmet_kwh()),
        },
    })
}

fn outlook(r: &RankResult, ranked: &[&LayoutOutcome]) -> Option<Outlook> {
    if r.loaded.plan.consumption.is_none() || ranked.is_empty() {
        return None;
    }
    let rec = r.recommendation.as_ref().map(|x| x.layout.as_str());
    let (battery, battery_rows) = match terminal::battery_sizing_text(r) {
        Some((h, rows)) => (Some(h), rows),
        None => (None, Vec::new()),
    };
    Some(Outlook {
        title: terminal::outlook_title(r),
        rows: terminal::outlook_rows(r, ranked)
            .into_iter()
            .map(|x| OutlookRow {
                recommended: Some(x.id.as_str()) == rec,
                served: kwh(x.served_kwh),
                unmet: kwh(x.unmet_kwh),
                days_short: format!("{:.0}", x.days_short),
                lowest_soc: format!("{:.0} %", x.lowest_soc_pct),
                low_sun: format!(
                    "{:.1} / {:.1}",
                    x.low_sun_offered_kwh, x.low_sun_delivered_kwh
                ),
                year_unmet: kwh(x.year_unmet_kwh),
                year_turned_away: kwh(x.year_curtailed_kwh),
                year_days_short: format!("{:.0}", x.year_days_short),
                id: x.id,
                name: x.name,
            })
            .collect(),
        notes: terminal::outlook_notes(r),
        battery,
        battery_rows,
        modules: terminal::module_sizing_text(r),
    })
}

fn ranking(r: &RankResult, ranked: &[&LayoutOutcome], hidden: usize, rejected: usize) -> Ranking {
    let rec = r.recommendation.as_ref().map(|x| x.layout.as_str());
    Ranking {
        title: terminal::ranking_title(r, ranked.len(), rejected),
        legend: terminal::ranking_legend(r),
        unmet_criterion: r.criterion == crate::results::rank::Criterion::Unmet,
        rows: ranked
            .iter()
            .filter_map(|o| {
                let s = o.summary.as_ref()?;
                let recommended = Some(o.layout.id.as_str()) == rec;
                Some(RankRow {
                    recommended,
                    id: o.layout.id.clone(),
                    rank: o.rank.unwrap_or(0),
                    name: o.layout.display_name(),
                    score: terminal::score_text(r, o, s),
                    offered: kwh(s.annual_offered_kwh()),
                    delivered: kwh(s.annual_delivered_kwh()),
                    worst: terminal::worst_text(s),
                    low_sun: format!(
                        "{:.1} / {:.1}",
                        s.annual_low_sun_offered_kwh(),
                        s.annual_low_sun_delivered_kwh()
                    ),
                    awake: format!(
                        "{:.0}",
                        o.energy
                            .as_ref()
                            .map_or(0.0, |e| e.awake_h.iter().sum::<f64>())
                    ),
                    notes: terminal::layout_notes(r, o).join(", "),
                    difference: (!recommended && !o.difference.is_empty())
                        .then(|| crate::results::explain::difference_line(&o.difference)),
                })
            })
            .collect(),
        hidden,
    }
}

fn p90(r: &RankResult, ranked: &[&LayoutOutcome]) -> Option<P90> {
    if ranked.is_empty() {
        return None;
    }
    Some(P90 {
        intro: terminal::p90_intro(r),
        rows: ranked
            .iter()
            .filter_map(|o| {
                let p = o.p90.as_ref()?;
                Some(P90Row {
                    id: o.layout.id.clone(),
                    name: o.layout.display_name(),
                    p50: kwh(p.p50),
                    p90_1y: kwh(p.p90_1y),
                    p90_10y: kwh(p.p90_10y),
                    empirical: terminal::empirical_p90_text(o),
                })
            })
            .collect(),
    })
}

/// The limit checks of the layout to build, input by input: each figure beside its limit
/// and the margin left (the same figures the wiring diagram prints).
fn checks(r: &RankResult) -> Vec<InputChecks> {
    let Some(o) = r.recommended() else {
        return Vec::new();
    };
    let plan = &r.loaded.plan;
    let t = &r.temps;
    o.layout
        .inputs
        .iter()
        .enumerate()
        .map(|(k, w)| {
            let c = &plan.controllers[w.controller];
            let n = input_numbers(plan, w, t);
            let mut rows = vec![
                below(
                    format!("highest string Voc at {:.0} °C (cold morning)", t.min_air_c),
                    n.voc_cold_max_v,
                    c.max_input_v,
                    "V",
                    "controller maximum input voltage",
                    "rejected: can damage the controller",
                ),
                below(
                    "1.25 × the input's short-circuit current".to_string(),
                    n.isc_125_a,
                    n.isc_rating_a,
                    "A",
                    "short-circuit current the controller withstands",
                    "rejected: above what the controller withstands",
                ),
                below(
                    "1.25 × the input's short-circuit current".to_string(),
                    n.isc_125_a,
                    n.input_rating_a,
                    "A",
                    "current the controller draws",
                    "warns: the controller limits itself, costing energy",
                ),
                below(
                    "cable voltage drop at STC".to_string(),
                    n.voltage_drop_frac * 100.0,
                    plan.cables.voltage_drop_target_frac * 100.0,
                    "%",
                    "the plan's target",
                    "warns: costs energy in the cables",
                ),
            ];
            if let ControllerModel::Mppt { .. } = c.model {
                if n.vmp_hot_min_v.is_finite() {
                    let lo = c.model.window_low_v(plan.battery.charge_v);
                    rows.push(above(
                        format!("lowest string Vmp in full sun at {:.0} °C air", t.max_air_c),
                        n.vmp_hot_min_v,
                        lo,
                        "V",
                        "MPPT window's lower edge",
                        "warns: on hot afternoons the tracker works at the edge",
                    ));
                }
            }
            if let Some((lo, hi)) = n.fuse_range_a {
                rows.push(CheckRow {
                    what: "string fuse rating (three or more strings in parallel)".to_string(),
                    value: format!("{lo:.1} to {hi:.0} A"),
                    limit: "from 1.56 × Isc up to the modules' maximum series fuse".to_string(),
                    margin: format!("{:.1} A of choice", hi - lo),
                    state: if hi >= lo { "ok" } else { "no fuse fits" }.to_string(),
                    within: hi >= lo,
                });
            }
            InputChecks {
                input: format!(
                    "{} ({}, {:.0} V / {:.0} A)",
                    c.id,
                    match c.model {
                        ControllerModel::Mppt { .. } => "MPPT",
                        ControllerModel::Pwm { .. } => "PWM",
                    },
                    c.max_input_v,
                    c.model.max_input_a()
                ),
                rows,
                findings: o
                    .findings
                    .iter()
                    .filter(|f| f.input == k)
                    .map(|f| Found {
                        rule: f.rule.to_string(),
                        text: f.text(),
                    })
                    .collect(),
            }
        })
        .collect()
}

/// A figure that must stay at or below its limit.
fn below(
    what: String,
    value: f64,
    limit: f64,
    unit: &str,
    limit_what: &str,
    over: &str,
) -> CheckRow {
    margin_row(what, value, limit, limit - value, unit, limit_what, over)
}

/// A figure that should stay at or above its limit.
fn above(
    what: String,
    value: f64,
    limit: f64,
    unit: &str,
    limit_what: &str,
    under: &str,
) -> CheckRow {
    margin_row(what, value, limit, value - limit, unit, limit_what, under)
}

fn margin_row(
    what: String,
    value: f64,
    limit: f64,
    margin: f64,
    unit: &str,
    limit_what: &str,
    crossed: &str,
) -> CheckRow {
    let pct = if unit != "%" && limit.abs() > 0.0 {
        format!(" ({:.0} % of the limit)", margin / limit.abs() * 100.0)
    } else {
        String::new()
    };
    let within = margin >= 0.0;
    CheckRow {
        what,
        value: format!("{value:.1} {unit}"),
        limit: format!("{limit:.1} {unit} ({limit_what})"),
        margin: if unit == "%" {
            format!("{margin:.1} percentage points")
        } else {
            format!("{margin:.1} {unit}{pct}")
        },
        state: if within { "ok" } else { crossed }.to_string(),
        within,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn an_svg_document_becomes_an_inline_element() {
        let s =
            inline_svg("<?xml version=\"1.0\"?>\n<svg width=\"10\" viewBox=\"0 0 10 10\"></svg>");
        assert!(s.starts_with("<svg class=\"picture\""), "{s}");
        assert!(!s.contains("<?xml"));
    }

    #[test]
    fn a_margin_row_says_whether_the_figure_is_within_its_limit() {
        // Worked by hand: 90 V against a 100 V limit leaves 10 V, 10 % of the limit.
        let r = below("x".into(), 90.0, 100.0, "V", "max", "over");
        assert_eq!(r.margin, "10.0 V (10 % of the limit)");
        assert!(r.within);
        let r = below("x".into(), 3.5, 3.0, "%", "target", "costs");
        assert_eq!(r.margin, "-0.5 percentage points");
        assert_eq!(r.state, "costs");
    }
}
