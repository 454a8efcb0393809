//! Pure physics: no file I/O, no polars, no clap, no plotters, no serde.
pub mod controller;
pub mod diode;
pub mod shade;
pub mod sky;
pub mod sun;
pub mod thermal;
pub mod wiring;
