//! `report.pdf`: the HTML report printed to PDF by a headless Chromium, when one is
//! installed (`rank --out DIR --pdf`).
//!
//! wirerank ships no browser. It looks for one in this order: the program named by the
//! `WIRERANK_CHROMIUM` environment variable, then `chromium` and `chromium-browser` on the
//! `PATH`. The browser runs with a fresh, empty profile folder (removed afterwards), with
//! networking, updates and sync switched off, and prints the page that is already written
//! beside the other files. The PDF is written under a temporary name and renamed into
//! place, like every other output.

use std::ffi::OsString;
use std::fs;
use std::io;
use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::{SystemTime, UNIX_EPOCH};

/// The PDF's file name in the `--out` folder.
pub const REPORT_PDF: &str = "report.pdf";
/// The environment variable that names the browser to use.
pub const CHROMIUM_ENV: &str = "WIRERANK_CHROMIUM";
/// The program names looked for on the `PATH`, in order.
pub const CHROMIUM_NAMES: [&str; 2] = ["chromium", "chromium-browser"];

/// The flags every headless run gets: no sandbox (it needs privileges a container often
/// lacks; the page is our own, with no script), no GPU, and nothing that reaches the
/// network.
pub const HEADLESS_FLAGS: [&str; 10] = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--hide-scrollbars",
    // Every host name fails to resolve: nothing the browser tries on its own leaves the
    // machine (the page itself asks for nothing).
    "--host-resolver-rules=MAP * ~NOTFOUND",
];

/// The browser to use: `WIRERANK_CHROMIUM` when set, else the first of
/// [`CHROMIUM_NAMES`] found on the `PATH`.
///
/// # Errors
/// A message naming where it looked when no browser is found, or when
/// `WIRERANK_CHROMIUM` names a file that does not exist.
pub fn find_chromium() -> Result<PathBuf, String> {
    if let Some(v) = std::env::var_os(CHROMIUM_ENV).filter(|v| !v.is_empty()) {
        let p = PathBuf::from(&v);
        return match on_path(&v) {
            Some(found) => Ok(found),
            None if p.is_file() => Ok(p),
            None => Err(format!(
                "{CHROMIUM_ENV} names {}, which is not a file",
                p.display()
            )),
        };
    }
    CHROMIUM_NAMES
        .iter()
        .find_map(|n| on_path(&OsString::from(n)))
        .ok_or_else(|| {
            format!(
                "no headless browser found: neither {} is on the PATH and {CHROMIUM_ENV} is not set (Debian and Ubuntu: apt-get install chromium)",
                CHROMIUM_NAMES.join(" nor ")
            )
        })
}

/// `name` when it is a path to a file, or the first file of that name in a `PATH` folder.
fn on_path(name: &OsString) -> Option<PathBuf> {
    let p = Path::new(name);
    if p.components().count() > 1 {
        return p.is_file().then(|| p.to_path_buf());
    }
    let path = std::env::var_os("PATH")?;
    std::env::split_paths(&path)
        .map(|d| d.join(name))
        .find(|c| c.is_file())
}

/// A fresh, empty folder for the browser's profile, removed when dropped.
struct Profile(PathBuf);

impl Profile {
    fn create() -> io::Result<Self> {
        let nanos = SystemTime::now()
            .duration_since(UNIX_EPOCH)
            .map_or(0, |d| d.as_nanos());
        let dir =
            std::env::temp_dir().join(format!("wirerank-browser-{}-{nanos}", std::process::id()));
        fs::create_dir(&dir)?;
        Ok(Profile(dir))
    }
}

impl Drop for Profile {
    fn drop(&mut self) {
        let _ = fs::remove_dir_all(&self.0);
    }
}

/// Prints `html` (an existing file) to the PDF file `pdf` with the browser `browser` (the
/// output set calls it inside the run's new folder, so the PDF joins the set whole or not
/// at all).
///
/// # Errors
/// The I/O error when the browser cannot be started, fails, or writes no PDF; its message
/// names the browser and the last lines it printed.
pub fn print_pdf_into(browser: &Path, html: &Path, pdf: &Path) -> io::Result<()> {
    let page = fs::canonicalize(html)?;
    let profile = Profile::create()?;
    let out = Command::new(browser)
        .args(HEADLESS_FLAGS)
        .arg(format!("--user-data-dir={}", profile.0.display()))
        .arg("--no-pdf-header-footer")
        .arg(format!("--print-to-pdf={}", pdf.display()))
        .arg(file_url(&page))
        .output()
        .map_err(|e| {
            io::Error::new(
                e.kind(),
                format!("cannot start the browser {}: {e}", browser.display()),
            )
        })?;
    let made = fs::metadata(pdf).map(|m| m.len() > 0).unwrap_or(false);
    if !out.status.success() || !made {
        let err = String::from_utf8_lossy(&out.stderr);
        let last: Vec<&str> = err.lines().rev().take(3).collect();
        return Err(io::Error::other(format!(
            "the browser {} printed no PDF ({}){}",
            browser.display(),
            out.status,
            if last.is_empty() {
                String::new()
            } else {
                format!(
                    "; it said: {}",
                    last.into_iter().rev().collect::<Vec<_>>().join(" / ")
                )
            }
        )));
    }
    Ok(())
}

/// A `file://` URL for an absolute path, with the characters a URL cannot hold
/// percent-encoded.
pub fn file_url(path: &Path) -> String {
    let mut url = String::from("file://");
    for b in path.to_string_lossy().bytes() {
        match b {
            b'A'..=b'Z' | b'a'..=b'z' | b'0'..=b'9' | b'/' | b'-' | b'_' | b'.' | b'~' => {
                url.push(b as char)
            }
            _ => url.push_str(&format!("%{b:02X}")),
        }
    }
    url
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_file_url_encodes_spaces_and_non_ascii() {
        // Worked by hand from RFC 3986 percent-encoding of the UTF-8 bytes.
        assert_eq!(
            file_url(Path::new("/tmp/my report/é.html")),
            "file:///tmp/my%20report/%C3%A9.html"
        );
    }
}
