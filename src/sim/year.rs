//! The interval loop, phase 2: for every layout, the array curve each controller input sees,
//! where the controller operates, and the energy balance (the loss steps).
//!
//! Substring curves depend only on (irradiance, cell temperature, module type), so each
//! distinct one is computed once per interval and shared by every module and every layout
//! (DEVELOPERS.md, invariants). Layouts run in parallel (rayon); each layout's arithmetic is the same
//! whether it runs alone or beside others, so results are identical bit for bit.
//!
//! Two paths: each layout on its own (`LayoutRun`, needed with a battery model, whose
//! charging voltage couples the inputs), and, at the plan's fixed charging voltage, every
//! distinct controller input once with the layouts composed from them (`simulate_shared`;
//! notebooks-free-docs/method-controller.md). Both read the curves held for the run or
//! computed block by block for a long weather file ([`CurveSet`]).

use rayon::prelude::*;

use crate::input::layout::Layout;
use crate::input::plan::Plan;
use crate::physics::battery::{BatterySpec, BatteryState, LoadProfile, WARM_UP_MAX_H};
use crate::physics::controller::{ControllerModel, ControllerPowers, CurveMaxima};
use crate::physics::wiring::{
    array_curve, cable_resistance_ohm, string_curve_of, ArrayCurve, CurrentGrid,
};
use crate::sim::conditions::Conditions;
use crate::sim::curves::{interval_curves, CurveSet, IntervalCurves, ShadeScene};
use crate::sim::energy::{HourRow, InputLosses, LayoutEnergy, Step};

/// Conductor resistances of one layout at an air temperature, ohm: the string lead's,
/// returned, and each input's main run, written into `r_main` (reused between intervals).
fn cable_resistances(plan: &Plan, layout: &Layout, air_c: f64, r_main: &mut Vec<f64>) -> f64 {
    r_main.clear();
    r_main.extend(
        layout
            .inputs
            .iter()
            .map(|w| main_run_ohm(plan, w.controller, air_c)),
    );
    lead_ohm(plan, air_c)
}

/// The main run's resistance of one controller at an air temperature, ohm.
fn main_run_ohm(plan: &Plan, controller: usize, air_c: f64) -> f64 {
    let t = air_c + plan.cables.conductor_rise_dk;
    let run = &plan.controllers[controller].main_run;
    cable_resistance_ohm(run.conductor, run.length_m, run.cross_section_mm2, t)
}

/// The string lead's resistance at an air temperature, ohm.
fn lead_ohm(plan: &Plan, air_c: f64) -> f64 {
    let t = air_c + plan.cables.conductor_rise_dk;
    let lead = &plan.cables.string_lead;
    cable_resistance_ohm(lead.conductor, lead.length_m, lead.cross_section_mm2, t)
}

/// The modules a layout wires, ascending.
fn wired_modules(layout: &Layout) -> Vec<usize> {
    let mut used: Vec<usize> = layout
        .inputs
        .iter()
        .flat_map(|w| w.strings.iter().flatten().copied())
        .collect();
    used.sort_unstable();
    used
}

/// Joule loss in the cables of one input at a terminal voltage, W: each string's current
/// (read off its curve at the combiner voltage) through its lead, and the array current
/// through the main run. The input's strings are the scratch's last built ones.
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

/// A hash map with a fast fixed hash, for the interval loop's small keys.
type FastMap<K, V> = std::collections::HashMap<K, V, foldhash::fast::FixedState>;

/// Scratch buffers reused across intervals: the string curves built in the current
/// interval, each distinct string once whichever input (or layout) asks for it, and the
/// array curve of the input built last.
#[derive(Default)]
struct Scratch {
    /// Built strings of this interval by their sorted substring-curve indices.
    index: FastMap<Vec<u16>, usize>,
    /// How many of `strings` (and `keys`) hold this interval's curves.
    built: usize,
    /// The key being looked up (no allocation once grown).
    key: Vec<u16>,
    /// Per string of the input built last: which of `strings` it is, in canonical order.
    slot: Vec<usize>,
    /// Each built string's key.
    keys: Vec<Vec<u16>>,
    strings: Vec<Vec<f64>>,
    array: ArrayCurve,
}

impl Scratch {
    /// Forgets the strings built so far: a new interval (new curves, new lead resistance).
    fn begin_interval(&mut self) {
        self.index.clear();
        self.built = 0;
    }
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
    let mut run = LayoutRun::new(plan, cond, layout, hourly);
    // Neither an input's array curve nor its cable loss depends on the battery: pass 1 keeps
    // them (one entry per input per sunlit interval) and pass 2 reuses them, so the second
    // pass costs only the controllers and the battery. Only when the warm-up covers the
    // whole file, so that memory does not grow with a warm-up over many years.
    let reuse_kept = reuse_kept && run.warm_start == 0;
    for pass in 0..run.passes {
        run.begin_pass(pass, reuse_kept);
        let from = run.pass_start(pass);
        for (k, ic) in curves.iter().enumerate().skip(from) {
            run.step(k, ic.as_ref());
        }
    }
    run.finish()
}

/// One layout's year in progress, interval by interval ([`LayoutRun::step`]), so that
/// layouts can also advance together block by block over curves computed for that block
/// only ([`simulate_layouts_streamed`]).
struct LayoutRun<'a> {
    plan: &'a Plan,
    cond: &'a Conditions,
    layout: &'a Layout,
    hourly: bool,
    e: LayoutEnergy,
    awake: Vec<bool>,
    other_awake: Vec<bool>,
    other_models: Vec<ControllerModel>,
    compare_trackers: bool,
    scratch: Scratch,
    used: Vec<usize>,
    state: Option<BatteryState>,
    day: DayTrack,
    /// Passes over the file: 2 with a battery model (the first warms the battery up and
    /// is not reported), 1 without.
    passes: usize,
    /// The first interval of the warm-up pass.
    warm_start: usize,
    /// The pass being run, and whether it keeps (first pass) or reuses (second pass) the
    /// array curves and cable losses.
    pass: usize,
    keep: bool,
    reuse: bool,
    sunlit: usize,
    kept_curves: Vec<ArrayCurve>,
    kept_cable_w: Vec<f64>,
    r_main: Vec<f64>,
    /// When asked for: the reported pass's controller output per interval, W, as the
    /// interval rows' `harvest_w` (what the battery sizing reads).
    harvest: Option<Vec<f32>>,
}

