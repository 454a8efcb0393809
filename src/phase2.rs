//! The interval loop, phase 2: for every layout, the array curve each controller input sees,
//! where the controller operates, and where the energy goes.
//!
//! Substring curves depend only on (irradiance, cell temperature, module type), so each
//! distinct one is computed once per interval and shared by every module and every layout
//! (ARCHITECTURE.md). Layouts run in parallel (rayon); each layout's arithmetic is the same
//! whether it runs alone or beside others, so results are identical bit for bit.

use rayon::prelude::*;

use crate::layouts::Layout;
use crate::physics::battery::{BatterySpec, BatteryState, LoadProfile};
use crate::physics::controller::ControllerPowers;
use crate::physics::diode::OperatingParams;
use crate::physics::shade::{
    obstacle_sky_view_loss, shaded_fractions_prepared, sky_view_ratio, HorizonProfile,
    PreparedModule, PreparedObstacle, SunDirection,
};
use crate::physics::wiring::{
    array_curve, cable_resistance_ohm, string_curve, substring_curve, substring_knees_a,
    ArrayCurve, CurrentGrid, SubstringCurve,
};
use crate::plan::HorizonRef;
use crate::plan::Plan;
use crate::simulate::Conditions;

/// Points on each interval's shared current grid.
pub const GRID_POINTS: usize = crate::physics::wiring::GRID_POINTS_DEFAULT;

/// The loss steps of notebooks-free-docs/method-accounting.md, in order.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Step {
    Incidence,
    Soiling,
    Shading,
    TemperatureLowLight,
    Mismatch,
    Cables,
    WindowStartup,
    InputLimit,
    Clipping,
    Conversion,
    /// Harvest the battery could not take (full) beyond what the load used.
    Curtailed,
}

/// Number of loss steps.
pub const STEPS: usize = 11;

impl Step {
    pub const ALL: [Step; STEPS] = [
        Step::Incidence,
        Step::Soiling,
        Step::Shading,
        Step::TemperatureLowLight,
        Step::Mismatch,
        Step::Cables,
        Step::WindowStartup,
        Step::InputLimit,
        Step::Clipping,
        Step::Conversion,
        Step::Curtailed,
    ];

    /// Key used in JSON and CSV.
    pub fn key(self) -> &'static str {
        match self {
            Step::Incidence => "incidence",
            Step::Soiling => "soiling",
            Step::Shading => "shading",
            Step::TemperatureLowLight => "temperature_low_light",
            Step::Mismatch => "mismatch",
            Step::Cables => "cables",
            Step::WindowStartup => "window_startup",
            Step::InputLimit => "input_limit",
            Step::Clipping => "clipping",
            Step::Conversion => "conversion",
            Step::Curtailed => "curtailed",
        }
    }
}

/// One layout's energy over the run, month by month (January first), Wh.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct LayoutEnergy {
    /// Plane-of-array light on the wired modules × their STC efficiency (the DC potential).
    pub potential_wh: [f64; 12],
    /// Energy lost at each step (index = `Step::ALL` order). A negative value is a gain
    /// (cells colder than 25 °C).
    pub losses_wh: [[f64; 12]; STEPS],
    /// Delivered by the controllers to the battery and the load (without a battery model:
    /// to the battery at its fixed charging voltage).
    pub delivered_wh: [f64; 12],
    /// With a load: the load served (from harvest and battery), Wh.
    pub load_served_wh: [f64; 12],
    /// With a load: the part of it served straight from the harvest, Wh.
    pub load_from_harvest_wh: [f64; 12],
    /// With a load: load the battery could not serve (at its floor), Wh.
    pub unmet_wh: [f64; 12],
    /// With a load: days with some unmet load.
    pub unmet_days: [u32; 12],
    /// With a battery model: the lowest state of charge reached, fraction (NaN without).
    pub min_soc_frac: [f64; 12],
    /// With a battery model: state of charge at the end of each local day (for the plot).
    pub daily_soc_frac: Vec<f64>,
    /// Delivered while the sun was low (above 0°, below the plan's threshold).
    pub low_sun_wh: [f64; 12],
    /// Hours with at least one controller input awake.
    pub awake_h: [f64; 12],
    /// Delivered with the other MPPT tracking behaviour on every MPPT input (local instead of
    /// global, or global instead of local); PWM inputs count as they are.
    pub other_tracking_wh: [f64; 12],
    /// One row per weather interval, when asked for (`--hourly`); empty otherwise.
    pub hourly: Vec<HourRow>,
    /// Delivered per calendar year of the weather file: (year, hours covered, Wh).
    pub yearly: Vec<(i32, f64, f64)>,
}

