//! The limit file: TOML of our own (documented in `docs/limit-file.md`).
//!
//! ```toml
//! name = "lab-acceptance"            # optional; default: the file's stem
//! note = "operator's limit, draft 3" # optional; printed beside every verdict
//!
//! [[limit]]
//! metric = "mtie"
//! shape = "loglog"                   # loglog (default) | step
//! points = [["0.1s", "40ns"], ["1s", "40ns"], ["1000s", "100ns"]]
//!
//! [[limit]]
//! metric = "adev"
//! points = [["1s", "1e-11"], ["10s", "3e-12"], ["100s", "2e-12"]]
//!
//! [[limit]]
//! metric = "lf"
//! points = [["10Hz", "-100dBc/Hz"], ["1kHz", "-140dBc/Hz"], ["100kHz", "-150dBc/Hz"]]
//! ```
//!
//! Reading is strict: unknown keys, unknown metrics (the error lists the
//! known ones, from the estimator registry), points that do not increase,
//! limits that are not positive and finite, and a bare number where the
//! quantity has a unit (τ, offsets, MTIE/TDEV limits, L(f) in dBc/Hz) are
//! refused, naming the file and the line. A file in the old line-based mask
//! syntax is refused with its TOML form ([`super::legacy`]).

use super::{Limit, LimitMetric, ValueKind};
use crate::io::{ReadCause, ReadError};
use crate::units::{self, UnitError};
use crate::wander::masks::Segment;
use serde::{Deserialize, Serialize};
use std::path::Path;
use toml::Spanned;

/// Largest limit file read (a limit file is a few dozen lines).
pub const LIMIT_FILE_LIMIT: u64 = 1 << 20;

/// A limit file as read.
#[derive(Debug, Clone, PartialEq)]
pub struct LimitFile {
    /// The file as given.
    pub path: String,
    /// `name`, default the file's stem.
    pub name: String,
    /// `note`, if given.
    pub note: Option<String>,
    /// The `[[limit]]` entries, in file order.
    pub limits: Vec<Limit>,
}

impl LimitFile {
    /// The MTIE and TDEV entries as `wander` masks.
    pub fn masks(&self) -> Vec<crate::wander::masks::Mask> {
        self.limits.iter().filter_map(Limit::as_mask).collect()
    }