impl<'a> LayoutRun<'a> {
    fn new(plan: &'a Plan, cond: &'a Conditions, layout: &'a Layout, hourly: bool) -> Self {
        // With a battery model the year runs twice and the second pass is reported, so that
        // the result does not depend on the starting state of charge
        // (notebooks-free-docs/method-battery.md).
        let spec = plan.battery.model.as_ref();
        LayoutRun {
            plan,
            cond,
            layout,
            hourly,
            e: LayoutEnergy::default(),
            awake: vec![false; layout.inputs.len()],
            other_awake: vec![false; layout.inputs.len()],
            other_models: layout
                .inputs
                .iter()
                .map(|w| plan.controllers[w.controller].model.with_other_tracking())
                .collect(),
            // The tracker comparison is for plans with partial shade
            // (notebooks-free-docs/method-controller.md): without shade the array has one
            // maximum and both trackers agree.
            compare_trackers: compares_trackers(plan),
            scratch: Scratch::default(),
            used: wired_modules(layout),
            state: spec.map(|b| b.initial_state()),
            day: DayTrack::default(),
            passes: if spec.is_some() { 2 } else { 1 },
            // The warm-up pass runs the file's last year (all of a file of one year or
            // less): the state of charge it hands on depends on weeks, not years, of
            // weather, and a file of several years then costs one warm-up year instead of a
            // second pass over all of it.
            warm_start: warm_up_start(cond),
            pass: 0,
            keep: false,
            reuse: false,
            sunlit: 0,
            kept_curves: Vec::new(),
            kept_cable_w: Vec::new(),
            r_main: Vec::with_capacity(layout.inputs.len()),
            harvest: None,
        }
    }

    /// The first interval of a pass.
    fn pass_start(&self, pass: usize) -> usize {
        if pass + 1 < self.passes {
            self.warm_start
        } else {
            0
        }
    }

    /// Starts a pass: a fresh tally (the battery's state carries over).
    fn begin_pass(&mut self, pass: usize, reuse_kept: bool) {
        self.pass = pass;
        self.keep = reuse_kept && self.passes > 1 && pass == 0;
        self.reuse = reuse_kept && pass > 0;
        self.sunlit = 0;
        self.e = LayoutEnergy {
            min_soc_frac: [f64::NAN; 12],
            ..LayoutEnergy::default()
        };
        if self.hourly {
            self.e.hourly.reserve(self.cond.intervals.len());
        }
        if let Some(h) = self.harvest.as_mut() {
            h.clear();
        }
        self.day = DayTrack::default();
    }

    /// Asks for the reported pass's controller output per interval ([`LayoutRun::harvest`]).
    fn keep_harvest(&mut self) {
        self.harvest = Some(Vec::with_capacity(self.cond.intervals.len()));
    }

    /// Interval `k` with its curves (`None` at night).
    fn step(&mut self, k: usize, curves: Option<&IntervalCurves>) {
        let (plan, cond, layout) = (self.plan, self.cond, self.layout);
        let spec = plan.battery.model.as_ref();
        let load = plan.consumption.as_ref().map(|c| &c.load);
        let info = &cond.intervals[k];
        let battery_v = match (spec, &self.state) {
            (Some(b), Some(s)) => b.charge_voltage_v(s),
            _ => plan.battery.charge_v,
        };
        let m = (info.month - 1) as usize;
        let wh = info.hours;
        let e = &mut self.e;
        year_add(&mut e.yearly, info.year, wh, 0.0);
        let Some(ic) = curves else {
            self.awake.iter_mut().for_each(|a| *a = false);
            self.other_awake.iter_mut().for_each(|a| *a = false);
            if self.hourly {
                e.hourly.push(HourRow::default());
            }
            if let (Some(b), Some(st)) = (spec, self.state.as_mut()) {
                settle(b, load, st, e, &mut self.day, info, 0.0);
            }
            if let Some(h) = self.harvest.as_mut() {
                h.push(0.0);
            }
            return;
        };
        let potential_before = e.potential_wh[m];
        let sub_mpp_sum = book_light(e, m, &light_sums(plan, cond, ic, &self.used, k));
        // The second pass reuses curves and cable losses that already include the cables.
        let r_lead = if self.reuse {
            0.0
        } else {
            cable_resistances(plan, layout, info.air_temp_c, &mut self.r_main)
        };
        // Cables: Joule loss in the string leads and the main run at the array's best
        // terminal point; the array maximum before cables is that best power plus this loss.
        let n_inputs = layout.inputs.len();
        let mut cable_w = 0.0;
        let mut powers = ControllerPowers::default();
        let mut any_awake = false;
        self.scratch.begin_interval();
        for (wi, w) in layout.inputs.iter().enumerate() {
            let c = &plan.controllers[w.controller];
            let slot = self.sunlit * n_inputs + wi;
            if !self.reuse {
                build_input_curves(plan, ic, w, r_lead, self.r_main[wi], &mut self.scratch);
            }
            let array = if self.reuse {
                &self.kept_curves[slot]
            } else {
                &self.scratch.array
            };
            let (p, alt) = operate_both(
                &c.model,
                self.compare_trackers.then_some(&self.other_models[wi]),
                array,
                battery_v,
                info.air_temp_c,
                (&mut self.awake[wi], &mut self.other_awake[wi]),
            );
            if c.model.is_pwm() {
                e.pwm_clamp_wh[m] += (p.available_w - p.after_window_w) * wh;
            }
            e.other_tracking_wh[m] += alt.output_w * wh;
            let joule_w = if self.reuse {
                self.kept_cable_w[slot]
            } else {
                joule_loss_w(
                    &self.scratch,
                    &ic.grid,
                    p.available_v,
                    r_lead,
                    self.r_main[wi],
                )
            };
            if self.keep {
                self.kept_curves.push(self.scratch.array.clone());
                self.kept_cable_w.push(joule_w);
            }
            cable_w += joule_w;
            e.book_input(wi, &p, joule_w, wh);
            any_awake |= p.awake;
            add_powers(&mut powers, &p);
        }
        self.sunlit += 1;
        let sums = IntervalSums {
            powers: &powers,
            sub_mpp_sum,
            cable_w,
            any_awake,
            potential_before,
        };
        book_interval(e, info, &sums, battery_v, self.hourly);
        let curtailed_wh = match (spec, self.state.as_mut()) {
            (Some(b), Some(st)) => {
                settle(b, load, st, e, &mut self.day, info, powers.output_w * wh)
            }
            _ => 0.0,
        };
        if let Some(h) = self.harvest.as_mut() {
            h.push(powers.output_w as f32);
        }
        book_low_sun(
            e,
            info,
            plan.model.low_sun_elevation_deg,
            powers.output_w,
            curtailed_wh,
        );
    }

