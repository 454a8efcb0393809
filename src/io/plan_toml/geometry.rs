//! The scene: horizons (site, group, module), where each group's modules sit (centre, rows,
//! columns, gaps) and the obstacles that may shade them, checked as a whole.
//!
//! Shadows themselves are computed in `physics::shade`; the scheduled `[[shade]]` rules are
//! in `shade.rs`.

use crate::error::PlanError;
use crate::input::plan::{Geometry, Group, Module, ModuleType};
use crate::physics::shade::{HorizonProfile, ModulePlacement, Obstacle};

use crate::num::{Num, Typed};

use super::ctx::Ctx;
use super::raw::{RawGroup, RawModuleHorizon, RawObstacle, RawPlan, S};

/// East and north positions (group centres, obstacle bases and corners) lie within this
/// distance of the plan's origin, m: a small array and what shades it fit in a square
/// kilometre; a larger number is a typing slip.
pub(super) const SCENE_EXTENT_M: f64 = 1000.0;
/// Heights above the plan's origin (a group centre's up_m, an obstacle's base_m), m.
pub(super) const SCENE_UP_RANGE_M: (f64, f64) = (-100.0, 500.0);
/// Tallest obstacle, m (above its base).
pub(super) const OBSTACLE_MAX_HEIGHT_M: f64 = 500.0;
/// Widest pole radius, m.
pub(super) const POLE_MAX_RADIUS_M: f64 = 50.0;

fn horizon(ctx: &Ctx, v: &S<Vec<Vec<f64>>>, key: &str) -> Result<HorizonProfile, PlanError> {
    let mut pts = Vec::new();
    for (n, p) in v.get_ref().iter().enumerate() {
        if p.len() != 2 {
            return Err(ctx.err(
                v.span(),
                key,
                format!(
                    "{key} point {} has {} numbers; write [azimuth_deg, elevation_deg]",
                    n + 1,
                    p.len()
                ),
            ));
        }
        pts.push((p[0], p[1]));
    }
    HorizonProfile::new(&pts).map_err(|e| ctx.err(v.span(), key, format!("{key}: {e}")))
}

pub(super) fn validate_geometry(
    ctx: &Ctx,
    raw: &RawPlan,
    groups: &[Group],
    modules: &[Module],
    types: &[ModuleType],
) -> Result<Geometry, PlanError> {
    let site_horizon = raw
        .site
        .as_ref()
        .and_then(|s| s.horizon.as_ref())
        .map(|h| horizon(ctx, h, "site.horizon"))
        .transpose()?;
    let GroupGeometry {
        group_horizon,
        placements,
    } = group_geometry(ctx, raw, groups, modules, types)?;
    let module_horizon = module_horizons(ctx, &raw.module_horizon, modules)?;
    let mut obstacles = Vec::new();
    for (k, o) in raw.obstacle.iter().enumerate() {
        obstacles.push(validate_obstacle(ctx, k, o)?);
    }
    if !obstacles.is_empty() {
        check_scene(ctx, raw, &placements, modules, &obstacles)?;
    }
    Ok(Geometry {
        site_horizon,
        group_horizon,
        module_horizon,
        placements,
        obstacles,
    })
}

/// Each group's horizon, and where each module sits.
struct GroupGeometry {
    /// By group.
    group_horizon: Vec<Option<HorizonProfile>>,
    /// By module; `None` for the modules of groups that give no `centre_m`.
    placements: Vec<Option<ModulePlacement>>,
}

/// The groups' horizons and placements, group by group in order, each one's horizon
/// checked before its placement.
fn group_geometry(
    ctx: &Ctx,
    raw: &RawPlan,
    groups: &[Group],
    modules: &[Module],
    types: &[ModuleType],
) -> Result<GroupGeometry, PlanError> {
    let mut group_horizon = Vec::new();
    let mut placements: Vec<Option<ModulePlacement>> = vec![None; modules.len()];
    for (gi, (id, g)) in raw.group.iter().enumerate() {
        group_horizon.push(
            g.get_ref()
                .horizon
                .as_ref()
                .map(|h| horizon(ctx, h, &format!("group.{id}.horizon")))
                .transpose()?,
        );
        let group = &groups[gi];
        let Some(grid) = group_grid(ctx, id, g, group, &types[group.module_type])? else {
            continue;
        };
        let mut n = 0;
        for (mi, m) in modules.iter().enumerate() {
            if m.group == gi {
                placements[mi] = grid.get(n).copied();
                n += 1;
            }
        }
    }
    Ok(GroupGeometry {
        group_horizon,
        placements,
    })
}

