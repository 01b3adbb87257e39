//! The σ–τ chart: one series per estimator on log–log axes with decade
//! gridlines and confidence-interval bars, the noise type of each τ region in
//! the strip above, curves converted from phase noise (`…-from-lf`) dashed.

use super::{Axis, Chart, Colour, Line, Marker, Series, Span, Style, XY};
use crate::deviation::{Curve, Estimator, Origin};

/// One curve for the σ–τ chart.
#[derive(Debug, Clone, PartialEq)]
pub struct SigmaCurve {
    /// The label in the legend ([`Curve::name`]: `oadev`, `oadev-from-lf`, …).
    pub name: String,
    /// The estimator (the registry says whether its values are times).
    pub estimator: Estimator,
    /// Where the values come from: a curve not measured on the record is
    /// dashed, without markers, in the colour of the measured curve of its
    /// estimator.
    pub origin: Origin,
    /// (τ, deviation, lo, hi).
    pub points: Vec<XY>,
}

impl SigmaCurve {
    /// From an estimator's [`Curve`]; intervals come along when present.
    pub fn from_curve(c: &Curve) -> Self {
        Self {
            name: c.name(),
            estimator: c.estimator,
            origin: c.origin,
            points: c
                .points
                .iter()
                .map(|p| XY::with_interval(p.estimate.tau, p.estimate.value, p.lo, p.hi))
                .collect(),
        }
    }

    /// Drawn dashed: not measured on the record (phase noise, a model, the
    /// `best` curve).
    pub fn derived(&self) -> bool {
        self.origin.is_derived()
    }

    /// A time deviation (seconds: TDEV, TTOT, MTIE, TIE rms), drawn on the
    /// time chart ([`Estimator::is_time_deviation`]).
    pub fn time_deviation(&self) -> bool {
        self.estimator.is_time_deviation()
    }

    /// The curve whose colour this one takes: its estimator's, or its own
    /// for the `best` curve.
    fn colour_key(&self) -> String {
        match self.origin {
            Origin::Best => self.name.clone(),
            _ => self.estimator.name().to_string(),
        }
    }
}

/// A τ range labelled with its noise type.
#[derive(Debug, Clone, PartialEq)]
pub struct NoiseRegion {
    /// Start of the region (s).
    pub from: f64,
    /// End of the region (s).
    pub to: f64,
    /// Label (`WFM`, `FFM`, …).
    pub label: String,
}

