//! Pure physics: no file I/O, no polars, no clap, no plotters, no serde.
pub mod sun;
pub mod sky;
pub mod thermal;
pub mod diode;
pub mod wiring;
pub mod controller;
