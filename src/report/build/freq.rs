//! Frequency-domain sections: the L(f) picture with integrated jitter per
//! band (the `jitter` command's library path), and the combined short/long-τ
//! view with its consistency check (σ(τ) converted from the table).

use super::{method, Loaded, LoadedTable};
use crate::io::dut::{Dut, JitterSpec};
use crate::io::lf_table::read_filter_file;
use crate::model::fit::fit_sy;
use crate::plot::phase_noise::{lf_points, BandMark, LfTrace, PhaseNoisePlot, TraceKind};
use crate::plot::stability::{SigmaCurve, StabilityPlot};
use crate::report::*;
use crate::spectrum::jitter::{integrate_band, Band, BandJitter, FilterTable, JitterSetup, Spur};
use crate::spectrum::spurs::{prepare_trace, SpurRule};
use crate::spectrum::welch::{welch_record, WelchOptions};
use crate::spectrum::{Quantity, Spectrum};
use crate::stability::{from_phase_noise, ViewOptions};
use crate::units::format_si;
use crate::verdict::Judgement;

fn setup_for(j: &JitterSpec) -> Result<JitterSetup> {
    let mut setup = JitterSetup {
        filters: j.filters.clone(),
        period: j.period,
        ..Default::default()
    };
    for p in &j.filter_files {
        setup.filter_tables.push(FilterTable {
            name: p.display().to_string(),
            table: read_filter_file(p)?,
        });
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
        // Beside a table, the record's spectrum is drawn over the table's
        // offsets only: its lowest bins (down to 1/(segment length), tens of
        // µHz for a two-day record) would stretch the chart over decades
        // where the table says nothing.
        let mut points = lf_points(binned)?;
        if let Some(t) = tables.first() {
            let (lo, hi) = t.table.spectrum.range();
            let (r_lo, r_hi) = binned.range();
            let before = points.len();
            points.retain(|&(f, _)| f >= lo && f <= hi);
            if points.is_empty() {
                notes.push(format!(
                    "The spectrum of {name} ({} to {}) does not reach the table's offsets ({} to {}) and is not drawn.",
                    format_si(r_lo, "Hz", 4),
                    format_si(r_hi, "Hz", 4),
                    format_si(lo, "Hz", 4),
                    format_si(hi, "Hz", 4)
                ));
            } else if points.len() < before {
                notes.push(format!(
                    "The spectrum of {name} is drawn over the table's offsets ({} to {}) only.",
                    format_si(lo, "Hz", 4),
                    format_si(hi, "Hz", 4)
                ));
            }
        }
        if !points.is_empty() {
            traces.push(LfTrace {
                name: format!("spectrum of {name}"),
                kind: TraceKind::RecordSpectrum,
                points,
            });
        }
        r.methods.push(method(
            "spectrum of the time record",
            "Welch's method, Hann window, 50 % overlap, with its equivalent noise bandwidth",
        ));
    }

    let mut rows = Vec::new();
    let mut marks = Vec::new();
    let mut found: Vec<(String, crate::spectrum::spurs::FoundSpur)> = Vec::new();
    for j in &dut.jitter {
        // The spectrum, with the spurs its table lists (none for a record's).
        let spectrum: Option<(&Spectrum, String, &[Spur])> = match &j.source {
            Some(n) => tables
                .iter()
                .find(|t| &t.src.name == n)
                .map(|t| (&t.table.spectrum, t.src.name.clone(), &t.table.spurs[..])),
            None => tables
                .first()
                .map(|t| (&t.table.spectrum, t.src.name.clone(), &t.table.spurs[..]))
                .or_else(|| {
                    record_spectrum
                        .as_ref()
                        .map(|(n, _, s)| (s, format!("spectrum of {n}"), &[][..]))
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
            .map(|l| format!("jitter ≤ {}", l.describe()))
            .unwrap_or_else(|| "no limit given".into());
        let result: std::result::Result<BandJitter, String> = match spectrum {
            None => Err("no spectrum to integrate (no table, or no carrier for the record)".into()),
            // As `tauwise jitter`: spurs found in the trace leave the noise
            // and count once; the listed ones take precedence.
            Some((s, ref source, listed)) => setup_for(j)
                .and_then(|mut setup| {
                    let p = prepare_trace(s, listed, Some(&SpurRule::default()))?;
                    setup.spurs = p.spurs;
                    for f in p.found {
                        if !found
                            .iter()
                            .any(|(n, g)| n == source && g.offset_hz == f.offset_hz)
                        {
                            found.push((source.clone(), f));
                        }
                    }
                    integrate_band(
                        &p.spectrum,
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
        // The same judgement as `tauwise jitter --limit` on the same band.
        let judgement = j
            .limit
            .map(|l| l.judge_with(result.as_ref().map_err(|e| e.as_str()), &r.decision));
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
                    limit: j.limit.map(|l| l.describe()),
                    judgement: judgement.clone(),
                    period: b.period.clone(),
                };
                if let Some(jd) = judgement {
                    r.verdicts.push(VerdictLine {
                        brief: None,
                        kind: VerdictKind::Jitter,
                        item,
                        criterion,
                        result: format!(
                            "{} rms ({:.3e} rad){}",
                            format_si(b.rms_s, "s", 4),
                            b.rms_rad,
                            jd.reason
                                .as_ref()
                                .map(|w| format!("; {w}"))
                                .unwrap_or_default()
                        ),
                        ratio: j
                            .limit
                            .and_then(|l| l.measured(&b).map(|v| v / l.value()))
                            .filter(|_| jd.verdict != crate::verdict::Verdict::NotJudged),
                        judgement: jd,
                        hold_time: None,
                    });
                }
                marks.push(BandMark::from_jitter(&j.name, &b));
                rows.push(row);
            }
            Err(e) => {
                notes.push(format!("Band {}: not computed: {e}", j.name));
                r.verdicts.push(VerdictLine {
                    brief: None,
                    kind: VerdictKind::Jitter,
                    item,
                    criterion,
                    result: format!("not computed: {e}"),
                    judgement: judgement
                        .unwrap_or_else(|| Judgement::not_judged(format!("not computed: {e}"))),
                    ratio: None,
                    hold_time: None,
                });
            }
        }
    }
    // Spurs found in the traces (the `jitter` command's rule): taken out of
    // the noise and counted once as tones.
    for (source, f) in &found {
        notes.push(format!(
            "Spur found in the trace of {source} at {}: {:.1} dBc as a tone ({:.1} dB above the floor){}.",
            format_si(f.offset_hz, "Hz", 4),
            f.level_dbc,
            f.above_floor_db,
            if f.replaced_by_listed {
                "; a listed spur there is used instead"
            } else {
                "; taken out of the noise and counted once"
            }
        ));
    }
    for row in &rows {
        if let Some(p) = &row.period {
            notes.push(format!(
                "Band {}: period jitter {} rms, cycle-to-cycle {} rms{} (from L(f), as `jitter --period`).",
                row.name,
                format_si(p.period_rms_s, "s", 4),
                format_si(p.c2c_rms_s, "s", 4),
                match (p.periods, p.n_period_rms_s) {
                    (Some(n), Some(v)) => format!(", over {n} periods {}", format_si(v, "s", 4)),
                    _ => String::new(),
                }
            ));
        }
    }
    // Period jitter straight from each time record (the library call of
    // `jitter --record --period`), when a band asks for period jitter: the
    // record's TIE differences, one carrier period apart.
    let asked = dut.jitter.iter().find_map(|j| j.period);
    if let (Some(req), Some(nu0)) = (asked, dut.carrier.or(carrier)) {
        for l in records {
            let x = l.series.record.to_phase();
            notes.push(
                match crate::spectrum::jitter::record_period_jitter(&x.x, x.tau0, nu0, req.periods) {
                    Ok(p) => format!(
                        "Record {}: period jitter {} rms, cycle-to-cycle {} rms{} from its TIE differences ({} periods; as `jitter --record --period`).",
                        l.src.name,
                        format_si(p.period_rms_s, "s", 4),
                        format_si(p.c2c_rms_s, "s", 4),
                        match (p.periods, p.n_period_rms_s) {
                            (Some(n), Some(v)) => format!(", over {n} periods {}", format_si(v, "s", 4)),
                            _ => String::new(),
                        },
                        p.count
                    ),
                    Err(e) => format!(
                        "Record {}: period jitter from the record not computed: {e}.",
                        l.src.name
                    ),
                },
            );
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
        limits: Vec::new(),
        limit_checks: Vec::new(),
        limit_rows: Vec::new(),
    });
    Ok(())
}

/// Each record's measured OADEV against the first table's σ(τ), at the
/// record's bandwidth and over the τ both cover
/// ([`crate::stability::from_phase_noise`], the `stability --lf` path).
pub(super) fn combined(
    dut: &Dut,
    records: &[Loaded],
    tables: &[LoadedTable],
    work: &[super::time::Worked],
    confidence: f64,
    r: &mut Report,
) {
    let Some(t) = tables.first() else {
        r.combined = Part::not_requested("needs both a [[record]] and a [[phase_noise]] table.");
        return;
    };
    if records.is_empty() {
        r.combined = Part::not_requested("needs both a [[record]] and a [[phase_noise]] table.");
        return;
    }
    let opts_for = |l: &Loaded| ViewOptions {
        bandwidth: l.src.bandwidth,
        table_uncertainty_db: t
            .src
            .uncertainty_db
            .unwrap_or(crate::stability::DEFAULT_TABLE_UNCERTAINTY_DB),
    };
    let mut views = Vec::new();
    let mut failed = Vec::new();
    for (l, w) in records.iter().zip(work) {
        let Some(measured) = w
            .curves
            .iter()
            .find(|c| c.estimator == crate::deviation::Estimator::Oadev)
        else {
            failed.push(format!("{}: no oadev curve from the record", l.src.name));
            continue;
        };
        let tau0 = l.series.record.tau0();
        let view = match from_phase_noise(
            std::slice::from_ref(measured),
            &t.table.spectrum,
            tau0,
            &opts_for(l),
        ) {
            Ok(v) => v,
            Err(e) => {
                failed.push(format!("{}: {e}", l.src.name));
                continue;
            }
        };
        let Some(comparison) = view.comparisons.into_iter().next() else {
            continue;
        };
        let mut curves = vec![SigmaCurve::from_curve(measured)];
        curves.extend(view.curves.iter().map(SigmaCurve::from_curve));
        let mut notes = vec![format!(
            "Both sides at the record's bandwidth f_h = {}{}: σ_y²(τ) = ∫₀^f_h S_y(f)|H(f)|² df from the table; the dashed curve below τ0 is the table with its whole bandwidth ({}), which the record cannot see.",
            format_si(comparison.f_h, "Hz", 4),
            if comparison.bandwidth_given {
                " (as stated in the DUT file)"
            } else {
                " = 1/(2τ0)"
            },
            format_si(view.table_f_h, "Hz", 4)
        )];
        notes.push(format!(
            "Agreement: |ln(measured/from table)| ≤ √(δ_m² + δ_t²), δ_m the measured interval's half-width (log) on the table's side, δ_t = (u/20)·ln 10 for the table's uncertainty u = {} dB of L(f){}; compared only where at most {:.0} % of σ² comes from below the table's lowest offset, and from 2τ0 when f_h is 1/(2τ0) (at τ0 a sampled record's σ depends on how the instrument sampled).",
            comparison.table_uncertainty_db,
            if t.src.uncertainty_db.is_some() {
                " (stated in the DUT file)"
            } else {
                " (common practice when none is stated)"
            },
            crate::stability::MAX_BELOW_TABLE * 100.0
        ));
        views.push(CombinedSection {
            source: l.src.name.clone(),
            table: t.src.name.clone(),
            plot: StabilityPlot {
                title: format!("{} — {} and {}", dut.name, l.src.name, t.src.name),
                curves,
                regions: Vec::new(),
                confidence: measured
                    .points
                    .iter()
                    .any(|p| p.lo.is_some())
                    .then_some(confidence),
                notes: Vec::new(),
            },
            comparison,
            notes,
        });
    }
    r.methods.push(method(
        "σ(τ) from phase noise",
        "σ_y²(τ) = ∫ S_y(f)|H(f)|² df with |H|² = 2 sin⁴(πfτ)/(πfτ)² (IEEE Std 1139; NIST SP 1065), up to the record's bandwidth",
    ));
    r.combined = if views.is_empty() {
        Part::not_computed(failed.join("; "))
    } else {
        Part::Done(views)
    };
}