/// Where a group's modules sit: a grid of `rows` × `columns` around `centre_m`, in the
/// group's orientation, portrait unless `landscape`. `None` when the group gives no
/// `centre_m` (then rows and columns are errors).
fn group_grid(
    ctx: &Ctx,
    id: &str,
    g: &S<RawGroup>,
    group: &Group,
    t: &ModuleType,
) -> Result<Option<Vec<ModulePlacement>>, PlanError> {
    let r = g.get_ref();
    let k = |name: &str| format!("group.{id}.{name}");
    let Some(centre) = &r.centre_m else {
        for (v, name) in [(&r.rows, "rows"), (&r.columns, "columns")] {
            if let Some(v) = v {
                return Err(ctx.err(
                    v.span(),
                    &k(name),
                    format!("{} needs {} (where the group sits)", k(name), k("centre_m")),
                ));
            }
        }
        return Ok(None);
    };
    let c = centre.get_ref();
    if c.len() != 3 || c.iter().any(|x| !x.is_finite()) {
        return Err(ctx.err(
            centre.span(),
            &k("centre_m"),
            format!(
                "{} must be [east_m, north_m, up_m], three finite numbers",
                k("centre_m")
            ),
        ));
    }
    let (up_lo, up_hi) = SCENE_UP_RANGE_M;
    for (x, what, lo, hi) in [
        (c[0], "east_m", -SCENE_EXTENT_M, SCENE_EXTENT_M),
        (c[1], "north_m", -SCENE_EXTENT_M, SCENE_EXTENT_M),
        (c[2], "up_m", up_lo, up_hi),
    ] {
        if !(lo..=hi).contains(&x) {
            return Err(ctx.err(
                centre.span(),
                &k("centre_m"),
                format!(
                    "{}: {what} = {} is outside {} to {} m",
                    k("centre_m"),
                    Typed(x),
                    Num(lo),
                    Num(hi)
                ),
            ));
        }
    }
    let (rows, columns) = grid_size(ctx, id, r, group, centre)?;
    let (length_m, width_m) = if r.landscape.unwrap_or(false) {
        (t.width_m.min(t.length_m), t.width_m.max(t.length_m))
    } else {
        (t.width_m.max(t.length_m), t.width_m.min(t.length_m))
    };
    let template = ModulePlacement {
        centre_e_m: c[0],
        centre_n_m: c[1],
        centre_up_m: c[2],
        tilt_deg: group.tilt_deg,
        azimuth_deg: group.azimuth_deg,
        length_m,
        width_m,
        substrings: t.bypass_diodes,
        substrings_along_long_side: r.substrings_along_long_side.unwrap_or(true),
    };
    let row_gap = ctx.opt_range(&r.row_gap_m, &k("row_gap_m"), 0.0, 50.0, 0.02)?;
    let column_gap = ctx.opt_range(&r.column_gap_m, &k("column_gap_m"), 0.0, 50.0, 0.02)?;
    let grid = crate::physics::shade::layout_grid(&template, rows, columns, row_gap, column_gap)
        .map_err(|e| {
            ctx.err(
                centre.span(),
                &format!("group.{id}"),
                format!("group.{id}: {e}"),
            )
        })?;
    Ok(Some(grid))
}

/// `rows` (default 1) and `columns` (default the group's count); they must place exactly
/// the group's modules.
fn grid_size(
    ctx: &Ctx,
    id: &str,
    r: &RawGroup,
    group: &Group,
    centre: &S<Vec<f64>>,
) -> Result<(u32, u32), PlanError> {
    let k = |name: &str| format!("group.{id}.{name}");
    let rows = r
        .rows
        .as_ref()
        .map(|v| ctx.int_range(v, &k("rows"), 1, 200))
        .transpose()?
        .unwrap_or(1) as u32;
    let columns = r
        .columns
        .as_ref()
        .map(|v| ctx.int_range(v, &k("columns"), 1, 200))
        .transpose()?
        .unwrap_or(group.count as i64) as u32;
    if (rows * columns) as usize != group.count {
        let span = r
            .rows
            .as_ref()
            .or(r.columns.as_ref())
            .map_or(centre.span(), |v| v.span());
        return Err(ctx.err(
            span,
            &k("rows"),
            format!(
                "{} × {} = {} places, but the group has count = {}",
                k("rows"),
                k("columns"),
                rows * columns,
                group.count
            ),
        ));
    }
    Ok((rows, columns))
}

