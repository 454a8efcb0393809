//! An output folder of several files (`rank --out`, `shade --out`), replaced as a whole and
//! private to one run.
//!
//! 1. **Lock.** An advisory lock (`flock`, through `std::fs::File::try_lock`) on the file
//!    `.<folder>.wirerank-lock` beside the folder: a second run into the same folder waits
//!    up to [`LOCK_WAIT`] for the first to finish, then refuses, naming the lock file. The
//!    lock file stays (an empty file; removing a lock file that another run may be waiting
//!    on would let a third run in beside it).
//! 2. **Only our own files are replaced.** The folder may already exist only when it is
//!    empty or holds nothing but the files listed in its manifest [`MANIFEST`] (an earlier
//!    run's set). Anything else — a file this tool did not list, a subfolder, a symbolic
//!    link, the run's own plan or weather file — is refused with a message saying to choose
//!    an empty or new folder. A user's files are never deleted or hidden.
//! 3. **A fresh folder.** The new set is written into `.<folder>.wirerank-new-<random>`
//!    beside the target (`create_dir`: it cannot exist already; every file created with
//!    `O_CREAT | O_EXCL | O_NOFOLLOW`, so a planted link is never followed), each file and
//!    the folder synced to disk, the manifest written last.
//! 4. **One step.** On Linux `renameat2(RENAME_EXCHANGE)` swaps the two folders atomically;
//!    the old set, now under the temporary name, is then removed file by file (only the
//!    names its manifest lists). Where the exchange is not supported (another system, some
//!    network file systems), two renames: the old folder to `.<folder>.wirerank-old-<random>`,
//!    the new one into place (a run killed between the two leaves the old set whole under
//!    that name and no folder at the target), then the old set is removed.
//!
//! Every temporary is registered with [`crate::io::cleanup`], so SIGINT and SIGTERM remove
//! it: a run stopped before the swap leaves the old set, after it the new one. A run killed
//! outright (SIGKILL) can leave `.<folder>.wirerank-new-*`; the next run into the folder
//! removes it while holding the lock (only when it holds nothing but regular files).
//!
//! Test hooks (environment variables, for the integration tests only, see DEVELOPERS.md):
//! `WIRERANK_TEST_PAUSE_BEFORE_SWAP` (milliseconds to sleep with the new set complete, just
//! before the swap), `WIRERANK_TEST_FAIL_SWAP` (the swap fails as a full disk would),
//! `WIRERANK_TEST_NO_EXCHANGE` (use the two-rename way) and `WIRERANK_TEST_LOCK_WAIT_MS`
//! (how long to wait for the lock).

use std::fs;
use std::io::{self, Write as _};
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};

use crate::error::Error;
use crate::io::atomic::{
    create_fresh_dir, create_new_file, fresh_name, pause_before_swap_for_tests, same_file, sync_dir,
};
use crate::io::cleanup::{self, remove_path, Registered};
use crate::io::plots::Chart;

/// The manifest of an output folder: its first line is [`MANIFEST_HEADER`], then one file
/// name per line.
pub const MANIFEST: &str = ".wirerank-set";
/// First line of a manifest.
pub const MANIFEST_HEADER: &str =
    "wirerank output set 1: these files were written together by one run";
/// How long a second run into the same folder waits for the first.
pub const LOCK_WAIT: Duration = Duration::from_secs(30);
/// Largest manifest read (a set lists a few dozen names).
const MANIFEST_MAX_BYTES: u64 = 1 << 20;
/// How many foreign names a refusal lists.
const NAMES_SHOWN: usize = 3;

/// An output folder being written: see the module text.
pub struct OutputSet {
    /// The folder as the user named it (messages and the returned paths).
    shown: PathBuf,
    /// The folder resolved: absolute, links followed.
    target: PathBuf,
    parent: PathBuf,
    base: String,
    inputs: Vec<(PathBuf, String)>,
    /// The fresh folder the new set is written into.
    temp: Option<Registered>,
    /// File names written, in order.
    names: Vec<String>,
    /// Folders this run created above the target, the outermost first.
    created_dirs: Vec<PathBuf>,
    lock_path: PathBuf,
    _lock: fs::File,
}

