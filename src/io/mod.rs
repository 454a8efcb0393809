//! The only code that reads or writes files.
//!
//! Each submodule owns one file format and turns it into (or out of) the validated types
//! of the library. Nothing here simulates anything; nothing outside here opens a file.

pub mod atomic;
pub mod cleanup;
pub mod colour;
pub mod diagram;
pub mod export;
pub mod json;
pub mod monthly_toml;
pub mod outset;
pub mod plan_toml;
pub mod plots;
pub mod report_html;
pub mod report_pdf;
pub mod terminal;
pub mod typical_year;
pub mod weather_csv;
pub mod weather_plot;

/// SHA-256 of some bytes, lower-case hex (provenance records).
pub fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::{Digest, Sha256};
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// SHA-256 of a file's bytes, or `None` when it cannot be read (the run has already read it,
/// so this only fails if the file changed underneath).
pub fn file_sha256(path: &std::path::Path) -> Option<String> {
    std::fs::read(path).ok().map(|b| sha256_hex(&b))
}

/// Reads a weather-tool input (monthly means or a weather file) as text.
///
/// # Errors
/// [`crate::error::WeatherError::Read`] naming the file.
pub fn read_weather_text(path: &std::path::Path) -> Result<String, crate::error::Error> {
    std::fs::read_to_string(path).map_err(|source| {
        crate::error::Error::Weather(crate::error::WeatherError::Read {
            file: path.display().to_string(),
            source,
        })
    })
}

/// Creates a folder (and its parents) for a command's outputs.
///
/// # Errors
/// [`crate::error::Error::Output`] naming the folder.
pub fn create_output_dir(dir: &std::path::Path) -> Result<(), crate::error::Error> {
    std::fs::create_dir_all(dir).map_err(|source| crate::error::Error::Output {
        path: dir.display().to_string(),
        source,
    })
}

/// A TOML reader's message in a person's words: Rust type names become what they mean
/// (`expected f64` → `expected a number`), without the trailing period.
pub fn plain_toml_message(message: &str) -> String {
    let mut m = message.trim().trim_end_matches('.').to_string();
    for (rust, words) in [
        ("expected f64", "expected a number"),
        ("expected f32", "expected a number"),
        ("expected u32", "expected a whole number"),
        ("expected u64", "expected a whole number"),
        ("expected usize", "expected a whole number"),
        ("expected i32", "expected a whole number"),
        ("expected i64", "expected a whole number"),
        ("expected u8", "expected a whole number"),
        ("expected a boolean", "expected true or false"),
        ("expected a sequence", "expected a list in [ ]"),
    ] {
        m = m.replace(rust, words);
    }
    m
}
