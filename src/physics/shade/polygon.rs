//! A convex polygon in module coordinates held in a fixed-size buffer, and what the shadow
//! computation does with it: area, bounding box, Sutherland–Hodgman clipping by a half-plane,
//! a rectangle or another convex polygon, and Andrew's monotone-chain hull.
//!
//! Plain 2-D geometry that allocates nothing; it knows nothing about suns, obstacles or
//! substrings (`shadow.rs` builds the shadows from it).

/// Capacity of a 2-D polygon buffer. A shadow has at most MAX_POINTS (`shadow.rs`) corners
/// (in practice ≤ 14 for a pole); clipping by the rectangle adds at most 4 and by another
/// shadow at most that shadow's corner count. Pushes past the capacity are dropped rather
/// than panicking.
const POLY_CAP: usize = 64;

/// A convex polygon in module coordinates (u, v), counter-clockwise.
#[derive(Clone, Copy)]
pub(super) struct Poly {
    pub(super) n: usize,
    pub(super) p: [[f64; 2]; POLY_CAP],
}

impl Poly {
    pub(super) const EMPTY: Poly = Poly {
        n: 0,
        p: [[0.0; 2]; POLY_CAP],
    };

    pub(super) fn push(&mut self, q: [f64; 2]) {
        if self.n < POLY_CAP {
            self.p[self.n] = q;
            self.n += 1;
        }
    }

    pub(super) fn pts(&self) -> &[[f64; 2]] {
        &self.p[..self.n]
    }

    /// Copies only the used corners (the buffers are 1 KB; shadows use ~14 corners).
    pub(super) fn copy_from(&mut self, other: &Poly) {
        self.p[..other.n].copy_from_slice(other.pts());
        self.n = other.n;
    }

    /// Shoelace area (positive for counter-clockwise).
    pub(super) fn area(&self) -> f64 {
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
    pub(super) fn bbox(&self) -> [f64; 4] {
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
pub(super) fn clip_half_plane(src: &Poly, dst: &mut Poly, a: f64, b: f64, c: f64) {
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
pub(super) fn clip_rect(poly: &mut Poly, tmp: &mut Poly, r: [f64; 4]) {
    clip_half_plane(poly, tmp, -1.0, 0.0, -r[0]);
    clip_half_plane(tmp, poly, 1.0, 0.0, r[1]);
    clip_half_plane(poly, tmp, 0.0, -1.0, -r[2]);
    clip_half_plane(tmp, poly, 0.0, 1.0, r[3]);
}

/// `poly` ∩ `by` (both convex, `by` counter-clockwise), left in `poly` (`tmp` is scratch).
pub(super) fn clip_poly(poly: &mut Poly, tmp: &mut Poly, by: &Poly) {
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
pub(super) fn convex_hull(pts: &mut [[f64; 2]], out: &mut Poly) {
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
