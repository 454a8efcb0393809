//! Shading geometry: far horizon profiles, the share of the sky dome a tilted plane still
//! sees, and the shadows that near obstacles (poles, boxes/walls) cast on each bypass-diode
//! substring of each module.
//!
//! Everything here is plain f64 geometry in the site frame (metres east, north, up; azimuth
//! clockwise from north; tilt 0 = horizontal). The per-interval entry points
//! ([`shaded_fractions`], [`HorizonProfile::blocks`]) allocate nothing for up to
//! [`STACK_SHADOWS`] shadows on a module; the sky-dome integrations ([`sky_view_frac`],
//! [`obstacle_sky_view_loss`]) are done once per surface or module, never per interval.
//! This module deliberately does not know about irradiance models, weather, plan keys or
//! substring electrics: it turns geometry into fractions, and [`shade_poa`] applies them to
//! the plane-of-array parts of the sky stage. It does not model shade cast by one module on
//! another, nor shade on the ground in front of a module (the ground-reflected part is left
//! as it is).

use std::f64::consts::{FRAC_PI_2, PI};

use super::sky::PoaParts;
use super::sun::SunPosition;

// ============================================================================ horizon

/// Lowest horizon elevation a profile may hold, degrees. A site on a ridge sees slightly
/// below the astronomical horizon; more than a few degrees is almost always a sign error.
pub const HORIZON_MIN_ELEVATION_DEG: f64 = -5.0;

/// A far-horizon profile: the elevation of the skyline as a function of azimuth.
///
/// Between the given points the elevation is interpolated linearly in azimuth, and the last
/// point joins the first across north (360° → 0°). A single point is a uniform horizon.
#[derive(Clone, Debug, PartialEq)]
pub struct HorizonProfile {
    azimuth_deg: Vec<f64>,
    elevation_deg: Vec<f64>,
}

