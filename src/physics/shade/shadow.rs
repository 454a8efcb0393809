//! Near shading: the shadow of each obstacle on a module's plane, projected along the sun's
//! rays, and the shaded fraction of each bypass-diode substring (the union of the shadows
//! clipped to the substring's rectangle). The per-interval path allocates nothing for up to
//! [`STACK_SHADOWS`] shadows on a module.
//!
//! Beam only: it deliberately does not touch diffuse light (`sky_view.rs`,
//! `obstacle_sky.rs`), irradiance (`apply.rs`) or the far horizon (`horizon.rs`), and it
//! does not model shade from one module on another.

use super::geometry::{dot, unit_clamp};
use super::obstacles::{Obstacle, PreparedObstacle, POLE_SIDES};
use super::placement::{ModulePlacement, PreparedModule};
use super::polygon::{clip_poly, clip_rect, convex_hull, Poly};
use crate::physics::sun::SunPosition;

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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::shade::horizon::HorizonProfile;
    use crate::physics::shade::obstacle_sky::obstacle_sky_view_loss;
    use crate::physics::shade::obstacles::validate_scene;
    use crate::physics::shade::test_support::{
        assert_close, east_west_wall, fractions, module, sun,
    };
    use std::f64::consts::PI;

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
