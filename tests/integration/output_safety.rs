//! Output folders under signals, failures, concurrent runs and planted links, with the real
//! binary and real signals (notebooks-free-docs/limits-and-file-safety.md, "Outputs").
//!
//! The expected behaviour is this crate's rule (no outside source): a stopped, failed or
//! concurrent run leaves either the old complete set or the new complete set, no temporary,
//! and never touches a file it did not write. The test hooks are documented in
//! DEVELOPERS.md.

use std::collections::BTreeMap;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Output, Stdio};
use std::time::{Duration, Instant};

use wirerank::io::outset::MANIFEST;

type Snapshot = BTreeMap<String, Vec<u8>>;

fn command(args: &[&str], env: &[(&str, &str)]) -> Command {
    let mut c = Command::new(env!("CARGO_BIN_EXE_wirerank"));
    c.args(args)
        .env_remove("WIRERANK_TEST_PAUSE_BEFORE_SWAP")
        .env_remove("WIRERANK_TEST_FAIL_SWAP")
        .env_remove("WIRERANK_TEST_NO_EXCHANGE")
        .env_remove("WIRERANK_TEST_LOCK_WAIT_MS")
        .stdout(Stdio::piped())
        .stderr(Stdio::piped());
    for (k, v) in env {
        c.env(k, v);
    }
    c
}

fn run(args: &[&str], env: &[(&str, &str)]) -> Output {
    command(args, env).output().expect("wirerank runs")
}

fn spawn(args: &[&str], env: &[(&str, &str)]) -> Child {
    command(args, env).spawn().expect("wirerank starts")
}

fn text(b: &[u8]) -> String {
    String::from_utf8_lossy(b).into_owned()
}

/// `rank demo --quiet --by <criterion> --out <dir>`: two criteria give two different sets.
fn rank_args<'a>(criterion: &'a str, dir: &'a Path) -> Vec<&'a str> {
    vec![
        "rank",
        "demo",
        "--quiet",
        "--by",
        criterion,
        "--out",
        dir.to_str().expect("UTF-8 path"),
    ]
}

fn snapshot(dir: &Path) -> Snapshot {
    fs::read_dir(dir)
        .expect("output folder")
        .map(|e| {
            let e = e.expect("entry");
            let name = e.file_name().to_string_lossy().into_owned();
            let bytes = fs::read(e.path()).unwrap_or_else(|err| panic!("{name}: {err}"));
            (name, bytes)
        })
        .collect()
}

fn names(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = fs::read_dir(dir)
        .expect("folder")
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

/// The complete sets of the two criteria, each written once into its own folder.
fn reference_sets() -> &'static (Snapshot, Snapshot) {
    static SETS: std::sync::OnceLock<(Snapshot, Snapshot)> = std::sync::OnceLock::new();
    SETS.get_or_init(|| {
        let dir = tempfile::tempdir().expect("temporary folder");
        let (a, b) = (dir.path().join("a"), dir.path().join("b"));
        for (c, d) in [("annual", &a), ("winter", &b)] {
            let o = run(&rank_args(c, d), &[]);
            assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
        }
        let sets = (snapshot(&a), snapshot(&b));
        assert_ne!(sets.0, sets.1, "the two criteria must give different sets");
        assert!(sets.0.contains_key(MANIFEST) && sets.0.contains_key("monthly.csv"));
        sets
    })
}

/// Which reference set `dir` holds, byte for byte; panics on a mix or a partial set.
fn which_set(dir: &Path) -> &'static str {
    let (a, b) = reference_sets();
    let now = snapshot(dir);
    if now == *a {
        "annual"
    } else if now == *b {
        "winter"
    } else {
        let keys: Vec<_> = now.keys().collect();
        panic!("{} holds neither complete set: {keys:?}", dir.display())
    }
}

/// Beside `out`, only the folder and its lock file: no temporary of any run.
fn assert_no_temporaries(parent: &Path, out: &str) {
    assert_eq!(
        names(parent),
        [format!(".{out}.wirerank-lock"), out.to_string()],
        "temporaries left in {}",
        parent.display()
    );
}

/// Waits (up to 60 s) until a run's new set is complete in its fresh folder beside `out`.
fn wait_for_complete_new_set(parent: &Path, out: &str) -> PathBuf {
    let prefix = format!(".{out}.wirerank-new-");
    let started = Instant::now();
    loop {
        for n in names(parent) {
            if n.starts_with(&prefix) && parent.join(&n).join(MANIFEST).exists() {
                return parent.join(n);
            }
        }
        assert!(
            started.elapsed() < Duration::from_secs(60),
            "no complete new set appeared in {}",
            parent.display()
        );
        std::thread::sleep(Duration::from_millis(10));
    }
}