/// `[[module_horizon]]`: a horizon for one named module (indexed by module; a later table
/// for the same module replaces an earlier one).
fn module_horizons(
    ctx: &Ctx,
    raw: &[S<RawModuleHorizon>],
    modules: &[Module],
) -> Result<Vec<Option<HorizonProfile>>, PlanError> {
    let mut module_horizon: Vec<Option<HorizonProfile>> = vec![None; modules.len()];
    for (k, mh) in raw.iter().enumerate() {
        let r = mh.get_ref();
        let key = format!("module_horizon[{}]", k + 1);
        let m = modules
            .iter()
            .position(|m| &m.id == r.module.get_ref())
            .ok_or_else(|| {
                ctx.err(
                    r.module.span(),
                    &format!("{key}.module"),
                    format!(
                        "{key}.module = {:?} names no module (ids are <group>-<n>)",
                        r.module.get_ref()
                    ),
                )
            })?;
        module_horizon[m] = Some(horizon(ctx, &r.points, &format!("{key}.points"))?);
    }
    Ok(module_horizon)
}

/// One `[[obstacle]]` (the `k`-th, from 0): a pole or a box, checked on its own, with its
/// name (given, or its kind and number).
fn validate_obstacle(
    ctx: &Ctx,
    k: usize,
    o: &S<RawObstacle>,
) -> Result<(String, Obstacle), PlanError> {
    let r = o.get_ref();
    let key = |name: &str| format!("obstacle[{}].{name}", k + 1);
    let need = |v: &Option<S<f64>>, name: &str, lo: f64, hi: f64| -> Result<f64, PlanError> {
        match v {
            Some(v) if name == "radius_m" => ctx.above(v, &key(name), lo, hi),
            Some(v) => ctx.range(v, &key(name), lo, hi),
            None => Err(ctx.err(
                o.span(),
                &key(name),
                format!("{} is missing for kind = {:?}", key(name), r.kind.get_ref()),
            )),
        }
    };
    // A key of the other kind is refused: it would be silently ignored otherwise.
    let not_for = |v: Option<std::ops::Range<usize>>, name: &str, kind: &str, hint: &str| {
        v.map_or(Ok(()), |span| {
            Err(ctx.err(
                span,
                &key(name),
                format!(
                    "{} is not a key of kind = \"{kind}\" obstacles ({hint}); remove it or change the kind",
                    key(name)
                ),
            ))
        })
    };
    let obstacle = match r.kind.get_ref().as_str() {
        "pole" => {
            let hint = "a pole takes east_m, north_m, radius_m and height_m";
            not_for(
                r.footprint_m.as_ref().map(S::span),
                "footprint_m",
                "pole",
                hint,
            )?;
            not_for(r.base_m.as_ref().map(S::span), "base_m", "pole", hint)?;
            Obstacle::Pole {
                base_e_m: need(&r.east_m, "east_m", -SCENE_EXTENT_M, SCENE_EXTENT_M)?,
                base_n_m: need(&r.north_m, "north_m", -SCENE_EXTENT_M, SCENE_EXTENT_M)?,
                radius_m: need(&r.radius_m, "radius_m", 0.0, POLE_MAX_RADIUS_M)?,
                height_m: ctx.above(&r.height_m, &key("height_m"), 0.0, OBSTACLE_MAX_HEIGHT_M)?,
            }
        }
        "box" => {
            let hint = "a box takes footprint_m, base_m and height_m";
            not_for(r.east_m.as_ref().map(S::span), "east_m", "box", hint)?;
            not_for(r.north_m.as_ref().map(S::span), "north_m", "box", hint)?;
            not_for(r.radius_m.as_ref().map(S::span), "radius_m", "box", hint)?;
            box_obstacle(ctx, k, o)?
        }
        other => {
            return Err(ctx.err(
                r.kind.span(),
                &key("kind"),
                format!(
                    "{} = {other:?} is not known; use \"pole\" or \"box\"",
                    key("kind")
                ),
            ));
        }
    };
    obstacle.validate().map_err(|e| {
        ctx.err(
            o.span(),
            &format!("obstacle[{}]", k + 1),
            format!("obstacle[{}]: {e}", k + 1),
        )
    })?;
    let name = r
        .name
        .clone()
        .unwrap_or_else(|| format!("{} {}", obstacle.kind(), k + 1));
    Ok((name, obstacle))
}