    /// Ends a pass: the last day ends with the file.
    fn end_pass(&mut self) {
        if let (Some(st), Some(_)) = (&self.state, self.day.day) {
            self.e.daily_soc_frac.push(st.soc_frac);
        }
    }

    /// The reported pass's year.
    fn finish(mut self) -> LayoutEnergy {
        self.end_pass();
        let mut e = self.e;
        e.unmet_days_mean = e.unmet_days.map(f64::from);
        e
    }
}

/// The first interval of the battery's warm-up pass: the start of the file's last
/// [`WARM_UP_MAX_H`] hours (0 for a file of one year or less), as the sizing search's
/// battery series does.
fn warm_up_start(cond: &Conditions) -> usize {
    let mut hours = 0.0;
    for (k, info) in cond.intervals.iter().enumerate().rev() {
        hours += info.hours;
        if hours > WARM_UP_MAX_H + 1e-6 {
            return k + 1;
        }
    }
    0
}

/// True when the plan has shade that can give an array curve several maxima, so that the
/// other tracking behaviour is simulated beside the planned one
/// (notebooks-free-docs/method-controller.md); without shade both settle on one point.
fn compares_trackers(plan: &Plan) -> bool {
    !plan.shade.is_empty() || !plan.geometry.is_empty()
}

/// One input's controller on its array curve, and the same controller with the other
/// tracking behaviour (`other`, `None` when the plan has no shade to make them differ), each
/// with its own wake state. The other tracker can only differ where the curve has several
/// maxima (or its wake state has already drifted); otherwise it settles on the same point.
fn operate_both(
    model: &ControllerModel,
    other: Option<&ControllerModel>,
    array: &ArrayCurve,
    battery_v: f64,
    air_c: f64,
    (awake, other_awake): (&mut bool, &mut bool),
) -> (ControllerPowers, ControllerPowers) {
    let was_awake = *awake;
    let maxima = CurveMaxima::of(array);
    let p = model.operate_with(array, &maxima, battery_v, air_c, awake);
    let alt = match other {
        Some(o) if *other_awake != was_awake || maxima.count() > 1 => {
            o.operate_with(array, &maxima, battery_v, air_c, other_awake)
        }
        _ => {
            *other_awake = *awake;
            p
        }
    };
    (p, alt)
}

/// Hands a finished layout's year on: checks that every figure is finite (debug builds)
/// and reports progress.
fn finished(e: LayoutEnergy, l: &Layout, opts: &RunOptions, layouts: usize) -> LayoutEnergy {
    debug_assert!(
        e.all_finite(),
        "layout {}: a simulated figure is not finite",
        l.id
    );
    if let Some(done) = opts.on_layout_done {
        done(layouts);
    }
    e
}

/// Adds one input's powers to the interval's sums (the fields the loss steps read).
fn add_powers(a: &mut ControllerPowers, b: &ControllerPowers) {
    a.available_w += b.available_w;
    a.after_window_w += b.after_window_w;
    a.after_input_limit_w += b.after_input_limit_w;
    a.input_w += b.input_w;
    a.output_w += b.output_w;
}

/// What the inputs of a layout gave in one sunlit interval, summed.
struct IntervalSums<'a> {
    powers: &'a ControllerPowers,
    sub_mpp_sum: f64,
    cable_w: f64,
    any_awake: bool,
    /// The month's potential before this interval was booked (for the interval row).
    potential_before: f64,
}

/// Books a sunlit interval's electrical steps, the peak charge current, the year's tally,
/// the awake hours and (when kept) the interval row.
fn book_interval(
    e: &mut LayoutEnergy,
    info: &crate::sim::conditions::IntervalInfo,
    x: &IntervalSums,
    battery_v: f64,
    hourly: bool,
) {
    let m = (info.month - 1) as usize;
    let wh = info.hours;
    let powers = x.powers;
    book_controllers(e, m, wh, powers, x.sub_mpp_sum, x.cable_w);
    e.peak_charge_a = e.peak_charge_a.max(powers.output_w / battery_v);
    year_add(&mut e.yearly, info.year, 0.0, powers.output_w * wh);
    if x.any_awake {
        e.awake_h[m] += wh;
    }
    if hourly {
        e.hourly.push(HourRow {
            potential_w: ((e.potential_wh[m] - x.potential_before) / wh) as f32,
            available_w: powers.available_w as f32,
            delivered_w: powers.output_w as f32,
            harvest_w: powers.output_w as f32,
            clipped_w: (powers.after_input_limit_w - powers.input_w) as f32,
            awake: x.any_awake,
        });
    }
}

/// Books the low-sun energy of an interval (offered, and delivered after what a full battery
/// turned away).
fn book_low_sun(
    e: &mut LayoutEnergy,
    info: &crate::sim::conditions::IntervalInfo,
    low_sun_deg: f64,
    output_w: f64,
    curtailed_wh: f64,
) {
    if info
        .sun_elevation_deg()
        .is_some_and(|el| el > 0.0 && el < low_sun_deg)
    {
        let m = (info.month - 1) as usize;
        e.low_sun_offered_wh[m] += output_w * info.hours;
        e.low_sun_delivered_wh[m] += output_w * info.hours - curtailed_wh;
    }
}

/// The light on a set of wired modules in one interval (STC-efficiency DC equivalents, Wh):
/// the potential and the incidence, soiling, shading and temperature/low-light steps, and
/// the sum of the modules' substring maximum powers, W.
#[derive(Clone, Copy, Default)]
struct LightSums {
    potential_wh: f64,
    incidence_wh: f64,
    soiling_wh: f64,
    shading_wh: f64,
    temperature_low_light_wh: f64,
    sub_mpp_w: f64,
}

/// The light on the modules `used` (in ascending order, so that a set of modules sums the
/// same bits in every layout) in sunlit interval `k`.
fn light_sums(
    plan: &Plan,
    cond: &Conditions,
    ic: &IntervalCurves,
    used: &[usize],
    k: usize,
) -> LightSums {
    let wh = cond.intervals[k].hours;
    let mut x = LightSums::default();
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
        x.potential_wh += poa * scale;
        x.incidence_wh += (poa - after_iam) * scale;
        x.soiling_wh += (after_iam - eff) * scale;
        x.shading_wh += shaded * scale;
        let light_after_shade = (eff - shaded) * scale;
        let mpp: f64 = ic
            .module_subs(mi)
            .iter()
            .map(|&s| ic.curves[s as usize].mpp_w)
            .sum();
        x.temperature_low_light_wh += light_after_shade - mpp * wh;
        x.sub_mpp_w += mpp;
    }
    x
}

