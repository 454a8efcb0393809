//! The curves shared by every layout in one interval: the light on each substring (with
//! horizon, obstacle and schedule shade) and each distinct substring curve on one current
//! grid. Substring curves depend only on (irradiance, cell temperature, module type), so each
//! distinct one is computed once per interval and reused by every module and every layout.

use rayon::prelude::*;

use crate::input::plan::HorizonRef;
use crate::input::plan::Plan;
use crate::physics::diode::OperatingParams;
use crate::physics::shade::{
    obstacle_sky_view_loss, shaded_fractions_prepared, sky_view_ratio, HorizonProfile,
    PreparedModule, PreparedObstacle, SunDirection,
};
use crate::physics::wiring::{substring_curve, substring_knees_a, CurrentGrid, SubstringCurve};
use crate::sim::conditions::Conditions;

/// Points on each interval's shared current grid.
pub const GRID_POINTS: usize = crate::physics::wiring::GRID_POINTS_DEFAULT;

/// One distinct substring state in an interval.
pub(crate) struct SubCurve {
    pub(crate) curve: SubstringCurve,
    pub(crate) mpp_w: f64,
}

/// Per-interval shared state: the current grid and every distinct substring curve.
///
/// The per-substring data of the wired modules are stored flat (one allocation each per
/// interval, none per module) and sliced by the run's [`ModuleSlots`]; a module no layout
/// wires has an empty slice and costs nothing per interval.
pub struct IntervalCurves {
    pub(crate) grid: CurrentGrid,
    pub(crate) curves: Vec<SubCurve>,
    /// For each wired module, for each substring: index into `curves`.
    subs: Vec<u16>,
    /// For each wired module, for each substring: shaded (blocked) fraction of direct light.
    blocked: Vec<f64>,
    /// Where each module's substrings sit in `subs` and `blocked`, and the diffuse factors.
    slots: std::sync::Arc<ModuleSlots>,
}

/// Fixed for a run: each module's range in the flat per-interval arrays (empty for a module
/// that is not wired) and its diffuse factor.
pub(crate) struct ModuleSlots {
    /// `offsets[m]..offsets[m + 1]` is module `m`'s range.
    offsets: Vec<u32>,
    /// For each module: factor on its isotropic sky and horizon-band light.
    diffuse_factor: Vec<f64>,
}

impl IntervalCurves {
    fn range(&self, mi: usize) -> std::ops::Range<usize> {
        self.slots.offsets[mi] as usize..self.slots.offsets[mi + 1] as usize
    }

    /// True when module `mi` is wired in this run (its data are kept).
    pub(crate) fn is_wired(&self, mi: usize) -> bool {
        !self.range(mi).is_empty()
    }

    /// Module `mi`'s substring curves, as indices into `curves`.
    pub(crate) fn module_subs(&self, mi: usize) -> &[u16] {
        debug_assert!(self.is_wired(mi), "module {mi} is not wired in this run");
        &self.subs[self.range(mi)]
    }

    /// Module `mi`'s blocked fraction of direct light, per substring.
    pub(crate) fn blocked(&self, mi: usize) -> &[f64] {
        debug_assert!(self.is_wired(mi), "module {mi} is not wired in this run");
        &self.blocked[self.range(mi)]
    }

    /// Module `mi`'s factor on its isotropic sky and horizon-band light.
    pub(crate) fn diffuse_factor(&self, mi: usize) -> f64 {
        self.slots.diffuse_factor[mi]
    }
}

/// Relative width of the light classes that decide which substrings share a curve: the
/// substrings of one orientation group whose light falls in one class (2 % wide on a
/// logarithmic scale) take one curve, computed at their mean light
/// (notebooks-free-docs/method-shade.md, "Which substrings share a curve": measured effect at
/// most 0.01 % of a month's energy).
pub const LIGHT_STEP_FRAC: f64 = 0.02;