impl LayoutEnergy {
    /// Annual totals of the calendar years the weather file covers completely, kWh.
    pub fn complete_year_totals_kwh(&self) -> Vec<f64> {
        self.yearly
            .iter()
            .filter(|(_, h, _)| *h >= 8759.0)
            .map(|(_, _, wh)| wh / 1000.0)
            .collect()
    }
}

/// One layout in one interval, for the hourly export (powers are interval means, W).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct HourRow {
    /// Light on the wired modules × STC efficiency.
    pub potential_w: f32,
    /// Best power the array offers at the controller terminals.
    pub available_w: f32,
    /// Delivered to the battery and the load (after curtailment by a full battery).
    pub delivered_w: f32,
    /// What the controllers offered before any curtailment.
    pub harvest_w: f32,
    /// Lost to output clipping.
    pub clipped_w: f32,
    /// At least one controller input awake.
    pub awake: bool,
}

impl LayoutEnergy {
    pub fn annual_delivered_kwh(&self) -> f64 {
        self.delivered_wh.iter().sum::<f64>() / 1000.0
    }

    pub fn monthly_kwh(&self) -> [f64; 12] {
        self.delivered_wh.map(|w| w / 1000.0)
    }

    /// One step's loss in one month (index 0 = January), Wh.
    pub fn step_total_wh_month(&self, step: Step, month_index: usize) -> f64 {
        self.losses_wh[step as usize][month_index]
    }

    pub fn step_total_wh(&self, step_index: usize) -> f64 {
        self.losses_wh[step_index].iter().sum()
    }
}

/// One distinct substring state in an interval.
struct SubCurve {
    curve: SubstringCurve,
    mpp_w: f64,
}

/// Per-interval shared state: the current grid and every distinct substring curve.
pub struct IntervalCurves {
    grid: CurrentGrid,
    curves: Vec<SubCurve>,
    /// For each module, for each substring: index into `curves`.
    module_subs: Vec<Vec<u16>>,
    /// For each module, for each substring: shaded (blocked) fraction of direct light.
    blocked: Vec<Vec<f64>>,
    /// For each module: factor on its isotropic sky and horizon-band light.
    diffuse_factor: Vec<f64>,
}

/// Beam and circumsolar fraction blocked by the plan's shade schedule for a module's
/// substring in an interval (several rules combine multiplicatively on what passes).
fn schedule_blocked(plan: &Plan, module: usize, sub: usize, month: u32, hour: u32) -> f64 {
    let mut pass = 1.0;
    for r in &plan.shade {
        if r.module == module
            && r.substrings.contains(&sub)
            && r.months.contains(&month)
            && r.hours.contains(&hour)
        {
            pass *= 1.0 - r.beam_blocked_frac;
        }
    }
    1.0 - pass
}

