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

/// Run `cmd`, assert that it succeeded (showing its standard error when it
/// did not), and return its standard output.
pub fn stdout_of(cmd: &mut Command) -> Vec<u8> {
    let out = cmd.output().unwrap();
    assert!(out.status.success(), "{}", stderr(&out));
    out.stdout
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

/// Headless Chromium for the render tests: `TAUWISE_CHROMIUM`, else
/// `chromium` or `chromium-browser` on PATH. `.ci/run` installs Debian's
/// chromium and sets `TAUWISE_REQUIRE_BROWSER=1`, which turns a missing
/// browser into a failure; elsewhere the check is skipped (None) with a note.
pub struct Browser {
    path: PathBuf,
    args: Vec<String>,
}

/// The browser, with its profile under `profile` (see [`Browser`]).
pub fn browser(profile: &Path) -> Option<Browser> {
    let found = std::env::var_os("TAUWISE_CHROMIUM")
        .map(PathBuf::from)
        .or_else(|| {
            let path = std::env::var_os("PATH")?;
            std::env::split_paths(&path)
                .flat_map(|dir| ["chromium", "chromium-browser"].map(|n| dir.join(n)))
                .find(|p| p.is_file())
        });
    let Some(path) = found else {
        assert!(
            std::env::var("TAUWISE_REQUIRE_BROWSER").is_err(),
            "TAUWISE_REQUIRE_BROWSER is set but no chromium was found (set TAUWISE_CHROMIUM or install chromium)"
        );
        eprintln!("no chromium on PATH: browser check not run here");
        return None;
    };
    let args = vec![
        "--headless".to_string(),
        "--no-sandbox".into(),
        "--disable-gpu".into(),
        "--disable-background-networking".into(),
        "--no-first-run".into(),
        format!("--user-data-dir={}", profile.display()),
    ];
    Some(Browser { path, args })
}

impl Browser {
    /// The DOM the browser built from the page `page`.
    pub fn dom(&self, page: &Path) -> String {
        let o = Command::new(&self.path)
            .args(&self.args)
            .arg("--dump-dom")
            .arg(format!("file://{}", page.display()))
            .output()
            .unwrap();
        assert!(o.status.success(), "{}", stderr(&o));
        String::from_utf8_lossy(&o.stdout).into_owned()
    }

    /// A screenshot of `page` (1200 × 2000) into `shot` is not blank: more
    /// than 50 colours and more than 1 % of the pixels inked.
    pub fn assert_screenshot_not_blank(&self, page: &Path, shot: &Path) {
        let o = Command::new(&self.path)
            .args(&self.args)
            .arg("--window-size=1200,2000")
            .arg(format!("--screenshot={}", shot.display()))
            .arg(format!("file://{}", page.display()))
            .output()
            .unwrap();
        assert!(o.status.success(), "{}", stderr(&o));
        let bytes = std::fs::read(shot).unwrap();
        let mut r = png::Decoder::new(&bytes[..]).read_info().unwrap();
        let mut buf = vec![0; r.output_buffer_size()];
        let info = r.next_frame(&mut buf).unwrap();
        let ch = info.color_type.samples();
        let px = &buf[..info.buffer_size()];
        let mut colours = std::collections::HashSet::new();
        let mut ink = 0usize;
        for p in px.chunks(ch) {
            colours.insert((p[0], p[1], p[2]));
            if p[0] < 200 || p[1] < 200 || p[2] < 200 {
                ink += 1;
            }
        }
        let share = ink as f64 / (px.len() / ch) as f64;
        assert!(
            colours.len() > 50 && share > 0.01,
            "screenshot looks blank: {} colours, {share} ink",
            colours.len()
        );
    }
}

/// Run `tauwise COMMAND ARGS…`, which must succeed, and parse its standard
/// output as JSON.
pub fn json_of(command: &str, args: &[&str]) -> serde_json::Value {
    let out = tauwise().arg(command).args(args).output().unwrap();
    assert!(out.status.success(), "{}", stderr(&out));
    serde_json::from_slice(&out.stdout).unwrap()
}
