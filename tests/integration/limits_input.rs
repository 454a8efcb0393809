//! Bounded, finite inputs (issue 17, part A): every finding of the hostile-input campaign
//! under "Hangs and runaway memory" and "Messages" with its expected message, through the
//! binary as a user meets it. Limits: notebooks-free-docs/limits-and-file-safety.md.

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

/// Runs the binary and kills it after `limit`: a hang fails the test instead of blocking it.
fn wirerank_within(args: &[&str], limit: Duration) -> Output {
    let mut child = Command::new(env!("CARGO_BIN_EXE_wirerank"))
        .args(args)
        .env_remove("RUST_BACKTRACE")
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("the wirerank binary runs");
    let start = Instant::now();
    loop {
        if child.try_wait().expect("wait").is_some() {
            return child.wait_with_output().expect("output");
        }
        if start.elapsed() > limit {
            let _ = child.kill();
            let out = child.wait_with_output().expect("output");
            panic!(
                "wirerank {args:?} still ran after {limit:?}; stderr: {}",
                String::from_utf8_lossy(&out.stderr)
            );
        }
        std::thread::sleep(Duration::from_millis(20));
    }
}

fn wirerank(args: &[&str]) -> Output {
    wirerank_within(args, Duration::from_secs(120))
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// Runs `args` and expects exit code 2 with every `needle` in stderr, and no raw control
/// character anywhere on the terminal.
fn refused(args: &[&str], needles: &[&str]) -> String {
    let out = wirerank(args);
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
    for n in needles {
        assert!(err.contains(n), "{args:?}: {err:?} lacks {n:?}");
    }
    assert_clean(&out);
    err
}

/// No control character except tab and line feed in stdout or stderr.
fn assert_clean(out: &Output) {
    for (what, bytes) in [("stdout", &out.stdout), ("stderr", &out.stderr)] {
        let text = String::from_utf8_lossy(bytes);
        let bad = text
            .chars()
            .find(|c| c.is_control() && *c != '\n' && *c != '\t');
        assert!(bad.is_none(), "{what} holds {bad:?}: {text:?}");
    }
}

/// The demo plan with text edits, written to a temporary folder beside its weather file's
/// absolute path. The folder lives as long as the returned guard.
fn demo_with(edits: &[(&str, &str)]) -> (tempfile::TempDir, PathBuf) {
    let mut text =
        std::fs::read_to_string(root().join("weather-samples/larchwood-plan.toml")).unwrap();
    let weather = root().join("weather-samples/larchwood-2025.csv");
    text = text.replace(
        "file = \"larchwood-2025.csv\"",
        &format!("file = \"{}\"", weather.display()),
    );
    for (from, to) in edits {
        assert!(text.contains(from), "the demo plan has {from:?}");
        text = text.replacen(from, to, 1);
    }
    let dir = tempfile::tempdir().expect("temporary folder");
    let p = dir.path().join("plan.toml");
    std::fs::write(&p, text).expect("write the plan");
    (dir, p)
}

fn s(p: &Path) -> &str {
    p.to_str().expect("utf-8 path")
}

const DEMO_LOAD: &str =
    "daily_wh = [8, 8, 8, 8, 8, 8, 20, 30, 8, 8, 8, 8, 8, 8, 8, 8, 8, 30, 45, 45, 40, 30, 15, 8]";
const SPRUCE: &str = "east_m = 12.0\nnorth_m = -5.0\nradius_m = 1.0\nheight_m = 5.0";

// ---- Hangs and runaway memory ----

/// Campaign finding: `daily_wh = [1e308, …]` was accepted and `rank --out` never finished.
/// Limit 0 to 100,000 Wh per hour (plan-format.md).
#[test]
fn huge_hourly_load_is_refused_with_the_range() {
    let (_d, p) = demo_with(&[(DEMO_LOAD, &DEMO_LOAD.replacen("[8,", "[1e308,", 1))]);
    refused(
        &["rank", s(&p)],
        &[
            "plan.toml:",
            "load.daily_wh: hour 0 = 1e308 is outside 0 to 100000 Wh",
        ],
    );
}

/// Campaign finding: obstacle positions and heights of 1e308 were accepted.
#[test]
fn huge_obstacle_position_and_height_are_refused() {
    let (_d, p) = demo_with(&[(SPRUCE, &SPRUCE.replace("east_m = 12.0", "east_m = 1e308"))]);
    refused(
        &["rank", s(&p)],
        &["obstacle[1].east_m = 1e308 is outside -1000 to 1000"],
    );
    let (_d, p) = demo_with(&[(
        SPRUCE,
        &SPRUCE.replace("height_m = 5.0", "height_m = 1e308"),
    )]);
    refused(
        &["rank", s(&p)],
        &["obstacle[1].height_m = 1e308 must be above 0 and at most 500"],
    );
    let (_d, p) = demo_with(&[(
        "centre_m = [9.0, -2.0, 1.8]",
        "centre_m = [9.0, -2.0, 1e308]",
    )]);
    refused(
        &["rank", s(&p)],
        &["group.shed.centre_m: up_m = 1e308 is outside -100 to 500 m"],
    );
    let (_d, p) = demo_with(&[(
        SPRUCE,
        "footprint_m = [[10, -6], [1e308, -6], [14, -4], [10, -4]]\nheight_m = 5.0",
    )]);
    let p_text = std::fs::read_to_string(&p)
        .unwrap()
        .replace("kind = \"pole\"", "kind = \"box\"");
    std::fs::write(&p, p_text).unwrap();
    refused(
        &["rank", s(&p)],
        &["obstacle[1].footprint_m corner 2 = [1e308, -6] is outside -1000 to 1000 m"],
    );
}

/// Campaign finding: 10,000 modules with one listed layout took 5.2 GB. A plan holds at most
/// 500 modules (limits-and-file-safety.md); 200 per group was already the group limit.
#[test]
fn more_than_500_modules_are_refused_naming_the_group() {
    let mut groups = String::new();
    for g in 0..3 {
        groups.push_str(&format!(
            "[group.extra{g}]\nmodule_type = \"m120\"\ncount = 200\ntilt_deg = 30\nazimuth_deg = 180\n\n"
        ));
    }
    let (_d, p) = demo_with(&[("[battery]\n", &format!("{groups}[battery]\n"))]);
    refused(
        &["rank", s(&p)],
        &[
            "group.extra2 brings the plan to 600 modules, above the limit of 500",
            "split a larger array into several plans",
        ],
    );
}

/// A plan may list at most 1000 layouts.
#[test]
fn more_than_1000_listed_layouts_are_refused() {
    let one = "\n[[layout]]\nstrings.mppt = [[\"roof-1\", \"roof-2\"]]\n";
    let (_d, p) = demo_with(&[]);
    let mut text = std::fs::read_to_string(&p).unwrap();
    text.push_str(&one.repeat(1001));
    std::fs::write(&p, text).unwrap();
    refused(
        &["rank", s(&p)],
        &["lists 1007 [[layout]] tables, above the limit of 1000"],
    );
}

/// Campaign finding: `/dev/zero` as the plan or the weather file was read without limit.
#[test]
fn dev_zero_as_plan_or_weather_is_refused_before_reading() {
    if !Path::new("/dev/zero").exists() {
        eprintln!("skipped: no /dev/zero on this system");
        return;
    }
    let limit = Duration::from_secs(20);
    let out = wirerank_within(&["rank", "/dev/zero"], limit);
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(
        err.contains("cannot read plan /dev/zero: it is a character device (such as /dev/zero), not a regular file"),
        "{err}"
    );
    let (_d, p) = demo_with(&[(
        &format!(
            "file = \"{}\"",
            root().join("weather-samples/larchwood-2025.csv").display()
        ),
        "file = \"/dev/zero\"",
    )]);
    let out = wirerank_within(&["rank", s(&p)], limit);
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(
        err.contains("cannot read /dev/zero: it is a character device"),
        "{err}"
    );
    for args in [
        &["weather", "inspect", "/dev/zero"][..],
        &["weather", "synth", "/dev/zero", "--out", "never.csv"][..],
    ] {
        let out = wirerank_within(args, limit);
        assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
        assert!(
            stderr(&out).contains("not a regular file"),
            "{}",
            stderr(&out)
        );
    }
}

/// Campaign finding: a FIFO as the plan or the weather file blocked forever. Made with
/// `mkfifo`; skipped where that tool is missing.
#[test]
fn fifo_as_plan_or_weather_is_refused_without_blocking() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let fifo = dir.path().join("pipe.toml");
    match Command::new("mkfifo").arg(&fifo).status() {
        Ok(st) if st.success() => {}
        _ => {
            eprintln!("skipped: mkfifo is not available");
            return;
        }
    }
    let limit = Duration::from_secs(20);
    let out = wirerank_within(&["rank", s(&fifo)], limit);
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(
        err.contains(
            "it is a named pipe (FIFO), not a regular file; give the path of a saved plan"
        ),
        "{err}"
    );
    let (_d, p) = demo_with(&[(
        &format!(
            "file = \"{}\"",
            root().join("weather-samples/larchwood-2025.csv").display()
        ),
        &format!("file = \"{}\"", fifo.display()),
    )]);
    let out = wirerank_within(&["rank", s(&p)], limit);
    let err = stderr(&out);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("named pipe (FIFO)"), "{err}");
    let out = wirerank_within(&["weather", "import", s(&fifo), "--out", "x.csv"], limit);
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    assert!(
        stderr(&out).contains("named pipe (FIFO)"),
        "{}",
        stderr(&out)
    );
}

