//! The interval loop, phase 2: for every layout, the array curve each controller input sees,
//! where the controller operates, and the energy balance (the loss steps).
//!
//! Substring curves depend only on (irradiance, cell temperature, module type), so each
//! distinct one is computed once per interval and shared by every module and every layout
//! (DEVELOPERS.md, invariants). Layouts run in parallel (rayon); each layout's arithmetic is the same
//! whether it runs alone or beside others, so results are identical bit for bit.

use rayon::prelude::*;

use crate::input::layout::Layout;
use crate::input::plan::Plan;
use crate::physics::battery::{BatterySpec, BatteryState, LoadProfile};
use crate::physics::controller::ControllerPowers;
use crate::physics::wiring::{
    array_curve, cable_resistance_ohm, string_curve, ArrayCurve, CurrentGrid, SubstringCurve,
};
use crate::sim::conditions::Conditions;
use crate::sim::curves::{all_interval_curves, interval_curves, IntervalCurves, ShadeScene};
use crate::sim::energy::{HourRow, LayoutEnergy, Step};

/// Conductor resistances of one layout at an air temperature, ohm: the string lead's,
/// returned, and each input's main run, written into `r_main` (reused between intervals).
fn cable_resistances(plan: &Plan, layout: &Layout, air_c: f64, r_main: &mut Vec<f64>) -> f64 {
    let t = air_c + plan.cables.conductor_rise_dk;
    let lead = &plan.cables.string_lead;
    r_main.clear();
    r_main.extend(layout.inputs.iter().map(|w| {
        let run = &plan.controllers[w.controller].main_run;
        cable_resistance_ohm(run.conductor, run.length_m, run.cross_section_mm2, t)
    }));
    cable_resistance_ohm(lead.conductor, lead.length_m, lead.cross_section_mm2, t)
}

/// Joule loss in the cables of one input at a terminal voltage, W: each string's current
/// (read off its curve at the combiner voltage) through its lead, and the array current
/// through the main run.
fn joule_loss_w(s: &Scratch, grid: &CurrentGrid, v_terminal: f64, r_lead: f64, r_main: f64) -> f64 {
    if v_terminal <= 0.0 {
        return 0.0;
    }
    let i = s.array.current_at(v_terminal);
    let v_comb = v_terminal + i * r_main;
    let currents = grid.currents();
    let mut leads = 0.0;
    for &j in &s.slot {
        let sv = &s.strings[j];
        // String voltage falls as its current rises: find the current at v_comb.
        let k = sv.partition_point(|&v| v > v_comb);
        let i_s = if k == 0 {
            0.0
        } else if k >= sv.len() {
            currents[sv.len() - 1]
        } else {
            let t = (sv[k - 1] - v_comb) / (sv[k - 1] - sv[k]);
            currents[k - 1] + t * (currents[k] - currents[k - 1])
        };
        leads += i_s * i_s * r_lead;
    }
    leads + i * i * r_main
}

/// Scratch buffers reused across intervals for one layout.
#[derive(Default)]
struct Scratch {
    /// Per distinct string: its sorted substring-curve indices.
    keys: Vec<Vec<u16>>,
    /// Per string of the input: which distinct string it is.
    slot: Vec<usize>,
    strings: Vec<Vec<f64>>,
    array: ArrayCurve,
}

/// Simulates one layout over all intervals given the shared curves.
fn simulate_layout(
    plan: &Plan,
    cond: &Conditions,
    curves: &[Option<IntervalCurves>],
    layout: &Layout,
    hourly: bool,
) -> LayoutEnergy {
    simulate_layout_with(plan, cond, curves, layout, hourly, true)
}

