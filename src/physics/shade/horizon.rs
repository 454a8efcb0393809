//! Far-horizon profiles: the skyline's elevation as a function of azimuth, interpolated
//! linearly and wrapped across north, and whether it hides the sun.
//!
//! It deliberately integrates nothing over the sky dome (`sky_view.rs` turns a profile into
//! the share of the sky a plane still sees) and knows no near obstacles.

/// Lowest horizon elevation a profile may hold, degrees. A site on a ridge sees slightly
/// below the astronomical horizon; more than a few degrees is almost always a sign error.
pub const HORIZON_MIN_ELEVATION_DEG: f64 = -5.0;

/// A far-horizon profile: the elevation of the skyline as a function of azimuth.
///
/// Between the given points the elevation is interpolated linearly in azimuth, and the last
/// point joins the first across north (360° → 0°). A single point is a uniform horizon.
#[derive(Clone, Debug, PartialEq)]
pub struct HorizonProfile {
    pub(super) azimuth_deg: Vec<f64>,
    elevation_deg: Vec<f64>,
}

impl HorizonProfile {
    /// A profile from `(azimuth_deg, elevation_deg)` points.
    ///
    /// # Errors
    /// No points; an azimuth outside 0..360 or not strictly increasing; an elevation outside
    /// −5..=90 or not finite. The message names the point by its number, the first being 1.
    pub fn new(points: &[(f64, f64)]) -> Result<Self, String> {
        if points.is_empty() {
            return Err(
                "horizon profile needs at least one (azimuth_deg, elevation_deg) point; \
                 leave the horizon out for a flat one"
                    .to_string(),
            );
        }
        let mut prev = f64::NEG_INFINITY;
        for (i, &(az, el)) in points.iter().enumerate() {
            if !(0.0..360.0).contains(&az) {
                return Err(format!(
                    "horizon point {}: azimuth_deg = {az} is outside 0 to 360 (degrees clockwise from north)",
                    i + 1
                ));
            }
            if !(HORIZON_MIN_ELEVATION_DEG..=90.0).contains(&el) {
                return Err(format!(
                    "horizon point {}: elevation_deg = {el} is outside -5 to 90",
                    i + 1
                ));
            }
            if az <= prev {
                return Err(format!(
                    "horizon point {}: azimuth_deg = {az} does not increase (previous point has {prev}); \
                     list the points in increasing azimuth",
                    i + 1
                ));
            }
            prev = az;
        }
        Ok(Self {
            azimuth_deg: points.iter().map(|p| p.0).collect(),
            elevation_deg: points.iter().map(|p| p.1).collect(),
        })
    }

    /// A flat horizon at elevation 0° all round.
    pub fn flat() -> Self {
        Self {
            azimuth_deg: vec![0.0],
            elevation_deg: vec![0.0],
        }
    }