fn output_error(path: &Path, source: io::Error) -> Error {
    Error::Output {
        path: path.display().to_string(),
        source,
    }
}

fn refusal(path: &Path, kind: io::ErrorKind, message: String) -> Error {
    output_error(path, io::Error::new(kind, message))
}

fn test_hook(name: &str) -> Option<String> {
    std::env::var(name).ok().filter(|v| !v.is_empty())
}

fn test_hook_ms(name: &str) -> Option<Duration> {
    test_hook(name)
        .and_then(|v| v.parse::<u64>().ok())
        .map(Duration::from_millis)
}

impl OutputSet {
    /// Locks the folder `dir` (creating its parents when missing), checks that it may be
    /// replaced and creates the fresh folder for the new set. `inputs` are the run's input
    /// files with what they are (`"plan"`, `"weather"`): a folder holding one is refused.
    ///
    /// # Errors
    /// [`Error::Output`] naming the folder: cannot be created, is a file, holds files that
    /// are not an earlier run's set or an input, another run holds the lock past
    /// [`LOCK_WAIT`], the lock file is a link. Folders this call created are removed again.
    pub fn begin(dir: &Path, inputs: &[(&Path, &str)]) -> Result<Self, Error> {
        let (target, created_dirs) = resolve(dir)?;
        let parent = target.parent().map(Path::to_path_buf).ok_or_else(|| {
            refusal(
                dir,
                io::ErrorKind::InvalidInput,
                "the root folder cannot be an output folder; choose an empty or new folder".into(),
            )
        });
        let parent = match parent {
            Ok(p) => p,
            Err(e) => {
                undo_created(&created_dirs, None);
                return Err(e);
            }
        };
        let base = target
            .file_name()
            .map_or_else(|| "out".into(), |n| n.to_string_lossy().into_owned());
        let lock_path = parent.join(format!(".{base}.wirerank-lock"));
        let inputs: Vec<(PathBuf, String)> = inputs
            .iter()
            .map(|(p, w)| (p.to_path_buf(), (*w).to_string()))
            .collect();
        let started = (|| {
            // First without the lock, so that a refused folder gets no lock file beside it.
            inspect(&target, dir, &inputs)?;
            let lock = take_lock(&lock_path, dir)?;
            inspect(&target, dir, &inputs)?;
            sweep_stale(&parent, &base);
            let temp =
                create_fresh_dir(&parent, &base, "new", false).map_err(|e| output_error(dir, e))?;
            Ok((lock, temp))
        })();
        match started {
            Ok((lock, temp)) => Ok(OutputSet {
                shown: dir.to_path_buf(),
                target,
                parent,
                base,
                inputs,
                temp: Some(temp),
                names: Vec::new(),
                created_dirs,
                lock_path,
                _lock: lock,
            }),
            Err(e) => {
                undo_created(&created_dirs, Some(&lock_path));
                Err(e)
            }
        }
    }

    fn temp_path(&self) -> &Path {
        self.temp.as_ref().map_or(&self.target, Registered::path)
    }

    fn check_name(&self, name: &str) -> Result<(), Error> {
        let plain = !name.is_empty()
            && !name.starts_with('.')
            && !name.contains(['/', '\\'])
            && !self.names.iter().any(|n| n == name);
        if plain {
            Ok(())
        } else {
            Err(refusal(
                &self.shown.join(name),
                io::ErrorKind::InvalidInput,
                "not a plain, new file name in the set".into(),
            ))
        }
    }