/// Group consecutive points of a curve that share a noise type into regions.
/// The boundary between two points of different type is put at their
/// geometric mean τ; the first and last regions extend half a step beyond
/// the end points (in log τ).
pub fn regions_from_curve(c: &Curve) -> Vec<NoiseRegion> {
    let pts: Vec<(f64, &'static str)> = c
        .points
        .iter()
        .filter_map(|p| p.noise().map(|n| (p.estimate.tau, n)))
        .filter(|(t, _)| *t > 0.0)
        .collect();
    let mut out: Vec<NoiseRegion> = Vec::new();
    if pts.is_empty() {
        return out;
    }
    let half_step = if pts.len() > 1 {
        (pts[1].0 / pts[0].0).sqrt()
    } else {
        2f64.sqrt()
    };
    let mut start = pts[0].0 / half_step;
    for i in 0..pts.len() {
        let last = i + 1 == pts.len();
        if last || pts[i + 1].1 != pts[i].1 {
            let end = if last {
                let hs = if i > 0 {
                    (pts[i].0 / pts[i - 1].0).sqrt()
                } else {
                    half_step
                };
                pts[i].0 * hs
            } else {
                (pts[i].0 * pts[i + 1].0).sqrt()
            };
            out.push(NoiseRegion {
                from: start,
                to: end,
                label: pts[i].1.to_string(),
            });
            start = end;
        }
    }
    out
}

/// The model curves of a fitted record model, `oadev-from-model` and
/// `mdev-from-model` (dashed, in the colour of the measured curve), over the
/// τ span of the measured curves at up to 20 points per decade (whole
/// multiples of τ0).
///
/// Each value is σ(τ) = √(Σ_α h_α·B_α(τ)), with B_α the variance of the unit
/// power law h_α = 1 that the fit itself uses ([`crate::model::fit::basis`]:
/// the IEEE Std 1139 / NIST SP 1065 closed forms for large τ/τ0, the
/// transfer-function integral of the sampled estimator below), so the dashed
/// line is exactly the curve the model was fitted as.
pub fn model_curves(rm: &crate::stability::RecordModel, tau0: f64) -> Vec<SigmaCurve> {
    use crate::model::fit::basis;
    let (lo, hi) = rm
        .curves
        .iter()
        .flat_map(|c| c.points.iter().map(|p| p.estimate.tau))
        .filter(|t| t.is_finite() && *t > 0.0)
        .fold((f64::INFINITY, 0.0f64), |(a, b), t| (a.min(t), b.max(t)));
    if !(lo.is_finite() && hi >= lo && tau0 > 0.0) {
        return Vec::new();
    }
    // The estimators are defined at τ = nτ0 with whole n: sample there
    // (log-spaced, duplicates removed at short τ).
    let steps = ((hi / lo).log10() * 20.0).ceil().max(1.0) as usize;
    let mut ns: Vec<u64> = (0..=steps)
        .map(|i| lo * (hi / lo).powf(i as f64 / steps as f64))
        .map(|t| ((t / tau0).round() as u64).max(1))
        .collect();
    ns.dedup();
    let taus: Vec<f64> = ns.iter().map(|&n| n as f64 * tau0).collect();
    let model = &rm.fit.model;
    let mut out = Vec::new();
    for kind in [Estimator::Oadev, Estimator::Mdev] {
        if !rm.curves.iter().any(|c| c.estimator == kind) {
            continue;
        }
        let points: Vec<XY> = taus
            .iter()
            .filter_map(|&t| {
                let var: f64 = (-2..=2)
                    .map(|a| model.get(a) * basis(kind, a, t, tau0, model.f_h))
                    .sum();
                (var.is_finite() && var > 0.0).then(|| XY::new(t, var.sqrt()))
            })
            .collect();
        let c = Curve {
            estimator: kind,
            origin: Origin::FromModel,
            points: Vec::new(),
        };
        out.push(SigmaCurve {
            name: c.name(),
            estimator: kind,
            origin: Origin::FromModel,
            points,
        });
    }
    out
}

/// The chart of `noise`: the measured OADEV and MDEV of the record model
/// with their noise regions, and the fitted power-law model dashed over them
/// ([`model_curves`]).
pub fn record_model_chart(title: &str, rm: &crate::stability::RecordModel, tau0: f64) -> Chart {
    let mut curves: Vec<SigmaCurve> = rm.curves.iter().map(SigmaCurve::from_curve).collect();
    curves.extend(model_curves(rm, tau0));
    StabilityPlot {
        title: title.to_string(),
        curves,
        regions: rm
            .curves
            .first()
            .map(regions_from_curve)
            .unwrap_or_default(),
        confidence: Some(crate::stats::DEFAULT_CONFIDENCE),
        notes: vec![format!(
            "Dashed: the power-law model fitted to OADEV and MDEV (EDF-weighted): {}",
            rm.fit.model.to_model_string()
        )],
    }
    .chart()
}

/// Everything the σ–τ chart shows.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct StabilityPlot {
    /// Title (device or file name).
    pub title: String,
    /// The curves.
    pub curves: Vec<SigmaCurve>,
    /// Noise-type regions for the strip.
    pub regions: Vec<NoiseRegion>,
    /// Confidence level of the interval bars, for the subtitle.
    pub confidence: Option<f64>,
    /// Footnotes.
    pub notes: Vec<String>,
}

const MARKERS: [Marker; 4] = [
    Marker::Dot,
    Marker::Square,
    Marker::Triangle,
    Marker::Diamond,
];

