//! Architecture invariants that a test can check by reading the sources (DEVELOPERS.md, "Invariants").

use std::path::Path;

fn source(rel: &str) -> String {
    std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join(rel))
        .unwrap_or_else(|e| panic!("{rel}: {e}"))
}

#[test]
fn pure_modules_import_no_io_polars_clap_plotters_or_serde() {
    let mut files: Vec<String> =
        std::fs::read_dir(Path::new(env!("CARGO_MANIFEST_DIR")).join("src/physics"))
            .expect("physics folder")
            .map(|e| {
                format!(
                    "src/physics/{}",
                    e.expect("entry").file_name().to_string_lossy()
                )
            })
            .collect();
    files.extend(
        [
            "simulate.rs",
            "phase2.rs",
            "tally.rs",
            "rank.rs",
            "limits.rs",
            "layouts.rs",
        ]
        .map(|f| format!("src/{f}")),
    );
    for f in files {
        let s = source(&f);
        for banned in [
            "std::fs",
            "std::io::",
            "polars::",
            "clap::",
            "plotters::",
            "serde::",
            "serde_json",
            "File::",
        ] {
            assert!(!s.contains(banned), "{f} mentions {banned}");
        }
    }
}

#[test]
fn only_main_and_cli_know_clap() {
    for f in [
        "src/lib.rs",
        "src/report.rs",
        "src/plan.rs",
        "src/weather.rs",
    ] {
        assert!(!source(f).contains("clap"), "{f} mentions clap");
    }
}
