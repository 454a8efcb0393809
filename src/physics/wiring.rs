//! Wiring the array: substrings in series make a string, strings in parallel make the
//! array curve that a charge controller works on, with cable drops on the way; plus the DC
//! resistance of copper and aluminium cables.
//!
//! Built for speed: every curve of one interval is sampled on one shared current grid
//! (a few dozen base points plus extra points at each distinct substring's knee), a
//! substring curve is computed once per distinct (irradiance, temperature, module type)
//! and reused by every module and layout, a string is one vector addition per substring,
//! identical strings are combined once, and the parallel combination writes into
//! caller-owned buffers. Typical use per interval: [`CurrentGrid::reset_for_substrings`],
//! [`substring_curve_into`] per distinct substring, then per layout [`string_curve`] per
//! string, [`array_curve`] per controller input and [`ArrayCurve::local_maxima_into`].
//! This module does not
//! decide operating points (the controller does), does not know which modules are shaded
//! (the caller passes the substring curves), and does not check limits.
//!
//! # Sign conventions
//! - Generator convention throughout: current is positive when the array delivers power
//!   (out of the + terminal), voltage is the + terminal minus the − terminal.
//! - A substring driven above its own photocurrent has a negative voltage (reverse bias);
//!   its bypass diode clamps that at −Vd, so a substring voltage is never below −Vd.
//! - Cable resistance and diode drops always lower the voltage seen downstream:
//!   V_string = Σ V_sub − I·R_lead − V_blocking, V_terminal = V_array − I_array·R_main.
//! - Currents on the grid are never negative. Above a string's own open-circuit voltage its
//!   current is taken as 0: reverse current into a weaker parallel string is not modelled
//!   (a blocking diode would prevent it anyway; without one it would be small near the
//!   array's open circuit). The array's open-circuit voltage is therefore the highest
//!   string open-circuit voltage at the terminals.

use super::diode::{Mpp, OperatingParams};

/// Number of base grid points used by the simulation for one interval's curves (before the
/// knee points of [`CurrentGrid::for_substrings`] are added).
///
/// Chosen by measurement (60-cell and 36-cell modules, 50–1000 W/m², 5–70 °C) so that, with
/// the knee points, the maximum power of one unshaded module found through the grid and
/// [`ArrayCurve::local_maxima`] agrees with `OperatingParams::max_power_point` within
/// 0.1 % (measured: 0.03 %), currents interpolated at a fixed voltage (PWM operation)
/// within 0.5 % of Isc (measured: 0.23 %), and every local maximum of a partly shaded
/// string is found within 0.1 % (measured: 0.05 %). Every stage's cost is proportional to
/// the number of points, so this is the speed/accuracy knob.
pub const GRID_POINTS_DEFAULT: usize = 32;

/// How much denser the grid is at its top end than a uniform grid (0 = uniform).
///
/// With w = 0.75 the spacing near i_max is a quarter of the uniform spacing and near 0 it
/// is 1.75 times: the top of the grid holds the knees (maximum-power points, the nearly
/// flat constant-current part that PWM controllers work on), the bottom only the smooth
/// approach to open circuit.
pub const GRID_TOP_DENSITY: f64 = 0.75;

/// Top of the grid relative to the largest substring photocurrent of the interval: 2 %
/// above it, so that every substring reaches its bypass clamp (a lit substring is clamped
/// within a few tenths of a percent above its photocurrent: −Vd is reached at
/// I ≈ IL + Vd/Rsh, and Rs·IL alone usually exceeds Vd).
pub const GRID_HEADROOM: f64 = 1.02;

/// Smallest grid top current, A: a dark interval still gets a valid (tiny) grid.
pub const GRID_MIN_CURRENT_A: f64 = 1e-6;

/// A current grid shared by every curve of one interval, from 0 to `i_max_a` inclusive.
///
/// # Formula
/// I_k = i_max·f(t_k), t_k = k/(n − 1), f(t) = (1 + w)·t − w·t², w = [`GRID_TOP_DENSITY`]:
/// f(0) = 0, f(1) = 1, spacing proportional to f'(t) = 1 + w − 2w·t (denser at the top).
///
/// # Validity
/// Choose i_max about 2 % above the largest photocurrent of any substring in the interval,
/// so that every string curve reaches its bypass-clamped, reverse-biased end. n below 2 is
/// raised to 2; i_max below [`GRID_MIN_CURRENT_A`] (or NaN) is raised to it.
#[derive(Clone, Debug)]
pub struct CurrentGrid {
    currents: Vec<f64>,
    i_max_a: f64,
}

impl CurrentGrid {
    /// A grid of `n` currents from 0 to `i_max_a`.
    pub fn new(i_max_a: f64, n: usize) -> Self {
        let mut grid = CurrentGrid {
            currents: Vec::with_capacity(n.max(2)),
            i_max_a: 0.0,
        };
        grid.reset(i_max_a, n);
        grid
    }

    /// Refills the grid in place (no allocation once the capacity suffices).
    pub fn reset(&mut self, i_max_a: f64, n: usize) {
        let n = n.max(2);
        let i_max = if i_max_a > GRID_MIN_CURRENT_A {
            i_max_a
        } else {
            GRID_MIN_CURRENT_A
        };
        let w = GRID_TOP_DENSITY;
        let last = (n - 1) as f64;
        self.currents.clear();
        self.currents.extend((0..n).map(|k| {
            let t = k as f64 / last;
            i_max * ((1.0 + w) * t - w * t * t)
        }));
        // Exact end points whatever the rounding.
        self.currents[0] = 0.0;
        self.currents[n - 1] = i_max;
        self.i_max_a = i_max;
    }

    /// A grid of `n` currents plus the given knee currents (see [`substring_knees_a`]).
    pub fn with_knees(i_max_a: f64, n: usize, knees_a: &[f64]) -> Self {
        let mut grid = CurrentGrid {
            currents: Vec::with_capacity(n.max(2) + knees_a.len()),
            i_max_a: 0.0,
        };
        grid.reset_with_knees(i_max_a, n, knees_a);
        grid
    }

    /// Refills the grid in place with `n` currents plus the knee currents.
    ///
    /// Knees strictly between 0 and i_max are inserted in order; duplicates and knees
    /// within 1e-9·i_max of a grid point are dropped. Passing each distinct substring's
    /// knee currents (from [`substring_knees_a`]) puts points where its curve bends and
    /// makes the corner where it hands over to its bypass diode exact, instead of smeared
    /// over one grid step.
    pub fn reset_with_knees(&mut self, i_max_a: f64, n: usize, knees_a: &[f64]) {
        self.reset(i_max_a, n);
        self.push_knees(knees_a);
        self.finish_knees();
    }

    /// Appends the knees strictly inside (0, i_max); [`Self::finish_knees`] sorts them in.
    fn push_knees(&mut self, knees_a: &[f64]) {
        let i_max = self.i_max_a();
        self.currents
            .extend(knees_a.iter().copied().filter(|&k| k > 0.0 && k < i_max));
    }

    /// Sorts, drops near-duplicates, and restores the exact top current.
    fn finish_knees(&mut self) {
        let i_max = self.i_max_a();
        self.currents.sort_unstable_by(f64::total_cmp);
        let tol = 1e-9 * i_max;
        self.currents.dedup_by(|a, b| (*a - *b).abs() <= tol);
        // dedup keeps the first of a run; make sure the exact top survives.
        let last = self.currents.len() - 1;
        self.currents[last] = i_max;
    }

    /// The grid the simulation uses for one interval: top at [`GRID_HEADROOM`] × the largest
    /// photocurrent of the given (distinct) substrings, `n` base points, plus the knee
    /// currents of every substring ([`substring_knees_a`]). No allocation once the
    /// capacity suffices.
    pub fn for_substrings(subs: &[OperatingParams], bypass_drop_v: f64, n: usize) -> Self {
        let mut grid = CurrentGrid {
            currents: Vec::with_capacity(n.max(2) + KNEES_PER_SUBSTRING * subs.len()),
            i_max_a: 0.0,
        };
        grid.reset_for_substrings(subs, bypass_drop_v, n);
        grid
    }

