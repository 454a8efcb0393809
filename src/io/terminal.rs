//! Terminal reports: fixed-width tables for people.
//!
//! Formatting only; every number arrives computed. Machine-readable output (JSON, CSV) lives
//! in `io/`.

use crate::num::Num;
use std::fmt::Write as _;

use crate::design::cautions::{CAUTIONS, CAUTIONS_SHORT};
use crate::design::rules::Severity;
use crate::design::sizing::ModuleAnswer;
use crate::input::weather::Weather;
use crate::input::Loaded;
use crate::results::explain::difference_line;
use crate::results::light::GroupMonthly;
use crate::results::rank::LayoutOutcome;
use crate::results::recommend::{TIE_BAND_FRAC, UNMET_TIE_FRAC_OF_LOAD};
use crate::results::uncertainty::empirical_variability;
use crate::results::weather_summary::WeatherSummary;
use crate::results::{CheckInput, CheckResult, CheckShow, RankResult, ShadeResult};
use crate::sim::energy::Step;
use crate::time::LocalTime;
use crate::weather_gen::synth::MONTH_NAMES;

/// The note a plan with a battery model but no load gets.
pub const BATTERY_WITHOUT_LOAD: &str = "note: the plan has a battery model but no [load]: nothing draws from the battery, so once it is full it turns the harvest away; the ranking uses the energy offered, and delivered energy is what the battery could still take";

const MONTHS: [&str; 12] = [
    "Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec",
];

/// Site line shared by the reports.
fn site_header(out: &mut String, l: &Loaded) {
    let _ = writeln!(out, "{}", site_line(l));
}

/// The site and its weather in one line (no line break).
pub fn site_line(l: &Loaded) -> String {
    let s = &l.site;
    format!(
        "{}  ({:.2}°, {:.2}°, {:.0} m, UTC{:+})  weather: {} ({} intervals of {} min)",
        s.name,
        s.latitude_deg,
        s.longitude_deg,
        s.elevation_m,
        s.utc_offset_h,
        l.weather.source,
        l.weather.len(),
        l.weather.interval_s / 60
    )
}

/// How the passing layouts were screened before the battery-coupled year, in one sentence.
pub fn screening_line(r: &RankResult) -> Option<String> {
    let x = r.screening.as_ref()?;
    Some(format!(
        "screening: {} passing enumerated layouts were simulated charging at a fixed {} V; the best {} by that energy were simulated with the battery model and ranked, the other {} are not shown (raise model.coupled_layouts to run more; layouts the plan lists always run with the battery)",
        x.screened,
        crate::num::Num(x.charge_v),
        x.coupled,
        x.screened - x.coupled
    ))
}

/// What module assignment did, in one sentence: the gain over id order for the recommended
/// layout, and how many layouts were assigned and searched.
fn assignment_line(
    a: &crate::results::AssignmentReport,
    c: crate::results::rank::Criterion,
) -> String {
    let seeded = format!(
        "{} enumerated layout{} took the least shaded modules and grouped similar shade in strings",
        a.seeded,
        if a.seeded == 1 { "" } else { "s" },
    );
    let searched = if a.swap_search {
        format!(
            "{seeded}; the best {} {} searched further by swaps ({} simulation{}, {} improved)",
            a.searched,
            if a.searched == 1 { "was" } else { "were" },
            a.evaluations,
            if a.evaluations == 1 { "" } else { "s" },
            a.improved
        )
    } else {
        format!("{seeded}; no swap search on a weather file this long (more than a year of 10-minute data), so the seed stands")
    };
    match &a.recommended {
        Some(g) => {
            let gain = g.score_kwh - g.id_order_score_kwh;
            let what = match c {
                crate::results::rank::Criterion::Unmet => format!(
                    "{:.1} kWh a year less unmet load",
                    gain
                ),
                _ => format!("{:+.1} kWh a year of {}", gain, c.short()),
            };
            format!(
                "Modules chosen by shade: {} gains {what} ({:+.1} kWh offered) over the same shape with modules in id order; {searched}.",
                g.layout,
                g.offered_kwh - g.id_order_offered_kwh
            )
        }
        None => format!("Modules chosen by shade: {searched}; the recommended layout's wiring is as in id order or listed in the plan."),
    }
}

/// The ranking report with the wiring list of the recommended layout and of the plan's
/// listed layouts.
pub fn ranking(r: &RankResult) -> String {
    ranking_with(r, false, None)
}

/// How many ranked layouts the report shows by default: every one when the plan lists its
/// layouts, the best 20 (and the recommended one) of an enumeration.
pub const DEFAULT_TOP_ENUMERATED: usize = 20;

/// The ranking report: the decision, the ranked and rejected layouts with their reasons,
/// the wiring lists (of every candidate when `wiring_all`), P50/P90, the winter outlook,
/// monthly energy, the light on each orientation and the cautions.
pub fn ranking_with(r: &RankResult, wiring_all: bool, top: Option<usize>) -> String {
    let t = RankingText::new(r, top);
    let mut out = String::new();
    t.header(&mut out);
    t.recommendation(&mut out);
    t.wiring(&mut out, wiring_all);
    t.table(&mut out);
    t.rejected(&mut out);
    t.warnings(&mut out);
    t.p90(&mut out);
    if r.loaded.plan.consumption.is_some() && !t.ranked.is_empty() {
        out.push_str(&outlook(r, &t.ranked));
    }
    t.tracker_comparison(&mut out);
    if !t.ranked.is_empty() {
        t.monthly(&mut out);
    }
    let _ = writeln!(out);
    out.push_str(&light_section(r));
    let _ = writeln!(out);
    let _ = writeln!(out, "{CAUTIONS}");
    out
}

/// The ranking report's sections, each written by one method.
struct RankingText<'a> {
    r: &'a RankResult,
    /// The ranked layouts shown (all, or the best `--top` and the recommended one).
    ranked: Vec<&'a LayoutOutcome>,
    /// Ranked layouts not shown.
    hidden: usize,
    rejected: Vec<&'a LayoutOutcome>,
    /// Width of the layout-name column.
    name_w: usize,
}

impl<'a> RankingText<'a> {
    /// The report's view of a run; with `top`, only the best `top` ranked layouts and the
    /// recommended one are shown (`hidden` counts the rest).
    fn new(r: &'a RankResult, top: Option<usize>) -> Self {
        let name_w = r
            .outcomes
            .iter()
            .map(|o| o.layout.display_name().chars().count())
            .max()
            .unwrap_or(6)
            .clamp(6, 90);
        let (ranked, hidden) = shown_ranked(r, top);
        RankingText {
            r,
            hidden,
            ranked,
            rejected: r.outcomes.iter().filter(|o| o.rank.is_none()).collect(),
            name_w,
        }
    }