    /// Refuse a file none of whose entries `command` checks, naming the
    /// commands that check them.
    pub fn require_for(&self, command: &str) -> crate::Result<()> {
        if self.limits.iter().any(|l| l.metric.command() == command) {
            return Ok(());
        }
        let others: Vec<String> = self
            .limits
            .iter()
            .map(|l| format!("{} (`tauwise {}`)", l.metric.name(), l.metric.command()))
            .collect();
        let wanted = match command {
            "wander" => "an mtie or tdev limit".to_string(),
            "jitter" => "an lf limit".to_string(),
            _ => format!(
                "a limit on a σ estimator ({})",
                LimitMetric::all()
                    .iter()
                    .filter(|m| m.command() == "stability")
                    .map(|m| m.name())
                    .collect::<Vec<_>>()
                    .join(", ")
            ),
        };
        Err(ReadError::file(
            &self.path,
            format!(
                "no limit that `tauwise {command}` checks: expected {wanted}; this file limits {}",
                others.join(", ")
            ),
        )
        .because(ReadCause::Content)
        .into())
    }
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawFile {
    name: Option<Spanned<String>>,
    note: Option<Spanned<String>>,
    limit: Option<Vec<RawLimit>>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawLimit {
    metric: Spanned<String>,
    shape: Option<Spanned<String>>,
    points: Option<RawPoints>,
    segments: Option<Spanned<Vec<Spanned<RawSegment>>>>,
    max: Option<Spanned<toml::Value>>,
}

/// The `points` array as read, each pair with its place in the file.
type RawPoints = Spanned<Vec<Spanned<Vec<Spanned<toml::Value>>>>>;

/// One formula segment: `limit(τ) = coef·(τ/1 s)^power + add` on
/// `(from, to]`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSegment {
    from: Spanned<toml::Value>,
    to: Option<Spanned<toml::Value>>,
    coef: Option<Spanned<toml::Value>>,
    power: Option<Spanned<toml::Value>>,
    add: Option<Spanned<toml::Value>>,
}

/// Read a limit file from disk ([`parse_limit_file`] on its text), refusing
/// one larger than [`LIMIT_FILE_LIMIT`]; a byte-order mark is skipped.
pub fn read_limit_file(path: &Path) -> crate::Result<LimitFile> {
    let text = crate::io::text::read_small_text(path, LIMIT_FILE_LIMIT, "limit file")?;
    parse_limit_file(&text, path)
}

fn line_of(src: &str, offset: usize) -> u64 {
    let o = offset.min(src.len());
    src[..o].bytes().filter(|&b| b == b'\n').count() as u64 + 1
}

/// Parse the text of a limit file; `path` names the file in errors, which
/// give the line and what was expected.
pub fn parse_limit_file(text: &str, path: &Path) -> crate::Result<LimitFile> {
    let at = |offset: usize, msg: String| -> crate::Error {
        ReadError::at(path, line_of(text, offset), msg)
            .because(ReadCause::Schema)
            .into()
    };
    let raw: RawFile = match toml::from_str(text) {
        Ok(r) => r,
        Err(e) => {
            if let Some(msg) = super::legacy::old_syntax_message(text, path) {
                return Err(ReadError::file(path, msg).because(ReadCause::Schema).into());
            }
            let msg = format!(
                "{}: expected a limit file (docs/limit-file.md: `name`, `note`, then [[limit]] entries with metric, shape, points)",
                e.message().trim_end()
            );
            return Err(match e.span() {
                Some(s) => at(s.start, msg),
                None => ReadError::file(path, msg).because(ReadCause::Schema).into(),
            });
        }
    };
    let name = match &raw.name {
        Some(n) if n.get_ref().trim().is_empty() => {
            return Err(at(n.span().start, "name: expected a non-empty name".into()))
        }
        Some(n) => n.get_ref().trim().to_string(),
        None => path
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_else(|| "limits".to_string()),
    };
    let note = raw
        .note
        .as_ref()
        .map(|n| n.get_ref().trim().to_string())
        .filter(|n| !n.is_empty());
    let entries = raw.limit.unwrap_or_default();
    if entries.is_empty() {
        return Err(ReadError::file(
            path,
            "no [[limit]] entry: expected at least one, each with metric and points (docs/limit-file.md)",
        )
        .because(ReadCause::Schema)
        .into());
    }
    let mut limits = Vec::new();
    for (i, e) in entries.iter().enumerate() {
        let k = i + 1;
        let metric = LimitMetric::from_name(e.metric.get_ref())
            .map_err(|m| at(e.metric.span().start, format!("limit[{k}].metric: {m}")))?;
        let shape_word = e
            .shape
            .as_ref()
            .map(|s| (s.get_ref().trim().to_ascii_lowercase(), s.span().start));
        if metric.is_single() {
            let Some(m) = &e.max else {
                return Err(at(
                    e.metric.span().start,
                    format!(
                        "limit[{k}]: metric {} is one value over the record: expected `max = \"50ns\"` (a duration with its unit), not points",
                        metric.name()
                    ),
                ));
            };
            // A single value takes nothing that shapes a curve.
            let extra = [
                ("points", e.points.as_ref().map(|p| p.span().start)),
                ("segments", e.segments.as_ref().map(|p| p.span().start)),
                ("shape", shape_word.as_ref().map(|(_, o)| *o)),
            ];
            if let Some((key, Some(o))) = extra.into_iter().find(|(_, o)| o.is_some()) {
                return Err(at(
                    o,
                    format!(
                        "limit[{k}].{key}: metric {} takes `max` only: expected no {key}",
                        metric.name()
                    ),
                ));
            }
            let v = limit_value(metric, m)
                .map_err(|msg| at(m.span().start, format!("limit[{k}].max: {msg}")))?;
            limits.push(Limit {
                name: name.clone(),
                note: note.clone(),
                file: path.display().to_string(),
                line: line_of(text, e.metric.span().start),
                metric,
                step: false,
                points: vec![(0.0, v)],
                segments: Vec::new(),
            });
            continue;
        }
        if let Some(m) = &e.max {
            return Err(at(
                m.span().start,
                format!(
                    "limit[{k}].max: metric {} is limited over {}: expected points (or segments), `max` is for cte, max-te, max-te-l, dte-h",
                    metric.name(),
                    metric.axis().symbol()
                ),
            ));
        }
        let (step, formula) = match &shape_word {
            None => (false, false),
            Some((w, o)) => match w.as_str() {
                "loglog" => (false, false),
                "step" => (true, false),
                "formula" => (false, true),
                other => {
                    return Err(at(
                        *o,
                        format!("limit[{k}].shape: unknown shape '{other}': expected \"loglog\", \"step\" or \"formula\""),
                    ))
                }
            },
        };
        if formula {
            if let Some(p) = &e.points {
                return Err(at(
                    p.span().start,
                    format!(
                        "limit[{k}].points: shape \"formula\" takes segments: expected no points"
                    ),
                ));
            }
            let Some(segs) = &e.segments else {
                return Err(at(
                    e.metric.span().start,
                    format!("limit[{k}]: shape \"formula\" needs segments = [{{ from = \"0.1s\", to = \"1s\", coef = \"40ns\", power = 0.1, add = \"0s\" }}, …]"),
                ));
            };
            let segments = parse_segments(metric, segs, k, &at)?;
            limits.push(Limit {
                name: name.clone(),
                note: note.clone(),
                file: path.display().to_string(),
                line: line_of(text, e.metric.span().start),
                metric,
                step: false,
                points: formula_points(&segments),
                segments,
            });
            continue;
        }
        if let Some(p) = &e.segments {
            return Err(at(
                p.span().start,
                format!("limit[{k}].segments: segments need shape = \"formula\""),
            ));
        }
        let Some(points_raw) = &e.points else {
            return Err(at(
                e.metric.span().start,
                format!(
                    "limit[{k}]: no points: expected points = [{}, …]",
                    example(metric)
                ),
            ));
        };
        let pts = points_raw.get_ref();
        if pts.is_empty() {
            return Err(at(
                points_raw.span().start,
                format!(
                    "limit[{k}].points: empty: expected at least one pair such as {}",
                    example(metric)
                ),
            ));
        }
        let mut points: Vec<(f64, f64)> = Vec::with_capacity(pts.len());
        for (j, p) in pts.iter().enumerate() {
            let key = format!("limit[{k}].points[{}]", j + 1);
            let pair = p.get_ref();
            if pair.len() != 2 {
                return Err(at(
                    p.span().start,
                    format!(
                        "{key}: has {} values: expected a pair [{}, limit] such as {}",
                        pair.len(),
                        metric.axis().symbol(),
                        example(metric)
                    ),
                ));
            }
            let x = axis_value(metric, &pair[0])
                .map_err(|m| at(pair[0].span().start, format!("{key}: {m}")))?;
            let v = limit_value(metric, &pair[1])
                .map_err(|m| at(pair[1].span().start, format!("{key}: {m}")))?;
            if let Some(&(prev, _)) = points.last() {
                if x <= prev {
                    let u = metric.axis().unit();
                    return Err(at(
                        pair[0].span().start,
                        format!(
                            "{key}: {} = {x} {u} does not increase (the previous point has {prev} {u}): expected points in strictly increasing {}",
                            metric.axis().symbol(),
                            metric.axis().symbol()
                        ),
                    ));
                }
            }
            points.push((x, v));
        }
        limits.push(Limit {
            name: name.clone(),
            note: note.clone(),
            file: path.display().to_string(),
            line: line_of(text, e.metric.span().start),
            metric,
            step,
            points,
            segments: Vec::new(),
        });
    }
    Ok(LimitFile {
        path: path.display().to_string(),
        name,
        note,
        limits,
    })
}

/// The break points of formula segments: each segment's start with the
/// limit just above it, and the last segment's end when it has one.
fn formula_points(segs: &[Segment]) -> Vec<(f64, f64)> {
    let mut v: Vec<(f64, f64)> = segs.iter().map(|s| (s.lo, s.eval(s.lo))).collect();
    if let Some(l) = segs.last() {
        if l.hi.is_finite() {
            v.push((l.hi, l.eval(l.hi)));
        }
    }
    v
}

/// A coefficient of a formula segment: a duration or a fraction as the
/// metric's limits, zero allowed.
fn coefficient(metric: LimitMetric, v: &Spanned<toml::Value>) -> Result<f64, String> {
    let t = text_of(v.get_ref())?;
    let t = t.trim();
    let x = match metric.values() {
        ValueKind::Duration => units::parse_duration_with_unit(t).map_err(unit_error)?,
        ValueKind::Fraction => units::parse_fraction(t).map_err(unit_error)?,
        ValueKind::DbcHz => {
            return Err("an L(f) limit cannot be a formula: expected points in dBc/Hz".into())
        }
    };
    if x.is_finite() && (x == 0.0 || x.is_normal()) {
        Ok(x)
    } else {
        Err(format!("'{t}': expected a finite value"))
    }
}

/// The segments of a formula limit: contiguous (each `from` the previous
/// `to`), increasing, the limit positive and finite at both ends of each
/// (and, on a last segment with no upper end, `coef` ≥ 0 and `power` ≥ 0,
/// so that it stays positive).
fn parse_segments(
    metric: LimitMetric,
    segs: &Spanned<Vec<Spanned<RawSegment>>>,
    k: usize,
    at: &dyn Fn(usize, String) -> crate::Error,
) -> crate::Result<Vec<Segment>> {
    if segs.get_ref().is_empty() {
        return Err(at(
            segs.span().start,
            format!("limit[{k}].segments: empty: expected at least one segment"),
        ));
    }
    let n = segs.get_ref().len();
    let mut out: Vec<Segment> = Vec::new();
    for (j, sp) in segs.get_ref().iter().enumerate() {
        let key = format!("limit[{k}].segments[{}]", j + 1);
        let r = sp.get_ref();
        let here = sp.span().start;
        let lo = axis_value(metric, &r.from)
            .map_err(|m| at(r.from.span().start, format!("{key}.from: {m}")))?;
        let hi = match &r.to {
            Some(t) => {
                axis_value(metric, t).map_err(|m| at(t.span().start, format!("{key}.to: {m}")))?
            }
            None if j + 1 == n => f64::INFINITY,
            None => {
                return Err(at(
                    here,
                    format!("{key}: no `to`: only the last segment may run without an upper end"),
                ))
            }
        };
        if hi <= lo {
            return Err(at(
                here,
                format!("{key}: to = {hi} s is not above from = {lo} s: expected from < to"),
            ));
        }
        if let Some(prev) = out.last() {
            if prev.hi != lo {
                return Err(at(
                    r.from.span().start,
                    format!(
                        "{key}.from: {lo} s does not continue the previous segment, which ends at {} s: expected contiguous segments",
                        prev.hi
                    ),
                ));
            }
        }
        let coef = match &r.coef {
            Some(c) => coefficient(metric, c)
                .map_err(|m| at(c.span().start, format!("{key}.coef: {m}")))?,
            None => 0.0,
        };
        let add = match &r.add {
            Some(c) => {
                coefficient(metric, c).map_err(|m| at(c.span().start, format!("{key}.add: {m}")))?
            }
            None => 0.0,
        };
        let power = match &r.power {
            None => 0.0,
            Some(p) => match p.get_ref() {
                toml::Value::Integer(i) => *i as f64,
                toml::Value::Float(f) if f.is_finite() => *f,
                other => {
                    return Err(at(
                        p.span().start,
                        format!(
                            "{key}.power: expected a number (the exponent of τ in s), got {other}"
                        ),
                    ))
                }
            },
        };
        let s = Segment {
            lo,
            hi,
            a: coef,
            p: power,
            b: add,
        };
        let ends_ok = [s.eval(lo)]
            .into_iter()
            .chain(hi.is_finite().then(|| s.eval(hi)))
            .all(|v| v.is_finite() && v > 0.0 && v.is_normal());
        let open_ok = hi.is_finite() || (coef >= 0.0 && power >= 0.0);
        if !(ends_ok && open_ok) {
            return Err(at(
                here,
                format!(
                    "{key}: the limit coef·τ^power + add must be positive and finite over the whole segment{}",
                    if hi.is_finite() { "" } else { " (with no upper end: coef ≥ 0 and power ≥ 0)" }
                ),
            ));
        }
        out.push(s);
    }
    Ok(out)
}

/// An example pair for a metric, for messages.
fn example(m: LimitMetric) -> &'static str {
    match m.values() {
        ValueKind::Duration => "[\"100s\", \"40ns\"]",
        ValueKind::Fraction => "[\"1s\", \"1e-11\"]",
        ValueKind::DbcHz => "[\"1kHz\", \"-140dBc/Hz\"]",
    }
}

