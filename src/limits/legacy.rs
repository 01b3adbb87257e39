//! The old line-based mask syntax (tauwise before limit files), kept only
//! to say what a file in it would be in the TOML limit-file format:
//!
//! ```text
//! name  lab-wander-limit
//! note  operator's internal limit, draft 3
//! [mtie]
//! shape loglog
//! 0.1s     40ns
//! 1s       40ns
//! [tdev]
//! shape step
//! 0.1s     3ns
//! 100s     3ns
//! ```
//!
//! [`old_syntax_message`] recognises such a file (a line `[mtie]` or
//! `[tdev]`, or `shape …`), checks it with the old rules and returns the
//! message a reader prints: the format changed, and here is the file in
//! TOML, its values as written.

use crate::error::Result;
use crate::io::ReadError;
use crate::units::parse_duration_with_unit;
use crate::wander::masks::{Mask, Metric, Shape};
use std::path::Path;

/// Whether `text` looks like the old mask syntax.
fn looks_old(text: &str) -> bool {
    text.lines().any(|l| {
        let t = l
            .split('#')
            .next()
            .unwrap_or("")
            .trim()
            .to_ascii_lowercase();
        t == "[mtie]" || t == "[tdev]" || t.starts_with("shape ")
    })
}

use super::file::{OutFile, OutLimit};

/// For a file in the old mask syntax: the message saying the format
/// changed, with the file in the TOML form (its values as written) when it
/// reads under the old rules, or a short example when it does not. `None`
/// for any other text.
pub fn old_syntax_message(text: &str, path: &Path) -> Option<String> {
    if !looks_old(text) {
        return None;
    }
    let lead = "this is the old mask-file syntax: mask and limit files are TOML now \
(docs/limit-file.md)";
    let toml = parse_old(text, path).ok().and_then(|_| convert(text));
    Some(match toml {
        Some(t) => format!("{lead}; this file in the new form reads:\n\n{t}"),
        None => format!(
            "{lead}, e.g.\n\nname = \"lab-limit\"\n\n[[limit]]\nmetric = \"mtie\"\nshape = \"loglog\"\npoints = [[\"0.1s\", \"40ns\"], [\"1000s\", \"100ns\"]]\n"
        ),
    })
}

/// The TOML form of an old file that the old rules accept, from its own
/// tokens.
fn convert(text: &str) -> Option<String> {
    let mut out = OutFile {
        name: None,
        note: None,
        limit: Vec::new(),
    };
    for raw in text.lines() {
        let line = raw.split('#').next().unwrap_or("").trim();
        if line.is_empty() {
            continue;
        }
        if let Some(h) = line.strip_prefix('[') {
            out.limit.push(OutLimit {
                metric: h.trim_end_matches(']').trim().to_ascii_lowercase(),
                shape: String::new(),
                points: Vec::new(),
                ..OutLimit::default()
            });
            continue;
        }
        let (key, rest) = match line.split_once(char::is_whitespace) {
            Some((k, r)) => (k, r.trim()),
            None => (line, ""),
        };
        match (key.to_ascii_lowercase().as_str(), out.limit.last_mut()) {
            ("name", None) => out.name = Some(rest.to_string()),
            ("note", None) => out.note = Some(rest.to_string()),
            ("shape", Some(l)) => l.shape = rest.to_ascii_lowercase(),
            (_, Some(l)) => {
                let f: Vec<&str> = line.split_whitespace().collect();
                l.points
                    .push([f.first()?.to_string(), f.get(1)?.to_string()]);
            }
            _ => return None,
        }
    }
    super::file::toml_text(&out).ok()
}

struct Section {
    metric: Metric,
    line: u64,
    shape: Option<(bool, u64)>, // (is_step, line)
    rows: Vec<(f64, f64)>,
}

/// Parse the text of an old mask file (the old rules); `path` names the
/// file in errors.
fn parse_old(text: &str, path: &Path) -> Result<Vec<Mask>> {
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