    /// Site, system, candidates and what enumeration skipped.
    fn header(&self, out: &mut String) {
        site_header(out, &self.r.loaded);
        for line in header_lines(self.r) {
            let _ = writeln!(out, "{line}");
        }
        let _ = writeln!(out, "{CAUTIONS_SHORT}");
        let _ = writeln!(out);
    }

    /// The layout to build, why, and the runner-up.
    fn recommendation(&self, out: &mut String) {
        let Some(t) = recommendation_text(self.r) else {
            return;
        };
        let _ = writeln!(out, "{}", t.build);
        let _ = writeln!(out, "  Why: {}", t.why);
        if let Some(a) = &t.assignment {
            let _ = writeln!(out, "  {a}");
        }
        // The screening is said in the header above (the page says it here).
        if let Some(line) = &t.runner_up {
            let _ = writeln!(out, "  {line}");
            if let Some(d) = &t.runner_up_difference {
                let _ = writeln!(out, "    {d}");
            }
        }
        if let Some(tie) = &t.tie {
            let _ = writeln!(out, "  {tie}");
        }
        let _ = writeln!(out);
    }

    /// Module by module: which modules form each string on each controller input, for the
    /// recommended layout, then the plan's other listed layouts (every candidate with
    /// `all`).
    fn wiring(&self, out: &mut String, all: bool) {
        let plan = &self.r.loaded.plan;
        let rec = self.r.recommended();
        let mut shown: Vec<&LayoutOutcome> = rec.into_iter().collect();
        let listed = |o: &&LayoutOutcome| all || o.layout.id.starts_with('L');
        shown.extend(
            self.r
                .outcomes
                .iter()
                .filter(|o| Some(o.layout.id.as_str()) != rec.map(|x| x.layout.id.as_str()))
                .filter(listed),
        );
        if shown.is_empty() {
            return;
        }
        let _ = writeln!(
            out,
            "Wiring, module by module (strings listed from their first module):"
        );
        for o in shown {
            let mark = if Some(o.layout.id.as_str()) == rec.map(|x| x.layout.id.as_str()) {
                " — the layout to build"
            } else if o.rank.is_none() {
                " — rejected"
            } else {
                ""
            };
            let _ = writeln!(out, "  {} {}{mark}", o.layout.id, o.layout.display_name());
            let w = wired_strings(o, plan);
            for st in &w.strings {
                let _ = writeln!(
                    out,
                    "    {} string {}: {}   ({})",
                    st.input,
                    st.string,
                    st.modules.join(" – "),
                    st.groups.join(" + ")
                );
            }
            let unused = &w.not_wired;
            if !unused.is_empty() {
                let _ = writeln!(out, "    not wired: {}", unused.join(", "));
            }
        }
        let _ = writeln!(out);
    }

    /// The ranked layouts, one row each, with each one's difference from the recommended.
    fn table(&self, out: &mut String) {
        let (r, name_w) = (self.r, self.name_w);
        let plan = &r.loaded.plan;
        let _ = writeln!(
            out,
            "{}",
            ranking_title(r, self.ranked.len(), self.rejected.len())
        );
        let _ = writeln!(
            out,
            "{:<4} {:>4}  {:<name_w$}  {:>16} {:>9} {:>9} {:>10}  {:>15} {:>7}  notes",
            "id",
            "rank",
            "layout",
            "score",
            "offered",
            "delivered",
            "worst",
            "low-sun off/del",
            "awake h"
        );
        let rec_id = r.recommendation.as_ref().map(|x| x.layout.as_str());
        for o in &self.ranked {
            let Some(s) = &o.summary else { continue };
            let score = score_text(r, o, s);
            let worst = worst_text(s);
            let mark = if Some(o.layout.id.as_str()) == rec_id {
                "→"
            } else {
                " "
            };
            let _ =
                writeln!(
                out,
                "{mark}{:<3} {:>4}  {:<name_w$}  {:>16} {:>9.1} {:>9.1} {:>10}  {:>15} {:>7.0}  {}",
                o.layout.id,
                o.rank.unwrap_or(0),
                o.layout.display_name(),
                score,
                s.annual_offered_kwh(),
                s.annual_delivered_kwh(),
                worst,
                format!(
                    "{:.1}/{:.1}",
                    s.annual_low_sun_offered_kwh(),
                    s.annual_low_sun_delivered_kwh()
                ),
                o.energy.as_ref().map_or(0.0, |e| e.awake_h.iter().sum::<f64>()),
                layout_notes(r, o).join(", ")
            );
            if !o.difference.is_empty() {
                if let Some(id) = rec_id {
                    let _ = writeln!(out, "{:10}vs {id}: {}", "", difference_line(&o.difference));
                }
            }
        }
        if self.ranked.is_empty() {
            let _ = writeln!(out, "      (no layout passes the electrical limits)");
            let findings: Vec<&[crate::design::rules::Finding]> =
                r.outcomes.iter().map(|o| o.findings.as_slice()).collect();
            for line in crate::design::rules::nothing_passes_advice(plan, &findings) {
                let _ = writeln!(out, "      {line}");
            }
        }
        if self.hidden > 0 {
            let _ = writeln!(
                out,
                "      … and {} more ranked layout{} (--top N shows more; every layout is in --format json and the --out files)",
                self.hidden,
                if self.hidden == 1 { "" } else { "s" }
            );
        }
        let _ = writeln!(out, "  → = the layout to build; {}", ranking_legend(r));
    }

    /// Rejected layouts with the rules they break.
    fn rejected(&self, out: &mut String) {
        if self.rejected.is_empty() {
            return;
        }
        let _ = writeln!(out);
        let _ = writeln!(out, "Rejected (never ranked):");
        const SHOWN: usize = 15;
        for o in self.rejected.iter().take(SHOWN) {
            let _ = writeln!(out, "  {} {}", o.layout.id, o.layout.display_name());
            for f in o.findings.iter().filter(|f| f.severity == Severity::Reject) {
                let _ = writeln!(out, "    ✗ {}: {}", f.rule, f.message);
            }
        }
        if self.rejected.len() > SHOWN {
            let _ = writeln!(
                out,
                "  … and {} more (all are in --format json and summary.csv)",
                self.rejected.len() - SHOWN
            );
        }
    }