/// Books an interval's light ([`light_sums`]) in month `m`; returns the substrings' summed
/// maximum power, W.
fn book_light(e: &mut LayoutEnergy, m: usize, x: &LightSums) -> f64 {
    e.potential_wh[m] += x.potential_wh;
    e.losses_wh[Step::Incidence][m] += x.incidence_wh;
    e.losses_wh[Step::Soiling][m] += x.soiling_wh;
    e.losses_wh[Step::Shading][m] += x.shading_wh;
    e.losses_wh[Step::TemperatureLowLight][m] += x.temperature_low_light_wh;
    x.sub_mpp_w
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
/// included) of one input, into `s` (its strings in `s.slot`, its curve in `s.array`).
fn build_input_curves(
    plan: &Plan,
    ic: &IntervalCurves,
    w: &crate::input::layout::InputWiring,
    r_lead: f64,
    r_main: f64,
    s: &mut Scratch,
) {
    resolve_strings(plan, ic, w, r_lead, s);
    build_array(ic, r_main, s);
}

/// The string curves of one input (string leads included), into `s.slot`.
///
/// Strings made of the same substring curves (in any order) have the same curve: each
/// distinct one is built once per interval ([`Scratch::begin_interval`]) and the same
/// slice passed again, which `array_curve` then interpolates once and counts with its
/// multiplicity. The input's strings are put in a canonical order (by their sorted
/// substring-curve indices), so that the array's sums come out the same, bit for bit,
/// whatever order the layout lists them in and whatever was built before.
fn resolve_strings(
    plan: &Plan,
    ic: &IntervalCurves,
    w: &crate::input::layout::InputWiring,
    r_lead: f64,
    s: &mut Scratch,
) {
    s.slot.clear();
    let blocking = plan.cables.blocking_diode_v;
    for st in &w.strings {
        s.key.clear();
        s.key
            .extend(st.iter().flat_map(|&mi| ic.module_subs(mi).iter().copied()));
        s.key.sort_unstable();
        let slot = match s.index.get(s.key.as_slice()) {
            Some(&j) => j,
            None => {
                let j = s.built;
                s.built += 1;
                if s.strings.len() < s.built {
                    s.strings.push(Vec::new());
                    s.keys.push(Vec::new());
                }
                string_curve_of(
                    s.key.iter().map(|&c| &ic.curves[c as usize].curve),
                    r_lead,
                    blocking,
                    &ic.grid,
                    &mut s.strings[j],
                );
                s.keys[j].clone_from(&s.key);
                s.index.insert(s.key.clone(), j);
                j
            }
        };
        s.slot.push(slot);
    }
    let keys = &s.keys;
    s.slot.sort_unstable_by(|&a, &b| keys[a].cmp(&keys[b]));
}

/// The array curve at the terminals (main run included) of the strings in `s.slot`.
fn build_array(ic: &IntervalCurves, r_main: f64, s: &mut Scratch) {
    with_slices(&s.strings, &s.slot, |with| {
        array_curve(with, &ic.grid, r_main, &mut s.array)
    });
}

/// Calls `f` with the listed curves as slices, on the stack for up to 16 of them.
fn with_slices<R>(curves: &[Vec<f64>], slots: &[usize], f: impl FnOnce(&[&[f64]]) -> R) -> R {
    const ON_STACK: usize = 16;
    if slots.len() <= ON_STACK {
        let mut a: [&[f64]; ON_STACK] = [&[]; ON_STACK];
        for (x, &j) in a.iter_mut().zip(slots) {
            *x = &curves[j];
        }
        f(&a[..slots.len()])
    } else {
        let v: Vec<&[f64]> = slots.iter().map(|&j| curves[j].as_slice()).collect();
        f(&v)
    }
}

/// One controller input's part of one sunlit interval, kept for one block of intervals so
/// that every layout with this input reuses it.
#[derive(Clone, Copy, Default)]
struct InputStep {
    available_w: f64,
    after_window_w: f64,
    after_input_limit_w: f64,
    input_w: f64,
    output_w: f64,
    joule_w: f64,
    /// The output with the other tracking behaviour.
    alt_output_w: f64,
    awake: bool,
}

impl InputStep {
    fn powers(&self) -> ControllerPowers {
        ControllerPowers {
            available_w: self.available_w,
            after_window_w: self.after_window_w,
            after_input_limit_w: self.after_input_limit_w,
            input_w: self.input_w,
            output_w: self.output_w,
            awake: self.awake,
            ..ControllerPowers::default()
        }
    }
}

/// What one distinct controller input carries from one block of intervals to the next.
#[derive(Clone, Copy, Default)]
struct InputState {
    awake: bool,
    other_awake: bool,
    /// The input's own loss tally (`InputLosses::book`).
    losses: InputLosses,
}

/// Intervals per block of the shared path: each distinct input's steps are kept for one
/// block only, so memory does not grow with the length of the weather file.
const SHARED_BLOCK: usize = crate::sim::curves::BLOCK;

/// What every block of the shared path reads, worked out once per run.
#[derive(Clone, Copy)]
struct SharedRun<'a> {
    plan: &'a Plan,
    cond: &'a Conditions,
    /// Per controller: its class ([`controller_classes`]).
    controller_class: &'a [usize],
    /// Per controller: its model with the other tracking behaviour.
    other_models: &'a [ControllerModel],
    /// Look for inputs alike within an interval (not needed without shade when alike
    /// inputs were merged before the run).
    interval_cache: bool,
}

