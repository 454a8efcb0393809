//! Golden outputs: the exact terminal text, JSON and CSV files of the bundled demo.
//!
//! These guard behaviour across refactoring: any change to a number, a heading or a column
//! shows up as a diff. When a change of output is intended, re-bless on purpose with
//! `WIRERANK_BLESS=1 cargo test --release --test integration golden` and say in the commit
//! which change of behaviour the new files record.
//!
//! Source of the expected files: wirerank's own output, reviewed when blessed (a regression
//! guard, not an independent check).

use std::path::{Path, PathBuf};
use std::process::Command;

fn golden_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/golden")
}

fn blessing() -> bool {
    std::env::var_os("WIRERANK_BLESS").is_some_and(|v| v == "1")
}

/// Compares `actual` with the golden file `name`, or rewrites it when blessing.
fn check_golden(name: &str, actual: &str) {
    let path = golden_dir().join(name);
    if blessing() {
        std::fs::create_dir_all(golden_dir()).expect("create tests/golden");
        std::fs::write(&path, actual).expect("write golden file");
        return;
    }
    let expected = std::fs::read_to_string(&path).unwrap_or_else(|e| {
        panic!(
            "cannot read {}: {e}; run with WIRERANK_BLESS=1 to create it",
            path.display()
        )
    });
    if expected != actual {
        let (line, (e, a)) = expected
            .lines()
            .zip(actual.lines())
            .enumerate()
            .find(|(_, (e, a))| e != a)
            .unwrap_or((
                expected.lines().count().min(actual.lines().count()),
                ("<end>", "<end>"),
            ));
        panic!(
            "{name} differs from tests/golden/{name} at line {}:\n  expected: {e}\n  actual:   {a}\n\
             (expected {} lines, got {}; re-bless with WIRERANK_BLESS=1 if the change is intended)",
            line + 1,
            expected.lines().count(),
            actual.lines().count()
        );
    }
}

fn run_stdout(args: &[&str]) -> String {
    let out = Command::new(env!("CARGO_BIN_EXE_wirerank"))
        .args(args)
        .env_remove("RUST_BACKTRACE")
        .output()
        .expect("the wirerank binary runs");
    assert!(
        out.status.code() == Some(0) || out.status.code() == Some(1),
        "wirerank {args:?} failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).expect("stdout is UTF-8")
}

#[test]
fn golden_demo_without_arguments() {
    check_golden("demo.txt", &run_stdout(&[]));
}

#[test]
fn golden_check_demo() {
    check_golden("check_demo.txt", &run_stdout(&["check", "demo"]));
}

#[test]
fn golden_rank_demo_by_winter() {
    check_golden(
        "rank_demo_winter.txt",
        &run_stdout(&["rank", "demo", "--by", "winter"]),
    );
}

#[test]
fn golden_rank_demo_json() {
    check_golden(
        "rank_demo.json",
        &run_stdout(&["rank", "demo", "--format", "json"]),
    );
}

/// Every CSV file of `rank demo --out`, and the provenance with its machine-dependent lines
/// (the output folder) removed.
#[test]
fn golden_rank_demo_out_files() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let out = dir.path().join("r");
    let out_s = out.to_str().expect("UTF-8 temp path");
    run_stdout(&["rank", "demo", "--quiet", "--out", out_s]);
    let mut csvs: Vec<_> = std::fs::read_dir(&out)
        .expect("output folder")
        .map(|e| e.expect("entry").path())
        .filter(|p| p.extension().is_some_and(|x| x == "csv"))
        .collect();
    csvs.sort();
    assert!(csvs.len() >= 3, "expected several CSV files, got {csvs:?}");
    let names: Vec<String> = csvs
        .iter()
        .map(|p| p.file_name().unwrap().to_string_lossy().into_owned())
        .collect();
    check_golden("out_files.txt", &(names.join("\n") + "\n"));
    for (p, name) in csvs.iter().zip(&names) {
        let text = std::fs::read_to_string(p).expect("read CSV");
        check_golden(&format!("out_{name}"), &text);
    }
    let prov = std::fs::read_to_string(out.join("provenance.txt")).expect("provenance.txt");
    let prov: String = prov
        .lines()
        .filter(|l| !l.contains(out_s))
        .map(|l| format!("{l}\n"))
        .collect();
    check_golden("out_provenance.txt", &prov);
}
