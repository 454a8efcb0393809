//! [`SunEphemeris`]: the observer-independent part of SPA run once a day over a time span and
//! interpolated in between (four-point Lagrange), for the thousands of positions a weather
//! year needs. The topocentric step (parallax, refraction, azimuth) still runs in full for
//! each position, and intervals go through the rule of `interval.rs`.
//!
//! It deliberately adds no model of its own: outside its span it falls back to full SPA, and
//! its error against SPA is stated and tested (3e-7°).

use super::interval::{interval_sun_from, IntervalSun, PreparedObserver};
use super::spa::{
    limit_deg, spa_geocentric, wrap180, Atmosphere, GeoCore, Observer, Site, SunPosition,
    SIDEREAL_DEG_PER_DAY, UNIX_J2000_S,
};

/// The sun's geocentric SPA quantities at 00:00 UTC of every day of a time span, for fast
/// positions anywhere inside it.
///
/// A year of hourly weather needs ~9 000 positions; the observer-independent part of SPA
/// (the 195 periodic terms and the nutation series) is over 90 % of each one, and it varies
/// smoothly over days. This table runs the full SPA once per day and interpolates α, δ, R,
/// the nutation term of the sidereal time and the equation of time with a four-point
/// (cubic) Lagrange formula; the mean sidereal time is computed exactly, and the
/// topocentric step (parallax, refraction, azimuth) runs in full for each position.
///
/// # Source
/// SPA (Reda & Andreas 2008) for the nodes; interpolating α and δ between daily values is
/// SPA's own method for sunrise/transit/sunset (its section A.2, three-point form).
///
/// # Validity
/// Within 3e-7° of [`solar_position`] (tested; measured at most 2.5e-7° over 1990–2050).
/// Outside the span given to [`SunEphemeris::new`] the methods fall back to full SPA.
///
/// [`solar_position`]: super::solar_position
#[derive(Clone, Debug)]
pub struct SunEphemeris {
    /// Unix time of node 0 (00:00 UTC).
    first_node_unix_s: f64,
    delta_t_s: f64,
    nodes: Vec<EphemerisNode>,
}

/// One daily node: α unwrapped so that it is continuous across nodes.
#[derive(Clone, Copy, Debug)]
struct EphemerisNode {
    alpha_deg: f64,
    delta_deg: f64,
    r_au: f64,
    /// Nutation in right ascension Δψ·cos ε (ν − ν0), degrees.
    nu_nutation_deg: f64,
    eot_min: f64,
}

/// Mean sidereal time ν0 at Greenwich (SPA step 3.8), degrees, not reduced.
fn mean_sidereal_time_deg(unix_s: f64) -> f64 {
    let days = (unix_s - UNIX_J2000_S) / 86400.0;
    let jc = days / 36525.0;
    280.46061837 + SIDEREAL_DEG_PER_DAY * days + 0.000387933 * jc * jc - jc * jc * jc / 38_710_000.0
}

impl SunEphemeris {
    /// Run SPA at 00:00 UTC of each day covering [start, end] plus one day either side.
    ///
    /// # Validity
    /// Any span; memory is 40 bytes per day. `delta_t_s` as for [`solar_position`].
    ///
    /// [`solar_position`]: super::solar_position
    pub fn new(start_unix_s: f64, end_unix_s: f64, delta_t_s: f64) -> Self {
        let first_day = (start_unix_s.min(end_unix_s) / 86400.0).floor() - 1.0;
        let last_day = (start_unix_s.max(end_unix_s) / 86400.0).floor() + 2.0;
        let first_node_unix_s = first_day * 86400.0;
        let count = (last_day - first_day) as usize + 1;
        let mut nodes: Vec<EphemerisNode> = Vec::with_capacity(count);
        for i in 0..count {
            let t = first_node_unix_s + 86400.0 * i as f64;
            let g = spa_geocentric(t, delta_t_s);
            let mut alpha_deg = g.alpha_deg;
            if let Some(prev) = nodes.last() {
                alpha_deg = prev.alpha_deg + wrap180(g.alpha_deg - prev.alpha_deg);
            }
            nodes.push(EphemerisNode {
                alpha_deg,
                delta_deg: g.delta_deg,
                r_au: g.r_au,
                nu_nutation_deg: g.nu_deg - g.nu0_deg,
                eot_min: g.eot_min,
            });
        }
        SunEphemeris {
            first_node_unix_s,
            delta_t_s,
            nodes,
        }
    }

