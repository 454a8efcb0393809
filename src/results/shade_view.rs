//! The sky as seen from a group of modules: sun paths over the year, the horizon profile and
//! the near obstacles' outlines, in (azimuth, elevation) — the data of the sun-path picture.
//!
//! Pure geometry; drawing lives in `io::plots`.

use crate::input::plan::Plan;
use crate::input::site::Site;
use crate::physics::shade::Obstacle;
use crate::physics::sun::{self, Atmosphere, Observer};
use crate::time::LocalTime;

/// Everything the sun-path picture shows for one group.
#[derive(Clone, Debug, PartialEq)]
pub struct SunPathView {
    /// The group the view is taken from (its modules' mean centre).
    pub group: String,
    /// One sun path per listed day: (label, (azimuth°, elevation°) while the sun is up).
    pub days: Vec<(String, Vec<(f64, f64)>)>,
    /// The horizon line, (azimuth°, elevation°) every 5° from 0 to 360 (empty without one).
    pub horizon: Vec<(f64, f64)>,
    /// Each obstacle's outline (name, closed polygon in azimuth°/elevation°), approximate:
    /// the convex hull of its corners' directions.
    pub obstacles: Vec<(String, Vec<(f64, f64)>)>,
}

/// Direction (azimuth clockwise from north, elevation) of a point seen from `from`, degrees.
fn direction(from: [f64; 3], to: [f64; 3]) -> (f64, f64) {
    let (de, dn, du) = (to[0] - from[0], to[1] - from[1], to[2] - from[2]);
    let az = de.atan2(dn).to_degrees().rem_euclid(360.0);
    let el = du.atan2((de * de + dn * dn).sqrt()).to_degrees();
    (az, el)
}

/// Convex hull (monotone chain) of points in the plane, counter-clockwise.
fn hull(mut pts: Vec<(f64, f64)>) -> Vec<(f64, f64)> {
    pts.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.total_cmp(&b.1)));
    pts.dedup();
    if pts.len() < 3 {
        return pts;
    }
    let cross = |o: (f64, f64), a: (f64, f64), b: (f64, f64)| {
        (a.0 - o.0) * (b.1 - o.1) - (a.1 - o.1) * (b.0 - o.0)
    };
    let mut lower: Vec<(f64, f64)> = Vec::new();
    for &p in &pts {
        while lower.len() >= 2 && cross(lower[lower.len() - 2], lower[lower.len() - 1], p) <= 0.0 {
            lower.pop();
        }
        lower.push(p);
    }
    let mut upper: Vec<(f64, f64)> = Vec::new();
    for &p in pts.iter().rev() {
        while upper.len() >= 2 && cross(upper[upper.len() - 2], upper[upper.len() - 1], p) <= 0.0 {
            upper.pop();
        }
        upper.push(p);
    }
    lower.pop();
    upper.pop();
    lower.extend(upper);
    lower
}

