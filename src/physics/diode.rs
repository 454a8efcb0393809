//! The module's electrical behaviour: the De Soto, Klein & Beckman 2006 single-diode model,
//! fitted once per module type from datasheet values, translated to each interval's
//! effective irradiance and cell temperature, and solved explicitly with the Lambert W
//! function at any current or voltage (forward, reverse and dark).
//!
//! Also here: the split of a module into bypass-diode substrings and the bypass clamp of
//! one substring. This module deliberately does not combine curves (series strings,
//! parallel strings, cables: see `wiring`), does not know spectra or incidence angles
//! (the effective irradiance arrives already corrected), and does not model reverse
//! breakdown of cells (the bypass diode clamps long before it in the cases we simulate).
//!
//! Sign convention (generator convention): current is positive when the cells deliver
//! power; a substring driven above its photocurrent has a negative voltage.

use crate::num::num;

/// Boltzmann constant over elementary charge, V/K (also eV/K).
///
/// # Source
/// CODATA 2018 exact values k = 1.380649e-23 J/K, q = 1.602176634e-19 C.
pub const K_OVER_Q_V_K: f64 = 8.617_333_262e-5;

/// Reference (STC) cell temperature, K.
///
/// # Source
/// IEC 60904-3 standard test conditions: 25 °C cell, 1000 W/m², AM1.5G.
pub const T_REF_K: f64 = 298.15;

/// Reference (STC) irradiance, W/m².
pub const S_REF_W_M2: f64 = 1000.0;

/// Band gap of crystalline silicon at the reference temperature, eV.
///
/// # Source
/// De Soto, Klein & Beckman 2006, Solar Energy 80, 78–88 (value for c-Si).
pub const EG_REF_EV: f64 = 1.121;

/// Relative temperature dependence of the band gap, 1/K (Eg = Eg_ref (1 + c (T − T_ref))).
///
/// # Source
/// De Soto, Klein & Beckman 2006 (c = −0.0002677 /K for c-Si).
pub const EG_TEMP_COEFF_PER_K: f64 = -0.000_267_7;

/// Default forward drop of a bypass diode, V.
///
/// # Source
/// Common practice, no source: Schottky bypass diodes in junction boxes drop 0.4–0.6 V
/// at module current; notebooks-free-docs/method-diode.md fixes 0.5 V as the default.
pub const BYPASS_DROP_DEFAULT_V: f64 = 0.5;

/// Irradiance below which the shunt resistance stops growing, W/m².
///
/// De Soto scales Rsh with 1/S, which diverges in darkness. Below this floor the shunt is
/// held at Rsh_ref · S_ref / floor (1000 × Rsh_ref): "huge" for every purpose here, yet
/// finite, so that a dark substring's curve never contains an infinity or a NaN.
pub const DARK_IRRADIANCE_FLOOR_W_M2: f64 = 1.0;

/// Fill-factor range accepted by [`fit_de_soto`].
///
/// Lower end 0.50: crystalline and thin-film modules sold for small systems have fill
/// factors of about 0.60–0.82; below 0.50 the values are almost surely a typing error
/// (for example Vmp and Imp of another module) and a single-diode fit would need absurd
/// series resistance. Upper end 0.86: the ideal-diode limit of a silicon cell
/// (Green 1982's empirical FF₀ = (v − ln(v + 0.72))/(v + 1), v = Voc per cell over kT/q,
/// from memory, gives about 0.83–0.85 for 0.6–0.75 V per cell at 25 °C); a datasheet above
/// it cannot be met with non-negative series resistance.
pub const FILL_FACTOR_RANGE: (f64, f64) = (0.50, 0.86);

/// Accepted range of the Voc temperature coefficient relative to Voc, 1/K.
///
/// Silicon modules print −0.25 … −0.45 %/K; we accept −1.0 … −0.05 %/K so that unusual
/// technologies pass, while a value given in %/K instead of V/K (−0.3 read as −0.3 V/K on
/// a 22 V module: −1.4 %/K) is caught.
pub const BETA_REL_RANGE_PER_K: (f64, f64) = (-0.010, -0.000_5);

/// Accepted range of the Isc temperature coefficient relative to Isc, 1/K.
///
/// Silicon modules print +0.03 … +0.10 %/K; we accept −0.1 … +0.5 %/K.
pub const ALPHA_REL_RANGE_PER_K: (f64, f64) = (-0.001, 0.005);

/// Datasheet values at STC used to fit the single-diode model.
#[derive(Clone, Debug)]
pub struct Datasheet {
    /// Open-circuit voltage at STC, V.
    pub voc_v: f64,
    /// Short-circuit current at STC, A.
    pub isc_a: f64,
    /// Maximum-power voltage at STC, V.
    pub vmp_v: f64,
    /// Maximum-power current at STC, A.
    pub imp_a: f64,
    /// Temperature coefficient of Isc, A/K (positive for silicon).
    pub alpha_isc_a_k: f64,
    /// Temperature coefficient of Voc, V/K (negative).
    pub beta_voc_v_k: f64,
    /// Cells in series in the whole module.
    pub cells_in_series: u32,
}

