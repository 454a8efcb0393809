//! Near obstacles: vertical poles and box-shaped prisms (walls, sheds, chimneys) in the site
//! frame, their checks, their preparation as a counter-clockwise prism (a pole as the
//! 12-gon of equal mean width), and the check of a whole scene that no module reaches into
//! an obstacle.
//!
//! Shapes and validation only: the shadows they cast are computed in `shadow.rs` and the sky
//! they take in `obstacle_sky.rs`.

use std::f64::consts::PI;

use super::geometry::{dot, finite, positive, signed_area, turn};
use super::placement::{ModulePlacement, PreparedModule};

/// Sides of the regular polygon that stands in for a pole's circular cross-section when its
/// shadow is projected. Its circumradius is chosen so that its mean width equals the pole's
/// diameter; the shadow's width is then right within −2.3 % … +1.2 % in every direction.
pub const POLE_SIDES: usize = 12;

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
                            "footprint corner {} = ({e}, {n}) is not a finite (east_m, north_m) point",
                            i + 1
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
    pub(super) ring: [[f64; 2]; POLE_SIDES],
    pub(super) count: usize,
    pub(super) z0_m: f64,
    pub(super) z1_m: f64,
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::shade::horizon::HorizonProfile;
    use crate::physics::shade::obstacle_sky::obstacle_sky_view_loss;
    use crate::physics::shade::test_support::module;

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
                "footprint corner 2",
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
}