impl HorizonProfile {
    /// A profile from `(azimuth_deg, elevation_deg)` points.
    ///
    /// # Errors
    /// No points; an azimuth outside 0..360 or not strictly increasing; an elevation outside
    /// −5..=90 or not finite. The message names the point by its index.
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
                    "horizon point {i}: azimuth_deg = {az} is outside 0..360 (degrees clockwise from north)"
                ));
            }
            if !(HORIZON_MIN_ELEVATION_DEG..=90.0).contains(&el) {
                return Err(format!(
                    "horizon point {i}: elevation_deg = {el} is outside -5..=90"
                ));
            }
            if az <= prev {
                return Err(format!(
                    "horizon point {i}: azimuth_deg = {az} does not increase (previous point has {prev}); \
                     list the points in increasing azimuth"
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

// ============================================================================ sky dome

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

/// Start points of sky-view rays are lifted this far off the module along its normal, so
/// that a module resting on a box's top does not see that box as an obstacle.
const RAY_LIFT_M: f64 = 1e-6;

/// A plane's orientation reduced to what the dome integral needs.
#[derive(Clone, Copy, Debug)]
struct DomePlane {
    sin_tilt: f64,
    cos_tilt: f64,
    azimuth_rad: f64,
    azimuth_deg: f64,
}

impl DomePlane {
    /// Tilt is clamped to 0..=90, the range the front-of-plane limit below is written for.
    fn new(tilt_deg: f64, azimuth_deg: f64) -> Self {
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
    fn along(&self, phi_rad: f64) -> (f64, f64, f64) {
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
fn slice_antiderivative(a: f64, b: f64, e_rad: f64) -> f64 {
    let s = e_rad.sin();
    a * (e_rad / 2.0 + (2.0 * e_rad).sin() / 4.0) + b * s * s / 2.0
}

/// ∫ from `lo` to π/2 of the slice integrand, 0 when the interval is empty.
fn slice_up(a: f64, b: f64, lo_rad: f64) -> f64 {
    if lo_rad >= FRAC_PI_2 {
        0.0
    } else {
        slice_antiderivative(a, b, FRAC_PI_2) - slice_antiderivative(a, b, lo_rad)
    }
}

/// Runs `f(φ_rad, weight_rad)` at Gauss–Legendre nodes covering 0..360°, splitting at the
/// given breakpoints (degrees, any order, taken modulo 360) so that every kink or jump of the
/// integrand in azimuth sits on a piece boundary.
fn azimuth_quadrature(breaks_deg: &mut Vec<f64>, mut f: impl FnMut(f64, f64)) {
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

// ============================================================================ scene

/// Sides of the regular polygon that stands in for a pole's circular cross-section when its
/// shadow is projected. Its circumradius is chosen so that its mean width equals the pole's
/// diameter; the shadow's width is then right within −2.3 % … +1.2 % in every direction.
pub const POLE_SIDES: usize = 12;

/// Most bypass-diode substrings a module may declare.
pub const MAX_SUBSTRINGS: u32 = 32;

/// How deep (metres) a module must reach into an obstacle before validation calls it
/// "inside": touching a wall or a pole is allowed, overlapping it is not.
const INSIDE_MARGIN_M: f64 = 1e-3;

/// A near obstacle in site coordinates (metres east, north, up from the site's ground datum).
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Obstacle {
    /// A vertical pole or mast standing on the ground (up = 0).
    Pole {
        /// East coordinate of the pole's axis, m.
        base_e_m: f64,
        /// North coordinate of the pole's axis, m.
        base_n_m: f64,
        /// Radius, m (> 0).
        radius_m: f64,
        /// Height above the ground, m (> 0).
        height_m: f64,
    },
    /// A vertical prism on a convex quadrilateral footprint: a wall, a shed, a chimney.
    Box {
        /// Corners `(east_m, north_m)` in order around the footprint, either direction.
        footprint: [(f64, f64); 4],
        /// Height of the bottom face above the ground datum, m (may be > 0 for a box on a
        /// roof).
        base_m: f64,
        /// Height of the box from its bottom face to its top, m (> 0).
        height_m: f64,
    },
}

impl Obstacle {
    /// "pole" or "box", for messages.
    pub fn kind(&self) -> &'static str {
        match self {
            Obstacle::Pole { .. } => "pole",
            Obstacle::Box { .. } => "box",
        }
    }

    /// Checks sizes and shape.
    ///
    /// # Errors
    /// A coordinate that is not finite, a radius or height that is not > 0, a footprint that
    /// is not a convex quadrilateral with its corners in order. The message starts with the
    /// field name.
    pub fn validate(&self) -> Result<(), String> {
        match *self {
            Obstacle::Pole {
                base_e_m,
                base_n_m,
                radius_m,
                height_m,
            } => {
                finite("base_e_m", base_e_m)?;
                finite("base_n_m", base_n_m)?;
                positive("radius_m", radius_m)?;
                positive("height_m", height_m)
            }
            Obstacle::Box {
                footprint,
                base_m,
                height_m,
            } => {
                for (i, &(e, n)) in footprint.iter().enumerate() {
                    if !e.is_finite() || !n.is_finite() {
                        return Err(format!(
                            "footprint[{i}] = ({e}, {n}) is not a finite (east_m, north_m) point"
                        ));
                    }
                }
                let mut sign = 0.0;
                for i in 0..4 {
                    let c = turn(footprint[i], footprint[(i + 1) % 4], footprint[(i + 2) % 4]);
                    if c == 0.0 || (sign != 0.0 && c.signum() != sign) {
                        return Err(format!(
                            "footprint {footprint:?} is not a convex quadrilateral with its corners \
                             in order around it"
                        ));
                    }
                    sign = c.signum();
                }
                finite("base_m", base_m)?;
                positive("height_m", height_m)
            }
        }
    }

    /// The obstacle as a prism, ready for shadow projection. Cheap (no trig, no allocation).
    pub fn prepare(&self) -> PreparedObstacle {
        let mut ring = [[0.0; 2]; POLE_SIDES];
        match *self {
            Obstacle::Pole {
                base_e_m,
                base_n_m,
                radius_m,
                height_m,
            } => {
                let r = radius_m * POLE_CIRCUMRADIUS_PER_RADIUS;
                for (k, p) in ring.iter_mut().enumerate() {
                    // The table runs clockwise seen from above; walk it backwards.
                    let (s, c) = UNIT_12GON[(POLE_SIDES - k) % POLE_SIDES];
                    *p = [base_e_m + r * s, base_n_m + r * c];
                }
                PreparedObstacle {
                    ring,
                    count: POLE_SIDES,
                    z0_m: 0.0,
                    z1_m: height_m,
                }
            }
            Obstacle::Box {
                footprint,
                base_m,
                height_m,
            } => {
                let ccw = signed_area(&footprint) > 0.0;
                for (k, p) in ring.iter_mut().take(4).enumerate() {
                    let (e, n) = footprint[if ccw { k } else { 3 - k }];
                    *p = [e, n];
                }
                PreparedObstacle {
                    ring,
                    count: 4,
                    z0_m: base_m,
                    z1_m: base_m + height_m,
                }
            }
        }
    }
}

/// An obstacle as a vertical prism on a counter-clockwise (seen from above) convex ring.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PreparedObstacle {
    ring: [[f64; 2]; POLE_SIDES],
    count: usize,
    z0_m: f64,
    z1_m: f64,
}

impl PreparedObstacle {
    /// The ring's corners `[east_m, north_m]`, counter-clockwise seen from above.
    pub fn ring(&self) -> &[[f64; 2]] {
        &self.ring[..self.count]
    }

    /// Bottom and top heights, m.
    pub fn z_range_m(&self) -> (f64, f64) {
        (self.z0_m, self.z1_m)
    }
}

/// Circumradius / radius of the 12-gon whose mean width (perimeter / π) is the pole's
/// diameter: π / (12 sin 15°).
const POLE_CIRCUMRADIUS_PER_RADIUS: f64 = 1.011_515_473_341_867_8;

/// (sin, cos) of k·30°, k = 0..11: the unit 12-gon, written out so preparing a pole needs
/// no trigonometry.
const UNIT_12GON: [(f64, f64); 12] = {
    const H: f64 = 0.5;
    const R: f64 = 0.866_025_403_784_438_6; // √3/2
    [
        (0.0, 1.0),
        (H, R),
        (R, H),
        (1.0, 0.0),
        (R, -H),
        (H, -R),
        (0.0, -1.0),
        (-H, -R),
        (-R, -H),
        (-1.0, 0.0),
        (-R, H),
        (-H, R),
    ]
};

/// One module rectangle in the site frame, with its bypass-diode substrings.
///
/// Module coordinates: `u` runs along the module's horizontal edge, left to right as seen
/// from in front of the module; `v` runs up the slope (for tilt 0, horizontally away from the
/// facing azimuth, the limit of a tilted plane). `length_m` is the extent along `v` (up the
/// slope), `width_m` the extent along `u`: a module in portrait has length_m > width_m, in
/// landscape length_m < width_m.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ModulePlacement {
    /// East coordinate of the module's centre, m.
    pub centre_e_m: f64,
    /// North coordinate of the module's centre, m.
    pub centre_n_m: f64,
    /// Height of the module's centre above the ground datum, m.
    pub centre_up_m: f64,
    /// Tilt from horizontal, degrees (0..=90).
    pub tilt_deg: f64,
    /// Azimuth the module faces (of its outward normal), degrees clockwise from north.
    pub azimuth_deg: f64,
    /// Extent up the slope, m.
    pub length_m: f64,
    /// Extent along the horizontal edge, m.
    pub width_m: f64,
    /// Number of bypass-diode substrings (1..=32).
    pub substrings: u32,
    /// true: each substring is a strip running the full length of the module's long side and
    /// the strips lie side by side across the short side (the usual layout of a 60- or 72-cell
    /// module with three diodes). false: the strips run along the short side and lie side by
    /// side along the long side. A square module counts its `length_m` side as the long one.
    pub substrings_along_long_side: bool,
}

impl ModulePlacement {
    /// Checks angles and sizes.
    ///
    /// # Errors
    /// Non-finite coordinates, tilt outside 0..=90, azimuth outside 0..=360, a length or
    /// width that is not > 0, substrings outside 1..=32. The message starts with the field.
    pub fn validate(&self) -> Result<(), String> {
        finite("centre_e_m", self.centre_e_m)?;
        finite("centre_n_m", self.centre_n_m)?;
        finite("centre_up_m", self.centre_up_m)?;
        if !(0.0..=90.0).contains(&self.tilt_deg) {
            return Err(format!(
                "tilt_deg = {} is outside 0..=90 (0 = horizontal, 90 = vertical)",
                self.tilt_deg
            ));
        }
        if !(0.0..=360.0).contains(&self.azimuth_deg) {
            return Err(format!(
                "azimuth_deg = {} is outside 0..=360 (degrees clockwise from north, 180 = south)",
                self.azimuth_deg
            ));
        }
        positive("length_m", self.length_m)?;
        positive("width_m", self.width_m)?;
        if !(1..=MAX_SUBSTRINGS).contains(&self.substrings) {
            return Err(format!(
                "substrings = {} is outside 1..={MAX_SUBSTRINGS}",
                self.substrings
            ));
        }
        Ok(())
    }

    /// The module's frame and substring layout, computed once and reused every interval.
    pub fn prepare(&self) -> PreparedModule {
        let (sb, cb) = self.tilt_deg.to_radians().sin_cos();
        let (sg, cg) = self.azimuth_deg.to_radians().sin_cos();
        let n = [sb * sg, sb * cg, cb];
        let u = [-cg, sg, 0.0];
        // v = n × u, so that (u, v, n) is right-handed and v points up the slope.
        let v = [
            n[1] * u[2] - n[2] * u[1],
            n[2] * u[0] - n[0] * u[2],
            n[0] * u[1] - n[1] * u[0],
        ];
        let long_side_is_v = self.length_m >= self.width_m;
        PreparedModule {
            centre: [self.centre_e_m, self.centre_n_m, self.centre_up_m],
            u,
            v,
            n,
            half_width_m: self.width_m / 2.0,
            half_length_m: self.length_m / 2.0,
            substrings: self.substrings.max(1) as usize,
            strips_across_u: long_side_is_v == self.substrings_along_long_side,
        }
    }
}

/// A module's frame: centre, unit axes and substring strips.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PreparedModule {
    centre: [f64; 3],
    u: [f64; 3],
    v: [f64; 3],
    n: [f64; 3],
    half_width_m: f64,
    half_length_m: f64,
    substrings: usize,
    strips_across_u: bool,
}

impl PreparedModule {
    /// Unit vector along the horizontal edge (left → right seen from the front), site frame.
    pub fn u_axis(&self) -> [f64; 3] {
        self.u
    }

    /// Unit vector up the slope, site frame.
    pub fn v_axis(&self) -> [f64; 3] {
        self.v
    }

    /// Outward unit normal of the front face, site frame.
    pub fn normal(&self) -> [f64; 3] {
        self.n
    }

    /// Number of substrings.
    pub fn substrings(&self) -> usize {
        self.substrings
    }

    /// The site point `[east_m, north_m, up_m]` at module coordinates (u, v), metres from the
    /// centre.
    pub fn site_point(&self, u_m: f64, v_m: f64) -> [f64; 3] {
        [
            self.centre[0] + u_m * self.u[0] + v_m * self.v[0],
            self.centre[1] + u_m * self.u[1] + v_m * self.v[1],
            self.centre[2] + u_m * self.u[2] + v_m * self.v[2],
        ]
    }

    /// Substring `i`'s rectangle in module coordinates, `[u_min, u_max, v_min, v_max]`, m.
    ///
    /// Strips lying side by side across `u` are numbered from the left edge (seen from the
    /// front); strips lying side by side along `v` are numbered from the bottom edge. An
    /// index past the last substring gives the last one.
    pub fn substring_rect(&self, i: usize) -> [f64; 4] {
        let k = self.substrings as f64;
        let i = i.min(self.substrings - 1) as f64;
        let (hw, hl) = (self.half_width_m, self.half_length_m);
        if self.strips_across_u {
            let step = 2.0 * hw / k;
            let hi = if i + 1.0 >= k {
                hw
            } else {
                -hw + (i + 1.0) * step
            };
            [-hw + i * step, hi, -hl, hl]
        } else {
            let step = 2.0 * hl / k;
            let hi = if i + 1.0 >= k {
                hl
            } else {
                -hl + (i + 1.0) * step
            };
            [-hw, hw, -hl + i * step, hi]
        }
    }

    /// Site-frame corners of the module, counter-clockwise seen from the front.
    fn corners(&self) -> [[f64; 3]; 4] {
        let (hw, hl) = (self.half_width_m, self.half_length_m);
        [
            self.site_point(-hw, -hl),
            self.site_point(hw, -hl),
            self.site_point(hw, hl),
            self.site_point(-hw, hl),
        ]
    }

    /// Coordinates of a site point in the module frame, (u, v, distance in front).
    fn module_coords(&self, p: [f64; 3]) -> [f64; 3] {
        let d = [
            p[0] - self.centre[0],
            p[1] - self.centre[1],
            p[2] - self.centre[2],
        ];
        [dot(d, self.u), dot(d, self.v), dot(d, self.n)]
    }
}

/// Lays out a group of identical modules on one plane as rows × columns.
///
/// `template` gives the plane (tilt, azimuth), the module size and substrings, and the centre
/// of the WHOLE group. Columns run along the horizontal edge (`u`), rows up the slope (`v`);
/// modules in a row are `column_gap_m` apart edge to edge, rows `row_gap_m` apart. The result
/// is row-major: bottom row first, each row from left to right as seen from the front.
/// Separate racks (rows on the ground with a pitch between them) are separate groups.
///
/// # Errors
/// The template fails [`ModulePlacement::validate`]; rows or columns is 0; a gap is negative
/// or not finite.
pub fn layout_grid(
    template: &ModulePlacement,
    rows: u32,
    columns: u32,
    row_gap_m: f64,
    column_gap_m: f64,
) -> Result<Vec<ModulePlacement>, String> {
    template.validate()?;
    if rows == 0 {
        return Err("rows = 0: a group needs at least one row".to_string());
    }
    if columns == 0 {
        return Err("columns = 0: a group needs at least one column".to_string());
    }
    non_negative("row_gap_m", row_gap_m)?;
    non_negative("column_gap_m", column_gap_m)?;
    let frame = template.prepare();
    let pitch_u = template.width_m + column_gap_m;
    let pitch_v = template.length_m + row_gap_m;
    let mut out = Vec::with_capacity(rows as usize * columns as usize);
    for r in 0..rows {
        let v = (r as f64 - (rows as f64 - 1.0) / 2.0) * pitch_v;
        for c in 0..columns {
            let u = (c as f64 - (columns as f64 - 1.0) / 2.0) * pitch_u;
            let p = frame.site_point(u, v);
            out.push(ModulePlacement {
                centre_e_m: p[0],
                centre_n_m: p[1],
                centre_up_m: p[2],
                ..*template
            });
        }
    }
    Ok(out)
}

/// Checks every module and obstacle, and that no module reaches into an obstacle.
///
/// # Errors
/// The first problem found, prefixed with the item: `modules[2].tilt_deg = ...`,
/// `obstacles[0].radius_m = ...`, or `modules[1] reaches into obstacles[0] (box) ...`.
pub fn validate_scene(modules: &[ModulePlacement], obstacles: &[Obstacle]) -> Result<(), String> {
    for (i, m) in modules.iter().enumerate() {
        m.validate().map_err(|e| format!("modules[{i}].{e}"))?;
    }
    for (j, o) in obstacles.iter().enumerate() {
        o.validate().map_err(|e| format!("obstacles[{j}].{e}"))?;
    }
    for (i, m) in modules.iter().enumerate() {
        let pm = m.prepare();
        for (j, o) in obstacles.iter().enumerate() {
            if module_reaches_into(&pm, o) {
                return Err(format!(
                    "modules[{i}] reaches into obstacles[{j}] ({}): a module cannot overlap an \
                     obstacle; move one of them",
                    o.kind()
                ));
            }
        }
    }
    Ok(())
}

/// Whether the module rectangle overlaps the obstacle's solid by more than
/// [`INSIDE_MARGIN_M`]: the rectangle is clipped by every face plane of the solid moved
/// inward by the margin (Sutherland–Hodgman in 3-D); anything left over overlaps.
fn module_reaches_into(pm: &PreparedModule, o: &Obstacle) -> bool {
    // A pole is checked as the inscribed 32-gon: within 0.5 % of its radius.
    const SIDES: usize = 32;
    let mut ring = [[0.0; 2]; SIDES];
    let (count, z0, z1) = match *o {
        Obstacle::Pole {
            base_e_m,
            base_n_m,
            radius_m,
            height_m,
        } => {
            for (k, p) in ring.iter_mut().enumerate() {
                // Negative angles: counter-clockwise seen from above.
                let (s, c) = (-(k as f64) * 2.0 * PI / SIDES as f64).sin_cos();
                *p = [base_e_m + radius_m * s, base_n_m + radius_m * c];
            }
            (SIDES, 0.0, height_m)
        }
        Obstacle::Box { .. } => {
            let p = o.prepare();
            ring[..4].copy_from_slice(&p.ring[..4]);
            (4, p.z0_m, p.z1_m)
        }
    };
    let mut poly: Vec<[f64; 3]> = pm.corners().to_vec();
    let keep = |normal: [f64; 3], offset: f64, poly: &mut Vec<[f64; 3]>| {
        // Keep normal·x ≤ offset − margin.
        let lim = offset - INSIDE_MARGIN_M;
        let mut out = Vec::with_capacity(poly.len() + 1);
        for k in 0..poly.len() {
            let a = poly[k];
            let b = poly[(k + 1) % poly.len()];
            let da = dot(normal, a) - lim;
            let db = dot(normal, b) - lim;
            if da <= 0.0 {
                out.push(a);
            }
            if (da < 0.0 && db > 0.0) || (da > 0.0 && db < 0.0) {
                let t = da / (da - db);
                out.push([
                    a[0] + t * (b[0] - a[0]),
                    a[1] + t * (b[1] - a[1]),
                    a[2] + t * (b[2] - a[2]),
                ]);
            }
        }
        *poly = out;
    };
    keep([0.0, 0.0, 1.0], z1, &mut poly);
    keep([0.0, 0.0, -1.0], -z0, &mut poly);
    for k in 0..count {
        let a = ring[k];
        let b = ring[(k + 1) % count];
        let (dx, dy) = (b[0] - a[0], b[1] - a[1]);
        let len = dx.hypot(dy);
        let m = [dy / len, -dx / len, 0.0];
        keep(m, m[0] * a[0] + m[1] * a[1], &mut poly);
        if poly.is_empty() {
            return false;
        }
    }
    !poly.is_empty()
}

// ============================================================================ near shading

/// Unit vector pointing from the site toward the sun, site frame (east, north, up).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SunDirection {
    /// East component.
    pub e: f64,
    /// North component.
    pub n: f64,
    /// Up component (sin of the elevation).
    pub up: f64,
}

impl SunDirection {
    /// From an apparent elevation and an azimuth (clockwise from north), degrees.
    pub fn from_angles(elevation_deg: f64, azimuth_deg: f64) -> Self {
        let (se, ce) = elevation_deg.to_radians().sin_cos();
        let (sa, ca) = azimuth_deg.to_radians().sin_cos();
        Self {
            e: ce * sa,
            n: ce * ca,
            up: se,
        }
    }

    /// From the sun stage's position; uses the apparent (refracted) elevation, the direction
    /// the light actually arrives from.
    pub fn from_position(sun: &SunPosition) -> Self {
        Self::from_angles(sun.elevation_deg(), sun.azimuth_deg)
    }
}

/// Obstacles' shadows that [`shaded_fractions`] can hold without allocating. More shadows
/// on one module in one interval are handled on the heap.
pub const STACK_SHADOWS: usize = 4;

/// Most overlapping shadows on one substring whose union is computed exactly (inclusion–
/// exclusion, 2ᵏ − 1 terms). Beyond it the shaded area is the sum of the shadows, capped at
/// the substring's area (an upper bound).
const EXACT_UNION_MAX: usize = 5;

/// Below this cosine between the sun and the module's normal the beam is grazing (< 0.00006°
/// above the plane) and carries nothing worth shading; shadows would be projected to
/// infinity.
const MIN_SUN_COS_INCIDENCE: f64 = 1e-6;

/// Room for the points of a clipped, projected prism: 2·12 corners and one crossing per face
/// in general, more when corners lie exactly on the plane and are counted twice.
const MAX_POINTS: usize = 5 * POLE_SIDES;

/// Capacity of a 2-D polygon buffer. A shadow has at most MAX_POINTS corners (in practice
/// ≤ 14 for a pole); clipping by the rectangle adds at most 4 and by another shadow at most
/// that shadow's corner count. Pushes past the capacity are dropped rather than panicking.
const POLY_CAP: usize = 64;

/// A convex polygon in module coordinates (u, v), counter-clockwise.
#[derive(Clone, Copy)]
struct Poly {
    n: usize,
    p: [[f64; 2]; POLY_CAP],
}

impl Poly {
    const EMPTY: Poly = Poly {
        n: 0,
        p: [[0.0; 2]; POLY_CAP],
    };

    fn push(&mut self, q: [f64; 2]) {
        if self.n < POLY_CAP {
            self.p[self.n] = q;
            self.n += 1;
        }
    }

    fn pts(&self) -> &[[f64; 2]] {
        &self.p[..self.n]
    }

    /// Copies only the used corners (the buffers are 1 KB; shadows use ~14 corners).
    fn copy_from(&mut self, other: &Poly) {
        self.p[..other.n].copy_from_slice(other.pts());
        self.n = other.n;
    }

    /// Shoelace area (positive for counter-clockwise).
    fn area(&self) -> f64 {
        if self.n < 3 {
            return 0.0;
        }
        let mut s = 0.0;
        let mut prev = self.p[self.n - 1];
        for &q in self.pts() {
            s += prev[0] * q[1] - q[0] * prev[1];
            prev = q;
        }
        s / 2.0
    }

    /// `[u_min, u_max, v_min, v_max]`.
    fn bbox(&self) -> [f64; 4] {
        let mut b = [
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::INFINITY,
            f64::NEG_INFINITY,
        ];
        for q in self.pts() {
            b[0] = b[0].min(q[0]);
            b[1] = b[1].max(q[0]);
            b[2] = b[2].min(q[1]);
            b[3] = b[3].max(q[1]);
        }
        b
    }
}

/// Keeps the part of `src` where a·u + b·v ≤ c (one Sutherland–Hodgman pass).
fn clip_half_plane(src: &Poly, dst: &mut Poly, a: f64, b: f64, c: f64) {
    dst.n = 0;
    if src.n == 0 {
        return;
    }
    let mut prev = src.p[src.n - 1];
    let mut dp = a * prev[0] + b * prev[1] - c;
    for &q in src.pts() {
        let dq = a * q[0] + b * q[1] - c;
        if (dp <= 0.0) != (dq <= 0.0) {
            let t = dp / (dp - dq);
            dst.push([
                prev[0] + t * (q[0] - prev[0]),
                prev[1] + t * (q[1] - prev[1]),
            ]);
        }
        if dq <= 0.0 {
            dst.push(q);
        }
        prev = q;
        dp = dq;
    }
}

/// `poly` ∩ rectangle, left in `poly` (`tmp` is scratch).
fn clip_rect(poly: &mut Poly, tmp: &mut Poly, r: [f64; 4]) {
    clip_half_plane(poly, tmp, -1.0, 0.0, -r[0]);
    clip_half_plane(tmp, poly, 1.0, 0.0, r[1]);
    clip_half_plane(poly, tmp, 0.0, -1.0, -r[2]);
    clip_half_plane(tmp, poly, 0.0, 1.0, r[3]);
}

/// `poly` ∩ `by` (both convex, `by` counter-clockwise), left in `poly` (`tmp` is scratch).
fn clip_poly(poly: &mut Poly, tmp: &mut Poly, by: &Poly) {
    let m = by.n;
    // Ping-pong between the two buffers; `in_poly` says which one holds the result.
    let mut in_poly = true;
    for i in 0..m {
        let q0 = by.p[i];
        let q1 = by.p[(i + 1) % m];
        let (dx, dy) = (q1[0] - q0[0], q1[1] - q0[1]);
        let (src, dst) = if in_poly {
            (&*poly, &mut *tmp)
        } else {
            (&*tmp, &mut *poly)
        };
        // Inside is to the left of q0 → q1: dy·u − dx·v ≤ dy·q0u − dx·q0v.
        clip_half_plane(src, dst, dy, -dx, dy * q0[0] - dx * q0[1]);
        in_poly = !in_poly;
        if dst.n == 0 {
            break;
        }
    }
    if !in_poly {
        poly.copy_from(tmp);
    }
}

/// Convex hull (Andrew's monotone chain) of `pts`, counter-clockwise, into `out`.
fn convex_hull(pts: &mut [[f64; 2]], out: &mut Poly) {
    out.n = 0;
    let m = pts.len();
    if m < 3 {
        return;
    }
    pts.sort_unstable_by(|a, b| a[0].total_cmp(&b[0]).then(a[1].total_cmp(&b[1])));
    let cross = |o: [f64; 2], a: [f64; 2], b: [f64; 2]| {
        (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0])
    };
    let mut k = 0;
    for &p in pts.iter() {
        while k >= 2 && cross(out.p[k - 2], out.p[k - 1], p) <= 0.0 {
            k -= 1;
        }
        out.p[k] = p;
        k += 1;
    }
    let lower = k + 1;
    for &p in pts[..m - 1].iter().rev() {
        while k >= lower && cross(out.p[k - 2], out.p[k - 1], p) <= 0.0 {
            k -= 1;
        }
        out.p[k] = p;
        k += 1;
    }
    out.n = k - 1;
}

/// The shadow of one obstacle on the module's (infinite) plane, in module coordinates.
///
/// The prism is first cut by the module's plane: only the part in front of it (on the sun's
/// side, where the normal points) can stand between the sun and the plane. Each remaining
/// corner X is projected along the sun's rays onto the plane, x' = x − x_n (s_u, s_v)/s_n,
/// and the shadow is the convex hull of those points (projection is affine, so the image of
/// a convex solid is the hull of its corners' images). Returns false when nothing is in front.
fn shadow_hull(pm: &PreparedModule, ob: &PreparedObstacle, s: [f64; 3], out: &mut Poly) -> bool {
    let cnt = ob.count;
    let dz = ob.z1_m - ob.z0_m;
    let top_shift = [dz * pm.u[2], dz * pm.v[2], dz * pm.n[2]];
    let mut bottom = [[0.0; 3]; POLE_SIDES];
    let mut any_front = false;
    let mut all_front = true;
    for (b, r) in bottom.iter_mut().zip(ob.ring()) {
        *b = pm.module_coords([r[0], r[1], ob.z0_m]);
        let (nb, nt) = (b[2], b[2] + top_shift[2]);
        any_front |= nb > 0.0 || nt > 0.0;
        all_front &= nb >= 0.0 && nt >= 0.0;
    }
    if !any_front {
        return false;
    }
    let ku = s[0] / s[2];
    let kv = s[1] / s[2];
    if all_front && prism_shadow(&bottom[..cnt], top_shift, ku, kv, out) {
        return true;
    }
    let top = |k: usize| {
        let b = bottom[k];
        [
            b[0] + top_shift[0],
            b[1] + top_shift[1],
            b[2] + top_shift[2],
        ]
    };
    let mut pts = [[0.0; 2]; MAX_POINTS];
    let mut m = 0;
    let mut add = |q: [f64; 2]| {
        if m < MAX_POINTS {
            pts[m] = q;
            m += 1;
        }
    };
    let edge = |a: [f64; 3], b: [f64; 3], add: &mut dyn FnMut([f64; 2])| {
        if (a[2] < 0.0) != (b[2] < 0.0) {
            let t = a[2] / (a[2] - b[2]);
            add([a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1])]);
        }
    };
    for k in 0..cnt {
        let b0 = bottom[k];
        let t0 = top(k);
        let b1 = bottom[(k + 1) % cnt];
        let t1 = top((k + 1) % cnt);
        for x in [b0, t0] {
            if x[2] >= 0.0 {
                add([x[0] - x[2] * ku, x[1] - x[2] * kv]);
            }
        }
        edge(b0, t0, &mut add);
        edge(b0, b1, &mut add);
        edge(t0, t1, &mut add);
    }
    convex_hull(&mut pts[..m], out);
    out.n >= 3 && out.area() > 0.0
}

