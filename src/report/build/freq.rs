//! Frequency-domain sections: the L(f) picture with integrated jitter per
//! band (the `jitter` command's library path), and the combined short/long-τ
//! view with its consistency check (σ(τ) converted from the table).

use super::{method, Loaded, LoadedTable};
use crate::deviation::Curve;
use crate::io::dut::{Dut, JitterSpec};
use crate::io::lf_table::read_filter_file;
use crate::model::fit::fit_sy;
use crate::plot::phase_noise::{lf_points, BandMark, LfTrace, PhaseNoisePlot, TraceKind};
use crate::plot::stability::{SigmaCurve, StabilityPlot};
use crate::plot::XY;
use crate::report::*;
use crate::spectrum::jitter::{integrate_band, Band, BandJitter, JitterSetup, Weighting};
use crate::spectrum::sigma::{consistency, sigma_from_spectrum, SigmaKind};
use crate::spectrum::welch::{welch_record, WelchOptions};
use crate::spectrum::{Quantity, Spectrum};
use crate::units::format_si;

fn setup_for(j: &JitterSpec) -> Result<JitterSetup> {
    let mut setup = JitterSetup {
        filters: j
            .filters
            .iter()
            .map(|f| {
                if f.highpass {
                    Weighting::HighPass {
                        order: f.order,
                        fc: f.corner,
                    }
                } else {
                    Weighting::LowPass {
                        order: f.order,
                        fc: f.corner,
                    }
                }
            })
            .collect(),
        ..Default::default()
    };
    if let Some(p) = &j.filter_file {
        setup.filter_table = Some(read_filter_file(p)?);
        setup.filter_table_name = Some(p.display().to_string());
    }
    Ok(setup)
}

