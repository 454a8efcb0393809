//! Electrical limit checks, run before any energy is reported (notebooks-free-docs/method-limits.md).
//!
//! Severity follows the consequence: a rule rejects only what is unsafe or can never work
//! (the layout is listed with the rule, the numbers and the margin, never ranked); a
//! condition that only costs energy is a warning on a ranked layout, simulated like
//! everything else, and after the simulation [`price_warnings`] says what it cost in kWh a
//! year from the layout's own loss steps. These are screening checks, not a
//! code-compliance review. This module does not simulate.

use crate::input::layout::{InputWiring, Layout};
use crate::input::plan::{CableRun, CurrentAssumed, Plan};
use crate::input::weather::Weather;
use crate::num::Num;
use crate::physics::controller::ControllerModel;
use crate::physics::wiring::{cable_resistance_ohm, Conductor};
use crate::sim::energy::{LayoutEnergy, Step};

/// NEC 690.8(A)(1): maximum circuit current = 1.25 × the sum of parallel Isc.
pub const ISC_FACTOR: f64 = 1.25;
/// NEC 690.8(B)(1): conductors carry at least 1.25 × the maximum circuit current.
pub const CONDUCTOR_FACTOR: f64 = 1.25;

/// How serious a finding is.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Severity {
    /// Breaks a hard limit: the layout is rejected.
    Reject,
    /// Worth knowing; the layout is still ranked.
    Warn,
}

/// Every screening rule, by the name reports use. The checks ([`check_layout`]) and
/// enumeration's pruning ([`input_hard_limit`]) both decide through this one list, so a rule
/// cannot mean one thing when screening and another when pruning.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Rule {
    /// String Voc at the coldest temperature above the controller's maximum input voltage.
    ColdVoc,
    /// String Voc at the coldest temperature above the modules' maximum system voltage.
    ModuleSystemVoltage,
    /// An MPPT input whose highest possible string Voc never reaches its start-up voltage.
    NeverWakes,
    /// A PWM input whose highest possible string Voc never exceeds the battery voltage.
    NeverCharges,
    /// String Vmp in hot full sun below the MPPT window (costs energy: warning).
    HotVmp,
    /// String Vmp in cold full sun above the MPPT window.
    ColdVmp,
    /// A PWM input holding a high-Vmp string at battery voltage.
    PwmHighVmp,
    /// 1.25 × the summed Isc above the array short-circuit current the controller
    /// withstands (unsafe: rejects).
    ArrayIsc,
    /// 1.25 × the summed Isc above the current the controller draws: it limits itself
    /// (costs energy: warning).
    InputCurrent,
    /// String lead ampacity below 1.56 × Isc.
    LeadAmpacity,
    /// Main run ampacity below 1.56 × the summed Isc.
    MainRunAmpacity,
    /// Three or more parallel strings: string fuses (rejected when none can exist).
    StringFuse,
    /// Cable voltage drop at STC above the plan's target.
    VoltageDrop,
    /// A string mixing module types.
    MixedTypes,
    /// The controller's output derated in heat below what the array can give.
    OutputDerating,
}

impl Rule {
    /// Every rule, in the order reports list them.
    pub const ALL: [Rule; 15] = [
        Rule::ColdVoc,
        Rule::ModuleSystemVoltage,
        Rule::NeverWakes,
        Rule::NeverCharges,
        Rule::HotVmp,
        Rule::ColdVmp,
        Rule::PwmHighVmp,
        Rule::ArrayIsc,
        Rule::InputCurrent,
        Rule::LeadAmpacity,
        Rule::MainRunAmpacity,
        Rule::StringFuse,
        Rule::VoltageDrop,
        Rule::MixedTypes,
        Rule::OutputDerating,
    ];

    /// The hard rules that depend only on what one input carries (modules in series,
    /// strings in parallel, their module types), in the order enumeration tries them. A rule
    /// that only warns never prunes.
    pub const INPUT_ONLY: [Rule; 5] = [
        Rule::ColdVoc,
        Rule::ModuleSystemVoltage,
        Rule::ArrayIsc,
        Rule::NeverWakes,
        Rule::NeverCharges,
    ];

    /// What breaking the rule means: a rejection (unsafe, or can never work) or a warning
    /// (costs energy, or asks for a part). `string-fuse` warns, and rejects only when no
    /// fuse can exist.
    pub fn severity(self) -> Severity {
        match self {
            Rule::ColdVoc
            | Rule::ModuleSystemVoltage
            | Rule::NeverWakes
            | Rule::NeverCharges
            | Rule::ArrayIsc
            | Rule::LeadAmpacity
            | Rule::MainRunAmpacity => Severity::Reject,
            Rule::HotVmp
            | Rule::ColdVmp
            | Rule::PwmHighVmp
            | Rule::InputCurrent
            | Rule::StringFuse
            | Rule::VoltageDrop
            | Rule::MixedTypes
            | Rule::OutputDerating => Severity::Warn,
        }
    }

    /// The rule's name in reports, JSON and CSV.
    pub fn key(self) -> &'static str {
        match self {
            Rule::ColdVoc => "cold-voc",
            Rule::ModuleSystemVoltage => "module-system-voltage",
            Rule::NeverWakes => "never-wakes",
            Rule::NeverCharges => "never-charges",
            Rule::HotVmp => "hot-vmp",
            Rule::ColdVmp => "cold-vmp",
            Rule::PwmHighVmp => "pwm-high-vmp",
            Rule::ArrayIsc => "array-isc",
            Rule::InputCurrent => "input-current",
            Rule::LeadAmpacity => "lead-ampacity",
            Rule::MainRunAmpacity => "main-run-ampacity",
            Rule::StringFuse => "string-fuse",
            Rule::VoltageDrop => "voltage-drop",
            Rule::MixedTypes => "mixed-types",
            Rule::OutputDerating => "output-derating",
        }
    }
}

