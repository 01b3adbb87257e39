//! The `convert` documents: σ(τ) converted from a spectrum (`--to sigma`),
//! an L(f) table (`--to lf`: [`super::SpectrumRows`]) and a fitted model
//! (`--to model`).

use super::table::{Cell, Column, Table, Text, Unit};
use super::{csv_text, plain, Result};
use crate::deviation::{Curve, Estimate, Estimator, Origin, Point};
use crate::model::fit::Dominant;
use crate::model::PowerLaw;
use crate::spectrum::sigma::SigmaPoint;
use crate::units::{format_si, format_sig};
use serde::Serialize;

/// A σ(τ) value converted from a spectrum: the [`Point`] keys (no record
/// behind it: `terms` 0, no EDF, interval or noise type) and
/// `"below_table"` (share of σ² from offsets below the table) and
/// `"truncated"` (a lower bound: the table's low end is too steep to
/// extend).
#[derive(Debug, Clone, Copy, Serialize)]
pub struct ConvertedPoint {
    /// The value as a point.
    #[serde(flatten)]
    pub point: Point,
    /// Share of σ² from offsets below the table.
    pub below_table: f64,
    /// The value is a lower bound.
    pub truncated: bool,
}

impl ConvertedCurve {
    /// The curve of `estimator` converted (`origin`) at these points.
    pub fn new(estimator: Estimator, origin: Origin, points: &[SigmaPoint]) -> Self {
        Self {
            name: Curve {
                estimator,
                origin,
                points: Vec::new(),
            }
            .name(),
            estimator,
            origin,
            points: points.iter().map(ConvertedPoint::from).collect(),
        }
    }
}

impl From<&SigmaPoint> for ConvertedPoint {
    fn from(p: &SigmaPoint) -> Self {
        Self {
            point: Point::bare(Estimate {
                tau: p.tau,
                m: p.m,
                value: p.dev,
                terms: 0,
            }),
            below_table: p.below_table,
            truncated: p.truncated,
        }
    }
}

/// One converted curve: `{"name","estimator","origin","points"}` (origin
/// `from-lf` for a table, `from-model` for a model).
#[derive(Debug, Clone, Serialize)]
pub struct ConvertedCurve {
    /// The label (`adev-from-lf`).
    pub name: String,
    /// The estimator.
    pub estimator: Estimator,
    /// `from-lf` or `from-model`.
    pub origin: Origin,
    /// The values.
    pub points: Vec<ConvertedPoint>,
}

/// `convert --to sigma`: `{"carrier","f_h","tau0","method","curves"}`.
#[derive(Debug, Clone, Serialize)]
pub struct SigmaBody {
    /// Carrier, Hz (`null`: not given).
    pub carrier: Option<f64>,
    /// Upper integration limit, Hz.
    pub f_h: f64,
    /// Sampling interval of MDEV/TDEV and of the grid, s.
    pub tau0: f64,
    /// The method, in words.
    pub method: &'static str,
    /// The curves.
    pub curves: Vec<ConvertedCurve>,
}

/// The method of `convert --to sigma`, in words.
pub const SIGMA_METHOD: &str = "σ²(τ) = ∫ S_y(f)|H(f)|² df, table interpolated linearly in log f / dB (IEEE Std 1139 transfer functions)";