    /// Warnings on the ranked layouts.
    fn warnings(&self, out: &mut String) {
        let warned: Vec<_> = self
            .ranked
            .iter()
            .filter(|o| o.findings.iter().any(|f| f.severity == Severity::Warn))
            .collect();
        if warned.is_empty() {
            return;
        }
        let _ = writeln!(out);
        let _ = writeln!(out, "Warnings on ranked layouts:");
        for o in warned {
            for f in o.findings.iter().filter(|f| f.severity == Severity::Warn) {
                let _ = writeln!(out, "  {}: {}: {}", o.layout.id, f.rule, f.text());
            }
        }
    }

    /// P50/P90 per ranked layout, and the empirical spread of several years.
    fn p90(&self, out: &mut String) {
        if self.ranked.is_empty() {
            return;
        }
        let _ = writeln!(out);
        let _ = writeln!(out, "{}:", p90_intro(self.r));
        for o in &self.ranked {
            if let Some(line) = empirical_p90_text(o) {
                let _ = writeln!(out, "  {:<4} {line}", o.layout.id);
            }
            if let Some(p) = &o.p90 {
                let _ = writeln!(
                    out,
                    "  {:<4} P50 {:>8.1} kWh   P90 one year {:>8.1} kWh   P90 ten-year mean {:>8.1} kWh",
                    o.layout.id,
                    p.p50,
                    p.p90_1y,
                    p.p90_10y
                );
            }
        }
    }

    /// What a different MPPT tracker would change (shade makes several maxima).
    fn tracker_comparison(&self, out: &mut String) {
        let differs: Vec<_> = self
            .ranked
            .iter()
            .filter_map(|o| {
                let e = o.energy.as_ref()?;
                // Both as offered by the controllers (before a full battery curtails).
                let own = e.annual_delivered_kwh() + e.step_total_wh(Step::Curtailed) / 1000.0;
                let other = e.other_tracking_wh.iter().sum::<f64>() / 1000.0;
                ((own - other).abs() >= 0.05).then_some((o, own, other))
            })
            .collect();
        if differs.is_empty() {
            return;
        }
        let _ = writeln!(out);
        let _ = writeln!(
            out,
            "Tracker comparison (MPPT inputs with the other tracking behaviour; partial shade gives the array several power maxima):"
        );
        for (o, own, other) in differs {
            let _ = writeln!(
                out,
                "  {}: {own:.1} kWh offered as planned, {other:.1} kWh with the other tracker ({:+.1} kWh)",
                o.layout.id,
                other - own
            );
        }
    }

    /// Energy offered per month by each ranked layout; the recommended layout's delivered
    /// energy and the load beneath.
    fn monthly(&self, out: &mut String) {
        let (r, name_w) = (self.r, self.name_w + 5);
        let _ = writeln!(out);
        let _ = writeln!(out, "Monthly energy offered by the controllers, kWh");
        let _ = write!(out, "{:<name_w$}", "");
        for m in MONTHS {
            let _ = write!(out, "{m:>6}");
        }
        let _ = writeln!(out);
        let row = |out: &mut String, label: String, v: &[f64; 12]| {
            let _ = write!(out, "{label:<name_w$}");
            for (m, x) in v.iter().enumerate() {
                if r.months_present[m] {
                    let _ = write!(out, "{x:>6.1}");
                } else {
                    let _ = write!(out, "{:>6}", "-");
                }
            }
            let _ = writeln!(out);
        };
        for o in &self.ranked {
            let Some(s) = &o.summary else { continue };
            row(
                out,
                format!("{:<4} {}", o.layout.id, o.layout.display_name()),
                &s.offered_kwh,
            );
        }
        if let Some((o, s)) = self
            .r
            .recommended()
            .and_then(|o| o.summary.as_ref().map(|s| (o, s)))
        {
            let target = if r.loaded.plan.consumption.is_some() {
                "the battery and the load"
            } else {
                "the battery"
            };
            let _ = writeln!(out, "Delivered to {target} by {}, kWh", o.layout.id);
            row(
                out,
                format!("{:<4} delivered", o.layout.id),
                &s.delivered_kwh,
            );
            if r.loaded.plan.consumption.is_some() {
                row(out, "     load".to_string(), &s.load_kwh);
                row(out, "     unmet".to_string(), &s.unmet_kwh);
            }
        }
    }
}

/// The ranked layouts a report shows, in rank order, and how many it leaves out: the best
/// `top` and the layout to build; without `top`, every listed layout, or of an enumeration
/// the best [`DEFAULT_TOP_ENUMERATED`] and the layout to build.
pub fn shown_ranked(r: &RankResult, top: Option<usize>) -> (Vec<&LayoutOutcome>, usize) {
    let enumerated = r.outcomes.iter().any(|o| o.layout.id.starts_with('E'));
    let keep = top
        .or(enumerated.then_some(DEFAULT_TOP_ENUMERATED))
        .unwrap_or(usize::MAX);
    let rec = r.recommendation.as_ref().map(|x| x.layout.as_str());
    let all_ranked: Vec<&LayoutOutcome> = r.outcomes.iter().filter(|o| o.rank.is_some()).collect();
    let ranked: Vec<&LayoutOutcome> = all_ranked
        .iter()
        .copied()
        .filter(|o| o.rank.is_some_and(|k| k <= keep) || Some(o.layout.id.as_str()) == rec)
        .collect();
    let hidden = all_ranked.len() - ranked.len();
    (ranked, hidden)
}

/// The ranking's title: the criterion and how many layouts are ranked and rejected.
pub fn ranking_title(r: &RankResult, ranked: usize, rejected: usize) -> String {
    let winter: Vec<&str> = r.winter_months.iter().map(|&m| MONTHS[m]).collect();
    format!(
        "Ranked by {}{} — {} layout{} ranked, {} rejected",
        r.criterion.describe(),
        if r.criterion == crate::results::rank::Criterion::Winter {
            format!(" ({})", winter.join(", "))
        } else {
            String::new()
        },
        ranked,
        if ranked == 1 { "" } else { "s" },
        rejected
    )
}

/// What the ranking's columns mean.
pub fn ranking_legend(r: &RankResult) -> String {
    format!(
        "energies in kWh a year. offered = what the controllers could put out; delivered = what the battery and the load took (a full battery turns the rest away); worst = the month with the least offered; low-sun = sun below {:.0}°",
        r.loaded.plan.model.low_sun_elevation_deg
    )
}