/// The L(f) section and one verdict per jitter band with a limit.
pub(super) fn phase_noise(
    dut: &Dut,
    records: &[Loaded],
    tables: &[LoadedTable],
    r: &mut Report,
) -> Result<()> {
    if tables.is_empty() && dut.jitter.is_empty() {
        r.phase_noise = Part::not_requested(
            "the DUT file lists no [[phase_noise]] table and no [[jitter]] band.",
        );
        return Ok(());
    }
    let carrier = tables.first().map(|t| t.src.carrier).or(dut.carrier);
    // The spectrum of the first record, when the carrier is known.
    let record_spectrum = match (records.first(), carrier) {
        (Some(l), Some(c)) => {
            let w = welch_record(&l.series.record, &WelchOptions::default());
            match w {
                Ok(w) => Some((
                    l.src.name.clone(),
                    w.log_binned(10, Some(c))?,
                    w.spectrum(Some(c))?,
                )),
                Err(_) => None,
            }
        }
        _ => None,
    };
    let mut traces = Vec::new();
    let mut notes = Vec::new();
    for t in tables {
        traces.push(LfTrace {
            name: format!("table {}", t.src.name),
            kind: TraceKind::Table,
            points: lf_points(&t.table.spectrum)?,
        });
    }
    if let Some(t) = tables.first() {
        let sy = t.table.spectrum.to(Quantity::Sy)?;
        let (f_lo, f_hi) = t.table.spectrum.range();
        if let Ok(fit) = fit_sy(&sy.f, &sy.values, None, f_hi) {
            if let Ok(ms) = Spectrum::from_model(
                &fit.model,
                Quantity::Lf,
                Some(t.src.carrier),
                f_lo,
                f_hi,
                20,
            ) {
                traces.push(LfTrace::from_spectrum(
                    "power-law model of the table",
                    TraceKind::Model,
                    &ms,
                )?);
                notes.push(format!(
                    "Model fitted to the table: {}",
                    fit.model.to_model_string()
                ));
            }
        }
    }
    if let Some((name, binned, _)) = &record_spectrum {
        traces.push(LfTrace {
            name: format!("spectrum of {name}"),
            kind: TraceKind::RecordSpectrum,
            points: lf_points(binned)?,
        });
        r.methods.push(method(
            "spectrum of the time record",
            "Welch's method, Hann window, 50 % overlap, with its equivalent noise bandwidth",
        ));
    }

    let mut rows = Vec::new();
    let mut marks = Vec::new();
    for j in &dut.jitter {
        let spectrum: Option<(&Spectrum, String)> = match &j.source {
            Some(n) => tables
                .iter()
                .find(|t| &t.src.name == n)
                .map(|t| (&t.table.spectrum, t.src.name.clone())),
            None => tables
                .first()
                .map(|t| (&t.table.spectrum, t.src.name.clone()))
                .or_else(|| {
                    record_spectrum
                        .as_ref()
                        .map(|(n, _, s)| (s, format!("spectrum of {n}")))
                }),
        };
        let item = format!(
            "{} ({} – {})",
            j.name,
            format_si(j.from, "Hz", 4),
            format_si(j.to, "Hz", 4)
        );
        let criterion = j
            .limit
            .map(|l| format!("rms time jitter ≤ {}", format_si(l, "s", 4)))
            .unwrap_or_else(|| "no limit given".into());
        let result: std::result::Result<BandJitter, String> = match spectrum {
            None => Err("no spectrum to integrate (no table, or no carrier for the record)".into()),
            Some((s, _)) => setup_for(j)
                .and_then(|setup| {
                    integrate_band(
                        s,
                        Band {
                            from: j.from,
                            to: j.to,
                        },
                        &setup,
                        j.ui_rate,
                    )
                })
                .map_err(|e| e.to_string()),
        };
        match result {
            Ok(b) => {
                let row = JitterRow {
                    name: j.name.clone(),
                    from: b.from,
                    to: b.to,
                    filters: if b.filter == "none" {
                        String::new()
                    } else {
                        b.filter.clone()
                    },
                    rms_rad: b.rms_rad,
                    rms_s: b.rms_s,
                    rms_ui: b.rms_ui,
                    limit: j.limit,
                };
                if j.limit.is_some() {
                    r.verdicts.push(Verdict {
                        kind: VerdictKind::Jitter,
                        item,
                        criterion,
                        result: format!(
                            "{} rms ({:.3e} rad)",
                            format_si(b.rms_s, "s", 4),
                            b.rms_rad
                        ),
                        pass: row.pass(),
                    });
                }
                marks.push(BandMark::from_jitter(&j.name, &b));
                rows.push(row);
            }
            Err(e) => {
                notes.push(format!("Band {}: not computed: {e}", j.name));
                r.verdicts.push(Verdict {
                    kind: VerdictKind::Jitter,
                    item,
                    criterion,
                    result: format!("not computed: {e}"),
                    pass: None,
                });
            }
        }
    }
    if !dut.jitter.is_empty() {
        r.methods.push(method(
            "integrated phase jitter",
            "σ_φ² = ∫ S_φ(f)|H(f)|² df, table interpolated linearly in log f / dB and integrated exactly per power-law segment; L(f) = S_φ/2 (IEEE Std 1139)",
        ));
    }
    let Some(carrier) = carrier else {
        r.phase_noise = Part::not_computed("no carrier: set device.carrier in the DUT file.");
        return Ok(());
    };
    if traces.is_empty() {
        r.phase_noise = Part::not_computed("no phase-noise table and no record spectrum to show.");
        return Ok(());
    }
    r.phase_noise = Part::Done(PhaseNoiseSection {
        source: tables
            .first()
            .map(|t| t.src.name.clone())
            .or_else(|| {
                record_spectrum
                    .as_ref()
                    .map(|(n, _, _)| format!("spectrum of {n}"))
            })
            .unwrap_or_default(),
        carrier,
        plot: PhaseNoisePlot {
            title: dut.name.clone(),
            carrier: Some(carrier),
            traces,
            bands: marks,
            notes: Vec::new(),
        },
        bands: rows,
        notes,
    });
    Ok(())
}