/// Why a datasheet could not be turned into single-diode parameters.
#[derive(Debug, thiserror::Error)]
pub enum FitError {
    /// A value is NaN or infinite.
    #[error("datasheet {name} = {} is not a finite number", num(.value))]
    NotFinite { name: &'static str, value: f64 },
    /// A value that must be positive is not.
    #[error("datasheet {name} = {} must be greater than zero", num(.value))]
    NotPositive { name: &'static str, value: f64 },
    /// No cells.
    #[error("datasheet cells_in_series = 0: a module needs at least one cell")]
    NoCells,
    /// Vmp is not below Voc.
    #[error("datasheet vmp_v = {} is not below voc_v = {}: the maximum-power voltage must be lower than the open-circuit voltage", num(.vmp_v), num(.voc_v))]
    VmpNotBelowVoc { vmp_v: f64, voc_v: f64 },
    /// Imp is not below Isc.
    #[error("datasheet imp_a = {} is not below isc_a = {}: the maximum-power current must be lower than the short-circuit current", num(.imp_a), num(.isc_a))]
    ImpNotBelowIsc { imp_a: f64, isc_a: f64 },
    /// The fill factor is outside [`FILL_FACTOR_RANGE`].
    #[error("datasheet fill factor vmp·imp/(voc·isc) = {fill_factor:.3} is outside {lo:.2} to {hi:.2} (below: probably a typing error; above: beyond what silicon cells reach)")]
    FillFactor { fill_factor: f64, lo: f64, hi: f64 },
    /// The Voc temperature coefficient is implausible.
    #[error("datasheet beta_voc_v_k = {} V/K is {pct_per_k:.3} %/K of voc_v; expected {lo:.2} to {hi:.2} %/K (is it given in %/K instead of V/K?)", num(.value))]
    BetaOutOfRange {
        value: f64,
        pct_per_k: f64,
        lo: f64,
        hi: f64,
    },
    /// The Isc temperature coefficient is implausible.
    #[error("datasheet alpha_isc_a_k = {} A/K is {pct_per_k:.3} %/K of isc_a; expected {lo:.2} to {hi:.2} %/K (is it given in %/K instead of A/K?)", num(.value))]
    AlphaOutOfRange {
        value: f64,
        pct_per_k: f64,
        lo: f64,
        hi: f64,
    },
    /// The five De Soto conditions could not be met.
    #[error("the single-diode fit did not converge after {iterations} iterations (largest residual {residual:.2e}): the datasheet values may be inconsistent with one another, check the voc temperature coefficient and the maximum-power values")]
    NotConverged { iterations: usize, residual: f64 },
    /// The conditions can only be met with a negative series or shunt resistance.
    #[error("no physical single-diode fit: fill factor {fill_factor:.3} and beta_voc_v_k = {} V/K ({beta_pct_per_k:.3} %/K) need a negative series or shunt resistance (check both on the datasheet)", num(.beta_voc_v_k))]
    NoPhysicalSolution {
        fill_factor: f64,
        beta_voc_v_k: f64,
        beta_pct_per_k: f64,
    },
    /// The fit converged but does not reproduce the datasheet within 0.5 %.
    #[error("the single-diode fit reproduces {quantity} only within {error_pct:.2} % (limit 0.5 %): the datasheet values may be inconsistent with one another")]
    PoorFit {
        quantity: &'static str,
        error_pct: f64,
    },
}

/// Reference (STC) parameters, De Soto, Klein & Beckman 2006 (Solar Energy 80, 78–88).
#[derive(Clone, Copy, Debug)]
pub struct ReferenceParams {
    /// Photocurrent at STC, A.
    pub il_ref_a: f64,
    /// Diode saturation current at STC, A.
    pub io_ref_a: f64,
    /// Series resistance, ohm (independent of conditions).
    pub rs_ohm: f64,
    /// Shunt resistance at STC, ohm.
    pub rsh_ref_ohm: f64,
    /// Modified ideality factor n·Ns·k·T_ref/q, V.
    pub a_ref_v: f64,
    /// Temperature coefficient of Isc, A/K.
    pub alpha_isc_a_k: f64,
    /// Cells in series these parameters describe.
    pub cells_in_series: u32,
}

/// Single-diode parameters at operating conditions.
#[derive(Clone, Copy, Debug)]
pub struct OperatingParams {
    /// Photocurrent, A.
    pub il_a: f64,
    /// Diode saturation current, A.
    pub io_a: f64,
    /// Series resistance, ohm.
    pub rs_ohm: f64,
    /// Shunt resistance, ohm.
    pub rsh_ohm: f64,
    /// Modified ideality factor n·Ns·k·T/q, V.
    pub a_v: f64,
}

/// A maximum-power point: voltage (V), current (A) and power (W).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Mpp {
    /// Voltage, V.
    pub v: f64,
    /// Current, A.
    pub i: f64,
    /// Power, W.
    pub p: f64,
}

impl Mpp {
    /// The zero point (no power), used in darkness.
    pub const ZERO: Mpp = Mpp {
        v: 0.0,
        i: 0.0,
        p: 0.0,
    };
}

/// The principal branch W₀ of the Lambert W function: the w ≥ −1 with w·eʷ = x.
///
/// # Formula
/// Halley iteration on f(w) = w·eʷ − x for x ≤ e, started from the branch-point series
/// w ≈ −1 + p − p²/3 + 11p³/72 (p = √(2(e·x + 1))) near x = −1/e and from ln(1 + x)
/// elsewhere; for x > e, Newton iteration on the logarithmic form w + ln w = ln x,
/// started from the asymptotic series w ≈ L − ln L + ln L / L (L = ln x), so that huge
/// arguments never overflow (from L = 50 up: the series to five terms and exactly one
/// Newton step, which suffices; see `w0_log_form_fast`).
///
/// # Source
/// Corless, Gonnet, Hare, Jeffrey & Knuth 1996, "On the Lambert W function", Adv. Comput.
/// Math. 5, 329–359 (series at the branch point, asymptotic series, Halley's iteration).
///
/// # Validity
/// x ≥ −1/e; returns NaN below −1/e or for NaN, +∞ for +∞. Relative accuracy about
/// 1e-15 except within about 1e-8 of the branch point, where W itself is ill-conditioned.
pub fn lambert_w0(x: f64) -> f64 {
    const INV_E: f64 = 0.367_879_441_171_442_33;
    if x.is_nan() || x < -INV_E - 4.0 * f64::EPSILON {
        return f64::NAN;
    }
    if x == f64::INFINITY {
        return f64::INFINITY;
    }
    if x <= -INV_E {
        return -1.0;
    }
    if x == 0.0 {
        return 0.0;
    }
    if x > std::f64::consts::E {
        return w0_log_form(x.ln());
    }
    halley_w0(x)
}

/// W₀(eˡ) without forming eˡ: the hot path of the curve solutions, where the argument of
/// W is an exponential that would overflow f64 (l of several thousand is common).
///
/// # Formula
/// l ≤ 1: W₀(eˡ) by [`lambert_w0`]; l > 1: Newton on w + ln w = l (see [`lambert_w0`]).
///
/// # Validity
/// Any finite l; −∞ gives 0, +∞ gives +∞, NaN gives NaN.
pub fn lambert_w0_of_exp(l: f64) -> f64 {
    if l > 1.0 {
        w0_log_form(l)
    } else if l < -745.0 {
        // e^l underflows to 0; W(x) ≈ x there, also 0.
        0.0
    } else {
        lambert_w0(l.exp())
    }
}

/// Halley iteration for −1/e < x ≤ e (no overflow possible here).
fn halley_w0(x: f64) -> f64 {
    let e = std::f64::consts::E;
    let mut w = if x < -0.25 {
        let p = (2.0 * (e * x + 1.0)).max(0.0).sqrt();
        -1.0 + p - p * p / 3.0 + 11.0 / 72.0 * p * p * p
    } else {
        x.ln_1p()
    };
    for _ in 0..50 {
        let ew = w.exp();
        let f = w * ew - x;
        let wp1 = w + 1.0;
        if wp1 <= 0.0 {
            // At the branch point itself the derivative vanishes; the series start is
            // already as good as double precision allows there.
            break;
        }
        let denom = ew * wp1 - (w + 2.0) * f / (2.0 * wp1);
        let dw = f / denom;
        w -= dw;
        if dw.abs() <= 1e-15 * w.abs().max(1e-300) {
            break;
        }
    }
    w
}

/// Smallest l for which [`w0_log_form_fast`] is exact to rounding.
const W_FAST_MIN_L: f64 = 50.0;

/// W₀(eˡ) for l ≥ 50 with a fixed amount of work (no data-dependent loop), so that a
/// loop over many points runs at the processor's throughput, not at its latency.
///
/// # Formula
/// Start from the asymptotic series to five terms (L₁ = l, L₂ = ln l):
/// w₀ = L₁ − L₂ + L₂/L₁ + L₂(L₂ − 2)/(2L₁²) + L₂(6 − 9L₂ + 2L₂²)/(6L₁³),
/// whose error (the next term, L₂(−12 + 36L₂ − 22L₂² + 3L₂³)/(12L₁⁴)) is below 2e-6 at
/// l = 50 and falls as l⁻⁴; one Newton step on w + ln w = l leaves about e²/(2w²), below
/// 1e-16 relative. Two logarithms and two divisions in all.
///
/// # Source
/// Corless, Gonnet, Hare, Jeffrey & Knuth 1996, eq. 4.19 (asymptotic series).
#[inline]
fn w0_log_form_fast(l: f64) -> f64 {
    let l2 = l.ln();
    let r = 1.0 / l;
    let w = l - l2
        + l2 * r * (1.0 + r * (0.5 * (l2 - 2.0) + r * (6.0 - 9.0 * l2 + 2.0 * l2 * l2) / 6.0));
    w - (w + w.ln() - l) * w / (w + 1.0)
}

/// Newton iteration on w + ln w = l for l > 1 (w > 0.56); the fixed-work form from 50 up.
fn w0_log_form(l: f64) -> f64 {
    if l == f64::INFINITY {
        return f64::INFINITY;
    }
    if l >= W_FAST_MIN_L {
        return w0_log_form_fast(l);
    }
    let ll = l.ln();
    let mut w = if l > 3.0 { l - ll + ll / l } else { 0.6 * l };
    for _ in 0..50 {
        let dw = (w + w.ln() - l) * w / (w + 1.0);
        w -= dw;
        if newton_converged(dw, w) {
            break;
        }
    }
    w
}

/// Stop rule of the Newton iteration on f(w) = w + ln w − l after a step dw.
///
/// Newton's error after a step of size e is about e²·|f''|/(2f') = e²/(2w(w + 1)), so the
/// error left after this step is below 1e-16·w once dw² ≤ 2e-16·w²(w + 1).
fn newton_converged(dw: f64, w: f64) -> bool {
    dw * dw <= 2e-16 * w * w * (w + 1.0)
}

/// Checks one datasheet value for finiteness.
fn finite(name: &'static str, value: f64) -> Result<f64, FitError> {
    if value.is_finite() {
        Ok(value)
    } else {
        Err(FitError::NotFinite { name, value })
    }
}

/// Checks one datasheet value for finiteness and positivity.
fn positive(name: &'static str, value: f64) -> Result<f64, FitError> {
    finite(name, value)?;
    if value > 0.0 {
        Ok(value)
    } else {
        Err(FitError::NotPositive { name, value })
    }
}

/// Validates a datasheet before fitting; every check names the quantity and its value.
fn validate(ds: &Datasheet) -> Result<(), FitError> {
    let voc = positive("voc_v", ds.voc_v)?;
    let isc = positive("isc_a", ds.isc_a)?;
    let vmp = positive("vmp_v", ds.vmp_v)?;
    let imp = positive("imp_a", ds.imp_a)?;
    let alpha = finite("alpha_isc_a_k", ds.alpha_isc_a_k)?;
    let beta = finite("beta_voc_v_k", ds.beta_voc_v_k)?;
    if ds.cells_in_series == 0 {
        return Err(FitError::NoCells);
    }
    if vmp >= voc {
        return Err(FitError::VmpNotBelowVoc {
            vmp_v: vmp,
            voc_v: voc,
        });
    }
    if imp >= isc {
        return Err(FitError::ImpNotBelowIsc {
            imp_a: imp,
            isc_a: isc,
        });
    }
    let ff = vmp * imp / (voc * isc);
    let (lo, hi) = FILL_FACTOR_RANGE;
    if !(lo..=hi).contains(&ff) {
        return Err(FitError::FillFactor {
            fill_factor: ff,
            lo,
            hi,
        });
    }
    let (blo, bhi) = BETA_REL_RANGE_PER_K;
    let beta_rel = beta / voc;
    if !(blo..=bhi).contains(&beta_rel) {
        return Err(FitError::BetaOutOfRange {
            value: beta,
            pct_per_k: 100.0 * beta_rel,
            lo: 100.0 * blo,
            hi: 100.0 * bhi,
        });
    }
    let (alo, ahi) = ALPHA_REL_RANGE_PER_K;
    let alpha_rel = alpha / isc;
    if !(alo..=ahi).contains(&alpha_rel) {
        return Err(FitError::AlphaOutOfRange {
            value: alpha,
            pct_per_k: 100.0 * alpha_rel,
            lo: 100.0 * alo,
            hi: 100.0 * ahi,
        });
    }
    Ok(())
}

/// Thermal voltage of the whole module at the reference temperature, Ns·k·T_ref/q, V.
fn module_thermal_voltage_v(cells_in_series: u32) -> f64 {
    f64::from(cells_in_series) * K_OVER_Q_V_K * T_REF_K
}

/// Largest residual accepted as "the five conditions are met" (relative quantities).
const FIT_RESIDUAL_TOL: f64 = 1e-10;
/// Iteration cap of the Levenberg–Marquardt loop.
const FIT_MAX_ITER: usize = 200;
/// Bounds of the scaled unknowns: ideality n, Rs·Isc/Voc, shunt conductance Voc/(Isc·Rsh).
/// The shunt bound 1e-6 stands for "infinite shunt"; 0.9 keeps I0 positive.
const FIT_LOWER: [f64; 3] = [0.3, 0.0, 1e-6];
const FIT_UPPER: [f64; 3] = [4.0, 0.5, 0.9];

/// Builds reference parameters from the three scaled unknowns, eliminating IL and I0 with
/// the short-circuit and open-circuit conditions (both linear in IL and I0).
///
/// Returns None where no physical I0 exists (I0 ≤ 0).
fn params_from_unknowns(ds: &Datasheet, x: &[f64; 3]) -> Option<ReferenceParams> {
    let r_scale = ds.voc_v / ds.isc_a;
    let a = x[0] * module_thermal_voltage_v(ds.cells_in_series);
    let rs = x[1] * r_scale;
    let rsh = r_scale / x[2];
    // Short circuit:  IL − I0 (e^(Isc·Rs/a) − 1) − Isc·Rs/Rsh = Isc
    // Open circuit:   IL − I0 (e^(Voc/a) − 1) − Voc/Rsh = 0
    // Subtracting gives I0 directly; exp_m1 keeps the small short-circuit term exact.
    let e1 = (ds.isc_a * rs / a).exp_m1();
    let e2 = (ds.voc_v / a).exp_m1();
    let numerator = ds.isc_a * (1.0 + rs / rsh) - ds.voc_v / rsh;
    let io = numerator / (e2 - e1);
    let il = ds.voc_v / rsh + io * e2;
    if !(io > 0.0 && io.is_finite() && il.is_finite() && a > 0.0) {
        return None;
    }
    Some(ReferenceParams {
        il_ref_a: il,
        io_ref_a: io,
        rs_ohm: rs,
        rsh_ref_ohm: rsh,
        a_ref_v: a,
        alpha_isc_a_k: ds.alpha_isc_a_k,
        cells_in_series: ds.cells_in_series,
    })
}

/// The three remaining De Soto conditions as scaled residuals (zero at the solution):
/// current at the MPP, zero power slope at the MPP, Voc at 35 °C.
fn fit_residuals(ds: &Datasheet, x: &[f64; 3]) -> Option<[f64; 3]> {
    let p = params_from_unknowns(ds, x)?;
    let vd = ds.vmp_v + ds.imp_a * p.rs_ohm;
    let id = p.io_ref_a * (vd / p.a_ref_v).exp_m1();
    // Condition 3: the datasheet MPP lies on the curve.
    let r_mpp = (p.il_ref_a - id - vd / p.rsh_ref_ohm - ds.imp_a) / ds.imp_a;
    // Condition 4: dP/dV = I + V·dI/dV = 0 there, with dI/dV = −g/(1 + g·Rs),
    // g = I0/a·e^(Vd/a) + 1/Rsh.
    let g = (p.io_ref_a + id) / p.a_ref_v + 1.0 / p.rsh_ref_ohm;
    let r_slope = 1.0 - ds.vmp_v / ds.imp_a * g / (1.0 + g * p.rs_ohm);
    // Condition 5 (notebooks-free-docs/conventions.md): Voc at 35 °C cell = Voc_ref + β·10 K.
    let voc35 = p.at(S_REF_W_M2, 35.0).voc_v();
    let r_voc = (voc35 - (ds.voc_v + 10.0 * ds.beta_voc_v_k)) / ds.voc_v;
    let r = [r_mpp, r_slope, r_voc];
    r.iter().all(|v| v.is_finite()).then_some(r)
}

/// Starting point of the fit, in the scaled unknowns (n, Rs·Isc/Voc, Voc/(Isc·Rsh)).
///
/// Derived here from the De Soto equations in the infinite-shunt limit (the
/// four-parameter model of Duffie & Beckman 4th ed. §23.2, from memory):
/// - a from the Voc temperature coefficient: with Voc ≈ a·ln(IL/I0) and the De Soto
///   translations, dVoc/dT = Voc/T_ref + a·(α/Isc − 3/T_ref − Eg_ref(1 − c·T_ref)/(k·T_ref²)),
///   solved for a at dVoc/dT = β;
/// - Rs from the MPP condition of the ideal diode, Rs = (a·ln(1 − Imp/Isc) + Voc − Vmp)/Imp;
/// - Rsh from the zero-slope condition with those two, or 100·Voc/Isc when that gives
///   no positive shunt conductance.
fn initial_guess(ds: &Datasheet) -> [f64; 3] {
    let vt = module_thermal_voltage_v(ds.cells_in_series);
    let r_scale = ds.voc_v / ds.isc_a;
    let eg_term =
        EG_REF_EV * (1.0 - EG_TEMP_COEFF_PER_K * T_REF_K) / (K_OVER_Q_V_K * T_REF_K * T_REF_K);
    let denom = ds.alpha_isc_a_k / ds.isc_a - 3.0 / T_REF_K - eg_term;
    let mut a = (ds.beta_voc_v_k - ds.voc_v / T_REF_K) / denom;
    if !(a.is_finite() && (0.5 * vt..=2.5 * vt).contains(&a)) {
        a = 1.2 * vt;
    }
    let l = (1.0 - ds.imp_a / ds.isc_a).ln();
    let rs = ((a * l + ds.voc_v - ds.vmp_v) / ds.imp_a).clamp(0.001 * r_scale, 0.3 * r_scale);
    let g = ds.imp_a / (ds.vmp_v - ds.imp_a * rs) - (ds.isc_a - ds.imp_a) / a;
    let rsh = if g > 0.0 {
        (1.0 / g).clamp(2.0 * r_scale, 1e4 * r_scale)
    } else {
        100.0 * r_scale
    };
    [a / vt, rs / r_scale, r_scale / rsh]
}

/// Solves a 3×3 linear system by Gaussian elimination with partial pivoting.
fn solve3(mut m: [[f64; 3]; 3], mut b: [f64; 3]) -> Option<[f64; 3]> {
    for col in 0..3 {
        let pivot = (col..3).max_by(|&i, &j| m[i][col].abs().total_cmp(&m[j][col].abs()))?;
        if m[pivot][col].abs() < 1e-300 {
            return None;
        }
        m.swap(col, pivot);
        b.swap(col, pivot);
        for row in col + 1..3 {
            let f = m[row][col] / m[col][col];
            let pivot_row = m[col];
            for (x, p) in m[row][col..].iter_mut().zip(&pivot_row[col..]) {
                *x -= f * p;
            }
            b[row] -= f * b[col];
        }
    }
    let mut x = [0.0; 3];
    for row in (0..3).rev() {
        let mut s = b[row];
        for k in row + 1..3 {
            s -= m[row][k] * x[k];
        }
        x[row] = s / m[row][row];
    }
    x.iter().all(|v| v.is_finite()).then_some(x)
}

fn max_abs(r: &[f64; 3]) -> f64 {
    r.iter().fold(0.0_f64, |m, v| m.max(v.abs()))
}

fn clamp_unknowns(x: [f64; 3]) -> [f64; 3] {
    let mut y = x;
    for k in 0..3 {
        y[k] = y[k].clamp(FIT_LOWER[k], FIT_UPPER[k]);
    }
    y
}

/// Fits the five De Soto reference parameters to a datasheet.
///
/// # Formula
/// Unknowns IL, I0, Rs, Rsh, a of I = IL − I0 (e^((V + I·Rs)/a) − 1) − (V + I·Rs)/Rsh.
/// Conditions: I(0) = Isc; I(Voc) = 0; I(Vmp) = Imp; dP/dV = 0 at (Vmp, Imp);
/// Voc at 35 °C cell (with the De Soto translations) = Voc + 10 K·β.
/// The first two are linear in IL and I0 and eliminate them exactly; the other three are
/// solved by Levenberg–Marquardt (Marquardt's diagonal scaling, forward-difference
/// Jacobian) on n = a/(Ns·k·T_ref/q), Rs·Isc/Voc and Voc/(Isc·Rsh), which keeps the
/// unknowns of order one and lets the shunt reach "infinite" (a bound) when the datasheet
/// asks for it. Start: see `initial_guess` (the infinite-shunt model solved in closed
/// form). A fit that stalls at Rs = 0 or at the infinite-shunt bound has no physical
/// solution and is reported as such.
///
/// # Source
/// De Soto, Klein & Beckman 2006, Solar Energy 80, 78–88, section 3 (the five conditions);
/// the fifth condition's 35 °C point is the convention of notebooks-free-docs/conventions.md. Levenberg 1944, Marquardt 1963.
///
/// # Validity
/// Crystalline-silicon modules (Eg_ref = 1.121 eV). The result reproduces Isc, Voc, Vmp,
/// Imp and Pmax to far better than 0.5 %; a fit that does not is reported as an error.
///
/// # Errors
/// [`FitError`] for non-finite or non-positive values, Vmp ≥ Voc, Imp ≥ Isc, a fill factor
/// outside [`FILL_FACTOR_RANGE`], temperature coefficients outside their plausible ranges,
/// or a fit that does not converge.
pub fn fit_de_soto(ds: &Datasheet) -> Result<ReferenceParams, FitError> {
    validate(ds)?;
    let mut x = clamp_unknowns(initial_guess(ds));
    let mut r = fit_residuals(ds, &x).ok_or(FitError::NotConverged {
        iterations: 0,
        residual: f64::INFINITY,
    })?;
    let mut cost = 0.5 * r.iter().map(|v| v * v).sum::<f64>();
    let mut lambda = 1e-3;
    let mut iterations = 0;
    // When the fit stalls on or next to a bound (Rs = 0, Rsh → ∞, or an absurd ideality)
    // the datasheet asks for a negative resistance: say so, it tells the user which values
    // disagree.
    let failure = |x: &[f64; 3], iterations: usize, residual: f64| {
        // Near a bound: Rs below 1e-4·Voc/Isc or Rsh above 1e4·Voc/Isc, or n at its limits.
        let on_bound = x[0] <= FIT_LOWER[0] || x[0] >= FIT_UPPER[0] || x[1] <= 1e-4 || x[2] <= 1e-4;
        if on_bound {
            FitError::NoPhysicalSolution {
                fill_factor: ds.vmp_v * ds.imp_a / (ds.voc_v * ds.isc_a),
                beta_voc_v_k: ds.beta_voc_v_k,
                beta_pct_per_k: 100.0 * ds.beta_voc_v_k / ds.voc_v,
            }
        } else {
            FitError::NotConverged {
                iterations,
                residual,
            }
        }
    };
    while max_abs(&r) > FIT_RESIDUAL_TOL {
        iterations += 1;
        if iterations > FIT_MAX_ITER {
            return Err(failure(&x, FIT_MAX_ITER, max_abs(&r)));
        }
        // Forward-difference Jacobian (backward where the forward point is unphysical).
        let mut jac = [[0.0; 3]; 3];
        for k in 0..3 {
            let h = 1e-7 * x[k].abs().max(1e-2);
            let mut xp = x;
            xp[k] += h;
            let (rp, hh) = match fit_residuals(ds, &xp) {
                Some(rp) => (rp, h),
                None => {
                    xp[k] = x[k] - h;
                    match fit_residuals(ds, &xp) {
                        Some(rp) => (rp, -h),
                        None => return Err(failure(&x, iterations, max_abs(&r))),
                    }
                }
            };
            for row in 0..3 {
                jac[row][k] = (rp[row] - r[row]) / hh;
            }
        }
        let mut jtj = [[0.0; 3]; 3];
        let mut jtr = [0.0; 3];
        for i in 0..3 {
            for j in 0..3 {
                jtj[i][j] = (0..3).map(|row| jac[row][i] * jac[row][j]).sum();
            }
            jtr[i] = (0..3).map(|row| jac[row][i] * r[row]).sum();
        }
        // Try damped steps until the cost falls.
        let mut accepted = false;
        while lambda < 1e14 {
            let mut m = jtj;
            for k in 0..3 {
                m[k][k] += lambda * jtj[k][k].max(1e-12);
            }
            let step = solve3(m, [-jtr[0], -jtr[1], -jtr[2]]);
            if let Some(step) = step {
                let xn = clamp_unknowns([x[0] + step[0], x[1] + step[1], x[2] + step[2]]);
                if let Some(rn) = fit_residuals(ds, &xn) {
                    let cn = 0.5 * rn.iter().map(|v| v * v).sum::<f64>();
                    if cn < cost {
                        x = xn;
                        r = rn;
                        cost = cn;
                        lambda = (lambda / 4.0).max(1e-12);
                        accepted = true;
                        break;
                    }
                }
            }
            lambda *= 5.0;
        }
        if !accepted {
            return Err(failure(&x, iterations, max_abs(&r)));
        }
    }
    let params = params_from_unknowns(ds, &x).ok_or(FitError::NotConverged {
        iterations,
        residual: max_abs(&r),
    })?;
    check_fit(ds, &params)?;
    Ok(params)
}

/// Verifies the fit against the datasheet with the curve solvers (independent of the
/// residual equations): Isc, Voc, Vmp, Imp and Pmax within 0.5 %.
fn check_fit(ds: &Datasheet, p: &ReferenceParams) -> Result<(), FitError> {
    let op = p.at(S_REF_W_M2, T_REF_K - 273.15);
    let mpp = op.max_power_point();
    let checks = [
        ("isc_a", op.isc_a(), ds.isc_a),
        ("voc_v", op.voc_v(), ds.voc_v),
        ("vmp_v", mpp.v, ds.vmp_v),
        ("imp_a", mpp.i, ds.imp_a),
        ("pmax (vmp·imp)", mpp.p, ds.vmp_v * ds.imp_a),
    ];
    for (quantity, got, want) in checks {
        let err = (got / want - 1.0).abs();
        // NaN counts as a failure too.
        if err.is_nan() || err > 0.005 {
            return Err(FitError::PoorFit {
                quantity,
                error_pct: 100.0 * err,
            });
        }
    }
    Ok(())
}

impl ReferenceParams {
    /// Parameters at an effective irradiance and cell temperature (De Soto translations).
    ///
    /// # Formula
    /// T = cell_temp_c + 273.15 K, ΔT = T − T_ref, S = effective irradiance:
    /// a = a_ref·T/T_ref;
    /// I0 = I0_ref·(T/T_ref)³·exp(Eg_ref/(k·T_ref) − Eg/(k·T)), Eg = Eg_ref·(1 − 0.0002677·ΔT);
    /// IL = S/S_ref·(IL_ref + α_Isc·ΔT) (never below 0);
    /// Rsh = Rsh_ref·S_ref/max(S, 1 W/m²); Rs unchanged.
    ///
    /// # Source
    /// De Soto, Klein & Beckman 2006, Solar Energy 80, eqs. for a, I0, Eg, IL, Rsh
    /// (the air-mass modifier is already inside the effective irradiance).
    ///
    /// # Validity
    /// Cell temperatures −50…+100 °C and irradiances 0…1500 W/m² are well inside what the
    /// equations handle numerically. Darkness: S ≤ 0 gives IL = 0 and the shunt held at
    /// 1000·Rsh_ref ([`DARK_IRRADIANCE_FLOOR_W_M2`]); every curve stays finite.
    /// Negative or NaN irradiance counts as darkness.
    pub fn at(&self, effective_irradiance_w_m2: f64, cell_temp_c: f64) -> OperatingParams {
        let s = if effective_irradiance_w_m2 > 0.0 {
            effective_irradiance_w_m2
        } else {
            0.0
        };
        let t = cell_temp_c + 273.15;
        let dt = t - T_REF_K;
        let eg = EG_REF_EV * (1.0 + EG_TEMP_COEFF_PER_K * dt);
        let io = self.io_ref_a
            * (t / T_REF_K).powi(3)
            * (EG_REF_EV / (K_OVER_Q_V_K * T_REF_K) - eg / (K_OVER_Q_V_K * t)).exp();
        let il = (s / S_REF_W_M2 * (self.il_ref_a + self.alpha_isc_a_k * dt)).max(0.0);
        OperatingParams {
            il_a: il,
            io_a: io,
            rs_ohm: self.rs_ohm,
            rsh_ohm: self.rsh_ref_ohm * S_REF_W_M2 / s.max(DARK_IRRADIANCE_FLOOR_W_M2),
            a_v: self.a_ref_v * t / T_REF_K,
        }
    }