    /// Writes one file of the set (synced to disk).
    ///
    /// # Errors
    /// [`Error::Output`] naming the file's final path.
    pub fn write(&mut self, name: &str, bytes: &[u8]) -> Result<(), Error> {
        self.check_name(name)?;
        let path = self.temp_path().join(name);
        cleanup::guarded(|_| {
            let mut f = create_new_file(&path)?;
            f.write_all(bytes)?;
            f.sync_all()
        })
        .map_err(|e| output_error(&self.shown.join(name), e))?;
        self.names.push(name.to_string());
        Ok(())
    }

    /// Draws a chart as `<stem>.png` into the set.
    ///
    /// # Errors
    /// [`Error::Output`] naming the file's final path.
    pub fn png(&mut self, chart: &Chart) -> Result<(), Error> {
        self.png_named(&chart.stem(), chart)
    }

    /// As [`Self::png`], under a chosen file stem.
    ///
    /// # Errors
    /// [`Error::Output`] naming the file's final path.
    pub fn png_named(&mut self, stem: &str, chart: &Chart) -> Result<(), Error> {
        self.produce(&format!("{stem}.png"), |path| {
            chart.to_png(path).map_err(io::Error::other)
        })
    }

    /// Adds a file that a program writes itself given its path (a PNG encoder, a browser
    /// printing a PDF): `produce` gets the file's path inside the new set, where the files
    /// written before it already are; the file is synced and joins the set.
    ///
    /// # Errors
    /// [`Error::Output`] naming the file's final path, with the error of `produce`.
    pub fn produce(
        &mut self,
        name: &str,
        produce: impl FnOnce(&Path) -> io::Result<()>,
    ) -> Result<(), Error> {
        self.check_name(name)?;
        // The writer opens the path itself; the folder is fresh, so nothing is planted.
        let path = self.temp_path().join(name);
        cleanup::guarded(|_| {
            produce(&path)?;
            fs::File::open(&path)?.sync_all()
        })
        .map_err(|e| output_error(&self.shown.join(name), e))?;
        self.names.push(name.to_string());
        Ok(())
    }

    /// Writes the manifest and puts the new set in place of the old one in one step.
    /// Returns the paths of the files written (as the folder was named), in writing order.
    ///
    /// # Errors
    /// [`Error::Output`] naming the folder; the old set (if any) is then as it was, and the
    /// new one is removed.
    pub fn commit(self) -> Result<Vec<PathBuf>, Error> {
        let two_renames = test_hook("WIRERANK_TEST_NO_EXCHANGE").is_some();
        self.commit_with(two_renames)
    }