    /// Geocentric values at an instant: interpolated inside the span, full SPA outside.
    pub(crate) fn geo_core(&self, unix_s: f64) -> GeoCore {
        let d = (unix_s - self.first_node_unix_s) / 86400.0;
        let i = d.floor();
        if !(i >= 1.0 && i + 2.0 < self.nodes.len() as f64) {
            return spa_geocentric(unix_s, self.delta_t_s).core();
        }
        let f = d - i;
        let i = i as usize;
        // Lagrange weights on nodes i−1, i, i+1, i+2 at offset f from node i.
        let w = [
            -f * (f - 1.0) * (f - 2.0) / 6.0,
            (f + 1.0) * (f - 1.0) * (f - 2.0) / 2.0,
            -(f + 1.0) * f * (f - 2.0) / 2.0,
            (f + 1.0) * f * (f - 1.0) / 6.0,
        ];
        let n = &self.nodes[i - 1..i + 3];
        let mix = |get: fn(&EphemerisNode) -> f64| {
            w[0] * get(&n[0]) + w[1] * get(&n[1]) + w[2] * get(&n[2]) + w[3] * get(&n[3])
        };
        GeoCore {
            nu_deg: limit_deg(mean_sidereal_time_deg(unix_s)) + mix(|e| e.nu_nutation_deg),
            alpha_deg: limit_deg(mix(|e| e.alpha_deg)),
            delta_deg: mix(|e| e.delta_deg),
            r_au: mix(|e| e.r_au),
            eot_min: mix(|e| e.eot_min),
        }
    }

    /// Topocentric position at an instant, as [`solar_position`] (to 3e-7°).
    ///
    /// [`solar_position`]: super::solar_position
    pub fn position(&self, unix_s: f64, obs: &Observer, atm: &Atmosphere) -> SunPosition {
        self.geo_core(unix_s).position(&Site::new(obs), atm)
    }

    /// The interval rule of [`interval_sun`] on this ephemeris (to 3e-7° and ~1 s).
    ///
    /// [`interval_sun`]: super::interval_sun
    pub fn interval_sun(
        &self,
        start_unix_s: f64,
        end_unix_s: f64,
        obs: &Observer,
        atm: &Atmosphere,
    ) -> Option<IntervalSun> {
        self.interval_sun_prepared(start_unix_s, end_unix_s, &obs.prepare(), atm)
    }