impl SigmaBody {
    /// `convert --to sigma`: each estimator's σ(τ) from `src`'s spectrum
    /// ([`crate::spectrum::sigma::sigma_curve`]) on `grid` from `tau0`
    /// (default 1/(2 f_h)) to `max_tau` (default the source's reach), the
    /// curves of origin `origin` (from-lf or from-model). Every estimator
    /// must have a transfer function ([`crate::spectrum::sigma::spectral`]).
    /// The command line and the Python package call this one function.
    pub fn compute(
        src: &ConvertSource,
        estimators: &[crate::deviation::Estimator],
        grid: &crate::tau::TauGrid,
        (tau0, max_tau): (Option<f64>, Option<f64>),
        carrier: Option<f64>,
        origin: crate::deviation::Origin,
    ) -> crate::Result<Self> {
        use crate::spectrum::sigma::{grid_taus, sigma_curve, spectral, SigmaOptions};
        for e in estimators {
            spectral(*e)?;
        }
        let tau0 = tau0.unwrap_or(0.5 / src.f_h);
        let taus = grid_taus(grid, tau0, max_tau.unwrap_or(src.max_tau))?;
        let opt = SigmaOptions { tau0, f_h: src.f_h };
        let curves = (estimators.iter())
            .map(|&e| {
                let points = sigma_curve(&src.spectrum, e, &taus, opt)?;
                Ok(ConvertedCurve::new(e, origin, &points))
            })
            .collect::<crate::Result<Vec<_>>>()?;
        Ok(SigmaBody {
            carrier,
            f_h: src.f_h,
            tau0,
            method: SIGMA_METHOD,
            curves,
        })
    }
}

impl SigmaBody {
    /// CSV: `estimator`, `origin`, [`Point::COLUMNS`], `below_table`,
    /// `truncated`.
    pub fn csv(&self) -> Result<String> {
        let mut header = vec!["estimator", "origin"];
        header.extend(Point::COLUMNS);
        header.extend(["below_table", "truncated"]);
        let mut rows = Vec::new();
        for c in &self.curves {
            for p in &c.points {
                let mut r = vec![c.estimator.name().to_string(), c.origin.name().to_string()];
                r.extend(p.point.cells());
                r.push(plain(p.below_table));
                r.push(p.truncated.to_string());
                rows.push(r);
            }
        }
        csv_text(&header, rows)
    }
}

/// `convert --to model`: `{"carrier","f_h","model","h","residual_rms_db",
/// "dominant"}`.
#[derive(Debug, Clone, Serialize)]
pub struct FittedModel {
    /// Carrier, Hz (`null`: not given).
    pub carrier: Option<f64>,
    /// The model's cut-off, Hz.
    pub f_h: f64,
    /// The model in h_α notation.
    pub model: String,
    /// `{"h2","h1","h0","h-1","h-2","fh"}`.
    pub h: PowerLaw,
    /// rms of the residuals, dB.
    pub residual_rms_db: f64,
    /// The dominant term over consecutive offset ranges.
    pub dominant: Vec<Dominant>,
}

impl FittedModel {
    /// CSV: `alpha,noise,h`, one row per term.
    pub fn csv(&self) -> Result<String> {
        csv_text(
            &["alpha", "noise", "h"],
            (-2..=2).rev().map(|a| {
                [
                    a.to_string(),
                    crate::model::noise_label(a).unwrap_or("").to_string(),
                    plain(self.h.get(a)),
                ]
            }),
        )
    }
}

impl SigmaBody {
    /// The table for reading: per curve τ, the deviation and how much of
    /// σ² comes from below the table (lower bounds marked). `source` names
    /// what was converted (`table FILE`, `model …`).
    pub fn table(&self, source: &str) -> Text {
        let mut t = Text::new();
        t.line(format!("σ(τ) from {source}"));
        t.line(format!(
            "  f_h {}, τ0 {} (MDEV/TDEV)",
            format_si(self.f_h, "Hz", 4),
            format_si(self.tau0, "s", 4)
        ));
        for c in &self.curves {
            let dev = if c.estimator.is_time_deviation() {
                Unit::Si("s")
            } else {
                Unit::Plain
            };
            let mut tab = Table::new(vec![
                Column::right("τ", 12).unit(Unit::Si("s")),
                Column::right("deviation", 12).unit(dev).gap(2),
                Column::right("below table", 14)
                    .unit(Unit::Fixed(1, " %"))
                    .gap(2),
            ])
            .heading("")
            .heading(c.estimator.name());
            for p in &c.points {
                tab.row_with(
                    vec![
                        Cell::num(p.point.estimate.tau),
                        Cell::num(p.point.estimate.value),
                        Cell::num(100.0 * p.below_table),
                    ],
                    if p.truncated {
                        "  (lower bound: table's low end too steep)"
                    } else {
                        ""
                    },
                );
            }
            t.table(tab);
        }
        t
    }
}

