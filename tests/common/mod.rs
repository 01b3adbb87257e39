//! Helpers shared by the integration tests (`mod common;` in each test file
//! that uses them). Each test file is its own crate and uses only some of
//! these, hence the `dead_code` allowance.
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// The `tauwise` binary built for these tests.
pub fn tauwise() -> Command {
    Command::new(env!("CARGO_BIN_EXE_tauwise"))
}

/// Write `text` to `dir/name` and return the path.
pub fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

/// A command's standard error as text.
pub fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// Relative difference |a − b| / max(|a|, |b|), 0 when a = b (symmetric).
pub fn rel(a: f64, b: f64) -> f64 {
    if a == b {
        0.0
    } else {
        (a - b).abs() / a.abs().max(b.abs())
    }
}

/// Relative error of `a` against the reference `b`: |a − b| / |b|.
pub fn rel_to(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// The command failed with exit status `code` (2: a bad command line, 1:
/// bad data), its message starts with `tauwise: error: ` and holds every
/// one of `words`, and `not_written` was not written.
pub fn assert_error(out: &Output, code: i32, words: &[&str], not_written: &Path) {
    assert_eq!(out.status.code(), Some(code), "{}", stderr(out));
    let e = stderr(out);
    assert!(e.starts_with("tauwise: error: "), "{e}");
    for w in words {
        assert!(e.contains(w), "'{w}' missing from: {e}");
    }
    assert!(
        !not_written.exists(),
        "{} was written",
        not_written.display()
    );
}