/// A plan above 1 MiB is refused from its size alone (the demo plan is about 6 kB).
#[test]
fn plan_above_the_size_limit_is_refused() {
    let (_d, p) = demo_with(&[]);
    let mut text = std::fs::read_to_string(&p).unwrap();
    let filler = format!("# {}\n", "x".repeat(1000));
    while text.len() <= 1 << 20 {
        text.push_str(&filler);
    }
    std::fs::write(&p, &text).unwrap();
    refused(
        &["rank", s(&p)],
        &["cannot read plan", "above the 1 MiB limit for a plan"],
    );
}

/// A weather file above 64 MiB is refused from its size (a sparse file: no disk is used).
#[test]
fn weather_file_above_the_size_limit_is_refused() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let big = dir.path().join("big.csv");
    let f = std::fs::File::create(&big).unwrap();
    f.set_len((64 << 20) + 1).unwrap();
    refused(
        &["weather", "inspect", s(&big)],
        &["above the 64 MiB limit for a weather file"],
    );
    refused(
        &["weather", "import", s(&big), "--out", "never.csv"],
        &["above the 64 MiB limit for a weather file"],
    );
}

/// Campaign finding: one year of 1-minute weather took 3.5 GB (and 217 MB of it 13.6 GB).
/// At most 530,000 intervals (ten years of 10-minute data), refused while the lines are
/// counted, before any value is parsed.
#[test]
fn more_intervals_than_the_limit_are_refused_with_what_to_change() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let path = dir.path().join("minutes.csv");
    let mut text = String::from(
        "# wirerank weather 1\n# latitude_deg = 47.2\n# longitude_deg = 9.6\n# elevation_m = 900\n\
         # utc_offset_h = 1\n# interval_min = 1\n# stamp = start\ntime_local,ghi_w_m2,air_temp_c\n",
    );
    // 28-day months are enough: the count is refused before any stamp is read.
    for k in 0..530_001u32 {
        let (day, min) = (k / 1440, k % 1440);
        text.push_str(&format!(
            "{}-{:02}-{:02}T{:02}:{:02},0,5\n",
            2025 + day / 336,
            1 + (day / 28) % 12,
            1 + day % 28,
            min / 60,
            min % 60
        ));
    }
    std::fs::write(&path, text).unwrap();
    refused(
        &["weather", "inspect", s(&path)],
        &[
            "530001 intervals is above the limit of 530000",
            "use a longer interval_min",
        ],
    );
}