/// The shadow of a prism wholly in front of the plane, without sorting: the projection is
/// affine, so the shadow is the projected bottom ring Q swept along the projected axis d,
/// Q ⊕ [0, d]. Going counter-clockwise, the part of Q's boundary between its extreme points
/// across d that faces +d is taken from Q + d, the rest from Q. Returns false (leaving the
/// general hull to do the work) when the projected ring is degenerate.
fn prism_shadow(
    bottom: &[[f64; 3]],
    top_shift: [f64; 3],
    ku: f64,
    kv: f64,
    out: &mut Poly,
) -> bool {
    let cnt = bottom.len();
    let mut q = [[0.0; 2]; POLE_SIDES];
    let mut twice_area = 0.0;
    for (k, b) in bottom.iter().enumerate() {
        q[k] = [b[0] - b[2] * ku, b[1] - b[2] * kv];
    }
    for k in 0..cnt {
        let (a, b) = (q[k], q[(k + 1) % cnt]);
        twice_area += a[0] * b[1] - b[0] * a[1];
    }
    // Written so that a NaN area also falls back to the general hull.
    if twice_area.abs().partial_cmp(&1e-18) != Some(std::cmp::Ordering::Greater) {
        return false;
    }
    if twice_area < 0.0 {
        q[..cnt].reverse();
    }
    let d = [
        top_shift[0] - top_shift[2] * ku,
        top_shift[1] - top_shift[2] * kv,
    ];
    let normal = [-d[1], d[0]];
    let (mut i_min, mut i_max) = (0, 0);
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for (k, p) in q[..cnt].iter().enumerate() {
        let x = normal[0] * p[0] + normal[1] * p[1];
        if x < lo {
            lo = x;
            i_min = k;
        }
        if x > hi {
            hi = x;
            i_max = k;
        }
    }
    out.n = 0;
    if i_min == i_max {
        // d is (numerically) zero: the sun shines along the axis; the shadow is the ring.
        for &p in &q[..cnt] {
            out.push(p);
        }
    } else {
        let mut i = i_min;
        loop {
            out.push([q[i][0] + d[0], q[i][1] + d[1]]);
            if i == i_max {
                break;
            }
            i = (i + 1) % cnt;
        }
        let mut i = i_max;
        loop {
            out.push(q[i]);
            if i == i_min {
                break;
            }
            i = (i + 1) % cnt;
        }
    }
    out.area() > 0.0
}

/// Sun direction in module coordinates, or None when the sun is below the astronomical
/// horizon or (nearly) behind the module's plane: then there is no beam to shade.
fn sun_in_module_frame(pm: &PreparedModule, sun: &SunDirection) -> Option<[f64; 3]> {
    let sv = [sun.e, sun.n, sun.up];
    let s = [dot(sv, pm.u), dot(sv, pm.v), dot(sv, pm.n)];
    if sun.up > 0.0 && s[2] > MIN_SUN_COS_INCIDENCE {
        Some(s)
    } else {
        None
    }
}

/// Shaded fraction (0..=1) of each bypass-diode substring of one module, for one sun
/// position.
///
/// # Formula
/// For each obstacle: shadow polygon = convex hull of the projections, along the sun's rays,
/// of the obstacle's corners in front of the module's plane (a pole is a regular 12-gon
/// prism of equal mean width). For substring i with rectangle Rᵢ:
/// fᵢ = area((∪ shadows) ∩ Rᵢ) / area(Rᵢ), each shadow clipped to Rᵢ by Sutherland–Hodgman
/// and the union taken by inclusion–exclusion of convex intersections.
///
/// # Source
/// Geometry: parallel projection onto a plane; Sutherland & Hodgman 1974 (Comm. ACM 17(1))
/// for the clipping; Andrew 1979 for the hull.
///
/// # Validity
/// `out` receives one value per substring in [`PreparedModule::substring_rect`] order; extra
/// elements of `out` are left alone, missing ones are skipped. All zeros when the sun is
/// below the astronomical horizon or behind the module's plane (no beam to shade). Exact for
/// boxes; poles within ~2 % of the shadow's width. More than 5 overlapping shadows on one
/// substring: the sum of their areas capped at 1 (an upper bound). Prepares the module and
/// obstacles on each call; hold a [`PreparedModule`] and [`PreparedObstacle`]s and call
/// [`shaded_fractions_prepared`] in long loops.
pub fn shaded_fractions(
    module: &ModulePlacement,
    obstacles: &[Obstacle],
    sun: &SunPosition,
    out: &mut [f64],
) {
    let pm = module.prepare();
    let dir = SunDirection::from_position(sun);
    shade_core(&pm, obstacles.iter().map(Obstacle::prepare), &dir, out);
}

/// [`shaded_fractions`] with the module and obstacles prepared once, and the sun as a
/// direction.
pub fn shaded_fractions_prepared(
    module: &PreparedModule,
    obstacles: &[PreparedObstacle],
    sun: &SunDirection,
    out: &mut [f64],
) {
    shade_core(module, obstacles.iter().copied(), sun, out);
}

fn shade_core(
    pm: &PreparedModule,
    obstacles: impl Iterator<Item = PreparedObstacle>,
    sun: &SunDirection,
    out: &mut [f64],
) {
    let nsub = pm.substrings.min(out.len());
    let out = &mut out[..nsub];
    out.fill(0.0);
    let Some(s) = sun_in_module_frame(pm, sun) else {
        return;
    };
    let module_box = [
        -pm.half_width_m,
        pm.half_width_m,
        -pm.half_length_m,
        pm.half_length_m,
    ];
    let mut hull = Poly::EMPTY;
    let touching = |ob: &PreparedObstacle, hull: &mut Poly| -> Option<[f64; 4]> {
        if !shadow_hull(pm, ob, s, hull) {
            return None;
        }
        let bb = hull.bbox();
        boxes_overlap(bb, module_box).then_some(bb)
    };
    // Most intervals put no shadow on a module: find the first one before setting up any
    // storage.
    let mut obstacles = obstacles;
    let first_bb = loop {
        let Some(ob) = obstacles.next() else {
            return;
        };
        if let Some(bb) = touching(&ob, &mut hull) {
            break bb;
        }
    };
    let mut stack = [Poly::EMPTY; STACK_SHADOWS];
    let mut heap: Vec<Poly> = Vec::new();
    let mut boxes = [[0.0; 4]; STACK_SHADOWS];
    let mut heap_boxes: Vec<[f64; 4]> = Vec::new();
    stack[0].copy_from(&hull);
    boxes[0] = first_bb;
    let mut count = 1;
    for ob in obstacles {
        let Some(bb) = touching(&ob, &mut hull) else {
            continue;
        };
        if count < STACK_SHADOWS {
            stack[count].copy_from(&hull);
            boxes[count] = bb;
        } else {
            if heap.is_empty() {
                heap.extend_from_slice(&stack);
                heap_boxes.extend_from_slice(&boxes);
            }
            heap.push(hull);
            heap_boxes.push(bb);
        }
        count += 1;
    }
    let (hulls, bbs): (&[Poly], &[[f64; 4]]) = if count <= STACK_SHADOWS {
        (&stack[..count], &boxes[..count])
    } else {
        (&heap, &heap_boxes)
    };
    let (mut a, mut b) = (Poly::EMPTY, Poly::EMPTY);
    for (i, f) in out.iter_mut().enumerate() {
        let r = pm.substring_rect(i);
        let rect_area = (r[1] - r[0]) * (r[3] - r[2]);
        let covered = union_area_in_rect(hulls, bbs, r, &mut a, &mut b);
        *f = unit_clamp(covered / rect_area);
    }
}