/// [`simulate_layout`], with the choice of rebuilding every array curve in the second pass
/// (`reuse_kept = false`) instead of reusing the first pass's, for the test that both agree.
fn simulate_layout_with(
    plan: &Plan,
    cond: &Conditions,
    curves: &[Option<IntervalCurves>],
    layout: &Layout,
    hourly: bool,
    reuse_kept: bool,
) -> LayoutEnergy {
    let mut e = LayoutEnergy {
        min_soc_frac: [f64::NAN; 12],
        ..LayoutEnergy::default()
    };
    if hourly {
        e.hourly.reserve(cond.intervals.len());
    }
    let mut awake = vec![false; layout.inputs.len()];
    let mut other_awake = vec![false; layout.inputs.len()];
    let other_models: Vec<_> = layout
        .inputs
        .iter()
        .map(|w| plan.controllers[w.controller].model.with_other_tracking())
        .collect();
    // The tracker comparison is for plans with partial shade (notebooks-free-docs/method-controller.md, issue on shading):
    // without shade the array has one maximum and both trackers agree.
    let compare_trackers = !plan.shade.is_empty() || !plan.geometry.is_empty();
    let mut scratch = Scratch::default();
    let used: Vec<usize> = layout
        .inputs
        .iter()
        .flat_map(|w| w.strings.iter().flatten().copied())
        .collect();
    let low_sun = plan.model.low_sun_elevation_deg;
    // With a battery model the year runs twice and the second pass is reported, so that the
    // result does not depend on the starting state of charge (notebooks-free-docs/method-battery.md).
    let spec = plan.battery.model.as_ref();
    let load = plan.consumption.as_ref().map(|c| &c.load);
    let mut state = spec.map(|b| b.initial_state());
    let passes = if spec.is_some() { 2 } else { 1 };
    let mut day = DayTrack::default();
    // Neither an input's array curve nor its cable loss depends on the battery: pass 1 keeps
    // them (one entry per input per sunlit interval) and pass 2 reuses them, so the second
    // pass costs only the controllers and the battery.
    let n_inputs = layout.inputs.len();
    let mut kept_curves: Vec<ArrayCurve> = Vec::new();
    let mut kept_cable_w: Vec<f64> = Vec::new();
    let mut r_main: Vec<f64> = Vec::with_capacity(n_inputs);
    for pass in 0..passes {
        let keep = reuse_kept && passes > 1 && pass == 0;
        let reuse = reuse_kept && pass > 0;
        let mut sunlit = 0usize;
        if pass > 0 {
            e = LayoutEnergy {
                min_soc_frac: [f64::NAN; 12],
                ..LayoutEnergy::default()
            };
            if hourly {
                e.hourly.reserve(cond.intervals.len());
            }
            day = DayTrack::default();
        }
        for (k, info) in cond.intervals.iter().enumerate() {
            let battery_v = match (spec, &state) {
                (Some(b), Some(s)) => b.charge_voltage_v(s),
                _ => plan.battery.charge_v,
            };
            let m = (info.month - 1) as usize;
            let wh = info.hours;
            year_add(&mut e.yearly, info.year, wh, 0.0);
            let Some(ic) = &curves[k] else {
                awake.iter_mut().for_each(|a| *a = false);
                other_awake.iter_mut().for_each(|a| *a = false);
                if hourly {
                    e.hourly.push(HourRow::default());
                }
                if let (Some(b), Some(st)) = (spec, state.as_mut()) {
                    settle(b, load, st, &mut e, &mut day, info, 0.0);
                }
                continue;
            };
            let potential_before = e.potential_wh[m];
            let sub_mpp_sum = book_light(plan, cond, ic, &used, k, &mut e);
            // The second pass reuses curves and cable losses that already include the cables.
            let r_lead = if reuse {
                0.0
            } else {
                cable_resistances(plan, layout, info.air_temp_c, &mut r_main)
            };
            // Cables: Joule loss in the string leads and the main run at the array's best terminal
            // point; the array maximum before cables is that best power plus this loss.
            let mut cable_w = 0.0;
            let mut powers = ControllerPowers::default();
            let mut any_awake = false;
            let sum = |a: &mut ControllerPowers, b: &ControllerPowers| {
                a.available_w += b.available_w;
                a.after_window_w += b.after_window_w;
                a.after_input_limit_w += b.after_input_limit_w;
                a.input_w += b.input_w;
                a.output_w += b.output_w;
            };
            for (wi, w) in layout.inputs.iter().enumerate() {
                let c = &plan.controllers[w.controller];
                let slot = sunlit * n_inputs + wi;
                if !reuse {
                    build_input_curves(plan, ic, w, r_lead, r_main[wi], &mut scratch);
                }
                let array = if reuse {
                    &kept_curves[slot]
                } else {
                    &scratch.array
                };
                let was_awake = awake[wi];
                let p = c
                    .model
                    .operate(array, battery_v, info.air_temp_c, &mut awake[wi]);
                if c.model.is_pwm() {
                    e.pwm_clamp_wh[m] += (p.available_w - p.after_window_w) * wh;
                }
                // The other tracker can only differ where the curve has several maxima (or its
                // wake state has already drifted); otherwise it settles on the same point.
                let alt = if !compare_trackers
                    || (other_awake[wi] == was_awake
                        && array.local_maxima(0.0, array.voc_v()).len() <= 1)
                {
                    other_awake[wi] = awake[wi];
                    p
                } else {
                    other_models[wi].operate(
                        array,
                        battery_v,
                        info.air_temp_c,
                        &mut other_awake[wi],
                    )
                };
                e.other_tracking_wh[m] += alt.output_w * wh;
                let joule_w = if reuse {
                    kept_cable_w[slot]
                } else {
                    joule_loss_w(&scratch, &ic.grid, p.available_v, r_lead, r_main[wi])
                };
                if keep {
                    kept_curves.push(scratch.array.clone());
                    kept_cable_w.push(joule_w);
                }
                cable_w += joule_w;
                e.book_input(wi, &p, joule_w, wh);
                any_awake |= p.awake;
                sum(&mut powers, &p);
            }
            sunlit += 1;
            book_controllers(&mut e, m, wh, &powers, sub_mpp_sum, cable_w);
            e.peak_charge_a = e.peak_charge_a.max(powers.output_w / battery_v);
            year_add(&mut e.yearly, info.year, 0.0, powers.output_w * wh);
            if any_awake {
                e.awake_h[m] += wh;
            }
            if hourly {
                e.hourly.push(HourRow {
                    potential_w: ((e.potential_wh[m] - potential_before) / wh) as f32,
                    available_w: powers.available_w as f32,
                    delivered_w: powers.output_w as f32,
                    harvest_w: powers.output_w as f32,
                    clipped_w: (powers.after_input_limit_w - powers.input_w) as f32,
                    awake: any_awake,
                });
            }
            let curtailed_wh = match (spec, state.as_mut()) {
                (Some(b), Some(st)) => {
                    settle(b, load, st, &mut e, &mut day, info, powers.output_w * wh)
                }
                _ => 0.0,
            };
            if info
                .sun_elevation_deg()
                .is_some_and(|el| el > 0.0 && el < low_sun)
            {
                e.low_sun_offered_wh[m] += powers.output_w * wh;
                e.low_sun_delivered_wh[m] += powers.output_w * wh - curtailed_wh;
            }
        }
        // The last day ends with the file.
        if let (Some(st), Some(_)) = (&state, day.day) {
            e.daily_soc_frac.push(st.soc_frac);
        }
    }
    e.unmet_days_mean = e.unmet_days.map(f64::from);
    e
}