/// The score a ranked layout was ranked on (for `unmet`: days short and kWh unmet a year).
pub fn score_text(
    r: &RankResult,
    o: &LayoutOutcome,
    s: &crate::results::summary::LayoutSummary,
) -> String {
    match r.criterion {
        crate::results::rank::Criterion::Unmet => format!(
            "{:.0} d, {:.1} kWh",
            s.annual_days_short(),
            s.annual_unmet_kwh()
        ),
        _ => format!("{:.1} kWh", o.score_kwh.unwrap_or(0.0)),
    }
}

/// The worst month: its energy offered and its name, or `-`.
pub fn worst_text(s: &crate::results::summary::LayoutSummary) -> String {
    s.worst_month.map_or("-".to_string(), |m| {
        format!("{:.1} {}", s.offered_kwh[m], MONTHS[m])
    })
}

/// The notes column, and the other candidates with the same code (their wiring lists
/// say what differs).
pub fn layout_notes(r: &RankResult, o: &LayoutOutcome) -> Vec<String> {
    let mut n = notes(o, r.loaded.plan.modules.len());
    let twins: Vec<&str> = r
        .outcomes
        .iter()
        .filter(|x| x.layout.code == o.layout.code && x.layout.id != o.layout.id)
        .map(|x| x.layout.id.as_str())
        .take(3)
        .collect();
    if !twins.is_empty() {
        n.push(format!(
            "same code as {} (other modules per string: see --wiring)",
            twins.join(", ")
        ));
    }
    n
}

/// What P50/P90 rests on, in one line.
pub fn p90_intro(r: &RankResult) -> String {
    let u = &r.loaded.plan.model.uncertainty;
    format!(
        "Energy offered a year that you can count on (normal approximation; resource variability {:.1} %, model uncertainty {:.1} %)",
        u.variability_frac * 100.0,
        u.model_frac * 100.0
    )
}

/// The spread of the complete years in a weather file of several years, and the one-year
/// P90 it gives (`None` with fewer than two complete years).
pub fn empirical_p90_text(o: &LayoutOutcome) -> Option<String> {
    let spread = o
        .energy
        .as_ref()
        .and_then(|e| empirical_variability(&e.complete_year_totals_kwh()))?;
    let z = crate::results::uncertainty::z_90();
    Some(format!(
        "{} complete years in the weather file: mean {:.1} kWh, spread {:.1} % → empirical one-year P90 {:.1} kWh",
        spread.years,
        spread.mean,
        spread.sd_frac * 100.0,
        spread.mean * (1.0 - z * spread.sd_frac)
    ))
}

/// One string of a layout as the wiring lists show it.
#[derive(Clone, Debug, PartialEq)]
pub struct WiredString {
    /// The controller input's name.
    pub input: String,
    /// The string's number on its input, from 1.
    pub string: usize,
    /// Module ids in series order, from the string's first module.
    pub modules: Vec<String>,
    /// The orientation groups of its modules, each once.
    pub groups: Vec<String>,
}

/// A layout's wiring, module by module: its strings and the modules it leaves unwired.
#[derive(Clone, Debug, PartialEq)]
pub struct WiredLayout {
    pub strings: Vec<WiredString>,
    pub not_wired: Vec<String>,
}

/// Which modules form each string of a layout, and which modules are not wired.
pub fn wired_strings(o: &LayoutOutcome, plan: &crate::input::plan::Plan) -> WiredLayout {
    let rows = o.layout.wiring_rows(plan);
    let mut strings = Vec::new();
    let mut k = 0;
    while k < rows.len() {
        let (input, string) = (&rows[k].input, rows[k].string);
        let mut st = WiredString {
            input: input.clone(),
            string,
            modules: Vec::new(),
            groups: Vec::new(),
        };
        while k < rows.len() && &rows[k].input == input && rows[k].string == string {
            st.modules.push(rows[k].module.clone());
            if !st.groups.contains(&rows[k].group) {
                st.groups.push(rows[k].group.clone());
            }
            k += 1;
        }
        strings.push(st);
    }
    let not_wired = plan
        .modules
        .iter()
        .filter(|m| !rows.iter().any(|r| r.module == m.id))
        .map(|m| m.id.clone())
        .collect();
    WiredLayout { strings, not_wired }
}

/// The decision in words, line by line, for every report that shows it.
#[derive(Clone, Debug, PartialEq)]
pub struct RecommendationText {
    /// `Build L1: <layout>`.
    pub build: String,
    /// Why this layout (one or two sentences).
    pub why: String,
    /// What module assignment gained, when enumerated layouts chose modules by shade.
    pub assignment: Option<String>,
    /// How the layouts were screened before the battery-coupled year, when they were.
    pub screening: Option<String>,
    /// `Runner-up L2 (<layout>): <what separates it>`.
    pub runner_up: Option<String>,
    /// The runner-up's difference from the layout to build by cause.
    pub runner_up_difference: Option<String>,
    /// `Tie: …` when the leaders tie.
    pub tie: Option<String>,
}

/// The decision's lines, or `None` when no layout is recommended.
pub fn recommendation_text(r: &RankResult) -> Option<RecommendationText> {
    let rec = r.recommendation.as_ref()?;
    let o = r.recommended()?;
    let mut t = RecommendationText {
        build: format!("Build {}: {}", o.layout.id, o.layout.display_name()),
        why: rec.reason.clone(),
        assignment: r
            .assignment
            .as_ref()
            .map(|a| assignment_line(a, rec.criterion)),
        screening: screening_line(r).map(|l| {
            let mut c = l.chars();
            c.next()
                .map_or(String::new(), |f| f.to_uppercase().chain(c).collect())
                + "."
        }),
        runner_up: None,
        runner_up_difference: None,
        tie: None,
    };
    if let (Some(id), Some(gap)) = (&rec.runner_up, &rec.runner_up_gap) {
        let x = r.outcomes.iter().find(|x| &x.layout.id == id);
        let name = x.map_or(String::new(), |x| x.layout.display_name());
        t.runner_up = Some(format!("Runner-up {id} ({name}): {gap}"));
        t.runner_up_difference = x
            .filter(|x| !x.difference.is_empty())
            .map(|x| difference_line(&x.difference));
    }
    if rec.tie {
        let band = match rec.criterion {
            crate::results::rank::Criterion::Unmet => format!(
                "the same days short and unmet load within {:.1} % of the year's load",
                UNMET_TIE_FRAC_OF_LOAD * 100.0
            ),
            _ => format!("within {:.0} %", TIE_BAND_FRAC * 100.0),
        };
        t.tie = Some(format!(
            "Tie: the leaders are closer on {} than the model can tell apart ({band}){}",
            rec.criterion.short(),
            rec.tie_break
                .as_ref()
                .map_or(String::new(), |t| format!("; broken by {t}"))
        ));
    }
    Some(t)
}