/// The light class of an effective irradiance, W/m²: its logarithm in steps of
/// [`LIGHT_STEP_FRAC`], so that the class width is the same share of the light at dawn as at
/// noon. Darkness (0 or below) is one class of its own.
fn light_key(e_w_m2: f64, step_frac: f64) -> i64 {
    if e_w_m2 <= 0.0 {
        return i64::MIN;
    }
    (e_w_m2.ln() / step_frac.ln_1p()).round() as i64
}

/// The substrings of one light class in an interval: the light its curve is computed at is
/// their mean (exactly the shared value when all of them have the same light, as on an
/// unshaded group), so that the class's power is right to first order in the spread.
struct LightClass {
    first: f64,
    sum: f64,
    count: u32,
    all_same: bool,
}

impl LightClass {
    fn new(e: f64) -> Self {
        LightClass {
            first: e,
            sum: e,
            count: 1,
            all_same: true,
        }
    }

    fn add(&mut self, e: f64) {
        self.sum += e;
        self.count += 1;
        self.all_same &= e == self.first;
    }

    fn value(&self) -> f64 {
        if self.all_same {
            self.first
        } else {
            self.sum / f64::from(self.count)
        }
    }
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
pub fn interval_curves(
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
    // Distinct states: (group, blocked share of the direct light to 1e-4, the light reaching
    // the substring in classes LIGHT_STEP_FRAC wide). Substrings of one group whose direct
    // light is blocked alike and whose light differs by less than a class share one curve,
    // at their mean light: modules that differ only in how much sky an obstacle hides from
    // them (a few per cent of the diffuse light) no longer each need a curve, while shade's
    // timing, which module assignment reads from the curves, stays exact
    // (notebooks-free-docs/method-shade.md, "Which substrings share a curve").
    let mut keys: Vec<(usize, i64, i64)> = Vec::new();
    let mut lights: Vec<LightClass> = Vec::new();
    let total = *scene.slots.offsets.last().unwrap_or(&0) as usize;
    let mut module_subs = Vec::with_capacity(total);
    let mut blocked_all = Vec::with_capacity(total);
    let mut near = [0.0; crate::physics::shade::MAX_SUBSTRINGS as usize];
    for (m, module) in plan.modules.iter().enumerate() {
        if scene.slots.offsets[m] == scene.slots.offsets[m + 1] {
            continue; // not wired by any layout of this run
        }
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
        for (j, near_j) in near[..b].iter().enumerate() {
            let sched = schedule_blocked(plan, m, j, info.month, info.hour);
            let f = if far {
                1.0
            } else {
                1.0 - (1.0 - near_j) * (1.0 - sched)
            };
            let e = (direct * (1.0 - f) + sky * ms.diffuse_factor + ground).max(0.0);
            let key = (
                module.group,
                (f * 1e4).round() as i64,
                light_key(e, scene.light_step_frac),
            );
            let idx = match keys.iter().position(|x| *x == key) {
                Some(i) => {
                    lights[i].add(e);
                    i
                }
                None => {
                    keys.push(key);
                    lights.push(LightClass::new(e));
                    keys.len() - 1
                }
            };
            module_subs.push(idx as u16);
            blocked_all.push(f);
        }
    }
    debug_assert_eq!(module_subs.len(), total);
    let params: Vec<OperatingParams> = keys
        .iter()
        .zip(&lights)
        .map(|(&(group, _, _), light)| {
            let t = &plan.module_types[plan.groups[group].module_type];
            t.substring
                .at(light.value(), cond.groups[group].cell_temp_c[k])
        })
        .collect();
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
            let mpp_w = p.max_power_point().p;
            debug_assert!(mpp_w.is_finite(), "substring maximum power {mpp_w}");
            SubCurve {
                curve: substring_curve(&p, drop, &grid),
                mpp_w,
            }
        })
        .collect();
    Some(IntervalCurves {
        grid,
        curves,
        subs: module_subs,
        blocked: blocked_all,
        slots: scene.slots.clone(),
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
    /// Width of the light classes ([`LIGHT_STEP_FRAC`] unless a check asks for another).
    light_step_frac: f64,
    /// Each module's range in the flat per-interval arrays (empty when not wired).
    slots: std::sync::Arc<ModuleSlots>,
}

impl ShadeScene {
    /// The scene for the modules some layout of the plan may wire ([`Plan::wired_modules`]).
    pub fn new(plan: &Plan) -> ShadeScene {
        Self::for_modules(plan, &plan.wired_modules(), LIGHT_STEP_FRAC)
    }

    /// As [`Self::new`], with light classes of another relative width (the check of the
    /// classes' effect against near-exact ones).
    pub fn with_light_step(plan: &Plan, light_step_frac: f64) -> ShadeScene {
        Self::for_modules(plan, &plan.wired_modules(), light_step_frac)
    }

    /// The scene for every module of the plan, wired or not (the shade command's view).
    pub fn every_module(plan: &Plan) -> ShadeScene {
        Self::for_modules(plan, &vec![true; plan.modules.len()], LIGHT_STEP_FRAC)
    }

    /// Prepares the plan's geometry: horizon per module, placements, diffuse factors
    /// (numerical sky-dome integrals, once per module); per-interval data are kept for the
    /// modules marked in `wired`.
    fn for_modules(plan: &Plan, wired: &[bool], light_step_frac: f64) -> ShadeScene {
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
            .collect::<Vec<ModuleShade>>();
        let mut offsets = Vec::with_capacity(plan.modules.len() + 1);
        let mut next = 0u32;
        offsets.push(next);
        for (m, module) in plan.modules.iter().enumerate() {
            if wired[m] {
                next += plan.module_types[module.module_type].bypass_diodes;
            }
            offsets.push(next);
        }
        let slots = std::sync::Arc::new(ModuleSlots {
            offsets,
            diffuse_factor: modules.iter().map(|m| m.diffuse_factor).collect(),
        });
        ShadeScene {
            modules,
            obstacles,
            light_step_frac,
            slots,
        }
    }
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
            if !ic.is_wired(mi) {
                continue;
            }
            let b = ic.blocked(mi).len().max(1) as f64;
            let lost: f64 = ic.blocked(mi).iter().map(|f| f * direct / b).sum();
            out[mi][m].0 += direct;
            out[mi][m].1 += lost;
        }
    }
    out
}

