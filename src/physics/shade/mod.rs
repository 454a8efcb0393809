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
//!
//! One idea per file; everything public is re-exported here, so callers name
//! `physics::shade::X` and never a file:
//! - `horizon.rs` — [`HorizonProfile`];
//! - `sky_view.rs` — the sky-dome integrals behind [`sky_view_frac`] and [`sky_view_ratio`];
//! - `placement.rs` — [`ModulePlacement`], its prepared frame and [`layout_grid`];
//! - `obstacles.rs` — [`Obstacle`], its prism and [`validate_scene`];
//! - `shadow.rs` — [`shaded_fractions`] and [`shadow_polygon`] (beam);
//! - `obstacle_sky.rs` — [`obstacle_sky_view_loss`] (sky diffuse);
//! - `apply.rs` — [`shade_poa`];
//! - `polygon.rs` and `geometry.rs` — the convex polygon and the small arithmetic the
//!   others share.

mod apply;
mod geometry;
mod horizon;
mod obstacle_sky;
mod obstacles;
mod placement;
mod polygon;
mod shadow;
mod sky_view;

pub use apply::shade_poa;
pub use horizon::{HorizonProfile, HORIZON_MIN_ELEVATION_DEG};
pub use obstacle_sky::{obstacle_sky_view_loss, SkyViewLoss};
pub use obstacles::{validate_scene, Obstacle, PreparedObstacle, POLE_SIDES};
pub use placement::{layout_grid, ModulePlacement, PreparedModule, MAX_SUBSTRINGS};
pub use shadow::{
    shaded_fractions, shaded_fractions_prepared, shadow_polygon, SunDirection, STACK_SHADOWS,
};
pub use sky_view::{sky_view_frac, sky_view_ratio};

#[cfg(test)]
mod test_support;