impl FittedModel {
    /// The fitted model for reading: h_α per term, the residual, the model
    /// in `--model` notation. `source` names the table.
    pub fn table(&self, source: &str) -> Text {
        let mut t = Text::new();
        t.line(format!("Power-law model fitted to {source}"));
        t.line(format!(
            "  f_h {}, residual {:.2} dB rms",
            format_si(self.f_h, "Hz", 4),
            self.residual_rms_db
        ));
        let mut h = Table::new(vec![
            Column::left("", 4),
            Column::right("", 5),
            Column::left("", 0).gap(2),
        ])
        .indent(2);
        for a in (-2..=2).rev() {
            let v = self.h.get(a);
            h.row(vec![
                Cell::text(format!("h{a}")),
                Cell::text(crate::model::noise_label(a).unwrap_or("")),
                Cell::text(if v > 0.0 {
                    format_sig(v, 4)
                } else {
                    "-".into()
                }),
            ]);
        }
        h.note(format!("  model: {}", self.model));
        t.table(h);
        t
    }
}

/// `convert --to lf`: `{"carrier","points"}`.
#[derive(Debug, Clone, Serialize)]
pub struct LfBody {
    /// Carrier ν0, Hz.
    pub carrier: Option<f64>,
    /// The table's rows.
    pub points: super::SpectrumRows,
}

impl LfBody {
    /// `convert --to lf`: L(f) at `carrier` of the model given (`model`),
    /// or of the model fitted to a `stability` document (`sigma`), both with
    /// the source's f_h, sampled `per_decade` per decade from `from` to `to`
    /// (default f_h) ([`crate::spectrum::Spectrum::from_model`]); without
    /// either, the source's table as L(f). Returns the body and the
    /// spectrum (for the chart). The command line and the Python package
    /// call this one function.
    pub fn compute(
        src: &ConvertSource,
        model: Option<&crate::parse::Model>,
        sigma: Option<&std::path::Path>,
        carrier: Option<f64>,
        (from, to): (f64, Option<f64>),
        per_decade: usize,
    ) -> crate::Result<(Self, crate::spectrum::Spectrum)> {
        use crate::spectrum::{Quantity, Spectrum};
        let f_h = src.f_h;
        let power_law = match (model, sigma) {
            (Some(m), _) => Some(m.power_law(f_h)),
            (None, Some(path)) => Some(super::model_from_stability(path, Some(f_h))?),
            _ => None,
        };
        let spec = match power_law {
            Some(m) => {
                let m = PowerLaw { f_h, ..m };
                let to = to.unwrap_or(f_h);
                Spectrum::from_model(&m, Quantity::Lf, carrier, from, to, per_decade)?
            }
            None => src.spectrum.to(Quantity::Lf)?,
        };
        let points = super::SpectrumRows::new(&spec)?;
        Ok((LfBody { carrier, points }, spec))
    }
}

impl LfBody {
    /// The readable table: a heading naming the source, then the rows.
    pub fn text(&self, source: &str) -> String {
        format!("L(f) from {source}\n\n{}", self.points.text())
    }
}