    /// [`Self::commit`], with the two-rename way forced or not.
    fn commit_with(mut self, two_renames: bool) -> Result<Vec<PathBuf>, Error> {
        let temp = self.temp_path().to_path_buf();
        let shown = self.shown.clone();
        let err = |e: io::Error| output_error(&shown, e);
        let mut manifest = format!("{MANIFEST_HEADER}\n");
        for n in &self.names {
            manifest.push_str(n);
            manifest.push('\n');
        }
        cleanup::guarded(|_| {
            let mut f = create_new_file(&temp.join(MANIFEST))?;
            f.write_all(manifest.as_bytes())?;
            f.sync_all()
        })
        .map_err(err)?;
        // The new folder takes the old one's permissions (a shared folder stays shared).
        if let Ok(m) = fs::metadata(&self.target) {
            if m.is_dir() {
                fs::set_permissions(&temp, m.permissions()).map_err(err)?;
            }
        }
        sync_dir(&temp).map_err(err)?;

        pause_before_swap_for_tests();
        if test_hook("WIRERANK_TEST_FAIL_SWAP").is_some() {
            return Err(err(io::Error::other(
                "the swap failed (test hook WIRERANK_TEST_FAIL_SWAP)",
            )));
        }
        let (target, parent, base) = (&self.target, &self.parent, &self.base);
        let (shown_ref, inputs) = (&self.shown, &self.inputs);
        let swapped = cleanup::guarded(|held| -> Result<Swapped, Error> {
            // Checked again under the lock: the folder may have changed since `begin`.
            let present = inspect(target, shown_ref, inputs)?;
            if !present {
                fs::rename(&temp, target).map_err(err)?;
                held.forget(&temp);
                return Ok(Swapped::Nothing);
            }
            let exchanged = if two_renames {
                Err(io::Error::from(io::ErrorKind::Unsupported))
            } else {
                exchange(&temp, target)
            };
            match exchanged {
                Ok(()) => Ok(Swapped::AtTemp),
                Err(e) if unsupported(&e) => {
                    let old = parent.join(fresh_name(base, "old"));
                    held.add(&old);
                    if let Err(e) = fs::rename(target, &old) {
                        held.forget(&old);
                        return Err(err(e));
                    }
                    if let Err(e) = fs::rename(&temp, target) {
                        held.forget(&old);
                        if fs::rename(&old, target).is_err() {
                            return Err(err(io::Error::new(
                                e.kind(),
                                format!(
                                    "{e}; the previous files are kept whole in {}",
                                    old.display()
                                ),
                            )));
                        }
                        return Err(err(e));
                    }
                    held.forget(&temp);
                    Ok(Swapped::At(old))
                }
                Err(e) => Err(err(e)),
            }
        })?;
        let _ = sync_dir(parent);
        match swapped {
            Swapped::Nothing => {
                self.temp = None;
            }
            Swapped::AtTemp => {
                remove_old_set(&temp, parent, base);
                // Unregistered only now: a signal during the removal finishes it.
                self.temp = None;
            }
            Swapped::At(old) => {
                let old = Registered::adopt(old);
                self.temp = None;
                remove_old_set(old.path(), parent, base);
            }
        }
        self.created_dirs.clear();
        Ok(self.names.iter().map(|n| self.shown.join(n)).collect())
    }
}

/// Where the old set went.
enum Swapped {
    /// There was none.
    Nothing,
    /// Under the fresh folder's name (exchanged).
    AtTemp,
    /// Under this name (two renames).
    At(PathBuf),
}

impl Drop for OutputSet {
    fn drop(&mut self) {
        if let Some(temp) = self.temp.take() {
            // An unfinished set: removed, then unregistered.
            let _ = cleanup::guarded(|_| remove_path(temp.path()));
        }
        undo_created(&self.created_dirs, Some(&self.lock_path));
    }
}

/// The folder to replace, absolute with links followed (the user chose it, so a link to a
/// folder is honoured), and the folders created above it (outermost first).
fn resolve(dir: &Path) -> Result<(PathBuf, Vec<PathBuf>), Error> {
    match fs::symlink_metadata(dir) {
        Ok(_) => {
            let target = dir.canonicalize().map_err(|e| output_error(dir, e))?;
            if !target.is_dir() {
                return Err(refusal(
                    dir,
                    io::ErrorKind::NotADirectory,
                    "it is a file, not a folder; choose an empty or new folder".into(),
                ));
            }
            Ok((target, Vec::new()))
        }
        Err(e) if e.kind() == io::ErrorKind::NotFound => {
            let name = dir.file_name().ok_or_else(|| {
                refusal(dir, io::ErrorKind::InvalidInput, "not a folder name".into())
            })?;
            let parent = match dir.parent() {
                Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
                _ => PathBuf::from("."),
            };
            let mut created: Vec<PathBuf> = parent
                .ancestors()
                .take_while(|a| !a.as_os_str().is_empty() && fs::symlink_metadata(a).is_err())
                .map(Path::to_path_buf)
                .collect();
            created.reverse();
            if let Err(e) = fs::create_dir_all(&parent) {
                undo_created(&created, None);
                return Err(output_error(dir, e));
            }
            match parent.canonicalize() {
                Ok(p) => Ok((p.join(name), created)),
                Err(e) => {
                    undo_created(&created, None);
                    Err(output_error(dir, e))
                }
            }
        }
        Err(e) => Err(output_error(dir, e)),
    }
}