/// Runs some distinct controller inputs over one block's sunlit intervals `sunlit` (each
/// with whether a night came before it; `blk` holds the curves of the block starting at
/// interval `start`) at the
/// plan's fixed charging voltage (a plan without a battery model): each input's array
/// curve, where its controller operates, its cable loss, exactly as
/// [`simulate_layout_with`] does for each input of a layout. Writes input `j`'s step of
/// the block's `s`-th sunlit interval to `out[j * SHARED_BLOCK + s]`. The string curves of
/// an interval are built once for all these inputs.
fn run_inputs_block(
    run: &SharedRun,
    (blk, start): (&[Option<IntervalCurves>], usize),
    sunlit: &[(usize, bool)],
    inputs: &[&crate::input::layout::InputWiring],
    states: &mut [InputState],
    out: &mut [InputStep],
) {
    let SharedRun {
        plan,
        cond,
        controller_class: class,
        other_models: others,
        interval_cache,
    } = *run;
    let compare_trackers = compares_trackers(plan);
    let battery_v = plan.battery.charge_v;
    let mut scratch = Scratch::default();
    // Inputs that are the same this interval (controllers alike, the same string curves,
    // the same wake states) give the same step: each is worked out once per interval.
    let mut done: FastMap<Vec<u32>, usize> = FastMap::default();
    let mut results: Vec<(InputStep, ControllerPowers, bool, bool)> = Vec::new();
    let mut key: Vec<u32> = Vec::new();
    // `after_night`: a night before this interval put every controller to sleep.
    for (s, &(k, after_night)) in sunlit.iter().enumerate() {
        let Some(ic) = &blk[k - start] else { continue };
        let info = &cond.intervals[k];
        let r_lead = lead_ohm(plan, info.air_temp_c);
        scratch.begin_interval();
        done.clear();
        results.clear();
        for (j, (w, st)) in inputs.iter().zip(states.iter_mut()).enumerate() {
            if after_night {
                st.awake = false;
                st.other_awake = false;
            }
            resolve_strings(plan, ic, w, r_lead, &mut scratch);
            key.clear();
            key.push(class[w.controller] as u32);
            key.push(u32::from(st.awake) | u32::from(st.other_awake) << 1);
            key.extend(scratch.slot.iter().map(|&x| x as u32));
            let seen = if interval_cache {
                done.get(key.as_slice()).copied()
            } else {
                None
            };
            let r = match seen {
                Some(r) => r,
                None => {
                    let c = &plan.controllers[w.controller];
                    let r_main = main_run_ohm(plan, w.controller, info.air_temp_c);
                    build_array(ic, r_main, &mut scratch);
                    let (mut awake, mut other_awake) = (st.awake, st.other_awake);
                    let (p, alt) = operate_both(
                        &c.model,
                        compare_trackers.then_some(&others[w.controller]),
                        &scratch.array,
                        battery_v,
                        info.air_temp_c,
                        (&mut awake, &mut other_awake),
                    );
                    let joule_w = joule_loss_w(&scratch, &ic.grid, p.available_v, r_lead, r_main);
                    let step = InputStep {
                        available_w: p.available_w,
                        after_window_w: p.after_window_w,
                        after_input_limit_w: p.after_input_limit_w,
                        input_w: p.input_w,
                        output_w: p.output_w,
                        joule_w,
                        alt_output_w: alt.output_w,
                        awake: p.awake,
                    };
                    results.push((step, p, awake, other_awake));
                    if interval_cache {
                        done.insert(key.clone(), results.len() - 1);
                    }
                    results.len() - 1
                }
            };
            let (step, p, awake, other_awake) = &results[r];
            st.awake = *awake;
            st.other_awake = *other_awake;
            st.losses.book(p, step.joule_w, info.hours);
            out[j * SHARED_BLOCK + s] = *step;
        }
    }
}

/// What makes two controller inputs alike in every interval: the controller's class, then
/// the strings (each its modules' classes, sorted), sorted.
fn input_signature(
    w: &crate::input::layout::InputWiring,
    controller_class: &[usize],
    module_class: &[usize],
) -> Vec<usize> {
    let mut strings: Vec<Vec<usize>> = w
        .strings
        .iter()
        .map(|st| {
            let mut c: Vec<usize> = st.iter().map(|&mi| module_class[mi]).collect();
            c.sort_unstable();
            c
        })
        .collect();
    strings.sort_unstable();
    let mut key = vec![controller_class[w.controller], strings.len()];
    for st in strings {
        key.push(st.len());
        key.extend(st);
    }
    key
}

/// Each controller's class: the index of the first controller with the same model and the
/// same main run resistance (inputs on alike controllers with alike strings behave alike).
fn controller_classes(plan: &Plan) -> Vec<usize> {
    let alike = |a: &crate::input::plan::ControllerInput,
                 b: &crate::input::plan::ControllerInput| {
        a.model == b.model
            && a.main_run.conductor == b.main_run.conductor
            && a.main_run.length_m == b.main_run.length_m
            && a.main_run.cross_section_mm2 == b.main_run.cross_section_mm2
    };
    (0..plan.controllers.len())
        .map(|c| {
            (0..=c)
                .find(|&d| alike(&plan.controllers[d], &plan.controllers[c]))
                .unwrap_or(c)
        })
        .collect()
}

/// What a layout of the shared path needs besides its energy: its distinct inputs, the
/// modules it wires, which inputs are PWM.
struct Composed<'a> {
    layout: &'a Layout,
    /// Per input: which distinct input it is.
    inputs: Vec<usize>,
    /// Which distinct set of wired modules the layout has.
    used: usize,
    pwm: Vec<bool>,
}

/// Books one block of intervals (its range and its inputs' steps) of a layout from its inputs' steps: the same
/// bookings, in the same order, as [`simulate_layout_with`] without a battery model, so the
/// result is identical bit for bit.
fn compose_block(
    plan: &Plan,
    cond: &Conditions,
    blk: &[Option<IntervalCurves>],
    block: (std::ops::Range<usize>, &[InputStep], &[LightSums]),
    l: &Composed,
    e: &mut LayoutEnergy,
    hourly: bool,
) {
    let low_sun = plan.model.low_sun_elevation_deg;
    let battery_v = plan.battery.charge_v;
    let (range, steps, light) = block;
    let start = range.start;
    let mut s = 0usize;
    for k in range {
        let info = &cond.intervals[k];
        let m = (info.month - 1) as usize;
        let wh = info.hours;
        year_add(&mut e.yearly, info.year, wh, 0.0);
        if blk[k - start].is_none() {
            if hourly {
                e.hourly.push(HourRow::default());
            }
            continue;
        }
        let potential_before = e.potential_wh[m];
        let sub_mpp_sum = book_light(e, m, &light[l.used * SHARED_BLOCK + s]);
        let mut cable_w = 0.0;
        let mut powers = ControllerPowers::default();
        let mut any_awake = false;
        for (wi, &j) in l.inputs.iter().enumerate() {
            let st = &steps[j * SHARED_BLOCK + s];
            let p = st.powers();
            if l.pwm[wi] {
                e.pwm_clamp_wh[m] += (p.available_w - p.after_window_w) * wh;
            }
            e.other_tracking_wh[m] += st.alt_output_w * wh;
            cable_w += st.joule_w;
            any_awake |= st.awake;
            add_powers(&mut powers, &p);
        }
        s += 1;
        let sums = IntervalSums {
            powers: &powers,
            sub_mpp_sum,
            cable_w,
            any_awake,
            potential_before,
        };
        book_interval(e, info, &sums, battery_v, hourly);
        book_low_sun(e, info, low_sun, powers.output_w, 0.0);
    }
}