/// Every interval's distinct substring curves (the curve-solving half of phase 2), for the
/// modules some layout may wire.
pub fn all_interval_curves(
    plan: &Plan,
    cond: &Conditions,
    parallel: bool,
) -> Vec<Option<IntervalCurves>> {
    all_interval_curves_in(plan, cond, &ShadeScene::new(plan), parallel)
}

/// As [`all_interval_curves`], for the modules of a given scene (such as
/// [`ShadeScene::every_module`] or [`ShadeScene::with_light_step`]).
pub fn all_interval_curves_in(
    plan: &Plan,
    cond: &Conditions,
    scene: &ShadeScene,
    parallel: bool,
) -> Vec<Option<IntervalCurves>> {
    interval_curves_range(plan, cond, scene, 0..cond.intervals.len(), parallel)
}

/// The curves of the intervals in `range`.
fn interval_curves_range(
    plan: &Plan,
    cond: &Conditions,
    scene: &ShadeScene,
    range: std::ops::Range<usize>,
    parallel: bool,
) -> Vec<Option<IntervalCurves>> {
    if parallel {
        range
            .into_par_iter()
            .map(|k| interval_curves(plan, cond, scene, k))
            .collect()
    } else {
        range
            .map(|k| interval_curves(plan, cond, scene, k))
            .collect()
    }
}

/// Weather files longer than this many intervals have their curves computed block by block
/// when needed instead of held for the whole run ([`CurveSet::Streamed`]): a leap year of
/// 10-minute data (366 × 144), so that any one year of data down to 10-minute steps keeps
/// the module assignment's swap search, which simulates over held curves.
pub const HELD_MAX_INTERVALS: usize = 366 * 144;

/// Intervals per block of a streamed run.
pub const BLOCK: usize = 1024;

/// One block of intervals' curves ([`CurveSet::block`]), read as a slice.
pub enum CurveBlock<'a> {
    Held(&'a [Option<IntervalCurves>]),
    Computed(Vec<Option<IntervalCurves>>),
}

