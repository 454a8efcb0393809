//! Terminal reports: fixed-width tables for people.
//!
//! Formatting only; every number arrives computed. Machine-readable output (JSON, CSV) lives
//! in `io/`.

use std::fmt::Write as _;

use chrono::{Duration, NaiveDate, NaiveDateTime};

use crate::error::Error;
use crate::limits::Severity;
use crate::phase2::Step;
use crate::physics::sun::{self, Atmosphere, Observer};
use crate::physics::wiring::ArrayCurve;
use crate::tally::GroupMonthly;
use crate::{
    CheckResult, CurveRequest, CurveTarget, Loaded, ModuleAnswer, Outcome, RankResult, ShadeResult,
    SunpathRequest,
};

const MONTHS: [&str; 12] = [
    "Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec",
];

/// The cautions every report carries.
pub const CAUTIONS: &str = "\
Cautions: a DC array is live whenever light falls on it and cannot be switched off at the
modules. Cold raises module voltage. The limits checked here are screening checks, not a
code-compliance review: follow your local electrical code (e.g. NEC Article 690,
IEC 60364-7-712) and have a licensed professional check the design before building it.";

/// Site line shared by the reports.
fn site_header(out: &mut String, l: &Loaded) {
    let s = &l.site;
    let _ = writeln!(
        out,
        "{}  ({:.2}°, {:.2}°, {:.0} m, UTC{:+})  weather: {} ({} intervals of {} min)",
        s.name,
        s.latitude_deg,
        s.longitude_deg,
        s.elevation_m,
        s.utc_offset_h,
        l.weather.source,
        l.weather.len(),
        l.weather.interval_s / 60
    );
}