/// Removes the folders a failed run created (only empty ones, innermost first), and the
/// lock file when it sits in one of them.
fn undo_created(created: &[PathBuf], lock: Option<&Path>) {
    let Some(innermost) = created.last() else {
        return;
    };
    if let Some(lock) = lock {
        if lock.parent().is_some_and(|p| same_file(p, innermost)) {
            let _ = fs::remove_file(lock);
        }
    }
    for d in created.iter().rev() {
        let _ = fs::remove_dir(d);
    }
}

/// Opens (creating when missing) and locks the lock file, waiting up to [`LOCK_WAIT`].
fn take_lock(path: &Path, shown: &Path) -> Result<fs::File, Error> {
    if let Ok(m) = fs::symlink_metadata(path) {
        if !m.file_type().is_file() {
            return Err(refusal(
                shown,
                io::ErrorKind::InvalidInput,
                format!(
                    "the lock file {} is not a regular file (a link or a folder); wirerank does not follow it: remove it",
                    path.display()
                ),
            ));
        }
    }
    let mut o = fs::OpenOptions::new();
    o.read(true).write(true).create(true).truncate(false);
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt;
        o.custom_flags(libc::O_NOFOLLOW);
    }
    let f = o.open(path).map_err(|e| output_error(path, e))?;
    let wait = test_hook_ms("WIRERANK_TEST_LOCK_WAIT_MS").unwrap_or(LOCK_WAIT);
    let started = Instant::now();
    loop {
        match f.try_lock() {
            Ok(()) => return Ok(f),
            Err(fs::TryLockError::WouldBlock) if started.elapsed() < wait => {
                std::thread::sleep(Duration::from_millis(50));
            }
            Err(fs::TryLockError::WouldBlock) => {
                let secs = wait.as_secs_f64();
                return Err(refusal(
                    shown,
                    io::ErrorKind::WouldBlock,
                    format!(
                        "another wirerank run is writing this folder (it holds the lock file {}); waited {} {} for it — try again when it has finished, or choose another folder",
                        path.display(),
                        crate::num::Num(secs),
                        if secs == 1.0 { "second" } else { "seconds" }
                    ),
                ));
            }
            Err(fs::TryLockError::Error(e)) => return Err(output_error(path, e)),
        }
    }
}

/// The names a manifest lists, or `None` when `path` is not a manifest.
fn read_manifest(path: &Path) -> Option<Vec<String>> {
    let m = fs::symlink_metadata(path).ok()?;
    if !m.file_type().is_file() || m.len() > MANIFEST_MAX_BYTES {
        return None;
    }
    let text = fs::read_to_string(path).ok()?;
    let mut lines = text.lines();
    if lines.next()? != MANIFEST_HEADER {
        return None;
    }
    Some(
        lines
            .filter(|l| !l.is_empty() && *l != MANIFEST)
            .map(str::to_string)
            .collect(),
    )
}

