//! Shared by the unit tests of the sun's files: the inputs of the SPA report's worked example
//! (Denver, 2003-10-17), a UTC calendar helper, a tolerance check and a small reproducible
//! random generator. Compiled for tests only; nothing here is part of the library.

use super::{Atmosphere, Observer};

// Source: SPA report (Reda & Andreas, NREL/TP-560-34302), worked example inputs:
// 2003-10-17 12:30:30 MST (UTC−7) = 19:30:30 UTC, ΔUT1 0, ΔT 67 s.
pub(super) const SPA_EXAMPLE_UNIX_S: f64 = 1_066_419_030.0;
pub(super) const SPA_EXAMPLE_DELTA_T_S: f64 = 67.0;
pub(super) const DENVER: Observer = Observer {
    latitude_deg: 39.742476,
    longitude_deg: -105.1786,
    elevation_m: 1830.14,
};
pub(super) const DENVER_AIR: Atmosphere = Atmosphere {
    pressure_hpa: 820.0,
    temperature_c: 11.0,
};

/// Unix time of a UTC calendar instant (proleptic Gregorian; days from civil).
pub(super) fn unix(y: i64, mo: i64, d: i64, h: i64, mi: i64, s: i64) -> f64 {
    let (y, mo) = if mo <= 2 { (y - 1, mo + 12) } else { (y, mo) };
    let era_days = 365 * y + y / 4 - y / 100 + y / 400 + (153 * (mo - 3) + 2) / 5 + d - 719469;
    (era_days * 86400 + h * 3600 + mi * 60 + s) as f64
}

pub(super) fn check(name: &str, got: f64, expected: f64, tol: f64) {
    assert!(
        (got - expected).abs() <= tol,
        "{name}: got {got:.10}, expected {expected:.10} ± {tol:e} (off by {:e})",
        (got - expected).abs()
    );
}

/// Linear congruential generator (Knuth's MMIX constants): reproducible uniform numbers in
/// [0, 1) for the randomised tests.
pub(super) fn lcg(seed: u64) -> impl FnMut() -> f64 {
    let mut state = seed;
    move || {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (state >> 11) as f64 / (1u64 << 53) as f64
    }
}