impl Rule {
    /// What would lift this rule's verdict, in a person's words.
    pub fn remedy(self) -> &'static str {
        match self {
            Rule::ColdVoc => "fewer modules in series, or a controller with a higher maximum input voltage",
            Rule::ModuleSystemVoltage => "fewer modules in series",
            Rule::NeverWakes | Rule::HotVmp => "more modules in series",
            Rule::NeverCharges => "more modules in series, or an MPPT controller",
            Rule::ColdVmp => "fewer modules in series",
            Rule::PwmHighVmp => "an MPPT controller, or fewer modules in series",
            Rule::ArrayIsc => "fewer strings in parallel on each input, more controller inputs, or a controller that withstands a higher array short-circuit current (give max_array_isc_a from its datasheet)",
            Rule::InputCurrent => "fewer strings in parallel on each input, or a controller that draws more current",
            Rule::LeadAmpacity | Rule::MainRunAmpacity => "a larger cable cross-section",
            Rule::StringFuse => "fewer strings in parallel, or modules with a higher maximum series fuse",
            Rule::VoltageDrop => "a larger cable cross-section or a shorter run",
            Rule::MixedTypes => "one module type per string",
            Rule::OutputDerating => "a cooler, ventilated place for the controller, or a controller with a higher output rating",
        }
    }
}

/// When no layout passes: the rules that rejected them, most frequent first, each with its
/// count and what would lift it, and the plan options that would admit more wirings.
pub fn nothing_passes_advice(plan: &Plan, findings: &[&[Finding]]) -> Vec<String> {
    let mut counts: Vec<(Rule, usize)> = Vec::new();
    for f in findings.iter().flat_map(|fs| fs.iter()) {
        if f.severity != Severity::Reject {
            continue;
        }
        match counts.iter_mut().find(|(r, _)| *r == f.rule) {
            Some((_, n)) => *n += 1,
            None => counts.push((f.rule, 1)),
        }
    }
    counts.sort_by(|a, b| b.1.cmp(&a.1).then(a.0.cmp(&b.0)));
    let mut out: Vec<String> = counts
        .iter()
        .map(|(r, n)| {
            format!(
                "{r} rejects {n} layout{}: try {}",
                if *n == 1 { "" } else { "s" },
                r.remedy()
            )
        })
        .collect();
    if plan.enumerate_all {
        if !plan.enumerate.allow_unused_modules {
            out.push("[enumerate] allow_unused_modules = true would also try wirings that leave some modules out".to_string());
        }
        if !plan.enumerate.allow_mixed_orientation && plan.groups.len() > 1 {
            out.push("[enumerate] allow_mixed_orientation = true would also try strings that mix orientation groups".to_string());
        }
    } else {
        out.push("layouts = \"all\" at the top of the plan would try every regular wiring instead of the listed ones".to_string());
    }
    out
}

impl std::fmt::Display for Rule {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.key())
    }
}

/// One rule's verdict on one layout, with its numbers.
#[derive(Clone, Debug, PartialEq)]
pub struct Finding {
    pub severity: Severity,
    pub rule: Rule,
    /// What was found, with the numbers and the margin.
    pub message: String,
    /// The controller input of the layout it is about (index into `Layout::inputs`).
    pub input: usize,
    /// What the condition cost over the simulated year, once the layout was simulated
    /// ([`price_warnings`]); `None` before, and for findings that cost no energy.
    pub cost: Option<Cost>,
}

/// What a warned condition cost over the year, from the layout's simulated loss steps.
#[derive(Clone, Debug, PartialEq)]
pub struct Cost {
    /// The loss step the energy is booked in.
    pub step: Step,
    /// Energy per year, kWh.
    pub kwh: f64,
    /// Which part of the step, in a person's words.
    pub what: String,
}

impl Finding {
    /// The message, with the simulated cost when there is one.
    pub fn text(&self) -> String {
        match &self.cost {
            Some(c) => format!(
                "{}; simulated cost {:.1} kWh a year ({})",
                self.message, c.kwh, c.what
            ),
            None => self.message.clone(),
        }
    }
}

/// Puts a price on each warning of a simulated layout: the energy per year of the loss step
/// its condition shows in, on its own controller input (`e` already per mean year).
///
/// | rule | step, part |
/// |---|---|
/// | `hot-vmp` | window and start-up: intervals whose array maximum lay below the window |
/// | `cold-vmp` | window and start-up: intervals whose array maximum lay above the window |
/// | `pwm-high-vmp` | window and start-up: the PWM clamp |
/// | `input-current` | input limit |
/// | `voltage-drop` | cables (the input's string leads and main run) |
/// | `output-derating` | clipping: the part caused by the derating |
///
/// `string-fuse` asks for a part and costs nothing; `mixed-types` costs mismatch, which the
/// simulation does not split by cause.
pub fn price_warnings(findings: &mut [Finding], e: &LayoutEnergy) {
    for f in findings.iter_mut().filter(|f| f.severity == Severity::Warn) {
        let x = e.inputs.get(f.input).copied().unwrap_or_default();
        let (step, wh, what) = match f.rule {
            Rule::HotVmp => (
                Step::WindowStartup,
                x.below_window_wh,
                "window and start-up step, hours when the array's maximum lay below the window"
                    .to_string(),
            ),
            Rule::ColdVmp => (
                Step::WindowStartup,
                x.above_window_wh,
                "window and start-up step, hours when the array's maximum lay above the window"
                    .to_string(),
            ),
            Rule::PwmHighVmp => (
                Step::WindowStartup,
                x.pwm_clamp_wh,
                "window and start-up step, the array held at battery voltage".to_string(),
            ),
            Rule::InputCurrent => (
                Step::InputLimit,
                x.input_limit_wh,
                format!(
                    "input-limit step; the highest current at the tracked point was {:.1} A",
                    x.highest_tracked_a
                ),
            ),
            Rule::VoltageDrop => (
                Step::Cables,
                x.cables_wh,
                "cables step, this input's string leads and main run".to_string(),
            ),
            Rule::OutputDerating => (
                Step::Clipping,
                x.derating_wh,
                "clipping step, the part caused by the derating".to_string(),
            ),
            _ => continue,
        };
        f.cost = Some(Cost {
            step,
            kwh: wh / 1000.0,
            what,
        });
    }
}