    /// The same cells split into `parts` equal substrings.
    ///
    /// # Formula
    /// a, Rs and Rsh divided by `parts` (they add in series); IL and I0 unchanged (the
    /// same cells carry the same current); cells_in_series divided by `parts` (integer
    /// division: a module whose cell count is not a multiple is described approximately).
    ///
    /// # Validity
    /// `parts` = 0 is treated as 1.
    pub fn substring(&self, parts: u32) -> ReferenceParams {
        let parts = parts.max(1);
        let k = f64::from(parts);
        ReferenceParams {
            il_ref_a: self.il_ref_a,
            io_ref_a: self.io_ref_a,
            rs_ohm: self.rs_ohm / k,
            rsh_ref_ohm: self.rsh_ref_ohm / k,
            a_ref_v: self.a_ref_v / k,
            alpha_isc_a_k: self.alpha_isc_a_k,
            cells_in_series: self.cells_in_series / parts,
        }
    }
}

impl OperatingParams {
    /// Current at a terminal voltage, A.
    ///
    /// # Formula
    /// Rs > 0: I = (Rsh(IL + I0) − V)/(Rs + Rsh) − (a/Rs)·W₀(θ),
    /// θ = Rs·I0·Rsh/(a(Rs + Rsh))·exp(Rsh(Rs(IL + I0) + V)/(a(Rs + Rsh))),
    /// with W₀(θ) evaluated from ln θ so that θ never overflows.
    /// Rs = 0: I = IL + I0 − I0·e^(V/a) − V/Rsh (exponent capped at 700).
    ///
    /// # Source
    /// Jain & Kapoor 2004, "Exact analytical solutions of the parameters of real solar
    /// cells using Lambert W-function", Sol. Energy Mater. Sol. Cells 81, 269–277.
    ///
    /// # Validity
    /// Any finite V: V < 0 gives the reverse-biased branch (current above Isc), V > Voc a
    /// negative current (the diode driven forward from outside).
    pub fn current_at(&self, v: f64) -> f64 {
        let (il, io, rs, rsh, a) = (self.il_a, self.io_a, self.rs_ohm, self.rsh_ohm, self.a_v);
        if rs <= 0.0 {
            return il + io - io * (v / a).min(700.0).exp() - v / rsh;
        }
        let sum = rs + rsh;
        let ln_theta = (rs * io * rsh / (a * sum)).ln() + rsh * (rs * (il + io) + v) / (a * sum);
        (rsh * (il + io) - v) / sum - a / rs * lambert_w0_of_exp(ln_theta)
    }