/// The lines under the site line of a ranking report: the system, the candidates, what
/// enumeration skipped, and the run's notes.
pub fn header_lines(r: &RankResult) -> Vec<String> {
    let mut out: Vec<String> = Vec::new();
    let plan = &r.loaded.plan;
    let battery = match &plan.battery.model {
        Some(b) => format!(
            "battery {} Ah {} V {} (charging voltage follows its state; energy counts what the battery and the load take)",
            Num(b.params().capacity_ah),
            Num(b.params().nominal_v),
            b.params().chemistry.key()
        ),
        None => format!("battery charged at {} V", Num(plan.battery.charge_v)),
    };
    out.push(format!(
        "{} modules, {battery}; limits checked at {:.0} °C (coldest) and {:.0} °C (hottest air)",
        plan.modules.len(),
        r.temps.min_air_c,
        r.temps.max_air_c
    ));
    let screened_out = r.screening.as_ref().map_or(0, |x| x.screened - x.coupled);
    let candidates = r.outcomes.len() + screened_out;
    out.push(format!(
        "{} candidate layouts ({} listed in the plan, {} enumerated)",
        candidates,
        r.listed,
        candidates - r.listed
    ));
    if let Some(line) = screening_line(r) {
        out.push(line);
    }
    if !r.pruned.is_empty() {
        let parts: Vec<String> = r
            .pruned
            .iter()
            .map(|(rule, n)| format!("{rule} {n}"))
            .collect();
        out.push(format!(
            "enumeration skipped input wirings that break a hard limit on their own: {}",
            parts.join(", ")
        ));
    }
    if r.years > 1.0 + 1e-9 {
        out.push(format!(
            "every energy below is per year: the mean of the {:.1} years in the weather file",
            r.years
        ));
    }
    if plan.battery.model.is_some() && plan.consumption.is_none() {
        out.push(BATTERY_WITHOUT_LOAD.to_string());
    }
    for note in crate::design::rules::current_rating_notes(plan) {
        out.push(format!("note: {note}"));
    }
    for note in facing_away_notes(r) {
        out.push(format!("note: {note}"));
    }
    out
}

/// The notes column of a ranked layout: mixed orientations, unused modules, then the rules
/// it warns on (each once).
fn notes(o: &LayoutOutcome, modules: usize) -> Vec<String> {
    let mut notes: Vec<String> = Vec::new();
    for f in o.findings.iter().filter(|f| f.severity == Severity::Warn) {
        if !notes.iter().any(|n| n == f.rule.key()) {
            notes.push(f.rule.to_string());
        }
    }
    if o.layout.modules_used < modules {
        notes.insert(0, format!("uses {} of {modules}", o.layout.modules_used));
    }
    if o.layout.mixed_orientation {
        notes.insert(0, "mixed orientations".to_string());
    }
    notes
}

/// `wirerank check`: every layout with pass / warn / reject and the numbers.
pub fn check(r: &CheckResult, show: CheckShow) -> String {
    let mut out = String::new();
    match &r.input {
        CheckInput::Loaded(l) => site_header(&mut out, l),
        CheckInput::PlanOnly { plan, weather_note } => {
            let _ = writeln!(
                out,
                "{}  weather: {weather_note}",
                plan.site.name.as_deref().unwrap_or("unnamed site")
            );
        }
    }
    let plan = r.input.plan();
    let _ = writeln!(
        out,
        "{} modules, battery charged at {} V; limits checked at {:.0} °C (coldest) and {:.0} °C (hottest air)",
        plan.modules.len(),
        Num(plan.battery.charge_v),
        r.temps.min_air_c,
        r.temps.max_air_c
    );
    let n = r.candidates.layouts.len();
    let _ = writeln!(
        out,
        "{n} candidate layouts ({} listed in the plan, {} enumerated)",
        r.candidates.listed,
        n - r.candidates.listed
    );
    for note in crate::design::rules::current_rating_notes(plan) {
        let _ = writeln!(out, "note: {note}");
    }
    let _ = writeln!(
        out,
        "✗ rejects (unsafe, or can never work); ! warns (costs energy, which rank simulates and prices in kWh, or asks for a part)"
    );
    if !r.candidates.pruned.is_empty() {
        let parts: Vec<String> = r
            .candidates
            .pruned
            .iter()
            .map(|(rule, k)| format!("{rule} {k}"))
            .collect();
        let _ = writeln!(
            out,
            "enumeration skipped input wirings that break a hard limit on their own: {}",
            parts.join(", ")
        );
    }
    let _ = writeln!(out);
    let mut passed = 0;
    for (l, findings) in r.candidates.layouts.iter().zip(&r.findings) {
        let rejected = findings.iter().any(|f| f.severity == Severity::Reject);
        let warned = findings.iter().any(|f| f.severity == Severity::Warn);
        let verdict = if rejected {
            "reject"
        } else if warned {
            "warn  "
        } else {
            "pass  "
        };
        if !rejected {
            passed += 1;
        }
        let listed = match show {
            CheckShow::All => true,
            CheckShow::Failing => rejected,
            CheckShow::Passing => !rejected,
        };
        if !listed {
            continue;
        }
        let _ = writeln!(out, "{verdict}  {:<4} {}", l.id, l.display_name());
        for f in findings {
            let mark = if f.severity == Severity::Reject {
                "✗"
            } else {
                "!"
            };
            let _ = writeln!(out, "          {mark} {}: {}", f.rule, f.message);
        }
    }
    let _ = writeln!(out);
    if passed == 0 {
        let findings: Vec<&[crate::design::rules::Finding]> =
            r.findings.iter().map(Vec::as_slice).collect();
        for line in crate::design::rules::nothing_passes_advice(plan, &findings) {
            let _ = writeln!(out, "  {line}");
        }
    }
    let _ = writeln!(
        out,
        "{passed} of {n} layout{} pass{} the hard limits",
        if n == 1 { "" } else { "s" },
        if n == 1 { "es" } else { "" }
    );
    let _ = writeln!(out);
    let _ = writeln!(out, "{CAUTIONS}");
    out
}