/// One line per controller whose plan gives only one of its two input current ratings:
/// which was assumed for the other, and why.
pub fn current_rating_notes(plan: &Plan) -> Vec<String> {
    plan.controllers
        .iter()
        .filter_map(|c| {
            let uses = if c.model.is_pwm() {
                "its rated current"
            } else {
                "the current it draws"
            };
            let a = c.model.max_input_a();
            match c.current_assumed? {
                CurrentAssumed::ArrayIscFromInput => Some(format!(
                    "controller {} gives one current rating, max_input_a = {} A ({uses}): the array short-circuit current it withstands is taken as the same {} A, the safe reading of a single rating; give max_array_isc_a from the datasheet if it is higher",
                    c.id,
                    Num(a),
                    Num(c.max_array_isc_a)
                )),
                CurrentAssumed::InputFromArrayIsc => Some(format!(
                    "controller {} gives one current rating, max_array_isc_a = {} A (the array short-circuit current it withstands): {uses} is taken as the same {} A, so no input limit binds on a layout that passes; give max_input_a if the datasheet states a lower one",
                    c.id,
                    Num(c.max_array_isc_a),
                    Num(a)
                )),
            }
        })
        .collect()
}

/// Temperatures the checks use.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DesignTemperatures {
    /// Lowest air (= cell, before sunrise) temperature: the weather minimum or the plan's
    /// design minimum, whichever is lower, °C.
    pub min_air_c: f64,
    /// Highest air temperature: the weather maximum or the plan's design maximum, whichever is
    /// higher, °C.
    pub max_air_c: f64,
}

/// Ampacity of a cable from the documented table, A (the plan may override it).
///
/// # Source
/// From memory: AWG sizes from NEC Table 310.16 (2017), copper, 75 °C column (14 AWG 20 A,
/// 12 AWG 25 A, 10 AWG 35 A, 8 AWG 50 A, 6 AWG 65 A, 4 AWG 85 A, 3 AWG 100 A, 2 AWG 115 A,
/// 1 AWG 130 A, 1/0 150 A, 2/0 175 A, 3/0 200 A, 4/0 230 A); mm² sizes for single-core PV cable
/// in free air, 60 °C ambient, from memory of EN 50618 / IEC 62930 tables (1.5 mm² 30 A,
/// 2.5 mm² 41 A, 4 mm² 55 A, 6 mm² 70 A, 10 mm² 98 A, 16 mm² 132 A, 25 mm² 176 A,
/// 35 mm² 218 A). Aluminium: 0.78 × copper (ratio of the NEC 75 °C columns, from memory).
/// Sizes between rows take the smaller row (conservative).
pub fn table_ampacity_a(run: &CableRun) -> f64 {
    const AWG: [(i32, f64); 13] = [
        (14, 20.0),
        (12, 25.0),
        (10, 35.0),
        (8, 50.0),
        (6, 65.0),
        (4, 85.0),
        (3, 100.0),
        (2, 115.0),
        (1, 130.0),
        (0, 150.0),
        (-1, 175.0),
        (-2, 200.0),
        (-3, 230.0),
    ];
    const MM2: [(f64, f64); 8] = [
        (1.5, 30.0),
        (2.5, 41.0),
        (4.0, 55.0),
        (6.0, 70.0),
        (10.0, 98.0),
        (16.0, 132.0),
        (25.0, 176.0),
        (35.0, 218.0),
    ];
    let copper = match run.awg {
        Some(g) => AWG
            .iter()
            .rev()
            .find(|(a, _)| *a >= g)
            .map(|(_, amp)| *amp)
            // Thinner than 14 AWG: scale 14 AWG by area (no table row).
            .unwrap_or(20.0 * run.cross_section_mm2 / 2.08),
        None => MM2
            .iter()
            .rev()
            .find(|(mm2, _)| *mm2 <= run.cross_section_mm2 + 1e-9)
            .map(|(_, amp)| *amp)
            .unwrap_or(30.0 * run.cross_section_mm2 / 1.5),
    };
    match run.conductor {
        Conductor::Copper => copper,
        Conductor::Aluminium => 0.78 * copper,
    }
}

/// The ampacity used for a run: the plan's value, else the table's.
pub fn ampacity_a(run: &CableRun) -> f64 {
    run.ampacity_a.unwrap_or_else(|| table_ampacity_a(run))
}

/// Open-circuit voltage of a module at a cell temperature, from the datasheet coefficient.
///
/// # Formula
/// Voc(T) = Voc_STC · (1 + β_rel · (T − 25)), β_rel = β_Voc / Voc_STC per K.
///
/// # Source
/// NEC 690.7(A)(1) (the module's own coefficient at the lowest expected temperature).
pub fn voc_at_v(voc_stc_v: f64, beta_voc_v_k: f64, cell_c: f64) -> f64 {
    voc_stc_v + beta_voc_v_k * (cell_c - 25.0)
}

/// Checks every rule of notebooks-free-docs/method-limits.md for one layout.
pub fn check_layout(plan: &Plan, layout: &Layout, temps: &DesignTemperatures) -> Vec<Finding> {
    let mut out = Vec::new();
    for (i, w) in layout.inputs.iter().enumerate() {
        let start = out.len();
        check_input(plan, w, temps, &mut out);
        for f in &mut out[start..] {
            f.input = i;
        }
    }
    out
}

/// What the input-only hard rules need to know of one input's strings.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct InputExtremes {
    /// Highest string Voc at the coldest temperature, V.
    pub voc_cold_max_v: f64,
    /// Lowest maximum system voltage of the modules, V.
    pub max_system_v: f64,
    /// Sum over strings of each string's Isc (its weakest module's), A.
    pub isc_sum_a: f64,
}

/// An input-only hard rule broken: the measured value and the limit it breaks.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Breach {
    pub rule: Rule,
    pub value: f64,
    pub limit: f64,
}

/// The verdict of one input-only hard rule on one input; `None` when it holds or does not
/// apply to the controller's kind. The one definition both screening and pruning use.
pub fn input_only_breach(
    rule: Rule,
    plan: &Plan,
    controller: usize,
    x: &InputExtremes,
) -> Option<Breach> {
    let c = &plan.controllers[controller];
    let battery_v = plan.battery.charge_v;
    let breach = |value: f64, limit: f64| Breach { rule, value, limit };
    match (rule, &c.model) {
        (Rule::ColdVoc, _) if x.voc_cold_max_v > c.max_input_v => {
            Some(breach(x.voc_cold_max_v, c.max_input_v))
        }
        (Rule::ModuleSystemVoltage, _) if x.voc_cold_max_v > x.max_system_v => {
            Some(breach(x.voc_cold_max_v, x.max_system_v))
        }
        (Rule::ArrayIsc, _) if ISC_FACTOR * x.isc_sum_a > c.max_array_isc_a => {
            Some(breach(ISC_FACTOR * x.isc_sum_a, c.max_array_isc_a))
        }
        (Rule::NeverWakes, ControllerModel::Mppt { start_offset_v, .. })
            if x.voc_cold_max_v < battery_v + start_offset_v =>
        {
            Some(breach(x.voc_cold_max_v, battery_v + start_offset_v))
        }
        (Rule::NeverCharges, ControllerModel::Pwm { .. }) if x.voc_cold_max_v <= battery_v => {
            Some(breach(x.voc_cold_max_v, battery_v))
        }
        _ => None,
    }
}

