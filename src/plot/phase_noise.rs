//! The phase-noise chart: L(f) in dBc/Hz against offset frequency on a log
//! axis — the measured table, the power-law model, the spectrum of a time
//! record — with each integration band shaded and labelled.

use super::{Axis, Chart, Colour, Line, Marker, Series, Span, Style, XY};

/// Where an L(f) trace comes from; decides its look.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TraceKind {
    /// A measured table (solid, small markers).
    Table,
    /// A power-law model (dashed).
    Model,
    /// The PSD of a time record (thin solid).
    RecordSpectrum,
}

/// One L(f) trace.
#[derive(Debug, Clone, PartialEq)]
pub struct LfTrace {
    /// Legend text.
    pub name: String,
    /// What it is.
    pub kind: TraceKind,
    /// (offset f in Hz, L(f) in dBc/Hz).
    pub points: Vec<(f64, f64)>,
}

/// An integration band to shade.
#[derive(Debug, Clone, PartialEq)]
pub struct BandMark {
    /// Lower offset (Hz).
    pub from: f64,
    /// Upper offset (Hz).
    pub to: f64,
    /// Label in the strip (e.g. the band and its rms jitter).
    pub label: String,
}

/// Everything the phase-noise chart shows.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct PhaseNoisePlot {
    /// Title (device or file name).
    pub title: String,
    /// Carrier ν0 in Hz, for the subtitle.
    pub carrier: Option<f64>,
    /// Traces.
    pub traces: Vec<LfTrace>,
    /// Integration bands.
    pub bands: Vec<BandMark>,
    /// Footnotes.
    pub notes: Vec<String>,
}

/// (offset, L(f) in dBc/Hz) points of a spectrum in any quantity (S_y and
/// S_x need the carrier the spectrum carries; IEEE Std 1139 relations).
pub fn lf_points(s: &crate::spectrum::Spectrum) -> crate::Result<Vec<(f64, f64)>> {
    let l = s.to(crate::spectrum::Quantity::Lf)?;
    Ok(l.f.iter().copied().zip(l.values.iter().copied()).collect())
}

impl LfTrace {
    /// A trace of the spectrum `s`, shown as L(f).
    pub fn from_spectrum(
        name: &str,
        kind: TraceKind,
        s: &crate::spectrum::Spectrum,
    ) -> crate::Result<Self> {
        Ok(Self {
            name: name.to_string(),
            kind,
            points: lf_points(s)?,
        })
    }
}

impl BandMark {
    /// The shaded band of an integrated-jitter result, labelled `name: rms`
    /// (rms time jitter).
    pub fn from_jitter(name: &str, b: &crate::spectrum::jitter::BandJitter) -> Self {
        Self {
            from: b.from,
            to: b.to,
            label: format!("{name}: {}", crate::units::format_si(b.rms_s, "s", 3)),
        }
    }
}

impl PhaseNoisePlot {
    /// Build the chart.
    pub fn chart(&self) -> Chart {
        let mut ch = Chart::new(
            &self.title,
            Axis::log_si("offset frequency", "Hz"),
            Axis::linear_plain("single-sideband phase noise L(f)", "dBc/Hz"),
        );
        ch.subtitle = match self.carrier {
            Some(c) => format!(
                "carrier {} · L(f) = S_φ(f)/2 (IEEE Std 1139)",
                crate::units::format_si(c, "Hz", 4)
            ),
            None => "L(f) = S_φ(f)/2 (IEEE Std 1139)".into(),
        };
        for (i, t) in self.traces.iter().enumerate() {
            let style = match t.kind {
                TraceKind::Table => Style {
                    colour: Colour::Palette(i),
                    line: Line::Solid,
                    width: 2.0,
                    marker: if t.points.len() <= 80 {
                        Marker::Dot
                    } else {
                        Marker::None
                    },
                },
                TraceKind::Model => Style::line(Colour::Palette(i), Line::Dashed),
                TraceKind::RecordSpectrum => Style {
                    colour: Colour::Palette(i),
                    line: Line::Solid,
                    width: 1.2,
                    marker: Marker::None,
                },
            };
            ch.series.push(Series {
                name: t.name.clone(),
                points: t.points.iter().map(|&(f, l)| XY::new(f, l)).collect(),
                style,
            });
        }
        for (i, b) in self.bands.iter().enumerate() {
            ch.spans.push(Span {
                label: b.label.clone(),
                from: b.from,
                to: b.to,
                shade: true,
                colour: Colour::Palette(self.traces.len() + i),
                legend: Some(format!(
                    "band {} – {}",
                    super::scale::si_compact(b.from, "Hz"),
                    super::scale::si_compact(b.to, "Hz")
                )),
            });
        }
        ch.notes.extend(self.notes.iter().cloned());
        ch
    }
}

