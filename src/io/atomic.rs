//! The one way wirerank writes a single file: whole or not at all, and never through a
//! planted link.
//!
//! A file is written inside a fresh private folder beside its final name (created with
//! `create_dir`, so it cannot exist already, under a name no one can guess, mode 0700),
//! flushed to disk, then renamed into place, so a reader never sees half a file and a failed
//! or interrupted write leaves the old file (if any) untouched. The folder is registered
//! with [`crate::io::cleanup`], so SIGINT and SIGTERM remove it. A symbolic link at the
//! final name is replaced, never followed. Output folders of several files are written by
//! [`crate::io::outset`] on the same principles. [`same_file`] guards every command that
//! takes an input and an output path: an input is never overwritten.

use std::fs;
use std::io::{self, Write as _};
use std::path::{Path, PathBuf};

use crate::io::cleanup::{self, remove_path, Registered};

/// How many fresh names are tried before giving up (each is 64 random bits, so a second
/// try only happens when someone planted the name).
const FRESH_TRIES: usize = 16;

/// A hidden name beside `base` that no one can predict:
/// `.<base>.wirerank-<tag>-<16 hex digits>` (`base` cut to 100 bytes).
pub fn fresh_name(base: &str, tag: &str) -> String {
    let mut cut = base.len().min(100);
    while !base.is_char_boundary(cut) {
        cut -= 1;
    }
    format!(
        ".{}.wirerank-{tag}-{:016x}",
        &base[..cut],
        rand::random::<u64>()
    )
}

/// Creates a new folder `parent/<fresh_name(base, tag)>`, registered for removal on a
/// signal before it exists. `create_dir` fails on any existing entry (a symbolic link
/// included), so nothing planted is ever used; `private` makes it mode 0700 on Unix.
///
/// # Errors
/// The error of `create_dir`, or `AlreadyExists` after [`FRESH_TRIES`] planted names.
pub fn create_fresh_dir(
    parent: &Path,
    base: &str,
    tag: &str,
    private: bool,
) -> io::Result<Registered> {
    let mut last = None;
    for _ in 0..FRESH_TRIES {
        let reg = Registered::new(parent.join(fresh_name(base, tag)));
        let mut b = fs::DirBuilder::new();
        #[cfg(unix)]
        if private {
            use std::os::unix::fs::DirBuilderExt;
            b.mode(0o700);
        }
        #[cfg(not(unix))]
        let _ = private;
        match b.create(reg.path()) {
            Ok(()) => return Ok(reg),
            Err(e) if e.kind() == io::ErrorKind::AlreadyExists => last = Some(e),
            Err(e) => return Err(e),
        }
    }
    Err(last.unwrap_or_else(|| io::Error::from(io::ErrorKind::AlreadyExists)))
}

/// Creates a new file for writing: fails when anything already has the name, a symbolic
/// link included (`O_CREAT | O_EXCL`, plus `O_NOFOLLOW` on Unix).
///
/// # Errors
/// The error of `open`.
pub fn create_new_file(path: &Path) -> io::Result<fs::File> {
    let mut o = fs::OpenOptions::new();
    o.write(true).create_new(true);
    #[cfg(unix)]
    {
        use std::os::unix::fs::OpenOptionsExt;
        o.custom_flags(libc::O_NOFOLLOW);
    }
    o.open(path)
}

/// Flushes a folder's entries (new names, renames) to disk. A no-op where folders cannot
/// be opened.
///
/// # Errors
/// The error of `open` or `fsync`.
pub fn sync_dir(dir: &Path) -> io::Result<()> {
    #[cfg(unix)]
    {
        fs::File::open(dir)?.sync_all()
    }
    #[cfg(not(unix))]
    {
        let _ = dir;
        Ok(())
    }
}

/// The folder and the file name of an output path (`.` for a bare name).
pub fn split_path(path: &Path) -> io::Result<(PathBuf, String)> {
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .ok_or_else(|| io::Error::new(io::ErrorKind::InvalidInput, "not a file name"))?;
    let parent = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    Ok((parent, name))
}

/// The test hook `WIRERANK_TEST_PAUSE_BEFORE_SWAP=MS` (DEVELOPERS.md; integration tests
/// only): sleeps with the new file or set complete, just before it is put in place.
pub fn pause_before_swap_for_tests() {
    if let Some(ms) = std::env::var("WIRERANK_TEST_PAUSE_BEFORE_SWAP")
        .ok()
        .and_then(|v| v.parse::<u64>().ok())
    {
        std::thread::sleep(std::time::Duration::from_millis(ms));
    }
}

/// Writes `bytes` to `path` atomically (see the module text); on failure the temporary is
/// removed and the old file stays.
///
/// # Errors
/// The I/O error of the create, write, sync or rename.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> io::Result<()> {
    produce_atomic(path, |tmp| {
        let mut f = create_new_file(tmp)?;
        f.write_all(bytes)?;
        f.sync_all()
    })
}