/// Area of (∪ hulls) ∩ rect; `a` and `b` are scratch.
fn union_area_in_rect(
    hulls: &[Poly],
    bbs: &[[f64; 4]],
    r: [f64; 4],
    a: &mut Poly,
    b: &mut Poly,
) -> f64 {
    let mut idx = [0usize; EXACT_UNION_MAX];
    let mut areas = [0.0; EXACT_UNION_MAX];
    let mut k = 0;
    let mut sum = 0.0;
    for (j, h) in hulls.iter().enumerate() {
        if !boxes_overlap(bbs[j], r) {
            continue;
        }
        a.copy_from(h);
        clip_rect(a, b, r);
        let area = a.area();
        if area > 0.0 {
            if k < EXACT_UNION_MAX {
                idx[k] = j;
                areas[k] = area;
            }
            k += 1;
            sum += area;
        }
    }
    let rect_area = (r[1] - r[0]) * (r[3] - r[2]);
    if k <= 1 {
        return sum;
    }
    if k > EXACT_UNION_MAX {
        return sum.min(rect_area);
    }
    let mut total = 0.0;
    for mask in 1u32..(1 << k) {
        let bits = mask.count_ones();
        let first = mask.trailing_zeros() as usize;
        if bits == 1 {
            total += areas[first];
            continue;
        }
        a.copy_from(&hulls[idx[first]]);
        clip_rect(a, b, r);
        for (t, &j) in idx.iter().enumerate().take(k).skip(first + 1) {
            if mask & (1 << t) != 0 {
                clip_poly(a, b, &hulls[j]);
                if a.n == 0 {
                    break;
                }
            }
        }
        let ar = a.area();
        if bits % 2 == 1 {
            total += ar;
        } else {
            total -= ar;
        }
    }
    total.clamp(0.0, rect_area)
}

fn boxes_overlap(a: [f64; 4], b: [f64; 4]) -> bool {
    a[0] < b[1] && b[0] < a[1] && a[2] < b[3] && b[2] < a[3]
}

/// The shadow of one obstacle on the module's plane, as the polygon's corners in module
/// coordinates (u, v in metres from the module's centre; see [`ModulePlacement`]),
/// counter-clockwise. Not clipped to the module: the whole shadow on the infinite plane.
/// Empty when the obstacle is wholly behind the plane or the sun gives no beam on it.
/// For plots and checks, not for the interval loop (it allocates).
pub fn shadow_polygon(
    module: &ModulePlacement,
    obstacle: &Obstacle,
    sun: &SunPosition,
) -> Vec<(f64, f64)> {
    let pm = module.prepare();
    let Some(s) = sun_in_module_frame(&pm, &SunDirection::from_position(sun)) else {
        return Vec::new();
    };
    let mut hull = Poly::EMPTY;
    if !shadow_hull(&pm, &obstacle.prepare(), s, &mut hull) {
        return Vec::new();
    }
    hull.pts().iter().map(|q| (q[0], q[1])).collect()
}

// ============================================================================ diffuse loss

/// What near obstacles take from a module's view of the isotropic sky.
#[derive(Clone, Debug, PartialEq)]
pub struct SkyViewLoss {
    /// Isotropic-sky factor of the horizon profile alone, averaged over the module (the same
    /// quantity as [`sky_view_ratio`]).
    pub horizon_ratio: f64,
    /// Share of the unobstructed view (1 + cos β)/2 that the obstacles together block,
    /// counting only sky above the skyline and in front of the module. Overlaps count once.
    pub total_frac: f64,
    /// The same for each obstacle alone, in the order given (overlaps count in each).
    pub per_obstacle_frac: Vec<f64>,
}

impl SkyViewLoss {
    /// The factor to apply to the isotropic sky part (and the Perez horizon band):
    /// horizon_ratio − total_frac, within 0..=1.
    pub fn isotropic_factor(&self) -> f64 {
        unit_clamp(self.horizon_ratio - self.total_frac)
    }
}

/// Each obstacle's share of a module's view of the isotropic sky, integrated once per
/// (module, obstacle set, horizon).
///
/// # Formula
/// From points P on the module, a direction (φ, e) is blocked when the ray P + t·d hits an
/// obstacle. For a vertical prism or cylinder, the rays of one azimuth φ that hit it are an
/// interval of elevations: the footprint cut by the horizontal ray gives a range of distances
/// [r₀, r₁] (Cyrus–Beck for a box, the ray–circle intersection for a pole — a true circle
/// here) and the solid's section is the rectangle [r₀, r₁] × [z_bottom − P_z, z_top − P_z].
/// The blocked part of the dome is integrated like [`sky_view_frac`]: closed form in
/// elevation, Gauss–Legendre in azimuth split at the footprint's corners (tangents for a
/// pole) as seen from P. P runs over a 3 × 3 Gauss–Legendre grid on the module.
/// loss = ∫ blocked cos θ dΩ / ∫ unobstructed front sky cos θ dΩ.
///
/// # Source
/// Geometry (view factors); for a horizontal point next to an infinitely long wall of
/// angular height h it reproduces the two-dimensional view factor (1 − cos h)/2.
///
/// # Validity
/// Directions below the astronomical horizon are ground, not sky, and are not counted.
/// Obstacles change only the sky diffuse parts here; their effect on the ground-reflected
/// part is ignored.
///
/// # Errors
/// Any failure of [`validate_scene`] for this module and these obstacles.
pub fn obstacle_sky_view_loss(
    module: &ModulePlacement,
    obstacles: &[Obstacle],
    horizon: &HorizonProfile,
) -> Result<SkyViewLoss, String> {
    validate_scene(std::slice::from_ref(module), obstacles)?;
    let pm = module.prepare();
    let plane = DomePlane::new(module.tilt_deg, module.azimuth_deg);
    let gl3 = [
        (-(0.6f64).sqrt(), 5.0 / 18.0),
        (0.0, 8.0 / 18.0),
        ((0.6f64).sqrt(), 5.0 / 18.0),
    ];
    let m = obstacles.len();
    let mut flat = 0.0;
    let mut above = 0.0;
    let mut blocked = 0.0;
    let mut each = vec![0.0; m];
    let mut spans: Vec<(f64, f64)> = Vec::with_capacity(m);
    let mut breaks: Vec<f64> = Vec::new();
    for &(xu, wu) in &gl3 {
        for &(xv, wv) in &gl3 {
            let w_pt = wu * wv;
            let q = pm.site_point(xu * pm.half_width_m, xv * pm.half_length_m);
            let p = [
                q[0] + RAY_LIFT_M * pm.n[0],
                q[1] + RAY_LIFT_M * pm.n[1],
                q[2] + RAY_LIFT_M * pm.n[2],
            ];
            breaks.clear();
            breaks.extend_from_slice(&horizon.azimuth_deg);
            breaks.push(module.azimuth_deg + 90.0);
            breaks.push(module.azimuth_deg - 90.0);
            for o in obstacles {
                silhouette_azimuths(o, p, &mut breaks);
            }
            azimuth_quadrature(&mut breaks, |phi, w| {
                let (a, b, e_front) = plane.along(phi);
                let sky = horizon.elevation_at(phi.to_degrees()).max(0.0).to_radians();
                let lo = e_front.max(sky);
                let w = w * w_pt;
                flat += w * slice_up(a, b, e_front);
                if lo >= FRAC_PI_2 {
                    return;
                }
                let top = slice_up(a, b, lo);
                above += w * top;
                let (sphi, cphi) = phi.sin_cos();
                spans.clear();
                for (j, o) in obstacles.iter().enumerate() {
                    if let Some((e0, e1)) = elevation_span(o, p, [sphi, cphi]) {
                        let (e0, e1) = (e0.max(lo), e1.min(FRAC_PI_2));
                        if e1 > e0 {
                            each[j] += w
                                * (slice_antiderivative(a, b, e1) - slice_antiderivative(a, b, e0));
                            spans.push((e0, e1));
                        }
                    }
                }
                blocked += w * union_slice(a, b, &mut spans);
            })
        }
    }
    if flat <= 0.0 {
        return Ok(SkyViewLoss {
            horizon_ratio: 0.0,
            total_frac: 0.0,
            per_obstacle_frac: vec![0.0; m],
        });
    }
    Ok(SkyViewLoss {
        horizon_ratio: unit_clamp(above / flat),
        total_frac: unit_clamp(blocked / flat),
        per_obstacle_frac: each.iter().map(|x| unit_clamp(x / flat)).collect(),
    })
}

/// ∫ over the union of elevation intervals of the slice integrand.
fn union_slice(a: f64, b: f64, spans: &mut [(f64, f64)]) -> f64 {
    spans.sort_unstable_by(|x, y| x.0.total_cmp(&y.0));
    let mut total = 0.0;
    let mut cur: Option<(f64, f64)> = None;
    for &(lo, hi) in spans.iter() {
        cur = match cur {
            Some((c0, c1)) if lo <= c1 => Some((c0, c1.max(hi))),
            Some((c0, c1)) => {
                total += slice_antiderivative(a, b, c1) - slice_antiderivative(a, b, c0);
                Some((lo, hi))
            }
            None => Some((lo, hi)),
        };
    }
    if let Some((c0, c1)) = cur {
        total += slice_antiderivative(a, b, c1) - slice_antiderivative(a, b, c0);
    }
    total
}

/// Azimuths (degrees) where rays from `p` start or stop hitting the obstacle: its footprint
/// corners, or a pole's two tangents.
fn silhouette_azimuths(o: &Obstacle, p: [f64; 3], out: &mut Vec<f64>) {
    match *o {
        Obstacle::Pole {
            base_e_m,
            base_n_m,
            radius_m,
            ..
        } => {
            let (de, dn) = (base_e_m - p[0], base_n_m - p[1]);
            let d = de.hypot(dn);
            if d > radius_m {
                let centre = de.atan2(dn).to_degrees();
                let half = (radius_m / d).asin().to_degrees();
                out.push(centre - half);
                out.push(centre + half);
            }
        }
        Obstacle::Box { footprint, .. } => {
            for (e, n) in footprint {
                out.push((e - p[0]).atan2(n - p[1]).to_degrees());
            }
        }
    }
}

/// Elevations (radians) of the rays from `p` along horizontal direction `h` = (sin φ, cos φ)
/// that hit the obstacle, or None.
fn elevation_span(o: &Obstacle, p: [f64; 3], h: [f64; 2]) -> Option<(f64, f64)> {
    let (r0, r1, z0, z1) = match *o {
        Obstacle::Pole {
            base_e_m,
            base_n_m,
            radius_m,
            height_m,
        } => {
            let w = [p[0] - base_e_m, p[1] - base_n_m];
            let b = w[0] * h[0] + w[1] * h[1];
            let c = w[0] * w[0] + w[1] * w[1] - radius_m * radius_m;
            let disc = b * b - c;
            if disc < 0.0 {
                return None;
            }
            let root = disc.sqrt();
            let (t0, t1) = (-b - root, -b + root);
            if t1 <= 0.0 {
                return None;
            }
            (t0.max(0.0), t1, 0.0, height_m)
        }
        Obstacle::Box {
            footprint,
            base_m,
            height_m,
        } => {
            let ccw = signed_area(&footprint) > 0.0;
            let (mut t0, mut t1) = (0.0f64, f64::INFINITY);
            for k in 0..4 {
                let (a, b) = if ccw {
                    (footprint[k], footprint[(k + 1) % 4])
                } else {
                    (footprint[(k + 1) % 4], footprint[k])
                };
                // Outward normal of a counter-clockwise edge: (dy, −dx).
                let m = [b.1 - a.1, -(b.0 - a.0)];
                let num = m[0] * (p[0] - a.0) + m[1] * (p[1] - a.1);
                let den = m[0] * h[0] + m[1] * h[1];
                if den == 0.0 {
                    if num > 0.0 {
                        return None;
                    }
                } else {
                    let t = -num / den;
                    if den > 0.0 {
                        t1 = t1.min(t);
                    } else {
                        t0 = t0.max(t);
                    }
                }
            }
            // Written so that a NaN also gives None.
            if t0.partial_cmp(&t1) != Some(std::cmp::Ordering::Less) || !t1.is_finite() {
                return None;
            }
            (t0, t1, base_m, base_m + height_m)
        }
    };
    let (zb, zt) = (z0 - p[2], z1 - p[2]);
    if zt <= 0.0 {
        return None; // wholly below the point: only ground-side directions, not sky
    }
    let lo = if zb >= 0.0 {
        zb.atan2(r1)
    } else {
        zb.atan2(r0)
    };
    let hi = zt.atan2(r0);
    Some((lo, hi))
}