    /// As [`Self::for_substrings`], refilling this grid in place.
    pub fn reset_for_substrings(&mut self, subs: &[OperatingParams], bypass_drop_v: f64, n: usize) {
        let il_max = subs.iter().map(|p| p.il_a).fold(0.0, f64::max);
        self.reset(GRID_HEADROOM * il_max, n);
        for p in subs {
            self.push_knees(&substring_knees_a(p, bypass_drop_v));
        }
        self.finish_knees();
    }

    /// The grid currents, A, ascending from 0.
    pub fn currents(&self) -> &[f64] {
        &self.currents
    }

    /// Number of grid points.
    pub fn len(&self) -> usize {
        self.currents.len()
    }

    /// Always false (a grid has at least two points); present for API symmetry.
    pub fn is_empty(&self) -> bool {
        self.currents.is_empty()
    }

    /// Largest grid current, A.
    pub fn i_max_a(&self) -> f64 {
        self.i_max_a
    }
}

/// One substring's voltage sampled at every grid current, bypass clamp applied, V.
///
/// Computed once per distinct (irradiance, temperature, module type) per interval and
/// reused by every module and layout that needs it.
#[derive(Clone, Debug, Default)]
pub struct SubstringCurve {
    /// Voltage at each grid current, V (never below −Vd).
    pub v: Vec<f64>,
}

/// Samples one substring on the grid.
///
/// # Formula
/// v_k = max(V(I_k), −Vd) with V(I) the explicit single-diode solution
/// (`OperatingParams::voltage_at`, here through its fast path
/// `OperatingParams::clamped_voltages_at`) and Vd the bypass diode's forward drop.
///
/// # Source
/// notebooks-free-docs/method-diode.md (bypass diodes), De Soto et al. 2006 (the curve).
pub fn substring_curve(
    p: &OperatingParams,
    bypass_drop_v: f64,
    grid: &CurrentGrid,
) -> SubstringCurve {
    let mut out = SubstringCurve::default();
    substring_curve_into(p, bypass_drop_v, grid, &mut out);
    out
}

/// Fractions below a substring's photocurrent IL at which [`substring_knees_a`] asks the
/// grid for extra points: the knee of a single-diode curve (its maximum-power point sits
/// near 0.9–0.95·IL) and the corner where the substring hands over to its bypass diode.
///
/// Chosen by measurement, no source: with these twelve points per distinct substring and
/// a base grid of [`GRID_POINTS_DEFAULT`] points, every local maximum of a partly shaded
/// string (one substring at 5–90 % of the others' irradiance, 50–1000 W/m², 5–70 °C) is
/// found and within 0.1 % of a 20 000-point reference; without them the maxima of deeply
/// shaded substrings are missed or several percent off. The two closest to IL resolve the
/// nearly flat constant-current part at low irradiance, where the voltage changes a lot
/// for a tiny change of current.
pub const KNEE_OFFSETS_FRAC: [f64; 12] = [
    0.40, 0.30, 0.22, 0.16, 0.12, 0.09, 0.065, 0.045, 0.03, 0.015, 0.0075, 0.003,
];

/// Number of knee currents [`substring_knees_a`] returns.
pub const KNEES_PER_SUBSTRING: usize = KNEE_OFFSETS_FRAC.len() + 2;

/// The currents where a substring's curve bends sharply, A: IL·(1 − f) for each f of
/// [`KNEE_OFFSETS_FRAC`], then its short-circuit current (V = 0) and the current at which
/// its bypass diode takes over (V = −Vd).
///
/// # Formula
/// IL·(1 − f); I(0) and I(−Vd) from the explicit single-diode solution
/// (`OperatingParams::current_at`).
///
/// # Validity
/// Meant for [`CurrentGrid::with_knees`]; in darkness all are close to 0 and the grid
/// drops them.
pub fn substring_knees_a(p: &OperatingParams, bypass_drop_v: f64) -> [f64; KNEES_PER_SUBSTRING] {
    let mut k = [0.0; KNEES_PER_SUBSTRING];
    for (slot, f) in k.iter_mut().zip(KNEE_OFFSETS_FRAC) {
        *slot = p.il_a * (1.0 - f);
    }
    k[KNEES_PER_SUBSTRING - 2] = p.current_at(0.0);
    k[KNEES_PER_SUBSTRING - 1] = p.current_at(-bypass_drop_v);
    k
}

/// As [`substring_curve`], reusing the caller's buffer.
pub fn substring_curve_into(
    p: &OperatingParams,
    bypass_drop_v: f64,
    grid: &CurrentGrid,
    out: &mut SubstringCurve,
) {
    p.clamped_voltages_at(grid.currents(), bypass_drop_v, &mut out.v);
}

/// String voltage at each grid current, V.
///
/// # Formula
/// V_string(I_k) = Σ_s v_s(I_k) − I_k·R_lead − V_blocking (V_blocking = 0 without a
/// blocking diode). Series elements carry one current, so voltages add point by point.
///
/// # Source
/// notebooks-free-docs/method-wiring.md; series addition at equal current is common practice (Kirchhoff's laws).
///
/// # Validity
/// `subs` lists one curve per substring of the string in any order (the same curve may
/// appear many times). The blocking diode is a constant drop; it also stops reverse
/// current, which the grid never represents (see the module's sign conventions), so here
/// it only costs its drop. An empty `subs` gives a string of cables only.
pub fn string_curve(
    subs: &[&SubstringCurve],
    lead_resistance_ohm: f64,
    blocking_drop_v: Option<f64>,
    grid: &CurrentGrid,
    out: &mut Vec<f64>,
) {
    string_curve_of(
        subs.iter().copied(),
        lead_resistance_ohm,
        blocking_drop_v,
        grid,
        out,
    );
}

/// [`string_curve`] from the substrings' curves in any iterable form (no list to build).
pub fn string_curve_of<'a>(
    subs: impl IntoIterator<Item = &'a SubstringCurve>,
    lead_resistance_ohm: f64,
    blocking_drop_v: Option<f64>,
    grid: &CurrentGrid,
    out: &mut Vec<f64>,
) {
    let currents = grid.currents();
    out.clear();
    out.resize(currents.len(), -blocking_drop_v.unwrap_or(0.0));
    for sub in subs {
        for (o, v) in out.iter_mut().zip(&sub.v) {
            *o += v;
        }
    }
    if lead_resistance_ohm != 0.0 {
        for (o, i) in out.iter_mut().zip(currents) {
            *o -= i * lead_resistance_ohm;
        }
    }
}

/// The array's current–voltage curve at the controller terminals, as points sorted by
/// voltage ascending: from the short-circuit end (largest current, voltage ≤ 0 or close)
/// to the open-circuit end (current 0).
///
/// Between points the curve is linear in current; [`ArrayCurve::current_at`],
/// [`ArrayCurve::power_at`] and [`ArrayCurve::local_maxima`] all use that same curve, so a
/// maximum found here has exactly the power `power_at` reports at its voltage.
#[derive(Clone, Debug, Default)]
pub struct ArrayCurve {
    /// Terminal voltage, V, ascending.
    pub v: Vec<f64>,
    /// Array current at each voltage, A (not increasing).
    pub i: Vec<f64>,
}

/// Whether two string curves are identical: the same slice passed twice, or two strings
/// built from the same substring curves in the same order (bitwise equal sums). Comparing
/// n values is far cheaper than interpolating them again.
fn same_slice(a: &[f64], b: &[f64]) -> bool {
    (std::ptr::eq(a.as_ptr(), b.as_ptr()) && a.len() == b.len()) || a == b
}