/// Whether the folder exists (`false`: it does not), after checking that replacing it loses
/// nothing: it is a folder holding only regular files its manifest lists, none of them an
/// input of the run.
fn inspect(target: &Path, shown: &Path, inputs: &[(PathBuf, String)]) -> Result<bool, Error> {
    match fs::symlink_metadata(target) {
        Err(e) if e.kind() == io::ErrorKind::NotFound => return Ok(false),
        Err(e) => return Err(output_error(shown, e)),
        Ok(m) if !m.is_dir() => {
            return Err(refusal(
                shown,
                io::ErrorKind::NotADirectory,
                "it is not a folder; choose an empty or new folder".into(),
            ))
        }
        Ok(_) => {}
    }
    let listed = read_manifest(&target.join(MANIFEST)).unwrap_or_default();
    let mut foreign = Vec::new();
    for entry in fs::read_dir(target).map_err(|e| output_error(shown, e))? {
        let entry = entry.map_err(|e| output_error(shown, e))?;
        let name = entry.file_name().to_string_lossy().into_owned();
        let path = entry.path();
        for (input, what) in inputs {
            if same_file(&path, input) {
                return Err(refusal(
                    &shown.join(&name),
                    io::ErrorKind::InvalidInput,
                    format!(
                        "it is the {what} file of this run and would be replaced; choose another output folder"
                    ),
                ));
            }
        }
        let is_file = entry.file_type().is_ok_and(|t| t.is_file());
        if !(is_file && (name == MANIFEST || listed.contains(&name))) {
            foreign.push(name);
        }
    }
    if foreign.is_empty() {
        return Ok(true);
    }
    foreign.sort();
    let n = foreign.len();
    let mut shown_names: Vec<String> = foreign
        .iter()
        .take(NAMES_SHOWN)
        .map(|s| printable(s))
        .collect();
    if n > NAMES_SHOWN {
        shown_names.push(format!("{} more", n - NAMES_SHOWN));
    }
    Err(refusal(
        shown,
        io::ErrorKind::AlreadyExists,
        format!(
            "the folder holds {} that no earlier wirerank run wrote ({}); wirerank replaces an output folder as a whole and never deletes other files, so choose an empty or new folder",
            if n == 1 { "an entry".to_string() } else { format!("{n} entries") },
            join_and(&shown_names)
        ),
    ))
}

/// A file name fit for a terminal: control characters become U+FFFD.
fn printable(name: &str) -> String {
    name.chars()
        .map(|c| if c.is_control() { '\u{fffd}' } else { c })
        .collect()
}

fn join_and(items: &[String]) -> String {
    match items {
        [] => String::new(),
        [a] => a.clone(),
        [rest @ .., last] => format!("{} and {last}", rest.join(", ")),
    }
}

/// Removes the old set now at `at`: the files its manifest lists, the manifest, then the
/// folder. Anything else found there (a file added while the run was writing) is kept: the
/// folder is then renamed to `<folder>.wirerank-kept-<random>` beside the new one.
fn remove_old_set(at: &Path, parent: &Path, base: &str) {
    let manifest = at.join(MANIFEST);
    for n in read_manifest(&manifest).unwrap_or_default() {
        let p = at.join(&n);
        if fs::symlink_metadata(&p).is_ok_and(|m| m.file_type().is_file()) {
            let _ = fs::remove_file(p);
        }
    }
    let _ = fs::remove_file(manifest);
    if fs::remove_dir(at).is_err() && at.exists() {
        let kept = fresh_name(base, "kept");
        let _ = fs::rename(at, parent.join(kept.trim_start_matches('.')));
    }
}

/// Removes `.<base>.wirerank-new-*` folders left by a run killed outright (the lock is
/// held, so no live run owns one), when they hold only regular files.
fn sweep_stale(parent: &Path, base: &str) {
    let prefix = format!(".{base}.wirerank-new-");
    let Ok(entries) = fs::read_dir(parent) else {
        return;
    };
    for e in entries.flatten() {
        let name = e.file_name().to_string_lossy().into_owned();
        let Some(tail) = name.strip_prefix(&prefix) else {
            continue;
        };
        if tail.len() != 16 || !tail.bytes().all(|b| b.is_ascii_hexdigit()) {
            continue;
        }
        if !e.file_type().is_ok_and(|t| t.is_dir()) {
            continue;
        }
        let only_files = fs::read_dir(e.path()).is_ok_and(|inner| {
            inner
                .flatten()
                .all(|f| f.file_type().is_ok_and(|t| t.is_file()))
        });
        if only_files {
            let _ = fs::remove_dir_all(e.path());
        }
    }
}