/// Per-input figures the full check uses (strings may mix module types).
struct InputFigures {
    extremes: InputExtremes,
    vmp_hot_min_v: f64,
    vmp_cold_max_v: f64,
    vmp_stc_min_v: f64,
    isc_string_max_a: f64,
    imp_sum_a: f64,
    fuse_min_a: f64,
    types_mixed: bool,
    /// Sum of the modules' STC power, W.
    pmax_sum_w: f64,
}

fn input_figures(plan: &Plan, w: &InputWiring, temps: &DesignTemperatures) -> InputFigures {
    let mut f = InputFigures {
        extremes: InputExtremes {
            voc_cold_max_v: 0.0,
            max_system_v: f64::INFINITY,
            isc_sum_a: 0.0,
        },
        vmp_hot_min_v: f64::INFINITY,
        vmp_cold_max_v: 0.0,
        vmp_stc_min_v: f64::INFINITY,
        isc_string_max_a: 0.0,
        imp_sum_a: 0.0,
        fuse_min_a: f64::INFINITY,
        types_mixed: false,
        pmax_sum_w: 0.0,
    };
    for st in &w.strings {
        let (mut voc_cold, mut vmp_hot, mut vmp_cold, mut vmp_stc) = (0.0, 0.0, 0.0, 0.0);
        let (mut isc_min, mut imp_min) = (f64::INFINITY, f64::INFINITY);
        for &m in st {
            let module = &plan.modules[m];
            let t = &plan.module_types[module.module_type];
            if module.module_type != plan.modules[st[0]].module_type {
                f.types_mixed = true;
            }
            let g = &plan.groups[module.group];
            voc_cold += voc_at_v(t.datasheet.voc_v, t.datasheet.beta_voc_v_k, temps.min_air_c);
            let hot_cell = g.thermal.cell_temperature_c(1000.0, temps.max_air_c, 1.0);
            vmp_hot += t.reference.at(1000.0, hot_cell).max_power_point().v;
            vmp_cold += t.reference.at(1000.0, temps.min_air_c).max_power_point().v;
            vmp_stc += t.datasheet.vmp_v;
            isc_min = isc_min.min(t.datasheet.isc_a);
            imp_min = imp_min.min(t.datasheet.imp_a);
            f.extremes.max_system_v = f.extremes.max_system_v.min(t.max_system_v);
            f.fuse_min_a = f.fuse_min_a.min(t.max_series_fuse_a);
            f.pmax_sum_w += t.pmax_w;
        }
        f.extremes.voc_cold_max_v = f.extremes.voc_cold_max_v.max(voc_cold);
        f.vmp_hot_min_v = f.vmp_hot_min_v.min(vmp_hot);
        f.vmp_cold_max_v = f.vmp_cold_max_v.max(vmp_cold);
        f.vmp_stc_min_v = f.vmp_stc_min_v.min(vmp_stc);
        f.extremes.isc_sum_a += isc_min;
        f.imp_sum_a += imp_min;
        f.isc_string_max_a = f.isc_string_max_a.max(isc_min);
    }
    f
}

/// What one input is checked against: the plan, its controller, the figures and a message
/// prefix naming the input when the plan has several.
struct InputCheck<'a> {
    plan: &'a Plan,
    w: &'a InputWiring,
    temps: &'a DesignTemperatures,
    f: InputFigures,
    tag: String,
}

