//! Atomic output: write to a temporary file in the target's directory, then
//! rename it into place, so that a failed run never leaves a half-written file.
//!
//! Every temporary file is registered while it exists, so that a program
//! stopped by a signal (SIGINT, SIGTERM) can remove them before it exits
//! ([`remove_pending_temp_files`]; the `tauwise` binary does so from its
//! signal handler) — an interrupted long run leaves nothing behind.

use super::WriteError;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::Mutex;

/// The temporary files of atomic writes in progress.
static PENDING: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

/// Registers a temporary file while it exists (unregisters on drop).
struct Pending(PathBuf);

impl Pending {
    fn new(p: &Path) -> Self {
        if let Ok(mut v) = PENDING.lock() {
            v.push(p.to_path_buf());
        }
        Pending(p.to_path_buf())
    }
}

impl Drop for Pending {
    fn drop(&mut self) {
        if let Ok(mut v) = PENDING.lock() {
            if let Some(i) = v.iter().position(|q| *q == self.0) {
                v.swap_remove(i);
            }
        }
    }
}

/// Remove the temporary files of every atomic write in progress (for a
/// signal handler that is about to end the program); returns how many were
/// removed. The targets are left as they were.
pub fn remove_pending_temp_files() -> usize {
    let list = match PENDING.lock() {
        Ok(mut v) => std::mem::take(&mut *v),
        Err(p) => std::mem::take(&mut *p.into_inner()),
    };
    list.iter()
        .filter(|p| std::fs::remove_file(p).is_ok())
        .count()
}

/// Write `bytes` to `path` atomically (temporary file in the same directory,
/// flushed and synced, then renamed over the target).
pub fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), WriteError> {
    let err = |source| WriteError {
        path: path.to_path_buf(),
        source,
    };
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    let mut tmp = tempfile::Builder::new()
        .prefix(".tauwise-")
        .suffix(".tmp")
        .tempfile_in(dir)
        .map_err(err)?;
    let _pending = Pending::new(tmp.path());
    tmp.write_all(bytes).map_err(err)?;
    tmp.as_file().sync_all().map_err(err)?;
    // The temporary file is created private (0600); give the result the
    // permissions of the file it replaces, or the usual 0644 for a new one.
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        let mode = std::fs::metadata(path)
            .map(|m| m.permissions().mode() & 0o7777)
            .unwrap_or(0o644);
        std::fs::set_permissions(tmp.path(), std::fs::Permissions::from_mode(mode)).map_err(err)?;
    }
    tmp.persist(path).map_err(|e| err(e.error))?;
    Ok(())
}

/// Write to `path` atomically, streaming: `fill` writes into a buffered
/// temporary file in the same directory, which is synced and renamed over
/// the target only when `fill` succeeds (for outputs too large to build in
/// memory first).
pub fn write_atomic_with<F>(path: &Path, fill: F) -> Result<(), WriteError>
where
    F: FnOnce(&mut dyn Write) -> std::io::Result<()>,
{
    let err = |source| WriteError {
        path: path.to_path_buf(),
        source,
    };
    let dir = match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    let tmp = tempfile::Builder::new()
        .prefix(".tauwise-")
        .suffix(".tmp")
        .tempfile_in(dir)
        .map_err(err)?;
    let _pending = Pending::new(tmp.path());
    let mut w = std::io::BufWriter::with_capacity(1 << 18, tmp);
    fill(&mut w).map_err(err)?;
    let tmp = w.into_inner().map_err(|e| err(e.into_error()))?;
    tmp.as_file().sync_all().map_err(err)?;
    // The temporary file is created private (0600); give the result the
    // permissions of the file it replaces, or the usual 0644 for a new one.
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        let mode = std::fs::metadata(path)
            .map(|m| m.permissions().mode() & 0o7777)
            .unwrap_or(0o644);
        std::fs::set_permissions(tmp.path(), std::fs::Permissions::from_mode(mode)).map_err(err)?;
    }
    tmp.persist(path).map_err(|e| err(e.error))?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// `remove_pending_temp_files` removes every registered file of the
    /// process, so the tests that write run one at a time.
    static SERIAL: Mutex<()> = Mutex::new(());

    #[test]
    fn writes_and_replaces() {
        let _one = SERIAL.lock().unwrap_or_else(|p| p.into_inner());
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("out.txt");
        write_atomic(&p, b"one").unwrap();
        write_atomic(&p, b"two").unwrap();
        assert_eq!(std::fs::read(&p).unwrap(), b"two");
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            let mode = std::fs::metadata(&p).unwrap().permissions().mode() & 0o777;
            assert_eq!(mode, 0o644, "a new output file is readable by others");
        }
        let left: Vec<_> = std::fs::read_dir(dir.path()).unwrap().collect();
        assert_eq!(left.len(), 1, "no temporary file left behind");
    }

    #[test]
    fn pending_files_are_registered_while_writing() {
        let _one = SERIAL.lock().unwrap_or_else(|p| p.into_inner());
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("big.txt");
        let r = write_atomic_with(&p, |w| {
            // Inside the write the temporary file exists and is registered:
            // a signal handler would remove it.
            let n = remove_pending_temp_files();
            assert_eq!(n, 1);
            w.write_all(b"x")
        });
        // The temporary file was removed under the writer: the rename fails,
        // and nothing is left in the directory.
        assert!(r.is_err());
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0);
    }

    #[test]
    fn missing_directory_is_an_error() {
        let _one = SERIAL.lock().unwrap_or_else(|p| p.into_inner());
        let e = write_atomic(Path::new("/nonexistent-dir-xyz/out.txt"), b"x").unwrap_err();
        assert!(e.to_string().contains("/nonexistent-dir-xyz/out.txt"));
    }
}
