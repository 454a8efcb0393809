//! The share of the isotropic sky dome that a tilted plane sees above a horizon profile:
//! the cos-weighted dome integral in closed form in elevation and by Gauss–Legendre pieces in
//! azimuth, normalised so that an unobstructed plane gets the Liu & Jordan view factor.
//!
//! It integrates once per surface, never per interval, and deliberately leaves near
//! obstacles to `obstacle_sky.rs`, which reuses this quadrature.

use std::f64::consts::{FRAC_PI_2, PI};

use super::horizon::HorizonProfile;

/// Largest azimuth step of the sky-dome quadrature, degrees: each stretch between two
/// breakpoints is cut into pieces no wider than this, each with 5-point Gauss–Legendre.
const DOME_PIECE_DEG: f64 = 2.0;

/// 5-point Gauss–Legendre nodes and weights on [−1, 1] (Abramowitz & Stegun Table 25.4).
const GL5: [(f64, f64); 5] = [
    (-0.906_179_845_938_664, 0.236_926_885_056_189_1),
    (-0.538_469_310_105_683_1, 0.478_628_670_499_366_5),
    (0.0, 0.568_888_888_888_888_9),
    (0.538_469_310_105_683_1, 0.478_628_670_499_366_5),
    (0.906_179_845_938_664, 0.236_926_885_056_189_1),
];

/// A plane's orientation reduced to what the dome integral needs.
#[derive(Clone, Copy, Debug)]
pub(super) struct DomePlane {
    sin_tilt: f64,
    cos_tilt: f64,
    azimuth_rad: f64,
    azimuth_deg: f64,
}

impl DomePlane {
    /// Tilt is clamped to 0..=90, the range the front-of-plane limit below is written for.
    pub(super) fn new(tilt_deg: f64, azimuth_deg: f64) -> Self {
        let tilt = if tilt_deg.is_nan() {
            0.0
        } else {
            tilt_deg.clamp(0.0, 90.0)
        };
        let (sin_tilt, cos_tilt) = tilt.to_radians().sin_cos();
        Self {
            sin_tilt,
            cos_tilt,
            azimuth_rad: azimuth_deg.to_radians(),
            azimuth_deg,
        }
    }

    /// The coefficients of cos θ = A cos e + B sin e along the azimuth φ, and the lowest
    /// elevation that is in front of the plane there.
    pub(super) fn along(&self, phi_rad: f64) -> (f64, f64, f64) {
        let a = self.sin_tilt * (phi_rad - self.azimuth_rad).cos();
        let b = self.cos_tilt;
        // A ≥ 0: the whole upper half of this vertical half-plane is in front. A < 0: only
        // elevations with tan e > −A/B are (B = 0, a vertical plane: none).
        let e_front = if a >= 0.0 { 0.0 } else { (-a).atan2(b) };
        (a, b, e_front)
    }
}

/// ∫ (A cos e + B sin e) cos e de, the cos-weighted radiance of a vertical slice of the dome.
///
/// # Formula
/// G(e) = A (e/2 + sin 2e / 4) + B sin²e / 2.
pub(super) fn slice_antiderivative(a: f64, b: f64, e_rad: f64) -> f64 {
    let s = e_rad.sin();
    a * (e_rad / 2.0 + (2.0 * e_rad).sin() / 4.0) + b * s * s / 2.0
}

/// ∫ from `lo` to π/2 of the slice integrand, 0 when the interval is empty.
pub(super) fn slice_up(a: f64, b: f64, lo_rad: f64) -> f64 {
    if lo_rad >= FRAC_PI_2 {
        0.0
    } else {
        slice_antiderivative(a, b, FRAC_PI_2) - slice_antiderivative(a, b, lo_rad)
    }
}

/// Runs `f(φ_rad, weight_rad)` at Gauss–Legendre nodes covering 0..360°, splitting at the
/// given breakpoints (degrees, any order, taken modulo 360) so that every kink or jump of the
/// integrand in azimuth sits on a piece boundary.
pub(super) fn azimuth_quadrature(breaks_deg: &mut Vec<f64>, mut f: impl FnMut(f64, f64)) {
    for b in breaks_deg.iter_mut() {
        *b = b.rem_euclid(360.0);
    }
    breaks_deg.retain(|b| b.is_finite());
    breaks_deg.push(0.0);
    breaks_deg.push(360.0);
    breaks_deg.sort_unstable_by(f64::total_cmp);
    breaks_deg.dedup();
    for w in breaks_deg.windows(2) {
        let (lo, hi) = (w[0], w[1]);
        if hi - lo <= 1e-12 {
            continue;
        }
        let pieces = ((hi - lo) / DOME_PIECE_DEG).ceil().max(1.0) as usize;
        let step = (hi - lo) / pieces as f64;
        for k in 0..pieces {
            let mid = lo + (k as f64 + 0.5) * step;
            let half = step / 2.0;
            for &(x, wt) in &GL5 {
                f((mid + x * half).to_radians(), wt * half.to_radians());
            }
        }
    }
}

