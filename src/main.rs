//! The `wirerank` binary: parse arguments, call the library, print, set the exit code.
//!
//! Exit codes: 0 success, 1 when no layout passes the limits, 2 bad input or I/O.

mod cli;

use std::io::Write;
use std::process::ExitCode;

use clap::Parser;

fn main() -> ExitCode {
    let cli = match cli::Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            let code = if e.use_stderr() { 2 } else { 0 };
            let _ = e.print();
            return ExitCode::from(code);
        }
    };
    let request = cli.into_request();
    let quiet = matches!(&request, wirerank::Request::Rank(r) if r.quiet);
    match wirerank::run(request) {
        Ok(outcome) => {
            if !quiet {
                let mut err = std::io::stderr().lock();
                for w in &outcome.warnings {
                    let _ = writeln!(err, "warning: {w}");
                }
            }
            let mut out = std::io::stdout().lock();
            // A closed pipe (`wirerank ... | head`) is not an error.
            match out
                .write_all(outcome.stdout.as_bytes())
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
                msg.push_str(&format!("\n  caused by: {s}"));
                source = s.source();
            }
            eprintln!("{msg}");
            ExitCode::from(2)
        }
    }
}
