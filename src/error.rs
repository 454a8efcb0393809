//! Typed errors for the library, one enum per area, each carrying where the problem is.
//!
//! Every message is lower-case with no trailing period, names the file (as the user gave
//! it) and, where there is one, the 1-based line of the file (header lines included) and
//! the column or header key, and adds a hint when the fix is obvious. This module only
//! describes failures; it does not decide what is a failure (see `weather.rs` and
//! `io/weather_csv.rs`). Plan and output errors live elsewhere for now.

use thiserror::Error;

/// Everything that can be wrong with a weather file, from "cannot read it" to "this row's
/// irradiance is physically impossible".
///
/// `file` is the name as given by the user; `line` is the 1-based line number in that
/// file counting every line (the `#` header and the column-name line too), so that an
/// editor's "go to line" lands on the offending row.
#[derive(Debug, Error)]
pub enum WeatherError {
    /// The file could not be opened or read.
    #[error("cannot read {file}: {source}")]
    Read {
        file: String,
        #[source]
        source: std::io::Error,
    },

    /// Writing (or the final rename of) a weather file failed.
    #[error("cannot write {file}: {source}")]
    Write {
        file: String,
        #[source]
        source: std::io::Error,
    },

    /// Zero bytes, or nothing but whitespace.
    #[error("{file} is empty; a weather file starts with the line `# wirerank weather 1`")]
    Empty { file: String },

    /// The first line does not identify the format.
    #[error("{file} line {line}: expected `# wirerank weather 1` as the first line, found \"{found}\"{hint}")]
    NotWeatherFile {
        file: String,
        line: usize,
        found: String,
        hint: String,
    },

    /// The format line names a version this build does not read.
    #[error("{file} line {line}: weather format version \"{version}\" is not supported; this build reads version 1")]
    UnsupportedVersion {
        file: String,
        line: usize,
        version: String,
    },

    /// A `#` header line that is neither `key = value` nor a free comment.
    #[error("{file} line {line}: header line \"{text}\" is not `# key = value` (free comments start with `##`)")]
    HeaderSyntax {
        file: String,
        line: usize,
        text: String,
    },

    /// A header key this format does not define.
    #[error("{file} line {line}: unknown header key \"{key}\"; known keys: {known}")]
    UnknownHeaderKey {
        file: String,
        line: usize,
        key: String,
        known: String,
    },

