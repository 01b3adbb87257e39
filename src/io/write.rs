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
        let left: Vec<_> = std::fs::read_dir(dir.path()).unwrap().collect();
        assert_eq!(left.len(), 1, "no temporary file left behind");
    }

    #[test]
    fn missing_directory_is_an_error() {
        let e = write_atomic(Path::new("/nonexistent-dir-xyz/out.txt"), b"x").unwrap_err();
        assert!(e.to_string().contains("/nonexistent-dir-xyz/out.txt"));
    }
}
