//! User masks: tauwise's own small text format (documented in
//! `docs/mask-file.md`).
//!
//! ```text
//! # lines starting with '#' are comments; blank lines are ignored
//! name  lab-wander-limit
//! note  operator's internal limit, draft 3
//!
//! [mtie]
//! shape loglog
//! # tau    limit
//! 0.1s     40ns
//! 1s       40ns
//! 100s     63.4ns
//!
//! [tdev]
//! shape step
//! 0.1s     3ns
//! 100s     3ns
//! 1000s    30ns
//! ```
//!
//! `name` and `note` are optional (default: the file's stem, and "user mask
//! from FILE"). Each section `[mtie]` or `[tdev]` (at most one of each) first
//! declares `shape step` or `shape loglog`, then holds rows of τ and limit,
//! each a duration with its unit (`100ms`, `2.5us`, `1000s`; a bare number
//! is refused — it decides a verdict). τ must increase strictly; limits must
//! be positive normal numbers (a subnormal limit such as `1e-320s` would
//! make value/limit overflow). Step rows mean "this limit up
//! to and including this τ, from the previous row's τ"; the first row opens
//! the mask. Log–log rows are joined by straight lines on log–log axes.

use super::masks::{Mask, Metric, Shape};
use crate::error::Result;
use crate::io::ReadError;
use crate::units::parse_duration_with_unit;
use std::path::Path;

/// Largest mask file read (a mask is a few dozen lines).
pub const MASK_FILE_LIMIT: u64 = 1 << 20;

/// Read a mask file from disk ([`parse_mask_file`] on its text), refusing
/// one larger than [`MASK_FILE_LIMIT`]; a byte-order mark is skipped.
pub fn read_mask_file(path: &Path) -> Result<Vec<Mask>> {
    let text = crate::io::text::read_small_text(path, MASK_FILE_LIMIT, "mask file")?;
    parse_mask_file(&text, path)
}

struct Section {
    metric: Metric,
    line: u64,
    shape: Option<(bool, u64)>, // (is_step, line)
    rows: Vec<(f64, f64)>,
}