    /// The same header key twice.
    #[error(
        "{file} line {line}: header key \"{key}\" is given again (first on line {first_line})"
    )]
    DuplicateHeaderKey {
        file: String,
        line: usize,
        key: String,
        first_line: usize,
    },

    /// A header value that does not parse or is outside its range.
    #[error("{file} line {line}: {key} = \"{value}\" {reason}")]
    BadHeaderValue {
        file: String,
        line: usize,
        key: String,
        value: String,
        reason: String,
    },

    /// A header key that must be present is not; never guessed.
    #[error("{file}: header key \"{key}\" is missing; {hint}")]
    MissingHeaderKey {
        file: String,
        key: String,
        hint: String,
    },

    /// A `#` line after the column names.
    #[error("{file} line {line}: `#` lines must come before the column names")]
    HeaderAfterColumns { file: String, line: usize },

    /// The header block is there but no line of column names follows it.
    #[error("{file}: no line of column names after the header; expected e.g. \"time_local,ghi_w_m2,air_temp_c\"")]
    NoColumnNames { file: String },

    /// A column name this format does not define.
    #[error("{file} line {line}: unknown column \"{column}\" (column {position}); known columns: {known}")]
    UnknownColumn {
        file: String,
        line: usize,
        column: String,
        position: usize,
        known: String,
    },

    /// The same column name twice.
    #[error("{file} line {line}: column \"{column}\" appears twice")]
    DuplicateColumn {
        file: String,
        line: usize,
        column: String,
    },

    /// A required column is not in the column names.
    #[error("{file} line {line}: required column \"{column}\" is missing")]
    MissingColumn {
        file: String,
        line: usize,
        column: String,
    },

    /// Direct normal and diffuse horizontal must come together (or not at all).
    #[error("{file} line {line}: {present} is given without {missing}; give both columns (with values) or neither")]
    UnpairedBeamDiffuse {
        file: String,
        line: usize,
        present: String,
        missing: String,
    },

    /// A data line with more or fewer fields than the column names.
    #[error("{file} line {line}: {found} fields, expected {expected} (one per column name)")]
    FieldCount {
        file: String,
        line: usize,
        found: usize,
        expected: usize,
    },

    /// Column names but no data rows.
    #[error("{file}: no data rows after the column names")]
    NoData { file: String },

    /// A cell that must hold a value is empty.
    #[error("{file} line {line}: {column} is empty{hint}")]
    EmptyCell {
        file: String,
        line: usize,
        column: String,
        hint: String,
    },

    /// A cell that should hold a number does not.
    #[error("{file} line {line}: {column} = \"{value}\" is not a number")]
    NotANumber {
        file: String,
        line: usize,
        column: String,
        value: String,
    },

    /// NaN or infinity written into the file.
    #[error("{file} line {line}: {column} = \"{value}\" is not a finite number; write an actual value or fill the gap")]
    NotFinite {
        file: String,
        line: usize,
        column: String,
        value: String,
    },

    /// A value outside its physically plausible range.
    #[error("{file} line {line}: {column} = {} is outside {range}{hint}", crate::num::typed(.value))]
    OutOfRange {
        file: String,
        line: usize,
        column: String,
        value: f64,
        range: String,
        hint: String,
    },

    /// Irradiance below the clamping tolerance.
    #[error("{file} line {line}: {column} = {value} is negative beyond the {tolerance_w_m2} W/m² night-time sensor offset that is clamped to 0")]
    NegativeIrradiance {
        file: String,
        line: usize,
        column: String,
        value: f64,
        tolerance_w_m2: f64,
    },

    /// Diffuse above global beyond the clamping tolerance.
    #[error("{file} line {line}: dhi_w_m2 = {dhi_w_m2} is above ghi_w_m2 = {ghi_w_m2} by more than {tolerance_w_m2} W/m²; diffuse cannot exceed global (are the columns swapped?)")]
    DiffuseAboveGlobal {
        file: String,
        line: usize,
        dhi_w_m2: f64,
        ghi_w_m2: f64,
        tolerance_w_m2: f64,
    },

    /// A time stamp that does not parse.
    #[error("{file} line {line}: time_local = \"{value}\" is not a time like 2025-01-01T00:00 (local standard time, optional :SS)")]
    BadStamp {
        file: String,
        line: usize,
        value: String,
    },

    /// A time stamp that is not a whole multiple of the interval from midnight.
    #[error("{file} line {line}: time_local = {value} is not on the {interval_min}-minute grid (stamps must fall on multiples of interval_min after midnight)")]
    OffGrid {
        file: String,
        line: usize,
        value: String,
        interval_min: i64,
    },

    /// The same time stamp twice.
    #[error("{file} line {line}: time_local = {value} repeats line {first_line}")]
    DuplicateStamp {
        file: String,
        line: usize,
        value: String,
        first_line: usize,
    },

    /// A stamp earlier than the one before it.
    #[error("{file} line {line}: time_local = {value} comes before {previous} on line {previous_line}; rows must be in time order")]
    OutOfOrder {
        file: String,
        line: usize,
        value: String,
        previous: String,
        previous_line: usize,
    },

    /// Too many consecutive intervals missing to repair.
    #[error("{file} line {line}: {missing} intervals are missing between {previous} and {value} (at most {max_fill} are filled automatically); supply the missing rows")]
    Gap {
        file: String,
        line: usize,
        value: String,
        previous: String,
        missing: i64,
        max_fill: i64,
    },

    /// GHI that the sun cannot deliver at that time and place.
    #[error("{file} line {line}: ghi_w_m2 = {ghi_w_m2} at {stamp} is above 1.5 × extraterrestrial horizontal irradiance ({limit_w_m2:.1} W/m² allowed); check latitude, longitude, utc_offset_h and the stamp convention (start/end)")]
    AboveExtraterrestrial {
        file: String,
        line: usize,
        stamp: String,
        ghi_w_m2: f64,
        limit_w_m2: f64,
    },

    /// An interval length this crate does not accept (see `weather::check_interval_min`).
    #[error("{file}: interval of {interval_s} s is not supported; interval_min must divide 60 (1, 2, 3, 4, 5, 6, 10, 12, 15, 20, 30 or 60)")]
    BadInterval { file: String, interval_s: i64 },

    /// Site values handed to a check are outside their ranges.
    #[error("{file}: {what} = {value} is outside {range}")]
    BadSite {
        file: String,
        what: String,
        value: f64,
        range: String,
    },

    /// More intervals than a run accepts (`input::weather::MAX_INTERVALS`).
    #[error("{file}: {count} intervals is above the limit of {max}; use a longer interval_min (10, 15, 30 or 60 minutes) or a shorter period (notebooks-free-docs/limits-and-file-safety.md)")]
    TooManyIntervals {
        file: String,
        count: usize,
        max: usize,
    },

    /// A control character (other than tab) in a text input file.
    #[error("{file} line {line}: column {column} holds the control character U+{code:04X}; a weather file is plain text")]
    ControlCharacter {
        file: String,
        line: usize,
        column: usize,
        code: u32,
    },

    /// polars refused the file in a way the line-by-line checks did not foresee.
    #[error("{file}: the csv reader failed: {message}")]
    Csv { file: String, message: String },
}

