//! The one sun position that stands for a weather interval ([`interval_sun`]): the
//! midpoint when the sun is up throughout, the midpoint of the sunlit part when it rises or
//! sets inside, and the sunlit share of the interval. With it the pieces that rule needs:
//! the cheap screens that settle "dark throughout" and "lit throughout", the sunrise/sunset
//! search on linearly interpolated geocentric values, the apparent-to-geometric elevation
//! threshold, and the [`PreparedObserver`] holding an observer's time-independent terms.
//!
//! It deliberately computes no position of its own (every reported position is SPA's, from
//! `spa.rs`) and keeps no table over days (`ephemeris.rs` feeds its interpolated geocentric
//! values through the same rule).

use super::spa::{
    refraction_deg, spa_geocentric, spa_geometric_elevation_deg, wrap180, Atmosphere, GeoCore,
    Observer, Site, SunPosition, REFRACTION_AT_HORIZON_DEG, SIDEREAL_DEG_PER_DAY, SUN_RADIUS_DEG,
    UNIX_J2000_S,
};

/// The sun position that stands for one weather interval.
#[derive(Clone, Copy, Debug)]
pub struct IntervalSun {
    /// Instant at which `position` was evaluated (Unix seconds, UTC).
    pub eval_unix_s: f64,
    /// Fraction of the interval during which the sun is up (see [`interval_sun`]), 0…1.
    pub sunlit_frac: f64,
    pub position: SunPosition,
}

impl Observer {
    /// The observer's time-independent SPA terms, computed once for many instants.
    pub fn prepare(&self) -> PreparedObserver {
        PreparedObserver {
            site: Site::new(self),
            latitude_deg: self.latitude_deg,
        }
    }
}

/// An [`Observer`] with the terms of SPA that do not change with time computed once
/// (sin φ, cos φ and the parallax terms): five trigonometric calls saved per instant.
#[derive(Clone, Copy, Debug)]
pub struct PreparedObserver {
    site: Site,
    latitude_deg: f64,
}

/// The geometric elevation at which the apparent elevation reaches `threshold_deg`: the
/// apparent elevation e0 + Δe(e0) rises with e0 above SPA's refraction cut-off and equals
/// e0 below it, so "apparent above the threshold" is exactly "geometric above this value".
/// In the jump at the cut-off (Δe falls from 0.6° to 0 below it) the answer is the
/// cut-off. Found by the Illinois variant of false position until the apparent elevation
/// is within 1e-12° of the threshold (a handful of refraction evaluations).
fn geometric_threshold_deg(threshold_deg: f64, atm: &Atmosphere) -> f64 {
    let cutoff = -(SUN_RADIUS_DEG + REFRACTION_AT_HORIZON_DEG);
    let g = |e0: f64| e0 + refraction_deg(e0, atm) - threshold_deg;
    if threshold_deg < cutoff {
        return threshold_deg;
    }
    let g_cut = g(cutoff);
    if g_cut >= 0.0 {
        return cutoff;
    }
    // g(cutoff) < 0 ≤ g(threshold) (refraction ≥ 0), and g rises between them.
    let (mut lo, mut g_lo, mut hi, mut g_hi) = (cutoff, g_cut, threshold_deg, g(threshold_deg));
    let mut kept = 0i8;
    for _ in 0..100 {
        let x = (lo - g_lo * (hi - lo) / (g_hi - g_lo)).clamp(lo, hi);
        let gx = g(x);
        if gx.abs() <= 1e-12 || hi - lo <= 1e-12 {
            return x;
        }
        if gx > 0.0 {
            (hi, g_hi) = (x, gx);
            if kept == -1 {
                g_lo *= 0.5;
            }
            kept = -1;
        } else {
            (lo, g_lo) = (x, gx);
            if kept == 1 {
                g_hi *= 0.5;
            }
            kept = 1;
        }
    }
    0.5 * (lo + hi)
}

/// Fastest rate of change of the sun's elevation at a latitude, degrees per hour.
///
/// de/dt = −ω cos φ sin A (A = azimuth, ω = Earth rotation relative to the sun, at most
/// ~15.04°/h with the equation-of-time drift), plus the declination's own motion (at most
/// ~0.017°/h), rounded up.
fn max_elevation_rate_deg_per_h(lat_deg: f64) -> f64 {
    15.1 * lat_deg.to_radians().cos().abs() + 0.02
}

/// Geometric elevation below which SPA adds no refraction, degrees: −(0.26667 + 0.5667).
const NO_REFRACTION_BELOW_DEG: f64 = -(SUN_RADIUS_DEG + REFRACTION_AT_HORIZON_DEG);