/// The text of a TOML value: a string as is, a number as written (so that
/// a bare number meets the same refusal as in a string).
fn text_of(v: &toml::Value) -> Result<String, String> {
    match v {
        toml::Value::String(s) => Ok(s.clone()),
        toml::Value::Integer(i) => Ok(i.to_string()),
        toml::Value::Float(f) => Ok(f.to_string()),
        other => Err(format!(
            "expected a string such as \"100s\" or \"1e-11\", got a {}",
            other.type_str()
        )),
    }
}

fn unit_error(e: UnitError) -> String {
    e.to_string()
}

/// τ (a duration with its unit) or an offset (a frequency with its unit).
fn axis_value(metric: LimitMetric, v: &Spanned<toml::Value>) -> Result<f64, String> {
    let t = text_of(v.get_ref())?;
    let x = match metric.axis() {
        super::Axis::Tau => {
            units::parse_duration_with_unit(&t).map_err(|e| format!("τ: {}", unit_error(e)))?
        }
        super::Axis::Offset => {
            if t.trim().parse::<f64>().is_ok() {
                return Err(format!(
                    "offset '{}' has no unit: give a unit, e.g. 10Hz / 1kHz / 1MHz",
                    t.trim()
                ));
            }
            units::parse_frequency(&t).map_err(|e| format!("offset: {}", unit_error(e)))?
        }
    };
    if !(x.is_finite() && x > 0.0 && x.is_normal()) {
        return Err(format!(
            "{} must be a positive finite {}, got '{}'",
            metric.axis().symbol(),
            if metric.axis() == super::Axis::Tau {
                "duration"
            } else {
                "frequency"
            },
            t.trim()
        ));
    }
    Ok(x)
}