// ============================================================================ applying

/// Applies shade factors to one substring's plane-of-array parts.
///
/// `beam_frac` multiplies the beam and circumsolar parts: 0 when the horizon hides the sun,
/// otherwise 1 − the substring's shaded fraction. `sky_frac` multiplies the isotropic sky and
/// the Perez horizon band (the band is treated as part of the dome, notebooks-free-docs/conventions.md):
/// [`sky_view_ratio`] or [`SkyViewLoss::isotropic_factor`]. The ground-reflected part and the
/// angle of incidence are unchanged. Both factors are clamped to 0..=1.
pub fn shade_poa(parts: &PoaParts, beam_frac: f64, sky_frac: f64) -> PoaParts {
    let b = unit_clamp(beam_frac);
    let d = unit_clamp(sky_frac);
    PoaParts {
        beam_w_m2: parts.beam_w_m2 * b,
        circumsolar_w_m2: parts.circumsolar_w_m2 * b,
        isotropic_w_m2: parts.isotropic_w_m2 * d,
        horizon_w_m2: parts.horizon_w_m2 * d,
        ground_w_m2: parts.ground_w_m2,
        aoi_deg: parts.aoi_deg,
    }
}

// ============================================================================ small helpers

fn dot(a: [f64; 3], b: [f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

/// Clamp to 0..=1 with NaN → 0 (f64::clamp keeps NaN).
fn unit_clamp(x: f64) -> f64 {
    if x > 0.0 {
        x.min(1.0)
    } else {
        0.0
    }
}

/// z-component of (b − a) × (c − b): positive for a left turn.
fn turn(a: (f64, f64), b: (f64, f64), c: (f64, f64)) -> f64 {
    (b.0 - a.0) * (c.1 - b.1) - (b.1 - a.1) * (c.0 - b.0)
}

fn signed_area(q: &[(f64, f64); 4]) -> f64 {
    let mut s = 0.0;
    for k in 0..4 {
        let (a, b) = (q[k], q[(k + 1) % 4]);
        s += a.0 * b.1 - b.0 * a.1;
    }
    s / 2.0
}

fn finite(field: &str, x: f64) -> Result<(), String> {
    if x.is_finite() {
        Ok(())
    } else {
        Err(format!("{field} = {x} is not a finite number"))
    }
}

fn positive(field: &str, x: f64) -> Result<(), String> {
    if x.is_finite() && x > 0.0 {
        Ok(())
    } else {
        Err(format!("{field} = {x} must be a finite length > 0 m"))
    }
}

fn non_negative(field: &str, x: f64) -> Result<(), String> {
    if x.is_finite() && x >= 0.0 {
        Ok(())
    } else {
        Err(format!("{field} = {x} must be a finite length >= 0 m"))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn assert_close(got: f64, expected: f64, tol: f64, what: &str) {
        assert!(
            (got - expected).abs() <= tol,
            "{what}: got {got}, expected {expected} ± {tol}"
        );
    }

    fn sun(elevation_deg: f64, azimuth_deg: f64) -> SunPosition {
        SunPosition {
            zenith_deg: 90.0 - elevation_deg,
            zenith_geometric_deg: 90.0 - elevation_deg,
            azimuth_deg,
            declination_deg: 0.0,
            equation_of_time_min: 0.0,
        }
    }

    fn module(
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
    fn east_west_wall(north_face_m: f64, half_length_m: f64, height_m: f64) -> Obstacle {
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

    fn fractions(m: &ModulePlacement, obstacles: &[Obstacle], s: &SunPosition) -> Vec<f64> {
        let mut out = vec![f64::NAN; m.substrings as usize];
        shaded_fractions(m, obstacles, s, &mut out);
        out
    }

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
            (&[(360.0, 1.0)], "point 0: azimuth_deg = 360"),
            (&[(-1.0, 1.0)], "azimuth_deg = -1"),
            (
                &[(10.0, 1.0), (10.0, 2.0)],
                "point 1: azimuth_deg = 10 does not increase",
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

    // ---------------------------------------------------------------- sky loss to obstacles

    #[test]
    fn long_wall_obstacle_gives_two_dimensional_view_factor() {
        let m = module([0.0, 0.0, 0.0], 0.0, 180.0, 0.001, 0.001, 1, true);
        let wall = east_west_wall(-5.0, 1000.0, 3.0);
        let loss = obstacle_sky_view_loss(&m, &[wall], &HorizonProfile::flat()).unwrap();
        let h = f64::atan(3.0 / 5.0);
        // Source: 2-D view factor from a horizontal element to an infinite wall of angular
        // height h, (1 − cos h)/2 (Hottel's crossed strings, from memory; derived in
        // notebooks-free-docs/method-shade.md); 1e-6 covers the finite 2 km wall and the 1 mm module
        assert_close(loss.total_frac, (1.0 - h.cos()) / 2.0, 1e-6, "wall loss");
        assert_close(
            loss.per_obstacle_frac[0],
            loss.total_frac,
            1e-15,
            "one obstacle",
        );
        assert_close(loss.horizon_ratio, 1.0, 1e-15, "no skyline");
        assert_close(
            loss.isotropic_factor(),
            1.0 - (1.0 - h.cos()) / 2.0,
            1e-6,
            "factor",
        );
    }

    #[test]
    fn obstacle_behind_the_plane_takes_no_sky() {
        // Vertical module facing south; a shed and a mast to its north.
        let m = module([0.0, 0.0, 1.0], 90.0, 180.0, 1.0, 1.7, 3, true);
        let shed = Obstacle::Box {
            footprint: [(-3.0, 2.0), (3.0, 2.0), (3.0, 5.0), (-3.0, 5.0)],
            base_m: 0.0,
            height_m: 4.0,
        };
        let mast = Obstacle::Pole {
            base_e_m: 1.0,
            base_n_m: 1.0,
            radius_m: 0.1,
            height_m: 8.0,
        };
        let loss = obstacle_sky_view_loss(&m, &[shed, mast], &HorizonProfile::flat()).unwrap();
        // Source: geometry (directions behind the plane are not part of its sky view)
        assert_eq!(loss.total_frac, 0.0);
        assert_eq!(loss.per_obstacle_frac, vec![0.0, 0.0]);
        // Source: geometry: the same mast south of the module does take sky
        let front = Obstacle::Pole {
            base_e_m: 1.0,
            base_n_m: -1.0,
            radius_m: 0.1,
            height_m: 8.0,
        };
        let loss = obstacle_sky_view_loss(&m, &[front], &HorizonProfile::flat()).unwrap();
        assert!(loss.total_frac > 0.005 && loss.total_frac < 0.1, "{loss:?}");
    }

    #[test]
    fn obstacle_sky_losses_combine_as_a_union() {
        let m = module([0.0, 0.0, 0.5], 30.0, 180.0, 1.7, 1.0, 3, true);
        let pole = |e: f64| Obstacle::Pole {
            base_e_m: e,
            base_n_m: -3.0,
            radius_m: 0.3,
            height_m: 6.0,
        };
        let hp = HorizonProfile::flat();
        let one = obstacle_sky_view_loss(&m, &[pole(-2.0)], &hp).unwrap();
        let twin = obstacle_sky_view_loss(&m, &[pole(-2.0), pole(-2.0)], &hp).unwrap();
        let apart = obstacle_sky_view_loss(&m, &[pole(-2.0), pole(2.0)], &hp).unwrap();
        // Source: set identity A ∪ A = A (overlaps count once in the total)
        assert_close(twin.total_frac, one.total_frac, 1e-12, "twin total");
        assert_close(
            twin.per_obstacle_frac[1],
            one.total_frac,
            1e-12,
            "twin each",
        );
        // Source: set identity: disjoint obstacles add
        assert_close(
            apart.total_frac,
            apart.per_obstacle_frac[0] + apart.per_obstacle_frac[1],
            1e-12,
            "disjoint",
        );
        // Source: geometry (mirror symmetry about the module's north–south axis)
        assert_close(
            apart.per_obstacle_frac[0],
            apart.per_obstacle_frac[1],
            1e-9,
            "mirror",
        );
    }

    #[test]
    fn obstacle_loss_horizon_ratio_matches_sky_view_ratio() {
        let hp =
            HorizonProfile::new(&[(60.0, 4.0), (150.0, 12.0), (220.0, 8.0), (300.0, 2.0)]).unwrap();
        let m = module([0.0, 0.0, 0.5], 35.0, 160.0, 1.7, 1.0, 3, true);
        let loss = obstacle_sky_view_loss(&m, &[], &hp).unwrap();
        // Source: recomputed from the formula (the same integral, two code paths)
        assert_close(
            loss.horizon_ratio,
            sky_view_ratio(35.0, 160.0, &hp),
            1e-9,
            "horizon ratio",
        );
        assert_eq!(loss.total_frac, 0.0);
        // Source: geometry: a wall hiding the sky partly under the skyline takes only
        // the part above it, so obstacle + skyline never exceed the whole view
        let wall = east_west_wall(-4.0, 50.0, 2.0);
        let both = obstacle_sky_view_loss(&m, &[wall], &hp).unwrap();
        let alone = obstacle_sky_view_loss(&m, &[wall], &HorizonProfile::flat()).unwrap();
        assert!(both.total_frac < alone.total_frac);
        assert!(both.isotropic_factor() > 0.0 && both.isotropic_factor() < loss.horizon_ratio);
    }

    // ---------------------------------------------------------------- module frame

    #[test]
    fn module_frame_of_a_south_facing_tilted_module() {
        let pm = module([0.0, 0.0, 0.0], 30.0, 180.0, 1.7, 1.0, 3, true).prepare();
        let (s, c) = (0.5, f64::sqrt(3.0) / 2.0);
        // Source: geometry (definitions in ModulePlacement): normal tilted south, u east,
        // v up the slope toward north
        for (got, want) in [
            (pm.normal(), [0.0, -s, c]),
            (pm.u_axis(), [1.0, 0.0, 0.0]),
            (pm.v_axis(), [0.0, c, s]),
        ] {
            for k in 0..3 {
                assert_close(got[k], want[k], 1e-15, "axis");
            }
        }
        // Source: geometry: portrait, strips along the long side lie side by side across u
        assert_eq!(pm.substring_rect(0), [-0.5, -0.5 + 1.0 / 3.0, -0.85, 0.85]);
        assert_eq!(pm.substring_rect(2)[1], 0.5);
        assert_eq!(pm.substring_rect(9), pm.substring_rect(2));
        // Source: geometry: landscape (width > length) with strips along the long side lie
        // side by side up the slope
        let land = module([0.0, 0.0, 0.0], 30.0, 180.0, 1.0, 1.7, 2, true).prepare();
        assert_eq!(land.substring_rect(0), [-0.85, 0.85, -0.5, 0.0]);
        let across = module([0.0, 0.0, 0.0], 30.0, 180.0, 1.7, 1.0, 2, false).prepare();
        assert_eq!(across.substring_rect(1), [-0.5, 0.5, 0.0, 0.85]);
    }

    #[test]
    fn layout_grid_places_rows_and_columns() {
        let t = module([10.0, 20.0, 2.0], 30.0, 180.0, 1.7, 1.0, 3, true);
        let g = layout_grid(&t, 2, 3, 0.1, 0.02).unwrap();
        assert_eq!(g.len(), 6);
        let c = |m: &ModulePlacement| [m.centre_e_m, m.centre_n_m, m.centre_up_m];
        // Source: geometry: centres 1.02 m apart along u (east), 1.8 m apart up the slope
        assert_close(c(&g[1])[0] - c(&g[0])[0], 1.02, 1e-12, "column pitch");
        let dv = [
            c(&g[3])[0] - c(&g[0])[0],
            c(&g[3])[1] - c(&g[0])[1],
            c(&g[3])[2] - c(&g[0])[2],
        ];
        assert_close(dot(dv, dv).sqrt(), 1.8, 1e-12, "row pitch");
        assert_close(dv[2], 1.8 * 0.5, 1e-12, "upper row is higher");
        assert!(
            c(&g[0])[0] < c(&g[2])[0],
            "left to right seen from the south"
        );
        // Source: geometry: the group is centred on the template's centre
        for k in 0..3 {
            let mean = g.iter().map(|m| c(m)[k]).sum::<f64>() / 6.0;
            assert_close(mean, c(&t)[k], 1e-12, "group centre");
        }
        assert!(layout_grid(&t, 0, 3, 0.1, 0.0)
            .unwrap_err()
            .contains("rows"));
        assert!(layout_grid(&t, 1, 0, 0.1, 0.0)
            .unwrap_err()
            .contains("columns"));
        assert!(layout_grid(&t, 1, 1, -0.1, 0.0)
            .unwrap_err()
            .contains("row_gap_m"));
        assert!(layout_grid(&t, 1, 1, 0.0, f64::NAN)
            .unwrap_err()
            .contains("column_gap_m"));
    }

    // ---------------------------------------------------------------- shadows

    fn check_pole_shadow(elevation_deg: f64, azimuth_deg: f64) {
        let (r, height) = (0.1, 5.0);
        let ground = module([0.0, 0.0, 0.0], 0.0, 180.0, 1.0, 1.0, 1, true);
        let pole = Obstacle::Pole {
            base_e_m: 3.0,
            base_n_m: 4.0,
            radius_m: r,
            height_m: height,
        };
        let poly = shadow_polygon(&ground, &pole, &sun(elevation_deg, azimuth_deg));
        assert!(poly.len() >= 4, "{poly:?}");
        // On a horizontal module facing south, u = east and v = north.
        let length = height / elevation_deg.to_radians().tan();
        let away = (azimuth_deg + 180.0).to_radians();
        let dir = (away.sin(), away.cos());
        // The shadow is centrally symmetric: its area centroid is half-way along it.
        let (mut a, mut cx, mut cy) = (0.0, 0.0, 0.0);
        for i in 0..poly.len() {
            let (p, q) = (poly[i], poly[(i + 1) % poly.len()]);
            let w = p.0 * q.1 - q.0 * p.1;
            a += w / 2.0;
            cx += (p.0 + q.0) * w / 6.0;
            cy += (p.1 + q.1) * w / 6.0;
        }
        let (cx, cy) = (cx / a - 3.0, cy / a - 4.0);
        let what = format!("pole shadow, sun {elevation_deg}° at {azimuth_deg}°");
        // Source: hand trigonometry, length = height / tan(elevation), direction = sun
        // azimuth + 180°; exact up to rounding
        assert_close(cx.hypot(cy), length / 2.0, 1e-9, &what);
        let bearing = cx.atan2(cy).to_degrees();
        let off = (bearing - azimuth_deg - 180.0 + 180.0).rem_euclid(360.0) - 180.0;
        assert_close(off, 0.0, 1e-9, &what);
        // Source: hand trigonometry; the 12-gon of equal mean width makes the shadow's
        // extent along its axis L + 2r within −4.6 % … +2.3 % of r
        let ext = poly
            .iter()
            .map(|p| (p.0 - 3.0) * dir.0 + (p.1 - 4.0) * dir.1)
            .fold(f64::NEG_INFINITY, f64::max)
            - poly
                .iter()
                .map(|p| (p.0 - 3.0) * dir.0 + (p.1 - 4.0) * dir.1)
                .fold(f64::INFINITY, f64::min);
        assert_close(ext - 2.0 * r, length, 0.05 * r, &what);
        // Source: geometry: the shadow's width across its axis is the pole's diameter
        // within the 12-gon's −2.3 % … +1.2 %
        let across = |p: &(f64, f64)| (p.0 - 3.0) * dir.1 - (p.1 - 4.0) * dir.0;
        let width = poly.iter().map(across).fold(f64::NEG_INFINITY, f64::max)
            - poly.iter().map(across).fold(f64::INFINITY, f64::min);
        assert_close(width, 2.0 * r, 0.025 * 2.0 * r, &what);
    }

    #[test]
    fn pole_shadow_on_the_ground_has_textbook_length_and_direction() {
        check_pole_shadow(30.0, 120.0);
        check_pole_shadow(45.0, 180.0);
        check_pole_shadow(15.0, 250.0);
        check_pole_shadow(60.0, 10.0);
        check_pole_shadow(5.0, 90.0);
    }

    #[test]
    fn worked_example_of_the_method_page() {
        // notebooks-free-docs/method-shade.md: module 1.7 m × 1.0 m portrait, tilt 30° south, centre 1 m up;
        // mast 6 m × r 0.1 m at (1, −4); sun at 25° elevation, azimuth 160°.
        let m = module([0.0, 0.0, 1.0], 30.0, 180.0, 1.7, 1.0, 3, true);
        let mast = Obstacle::Pole {
            base_e_m: 1.0,
            base_n_m: -4.0,
            radius_m: 0.1,
            height_m: 6.0,
        };
        let s = sun(25.0, 160.0);
        let poly = shadow_polygon(&m, &mast, &s);
        let (mut a, mut cx, mut cy) = (0.0, 0.0, 0.0);
        for i in 0..poly.len() {
            let (p, q) = (poly[i], poly[(i + 1) % poly.len()]);
            let w = p.0 * q.1 - q.0 * p.1;
            a += w / 2.0;
            cx += (p.0 + q.0) * w / 6.0;
            cy += (p.1 + q.1) * w / 6.0;
        }
        // Source: hand computation in notebooks-free-docs/method-shade.md (projected axis from (0.556082,
        // −3.210468) to (−1.478058, 3.242870), midpoint printed to 6 decimals)
        assert_close(cx / a, -0.460988, 1e-6, "centroid u");
        assert_close(cy / a, 0.016201, 1e-6, "centroid v");

        // Independent computation from first principles (none of the code above): the
        // module frame of the method page, n = (0, −sin 30°, cos 30°), u = (1, 0, 0),
        // v = (0, cos 30°, sin 30°), centre (0, 0, 1); the sun direction s; a point X
        // projects along s onto the plane at (x_u − x_n·s_u/s_n, x_v − x_n·s_v/s_n).
        let beta = 30f64.to_radians();
        let (n, u, v) = (
            [0.0, -beta.sin(), beta.cos()],
            [1.0, 0.0, 0.0],
            [0.0, beta.cos(), beta.sin()],
        );
        let dot = |a: [f64; 3], b: [f64; 3]| a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
        let (el, az) = (25f64.to_radians(), 160f64.to_radians());
        let sd = [el.cos() * az.sin(), el.cos() * az.cos(), el.sin()];
        let project = |x: [f64; 3]| {
            let x = [x[0], x[1], x[2] - 1.0];
            let (xn, sn) = (dot(x, n), dot(sd, n));
            (
                dot(x, u) - xn * dot(sd, u) / sn,
                dot(x, v) - xn * dot(sd, v) / sn,
            )
        };
        // The true cylinder's shadow on the plane is the band between the shadows of its two
        // silhouette lines (the vertical lines at ±r across the sun's horizontal direction);
        // both of its rounded ends fall far outside the module (v ≈ −3.2 and +3.2). As lines
        // v = k·u + c:
        let across = [az.cos(), -az.sin()];
        let line = |side: f64| {
            let (e, nn) = (1.0 + side * 0.1 * across[0], -4.0 + side * 0.1 * across[1]);
            let (a, b) = (project([e, nn, 0.0]), project([e, nn, 6.0]));
            let k = (b.1 - a.1) / (b.0 - a.0);
            (k, a.1 - k * a.0)
        };
        let ((k, c_a), (_, c_b)) = (line(1.0), line(-1.0));
        // Shaded share of strip i for the band scaled about its axis by `width`: the band's
        // length in v inside the module (|v| ≤ 0.85) integrated over u, midpoint rule with
        // 20 000 steps (the integrand is piecewise linear: error < 1e-8).
        let band_fraction = |i: usize, width: f64| {
            let (mid, half) = (0.5 * (c_a + c_b), 0.5 * (c_a - c_b).abs() * width);
            let (lo, steps) = (-0.5 + i as f64 / 3.0, 20_000);
            let mut covered = 0.0;
            for j in 0..steps {
                let x = lo + (j as f64 + 0.5) / (3.0 * steps as f64);
                let (a, b) = (k * x + mid - half, k * x + mid + half);
                covered += (b.min(0.85) - a.max(-0.85)).max(0.0);
            }
            covered / steps as f64 / 1.7
        };
        // Source: independent computation (the band above) vs the ray cast against the true
        // cylinder printed in notebooks-free-docs/method-shade.md (0.3515, 0.0203, 0; 400 × 400
        // points per strip): the band gives 0.3515377, 0.0202866, 0, agreeing to the 4
        // printed decimals (5e-5).
        let exact: Vec<f64> = (0..3).map(|i| band_fraction(i, 1.0)).collect();
        assert_close(exact[0], 0.3515, 5e-5, "band, strip 0");
        assert_close(exact[1], 0.0203, 5e-5, "band, strip 1");
        assert_eq!(exact[2], 0.0, "band, strip 2");
        // Source: geometry of the code's pole: a regular 12-gon of the pole's mean width,
        // whose width across any direction lies between 2r·π/(12 tan 15°) = 0.97706·2r and
        // 2r·π/(12 sin 15°) = 1.01152·2r. Its shadow is the same band narrowed or widened by
        // that factor, so each code fraction must lie between the band fractions at the two
        // widths (strip 0: 0.34414 … 0.35539, strip 1: 0.019137 … 0.020900; the code gives
        // 0.3503, 0.0201); 1e-6 covers the integration.
        let step = std::f64::consts::PI / 12.0;
        let (narrow, wide) = (step / step.tan(), step / step.sin());
        let f = fractions(&m, &[mast], &s);
        for (i, &got) in f.iter().enumerate() {
            let (lo, hi) = (band_fraction(i, narrow), band_fraction(i, wide));
            assert!(
                got >= lo - 1e-6 && got <= hi + 1e-6,
                "strip {i}: {got} outside {lo} … {hi}"
            );
        }
        assert_eq!(f[2], 0.0, "substring 2");
        let loss = obstacle_sky_view_loss(&m, &[mast], &HorizonProfile::flat()).unwrap();
        // Independent computation from first principles: the share of the module's sky view
        // (1 + cos 30°)/2 that the true cylinder hides, averaged over 40 × 40 points of the
        // module. From a point P the horizontal ray of azimuth φ meets the circle first at
        // distance r₀(φ); the mast hides elevations 0 … E(φ) = atan((6 − P_z)/r₀) (the ground
        // below the horizon is not sky), and with cos θ = a(φ)·cos e + n_z·sin e (a the
        // horizontal part of n·d) the inner integral is closed:
        // ∫₀^E cos θ cos e de = a·(E/2 + sin 2E/4) + n_z·sin²E/2. Azimuth: 400 midpoints in t
        // with φ = φ_c + asin(r/d)·sin t (smooth at the tangents). Doubling either grid
        // changes the result by < 1e-7.
        let mut total = 0.0;
        let grid = 40;
        for i in 0..grid {
            for j in 0..grid {
                let (pu, pv) = (
                    -0.5 + (i as f64 + 0.5) / grid as f64,
                    1.7 * (-0.5 + (j as f64 + 0.5) / grid as f64),
                );
                let p = [
                    pu * u[0] + pv * v[0],
                    pu * u[1] + pv * v[1],
                    1.0 + pv * v[2],
                ];
                let (dx, dy) = (1.0 - p[0], -4.0 - p[1]);
                let d = dx.hypot(dy);
                let (phi_c, half) = (dx.atan2(dy), (0.1 / d).asin());
                let nodes = 400;
                for q in 0..nodes {
                    let t = std::f64::consts::PI * ((q as f64 + 0.5) / nodes as f64 - 0.5);
                    let phi = phi_c + half * t.sin();
                    let dphi = half * t.cos() * std::f64::consts::PI / nodes as f64;
                    let (ex, ey) = (phi.sin(), phi.cos());
                    let along = dx * ex + dy * ey;
                    let miss2 = d * d - along * along;
                    if miss2 > 0.01 {
                        continue;
                    }
                    let r0 = along - (0.01 - miss2).sqrt();
                    let e_top = ((6.0 - p[2]) / r0).atan();
                    let a = n[0] * ex + n[1] * ey;
                    total += (a * (e_top / 2.0 + (2.0 * e_top).sin() / 4.0)
                        + n[2] * e_top.sin().powi(2) / 2.0)
                        * dphi;
                }
            }
        }
        let expected =
            total / std::f64::consts::PI / (grid * grid) as f64 / ((1.0 + beta.cos()) / 2.0);
        // Source: the independent integral above, 0.00996835 (the method page's one-point,
        // thin-mast hand estimate is 0.0098). It is good to 1e-7; 1e-6 (0.01 %) is the
        // accuracy asked of the code's 3 × 3 Gauss–Legendre points over the module (the code
        // gives 0.00996850, 1.4e-7 away).
        assert_close(loss.total_frac, expected, 1e-6, "diffuse loss");
    }

    #[test]
    fn wall_due_south_shades_exactly_below_its_angular_height() {
        // A 0.1 m horizontal module at ground level, a 3 m wall whose north face is 5 m south.
        let m = module([0.0, 0.0, 0.0], 0.0, 180.0, 0.1, 0.1, 1, true);
        let wall = east_west_wall(-5.0, 50.0, 3.0);
        let full_below = f64::atan(3.0 / 5.05).to_degrees();
        let clear_above = f64::atan(3.0 / 4.95).to_degrees();
        for i in 0..=1000 {
            let e = 10.0 + 0.05 * i as f64;
            let f = fractions(&m, &[wall], &sun(e, 180.0))[0];
            // Source: geometry: the shadow of the wall's top edge reaches 3/tan e north of
            // the wall; exact up to rounding
            let reach = -5.0 + 3.0 / e.to_radians().tan();
            let expected = ((reach + 0.05) / 0.1).clamp(0.0, 1.0);
            assert_close(f, expected, 1e-9, &format!("elevation {e}"));
            // Source: geometry: wholly shaded below, wholly clear above the transition band
            if e < full_below {
                assert_close(f, 1.0, 1e-12, &format!("elevation {e}"));
            }
            if e > clear_above {
                assert_close(f, 0.0, 1e-12, &format!("elevation {e}"));
            }
        }
        // A 1 mm module tilted 30° south, 0.5 m up: the wall's top is atan(2.5 / 5) above it.
        let tilted = module([0.0, 0.0, 0.5], 30.0, 180.0, 0.001, 0.001, 1, true);
        let angular_height = f64::atan(2.5 / 5.0).to_degrees();
        for de in [-5.0, -1.0, -0.05, 0.05, 1.0, 5.0] {
            let f = fractions(&tilted, &[wall], &sun(angular_height + de, 180.0))[0];
            // Source: geometry: shaded exactly while the sun is below the wall's angular height
            assert_close(f, if de < 0.0 { 1.0 } else { 0.0 }, 1e-9, &format!("{de}"));
        }
    }

    #[test]
    fn substring_fully_in_half_in_and_out_of_a_shadow() {
        // Horizontal 1 m (east) × 2 m (north) module; a 2 m wall with its north face 2 m
        // south of the centre; sun due south at 45°: the shadow ends on the centre line.
        let wall = east_west_wall(-2.0, 50.0, 2.0);
        let s = sun(45.0, 180.0);
        let stacked = module([0.0, 0.0, 0.0], 0.0, 180.0, 2.0, 1.0, 2, false);
        let f = fractions(&stacked, &[wall], &s);
        // Source: geometry: southern strip wholly in the shadow, northern strip wholly out
        assert_close(f[0], 1.0, 1e-9, "inside");
        assert_close(f[1], 0.0, 1e-9, "outside");
        let side_by_side = module([0.0, 0.0, 0.0], 0.0, 180.0, 2.0, 1.0, 2, true);
        let f = fractions(&side_by_side, &[wall], &s);
        // Source: geometry: strips running north–south are each half in the shadow
        assert_close(f[0], 0.5, 1e-9, "half");
        assert_close(f[1], 0.5, 1e-9, "half");
        // Source: geometry: the same wall twice is the same shadow (A ∪ A = A)
        let f = fractions(&side_by_side, &[wall, wall], &s);
        assert_close(f[0], 0.5, 1e-9, "union");
    }

    #[test]
    fn obstacles_behind_the_plane_or_sun_behind_it_shade_nothing() {
        // Vertical portrait module facing south, 1 m up; a mast and a shed to its north.
        let m = module([0.0, 0.0, 1.0], 90.0, 180.0, 1.7, 1.0, 3, true);
        let mast = Obstacle::Pole {
            base_e_m: 0.0,
            base_n_m: 2.0,
            radius_m: 0.2,
            height_m: 10.0,
        };
        let shed = Obstacle::Box {
            footprint: [(-3.0, 0.5), (3.0, 0.5), (3.0, 4.0), (-3.0, 4.0)],
            base_m: 0.0,
            height_m: 5.0,
        };
        for (e, az) in [(10.0, 180.0), (30.0, 120.0), (5.0, 240.0)] {
            // Source: geometry: nothing behind the plane stands between the sun and it
            assert_eq!(fractions(&m, &[mast, shed], &sun(e, az)), vec![0.0; 3]);
        }
        let front = Obstacle::Pole {
            base_e_m: 0.0,
            base_n_m: -2.0,
            radius_m: 0.1,
            height_m: 10.0,
        };
        // Source: geometry: a mast due south at low sun casts a 0.2 m vertical stripe on the
        // middle third (0.6 of it) within the 12-gon's width tolerance (−2.3 % … +1.2 %)
        let f = fractions(&m, &[front], &sun(10.0, 180.0));
        assert_close(f[1], 0.6, 0.6 * 0.025, "middle strip");
        assert_eq!((f[0], f[2]), (0.0, 0.0), "outer strips");
        // Source: geometry: the sun behind the module (north) or below the horizon gives
        // no beam to shade
        assert_eq!(fractions(&m, &[front], &sun(10.0, 0.0)), vec![0.0; 3]);
        assert_eq!(fractions(&m, &[front], &sun(-1.0, 180.0)), vec![0.0; 3]);
    }

    #[test]
    fn output_slice_of_the_wrong_length_does_not_panic() {
        let m = module([0.0, 0.0, 0.0], 0.0, 180.0, 2.0, 1.0, 2, false);
        let wall = east_west_wall(-2.0, 50.0, 2.0);
        let mut short = [9.0];
        shaded_fractions(&m, &[wall], &sun(45.0, 180.0), &mut short);
        assert_close(short[0], 1.0, 1e-9, "short");
        let mut long = [9.0; 4];
        shaded_fractions(&m, &[wall], &sun(45.0, 180.0), &mut long);
        // Source: common practice, no source (extra elements are left alone)
        assert_eq!(long[2..], [9.0, 9.0]);
    }

    // ---------------------------------------------------------------- independent ray casting

    /// Tiny deterministic generator (SplitMix64) so the random scenes are reproducible.
    struct Rng(u64);
    impl Rng {
        fn next(&mut self) -> f64 {
            self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
            let mut z = self.0;
            z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
            z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
            ((z ^ (z >> 31)) >> 11) as f64 / (1u64 << 53) as f64
        }
        fn range(&mut self, lo: f64, hi: f64) -> f64 {
            lo + (hi - lo) * self.next()
        }
    }

    /// Does the ray p + t·s (t > 0) pass through the prism? Cyrus–Beck against its faces.
    fn ray_hits(p: [f64; 3], s: [f64; 3], ob: &PreparedObstacle) -> bool {
        let (mut t0, mut t1) = (0.0f64, f64::INFINITY);
        let mut slab = |num: f64, den: f64| -> bool {
            // Inside when num + t·den ≤ 0.
            if den == 0.0 {
                return num <= 0.0;
            }
            let t = -num / den;
            if den > 0.0 {
                t1 = t1.min(t);
            } else {
                t0 = t0.max(t);
            }
            true
        };
        let (z0, z1) = ob.z_range_m();
        let ring = ob.ring();
        let mut ok = slab(p[2] - z1, s[2]) && slab(z0 - p[2], -s[2]);
        for k in 0..ring.len() {
            let a = ring[k];
            let b = ring[(k + 1) % ring.len()];
            let m = [b[1] - a[1], -(b[0] - a[0])];
            ok &= slab(
                m[0] * (p[0] - a[0]) + m[1] * (p[1] - a[1]),
                m[0] * s[0] + m[1] * s[1],
            );
        }
        ok && t0 < t1
    }

    fn ray_cast_fraction(
        pm: &PreparedModule,
        obs: &[PreparedObstacle],
        s: &SunDirection,
        i: usize,
        grid: usize,
    ) -> f64 {
        let r = pm.substring_rect(i);
        let sv = [s.e, s.n, s.up];
        let mut hit = 0usize;
        for a in 0..grid {
            let u = r[0] + (r[1] - r[0]) * (a as f64 + 0.5) / grid as f64;
            for b in 0..grid {
                let v = r[2] + (r[3] - r[2]) * (b as f64 + 0.5) / grid as f64;
                let p = pm.site_point(u, v);
                if obs.iter().any(|o| ray_hits(p, sv, o)) {
                    hit += 1;
                }
            }
        }
        hit as f64 / (grid * grid) as f64
    }

    fn random_scene(rng: &mut Rng) -> (ModulePlacement, Vec<Obstacle>, SunDirection) {
        let m = module(
            [
                rng.range(-1.0, 1.0),
                rng.range(-1.0, 1.0),
                rng.range(0.3, 3.0),
            ],
            rng.range(0.0, 90.0),
            rng.range(0.0, 360.0),
            rng.range(0.5, 2.0),
            rng.range(0.5, 2.0),
            1 + (rng.next() * 4.0) as u32,
            rng.next() < 0.5,
        );
        let pm = m.prepare();
        // Sun somewhere in front of the module and above the horizon.
        let sd = loop {
            let d = SunDirection::from_angles(rng.range(2.0, 88.0), rng.range(0.0, 360.0));
            if dot([d.e, d.n, d.up], pm.normal()) > 0.05 {
                break d;
            }
        };
        // Obstacles around a point between the module and the sun, so that most shade it.
        let mut obs = Vec::new();
        while obs.len() < 2 {
            let dist = rng.range(0.5, 4.0);
            let c = pm.site_point(rng.range(-1.0, 1.0), rng.range(-1.0, 1.0));
            let at = [c[0] + dist * sd.e, c[1] + dist * sd.n];
            let o = if rng.next() < 0.5 {
                Obstacle::Pole {
                    base_e_m: at[0],
                    base_n_m: at[1],
                    radius_m: rng.range(0.05, 0.6),
                    height_m: rng.range(1.0, 8.0),
                }
            } else {
                let (w, d, rot) = (rng.range(0.2, 3.0), rng.range(0.2, 3.0), rng.range(0.0, PI));
                let (sr, cr) = rot.sin_cos();
                let skew = rng.range(-0.3, 0.3);
                let corner = |x: f64, y: f64| (at[0] + x * cr - y * sr, at[1] + x * sr + y * cr);
                Obstacle::Box {
                    footprint: [
                        corner(-w, -d),
                        corner(w, -d),
                        corner(w + skew, d),
                        corner(-w, d + skew),
                    ],
                    base_m: rng.range(0.0, 2.0),
                    height_m: rng.range(0.5, 5.0),
                }
            };
            if validate_scene(&[m], &[o]).is_ok() {
                obs.push(o);
            }
        }
        (m, obs, sd)
    }

    #[test]
    fn shaded_fractions_agree_with_independent_ray_casting() {
        let mut rng = Rng(20240611);
        let grid = 300;
        let mut shaded_cases = 0;
        for case in 0..40 {
            let (m, obs, sd) = random_scene(&mut rng);
            let pm = m.prepare();
            let prepared: Vec<PreparedObstacle> = obs.iter().map(Obstacle::prepare).collect();
            let mut out = vec![f64::NAN; m.substrings as usize];
            shaded_fractions_prepared(&pm, &prepared, &sd, &mut out);
            for (i, &f) in out.iter().enumerate() {
                assert!((0.0..=1.0).contains(&f), "case {case}: {f}");
                let cast = ray_cast_fraction(&pm, &prepared, &sd, i, grid);
                // Source: independent ray casting in the test (geometry); 0.03 bounds the
                // sampling error of a 300 × 300 grid on the boundary of two convex shadows
                assert_close(f, cast, 0.03, &format!("case {case} substring {i}"));
                if f > 0.05 {
                    shaded_cases += 1;
                }
            }
        }
        assert!(
            shaded_cases > 20,
            "scenes should mostly be shaded: {shaded_cases}"
        );
    }

    #[test]
    fn pole_piercing_the_module_plane_shades_only_with_its_front_part() {
        // A tall mast 3 m north of a module tilted 30° south: only its part above ~2.7 m is
        // in front of the module's plane (the general clipped-hull path).
        let m = module([0.0, 0.0, 1.0], 30.0, 180.0, 1.7, 1.0, 3, true);
        let mast = Obstacle::Pole {
            base_e_m: 0.3,
            base_n_m: 3.0,
            radius_m: 0.4,
            height_m: 10.0,
        };
        let box_across = Obstacle::Box {
            footprint: [(-1.0, 2.0), (1.5, 2.0), (1.5, 2.6), (-1.0, 2.6)],
            base_m: 0.0,
            height_m: 6.0,
        };
        let pm = m.prepare();
        for (obstacle, e, az) in [
            (mast, 70.0, 0.0),
            (mast, 75.0, 20.0),
            (box_across, 70.0, 10.0),
        ] {
            let sd = SunDirection::from_angles(e, az);
            let mut out = [0.0; 3];
            shaded_fractions_prepared(&pm, &[obstacle.prepare()], &sd, &mut out);
            assert!(out.iter().any(|&f| f > 0.05), "{out:?}");
            for (i, &f) in out.iter().enumerate() {
                let cast = ray_cast_fraction(&pm, &[obstacle.prepare()], &sd, i, 300);
                // Source: independent ray casting in the test (geometry), 300 × 300 grid
                assert_close(f, cast, 0.03, &format!("substring {i}"));
            }
        }
    }

    #[test]
    fn overhang_under_a_zenith_sun_shades_its_footprint() {
        // A slab 3 m up covering the module's eastern half; the sun straight overhead.
        let m = module([0.0, 0.0, 0.0], 0.0, 180.0, 1.0, 1.0, 2, true);
        let slab = Obstacle::Box {
            footprint: [(0.0, -2.0), (2.0, -2.0), (2.0, 2.0), (0.0, 2.0)],
            base_m: 3.0,
            height_m: 0.5,
        };
        let f = fractions(&m, &[slab], &sun(90.0, 123.0));
        // Source: geometry: a vertical sun's shadow is the footprint itself
        assert_close(f[0], 0.0, 1e-9, "west strip");
        assert_close(f[1], 1.0, 1e-9, "east strip");
    }

    #[test]
    fn substring_fractions_average_to_the_whole_module() {
        let mut rng = Rng(7);
        for case in 0..200 {
            let (m, obs, sd) = random_scene(&mut rng);
            let whole = ModulePlacement { substrings: 1, ..m };
            let mut parts = vec![0.0; m.substrings as usize];
            let mut one = [0.0];
            let prepared: Vec<PreparedObstacle> = obs.iter().map(Obstacle::prepare).collect();
            shaded_fractions_prepared(&m.prepare(), &prepared, &sd, &mut parts);
            shaded_fractions_prepared(&whole.prepare(), &prepared, &sd, &mut one);
            let mean = parts.iter().sum::<f64>() / parts.len() as f64;
            // Source: geometry: equal strips' shaded areas add up to the module's
            assert_close(mean, one[0], 1e-9, &format!("case {case}"));
            assert!(parts.iter().all(|f| (0.0..=1.0).contains(f)));
        }
    }

    #[test]
    fn many_shadows_on_one_module_use_the_heap_path() {
        // Six thin poles in a row south of a horizontal module, sun due south: six
        // separate stripes on one substring (more than STACK_SHADOWS and EXACT_UNION_MAX).
        let m = module([0.0, 0.0, 0.0], 0.0, 180.0, 2.0, 4.0, 1, true);
        let s = sun(40.0, 180.0);
        let poles: Vec<Obstacle> = (0..6)
            .map(|k| Obstacle::Pole {
                base_e_m: -1.5 + 0.6 * k as f64,
                base_n_m: -2.0,
                radius_m: 0.05,
                height_m: 4.0,
            })
            .collect();
        let all = fractions(&m, &poles, &s)[0];
        let sum: f64 = poles.iter().map(|p| fractions(&m, &[*p], &s)[0]).sum();
        // Source: geometry: disjoint shadows add
        assert_close(all, sum, 1e-12, "six stripes");
        assert!(all > 0.0);
        // Source: independent ray casting in the test (geometry), 300 × 300 grid
        let prepared: Vec<PreparedObstacle> = poles.iter().map(Obstacle::prepare).collect();
        let cast = ray_cast_fraction(
            &m.prepare(),
            &prepared,
            &SunDirection::from_position(&s),
            0,
            300,
        );
        assert_close(all, cast, 0.03, "ray cast");
    }

    // ---------------------------------------------------------------- validation

    #[test]
    fn module_validation_names_the_field() {
        let ok = module([0.0, 0.0, 1.0], 30.0, 180.0, 1.7, 1.0, 3, true);
        assert!(ok.validate().is_ok());
        let cases: [(ModulePlacement, &str); 9] = [
            (
                ModulePlacement {
                    tilt_deg: 91.0,
                    ..ok
                },
                "tilt_deg",
            ),
            (
                ModulePlacement {
                    tilt_deg: f64::NAN,
                    ..ok
                },
                "tilt_deg",
            ),
            (
                ModulePlacement {
                    azimuth_deg: -1.0,
                    ..ok
                },
                "azimuth_deg",
            ),
            (
                ModulePlacement {
                    length_m: 0.0,
                    ..ok
                },
                "length_m",
            ),
            (
                ModulePlacement {
                    width_m: f64::NAN,
                    ..ok
                },
                "width_m",
            ),
            (
                ModulePlacement {
                    substrings: 0,
                    ..ok
                },
                "substrings",
            ),
            (
                ModulePlacement {
                    substrings: 33,
                    ..ok
                },
                "substrings",
            ),
            (
                ModulePlacement {
                    centre_up_m: f64::INFINITY,
                    ..ok
                },
                "centre_up_m",
            ),
            (
                ModulePlacement {
                    centre_e_m: f64::NAN,
                    ..ok
                },
                "centre_e_m",
            ),
        ];
        for (m, field) in cases {
            let e = m.validate().unwrap_err();
            assert!(e.starts_with(field), "{e:?} should name {field}");
            let e = validate_scene(&[ok, m], &[]).unwrap_err();
            assert!(e.starts_with(&format!("modules[1].{field}")), "{e:?}");
        }
    }

    #[test]
    fn obstacle_validation_names_the_field() {
        let pole = |r: f64, h: f64, e: f64| Obstacle::Pole {
            base_e_m: e,
            base_n_m: 0.0,
            radius_m: r,
            height_m: h,
        };
        let quad = |fp: [(f64, f64); 4], base: f64, h: f64| Obstacle::Box {
            footprint: fp,
            base_m: base,
            height_m: h,
        };
        let square = [(0.0, 0.0), (1.0, 0.0), (1.0, 1.0), (0.0, 1.0)];
        let clockwise = [(0.0, 0.0), (0.0, 1.0), (1.0, 1.0), (1.0, 0.0)];
        assert!(pole(0.1, 3.0, 0.0).validate().is_ok());
        assert!(quad(square, 0.0, 2.0).validate().is_ok());
        assert!(quad(clockwise, 3.0, 2.0).validate().is_ok());
        let cases = [
            (pole(-0.1, 3.0, 0.0), "radius_m"),
            (pole(0.1, 0.0, 0.0), "height_m"),
            (pole(0.1, 3.0, f64::NAN), "base_e_m"),
            (quad(square, f64::NAN, 2.0), "base_m"),
            (quad(square, 0.0, -2.0), "height_m"),
            (
                quad([(0.0, 0.0), (1.0, 1.0), (1.0, 0.0), (0.0, 1.0)], 0.0, 2.0),
                "footprint",
            ),
            (
                quad([(0.0, 0.0), (1.0, 0.0), (1.0, 0.0), (0.0, 1.0)], 0.0, 2.0),
                "footprint",
            ),
            (
                quad([(0.0, 0.0), (2.0, 0.0), (0.5, 0.5), (0.0, 2.0)], 0.0, 2.0),
                "footprint",
            ),
            (
                quad(
                    [(0.0, 0.0), (1.0, f64::INFINITY), (1.0, 1.0), (0.0, 1.0)],
                    0.0,
                    2.0,
                ),
                "footprint[1]",
            ),
        ];
        for (o, field) in cases {
            let e = o.validate().unwrap_err();
            assert!(e.starts_with(field), "{e:?} should name {field}");
            assert!(!e.ends_with('.'), "{e:?}");
            let e = validate_scene(&[], &[pole(0.1, 3.0, 0.0), o]).unwrap_err();
            assert!(e.starts_with(&format!("obstacles[1].{field}")), "{e:?}");
        }
    }

    #[test]
    fn module_inside_an_obstacle_is_rejected() {
        let shed = Obstacle::Box {
            footprint: [(0.0, 0.0), (4.0, 0.0), (4.0, 3.0), (0.0, 3.0)],
            base_m: 0.0,
            height_m: 2.5,
        };
        let mast = Obstacle::Pole {
            base_e_m: 10.0,
            base_n_m: 0.0,
            radius_m: 0.1,
            height_m: 6.0,
        };
        let inside = module([2.0, 1.5, 1.0], 30.0, 180.0, 1.7, 1.0, 3, true);
        let e = validate_scene(&[inside], &[mast, shed]).unwrap_err();
        // Source: common practice, no source (a module cannot overlap a solid)
        assert!(
            e.starts_with("modules[0] reaches into obstacles[1] (box)"),
            "{e}"
        );
        let on_roof = module([2.0, 1.5, 2.5], 0.0, 180.0, 1.7, 1.0, 3, true);
        assert!(
            validate_scene(&[on_roof], &[shed]).is_ok(),
            "resting on the roof"
        );
        let against_wall = module([2.0, -0.0, 1.2], 90.0, 180.0, 1.0, 1.7, 3, true);
        assert!(
            validate_scene(&[against_wall], &[shed]).is_ok(),
            "on the wall"
        );
        let through = module([10.0, 0.0, 2.0], 20.0, 180.0, 1.7, 1.0, 3, true);
        let e = validate_scene(&[through], &[mast]).unwrap_err();
        assert!(e.contains("obstacles[0] (pole)"), "{e}");
        let beside = module([10.0, 1.0, 2.0], 20.0, 180.0, 1.7, 1.0, 3, true);
        assert!(validate_scene(&[beside], &[mast]).is_ok());
        assert!(obstacle_sky_view_loss(&through, &[mast], &HorizonProfile::flat()).is_err());
    }

    // ---------------------------------------------------------------- applying

    #[test]
    fn shade_poa_scales_each_part_as_documented() {
        let p = PoaParts {
            beam_w_m2: 500.0,
            circumsolar_w_m2: 100.0,
            isotropic_w_m2: 80.0,
            horizon_w_m2: -10.0,
            ground_w_m2: 20.0,
            aoi_deg: 30.0,
        };
        let s = shade_poa(&p, 0.25, 0.5);
        // Source: definition (notebooks-free-docs/method-shade.md and its conventions)
        assert_eq!(
            s,
            PoaParts {
                beam_w_m2: 125.0,
                circumsolar_w_m2: 25.0,
                isotropic_w_m2: 40.0,
                horizon_w_m2: -5.0,
                ground_w_m2: 20.0,
                aoi_deg: 30.0,
            }
        );
        assert_eq!(shade_poa(&p, f64::NAN, 2.0).beam_w_m2, 0.0);
        assert_eq!(shade_poa(&p, f64::NAN, 2.0).isotropic_w_m2, 80.0);
    }

    // ---------------------------------------------------------------- timing

    /// Run with `cargo test --release --lib physics::shade -- --ignored --nocapture`.
    #[test]
    #[ignore]
    fn timing_per_interval_per_module() {
        use std::time::Instant;
        let m = module([0.0, 0.0, 1.0], 30.0, 180.0, 1.7, 1.0, 3, true);
        let obs = [
            Obstacle::Pole {
                base_e_m: 1.0,
                base_n_m: -3.0,
                radius_m: 0.1,
                height_m: 6.0,
            },
            east_west_wall(-4.0, 3.0, 2.5),
        ];
        let n = 200_000;
        let suns: Vec<SunPosition> = (0..n)
            .map(|i| sun(5.0 + (i % 60) as f64, 90.0 + (i % 180) as f64))
            .collect();
        let mut out = [0.0; 3];
        let mut acc = 0.0;
        let t = Instant::now();
        for s in &suns {
            shaded_fractions(&m, &obs, s, &mut out);
            acc += out[0] + out[1] + out[2];
        }
        let simple = t.elapsed().as_nanos() as f64 / n as f64;
        let pm = m.prepare();
        let po: Vec<PreparedObstacle> = obs.iter().map(Obstacle::prepare).collect();
        let dirs: Vec<SunDirection> = suns.iter().map(SunDirection::from_position).collect();
        let t = Instant::now();
        for d in &dirs {
            shaded_fractions_prepared(&pm, &po, d, &mut out);
            acc += out[0] + out[1] + out[2];
        }
        let prepared = t.elapsed().as_nanos() as f64 / n as f64;
        let lit: Vec<SunDirection> = dirs
            .iter()
            .copied()
            .filter(|d| {
                shaded_fractions_prepared(&pm, &po, d, &mut out);
                out.iter().any(|&f| f > 0.0)
            })
            .collect();
        let t = Instant::now();
        for _ in 0..4 {
            for d in &lit {
                shaded_fractions_prepared(&pm, &po, d, &mut out);
                acc += out[0] + out[1] + out[2];
            }
        }
        let shaded_only = t.elapsed().as_nanos() as f64 / (4 * lit.len()) as f64;
        let clear: Vec<SunDirection> = dirs
            .iter()
            .copied()
            .filter(|d| {
                shaded_fractions_prepared(&pm, &po, d, &mut out);
                out.iter().all(|&f| f == 0.0)
            })
            .collect();
        let t = Instant::now();
        for d in &clear {
            shaded_fractions_prepared(&pm, &po, d, &mut out);
            acc += out[0];
        }
        let clear_only = t.elapsed().as_nanos() as f64 / clear.len() as f64;
        let t = Instant::now();
        let loss = obstacle_sky_view_loss(&m, &obs, &HorizonProfile::flat()).unwrap();
        let dome = t.elapsed().as_secs_f64() * 1e3;
        println!(
            "shaded_fractions: {simple:.0} ns/call, prepared: {prepared:.0} ns/call \
             ({:.0} % of calls shaded; {shaded_only:.0} ns/call when shaded, \
             {clear_only:.0} ns/call when not); \
             obstacle_sky_view_loss: {dome:.2} ms (loss {:.4}); checksum {acc:.1}",
            100.0 * lit.len() as f64 / n as f64,
            loss.total_frac
        );
    }
}