/// The off-grid owner's view: the load over the year and in the darkest months.
fn outlook(r: &RankResult, ranked: &[&LayoutOutcome]) -> String {
    let mut out = String::new();
    let _ = writeln!(out);
    let _ = writeln!(out, "{}:", outlook_title(r));
    let name_w = ranked
        .iter()
        .map(|o| o.layout.display_name().chars().count() + o.layout.id.len() + 1)
        .max()
        .unwrap_or(6)
        .clamp(6, 96);
    let _ = writeln!(
        out,
        "  {:<name_w$} {:>10} {:>10} {:>10} {:>11} {:>15} | {:>11} {:>10} {:>10}",
        "layout",
        "load kWh",
        "unmet kWh",
        "days short",
        "lowest SoC",
        "low-sun off/del",
        "year unmet",
        "curtailed",
        "days short"
    );
    for row in outlook_rows(r, ranked) {
        let low = format!(
            "{:.1}/{:.1}",
            row.low_sun_offered_kwh, row.low_sun_delivered_kwh
        );
        let _ = writeln!(
            out,
            "  {:<name_w$} {:>10.1} {:>10.1} {:>10.0} {:>10.0}% {low:>15} | {:>11.1} {:>10.1} {:>10.0}",
            format!("{} {}", row.id, row.name),
            row.served_kwh,
            row.unmet_kwh,
            row.days_short,
            row.lowest_soc_pct,
            row.year_unmet_kwh,
            row.year_curtailed_kwh,
            row.year_days_short
        );
    }
    for note in outlook_notes(r) {
        let _ = writeln!(out, "  {note}");
    }
    if let Some((headline, rows)) = battery_sizing_text(r) {
        let _ = writeln!(out, "  {headline}");
        let w = rows
            .iter()
            .map(|(l, _)| l.chars().count())
            .max()
            .unwrap_or(0);
        for (label, ah) in rows {
            let pad = w - label.chars().count();
            let _ = writeln!(out, "    {label}:{:pad$} {ah:>9}", "");
        }
    }
    if let Some(line) = module_sizing_text(r) {
        let _ = writeln!(out, "  {line}");
    }
    out
}

/// The winter outlook's title: the darkest months and the battery.
pub fn outlook_title(r: &RankResult) -> String {
    let winter: Vec<&str> = r.winter_months.iter().map(|&m| MONTHS[m]).collect();
    format!(
        "Winter outlook ({}) with the load and the battery{}",
        winter.join(", "),
        r.loaded
            .plan
            .battery
            .model
            .as_ref()
            .map_or(String::new(), |b| format!(
                " ({} Ah, {} V, {})",
                Num(b.params().capacity_ah),
                Num(b.params().nominal_v),
                b.params().chemistry.key()
            ))
    )
}

/// One layout in the winter outlook: the darkest months, then the year.
#[derive(Clone, Debug, PartialEq)]
pub struct OutlookRow {
    pub id: String,
    pub name: String,
    /// Load served in the darkest months, kWh.
    pub served_kwh: f64,
    /// Load unmet in the darkest months, kWh.
    pub unmet_kwh: f64,
    /// Days short of energy in the darkest months.
    pub days_short: f64,
    /// Lowest state of charge in the darkest months, %.
    pub lowest_soc_pct: f64,
    /// Low-sun energy offered and delivered in the darkest months, kWh.
    pub low_sun_offered_kwh: f64,
    pub low_sun_delivered_kwh: f64,
    /// The year's unmet load, curtailed energy (what a full battery turned away), kWh, and
    /// days short.
    pub year_unmet_kwh: f64,
    pub year_curtailed_kwh: f64,
    pub year_days_short: f64,
}

/// The winter outlook of each layout shown.
pub fn outlook_rows(r: &RankResult, ranked: &[&LayoutOutcome]) -> Vec<OutlookRow> {
    let mut rows = Vec::new();
    for o in ranked {
        let (Some(e), Some(s)) = (&o.energy, &o.summary) else {
            continue;
        };
        let w = |f: &dyn Fn(usize) -> f64| r.winter_months.iter().map(|&m| f(m)).sum::<f64>();
        let soc = r
            .winter_months
            .iter()
            .map(|&m| e.min_soc_frac[m])
            .fold(f64::INFINITY, f64::min);
        rows.push(OutlookRow {
            id: o.layout.id.clone(),
            name: o.layout.display_name(),
            served_kwh: w(&|m| e.load_served_wh[m]) / 1000.0,
            unmet_kwh: w(&|m| e.unmet_wh[m]) / 1000.0,
            days_short: s.winter_days_short,
            lowest_soc_pct: soc * 100.0,
            low_sun_offered_kwh: w(&|m| s.low_sun_offered_kwh[m]),
            low_sun_delivered_kwh: w(&|m| s.low_sun_delivered_kwh[m]),
            year_unmet_kwh: s.annual_unmet_kwh(),
            year_curtailed_kwh: s.annual_curtailed_kwh(),
            year_days_short: s.annual_days_short(),
        });
    }
    rows
}

/// What the battery's charging cut-off in the cold and its discharge rate cost the layout
/// to build, when they cost anything.
pub fn outlook_notes(r: &RankResult) -> Vec<String> {
    let mut out = Vec::new();
    if let (Some(o), Some(b)) = (r.recommended(), r.loaded.plan.battery.model.as_ref()) {
        if let Some(e) = &o.energy {
            let cold: f64 = e.cold_blocked_wh.iter().sum::<f64>() / 1000.0;
            if let (Some(t), true) = (b.params().min_charge_air_c, cold > 0.0) {
                out.push(format!(
                    "{}: the battery takes no charge below {} °C air (its charging cut-off; the air temperature stands in for the cell's): {cold:.1} kWh a year turned away (in the curtailed figure)",
                    o.layout.id,
                    Num(t)
                ));
            }
            let rate: f64 = e.rate_unmet_wh.iter().sum::<f64>() / 1000.0;
            if rate > 0.0 {
                out.push(format!(
                    "{}: load above the battery's discharge rate ({} C = {} W) goes unmet: {rate:.1} kWh a year (in the unmet figure)",
                    o.layout.id,
                    Num(b.params().max_discharge_rate_c),
                    Num(b.max_discharge_w())
                ));
            }
        }
    }
    out
}