/// Parallel strings on one controller input → the array curve at the controller terminals.
///
/// # Formula
/// Voltage points: the union of every distinct string's points (so that each string's
/// knees stay exact). At each voltage V the array current is Σ_s m_s·I_s(V), with I_s the
/// string's current by linear interpolation between its grid points, 0 above its own
/// open-circuit voltage and, at or below its lowest voltage, the current where that lowest
/// voltage is first reached (the bypassed, vertical end of the curve); m_s the number
/// of identical strings (the same slice passed again, or equal values: identical strings
/// are interpolated once). Then the main run: V_terminal = V − I_array·R_main.
///
/// # Source
/// notebooks-free-docs/method-wiring.md; parallel addition at equal voltage is common practice (Kirchhoff's laws).
///
/// # Validity
/// Every slice must hold one voltage per grid current (from [`string_curve`]). No
/// allocation once `out`'s buffers have grown to their working size. No reverse current
/// (see the module's sign conventions). An empty `strings` gives an empty curve.
pub fn array_curve(
    strings: &[&[f64]],
    grid: &CurrentGrid,
    main_resistance_ohm: f64,
    out: &mut ArrayCurve,
) {
    let currents = grid.currents();
    out.v.clear();
    out.i.clear();
    // Group identical strings: representative index and multiplicity, on the stack.
    let mut rep = [0usize; MAX_STRING_GROUPS];
    let mut mult = [0u32; MAX_STRING_GROUPS];
    let mut groups = 0;
    let mut overflow = false;
    for (k, s) in strings.iter().enumerate() {
        if let Some(j) = (0..groups).find(|&j| same_slice(strings[rep[j]], s)) {
            mult[j] += 1;
        } else if groups < MAX_STRING_GROUPS {
            rep[groups] = k;
            mult[groups] = 1;
            groups += 1;
        } else {
            overflow = true;
            break;
        }
    }
    if overflow {
        // More distinct strings than the stack holds (not a small array any more): take
        // every string on its own, with a sort instead of the merge. Same result.
        for s in strings {
            out.v.extend(s.iter().rev());
        }
        out.v.sort_unstable_by(f64::total_cmp);
        out.v.dedup();
        out.i.resize(out.v.len(), 0.0);
        for s in strings {
            add_string_current(s, currents, 1.0, &out.v, &mut out.i);
        }
    } else if groups == 1 {
        // All strings identical (the common unshaded case): the array points are the
        // string's own points, currents × m, no interpolation. In a run of equal voltages
        // (the bypassed end) keep the smallest current, as add_string_current does.
        let s = strings[rep[0]];
        let m = f64::from(mult[0]);
        for (v, i) in s.iter().zip(currents).rev() {
            if out.v.last() == Some(v) {
                if let Some(last) = out.i.last_mut() {
                    *last = m * i;
                }
            } else {
                out.v.push(*v);
                out.i.push(m * i);
            }
        }
    } else {
        // out.i serves as the merge's scratch buffer before it receives the currents.
        merge_voltages(strings, &rep[..groups], &mut out.v, &mut out.i);
        out.i.clear();
        out.i.resize(out.v.len(), 0.0);
        for j in 0..groups {
            add_string_current(
                strings[rep[j]],
                currents,
                f64::from(mult[j]),
                &out.v,
                &mut out.i,
            );
        }
    }
    if main_resistance_ohm != 0.0 {
        for (v, i) in out.v.iter_mut().zip(&out.i) {
            *v -= i * main_resistance_ohm;
        }
    }
}

/// Most distinct strings on one controller input handled without allocation.
const MAX_STRING_GROUPS: usize = 16;

/// Merges the voltages of the listed strings (each not increasing, so read backwards it
/// is ascending) into one ascending list without duplicates, in `out`; `scratch` is a
/// second buffer of the caller's, used when there are three strings or more.
///
/// One string: a reversed copy. Two: a two-pointer merge. More: pairwise merges of the
/// running result with the next string, alternating between the two buffers.
fn merge_voltages(strings: &[&[f64]], reps: &[usize], out: &mut Vec<f64>, scratch: &mut Vec<f64>) {
    out.clear();
    match reps {
        [] => {}
        [a] => out.extend(strings[*a].iter().rev()),
        [a, rest @ ..] => {
            out.extend(strings[*a].iter().rev());
            for &r in rest {
                scratch.clear();
                merge_ascending_with_reversed(out, strings[r], scratch);
                std::mem::swap(out, scratch);
            }
        }
    }
    out.dedup();
}

/// Two-pointer merge of an ascending list `a` with a not-increasing list `b` read
/// backwards, into `out` (ascending; a value present in both is written once).
fn merge_ascending_with_reversed(a: &[f64], b: &[f64], out: &mut Vec<f64>) {
    let (mut ia, mut ib) = (0, b.len());
    while ia < a.len() && ib > 0 {
        let (va, vb) = (a[ia], b[ib - 1]);
        if va <= vb {
            out.push(va);
            ia += 1;
            if va == vb {
                ib -= 1;
            }
        } else {
            out.push(vb);
            ib -= 1;
        }
    }
    out.extend_from_slice(&a[ia..]);
    out.extend(b[..ib].iter().rev());
}

/// Adds m·I_s(V) at every voltage of `vs` (ascending) to `acc`, walking the string's
/// points once. `s[k]` is the string voltage at `currents[k]`, not increasing in k.
fn add_string_current(s: &[f64], currents: &[f64], m: f64, vs: &[f64], acc: &mut [f64]) {
    let n = s.len().min(currents.len());
    if n == 0 {
        return;
    }
    let v_low = s[n - 1];
    let v_oc = s[0];
    // Where the lowest voltage is first reached. Without lead resistance a string whose
    // substrings are all bypassed has the same voltage at every higher grid current (a
    // vertical line in the I–V plane); its lowest-current point is where that line starts,
    // the right end for interpolation towards higher voltages.
    let j_low = s.partition_point(|&x| x > v_low);
    // At or below the lowest voltage: the start of the vertical end.
    let p_low = vs.partition_point(|&v| v <= v_low);
    let i_low = m * currents[j_low];
    for a in &mut acc[..p_low] {
        *a += i_low;
    }
    // At or above the open-circuit voltage: nothing (no reverse current). In between,
    // walk the string's segments upwards in voltage, one slope (one division) per segment;
    // a string's own points fall on a segment start and come out exact.
    let p_end = vs.partition_point(|&v| v < v_oc);
    let mut p = p_low;
    let mut c = j_low;
    while p < p_end && c > 0 {
        let (v0, v1) = (s[c], s[c - 1]);
        if v1 > v0 {
            let base = m * currents[c];
            let slope = m * (currents[c - 1] - currents[c]) / (v1 - v0);
            while p < p_end && vs[p] < v1 {
                acc[p] += base + slope * (vs[p] - v0);
                p += 1;
            }
        }
        c -= 1;
    }
}

impl ArrayCurve {
    /// Open-circuit voltage at the terminals, V (the voltage where the current reaches 0;
    /// never below 0; 0 for an empty curve).
    pub fn voc_v(&self) -> f64 {
        self.v.last().copied().unwrap_or(0.0).max(0.0)
    }

    /// Array current at a terminal voltage, A: linear between points, the first point's
    /// current below the first voltage, 0 above open circuit.
    pub fn current_at(&self, v: f64) -> f64 {
        let n = self.v.len();
        if n == 0 || v >= self.v[n - 1] {
            return 0.0;
        }
        if v <= self.v[0] {
            return self.i[0];
        }
        // First index with self.v[k] > v; then self.v[k − 1] ≤ v < self.v[k].
        let k = self.v.partition_point(|&x| x <= v);
        let (v0, v1) = (self.v[k - 1], self.v[k]);
        let (i0, i1) = (self.i[k - 1], self.i[k]);
        i0 + (v - v0) / (v1 - v0) * (i1 - i0)
    }

    /// Array power at a terminal voltage, W.
    pub fn power_at(&self, v: f64) -> f64 {
        v * self.current_at(v)
    }