/// As [`write_atomic`], for a file that a library writes itself given a path (a PNG
/// encoder): `produce` writes the temporary path (same file name as `path`, inside the
/// fresh private folder), which is synced and renamed into place on success.
///
/// # Errors
/// The error of `produce`, of the sync or of the rename.
pub fn produce_atomic(
    path: &Path,
    produce: impl FnOnce(&Path) -> io::Result<()>,
) -> io::Result<()> {
    let (parent, name) = split_path(path)?;
    let dir = create_fresh_dir(&parent, &name, "tmp", true)?;
    let tmp = dir.path().join(&name);
    let result = cleanup::guarded(|_| produce(&tmp))
        .and_then(|()| fs::File::open(&tmp)?.sync_all())
        .map(|()| pause_before_swap_for_tests())
        .and_then(|()| cleanup::guarded(|_| fs::rename(&tmp, path)))
        .and_then(|()| sync_dir(&parent));
    // Empty after the rename; holds the unfinished file after a failure.
    let _ = remove_path(dir.path());
    result
}

/// True when `a` and `b` name the same file: the same path, the same file reached through
/// another path (`.`/`..`, a symbolic link) or a hard link to it. A `b` that does not exist
/// yet still matches when its folder and name resolve to `a`.
pub fn same_file(a: &Path, b: &Path) -> bool {
    if b.as_os_str().is_empty() || a.as_os_str().is_empty() {
        return false;
    }
    if a == b {
        return true;
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        if let (Ok(x), Ok(y)) = (fs::metadata(a), fs::metadata(b)) {
            if x.dev() == y.dev() && x.ino() == y.ino() {
                return true;
            }
        }
    }
    let canonical = |p: &Path| -> Option<PathBuf> {
        if let Ok(c) = p.canonicalize() {
            return Some(c);
        }
        let parent = match p.parent() {
            Some(x) if !x.as_os_str().is_empty() => x.to_path_buf(),
            _ => PathBuf::from("."),
        };
        Some(parent.canonicalize().ok()?.join(p.file_name()?))
    };
    matches!((canonical(a), canonical(b)), (Some(x), Some(y)) if x == y)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fresh_names_are_hidden_tagged_and_differ() {
        // Source: the naming rule above (64 random bits: two equal names are a bug).
        let a = fresh_name("monthly.csv", "tmp");
        let b = fresh_name("monthly.csv", "tmp");
        assert!(a.starts_with(".monthly.csv.wirerank-tmp-"), "{a}");
        assert_eq!(a.len(), ".monthly.csv.wirerank-tmp-".len() + 16);
        assert_ne!(a, b);
        let long = "é".repeat(80);
        assert!(fresh_name(&long, "new").len() < 140);
    }

    #[test]
    fn same_file_sees_through_relative_paths_and_hard_links() {
        let dir = tempfile::tempdir().unwrap();
        let a = dir.path().join("x.toml");
        fs::write(&a, "x").unwrap();
        assert!(same_file(&a, &dir.path().join(".").join("x.toml")));
        assert!(!same_file(&a, &dir.path().join("y.csv")));
        let link = dir.path().join("hard.toml");
        fs::hard_link(&a, &link).unwrap();
        assert!(same_file(&a, &link), "a hard link is the same file");
        assert!(!same_file(&a, Path::new("")));
    }

    #[test]
    fn a_failed_write_leaves_the_old_file_and_no_temporary() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("out.csv");
        write_atomic(&p, b"old").unwrap();
        let err = produce_atomic(&p, |tmp| {
            fs::write(tmp, b"half")?;
            Err(io::Error::other("disk full"))
        });
        assert!(err.is_err());
        assert_eq!(fs::read(&p).unwrap(), b"old");
        let names: Vec<_> = fs::read_dir(dir.path()).unwrap().collect();
        assert_eq!(names.len(), 1, "only out.csv is left: {names:?}");
    }

    #[cfg(unix)]
    #[test]
    fn a_link_at_the_final_name_is_replaced_not_followed() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("precious.txt");
        fs::write(&target, "keep").unwrap();
        let p = dir.path().join("out.csv");
        std::os::unix::fs::symlink(&target, &p).unwrap();
        write_atomic(&p, b"new").unwrap();
        assert_eq!(fs::read(&target).unwrap(), b"keep");
        assert!(!fs::symlink_metadata(&p).unwrap().file_type().is_symlink());
        assert_eq!(fs::read(&p).unwrap(), b"new");
    }

    #[cfg(unix)]
    #[test]
    fn create_new_file_refuses_a_planted_link() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("precious.txt");
        fs::write(&target, "keep").unwrap();
        let p = dir.path().join("x.tmp");
        std::os::unix::fs::symlink(&target, &p).unwrap();
        assert!(create_new_file(&p).is_err());
        assert_eq!(fs::read(&target).unwrap(), b"keep");
    }
}
