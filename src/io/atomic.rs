//! The one way wirerank writes a file: whole or not at all.
//!
//! A file is written under a temporary name beside its final name, flushed to disk, then
//! renamed into place, so a reader never sees half a file and a failed write leaves the old
//! file (if any) untouched. [`same_file`] guards every command that takes an input and an
//! output path: an input is never overwritten.

use std::fs;
use std::io::{self, Write as _};
use std::path::{Path, PathBuf};

/// The temporary name of an output file: `<name>.tmp`, except PNG, which is encoded by a
/// library that chooses the format from the extension, so its temporary ends in `.tmp.png`.
pub fn temp_name(name: &str) -> String {
    match name.strip_suffix(".png") {
        Some(stem) => format!("{stem}.tmp.png"),
        None => format!("{name}.tmp"),
    }
}

/// The temporary path beside `path` (see [`temp_name`]).
pub fn temp_path(path: &Path) -> PathBuf {
    let name = path
        .file_name()
        .map_or_else(|| "output".into(), |n| n.to_string_lossy().into_owned());
    path.with_file_name(temp_name(&name))
}

/// Writes `bytes` to `path` atomically: the temporary file is written and synced, then
/// renamed into place; on failure the temporary is removed and the old file stays.
///
/// # Errors
/// The I/O error of the create, write, sync or rename.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> io::Result<()> {
    produce_atomic(path, |tmp| {
        let mut f = fs::File::create(tmp)?;
        f.write_all(bytes)?;
        f.sync_all()
    })
}

/// As [`write_atomic`], for a file that a library writes itself given a path (a PNG
/// encoder): `produce` writes the temporary path, which is renamed into place on success.
///
/// # Errors
/// The error of `produce` or of the rename.
pub fn produce_atomic(
    path: &Path,
    produce: impl FnOnce(&Path) -> io::Result<()>,
) -> io::Result<()> {
    let tmp = temp_path(path);
    let result = produce(&tmp).and_then(|()| fs::rename(&tmp, path));
    if result.is_err() {
        let _ = fs::remove_file(&tmp);
    }
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
    fn temporary_names_keep_the_png_extension_last() {
        // Source: the naming rule above (the PNG encoder picks the format from the extension).
        assert_eq!(temp_name("monthly.csv"), "monthly.csv.tmp");
        assert_eq!(temp_name("provenance.txt"), "provenance.txt.tmp");
        assert_eq!(temp_name("gain_map.svg"), "gain_map.svg.tmp");
        assert_eq!(temp_name("gain_map.png"), "gain_map.tmp.png");
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
        assert!(!dir.path().join("out.csv.tmp").exists());
    }
}