impl InputCheck<'_> {
    fn breach(&self, rule: Rule) -> Option<Breach> {
        input_only_breach(rule, self.plan, self.w.controller, &self.f.extremes)
    }

    /// Cold Voc against the controller and the modules, and whether the controller can ever
    /// start (MPPT) or charge (PWM).
    fn voltage_limits(&self, out: &mut Vec<Finding>) {
        let (tag, s, t_min) = (&self.tag, self.w.series(), self.temps.min_air_c);
        if let Some(b) = self.breach(Rule::ColdVoc) {
            push(out, Severity::Reject, b.rule, format!(
                "{tag}string Voc at {t_min:.0} °C is {:.1} V ({s} in series), above the controller's {:.0} V maximum input by {:.1} V",
                b.value, b.limit, b.value - b.limit
            ));
        }
        if let Some(b) = self.breach(Rule::ModuleSystemVoltage) {
            push(out, Severity::Reject, b.rule, format!(
                "{tag}string Voc at {t_min:.0} °C is {:.1} V, above the modules' {:.0} V maximum system voltage by {:.1} V",
                b.value, b.limit, b.value - b.limit
            ));
        }
    }

    /// Start-up, the tracking window (MPPT) or the battery clamp (PWM).
    fn controller_window(&self, out: &mut Vec<Finding>) {
        let c = &self.plan.controllers[self.w.controller];
        let battery_v = self.plan.battery.charge_v;
        let (tag, f) = (&self.tag, &self.f);
        match &c.model {
            ControllerModel::Mppt {
                start_offset_v,
                mppt_max_v,
                ..
            } => {
                if let Some(b) = self.breach(Rule::NeverWakes) {
                    push(out, Severity::Reject, b.rule, format!(
                        "{tag}string Voc is at most {:.1} V (coldest cell, full sun), below the {:.1} V the controller needs to start (battery {battery_v:.1} V + {start_offset_v:.1} V)",
                        b.value, b.limit
                    ));
                }
                let lo = c.model.window_low_v(battery_v);
                if f.vmp_hot_min_v < lo {
                    push(out, Severity::Warn, Rule::HotVmp, format!(
                        "{tag}string Vmp at full sun and {:.0} °C air is {:.1} V, below the MPPT window's lower edge {lo:.1} V by {:.1} V: on hot afternoons the tracker works at the edge instead of the maximum",
                        self.temps.max_air_c, f.vmp_hot_min_v, lo - f.vmp_hot_min_v
                    ));
                }
                if f.vmp_cold_max_v > *mppt_max_v {
                    push(out, Severity::Warn, Rule::ColdVmp, format!(
                        "{tag}string Vmp in cold full sun is {:.1} V, above the MPPT window's upper edge {mppt_max_v:.0} V: the tracker cannot reach the maximum then",
                        f.vmp_cold_max_v
                    ));
                }
            }
            ControllerModel::Pwm { .. } => {
                if let Some(b) = self.breach(Rule::NeverCharges) {
                    push(out, Severity::Reject, b.rule, format!(
                        "{tag}string Voc is at most {:.1} V, not above the battery's {battery_v:.1} V: a PWM controller can never charge",
                        b.value
                    ));
                }
                // Common practice, no source: a PWM controller pins the array near battery
                // voltage, so a string whose Vmp is far above it wastes most of its power.
                if f.vmp_stc_min_v > 1.6 * battery_v {
                    push(out, Severity::Warn, Rule::PwmHighVmp, format!(
                        "{tag}string Vmp is {:.1} V but a PWM controller holds it near the battery's {battery_v:.1} V: most of its power is lost; use MPPT or fewer modules in series",
                        f.vmp_stc_min_v
                    ));
                }
            }
        }
    }

    /// Input current, conductor ampacity (NEC 690.8) and string fuses.
    fn currents(&self, out: &mut Vec<Finding>) {
        let c = &self.plan.controllers[self.w.controller];
        let (tag, f, p) = (&self.tag, &self.f, self.w.parallel());
        let isc_125 = ISC_FACTOR * f.extremes.isc_sum_a;
        if let Some(b) = self.breach(Rule::ArrayIsc) {
            push(out, Severity::Reject, b.rule, format!(
                "{tag}1.25 × Isc of {p} parallel strings is {:.1} A, above the {} A array short-circuit current the controller withstands by {:.1} A",
                b.value, Num(b.limit), b.value - b.limit
            ));
        } else if isc_125 > c.model.max_input_a() {
            let draws = if c.model.is_pwm() {
                "the PWM controller's rated current"
            } else {
                "the most the controller draws"
            };
            push(out, Severity::Warn, Rule::InputCurrent, format!(
                "{tag}1.25 × Isc of {p} parallel strings is {isc_125:.1} A, above {} A, {draws} (within the {} A array short-circuit current it withstands): in strong sun it limits itself",
                Num(c.model.max_input_a()), Num(c.max_array_isc_a)
            ));
        }
        if let Some(d) = c.model.derating() {
            let t = self.temps.max_air_c;
            let derated_a = c.model.max_charge_a_at(t);
            let battery_v = self.plan.battery.charge_v;
            // What the array can give at STC: the MPPT converts its power to the battery
            // voltage, a PWM passes its current.
            let array_a = if c.model.is_pwm() {
                f.extremes.isc_sum_a
            } else {
                f.pmax_sum_w / battery_v
            };
            if d.factor(t) < 1.0 && array_a > derated_a {
                push(out, Severity::Warn, Rule::OutputDerating, format!(
                    "{tag}at {t:.0} °C air the controller's output is derated to {derated_a:.1} A (of {} A, less {} % per K above {} °C); the array can give about {array_a:.1} A in full sun",
                    Num(c.model.max_charge_a()), Num(d.frac_per_k * 100.0), Num(d.from_air_c)
                ));
            }
        }
        let lead_need = CONDUCTOR_FACTOR * ISC_FACTOR * f.isc_string_max_a;
        let lead_amp = ampacity_a(&self.plan.cables.string_lead);
        if lead_need > lead_amp {
            push(out, Severity::Reject, Rule::LeadAmpacity, format!(
                "{tag}string lead must carry 1.56 × Isc = {lead_need:.1} A but its ampacity is {lead_amp:.0} A"
            ));
        }
        let main_need = CONDUCTOR_FACTOR * ISC_FACTOR * f.extremes.isc_sum_a;
        let main_amp = ampacity_a(&c.main_run);
        if main_need > main_amp {
            push(out, Severity::Reject, Rule::MainRunAmpacity, format!(
                "{tag}main run must carry 1.56 × the summed Isc = {main_need:.1} A but its ampacity is {main_amp:.0} A"
            ));
        }
        if p >= 3 {
            let fuse_low = CONDUCTOR_FACTOR * ISC_FACTOR * f.isc_string_max_a;
            let fuse_min = f.fuse_min_a;
            if fuse_low > fuse_min {
                push(out, Severity::Reject, Rule::StringFuse, format!(
                    "{tag}{p} strings in parallel need string fuses of at least {fuse_low:.1} A, above the modules' {fuse_min:.0} A maximum series fuse"
                ));
            } else {
                push(out, Severity::Warn, Rule::StringFuse, format!(
                    "{tag}{p} strings in parallel: fit each string with overcurrent protection rated {fuse_low:.1}–{fuse_min:.0} A"
                ));
            }
        }
    }

    /// Voltage drop at STC above the plan's target.
    fn voltage_drop(&self, out: &mut Vec<Finding>) {
        let (frac, drop, vmp) = stc_voltage_drop(self.plan, self.w, &self.f);
        let target = self.plan.cables.voltage_drop_target_frac;
        if frac > target {
            push(out, Severity::Warn, Rule::VoltageDrop, format!(
                "{}cable voltage drop at STC is {drop:.2} V = {:.1} % of {vmp:.1} V, above the {:.1} % target",
                self.tag,
                frac * 100.0,
                target * 100.0
            ));
        }
    }
}

/// Voltage drop at STC: Imp through the lead and the summed Imp through the main run, with
/// the conductor at 25 °C air + the plan's rise. Returns (fraction of the string Vmp, drop V,
/// string Vmp V).
fn stc_voltage_drop(plan: &Plan, w: &InputWiring, f: &InputFigures) -> (f64, f64, f64) {
    let p = w.parallel();
    let t_cond = 25.0 + plan.cables.conductor_rise_dk;
    let resistance =
        |r: &CableRun| cable_resistance_ohm(r.conductor, r.length_m, r.cross_section_mm2, t_cond);
    let r_lead = resistance(&plan.cables.string_lead);
    let r_main = resistance(&plan.controllers[w.controller].main_run);
    let imp_string = if p > 0 { f.imp_sum_a / p as f64 } else { 0.0 };
    let drop = imp_string * r_lead + f.imp_sum_a * r_main;
    let vmp = f.vmp_stc_min_v;
    let frac = if vmp > 0.0 { drop / vmp } else { 0.0 };
    (frac, drop, vmp)
}