/// Verdict on an interval from one elevation estimate at its midpoint.
enum Screen {
    /// Apparent elevation > 0 throughout.
    LitThroughout,
    /// Apparent elevation < 0 throughout.
    DarkThroughout,
    Undecided,
}

/// Decide an interval from a geometric elevation `e_mid_deg` at its midpoint known to within
/// `err_deg`. Over the half interval the geometric elevation moves at most `reach`. If it
/// stays above 0, the apparent elevation (≥ geometric) does too; if it stays below
/// −0.8334°, SPA adds no refraction and the apparent elevation equals it, < 0.
fn screen(e_mid_deg: f64, err_deg: f64, lat_deg: f64, len_s: f64) -> Screen {
    let reach = max_elevation_rate_deg_per_h(lat_deg) * (0.5 * len_s / 3600.0) + err_deg + 0.01;
    if e_mid_deg - reach > 0.0 {
        Screen::LitThroughout
    } else if e_mid_deg + reach < NO_REFRACTION_BELOW_DEG - 1e-4 {
        Screen::DarkThroughout
    } else {
        Screen::Undecided
    }
}

/// Low-precision geometric elevation of the sun's centre, degrees, from the Astronomical
/// Almanac's low-precision formulas (n = JD − 2451545: L = 280.460° + 0.9856474° n,
/// g = 357.528° + 0.9856003° n, λ = L + 1.915° sin g + 0.020° sin 2g,
/// ε = 23.439° − 4e-7° n; α, δ from λ, ε) and the SPA mean sidereal time. The Almanac
/// states 0.01° for α and δ over 1950–2050; against SPA (tested, 1900–2100) the elevation
/// stays within [`LOW_PRECISION_ERROR_DEG`]. Only used to skip SPA in intervals that are
/// dark throughout.
fn low_precision_elevation_deg(unix_s: f64, obs: &Observer) -> f64 {
    let n = (unix_s - UNIX_J2000_S) / 86400.0;
    let l = 280.460 + 0.985_647_4 * n;
    let g = (357.528 + 0.985_600_3 * n).to_radians();
    let lambda = (l + 1.915 * g.sin() + 0.020 * (2.0 * g).sin()).to_radians();
    let (se, ce) = (23.439 - 4e-7 * n).to_radians().sin_cos();
    let (sl, cl) = lambda.sin_cos();
    let alpha_deg = (ce * sl).atan2(cl).to_degrees();
    let sin_delta = se * sl;
    let cos_delta = (1.0 - sin_delta * sin_delta).sqrt();
    let h = (280.46061837 + SIDEREAL_DEG_PER_DAY * n + obs.longitude_deg - alpha_deg).to_radians();
    let (sp, cp) = obs.latitude_deg.to_radians().sin_cos();
    (sp * sin_delta + cp * cos_delta * h.cos())
        .clamp(-1.0, 1.0)
        .asin()
        .to_degrees()
}

/// Error allowance of [`low_precision_elevation_deg`] against SPA's topocentric geometric
/// elevation (measured ≤ 0.02° over 1900–2100, see tests), degrees.
const LOW_PRECISION_ERROR_DEG: f64 = 0.1;

/// Unix-time range in which the low-precision screen is trusted: 1900–2100.
const LOW_PRECISION_RANGE_S: (f64, f64) = (-2_208_988_800.0, 4_102_444_800.0);

/// Linear interpolation of [`GeoCore`] between two instants (ν is advanced at the sidereal
/// rate and its small remaining drift interpolated; angles are unwrapped first).
struct GeoLine {
    t0: f64,
    t1: f64,
    g0: GeoCore,
    nu_drift: f64,
    d_alpha: f64,
    d_delta: f64,
    d_r: f64,
}

impl GeoLine {
    fn new(t0: f64, g0: &GeoCore, t1: f64, g1: &GeoCore) -> Self {
        let span_days = (t1 - t0) / 86400.0;
        GeoLine {
            t0,
            t1,
            g0: *g0,
            nu_drift: wrap180(g1.nu_deg - g0.nu_deg - SIDEREAL_DEG_PER_DAY * span_days),
            d_alpha: wrap180(g1.alpha_deg - g0.alpha_deg),
            d_delta: g1.delta_deg - g0.delta_deg,
            d_r: g1.r_au - g0.r_au,
        }
    }

    fn at(&self, t: f64) -> GeoCore {
        let f = (t - self.t0) / (self.t1 - self.t0);
        GeoCore {
            nu_deg: self.g0.nu_deg
                + SIDEREAL_DEG_PER_DAY * (t - self.t0) / 86400.0
                + self.nu_drift * f,
            alpha_deg: self.g0.alpha_deg + self.d_alpha * f,
            delta_deg: self.g0.delta_deg + self.d_delta * f,
            r_au: self.g0.r_au + self.d_r * f,
            eot_min: self.g0.eot_min,
        }
    }
}