    /// All local maxima of P(V) in [v_lo, v_hi], sorted by voltage ascending.
    ///
    /// # Formula
    /// Between points the current is linear, I = i_k + s·(V − v_k) with s ≤ 0, so the power
    /// V·I is a concave parabola on each segment with its top at V* = (s·v_k − i_k)/(2s):
    /// the maxima are refined exactly to that curve. A window edge counts as a maximum when
    /// the power falls going into the window from it (the best point a controller limited
    /// to the window can reach on that side).
    ///
    /// # Validity
    /// Only maxima with positive power are returned; an empty window (v_hi ≤ v_lo after
    /// clipping to the curve) or a dark array gives an empty list.
    pub fn local_maxima(&self, v_lo: f64, v_hi: f64) -> Vec<Mpp> {
        let mut found = Vec::new();
        self.local_maxima_into(v_lo, v_hi, &mut found);
        found
    }

    /// As [`Self::local_maxima`], into the caller's buffer (cleared first; no allocation
    /// once it has grown).
    pub fn local_maxima_into(&self, v_lo: f64, v_hi: f64, found: &mut Vec<Mpp>) {
        found.clear();
        self.for_each_local_maximum(v_lo, v_hi, |m| found.push(m));
    }

    /// Calls `visit` with each local maximum of [`Self::local_maxima`], in the same order,
    /// without building a list (the controller's searches in the interval loop).
    pub fn for_each_local_maximum(&self, v_lo: f64, v_hi: f64, mut visit: impl FnMut(Mpp)) {
        let n = self.v.len();
        if n < 2 {
            return;
        }
        let lo = v_lo.max(self.v[0]);
        let hi = v_hi.min(self.v[n - 1]);
        if hi <= lo || hi.is_nan() || lo.is_nan() {
            return;
        }
        let mut keep = |m: Mpp| {
            if m.p > 0.0 {
                visit(m);
            }
        };
        // Walk the pieces of the window in voltage order, tracking the sign of dP/dV. On a
        // segment from (v0, i0) with dv > 0, di: dP/dV·dv at x is i0·dv + di·(2x − v0), no
        // division. A maximum is where the power stops rising: inside a segment, at a
        // vertex between two segments, or at a window edge.
        let mut rising_before: Option<bool> = None;
        let mut last_end = Mpp::ZERO;
        // Segments k (from point k − 1 to point k) that overlap the window; only the first
        // and the last are clipped to it.
        let first = self.v.partition_point(|&x| x <= lo).clamp(1, n - 1);
        let last = self.v.partition_point(|&x| x < hi).clamp(first, n - 1);
        for k in first..=last {
            let (v0, v1) = (self.v[k - 1], self.v[k]);
            let (i0, i1) = (self.i[k - 1], self.i[k]);
            let (dv, di) = (v1 - v0, i1 - i0);
            let a = if k == first && lo > v0 { lo } else { v0 };
            let b = if k == last && hi < v1 { hi } else { v1 };
            if dv <= 0.0 || b <= a {
                continue;
            }
            let at = |x: f64| {
                let i = i0 + di * ((x - v0) / dv);
                Mpp { v: x, i, p: x * i }
            };
            let d_a = i0 * dv + di * (2.0 * a - v0);
            let d_b = i0 * dv + di * (2.0 * b - v0);
            match rising_before {
                // The window opens with the power falling: the low edge is a maximum.
                None if d_a < 0.0 => keep(at(a)),
                // Rising into this vertex, falling after it.
                Some(true) if d_a < 0.0 => keep(at(a)),
                _ => {}
            }
            if d_a > 0.0 && d_b < 0.0 {
                // The parabola's top: d(v·(i0 + s(v − v0)))/dv = 0 at v = (s·v0 − i0)/(2s).
                let slope = di / dv;
                keep(at((slope * v0 - i0) / (2.0 * slope)));
            }
            rising_before = Some(d_b > 0.0 || (d_b == 0.0 && d_a > 0.0));
            last_end = if b == v1 {
                Mpp {
                    v: v1,
                    i: i1,
                    p: v1 * i1,
                }
            } else {
                at(b)
            };
        }
        // The window closes with the power still rising: the high edge is a maximum.
        if rising_before == Some(true) {
            keep(last_end);
        }
    }
}

/// Cable conductor material.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Conductor {
    /// Annealed copper.
    Copper,
    /// Aluminium.
    Aluminium,
}

impl Conductor {
    /// The material's name in reports.
    pub fn name(self) -> &'static str {
        match self {
            Conductor::Copper => "copper",
            Conductor::Aluminium => "aluminium",
        }
    }

    /// Resistivity at 20 °C, Ω·mm²/m.
    ///
    /// # Source
    /// Copper: 1/58 Ω·mm²/m = 0.017241, the International Annealed Copper Standard (100 %
    /// IACS) as used by IEC 60028. Aluminium: 1/35 Ω·mm²/m = 0.02857, from memory (the
    /// customary electricians' value; IEC 60889 hard-drawn aluminium is 0.028264).
    pub fn resistivity_20c_ohm_mm2_m(self) -> f64 {
        match self {
            Conductor::Copper => 1.0 / 58.0,
            Conductor::Aluminium => 1.0 / 35.0,
        }
    }

    /// Temperature coefficient of resistance at 20 °C, 1/K.
    ///
    /// # Source
    /// Copper: 0.00393 /K (IEC 60028, 100 % IACS). Aluminium: 0.00403 /K, from memory
    /// (IEC 60889 hard-drawn aluminium).
    pub fn temp_coeff_20c_per_k(self) -> f64 {
        match self {
            Conductor::Copper => 0.00393,
            Conductor::Aluminium => 0.00403,
        }
    }
}

/// Cross-section of an American Wire Gauge size, mm².
///
/// # Formula
/// d = 0.127 mm · 92^((36 − AWG)/39), A = π·d²/4. The aught sizes are passed as 0 for 1/0,
/// −1 for 2/0, −2 for 3/0 and −3 for 4/0 (the formula's own continuation).
///
/// # Source
/// ASTM B258 (the defining formula of the gauge).
///
/// # Validity
/// Any integer; wire actually sold spans −3 (4/0) to about 40. The result is the nominal
/// solid-wire area; stranded conductors of the same gauge have about the same metal area.
pub fn awg_to_mm2(awg: i32) -> f64 {
    let d_mm = 0.127 * 92f64.powf(f64::from(36 - awg) / 39.0);
    std::f64::consts::PI / 4.0 * d_mm * d_mm
}