/// Builds every distinct substring curve of one interval. `None` when no light reaches any
/// module (night).
fn interval_curves(
    plan: &Plan,
    cond: &Conditions,
    scene: &ShadeScene,
    k: usize,
) -> Option<IntervalCurves> {
    let info = &cond.intervals[k];
    let sun = info.sun?;
    if cond
        .groups
        .iter()
        .all(|g| g.effective[k].total_w_m2() <= 0.0)
    {
        return None;
    }
    let sun_dir = SunDirection::from_position(&sun.position);
    let (sun_el, sun_az) = (sun.position.elevation_deg(), sun.position.azimuth_deg);
    // Distinct states: (group, blocked fraction, diffuse factor), both rounded to 1e-4 so that
    // modules in practically the same light share one curve.
    let q = |x: f64| (x * 1e4).round() as i64;
    let mut keys: Vec<(usize, i64, i64)> = Vec::new();
    let mut params: Vec<OperatingParams> = Vec::new();
    let mut module_subs = Vec::with_capacity(plan.modules.len());
    let mut blocked_all = Vec::with_capacity(plan.modules.len());
    let mut near = [0.0; crate::physics::shade::MAX_SUBSTRINGS as usize];
    for (m, module) in plan.modules.iter().enumerate() {
        let t = &plan.module_types[module.module_type];
        let g = &cond.groups[module.group];
        let ms = &scene.modules[m];
        let parts = &g.effective[k];
        let direct = parts.beam_w_m2 + parts.circumsolar_w_m2;
        let sky = parts.isotropic_w_m2 + parts.horizon_w_m2;
        let ground = parts.ground_w_m2;
        let b = t.bypass_diodes as usize;
        // Far shade: the sun below this module's horizon line blocks beam and circumsolar.
        let far = ms
            .horizon
            .and_then(|h| plan.geometry_horizon(h))
            .is_some_and(|h| h.blocks(sun_el, sun_az));
        near[..b].iter_mut().for_each(|x| *x = 0.0);
        if !far && direct > 0.0 {
            if let Some(pm) = &ms.placed {
                shaded_fractions_prepared(pm, &scene.obstacles, &sun_dir, &mut near[..b]);
            }
        }
        let mut subs = Vec::with_capacity(b);
        let mut blocked = Vec::with_capacity(b);
        for (j, near_j) in near[..b].iter().enumerate() {
            let sched = schedule_blocked(plan, m, j, info.month, info.hour);
            let f = if far {
                1.0
            } else {
                1.0 - (1.0 - near_j) * (1.0 - sched)
            };
            let key = (module.group, q(f), q(ms.diffuse_factor));
            let idx = match keys.iter().position(|x| *x == key) {
                Some(i) => i,
                None => {
                    let e = (direct * (1.0 - f) + sky * ms.diffuse_factor + ground).max(0.0);
                    params.push(t.substring.at(e, g.cell_temp_c[k]));
                    keys.push(key);
                    keys.len() - 1
                }
            };
            subs.push(idx as u16);
            blocked.push(f);
        }
        module_subs.push(subs);
        blocked_all.push(blocked);
    }
    let i_max = params.iter().map(|p| p.il_a).fold(0.0, f64::max);
    if i_max <= 0.0 {
        return None;
    }
    let knees: Vec<f64> = params
        .iter()
        .zip(&keys)
        .flat_map(|(p, (group, _, _))| {
            let drop = plan.module_types[plan.groups[*group].module_type].bypass_drop_v;
            substring_knees_a(p, drop)
        })
        .collect();
    let grid = CurrentGrid::with_knees(i_max * 1.02, GRID_POINTS, &knees);
    let curves = params
        .into_iter()
        .zip(&keys)
        .map(|(p, (group, _, _))| {
            let drop = plan.module_types[plan.groups[*group].module_type].bypass_drop_v;
            SubCurve {
                curve: substring_curve(&p, drop, &grid),
                mpp_w: p.max_power_point().p,
            }
        })
        .collect();
    Some(IntervalCurves {
        grid,
        curves,
        module_subs,
        blocked: blocked_all,
        diffuse_factor: scene.modules.iter().map(|m| m.diffuse_factor).collect(),
    })
}

/// One module's fixed shading data, prepared once per run.
struct ModuleShade {
    /// Which horizon applies (see `Plan::geometry_horizon`).
    horizon: Option<HorizonRef>,
    /// The module's placement, when its group has one and there are obstacles.
    placed: Option<PreparedModule>,
    /// Factor on the isotropic sky and horizon-band light: the horizon's sky-view ratio less
    /// the obstacles' share of the module's sky view (1 without either).
    diffuse_factor: f64,
}

/// Horizon profiles and obstacles, prepared once per run and shared by every interval.
pub struct ShadeScene {
    modules: Vec<ModuleShade>,
    obstacles: Vec<PreparedObstacle>,
}

