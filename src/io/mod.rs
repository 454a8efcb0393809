//! The only code that reads or writes files.
//!
//! Each submodule owns one file format and turns it into (or out of) the validated types
//! of the library. Nothing here simulates anything; nothing outside here opens a file.

pub mod json;
pub mod plan_toml;
pub mod weather_csv;
