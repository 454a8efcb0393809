//! The scene: horizons (site, group, module), where each group's modules sit (centre, rows,
//! columns, gaps) and the obstacles that may shade them, checked as a whole.
//!
//! Shadows themselves are computed in `physics::shade`; the scheduled `[[shade]]` rules are
//! in `shade.rs`.

use crate::error::PlanError;
use crate::input::plan::{Geometry, Group, Module, ModuleType};
use crate::physics::shade::{HorizonProfile, ModulePlacement, Obstacle};

use super::ctx::Ctx;
use super::raw::{RawGroup, RawModuleHorizon, RawObstacle, RawPlan, S};

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
    let need = |v: &Option<S<f64>>, name: &str| -> Result<f64, PlanError> {
        match v {
            Some(v) if v.get_ref().is_finite() => Ok(*v.get_ref()),
            Some(v) => Err(ctx.err(
                v.span(),
                &key(name),
                format!("{} = {} is not a finite number", key(name), v.get_ref()),
            )),
            None => Err(ctx.err(
                o.span(),
                &key(name),
                format!("{} is missing for kind = {:?}", key(name), r.kind.get_ref()),
            )),
        }
    };
    let obstacle = match r.kind.get_ref().as_str() {
        "pole" => Obstacle::Pole {
            base_e_m: need(&r.east_m, "east_m")?,
            base_n_m: need(&r.north_m, "north_m")?,
            radius_m: need(&r.radius_m, "radius_m")?,
            height_m: *r.height_m.get_ref(),
        },
        "box" => box_obstacle(ctx, k, o)?,
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
    Ok(Obstacle::Box {
        footprint: [
            (pts[0][0], pts[0][1]),
            (pts[1][0], pts[1][1]),
            (pts[2][0], pts[2][1]),
            (pts[3][0], pts[3][1]),
        ],
        base_m: r.base_m.as_ref().map_or(0.0, |v| *v.get_ref()),
        height_m: *r.height_m.get_ref(),
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