fn signal(child: &Child, name: &str) {
    let s = Command::new("kill")
        .args([&format!("-{name}"), &child.id().to_string()])
        .status()
        .expect("kill runs");
    assert!(s.success(), "kill -{name}");
}

#[test]
fn a_signal_before_the_swap_leaves_the_old_set_and_no_temporary() {
    for (sig, code) in [("TERM", 143), ("INT", 130)] {
        let dir = tempfile::tempdir().expect("temporary folder");
        let out = dir.path().join("r");
        let first = run(&rank_args("annual", &out), &[]);
        assert_eq!(first.status.code(), Some(0), "{}", text(&first.stderr));
        let child = spawn(
            &rank_args("winter", &out),
            &[("WIRERANK_TEST_PAUSE_BEFORE_SWAP", "30000")],
        );
        let fresh = wait_for_complete_new_set(dir.path(), "r");
        signal(&child, sig);
        let o = child.wait_with_output().expect("ends");
        let err = text(&o.stderr);
        // Source: main.rs (128 + the signal number: SIGINT 2, SIGTERM 15).
        assert_eq!(o.status.code(), Some(code), "{err}");
        assert!(err.contains(&format!("stopped by SIG{sig}")), "{err}");
        assert!(
            err.contains("removed the run's temporary") && err.contains("wirerank-new-"),
            "{err}"
        );
        assert!(!fresh.exists());
        assert_eq!(which_set(&out), "annual");
        assert_no_temporaries(dir.path(), "r");
    }
}

/// Signals at many moments of the writing (no hook: whatever the timing), each run either
/// leaves the old set or the new one, complete, and no temporary.
#[test]
fn a_signal_at_any_moment_leaves_one_complete_set() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let out = dir.path().join("r");
    let first = run(&rank_args("annual", &out), &[]);
    assert_eq!(first.status.code(), Some(0), "{}", text(&first.stderr));
    let prefix = ".r.wirerank-new-";
    let mut seen = BTreeMap::new();
    for (k, delay_ms) in [0u64, 2, 5, 10, 20, 40, 80, 160].into_iter().enumerate() {
        let criterion = if k % 2 == 0 { "winter" } else { "annual" };
        let before = which_set(&out);
        let child = spawn(&rank_args(criterion, &out), &[]);
        // The run has started writing once its fresh folder exists.
        let started = Instant::now();
        while !names(dir.path()).iter().any(|n| n.starts_with(prefix)) {
            if started.elapsed() > Duration::from_secs(60) {
                panic!("no fresh folder appeared");
            }
            std::thread::sleep(Duration::from_millis(1));
        }
        std::thread::sleep(Duration::from_millis(delay_ms));
        signal(&child, "TERM");
        let o = child.wait_with_output().expect("ends");
        let now = which_set(&out);
        match o.status.code() {
            // Finished before the signal: the new set.
            Some(0) => assert_eq!(now, criterion),
            // Stopped: before the swap the old set, after it the new one.
            Some(143) => assert!(now == before || now == criterion, "{now}"),
            other => panic!("exit {other:?}: {}", text(&o.stderr)),
        }
        let left = if before == criterion {
            "either set"
        } else if now == before {
            "old set"
        } else {
            "new set"
        };
        *seen.entry((o.status.code(), left)).or_insert(0) += 1;
        assert_no_temporaries(dir.path(), "r");
    }
    eprintln!("runs by exit code and what they left: {seen:?}");
    assert!(
        seen.keys().any(|(code, _)| *code == Some(143)),
        "no run was stopped: {seen:?}"
    );
}

#[test]
fn a_failed_swap_leaves_the_old_set() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let out = dir.path().join("r");
    let first = run(&rank_args("annual", &out), &[]);
    assert_eq!(first.status.code(), Some(0), "{}", text(&first.stderr));
    let o = run(
        &rank_args("winter", &out),
        &[("WIRERANK_TEST_FAIL_SWAP", "1")],
    );
    let err = text(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(
        err.contains("cannot write") && err.contains("the swap failed"),
        "{err}"
    );
    assert_eq!(which_set(&out), "annual");
    assert_no_temporaries(dir.path(), "r");
}

#[test]
fn without_the_exchange_two_renames_replace_the_set() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let out = dir.path().join("r");
    for c in ["annual", "winter"] {
        let o = run(&rank_args(c, &out), &[("WIRERANK_TEST_NO_EXCHANGE", "1")]);
        assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
        assert_eq!(which_set(&out), c);
        assert_no_temporaries(dir.path(), "r");
    }
}

/// True once process `pid` has the file `path` open (Linux: its `/proc/PID/fd` links).
#[cfg(target_os = "linux")]
fn has_open(pid: u32, path: &Path) -> bool {
    let Ok(fds) = fs::read_dir(format!("/proc/{pid}/fd")) else {
        return false;
    };
    fds.flatten()
        .any(|fd| fs::read_link(fd.path()).is_ok_and(|p| p == path))
}