/// A limit value: a duration, a fraction, or dBc/Hz.
fn limit_value(metric: LimitMetric, v: &Spanned<toml::Value>) -> Result<f64, String> {
    let t = text_of(v.get_ref())?;
    let t = t.trim();
    match metric.values() {
        ValueKind::Duration => {
            let s = units::parse_duration_with_unit(t)
                .map_err(|e| format!("limit: {}", unit_error(e)))?;
            positive(s, t, "a positive duration (at least 2.3e-308 s), e.g. 40ns")
        }
        ValueKind::Fraction => {
            let s = units::parse_fraction(t).map_err(|e| format!("limit: {}", unit_error(e)))?;
            positive(s, t, "a positive fractional value, e.g. 1e-11 or 0.01ppb")
        }
        ValueKind::DbcHz => {
            let num = t
                .strip_suffix("dBc/Hz")
                .or_else(|| t.strip_suffix("dbc/hz"))
                .or_else(|| t.strip_suffix("dBc/hz"))
                .ok_or_else(|| {
                    format!(
                        "limit '{t}': an L(f) limit needs its unit: give it in dBc/Hz, e.g. \"-140dBc/Hz\""
                    )
                })?;
            match num.trim().parse::<f64>() {
                Ok(db) if db.is_finite() && 10f64.powf(db / 10.0).is_normal() => Ok(db),
                Ok(_) => Err(format!(
                    "limit '{t}': expected a finite level in dBc/Hz above -3000 dBc/Hz and below +3000 dBc/Hz"
                )),
                Err(_) => Err(format!(
                    "limit '{t}': '{}' is not a number: expected e.g. \"-140dBc/Hz\"",
                    num.trim()
                )),
            }
        }
    }
}