impl std::ops::Deref for CurveBlock<'_> {
    type Target = [Option<IntervalCurves>];
    fn deref(&self) -> &Self::Target {
        match self {
            CurveBlock::Held(c) => c,
            CurveBlock::Computed(c) => c,
        }
    }
}

/// A run's substring curves: every interval's held in memory (weather of up to
/// [`HELD_MAX_INTERVALS`] intervals), or computed for one block of intervals at a time when
/// a simulation sweeps the file, so that memory does not grow with the length of the
/// weather file (notebooks-free-docs/method-shade.md, "Long weather files").
pub enum CurveSet<'a> {
    Held(Vec<Option<IntervalCurves>>),
    Streamed {
        plan: &'a Plan,
        cond: &'a Conditions,
        scene: ShadeScene,
        parallel: bool,
    },
}

impl<'a> CurveSet<'a> {
    /// Held for a file of up to [`HELD_MAX_INTERVALS`] intervals, streamed above.
    pub fn for_run(plan: &'a Plan, cond: &'a Conditions, parallel: bool) -> CurveSet<'a> {
        if cond.intervals.len() <= HELD_MAX_INTERVALS {
            CurveSet::Held(all_interval_curves(plan, cond, parallel))
        } else {
            CurveSet::Streamed {
                plan,
                cond,
                scene: ShadeScene::new(plan),
                parallel,
            }
        }
    }

    /// Every interval's curves, when they are held.
    pub fn held(&self) -> Option<&[Option<IntervalCurves>]> {
        match self {
            CurveSet::Held(c) => Some(c),
            CurveSet::Streamed { .. } => None,
        }
    }

    /// The curves of the intervals in `range`: a slice of the held ones, or computed now.
    pub fn block(&self, range: std::ops::Range<usize>) -> CurveBlock<'_> {
        match self {
            CurveSet::Held(c) => CurveBlock::Held(&c[range]),
            CurveSet::Streamed {
                plan,
                cond,
                scene,
                parallel,
            } => CurveBlock::Computed(interval_curves_range(plan, cond, scene, range, *parallel)),
        }
    }

    /// Visits every sunlit interval's curves in time order (block by block when streamed).
    pub fn visit(&self, n: usize, mut f: impl FnMut(usize, &IntervalCurves) + Send) {
        self.sweep(0..n, |start, blk| {
            for (j, ic) in blk.iter().enumerate() {
                if let Some(ic) = ic {
                    f(start + j, ic);
                }
            }
        });
    }

    /// Calls `f(start, curves)` for each block of [`BLOCK`] intervals of `range` in time
    /// order. Streamed curves of the next block are computed while `f` works on this one,
    /// so that the two cores stay busy.
    pub fn sweep(
        &self,
        range: std::ops::Range<usize>,
        mut f: impl FnMut(usize, &[Option<IntervalCurves>]) + Send,
    ) {
        let end = range.end;
        let starts: Vec<usize> = range.step_by(BLOCK).collect();
        let block_of = |s: usize| self.block(s..(s + BLOCK).min(end));
        let mut current = starts.first().map(|&s| block_of(s));
        for (i, &s) in starts.iter().enumerate() {
            let Some(blk) = current.take() else { break };
            let next = starts.get(i + 1).copied();
            let ((), computed) = rayon::join(|| f(s, &blk), || next.map(block_of));
            current = computed;
        }
    }
}

/// What shade does to each module over the year, for choosing which modules share a string
/// (notebooks-free-docs/method-assignment.md).
#[derive(Clone, Debug, Default)]
pub struct ShadeProfiles {
    /// Per module: its interchangeability class. Two modules share a class when they belong
    /// to the same orientation group and every one of their substrings has the same curve in
    /// every interval of the year, so swapping them can never change any result.
    pub class: Vec<usize>,
    /// Per module: the sum of its substrings' maximum powers over the year, Wh (what it could
    /// give alone, after shade).
    pub energy_wh: Vec<f64>,
    /// Per module, per hour of the day (local standard time): the share of its group's best
    /// module's energy in that hour that this module loses to shade (0 = never shaded then).
    pub lost_by_hour: Vec<[f64; 24]>,
}