impl FittedModel {
    /// Fit S_y = Σ h_α f^α to the offsets of `spectrum` up to `f_h`
    /// ([`crate::model::fit::fit_sy`], log space; IEEE Std 1139 terms), with
    /// the offset range fitted (None when no offset is at or below f_h).
    pub fn of_spectrum(
        spectrum: &crate::spectrum::Spectrum,
        carrier: Option<f64>,
        f_h: f64,
    ) -> Result<(Self, Option<(f64, f64)>)> {
        let sy = spectrum.to(crate::spectrum::Quantity::Sy)?;
        let keep: Vec<usize> = (0..sy.len()).filter(|&i| sy.f[i] <= f_h).collect();
        let f: Vec<f64> = keep.iter().map(|&i| sy.f[i]).collect();
        let v: Vec<f64> = keep.iter().map(|&i| sy.values[i]).collect();
        let fit = crate::model::fit::fit_sy(&f, &v, None, f_h)?;
        let residual_rms_db = if fit.residual_db.is_empty() {
            0.0
        } else {
            super::rms(&fit.residual_db)
        };
        let range = f.first().copied().zip(f.last().copied());
        Ok((
            Self {
                carrier,
                f_h,
                model: fit.model.to_model_string(),
                h: fit.model,
                residual_rms_db,
                dominant: fit.dominant,
            },
            range,
        ))
    }
}

/// What `convert` converts: a phase-noise table or a power-law model, as a
/// spectrum, with its `"input"` member, its f_h, a label for the text and
/// charts, and the longest τ a grid goes to by default.
#[derive(Debug, Clone)]
pub struct ConvertSource {
    /// The spectrum.
    pub spectrum: crate::spectrum::Spectrum,
    /// The document's `"input"`.
    pub input: super::Input,
    /// The upper integration limit, Hz.
    pub f_h: f64,
    /// `table FILE` or `model …`.
    pub label: String,
    /// The default longest τ of a grid, s.
    pub max_tau: f64,
}

impl ConvertSource {
    /// A table as read: f_h its highest offset unless `fh`, τ up to
    /// 1/(lowest offset).
    pub fn table(t: crate::io::lf_table::LfTable, fh: Option<f64>) -> Self {
        let (lo, hi) = t.spectrum.range();
        Self {
            input: super::Input::Table(super::TableInput::of(&t)),
            label: format!("table {}", t.path),
            spectrum: t.spectrum,
            f_h: fh.unwrap_or(hi),
            max_tau: 1.0 / lo,
        }
    }

    /// A model (given, or fitted to the `stability` document `fitted_to`)
    /// whose f_h is `fh` when given, else the model's own (an error when it
    /// has none); τ up to `max_tau` (default 10⁵ s).
    pub fn of_model(
        parsed: PowerLaw,
        fh: Option<f64>,
        carrier: Option<f64>,
        max_tau: Option<f64>,
        fitted_to: Option<&std::path::Path>,
    ) -> Result<Self> {
        let f_h = match (fh, parsed.f_h.is_nan()) {
            (Some(f), _) => f,
            (None, false) => parsed.f_h,
            (None, true) => return Err(crate::Error::option(
                "--model",
                "the model needs its high-frequency cut-off: add fh=… to the model or give --fh",
            )),
        };
        let model = PowerLaw { f_h, ..parsed };
        Self::model(model, carrier, max_tau.unwrap_or(1e5), fitted_to)
    }

    /// A model with its f_h ([`crate::spectrum::sigma::model_spectrum`] up
    /// to `max_tau`); `fitted_to` the `stability` document it was fitted to.
    pub fn model(
        model: PowerLaw,
        carrier: Option<f64>,
        max_tau: f64,
        fitted_to: Option<&std::path::Path>,
    ) -> Result<Self> {
        let spectrum = crate::spectrum::sigma::model_spectrum(&model, carrier, max_tau)?;
        let text = model.to_model_string();
        let input = super::Input::Model(match fitted_to {
            Some(p) => super::ModelInput {
                data: "stability",
                model: text.clone(),
                path: Some(p.display().to_string()),
                note: Some("model-based: h_α fitted to the σ(τ) curves, then converted"),
            },
            None => super::ModelInput {
                data: "model",
                model: text.clone(),
                path: None,
                note: None,
            },
        });
        Ok(Self {
            spectrum,
            input,
            f_h: model.f_h,
            label: format!("model {text}"),
            max_tau,
        })
    }
}