/// Every layout of a plan without a battery model from shared per-input work: each
/// distinct controller input (the same controller and the same strings in the same order)
/// is simulated once, and each layout sums its inputs' steps
/// (notebooks-free-docs/method-controller.md, "Inputs shared between layouts"). The
/// intervals stream through in blocks of [`SHARED_BLOCK`]: the inputs' steps are kept for
/// one block, then every layout books it.
fn simulate_shared(
    plan: &Plan,
    cond: &Conditions,
    curves: &CurveSet,
    layouts: &[&Layout],
    opts: RunOptions,
) -> Vec<LayoutEnergy> {
    // Inputs alike in every interval (alike controllers, strings of interchangeable modules)
    // are one distinct input, run once. Streamed curves are not swept for the classes
    // first: each module is its own class, and inputs alike in an interval still share the
    // work of that interval.
    let module_class = match curves.held() {
        Some(held) => crate::sim::curves::module_classes(plan, held),
        None => (0..plan.modules.len()).collect(),
    };
    let controller_class = controller_classes(plan);
    let mut index: FastMap<Vec<usize>, usize> = FastMap::default();
    let mut distinct: Vec<&crate::input::layout::InputWiring> = Vec::new();
    let mut used_index: FastMap<Vec<usize>, usize> = FastMap::default();
    let mut used_sets: Vec<Vec<usize>> = Vec::new();
    let mut composed: Vec<Composed> = layouts
        .iter()
        .map(|l| {
            let used = wired_modules(l);
            let next = used_sets.len();
            let used = *used_index.entry(used).or_insert_with_key(|u| {
                used_sets.push(u.clone());
                next
            });
            Composed {
                layout: l,
                inputs: l
                    .inputs
                    .iter()
                    .map(|w| {
                        let key = input_signature(w, &controller_class, &module_class);
                        *index.entry(key).or_insert_with(|| {
                            distinct.push(w);
                            distinct.len() - 1
                        })
                    })
                    .collect(),
                used,
                pwm: l
                    .inputs
                    .iter()
                    .map(|w| plan.controllers[w.controller].model.is_pwm())
                    .collect(),
            }
        })
        .collect();
    // Inputs that differ only by shade are the same in every unshaded interval: put them
    // side by side (by their signature with each module's group for its class), so that
    // they fall in the same task and its interval cache works each such interval out once.
    let group_of: Vec<usize> = plan.modules.iter().map(|m| m.group).collect();
    let by_group: Vec<Vec<usize>> = distinct
        .iter()
        .map(|w| input_signature(w, &controller_class, &group_of))
        .collect();
    let mut order: Vec<usize> = (0..distinct.len()).collect();
    order.sort_by(|&a, &b| by_group[a].cmp(&by_group[b]).then(a.cmp(&b)));
    let mut moved_to = vec![0; distinct.len()];
    for (new, &old) in order.iter().enumerate() {
        moved_to[old] = new;
    }
    let distinct: Vec<&crate::input::layout::InputWiring> =
        order.iter().map(|&old| distinct[old]).collect();
    for c in &mut composed {
        c.inputs.iter_mut().for_each(|j| *j = moved_to[*j]);
    }
    // Without shade, inputs alike in every interval were merged above (when the curves are
    // held): no interval cache then, it would never find anything.
    let interval_cache = compares_trackers(plan) || curves.held().is_none();
    let other_models: Vec<ControllerModel> = plan
        .controllers
        .iter()
        .map(|c| c.model.with_other_tracking())
        .collect();
    let shared = SharedRun {
        plan,
        cond,
        controller_class: &controller_class,
        other_models: &other_models,
        interval_cache,
    };
    let n = cond.intervals.len();
    let mut energies: Vec<LayoutEnergy> = layouts
        .iter()
        .map(|_| {
            let mut e = LayoutEnergy {
                min_soc_frac: [f64::NAN; 12],
                ..LayoutEnergy::default()
            };
            if opts.hourly {
                e.hourly.reserve(n);
            }
            e
        })
        .collect();
    let mut states = vec![InputState::default(); distinct.len()];
    let mut steps = vec![InputStep::default(); distinct.len() * SHARED_BLOCK];
    let mut light = vec![LightSums::default(); used_sets.len() * SHARED_BLOCK];
    // Several tasks per core, so that the cores finish a block together.
    let tasks = if opts.parallel {
        4 * rayon::current_num_threads()
    } else {
        1
    };
    let per_task = distinct.len().div_ceil(tasks).max(1);
    let mut sunlit: Vec<(usize, bool)> = Vec::with_capacity(SHARED_BLOCK);
    let mut any_sunlit = false;
    let mut reported = 0usize;
    // Whether the interval before the block was night (none before the first).
    let mut night_before = true;
    curves.sweep(0..n, |start, blk| {
        let end = start + blk.len();
        sunlit.clear();
        for (j, ic) in blk.iter().enumerate() {
            if ic.is_some() {
                sunlit.push((start + j, night_before));
            }
            night_before = ic.is_none();
        }
        any_sunlit |= !sunlit.is_empty();
        let run = |((ws, sts), out): (
            (&[&crate::input::layout::InputWiring], &mut [InputState]),
            &mut [InputStep],
        )| { run_inputs_block(&shared, (blk, start), &sunlit, ws, sts, out) };
        if opts.parallel {
            distinct
                .par_chunks(per_task)
                .zip(states.par_chunks_mut(per_task))
                .zip(steps.par_chunks_mut(per_task * SHARED_BLOCK))
                .for_each(run);
        } else {
            distinct
                .chunks(per_task)
                .zip(states.chunks_mut(per_task))
                .zip(steps.chunks_mut(per_task * SHARED_BLOCK))
                .for_each(run);
        }
        let sums = |(used, out): (&Vec<usize>, &mut [LightSums])| {
            for (x, &(k, _)) in out.iter_mut().zip(&sunlit) {
                if let Some(ic) = &blk[k - start] {
                    *x = light_sums(plan, cond, ic, used, k);
                }
            }
        };
        if opts.parallel {
            used_sets
                .par_iter()
                .zip(light.par_chunks_mut(SHARED_BLOCK))
                .for_each(sums);
        } else {
            used_sets
                .iter()
                .zip(light.chunks_mut(SHARED_BLOCK))
                .for_each(sums);
        }
        let book = |(e, l): (&mut LayoutEnergy, &Composed)| {
            compose_block(
                plan,
                cond,
                blk,
                (start..end, &steps, &light),
                l,
                e,
                opts.hourly,
            )
        };
        if opts.parallel {
            energies
                .par_iter_mut()
                .zip(composed.par_iter())
                .for_each(book);
        } else {
            energies.iter_mut().zip(composed.iter()).for_each(book);
        }
        // Progress in proportion to the intervals done.
        if let Some(done) = opts.on_layout_done {
            let due = layouts.len() * end / n.max(1);
            for _ in reported..due {
                done(layouts.len());
            }
            reported = due.max(reported);
        }
    });
    for (e, l) in energies.iter_mut().zip(&composed) {
        if any_sunlit {
            e.inputs = l.inputs.iter().map(|&j| states[j].losses).collect();
        }
        e.unmet_days_mean = e.unmet_days.map(f64::from);
        debug_assert!(
            e.all_finite(),
            "layout {}: a simulated figure is not finite",
            l.layout.id
        );
    }
    energies
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
    scratch.begin_interval();
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
/// of module assignment, the re-simulation of a changed layout, the sizing searches).
pub fn simulate_one(
    plan: &Plan,
    cond: &Conditions,
    curves: &CurveSet,
    layout: &Layout,
    hourly: bool,
) -> LayoutEnergy {
    match curves.held() {
        Some(held) => simulate_layout(plan, cond, held, layout, hourly),
        None => {
            let opts = RunOptions {
                parallel: false,
                hourly,
                on_layout_done: None,
            };
            simulate_streamed(plan, cond, curves, &[layout], opts, false)
                .pop()
                .map(|(e, _)| e)
                .unwrap_or_default()
        }
    }
}

/// Every layout over every interval from shared curves (the combination half of phase 2).
pub fn simulate_layouts(
    plan: &Plan,
    cond: &Conditions,
    curves: &CurveSet,
    layouts: &[&Layout],
    opts: RunOptions,
) -> Vec<LayoutEnergy> {
    // Without a battery model every input charges at the plan's fixed voltage, so an input's
    // energy depends on its own strings only: share the work between layouts.
    if plan.battery.model.is_none() && layouts.len() > 1 {
        return simulate_shared(plan, cond, curves, layouts, opts);
    }
    let Some(held) = curves.held() else {
        return simulate_streamed(plan, cond, curves, layouts, opts, false)
            .into_iter()
            .map(|(e, _)| e)
            .collect();
    };
    let one = |l: &&Layout| {
        let e = simulate_layout(plan, cond, held, l, opts.hourly);
        finished(e, l, &opts, layouts.len())
    };
    if opts.parallel {
        layouts.par_iter().map(one).collect()
    } else {
        layouts.iter().map(one).collect()
    }
}

/// Layouts one by one (battery model or not) advancing together block by block over curves
/// computed for that block only: the warm-up pass over its block range, then the reported
/// pass. With `harvest`, each layout's controller output per interval is kept too (the
/// interval rows' `harvest_w`, for the battery sizing).
pub fn simulate_streamed(
    plan: &Plan,
    cond: &Conditions,
    curves: &CurveSet,
    layouts: &[&Layout],
    opts: RunOptions,
    harvest: bool,
) -> Vec<(LayoutEnergy, Option<Vec<f32>>)> {
    let n = cond.intervals.len();
    let mut runs: Vec<LayoutRun> = layouts
        .iter()
        .map(|l| {
            let mut r = LayoutRun::new(plan, cond, l, opts.hourly);
            if harvest {
                r.keep_harvest();
            }
            r
        })
        .collect();
    let Some(first) = runs.first() else {
        return Vec::new();
    };
    let passes = first.passes;
    let starts: Vec<usize> = (0..passes).map(|p| first.pass_start(p)).collect();
    // Progress in proportion to the intervals swept, over both passes.
    let total: usize = starts.iter().map(|&from| n - from).sum();
    let mut swept = 0usize;
    let mut reported = 0usize;
    let quiet = RunOptions {
        on_layout_done: None,
        ..opts
    };
    for (pass, &from) in starts.iter().enumerate() {
        runs.iter_mut().for_each(|r| r.begin_pass(pass, false));
        curves.sweep(from..n, |start, blk| {
            let advance = |r: &mut LayoutRun| {
                for (j, ic) in blk.iter().enumerate() {
                    r.step(start + j, ic.as_ref());
                }
            };
            if opts.parallel {
                runs.par_iter_mut().for_each(advance);
            } else {
                runs.iter_mut().for_each(advance);
            }
            swept += blk.len();
            if let Some(done) = opts.on_layout_done {
                let due = layouts.len() * swept / total.max(1);
                for _ in reported..due {
                    done(layouts.len());
                }
                reported = due.max(reported);
            }
        });
    }
    runs.into_iter()
        .map(|mut r| {
            let h = r.harvest.take();
            let l = r.layout;
            (finished(r.finish(), l, &quiet, layouts.len()), h)
        })
        .collect()
}

/// Every layout charging at the plan's fixed voltage (`battery.charge_v`), without the
/// battery model even when the plan has one: the screening of plans with a battery model
/// (notebooks-free-docs/method-battery.md, "Screening"). Shared per-input work, streamed.
pub fn simulate_fixed_voltage(
    plan: &Plan,
    cond: &Conditions,
    curves: &CurveSet,
    layouts: &[&Layout],
    opts: RunOptions,
) -> Vec<LayoutEnergy> {
    simulate_shared(plan, cond, curves, layouts, opts)
}

/// Runs phase 2 for every layout; `parallel = false` runs single-threaded (benchmarks,
/// checks). Both give identical results.
pub fn run(
    plan: &Plan,
    cond: &Conditions,
    layouts: &[&Layout],
    opts: RunOptions,
) -> Vec<LayoutEnergy> {
    let curves = CurveSet::for_run(plan, cond, opts.parallel);
    simulate_layouts(plan, cond, &curves, layouts, opts)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::commands::load::load;
    use crate::commands::PlanSource;
    use crate::input::layout;
    use crate::sim::conditions;
    use crate::sim::curves::all_interval_curves;

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

    /// Curves computed block by block (the path of weather files longer than a year of 10-minute data) give
    /// the same bits as curves held for the whole run: forced on one-year files, for layouts
    /// with a battery model (the demo, each layout on its own) and without (the shared
    /// per-input path, unshaded and shaded fixtures). Source: self-consistency (common
    /// practice, no source).
    #[test]
    fn streamed_curves_give_the_same_bits_as_held_ones() {
        use crate::design::candidates::candidate_layouts;
        use crate::design::rules::design_temperatures;
        let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures");
        for source in [
            PlanSource::Demo,
            PlanSource::File(root.join("plan_20_modules.toml")),
            PlanSource::File(root.join("plan_assign_shaded.toml")),
        ] {
            let loaded = load(&source).expect("plan loads");
            let plan = &loaded.plan;
            let cond = conditions::phase1(plan, &loaded.weather, &loaded.site);
            let temps = design_temperatures(plan, &loaded.weather);
            let all = if plan.enumerate_all {
                candidate_layouts(plan, &temps).expect("enumerates").layouts
            } else {
                layout::listed(plan)
            };
            let layouts: Vec<&Layout> = all.iter().take(12).collect();
            let held = CurveSet::Held(all_interval_curves(plan, &cond, true));
            let streamed = CurveSet::Streamed {
                plan,
                cond: &cond,
                scene: ShadeScene::new(plan),
                parallel: true,
            };
            let opts = RunOptions {
                parallel: true,
                hourly: true,
                on_layout_done: None,
            };
            let a = simulate_layouts(plan, &cond, &held, &layouts, opts);
            let b = simulate_layouts(plan, &cond, &streamed, &layouts, opts);
            assert_eq!(a.len(), layouts.len());
            for ((x, y), l) in a.iter().zip(&b).zip(&layouts) {
                assert!(x.delivered_wh.iter().sum::<f64>() > 0.0);
                // Debug text compares every field, the NaN of an unset lowest charge included.
                assert_eq!(
                    format!("{x:?}"),
                    format!("{y:?}"),
                    "{}: {}",
                    plan.source.display(),
                    l.display_name()
                );
            }
            // The kept harvest is the interval rows' harvest.
            if plan.battery.model.is_some() {
                let kept = simulate_streamed(plan, &cond, &streamed, &layouts[..1], opts, true);
                let (e, h) = &kept[0];
                let rows: Vec<f32> = e.hourly.iter().map(|r| r.harvest_w).collect();
                assert_eq!(h.as_deref(), Some(rows.as_slice()));
            }
        }
    }

    /// Light classes 2 % wide (the default) against near-exact ones (1e-6) on the shaded
    /// fixture with obstacles, a horizon and scheduled shade: every month's delivered energy
    /// of every enumerated layout within 0.05 %. Source: the bound stated in
    /// notebooks-free-docs/method-shade.md (measured at most 0.01 % on the 24-module obstacle
    /// bench plan; the tolerance is five times that, common practice, no source).
    #[test]
    fn light_classes_change_no_month_by_more_than_half_a_permille() {
        use crate::design::candidates::candidate_layouts;
        use crate::design::rules::design_temperatures;
        use crate::sim::curves::all_interval_curves_in;
        let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("tests/fixtures/plan_assign_shaded.toml");
        let loaded = load(&PlanSource::File(path)).expect("fixture loads");
        let plan = &loaded.plan;
        let cond = conditions::phase1(plan, &loaded.weather, &loaded.site);
        let coarse = all_interval_curves_in(plan, &cond, &ShadeScene::new(plan), true);
        let fine =
            all_interval_curves_in(plan, &cond, &ShadeScene::with_light_step(plan, 1e-6), true);
        let count = |c: &[Option<IntervalCurves>]| -> usize {
            c.iter().flatten().map(|x| x.curves.len()).sum()
        };
        assert!(
            count(&coarse) < count(&fine),
            "classes merge substrings: {} vs {}",
            count(&coarse),
            count(&fine)
        );
        let temps = design_temperatures(plan, &loaded.weather);
        let layouts = candidate_layouts(plan, &temps).expect("enumerates").layouts;
        assert!(!layouts.is_empty(), "the fixture enumerates layouts");
        for l in &layouts {
            let a = simulate_layout(plan, &cond, &coarse, l, false);
            let b = simulate_layout(plan, &cond, &fine, l, false);
            for m in 0..12 {
                let (x, y) = (a.delivered_wh[m], b.delivered_wh[m]);
                assert!(y > 1000.0, "{} month {m} has energy", l.display_name());
                assert!(
                    (x - y).abs() <= 5e-4 * y,
                    "{} month {}: {x} Wh with classes, {y} Wh near-exact",
                    l.display_name(),
                    m + 1
                );
            }
        }
    }

    /// Shared per-input work is an optimisation only: every layout's year from its inputs'
    /// shared runs must equal, bit for bit, the layout simulated on its own. Checked on an
    /// unshaded plan of three groups on two inputs and on the shaded plan with obstacles
    /// (where the other tracker is compared too). Source: self-consistency (common
    /// practice, no source).
    #[test]
    fn shared_inputs_give_the_same_bits_as_layouts_alone() {
        use crate::design::candidates::candidate_layouts;
        use crate::design::rules::design_temperatures;
        for name in ["plan_20_modules.toml", "plan_assign_shaded.toml"] {
            let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
                .join("tests/fixtures")
                .join(name);
            let loaded = load(&PlanSource::File(path)).expect("fixture loads");
            let plan = &loaded.plan;
            assert!(
                plan.battery.model.is_none(),
                "{name} charges at a fixed voltage"
            );
            let cond = conditions::phase1(plan, &loaded.weather, &loaded.site);
            let curves = all_interval_curves(plan, &cond, true);
            let temps = design_temperatures(plan, &loaded.weather);
            let all = candidate_layouts(plan, &temps).expect("enumerates").layouts;
            let layouts: Vec<&Layout> = all.iter().take(24).collect();
            assert!(layouts.len() > 1, "{name} has several layouts");
            let opts = RunOptions {
                parallel: true,
                hourly: true,
                on_layout_done: None,
            };
            let held = CurveSet::Held(all_interval_curves(plan, &cond, true));
            let shared = simulate_shared(plan, &cond, &held, &layouts, opts);
            for (l, e) in layouts.iter().zip(&shared) {
                let alone = simulate_layout(plan, &cond, &curves, l, true);
                assert!(alone.delivered_wh.iter().sum::<f64>() > 0.0);
                // Debug text compares every field, the NaN of an unset lowest charge included.
                assert_eq!(
                    format!("{e:?}"),
                    format!("{alone:?}"),
                    "{name}: {}",
                    l.display_name()
                );
            }
        }
    }
}