impl ShadeScene {
    /// Prepares the plan's geometry: horizon per module, placements, diffuse factors
    /// (numerical sky-dome integrals, once per module).
    pub fn new(plan: &Plan) -> ShadeScene {
        let geo = &plan.geometry;
        let obstacles_raw: Vec<_> = geo.obstacles.iter().map(|(_, o)| *o).collect();
        let obstacles = obstacles_raw.iter().map(|o| o.prepare()).collect();
        let modules = plan
            .modules
            .iter()
            .enumerate()
            .map(|(m, module)| {
                let g = &plan.groups[module.group];
                let horizon = plan.horizon_ref(m, module.group);
                let profile = horizon.and_then(|h| plan.geometry_horizon(h));
                let placement = geo.placements.get(m).copied().flatten();
                let diffuse_factor = match (placement, obstacles_raw.is_empty()) {
                    (Some(p), false) => {
                        let flat = HorizonProfile::flat();
                        obstacle_sky_view_loss(&p, &obstacles_raw, profile.unwrap_or(&flat))
                            .map_or(1.0, |l| l.isotropic_factor())
                    }
                    _ => profile.map_or(1.0, |h| sky_view_ratio(g.tilt_deg, g.azimuth_deg, h)),
                };
                ModuleShade {
                    horizon,
                    placed: placement
                        .filter(|_| !obstacles_raw.is_empty())
                        .map(|p| p.prepare()),
                    diffuse_factor,
                }
            })
            .collect();
        ShadeScene { modules, obstacles }
    }
}

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
            // Light bookkeeping over the wired modules (STC-efficiency DC equivalents).
            let mut sub_mpp_sum = 0.0;
            let potential_before = e.potential_wh[m];
            for &mi in &used {
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
                let shaded: f64 = ic.blocked[mi].iter().map(|f| f * direct / b).sum::<f64>()
                    + (1.0 - ic.diffuse_factor[mi]) * sky;
                e.potential_wh[m] += poa * scale;
                e.losses_wh[0][m] += (poa - after_iam) * scale;
                e.losses_wh[1][m] += (after_iam - eff) * scale;
                e.losses_wh[2][m] += shaded * scale;
                let light_after_shade = (eff - shaded) * scale;
                let mpp: f64 = ic.module_subs[mi]
                    .iter()
                    .map(|&s| ic.curves[s as usize].mpp_w)
                    .sum();
                e.losses_wh[3][m] += light_after_shade - mpp * wh;
                sub_mpp_sum += mpp;
            }
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
                let p = c.model.operate(array, battery_v, &mut awake[wi]);
                // The other tracker can only differ where the curve has several maxima (or its
                // wake state has already drifted); otherwise it settles on the same point.
                let alt = if !compare_trackers
                    || (other_awake[wi] == was_awake
                        && array.local_maxima(0.0, array.voc_v()).len() <= 1)
                {
                    other_awake[wi] = awake[wi];
                    p
                } else {
                    other_models[wi].operate(array, battery_v, &mut other_awake[wi])
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
                any_awake |= p.awake;
                sum(&mut powers, &p);
            }
            sunlit += 1;
            e.losses_wh[4][m] += (sub_mpp_sum - powers.available_w - cable_w) * wh;
            e.losses_wh[5][m] += cable_w * wh;
            e.losses_wh[6][m] += (powers.available_w - powers.after_window_w) * wh;
            e.losses_wh[7][m] += (powers.after_window_w - powers.after_input_limit_w) * wh;
            e.losses_wh[8][m] += (powers.after_input_limit_w - powers.input_w) * wh;
            e.losses_wh[9][m] += (powers.input_w - powers.output_w) * wh;
            e.delivered_wh[m] += powers.output_w * wh;
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
            if let Some(el) = info.sun_elevation_deg() {
                if el > 0.0 && el < low_sun {
                    e.low_sun_wh[m] += powers.output_w * wh;
                }
            }
            if let (Some(b), Some(st)) = (spec, state.as_mut()) {
                settle(b, load, st, &mut e, &mut day, info, powers.output_w * wh);
            }
        }
        // The last day ends with the file.
        if let (Some(st), Some(_)) = (&state, day.day) {
            e.daily_soc_frac.push(st.soc_frac);
        }
    }
    e
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
fn settle(
    spec: &BatterySpec,
    load: Option<&LoadProfile>,
    st: &mut BatteryState,
    e: &mut LayoutEnergy,
    day: &mut DayTrack,
    info: &crate::simulate::IntervalInfo,
    harvest_wh: f64,
) {
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
    let f = spec.step(st, harvest_wh, load_wh, info.hours);
    if f.curtailed_wh > 0.0 {
        if let Some(row) = e.hourly.last_mut() {
            row.delivered_w -= (f.curtailed_wh / info.hours) as f32;
        }
    }
    e.losses_wh[10][m] += f.curtailed_wh;
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
}

