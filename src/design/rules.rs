//! Electrical limit checks, run before any energy is reported (notebooks-free-docs/method-limits.md).
//!
//! A broken hard limit rejects a layout (it is listed with the rule, the numbers and the
//! margin, never ranked); a soft finding is a warning on the layout. These are screening
//! checks, not a code-compliance review. This module does not simulate.

use crate::input::layout::{InputWiring, Layout};
use crate::input::plan::{CableRun, Plan};
use crate::input::weather::Weather;
use crate::physics::controller::ControllerModel;
use crate::physics::wiring::{cable_resistance_ohm, Conductor};

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

/// One rule's verdict on one layout, with its numbers.
#[derive(Clone, Debug, PartialEq)]
pub struct Finding {
    pub severity: Severity,
    /// Short rule name, e.g. `cold-voc`.
    pub rule: &'static str,
    /// What was found, with the numbers and the margin.
    pub message: String,
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
    for w in &layout.inputs {
        check_input(plan, w, temps, &mut out);
    }
    out
}

fn check_input(plan: &Plan, w: &InputWiring, temps: &DesignTemperatures, out: &mut Vec<Finding>) {
    let c = &plan.controllers[w.controller];
    let battery_v = plan.battery.charge_v;
    let s = w.series();
    let p = w.parallel();
    let tag = if plan.controllers.len() > 1 {
        format!("{}: ", c.id)
    } else {
        String::new()
    };

    // Per string: cold Voc, hot Vmp, Isc (strings may mix module types).
    let mut voc_cold_max: f64 = 0.0;
    let mut vmp_hot_min = f64::INFINITY;
    let mut vmp_cold_max: f64 = 0.0;
    let mut vmp_stc_min = f64::INFINITY;
    let mut isc_sum = 0.0;
    let mut isc_string_max: f64 = 0.0;
    let mut imp_sum = 0.0;
    let mut max_system_v = f64::INFINITY;
    let mut fuse_min = f64::INFINITY;
    let mut types_mixed = false;
    for st in &w.strings {
        let mut voc_cold = 0.0;
        let mut vmp_hot = 0.0;
        let mut vmp_cold = 0.0;
        let mut vmp_stc = 0.0;
        let mut isc_min = f64::INFINITY;
        let mut imp_min = f64::INFINITY;
        for &m in st {
            let module = &plan.modules[m];
            let t = &plan.module_types[module.module_type];
            if module.module_type != plan.modules[st[0]].module_type {
                types_mixed = true;
            }
            let g = &plan.groups[module.group];
            voc_cold += voc_at_v(t.datasheet.voc_v, t.datasheet.beta_voc_v_k, temps.min_air_c);
            let hot_cell = g.thermal.cell_temperature_c(1000.0, temps.max_air_c, 1.0);
            vmp_hot += t.reference.at(1000.0, hot_cell).max_power_point().v;
            vmp_cold += t.reference.at(1000.0, temps.min_air_c).max_power_point().v;
            vmp_stc += t.datasheet.vmp_v;
            isc_min = isc_min.min(t.datasheet.isc_a);
            imp_min = imp_min.min(t.datasheet.imp_a);
            max_system_v = max_system_v.min(t.max_system_v);
            fuse_min = fuse_min.min(t.max_series_fuse_a);
        }
        voc_cold_max = voc_cold_max.max(voc_cold);
        vmp_hot_min = vmp_hot_min.min(vmp_hot);
        vmp_cold_max = vmp_cold_max.max(vmp_cold);
        vmp_stc_min = vmp_stc_min.min(vmp_stc);
        isc_sum += isc_min;
        imp_sum += imp_min;
        isc_string_max = isc_string_max.max(isc_min);
    }

    if voc_cold_max > c.max_input_v {
        push(
            out,
            Severity::Reject,
            "cold-voc",
            format!(
                "{tag}string Voc at {:.0} °C is {voc_cold_max:.1} V ({s} in series), above the controller's {:.0} V maximum input by {:.1} V",
                temps.min_air_c,
                c.max_input_v,
                voc_cold_max - c.max_input_v
            ),
        );
    }
    if voc_cold_max > max_system_v {
        push(
            out,
            Severity::Reject,
            "module-system-voltage",
            format!(
                "{tag}string Voc at {:.0} °C is {voc_cold_max:.1} V, above the modules' {max_system_v:.0} V maximum system voltage by {:.1} V",
                temps.min_air_c,
                voc_cold_max - max_system_v
            ),
        );
    }
    match &c.model {
        ControllerModel::Mppt { start_offset_v, .. } => {
            let wake = battery_v + start_offset_v;
            if voc_cold_max < wake {
                push(
                    out,
                    Severity::Reject,
                    "never-wakes",
                    format!(
                        "{tag}string Voc is at most {voc_cold_max:.1} V (coldest cell, full sun), below the {wake:.1} V the controller needs to start (battery {battery_v:.1} V + {start_offset_v:.1} V)"
                    ),
                );
            }
            let lo = c.model.window_low_v(battery_v);
            if vmp_hot_min < lo {
                push(
                    out,
                    Severity::Reject,
                    "hot-vmp",
                    format!(
                        "{tag}string Vmp at full sun and {:.0} °C air is {vmp_hot_min:.1} V, below the MPPT window's lower edge {lo:.1} V by {:.1} V",
                        temps.max_air_c,
                        lo - vmp_hot_min
                    ),
                );
            }
            if let ControllerModel::Mppt { mppt_max_v, .. } = &c.model {
                if vmp_cold_max > *mppt_max_v {
                    push(out, Severity::Warn, "cold-vmp", format!(
                            "{tag}string Vmp in cold full sun is {vmp_cold_max:.1} V, above the MPPT window's upper edge {mppt_max_v:.0} V: the tracker cannot reach the maximum then"
                        ),
);
                }
            }
        }
        ControllerModel::Pwm { .. } => {
            if voc_cold_max <= battery_v {
                push(
                    out,
                    Severity::Reject,
                    "never-charges",
                    format!(
                        "{tag}string Voc is at most {voc_cold_max:.1} V, not above the battery's {battery_v:.1} V: a PWM controller can never charge"
                    ),
                );
            }
            // Common practice, no source: a PWM controller pins the array near battery
            // voltage, so a string whose Vmp is far above it wastes most of its power.
            if vmp_stc_min > 1.6 * battery_v {
                push(out, Severity::Warn, "pwm-high-vmp", format!(
                        "{tag}string Vmp is {vmp_stc_min:.1} V but a PWM controller holds it near the battery's {battery_v:.1} V: most of its power is lost; use MPPT or fewer modules in series"
                    ),
);
            }
        }
    }
    let i_max = ISC_FACTOR * isc_sum;
    let limit = c.model.max_input_a();
    if i_max > limit {
        push(
            out,
            Severity::Reject,
            "input-current",
            format!(
                "{tag}1.25 × Isc of {p} parallel strings is {i_max:.1} A, above the controller's {limit:.0} A input rating by {:.1} A",
                i_max - limit
            ),
        );
    }
    let lead_need = CONDUCTOR_FACTOR * ISC_FACTOR * isc_string_max;
    let lead_amp = ampacity_a(&plan.cables.string_lead);
    if lead_need > lead_amp {
        push(
            out,
            Severity::Reject,
            "lead-ampacity",
            format!(
                "{tag}string lead must carry 1.56 × Isc = {lead_need:.1} A but its ampacity is {lead_amp:.0} A"
            ),
        );
    }
    let main_need = CONDUCTOR_FACTOR * i_max;
    let main_amp = ampacity_a(&c.main_run);
    if main_need > main_amp {
        push(
            out,
            Severity::Reject,
            "main-run-ampacity",
            format!(
                "{tag}main run must carry 1.56 × the summed Isc = {main_need:.1} A but its ampacity is {main_amp:.0} A"
            ),
        );
    }
    if p >= 3 {
        let fuse_low = CONDUCTOR_FACTOR * ISC_FACTOR * isc_string_max;
        if fuse_low > fuse_min {
            push(
                out,
                Severity::Reject,
                "string-fuse",
                format!(
                    "{tag}{p} strings in parallel need string fuses of at least {fuse_low:.1} A, above the modules' {fuse_min:.0} A maximum series fuse"
                ),
            );
        } else {
            push(out, Severity::Warn, "string-fuse", format!(
                    "{tag}{p} strings in parallel: fit each string with overcurrent protection rated {fuse_low:.1}..={fuse_min:.0} A"
                ),
);
        }
    }
    // Voltage drop at STC: Imp through the lead and the summed Imp through the main run, with
    // the conductor at 25 °C air + the plan's rise.
    let t_cond = 25.0 + plan.cables.conductor_rise_dk;
    let lead = &plan.cables.string_lead;
    let r_lead = cable_resistance_ohm(
        lead.conductor,
        lead.length_m,
        lead.cross_section_mm2,
        t_cond,
    );
    let main = &c.main_run;
    let r_main = cable_resistance_ohm(
        main.conductor,
        main.length_m,
        main.cross_section_mm2,
        t_cond,
    );
    let imp_string = if p > 0 { imp_sum / p as f64 } else { 0.0 };
    let drop = imp_string * r_lead + imp_sum * r_main;
    let frac = if vmp_stc_min > 0.0 {
        drop / vmp_stc_min
    } else {
        0.0
    };
    if frac > plan.cables.voltage_drop_target_frac {
        push(out, Severity::Warn, "voltage-drop", format!(
                "{tag}cable voltage drop at STC is {drop:.2} V = {:.1} % of {vmp_stc_min:.1} V, above the {:.1} % target",
                frac * 100.0,
                plan.cables.voltage_drop_target_frac * 100.0
            ),
);
    }
    if types_mixed {
        push(
            out,
            Severity::Warn,
            "mixed-types",
            format!("{tag}a string mixes module types: its current is set by the weakest"),
        );
    }
}