/// Swaps two paths in one step (Linux `renameat2(RENAME_EXCHANGE)`).
#[cfg(target_os = "linux")]
fn exchange(a: &Path, b: &Path) -> io::Result<()> {
    use std::ffi::CString;
    use std::os::unix::ffi::OsStrExt;
    let a = CString::new(a.as_os_str().as_bytes())?;
    let b = CString::new(b.as_os_str().as_bytes())?;
    // SAFETY: two valid NUL-terminated paths; the call reads them and touches no memory of
    // ours otherwise.
    let r = unsafe {
        libc::renameat2(
            libc::AT_FDCWD,
            a.as_ptr(),
            libc::AT_FDCWD,
            b.as_ptr(),
            libc::RENAME_EXCHANGE,
        )
    };
    if r == 0 {
        Ok(())
    } else {
        Err(io::Error::last_os_error())
    }
}

#[cfg(not(target_os = "linux"))]
fn exchange(_a: &Path, _b: &Path) -> io::Result<()> {
    Err(io::Error::from(io::ErrorKind::Unsupported))
}

/// An exchange that the system or the file system does not offer.
fn unsupported(e: &io::Error) -> bool {
    if e.kind() == io::ErrorKind::Unsupported {
        return true;
    }
    #[cfg(unix)]
    {
        matches!(
            e.raw_os_error(),
            Some(libc::EINVAL | libc::ENOSYS | libc::EOPNOTSUPP)
        )
    }
    #[cfg(not(unix))]
    false
}

#[cfg(test)]
mod tests {
    use super::*;

    fn listing(dir: &Path) -> Vec<String> {
        let mut v: Vec<String> = fs::read_dir(dir)
            .expect("listing")
            .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    }

    #[test]
    fn a_set_replaces_an_earlier_set_as_a_whole() {
        let tmp = tempfile::tempdir().expect("temporary folder");
        let out = tmp.path().join("a").join("out");
        let mut s = OutputSet::begin(&out, &[]).expect("begins");
        s.write("x.csv", b"1\n").expect("writes");
        s.write("y.csv", b"2\n").expect("writes");
        assert_eq!(
            s.commit().expect("commits"),
            vec![out.join("x.csv"), out.join("y.csv")]
        );
        assert_eq!(listing(&out), [MANIFEST, "x.csv", "y.csv"]);
        let mut s = OutputSet::begin(&out, &[]).expect("begins again");
        s.write("z.csv", b"3\n").expect("writes");
        s.commit().expect("commits");
        // y.csv of the first set is gone with it: one folder, one run.
        assert_eq!(listing(&out), [MANIFEST, "z.csv"]);
        assert_eq!(
            listing(&tmp.path().join("a")),
            [".out.wirerank-lock", "out"],
            "no temporary is left beside the folder"
        );
    }

    #[test]
    fn an_unfinished_set_leaves_nothing_and_no_folder_it_created() {
        let tmp = tempfile::tempdir().expect("temporary folder");
        let base = tmp.path().join("new");
        {
            let mut s = OutputSet::begin(&base.join("a").join("b"), &[]).expect("begins");
            s.write("x.csv", b"1\n").expect("writes");
        }
        assert!(!base.exists(), "{} left behind", base.display());
        assert!(tmp.path().is_dir());
    }

    #[test]
    fn foreign_files_are_refused_and_kept() {
        let tmp = tempfile::tempdir().expect("temporary folder");
        fs::write(tmp.path().join("notes.txt"), "mine").expect("file");
        fs::create_dir(tmp.path().join("photos")).expect("folder");
        let err = OutputSet::begin(tmp.path(), &[])
            .err()
            .expect("refused")
            .to_string();
        assert!(
            err.contains("2 entries") && err.contains("notes.txt") && err.contains("photos"),
            "{err}"
        );
        assert!(err.contains("choose an empty or new folder"), "{err}");
        assert_eq!(listing(tmp.path()), ["notes.txt", "photos"]);
    }

