//! Simulation: phase 1 ([`conditions`]: sun, sky, incidence, soiling, cell temperature per
//! interval and orientation group, once per run), the curves shared by every layout in an
//! interval ([`curves`]), and the per-layout year loop ([`year`]: strings, cables,
//! controller, battery) that fills a layout's [`energy`].

pub mod conditions;
pub mod curves;
pub mod energy;
pub mod year;
