//! Atomic file output for reports (the edge of the pipeline): nothing already written is lost or
//! left half-written; a new file appears under its final name only once it is complete.
//!
//! Both entry points write to a temporary sibling in the same directory (so the final `rename`
//! never crosses a file system), flush it to disk, and rename it over the target.  If anything
//! fails the temporary file is removed and the previous content of the target, if any, is
//! untouched.

use std::fmt;
use std::fs::{self, File, OpenOptions};
use std::io::{self, Write};
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

/// Distinguishes temporary names created by one process (parallel tests, rayon workers).
static TEMP_COUNTER: AtomicU64 = AtomicU64::new(0);

/// Error of [`with_temp_path`]: either the closure failed (its own error, passed through) or the
/// file system refused the temporary file or the final rename.
#[derive(Debug)]
pub enum TempPathError<E> {
    /// Creating, syncing or renaming the temporary file failed.
    Io(io::Error),
    /// The closure returned an error; the temporary file was removed.
    Inner(E),
}

impl<E: fmt::Display> fmt::Display for TempPathError<E> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            TempPathError::Io(e) => write!(f, "{e}"),
            TempPathError::Inner(e) => write!(f, "{e}"),
        }
    }
}

impl<E: std::error::Error + 'static> std::error::Error for TempPathError<E> {
    fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
        match self {
            TempPathError::Io(e) => Some(e),
            TempPathError::Inner(e) => Some(e),
        }
    }
}

/// The directory that will hold `path` (`.` for a bare file name) and the file name itself.
fn split_target(path: &Path) -> io::Result<(PathBuf, String)> {
    let name = path.file_name().ok_or_else(|| {
        io::Error::new(
            io::ErrorKind::InvalidInput,
            format!("{} does not name a file", path.display()),
        )
    })?;
    let dir = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    Ok((dir, name.to_string_lossy().into_owned()))
}

/// A fresh temporary sibling of `path`: `.<name>.tmp-<pid>-<n>` followed by the extension of
/// `path` (if it has one), so that writers that choose their format from the extension (PNG vs
/// SVG encoders) still pick the right one.
fn temp_sibling(path: &Path) -> io::Result<PathBuf> {
    let (dir, name) = split_target(path)?;
    let n = TEMP_COUNTER.fetch_add(1, Ordering::Relaxed);
    let mut tmp = format!(".{name}.tmp-{}-{n}", std::process::id());
    if let Some(ext) = path.extension() {
        tmp.push('.');
        tmp.push_str(&ext.to_string_lossy());
    }
    Ok(dir.join(tmp))
}

/// Best effort: make the rename itself durable by syncing the directory entry (Unix only; on
/// other systems opening a directory as a file is not possible and nothing is done).
fn sync_dir(dir: &Path) {
    #[cfg(unix)]
    if let Ok(d) = File::open(dir) {
        let _ = d.sync_all();
    }
    #[cfg(not(unix))]
    let _ = dir;
}

/// Removes the temporary file when dropped unless disarmed (covers early returns and panics
/// inside the closure of [`with_temp_path`]).
struct TempGuard {
    path: PathBuf,
    armed: bool,
}

impl Drop for TempGuard {
    fn drop(&mut self) {
        if self.armed {
            let _ = fs::remove_file(&self.path);
        }
    }
}

/// Writes `bytes` to `path` atomically: temporary sibling, fsync, rename over `path`.
///
/// On error the target keeps its previous content (or stays absent) and no temporary file is
/// left behind.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> io::Result<()> {
    let (dir, _) = split_target(path)?;
    let tmp = temp_sibling(path)?;
    let mut guard = TempGuard {
        path: tmp.clone(),
        armed: false,
    };
    let mut file = OpenOptions::new().write(true).create_new(true).open(&tmp)?;
    guard.armed = true;
    file.write_all(bytes)?;
    file.sync_all()?;
    drop(file);
    fs::rename(&tmp, path)?;
    guard.armed = false;
    sync_dir(&dir);
    Ok(())
}