    #[test]
    fn two_renames_give_the_same_result_as_the_exchange() {
        let tmp = tempfile::tempdir().expect("temporary folder");
        let out = tmp.path().join("out");
        for (k, two) in [(1, false), (2, true), (3, true)] {
            let mut s = OutputSet::begin(&out, &[]).expect("begins");
            s.write(&format!("f{k}.csv"), b"x\n").expect("writes");
            if two {
                // Same as WIRERANK_TEST_NO_EXCHANGE, without touching the environment.
                let set = s;
                let temp = set.temp_path().to_path_buf();
                let written = set.commit_with(true);
                assert!(written.is_ok(), "{written:?}");
                assert!(!temp.exists());
            } else {
                s.commit().expect("commits");
            }
            assert_eq!(listing(&out), [MANIFEST.to_string(), format!("f{k}.csv")]);
        }
        assert_eq!(listing(tmp.path()), [".out.wirerank-lock", "out"]);
    }

    #[cfg(unix)]
    #[test]
    fn a_link_to_a_folder_is_honoured_and_stays_a_link() {
        let tmp = tempfile::tempdir().expect("temporary folder");
        let real = tmp.path().join("real");
        fs::create_dir(&real).expect("folder");
        let link = tmp.path().join("link");
        std::os::unix::fs::symlink(&real, &link).expect("link");
        for k in 0..2 {
            let mut s = OutputSet::begin(&link, &[]).expect("begins");
            s.write(&format!("x{k}.csv"), b"1\n").expect("writes");
            assert_eq!(
                s.commit().expect("commits"),
                vec![link.join(format!("x{k}.csv"))]
            );
            assert!(fs::symlink_metadata(&link)
                .expect("link")
                .file_type()
                .is_symlink());
            assert_eq!(listing(&real), [MANIFEST.to_string(), format!("x{k}.csv")]);
        }
        assert_eq!(listing(tmp.path()), [".real.wirerank-lock", "link", "real"]);
    }

    #[test]
    fn a_killed_runs_fresh_folder_is_swept_only_when_it_holds_only_files() {
        let tmp = tempfile::tempdir().expect("temporary folder");
        let stale = tmp.path().join(".out.wirerank-new-0123456789abcdef");
        fs::create_dir(&stale).expect("stale folder");
        fs::write(stale.join("monthly.csv"), "half").expect("half a file");
        let odd = tmp.path().join(".out.wirerank-new-fedcba9876543210");
        fs::create_dir_all(odd.join("sub")).expect("folder with a subfolder");
        let mut s = OutputSet::begin(&tmp.path().join("out"), &[]).expect("begins");
        s.write("x.csv", b"1").expect("writes");
        s.commit().expect("commits");
        assert!(!stale.exists(), "a killed run's files are swept");
        assert!(
            odd.join("sub").is_dir(),
            "a folder with a subfolder is not ours to sweep"
        );
    }

    #[test]
    fn names_must_be_plain_and_new() {
        let tmp = tempfile::tempdir().expect("temporary folder");
        let mut s = OutputSet::begin(&tmp.path().join("o"), &[]).expect("begins");
        assert!(s.write("../x.csv", b"").is_err());
        assert!(s.write(".wirerank-set", b"").is_err());
        s.write("x.csv", b"1").expect("writes");
        assert!(s.write("x.csv", b"2").is_err(), "twice");
    }

    #[test]
    fn manifest_lists_are_read_back() {
        let tmp = tempfile::tempdir().expect("temporary folder");
        let p = tmp.path().join(MANIFEST);
        fs::write(&p, format!("{MANIFEST_HEADER}\na.csv\nb.png\n")).expect("manifest");
        assert_eq!(
            read_manifest(&p),
            Some(vec!["a.csv".into(), "b.png".into()])
        );
        fs::write(&p, "a.csv\n").expect("manifest");
        assert_eq!(read_manifest(&p), None, "no header, no manifest");
    }
}