/// Cable DC resistance for the round trip (out and back), ohm.
///
/// # Formula
/// R = ρ20·(1 + α20·(T − 20 °C))·2L/A, with ρ20 and α20 from [`Conductor`].
///
/// # Source
/// IEC 60028 / IEC 60228 practice (resistance at 20 °C corrected linearly to the
/// conductor temperature); notebooks-free-docs/method-wiring.md.
///
/// # Validity
/// Expects L ≥ 0 and A > 0 (the plan validates both); conductor temperatures −40…+120 °C,
/// where the linear correction is accurate to well under 1 %. Solid-conductor geometry:
/// stranded and flexible cables measure 2–16 % higher (stranding lay, fine-wire classes);
/// enter their effective cross-section where that matters.
pub fn cable_resistance_ohm(
    conductor: Conductor,
    length_one_way_m: f64,
    cross_section_mm2: f64,
    conductor_temp_c: f64,
) -> f64 {
    let rho = conductor.resistivity_20c_ohm_mm2_m()
        * (1.0 + conductor.temp_coeff_20c_per_k() * (conductor_temp_c - 20.0));
    rho * 2.0 * length_one_way_m / cross_section_mm2
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::diode::{fit_de_soto, Datasheet, ReferenceParams, BYPASS_DROP_DEFAULT_V};

    /// Invented 36-cell 100 W-class module with 2 bypass diodes (not any product).
    fn module36() -> ReferenceParams {
        fit_de_soto(&Datasheet {
            voc_v: 22.4,
            isc_a: 5.95,
            vmp_v: 18.0,
            imp_a: 5.56,
            alpha_isc_a_k: 0.003,
            beta_voc_v_k: -0.080,
            cells_in_series: 36,
        })
        .unwrap()
    }

    /// Invented 60-cell module with 3 bypass diodes (not any product).
    fn module60() -> ReferenceParams {
        fit_de_soto(&Datasheet {
            voc_v: 38.5,
            isc_a: 9.20,
            vmp_v: 31.6,
            imp_a: 8.70,
            alpha_isc_a_k: 0.0046,
            beta_voc_v_k: -0.1155,
            cells_in_series: 60,
        })
        .unwrap()
    }

    fn rel(a: f64, b: f64) -> f64 {
        (a / b - 1.0).abs()
    }

    fn best(maxima: &[Mpp]) -> Mpp {
        maxima
            .iter()
            .copied()
            .fold(Mpp::ZERO, |b, m| if m.p > b.p { m } else { b })
    }

    /// The simulation's grid for these substrings (base points plus knees).
    fn grid_for(subs: &[OperatingParams]) -> CurrentGrid {
        CurrentGrid::for_substrings(subs, BYPASS_DROP_DEFAULT_V, GRID_POINTS_DEFAULT)
    }

    /// One unshaded module through substring → string → array curve.
    fn module_curve(
        p: &ReferenceParams,
        parts: u32,
        s: f64,
        t: f64,
    ) -> (ArrayCurve, OperatingParams) {
        let sub = p.substring(parts).at(s, t);
        let grid = grid_for(&[sub]);
        let sc = substring_curve(&sub, BYPASS_DROP_DEFAULT_V, &grid);
        let subs: Vec<&SubstringCurve> = (0..parts).map(|_| &sc).collect();
        let mut sv = Vec::new();
        string_curve(&subs, 0.0, None, &grid, &mut sv);
        let mut arr = ArrayCurve::default();
        array_curve(&[&sv], &grid, 0.0, &mut arr);
        (arr, p.at(s, t))
    }

    fn check_grid_mpp(p: &ReferenceParams, parts: u32, s: f64, t: f64) {
        let (arr, op) = module_curve(p, parts, s, t);
        let exact = op.max_power_point();
        let found = arr.local_maxima(0.0, f64::INFINITY);
        assert_eq!(found.len(), 1, "{s} W/m², {t} °C: {found:?}");
        let m = found[0];
        assert!(
            rel(m.p, exact.p) <= 0.001,
            "{s} W/m², {t} °C: {} vs {}",
            m.p,
            exact.p
        );
        // The reported maximum lies on the same curve that power_at evaluates.
        assert!(rel(arr.power_at(m.v), m.p) <= 1e-12);
    }

    #[test]
    fn grid_mpp_matches_the_exact_mpp() {
        // Source: the brief's accuracy target for GRID_POINTS_DEFAULT (0.1 %), against
        // OperatingParams::max_power_point (Newton on dP/dV, independent of the grid).
        for (p, parts) in [(module36(), 2), (module60(), 3)] {
            for (s, t) in [
                (1000.0, 25.0),
                (1200.0, 70.0),
                (600.0, 40.0),
                (200.0, 10.0),
                (50.0, -5.0),
            ] {
                check_grid_mpp(&p, parts, s, t);
            }
        }
    }

    #[test]
    fn plain_grid_mpp_matches_the_exact_mpp() {
        // Source: the brief's accuracy target (0.1 %) on the plain grid of CurrentGrid::new
        // (no knee points), against OperatingParams::max_power_point.
        for (p, parts) in [(module36(), 2), (module60(), 3)] {
            for (s, t) in [(1000.0, 25.0), (1200.0, 70.0), (200.0, 10.0), (50.0, -5.0)] {
                let sub = p.substring(parts).at(s, t);
                let grid = CurrentGrid::new(GRID_HEADROOM * sub.il_a, GRID_POINTS_DEFAULT);
                let sc = substring_curve(&sub, BYPASS_DROP_DEFAULT_V, &grid);
                let subs: Vec<&SubstringCurve> = (0..parts).map(|_| &sc).collect();
                let mut sv = Vec::new();
                string_curve(&subs, 0.0, None, &grid, &mut sv);
                let mut arr = ArrayCurve::default();
                array_curve(&[&sv], &grid, 0.0, &mut arr);
                let exact = p.at(s, t).max_power_point();
                let m = best(&arr.local_maxima(0.0, f64::INFINITY));
                assert!(
                    rel(m.p, exact.p) <= 0.001,
                    "{s} W/m², {t} °C: {} vs {}",
                    m.p,
                    exact.p
                );
            }
        }
    }

    /// Local maxima of a 6-substring string with one substring at `frac` of the others'
    /// irradiance, on the simulation grid and on a 20 000-point reference grid.
    fn check_shaded_maxima(s: f64, t: f64, frac: f64) {
        let p = module60().substring(3);
        let (lit, dim) = (p.at(s, t), p.at(frac * s, t));
        let maxima = |grid: &CurrentGrid| {
            let a = substring_curve(&lit, BYPASS_DROP_DEFAULT_V, grid);
            let d = substring_curve(&dim, BYPASS_DROP_DEFAULT_V, grid);
            let mut sv = Vec::new();
            string_curve(&[&d, &a, &a, &a, &a, &a], 0.0, None, grid, &mut sv);
            let mut arr = ArrayCurve::default();
            array_curve(&[&sv], grid, 0.0, &mut arr);
            arr.local_maxima(0.0, f64::INFINITY)
        };
        let reference = maxima(&CurrentGrid::new(GRID_HEADROOM * lit.il_a, 20_000));
        let got = maxima(&grid_for(&[lit, dim]));
        assert_eq!(
            got.len(),
            reference.len(),
            "{s} W/m² × {frac}: {got:?} vs {reference:?}"
        );
        for (g, r) in got.iter().zip(&reference) {
            assert!(rel(g.p, r.p) <= 0.001, "{s} W/m² × {frac}: {g:?} vs {r:?}");
            assert!(rel(g.v, r.v) <= 0.02, "{s} W/m² × {frac}: {g:?} vs {r:?}");
        }
    }

    #[test]
    fn shaded_maxima_match_a_fine_grid() {
        // Source: general numerics (convergence check against a 20 000-point grid of the
        // same curves). 0.1 % on power, the same target as the unshaded MPP; 2 % on the
        // voltage, because near a flat maximum the voltage is poorly determined by design.
        for &(s, t) in &[(1000.0, 25.0), (600.0, 45.0), (200.0, 5.0)] {
            for frac in [0.05, 0.1, 0.3, 0.5, 0.7, 0.9] {
                check_shaded_maxima(s, t, frac);
            }
        }
    }

    fn check_grid_current(p: &ReferenceParams, parts: u32, s: f64, t: f64) {
        let (arr, op) = module_curve(p, parts, s, t);
        let voc = op.voc_v();
        let isc = op.isc_a();
        for k in 0..=40 {
            let v = voc * f64::from(k) / 40.0;
            let got = arr.current_at(v);
            let want = op.current_at(v);
            assert!((got - want).abs() <= 0.005 * isc, "v {v}: {got} vs {want}");
        }
    }

    #[test]
    fn grid_current_matches_the_exact_curve() {
        // Source: own engineering target, no source: PWM controllers read the current at a
        // fixed voltage; 0.5 % of Isc keeps that error below the datasheet's own tolerance
        // (typically ±3 % on power).
        for (p, parts) in [(module36(), 2), (module60(), 3)] {
            for (s, t) in [(1000.0, 25.0), (300.0, 50.0), (50.0, 0.0)] {
                check_grid_current(&p, parts, s, t);
            }
        }
    }

    #[test]
    fn series_adds_voltage_parallel_adds_current() {
        // Source: common practice, no source: four
        // identical modules give 4·Voc in series and 4·Isc in parallel, 4·Pmax either way.
        let p = module60();
        let sub = p.substring(3).at(900.0, 35.0);
        let module = p.at(900.0, 35.0);
        let grid = grid_for(&[sub]);
        let sc = substring_curve(&sub, BYPASS_DROP_DEFAULT_V, &grid);
        let pmax = module.max_power_point().p;

        // One module string; then four in series.
        let mut one = Vec::new();
        string_curve(&[&sc, &sc, &sc], 0.0, None, &grid, &mut one);
        let mut four = Vec::new();
        string_curve(&[&sc; 12], 0.0, None, &grid, &mut four);
        let mut series = ArrayCurve::default();
        array_curve(&[&four], &grid, 0.0, &mut series);
        // Voc is the grid's I = 0 point: exact up to rounding.
        assert!(rel(series.voc_v(), 4.0 * module.voc_v()) <= 1e-9);
        // Grid accuracy as in grid_mpp_matches_the_exact_mpp: 0.1 %.
        assert!(rel(best(&series.local_maxima(0.0, 1e9)).p, 4.0 * pmax) <= 0.001);

        // Four in parallel, the same slice passed four times.
        let mut parallel = ArrayCurve::default();
        array_curve(&[&one, &one, &one, &one], &grid, 0.0, &mut parallel);
        assert!(rel(parallel.voc_v(), module.voc_v()) <= 1e-9);
        assert!(rel(parallel.current_at(0.0), 4.0 * module.isc_a()) <= 0.001);
        assert!(rel(best(&parallel.local_maxima(0.0, 1e9)).p, 4.0 * pmax) <= 0.001);

        // Four distinct (but equal) slices must give the same curve as the shared one.
        let copies: Vec<Vec<f64>> = (0..4).map(|_| one.clone()).collect();
        let refs: Vec<&[f64]> = copies.iter().map(|c| c.as_slice()).collect();
        let mut parallel2 = ArrayCurve::default();
        array_curve(&refs, &grid, 0.0, &mut parallel2);
        for v in [0.0, 10.0, 25.0, 30.0, 33.0] {
            // Source: general mathematics (same sum computed two ways), 1e-12 relative.
            assert!((parallel2.current_at(v) - parallel.current_at(v)).abs() <= 1e-12 * 40.0);
        }
    }

    #[test]
    fn cable_drop_shifts_the_curve_by_i_r() {
        // Source: Ohm's law (general physics): at equal current the terminal voltage falls
        // by I·(R_lead + R_main); 1e-9 V.
        let p = module36();
        let sub = p.substring(2).at(1000.0, 25.0);
        let grid = grid_for(&[sub]);
        let sc = substring_curve(&sub, BYPASS_DROP_DEFAULT_V, &grid);
        let mut bare = Vec::new();
        string_curve(&[&sc, &sc], 0.0, None, &grid, &mut bare);
        let mut with = Vec::new();
        string_curve(&[&sc, &sc], 0.1, Some(0.7), &grid, &mut with);
        for (k, &i) in grid.currents().iter().enumerate() {
            assert!((bare[k] - with[k] - (0.1 * i + 0.7)).abs() <= 1e-9);
        }
        let (mut a0, mut a1) = (ArrayCurve::default(), ArrayCurve::default());
        array_curve(&[&bare], &grid, 0.0, &mut a0);
        array_curve(&[&bare], &grid, 0.2, &mut a1);
        for k in 0..a0.v.len() {
            assert!((a0.v[k] - a1.v[k] - 0.2 * a1.i[k]).abs() <= 1e-9);
        }
    }

    /// A 2-module string of 60-cell modules (3 substrings each); `shaded_s` on the first
    /// substring of the first module, 1000 W/m² elsewhere, 40 °C.
    fn two_module_string(shaded_s: f64) -> (CurrentGrid, Vec<f64>, Vec<f64>, SubstringCurve) {
        let p = module60().substring(3);
        let lit = p.at(1000.0, 40.0);
        let dim = p.at(shaded_s, 40.0);
        let grid = grid_for(&[lit, dim]);
        let sl = substring_curve(&lit, BYPASS_DROP_DEFAULT_V, &grid);
        let sd = substring_curve(&dim, BYPASS_DROP_DEFAULT_V, &grid);
        let mut clear = Vec::new();
        string_curve(&[&sl; 6], 0.0, None, &grid, &mut clear);
        let mut shaded = Vec::new();
        string_curve(
            &[&sd, &sl, &sl, &sl, &sl, &sl],
            0.0,
            None,
            &grid,
            &mut shaded,
        );
        (grid, clear, shaded, sl)
    }

    #[test]
    fn dark_substring_costs_its_voltage_plus_the_bypass_drop() {
        // Source: common practice, no source: a fully shaded substring is bypassed, so the
        // string loses that substring's voltage plus the bypass diode's drop at the string
        // current. At each grid current the loss must equal V_sub(I) + Vd within 1 mV
        // (the dark substring's own voltage is −I·1000·Rsh_ref, far below −Vd, so the clamp
        // is exact; 1 mV allows for rounding only).
        let (grid, clear, shaded, sl) = two_module_string(0.0);
        for (k, &i) in grid.currents().iter().enumerate() {
            if i < 0.05 {
                continue; // near I = 0 the dark substring is not yet at its clamp
            }
            let loss = clear[k] - shaded[k];
            let expected = sl.v[k] + BYPASS_DROP_DEFAULT_V;
            assert!(
                (loss - expected).abs() <= 1e-3,
                "i {i}: {loss} vs {expected}"
            );
        }
        // Source: common practice, no source: at the maximum-power point the string keeps
        // about 5/6 of its power minus Vd·Imp. 1 % tolerance: the maximum of the 5-substring
        // curve sits at a slightly different current, a second-order change in power.
        let mut a_clear = ArrayCurve::default();
        let mut a_shaded = ArrayCurve::default();
        array_curve(&[&clear], &grid, 0.0, &mut a_clear);
        array_curve(&[&shaded], &grid, 0.0, &mut a_shaded);
        let m_clear = best(&a_clear.local_maxima(0.0, 1e9));
        let m_shaded = best(&a_shaded.local_maxima(0.0, 1e9));
        let expected = 5.0 / 6.0 * m_clear.p - BYPASS_DROP_DEFAULT_V * m_clear.i;
        assert!(
            rel(m_shaded.p, expected) <= 0.01,
            "{} vs {expected}",
            m_shaded.p
        );
    }

    #[test]
    fn partly_shaded_substring_gives_two_maxima() {
        // Source: common practice, no source: one substring at 30 % irradiance gives a
        // bypassed maximum at high current / low voltage and an all-substrings maximum at
        // low current (below the shaded photocurrent) / high voltage.
        let (grid, _, shaded, _) = two_module_string(300.0);
        let il_shaded = module60().substring(3).at(300.0, 40.0).il_a;
        let mut arr = ArrayCurve::default();
        array_curve(&[&shaded], &grid, 0.0, &mut arr);
        let maxima = arr.local_maxima(0.0, 1e9);
        assert_eq!(maxima.len(), 2, "{maxima:?}");
        let (low_v, high_v) = (maxima[0], maxima[1]);
        assert!(low_v.v < high_v.v);
        assert!(low_v.i > il_shaded, "{low_v:?}");
        assert!(high_v.i <= il_shaded, "{high_v:?}");
        // A window that ends just below the high-voltage maximum ends on a rising edge: the
        // edge counts as the best reachable point on that side.
        let edge = 0.99 * high_v.v;
        let w = arr.local_maxima(0.0, edge);
        assert_eq!(w.len(), 2, "{w:?}");
        assert!((w[1].v - edge).abs() < 1e-9 && w[1].p < high_v.p);
    }

    #[test]
    fn dark_array_is_finite_and_has_no_maxima() {
        // Source: common practice, no source: a dark array delivers nothing; every value
        // must stay finite (notebooks-free-docs/conventions.md: night is an ordinary value, not an error).
        let p = module60().substring(3);
        let dark = p.at(0.0, 5.0);
        let grid = grid_for(&[dark]);
        let sc = substring_curve(&dark, BYPASS_DROP_DEFAULT_V, &grid);
        assert!(sc
            .v
            .iter()
            .all(|v| v.is_finite() && *v >= -BYPASS_DROP_DEFAULT_V));
        let mut s = Vec::new();
        string_curve(&[&sc; 6], 0.05, Some(0.7), &grid, &mut s);
        let mut arr = ArrayCurve::default();
        array_curve(&[&s, &s], &grid, 0.1, &mut arr);
        assert!(arr.v.iter().chain(&arr.i).all(|x| x.is_finite()));
        assert_eq!(arr.voc_v(), 0.0);
        assert!(arr.local_maxima(0.0, 100.0).is_empty());
        assert_eq!(arr.current_at(5.0), 0.0);
        // An empty layout is an empty curve, not a panic.
        let mut empty = ArrayCurve::default();
        array_curve(&[], &grid, 0.1, &mut empty);
        assert_eq!(empty.voc_v(), 0.0);
        assert!(empty.local_maxima(0.0, 100.0).is_empty());
    }

    #[test]
    fn grid_is_ascending_and_denser_at_the_top() {
        // Source: the documented grid formula (recomputed, regression guard).
        let g = CurrentGrid::new(10.0, 64);
        let c = g.currents();
        assert_eq!((c[0], c[63]), (0.0, 10.0));
        assert!(c.windows(2).all(|w| w[1] > w[0]));
        let first = c[1] - c[0];
        let last = c[63] - c[62];
        // f(1/63) : 1 − f(62/63) = (1.75·63 − 0.75) : (0.25·63 + 0.75), 1e-9 relative.
        assert!(rel(first / last, (1.75 * 63.0 - 0.75) / (0.25 * 63.0 + 0.75)) <= 1e-9);
        // Dark interval: valid tiny grid.
        let d = CurrentGrid::new(0.0, 1);
        assert_eq!(d.len(), 2);
        assert_eq!(d.i_max_a(), GRID_MIN_CURRENT_A);
        // Knees: inserted in order, outside (0, i_max) dropped, duplicates dropped, the
        // exact top kept (general bookkeeping, exact).
        let k = CurrentGrid::with_knees(10.0, 5, &[3.3, -1.0, 3.3, 12.0, 10.0, 9.9999]);
        assert_eq!(k.i_max_a(), 10.0);
        assert_eq!(k.currents().last(), Some(&10.0));
        assert!(k.currents().windows(2).all(|w| w[1] > w[0]));
        assert_eq!(k.len(), 5 + 2);
        assert!(k.currents().contains(&3.3) && k.currents().contains(&9.9999));
        // For substrings: top at 1.02 × the largest photocurrent, every knee inside.
        let p = module60().substring(3);
        let (a, b) = (p.at(1000.0, 25.0), p.at(300.0, 25.0));
        let g = CurrentGrid::for_substrings(&[a, b], BYPASS_DROP_DEFAULT_V, 48);
        assert_eq!(g.i_max_a(), GRID_HEADROOM * a.il_a);
        for knee in substring_knees_a(&a, 0.5)
            .iter()
            .chain(&substring_knees_a(&b, 0.5))
        {
            assert!(
                g.currents().iter().any(|c| (c - knee).abs() <= 1e-9 * 10.0),
                "{knee}"
            );
        }
    }

    fn check_awg(awg: i32, mm2: f64) {
        assert!(
            rel(awg_to_mm2(awg), mm2) <= 1e-3,
            "awg {awg}: {}",
            awg_to_mm2(awg)
        );
    }

    #[test]
    fn awg_cross_sections() {
        // Source: from memory (common AWG tables from the ASTM B258 formula, printed to
        // 4 significant digits): 14 AWG 2.081, 12 AWG 3.309, 10 AWG 5.261, 4/0 107.2 mm².
        check_awg(14, 2.081);
        check_awg(12, 3.309);
        check_awg(10, 5.261);
        check_awg(-3, 107.2);
        // Source: ASTM B258 definition: 36 AWG is exactly 0.005 in = 0.127 mm diameter.
        check_awg(36, std::f64::consts::PI / 4.0 * 0.127 * 0.127);
    }

    /// Ω per 1000 ft of a single conductor (NEC Table 8 quotes one conductor, not a loop).
    fn ohm_per_kft(conductor: Conductor, awg: i32, t_c: f64) -> f64 {
        // Round trip over 152.4 m one way = 304.8 m = 1000 ft of conductor.
        cable_resistance_ohm(conductor, 152.4, awg_to_mm2(awg), t_c)
    }

    fn check_nec(conductor: Conductor, awg: i32, expected_ohm_kft: f64, tol: f64) {
        let got = ohm_per_kft(conductor, awg, 75.0);
        assert!(
            rel(got, expected_ohm_kft) <= tol,
            "{awg} AWG: {got} vs {expected_ohm_kft}"
        );
    }

    #[test]
    #[allow(clippy::approx_constant)] // 3.14 Ω/kft is the table's value for 14 AWG, not π
    fn copper_awg_against_nec_table_8() {
        // Source: NEC 2017 Chapter 9 Table 8, uncoated stranded copper at 75 °C: 10 AWG
        // 1.24 Ω/kft, 12 AWG 1.98 Ω/kft. Tolerance 3 %: the table is for stranded
        // conductors, whose lay makes each wire ~1–2 % longer than the cable, and it is
        // printed to 3 digits; our formula is solid 100 % IACS copper (we come out ~2 % low).
        check_nec(Conductor::Copper, 10, 1.24, 0.03);
        check_nec(Conductor::Copper, 12, 1.98, 0.03);
        // Source: NEC 2017 Chapter 9 Table 8, 14/8/6 AWG stranded copper.
        check_nec(Conductor::Copper, 14, 3.14, 0.03);
        check_nec(Conductor::Copper, 8, 0.778, 0.03);
        check_nec(Conductor::Copper, 6, 0.491, 0.03);
    }

    #[test]
    fn aluminium_awg_against_nec_table_8() {
        // Source: from memory (NEC Chapter 9 Table 8, stranded aluminium at 75 °C: 12 AWG
        // 3.25, 10 AWG 2.04 Ω/kft). Tolerance 3 % as for copper (stranding, 3 digits).
        check_nec(Conductor::Aluminium, 12, 3.25, 0.03);
        check_nec(Conductor::Aluminium, 10, 2.04, 0.03);
    }

    #[test]
    fn nec_temperature_coefficient_matches_ours() {
        // Source: NEC Chapter 9 Table 8 note: R2 = R1·(1 + α(T2 − 75)), α_Cu = 0.00323 /K
        // referred to 75 °C. Ours referred to 75 °C: α20/(1 + α20·55 K). 3 printed digits.
        let a20 = Conductor::Copper.temp_coeff_20c_per_k();
        let a75 = a20 / (1.0 + a20 * 55.0);
        assert!((a75 - 0.00323).abs() <= 0.000005, "{a75}");
    }

    #[test]
    fn copper_against_iec_60228_class_5() {
        // Source: formula ρ20·2L/A with ρ20 = 1/58 (recomputed): 10 m of 4 mm² solid copper
        // at 20 °C = 4.31 Ω/km per conductor, 0.0862 Ω for the 20 m loop (3 digits).
        let r = cable_resistance_ohm(Conductor::Copper, 10.0, 4.0, 20.0);
        assert!((r / 0.020 - 4.31).abs() <= 0.005, "{} ohm/km", r / 0.020);
        // Source: IEC 60228 class 5 (flexible) plain copper, maximum resistance at 20 °C,
        // Ω/km: 1.5 mm² 13.3, 2.5 mm² 7.98, 4 mm² 4.95, 6 mm² 3.30, 10 mm² 1.91,
        // 16 mm² 1.21. These are maxima for a stranded conductor of the nominal size (the
        // standard fixes resistance, not metal area), so our solid 100 % IACS value
        // 1000/(58·A) must lie at or below each one. Measured: ours is 13.58 % (1.5, 2.5),
        // 12.92 % (4, 6), 9.73 % (10) and 10.94 % (16 mm²) below the maximum, i.e. a class 5
        // cable at its limit has 1.108–1.157 × our resistance. Band: 0 to 14 % below (the
        // worst 13.58 % plus the table's 3-digit rounding, ≤ 0.4 %).
        for (area_mm2, max_ohm_km) in [
            (1.5, 13.3),
            (2.5, 7.98),
            (4.0, 4.95),
            (6.0, 3.30),
            (10.0, 1.91),
            (16.0, 1.21),
        ] {
            // 500 m out and 500 m back: 1 km of conductor.
            let per_km = cable_resistance_ohm(Conductor::Copper, 500.0, area_mm2, 20.0);
            let below = 1.0 - per_km / max_ohm_km;
            assert!(
                (0.0..=0.14).contains(&below),
                "{area_mm2} mm²: {per_km} Ω/km is {:.2} % below {max_ohm_km}",
                100.0 * below
            );
        }
        // Source: same formula, temperature correction (recomputed): 70 °C is 1 + 0.00393·50.
        let hot = cable_resistance_ohm(Conductor::Copper, 10.0, 4.0, 70.0);
        assert!((hot / r - 1.1965).abs() <= 1e-9);
    }

    #[test]
    fn parallel_sum_matches_single_strings() {
        // Source: general mathematics (Kirchhoff: parallel currents add at equal voltage;
        // the union-of-points curve must equal the sum of the single-string curves at every
        // one of its points); 1e-9 A. Exercises the merge of 1, 2 and 3 distinct strings.
        let p = module60().substring(3);
        let (lit, dimmer, dim) = (p.at(900.0, 45.0), p.at(600.0, 35.0), p.at(200.0, 45.0));
        let grid = CurrentGrid::new(1.02 * lit.il_a, GRID_POINTS_DEFAULT);
        let a = substring_curve(&lit, BYPASS_DROP_DEFAULT_V, &grid);
        let b = substring_curve(&dimmer, BYPASS_DROP_DEFAULT_V, &grid);
        let c = substring_curve(&dim, BYPASS_DROP_DEFAULT_V, &grid);
        let (mut sa, mut sb, mut sc) = (Vec::new(), Vec::new(), Vec::new());
        string_curve(&[&a; 6], 0.08, None, &grid, &mut sa);
        string_curve(&[&b; 6], 0.08, None, &grid, &mut sb);
        string_curve(&[&c, &a, &a, &a, &a, &a], 0.0, Some(0.6), &grid, &mut sc);
        let single = |s: &[f64]| {
            let mut arr = ArrayCurve::default();
            array_curve(&[s], &grid, 0.0, &mut arr);
            arr
        };
        let (ua, ub, uc) = (single(&sa), single(&sb), single(&sc));
        let cases: [(&[&[f64]], [f64; 3]); 3] = [
            (&[&sa, &sb], [1.0, 1.0, 0.0]),
            (&[&sa, &sb, &sc, &sb], [1.0, 2.0, 1.0]),
            (&[&sc, &sc.clone(), &sa], [1.0, 0.0, 2.0]),
        ];
        for (strings, [ma, mb, mc]) in cases {
            let mut arr = ArrayCurve::default();
            array_curve(strings, &grid, 0.0, &mut arr);
            assert!(
                arr.v.windows(2).all(|w| w[1] > w[0]),
                "ascending, no duplicates"
            );
            for (&v, &i) in arr.v.iter().zip(&arr.i) {
                let want = ma * ua.current_at(v) + mb * ub.current_at(v) + mc * uc.current_at(v);
                assert!((i - want).abs() <= 1e-9, "v {v}: {i} vs {want}");
            }
        }
    }

    /// Demo-sized year of this module's work: 4400 daylight intervals, 8 modules of
    /// 3 substrings in 2 orientations, 6 layouts, a shaded substring every fourth hour.
    #[test]
    #[ignore = "timing, run by hand: cargo test --release --lib year_of_curves -- --ignored --nocapture"]
    fn year_of_curves_fits_the_budget() {
        // Source: the brief's budget: the whole demo year in 0.25 s single-threaded; this
        // part (curves, strings, arrays, maxima) must leave most of it to the rest: 0.1 s.
        let p = module60().substring(3);
        let grid_n = GRID_POINTS_DEFAULT;
        let mut grid = CurrentGrid::new(10.0, grid_n);
        let (mut east, mut west, mut dim) = (
            SubstringCurve::default(),
            SubstringCurve::default(),
            SubstringCurve::default(),
        );
        let mut strings: Vec<Vec<f64>> = vec![Vec::new(); 8];
        let mut arr = ArrayCurve::default();
        let mut maxima = Vec::new();
        let mut checksum = 0.0;
        let start = std::time::Instant::now();
        for h in 0..4400 {
            let s_e = 100.0 + (h % 9) as f64 * 100.0;
            let s_w = 900.0 - (h % 9) as f64 * 90.0;
            let t = 10.0 + (h % 13) as f64 * 3.0;
            let (oe, ow, od) = (p.at(s_e, t), p.at(s_w, t), p.at(0.3 * s_e, t));
            let shaded = h % 4 == 0;
            if shaded {
                grid.reset_for_substrings(&[oe, ow, od], BYPASS_DROP_DEFAULT_V, grid_n);
            } else {
                grid.reset_for_substrings(&[oe, ow], BYPASS_DROP_DEFAULT_V, grid_n);
            }
            substring_curve_into(&oe, BYPASS_DROP_DEFAULT_V, &grid, &mut east);
            substring_curve_into(&ow, BYPASS_DROP_DEFAULT_V, &grid, &mut west);
            if shaded {
                substring_curve_into(&od, BYPASS_DROP_DEFAULT_V, &grid, &mut dim);
            }
            let first = if shaded { &dim } else { &east };
            let e_mod = [first, &east, &east];
            let e_clear = [&east, &east, &east];
            let w_mod = [&west, &west, &west];
            // Layouts: 8S mixed; 4S2P by orientation; 4S2P mixed; 2S4P by orientation;
            // 2S4P mixed; 1S8P.
            let layouts: [&[usize]; 6] = [
                &[8],
                &[4, 4],
                &[4, 4],
                &[2, 2, 2, 2],
                &[2, 2, 2, 2],
                &[1; 8],
            ];
            for (li, layout) in layouts.iter().enumerate() {
                for (si, &len) in layout.iter().enumerate() {
                    // Fixed buffers: the caller's own allocations must not blur the timing.
                    let mut subs: [&SubstringCurve; 24] = [&east; 24];
                    for m in 0..len {
                        let by_orientation = li == 1 || li == 3 || li == 5;
                        let is_east = if by_orientation {
                            si < layout.len() / 2
                        } else {
                            m % 2 == 0
                        };
                        let module = if !is_east {
                            &w_mod
                        } else if si == 0 && m == 0 {
                            &e_mod
                        } else {
                            &e_clear
                        };
                        subs[3 * m..3 * m + 3].copy_from_slice(module);
                    }
                    string_curve(&subs[..3 * len], 0.05, None, &grid, &mut strings[si]);
                }
                let mut refs: [&[f64]; 8] = [&[]; 8];
                for (r, sv) in refs.iter_mut().zip(&strings) {
                    *r = sv.as_slice();
                }
                array_curve(&refs[..layout.len()], &grid, 0.02, &mut arr);
                arr.local_maxima_into(10.0, 140.0, &mut maxima);
                checksum += best(&maxima).p;
            }
        }
        let secs = start.elapsed().as_secs_f64();
        println!("year of curves: {secs:.3} s (checksum {checksum:.1})");
        assert!(checksum > 0.0);
        assert!(secs <= 0.1, "{secs} s");
    }
}