/// The ranking table, the rejected layouts with their reasons, the loss steps of the ranked
/// layouts, the light on each orientation and the cautions.
pub fn ranking(r: &RankResult) -> String {
    let mut out = String::new();
    site_header(&mut out, &r.loaded);
    let plan = &r.loaded.plan;
    let battery = match &plan.battery.model {
        Some(b) => format!(
            "battery {:.0} Ah {:.0} V {} (charging voltage follows its state; energy counts what the battery and the load take)",
            b.params().capacity_ah,
            b.params().nominal_v,
            b.params().chemistry.key()
        ),
        None => format!("battery charged at {:.1} V", plan.battery.charge_v),
    };
    let _ = writeln!(
        out,
        "{} modules, {battery}; limits checked at {:.0} °C (coldest) and {:.0} °C (hottest air)",
        plan.modules.len(),
        r.temps.min_air_c,
        r.temps.max_air_c
    );
    let ranked: Vec<_> = r.outcomes.iter().filter(|o| o.rank.is_some()).collect();
    let rejected: Vec<_> = r.outcomes.iter().filter(|o| o.rank.is_none()).collect();
    let enumerated = r.outcomes.len() - r.listed;
    let _ = writeln!(
        out,
        "{} candidate layouts ({} listed in the plan, {} enumerated)",
        r.outcomes.len(),
        r.listed,
        enumerated
    );
    if !r.pruned.is_empty() {
        let parts: Vec<String> = r
            .pruned
            .iter()
            .map(|(rule, n)| format!("{rule} {n}"))
            .collect();
        let _ = writeln!(
            out,
            "enumeration skipped input wirings that break a hard limit on their own: {}",
            parts.join(", ")
        );
    }
    let _ = writeln!(out);
    let winter: Vec<&str> = r.winter_months.iter().map(|&m| MONTHS[m]).collect();
    let _ = writeln!(
        out,
        "Ranked by {}{} — {} layouts ranked, {} rejected",
        r.criterion.describe(),
        if r.criterion == crate::rank::Criterion::Winter {
            format!(" ({})", winter.join(", "))
        } else {
            String::new()
        },
        ranked.len(),
        rejected.len()
    );
    let name_w = r
        .outcomes
        .iter()
        .map(|o| o.layout.display_name().chars().count())
        .max()
        .unwrap_or(6)
        .clamp(6, 90);
    let _ = writeln!(
        out,
        "{:>4}  {:<name_w$}  {:>9} {:>8} {:>10} {:>6} {:>9} {:>7}  notes",
        "rank", "layout", "score kWh", "vs best", "annual kWh", "worst", "low-sun", "awake h"
    );
    let best = ranked.first().and_then(|o| o.score_kwh).unwrap_or(0.0);
    for o in &ranked {
        let Some(e) = &o.energy else { continue };
        let score = o.score_kwh.unwrap_or(0.0);
        let vs = if best > 0.0 {
            format!("{:+.1}%", (score / best - 1.0) * 100.0)
        } else {
            "-".to_string()
        };
        let kwh = e.monthly_kwh();
        let (worst_m, worst) = (0..12)
            .filter(|&m| r.months_present[m])
            .map(|m| (m, kwh[m]))
            .fold((0, f64::INFINITY), |a, b| if b.1 < a.1 { b } else { a });
        let mut notes: Vec<String> = Vec::new();
        for f in o.findings.iter().filter(|f| f.severity == Severity::Warn) {
            if !notes.iter().any(|n| n == f.rule) {
                notes.push(f.rule.to_string());
            }
        }
        if o.layout.modules_used < plan.modules.len() {
            notes.insert(
                0,
                format!("uses {} of {}", o.layout.modules_used, plan.modules.len()),
            );
        }
        if o.layout.mixed_orientation {
            notes.insert(0, "mixed orientations".to_string());
        }
        let _ = writeln!(
            out,
            "{:>4}  {:<name_w$}  {:>9.1} {:>8} {:>10.1} {:>6} {:>9.1} {:>7.0}  {}",
            o.rank.unwrap_or(0),
            o.layout.display_name(),
            score,
            vs,
            e.annual_delivered_kwh(),
            format!("{worst:.1}{}", &MONTHS[worst_m][..1]),
            e.low_sun_wh.iter().sum::<f64>() / 1000.0,
            e.awake_h.iter().sum::<f64>(),
            notes.join(", ")
        );
    }
    if ranked.is_empty() {
        let _ = writeln!(out, "      (no layout passes the electrical limits)");
    }
    let _ = writeln!(out, "  worst = that layout's lowest month (kWh, initial of the month); low-sun = sun below {:.0}°", plan.model.low_sun_elevation_deg);

    if !rejected.is_empty() {
        let _ = writeln!(out);
        let _ = writeln!(out, "Rejected (never ranked):");
        const SHOWN: usize = 15;
        for o in rejected.iter().take(SHOWN) {
            let _ = writeln!(out, "  {}", o.layout.display_name());
            for f in o.findings.iter().filter(|f| f.severity == Severity::Reject) {
                let _ = writeln!(out, "    ✗ {}: {}", f.rule, f.message);
            }
        }
        if rejected.len() > SHOWN {
            let _ = writeln!(
                out,
                "  … and {} more (all are in --format json and summary.csv)",
                rejected.len() - SHOWN
            );
        }
    }
    let warned: Vec<_> = ranked
        .iter()
        .filter(|o| o.findings.iter().any(|f| f.severity == Severity::Warn))
        .collect();
    if !warned.is_empty() {
        let _ = writeln!(out);
        let _ = writeln!(out, "Warnings on ranked layouts:");
        for o in warned {
            for f in o.findings.iter().filter(|f| f.severity == Severity::Warn) {
                let _ = writeln!(
                    out,
                    "  {}: {}: {}",
                    o.layout.display_name(),
                    f.rule,
                    f.message
                );
            }
        }
    }

    if !ranked.is_empty() {
        let u = &plan.model.uncertainty;
        let _ = writeln!(out);
        let _ = writeln!(
            out,
            "Annual energy you can count on (normal approximation; resource variability {:.1} %, model uncertainty {:.1} %):",
            u.variability_frac * 100.0,
            u.model_frac * 100.0
        );
        let z = crate::uncertainty::z_90();
        for o in &ranked {
            if let Some(spread) = o.energy.as_ref().and_then(|e| {
                crate::uncertainty::empirical_variability(&e.complete_year_totals_kwh())
            }) {
                let _ = writeln!(
                    out,
                    "  {:<name_w$} {} complete years in the weather file: mean {:.1} kWh, spread {:.1} % → empirical one-year P90 {:.1} kWh",
                    o.layout.display_name(),
                    spread.years,
                    spread.mean,
                    spread.sd_frac * 100.0,
                    spread.mean * (1.0 - z * spread.sd_frac)
                );
            }
            if let Some(p) = &o.p90 {
                let _ = writeln!(
                    out,
                    "  {:<name_w$} P50 {:>8.1} kWh   P90 one year {:>8.1} kWh   P90 ten-year mean {:>8.1} kWh",
                    o.layout.display_name(),
                    p.p50,
                    p.p90_1y,
                    p.p90_10y
                );
            }
        }
    }
    if plan.consumption.is_some() && !ranked.is_empty() {
        out.push_str(&outlook(r, &ranked));
    }

    // What a different MPPT tracker would change (shade makes several maxima).
    let differs: Vec<_> = ranked
        .iter()
        .filter_map(|o| {
            let e = o.energy.as_ref()?;
            // Both as offered by the controllers (before a full battery curtails).
            let own = e.annual_delivered_kwh() + e.step_total_wh(Step::Curtailed as usize) / 1000.0;
            let other = e.other_tracking_wh.iter().sum::<f64>() / 1000.0;
            ((own - other).abs() >= 0.05).then_some((o, own, other))
        })
        .collect();
    if !differs.is_empty() {
        let _ = writeln!(out);
        let _ = writeln!(
            out,
            "Tracker comparison (MPPT inputs with the other tracking behaviour; partial shade gives the array several power maxima):"
        );
        for (o, own, other) in differs {
            let _ = writeln!(
                out,
                "  {}: {own:.1} kWh offered as planned, {other:.1} kWh with the other tracker ({:+.1} kWh)",
                o.layout.display_name(),
                other - own
            );
        }
    }

    if !ranked.is_empty() {
        let _ = writeln!(out);
        let heading = if r.loaded.plan.consumption.is_some() {
            "Monthly energy delivered to the battery and the load, kWh"
        } else {
            "Monthly energy into the battery, kWh"
        };
        let _ = writeln!(out, "{heading}");
        let _ = write!(out, "{:<name_w$}", "");
        for m in MONTHS {
            let _ = write!(out, "{m:>6}");
        }
        let _ = writeln!(out);
        for o in &ranked {
            let Some(e) = &o.energy else { continue };
            let _ = write!(out, "{:<name_w$}", o.layout.display_name());
            for (m, v) in e.monthly_kwh().iter().enumerate() {
                if r.months_present[m] {
                    let _ = write!(out, "{v:>6.1}");
                } else {
                    let _ = write!(out, "{:>6}", "-");
                }
            }
            let _ = writeln!(out);
        }
        let _ = writeln!(out);
        let _ = writeln!(out, "Where the energy goes over the year, kWh (potential = light on the wired modules × STC efficiency)");
        let _ = write!(out, "{:<name_w$} {:>9}", "", "potential");
        for s in Step::ALL {
            let _ = write!(out, " {:>9}", short_step(s));
        }
        let _ = writeln!(out, " {:>9}", "delivered");
        for o in &ranked {
            let Some(e) = &o.energy else { continue };
            let _ = write!(
                out,
                "{:<name_w$} {:>9.1}",
                o.layout.display_name(),
                e.potential_wh.iter().sum::<f64>() / 1000.0
            );
            for k in 0..Step::ALL.len() {
                let _ = write!(out, " {:>9.1}", e.step_total_wh(k) / 1000.0);
            }
            let _ = writeln!(out, " {:>9.1}", e.annual_delivered_kwh());
        }
    }
    let _ = writeln!(out);
    out.push_str(&light_section(r));
    let _ = writeln!(out);
    let _ = writeln!(out, "{CAUTIONS}");
    out
}