/// Books the light on the wired modules in interval `k` (STC-efficiency DC equivalents): the
/// potential and the incidence, soiling, shading and temperature/low-light steps. Returns
/// the sum of the wired substrings' maximum powers, W.
fn book_light(
    plan: &Plan,
    cond: &Conditions,
    ic: &IntervalCurves,
    used: &[usize],
    k: usize,
    e: &mut LayoutEnergy,
) -> f64 {
    let info = &cond.intervals[k];
    let m = (info.month - 1) as usize;
    let wh = info.hours;
    let mut sub_mpp_sum = 0.0;
    for &mi in used {
        let module = &plan.modules[mi];
        let t = &plan.module_types[module.module_type];
        let g = &cond.groups[module.group];
        let scale = t.area_m2() * t.stc_efficiency_frac() * wh;
        let poa = g.poa[k].total_w_m2();
        let after_iam = g.after_iam_w_m2[k] as f64;
        let eff = g.effective[k].total_w_m2();
        let direct = g.effective[k].beam_w_m2 + g.effective[k].circumsolar_w_m2;
        let b = t.bypass_diodes as f64;
        let sky = g.effective[k].isotropic_w_m2 + g.effective[k].horizon_w_m2;
        let shaded: f64 = ic.blocked(mi).iter().map(|f| f * direct / b).sum::<f64>()
            + (1.0 - ic.diffuse_factor(mi)) * sky;
        e.potential_wh[m] += poa * scale;
        e.losses_wh[Step::Incidence][m] += (poa - after_iam) * scale;
        e.losses_wh[Step::Soiling][m] += (after_iam - eff) * scale;
        e.losses_wh[Step::Shading][m] += shaded * scale;
        let light_after_shade = (eff - shaded) * scale;
        let mpp: f64 = ic
            .module_subs(mi)
            .iter()
            .map(|&s| ic.curves[s as usize].mpp_w)
            .sum();
        e.losses_wh[Step::TemperatureLowLight][m] += light_after_shade - mpp * wh;
        sub_mpp_sum += mpp;
    }
    sub_mpp_sum
}

