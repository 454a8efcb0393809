//! Helpers shared by the integration test modules.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// A committed test plan or weather file under `tests/fixtures/`.
pub fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures")
        .join(name)
}

/// Runs the built binary with `args` (no backtraces, so messages are as a user sees them).
pub fn wirerank(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_wirerank"))
        .args(args)
        .env_remove("RUST_BACKTRACE")
        .output()
        .expect("the wirerank binary runs")
}

/// Runs the built binary with `args`, expects success, and returns what it printed.
pub fn stdout_ok(args: &[&str]) -> String {
    let out = wirerank(args);
    assert!(
        out.status.success(),
        "wirerank {args:?} failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).expect("stdout is UTF-8")
}

/// A fixture plan with text edits, written to a temporary folder with its weather path made
/// absolute. The folder lives as long as the returned guard.
pub fn edited(name: &str, edits: &[(&str, &str)]) -> (tempfile::TempDir, PathBuf) {
    let mut text = std::fs::read_to_string(fixture(name)).expect("fixture reads");
    let samples = Path::new(env!("CARGO_MANIFEST_DIR")).join("weather-samples");
    text = text.replace(
        "file = \"../../weather-samples/",
        &format!("file = \"{}/", samples.display()),
    );
    for (from, to) in edits {
        assert!(text.contains(from), "{name} has {from:?}");
        text = text.replace(from, to);
    }
    let dir = tempfile::tempdir().expect("temporary folder");
    let p = dir.path().join(name);
    std::fs::write(&p, text).expect("write the plan");
    (dir, p)
}