/// Cos-weighted integrals over the dome of a plane, divided by π: the whole front sky
/// hemisphere (`flat`) and the part of it above the horizon profile (`horizon`).
fn dome_integrals(plane: &DomePlane, horizon: &HorizonProfile) -> (f64, f64) {
    let mut breaks: Vec<f64> = horizon.azimuth_deg.clone();
    breaks.push(plane.azimuth_deg + 90.0);
    breaks.push(plane.azimuth_deg - 90.0);
    let (mut flat, mut above) = (0.0, 0.0);
    azimuth_quadrature(&mut breaks, |phi, w| {
        let (a, b, e_front) = plane.along(phi);
        let h = horizon.elevation_at(phi.to_degrees()).max(0.0).to_radians();
        flat += w * slice_up(a, b, e_front);
        above += w * slice_up(a, b, e_front.max(h));
    });
    (flat / PI, above / PI)
}

/// Share of the isotropic sky that a tilted plane sees above a horizon profile.
///
/// # Formula
/// F = (1/π) ∫∫ max(0, cos θ) cos e de dφ over the directions that are above both the
/// astronomical horizon and the skyline, with cos θ = sin β cos e cos(φ − γ) + cos β sin e.
/// The elevation integral is done in closed form, the azimuth integral by Gauss–Legendre
/// pieces split at the profile's points and at γ ± 90°. The result is normalised by the same
/// quadrature without the skyline, times (1 + cos β)/2, so an unobstructed plane gives the
/// Liu & Jordan value exactly. Skyline elevations below 0° count as 0°: below the
/// astronomical horizon lies ground, not sky.
///
/// # Source
/// Liu & Jordan 1963 (isotropic sky, view factor (1 + cos β)/2); the masked integral is
/// geometry (notebooks-free-docs/method-shade.md derives the uniform-horizon checks).
///
/// # Validity
/// Tilt 0..=90° (clamped), any azimuth. Quadrature error below 1e-9 for piecewise-linear
/// profiles. Call once per surface, not per interval.
pub fn sky_view_frac(tilt_deg: f64, azimuth_deg: f64, horizon: &HorizonProfile) -> f64 {
    let plane = DomePlane::new(tilt_deg, azimuth_deg);
    (1.0 + plane.cos_tilt) / 2.0 * sky_view_ratio(tilt_deg, azimuth_deg, horizon)
}