/// Longest bracket over which the geocentric quantities are interpolated linearly instead
/// of recomputed, seconds. Over 2 h the interpolation error in α and δ is below 3e-7° (worst case measured 2.45e-7° over 1990–2050).
const MAX_INTERPOLATION_SPAN_S: f64 = 7200.0;

/// Time resolution of the sunrise/sunset search, seconds.
const CROSSING_TOLERANCE_S: f64 = 1.0;

/// Instant at which the geometric elevation of the sun's centre crosses `target_deg`
/// between `t_lo` and `t_hi`, to a bracket of [`CROSSING_TOLERANCE_S`]; the answer is the
/// midpoint of the final bracket. The sign of (elevation − target) must differ at the two
/// ends.
///
/// An apparent threshold is searched as its geometric equivalent
/// ([`geometric_threshold_deg`], computed by the caller once), so the search runs on the
/// smooth geometric elevation (the apparent one has a kink and a jump at SPA's refraction
/// cut-off). While the bracket is longer than [`MAX_INTERPOLATION_SPAN_S`] it is halved
/// with geocentric values from `geo`; then the geocentric values are interpolated linearly
/// and false position, with a probe 0.9 of a tolerance beyond each estimate, closes the
/// bracket (bisection if that stalls).
fn find_crossing(
    mut t_lo: f64,
    mut g_lo: GeoCore,
    mut t_hi: f64,
    mut g_hi: GeoCore,
    site: &Site,
    geo: &impl Fn(f64) -> GeoCore,
    target_deg: f64,
) -> f64 {
    let above = |g: &GeoCore| spa_geometric_elevation_deg(g, site) - target_deg;
    let mut f_lo = above(&g_lo);
    let up_at_lo = f_lo > 0.0;
    while t_hi - t_lo > MAX_INTERPOLATION_SPAN_S {
        let t_mid = 0.5 * (t_lo + t_hi);
        let g = geo(t_mid);
        let f_mid = above(&g);
        if (f_mid > 0.0) == up_at_lo {
            t_lo = t_mid;
            g_lo = g;
            f_lo = f_mid;
        } else {
            t_hi = t_mid;
            g_hi = g;
        }
    }
    let line = GeoLine::new(t_lo, &g_lo, t_hi, &g_hi);
    let f = |t: f64| above(&line.at(t));
    let mut f_hi = f(t_hi);
    let same = |x: f64| (x > 0.0) == up_at_lo;
    let half = 0.5 * CROSSING_TOLERANCE_S;
    let step = 0.9 * CROSSING_TOLERANCE_S;
    let mut rounds = 0;
    while t_hi - t_lo > CROSSING_TOLERANCE_S {
        rounds += 1;
        let straddles = same(f_lo) && !same(f_hi) && f_lo != f_hi;
        if !straddles || rounds > MAX_SECANT_ROUNDS {
            let t_mid = 0.5 * (t_lo + t_hi);
            let f_mid = f(t_mid);
            if same(f_mid) {
                (t_lo, f_lo) = (t_mid, f_mid);
            } else {
                (t_hi, f_hi) = (t_mid, f_mid);
            }
            continue;
        }
        let t = (t_lo + (t_hi - t_lo) * f_lo / (f_lo - f_hi)).clamp(t_lo + half, t_hi - half);
        let f_t = f(t);
        let probe = if same(f_t) {
            (t_lo, f_lo) = (t, f_t);
            t + step
        } else {
            (t_hi, f_hi) = (t, f_t);
            t - step
        };
        if probe > t_lo && probe < t_hi {
            let f_p = f(probe);
            if same(f_p) {
                (t_lo, f_lo) = (probe, f_p);
            } else {
                (t_hi, f_hi) = (probe, f_p);
            }
        }
    }
    0.5 * (t_lo + t_hi)
}

/// False-position rounds before [`find_crossing`] falls back to bisection (the smooth
/// geometric elevation needs one or two).
const MAX_SECANT_ROUNDS: u32 = 12;

/// When the sun's centre crosses an elevation between two instants (full SPA).
#[cfg_attr(not(test), allow(dead_code))]
pub(crate) fn find_sun_crossing(
    t_lo: f64,
    t_hi: f64,
    obs: &Observer,
    atm: &Atmosphere,
    delta_t_s: f64,
    threshold_deg: f64,
    apparent: bool,
) -> f64 {
    let geo = |t: f64| spa_geocentric(t, delta_t_s).core();
    let target = if apparent {
        geometric_threshold_deg(threshold_deg, atm)
    } else {
        threshold_deg
    };
    find_crossing(
        t_lo,
        geo(t_lo),
        t_hi,
        geo(t_hi),
        &Site::new(obs),
        &geo,
        target,
    )
}