/// Polls `cond` every 10 ms for up to 60 s.
#[cfg(target_os = "linux")]
fn wait_until(what: &str, mut cond: impl FnMut() -> bool) {
    let started = Instant::now();
    while !cond() {
        assert!(started.elapsed() < Duration::from_secs(60), "{what}");
        std::thread::sleep(Duration::from_millis(10));
    }
}

#[cfg(target_os = "linux")]
#[test]
fn a_second_run_waits_for_the_first_then_replaces_its_set() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let out = dir.path().join("r");
    let mut first = spawn(
        &rank_args("annual", &out),
        &[("WIRERANK_TEST_PAUSE_BEFORE_SWAP", "8000")],
    );
    wait_for_complete_new_set(dir.path(), "r");
    let second = spawn(&rank_args("winter", &out), &[]);
    // The second run has opened the lock file while the first still holds the lock: it
    // waits (it creates no fresh folder before it has the lock).
    let lock = dir
        .path()
        .canonicalize()
        .expect("resolved")
        .join(".r.wirerank-lock");
    wait_until("the second run never opened the lock file", || {
        has_open(second.id(), &lock)
    });
    assert!(
        first.try_wait().expect("status").is_none(),
        "the first run ended before the second waited: the test proves nothing"
    );
    let fresh: Vec<String> = names(dir.path())
        .into_iter()
        .filter(|n| n.starts_with(".r.wirerank-new-"))
        .collect();
    assert_eq!(fresh.len(), 1, "only the first run writes: {fresh:?}");
    let first = first.wait_with_output().expect("ends");
    let second = second.wait_with_output().expect("ends");
    assert_eq!(first.status.code(), Some(0), "{}", text(&first.stderr));
    assert_eq!(second.status.code(), Some(0), "{}", text(&second.stderr));
    assert_eq!(which_set(&out), "winter");
    assert_no_temporaries(dir.path(), "r");
}

#[test]
fn a_second_run_refuses_clearly_when_the_wait_runs_out() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let out = dir.path().join("r");
    let first = spawn(
        &rank_args("annual", &out),
        &[("WIRERANK_TEST_PAUSE_BEFORE_SWAP", "60000")],
    );
    wait_for_complete_new_set(dir.path(), "r");
    let second = run(
        &rank_args("winter", &out),
        &[("WIRERANK_TEST_LOCK_WAIT_MS", "300")],
    );
    let err = text(&second.stderr);
    assert_eq!(second.status.code(), Some(2), "{err}");
    assert!(
        err.contains("another wirerank run is writing this folder")
            && err.contains(".r.wirerank-lock")
            && err.contains("waited 0.3 seconds"),
        "{err}"
    );
    // The first run, stopped, leaves no set (there was none before) and no temporary.
    signal(&first, "TERM");
    let first = first.wait_with_output().expect("ends");
    assert_eq!(first.status.code(), Some(143), "{}", text(&first.stderr));
    assert!(!out.exists());
    assert_eq!(names(dir.path()), [".r.wirerank-lock"]);
}

/// Two runs with different criteria started together, five times: both succeed (one waits)
/// and the folder holds exactly one of the two complete sets.
#[test]
fn two_runs_at_once_never_mix_their_files() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let out = dir.path().join("r");
    for _ in 0..5 {
        let a = spawn(&rank_args("annual", &out), &[]);
        let b = spawn(&rank_args("winter", &out), &[]);
        for o in [a, b].map(|c| c.wait_with_output().expect("ends")) {
            assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
        }
        which_set(&out);
        assert_no_temporaries(dir.path(), "r");
    }
}

