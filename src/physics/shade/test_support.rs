//! Shared by the unit tests of the shading files: a tolerance check, a sun at given angles,
//! a module placement from its numbers, an east–west wall and the substring fractions of one
//! module. Compiled for tests only; nothing here is part of the library.

use super::{shaded_fractions, ModulePlacement, Obstacle};
use crate::physics::sun::SunPosition;

pub(super) fn assert_close(got: f64, expected: f64, tol: f64, what: &str) {
    assert!(
        (got - expected).abs() <= tol,
        "{what}: got {got}, expected {expected} ± {tol}"
    );
}

pub(super) fn sun(elevation_deg: f64, azimuth_deg: f64) -> SunPosition {
    SunPosition {
        zenith_deg: 90.0 - elevation_deg,
        zenith_geometric_deg: 90.0 - elevation_deg,
        azimuth_deg,
        declination_deg: 0.0,
        equation_of_time_min: 0.0,
    }
}

pub(super) fn module(
    centre: [f64; 3],
    tilt_deg: f64,
    azimuth_deg: f64,
    length_m: f64,
    width_m: f64,
    substrings: u32,
    along_long: bool,
) -> ModulePlacement {
    ModulePlacement {
        centre_e_m: centre[0],
        centre_n_m: centre[1],
        centre_up_m: centre[2],
        tilt_deg,
        azimuth_deg,
        length_m,
        width_m,
        substrings,
        substrings_along_long_side: along_long,
    }
}

/// A wall running east–west, its north face at `north_face_m`, 0.1 m thick.
pub(super) fn east_west_wall(north_face_m: f64, half_length_m: f64, height_m: f64) -> Obstacle {
    Obstacle::Box {
        footprint: [
            (-half_length_m, north_face_m - 0.1),
            (half_length_m, north_face_m - 0.1),
            (half_length_m, north_face_m),
            (-half_length_m, north_face_m),
        ],
        base_m: 0.0,
        height_m,
    }
}

pub(super) fn fractions(m: &ModulePlacement, obstacles: &[Obstacle], s: &SunPosition) -> Vec<f64> {
    let mut out = vec![f64::NAN; m.substrings as usize];
    shaded_fractions(m, obstacles, s, &mut out);
    out
}