/// The interval rule of [`interval_sun`], with the geocentric values taken from `geo`.
pub(super) fn interval_sun_from(
    start: f64,
    end: f64,
    obs: &PreparedObserver,
    atm: &Atmosphere,
    geo: &impl Fn(f64) -> GeoCore,
) -> Option<IntervalSun> {
    let site = &obs.site;
    if end <= start || end.is_nan() || start.is_nan() {
        let g = geo(start);
        let position = g.position(site, atm);
        return (position.elevation_deg() > 0.0).then_some(IntervalSun {
            eval_unix_s: start,
            sunlit_frac: 1.0,
            position,
        });
    }
    let len = end - start;
    let t_mid = 0.5 * (start + end);
    let g_mid = geo(t_mid);
    // Cheap verdict from the geocentric elevation (parallax ≤ 0.0025° is the error).
    match screen(
        g_mid.geocentric_elevation_deg(site),
        0.003,
        obs.latitude_deg,
        len,
    ) {
        Screen::DarkThroughout => return None,
        Screen::LitThroughout => {
            return Some(IntervalSun {
                eval_unix_s: t_mid,
                sunlit_frac: 1.0,
                position: g_mid.position(site, atm),
            })
        }
        Screen::Undecided => {}
    }

    let g_start = geo(start);
    let g_end = geo(end);
    // "Apparent elevation above 0°" is "geometric elevation above its equivalent", which
    // skips refraction and azimuth at the three sampled instants.
    let target = geometric_threshold_deg(0.0, atm);
    let up = |g: &GeoCore| spa_geometric_elevation_deg(g, site) > target;
    let crossing = |t0: f64, g0: &GeoCore, t1: f64, g1: &GeoCore| {
        find_crossing(t0, *g0, t1, *g1, site, geo, target)
    };
    let (lit_from, lit_to, lit_total) = match (up(&g_start), up(&g_mid), up(&g_end)) {
        (false, false, false) => return None,
        (true, true, true) => {
            return Some(IntervalSun {
                eval_unix_s: t_mid,
                sunlit_frac: 1.0,
                position: g_mid.position(site, atm),
            })
        }
        // Sunrise inside.
        (false, true, true) => {
            let t = crossing(start, &g_start, t_mid, &g_mid);
            (t, end, end - t)
        }
        (false, false, true) => {
            let t = crossing(t_mid, &g_mid, end, &g_end);
            (t, end, end - t)
        }
        // Sunset inside.
        (true, true, false) => {
            let t = crossing(t_mid, &g_mid, end, &g_end);
            (start, t, t - start)
        }
        (true, false, false) => {
            let t = crossing(start, &g_start, t_mid, &g_mid);
            (start, t, t - start)
        }
        // Rise and set inside.
        (false, true, false) => {
            let rise = crossing(start, &g_start, t_mid, &g_mid);
            let set = crossing(t_mid, &g_mid, end, &g_end);
            (rise, set, set - rise)
        }
        // Set, then rise again inside: evaluate in the longer sunlit piece.
        (true, false, true) => {
            let set = crossing(start, &g_start, t_mid, &g_mid);
            let rise = crossing(t_mid, &g_mid, end, &g_end);
            let (first, second) = (set - start, end - rise);
            if first >= second {
                (start, set, first + second)
            } else {
                (rise, end, first + second)
            }
        }
    };
    let eval = 0.5 * (lit_from + lit_to);
    Some(IntervalSun {
        eval_unix_s: eval,
        sunlit_frac: (lit_total / len).clamp(0.0, 1.0),
        position: geo(eval).position(site, atm),
    })
}

