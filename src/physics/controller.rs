//! Charge controllers: where an MPPT or PWM controller settles on the array curve, and what
//! each of its limits costs.
//!
//! The controller sees the array curve at its terminals (cable drops already applied). This
//! module decides the operating point for one interval and splits the available power into
//! the loss steps of notebooks-free-docs/method-accounting.md; it keeps the wake/sleep state between intervals. It knows
//! nothing of layouts, plans or files.

use crate::physics::diode::Mpp;
use crate::physics::wiring::ArrayCurve;

/// Which maximum an MPPT tracker settles on.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum TrackerMode {
    /// The highest power in the window (notebooks-free-docs/method-controller.md).
    Global,
    /// Climbs from the open-circuit side and stops at the first maximum.
    Local,
}

/// Output current reduced above an ambient temperature (the controller's temperature
/// derating), linear: factor = 1 − `frac_per_k` · (T_air − `from_air_c`), between 0 and 1.
///
/// # Source
/// Common practice, no source: small controllers that publish a derating give full output
/// up to a stated ambient and less above it; a straight line is this model's reading.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct OutputDerating {
    /// Ambient (air) temperature above which the output current is reduced, °C.
    pub from_air_c: f64,
    /// Reduction per kelvin above it, fraction of the rated output current.
    pub frac_per_k: f64,
}

impl OutputDerating {
    /// The fraction of the rated output current allowed at an air temperature (1 at or
    /// below `from_air_c`, never below 0; a NaN temperature counts as no derating).
    pub fn factor(&self, air_c: f64) -> f64 {
        if air_c.is_nan() || air_c <= self.from_air_c {
            return 1.0;
        }
        (1.0 - self.frac_per_k * (air_c - self.from_air_c)).clamp(0.0, 1.0)
    }
}

/// The controller's electrical behaviour, validated.
#[derive(Clone, Debug, PartialEq)]
pub enum ControllerModel {
    Mppt {
        mppt_min_v: f64,
        mppt_max_v: f64,
        headroom_v: f64,
        /// (output fraction of the rated output, efficiency), increasing fractions.
        efficiency_curve: Vec<(f64, f64)>,
        tracking: TrackerMode,
        start_offset_v: f64,
        stop_offset_v: f64,
        /// The most current the controller draws from the array: above it the controller
        /// moves its point toward open circuit (a simulated limit, the input-limit step).
        max_input_a: f64,
        max_charge_a: f64,
        /// Output current derating above an ambient temperature (`None`: off).
        derating: Option<OutputDerating>,
    },
    Pwm {
        switch_drop_v: f64,
        /// The rated current the switch passes from the array (a simulated limit).
        max_input_a: f64,
        max_charge_a: f64,
        /// Output current derating above an ambient temperature (`None`: off).
        derating: Option<OutputDerating>,
    },
}

/// Power at each step of one interval, W. Each field is the power still available after the
/// named constraint; the differences are the losses.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct ControllerPowers {
    /// Best power the terminal curve offers anywhere (after cables).
    pub available_w: f64,
    /// Terminal voltage of that best point (0 when the curve offers nothing).
    pub available_v: f64,
    /// After the wake-up threshold, the voltage window and the tracker (PWM: the battery clamp).
    pub after_window_w: f64,
    /// After the input current limit.
    pub after_input_limit_w: f64,
    /// After output clipping (input power actually drawn).
    pub input_w: f64,
    /// Delivered to the battery.
    pub output_w: f64,
    /// Operating voltage at the terminals (0 when asleep).
    pub voltage_v: f64,
    /// Awake at the evaluation point.
    pub awake: bool,
    /// The part of `available_w − after_window_w` lost because the array's maximum lay
    /// below the MPPT window's lower edge (MPPT only).
    pub below_window_w: f64,
    /// The same, because the maximum lay above the window's upper edge (MPPT only).
    pub above_window_w: f64,
    /// PWM: `available_w − after_window_w`, the array held at battery voltage.
    pub clamp_w: f64,
    /// The part of the clipping (`after_input_limit_w − input_w`) caused by the output
    /// derating at the interval's air temperature.
    pub derated_w: f64,
    /// Array current at the point the controller tracked before its input limit, A (0
    /// when asleep).
    pub tracked_a: f64,
}

