//! The interval loop, phase 1: sun, sky, incidence losses, soiling and cell temperature for
//! every interval and orientation group.
//!
//! Phase 1 is the same for every wiring, so it runs once and its results are shared by every
//! layout in phase 2. It does no file I/O and knows no file format.

use crate::input::plan::Plan;
use crate::input::site::Site;
use crate::input::weather::Weather;
use crate::physics::sky::{self, PoaParts, SkyState, Surface};
use crate::physics::sun::{self, Atmosphere, IntervalSun, Observer};
use crate::time::{LocalTime, UtcTime};

/// Wind speed assumed when the weather file has none, m/s (the NOCT test condition, IEC 61215).
/// Wind speed assumed when the weather file has none, m/s (the NOCT test condition, IEC 61215).
pub const WIND_DEFAULT_M_S: f64 = 1.0;

/// What every layout sees in one interval, independent of orientation.
#[derive(Clone, Copy, Debug)]
pub struct IntervalInfo {
    /// Interval start, seconds since 1970 UTC.
    pub start_unix_s: f64,
    /// Interval length, h.
    pub hours: f64,
    /// Local month 1..=12 and hour 0..=23 of the interval start.
    pub month: u32,
    pub hour: u32,
    /// Local calendar year, day of the year (1 = 1 January) and whether it is a Saturday or
    /// Sunday.
    pub year: i32,
    pub day_of_year: u32,
    pub weekend: bool,
    /// Sun at the evaluation point; `None` when dark throughout.
    pub sun: Option<IntervalSun>,
    pub ghi_w_m2: f64,
    pub dni_w_m2: f64,
    pub dhi_w_m2: f64,
    pub air_temp_c: f64,
    pub wind_m_s: f64,
}

impl IntervalInfo {
    /// Sun elevation at the evaluation point, degrees (negative or `None` at night).
    pub fn sun_elevation_deg(&self) -> Option<f64> {
        self.sun.map(|s| s.position.elevation_deg())
    }
}

/// One orientation group's light and temperature in every interval.
#[derive(Clone, Debug)]
pub struct GroupConditions {
    /// Plane-of-array parts before any loss.
    pub poa: Vec<PoaParts>,
    /// The same after incidence-angle losses and soiling (what reaches the cells, unshaded).
    pub effective: Vec<PoaParts>,
    /// Plane-of-array after incidence-angle losses, before soiling (for the loss table).
    pub after_iam_w_m2: Vec<f32>,
    pub cell_temp_c: Vec<f64>,
}

/// Phase 1 output: shared by every layout.
#[derive(Clone, Debug)]
pub struct Conditions {
    pub site: Site,
    pub intervals: Vec<IntervalInfo>,
    pub groups: Vec<GroupConditions>,
}

impl Conditions {
    /// Years covered by the conditions' intervals, as a factor that turns a total over the
    /// file into a mean year (1 for a year or less).
    pub fn per_year_factor(&self) -> f64 {
        let hours: f64 = self.intervals.iter().map(|i| i.hours).sum();
        if hours > 8784.0 {
            8760.0 / hours
        } else {
            1.0
        }
    }
}