// ---- Messages ----

/// Campaign finding: a pole obstacle with a `footprint_m` key was accepted, the key ignored.
#[test]
fn pole_with_a_footprint_is_refused_naming_the_line() {
    let (_d, p) = demo_with(&[(
        SPRUCE,
        &format!("{SPRUCE}\nfootprint_m = [[10, -6], [14, -6], [14, -4], [10, -4]]"),
    )]);
    let text = std::fs::read_to_string(&p).unwrap();
    let line = text
        .lines()
        .position(|l| l == "[[obstacle]]")
        .expect("the obstacle table")
        + 1;
    refused(
        &["rank", s(&p)],
        &[
            &format!("plan.toml:{}:", line + 7),
            "obstacle[1].footprint_m is not a key of kind = \"pole\" obstacles",
        ],
    );
}

/// Campaign finding: invalid UTF-8 was reported with no line.
#[test]
fn invalid_utf8_is_reported_with_line_and_byte() {
    let (_d, p) = demo_with(&[]);
    let mut bytes = std::fs::read(&p).unwrap();
    let at = bytes.iter().position(|&b| b == b'\n').unwrap() + 1; // start of line 2
    bytes.insert(at, 0xff);
    std::fs::write(&p, &bytes).unwrap();
    refused(
        &["rank", s(&p)],
        &[&format!(
            "line 2 (byte {}) is not valid UTF-8; save the plan as UTF-8 text",
            at + 1
        )],
    );
    let w = root().join("tests/fixtures/weather_15min.csv");
    let mut bytes = std::fs::read(&w).unwrap();
    let line3 = bytes
        .iter()
        .enumerate()
        .filter(|(_, &b)| b == b'\n')
        .nth(1)
        .unwrap()
        .0
        + 1;
    bytes.insert(line3 + 2, 0xc3); // a lone lead byte
    let dir = tempfile::tempdir().unwrap();
    let bad = dir.path().join("w.csv");
    std::fs::write(&bad, &bytes).unwrap();
    refused(
        &["weather", "inspect", s(&bad)],
        &[&format!(
            "line 3 (byte {}) is not valid UTF-8; save the weather file as UTF-8 text",
            line3 + 3
        )],
    );
}

