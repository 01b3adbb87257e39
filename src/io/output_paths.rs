//! The outputs of a command, checked before it computes anything: an
//! output that names an input is refused, and the directory of each output
//! must exist and take a new file — so that a long run neither overwrites
//! its measurement nor fails only at the end. Both are a bad command line
//! ([`Error::Option`]: the binary exits 2), the message naming the path.

use crate::error::{Error, Result};
use std::path::Path;

/// Check every output path before any computing: an output that names an
/// input (the same file, by any path: symbolic and hard links included) is
/// refused, and the directory of each output must exist and take a new
/// file — so that a long run neither overwrites its measurement nor fails
/// only at the end. `None` and `-` (standard output) are skipped; so are
/// inputs read from standard input.
pub fn check_output_paths(inputs: &[&Path], outputs: &[Option<&Path>]) -> Result<()> {
    for out in outputs.iter().flatten() {
        if out.as_os_str() == "-" || out.as_os_str().is_empty() {
            continue;
        }
        for inp in inputs.iter().filter(|p| p.as_os_str() != "-") {
            if same_file(inp, out) {
                return Err(Error::option(
                    "-o",
                    format!(
                        "output {} is the input file {}: refusing to overwrite a measurement (choose another output)",
                        out.display(),
                        inp.display()
                    ),
                ));
            }
        }
        check_output_dir(out)?;
    }
    Ok(())
}

/// The directory an output will be written into must exist and accept a
/// new file (checked by creating and removing a temporary file there).
pub fn check_output_dir(out: &Path) -> Result<()> {
    let dir = match out.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    // What was asked cannot be written: a bad command line (exit 2), the
    // message naming the path.
    let fail = |why: String| {
        Err(Error::option(
            format!("cannot write {}", out.display()),
            format!("{why} (checked before computing)"),
        ))
    };
    match std::fs::metadata(dir) {
        Ok(m) if m.is_dir() => {}
        Ok(_) => return fail(format!("{} is not a directory", dir.display())),
        Err(e) => return fail(format!("directory {}: {e}", dir.display())),
    }
    if out.is_dir() {
        return fail("it is a directory".into());
    }
    if let Err(e) = tempfile::Builder::new()
        .prefix(".tauwise-check-")
        .tempfile_in(dir)
    {
        return fail(format!(
            "directory {} does not take a new file: {e}",
            dir.display()
        ));
    }
    Ok(())
}

/// Whether two paths name the same existing file (same device and inode on
/// Unix; the same canonical path elsewhere).
fn same_file(a: &Path, b: &Path) -> bool {
    let (Ok(ma), Ok(mb)) = (std::fs::metadata(a), std::fs::metadata(b)) else {
        return false;
    };
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        ma.dev() == mb.dev() && ma.ino() == mb.ino()
    }
    #[cfg(not(unix))]
    {
        let _ = (ma, mb);
        matches!((std::fs::canonicalize(a), std::fs::canonicalize(b)), (Ok(x), Ok(y)) if x == y)
    }
}