/// Linear interpolation of an efficiency curve at an output fraction; flat beyond its ends.
///
/// # Source
/// notebooks-free-docs/method-controller.md (a few points, linear interpolation).
pub fn efficiency_at(curve: &[(f64, f64)], fraction: f64) -> f64 {
    match curve {
        [] => 1.0,
        [(_, e)] => *e,
        _ => {
            if fraction <= curve[0].0 {
                return curve[0].1;
            }
            for w in curve.windows(2) {
                let ((f0, e0), (f1, e1)) = (w[0], w[1]);
                if fraction <= f1 {
                    return e0 + (e1 - e0) * (fraction - f0) / (f1 - f0);
                }
            }
            curve[curve.len() - 1].1
        }
    }
}

/// Output power for an input power, solving P_out = η(P_out / P_rated) · P_in by fixed point.
fn output_for_input(curve: &[(f64, f64)], p_in: f64, p_rated: f64) -> f64 {
    let mut p_out = p_in * efficiency_at(curve, 1.0);
    for _ in 0..8 {
        p_out = p_in * efficiency_at(curve, p_out / p_rated);
    }
    p_out
}

/// The highest power on the curve between two voltages (edges included), and its voltage.
fn best_in(curve: &ArrayCurve, lo: f64, hi: f64) -> (f64, f64) {
    best_among(curve, lo, hi, |visit| {
        curve.for_each_local_maximum(lo, hi, visit);
    })
}

/// [`best_in`] given a way to visit the local maxima that lie in [lo, hi], in voltage order.
fn best_among(
    curve: &ArrayCurve,
    lo: f64,
    hi: f64,
    maxima: impl FnOnce(&mut dyn FnMut(Mpp)),
) -> (f64, f64) {
    if hi <= lo {
        let p = curve.power_at(lo).max(0.0);
        return (p, lo);
    }
    let mut best = (curve.power_at(lo).max(0.0), lo);
    let p_hi = curve.power_at(hi).max(0.0);
    if p_hi > best.0 {
        best = (p_hi, hi);
    }
    maxima(&mut |m: Mpp| {
        if m.p > best.0 {
            best = (m.p, m.v);
        }
    });
    best
}

/// Most local maxima of one curve kept on the stack; a curve with more is searched again
/// window by window.
const MAXIMA_KEPT: usize = 32;

/// The local maxima of a whole array curve (0 V to open circuit), found in one walk and
/// shared by every search of one interval: the best point over the whole curve, the best
/// in the controller's window, the best below its input limit, and how many maxima there
/// are (which decides whether the other tracking behaviour can differ).
pub struct CurveMaxima {
    found: [Mpp; MAXIMA_KEPT],
    n: usize,
    overflow: bool,
}

impl CurveMaxima {
    /// One walk over the whole curve.
    pub fn of(curve: &ArrayCurve) -> CurveMaxima {
        let mut m = CurveMaxima {
            found: [Mpp::ZERO; MAXIMA_KEPT],
            n: 0,
            overflow: false,
        };
        curve.for_each_local_maximum(0.0, curve.voc_v(), |x| {
            if m.n < MAXIMA_KEPT {
                m.found[m.n] = x;
            } else {
                m.overflow = true;
            }
            m.n += 1;
        });
        m
    }

    /// How many local maxima the whole curve has.
    pub fn count(&self) -> usize {
        self.n
    }

    /// [`best_in`] from the maxima found: the window's edges and the maxima strictly inside
    /// it. A maximum of the whole curve strictly inside a window is a maximum of the window
    /// too (the same segment, the same arithmetic), and a window's own edge maxima are its
    /// edges, which [`best_in`] looks at anyway.
    fn best_in(&self, curve: &ArrayCurve, lo: f64, hi: f64) -> (f64, f64) {
        if self.overflow {
            return best_in(curve, lo, hi);
        }
        best_among(curve, lo, hi, |visit| {
            for m in &self.found[..self.n] {
                if m.v > lo && m.v < hi {
                    visit(*m);
                }
            }
        })
    }
}

