//! The report's sections for the DUT file's `[separate]` (each clock from
//! pair records, the N-cornered hat) and `[timeline]` (σ(τ) through a
//! record): built from the same library calls as `tauwise separate` and
//! `tauwise timeline`, rendered as HTML with their charts inline. A
//! section that cannot be computed says why instead of failing the report.

use super::html::{n, t, Cell, Html};
use crate::error::Result;
use crate::io::dut::{Dut, TimeSource};
use crate::separate::{align, separate, PairRecord, Request, Resolution};
use crate::units::{format_si, format_sig};

/// One added section: its anchor, heading and finished HTML (the section's
/// content; the page wraps it in its `<section>` with the anchor, prefixed
/// per device on a comparison page).
#[derive(Debug, Clone, PartialEq)]
pub struct AddedSection {
    /// The anchor (`separate`, `timeline`).
    pub id: &'static str,
    /// The heading.
    pub title: &'static str,
    /// The section's content as HTML (escaped text, inline SVG).
    pub html: String,
}

/// A record of the DUT file, read and prepared as its entry says.
fn load(src: &TimeSource, carrier: Option<f64>) -> Result<(crate::record::Record, Option<f64>)> {
    let series = crate::io::series::read_series(&src.path, &src.series_options(carrier))?;
    let p = crate::prepare::pipeline::prepare(&series.record, &src.prepare)?;
    Ok((p.record, series.info.start_time))
}

/// The sections the DUT file asks for, at `confidence`.
pub fn sections(dut: &Dut, confidence: f64) -> Vec<AddedSection> {
    let mut out = Vec::new();
    if let Some(spec) = &dut.separate {
        let mut h = Html::new();
        if let Err(e) = separate_html(&mut h, dut, spec, confidence) {
            h.p(&format!("Not computed: {e}"));
        }
        out.push(AddedSection {
            id: "separate",
            title: "Each clock from pair records",
            html: h.finish(),
        });
    }
    if let Some(spec) = &dut.timeline {
        let mut h = Html::new();
        if let Err(e) = timeline_html(&mut h, dut, spec, confidence) {
            h.p(&format!("Not computed: {e}"));
        }
        out.push(AddedSection {
            id: "timeline",
            title: "Stability through the record",
            html: h.finish(),
        });
    }
    out
}

fn record<'a>(dut: &'a Dut, name: &str) -> Result<&'a TimeSource> {
    dut.records
        .iter()
        .find(|r| r.name == name)
        .ok_or_else(|| crate::Error::invalid(format!("no record named '{name}'")))
}