/// Books the electrical steps of one interval from the controllers' summed powers: mismatch
/// (substring maxima less the array's best and the cable loss), cables, window and start-up,
/// input limit, clipping, conversion, and what the controllers put out.
fn book_controllers(
    e: &mut LayoutEnergy,
    m: usize,
    wh: f64,
    powers: &ControllerPowers,
    sub_mpp_sum: f64,
    cable_w: f64,
) {
    e.losses_wh[Step::Mismatch][m] += (sub_mpp_sum - powers.available_w - cable_w) * wh;
    e.losses_wh[Step::Cables][m] += cable_w * wh;
    e.losses_wh[Step::WindowStartup][m] += (powers.available_w - powers.after_window_w) * wh;
    e.losses_wh[Step::InputLimit][m] += (powers.after_window_w - powers.after_input_limit_w) * wh;
    e.losses_wh[Step::Clipping][m] += (powers.after_input_limit_w - powers.input_w) * wh;
    e.losses_wh[Step::Conversion][m] += (powers.input_w - powers.output_w) * wh;
    e.delivered_wh[m] += powers.output_w * wh;
}

/// Adds hours and energy to the running per-year tally (intervals come in time order).
fn year_add(yearly: &mut Vec<(i32, f64, f64)>, year: i32, hours: f64, wh: f64) {
    match yearly.last_mut() {
        Some((y, h, e)) if *y == year => {
            *h += hours;
            *e += wh;
        }
        _ => yearly.push((year, hours, wh)),
    }
}

/// The day being tallied: its number, whether some load went unmet, the lowest state of charge.
#[derive(Default)]
struct DayTrack {
    day: Option<u32>,
    unmet: bool,
}

/// One interval of the battery: load from harvest first, then the battery; what the battery
/// cannot take is curtailed (the controllers throttle), what it cannot give is unmet.
/// Returns the energy a full battery turned away in the interval, Wh.
fn settle(
    spec: &BatterySpec,
    load: Option<&LoadProfile>,
    st: &mut BatteryState,
    e: &mut LayoutEnergy,
    day: &mut DayTrack,
    info: &crate::sim::conditions::IntervalInfo,
    harvest_wh: f64,
) -> f64 {
    let m = (info.month - 1) as usize;
    if day.day != Some(info.day_of_year) {
        if day.day.is_some() {
            e.daily_soc_frac.push(st.soc_frac);
        }
        *day = DayTrack {
            day: Some(info.day_of_year),
            unmet: false,
        };
    }
    let load_wh = load.map_or(0.0, |l| {
        l.wh_at(info.month, info.hour, info.weekend, info.hours)
    });
    let f = spec.step_at(st, harvest_wh, load_wh, info.hours, info.air_temp_c);
    e.cold_blocked_wh[m] += f.cold_blocked_wh;
    e.rate_unmet_wh[m] += f.rate_unmet_wh;
    if f.curtailed_wh > 0.0 {
        if let Some(row) = e.hourly.last_mut() {
            row.delivered_w -= (f.curtailed_wh / info.hours) as f32;
        }
    }
    e.losses_wh[Step::Curtailed][m] += f.curtailed_wh;
    e.delivered_wh[m] -= f.curtailed_wh;
    year_add(&mut e.yearly, info.year, 0.0, -f.curtailed_wh);
    e.load_served_wh[m] += f.load_from_harvest_wh + f.from_battery_wh;
    e.load_from_harvest_wh[m] += f.load_from_harvest_wh;
    e.unmet_wh[m] += f.unmet_wh;
    if f.unmet_wh > 0.0 && !day.unmet {
        day.unmet = true;
        e.unmet_days[m] += 1;
    }
    if e.min_soc_frac[m].is_nan() || st.soc_frac < e.min_soc_frac[m] {
        e.min_soc_frac[m] = st.soc_frac;
    }
    f.curtailed_wh
}

/// String curves (string leads included) and the array curve at the terminals (main run
/// included) of one input.
fn build_input_curves(
    plan: &Plan,
    ic: &IntervalCurves,
    w: &crate::input::layout::InputWiring,
    r_lead: f64,
    r_main: f64,
    s: &mut Scratch,
) {
    // Strings made of the same substring curves (in any order) have the same curve: build
    // each distinct one once and pass the same slice again, which `array_curve` then
    // interpolates once and counts with its multiplicity.
    s.keys.clear();
    s.slot.clear();
    let mut distinct = 0;
    for st in &w.strings {
        let mut key: Vec<u16> = st
            .iter()
            .flat_map(|&mi| ic.module_subs(mi).iter().copied())
            .collect();
        key.sort_unstable();
        let slot = match s.keys[..distinct].iter().position(|k| *k == key) {
            Some(j) => j,
            None => {
                if s.keys.len() <= distinct {
                    s.keys.push(Vec::new());
                }
                s.keys[distinct] = key;
                distinct += 1;
                distinct - 1
            }
        };
        s.slot.push(slot);
    }
    s.strings.resize_with(distinct, Vec::new);
    let blocking = plan.cables.blocking_diode_v;
    for j in 0..distinct {
        let subs: Vec<&SubstringCurve> = s.keys[j]
            .iter()
            .map(|&c| &ic.curves[c as usize].curve)
            .collect();
        string_curve(&subs, r_lead, blocking, &ic.grid, &mut s.strings[j]);
    }
    let with: Vec<&[f64]> = s.slot.iter().map(|&j| s.strings[j].as_slice()).collect();
    array_curve(&with, &ic.grid, r_main, &mut s.array);
}