/// The first maximum met when climbing down in voltage from `hi` (open-circuit side) to `lo`.
fn first_from_top(curve: &ArrayCurve, lo: f64, hi: f64) -> (f64, f64) {
    if hi <= lo {
        return (curve.power_at(lo).max(0.0), lo);
    }
    // Local maxima come sorted by voltage; the climb meets the highest-voltage one first. If
    // there is none, power rises all the way down to the window's lower edge.
    let mut last = None;
    curve.for_each_local_maximum(lo, hi, |m| last = Some(m));
    match last {
        Some(m) => (m.p, m.v),
        None => {
            let (p_lo, p_hi) = (curve.power_at(lo), curve.power_at(hi));
            if p_lo >= p_hi {
                (p_lo.max(0.0), lo)
            } else {
                (p_hi.max(0.0), hi)
            }
        }
    }
}

/// The voltage at which the curve's current equals `i_a` (current falls with voltage).
fn voltage_at_current(curve: &ArrayCurve, i_a: f64) -> f64 {
    let (mut lo, mut hi) = (0.0, curve.voc_v());
    if curve.current_at(lo) <= i_a {
        return lo;
    }
    for _ in 0..60 {
        let mid = 0.5 * (lo + hi);
        if curve.current_at(mid) > i_a {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    hi
}

impl ControllerModel {
    /// The same controller with the other tracking behaviour (MPPT: global ↔ local; PWM has
    /// no tracker and stays as it is).
    pub fn with_other_tracking(&self) -> ControllerModel {
        let mut other = self.clone();
        if let ControllerModel::Mppt { tracking, .. } = &mut other {
            *tracking = match tracking {
                TrackerMode::Global => TrackerMode::Local,
                TrackerMode::Local => TrackerMode::Global,
            };
        }
        other
    }

    /// True for a PWM controller (the array switched straight onto the battery).
    pub fn is_pwm(&self) -> bool {
        matches!(self, ControllerModel::Pwm { .. })
    }

    /// The most current the controller draws from the array, A (a simulated limit).
    pub fn max_input_a(&self) -> f64 {
        match self {
            ControllerModel::Mppt { max_input_a, .. }
            | ControllerModel::Pwm { max_input_a, .. } => *max_input_a,
        }
    }

    /// Output (charge) current limit, A.
    pub fn max_charge_a(&self) -> f64 {
        match self {
            ControllerModel::Mppt { max_charge_a, .. }
            | ControllerModel::Pwm { max_charge_a, .. } => *max_charge_a,
        }
    }

    /// Output current derating above an ambient temperature, when the plan gives one.
    pub fn derating(&self) -> Option<OutputDerating> {
        match self {
            ControllerModel::Mppt { derating, .. } | ControllerModel::Pwm { derating, .. } => {
                *derating
            }
        }
    }

    /// Output (charge) current limit at an air temperature, A (the derating applied).
    pub fn max_charge_a_at(&self, air_c: f64) -> f64 {
        self.max_charge_a() * self.derating().map_or(1.0, |d| d.factor(air_c))
    }

    /// "mppt" or "pwm".
    pub fn kind_name(&self) -> &'static str {
        match self {
            ControllerModel::Mppt { .. } => "mppt",
            ControllerModel::Pwm { .. } => "pwm",
        }
    }

    /// Lower edge of the MPPT window at a battery voltage (PWM: battery + switch drop), V.
    pub fn window_low_v(&self, battery_v: f64) -> f64 {
        match self {
            ControllerModel::Mppt {
                mppt_min_v,
                headroom_v,
                ..
            } => mppt_min_v.max(battery_v + headroom_v),
            ControllerModel::Pwm { switch_drop_v, .. } => battery_v + switch_drop_v,
        }
    }

    /// Voltage above the battery the array's Voc must exceed to wake the controller, V.
    pub fn start_offset_v(&self) -> f64 {
        match self {
            ControllerModel::Mppt { start_offset_v, .. } => *start_offset_v,
            ControllerModel::Pwm { switch_drop_v, .. } => *switch_drop_v,
        }
    }

    /// One interval: where the controller operates and what each limit costs.
    ///
    /// `awake` is the wake/sleep state carried from the previous interval and is updated.
    /// `battery_v` is the battery's charging voltage, `air_c` the interval's air temperature
    /// (used only by an output derating).
    ///
    /// # Formula
    /// MPPT: wakes when Voc_terminal > V_bat + start offset; works in
    /// [max(mppt_min, V_bat + headroom), mppt_max]; sleeps when the operating voltage falls
    /// below V_bat + stop offset; I ≤ input limit moves the point toward open circuit; output
    /// η·P_in ≤ I_charge(T_air) · V_bat clips likewise, I_charge(T_air) = max_charge_a ·
    /// derating factor. PWM: V_terminal = V_bat + switch drop, I ≤ input rating (input
    /// limit), then I ≤ I_charge(T_air) (clipping), delivered V_bat · I.
    ///
    /// # Source
    /// notebooks-free-docs/method-controller.md (behaviour common to small charge controllers; no single published source).
    pub fn operate(
        &self,
        curve: &ArrayCurve,
        battery_v: f64,
        air_c: f64,
        awake: &mut bool,
    ) -> ControllerPowers {
        self.operate_with(curve, &CurveMaxima::of(curve), battery_v, air_c, awake)
    }

    /// [`Self::operate`] with the curve's maxima already found ([`CurveMaxima::of`]), so that
    /// one walk serves every search of the interval.
    pub fn operate_with(
        &self,
        curve: &ArrayCurve,
        maxima: &CurveMaxima,
        battery_v: f64,
        air_c: f64,
        awake: &mut bool,
    ) -> ControllerPowers {
        let voc = curve.voc_v();
        let (available, available_v) = if voc > 0.0 {
            maxima.best_in(curve, 0.0, voc)
        } else {
            (0.0, 0.0)
        };
        let mut out = ControllerPowers {
            available_w: available,
            available_v,
            ..ControllerPowers::default()
        };
        let charge_a = self.max_charge_a_at(air_c);
        match self {
            ControllerModel::Mppt {
                mppt_min_v,
                mppt_max_v,
                headroom_v,
                efficiency_curve,
                tracking,
                start_offset_v,
                stop_offset_v,
                max_input_a,
                max_charge_a,
                ..
            } => {
                if !*awake && voc > battery_v + start_offset_v {
                    *awake = true;
                }
                if !*awake {
                    return out;
                }
                let lo = mppt_min_v.max(battery_v + headroom_v);
                let hi = mppt_max_v.min(voc);
                let pick = |lo: f64, hi: f64| match tracking {
                    TrackerMode::Global => maxima.best_in(curve, lo, hi),
                    TrackerMode::Local => first_from_top(curve, lo, hi),
                };
                let (p_window, v_window) = if hi > lo { pick(lo, hi) } else { (0.0, 0.0) };
                // What the window cost, by where the array's maximum lay.
                let window_cause = |out: &mut ControllerPowers, lost: f64| {
                    if available_v < lo {
                        out.below_window_w = lost;
                    } else if available_v > *mppt_max_v {
                        out.above_window_w = lost;
                    }
                };
                if p_window <= 0.0 || v_window < battery_v + stop_offset_v {
                    *awake = false;
                    window_cause(&mut out, available);
                    return out;
                }
                out.awake = true;
                out.after_window_w = p_window;
                window_cause(&mut out, available - p_window);
                // Input current limit: only voltages where I ≤ limit are allowed.
                out.tracked_a = curve.current_at(v_window).max(0.0);
                let (p_lim, v_lim) = if out.tracked_a > *max_input_a {
                    let v_min = voltage_at_current(curve, *max_input_a).max(lo);
                    pick(v_min, hi)
                } else {
                    (p_window, v_window)
                };
                out.after_input_limit_w = p_lim;
                out.voltage_v = v_lim;
                // Output clipping: the rated output (derated in heat) caps η·P_in.
                let clip = |rated_a: f64| -> (f64, f64) {
                    let p_rated = rated_a * battery_v;
                    let p_out = output_for_input(efficiency_curve, p_lim, p_rated);
                    if p_out > p_rated {
                        (p_rated / efficiency_at(efficiency_curve, 1.0), p_rated)
                    } else {
                        (p_lim, p_out)
                    }
                };
                let (p_in, p_out) = clip(charge_a);
                if p_in < p_lim {
                    // The point moves toward open circuit: find that voltage.
                    let (mut a, mut b) = (v_lim, hi);
                    for _ in 0..50 {
                        let mid = 0.5 * (a + b);
                        if curve.power_at(mid) > p_in {
                            a = mid;
                        } else {
                            b = mid;
                        }
                    }
                    out.voltage_v = b;
                    if charge_a < *max_charge_a {
                        out.derated_w = (clip(*max_charge_a).0 - p_in).max(0.0);
                    }
                }
                out.input_w = p_in;
                out.output_w = p_out;
                out
            }
            ControllerModel::Pwm {
                switch_drop_v,
                max_input_a,
                max_charge_a,
                ..
            } => {
                let v_t = battery_v + switch_drop_v;
                let i = curve.current_at(v_t).max(0.0);
                if voc <= v_t || i <= 0.0 {
                    *awake = false;
                    return out;
                }
                *awake = true;
                out.awake = true;
                out.voltage_v = v_t;
                out.tracked_a = i;
                out.after_window_w = v_t * i;
                out.clamp_w = available - out.after_window_w;
                let i_in = i.min(*max_input_a);
                out.after_input_limit_w = v_t * i_in;
                let i_out = i_in.min(charge_a);
                if charge_a < *max_charge_a {
                    out.derated_w = v_t * (i_in.min(*max_charge_a) - i_out);
                }
                out.input_w = v_t * i_out;
                out.output_w = battery_v * i_out;
                out
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::diode::{fit_de_soto, Datasheet, OperatingParams, BYPASS_DROP_DEFAULT_V};
    use crate::physics::wiring::{
        array_curve, string_curve, substring_curve, substring_knees_a, CurrentGrid,
    };

    /// An invented but consistent 36-cell datasheet (no real product), two bypass diodes.
    fn module_substring(irradiance_w_m2: f64, cell_c: f64) -> OperatingParams {
        let ds = Datasheet {
            voc_v: 22.4,
            isc_a: 7.05,
            vmp_v: 18.2,
            imp_a: 6.60,
            alpha_isc_a_k: 0.0005 * 7.05,
            beta_voc_v_k: -0.0030 * 22.4,
            cells_in_series: 36,
        };
        fit_de_soto(&ds)
            .expect("consistent datasheet")
            .substring(2)
            .at(irradiance_w_m2, cell_c)
    }

    /// One walk's maxima give the same best point as a walk of each window, on a string of
    /// four modules with one module's substrings at 25 % light (two maxima), for windows
    /// across the whole curve. Source: self-consistency of the two searches (common
    /// practice, no source); equality is exact.
    #[test]
    fn one_walk_finds_what_each_window_walk_finds() {
        let (sun, shade) = (
            module_substring(1000.0, 25.0),
            module_substring(250.0, 25.0),
        );
        let mut knees = substring_knees_a(&sun, BYPASS_DROP_DEFAULT_V).to_vec();
        knees.extend(substring_knees_a(&shade, BYPASS_DROP_DEFAULT_V));
        let grid = CurrentGrid::with_knees(sun.il_a * 1.02, 64, &knees);
        let a = substring_curve(&sun, BYPASS_DROP_DEFAULT_V, &grid);
        let b = substring_curve(&shade, BYPASS_DROP_DEFAULT_V, &grid);
        let subs = [&a, &a, &a, &a, &a, &a, &b, &b];
        let mut st = Vec::new();
        string_curve(&subs, 0.1, None, &grid, &mut st);
        let mut c = ArrayCurve::default();
        array_curve(&[st.as_slice()], &grid, 0.05, &mut c);
        let maxima = CurveMaxima::of(&c);
        assert!(maxima.count() >= 2, "shade gives two maxima");
        let voc = c.voc_v();
        for lo10 in 0..(voc * 10.0) as usize {
            for hi10 in (lo10..(voc * 10.0) as usize + 5).step_by(7) {
                let (lo, hi) = (lo10 as f64 / 10.0, hi10 as f64 / 10.0);
                assert_eq!(
                    maxima.best_in(&c, lo, hi),
                    best_in(&c, lo, hi),
                    "window {lo}..{hi}"
                );
            }
        }
    }

    /// The terminal curve of `parallel` strings of `series` identical modules.
    fn curve(series: usize, parallel: usize, g: f64, r_main: f64) -> ArrayCurve {
        let p = module_substring(g, 25.0);
        let grid = CurrentGrid::with_knees(
            p.il_a * 1.02,
            64,
            &substring_knees_a(&p, BYPASS_DROP_DEFAULT_V),
        );
        let sub = substring_curve(&p, BYPASS_DROP_DEFAULT_V, &grid);
        let subs: Vec<_> = std::iter::repeat_n(&sub, 2 * series).collect();
        let mut s = Vec::new();
        string_curve(&subs, 0.0, None, &grid, &mut s);
        let strings: Vec<&[f64]> = std::iter::repeat_n(s.as_slice(), parallel).collect();
        let mut out = ArrayCurve::default();
        array_curve(&strings, &grid, r_main, &mut out);
        out
    }

    fn mppt(max_input_a: f64, max_charge_a: f64) -> ControllerModel {
        ControllerModel::Mppt {
            mppt_min_v: 15.0,
            mppt_max_v: 95.0,
            headroom_v: 1.0,
            efficiency_curve: vec![(0.0, 0.96), (1.0, 0.96)],
            tracking: TrackerMode::Global,
            start_offset_v: 5.0,
            stop_offset_v: 1.0,
            max_input_a,
            max_charge_a,
            derating: None,
        }
    }

    #[test]
    fn never_wakes_when_voc_stays_below_battery_plus_start_offset() {
        // Source: notebooks-free-docs/method-controller.md start-up rule (common practice: battery + 5 V to start). One
        // 36-cell module (Voc ≈ 22 V) cannot start a 24 V-system controller charging at
        // 27.2 V, however long it waits.
        let c = curve(1, 1, 1000.0, 0.0);
        let ctl = mppt(30.0, 20.0);
        let mut awake = false;
        for _ in 0..24 {
            let p = ctl.operate(&c, 27.2, 25.0, &mut awake);
            assert!(!awake && !p.awake);
            assert_eq!(p.output_w, 0.0);
        }
        // The same module wakes a 12 V system (13.6 + 5 = 18.6 V < Voc).
        let p = ctl.operate(&c, 13.6, 25.0, &mut awake);
        assert!(awake && p.output_w > 0.0);
    }

    #[test]
    fn clipped_output_never_exceeds_the_charge_limit() {
        // Source: notebooks-free-docs/method-controller.md (output limit = max charge current × battery voltage).
        let c = curve(2, 3, 1000.0, 0.0);
        let ctl = mppt(50.0, 10.0);
        let mut awake = true;
        let p = ctl.operate(&c, 13.6, 25.0, &mut awake);
        assert!(p.output_w <= 10.0 * 13.6 + 1e-9, "{}", p.output_w);
        assert!(
            p.input_w < p.after_input_limit_w,
            "clipping moved the point"
        );
        // The clipped point sits on the open-circuit side of the maximum.
        assert!(c.power_at(p.voltage_v) <= p.input_w + 0.5);
    }

    #[test]
    fn input_current_limit_moves_the_point_toward_open_circuit() {
        // Source: notebooks-free-docs/method-controller.md (operating point moves up the curve so that I ≤ limit).
        let c = curve(1, 4, 1000.0, 0.0);
        let ctl = mppt(20.0, 100.0);
        let mut awake = true;
        let p = ctl.operate(&c, 13.6, 25.0, &mut awake);
        assert!(c.current_at(p.voltage_v) <= 20.0 + 1e-6);
        assert!(p.after_input_limit_w < p.after_window_w);
    }

    #[test]
    fn cable_loss_at_the_operating_current_is_i_squared_r() {
        // Source: Joule's law — the main run shifts each point by I·R, so at equal current the
        // terminal power is lower by I²R.
        let r = 0.05;
        let bare = curve(2, 2, 800.0, 0.0);
        let with = curve(2, 2, 800.0, r);
        for k in (0..bare.v.len()).step_by(7) {
            let (v, i) = (bare.v[k], bare.i[k]);
            let v_t = with.v[k];
            assert!((with.i[k] - i).abs() < 1e-12);
            assert!(((v * i - v_t * i) - i * i * r).abs() < 1e-9);
        }
    }

    #[test]
    fn pwm_harvest_rises_with_battery_voltage_up_to_the_maximum_power_voltage() {
        // Source: physics of the clamped operating point — on the flat part of the curve the
        // current barely changes, so P = V·I grows with the battery's voltage until the knee.
        let c = curve(1, 2, 1000.0, 0.0);
        let ctl = ControllerModel::Pwm {
            switch_drop_v: 0.2,
            max_input_a: 30.0,
            max_charge_a: 30.0,
            derating: None,
        };
        let mut last = 0.0;
        for v_bat in [11.0, 12.0, 13.0, 14.0, 15.0] {
            let mut awake = false;
            let p = ctl.operate(&c, v_bat, 25.0, &mut awake).output_w;
            assert!(p > last, "{v_bat} V: {p} W after {last} W");
            last = p;
        }
    }

    #[test]
    fn pwm_holds_the_array_at_battery_voltage() {
        // Source: notebooks-free-docs/method-controller.md (PWM: operating voltage = battery + switch drop, no gain).
        let c = curve(1, 2, 1000.0, 0.0);
        let ctl = ControllerModel::Pwm {
            switch_drop_v: 0.2,
            max_input_a: 30.0,
            max_charge_a: 30.0,
            derating: None,
        };
        let mut awake = false;
        let p = ctl.operate(&c, 13.6, 25.0, &mut awake);
        assert!((p.voltage_v - 13.8).abs() < 1e-12);
        let i = c.current_at(13.8);
        assert!((p.output_w - 13.6 * i).abs() < 1e-9);
    }

    #[test]
    fn efficiency_interpolates_and_is_flat_outside() {
        // Source: common practice, no source (linear interpolation, notebooks-free-docs/method-controller.md).
        let c = [(0.1, 0.90), (0.5, 0.96), (1.0, 0.94)];
        assert!((efficiency_at(&c, 0.0) - 0.90).abs() < 1e-12);
        assert!((efficiency_at(&c, 0.3) - 0.93).abs() < 1e-12);
        assert!((efficiency_at(&c, 0.75) - 0.95).abs() < 1e-12);
        assert!((efficiency_at(&c, 2.0) - 0.94).abs() < 1e-12);
    }

    #[test]
    fn output_solves_the_fixed_point() {
        // Source: recomputed from the definition P_out = η(P_out/P_rated)·P_in.
        let c = [(0.0, 0.90), (1.0, 0.98)];
        let p_out = output_for_input(&c, 500.0, 1000.0);
        let eta = efficiency_at(&c, p_out / 1000.0);
        assert!((p_out - 500.0 * eta).abs() < 1e-6);
    }
    #[test]
    fn derating_factor_is_linear_above_its_temperature_and_clamped() {
        // Source: worked by hand from the definition: 1 − 0.02 × (50 − 40) = 0.8.
        let d = OutputDerating {
            from_air_c: 40.0,
            frac_per_k: 0.02,
        };
        assert_eq!(d.factor(25.0), 1.0);
        assert_eq!(d.factor(40.0), 1.0);
        assert!((d.factor(50.0) - 0.8).abs() < 1e-12);
        assert_eq!(d.factor(100.0), 0.0);
        assert_eq!(d.factor(f64::NAN), 1.0);
    }

    #[test]
    fn mppt_output_derated_in_heat_and_the_part_it_cost_is_booked() {
        // Source: worked by hand: 10 A rated output derated to 0.8 × 10 = 8 A at 50 °C air
        // (from 40 °C, 2 %/K), so the output is at most 8 A × 13.6 V = 108.8 W.
        let c = curve(2, 3, 1000.0, 0.0);
        let plain = mppt(50.0, 10.0);
        let mut derated = plain.clone();
        if let ControllerModel::Mppt { derating, .. } = &mut derated {
            *derating = Some(OutputDerating {
                from_air_c: 40.0,
                frac_per_k: 0.02,
            });
        }
        let (mut a, mut b) = (true, true);
        let hot = derated.operate(&c, 13.6, 50.0, &mut a);
        let cool = plain.operate(&c, 13.6, 50.0, &mut b);
        assert!((hot.output_w - 108.8).abs() < 1e-9, "{}", hot.output_w);
        assert!((cool.output_w - 136.0).abs() < 1e-9, "{}", cool.output_w);
        // The derating's part of the clipping is the input power the cool controller drew
        // and the hot one did not.
        assert!((hot.derated_w - (cool.input_w - hot.input_w)).abs() < 1e-9);
        assert_eq!(cool.derated_w, 0.0);
        // At or below its temperature the derating changes nothing, bit for bit.
        let (mut a, mut b) = (true, true);
        assert_eq!(
            derated.operate(&c, 13.6, 40.0, &mut a),
            plain.operate(&c, 13.6, 40.0, &mut b)
        );
    }

    #[test]
    fn pwm_charge_limit_and_derating_are_clipping_after_the_input_limit() {
        // Source: worked by hand: 4 strings of one module give about 4 × 7 A = 28 A at the
        // clamp; rated 30 A in, 30 A out derated by 20 % (50 °C, 2 %/K above 40 °C) to 24 A:
        // delivered 24 A × 13.6 V = 326.4 W; the 4 A above 24 A at 13.8 V are the derating.
        let c = curve(1, 4, 1000.0, 0.0);
        let ctl = ControllerModel::Pwm {
            switch_drop_v: 0.2,
            max_input_a: 30.0,
            max_charge_a: 30.0,
            derating: Some(OutputDerating {
                from_air_c: 40.0,
                frac_per_k: 0.02,
            }),
        };
        let mut awake = false;
        let p = ctl.operate(&c, 13.6, 50.0, &mut awake);
        let i = c.current_at(13.8);
        assert!(i > 24.0 && i < 30.0, "{i}");
        assert!((p.output_w - 326.4).abs() < 1e-9, "{}", p.output_w);
        assert!((p.after_input_limit_w - 13.8 * i).abs() < 1e-9);
        assert!((p.derated_w - 13.8 * (i - 24.0)).abs() < 1e-9);
        assert!((p.tracked_a - i).abs() < 1e-12);
        assert!((p.clamp_w - (p.available_w - p.after_window_w)).abs() < 1e-12);
    }

    #[test]
    fn window_loss_is_split_by_where_the_maximum_lay() {
        // Source: definition (method-controller.md): one 36-cell module at 1000 W/m² and
        // 25 °C has its maximum near 18 V; a window from 19.5 V leaves it below, a window up
        // to 16 V leaves it above; inside the window nothing is booked to either edge.
        let c = curve(1, 1, 1000.0, 0.0);
        let window = |lo: f64, hi: f64| ControllerModel::Mppt {
            mppt_min_v: lo,
            mppt_max_v: hi,
            headroom_v: 1.0,
            efficiency_curve: vec![(0.0, 0.96), (1.0, 0.96)],
            tracking: TrackerMode::Global,
            start_offset_v: 5.0,
            stop_offset_v: 1.0,
            max_input_a: 30.0,
            max_charge_a: 30.0,
            derating: None,
        };
        let mut awake = true;
        let below = window(19.5, 95.0).operate(&c, 12.0, 25.0, &mut awake);
        assert!(below.below_window_w > 0.0 && below.above_window_w == 0.0);
        assert!((below.below_window_w - (below.available_w - below.after_window_w)).abs() < 1e-12);
        let mut awake = true;
        let above = window(13.5, 16.0).operate(&c, 12.0, 25.0, &mut awake);
        assert!(above.above_window_w > 0.0 && above.below_window_w == 0.0);
        assert!((above.above_window_w - (above.available_w - above.after_window_w)).abs() < 1e-12);
        let mut awake = true;
        let inside = window(13.5, 95.0).operate(&c, 12.0, 25.0, &mut awake);
        assert_eq!((inside.below_window_w, inside.above_window_w), (0.0, 0.0));
    }

    #[test]
    fn tracked_current_shows_whether_the_input_limit_binds() {
        // Source: definition: the limit binds exactly when the current at the tracked maximum
        // exceeds it (method-controller.md), and the final point then carries at most the limit.
        let c = curve(1, 4, 1000.0, 0.0);
        let mut awake = true;
        let free = mppt(40.0, 100.0).operate(&c, 13.6, 25.0, &mut awake);
        assert!(free.tracked_a < 40.0 && free.after_input_limit_w == free.after_window_w);
        let mut awake = true;
        let bound = mppt(20.0, 100.0).operate(&c, 13.6, 25.0, &mut awake);
        assert!((bound.tracked_a - free.tracked_a).abs() < 1e-12);
        assert!(bound.tracked_a > 20.0 && bound.after_input_limit_w < bound.after_window_w);
        assert!(c.current_at(bound.voltage_v) <= 20.0 + 1e-6);
    }
}