fn push(out: &mut Vec<Finding>, severity: Severity, rule: &'static str, message: String) {
    out.push(Finding {
        severity,
        rule,
        message,
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
/// Returns the rule broken, as named in [`check_layout`].
pub fn input_hard_limit(
    plan: &Plan,
    temps: &DesignTemperatures,
    draft: &InputDraft,
) -> Option<&'static str> {
    let c = &plan.controllers[draft.controller];
    let battery_v = plan.battery.charge_v;
    let type_of = |g: usize| &plan.module_types[plan.groups[g].module_type];
    let mut voc_cold_max: f64 = 0.0;
    let mut max_system_v = f64::INFINITY;
    let mut isc_sum = 0.0;
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
            max_system_v = max_system_v.min(t.max_system_v);
        }
        voc_cold_max = voc_cold_max.max(voc);
        isc_sum += *n as f64 * isc;
    }
    if voc_cold_max > c.max_input_v {
        return Some("cold-voc");
    }
    if voc_cold_max > max_system_v {
        return Some("module-system-voltage");
    }
    if ISC_FACTOR * isc_sum > c.model.max_input_a() {
        return Some("input-current");
    }
    match &c.model {
        ControllerModel::Mppt { start_offset_v, .. }
            if voc_cold_max < battery_v + start_offset_v =>
        {
            Some("never-wakes")
        }
        ControllerModel::Pwm { .. } if voc_cold_max <= battery_v => Some("never-charges"),
        _ => None,
    }
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
