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
/// so this only fails if the file changed underneath). Read with the weather file's size
/// limit, the larger of the two input limits.
pub fn file_sha256(path: &std::path::Path) -> Option<String> {
    read_input_bytes(path, WEATHER_MAX_BYTES, "file")
        .ok()
        .map(|b| sha256_hex(&b))
}

/// Largest plan file read: 1 MiB. The demo plan is about 6 kB and a plan of 200 modules
/// with every key written out stays under 100 kB
/// (notebooks-free-docs/limits-and-file-safety.md).
pub const PLAN_MAX_BYTES: u64 = 1 << 20;

/// Largest weather file read (either format) and largest monthly-means file: 64 MiB. The
/// longest series accepted ([`crate::input::weather::MAX_INTERVALS`] rows of about 30–60
/// bytes) is about 16–32 MB; typical-year rows are longer (about 200 bytes, 8,760 rows: 2 MB).
pub const WEATHER_MAX_BYTES: u64 = 64 << 20;

/// Reads an input file of at most `limit` bytes as UTF-8 text. `what` names the kind of file
/// in messages ("plan", "weather file").
///
/// Refused before any byte is read: anything that is not a regular file (a named pipe, a
/// device such as `/dev/zero`, a folder, a socket) and a file larger than `limit`. The read
/// itself is capped at `limit` + 1 bytes, so a file that grows while it is read is refused
/// too. Invalid UTF-8 is reported with its line and byte offset.
///
/// # Errors
/// An [`std::io::Error`] whose message says what is wrong and what to do; callers wrap it in
/// their `Read` error with the file's name.
pub fn read_input_text(
    path: &std::path::Path,
    limit: u64,
    what: &str,
) -> Result<String, std::io::Error> {
    decode_input_text(read_input_bytes(path, limit, what)?, what)
}

/// The bytes of an input file as UTF-8 text; invalid UTF-8 is reported with its 1-based line
/// and byte offset. `what` names the kind of file in the message.
///
/// # Errors
/// An [`std::io::Error`] of kind `InvalidData`.
pub fn decode_input_text(bytes: Vec<u8>, what: &str) -> Result<String, std::io::Error> {
    String::from_utf8(bytes).map_err(|e| {
        let offset = e.utf8_error().valid_up_to();
        let bytes = e.as_bytes();
        let line = bytes[..offset].iter().filter(|&&b| b == b'\n').count() + 1;
        std::io::Error::new(
            std::io::ErrorKind::InvalidData,
            format!(
                "line {line} (byte {}) is not valid UTF-8; save the {what} as UTF-8 text",
                offset + 1
            ),
        )
    })
}

/// The bytes of [`read_input_text`], before the UTF-8 check.
fn read_input_bytes(
    path: &std::path::Path,
    limit: u64,
    what: &str,
) -> Result<Vec<u8>, std::io::Error> {
    use std::io::Read;
    let refuse = |message: String| std::io::Error::new(std::io::ErrorKind::InvalidInput, message);
    let too_large = |size: &str| {
        refuse(format!(
            "it is {size}, above the {} limit for a {what}; give a smaller file \
             (notebooks-free-docs/limits-and-file-safety.md)",
            byte_size(limit)
        ))
    };
    let meta = std::fs::metadata(path)?;
    if !meta.is_file() {
        return Err(refuse(format!(
            "it is {}, not a regular file; give the path of a saved {what}",
            file_kind(&meta.file_type())
        )));
    }
    if meta.len() > limit {
        return Err(too_large(&byte_size(meta.len())));
    }
    let file = std::fs::File::open(path)?;
    let mut bytes = Vec::with_capacity(meta.len() as usize);
    file.take(limit + 1).read_to_end(&mut bytes)?;
    if bytes.len() as u64 > limit {
        return Err(too_large(&format!("growing past {}", byte_size(limit))));
    }
    Ok(bytes)
}

/// A file size in words: bytes below 1 KiB, then KiB, MiB or GiB with one decimal at most.
fn byte_size(n: u64) -> String {
    const KIB: f64 = 1024.0;
    let x = n as f64;
    if n < 1024 {
        return format!("{n} {}", if n == 1 { "byte" } else { "bytes" });
    }
    let (v, unit) = if x < KIB * KIB {
        (x / KIB, "KiB")
    } else if x < KIB * KIB * KIB {
        (x / KIB / KIB, "MiB")
    } else {
        (x / KIB / KIB / KIB, "GiB")
    };
    format!("{} {unit}", crate::num::Num((v * 10.0).round() / 10.0))
}

/// What a path that is not a regular file is, in words.
fn file_kind(t: &std::fs::FileType) -> &'static str {
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if t.is_fifo() {
            return "a named pipe (FIFO)";
        }
        if t.is_char_device() {
            return "a character device (such as /dev/zero)";
        }
        if t.is_block_device() {
            return "a block device";
        }
        if t.is_socket() {
            return "a socket";
        }
    }
    if t.is_dir() {
        "a folder"
    } else {
        "not a regular file"
    }
}

/// Reads a weather-tool input (monthly means or a weather file) as text, with the weather
/// file's size limit.
///
/// # Errors
/// [`crate::error::WeatherError::Read`] naming the file.
pub fn read_weather_text(path: &std::path::Path) -> Result<String, crate::error::Error> {
    read_input_text(path, WEATHER_MAX_BYTES, "weather file").map_err(|source| {
        crate::error::Error::Weather(crate::error::WeatherError::Read {
            file: crate::text::escape_line(&path.display().to_string()).into_owned(),
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