/// Everything that can be wrong with a plan file.
#[derive(Debug, Error)]
pub enum PlanError {
    /// The file could not be opened or read.
    #[error("cannot read plan {path}: {source}")]
    Read {
        path: String,
        #[source]
        source: std::io::Error,
    },
    /// Not valid TOML, an unknown key, or a value of the wrong type.
    #[error("{file}:{line}:{column} {message}")]
    Syntax {
        file: String,
        line: usize,
        column: usize,
        message: String,
    },
    /// A value out of range or inconsistent with another.
    #[error("{file}:{line}:{column} {message}")]
    Invalid {
        file: String,
        line: usize,
        column: usize,
        key: String,
        message: String,
    },
    /// A required table is absent.
    #[error("{file}: [{key}] is missing; {hint}")]
    Missing {
        file: String,
        key: String,
        hint: String,
    },
}

/// Any failure of a command, by area.
#[derive(Debug, Error)]
pub enum Error {
    #[error(transparent)]
    Plan(#[from] PlanError),
    #[error(transparent)]
    Weather(#[from] WeatherError),
    #[error(transparent)]
    Site(#[from] SiteError),
    /// Bad command-line values.
    #[error("{0}")]
    Usage(String),
    /// An output file or folder that cannot be written.
    #[error("cannot write {path}: {source}")]
    Output {
        path: String,
        #[source]
        source: std::io::Error,
    },
}

/// " line N" when the line is known.
fn line_note(line: &Option<usize>) -> String {
    line.map_or(String::new(), |l| format!(" line {l}"))
}

/// Why the plan and the weather file do not give one site.
#[derive(Debug, thiserror::Error)]
pub enum SiteError {
    #[error("site.{key} is missing: give it in the plan's [site] table or as `# {key} = ...` in the weather file {weather}")]
    Missing { key: &'static str, weather: String },
    #[error("site.{key} conflicts: the plan {plan}{} says {plan_value} but the weather file {weather}{} says {weather_value}; make them agree or remove one", line_note(.plan_line), line_note(.weather_line))]
    Conflict {
        key: &'static str,
        plan_value: f64,
        plan: String,
        plan_line: Option<usize>,
        weather_value: f64,
        weather: String,
        weather_line: Option<usize>,
    },
}