/// The sun for one weather interval [start, end): where to evaluate it and how much of the
/// interval is sunlit.
///
/// # Formula
/// "Sunlit" means the apparent topocentric elevation of the sun's centre is above 0°
/// (SPA refraction included: at 1010 hPa and 10 °C the sun counts as up once its geometric
/// centre is 0.57° below the horizon; the upper-limb sunrise of almanacs, at −0.8333°, comes
/// earlier, by 2.1 min in Denver in October). Then:
/// - sunlit throughout: evaluate at the midpoint, `sunlit_frac` = 1;
/// - sunrise (or sunset) inside: find the crossing t_c of the apparent elevation to ~1 s
///   (searched as its geometric equivalent, see `find_crossing`); evaluate at the midpoint of [t_c, end) (or [start, t_c));
/// - rise and set inside (polar day edges, long intervals): midpoint of [t_rise, t_set);
/// - set then rise inside (sun grazing the horizon near midnight at high latitude): the
///   midpoint of the longer sunlit piece, `sunlit_frac` = both pieces together;
/// - dark throughout: `None`.
///
/// The apparent elevation at start, midpoint and end decides the case. Cheaper paths reach
/// the same verdict where the sun cannot cross the horizon within half an interval of the
/// midpoint (elevation bound: 15.1°/h · |cos φ| + 0.02°/h): a low-precision almanac
/// formula (error allowance 0.1°, 1900–2100 only) settles "dark throughout" without SPA,
/// and one SPA call at the midpoint settles "sunlit throughout". Otherwise both ends get a
/// full SPA call too, and the search interpolates the geocentric values linearly between
/// full SPA calls (error < 3e-7° over 2 h), so that only the topocentric step repeats. The
/// evaluation point always gets a full SPA call.
///
/// # Source
/// notebooks-free-docs/method-sun.md (midpoint, or midpoint of the sunlit part at sunrise/sunset — common
/// practice for hourly data); SPA ([`solar_position`]) for every reported position.
///
/// # Validity
/// Intervals from seconds to a day. A rise-and-set pair that fits entirely between the
/// three sampled instants is not seen (the sun would have to graze the horizon for less
/// than half an interval, which happens only within a few days of the start or end of polar
/// night). An empty or reversed interval (`end_unix_s <= start_unix_s`) is treated as the
/// instant `start_unix_s`.
///
/// [`solar_position`]: super::solar_position
pub fn interval_sun(
    start_unix_s: f64,
    end_unix_s: f64,
    obs: &Observer,
    atm: &Atmosphere,
    delta_t_s: f64,
) -> Option<IntervalSun> {
    let t_mid = 0.5 * (start_unix_s + end_unix_s);
    if end_unix_s > start_unix_s
        && (LOW_PRECISION_RANGE_S.0..LOW_PRECISION_RANGE_S.1).contains(&t_mid)
    {
        let e = low_precision_elevation_deg(t_mid, obs);
        let len = end_unix_s - start_unix_s;
        if let Screen::DarkThroughout = screen(e, LOW_PRECISION_ERROR_DEG, obs.latitude_deg, len) {
            return None;
        }
    }
    let geo = |t: f64| spa_geocentric(t, delta_t_s).core();
    interval_sun_from(start_unix_s, end_unix_s, &obs.prepare(), atm, &geo)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::sun::spa::{solar_position, DELTA_T_DEFAULT_S};
    use crate::physics::sun::test_support::{
        check, lcg, unix, DENVER, DENVER_AIR, SPA_EXAMPLE_DELTA_T_S,
    };

    #[test]
    fn spa_example_sunrise_and_sunset() {
        // Source: SPA report, worked example: sunrise 06:12:43, sunset 17:20:19 MST (text).
        // SPA defines them as the sun's geometric (geocentric) elevation reaching
        // −(0.26667° + 0.5667°), found by interpolating α, δ over three days; the topocentric
        // crossing differs by the solar parallax (< 1 s) and SPA's interpolation (seconds).
        // SPA works on the UT day 2003-10-17, so its "sunset" is the one at 00:20:19 UTC on
        // 17 October, i.e. the evening of 16 October local time (17 October's is 88 s
        // earlier).
        let h0 = -(SUN_RADIUS_DEG + REFRACTION_AT_HORIZON_DEG);
        let rise = find_sun_crossing(
            unix(2003, 10, 17, 12, 0, 0),
            unix(2003, 10, 17, 14, 0, 0),
            &DENVER,
            &DENVER_AIR,
            SPA_EXAMPLE_DELTA_T_S,
            h0,
            false,
        );
        let set = find_sun_crossing(
            unix(2003, 10, 17, 0, 0, 0),
            unix(2003, 10, 17, 1, 0, 0),
            &DENVER,
            &DENVER_AIR,
            SPA_EXAMPLE_DELTA_T_S,
            h0,
            false,
        );
        check("sunrise (s)", rise, unix(2003, 10, 17, 13, 12, 43), 5.0);
        check("sunset (s)", set, unix(2003, 10, 17, 0, 20, 19), 5.0);
    }

    // ------------------------------------------------------------------- interval_sun

    #[test]
    fn interval_mid_day_uses_midpoint() {
        // Source: notebooks-free-docs/method-sun.md (midpoint rule).
        let (a, b) = (unix(2003, 10, 17, 19, 0, 0), unix(2003, 10, 17, 20, 0, 0));
        let s = interval_sun(a, b, &DENVER, &DENVER_AIR, SPA_EXAMPLE_DELTA_T_S).unwrap();
        assert_eq!(s.eval_unix_s, 0.5 * (a + b));
        assert_eq!(s.sunlit_frac, 1.0);
        let p = solar_position(0.5 * (a + b), &DENVER, &DENVER_AIR, SPA_EXAMPLE_DELTA_T_S);
        assert_eq!(s.position.zenith_deg, p.zenith_deg);
    }

    /// Apparent elevation at an instant.
    fn elev(t: f64, obs: &Observer, atm: &Atmosphere) -> f64 {
        solar_position(t, obs, atm, DELTA_T_DEFAULT_S).elevation_deg()
    }

    #[test]
    fn interval_sunrise_hour_uses_sunlit_part() {
        // Source: notebooks-free-docs/method-sun.md (midpoint of the sunlit part). Denver sunrise (upper limb) is
        // 06:12:43 MST = 13:12:43 UTC (SPA report); the centre clears the apparent horizon
        // about 2 min later (at 820 hPa that is at −0.45° geometric instead of −0.83°).
        let (a, b) = (unix(2003, 10, 17, 13, 0, 0), unix(2003, 10, 17, 14, 0, 0));
        let s = interval_sun(a, b, &DENVER, &DENVER_AIR, DELTA_T_DEFAULT_S).unwrap();
        assert!(
            s.sunlit_frac > 0.0 && s.sunlit_frac < 1.0,
            "frac {}",
            s.sunlit_frac
        );
        let rise = b - s.sunlit_frac * (b - a);
        check(
            "eval = midpoint of sunlit part",
            s.eval_unix_s,
            0.5 * (rise + b),
            1e-6,
        );
        assert!(s.eval_unix_s > rise && s.eval_unix_s > 0.5 * (a + b));
        assert!(
            elev(rise - 1.0, &DENVER, &DENVER_AIR) < 0.0
                && elev(rise + 1.0, &DENVER, &DENVER_AIR) > 0.0
        );
        assert!(rise > unix(2003, 10, 17, 13, 12, 43) && rise < unix(2003, 10, 17, 13, 17, 0));
        assert!(s.position.elevation_deg() > 0.0);
    }

    #[test]
    fn interval_sunset_hour_uses_sunlit_part() {
        // Source: notebooks-free-docs/method-sun.md. Denver sunset (upper limb) on 17 October is about 17:18:51 MST
        // = 00:18:51 UTC (see spa_example_sunrise_and_sunset); the centre sets ~2 min earlier.
        let (a, b) = (unix(2003, 10, 18, 0, 0, 0), unix(2003, 10, 18, 1, 0, 0));
        let s = interval_sun(a, b, &DENVER, &DENVER_AIR, DELTA_T_DEFAULT_S).unwrap();
        let set = a + s.sunlit_frac * (b - a);
        check("eval", s.eval_unix_s, 0.5 * (a + set), 1e-6);
        assert!(
            elev(set - 1.0, &DENVER, &DENVER_AIR) > 0.0
                && elev(set + 1.0, &DENVER, &DENVER_AIR) < 0.0
        );
        assert!(set < unix(2003, 10, 18, 0, 18, 51) && set > unix(2003, 10, 18, 0, 15, 0));
    }

    #[test]
    fn interval_night_and_polar_night_are_none() {
        // Source: common practice (no sun in polar night; midnight in Denver).
        let tromso = Observer {
            latitude_deg: 69.65,
            longitude_deg: 18.96,
            elevation_m: 10.0,
        };
        let svalbard = Observer {
            latitude_deg: 78.22,
            longitude_deg: 15.65,
            elevation_m: 10.0,
        };
        let cold = Atmosphere {
            pressure_hpa: 1010.0,
            temperature_c: -10.0,
        };
        for obs in [&tromso, &svalbard] {
            let (a, b) = (unix(2021, 12, 21, 11, 0, 0), unix(2021, 12, 21, 12, 0, 0));
            assert!(interval_sun(a, b, obs, &cold, DELTA_T_DEFAULT_S).is_none());
        }
        let (a, b) = (unix(2003, 10, 17, 6, 0, 0), unix(2003, 10, 17, 7, 0, 0));
        assert!(interval_sun(a, b, &DENVER, &DENVER_AIR, DELTA_T_DEFAULT_S).is_none());
    }

    #[test]
    fn interval_midnight_sun_is_sunlit() {
        // Source: common practice (midnight sun at 78° N on the June solstice).
        let svalbard = Observer {
            latitude_deg: 78.22,
            longitude_deg: 15.65,
            elevation_m: 10.0,
        };
        let air = Atmosphere {
            pressure_hpa: 1010.0,
            temperature_c: 5.0,
        };
        let (a, b) = (unix(2021, 6, 21, 22, 30, 0), unix(2021, 6, 21, 23, 30, 0));
        let s = interval_sun(a, b, &svalbard, &air, DELTA_T_DEFAULT_S).unwrap();
        assert_eq!(s.sunlit_frac, 1.0);
        assert_eq!(s.eval_unix_s, 0.5 * (a + b));
    }

    #[test]
    fn interval_of_a_whole_day_finds_rise_and_set() {
        // Source: notebooks-free-docs/method-sun.md rule applied to a 24 h interval (both crossings inside),
        // against sampling every 30 s.
        let (a, b) = (unix(2003, 10, 17, 7, 0, 0), unix(2003, 10, 18, 7, 0, 0));
        let s = interval_sun(a, b, &DENVER, &DENVER_AIR, DELTA_T_DEFAULT_S).unwrap();
        let (frac, span) = brute_force(a, b, &DENVER, &DENVER_AIR, 30.0);
        let (first, last) = span.unwrap();
        check("sunlit fraction", s.sunlit_frac, frac, 2.0 * 30.0 / 86400.0);
        check("eval", s.eval_unix_s, 0.5 * (first + last), 30.0);
        // Upper-limb day (SPA: rise 06:12:43, set ≈ 17:18:51 MST) = 11.102 h; the centre
        // with refraction is up about 2 × 2.1 min less (2.1 min measured at sunrise).
        check(
            "day length (h)",
            s.sunlit_frac * 24.0,
            11.102 - 2.0 * 2.1 / 60.0,
            0.01,
        );
        // Evaluated near solar noon (about 11:46 MST = 18:46 UTC).
        check(
            "eval near noon (s)",
            s.eval_unix_s,
            unix(2003, 10, 17, 18, 46, 0),
            120.0,
        );
    }

    /// Brute force: sample the interval every `step` seconds.
    fn brute_force(
        a: f64,
        b: f64,
        obs: &Observer,
        atm: &Atmosphere,
        step: f64,
    ) -> (f64, Option<(f64, f64)>) {
        let n = ((b - a) / step).round() as usize;
        let mut lit = 0usize;
        let (mut first, mut last) = (None, None);
        for i in 0..n {
            let t = a + (i as f64 + 0.5) * step;
            if elev(t, obs, atm) > 0.0 {
                lit += 1;
                first.get_or_insert(t);
                last = Some(t);
            }
        }
        (lit as f64 / n as f64, first.zip(last))
    }

    #[test]
    fn geometric_threshold_gives_the_apparent_threshold_and_light_elevation_matches_spa() {
        // Source: definition (the apparent elevation e0 + Δe(e0) of SPA step 3.14 at the
        // returned geometric value equals the threshold), checked over pressures,
        // temperatures and thresholds around the horizon; below SPA's cut-off the two are
        // equal, and a threshold in the jump at the cut-off maps onto the cut-off.
        let cutoff = -(SUN_RADIUS_DEG + REFRACTION_AT_HORIZON_DEG);
        for p in [600.0, 800.0, 1013.25, 1050.0] {
            for t in [-40.0, -10.0, 0.0, 15.0, 45.0] {
                let atm = Atmosphere {
                    pressure_hpa: p,
                    temperature_c: t,
                };
                for thr in [-2.0, -0.9, 0.0, 0.3, 1.0, 5.0, 30.0] {
                    let e0 = geometric_threshold_deg(thr, &atm);
                    let apparent_at_cut = cutoff + refraction_deg(cutoff, &atm);
                    if thr < cutoff {
                        assert_eq!(e0, thr);
                    } else if thr <= apparent_at_cut {
                        assert_eq!(e0, cutoff);
                    } else {
                        let back = e0 + refraction_deg(e0, &atm);
                        assert!((back - thr).abs() < 1e-11, "{p} hPa {t} °C {thr}°: {back}");
                    }
                }
            }
        }
        // Source: SPA steps 3.11–3.14.1 as in spa_topocentric (the light path computes the
        // same e0 by the same formulas), random instants and places, to 1e-10°.
        let mut seed: u64 = 0x0bad_cafe_0000_0007;
        let mut rnd = move || {
            seed = seed
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (seed >> 11) as f64 / (1u64 << 53) as f64
        };
        for _ in 0..500 {
            let obs = Observer {
                latitude_deg: -89.0 + 178.0 * rnd(),
                longitude_deg: -180.0 + 360.0 * rnd(),
                elevation_m: 4000.0 * rnd(),
            };
            let t = unix(1990, 1, 1, 0, 0, 0) + rnd() * 50.0 * 365.25 * 86400.0;
            let g = spa_geocentric(t, DELTA_T_DEFAULT_S).core();
            let site = Site::new(&obs);
            let full = g.topocentric(&site, &DENVER_AIR).e0_deg;
            let light = spa_geometric_elevation_deg(&g, &site);
            assert!((full - light).abs() < 1e-10, "{full} vs {light}");
        }
    }

    #[test]
    fn interval_sun_agrees_with_brute_force_near_horizon() {
        // Source: the rule itself, sampled every 15 s (independent of the bisection and of
        // the one-call shortcut). Random places (both hemispheres, polar included) and times
        // 1990–2040, hourly and 10-minute intervals placed near sunrise or sunset.
        let mut seed: u64 = 0x5eed_1234_abcd_0001;
        let mut rnd = move || {
            seed = seed
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (seed >> 11) as f64 / (1u64 << 53) as f64
        };
        let step = 15.0;
        let mut checked = 0;
        for k in 0..160 {
            let lat = -85.0 + 170.0 * rnd();
            let obs = Observer {
                latitude_deg: lat,
                longitude_deg: -180.0 + 360.0 * rnd(),
                elevation_m: 3000.0 * rnd(),
            };
            let atm = Atmosphere {
                pressure_hpa: 700.0 + 350.0 * rnd(),
                temperature_c: -30.0 + 60.0 * rnd(),
            };
            let len = if k % 2 == 0 { 3600.0 } else { 600.0 };
            // Start at a random instant and walk to the first interval whose sunlit state
            // differs between its ends or whose midpoint is within 8° of the horizon.
            let mut a = (unix(1990, 1, 1, 0, 0, 0) + rnd() * 50.0 * 365.25 * 86400.0).floor();
            for _ in 0..(48 * 3600 / len as usize) {
                if elev(a + 0.5 * len, &obs, &atm).abs() < 8.0 {
                    break;
                }
                a += len;
            }
            let b = a + len;
            let got = interval_sun(a, b, &obs, &atm, DELTA_T_DEFAULT_S);
            let (frac, span) = brute_force(a, b, &obs, &atm, step);
            match got {
                None => assert_eq!(
                    frac, 0.0,
                    "interval {a}–{b} at {obs:?}: None but brute force {frac}"
                ),
                Some(s) => {
                    let tol = 1.5 * step / len + 1e-9;
                    assert!(
                        (s.sunlit_frac - frac).abs() <= tol,
                        "interval {a}–{b} at {obs:?}: frac {} vs brute force {frac}",
                        s.sunlit_frac
                    );
                    if let Some((first, last)) = span {
                        if s.sunlit_frac < 1.0 && (last - first) < s.sunlit_frac * len + 2.0 * step
                        {
                            // One sunlit piece: the evaluation point is its midpoint.
                            check("eval", s.eval_unix_s, 0.5 * (first + last), step);
                        }
                    }
                    checked += 1;
                }
            }
        }
        assert!(checked > 40, "only {checked} sunlit intervals checked");
    }

    #[test]
    fn interval_reversed_is_an_instant() {
        // Source: documented behaviour of interval_sun.
        let t = unix(2003, 10, 17, 19, 30, 30);
        let s = interval_sun(t, t, &DENVER, &DENVER_AIR, DELTA_T_DEFAULT_S).unwrap();
        assert_eq!(s.eval_unix_s, t);
        assert!(interval_sun(t + 43200.0, t, &DENVER, &DENVER_AIR, DELTA_T_DEFAULT_S).is_none());
    }

    #[test]
    fn low_precision_screen_is_within_its_allowance() {
        // Source: SPA (this module) as the reference for the Astronomical Almanac's
        // low-precision formulas (stated 0.01° in α, δ over 1950–2050; from memory), over
        // 1900–2100, any place: must stay well inside the 0.1° allowance used by the screen.
        let mut rnd = lcg(7);
        let air = Atmosphere {
            pressure_hpa: 1013.25,
            temperature_c: 12.0,
        };
        let mut worst = 0.0f64;
        for _ in 0..4000 {
            let t = LOW_PRECISION_RANGE_S.0
                + rnd() * (LOW_PRECISION_RANGE_S.1 - LOW_PRECISION_RANGE_S.0);
            let obs = Observer {
                latitude_deg: (2.0 * rnd() - 1.0).asin().to_degrees(),
                longitude_deg: -180.0 + 360.0 * rnd(),
                elevation_m: 2000.0 * rnd(),
            };
            let spa = 90.0 - solar_position(t, &obs, &air, DELTA_T_DEFAULT_S).zenith_geometric_deg;
            worst = worst.max((low_precision_elevation_deg(t, &obs) - spa).abs());
        }
        eprintln!("low-precision elevation vs SPA, 1900–2100: max {worst:.4}°");
        assert!(worst <= 0.05, "worst {worst}");
    }
}
