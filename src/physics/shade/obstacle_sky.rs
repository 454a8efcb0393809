//! What near obstacles take from a module's view of the isotropic sky: for points on the
//! module, the elevations blocked by each obstacle in every azimuth, integrated over the
//! dome like the horizon's sky view, per obstacle and for all of them together (overlaps
//! counted once).
//!
//! Done once per module and obstacle set, never per interval. It deliberately leaves the
//! ground-reflected part alone and knows nothing of the beam (`shadow.rs`).

use std::f64::consts::FRAC_PI_2;

use super::geometry::{signed_area, unit_clamp};
use super::horizon::HorizonProfile;
use super::obstacles::{validate_scene, Obstacle};
use super::placement::ModulePlacement;
use super::sky_view::{azimuth_quadrature, slice_antiderivative, slice_up, DomePlane};

/// Start points of sky-view rays are lifted this far off the module along its normal, so
/// that a module resting on a box's top does not see that box as an obstacle.
const RAY_LIFT_M: f64 = 1e-6;

/// What near obstacles take from a module's view of the isotropic sky.
#[derive(Clone, Debug, PartialEq)]
pub struct SkyViewLoss {
    /// Isotropic-sky factor of the horizon profile alone, averaged over the module (the same
    /// quantity as [`sky_view_ratio`]).
    ///
    /// [`sky_view_ratio`]: super::sky_view_ratio
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
///
/// [`sky_view_frac`]: super::sky_view_frac
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::shade::sky_view::sky_view_ratio;
    use crate::physics::shade::test_support::{assert_close, east_west_wall, module};

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
}
