//! The `wirerank` binary: parse arguments, call the library, print, set the exit code.
//!
//! Exit codes: 0 success, 1 when no layout passes the limits, 2 bad input or I/O, 130 and
//! 143 when stopped by SIGINT or SIGTERM (the run's temporary output is removed first).

mod cli;

use std::io::Write;
use std::process::ExitCode;

use clap::Parser;

fn main() -> ExitCode {
    // Before anything is written: SIGINT and SIGTERM remove the run's temporaries.
    if let Err(e) = wirerank::io::cleanup::remove_temporaries_on_signal() {
        eprintln!("error: cannot watch for SIGINT and SIGTERM: {e}");
        return ExitCode::from(2);
    }
    let cli = match cli::Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            let code = if e.use_stderr() { 2 } else { 0 };
            let _ = e.print();
            return ExitCode::from(code);
        }
    };
    let request = cli.into_request();
    let quiet = matches!(&request, wirerank::commands::Request::Rank(r) if r.quiet);
    let progress = Progress::new(quiet);
    let tick = |total: usize| progress.tick(total);
    let result = wirerank::run(request, &tick);
    progress.finish();
    match result {
        Ok(outcome) => {
            if !quiet {
                let mut err = std::io::stderr().lock();
                for w in &outcome.warnings {
                    let _ = writeln!(err, "warning: {}", wirerank::text::escape_controls(w));
                }
            }
            let mut out = std::io::stdout().lock();
            // A closed pipe (`wirerank ... | head`) is not an error.
            match out
                .write_all(wirerank::text::escape_controls(&outcome.stdout).as_bytes())
                .and_then(|_| out.flush())
            {
                Ok(()) => {}
                Err(e) if e.kind() == std::io::ErrorKind::BrokenPipe => {}
                Err(e) => {
                    eprintln!("error: cannot write to stdout: {e}");
                    return ExitCode::from(2);
                }
            }
            if outcome.nothing_passed {
                ExitCode::from(1)
            } else {
                ExitCode::SUCCESS
            }
        }
        Err(e) => {
            let mut msg = format!("error: {e}");
            let mut source = std::error::Error::source(&e);
            while let Some(s) = source {
                // An error that already quotes its cause (`cannot write X: <cause>`) does
                // not repeat it.
                let cause = s.to_string();
                if !msg.contains(&cause) {
                    msg.push_str(&format!("\n  caused by: {cause}"));
                }
                source = s.source();
            }
            eprintln!("{}", wirerank::text::escape_controls(&msg));
            ExitCode::from(2)
        }
    }
}

/// A progress bar on stderr for runs longer than about a second: it stays hidden until a
/// second has passed, and always when stderr is not a terminal or with `--quiet`.
struct Progress {
    bar: Option<indicatif::ProgressBar>,
    started: std::time::Instant,
    done: std::sync::atomic::AtomicU64,
}

impl Progress {
    fn new(quiet: bool) -> Self {
        use std::io::IsTerminal;
        let bar = (!quiet && std::io::stderr().is_terminal()).then(|| {
            let b = indicatif::ProgressBar::with_draw_target(
                None,
                indicatif::ProgressDrawTarget::hidden(),
            );
            b.set_style(
                indicatif::ProgressStyle::with_template(
                    "simulating layouts: {pos}/{len} done in {elapsed}, about {eta} left",
                )
                .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
            );
            b
        });
        Progress {
            bar,
            started: std::time::Instant::now(),
            done: std::sync::atomic::AtomicU64::new(0),
        }
    }

    /// One more layout of `total` done.
    fn tick(&self, total: usize) {
        let n = self.done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
        if let Some(b) = &self.bar {
            // The ranking simulates `total` layouts (the sizing searches report no progress).
            b.set_length((total as u64).max(n));
            if b.is_hidden() && self.started.elapsed() > std::time::Duration::from_secs(1) {
                b.set_draw_target(indicatif::ProgressDrawTarget::stderr());
            }
            b.set_position(n);
        }
    }

    fn finish(&self) {
        if let Some(b) = &self.bar {
            b.finish_and_clear();
        }
    }
}
