//! Where the sun is: NREL SPA topocentric position, the textbook day-of-year formulas,
//! extraterrestrial irradiance, air mass, angle of incidence, and the one sun position
//! that stands for a whole weather interval.
//!
//! Time enters as seconds since 1970-01-01T00:00:00 UTC (`unix_s`, f64). This module does
//! no calendar work with time zones: callers convert local standard time first. It does
//! not know about weather files, orientations or shading; it only answers "where is the
//! sun, seen from here, at this instant (or for this interval)".
//!
//! Conventions (notebooks-free-docs/conventions.md): angles in degrees at the interface, azimuth clockwise from true
//! north (0 = N, 90 = E, 180 = S, 270 = W) for the sun and for surfaces, tilt 0 = horizontal,
//! longitude positive east, latitude positive north. The textbook functions that follow
//! Duffie & Beckman keep the book's south-based angles inside and convert at the boundary.
//! The method is written out in `notebooks-free-docs/method-sun.md`.
//!
//! One idea per file; everything public is re-exported here, so callers name
//! `physics::sun::X` and never a file:
//! - `spa.rs` — the NREL SPA at one instant (Reda & Andreas), its periodic-term tables in
//!   `spa_tables.rs`;
//! - `ephemeris.rs` — [`SunEphemeris`]: SPA's observer-independent part once a day over a
//!   span, interpolated in between;
//! - `interval.rs` — [`interval_sun`]: the instant and the sunlit share that stand for one
//!   weather interval, the sunrise/sunset search, the [`PreparedObserver`];
//! - `textbook.rs` — Spencer 1971 and Duffie & Beckman formulas, extraterrestrial
//!   irradiance, angle of incidence, air mass, standard-atmosphere pressure.

mod ephemeris;
mod interval;
mod spa;
mod spa_tables;
mod textbook;

pub use ephemeris::SunEphemeris;
pub use interval::{interval_sun, IntervalSun, PreparedObserver};
pub use spa::{julian_day, solar_position, Atmosphere, Observer, SunPosition, DELTA_T_DEFAULT_S};
pub use textbook::{
    air_mass_absolute, air_mass_relative, cos_incidence_from_hour_angle, day_angle_rad,
    declination_spencer_deg, earth_sun_distance_factor, equation_of_time_min,
    extraterrestrial_normal_w_m2, incidence_angle_deg, pressure_from_elevation_hpa,
    solar_time_offset_min, zenith_azimuth_from_hour_angle_deg, SOLAR_CONSTANT_W_M2,
    STANDARD_PRESSURE_HPA,
};

#[cfg(test)]
mod test_support;