/// `kind = "box"`: four footprint corners, a base height (default 0) and a height.
fn box_obstacle(ctx: &Ctx, k: usize, o: &S<RawObstacle>) -> Result<Obstacle, PlanError> {
    let r = o.get_ref();
    let key = |name: &str| format!("obstacle[{}].{name}", k + 1);
    let Some(fp) = &r.footprint_m else {
        return Err(ctx.err(
            o.span(),
            &key("footprint_m"),
            format!(
                "{} is missing for kind = \"box\" (four [east_m, north_m] corners)",
                key("footprint_m")
            ),
        ));
    };
    let pts = fp.get_ref();
    if pts.len() != 4 || pts.iter().any(|p| p.len() != 2) {
        return Err(ctx.err(
            fp.span(),
            &key("footprint_m"),
            format!(
                "{} must be four [east_m, north_m] corners",
                key("footprint_m")
            ),
        ));
    }
    for (i, p) in pts.iter().enumerate() {
        if p.iter()
            .any(|x| !(-SCENE_EXTENT_M..=SCENE_EXTENT_M).contains(x))
        {
            return Err(ctx.err(
                fp.span(),
                &key("footprint_m"),
                format!(
                    "{} corner {} = [{}, {}] is outside -{e} to {e} m east and north",
                    key("footprint_m"),
                    i + 1,
                    Typed(p[0]),
                    Typed(p[1]),
                    e = Num(SCENE_EXTENT_M)
                ),
            ));
        }
    }
    let (up_lo, up_hi) = SCENE_UP_RANGE_M;
    Ok(Obstacle::Box {
        footprint: [
            (pts[0][0], pts[0][1]),
            (pts[1][0], pts[1][1]),
            (pts[2][0], pts[2][1]),
            (pts[3][0], pts[3][1]),
        ],
        base_m: ctx.opt_range(&r.base_m, &key("base_m"), up_lo, up_hi, 0.0)?,
        height_m: ctx.above(&r.height_m, &key("height_m"), 0.0, OBSTACLE_MAX_HEIGHT_M)?,
    })
}

/// Obstacles need placed modules; the placed modules and the obstacles are then checked
/// together (each valid, no module reaching into an obstacle), with the scene's indices turned back into ids and names.
fn check_scene(
    ctx: &Ctx,
    raw: &RawPlan,
    placements: &[Option<ModulePlacement>],
    modules: &[Module],
    obstacles: &[(String, Obstacle)],
) -> Result<(), PlanError> {
    if placements.iter().all(Option::is_none) {
        return Err(PlanError::Missing {
            file: ctx.file.clone(),
            key: "group.<name>.centre_m".into(),
            hint: "obstacles need to know where the modules are: give centre_m (and rows/columns) for the groups they may shade".into(),
        });
    }
    let placed: Vec<(usize, ModulePlacement)> = placements
        .iter()
        .enumerate()
        .filter_map(|(i, p)| p.map(|p| (i, p)))
        .collect();
    let just: Vec<ModulePlacement> = placed.iter().map(|(_, p)| *p).collect();
    let obs: Vec<Obstacle> = obstacles.iter().map(|(_, o)| *o).collect();
    crate::physics::shade::validate_scene(&just, &obs).map_err(|e| {
        ctx.err(
            raw.obstacle[0].span(),
            "obstacle",
            rename_scene_error(&e, &placed, modules, obstacles),
        )
    })
}

/// Turns `modules[i]`/`obstacles[j]` in a scene message into module ids and obstacle names.
pub(super) fn rename_scene_error(
    e: &str,
    placed: &[(usize, ModulePlacement)],
    modules: &[Module],
    obstacles: &[(String, Obstacle)],
) -> String {
    let mut s = e.to_string();
    for (i, (mi, _)) in placed.iter().enumerate().rev() {
        s = s.replace(
            &format!("modules[{i}]"),
            &format!("module {}", modules[*mi].id),
        );
    }
    for (j, (name, _)) in obstacles.iter().enumerate().rev() {
        s = s.replace(&format!("obstacles[{j}]"), &format!("obstacle {name:?}"));
    }
    s
}
