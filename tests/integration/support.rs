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