impl StabilityPlot {
    /// Build the chart. Fractional-frequency deviations (σ_y) and time
    /// deviations (s) need different axes: when both are present the chart
    /// shows the σ_y curves and says in a note that the time deviations are
    /// drawn on their own chart ([`StabilityPlot::time_chart`]).
    pub fn chart(&self) -> Chart {
        let any_freq = self.curves.iter().any(|c| !c.time_deviation());
        if any_freq {
            let mut ch = self.build(false);
            if self.curves.iter().any(|c| c.time_deviation()) {
                ch.notes.insert(
                    0,
                    format!(
                        "Time deviations ({}) are in seconds and are drawn on their own chart.",
                        Estimator::names(
                            &Estimator::ALL
                                .iter()
                                .copied()
                                .filter(|e| e.is_time_deviation())
                                .collect::<Vec<_>>()
                        )
                    ),
                );
            }
            ch
        } else {
            self.build(true)
        }
    }

    /// The chart of the time deviations only (None when there are none).
    pub fn time_chart(&self) -> Option<Chart> {
        self.curves
            .iter()
            .any(|c| c.time_deviation())
            .then(|| self.build(true))
    }

    fn build(&self, time: bool) -> Chart {
        let y = if time {
            Axis::log_si("time deviation", "s")
        } else {
            Axis::log_plain("fractional frequency deviation σ(τ)", "")
        };
        let mut ch = Chart::new(&self.title, Axis::log_si("averaging time τ", "s"), y);
        let names: Vec<&str> = self
            .curves
            .iter()
            .filter(|c| c.time_deviation() == time)
            .map(|c| c.name.as_str())
            .collect();
        ch.subtitle = match self.confidence {
            Some(p) => format!(
                "{} · bars: {:.1} % confidence intervals",
                names.join(", "),
                p * 100.0
            ),
            None => names.join(", "),
        };
        let mut colour_of: Vec<(String, usize)> = Vec::new();
        for c in self.curves.iter().filter(|c| c.time_deviation() == time) {
            // A derived curve takes the colour of the curve it derives from.
            let base = c.colour_key();
            let idx = match colour_of.iter().find(|(n, _)| *n == base) {
                Some((_, i)) if c.derived() => *i,
                _ => {
                    let i = colour_of.len();
                    colour_of.push((base, i));
                    i
                }
            };
            let style = if c.derived() {
                Style::line(Colour::Palette(idx), Line::Dashed)
            } else {
                Style {
                    colour: Colour::Palette(idx),
                    line: Line::Solid,
                    width: 1.8,
                    marker: MARKERS[idx % MARKERS.len()],
                }
            };
            ch.series.push(Series {
                name: c.name.clone(),
                points: c.points.clone(),
                style,
            });
        }
        for r in &self.regions {
            ch.spans.push(Span {
                label: r.label.clone(),
                from: r.from,
                to: r.to,
                shade: false,
                colour: Colour::Muted,
                legend: None,
            });
        }
        if !self.regions.is_empty() {
            ch.notes
                .push("Strip above the plot: noise type identified at each τ.".into());
        }
        ch.notes.extend(self.notes.iter().cloned());
        ch
    }
}

/// The charts of `stability`: the σ–τ chart of `curves` (the noise regions
/// of `measured`'s first curve in the strip, the best-of curve when given),
/// and, when σ_y curves take that chart, the time deviations' own chart.
pub fn stability_charts(
    title: &str,
    curves: &[Curve],
    measured: &[Curve],
    confidence: f64,
    best: Option<&Curve>,
) -> (Chart, Option<Chart>) {
    let mut plot = StabilityPlot {
        title: title.to_string(),
        curves: curves.iter().map(SigmaCurve::from_curve).collect(),
        regions: measured.first().map(regions_from_curve).unwrap_or_default(),
        confidence: Some(confidence),
        notes: Vec::new(),
    };
    if let Some(b) = best {
        plot.curves.push(SigmaCurve::from_curve(b));
    }
    let time = if plot.curves.iter().any(|c| !c.time_deviation()) {
        plot.time_chart()
    } else {
        None
    };
    (plot.chart(), time)
}

