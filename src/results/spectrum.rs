//! The `spectrum` document (and the L(f) tables of `convert --to lf`): one
//! row per offset with L(f), S_φ, S_y and S_x.

use super::table::{Cell, Column, Table, Text, Unit};
use super::{csv_text, plain, plain_opt, Result};
use crate::spectrum::{Quantity, Spectrum};
use crate::units::format_si;
use serde::Serialize;

/// One offset: `{"f","lf_dbc_hz","sphi","sy","sx"}` (Hz, dBc/Hz, rad²/Hz,
/// 1/Hz, s²/Hz); L(f) and S_φ are `null` without a carrier.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SpectrumRow {
    /// Offset, Hz.
    pub f: f64,
    /// L(f), dBc/Hz.
    pub lf_dbc_hz: Option<f64>,
    /// S_φ, rad²/Hz.
    pub sphi: Option<f64>,
    /// S_y, 1/Hz.
    pub sy: f64,
    /// S_x, s²/Hz.
    pub sx: f64,
}

/// The rows of a spectrum in every quantity.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(transparent)]
pub struct SpectrumRows(pub Vec<SpectrumRow>);

impl SpectrumRows {
    /// The rows of `s` (L and S_φ only with a carrier).
    pub fn new(s: &Spectrum) -> Result<Self> {
        let carrier = s.carrier.is_some();
        let lf = if carrier {
            Some(s.values_as(Quantity::Lf)?)
        } else {
            None
        };
        let sphi = if carrier {
            Some(s.values_as(Quantity::Sphi)?)
        } else {
            None
        };
        let sy = s.values_as(Quantity::Sy)?;
        let sx = s.values_as(Quantity::Sx)?;
        Ok(Self(
            (0..s.f.len())
                .map(|i| SpectrumRow {
                    f: s.f[i],
                    lf_dbc_hz: lf.as_ref().map(|v| v[i]),
                    sphi: sphi.as_ref().map(|v| v[i]),
                    sy: sy[i],
                    sx: sx[i],
                })
                .collect(),
        ))
    }

    /// CSV with the header `f,lf_dbc_hz,sphi,sy,sx`.
    pub fn csv(&self) -> Result<String> {
        csv_text(
            &["f", "lf_dbc_hz", "sphi", "sy", "sx"],
            self.0.iter().map(|r| {
                [
                    plain(r.f),
                    plain_opt(r.lf_dbc_hz),
                    plain_opt(r.sphi),
                    plain(r.sy),
                    plain(r.sx),
                ]
            }),
        )
    }

    /// The rows for reading: offset, L(f), S_φ, S_y, S_x (`-` where a
    /// quantity needs the carrier).
    pub fn table(&self) -> Table {
        let mut t = Table::new(vec![
            Column::right("f", 12).unit(Unit::Si("Hz")),
            Column::right("L(f) dBc/Hz", 12)
                .unit(Unit::Fixed(2, ""))
                .gap(2)
                .missing("-"),
            Column::right("S_φ rad²/Hz", 11)
                .unit(Unit::Plain)
                .gap(2)
                .missing("-"),
            Column::right("S_y 1/Hz", 11).unit(Unit::Plain).gap(2),
            Column::right("S_x s²/Hz", 11).unit(Unit::Plain).gap(2),
        ]);
        for r in &self.0 {
            t.row(vec![
                Cell::num(r.f),
                Cell::opt(r.lf_dbc_hz),
                Cell::opt(r.sphi),
                Cell::num(r.sy),
                Cell::num(r.sx),
            ]);
        }
        t
    }

    /// [`SpectrumRows::table`] as text.
    pub fn text(&self) -> String {
        self.table().render()
    }
}

/// The `spectrum` results: `{"carrier","window","enbw_hz","resolution_hz",
/// "segment","segments","overlap","gaps_handling","warnings","bins",
/// "points"}`.
#[derive(Debug, Clone, Serialize)]
pub struct SpectrumBody {
    /// Carrier frequency, Hz (`null`: not given).
    pub carrier: Option<f64>,
    /// Data window.
    pub window: &'static str,
    /// Equivalent noise bandwidth of a bin, Hz.
    pub enbw_hz: f64,
    /// Bin spacing, Hz.
    pub resolution_hz: f64,
    /// Segment length, samples.
    pub segment: usize,
    /// Segments averaged.
    pub segments: usize,
    /// Overlap of consecutive segments (fraction).
    pub overlap: f64,
    /// How gaps were handled, in words.
    pub gaps_handling: String,
    /// What looks wrong.
    pub warnings: Vec<String>,
    /// `all`, or `log, N per decade`.
    pub bins: String,
    /// The rows.
    pub points: SpectrumRows,
}

impl SpectrumBody {
    /// The results of a Welch estimate `w` output as `points`.
    pub fn new(
        w: &crate::spectrum::welch::Welch,
        carrier: Option<f64>,
        bins: String,
        points: SpectrumRows,
    ) -> Self {
        Self {
            carrier,
            window: w.window.name(),
            enbw_hz: w.enbw_hz,
            resolution_hz: w.resolution_hz,
            segment: w.segment,
            segments: w.segments,
            overlap: w.overlap,
            gaps_handling: w.gap_note(),
            warnings: w.warnings.clone(),
            bins,
            points,
        }
    }
}

impl SpectrumBody {
    /// The table for reading: how the spectrum was made (window, ENBW,
    /// resolution, overlap, gaps, warnings, carrier), then the rows.
    /// `path` names the record; `frequency_record` when it held frequency.
    pub fn table(&self, path: &str, frequency_record: bool) -> Text {
        let mut t = Text::new();
        t.line(format!("Spectrum of {path} (Welch)"));
        t.line(format!(
            "  window {}, ENBW {}, resolution {}, overlap {:.0} %",
            self.window,
            format_si(self.enbw_hz, "Hz", 4),
            format_si(self.resolution_hz, "Hz", 4),
            self.overlap * 100.0
        ));
        t.line(format!("  {}", self.gaps_handling));
        if frequency_record {
            t.line("  frequency record: S_y = (2 sin(πfτ0)/τ0)²·S_x of the integrated phase (sampled data); L(f), S_φ and S_x from S_y");
        }
        for warning in &self.warnings {
            t.line(format!("  warning: {warning}"));
        }
        match self.carrier {
            Some(c) => t.line(format!("  carrier {}", format_si(c, "Hz", 4))),
            None => t.line("  no carrier given: L(f) and S_φ not shown"),
        }
        t.blank();
        t.table(self.points.table());
        t
    }
}