fn positive(v: f64, text: &str, expected: &str) -> Result<f64, String> {
    if v > 0.0 && v.is_normal() {
        Ok(v)
    } else {
        Err(format!(
            "limit '{text}' must be positive and finite: expected {expected}"
        ))
    }
}

/// A limit file as written (by [`write_limit_file`] and by the old-syntax
/// message's conversion, [`super::legacy`]): the format's own keys.
#[derive(Serialize)]
pub(super) struct OutFile {
    #[serde(skip_serializing_if = "Option::is_none")]
    pub(super) name: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub(super) note: Option<String>,
    pub(super) limit: Vec<OutLimit>,
}

/// One `[[limit]]` entry as written.
#[derive(Serialize, Default)]
pub(super) struct OutLimit {
    pub(super) metric: String,
    #[serde(skip_serializing_if = "String::is_empty")]
    pub(super) shape: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub(super) max: Option<String>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub(super) points: Vec<[String; 2]>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub(super) segments: Vec<OutSegment>,
}

/// One formula segment as written.
#[derive(Serialize)]
pub(super) struct OutSegment {
    from: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    to: Option<String>,
    coef: String,
    power: f64,
    add: String,
}

/// Write limits (all of one file) in the limit-file format, through the
/// `toml` serializer; values in the shortest form that reads back exactly
/// (`4e-8s`, `1e-11`, `1e3Hz`, `-140dBc/Hz`).
pub fn write_limit_file(file: &LimitFile) -> crate::Result<String> {
    let out = OutFile {
        name: Some(file.name.clone()),
        note: file.note.clone(),
        limit: file
            .limits
            .iter()
            .map(|l| {
                let u = l.metric.axis().unit();
                let value = |v: f64| match l.metric.values() {
                    ValueKind::Duration => format!("{v:e}s"),
                    ValueKind::Fraction => format!("{v:e}"),
                    ValueKind::DbcHz => format!("{v}dBc/Hz"),
                };
                if let Some(v) = l.single_value() {
                    return OutLimit {
                        metric: l.metric.name().to_string(),
                        max: Some(value(v)),
                        ..OutLimit::default()
                    };
                }
                if !l.segments.is_empty() {
                    return OutLimit {
                        metric: l.metric.name().to_string(),
                        shape: "formula".into(),
                        segments: l
                            .segments
                            .iter()
                            .map(|s| OutSegment {
                                from: format!("{:e}{u}", s.lo),
                                to: s.hi.is_finite().then(|| format!("{:e}{u}", s.hi)),
                                coef: value(s.a),
                                power: s.p,
                                add: value(s.b),
                            })
                            .collect(),
                        ..OutLimit::default()
                    };
                }
                OutLimit {
                    metric: l.metric.name().to_string(),
                    shape: if l.step { "step" } else { "loglog" }.to_string(),
                    points: l
                        .points
                        .iter()
                        .map(|&(x, v)| [format!("{x:e}{u}"), value(v)])
                        .collect(),
                    ..OutLimit::default()
                }
            })
            .collect(),
    };
    toml_text(&out)
}

/// TOML text of a serialisable value.
pub(crate) fn toml_text<T: Serialize>(v: &T) -> crate::Result<String> {
    toml::to_string(v).map_err(|e| crate::Error::invalid(format!("could not write TOML: {e}")))
}