/// The charts of `stability` for one or more records: one record's charts
/// as [`stability_charts`]; several records' first measured curve each,
/// overlaid ([`super::overlay::records_sigma_chart`]), and no second chart.
/// Each limit is drawn on the chart of its values
/// ([`super::limit_lines::add_limits`]): σ_y limits on a σ_y chart, time
/// deviation limits on a time-deviation chart.
pub fn records_charts(
    results: &[(String, crate::stability::RecordStability)],
    confidence: f64,
    limits: &[crate::limits::Limit],
) -> (Chart, Option<Chart>) {
    use super::limit_lines::add_limits;
    use crate::limits::ValueKind;
    let kind = |time: bool| {
        if time {
            ValueKind::Duration
        } else {
            ValueKind::Fraction
        }
    };
    if let [(title, r)] = results {
        let (mut main, mut time) =
            stability_charts(title, &r.shown, &r.measured, confidence, r.best.as_ref());
        let main_is_time = r.shown.iter().all(|c| c.estimator.is_time_deviation());
        add_limits(&mut main, limits, kind(main_is_time));
        if let Some(t) = time.as_mut() {
            add_limits(t, limits, ValueKind::Duration);
        }
        return (main, time);
    }
    let items: Vec<(String, &Curve)> = (results.iter())
        .filter_map(|(n, r)| r.measured.first().map(|c| (n.clone(), c)))
        .collect();
    let mut chart = super::overlay::records_sigma_chart(&items, confidence);
    let time = items
        .first()
        .is_some_and(|(_, c)| c.estimator.is_time_deviation());
    add_limits(&mut chart, limits, kind(time));
    (chart, None)
}

/// Where the time-deviation chart goes when σ_y curves take the main one:
/// `stab.svg` → `stab-time.svg` (same directory and format).
pub fn time_chart_path(path: &std::path::Path) -> std::path::PathBuf {
    suffixed_path(path, "time")
}