    /// Terminal voltage at a current, V.
    ///
    /// # Formula
    /// V = (IL + I0 − I)·Rsh − I·Rs − a·W₀(ψ), ψ = (I0·Rsh/a)·exp(Rsh(IL + I0 − I)/a),
    /// with W₀(ψ) evaluated from ln ψ.
    ///
    /// # Source
    /// Jain & Kapoor 2004 (as [`Self::current_at`]).
    ///
    /// # Validity
    /// Any finite I: I > IL gives the reverse-biased branch (negative voltage, about
    /// −(I − IL)·Rsh, no breakdown); I < 0 the forward-biased branch above Voc.
    pub fn voltage_at(&self, i: f64) -> f64 {
        let (il, io, rs, rsh, a) = (self.il_a, self.io_a, self.rs_ohm, self.rsh_ohm, self.a_v);
        let ln_psi = (io * rsh / a).ln() + rsh * (il + io - i) / a;
        (il + io - i) * rsh - i * rs - a * lambert_w0_of_exp(ln_psi)
    }

    /// Voltages at ascending currents with a bypass clamp: the fast path behind every
    /// substring curve. `out` is cleared and receives one voltage per current.
    ///
    /// # Formula
    /// As [`Self::voltage_at`] followed by max(V, −Vd), with two shortcuts that change no
    /// result beyond rounding: the logarithm of W's argument is formed once per curve and
    /// stepped linearly with the current, and once one current is clamped every higher
    /// current is too (V(I) decreases monotonically), so no further W is evaluated. For the
    /// large arguments of a lit substring (l ≥ 50) W₀ costs a fixed amount of work
    /// (`w0_log_form_fast`), so the loop runs at the processor's throughput.
    ///
    /// # Validity
    /// `currents` must be ascending (a [`crate::physics::wiring::CurrentGrid`] is).
    pub fn clamped_voltages_at(&self, currents: &[f64], bypass_drop_v: f64, out: &mut Vec<f64>) {
        out.clear();
        let (il, io, rs, rsh, a) = (self.il_a, self.io_a, self.rs_ohm, self.rsh_ohm, self.a_v);
        let ln_c = (io * rsh / a).ln();
        let k = rsh / a;
        let floor = -bypass_drop_v;
        let mut clamped = false;
        for &i in currents {
            if clamped {
                out.push(floor);
                continue;
            }
            let l = ln_c + k * (il + io - i);
            let w = lambert_w0_of_exp(l);
            let v = (il + io - i) * rsh - i * rs - a * w;
            if v <= floor {
                clamped = true;
                out.push(floor);
            } else {
                out.push(v);
            }
        }
    }