/// Runs phase 1 over the whole weather series.
///
/// Each interval is evaluated once, at the sun position of notebooks-free-docs/method-sun.md; the weather values are
/// interval means, so no sunlit-fraction factor is applied (notebooks-free-docs/conventions.md).
pub fn phase1(plan: &Plan, weather: &Weather, site: &Site) -> Conditions {
    let observer = Observer {
        latitude_deg: site.latitude_deg,
        longitude_deg: site.longitude_deg,
        elevation_m: site.elevation_m,
    };
    let prepared = observer.prepare();
    let default_pressure = sun::pressure_from_elevation_hpa(site.elevation_m);
    let n = weather.len();
    let dt_s = weather.interval_s as f64;

    // The observer-independent part of SPA, once per day of the file (SunEphemeris).
    let span = |k: usize| {
        LocalTime(weather.local_start_s[k])
            .to_utc(site.utc_offset_h)
            .0
    };
    let ephemeris =
        (n > 0).then(|| sun::SunEphemeris::new(span(0), span(n - 1) + dt_s, plan.model.delta_t_s));
    let mut intervals = Vec::with_capacity(n);
    let mut skies: Vec<Option<SkyState>> = Vec::with_capacity(n);
    for k in 0..n {
        let local = LocalTime(weather.local_start_s[k]);
        let start = local.to_utc(site.utc_offset_h).0;
        let air = weather.air_temp_c[k];
        let atmosphere = Atmosphere {
            pressure_hpa: weather
                .pressure_hpa
                .as_ref()
                .map_or(default_pressure, |p| p[k]),
            temperature_c: air,
        };
        let sun_now = match &ephemeris {
            Some(e) => e.interval_sun_prepared(start, start + dt_s, &prepared, &atmosphere),
            None => sun::interval_sun(
                start,
                start + dt_s,
                &observer,
                &atmosphere,
                plan.model.delta_t_s,
            ),
        };
        let ghi = weather.ghi_w_m2[k];
        let mut info = IntervalInfo {
            start_unix_s: start,
            hours: dt_s / 3600.0,
            month: weather.local_month(k),
            hour: weather.local_hour(k),
            year: local.year() as i32,
            day_of_year: weather.local_day_of_year(k),
            weekend: local.is_weekend(),
            sun: sun_now,
            ghi_w_m2: ghi,
            dni_w_m2: 0.0,
            dhi_w_m2: 0.0,
            air_temp_c: air,
            wind_m_s: weather.wind_m_s.as_ref().map_or(WIND_DEFAULT_M_S, |w| w[k]),
        };
        let sky_state = sun_now.filter(|_| ghi > 0.0).map(|s| {
            let doy = UtcTime(s.eval_unix_s).day_of_year_frac();
            let g_on = sun::extraterrestrial_normal_w_m2(doy);
            let z = s.position.zenith_deg;
            let (dni, dhi) = match (&weather.dni_w_m2, &weather.dhi_w_m2) {
                (Some(b), Some(d)) => (b[k], d[k]),
                _ => {
                    let split = sky::erbs_split(ghi, z, g_on);
                    (split.dni_w_m2, split.dhi_w_m2)
                }
            };
            info.dni_w_m2 = dni;
            info.dhi_w_m2 = dhi;
            SkyState {
                ghi_w_m2: ghi,
                dni_w_m2: dni,
                dhi_w_m2: dhi,
                extraterrestrial_normal_w_m2: g_on,
                zenith_deg: z,
                azimuth_deg: s.position.azimuth_deg,
                air_mass_relative: sun::air_mass_relative(z).unwrap_or(0.0),
            }
        });
        intervals.push(info);
        skies.push(sky_state);
    }

    let groups = plan
        .groups
        .iter()
        .map(|g| {
            let surface = Surface {
                tilt_deg: g.tilt_deg,
                azimuth_deg: g.azimuth_deg,
            }
            .prepare();
            let factors = sky::iam_factors(&plan.model.glass, g.tilt_deg);
            let mut out = GroupConditions {
                poa: Vec::with_capacity(n),
                effective: Vec::with_capacity(n),
                after_iam_w_m2: Vec::with_capacity(n),
                cell_temp_c: Vec::with_capacity(n),
            };
            for (k, info) in intervals.iter().enumerate() {
                let (poa, after_iam) = match &skies[k] {
                    Some(state) => {
                        let albedo = weather
                            .albedo_frac
                            .as_ref()
                            .map_or_else(|| plan.model.albedo.for_month(info.month), |a| a[k]);
                        let poa = sky::poa_parts_prepared(plan.model.sky, &surface, state, albedo);
                        let after = sky::apply_iam(&poa, &plan.model.glass, &factors);
                        (poa, after)
                    }
                    None => (PoaParts::default(), PoaParts::default()),
                };
                let soil = 1.0 - g.soiling_frac[(info.month - 1) as usize];
                let effective = scale_parts(&after_iam, soil);
                out.cell_temp_c.push(g.thermal.cell_temperature_c(
                    poa.total_w_m2(),
                    info.air_temp_c,
                    info.wind_m_s,
                ));
                out.after_iam_w_m2.push(after_iam.total_w_m2() as f32);
                out.poa.push(poa);
                out.effective.push(effective);
            }
            out
        })
        .collect();

    Conditions {
        site: site.clone(),
        intervals,
        groups,
    }
}

/// Every irradiance part multiplied by `f` (the angle of incidence kept).
pub fn scale_parts(p: &PoaParts, f: f64) -> PoaParts {
    PoaParts {
        beam_w_m2: p.beam_w_m2 * f,
        circumsolar_w_m2: p.circumsolar_w_m2 * f,
        isotropic_w_m2: p.isotropic_w_m2 * f,
        horizon_w_m2: p.horizon_w_m2 * f,
        ground_w_m2: p.ground_w_m2 * f,
        aoi_deg: p.aoi_deg,
    }
}