/// The view from each group that has a placement (or, without placements, from the site
/// origin for the first group), for a calendar year.
pub fn sun_path_views(plan: &Plan, site: &Site, year: i32, delta_t_s: f64) -> Vec<SunPathView> {
    let observer = Observer {
        latitude_deg: site.latitude_deg,
        longitude_deg: site.longitude_deg,
        elevation_m: site.elevation_m,
    };
    let atmosphere = Atmosphere {
        pressure_hpa: sun::pressure_from_elevation_hpa(site.elevation_m),
        temperature_c: 12.0,
    };
    // The 21st of December, January/November, February/October, March/September, April/August,
    // May/July, June: the year's paths without repeats.
    let days = [
        (12, "21 Dec"),
        (1, "21 Jan / Nov"),
        (2, "21 Feb / Oct"),
        (3, "21 Mar / Sep"),
        (4, "21 Apr / Aug"),
        (5, "21 May / Jul"),
        (6, "21 Jun"),
    ];
    let paths: Vec<(String, Vec<(f64, f64)>)> = days
        .iter()
        .map(|&(month, label)| {
            let midnight = LocalTime::from_civil(i64::from(year), month, 21)
                .to_utc(site.utc_offset_h)
                .0;
            let pts = (0..=288)
                .filter_map(|k| {
                    let p = sun::solar_position(
                        midnight + k as f64 * 300.0,
                        &observer,
                        &atmosphere,
                        delta_t_s,
                    );
                    (p.elevation_deg() > 0.0).then_some((p.azimuth_deg, p.elevation_deg()))
                })
                .collect();
            (label.to_string(), pts)
        })
        .collect();
    let mut views = Vec::new();
    for (gi, g) in plan.groups.iter().enumerate() {
        let placed: Vec<[f64; 3]> = plan
            .modules
            .iter()
            .enumerate()
            .filter(|(_, m)| m.group == gi)
            .filter_map(|(mi, _)| plan.geometry.placements.get(mi).copied().flatten())
            .map(|p| [p.centre_e_m, p.centre_n_m, p.centre_up_m])
            .collect();
        // Groups without a placement are seen from the site's origin, once.
        let any_placed = plan.geometry.placements.iter().any(Option::is_some);
        if placed.is_empty() && (any_placed || gi > 0) {
            continue;
        }
        let n = placed.len().max(1) as f64;
        let from = placed.iter().fold([0.0; 3], |a, p| {
            [a[0] + p[0] / n, a[1] + p[1] / n, a[2] + p[2] / n]
        });
        let first_module = plan.modules.iter().position(|m| m.group == gi).unwrap_or(0);
        let horizon = plan
            .horizon_ref(first_module, gi)
            .and_then(|h| plan.geometry_horizon(h))
            .map(|h| {
                (0..=72)
                    .map(|k| (k as f64 * 5.0, h.elevation_at(k as f64 * 5.0)))
                    .collect()
            })
            .unwrap_or_default();
        let obstacles = plan
            .geometry
            .obstacles
            .iter()
            .map(|(name, o)| {
                let corners: Vec<[f64; 3]> = match *o {
                    Obstacle::Pole {
                        base_e_m,
                        base_n_m,
                        radius_m,
                        height_m,
                    } => (0..8)
                        .flat_map(|k| {
                            let a = k as f64 * std::f64::consts::PI / 4.0;
                            let (e, n) =
                                (base_e_m + radius_m * a.sin(), base_n_m + radius_m * a.cos());
                            [[e, n, 0.0], [e, n, height_m]]
                        })
                        .collect(),
                    Obstacle::Box {
                        footprint,
                        base_m,
                        height_m,
                    } => footprint
                        .iter()
                        .flat_map(|&(e, n)| [[e, n, base_m], [e, n, base_m + height_m]])
                        .collect(),
                };
                let dirs = corners.into_iter().map(|c| direction(from, c)).collect();
                (name.clone(), hull(dirs))
            })
            .collect();
        views.push(SunPathView {
            group: g.id.clone(),
            days: paths.clone(),
            horizon,
            obstacles,
        });
    }
    views
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn directions_follow_the_compass() {
        // Source: geometry — azimuth clockwise from north, elevation from the horizontal.
        let (az, el) = direction([0.0; 3], [1.0, 0.0, 1.0]);
        assert!((az - 90.0).abs() < 1e-12 && (el - 45.0).abs() < 1e-12);
        let (az, _) = direction([0.0; 3], [0.0, -1.0, 0.0]);
        assert!((az - 180.0).abs() < 1e-12);
    }

    #[test]
    fn hull_of_a_square_with_an_inner_point() {
        // Source: geometry.
        let h = hull(vec![
            (0.0, 0.0),
            (1.0, 0.0),
            (1.0, 1.0),
            (0.0, 1.0),
            (0.5, 0.5),
        ]);
        assert_eq!(h.len(), 4);
    }
}