/// `wirerank check`: every layout with pass / warn / reject and the numbers.
pub fn check(r: &CheckResult) -> String {
    let mut out = String::new();
    site_header(&mut out, &r.loaded);
    let plan = &r.loaded.plan;
    let _ = writeln!(
        out,
        "{} modules, battery {:.1} V; limits checked at {:.0} °C (coldest) and {:.0} °C (hottest air)",
        plan.modules.len(),
        plan.battery.charge_v,
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
        let _ = writeln!(out, "{verdict}  {}", l.display_name());
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
    let _ = writeln!(out, "{passed} of {n} layouts pass the hard limits");
    let _ = writeln!(out);
    let _ = writeln!(out, "{CAUTIONS}");
    out
}

/// The off-grid owner's view: the load over the year and in the darkest months.
fn outlook(r: &RankResult, ranked: &[&crate::rank::LayoutOutcome]) -> String {
    let mut out = String::new();
    let plan = &r.loaded.plan;
    let spec = plan.battery.model.as_ref();
    let winter: Vec<&str> = r.winter_months.iter().map(|&m| MONTHS[m]).collect();
    let _ = writeln!(out);
    let _ = writeln!(
        out,
        "Winter outlook ({}) with the load and the battery{}:",
        winter.join(", "),
        spec.map_or(String::new(), |b| format!(
            " ({:.0} Ah, {:.0} V, {})",
            b.params().capacity_ah,
            b.params().nominal_v,
            b.params().chemistry.key()
        ))
    );
    let name_w = ranked
        .iter()
        .map(|o| o.layout.display_name().chars().count())
        .max()
        .unwrap_or(6)
        .clamp(6, 90);
    let _ = writeln!(
        out,
        "  {:<name_w$} {:>10} {:>10} {:>10} {:>11} {:>9} | {:>11} {:>10} {:>10}",
        "layout",
        "load kWh",
        "unmet kWh",
        "days short",
        "lowest SoC",
        "low-sun",
        "year unmet",
        "curtailed",
        "days short"
    );
    for o in ranked {
        let Some(e) = &o.energy else { continue };
        let w = |f: &dyn Fn(usize) -> f64| r.winter_months.iter().map(|&m| f(m)).sum::<f64>();
        let served = w(&|m| e.load_served_wh[m]) / 1000.0;
        let unmet = w(&|m| e.unmet_wh[m]) / 1000.0;
        let days = w(&|m| e.unmet_days[m] as f64);
        let soc = r
            .winter_months
            .iter()
            .map(|&m| e.min_soc_frac[m])
            .fold(f64::INFINITY, f64::min);
        let low = w(&|m| e.low_sun_wh[m]) / 1000.0;
        let year_unmet = e.unmet_wh.iter().sum::<f64>() / 1000.0;
        let curtailed = e.step_total_wh(Step::Curtailed as usize) / 1000.0;
        let year_days: u32 = e.unmet_days.iter().sum();
        let _ = writeln!(
            out,
            "  {:<name_w$} {served:>10.1} {unmet:>10.1} {days:>10.0} {:>10.0}% {low:>9.1} | {year_unmet:>11.1} {curtailed:>10.1} {year_days:>10}",
            o.layout.display_name(),
            soc * 100.0
        );
    }
    if let Some(s) = &r.sizing {
        let answer = match s.battery_ah {
            Some(a) if a <= 0.0 => "no battery would be needed".to_string(),
            Some(a) => format!("{a:.0} Ah (the plan has {:.0} Ah)", s.planned_ah),
            None => format!("more than {:.0} Ah", s.limit_ah),
        };
        let _ = writeln!(
            out,
            "  Smallest battery for {} to keep unmet load at or below {:.1} kWh a year (steps of {:.0} Ah): {answer}",
            s.layout, s.target_unmet_kwh, s.step_ah
        );
    }
    if let Some(m) = &r.module_sizing {
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
        let _ = writeln!(
            out,
            "  Fewest extra modules for {} at the planned battery, same wiring rule: {answer}",
            m.layout
        );
    }
    out
}

fn short_step(s: Step) -> &'static str {
    match s {
        Step::Incidence => "incidence",
        Step::Soiling => "soiling",
        Step::Shading => "shading",
        Step::TemperatureLowLight => "temp/low",
        Step::Mismatch => "mismatch",
        Step::Cables => "cables",
        Step::WindowStartup => "window",
        Step::InputLimit => "in-limit",
        Step::Clipping => "clipping",
        Step::Conversion => "convert",
        Step::Curtailed => "curtailed",
    }
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

fn parse_date(s: &str, what: &str) -> Result<NaiveDate, Error> {
    NaiveDate::parse_from_str(s, "%Y-%m-%d")
        .map_err(|_| Error::Usage(format!("{what} = {s:?} is not a date; write YYYY-MM-DD")))
}

/// `wirerank sunpath`: the sun's position over a date range at a fixed step.
///
/// # Errors
/// Missing or out-of-range site values, bad dates, or a plan that fails to load.
pub fn sunpath(r: &SunpathRequest) -> Result<Outcome, Error> {
    let from_plan = match &r.plan {
        Some(p) => Some(crate::load(&crate::PlanSource::File(p.clone()))?.site),
        None => None,
    };
    let pick = |given: Option<f64>,
                plan: Option<f64>,
                key: &str,
                lo: f64,
                hi: f64|
     -> Result<f64, Error> {
        let v = given.or(plan).ok_or_else(|| {
            Error::Usage(format!(
                "--{} is missing (or give --plan)",
                key.replace('_', "-")
            ))
        })?;
        if !v.is_finite() || v < lo || v > hi {
            return Err(Error::Usage(format!(
                "--{} = {v} is outside {lo}..={hi}",
                key.replace('_', "-")
            )));
        }
        Ok(v)
    };
    let lat = pick(
        r.latitude_deg,
        from_plan.as_ref().map(|s| s.latitude_deg),
        "latitude_deg",
        -90.0,
        90.0,
    )?;
    let lon = pick(
        r.longitude_deg,
        from_plan.as_ref().map(|s| s.longitude_deg),
        "longitude_deg",
        -180.0,
        180.0,
    )?;
    let offset = pick(
        r.utc_offset_h,
        from_plan.as_ref().map(|s| s.utc_offset_h),
        "utc_offset_h",
        -12.0,
        14.0,
    )?;
    let elev = r
        .elevation_m
        .or(from_plan.as_ref().map(|s| s.elevation_m))
        .unwrap_or(0.0);
    if !(-500.0..=9000.0).contains(&elev) {
        return Err(Error::Usage(format!(
            "--elevation-m = {elev} is outside -500..=9000"
        )));
    }
    if r.step_min == 0 || r.step_min > 1440 {
        return Err(Error::Usage(format!(
            "--step-min = {} is outside 1..=1440",
            r.step_min
        )));
    }
    let from = parse_date(&r.from, "--date")?;
    let to = match &r.to {
        Some(t) => parse_date(t, "--to")?,
        None => from,
    };
    if to < from {
        return Err(Error::Usage(format!("--to {to} is before --date {from}")));
    }
    if (to - from).num_days() > 366 {
        return Err(Error::Usage(
            "--date .. --to spans more than 366 days".into(),
        ));
    }
    let observer = Observer {
        latitude_deg: lat,
        longitude_deg: lon,
        elevation_m: elev,
    };
    let atmosphere = Atmosphere {
        pressure_hpa: sun::pressure_from_elevation_hpa(elev),
        temperature_c: 12.0,
    };
    let mut out = String::new();
    if r.csv {
        out.push_str("time_local,zenith_deg,elevation_deg,azimuth_deg\n");
    } else {
        let _ = writeln!(
            out,
            "Sun at {lat:.4}°, {lon:.4}°, {elev:.0} m; local standard time UTC{offset:+} (no daylight saving)"
        );
        let _ = writeln!(
            out,
            "{:<17} {:>10} {:>11}",
            "time", "elevation°", "azimuth°"
        );
    }
    let start: NaiveDateTime = from.and_hms_opt(0, 0, 0).unwrap_or_default();
    let end: NaiveDateTime = to.and_hms_opt(0, 0, 0).unwrap_or_default() + Duration::days(1);
    let step = Duration::minutes(r.step_min as i64);
    let mut t = start;
    while t < end {
        let unix = t.and_utc().timestamp() as f64 - offset * 3600.0;
        let p = sun::solar_position(
            unix,
            &observer,
            &atmosphere,
            crate::physics::sun::DELTA_T_DEFAULT_S,
        );
        let el = p.elevation_deg();
        if el <= 0.0 && !r.include_night {
            // Below the horizon: listed only with --all.
        } else if r.csv {
            let _ = writeln!(
                out,
                "{},{:.4},{:.4},{:.4}",
                t.format("%Y-%m-%dT%H:%M"),
                p.zenith_deg,
                el,
                p.azimuth_deg
            );
        } else {
            let _ = writeln!(
                out,
                "{:<17} {:>10.2} {:>11.2}",
                t.format("%Y-%m-%d %H:%M"),
                el,
                p.azimuth_deg
            );
        }
        t += step;
    }
    Ok(Outcome {
        stdout: out,
        ..Outcome::default()
    })
}

/// Points of one curve, evenly spaced in voltage from 0 to Voc, as (V, I, P).
fn sample_curve(voc_v: f64, n: usize, current_at: impl Fn(f64) -> f64) -> Vec<(f64, f64, f64)> {
    let n = n.max(2);
    (0..n)
        .map(|k| {
            let v = voc_v * k as f64 / (n - 1) as f64;
            let i = current_at(v).max(0.0);
            (v, i, v * i)
        })
        .collect()
}

fn print_points(out: &mut String, label: &str, pts: &[(f64, f64, f64)], csv: bool) {
    for (v, i, p) in pts {
        if csv {
            let _ = writeln!(out, "{label},{v:.4},{i:.4},{p:.4}");
        } else {
            let _ = writeln!(out, "  {v:>9.3} {i:>9.4} {p:>10.3}");
        }
    }
}

/// `wirerank curve`: I–V and P–V points with the maximum power point(s).
///
/// # Errors
/// A plan that fails to load, an unknown module type, layout or stamp, or out-of-range values.
pub fn curve(r: &CurveRequest) -> Result<Outcome, Error> {
    if r.points < 2 || r.points > 10_000 {
        return Err(Error::Usage(format!(
            "--points = {} is outside 2..=10000",
            r.points
        )));
    }
    let mut out = String::new();
    if r.csv {
        out.push_str("curve,voltage_v,current_a,power_w\n");
    }
    match &r.target {
        CurveTarget::Module {
            module_type,
            irradiance_w_m2,
            cell_temp_c,
        } => {
            let plan = match &r.plan {
                crate::PlanSource::Demo => crate::io::plan_toml::parse_plan(
                    crate::DEMO_PLAN,
                    "demo plan",
                    std::path::Path::new(""),
                )?,
                crate::PlanSource::File(p) => crate::io::plan_toml::read_plan(p)?,
            };
            if !(0.0..=2000.0).contains(irradiance_w_m2) {
                return Err(Error::Usage(format!(
                    "--irradiance-w-m2 = {irradiance_w_m2} is outside 0..=2000"
                )));
            }
            if !(-60.0..=100.0).contains(cell_temp_c) {
                return Err(Error::Usage(format!(
                    "--cell-temp-c = {cell_temp_c} is outside -60..=100"
                )));
            }
            let t = match module_type {
                Some(id) => plan
                    .module_types
                    .iter()
                    .find(|t| &t.id == id)
                    .ok_or_else(|| {
                        let known: Vec<&str> =
                            plan.module_types.iter().map(|t| t.id.as_str()).collect();
                        Error::Usage(format!(
                            "--module-type {id:?} is not in the plan; known: {}",
                            known.join(", ")
                        ))
                    })?,
                None => &plan.module_types[0],
            };
            let op = t.reference.at(*irradiance_w_m2, *cell_temp_c);
            let mpp = op.max_power_point();
            let pts = sample_curve(op.voc_v(), r.points, |v| op.current_at(v));
            if !r.csv {
                let _ = writeln!(
                    out,
                    "module type {} at {irradiance_w_m2:.0} W/m², cell {cell_temp_c:.1} °C (De Soto 2006 single-diode fit)",
                    t.id
                );
                let _ = writeln!(
                    out,
                    "  Voc {:.3} V  Isc {:.4} A  MPP {:.3} V × {:.4} A = {:.2} W   (datasheet STC: Voc {} V, Isc {} A, Vmp {} V, Imp {} A)",
                    op.voc_v(),
                    op.isc_a(),
                    mpp.v,
                    mpp.i,
                    mpp.p,
                    t.datasheet.voc_v,
                    t.datasheet.isc_a,
                    t.datasheet.vmp_v,
                    t.datasheet.imp_a
                );
                let _ = writeln!(out, "  {:>9} {:>9} {:>10}", "V", "A", "W");
            }
            print_points(&mut out, &t.id, &pts, r.csv);
        }
        CurveTarget::Layout { layout, at } => {
            let loaded = crate::load(&r.plan)?;
            let plan = &loaded.plan;
            let temps = crate::design_temperatures(plan, &loaded.weather);
            let candidates = crate::candidate_layouts(plan, &temps)?;
            let chosen = match layout.parse::<usize>() {
                Ok(n) if n >= 1 && n <= candidates.layouts.len() => &candidates.layouts[n - 1],
                _ => candidates
                    .layouts
                    .iter()
                    .find(|l| &l.code == layout || l.label.as_deref() == Some(layout.as_str()))
                    .ok_or_else(|| {
                        Error::Usage(format!(
                            "--layout {layout:?} is neither a number 1..={} nor a layout code or name of the plan",
                            candidates.layouts.len()
                        ))
                    })?,
            };
            let k = (0..loaded.weather.len())
                .find(|&k| &loaded.weather.stamp_text(k) == at)
                .ok_or_else(|| {
                    Error::Usage(format!(
                        "--at {at:?} is not a stamp of {} (write it as in the file, e.g. {})",
                        loaded.weather.source,
                        loaded.weather.stamp_text(0)
                    ))
                })?;
            let cond = crate::simulate::phase1(plan, &loaded.weather, &loaded.site);
            if !r.csv {
                let _ = writeln!(
                    out,
                    "layout {} at {at} (weather line {}), as each controller input sees it (cables included)",
                    chosen.display_name(),
                    loaded.weather.source_line.get(k).copied().unwrap_or(0)
                );
            }
            match crate::phase2::layout_curves_at(plan, &cond, chosen, k) {
                None => {
                    if !r.csv {
                        let _ = writeln!(out, "  no light on the modules in this interval");
                    }
                }
                Some(curves) => {
                    for (c, curve) in curves {
                        let ctl = &plan.controllers[c];
                        print_array(&mut out, &ctl.id, &curve, r.points, r.csv);
                    }
                }
            }
        }
    }
    Ok(Outcome {
        stdout: out,
        ..Outcome::default()
    })
}

fn print_array(out: &mut String, label: &str, curve: &ArrayCurve, points: usize, csv: bool) {
    let voc = curve.voc_v();
    let pts = sample_curve(voc, points, |v| curve.current_at(v));
    if !csv {
        let maxima = curve.local_maxima(0.0, voc);
        let _ = writeln!(
            out,
            "input {label}: Voc {voc:.2} V, {} local power maxima",
            maxima.len()
        );
        for m in &maxima {
            let _ = writeln!(
                out,
                "  maximum at {:.2} V × {:.3} A = {:.1} W",
                m.v, m.i, m.p
            );
        }
        let _ = writeln!(out, "  {:>9} {:>9} {:>10}", "V", "A", "W");
    }
    print_points(out, label, &pts, csv);
}

/// `wirerank shade`: the share of direct light lost to shade per module and month.
pub fn shade(r: &ShadeResult) -> String {
    let mut out = String::new();
    site_header(&mut out, &r.loaded);
    let g = &r.loaded.plan.geometry;
    let _ = writeln!(
        out,
        "Shade: {} near obstacles{}, {} horizon profiles, {} schedule rules",
        g.obstacles.len(),
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
        usize::from(g.site_horizon.is_some())
            + g.group_horizon.iter().flatten().count()
            + g.module_horizon.iter().flatten().count(),
        r.loaded.plan.shade.len()
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
