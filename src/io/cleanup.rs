//! The temporaries of the running command, removed when SIGINT or SIGTERM stops it.
//!
//! Every writer registers the temporary file or folder it is about to create (before it
//! exists) and unregisters it once it is renamed into place or removed. The binary calls
//! [`remove_temporaries_on_signal`] once: a thread then waits for SIGINT or SIGTERM (the
//! signal handler itself only writes to a pipe, through `signal-hook`), removes whatever is
//! registered and exits with 128 + the signal number (130, 143).
//!
//! Steps that must not be cut in half hold the registry's lock ([`guarded`]): writing one
//! file, and the rename or exchange that puts a set in place. The signal thread takes the
//! same lock, so it acts between two such steps, never inside one: before the swap it
//! removes the new set (the old one stays), after it the old one (the new one stays).

use std::path::{Path, PathBuf};
use std::sync::{Mutex, MutexGuard, PoisonError};

static REGISTRY: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

fn registry() -> MutexGuard<'static, Vec<PathBuf>> {
    REGISTRY.lock().unwrap_or_else(PoisonError::into_inner)
}

/// The registry, held: no signal can act until it is dropped.
pub struct Held<'a>(MutexGuard<'a, Vec<PathBuf>>);

impl Held<'_> {
    /// Registers `path` for removal on a signal (it need not exist yet).
    pub fn add(&mut self, path: &Path) {
        self.0.push(path.to_path_buf());
    }

    /// Stops removing `path` on a signal.
    pub fn forget(&mut self, path: &Path) {
        if let Some(k) = self.0.iter().rposition(|p| p == path) {
            self.0.remove(k);
        }
    }
}

/// Runs `step` while no signal can remove a temporary (see the module text); `step` may
/// register and forget paths through its argument. Keep steps short: a signal waits for
/// the step to end. Never create or drop a [`Registered`] inside a step (the lock is not
/// re-entrant).
pub fn guarded<R>(step: impl FnOnce(&mut Held<'_>) -> R) -> R {
    let mut held = Held(registry());
    step(&mut held)
}

/// A temporary path removed on a signal until this value is dropped (dropping unregisters
/// it; it does not remove anything from disk).
#[derive(Debug)]
pub struct Registered {
    path: PathBuf,
}

impl Registered {
    /// Registers `path` (which need not exist yet).
    pub fn new(path: PathBuf) -> Self {
        registry().push(path.clone());
        Registered { path }
    }

    /// Takes charge of a path already registered through [`Held::add`].
    pub fn adopt(path: PathBuf) -> Self {
        Registered { path }
    }

    pub fn path(&self) -> &Path {
        &self.path
    }
}

impl Drop for Registered {
    fn drop(&mut self) {
        Held(registry()).forget(&self.path);
    }
}

/// Removes a file or a folder with everything in it, without following symbolic links
/// (a link is removed, never what it points to).
pub fn remove_path(path: &Path) -> std::io::Result<()> {
    match std::fs::symlink_metadata(path) {
        Ok(m) if m.is_dir() => std::fs::remove_dir_all(path),
        Ok(_) => std::fs::remove_file(path),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Ok(()),
        Err(e) => Err(e),
    }
}

/// Starts the thread that, on SIGINT or SIGTERM, removes every registered temporary, says
/// so on stderr and exits with 130 (SIGINT) or 143 (SIGTERM). Call once, from `main`.
///
/// # Errors
/// When the signal handlers or the thread cannot be set up.
#[cfg(unix)]
pub fn remove_temporaries_on_signal() -> std::io::Result<()> {
    use signal_hook::consts::signal::{SIGINT, SIGTERM};
    let mut signals = signal_hook::iterator::Signals::new([SIGINT, SIGTERM])?;
    std::thread::Builder::new()
        .name("signals".into())
        .spawn(move || {
            if let Some(signal) = signals.forever().next() {
                let name = if signal == SIGINT {
                    "SIGINT"
                } else {
                    "SIGTERM"
                };
                // Held until the process exits: no writer starts another step.
                let held = registry();
                let mut msg = format!("error: stopped by {name}");
                for p in held.iter() {
                    match remove_path(p) {
                        Ok(()) => msg
                            .push_str(&format!("\n  removed the run's temporary {}", p.display())),
                        Err(e) => msg.push_str(&format!(
                            "\n  could not remove the temporary {}: {e}",
                            p.display()
                        )),
                    }
                }
                eprintln!("{msg}");
                std::process::exit(128 + signal);
            }
        })?;
    Ok(())
}

/// Elsewhere (no SIGTERM; `signal-hook`'s signal thread is Unix-only) nothing is watched:
/// Ctrl-C ends the process as before and may leave a hidden temporary.
///
/// # Errors
/// Never.
#[cfg(not(unix))]
pub fn remove_temporaries_on_signal() -> std::io::Result<()> {
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn registering_and_dropping_leaves_the_registry_as_it_was() {
        let before = registry().len();
        let a = Registered::new(PathBuf::from("/nonexistent/a"));
        let b = Registered::new(PathBuf::from("/nonexistent/b"));
        assert_eq!(registry().len(), before + 2);
        drop(a);
        assert!(registry().iter().any(|p| p == b.path()));
        drop(b);
        assert_eq!(registry().len(), before);
    }

    #[test]
    fn remove_path_removes_a_link_not_its_target() {
        let dir = tempfile::tempdir().expect("temporary folder");
        let target = dir.path().join("precious.txt");
        std::fs::write(&target, "keep").expect("target");
        let inner = dir.path().join("t");
        std::fs::create_dir(&inner).expect("folder");
        #[cfg(unix)]
        std::os::unix::fs::symlink(&target, inner.join("link")).expect("link");
        std::fs::write(inner.join("x.csv"), "1").expect("file");
        remove_path(&inner).expect("removed");
        assert!(!inner.exists());
        assert_eq!(std::fs::read(&target).expect("target"), b"keep");
        remove_path(&inner).expect("a missing path is already removed");
    }
}