/// Campaign finding: NUL and ESC from the plan were echoed raw to the terminal. A layout
/// name with ESC (a TOML escape) shows as `\x1b` in the report; an unknown controller name
/// with NUL shows as `\0` in the error.
#[test]
fn control_characters_from_the_plan_are_escaped_on_the_terminal() {
    let first = "[[layout]]\nstrings.mppt";
    let (_d, p) = demo_with(&[(first, "[[layout]]\nname = \"red\\u001b[31m\"\nstrings.mppt")]);
    let out = wirerank(&["rank", s(&p)]);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    assert_clean(&out);
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(stdout.contains("red\\x1b[31m"), "{stdout}");

    let (_d, p) = demo_with(&[(first, "[[layout]]\nstrings.\"mp\\u0000pt\"")]);
    refused(
        &["rank", s(&p)],
        &["\"mp\\0pt\" names no [controller] table"],
    );

    // A raw control character in a weather file is refused with its line and column.
    let w = std::fs::read_to_string(root().join("tests/fixtures/weather_15min.csv")).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let bad = dir.path().join("w.csv");
    std::fs::write(
        &bad,
        w.replacen("2025-06-21T00:15,0.0", "2025-06-21T00:15,\u{1b}0.0", 1),
    )
    .unwrap();
    refused(
        &["weather", "inspect", s(&bad)],
        &["line 11: column 18 holds the control character U+001B; a weather file is plain text"],
    );
}

/// Campaign finding: horizon errors counted points from 0 in one message and from 1 in
/// another. Both count from 1 now.
#[test]
fn horizon_points_are_numbered_from_one_in_every_message() {
    let h = "horizon = [[0, 2], [90, 3],";
    let (_d, p) = demo_with(&[(h, "horizon = [[0, 2], [0, 3],")]);
    refused(
        &["rank", s(&p)],
        &["site.horizon: horizon point 2: azimuth_deg = 0 does not increase"],
    );
    let (_d, p) = demo_with(&[(h, "horizon = [[0, 2], [90, 3, 1],")]);
    refused(&["rank", s(&p)], &["site.horizon point 2 has 3 numbers"]);
    let (_d, p) = demo_with(&[(h, "horizon = [[400, 2], [90, 3],")]);
    refused(
        &["rank", s(&p)],
        &["site.horizon: horizon point 1: azimuth_deg = 400 is outside 0 to 360"],
    );
}

/// Campaign finding: several enforced limits (cables at most 1000 m) were not in
/// plan-format.md. Every range the plan reader enforces on a numeric key appears in the page
/// (checked for the keys named here, one per section at least).
#[test]
fn enforced_limits_are_documented() {
    let doc = std::fs::read_to_string(root().join("notebooks-free-docs/plan-format.md")).unwrap();
    for needle in [
        "string_lead_length_m",
        "0 to 1000",
        "main_run_length_m",
        "100000",
        "500 modules",
        "1000 `[[layout]]`",
        "−1000 to 1000",
    ] {
        assert!(doc.contains(needle), "plan-format.md lacks {needle:?}");
    }
}