/// The smallest battery for the layout to build: the answer in one line, then each
/// constraint with the capacity it needs.
pub fn battery_sizing_text(r: &RankResult) -> Option<(String, Vec<(String, String)>)> {
    r.sizing.as_ref().map(|s| {
        let answer = match s.battery_ah {
            Some(a) if a <= 0.0 => "no battery would be needed".to_string(),
            Some(a) => format!(
                "{} Ah (the plan has {} Ah), set by {}",
                Num(a),
                Num(s.planned_ah),
                s.set_by.map_or("nothing", |c| c.describe())
            ),
            None => format!(
                "more than {} Ah: the unmet-load target is not reached",
                Num(s.limit_ah)
            ),
        };
        let headline = format!(
            "Smallest battery for {} (steps of {} Ah): {answer}",
            s.layout,
            Num(s.step_ah)
        );
        let unmet = s
            .unmet_ah
            .map_or(format!("more than {} Ah", Num(s.limit_ah)), |a| {
                format!("{} Ah", Num(a))
            });
        let rows = [
            (
                format!(
                    "unmet load at or below {:.1} kWh a year (simulated)",
                    s.target_unmet_kwh
                ),
                unmet,
            ),
            (
                format!(
                    "{} day{} of autonomy at the heaviest day's {:.0} Wh",
                    Num(s.autonomy_days),
                    if s.autonomy_days == 1.0 { "" } else { "s" },
                    s.heaviest_day_wh
                ),
                format!("{} Ah", Num(s.autonomy_ah)),
            ),
            (
                format!(
                    "charge rate {} C for the highest charge current offered, {:.1} A",
                    Num(s.charge_rate_c),
                    s.peak_charge_a
                ),
                format!("{} Ah", Num(s.charge_rate_ah)),
            ),
            (
                format!(
                    "discharge rate {} C for the highest hourly load, {:.0} W",
                    Num(s.discharge_rate_c),
                    s.peak_load_w
                ),
                format!("{} Ah", Num(s.discharge_rate_ah)),
            ),
        ];
        (headline, rows.to_vec())
    })
}

/// The fewest extra modules that would meet the load with the planned battery.
pub fn module_sizing_text(r: &RankResult) -> Option<String> {
    r.module_sizing.as_ref().map(|m| {
        let answer = match &m.answer {
            ModuleAnswer::NoneNeeded => format!(
                "none needed (it leaves {:.1} kWh a year unmet)",
                m.unmet_kwh
            ),
            ModuleAnswer::Found {
                modules,
                strings,
                code,
                unmet_kwh,
            } => format!(
                "{modules} more module{} ({strings} more string{} of the same make-up: {code}), leaving {unmet_kwh:.1} kWh a year unmet instead of {:.1}; one string fewer falls short",
                if *modules == 1 { "" } else { "s" },
                if *strings == 1 { "" } else { "s" },
                m.unmet_kwh
            ),
            ModuleAnswer::NotReached {
                tried_modules,
                unmet_kwh,
                stopped,
            } => format!(
                "not reached: with {tried_modules} more modules {unmet_kwh:.1} kWh a year is still unmet, and {stopped}"
            ),
        };
        format!(
            "Fewest extra modules for {} at the planned battery, same wiring rule: {answer}",
            m.layout
        )
    })
}

fn light_section(r: &RankResult) -> String {
    light_rows(&r.loaded, &r.horizontal_kwh_m2, &r.months_present, &r.light)
}

/// Light on each orientation group, month by month: plane-of-array insolation, the share lost
/// to incidence angle and the mean daytime cell temperature.
fn light_rows(
    l: &Loaded,
    horizontal_kwh_m2: &[f64; 12],
    present: &[bool; 12],
    groups: &[GroupMonthly],
) -> String {
    let mut out = String::new();
    let _ = writeln!(
        out,
        "Light on each orientation, month by month (sky model: {:?})",
        l.plan.model.sky
    );
    let _ = write!(out, "{:<24}", "");
    for m in MONTHS {
        let _ = write!(out, "{m:>7}");
    }
    let _ = writeln!(out, "{:>9}", "Year");
    let row = |out: &mut String, label: &str, vals: &[f64; 12], prec: usize, total: Option<f64>| {
        let _ = write!(out, "{label:<24}");
        for (m, v) in vals.iter().enumerate() {
            if present[m] && v.is_finite() {
                let _ = write!(out, "{v:>7.prec$}");
            } else {
                let _ = write!(out, "{:>7}", "-");
            }
        }
        match total {
            Some(t) => {
                let _ = writeln!(out, "{t:>9.prec$}");
            }
            None => {
                let _ = writeln!(out);
            }
        }
    };
    row(
        &mut out,
        "horizontal kWh/m²",
        horizontal_kwh_m2,
        1,
        Some(horizontal_kwh_m2.iter().sum()),
    );
    for (g, spec) in groups.iter().zip(&l.plan.groups) {
        let _ = writeln!(
            out,
            "group {} (tilt {:.0}°, azimuth {:.0}°, {} modules)",
            g.group, spec.tilt_deg, spec.azimuth_deg, spec.count
        );
        row(
            &mut out,
            "  plane kWh/m²",
            &g.poa_kwh_m2,
            1,
            Some(g.poa_kwh_m2.iter().sum()),
        );
        let iam: [f64; 12] = std::array::from_fn(|m| g.iam_loss_frac(m) * 100.0);
        let year_poa: f64 = g.poa_kwh_m2.iter().sum();
        let year_after: f64 = g.after_iam_kwh_m2.iter().sum();
        let year_iam = if year_poa > 0.0 {
            (1.0 - year_after / year_poa) * 100.0
        } else {
            0.0
        };
        row(&mut out, "  incidence loss %", &iam, 1, Some(year_iam));
        row(
            &mut out,
            "  daytime cell °C",
            &g.mean_daytime_cell_c,
            1,
            None,
        );
    }
    out
}