/// The factor that a horizon profile applies to the isotropic sky part (and to the Perez
/// horizon band, which is treated as part of the dome): [`sky_view_frac`] divided by the
/// unobstructed value (1 + cos β)/2. 1 for a flat horizon, 0 when the skyline hides the
/// whole front sky.
///
/// # Validity
/// As [`sky_view_frac`].
pub fn sky_view_ratio(tilt_deg: f64, azimuth_deg: f64, horizon: &HorizonProfile) -> f64 {
    let plane = DomePlane::new(tilt_deg, azimuth_deg);
    if horizon.max_elevation_deg() <= 0.0 {
        return 1.0;
    }
    let (flat, above) = dome_integrals(&plane, horizon);
    if flat > 0.0 {
        (above / flat).clamp(0.0, 1.0)
    } else {
        0.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::shade::test_support::assert_close;

    // ---------------------------------------------------------------- sky view

    fn check_unobstructed_quadrature(tilt_deg: f64, azimuth_deg: f64) {
        let plane = DomePlane::new(tilt_deg, azimuth_deg);
        let (flat, above) = dome_integrals(&plane, &HorizonProfile::flat());
        let expected = (1.0 + tilt_deg.to_radians().cos()) / 2.0;
        let what = format!("raw dome integral β={tilt_deg} γ={azimuth_deg}");
        assert_close(flat, expected, 1e-12, &what);
        assert_close(above, expected, 1e-12, &what);
    }

    #[test]
    fn unobstructed_dome_quadrature_gives_liu_jordan() {
        // Source: Liu & Jordan 1963, isotropic sky view factor (1 + cos β)/2; the formula is
        // exact and the quadrature should hold it to rounding (1e-12)
        for az in [0.0, 135.0, 180.0, 270.0, 359.0] {
            check_unobstructed_quadrature(0.0, az);
            check_unobstructed_quadrature(30.0, az);
            check_unobstructed_quadrature(60.0, az);
            check_unobstructed_quadrature(90.0, az);
        }
    }

    #[test]
    fn sky_view_of_unobstructed_plane_is_liu_jordan() {
        let below = HorizonProfile::new(&[(0.0, -5.0), (180.0, -2.0)]).unwrap();
        for tilt in [0.0, 30.0, 60.0, 90.0] {
            let expected = (1.0 + f64::to_radians(tilt).cos()) / 2.0;
            // Source: Liu & Jordan 1963, (1 + cos β)/2 (normalised to it by construction)
            assert_close(
                sky_view_frac(tilt, 180.0, &HorizonProfile::flat()),
                expected,
                1e-15,
                "flat",
            );
            // Source: geometry: a skyline below 0° hides no sky (ground lies below 0°)
            assert_close(
                sky_view_frac(tilt, 200.0, &below),
                expected,
                1e-15,
                "below 0",
            );
            assert_eq!(sky_view_ratio(tilt, 200.0, &below), 1.0);
        }
    }

    fn check_uniform_horizon(tilt_deg: f64, h_deg: f64, expected_ratio: f64) {
        let hp = HorizonProfile::new(&[(0.0, h_deg)]).unwrap();
        let plane = DomePlane::new(tilt_deg, 180.0);
        let (flat, above) = dome_integrals(&plane, &hp);
        // Exact formulas, closed-form elevation integral: rounding only (1e-12).
        assert_close(
            above / flat,
            expected_ratio,
            1e-12,
            &format!("uniform horizon {h_deg}° on tilt {tilt_deg}°"),
        );
        assert_close(
            sky_view_ratio(tilt_deg, 180.0, &hp),
            expected_ratio,
            1e-12,
            "public ratio",
        );
    }

    #[test]
    fn uniform_horizon_on_horizontal_plane_leaves_cos_squared() {
        for h in [5.0, 10.0, 30.0, 60.0, 89.0] {
            let c = f64::to_radians(h).cos();
            // Source: geometry, (1/π)∫∫_{e>h} sin e cos e de dφ = cos²h (notebooks-free-docs/method-shade.md)
            check_uniform_horizon(0.0, h, c * c);
        }
    }

    #[test]
    fn uniform_horizon_on_vertical_plane() {
        for h in [5.0, 10.0, 30.0, 60.0] {
            let hr = f64::to_radians(h);
            // Source: geometry, ratio = 1 − (2h + sin 2h)/π for a vertical plane
            // (notebooks-free-docs/method-shade.md)
            check_uniform_horizon(90.0, h, 1.0 - (2.0 * hr + (2.0 * hr).sin()) / PI);
        }
    }

    #[test]
    fn skyline_behind_a_tilted_plane_costs_nothing() {
        // North skyline up to 20°, plane tilted 30° facing south: from the north the plane
        // sees only elevations above ≥ 26.6°.
        let hp = HorizonProfile::new(&[(0.0, 20.0), (60.0, 0.0), (300.0, 0.0)]).unwrap();
        // Source: geometry (the hidden directions are behind the plane anyway)
        assert_close(sky_view_ratio(30.0, 180.0, &hp), 1.0, 1e-12, "ratio");
        // Source: geometry: the same skyline in front of the plane does cost something
        assert!(sky_view_ratio(30.0, 0.0, &hp) < 0.99);
    }

    /// Elevation of the top of an infinitely long east–west wall south of a point, seen in
    /// azimuth φ: tan e = tan h · cos(φ − 180°).
    fn wall_skyline_deg(h_deg: f64, phi_deg: f64) -> f64 {
        let c = (phi_deg - 180.0).to_radians().cos();
        if c <= 0.0 {
            0.0
        } else {
            (h_deg.to_radians().tan() * c).atan().to_degrees()
        }
    }

    #[test]
    fn long_wall_as_horizon_gives_two_dimensional_view_factor() {
        let h_deg = f64::atan(3.0 / 5.0).to_degrees();
        let points: Vec<(f64, f64)> = (0..360)
            .map(|a| (a as f64, wall_skyline_deg(h_deg, a as f64)))
            .collect();
        let hp = HorizonProfile::new(&points).unwrap();
        let expected = (1.0 + h_deg.to_radians().cos()) / 2.0;
        // Source: 2-D view factor from a horizontal element to an infinite wall,
        // F = (1 − cos h)/2 (Hottel's crossed strings; notebooks-free-docs/method-shade.md derives it); 1e-4
        // covers the 1° linear sampling of the skyline
        assert_close(
            sky_view_frac(0.0, 180.0, &hp),
            expected,
            1e-4,
            "wall skyline",
        );
    }
}