    /// [`SunEphemeris::interval_sun`] for an observer prepared once
    /// ([`Observer::prepare`]): the same result, cheaper over many intervals.
    pub fn interval_sun_prepared(
        &self,
        start_unix_s: f64,
        end_unix_s: f64,
        obs: &PreparedObserver,
        atm: &Atmosphere,
    ) -> Option<IntervalSun> {
        interval_sun_from(start_unix_s, end_unix_s, obs, atm, &|t| self.geo_core(t))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::sun::interval::interval_sun;
    use crate::physics::sun::spa::{solar_position, wrap180, DELTA_T_DEFAULT_S};
    use crate::physics::sun::test_support::{check, lcg, unix, DENVER, DENVER_AIR};

    #[test]
    fn ephemeris_matches_full_spa() {
        // Source: SPA (this module) as the reference; the interpolation error itself.
        // Measured (dense scans, not in this test): the direction error |Δh|·cos δ ⊕ Δδ is at
        // most 2.23e-7° over 2031–2032 (every 60 s) and 2.45e-7° over 1990–2050 (every
        // 20 min); E at most 9.9e-7 min. This test's 3000 samples reach 2.1e-7°. Bound:
        // 3e-7° (E: 3e-7° / 0.25 °/min), a ~20 % margin over the worst case found.
        let (a, b) = (unix(2031, 1, 1, 0, 0, 0), unix(2032, 12, 31, 23, 0, 0));
        let eph = SunEphemeris::new(a, b, DELTA_T_DEFAULT_S);
        let mut rnd = lcg(11);
        let (mut wz, mut wa, mut wd, mut we) = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
        for _ in 0..3000 {
            let t = a + rnd() * (b - a);
            let obs = Observer {
                latitude_deg: -89.0 + 178.0 * rnd(),
                longitude_deg: -180.0 + 360.0 * rnd(),
                elevation_m: 3000.0 * rnd(),
            };
            let air = Atmosphere {
                pressure_hpa: 700.0 + 330.0 * rnd(),
                temperature_c: -30.0 + 60.0 * rnd(),
            };
            let p = solar_position(t, &obs, &air, DELTA_T_DEFAULT_S);
            let q = eph.position(t, &obs, &air);
            wz = wz
                .max((p.zenith_deg - q.zenith_deg).abs())
                .max((p.zenith_geometric_deg - q.zenith_geometric_deg).abs());
            if p.zenith_geometric_deg > 1.0 {
                wa = wa.max(
                    wrap180(p.azimuth_deg - q.azimuth_deg).abs()
                        * p.zenith_geometric_deg.to_radians().sin(),
                );
            }
            wd = wd.max((p.declination_deg - q.declination_deg).abs());
            we = we.max((p.equation_of_time_min - q.equation_of_time_min).abs());
        }
        eprintln!("ephemeris vs SPA: zenith {wz:.1e}°, azimuth·sin z {wa:.1e}°, δ′ {wd:.1e}°, E {we:.1e} min");
        assert!(wz <= 3e-7 && wa <= 3e-7 && wd <= 3e-7 && we <= 3e-7 / 0.25);
        // Outside the span: the full SPA itself.
        let obs = DENVER;
        let t = unix(2040, 6, 1, 18, 0, 0);
        assert_eq!(
            eph.position(t, &obs, &DENVER_AIR).zenith_deg,
            solar_position(t, &obs, &DENVER_AIR, DELTA_T_DEFAULT_S).zenith_deg
        );
    }

    #[test]
    fn ephemeris_interval_sun_matches_exact() {
        // Source: interval_sun (exact path) as the reference; crossing times agree to the
        // 1 s search tolerance, positions to 1e-4°.
        let (a, b) = (unix(2022, 1, 1, 0, 0, 0), unix(2023, 1, 1, 0, 0, 0));
        let eph = SunEphemeris::new(a, b, DELTA_T_DEFAULT_S);
        for obs in [
            DENVER,
            Observer {
                latitude_deg: -33.9,
                longitude_deg: 18.4,
                elevation_m: 10.0,
            },
            Observer {
                latitude_deg: 78.2,
                longitude_deg: 15.6,
                elevation_m: 10.0,
            },
        ] {
            let mut t = a;
            while t < b {
                let x = interval_sun(t, t + 3600.0, &obs, &DENVER_AIR, DELTA_T_DEFAULT_S);
                let y = eph.interval_sun(t, t + 3600.0, &obs, &DENVER_AIR);
                match (x, y) {
                    (None, None) => {}
                    (Some(x), Some(y)) => {
                        check("eval", y.eval_unix_s, x.eval_unix_s, 1.0);
                        check("frac", y.sunlit_frac, x.sunlit_frac, 2.0 / 3600.0);
                        // Up to 1 s apart: the sun moves at most 0.0042°/s.
                        check(
                            "zenith",
                            y.position.zenith_deg,
                            x.position.zenith_deg,
                            1e-4 + 0.0042 * (y.eval_unix_s - x.eval_unix_s).abs(),
                        );
                    }
                    (x, y) => panic!("{obs:?} at {t}: exact {x:?}, ephemeris {y:?}"),
                }
                t += 3600.0;
            }
        }
    }

    // ------------------------------------------------------------------- performance

    #[test]
    #[ignore = "timing; run with --release -- --ignored --nocapture"]
    fn timing() {
        let air = Atmosphere {
            pressure_hpa: 1013.25,
            temperature_c: 12.0,
        };
        let obs = Observer {
            latitude_deg: 45.0,
            longitude_deg: 7.0,
            elevation_m: 300.0,
        };
        let t0 = unix(2021, 1, 1, 0, 0, 0);
        let n = 8760;
        let mut acc = 0.0;
        let mut lit = 0;
        // Best of five runs: the shortest time is the least disturbed by other processes.
        let best = |f: &mut dyn FnMut()| {
            (0..5)
                .map(|_| {
                    let start = std::time::Instant::now();
                    f();
                    start.elapsed()
                })
                .min()
                .unwrap()
        };
        let spa = best(&mut || {
            for i in 0..n {
                acc += solar_position(
                    t0 + 3600.0 * i as f64 + 1800.0,
                    &obs,
                    &air,
                    DELTA_T_DEFAULT_S,
                )
                .zenith_deg;
            }
        });
        let intervals = best(&mut || {
            lit = 0;
            for i in 0..n {
                let a = t0 + 3600.0 * i as f64;
                if let Some(s) = interval_sun(a, a + 3600.0, &obs, &air, DELTA_T_DEFAULT_S) {
                    acc += s.position.zenith_deg;
                    lit += 1;
                }
            }
        });
        let with_eph = best(&mut || {
            let eph = SunEphemeris::new(t0, t0 + 3600.0 * n as f64, DELTA_T_DEFAULT_S);
            for i in 0..n {
                let a = t0 + 3600.0 * i as f64;
                if let Some(s) = eph.interval_sun(a, a + 3600.0, &obs, &air) {
                    acc += s.position.zenith_deg;
                }
            }
        });
        eprintln!(
            "solar_position: {:.2} µs/call ({:.1} ms per 8760); interval_sun: {:.1} ms per hourly year \
             ({lit} sunlit); SunEphemeris (incl. building it): {:.1} ms [{acc:.0}]",
            spa.as_secs_f64() * 1e6 / n as f64,
            spa.as_secs_f64() * 1e3,
            intervals.as_secs_f64() * 1e3,
            with_eph.as_secs_f64() * 1e3
        );
    }
}
