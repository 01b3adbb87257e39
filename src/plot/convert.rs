//! The charts of `convert`: the converted σ–τ curves (`--to sigma`), the
//! L(f) table made (`--to lf`), and the table with its fitted power-law
//! model dashed (`--to model`).

use super::phase_noise::{LfTrace, PhaseNoisePlot, TraceKind};
use super::stability::{SigmaCurve, StabilityPlot};
use super::{Chart, XY};
use crate::results::{FittedModel, SigmaBody};
use crate::spectrum::{Quantity, Spectrum};
use crate::units::format_si;
use crate::Result;

/// The note of a model fitted to a `stability` document.
const FITTED_TO_SIGMA: &str = "Model-based: h_α fitted to the σ(τ) curves, then converted.";

/// The σ–τ chart of converted curves: how they were converted (f_h, τ0 of
/// MDEV/TDEV), whether the model was fitted to σ(τ) curves, and whether
/// some points are lower bounds.
pub fn sigma_chart(body: &SigmaBody, title: &str, fitted_to_sigma: bool) -> Chart {
    let mut notes = vec![format!(
        "Converted: σ²(τ) = ∫ S_y(f)|H(f)|² df up to f_h = {} (IEEE Std 1139 transfer functions), τ0 = {} for MDEV/TDEV.",
        format_si(body.f_h, "Hz", 4),
        format_si(body.tau0, "s", 4)
    )];
    if fitted_to_sigma {
        notes.push(FITTED_TO_SIGMA.into());
    }
    if body
        .curves
        .iter()
        .any(|c| c.points.iter().any(|p| p.truncated))
    {
        notes.push(
            "Some points are lower bounds: the table's low end is too steep to extend below it."
                .into(),
        );
    }
    StabilityPlot {
        title: title.to_string(),
        curves: body
            .curves
            .iter()
            .map(|c| SigmaCurve {
                name: c.name.clone(),
                estimator: c.estimator,
                origin: c.origin,
                points: c
                    .points
                    .iter()
                    .map(|p| XY::new(p.point.estimate.tau, p.point.estimate.value))
                    .collect(),
            })
            .collect(),
        regions: Vec::new(),
        confidence: None,
        notes,
    }
    .chart()
}

/// The L(f) chart of `--to lf`: the table made, dashed when it comes from a
/// model.
pub fn lf_chart(
    title: &str,
    carrier: Option<f64>,
    spectrum: &Spectrum,
    from_model: bool,
    fitted_to_sigma: bool,
) -> Result<Chart> {
    let (kind, mut notes) = if from_model {
        (TraceKind::Model, vec![format!("L(f) of {title}.")])
    } else {
        (TraceKind::Table, Vec::new())
    };
    if fitted_to_sigma {
        notes.push(FITTED_TO_SIGMA.into());
    }
    Ok(PhaseNoisePlot {
        title: title.to_string(),
        carrier,
        traces: vec![LfTrace::from_spectrum(title, kind, spectrum)?],
        bands: Vec::new(),
        notes,
    }
    .chart())
}

/// The L(f) chart of `--to model`: the table, and the fitted model dashed
/// over the offsets it was fitted to (`range`).
pub fn model_chart(
    title: &str,
    table: &Spectrum,
    fitted: &FittedModel,
    range: Option<(f64, f64)>,
) -> Result<Chart> {
    let mut traces = vec![LfTrace::from_spectrum(title, TraceKind::Table, table)?];
    if let Some((lo, hi)) = range {
        let ms = Spectrum::from_model(&fitted.h, Quantity::Lf, fitted.carrier, lo, hi, 20)?;
        traces.push(LfTrace::from_spectrum(
            "fitted power-law model",
            TraceKind::Model,
            &ms,
        )?);
    }
    Ok(PhaseNoisePlot {
        title: title.to_string(),
        carrier: fitted.carrier,
        traces,
        bands: Vec::new(),
        notes: vec![format!(
            "Model fitted to S_y in log space: {} (residual {:.2} dB rms).",
            fitted.model, fitted.residual_rms_db
        )],
    }
    .chart())
}