    /// Open-circuit voltage, V (0 in darkness, up to rounding).
    pub fn voc_v(&self) -> f64 {
        self.voltage_at(0.0)
    }

    /// Short-circuit current, A.
    pub fn isc_a(&self) -> f64 {
        self.current_at(0.0)
    }

    /// Slope dI/dV and curvature d²I/dV² at (V, I) on the curve.
    fn derivatives(&self, v: f64, i: f64) -> (f64, f64) {
        let z = (v + i * self.rs_ohm) / self.a_v;
        let id_plus_io = self.io_a * z.min(700.0).exp();
        let g = id_plus_io / self.a_v + 1.0 / self.rsh_ohm;
        let d1 = -g / (1.0 + g * self.rs_ohm);
        let dg = id_plus_io / (self.a_v * self.a_v) * (1.0 + self.rs_ohm * d1);
        let d2 = -dg / ((1.0 + g * self.rs_ohm) * (1.0 + g * self.rs_ohm));
        (d1, d2)
    }

    /// The maximum-power point of the curve.
    ///
    /// # Formula
    /// Root of dP/dV = I + V·dI/dV on [0, Voc] by Newton's method (analytic first and second
    /// derivatives of the implicit equation), safeguarded by bisection so the iterate never
    /// leaves the bracket.
    ///
    /// # Validity
    /// P(V) of one single-diode curve has a single maximum on [0, Voc]. In darkness
    /// (IL = 0, Voc ≤ 0 or Isc ≤ 0) the result is [`Mpp::ZERO`].
    pub fn max_power_point(&self) -> Mpp {
        let voc = self.voc_v();
        let isc = self.isc_a();
        if !(self.il_a > 0.0 && voc > 0.0 && isc > 0.0) {
            return Mpp::ZERO;
        }
        let (mut lo, mut hi) = (0.0, voc);
        let mut v = 0.8 * voc;
        for _ in 0..200 {
            let i = self.current_at(v);
            let (d1, d2) = self.derivatives(v, i);
            let h = i + v * d1;
            if h > 0.0 {
                lo = v;
            } else {
                hi = v;
            }
            let dh = 2.0 * d1 + v * d2;
            let newton = v - h / dh;
            let next = if dh < 0.0 && newton > lo && newton < hi {
                newton
            } else {
                0.5 * (lo + hi)
            };
            let done = (next - v).abs() <= 1e-13 * voc || hi - lo <= 1e-13 * voc;
            v = next;
            if done {
                break;
            }
        }
        let i = self.current_at(v);
        Mpp { v, i, p: v * i }
    }
}

/// Voltage of one substring at a string current, with its bypass diode, V.
///
/// # Formula
/// V_sub = max(V(I), −Vd): the bypass diode conducts as soon as the substring would be
/// driven below −Vd (constant forward drop, no diode curve).
///
/// # Source
/// notebooks-free-docs/method-diode.md; the constant-drop diode is common practice, no source.
pub fn substring_voltage_v(p: &OperatingParams, i: f64, bypass_drop_v: f64) -> f64 {
    p.voltage_at(i).max(-bypass_drop_v)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Invented 36-cell 100 W-class module (not any product), values chosen to be
    /// consistent with one another: FF 0.75, β −0.36 %/K, α +0.05 %/K.
    fn ds36() -> Datasheet {
        Datasheet {
            voc_v: 22.4,
            isc_a: 5.95,
            vmp_v: 18.0,
            imp_a: 5.56,
            alpha_isc_a_k: 0.003,
            beta_voc_v_k: -0.080,
            cells_in_series: 36,
        }
    }

    /// Invented 60-cell module (not any product): FF 0.78, β −0.30 %/K, α +0.05 %/K.
    fn ds60() -> Datasheet {
        Datasheet {
            voc_v: 38.5,
            isc_a: 9.20,
            vmp_v: 31.6,
            imp_a: 8.70,
            alpha_isc_a_k: 0.0046,
            beta_voc_v_k: -0.1155,
            cells_in_series: 60,
        }
    }

    /// Invented 72-cell module (not any product): FF 0.77, β −0.31 %/K, α +0.06 %/K.
    fn ds72() -> Datasheet {
        Datasheet {
            voc_v: 46.2,
            isc_a: 9.60,
            vmp_v: 37.8,
            imp_a: 9.05,
            alpha_isc_a_k: 0.0058,
            beta_voc_v_k: -0.143,
            cells_in_series: 72,
        }
    }

    fn rel(a: f64, b: f64) -> f64 {
        (a / b - 1.0).abs()
    }

    /// The fit must reproduce the datasheet's STC values within `tol` (relative).
    fn check_fit_reproduces(ds: &Datasheet, tol: f64) {
        let p = fit_de_soto(ds).expect("fit");
        let op = p.at(1000.0, 25.0);
        let mpp = op.max_power_point();
        assert!(
            rel(op.isc_a(), ds.isc_a) <= tol,
            "isc {} vs {}",
            op.isc_a(),
            ds.isc_a
        );
        assert!(
            rel(op.voc_v(), ds.voc_v) <= tol,
            "voc {} vs {}",
            op.voc_v(),
            ds.voc_v
        );
        assert!(rel(mpp.v, ds.vmp_v) <= tol, "vmp {} vs {}", mpp.v, ds.vmp_v);
        assert!(rel(mpp.i, ds.imp_a) <= tol, "imp {} vs {}", mpp.i, ds.imp_a);
        let pmax = ds.vmp_v * ds.imp_a;
        assert!(rel(mpp.p, pmax) <= tol, "pmax {} vs {}", mpp.p, pmax);
    }

    #[test]
    fn fit_reproduces_datasheet() {
        // Source: notebooks-free-docs/method-diode.md / De Soto, Klein & Beckman 2006 (the fit's five conditions);
        // The project requires 0.5 % on Pmax (notebooks-free-docs/method-diode.md), and the same on Isc, Voc, Vmp, Imp.
        check_fit_reproduces(&ds36(), 0.005);
        check_fit_reproduces(&ds60(), 0.005);
        check_fit_reproduces(&ds72(), 0.005);
    }

    #[test]
    fn fitted_parameters_are_physical() {
        // Source: common practice, no source: silicon modules fit to n ≈ 0.9–1.6,
        // Rs below ~ 0.1·Voc/Isc and Rsh above ~ 10·Voc/Isc.
        for ds in [ds36(), ds60(), ds72()] {
            let p = fit_de_soto(&ds).unwrap();
            let n = p.a_ref_v / module_thermal_voltage_v(ds.cells_in_series);
            assert!((0.9..=1.6).contains(&n), "n = {n}");
            assert!(
                p.rs_ohm > 0.0 && p.rs_ohm < 0.1 * ds.voc_v / ds.isc_a,
                "rs {}",
                p.rs_ohm
            );
            assert!(
                p.rsh_ref_ohm > 10.0 * ds.voc_v / ds.isc_a,
                "rsh {}",
                p.rsh_ref_ohm
            );
        }
    }

    /// Voc at `t_c` relative to STC, divided by ΔT, must match β within `tol` (relative).
    fn check_voc_slope(ds: &Datasheet, t_c: f64, tol: f64) {
        let p = fit_de_soto(ds).unwrap();
        let slope = (p.at(1000.0, t_c).voc_v() - p.at(1000.0, 25.0).voc_v()) / (t_c - 25.0);
        assert!(
            rel(slope, ds.beta_voc_v_k) <= tol,
            "slope {slope} vs beta {} at {t_c} °C",
            ds.beta_voc_v_k
        );
    }

    #[test]
    fn voc_at_35_c_matches_beta() {
        // Source: the fit's own fifth condition (notebooks-free-docs/conventions.md): Voc(35 °C) = Voc + 10β.
        // Residual tolerance 1e-10 of Voc in the fit; 1e-6 relative on the slope.
        for ds in [ds36(), ds60(), ds72()] {
            check_voc_slope(&ds, 35.0, 1e-6);
        }
    }

    #[test]
    fn voc_falls_at_about_the_datasheet_rate_when_hot() {
        // Source: datasheet coefficient β (IEC 60891-style linear coefficient). Tolerance 5 %:
        // the model's Voc(T) is slightly curved (T·ln T terms, Eg(T)), while β is one linear
        // coefficient printed to 2 significant digits over roughly 25…75 °C.
        for ds in [ds36(), ds60(), ds72()] {
            check_voc_slope(&ds, 45.0, 0.05);
            check_voc_slope(&ds, 65.0, 0.05);
        }
    }

    /// Bisection on the implicit single-diode equation (independent of Lambert W).
    fn bisect_current(p: &OperatingParams, v: f64) -> f64 {
        let f = |i: f64| {
            let vd = v + i * p.rs_ohm;
            p.il_a - p.io_a * (vd / p.a_v).exp_m1() - vd / p.rsh_ohm - i
        };
        // f is strictly decreasing in i; widen the bracket until it holds the root.
        let (mut lo, mut hi) = (-1.0, 1.0);
        while f(lo) < 0.0 {
            lo *= 2.0;
        }
        while f(hi) > 0.0 {
            hi *= 2.0;
        }
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if f(mid) > 0.0 {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        0.5 * (lo + hi)
    }

    fn check_current_against_bisection(p: &OperatingParams, v: f64) {
        let want = bisect_current(p, v);
        let got = p.current_at(v);
        assert!((got - want).abs() <= 1e-6, "v {v}: {got} vs {want}");
        // voltage_at must invert current_at at the same point.
        let back = p.voltage_at(want);
        let dv_tol = 1e-6 * (1.0 + back.abs());
        assert!(
            (back - v).abs() <= dv_tol.max(1e-6),
            "i {want}: v {back} vs {v}"
        );
    }

    #[test]
    fn current_at_agrees_with_bisection_everywhere() {
        // Source: general mathematics (the explicit Lambert-W form solves the implicit
        // equation exactly; bisection to 1e-6 A is an independent solver).
        let p = fit_de_soto(&ds60()).unwrap();
        for &(s, t) in &[(1000.0, 25.0), (200.0, 5.0), (800.0, 65.0), (20.0, -10.0)] {
            let op = p.at(s, t);
            let voc = op.voc_v();
            for k in -20..=24 {
                // From −2 V·(module scale) reverse bias through the knee to 1.2·Voc.
                let v = voc * f64::from(k) / 20.0;
                check_current_against_bisection(&op, v);
            }
            // Substring of a third of the cells, deep in reverse bias.
            let sub = p.substring(3).at(s, t);
            for v in [-15.0, -5.0, -0.5, 0.0, 4.0, sub.voc_v(), 1.1 * sub.voc_v()] {
                check_current_against_bisection(&sub, v);
            }
        }
    }

    fn check_w(x: f64, expected: f64) {
        let w = lambert_w0(x);
        assert!(
            rel(w, expected) <= 1e-12,
            "W({x}) = {w}, expected {expected}"
        );
    }

    #[test]
    fn lambert_w_known_values() {
        // Source: general mathematics: W(1) = Ω = 0.5671432904097838 (the omega constant),
        // W(e) = 1; 1e-12 relative.
        check_w(1.0, 0.567_143_290_409_783_8);
        check_w(std::f64::consts::E, 1.0);
        // Source: general mathematics, W(x·e^x) = x for x = 2, 10, −0.5 (by definition).
        check_w(2.0 * 2.0_f64.exp(), 2.0);
        check_w(10.0 * 10.0_f64.exp(), 10.0);
        check_w(-0.5 * (-0.5_f64).exp(), -0.5);
        // Source: general mathematics: W(−1/e) = −1, W(0) = 0.
        assert_eq!(lambert_w0(-(-1.0_f64).exp()), -1.0);
        assert_eq!(lambert_w0(0.0), 0.0);
        assert!(lambert_w0(-0.5).is_nan());
        assert!(lambert_w0(f64::NAN).is_nan());
    }

    #[test]
    fn lambert_w_identity_over_the_range() {
        // Source: general mathematics: w·e^w = x by definition; 1e-12 relative.
        let mut x = -0.3678;
        while x < 1e300 {
            let w = lambert_w0(x);
            let back = w * w.exp();
            if back.is_finite() {
                assert!(rel(back, x) <= 1e-12, "x {x}: w e^w = {back}");
            }
            // Log form: w + ln w = ln x, which also covers x beyond what e^w can hold.
            if x > 1.0 {
                assert!(rel(w + w.ln(), x.ln()) <= 1e-12, "x {x}");
            }
            x = if x < 0.0 { x + 0.05 } else { x * 3.7 + 1e-3 };
        }
        // Arguments far beyond f64 (e^5000) through the exponent form.
        for l in [2.0, 50.0, 700.0, 5000.0, 1e6, 1e12] {
            let w = lambert_w0_of_exp(l);
            // Source: general mathematics: w + ln w = l.
            assert!(rel(w + w.ln(), l) <= 1e-12, "l {l}: w {w}");
        }
        // Source: general mathematics: W(e^l) → e^l for l → −∞.
        assert!(rel(lambert_w0_of_exp(-40.0), (-40.0_f64).exp()) <= 1e-12);
    }

    /// W₀(eˡ) by bisection on w + ln w = l (independent of the series and Newton steps).
    fn bisect_w_of_exp(l: f64) -> f64 {
        let (mut lo, mut hi) = (1e-3_f64, l.max(1.0));
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if mid + mid.ln() < l {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        0.5 * (lo + hi)
    }

    #[test]
    fn lambert_w_log_form_agrees_with_bisection() {
        // Source: general mathematics (w + ln w = l solved by bisection to the last bit);
        // 1e-15 relative (a few ulps: both solvers round when forming w + ln w), across
        // the switch to the fixed-work form at l = 50.
        let mut l = 1.01;
        while l < 1e5 {
            let w = lambert_w0_of_exp(l);
            let b = bisect_w_of_exp(l);
            assert!(rel(w, b) <= 1e-15, "l {l}: {w} vs {b}");
            l *= 1.013;
        }
        for l in [49.999, 50.0, 50.001] {
            assert!(rel(lambert_w0_of_exp(l), bisect_w_of_exp(l)) <= 1e-15);
        }
    }

    fn check_current_scales(p: &ReferenceParams, s: f64, v: f64, tol: f64) {
        let i_ref = p.at(1000.0, 25.0).current_at(v);
        let i = p.at(s, 25.0).current_at(v);
        assert!(
            rel(i / i_ref, s / 1000.0) <= tol,
            "s {s}: ratio {}",
            i / i_ref
        );
    }

    #[test]
    fn current_at_low_voltage_scales_with_irradiance() {
        // Source: De Soto 2006 (IL ∝ S) and common practice (Isc is proportional to
        // irradiance). At 1 V the diode and shunt take < 0.5 % of IL even at 100 W/m², so
        // the ratio follows S within 0.5 %.
        let p = fit_de_soto(&ds36()).unwrap();
        for s in [100.0, 300.0, 600.0, 1200.0] {
            check_current_scales(&p, s, 1.0, 0.005);
        }
    }

    fn check_rejects(ds: Datasheet, needle: &str) {
        let err = fit_de_soto(&ds).expect_err("must be rejected");
        let msg = err.to_string();
        assert!(msg.contains(needle), "message {msg:?} lacks {needle:?}");
        // The project style (DEVELOPERS.md): lower-case messages without a trailing period.
        assert!(msg.starts_with(|c: char| c.is_lowercase()), "{msg:?}");
        assert!(!msg.ends_with('.'), "{msg:?}");
    }

    #[test]
    fn inconsistent_datasheets_are_rejected() {
        // Source: notebooks-free-docs/method-diode.md (Vmp ≥ Voc, Imp ≥ Isc, fill factor out of range).
        check_rejects(
            Datasheet {
                vmp_v: 22.4,
                ..ds36()
            },
            "vmp_v = 22.4",
        );
        check_rejects(
            Datasheet {
                imp_a: 6.0,
                ..ds36()
            },
            "imp_a = 6",
        );
        check_rejects(
            Datasheet {
                vmp_v: 12.0,
                imp_a: 4.0,
                ..ds36()
            },
            "fill factor",
        );
        check_rejects(
            Datasheet {
                vmp_v: 21.0,
                imp_a: 5.85,
                ..ds36()
            },
            "fill factor",
        );
        check_rejects(
            Datasheet {
                voc_v: f64::NAN,
                ..ds36()
            },
            "voc_v = NaN",
        );
        check_rejects(
            Datasheet {
                isc_a: -1.0,
                ..ds36()
            },
            "isc_a = -1",
        );
        check_rejects(
            Datasheet {
                cells_in_series: 0,
                ..ds36()
            },
            "cells_in_series",
        );
        // β given in %/K by mistake.
        check_rejects(
            Datasheet {
                beta_voc_v_k: -0.36,
                ..ds36()
            },
            "beta_voc_v_k = -0.36",
        );
        check_rejects(
            Datasheet {
                alpha_isc_a_k: 0.05,
                ..ds36()
            },
            "alpha_isc_a_k = 0.05",
        );
        // Source: common practice, no source: a fill factor of 0.83 with β −0.45 %/K asks
        // for an ideality above 1.1 (from β) and a knee sharper than that ideality allows
        // (the fit stalls with the shunt at its upper bound).
        check_rejects(
            Datasheet {
                vmp_v: 19.0,
                imp_a: 5.85,
                beta_voc_v_k: -0.10,
                ..ds36()
            },
            "no physical single-diode fit",
        );
    }

    #[test]
    fn darkness_gives_finite_curves() {
        // Source: common practice, no source: a dark module delivers no current at 0 V,
        // has no open-circuit voltage, and blocks (huge shunt) until its bypass diode
        // conducts; every value must be finite.
        let p = fit_de_soto(&ds60()).unwrap().substring(3);
        let dark = p.at(0.0, 10.0);
        assert_eq!(dark.il_a, 0.0);
        assert!(dark.rsh_ohm.is_finite() && dark.rsh_ohm >= 999.0 * p.rsh_ref_ohm);
        assert!(dark.voc_v().abs() < 1e-9, "voc {}", dark.voc_v());
        assert!(dark.isc_a().abs() < 1e-9, "isc {}", dark.isc_a());
        assert_eq!(dark.max_power_point(), Mpp::ZERO);
        for i in [0.0, 1e-6, 0.01, 1.0, 9.0, 20.0] {
            let v = dark.voltage_at(i);
            assert!(v.is_finite(), "v({i}) = {v}");
            let vb = substring_voltage_v(&dark, i, BYPASS_DROP_DEFAULT_V);
            if i >= 0.01 {
                // 0.01 A through ≥ 1000·Rsh_ref is far below −0.5 V: the bypass clamps.
                assert_eq!(vb, -BYPASS_DROP_DEFAULT_V);
            }
        }
        for v in [-5.0, 0.0, 5.0, 15.0] {
            assert!(dark.current_at(v).is_finite());
        }
        // Negative and NaN irradiance count as darkness.
        assert_eq!(p.at(-3.0, 10.0).il_a, 0.0);
        assert_eq!(p.at(f64::NAN, 10.0).il_a, 0.0);
    }

    #[test]
    fn fast_clamped_voltages_match_the_plain_solution() {
        // Source: general mathematics (the same equation solved two ways: the curve loop
        // with its stepped logarithm and clamp shortcut vs voltage_at point by point); 1e-9 V.
        let p = fit_de_soto(&ds72()).unwrap().substring(3);
        for (s, t, step) in [
            (1000.0, 25.0, 0.035),
            (150.0, 0.0, 0.035),
            (0.0, 20.0, 0.035),
            (1100.0, 75.0, 0.035),
            // Coarse steps through a steep knee (the predictor must not leave w > 0).
            (1200.0, 70.0, 0.2),
            (1200.0, 70.0, 0.7),
            (400.0, -20.0, 0.45),
        ] {
            let op = p.at(s, t);
            let currents: Vec<f64> = (0..=300).map(|k| f64::from(k) * step).collect();
            let mut fast = Vec::new();
            op.clamped_voltages_at(&currents, BYPASS_DROP_DEFAULT_V, &mut fast);
            assert_eq!(fast.len(), currents.len());
            for (v, &i) in fast.iter().zip(&currents) {
                let plain = substring_voltage_v(&op, i, BYPASS_DROP_DEFAULT_V);
                assert!((v - plain).abs() <= 1e-9, "{s} W/m², i {i}: {v} vs {plain}");
            }
        }
    }

    #[test]
    fn substring_adds_up_to_the_module() {
        // Source: general mathematics: three identical substrings in series at equal current
        // have three times the voltage of one; 1e-9 relative (rounding only).
        let p = fit_de_soto(&ds60()).unwrap();
        let module = p.at(700.0, 40.0);
        let sub = p.substring(3).at(700.0, 40.0);
        for i in [0.0, 1.0, 3.0, 5.0, 6.0] {
            let vm = module.voltage_at(i);
            let vs = sub.voltage_at(i);
            assert!(rel(3.0 * vs, vm) <= 1e-9, "i {i}: {vs}·3 vs {vm}");
        }
    }
}