// ---- Finite results from hostile but accepted extremes ----

/// Every accepted extreme at once (largest hourly load, largest battery, longest cables,
/// the farthest and tallest obstacle, the highest charge and discharge rates): `rank --out`
/// finishes, and the terminal, JSON and every CSV hold finite numbers only (no `inf` or `NaN`
/// anywhere). Source: the ranges of plan-format.md; the property is
/// issue 17's "non-finite results anywhere are a bug" (no numeric source needed).
#[test]
fn accepted_extremes_give_finite_outputs_end_to_end() {
    let big_load = format!("daily_wh = [{}]", vec!["100000"; 24].join(", "));
    let (dir, p) = demo_with(&[
        (DEMO_LOAD, &big_load),
        ("capacity_ah = 220", "capacity_ah = 1000000000"),
        (
            "usable_dod_pct = 50",
            "usable_dod_pct = 100\nmax_charge_rate_c = 10\nmax_discharge_rate_c = 10",
        ),
        (
            "unmet_target_kwh = 0",
            "unmet_target_kwh = 1000000\nautonomy_days = 30",
        ),
        ("main_run_length_m = 12", "main_run_length_m = 1000"),
        ("string_lead_length_m = 5", "string_lead_length_m = 1000"),
        (
            SPRUCE,
            "east_m = 1000.0\nnorth_m = -1000.0\nradius_m = 50.0\nheight_m = 500.0",
        ),
    ]);
    let out_dir = dir.path().join("out");
    let out = wirerank_within(
        &["rank", s(&p), "--out", s(&out_dir)],
        Duration::from_secs(300),
    );
    let code = out.status.code();
    assert!(
        code == Some(0) || code == Some(1),
        "exit {code:?}: {}",
        stderr(&out)
    );
    assert_clean(&out);
    let not_finite = |text: &str| {
        text.split(|c: char| !(c.is_ascii_alphanumeric() || c == '.' || c == '-' || c == '+'))
            .any(|w| {
                let w = w.trim_start_matches(['-', '+']).to_ascii_lowercase();
                w == "inf" || w == "nan" || w == "infinity"
            })
    };
    let terminal = String::from_utf8_lossy(&out.stdout);
    assert!(!not_finite(&terminal), "terminal: {terminal}");
    let mut csvs = 0;
    for entry in std::fs::read_dir(&out_dir).expect("the output folder") {
        let path = entry.unwrap().path();
        if path
            .extension()
            .is_some_and(|e| e == "csv" || e == "json" || e == "toml" || e == "txt")
        {
            let text = std::fs::read_to_string(&path).unwrap();
            assert!(!not_finite(&text), "{}", path.display());
            csvs += 1;
        }
    }
    assert!(csvs >= 3, "the run wrote its CSV files");
    let json = wirerank_within(
        &["rank", s(&p), "--format", "json"],
        Duration::from_secs(300),
    );
    let v: serde_json::Value = serde_json::from_slice(&json.stdout).expect("JSON output");
    fn walk(v: &serde_json::Value, path: &str) {
        match v {
            serde_json::Value::Number(n) => {
                assert!(n.as_f64().is_some_and(f64::is_finite), "{path} = {n}")
            }
            serde_json::Value::Array(a) => {
                for (i, x) in a.iter().enumerate() {
                    walk(x, &format!("{path}[{i}]"));
                }
            }
            serde_json::Value::Object(o) => {
                for (k, x) in o {
                    walk(x, &format!("{path}.{k}"));
                }
            }
            _ => {}
        }
    }
    walk(&v, "");
}

/// Campaign finding: 10,000 modules with `layouts = "all"` passed 14 GB. Enumeration takes at
/// most 100 modules; the message says to list layouts instead.
#[test]
fn enumerating_more_than_100_modules_is_refused() {
    let (_d, p) = demo_with(&[
        ("[site]\n", "layouts = \"all\"\n\n[site]\n"),
        (
            "[battery]\n",
            "[group.more]\nmodule_type = \"m120\"\ncount = 93\ntilt_deg = 30\nazimuth_deg = 180\n\n[battery]\n",
        ),
    ]);
    refused(
        &["rank", s(&p)],
        &["layouts = \"all\" enumerates the wirings of at most 100 modules and the plan has 101"],
    );
}
