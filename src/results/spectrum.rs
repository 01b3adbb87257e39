//! The `spectrum` document (and the L(f) tables of `convert --to lf`): one
//! row per offset with L(f), S_φ, S_y and S_x.

use super::{csv_text, plain, plain_opt, Result};
use crate::spectrum::{Quantity, Spectrum};
use crate::units::{format_si, format_sig};
use serde::Serialize;
use std::fmt::Write as _;

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

    /// Aligned text columns for reading.
    pub fn text(&self) -> String {
        let mut out = String::new();
        let _ = writeln!(
            out,
            "{:>12}  {:>12}  {:>11}  {:>11}  {:>11}",
            "f", "L(f) dBc/Hz", "S_φ rad²/Hz", "S_y 1/Hz", "S_x s²/Hz"
        );
        for r in &self.0 {
            let _ = writeln!(
                out,
                "{:>12}  {:>12}  {:>11}  {:>11}  {:>11}",
                format_si(r.f, "Hz", 4),
                r.lf_dbc_hz
                    .map(|v| format!("{v:.2}"))
                    .unwrap_or_else(|| "-".into()),
                r.sphi
                    .map(|v| format_sig(v, 4))
                    .unwrap_or_else(|| "-".into()),
                format_sig(r.sy, 4),
                format_sig(r.sx, 4)
            );
        }
        out
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