#[cfg(unix)]
#[test]
fn planted_links_are_never_followed() {
    use std::os::unix::fs::symlink;
    let dir = tempfile::tempdir().expect("temporary folder");
    let precious = dir.path().join("precious.txt");
    fs::write(&precious, "keep me").expect("precious file");

    // At the lock file's name.
    let out = dir.path().join("r");
    symlink(&precious, dir.path().join(".r.wirerank-lock")).expect("link");
    let o = run(&rank_args("annual", &out), &[]);
    let err = text(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(
        err.contains("lock file") && err.contains("not a regular file"),
        "{err}"
    );
    assert!(!out.exists());
    fs::remove_file(dir.path().join(".r.wirerank-lock")).expect("unplant");

    // At a final name and at the old temporary name inside an earlier set.
    let first = run(&rank_args("annual", &out), &[]);
    assert_eq!(first.status.code(), Some(0), "{}", text(&first.stderr));
    for planted in ["monthly.csv", "monthly.csv.tmp", "gain_map.tmp.png"] {
        let at = out.join(planted);
        let _ = fs::remove_file(&at);
        symlink(&precious, &at).expect("link");
        let o = run(&rank_args("winter", &out), &[]);
        let err = text(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{planted}: {err}");
        assert!(err.contains("no earlier wirerank run wrote"), "{err}");
        assert!(fs::symlink_metadata(&at).is_ok(), "{planted} is kept");
        fs::remove_file(&at).expect("unplant");
    }
    assert_eq!(fs::read(&precious).expect("precious"), b"keep me");

    // At a single output file's name: replaced by the new file, its target untouched.
    let csv = dir.path().join("synth.csv");
    symlink(&precious, &csv).expect("link");
    let o = run(
        &[
            "weather",
            "synth",
            "weather-samples/dunewell-pump.monthly.toml",
            "--seed",
            "1",
            "--out",
            csv.to_str().expect("UTF-8"),
        ],
        &[],
    );
    assert_eq!(o.status.code(), Some(0), "{}", text(&o.stderr));
    assert!(fs::symlink_metadata(&csv).expect("written").is_file());
    assert_eq!(fs::read(&precious).expect("precious"), b"keep me");
}

#[test]
fn a_folder_of_the_users_files_is_never_lost() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let docs = dir.path().join("Documents");
    fs::create_dir(&docs).expect("folder");
    fs::write(docs.join("letter.txt"), "dear").expect("file");
    fs::write(docs.join("\u{1b}[31mred.txt"), "odd name").expect("file");
    let before = snapshot(&docs);
    let o = run(&rank_args("annual", &docs), &[]);
    let err = text(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(
        err.contains("2 entries")
            && err.contains("letter.txt")
            && err.contains("choose an empty or new folder"),
        "{err}"
    );
    // Source: issue 17 (control characters never reach the terminal).
    assert!(!err.contains('\u{1b}'), "{err:?}");
    assert_eq!(snapshot(&docs), before);
    // Refused before locking: not even a lock file beside the folder.
    assert_eq!(names(dir.path()), ["Documents"]);
}

#[test]
fn a_signal_before_anything_is_written_exits_with_the_signal_code() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let out = dir.path().join("r");
    // The shaded plan simulates for seconds before writing.
    let child = spawn(
        &[
            "rank",
            "tests/fixtures/plan_assign_shaded.toml",
            "--quiet",
            "--out",
            out.to_str().expect("UTF-8"),
        ],
        &[],
    );
    // Once the signal thread runs (main starts it first), and while still simulating.
    #[cfg(target_os = "linux")]
    wait_until("no signal thread", || {
        fs::read_dir(format!("/proc/{}/task", child.id())).is_ok_and(|tasks| {
            tasks.flatten().any(|t| {
                fs::read_to_string(t.path().join("comm")).is_ok_and(|c| c.trim() == "signals")
            })
        })
    });
    #[cfg(not(target_os = "linux"))]
    std::thread::sleep(Duration::from_millis(300));
    signal(&child, "INT");
    let o = child.wait_with_output().expect("ends");
    let err = text(&o.stderr);
    assert_eq!(o.status.code(), Some(130), "{err}");
    assert!(err.contains("stopped by SIGINT"), "{err}");
    assert!(!out.exists());
}

/// A single output file (`weather synth --out`): SIGTERM with the new file complete in its
/// fresh folder leaves the old file and no temporary.
#[test]
fn a_signal_before_a_single_file_is_renamed_leaves_the_old_file() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let csv = dir.path().join("synth.csv");
    fs::write(&csv, "old file").expect("old file");
    let child = spawn(
        &[
            "weather",
            "synth",
            "weather-samples/dunewell-pump.monthly.toml",
            "--seed",
            "1",
            "--out",
            csv.to_str().expect("UTF-8"),
        ],
        &[("WIRERANK_TEST_PAUSE_BEFORE_SWAP", "30000")],
    );
    let started = Instant::now();
    loop {
        let complete = names(dir.path()).iter().any(|n| {
            n.starts_with(".synth.csv.wirerank-tmp-")
                && fs::metadata(dir.path().join(n).join("synth.csv"))
                    .is_ok_and(|m| m.len() > 100_000)
        });
        if complete {
            break;
        }
        assert!(
            started.elapsed() < Duration::from_secs(60),
            "no temporary appeared"
        );
        std::thread::sleep(Duration::from_millis(10));
    }
    // Whether the signal lands during the writing or in the pause, the outcome is the same.
    signal(&child, "TERM");
    let o = child.wait_with_output().expect("ends");
    let err = text(&o.stderr);
    assert_eq!(o.status.code(), Some(143), "{err}");
    assert!(
        err.contains("stopped by SIGTERM") && err.contains("wirerank-tmp-"),
        "{err}"
    );
    assert_eq!(fs::read(&csv).expect("old file"), b"old file");
    assert_eq!(names(dir.path()), ["synth.csv"]);
}