fn separate_html(
    h: &mut Html,
    dut: &Dut,
    spec: &crate::io::dut::SeparateSpec,
    confidence: f64,
) -> Result<()> {
    let mut pairs = Vec::new();
    for (a, b, name) in &spec.pairs {
        let src = record(dut, name)?;
        let (rec, start) = load(src, dut.carrier)?;
        pairs.push(PairRecord {
            a: a.clone(),
            b: b.clone(),
            source: src.path.display().to_string(),
            record: rec.to_phase(),
            start,
        });
    }
    let pairs = align(pairs)?;
    let req = Request {
        estimator: spec.estimator,
        grid: crate::tau::TauGrid::Octave,
        confidence,
        method: spec.method,
        seed: 1,
        draws: 400,
        simultaneous: spec.simultaneous,
    };
    let s = separate(&pairs, &req)?;
    h.p(&format!(
        "{} clocks separated from {} pair records ({} points each) by the {}; {} at {:.1} % confidence. A point below resolution shows the upper bound the data allow.",
        s.clocks.len(),
        s.pairs.len(),
        s.points,
        match (s.method, s.clocks.len(), s.pairs.len()) {
            (crate::separate::Method::Independent, 3, 3) => "three-cornered hat (Gray & Allan 1974)".to_string(),
            (crate::separate::Method::Independent, _, _) => "least squares of Barnes".to_string(),
            (crate::separate::Method::Covariance, _, _) => format!(
                "covariance-aware form (Premoli & Tavella 1993), reference {}",
                s.reference.as_deref().unwrap_or("?")
            ),
        },
        spec.estimator.name(),
        confidence * 100.0
    ));
    let chart = crate::plot::separate::chart(&s, &dut.name);
    h.figure(
        &crate::plot::to_svg_string(&chart, crate::plot::DEFAULT_SIZE)?,
        "Each clock's σ(τ) with its interval; pair curves dotted; triangles: below resolution (bound)",
    );
    let mut rows: Vec<Vec<Cell>> = Vec::new();
    for c in &s.clocks {
        for p in c.curves.iter().flat_map(|k| k.points.iter()) {
            let (dev, interval) = match p.resolution {
                Resolution::Resolved => (
                    format_sig(p.point.estimate.value, 4),
                    match (p.point.lo, p.point.hi) {
                        (Some(lo), Some(hi)) => {
                            format!("{} … {}", format_sig(lo, 4), format_sig(hi, 4))
                        }
                        _ => "—".into(),
                    },
                ),
                Resolution::Below => (
                    format!("< {}", format_sig(p.point.estimate.value, 4)),
                    "below resolution".into(),
                ),
            };
            rows.push(vec![
                t(c.name.clone()),
                n(format_si(p.point.estimate.tau, "s", 4)),
                n(dev),
                n(interval),
                t(p.point.noise().unwrap_or("—")),
            ]);
        }
    }
    h.table(
        "data",
        &["clock", "τ", "deviation", "interval", "noise"],
        &rows,
    );
    Ok(())
}

fn timeline_html(
    h: &mut Html,
    dut: &Dut,
    spec: &crate::io::dut::TimelineSpec,
    confidence: f64,
) -> Result<()> {
    let src = match &spec.record {
        Some(n) => record(dut, n)?,
        None => dut
            .records
            .first()
            .ok_or_else(|| crate::Error::invalid("no record"))?,
    };
    let (rec, _) = load(src, dut.carrier)?;
    let x = rec.to_phase();
    let whole = |d: f64, what: &str| -> Result<usize> {
        let k = d / x.tau0;
        if (k - k.round()).abs() > 1e-6 * k.max(1.0) || k.round() < 1.0 {
            return Err(crate::Error::invalid(format!(
                "timeline.{what} {d} s is not a whole number of τ0 = {} s",
                x.tau0
            )));
        }
        Ok(k.round() as usize)
    };
    let req = crate::timeline::Request {
        estimator: spec.estimator,
        grid: spec.taus.clone().unwrap_or(crate::tau::TauGrid::Octave),
        window: whole(spec.window, "window")?,
        step: whole(spec.step, "step")?,
        confidence,
        event_confidence: crate::timeline::EVENT_CONFIDENCE,
    };
    let tl = crate::timeline::timeline(&x, &req)?;
    h.p(&format!(
        "Record {}: {} in {} windows of {} moved by {}. A window departs when its interval and the whole record's, both at {:.0} %, do not overlap.",
        src.name,
        spec.estimator.name(),
        tl.windows.len(),
        format_si(tl.window_s, "s", 4),
        format_si(tl.step_s, "s", 4),
        req.event_confidence * 100.0
    ));
    h.figure(
        &crate::plot::timeline::to_svg(&tl, &src.name)?,
        "Window centre × τ, colour = window ÷ whole record; the whole-record curve beside it",
    );
    if tl.events.is_empty() {
        h.p("No window departs from the whole record.");
    } else {
        let rows: Vec<Vec<Cell>> = tl
            .events
            .iter()
            .map(|e| {
                vec![
                    n(format_si(e.start, "s", 4)),
                    n(format_si(e.end, "s", 4)),
                    n(format_si(e.tau, "s", 4)),
                    n(format!("{:.3}", e.ratio)),
                    t(match e.direction {
                        crate::timeline::Direction::Above => "above",
                        crate::timeline::Direction::Below => "below",
                    }),
                ]
            })
            .collect();
        h.table("data", &["from", "to", "τ", "ratio", ""], &rows);
    }
    Ok(())
}