/// Lends `f` a temporary sibling path of `path` (same directory, same extension) to write to; if
/// `f` succeeds, the file it wrote is synced and renamed to `path`.  If `f` fails (or panics),
/// the temporary file is removed and `path` is untouched.
///
/// It is an error ([`TempPathError::Io`]) for `f` to succeed without creating the file.
pub fn with_temp_path<T, E, F>(path: &Path, f: F) -> Result<T, TempPathError<E>>
where
    F: FnOnce(&Path) -> Result<T, E>,
{
    let (dir, _) = split_target(path).map_err(TempPathError::Io)?;
    let tmp = temp_sibling(path).map_err(TempPathError::Io)?;
    let mut guard = TempGuard {
        path: tmp.clone(),
        armed: true,
    };
    let value = f(&tmp).map_err(TempPathError::Inner)?;
    let finish = || -> io::Result<()> {
        File::open(&tmp)?.sync_all()?;
        fs::rename(&tmp, path)
    };
    finish().map_err(TempPathError::Io)?;
    guard.armed = false;
    sync_dir(&dir);
    Ok(value)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A fresh empty directory under the system temp dir.
    fn scratch_dir(tag: &str) -> PathBuf {
        let n = TEMP_COUNTER.fetch_add(1, Ordering::Relaxed);
        let dir =
            std::env::temp_dir().join(format!("nestor-atomic-{tag}-{}-{n}", std::process::id()));
        let _ = fs::remove_dir_all(&dir);
        fs::create_dir_all(&dir).unwrap();
        dir
    }

    fn entries(dir: &Path) -> Vec<String> {
        let mut v: Vec<String> = fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    }

    #[test]
    fn write_atomic_creates_and_replaces() {
        let dir = scratch_dir("write");
        let target = dir.join("table.csv");
        write_atomic(&target, b"first").unwrap();
        assert_eq!(fs::read(&target).unwrap(), b"first");
        write_atomic(&target, b"second, longer content").unwrap();
        assert_eq!(fs::read(&target).unwrap(), b"second, longer content");
        write_atomic(&target, b"").unwrap();
        assert_eq!(fs::read(&target).unwrap(), b"");
        assert_eq!(entries(&dir), vec!["table.csv".to_string()]);
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn write_atomic_into_missing_directory_fails_cleanly() {
        let dir = scratch_dir("missing");
        let target = dir.join("no-such-dir").join("x.json");
        assert!(write_atomic(&target, b"data").is_err());
        assert!(entries(&dir).is_empty());
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn write_atomic_rejects_path_without_file_name() {
        assert!(write_atomic(Path::new("/"), b"x").is_err());
        assert!(write_atomic(Path::new(".."), b"x").is_err());
    }

    #[test]
    fn temp_sibling_keeps_directory_and_extension() {
        let tmp = temp_sibling(Path::new("/some/dir/fig.png")).unwrap();
        assert_eq!(tmp.parent().unwrap(), Path::new("/some/dir"));
        assert_eq!(tmp.extension().unwrap(), "png");
        let name = tmp.file_name().unwrap().to_string_lossy().into_owned();
        assert!(name.starts_with(".fig.png.tmp-"), "{name}");
        let bare = temp_sibling(Path::new("notes")).unwrap();
        assert_eq!(bare.parent().unwrap(), Path::new("."));
        let bare_name = bare.file_name().unwrap().to_string_lossy().into_owned();
        let suffix = bare_name.strip_prefix(".notes.tmp-").unwrap();
        assert!(suffix.chars().all(|ch| ch.is_ascii_digit() || ch == '-'));
        assert_ne!(
            temp_sibling(Path::new("a.svg")).unwrap(),
            temp_sibling(Path::new("a.svg")).unwrap()
        );
    }

    #[test]
    fn with_temp_path_renames_on_success() {
        let dir = scratch_dir("ok");
        let target = dir.join("fig.svg");
        fs::write(&target, "old").unwrap();
        let got = with_temp_path(&target, |tmp| {
            assert_eq!(tmp.extension().unwrap(), "svg");
            assert_eq!(tmp.parent().unwrap(), dir.as_path());
            fs::write(tmp, "new").map(|_| 7)
        })
        .unwrap();
        assert_eq!(got, 7);
        assert_eq!(fs::read_to_string(&target).unwrap(), "new");
        assert_eq!(entries(&dir), vec!["fig.svg".to_string()]);
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn with_temp_path_keeps_old_file_when_closure_fails() {
        let dir = scratch_dir("fail");
        let target = dir.join("fig.png");
        fs::write(&target, "old").unwrap();
        let res: Result<(), TempPathError<String>> = with_temp_path(&target, |tmp| {
            fs::write(tmp, "half-written").unwrap();
            Err("encoder failed".to_string())
        });
        match res {
            Err(TempPathError::Inner(msg)) => assert_eq!(msg, "encoder failed"),
            other => panic!("unexpected {other:?}"),
        }
        assert_eq!(fs::read_to_string(&target).unwrap(), "old");
        assert_eq!(entries(&dir), vec!["fig.png".to_string()]);
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn with_temp_path_cleans_up_after_panic() {
        let dir = scratch_dir("panic");
        let target = dir.join("fig.png");
        let result = std::panic::catch_unwind(|| {
            let _: Result<(), TempPathError<io::Error>> = with_temp_path(&target, |tmp| {
                fs::write(tmp, "partial").unwrap();
                panic!("drawing bug");
            });
        });
        assert!(result.is_err());
        assert!(entries(&dir).is_empty());
        fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn with_temp_path_requires_the_file_to_exist() {
        let dir = scratch_dir("nofile");
        let target = dir.join("fig.png");
        let res: Result<(), TempPathError<io::Error>> = with_temp_path(&target, |_| Ok(()));
        assert!(matches!(res, Err(TempPathError::Io(_))));
        assert!(entries(&dir).is_empty());
        fs::remove_dir_all(&dir).unwrap();
    }
}