/// Parse the text of a mask file; `path` names the file in errors, which
/// give the line and what was expected.
pub fn parse_mask_file(text: &str, path: &Path) -> Result<Vec<Mask>> {
    let at = |line: u64, msg: String| ReadError::at(path, line, msg);
    let mut name: Option<String> = None;
    let mut note: Option<String> = None;
    let mut sections: Vec<Section> = Vec::new();
    for (i, raw) in text.lines().enumerate() {
        let ln = i as u64 + 1;
        let line = raw.split('#').next().unwrap_or("").trim();
        if line.is_empty() {
            continue;
        }
        if let Some(head) = line.strip_prefix('[') {
            let head = head.strip_suffix(']').ok_or_else(|| {
                at(
                    ln,
                    format!("section header '{line}' is not closed: expected [mtie] or [tdev]"),
                )
            })?;
            let metric = match head.trim().to_ascii_lowercase().as_str() {
                "mtie" => Metric::Mtie,
                "tdev" => Metric::Tdev,
                other => {
                    return Err(at(
                        ln,
                        format!("unknown section [{other}]: expected [mtie] or [tdev]"),
                    )
                    .into())
                }
            };
            if let Some(prev) = sections.iter().find(|s| s.metric == metric) {
                return Err(at(
                    ln,
                    format!(
                        "second [{}] section (the first is on line {}): expected one section per metric",
                        metric.name(),
                        prev.line
                    ),
                )
                .into());
            }
            sections.push(Section {
                metric,
                line: ln,
                shape: None,
                rows: Vec::new(),
            });
            continue;
        }
        let (key, rest) = match line.split_once(char::is_whitespace) {
            Some((k, r)) => (k, r.trim()),
            None => (line, ""),
        };
        match (key.to_ascii_lowercase().as_str(), sections.last_mut()) {
            ("name", None) => {
                if rest.is_empty() {
                    return Err(at(ln, "'name' needs a value: expected 'name <mask name>'".into()).into());
                }
                name = Some(rest.to_string());
            }
            ("note", None) => note = Some(rest.to_string()),
            ("name" | "note", Some(_)) => {
                return Err(at(
                    ln,
                    format!("'{key}' must come before the first section"),
                )
                .into())
            }
            ("shape", Some(sec)) => {
                if let Some((_, l)) = sec.shape {
                    return Err(at(ln, format!("second 'shape' in this section (first on line {l})")).into());
                }
                if !sec.rows.is_empty() {
                    return Err(at(ln, "'shape' must come before the section's rows".into()).into());
                }
                let is_step = match rest.to_ascii_lowercase().as_str() {
                    "step" => true,
                    "loglog" => false,
                    other => {
                        return Err(at(
                            ln,
                            format!("unknown shape '{other}': expected 'shape step' or 'shape loglog'"),
                        )
                        .into())
                    }
                };
                sec.shape = Some((is_step, ln));
            }
            ("shape", None) => {
                return Err(at(ln, "'shape' outside a section: expected [mtie] or [tdev] first".into()).into())
            }
            (_, None) => {
                return Err(at(
                    ln,
                    format!("'{line}' is not understood here: expected 'name', 'note', or a section [mtie] / [tdev]"),
                )
                .into())
            }
            (_, Some(sec)) => {
                if sec.shape.is_none() {
                    return Err(at(
                        ln,
                        format!(
                            "row before the section's shape: expected 'shape step' or 'shape loglog' after [{}]",
                            sec.metric.name()
                        ),
                    )
                    .into());
                }
                let fields: Vec<&str> = line.split_whitespace().collect();
                if fields.len() != 2 {
                    return Err(at(
                        ln,
                        format!("'{line}' has {} fields: expected two, τ and limit (e.g. '100s 63.4ns')", fields.len()),
                    )
                    .into());
                }
                let tau = parse_duration_with_unit(fields[0])
                    .map_err(|e| at(ln, format!("τ: {e}")))?;
                let lim = parse_duration_with_unit(fields[1])
                    .map_err(|e| at(ln, format!("limit: {e}")))?;
                if !(tau > 0.0 && tau.is_normal()) {
                    return Err(at(ln, format!("τ must be a positive normal number of seconds, got {}", fields[0])).into());
                }
                if !(lim > 0.0 && lim.is_normal()) {
                    return Err(at(ln, format!("limit must be a positive normal number of seconds (at least {:e} s), got {}", f64::MIN_POSITIVE, fields[1])).into());
                }
                if let Some(&(prev, _)) = sec.rows.last() {
                    if tau <= prev {
                        return Err(at(
                            ln,
                            format!(
                                "τ = {} s does not increase (previous row has {prev} s): expected rows in strictly increasing τ",
                                tau
                            ),
                        )
                        .into());
                    }
                }
                sec.rows.push((tau, lim));
            }
        }
    }
    if sections.is_empty() {
        return Err(
            ReadError::file(path, "no [mtie] or [tdev] section: expected at least one").into(),
        );
    }
    let name = name.unwrap_or_else(|| {
        path.file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_else(|| "user-mask".to_string())
    });
    let note = note.unwrap_or_else(|| format!("user mask from {}", path.display()));
    let mut out = Vec::new();
    for sec in sections {
        let (is_step, _) = sec.shape.ok_or_else(|| {
            at(
                sec.line,
                format!(
                    "section [{}] declares no shape: expected 'shape step' or 'shape loglog'",
                    sec.metric.name()
                ),
            )
        })?;
        let need = if is_step { 1 } else { 2 };
        if sec.rows.len() < need {
            return Err(at(
                sec.line,
                format!(
                    "section [{}] has {} row(s): a {} mask needs at least {need}",
                    sec.metric.name(),
                    sec.rows.len(),
                    if is_step { "step" } else { "loglog" }
                ),
            )
            .into());
        }
        out.push(Mask {
            name: name.clone(),
            source_note: note.clone(),
            metric: sec.metric,
            shape: if is_step {
                Shape::Step(sec.rows)
            } else {
                Shape::LogLog(sec.rows)
            },
        });
    }
    Ok(out)
}

/// Write masks (all of one name) in the mask-file format; values are plain
/// seconds in the shortest form that reads back exactly. Formula masks (the
/// built-ins) cannot be written as rows and are an error.
pub fn write_mask_file(masks: &[Mask]) -> Result<String> {
    let mut s = String::from("# tauwise mask file (see docs/mask-file.md)\n");
    if let Some(m) = masks.first() {
        s.push_str(&format!("name {}\n", m.name));
        if !m.source_note.is_empty() {
            s.push_str(&format!("note {}\n", m.source_note.replace('#', " ")));
        }
    }
    for m in masks {
        let (shape, rows) = match &m.shape {
            Shape::Step(r) => ("step", r),
            Shape::LogLog(r) => ("loglog", r),
            Shape::Formula(_) => {
                return Err(crate::Error::invalid(format!(
                    "mask '{}' ({}) is a formula mask: only step and loglog masks have a file form",
                    m.name,
                    m.metric.name()
                )))
            }
        };
        s.push_str(&format!("\n[{}]\nshape {shape}\n", m.metric.name()));
        for (t, l) in rows {
            s.push_str(&format!("{t:e}s {l:e}s\n"));
        }
    }
    Ok(s)
}