/// Measured OADEV against the OADEV converted from the first table.
pub(super) fn combined(
    dut: &Dut,
    records: &[Loaded],
    tables: &[LoadedTable],
    curves: &[Curve],
    confidence: f64,
    r: &mut Report,
) {
    let (Some(l), Some(t)) = (records.first(), tables.first()) else {
        r.combined = Part::not_requested("needs both a [[record]] and a [[phase_noise]] table.");
        return;
    };
    let Some(measured) = curves.iter().find(|c| c.estimator == "oadev") else {
        r.combined = Part::not_computed("no oadev curve from the record.");
        return;
    };
    let tau0 = l.series.record.tau0();
    // The phase-noise side reaches from τ ≈ 1/f_h up to 1/(the table's
    // lowest offset), as `tauwise convert` does; it is evaluated on the
    // record's octave grid extended below τ0, so the two curves share their
    // common τ values.
    let (f_lo, f_h) = t.table.spectrum.range();
    let tau_max = 1.0 / f_lo * (1.0 + 1e-9);
    // Down to τ0/2¹⁴ at most, so the picture keeps the record's side readable.
    let k_min = ((1.0 / (f_h * tau0)).log2().ceil() as i32).max(-14);
    let mut taus: Vec<f64> = (k_min..0).map(|k| tau0 * 2f64.powi(k)).collect();
    taus.extend(measured.points.iter().map(|p| p.estimate.tau));
    taus.retain(|&tau| tau <= tau_max);
    taus.sort_by(f64::total_cmp);
    taus.dedup();
    if taus.is_empty() {
        r.combined = Part::not_computed(format!(
            "the table's offsets ({} – {}) support no τ of the record.",
            format_si(f_lo, "Hz", 4),
            format_si(f_h, "Hz", 4)
        ));
        return;
    }
    let converted = match sigma_from_spectrum(&t.table.spectrum, SigmaKind::Adev, &taus, tau0, f_h)
    {
        Ok(c) => c,
        Err(e) => {
            r.combined = Part::not_computed(format!("σ(τ) from {} failed: {e}", t.src.name));
            return;
        }
    };
    let rows: Vec<ConsistencyRow> = consistency(measured, &converted)
        .into_iter()
        .map(|c| {
            let p = measured
                .points
                .iter()
                .find(|p| (p.estimate.tau - c.tau).abs() <= 1e-6 * c.tau);
            ConsistencyRow {
                tau: c.tau,
                measured: c.measured,
                lo: p.and_then(|p| p.lo),
                hi: p.and_then(|p| p.hi),
                converted: c.converted,
            }
        })
        .collect();
    r.methods.push(method(
        "σ(τ) from phase noise",
        "σ_y²(τ) = ∫ S_y(f)|H(f)|² df with |H|² = 2 sin⁴(πfτ)/(πfτ)² (IEEE Std 1139; NIST SP 1065)",
    ));
    let converted_curve = SigmaCurve {
        name: "oadev-from-lf".into(),
        points: converted.iter().map(|&(t, v)| XY::new(t, v)).collect(),
        derived: true,
        time_deviation: false,
    };
    r.combined = Part::Done(CombinedSection {
        plot: StabilityPlot {
            title: format!("{} — {} and {}", dut.name, l.src.name, t.src.name),
            curves: vec![SigmaCurve::from_curve(measured), converted_curve],
            regions: Vec::new(),
            confidence: measured.points.iter().any(|p| p.lo.is_some()).then_some(confidence),
            notes: vec![format!(
                "Converted with f_h = {} (the table's highest offset); the record's own bandwidth is {}.",
                format_si(f_h, "Hz", 4),
                format_si(0.5 / tau0, "Hz", 4)
            )],
        },
        estimator: "oadev".into(),
        rows,
        notes: vec![
            "Where white or flicker phase noise dominates, σ(τ) depends on the measurement bandwidth f_h, so the two domains can differ there without either being wrong.".into(),
        ],
    });
}
