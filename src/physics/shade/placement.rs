//! Module placements: one module rectangle in the site frame with its tilt, azimuth and
//! bypass-diode substrings, its prepared frame (unit axes, substring rectangles), the
//! rows × columns grid of a group, and the checks of its fields.
//!
//! Geometry of the modules alone: it deliberately knows no obstacles (`obstacles.rs`
//! checks that a module does not reach into one), no sun and no shadows (`shadow.rs`).

use super::geometry::{dot, finite, non_negative, positive};

/// Most bypass-diode substrings a module may declare.
pub const MAX_SUBSTRINGS: u32 = 32;

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
                "tilt_deg = {} is outside 0 to 90 (0 = horizontal, 90 = vertical)",
                self.tilt_deg
            ));
        }
        if !(0.0..=360.0).contains(&self.azimuth_deg) {
            return Err(format!(
                "azimuth_deg = {} is outside 0 to 360 (degrees clockwise from north, 180 = south)",
                self.azimuth_deg
            ));
        }
        positive("length_m", self.length_m)?;
        positive("width_m", self.width_m)?;
        if !(1..=MAX_SUBSTRINGS).contains(&self.substrings) {
            return Err(format!(
                "substrings = {} is outside 1 to {MAX_SUBSTRINGS}",
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
    pub(super) centre: [f64; 3],
    pub(super) u: [f64; 3],
    pub(super) v: [f64; 3],
    pub(super) n: [f64; 3],
    pub(super) half_width_m: f64,
    pub(super) half_length_m: f64,
    pub(super) substrings: usize,
    pub(super) strips_across_u: bool,
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
    pub(super) fn corners(&self) -> [[f64; 3]; 4] {
        let (hw, hl) = (self.half_width_m, self.half_length_m);
        [
            self.site_point(-hw, -hl),
            self.site_point(hw, -hl),
            self.site_point(hw, hl),
            self.site_point(-hw, hl),
        ]
    }

    /// Coordinates of a site point in the module frame, (u, v, distance in front).
    pub(super) fn module_coords(&self, p: [f64; 3]) -> [f64; 3] {
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::shade::obstacles::validate_scene;
    use crate::physics::shade::test_support::{assert_close, module};

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
}