/// `wirerank shade`: the share of direct light lost to shade per module and month.
pub fn shade(r: &ShadeResult) -> String {
    let mut out = String::new();
    site_header(&mut out, &r.loaded);
    let g = &r.loaded.plan.geometry;
    let count =
        |n: usize, one: &str, many: &str| format!("{n} {}", if n == 1 { one } else { many });
    let horizons = usize::from(g.site_horizon.is_some())
        + g.group_horizon.iter().flatten().count()
        + g.module_horizon.iter().flatten().count();
    let _ = writeln!(
        out,
        "Shade: {}{}, {}, {}",
        count(g.obstacles.len(), "near obstacle", "near obstacles"),
        if g.obstacles.is_empty() {
            String::new()
        } else {
            format!(
                " ({})",
                g.obstacles
                    .iter()
                    .map(|(n, _)| n.as_str())
                    .collect::<Vec<_>>()
                    .join(", ")
            )
        },
        count(horizons, "horizon profile", "horizon profiles"),
        count(r.loaded.plan.shade.len(), "schedule rule", "schedule rules")
    );
    let _ = writeln!(out);
    let _ = writeln!(
        out,
        "Share of the direct (beam and circumsolar) light lost to shade, % (diffuse losses are in the ranking's shading step)"
    );
    let _ = write!(out, "{:<12}", "module");
    for m in MONTHS {
        let _ = write!(out, "{m:>6}");
    }
    let _ = writeln!(out, "{:>7}", "Year");
    for (module, months) in r.loaded.plan.modules.iter().zip(&r.direct) {
        let _ = write!(out, "{:<12}", module.id);
        let (mut d, mut l) = (0.0, 0.0);
        for (m, (direct, lost)) in months.iter().enumerate() {
            d += direct;
            l += lost;
            if r.months_present[m] && *direct > 0.0 {
                let _ = write!(out, "{:>6.1}", lost / direct * 100.0);
            } else {
                let _ = write!(out, "{:>6}", "-");
            }
        }
        let year = if d > 0.0 { l / d * 100.0 } else { 0.0 };
        let _ = writeln!(out, "{year:>7.1}");
    }
    out
}
/// The `inspect` report as text.
pub fn summary_text(w: &Weather, s: &WeatherSummary) -> String {
    let mut out = String::new();
    let _ = writeln!(out, "weather: {}", w.source);
    let site = &w.site;
    let number =
        |v: Option<f64>, unit: &str| v.map_or("not given".to_string(), |v| format!("{v}{unit}"));
    let _ = writeln!(
        out,
        "site: {} (latitude {}, longitude {}, elevation {}, UTC offset {})",
        site.name.as_deref().unwrap_or("no name"),
        number(site.latitude_deg, "°"),
        number(site.longitude_deg, "°"),
        number(site.elevation_m, " m"),
        number(site.utc_offset_h, " h"),
    );
    if let (Some(first), Some(last)) = (w.local_start_s.first(), w.local_start_s.last()) {
        let _ = writeln!(
            out,
            "rows: {} of {} min (stamps mark the {}), {} … {}",
            s.rows,
            s.interval_s / 60,
            w.stamp.as_str(),
            LocalTime(*first).format(),
            LocalTime(*last).format()
        );
    }
    let mut columns = vec!["ghi_w_m2"];
    for (name, present) in [
        ("dni_w_m2", w.dni_w_m2.is_some()),
        ("dhi_w_m2", w.dhi_w_m2.is_some()),
        ("air_temp_c", true),
        ("wind_m_s", w.wind_m_s.is_some()),
        ("albedo_frac", w.albedo_frac.is_some()),
        ("pressure_hpa", w.pressure_hpa.is_some()),
    ] {
        if present {
            columns.push(name);
        }
    }
    let _ = writeln!(out, "columns: {}", columns.join(", "));
    let _ = writeln!(
        out,
        "repairs: {} gaps filled ({} intervals), {} values clamped",
        s.filled_gaps, s.filled_intervals, s.clamped_values
    );
    let _ = writeln!(out);
    let multi_year = s
        .months
        .first()
        .zip(s.months.last())
        .is_some_and(|(a, b)| a.year != b.year);
    let _ = writeln!(
        out,
        "{:<9} {:>5} {:>8} {:>9} {:>7} {:>9} {:>9} {:>7} {:>7}",
        "month", "days", "GHI", "GHI/day", "mean", "day min", "day max", "lowest", "highest"
    );
    let _ = writeln!(
        out,
        "{:<9} {:>5} {:>8} {:>9} {:>7} {:>9} {:>9} {:>7} {:>7}",
        "", "", "kWh/m²", "kWh/m²", "°C", "°C", "°C", "°C", "°C"
    );
    for m in &s.months {
        let label = if multi_year {
            format!("{} {}", &MONTH_NAMES[m.month as usize - 1][..3], m.year)
        } else {
            MONTH_NAMES[m.month as usize - 1][..3].to_string()
        };
        let _ = writeln!(
            out,
            "{:<9} {:>5.1} {:>8.1} {:>9.2} {:>7.1} {:>9.1} {:>9.1} {:>7.1} {:>7.1}",
            label,
            m.days,
            m.ghi_kwh_m2,
            m.ghi_kwh_m2_day,
            m.air_mean_c,
            m.air_daily_min_c,
            m.air_daily_max_c,
            m.air_lowest_c,
            m.air_highest_c
        );
    }
    let total: f64 = s.months.iter().map(|m| m.ghi_kwh_m2).sum();
    let days: f64 = s.months.iter().map(|m| m.days).sum();
    let _ = writeln!(out, "{:<9} {:>5.1} {:>8.1}", "total", days, total);
    let _ = writeln!(out);
    let _ = writeln!(
        out,
        "lowest air temperature: {:.1} °C at {}",
        s.lowest.0, s.lowest.1
    );
    let _ = writeln!(
        out,
        "highest air temperature: {:.1} °C at {}",
        s.highest.0, s.highest.1
    );
    let totals: Vec<f64> = s.complete_years.iter().map(|y| y.1).collect();
    if let Some(spread) = empirical_variability(&totals) {
        let _ = writeln!(
            out,
            "year-to-year: {} complete years, mean {:.1} kWh/m², standard deviation {:.1} % (usable for P90 instead of the default)",
            spread.years,
            spread.mean,
            spread.sd_frac * 100.0
        );
    }
    out
}

/// User text for a message: in quotes, with control characters shown as escapes so that
/// nothing a plan contains can drive the terminal.
pub fn quoted(s: &str) -> String {
    format!("{:?}", s)
}

/// One line per orientation group whose plane gets far less light than the horizontal.
pub fn facing_away_notes(r: &RankResult) -> Vec<String> {
    let plan = &r.loaded.plan;
    crate::results::light::facing_away(&r.light, &r.horizontal_kwh_m2)
        .into_iter()
        .map(|(id, ratio)| {
            let g = plan.groups.iter().find(|g| g.id == id);
            format!(
                "group {id} (tilt {:.0}°, azimuth {:.0}°) gets {:.0} % of the horizontal sunlight over the year: it faces away from the sun's path; check its azimuth (clockwise from north: 180 = south, 0 = north)",
                g.map_or(0.0, |g| g.tilt_deg),
                g.map_or(0.0, |g| g.azimuth_deg),
                ratio * 100.0
            )
        })
        .collect()
}