    /// The profile's points, `(azimuth_deg, elevation_deg)`, in increasing azimuth.
    pub fn points(&self) -> impl Iterator<Item = (f64, f64)> + '_ {
        self.azimuth_deg
            .iter()
            .copied()
            .zip(self.elevation_deg.iter().copied())
    }

    /// Skyline elevation at an azimuth, degrees.
    ///
    /// # Formula
    /// Linear interpolation between the neighbouring points a₀ ≤ γ < a₁:
    /// h = h₀ + (h₁ − h₀)(γ − a₀)/(a₁ − a₀), with the segment from the last point to the
    /// first point + 360° covering north.
    ///
    /// # Validity
    /// Any finite azimuth (taken modulo 360); NaN in, NaN out.
    pub fn elevation_at(&self, azimuth_deg: f64) -> f64 {
        let n = self.azimuth_deg.len();
        if n == 1 {
            return self.elevation_deg[0];
        }
        if !azimuth_deg.is_finite() {
            return f64::NAN;
        }
        let mut x = azimuth_deg.rem_euclid(360.0);
        if x < self.azimuth_deg[0] {
            x += 360.0;
        }
        let i = self
            .azimuth_deg
            .partition_point(|&a| a <= x)
            .saturating_sub(1);
        let (a0, h0) = (self.azimuth_deg[i], self.elevation_deg[i]);
        let (a1, h1) = if i + 1 < n {
            (self.azimuth_deg[i + 1], self.elevation_deg[i + 1])
        } else {
            (self.azimuth_deg[0] + 360.0, self.elevation_deg[0])
        };
        h0 + (h1 - h0) * (x - a0) / (a1 - a0)
    }

    /// Whether the skyline hides the sun.
    ///
    /// Pass the apparent (refracted) sun elevation: a skyline is measured as it is seen.
    /// The sun counts as hidden when its centre is strictly below the skyline; beam and
    /// circumsolar light are then blocked together (notebooks-free-docs/conventions.md).
    pub fn blocks(&self, sun_elevation_deg: f64, sun_azimuth_deg: f64) -> bool {
        sun_elevation_deg < self.elevation_at(sun_azimuth_deg)
    }

    /// Highest skyline elevation of the profile, degrees.
    pub fn max_elevation_deg(&self) -> f64 {
        self.elevation_deg
            .iter()
            .copied()
            .fold(f64::NEG_INFINITY, f64::max)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::shade::test_support::assert_close;

    // ---------------------------------------------------------------- horizon

    fn check_horizon(points: &[(f64, f64)], azimuth_deg: f64, expected_deg: f64) {
        let h = HorizonProfile::new(points).unwrap();
        assert_close(
            h.elevation_at(azimuth_deg),
            expected_deg,
            1e-12,
            &format!("horizon at {azimuth_deg}°"),
        );
    }

    #[test]
    fn horizon_interpolates_linearly_and_wraps_across_north() {
        let p = [(90.0, 10.0), (180.0, 20.0), (270.0, 0.0)];
        // Source: recomputed from the formula (linear interpolation), exact
        check_horizon(&p, 135.0, 15.0);
        check_horizon(&p, 180.0, 20.0);
        check_horizon(&p, 90.0, 10.0);
        check_horizon(&p, 225.0, 10.0);
        // Source: recomputed from the formula: wrap segment 270° (0°) → 450° (10°)
        check_horizon(&p, 0.0, 5.0);
        check_horizon(&p, 360.0, 5.0);
        check_horizon(&p, 45.0, 7.5);
        check_horizon(&p, 315.0, 2.5);
        check_horizon(&p, -45.0, 2.5);
        check_horizon(&p, 720.0 + 135.0, 15.0);
        // Source: common practice, no source (one point = a uniform skyline)
        check_horizon(&[(200.0, 7.0)], 13.0, 7.0);
        check_horizon(&[(0.0, 0.0), (359.0, 3.0)], 359.5, 1.5);
        assert!(HorizonProfile::new(&p)
            .unwrap()
            .elevation_at(f64::NAN)
            .is_nan());
    }

    #[test]
    fn horizon_blocks_sun_below_the_skyline_only() {
        let h = HorizonProfile::new(&[(90.0, 10.0), (180.0, 20.0), (270.0, 0.0)]).unwrap();
        // Source: definition (notebooks-free-docs/method-shade.md): beam blocked while the sun is below the skyline
        assert!(h.blocks(14.9, 135.0));
        assert!(!h.blocks(15.1, 135.0));
        assert!(!h.blocks(0.5, 270.0));
        assert!(h.blocks(-0.5, 270.0));
        assert!(!h.blocks(f64::NAN, 135.0));
        assert!(!HorizonProfile::flat().blocks(0.1, 10.0));
        assert_eq!(h.max_elevation_deg(), 20.0);
        assert_eq!(h.points().count(), 3);
    }

    #[test]
    fn horizon_rejects_bad_points() {
        let bad: [(&[(f64, f64)], &str); 8] = [
            (&[], "at least one"),
            (&[(360.0, 1.0)], "point 1: azimuth_deg = 360"),
            (&[(-1.0, 1.0)], "azimuth_deg = -1"),
            (
                &[(10.0, 1.0), (10.0, 2.0)],
                "point 2: azimuth_deg = 10 does not increase",
            ),
            (&[(20.0, 1.0), (10.0, 2.0)], "does not increase"),
            (&[(10.0, -6.0)], "elevation_deg = -6"),
            (&[(10.0, 91.0)], "elevation_deg = 91"),
            (&[(10.0, f64::NAN)], "elevation_deg = NaN"),
        ];
        for (points, needle) in bad {
            let e = HorizonProfile::new(points).unwrap_err();
            assert!(e.contains(needle), "{e:?} should contain {needle:?}");
            assert!(
                e.starts_with(char::is_lowercase) && !e.ends_with('.'),
                "{e:?}"
            );
        }
        assert!(HorizonProfile::new(&[(0.0, -5.0), (359.9, 90.0)]).is_ok());
    }
}
