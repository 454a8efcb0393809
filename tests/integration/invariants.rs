//! Architecture invariants that a test can check by reading the sources (DEVELOPERS.md,
//! "Invariants").

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).to_path_buf()
}

/// Every `.rs` file under `src/`, as paths relative to the crate root.
fn sources() -> Vec<String> {
    fn walk(dir: &Path, out: &mut Vec<PathBuf>) {
        for e in std::fs::read_dir(dir).expect("readable folder") {
            let p = e.expect("entry").path();
            if p.is_dir() {
                walk(&p, out);
            } else if p.extension().is_some_and(|x| x == "rs") {
                out.push(p);
            }
        }
    }
    let mut files = Vec::new();
    walk(&root().join("src"), &mut files);
    let mut rel: Vec<String> = files
        .iter()
        .map(|p| {
            p.strip_prefix(root())
                .expect("under the crate")
                .to_string_lossy()
                .replace('\\', "/")
        })
        .collect();
    rel.sort();
    rel
}

fn source(rel: &str) -> String {
    std::fs::read_to_string(root().join(rel)).unwrap_or_else(|e| panic!("{rel}: {e}"))
}

/// A file's code above its `#[cfg(test)]` module (tests may reach anything), without
/// comment lines.
fn code_of(rel: &str) -> String {
    let s = source(rel);
    let code = match s.find("#[cfg(test)]") {
        Some(i) => &s[..i],
        None => &s[..],
    };
    code.lines()
        .filter(|l| !l.trim_start().starts_with("//"))
        .map(|l| format!("{l}\n"))
        .collect()
}

/// The top-level module a source file belongs to: `src/sim/year.rs` → `sim`,
/// `src/time.rs` → `time`.
fn top_module(rel: &str) -> String {
    let inner = rel.strip_prefix("src/").expect("under src/");
    match inner.split_once('/') {
        Some((dir, _)) => dir.to_string(),
        None => inner.trim_end_matches(".rs").to_string(),
    }
}

/// Each top-level module's layer: a module may use its own layer and those below it only.
const LAYERS: [(&str, u32); 16] = [
    ("num", 0),
    ("text", 0),
    ("time", 0),
    ("error", 1),
    ("physics", 2),
    ("input", 3),
    ("weather_gen", 4),
    ("sim", 4),
    ("design", 5),
    ("results", 6),
    ("io", 7),
    ("commands", 8),
    ("lib", 9),
    ("main", 10),
    ("cli", 10),
    ("template", 10),
];

fn layer(module: &str) -> u32 {
    LAYERS
        .iter()
        .find(|(m, _)| *m == module)
        .map(|(_, l)| *l)
        .unwrap_or_else(|| panic!("module {module} has no layer in the invariants test"))
}

/// `crate::a::b` paths named in a file's code (outside its tests), as `a::b` (or `a`).
fn crate_paths(code: &str) -> BTreeSet<String> {
    let mut out = BTreeSet::new();
    for (i, _) in code.match_indices("crate::") {
        let rest = &code[i + "crate::".len()..];
        let path: String = rest
            .chars()
            .take_while(|c| c.is_alphanumeric() || *c == '_' || *c == ':')
            .collect();
        let mut parts = path.split("::").filter(|p| !p.is_empty());
        let (Some(a), b) = (parts.next(), parts.next()) else {
            continue;
        };
        // `use crate::{a, b}` groups name several modules.
        if a.is_empty() {
            continue;
        }
        match b {
            Some(b) if b.chars().next().is_some_and(|c| c.is_lowercase()) => {
                out.insert(format!("{a}::{b}"));
            }
            _ => {
                out.insert(a.to_string());
            }
        }
    }
    out
}

#[test]
fn pure_modules_import_no_io_polars_clap_plotters_or_serde() {
    // Everything outside io/, commands/ (which reach files through io/) and the binary.
    let exempt = |f: &str| {
        f.starts_with("src/io/")
            || f.starts_with("src/commands/")
            || f == "src/main.rs"
            || f == "src/cli.rs"
    };
    let files: Vec<String> = sources().into_iter().filter(|f| !exempt(f)).collect();
    assert!(files.len() > 30, "{files:?}");
    for f in files {
        let s = code_of(&f);
        // Error types may carry an I/O error as their source; nothing else names std::io.
        let io_ok = f == "src/error.rs";
        for banned in [
            "std::fs",
            if io_ok { "std::fs" } else { "std::io::" },
            "polars::",
            "clap::",
            "plotters::",
            "serde::",
            "serde_json",
            "File::",
            "indicatif",
        ] {
            assert!(!s.contains(banned), "{f} mentions {banned}");
        }
    }
}