impl ShadeProfiles {
    /// True when some orientation group holds modules of more than one class, so that which
    /// modules share a string can matter.
    pub fn any_choice(&self, plan: &Plan) -> bool {
        (0..plan.groups.len()).any(|g| {
            let mut classes = plan
                .modules
                .iter()
                .enumerate()
                .filter(|(_, m)| m.group == g)
                .map(|(i, _)| self.class[i]);
            classes
                .next()
                .is_some_and(|first| classes.any(|c| c != first))
        })
    }
}

/// Each module's class: modules of one class belong to the same orientation group and have
/// the same substring curves in every interval, so they are interchangeable in every
/// result. Classes are numbered from 0 in order of their first module. The partition is
/// refined interval by interval (memory does not grow with the weather file).
pub fn module_classes(plan: &Plan, curves: &[Option<IntervalCurves>]) -> Vec<usize> {
    let mut classes = ClassRefiner::new(plan);
    for ic in curves.iter().flatten() {
        classes.refine(ic);
    }
    classes.finish()
}

/// [`module_classes`], refined one interval at a time.
struct ClassRefiner {
    class: Vec<usize>,
}

impl ClassRefiner {
    fn new(plan: &Plan) -> Self {
        ClassRefiner {
            class: plan.modules.iter().map(|m| m.group).collect(),
        }
    }

    fn refine(&mut self, ic: &IntervalCurves) {
        let mut next: std::collections::HashMap<(usize, &[u16]), usize> =
            std::collections::HashMap::new();
        for (mi, c) in self.class.iter_mut().enumerate() {
            let subs = if ic.is_wired(mi) {
                ic.module_subs(mi)
            } else {
                &[]
            };
            let fresh = next.len();
            *c = *next.entry((*c, subs)).or_insert(fresh);
        }
    }

    fn finish(self) -> Vec<usize> {
        let class = self.class;
        // Number by first module (also when there was no sunlit interval).
        let mut first: std::collections::HashMap<usize, usize> = std::collections::HashMap::new();
        class
            .iter()
            .map(|&c| {
                let fresh = first.len();
                *first.entry(c).or_insert(fresh)
            })
            .collect()
    }
}

/// Computes every module's [`ShadeProfiles`] entry from the shared curves.
pub fn shade_profiles(plan: &Plan, cond: &Conditions, curves: &CurveSet) -> ShadeProfiles {
    let n = plan.modules.len();
    let mut energy_wh = vec![0.0; n];
    let mut lost = vec![[0.0; 24]; n];
    let mut best_by_hour = vec![[0.0; 24]; n];
    let mut mpp = vec![0.0; n];
    let members: Vec<Vec<usize>> = (0..plan.groups.len())
        .map(|g| (0..n).filter(|&mi| plan.modules[mi].group == g).collect())
        .collect();
    let mut classes = ClassRefiner::new(plan);
    curves.visit(cond.intervals.len(), |k, ic| {
        let info = &cond.intervals[k];
        classes.refine(ic);
        for mi in (0..n).filter(|&mi| ic.is_wired(mi)) {
            mpp[mi] = ic
                .module_subs(mi)
                .iter()
                .map(|&s| ic.curves[s as usize].mpp_w)
                .sum();
            energy_wh[mi] += mpp[mi] * info.hours;
        }
        let h = (info.hour as usize).min(23);
        for group in &members {
            let best = group.iter().map(|&mi| mpp[mi]).fold(0.0, f64::max);
            for &mi in group {
                lost[mi][h] += (best - mpp[mi]) * info.hours;
                best_by_hour[mi][h] += best * info.hours;
            }
        }
    });
    let class = classes.finish();
    let lost_by_hour = lost
        .iter()
        .zip(&best_by_hour)
        .map(|(l, b)| std::array::from_fn(|h| if b[h] > 0.0 { l[h] / b[h] } else { 0.0 }))
        .collect();
    ShadeProfiles {
        class,
        energy_wh,
        lost_by_hour,
    }
}