/// The array curve each of a layout's controller inputs sees at its terminals in interval
/// `k` (cables included), with the input's controller index; `None` at night.
pub fn layout_curves_at(
    plan: &Plan,
    cond: &Conditions,
    layout: &Layout,
    k: usize,
) -> Option<Vec<(usize, ArrayCurve)>> {
    let ic = interval_curves(plan, cond, &ShadeScene::new(plan), k)?;
    let mut r_main = Vec::new();
    let r_lead = cable_resistances(plan, layout, cond.intervals[k].air_temp_c, &mut r_main);
    let mut scratch = Scratch::default();
    Some(
        layout
            .inputs
            .iter()
            .enumerate()
            .map(|(wi, w)| {
                build_input_curves(plan, &ic, w, r_lead, r_main[wi], &mut scratch);
                (w.controller, scratch.array.clone())
            })
            .collect(),
    )
}

/// How phase 2 runs.
#[derive(Clone, Copy, Default)]
pub struct RunOptions<'a> {
    /// Layouts on all cores (rayon); results are identical either way.
    pub parallel: bool,
    /// Keep one row per interval per layout (`LayoutEnergy::hourly`).
    pub hourly: bool,
    /// Called once per finished layout with the number of layouts in this run (progress
    /// display); must not affect results.
    pub on_layout_done: Option<&'a (dyn Fn(usize) + Sync)>,
}

/// One layout over every interval from shared curves, on the calling thread (the swap search
/// of module assignment, the re-simulation of a changed layout).
pub fn simulate_one(
    plan: &Plan,
    cond: &Conditions,
    curves: &[Option<IntervalCurves>],
    layout: &Layout,
    hourly: bool,
) -> LayoutEnergy {
    simulate_layout(plan, cond, curves, layout, hourly)
}

/// Every layout over every interval from shared curves (the combination half of phase 2).
pub fn simulate_layouts(
    plan: &Plan,
    cond: &Conditions,
    curves: &[Option<IntervalCurves>],
    layouts: &[&Layout],
    opts: RunOptions,
) -> Vec<LayoutEnergy> {
    let one = |l: &&Layout| {
        let e = simulate_layout(plan, cond, curves, l, opts.hourly);
        debug_assert!(
            e.all_finite(),
            "layout {}: a simulated figure is not finite",
            l.id
        );
        if let Some(done) = opts.on_layout_done {
            done(layouts.len());
        }
        e
    };
    if opts.parallel {
        layouts.par_iter().map(one).collect()
    } else {
        layouts.iter().map(one).collect()
    }
}

/// Runs phase 2 for every layout; `parallel = false` runs single-threaded (benchmarks,
/// checks). Both give identical results.
pub fn run(
    plan: &Plan,
    cond: &Conditions,
    layouts: &[&Layout],
    opts: RunOptions,
) -> Vec<LayoutEnergy> {
    let curves = all_interval_curves(plan, cond, opts.parallel);
    simulate_layouts(plan, cond, &curves, layouts, opts)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::commands::load::load;
    use crate::commands::PlanSource;
    use crate::input::layout;
    use crate::sim::conditions;

    /// The second pass's reuse of the first pass's array curves and cable losses is an
    /// optimisation only: results must be bit-identical to rebuilding them.
    /// Source: none needed, it is a self-consistency check (common practice, no source).
    #[test]
    fn reused_curves_give_the_same_bits_as_rebuilt_ones() {
        let loaded = load(&PlanSource::Demo).expect("demo loads");
        let plan = &loaded.plan;
        assert!(plan.battery.model.is_some(), "the demo has a battery model");
        let cond = conditions::phase1(plan, &loaded.weather, &loaded.site);
        let curves = all_interval_curves(plan, &cond, false);
        for layout in layout::listed(plan).iter().take(4) {
            let a = simulate_layout_with(plan, &cond, &curves, layout, true, true);
            let b = simulate_layout_with(plan, &cond, &curves, layout, true, false);
            assert_eq!(a, b, "{}", layout.display_name());
            assert!(a.delivered_wh.iter().sum::<f64>() > 0.0);
        }
    }
}