/// The figures the limit checks use for one input, for pictures and reports.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct InputNumbers {
    /// Highest string Voc at the coldest temperature, V.
    pub voc_cold_max_v: f64,
    /// 1.25 × the summed Isc, A.
    pub isc_125_a: f64,
    /// The array short-circuit current the controller withstands, A.
    pub isc_rating_a: f64,
    /// The current the controller draws (PWM: its rated current), A.
    pub input_rating_a: f64,
    /// Cable voltage drop at STC, fraction of the string Vmp.
    pub voltage_drop_frac: f64,
    /// Lowest string Vmp in full sun at the hottest air temperature, V.
    pub vmp_hot_min_v: f64,
    /// String fuse rating range (1.56 × Isc up to the modules' maximum series fuse) when
    /// three or more strings are in parallel.
    pub fuse_range_a: Option<(f64, f64)>,
}

/// The figures of [`check_layout`] for one input.
pub fn input_numbers(plan: &Plan, w: &InputWiring, temps: &DesignTemperatures) -> InputNumbers {
    let f = input_figures(plan, w, temps);
    InputNumbers {
        voc_cold_max_v: f.extremes.voc_cold_max_v,
        isc_125_a: ISC_FACTOR * f.extremes.isc_sum_a,
        isc_rating_a: plan.controllers[w.controller].max_array_isc_a,
        input_rating_a: plan.controllers[w.controller].model.max_input_a(),
        voltage_drop_frac: stc_voltage_drop(plan, w, &f).0,
        vmp_hot_min_v: f.vmp_hot_min_v,
        fuse_range_a: (w.parallel() >= 3).then_some((
            CONDUCTOR_FACTOR * ISC_FACTOR * f.isc_string_max_a,
            f.fuse_min_a,
        )),
    }
}

/// The highest cable voltage drop at STC of a layout's inputs, as a fraction of the string
/// Vmp (what the `voltage-drop` rule compares with the plan's target).
pub fn layout_voltage_drop_frac(plan: &Plan, layout: &Layout, temps: &DesignTemperatures) -> f64 {
    layout
        .inputs
        .iter()
        .map(|w| stc_voltage_drop(plan, w, &input_figures(plan, w, temps)).0)
        .fold(0.0, f64::max)
}

fn check_input(plan: &Plan, w: &InputWiring, temps: &DesignTemperatures, out: &mut Vec<Finding>) {
    let tag = if plan.controllers.len() > 1 {
        format!("{}: ", plan.controllers[w.controller].id)
    } else {
        String::new()
    };
    let check = InputCheck {
        plan,
        w,
        temps,
        f: input_figures(plan, w, temps),
        tag,
    };
    check.voltage_limits(out);
    check.controller_window(out);
    check.currents(out);
    check.voltage_drop(out);
    if check.f.types_mixed {
        push(
            out,
            Severity::Warn,
            Rule::MixedTypes,
            format!(
                "{}a string mixes module types: its current is set by the weakest",
                check.tag
            ),
        );
    }
}

fn push(out: &mut Vec<Finding>, severity: Severity, rule: Rule, message: String) {
    out.push(Finding {
        severity,
        rule,
        message,
        input: 0,
        cost: None,
    });
}

/// What one input would carry, for a pruning rule: the input, modules in series, strings in
/// parallel, and the orientation groups the strings draw on.
#[derive(Clone, Copy, Debug)]
pub struct InputDraft<'a> {
    pub controller: usize,
    pub series: usize,
    pub parallel: usize,
    /// Modules per string from each group (one entry per group; single-group strings have one
    /// non-zero entry), for every kind of string on the input.
    pub compositions: &'a [(usize, Vec<usize>)],
}

/// The hard limits that depend only on what one input carries (modules in series, strings in
/// parallel, their module types): enumeration skips such choices before building layouts.
/// Returns the first rule of [`Rule::INPUT_ONLY`] broken, decided by [`input_only_breach`] as
/// in [`check_layout`].
pub fn input_hard_limit(
    plan: &Plan,
    temps: &DesignTemperatures,
    draft: &InputDraft,
) -> Option<Rule> {
    let type_of = |g: usize| &plan.module_types[plan.groups[g].module_type];
    let mut x = InputExtremes {
        voc_cold_max_v: 0.0,
        max_system_v: f64::INFINITY,
        isc_sum_a: 0.0,
    };
    for (n, comp) in draft.compositions {
        let mut voc = 0.0;
        let mut isc = f64::INFINITY;
        for (g, &count) in comp.iter().enumerate() {
            if count == 0 {
                continue;
            }
            let t = type_of(g);
            voc += count as f64
                * voc_at_v(t.datasheet.voc_v, t.datasheet.beta_voc_v_k, temps.min_air_c);
            isc = isc.min(t.datasheet.isc_a);
            x.max_system_v = x.max_system_v.min(t.max_system_v);
        }
        x.voc_cold_max_v = x.voc_cold_max_v.max(voc);
        x.isc_sum_a += *n as f64 * isc;
    }
    Rule::INPUT_ONLY
        .into_iter()
        .find_map(|rule| input_only_breach(rule, plan, draft.controller, &x))
        .map(|b| b.rule)
}

