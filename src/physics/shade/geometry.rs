//! The small arithmetic the shading files share: the dot product, the clamp to 0..=1, the
//! turn and signed area of planar points, and the three field checks whose messages the
//! validators of modules, obstacles and grids have in common.
//!
//! Helpers only: nothing here knows about modules, obstacles, the sun or the sky.

pub(super) fn dot(a: [f64; 3], b: [f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

/// Clamp to 0..=1 with NaN → 0 (f64::clamp keeps NaN).
pub(super) fn unit_clamp(x: f64) -> f64 {
    if x > 0.0 {
        x.min(1.0)
    } else {
        0.0
    }
}

/// z-component of (b − a) × (c − b): positive for a left turn.
pub(super) fn turn(a: (f64, f64), b: (f64, f64), c: (f64, f64)) -> f64 {
    (b.0 - a.0) * (c.1 - b.1) - (b.1 - a.1) * (c.0 - b.0)
}

pub(super) fn signed_area(q: &[(f64, f64); 4]) -> f64 {
    let mut s = 0.0;
    for k in 0..4 {
        let (a, b) = (q[k], q[(k + 1) % 4]);
        s += a.0 * b.1 - b.0 * a.1;
    }
    s / 2.0
}

pub(super) fn finite(field: &str, x: f64) -> Result<(), String> {
    if x.is_finite() {
        Ok(())
    } else {
        Err(format!("{field} = {x} is not a finite number"))
    }
}

pub(super) fn positive(field: &str, x: f64) -> Result<(), String> {
    if x.is_finite() && x > 0.0 {
        Ok(())
    } else {
        Err(format!("{field} = {x} must be a finite length > 0 m"))
    }
}

pub(super) fn non_negative(field: &str, x: f64) -> Result<(), String> {
    if x.is_finite() && x >= 0.0 {
        Ok(())
    } else {
        Err(format!("{field} = {x} must be a finite length >= 0 m"))
    }
}