#[test]
fn commands_reach_files_only_through_io() {
    for f in sources().iter().filter(|f| f.starts_with("src/commands/")) {
        let s = code_of(f);
        for banned in ["std::fs", "File::", "polars::", "plotters::", "clap::"] {
            assert!(!s.contains(banned), "{f} mentions {banned}");
        }
    }
}

#[test]
fn only_main_and_cli_know_clap() {
    for f in sources() {
        if f == "src/main.rs" || f == "src/cli.rs" {
            continue;
        }
        assert!(!code_of(&f).contains("clap"), "{f} mentions clap");
    }
}

/// Modules depend downward only, and no two files depend on each other through any chain.
#[test]
fn modules_depend_downward_and_have_no_cycles() {
    let files = sources();
    // File-level graph: a file "depends on" a file of the module path it names.
    let module_of_file: BTreeMap<String, String> = files
        .iter()
        .map(|f| {
            let inner = f.strip_prefix("src/").expect("src");
            let m = inner
                .trim_end_matches(".rs")
                .trim_end_matches("/mod")
                .replace('/', "::");
            (m, f.clone())
        })
        .collect();
    let mut edges: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    for f in &files {
        let from_top = top_module(f);
        for path in crate_paths(&code_of(f)) {
            let to_top = path.split("::").next().expect("a segment").to_string();
            if to_top == from_top && !path.contains("::") {
                continue;
            }
            assert!(
                layer(&to_top) <= layer(&from_top),
                "{f} (layer {}) uses crate::{path} (layer {}): dependencies go downward only",
                layer(&from_top),
                layer(&to_top)
            );
            // Resolve to the most specific file.
            let target = module_of_file
                .get(&path)
                .or_else(|| module_of_file.get(&to_top))
                .cloned();
            if let Some(t) = target {
                if &t != f {
                    edges.entry(f.clone()).or_default().insert(t);
                }
            }
        }
    }
    // Depth-first search for a cycle.
    fn visit(
        n: &str,
        edges: &BTreeMap<String, BTreeSet<String>>,
        state: &mut BTreeMap<String, u8>,
        stack: &mut Vec<String>,
    ) {
        match state.get(n).copied() {
            Some(2) => return,
            Some(1) => {
                let start = stack.iter().position(|s| s == n).unwrap_or(0);
                panic!("module cycle: {} -> {n}", stack[start..].join(" -> "));
            }
            _ => {}
        }
        state.insert(n.to_string(), 1);
        stack.push(n.to_string());
        for m in edges.get(n).into_iter().flatten() {
            visit(m, edges, state, stack);
        }
        stack.pop();
        state.insert(n.to_string(), 2);
    }
    let mut state = BTreeMap::new();
    for f in &files {
        visit(f, &edges, &mut state, &mut Vec::new());
    }
}

#[test]
fn the_repository_cites_no_document_outside_it() {
    // Design notes outside the repository must not be cited (the repository stands alone).
    let mut files: Vec<String> = sources();
    for dir in ["tests/integration", "notebooks-free-docs", "benches"] {
        for e in std::fs::read_dir(root().join(dir)).expect("folder") {
            let p = e.expect("entry").path();
            if p.is_file() {
                files.push(format!(
                    "{dir}/{}",
                    p.file_name().expect("name").to_string_lossy()
                ));
            }
        }
    }
    files.extend(["README.md".to_string(), "DEVELOPERS.md".to_string()]);
    let banned = [
        ["MODEL", ".md"].concat(),
        ["CHECK-", "VALUES"].concat(),
        ["ARCHITECTURE", ".md"].concat(),
        ["STYLE", ".md"].concat(),
        ["CRATES", ".md"].concat(),
        ["shared", "/design"].concat(),
    ];
    for f in files {
        let s = source(&f);
        for b in &banned {
            assert!(
                !s.contains(b.as_str()),
                "{f} cites {b}, outside the repository"
            );
        }
    }
}
