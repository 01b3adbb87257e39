//! Atomic output: write to a temporary file in the target's directory, then
//! rename it into place, so that a failed run never leaves a half-written file.

use super::WriteError;
use std::io::Write;
use std::path::Path;

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

    #[test]
    fn writes_and_replaces() {
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
    fn missing_directory_is_an_error() {
        let e = write_atomic(Path::new("/nonexistent-dir-xyz/out.txt"), b"x").unwrap_err();
        assert!(e.to_string().contains("/nonexistent-dir-xyz/out.txt"));
    }
}
