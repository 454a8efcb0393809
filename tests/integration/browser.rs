//! report.html in a real browser: headless Chromium loads the page written by `rank --out`,
//! and the tests check what a person would see — the rendered text holds the layout to
//! build, its wiring and the cautions; the page logs nothing on the console and asks the
//! network for nothing — and save screenshots under the target folder to look at.
//!
//! Chromium is not a build dependency: when it is not installed (Debian: `apt-get install
//! chromium`; `.ci/run` installs it), each browser test prints a visible SKIPPED line on
//! stderr and returns. The checks that need no browser (size, no external references,
//! escaping) run always.

use std::path::{Path, PathBuf};
use std::process::Command;

use crate::support::{fixture, wirerank};
use wirerank::io::report_pdf::{file_url, find_chromium, HEADLESS_FLAGS};

/// Runs `rank PLAN --out DIR` into a fresh folder and returns it with report.html's text.
fn report(plan: &str) -> (tempfile::TempDir, PathBuf, String) {
    let dir = tempfile::tempdir().expect("temporary folder");
    let out = dir.path().join("out");
    let o = wirerank(&[
        "rank",
        plan,
        "--out",
        out.to_str().expect("utf-8 path"),
        "-q",
    ]);
    assert!(
        o.status.success(),
        "rank {plan} failed: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    let html = out.join("report.html");
    let text = std::fs::read_to_string(&html).expect("report.html is written");
    (dir, html, text)
}

/// A line on stderr that the test harness does not capture (it captures `eprintln!`), so
/// that a skipped browser test and the screenshots' paths show in a plain `cargo test`.
fn visible(line: &str) {
    use std::io::Write as _;
    let _ = writeln!(std::io::stderr().lock(), "{line}");
}

/// The browser, or `None` after printing why the test is skipped.
fn browser(test: &str) -> Option<PathBuf> {
    match find_chromium() {
        Ok(b) => Some(b),
        Err(why) => {
            visible(&format!(
                "SKIPPED: chromium not found, {test} not run ({why})"
            ));
            None
        }
    }
}

/// What one headless load of a page gave: the DOM after loading, the console messages,
/// and the network requests the page made.
struct Loaded {
    dom: String,
    console: Vec<String>,
    requests: Vec<String>,
}

/// Loads `page` in headless Chromium with console logging and a network log.
fn load(browser: &Path, page: &Path) -> Loaded {
    let work = tempfile::tempdir().expect("temporary folder");
    let netlog = work.path().join("net.json");
    let o = Command::new(browser)
        .args(HEADLESS_FLAGS)
        .arg(format!(
            "--user-data-dir={}",
            work.path().join("profile").display()
        ))
        .arg("--enable-logging=stderr")
        .arg("--v=0")
        .arg(format!("--log-net-log={}", netlog.display()))
        .arg("--dump-dom")
        .arg(file_url(&std::fs::canonicalize(page).expect("page exists")))
        .output()
        .expect("the browser starts");
    assert!(
        o.status.success(),
        "the browser failed: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    let stderr = String::from_utf8_lossy(&o.stderr);
    // Chromium logs a page's console messages (any level, and uncaught errors) as
    // `…:INFO:CONSOLE…] "message", source: …` with --enable-logging=stderr.
    let console = stderr
        .lines()
        .filter(|l| l.contains(":CONSOLE"))
        .map(str::to_string)
        .collect();
    Loaded {
        dom: String::from_utf8_lossy(&o.stdout).into_owned(),
        console,
        requests: page_requests(&netlog),
    }
}

/// The URLs the page itself requested, from Chromium's network log: the requests made on
/// behalf of a `file://` document (the browser's own background requests carry no such
/// origin and are not the page's doing; the host-resolver rule keeps them on the machine).
fn page_requests(netlog: &Path) -> Vec<String> {
    let text = std::fs::read_to_string(netlog).expect("the network log is written");
    // The browser may end before it closes the log's JSON; the events are whole lines.
    let events: Vec<serde_json::Value> = text
        .lines()
        .filter_map(|l| serde_json::from_str(l.trim_end_matches(',')).ok())
        .collect();
    events
        .iter()
        .filter_map(|e| e.get("params"))
        .filter(|p| {
            p.get("network_isolation_key")
                .and_then(|k| k.as_str())
                .is_some_and(|k| k.contains("file://"))
        })
        .filter_map(|p| p.get("url").and_then(|u| u.as_str()))
        .filter(|u| !u.starts_with("file:") && !u.starts_with("data:"))
        .map(str::to_string)
        .collect()
}

/// Saves a screenshot of `page` at the window size given and returns its path.
fn screenshot(browser: &Path, page: &Path, name: &str, width: u32, height: u32) -> PathBuf {
    let folder = Path::new(env!("CARGO_TARGET_TMPDIR")).join("report-screenshots");
    std::fs::create_dir_all(&folder).expect("screenshot folder");
    let png = folder.join(name);
    let _ = std::fs::remove_file(&png);
    let work = tempfile::tempdir().expect("temporary folder");
    let o = Command::new(browser)
        .args(HEADLESS_FLAGS)
        .arg(format!("--user-data-dir={}", work.path().display()))
        .arg(format!("--window-size={width},{height}"))
        .arg(format!("--screenshot={}", png.display()))
        .arg(file_url(&std::fs::canonicalize(page).expect("page exists")))
        .output()
        .expect("the browser starts");
    assert!(
        o.status.success(),
        "no screenshot: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    let bytes = std::fs::read(&png).expect("the screenshot is written");
    assert!(
        bytes.starts_with(b"\x89PNG"),
        "{} is not a PNG",
        png.display()
    );
    visible(&format!("screenshot: {}", png.display()));
    png
}

/// The page's text without markup (tags dropped, the few entities our pages use decoded).
fn text_of(html: &str) -> String {
    let mut out = String::with_capacity(html.len());
    let mut in_tag = false;
    for c in html.chars() {
        match c {
            '<' => in_tag = true,
            '>' if in_tag => {
                in_tag = false;
                out.push(' ');
            }
            _ if !in_tag => out.push(c),
            _ => {}
        }
    }
    let out = out
        .replace("&lt;", "<")
        .replace("&gt;", ">")
        .replace("&quot;", "\"")
        .replace("&#x27;", "'")
        .replace("&#39;", "'")
        .replace("&#x2f;", "/")
        .replace("&amp;", "&");
    out.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// Nothing in the page can make a browser load anything: no script, no stylesheet or font
/// link, no `src`, `href`, `url(` or `@import`.
fn assert_self_contained(html: &str) {
    let lower = html.to_lowercase();
    for banned in [
        "<script", "<link", "<iframe", "<img", " src=", " href=", "url(", "@import",
    ] {
        assert!(!lower.contains(banned), "report.html contains {banned}");
    }
}

#[test]
fn the_demo_report_is_self_contained_and_small() {
    let (_dir, _html, text) = report("demo");
    assert_self_contained(&text);
    // The limit for the demo's page: under 2 MB.
    assert!(
        text.len() < 2_000_000,
        "report.html is {} bytes",
        text.len()
    );
    let plain = text_of(&text);
    // The sections in the documented order (notebooks-free-docs/report-html.md).
    let order = [
        "Larchwood cabin (invented)",
        "Before you build.",
        "What to build",
        "Build L1:",
        "Wiring of L1, module by module",
        "Energy month by month",
        "Winter outlook",
        "The alternatives",
        "Rejected layouts",
        "P50 and P90",
        "Checks on the layout to build, and their margins",
        "Cautions.",
        "Provenance",
    ];
    let mut at = 0;
    for s in order {
        let k = plain[at..]
            .find(s)
            .unwrap_or_else(|| panic!("{s:?} missing or out of order"));
        at += k + s.len();
    }
}

#[test]
fn names_from_the_plan_are_escaped_in_the_report() {
    let plan = fixture("plan_html_escape.toml");
    let (_dir, _html, text) = report(plan.to_str().expect("utf-8 path"));
    // The names hold the text ` src=`, so the raw-text check is on the tags themselves.
    for tag in ["<script", "<img", "<b>"] {
        assert!(!text.contains(tag), "an unescaped {tag} in report.html");
    }
    // minijinja's HTML escaping (it also escapes `/` as `&#x2f;`).
    assert!(
        text.contains("Cabin &lt;script&gt;alert(1)&lt;&#x2f;script&gt; &amp; &quot;shed&quot;")
    );
    assert!(text.contains("&lt;b&gt;three&lt;&#x2f;b&gt; inputs &amp; more"));
    assert!(!text.contains("<b>three"));
    let plain = text_of(&text);
    assert!(plain.contains("Cabin <script>alert(1)</script> & \"shed\" (invented)"));
    assert!(plain.contains("east on the PWM <img src=x onerror=alert(2)>"));
}

#[test]
fn the_demo_report_renders_in_a_real_browser() {
    let Some(b) = browser("the_demo_report_renders_in_a_real_browser") else {
        return;
    };
    let (_dir, html, _text) = report("demo");
    let page = load(&b, &html);
    assert!(
        page.console.is_empty(),
        "console messages: {:#?}",
        page.console
    );
    assert!(
        page.requests.is_empty(),
        "the page asked for {:?}",
        page.requests
    );
    let seen = text_of(&page.dom);
    assert!(
        seen.contains("Build L1: mppt:2s4p[roof×3 shed×1]"),
        "{seen}"
    );
    // The wiring of the layout to build, module by module (the demo plan's L1).
    for s in [
        "roof-1 – roof-2",
        "roof-3 – roof-4",
        "roof-5 – roof-6",
        "shed-1 – shed-2",
    ] {
        assert!(seen.contains(s), "wiring {s} not rendered");
    }
    assert!(
        seen.matches("have a licensed professional check the design")
            .count()
            >= 2,
        "the cautions belong at the top and the bottom"
    );
    assert!(page.dom.contains("<svg"), "the pictures are inline SVG");
    screenshot(&b, &html, "demo_report_1200.png", 1200, 3000);
    screenshot(&b, &html, "demo_report_390.png", 390, 3000);
}

#[test]
fn a_three_input_report_renders_in_a_real_browser() {
    let Some(b) = browser("a_three_input_report_renders_in_a_real_browser") else {
        return;
    };
    let plan = fixture("plan_three_inputs.toml");
    let (_dir, html, _text) = report(plan.to_str().expect("utf-8 path"));
    let page = load(&b, &html);
    assert!(
        page.console.is_empty(),
        "console messages: {:#?}",
        page.console
    );
    assert!(
        page.requests.is_empty(),
        "the page asked for {:?}",
        page.requests
    );
    let seen = text_of(&page.dom);
    assert!(seen.contains("Build L1: three inputs"), "{seen}");
    assert!(seen.contains("Input in1 (MPPT, 150 V / 60 A)"));
    assert!(seen.contains("Input in2 (MPPT, 150 V / 60 A)"));
    screenshot(&b, &html, "three_inputs_report_1200.png", 1200, 3000);
}

#[test]
fn markup_in_plan_names_stays_text_in_a_real_browser() {
    let Some(b) = browser("markup_in_plan_names_stays_text_in_a_real_browser") else {
        return;
    };
    let plan = fixture("plan_html_escape.toml");
    let (_dir, html, _text) = report(plan.to_str().expect("utf-8 path"));
    let page = load(&b, &html);
    // An unescaped <script> would log (alert is not available headless) or run; an
    // unescaped <img src=x> would be requested.
    assert!(
        page.console.is_empty(),
        "console messages: {:#?}",
        page.console
    );
    assert!(
        page.requests.is_empty(),
        "the page asked for {:?}",
        page.requests
    );
    assert!(!page.dom.to_lowercase().contains("<script"));
    assert!(!page.dom.to_lowercase().contains("<img"));
}

#[test]
fn the_browser_checks_catch_console_errors_and_requests() {
    // The detectors themselves: a page with a script error and an external image must be
    // caught, or the checks above could never fail.
    let Some(b) = browser("the_browser_checks_catch_console_errors_and_requests") else {
        return;
    };
    let dir = tempfile::tempdir().expect("temporary folder");
    let page = dir.path().join("bad.html");
    std::fs::write(
        &page,
        "<!DOCTYPE html><html><head><title>bad</title></head><body><p>bad</p>\
         <img src=\"http://example.invalid/x.png\" alt=\"\">\
         <script>no_such_function();</script></body></html>",
    )
    .expect("writes");
    let loaded = load(&b, &page);
    assert!(
        loaded
            .console
            .iter()
            .any(|l| l.contains("no_such_function")),
        "{:?}",
        loaded.console
    );
    assert!(
        loaded
            .requests
            .iter()
            .any(|u| u == "http://example.invalid/x.png"),
        "{:?}",
        loaded.requests
    );
}

#[test]
fn pdf_is_printed_by_the_browser() {
    let Some(_) = browser("pdf_is_printed_by_the_browser") else {
        return;
    };
    let dir = tempfile::tempdir().expect("temporary folder");
    let out = dir.path().join("with pdf");
    let o = wirerank(&[
        "rank",
        "demo",
        "--out",
        out.to_str().expect("utf-8"),
        "--pdf",
        "-q",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let pdf = std::fs::read(out.join("report.pdf")).expect("report.pdf is written");
    assert!(pdf.starts_with(b"%PDF-"), "not a PDF");
    assert!(String::from_utf8_lossy(&o.stdout).contains("report.pdf"));
    assert!(!out.join("report.pdf.tmp").exists());
    // The PDF is part of the run's set (its manifest lists it): a later run without --pdf
    // replaces the folder, and the old PDF goes with the old set.
    let listed = std::fs::read_to_string(out.join(".wirerank-set")).expect("manifest");
    assert!(listed.lines().any(|l| l == "report.pdf"), "{listed}");
    let again = wirerank(&["rank", "demo", "--out", out.to_str().expect("utf-8"), "-q"]);
    assert!(
        again.status.success(),
        "{}",
        String::from_utf8_lossy(&again.stderr)
    );
    assert!(
        !out.join("report.pdf").exists(),
        "the old set's PDF went with it"
    );
    assert!(out.join("report.html").exists());
}

#[test]
fn pdf_without_a_browser_says_so_and_writes_nothing() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let out = dir.path().join("out");
    let run = |env: &[(&str, &std::ffi::OsStr)]| {
        let mut c = Command::new(env!("CARGO_BIN_EXE_wirerank"));
        c.args([
            "rank",
            "demo",
            "--out",
            out.to_str().expect("utf-8"),
            "--pdf",
        ])
        .env_remove("WIRERANK_CHROMIUM");
        for (k, v) in env {
            c.env(k, v);
        }
        c.output().expect("the wirerank binary runs")
    };
    let missing = dir.path().join("no-such-browser");
    let o = run(&[("WIRERANK_CHROMIUM", missing.as_os_str())]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(
        err.contains("WIRERANK_CHROMIUM names") && err.contains("no-such-browser"),
        "{err}"
    );
    assert!(err.contains("Nothing was written"), "{err}");
    assert!(!out.exists(), "nothing is written without a browser");
    let empty = dir.path().join("empty");
    std::fs::create_dir(&empty).expect("folder");
    let o = run(&[("PATH", empty.as_os_str())]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.contains("no headless browser found"), "{err}");
    assert!(!out.exists());
}

#[test]
fn when_nothing_passes_the_report_says_so_with_the_rejections() {
    let dir = tempfile::tempdir().expect("temporary folder");
    let out = dir.path().join("out");
    let plan = fixture("plan_nothing_passes.toml");
    let o = wirerank(&[
        "rank",
        plan.to_str().expect("utf-8"),
        "--out",
        out.to_str().expect("utf-8"),
        "-q",
    ]);
    // Exit code 1: the command ran and no layout passes (README, exit codes).
    assert_eq!(
        o.status.code(),
        Some(1),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let text = std::fs::read_to_string(out.join("report.html")).expect("report.html");
    assert_self_contained(&text);
    let plain = text_of(&text);
    for s in [
        "No layout passes the electrical limits.",
        "Rejected layouts",
        "have a licensed professional check the design",
        "Provenance",
    ] {
        assert!(plain.contains(s), "{s:?} missing");
    }
    assert!(!plain.contains("Build L"), "nothing is recommended");
}
