//! Input provenance: which file, its SHA-256 (FIPS 180-4), its size, and —
//! for time records — points, span, τ0 and gaps, so a reader can tell
//! exactly which data a report was made from.

use crate::io::ReadError;
use sha2::{Digest, Sha256};
use std::io::Read;
use std::path::Path;

/// One input file.
#[derive(Debug, Clone, PartialEq)]
pub struct Provenance {
    /// What the file is to the report (`time record`, `L(f) table`, …).
    pub role: String,
    /// Name in the DUT file.
    pub name: String,
    /// Path as resolved.
    pub path: String,
    /// SHA-256 of the file's bytes, lower-case hex.
    pub sha256: String,
    /// Size in bytes.
    pub bytes: u64,
    /// Data points (samples or table rows), when read.
    pub points: Option<usize>,
    /// Span (s) of a time record.
    pub span: Option<f64>,
    /// τ0 (s) of a time record.
    pub tau0: Option<f64>,
    /// Gaps in a time record.
    pub gaps: Option<usize>,
}

impl Provenance {
    /// Hash a file and start its provenance entry.
    pub fn of_file(role: &str, name: &str, path: &Path) -> Result<Self, ReadError> {
        let (sha256, bytes) = sha256_file(path)?;
        Ok(Self {
            role: role.into(),
            name: name.into(),
            path: path.display().to_string(),
            sha256,
            bytes,
            points: None,
            span: None,
            tau0: None,
            gaps: None,
        })
    }
}

/// SHA-256 of a file, streamed in 64 KiB blocks; returns (hex, size).
pub fn sha256_file(path: &Path) -> Result<(String, u64), ReadError> {
    let mut f = std::fs::File::open(path)
        .map_err(|e| ReadError::file(path, format!("cannot open: {e}")))?;
    let mut h = Sha256::new();
    let mut buf = vec![0u8; 1 << 16];
    let mut total = 0u64;
    loop {
        let n = f
            .read(&mut buf)
            .map_err(|e| ReadError::file(path, format!("cannot read: {e}")))?;
        if n == 0 {
            break;
        }
        total += n as u64;
        h.update(&buf[..n]);
    }
    Ok((hex(&h.finalize()), total))
}

/// SHA-256 of bytes in memory, lower-case hex.
pub fn sha256_bytes(data: &[u8]) -> String {
    hex(&Sha256::digest(data))
}

fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// FIPS 180-2, Appendix B.1 ("abc") and the empty message.
    #[test]
    fn published_sha256_vectors() {
        assert_eq!(
            sha256_bytes(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
        assert_eq!(
            sha256_bytes(b""),
            "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855"
        );
    }

    #[test]
    fn streamed_file_hash_equals_in_memory_hash() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("x.bin");
        let data: Vec<u8> = (0..200_000u32).map(|i| (i * 7 % 251) as u8).collect();
        std::fs::write(&p, &data).unwrap();
        let (h, n) = sha256_file(&p).unwrap();
        assert_eq!(n, data.len() as u64);
        assert_eq!(h, sha256_bytes(&data));
        assert!(sha256_file(&dir.path().join("none"))
            .unwrap_err()
            .to_string()
            .contains("none"));
    }
}