/// Spurs found in a trace, as markers at their peaks on the trace
/// (offset, L in dBc/Hz); the legend points to the table for their levels
/// as tones.
pub fn found_spur_marks(found: &[crate::spectrum::spurs::FoundSpur]) -> Option<Series> {
    (!found.is_empty()).then(|| Series {
        name: format!("spurs found in the trace ({})", found.len()),
        points: found
            .iter()
            .map(|s| XY::new(s.offset_hz, s.peak_dbc_hz))
            .collect(),
        style: Style::markers(Colour::Palette(7), Marker::Triangle),
    })
}

/// The chart of `jitter`: the trace (a table, or a record's spectrum) with
/// each band that could be integrated shaded (`bands`: its label and
/// result, in order), the weighting and extrapolation noted, the decision
/// caution, and the spurs found in the trace marked.
pub fn jitter_chart(
    title: &str,
    carrier: f64,
    trace: &crate::spectrum::Spectrum,
    kind: TraceKind,
    bands: &[(&str, &crate::spectrum::jitter::BandJitter)],
    found: &[crate::spectrum::spurs::FoundSpur],
) -> crate::Result<Chart> {
    let mut notes = Vec::new();
    if let Some((_, r)) = bands.first() {
        if r.filter != "none" {
            notes.push(format!("Band jitter weighted by {}.", r.filter));
        }
    }
    if bands.iter().any(|(_, r)| !r.extrapolated.is_empty()) {
        notes.push("Some bands reach beyond the table: its end slopes were continued.".into());
    }
    notes.push(crate::DECISION_CAUTION.to_string());
    let mut chart = PhaseNoisePlot {
        title: title.to_string(),
        carrier: Some(carrier),
        traces: vec![LfTrace::from_spectrum(title, kind, trace)?],
        bands: bands
            .iter()
            .map(|(name, r)| BandMark::from_jitter(name, r))
            .collect(),
        notes,
    }
    .chart();
    chart.series.extend(found_spur_marks(found));
    Ok(chart)
}

/// The chart of `spectrum`: L(f) of the record's Welch spectrum `spec`
/// (every DFT bin, or averaged into `per_decade` log-spaced bins), titled
/// `name`, with the method (window, overlap, ENBW, bins, gaps) noted.
pub fn record_spectrum_chart(
    name: &str,
    carrier: Option<f64>,
    spec: &crate::spectrum::Spectrum,
    w: &crate::spectrum::welch::Welch,
    per_decade: Option<usize>,
) -> crate::Result<Chart> {
    let bins = match per_decade {
        None => "every DFT bin".to_string(),
        Some(n) => format!("averaged into {n} log-spaced bins per decade"),
    };
    Ok(PhaseNoisePlot {
        title: name.to_string(),
        carrier,
        traces: vec![LfTrace::from_spectrum(
            &format!("spectrum of {name}"),
            TraceKind::RecordSpectrum,
            spec,
        )?],
        bands: Vec::new(),
        notes: vec![format!(
            "Welch's method: {} window, {:.0} % overlap, ENBW {}, {bins}; {}.",
            w.window.name(),
            w.overlap * 100.0,
            crate::units::format_si(w.enbw_hz, "Hz", 4),
            w.gap_note()
        )],
    }
    .chart())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bands_are_shaded_spans_in_the_legend() {
        let p = PhaseNoisePlot {
            title: "x".into(),
            carrier: Some(10e6),
            traces: vec![LfTrace {
                name: "table".into(),
                kind: TraceKind::Table,
                points: vec![(1.0, -90.0), (1e6, -155.0)],
            }],
            bands: vec![BandMark {
                from: 12e3,
                to: 5e6,
                label: "12k–5M".into(),
            }],
            notes: vec![],
        };
        let ch = p.chart();
        assert!(ch.spans[0].shade);
        assert_eq!(ch.spans[0].legend.as_deref(), Some("band 12 kHz – 5 MHz"));
        assert!(ch.subtitle.contains("10.00 MHz"));
    }
}
