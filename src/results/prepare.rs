//! The record file `prepare` writes: a cleaned record with `#` comment
//! lines that say what was read and what each step did (outliers, drift,
//! gap filling, decimation), in the form every command reads back as it
//! was ([`crate::io::record_file`]).

use crate::io::record_file::{write_record_file, RecordFile, Start};
use crate::prepare::pipeline::Prepared;
use crate::prepare::DriftModel;
use crate::record::{DataKind, Record};
use crate::units::{format_si, format_sig, FreqUnit, PhaseUnit, ValueUnit};

/// Most outlier events listed one per line in the comments.
const OUTLIERS_LISTED: usize = 20;

/// What `prepare` did to a record, in words, one note per line: what was
/// read, then each step in the order it ran.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct PrepareNotes(pub Vec<String>);

impl PrepareNotes {
    /// The record read from `path` (`inserted` gaps put in for timestamp
    /// jumps).
    pub fn read(path: &str, record: &Record, inserted: usize) -> Self {
        Self(vec![format!(
            "read: {path} ({} samples, {} gaps, τ0 {}{})",
            record.len(),
            record.gaps(),
            format_si(record.tau0(), "s", 6),
            if inserted > 0 {
                format!(", {inserted} gaps inserted for timestamp jumps")
            } else {
                String::new()
            }
        )])
    }

    /// The steps of the pipeline ([`crate::prepare::pipeline::prepare`]) on
    /// a record of `kind`.
    pub fn steps(&mut self, done: &Prepared, kind: DataKind) {
        let notes = &mut self.0;
        if let Some(o) = &done.outliers {
            let mut n = format!(
                "outliers: {} frequency values beyond {} × MAD (median {}, MAD {}); {} samples made gaps",
                o.events.len(),
                format_sig(o.limit, 3),
                format_sig(o.median, 6),
                format_sig(o.mad, 6),
                o.samples_made_gaps
            );
            if o.steps_removed > 0 {
                n.push_str(&format!(
                    "; {} phase steps taken out of the later phase (one sample each made a gap)",
                    o.steps_removed
                ));
            }
            notes.push(n);
            for e in o.events.iter().take(OUTLIERS_LISTED) {
                notes.push(format!(
                    "  outlier at t = {} s (y index {}): y = {}, {} MAD{}",
                    format_sig(e.t, 8),
                    e.index,
                    format_sig(e.y, 6),
                    format_sig(e.mads, 3),
                    e.action
                        .map(|a| format!("; {}", a.words()))
                        .unwrap_or_default()
                ));
            }
            if o.events.len() > OUTLIERS_LISTED {
                notes.push(format!("  … and {} more", o.events.len() - OUTLIERS_LISTED));
            }
        }
        if let Some(fit) = &done.drift {
            let mut n = format!(
                "drift removed: {} fit to frequency, {} per day at the centre (t = {} s from the first sample)",
                fit.model.name(),
                format_sig(fit.per_day(), 6),
                format_sig(fit.centre, 8)
            );
            if fit.model == DriftModel::Quadratic {
                n.push_str(&format!(
                    ", change of drift {} per day²",
                    format_sig(fit.curvature_per_day2(), 6)
                ));
            }
            n.push_str(&format!(
                "; frequency at the centre {} kept",
                format_sig(fit.offset, 6)
            ));
            notes.push(n);
        }
        if let Some(g) = &done.gaps {
            notes.push(format!(
                "gaps filled by linear interpolation of {}: {} samples; {} left at the ends",
                match kind {
                    DataKind::Phase => "phase",
                    DataKind::Freq => "frequency",
                },
                g.filled,
                g.left
            ));
        }
    }

    /// Decimation by `n` from τ0 `before` to the record `after`.
    pub fn decimated(&mut self, n: usize, before: f64, after: &Record) {
        self.0.push(format!(
            "decimated by {n}: τ0 {} → {}{}",
            format_si(before, "s", 6),
            format_si(after.tau0(), "s", 6),
            match after {
                Record::Phase(_) => " (every n-th phase sample)",
                Record::Frequency(_) => " (block means of frequency; a block with a gap is a gap)",
            }
        ));
    }

    /// The record file: comment lines (tool, what the data are, τ0, counts,
    /// these notes), the header and one row per sample from `start`.
    pub fn record_file(&self, record: &Record, start: Start) -> std::io::Result<Vec<u8>> {
        let (what, unit) = match record {
            Record::Phase(_) => ("phase in seconds", ValueUnit::Phase(PhaseUnit::S)),
            Record::Frequency(_) => ("fractional frequency", ValueUnit::Freq(FreqUnit::Frac)),
        };
        let mut comments = vec![
            format!("{} {} prepare", crate::TOOL, crate::VERSION),
            format!(
                "data: {} ({what}), one sample per row after the header, NaN = gap",
                record.kind().name()
            ),
            format!("tau0: {} s", super::plain(record.tau0())),
            format!("samples: {}, gaps: {}", record.len(), record.gaps()),
        ];
        comments.extend(self.0.iter().cloned());
        let mut out = Vec::with_capacity(record.len() * 32 + 1024);
        write_record_file(
            &mut out,
            &RecordFile {
                record,
                unit,
                carrier: None,
                start,
                comments: &comments,
            },
        )?;
        Ok(out)
    }
}