/// A chart beside `path`: `chart.svg` → `chart-SUFFIX.svg` (same directory
/// and format).
pub fn suffixed_path(path: &std::path::Path, suffix: &str) -> std::path::PathBuf {
    let stem = path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    let name = match path.extension() {
        Some(ext) => format!("{stem}-{suffix}.{}", ext.to_string_lossy()),
        None => format!("{stem}-{suffix}"),
    };
    path.with_file_name(name)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::deviation::{Estimate, Point};

    fn curve(alphas: &[Option<i32>]) -> Curve {
        Curve {
            estimator: Estimator::Oadev,
            origin: Origin::Measured,
            points: alphas
                .iter()
                .enumerate()
                .map(|(i, a)| {
                    let tau = 2f64.powi(i as i32);
                    let mut p = Point::bare(Estimate {
                        tau,
                        m: 1 << i,
                        value: 1e-11,
                        terms: 10,
                    });
                    p.alpha = *a;
                    p
                })
                .collect(),
        }
    }

    #[test]
    fn regions_group_runs_of_one_type() {
        let c = curve(&[Some(2), Some(2), Some(0), Some(0), Some(0), Some(-2)]);
        let r = regions_from_curve(&c);
        let labels: Vec<&str> = r.iter().map(|x| x.label.as_str()).collect();
        assert_eq!(labels, ["WPM", "WFM", "RWFM"]);
        // Boundary between τ = 2 and τ = 4 is at their geometric mean.
        assert!((r[0].to - 8f64.sqrt()).abs() < 1e-12);
        assert_eq!(r[0].to, r[1].from);
        assert!((r[0].from - 1.0 / 2f64.sqrt()).abs() < 1e-12);
        assert!((r[2].to - 32.0 * 2f64.sqrt()).abs() < 1e-9);
    }

    #[test]
    fn regions_skip_unidentified_points() {
        assert!(regions_from_curve(&curve(&[None, None])).is_empty());
        let r = regions_from_curve(&curve(&[None, Some(-1), None]));
        assert_eq!(r.len(), 1);
        assert_eq!(r[0].label, "FFM");
    }

    #[test]
    fn derived_curves_are_dashed_in_the_parent_colour() {
        let a = SigmaCurve::from_curve(&curve(&[Some(0)]));
        let mut b = a.clone();
        b.name = "oadev-from-lf".into();
        b.origin = Origin::FromLf;
        let p = StabilityPlot {
            title: "t".into(),
            curves: vec![a, b],
            ..Default::default()
        };
        let ch = p.chart();
        assert_eq!(ch.series[1].style.line, Line::Dashed);
        assert_eq!(ch.series[0].style.colour, ch.series[1].style.colour);
    }

    #[test]
    fn time_deviations_go_to_their_own_chart() {
        let a = SigmaCurve::from_curve(&curve(&[Some(0)]));
        let mut t = SigmaCurve::from_curve(&curve(&[Some(0)]));
        t.name = "tdev".into();
        t.estimator = Estimator::Tdev;
        let p = StabilityPlot {
            title: "t".into(),
            curves: vec![a, t],
            ..Default::default()
        };
        assert_eq!(p.chart().series.len(), 1);
        assert_eq!(p.time_chart().unwrap().series[0].name, "tdev");
        // Every origin of a time deviation goes to the time chart (the
        // registry answers, not the curve's label; issue 14).
        for origin in [
            Origin::Measured,
            Origin::FromLf,
            Origin::FromLfFullBand,
            Origin::FromModel,
        ] {
            let c = Curve {
                estimator: Estimator::Tdev,
                origin,
                points: Vec::new(),
            };
            assert!(SigmaCurve::from_curve(&c).time_deviation(), "{}", c.name());
            let c = Curve {
                estimator: Estimator::Oadev,
                ..c
            };
            assert!(!SigmaCurve::from_curve(&c).time_deviation(), "{}", c.name());
        }
    }

    #[test]
    fn model_curve_is_the_closed_form_for_white_fm() {
        // Pure WFM h_0: σ_y²(τ) = h_0/(2τ) and Mod σ_y²(τ) = h_0/(4τ)
        // (IEEE Std 1139 table, large τ/τ0, analytic).
        let h0 = 2e-22;
        let mut oadev = curve(&[None; 11]);
        for p in &mut oadev.points {
            p.estimate.tau *= 64.0;
        }
        let mut mdev = oadev.clone();
        mdev.estimator = Estimator::Mdev;
        let mut model = crate::model::PowerLaw::zero(0.5);
        model.set(0, h0);
        let rm = crate::stability::RecordModel {
            curves: vec![oadev, mdev],
            fit: crate::model::fit::ModelFit {
                model,
                fitted: [false, false, true, false, false],
                std_err: [None; 5],
                left_out: Vec::new(),
                residual_db: Vec::new(),
                dominant: Vec::new(),
            },
        };
        let c = model_curves(&rm, 1.0);
        assert_eq!(c.len(), 2);
        assert_eq!(c[0].name, "oadev-from-model");
        assert!(c.iter().all(|x| x.derived() && !x.time_deviation()));
        assert!((c[0].points[0].x - 64.0).abs() < 1e-9);
        assert!((c[0].points.last().unwrap().x - 65536.0).abs() < 1e-6);
        for (k, div) in [(0, 2.0), (1, 4.0)] {
            for p in &c[k].points {
                let want = (h0 / (div * p.x)).sqrt();
                assert!(
                    (p.y / want - 1.0).abs() < 0.02,
                    "{} at τ = {}: {} vs {want}",
                    c[k].name,
                    p.x,
                    p.y
                );
            }
        }
    }
}