/// The temperatures the limit checks use: the weather's extremes widened by the plan's design
/// values.
pub fn design_temperatures(plan: &Plan, weather: &Weather) -> DesignTemperatures {
    let (lo, hi) = weather
        .air_temp_c
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &t| {
            (a.min(t), b.max(t))
        });
    DesignTemperatures {
        min_air_c: plan.site.design_min_air_c.map_or(lo, |d| d.min(lo)),
        max_air_c: plan.site.design_max_air_c.map_or(hi, |d| d.max(hi)),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::design::candidates::enumerate;
    use crate::io::plan_toml::parse_plan;

    /// The draft enumeration would build for an input wiring: strings grouped by their
    /// per-group module counts.
    fn draft_compositions(plan: &Plan, w: &InputWiring) -> Vec<(usize, Vec<usize>)> {
        let mut comps: Vec<(usize, Vec<usize>)> = Vec::new();
        for st in &w.strings {
            let mut comp = vec![0; plan.groups.len()];
            for &m in st {
                comp[plan.modules[m].group] += 1;
            }
            match comps.iter_mut().find(|(_, c)| *c == comp) {
                Some((n, _)) => *n += 1,
                None => comps.push((1, comp)),
            }
        }
        comps
    }

    fn plans() -> Vec<Plan> {
        let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
        let mut out = vec![parse_plan(
            crate::commands::load::DEMO_PLAN,
            "demo plan",
            std::path::Path::new(""),
        )
        .expect("demo plan parses")];
        for rel in [
            "tests/fixtures/plan_pwm_vs_mppt.toml",
            "tests/fixtures/plan_hot_site.toml",
            "tests/fixtures/plan_cold_site.toml",
            "tests/fixtures/plan_hot_desert.toml",
            "tests/fixtures/plan_six_parallel.toml",
            "benches/data/plan_24_modules.toml",
        ] {
            let path = root.join(rel);
            let text = std::fs::read_to_string(&path).expect("fixture reads");
            out.push(parse_plan(&text, rel, &path).expect("fixture parses"));
        }
        out
    }

    /// Screening and pruning must agree on every input-only hard rule: for every input of
    /// every enumerated layout of several plans and design temperatures, the rules the full
    /// check rejects on are exactly the breaches of the draft, and pruning names the first.
    /// Source: definition (one rule list for both paths; common practice, no source).
    #[test]
    fn screening_and_pruning_agree_on_every_input_only_rule() {
        let mut seen = std::collections::BTreeSet::new();
        let mut inputs_checked = 0;
        // Each plan as written and as a 24 V system (where short strings never charge or wake).
        let variants = plans().into_iter().flat_map(|p| {
            let mut high = p.clone();
            high.battery.charge_v = 27.2;
            [p, high]
        });
        for plan in variants {
            let layouts = enumerate(&plan, plan.enumerate).expect("enumerates");
            for (min_air_c, max_air_c) in [(-40.0, 45.0), (-20.0, 34.0), (5.0, 50.0), (20.0, 25.0)]
            {
                let temps = DesignTemperatures {
                    min_air_c,
                    max_air_c,
                };
                for layout in &layouts {
                    for w in &layout.inputs {
                        let mut findings = Vec::new();
                        check_input(&plan, w, &temps, &mut findings);
                        let screened: Vec<Rule> = findings
                            .iter()
                            .filter(|f| {
                                f.severity == Severity::Reject && Rule::INPUT_ONLY.contains(&f.rule)
                            })
                            .map(|f| f.rule)
                            .collect();
                        let comps = draft_compositions(&plan, w);
                        let draft = InputDraft {
                            controller: w.controller,
                            series: w.series(),
                            parallel: w.parallel(),
                            compositions: &comps,
                        };
                        let pruned = input_hard_limit(&plan, &temps, &draft);
                        let first = Rule::INPUT_ONLY.into_iter().find(|r| screened.contains(r));
                        assert_eq!(pruned, first, "{} at {min_air_c} °C", layout.code);
                        seen.extend(screened);
                        inputs_checked += 1;
                    }
                }
            }
        }
        assert!(inputs_checked > 100, "{inputs_checked} inputs");
        // The plans exercise the voltage and current rules and both start-up rules.
        for rule in [
            Rule::ColdVoc,
            Rule::ArrayIsc,
            Rule::NeverWakes,
            Rule::NeverCharges,
        ] {
            assert!(seen.contains(&rule), "{rule} never broken: {seen:?}");
        }
    }

    #[test]
    fn rule_keys_are_unique_and_listed_once() {
        // Source: definition (keys join reports, JSON and CSV).
        let mut keys: Vec<&str> = Rule::ALL.iter().map(|r| r.key()).collect();
        keys.sort_unstable();
        keys.dedup();
        assert_eq!(keys.len(), Rule::ALL.len());
        for r in Rule::INPUT_ONLY {
            assert!(Rule::ALL.contains(&r));
        }
    }
    fn fixture(rel: &str) -> Plan {
        let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
        let path = root.join(rel);
        let text = std::fs::read_to_string(&path).expect("fixture reads");
        parse_plan(&text, rel, &path).expect("fixture parses")
    }

    fn listed(plan: &Plan, name: &str) -> Layout {
        crate::input::layout::listed(plan)
            .into_iter()
            .find(|l| l.label.as_deref() == Some(name))
            .expect("listed layout")
    }

    /// Every finding carries its rule's documented severity (method-limits.md), except that
    /// `string-fuse` rejects when no fuse can exist. Source: definition (issue 15: reject what
    /// is unsafe or can never work, warn what only costs energy).
    #[test]
    fn every_finding_has_its_rules_severity() {
        let mut seen = std::collections::BTreeSet::new();
        for plan in plans() {
            let layouts = enumerate(&plan, plan.enumerate).expect("enumerates");
            for temps in [(-40.0, 50.0), (-20.0, 34.0)] {
                let temps = DesignTemperatures {
                    min_air_c: temps.0,
                    max_air_c: temps.1,
                };
                for l in layouts
                    .iter()
                    .chain(crate::input::layout::listed(&plan).iter())
                {
                    for f in check_layout(&plan, l, &temps) {
                        seen.insert(f.rule);
                        if f.rule == Rule::StringFuse && f.severity == Severity::Reject {
                            assert!(f.message.contains("maximum series fuse"));
                            continue;
                        }
                        assert_eq!(f.severity, f.rule.severity(), "{}: {}", f.rule, f.message);
                    }
                }
            }
        }
        for r in [
            Rule::HotVmp,
            Rule::InputCurrent,
            Rule::ArrayIsc,
            Rule::ColdVoc,
        ] {
            assert!(seen.contains(&r), "{r} never found: {seen:?}");
        }
        // A rule that only warns never prunes.
        for r in Rule::INPUT_ONLY {
            assert_eq!(r.severity(), Severity::Reject, "{r}");
        }
    }

    /// Six strings of one 5.80 A module: 1.25 × 6 × 5.80 A = 43.5 A. Source: NEC 690.8(A)(1)
    /// (maximum circuit current 1.25 × the summed Isc), worked by hand. Above the 40 A the
    /// controller draws and within the 50 A it withstands: a warning, ranked. With a 40 A
    /// withstand rating: rejected by 3.5 A. With a 45 A input: nothing.
    #[test]
    fn array_isc_rejects_and_input_current_warns_by_hand() {
        let plan = fixture("tests/fixtures/plan_six_parallel.toml");
        let temps = DesignTemperatures {
            min_air_c: -20.0,
            max_air_c: 34.0,
        };
        let six = listed(&plan, "six in parallel");
        let f = check_layout(&plan, &six, &temps);
        let warn = f
            .iter()
            .find(|f| f.rule == Rule::InputCurrent)
            .expect("input-current warns");
        assert_eq!(warn.severity, Severity::Warn);
        assert!(
            warn.message.contains("43.5 A, above 40 A") && warn.message.contains("50 A"),
            "{}",
            warn.message
        );
        assert!(f.iter().all(|f| f.severity != Severity::Reject), "{f:?}");

        let mut tight = plan.clone();
        tight.controllers[0].max_array_isc_a = 40.0;
        let f = check_layout(&tight, &six, &temps);
        let rej = f
            .iter()
            .find(|f| f.rule == Rule::ArrayIsc)
            .expect("array-isc rejects");
        assert_eq!(rej.severity, Severity::Reject);
        assert!(
            rej.message.contains("43.5 A") && rej.message.contains("by 3.5 A"),
            "{}",
            rej.message
        );
        assert!(!f.iter().any(|f| f.rule == Rule::InputCurrent));
        // Pruning agrees: the 1s6p input is skipped with the tight rating only.
        let comps = vec![(6, vec![1])];
        let draft = InputDraft {
            controller: 0,
            series: 1,
            parallel: 6,
            compositions: &comps,
        };
        assert_eq!(input_hard_limit(&plan, &temps, &draft), None);
        assert_eq!(
            input_hard_limit(&tight, &temps, &draft),
            Some(Rule::ArrayIsc)
        );

        let mut roomy = plan.clone();
        if let ControllerModel::Mppt { max_input_a, .. } = &mut roomy.controllers[0].model {
            *max_input_a = 45.0;
        }
        assert!(check_layout(&roomy, &six, &temps)
            .iter()
            .all(|f| f.rule != Rule::InputCurrent));
    }

    /// The hot-desert plan's 2s3p: the window's lower edge is max(30 V, 27.2 + 1 V) = 30 V;
    /// worked by hand with the Voc coefficient (common practice: Vmp falls at about the Voc
    /// coefficient in V/K), the cell at 46 °C air, 1000 W/m², 1 m/s on a close roof (King 2004:
    /// 46 + 1000·e^(−2.98 − 0.0471) + 1 = 95.48 °C) gives 2 × (18.6 − 0.0029 × 22.6 × 70.48) =
    /// 27.96 V; the report uses the fitted single-diode model (within 3 %). A warning, not a
    /// rejection.
    #[test]
    fn hot_vmp_below_the_window_warns_with_the_numbers() {
        let plan = fixture("tests/fixtures/plan_hot_desert.toml");
        let temps = DesignTemperatures {
            min_air_c: -5.0,
            max_air_c: 46.0,
        };
        let f = check_layout(&plan, &listed(&plan, "two in series"), &temps);
        let hot = f.iter().find(|f| f.rule == Rule::HotVmp).expect("hot-vmp");
        assert_eq!(hot.severity, Severity::Warn);
        assert!(hot.message.contains("lower edge 30.0 V"), "{}", hot.message);
        let v: f64 = hot
            .message
            .split("°C air is ")
            .nth(1)
            .and_then(|t| t.split(" V").next())
            .and_then(|x| x.parse().ok())
            .expect("a voltage");
        assert!((v / 27.96 - 1.0).abs() < 0.03, "{v}");
        assert!(f.iter().all(|f| f.severity != Severity::Reject));
        let f3 = check_layout(&plan, &listed(&plan, "three in series"), &temps);
        assert!(f3.iter().all(|f| f.rule != Rule::HotVmp));
    }

    /// Each priced warning takes its own input's share of its step. Source: definition
    /// (method-limits.md, "What a warning cost").
    #[test]
    fn warnings_are_priced_from_their_own_inputs_loss_steps() {
        use crate::sim::energy::InputLosses;
        let finding = |rule: Rule, input: usize| Finding {
            severity: rule.severity(),
            rule,
            message: "m".into(),
            input,
            cost: None,
        };
        let mut fs = vec![
            finding(Rule::HotVmp, 1),
            finding(Rule::InputCurrent, 0),
            finding(Rule::VoltageDrop, 1),
            finding(Rule::ColdVmp, 0),
            finding(Rule::PwmHighVmp, 1),
            finding(Rule::OutputDerating, 0),
            finding(Rule::StringFuse, 0),
            finding(Rule::ArrayIsc, 0),
        ];
        let e = LayoutEnergy {
            inputs: vec![
                InputLosses {
                    input_limit_wh: 1500.0,
                    above_window_wh: 700.0,
                    derating_wh: 300.0,
                    highest_tracked_a: 33.8,
                    ..InputLosses::default()
                },
                InputLosses {
                    below_window_wh: 2500.0,
                    cables_wh: 4200.0,
                    pwm_clamp_wh: 900.0,
                    ..InputLosses::default()
                },
            ],
            ..LayoutEnergy::default()
        };
        price_warnings(&mut fs, &e);
        let kwh: Vec<Option<(Step, f64)>> = fs
            .iter()
            .map(|f| f.cost.as_ref().map(|c| (c.step, c.kwh)))
            .collect();
        assert_eq!(
            kwh,
            vec![
                Some((Step::WindowStartup, 2.5)),
                Some((Step::InputLimit, 1.5)),
                Some((Step::Cables, 4.2)),
                Some((Step::WindowStartup, 0.7)),
                Some((Step::WindowStartup, 0.9)),
                Some((Step::Clipping, 0.3)),
                None,
                None
            ]
        );
        assert!(fs[1].text().contains("simulated cost 1.5 kWh a year"));
        assert!(fs[1].text().contains("33.8 A"));
    }

    /// A controller with one current rating says which was assumed for the other.
    /// Source: definition (issue 15; plan-format.md).
    #[test]
    fn one_current_rating_is_noted_with_what_was_assumed() {
        let demo = plans().remove(0);
        let notes = current_rating_notes(&demo);
        assert_eq!(notes.len(), 2, "{notes:?}");
        assert!(
            notes[0].contains("max_input_a = 50 A") && notes[0].contains("taken as the same 50 A")
        );
        assert!(current_rating_notes(&fixture("tests/fixtures/plan_six_parallel.toml")).is_empty());
    }
}