/// String curves (string leads included) and the array curve at the terminals (main run
/// included) of one input.
fn build_input_curves(
    plan: &Plan,
    ic: &IntervalCurves,
    w: &crate::layouts::InputWiring,
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
            .flat_map(|&mi| ic.module_subs[mi].iter().copied())
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

/// Per module and month (January first): direct light (beam and circumsolar, after incidence
/// losses and soiling) reaching the module, and the part of it that shade blocks, Wh/m².
pub fn direct_light_lost(
    plan: &Plan,
    cond: &Conditions,
    curves: &[Option<IntervalCurves>],
) -> Vec<[(f64, f64); 12]> {
    let mut out = vec![[(0.0, 0.0); 12]; plan.modules.len()];
    for (k, info) in cond.intervals.iter().enumerate() {
        let Some(ic) = &curves[k] else { continue };
        let m = (info.month - 1) as usize;
        for (mi, module) in plan.modules.iter().enumerate() {
            let parts = &cond.groups[module.group].effective[k];
            let direct = (parts.beam_w_m2 + parts.circumsolar_w_m2) * info.hours;
            let b = ic.blocked[mi].len().max(1) as f64;
            let lost: f64 = ic.blocked[mi].iter().map(|f| f * direct / b).sum();
            out[mi][m].0 += direct;
            out[mi][m].1 += lost;
        }
    }
    out
}

/// Every interval's distinct substring curves (the curve-solving half of phase 2).
pub fn all_interval_curves(
    plan: &Plan,
    cond: &Conditions,
    parallel: bool,
) -> Vec<Option<IntervalCurves>> {
    let scene = ShadeScene::new(plan);
    if parallel {
        (0..cond.intervals.len())
            .into_par_iter()
            .map(|k| interval_curves(plan, cond, &scene, k))
            .collect()
    } else {
        (0..cond.intervals.len())
            .map(|k| interval_curves(plan, cond, &scene, k))
            .collect()
    }
}

/// How phase 2 runs.
#[derive(Clone, Copy, Default)]
pub struct RunOptions<'a> {
    /// Layouts on all cores (rayon); results are identical either way.
    pub parallel: bool,
    /// Keep one row per interval per layout (`LayoutEnergy::hourly`).
    pub hourly: bool,
    /// Called once per finished layout (progress display); must not affect results.
    pub on_layout_done: Option<&'a (dyn Fn() + Sync)>,
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
        if let Some(done) = opts.on_layout_done {
            done();
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
    use crate::{layouts, load, simulate, PlanSource};

    /// The second pass's reuse of the first pass's array curves and cable losses is an
    /// optimisation only: results must be bit-identical to rebuilding them.
    /// Source: none needed, it is a self-consistency check (common practice, no source).
    #[test]
    fn reused_curves_give_the_same_bits_as_rebuilt_ones() {
        let loaded = load(&PlanSource::Demo).expect("demo loads");
        let plan = &loaded.plan;
        assert!(plan.battery.model.is_some(), "the demo has a battery model");
        let cond = simulate::phase1(plan, &loaded.weather, &loaded.site);
        let curves = all_interval_curves(plan, &cond, false);
        for layout in layouts::listed(plan).iter().take(4) {
            let a = simulate_layout_with(plan, &cond, &curves, layout, true, true);
            let b = simulate_layout_with(plan, &cond, &curves, layout, true, false);
            assert_eq!(a, b, "{}", layout.display_name());
            assert!(a.delivered_wh.iter().sum::<f64>() > 0.0);
        }
    }
}
