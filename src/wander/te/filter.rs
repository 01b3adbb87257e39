//! Measurement filters on a time-error record: a Butterworth low-pass or
//! high-pass of order N (first order unless an order is given) with its
//! corner f_c, run over the samples x_i of the record.
//!
//! # The filter's exact form
//!
//! The analog prototype is the Butterworth filter of order N with corner
//! Ω (rad/s): for N = 1 the low-pass 1/(1 + s/Ω) and the high-pass
//! (s/Ω)/(1 + s/Ω); for higher orders the cascade of one such first-order
//! section (N odd) and ⌊N/2⌋ second-order sections 1/(u² + 2ζ_k·u + 1) (low-pass)
//! or u²/(u² + 2ζ_k·u + 1) (high-pass), u = s/Ω, ζ_k = sin((2k − 1)π/(2N)).
//!
//! It is discretised by the **bilinear transform** s = (2/τ0)(1 − z⁻¹)/(1 + z⁻¹)
//! with the corner **pre-warped**, Ω = (2/τ0)·tan(π f_c τ0), so that the
//! discrete filter has exactly the analog gain at f_c (−3 dB for every order).
//! With K = tan(π f_c τ0) the sections are
//!
//! - first order, low-pass: H(z) = K(1 + z⁻¹) / ((1 + K) + (K − 1)z⁻¹);
//!   high-pass: H(z) = (1 − z⁻¹) / ((1 + K) + (K − 1)z⁻¹);
//! - second order: denominator (1 + 2ζK + K²) + 2(K² − 1)z⁻¹ + (1 − 2ζK + K²)z⁻²,
//!   numerator K²(1 + z⁻¹)² (low-pass) or (1 − z⁻¹)² (high-pass).
//!
//! Its response at a frequency f is the analog one at the warped frequency
//! tan(π f τ0)/(π τ0): |H|² = 1/(1 + (tan(πfτ0)/K)^(2N)) for the low-pass and
//! (tan(πfτ0)/K)^(2N)/(1 + (tan(πfτ0)/K)^(2N)) for the high-pass
//! ([`MeasurementFilter::response`]). The first-order bilinear low-pass is the
//! trapezoidal rule applied to τ_c·dy/dt + y = x with τ_c = 1/Ω; the
//! first-order high-pass is exactly one minus it (the split TE = TE_L + TE_H
//! is exact). The corner must lie below the record's Nyquist frequency
//! 1/(2τ0).
//!
//! # Initial transient and gaps
//!
//! The filter starts in the steady state of a constant input equal to the
//! first sample (a low-pass then passes a constant through unchanged, a
//! high-pass gives zero), so a record that starts far from zero does not
//! ring. What remains of the start-up (a ramp's lag, noise) decays with the
//! filter's slowest pole p: the first n samples with |p|ⁿ > e⁻⁵ — five time
//! constants of the slowest pole, about 5/(2π f_c sin(π/(2N))) — are the
//! **settling interval** and are dropped from every statistic. A gap (NaN)
//! stops the filter; it restarts on the first sample after the gap, in the
//! same steady state, and the settling interval after it is dropped too (it
//! joins the gap). A gap-free stretch no longer than the settling interval
//! contributes nothing.

use crate::error::{Error, Result};
use crate::record::{gap_free_runs, PhaseRecord};
use crate::units::format_si;
use serde::Serialize;

/// Low-pass or high-pass.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Pass {
    /// Passes what is slower than the corner.
    LowPass,
    /// Passes what is faster than the corner.
    HighPass,
}

/// A measurement filter: Butterworth of `order` with corner `corner_hz`,
/// discretised by the bilinear transform with the corner pre-warped (module
/// notes). Parsed from `lowpass:0.1Hz`, `highpass:2:0.1Hz` by
/// [`crate::parse::TeFilter`].
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct MeasurementFilter {
    /// Low-pass or high-pass.
    pub pass: Pass,
    /// Order N (1 … 8).
    pub order: u32,
    /// Corner f_c, Hz (the −3 dB point).
    pub corner_hz: f64,
}

/// One second-order (or first-order, b2 = a2 = 0) section:
/// y_n = b0·x_n + b1·x_{n−1} + b2·x_{n−2} − a1·y_{n−1} − a2·y_{n−2}.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Section {
    /// Numerator b0, b1, b2.
    pub b: [f64; 3],
    /// Denominator a1, a2 (a0 = 1).
    pub a: [f64; 2],
}

impl Section {
    /// Gain at zero frequency, Σb / (1 + Σa).
    fn dc_gain(&self) -> f64 {
        (self.b[0] + self.b[1] + self.b[2]) / (1.0 + self.a[0] + self.a[1])
    }
    /// Largest pole radius of the section.
    fn pole_radius(&self) -> f64 {
        let [a1, a2] = self.a;
        if a2 == 0.0 {
            return a1.abs();
        }
        let disc = a1 * a1 - 4.0 * a2;
        if disc < 0.0 {
            a2.sqrt()
        } else {
            let s = disc.sqrt();
            ((-a1 + s) / 2.0).abs().max(((-a1 - s) / 2.0).abs())
        }
    }
}

/// The state of a cascade (transposed direct form II, two values a section).
struct Running<'a> {
    sections: &'a [Section],
    state: Vec<[f64; 2]>,
}

impl<'a> Running<'a> {
    /// A cascade in the steady state of the constant input `u`.
    fn settled(sections: &'a [Section], u: f64) -> Self {
        let mut v = u;
        let state = sections
            .iter()
            .map(|s| {
                let y = s.dc_gain() * v;
                let s2 = s.b[2] * v - s.a[1] * y;
                let s1 = s.b[1] * v - s.a[0] * y + s2;
                v = y;
                [s1, s2]
            })
            .collect();
        Self { sections, state }
    }
    fn step(&mut self, x: f64) -> f64 {
        let mut v = x;
        for (s, st) in self.sections.iter().zip(self.state.iter_mut()) {
            let y = s.b[0] * v + st[0];
            st[0] = s.b[1] * v - s.a[0] * y + st[1];
            st[1] = s.b[2] * v - s.a[1] * y;
            v = y;
        }
        v
    }
}

impl MeasurementFilter {
    /// First-order low-pass at `corner_hz`.
    pub fn lowpass(corner_hz: f64) -> Self {
        Self {
            pass: Pass::LowPass,
            order: 1,
            corner_hz,
        }
    }
    /// First-order high-pass at `corner_hz`.
    pub fn highpass(corner_hz: f64) -> Self {
        Self {
            pass: Pass::HighPass,
            order: 1,
            corner_hz,
        }
    }

    /// K = tan(π f_c τ0), after checking that the corner lies below the
    /// Nyquist frequency 1/(2τ0).
    fn k(&self, tau0: f64) -> Result<f64> {
        let nyq = 0.5 / tau0;
        if !(self.corner_hz.is_finite() && self.corner_hz > 0.0 && self.corner_hz < nyq) {
            return Err(Error::invalid(format!(
                "the filter {self}: its corner {} must lie above zero and below the record's Nyquist frequency 1/(2τ0) = {}",
                format_si(self.corner_hz, "Hz", 4),
                format_si(nyq, "Hz", 4)
            )));
        }
        if !(1..=8).contains(&self.order) {
            return Err(Error::invalid(format!(
                "the filter {self}: expected an order from 1 to 8"
            )));
        }
        Ok((std::f64::consts::PI * self.corner_hz * tau0).tan())
    }

    /// The cascade of sections at sampling interval `tau0` (module notes).
    ///
    /// ```
    /// use tauwise::wander::te::filter::MeasurementFilter;
    /// // First-order low-pass, K = tan(π·0.1·1) (analytic, bilinear transform).
    /// let s = MeasurementFilter::lowpass(0.1).sections(1.0).unwrap();
    /// let k = (std::f64::consts::PI * 0.1f64).tan();
    /// assert_eq!(s.len(), 1);
    /// assert!((s[0].b[0] - k / (1.0 + k)).abs() < 1e-15);
    /// assert!((s[0].a[0] - (k - 1.0) / (k + 1.0)).abs() < 1e-15);
    /// ```
    pub fn sections(&self, tau0: f64) -> Result<Vec<Section>> {
        let k = self.k(tau0)?;
        let n = self.order;
        let mut out = Vec::new();
        if n % 2 == 1 {
            let d0 = 1.0 + k;
            let a = [(k - 1.0) / d0, 0.0];
            out.push(match self.pass {
                Pass::LowPass => Section {
                    b: [k / d0, k / d0, 0.0],
                    a,
                },
                Pass::HighPass => Section {
                    b: [1.0 / d0, -1.0 / d0, 0.0],
                    a,
                },
            });
        }
        for j in 1..=n / 2 {
            let zeta = (std::f64::consts::PI * (2 * j - 1) as f64 / (2 * n) as f64).sin();
            let d0 = 1.0 + 2.0 * zeta * k + k * k;
            let a = [
                2.0 * (k * k - 1.0) / d0,
                (1.0 - 2.0 * zeta * k + k * k) / d0,
            ];
            let g = match self.pass {
                Pass::LowPass => k * k / d0,
                Pass::HighPass => 1.0 / d0,
            };
            let b = match self.pass {
                Pass::LowPass => [g, 2.0 * g, g],
                Pass::HighPass => [g, -2.0 * g, g],
            };
            out.push(Section { b, a });
        }
        Ok(out)
    }

    /// The discrete filter's complex response at frequency `f` (Hz) for
    /// sampling interval `tau0`, as (gain, phase in radians): the analog
    /// Butterworth response at the warped frequency w = tan(πfτ0)/K (module
    /// notes). For f ≪ 1/τ0 it tends to the analog response at f itself.
    ///
    /// ```
    /// use tauwise::wander::te::filter::MeasurementFilter;
    /// // At the corner: −3 dB, −45° (first-order low-pass, analytic).
    /// let (g, ph) = MeasurementFilter::lowpass(0.1).response(0.1, 1.0).unwrap();
    /// assert!((g - 0.5f64.sqrt()).abs() < 1e-12);
    /// assert!((ph + std::f64::consts::FRAC_PI_4).abs() < 1e-12);
    /// ```
    pub fn response(&self, f: f64, tau0: f64) -> Result<(f64, f64)> {
        let k = self.k(tau0)?;
        let w = (std::f64::consts::PI * f * tau0).tan() / k;
        let n = self.order;
        // Product of the analog sections at u = j·w.
        let (mut re, mut im) = (1.0f64, 0.0f64);
        let mut mul = |a: f64, b: f64| {
            let r = re * a - im * b;
            im = re * b + im * a;
            re = r;
        };
        // Each section is N(u)/D(u); multiply by N and by 1/D.
        let inv = |a: f64, b: f64| {
            let d = a * a + b * b;
            (a / d, -b / d)
        };
        if n % 2 == 1 {
            // D = 1 + jw.
            let (a, b) = inv(1.0, w);
            mul(a, b);
            if self.pass == Pass::HighPass {
                mul(0.0, w);
            }
        }
        for j in 1..=n / 2 {
            let zeta = (std::f64::consts::PI * (2 * j - 1) as f64 / (2 * n) as f64).sin();
            // D = 1 − w² + j·2ζw.
            let (a, b) = inv(1.0 - w * w, 2.0 * zeta * w);
            mul(a, b);
            if self.pass == Pass::HighPass {
                // u² = −w².
                mul(-w * w, 0.0);
            }
        }
        Ok((re.hypot(im), im.atan2(re)))
    }

    /// The settling interval in samples: the least n with |p|ⁿ ≤ e⁻⁵ for the
    /// slowest pole p of the discrete filter, and at least the order.
    ///
    /// ```
    /// use tauwise::wander::te::filter::MeasurementFilter;
    /// // 0.1 Hz first order at τ0 = 100 ms: 80 samples, 8.0 s
    /// // (about 5/(2π·0.1 Hz) = 7.96 s, analytic).
    /// assert_eq!(MeasurementFilter::lowpass(0.1).settling_samples(0.1).unwrap(), 80);
    /// ```
    pub fn settling_samples(&self, tau0: f64) -> Result<usize> {
        let r = self
            .sections(tau0)?
            .iter()
            .map(Section::pole_radius)
            .fold(0.0f64, f64::max);
        let n = if r <= 0.0 {
            0.0
        } else if r >= 1.0 {
            return Err(Error::invalid(format!(
                "the filter {self}: its corner is too low for τ0 = {} (the discrete filter would never settle)",
                format_si(tau0, "s", 4)
            )));
        } else {
            (5.0 / -r.ln()).ceil()
        };
        Ok((n as usize).max(self.order as usize))
    }

    /// The filter in words, e.g. "first-order low-pass, corner 100.0 mHz".
    pub fn words(&self) -> String {
        let ord = match self.order {
            1 => "first-order".to_string(),
            2 => "second-order Butterworth".to_string(),
            3 => "third-order Butterworth".to_string(),
            n => format!("order-{n} Butterworth"),
        };
        let kind = match self.pass {
            Pass::LowPass => "low-pass",
            Pass::HighPass => "high-pass",
        };
        format!(
            "{ord} {kind}, corner {}",
            format_si(self.corner_hz, "Hz", 4)
        )
    }

    /// Run the filter over `rec` (module notes): returns the filtered record,
    /// with the settling interval at its start and after every gap set to NaN
    /// and the leading and trailing NaN trimmed, and what was done.
    ///
    /// Errors when the corner is not below the Nyquist frequency, or when
    /// no gap-free stretch of the record is longer than the settling
    /// interval.
    pub fn apply(&self, rec: &PhaseRecord) -> Result<Filtered> {
        let sections = self.sections(rec.tau0)?;
        let settle = self.settling_samples(rec.tau0)?;
        let mut y = vec![f64::NAN; rec.len()];
        let runs = gap_free_runs(&rec.x);
        for &(start, len) in &runs {
            let mut f = Running::settled(&sections, rec.x[start]);
            let out = &mut y[start..start + len];
            for (k, (o, &x)) in out.iter_mut().zip(&rec.x[start..start + len]).enumerate() {
                let v = f.step(x);
                if k >= settle {
                    *o = v;
                }
            }
        }
        let first = y.iter().position(|v| !v.is_nan());
        let last = y.iter().rposition(|v| !v.is_nan());
        let (Some(first), Some(last)) = (first, last) else {
            return Err(Error::insufficient(format!(
                "the filter {self} needs a gap-free stretch longer than its settling interval of {} ({settle} samples); the record's longest has {} samples",
                format_si(settle as f64 * rec.tau0, "s", 4),
                runs.iter().map(|r| r.1).max().unwrap_or(0)
            )));
        };
        let kept = y[first..=last].to_vec();
        let applied = AppliedFilter {
            filter: self.to_string(),
            words: self.words(),
            pass: self.pass,
            order: self.order,
            corner_hz: self.corner_hz,
            form: FORM,
            settling_s: settle as f64 * rec.tau0,
            settling_samples: settle,
            restarts: runs.len().saturating_sub(1),
            start_s: first as f64 * rec.tau0,
            points: kept.iter().filter(|v| !v.is_nan()).count(),
        };
        Ok(Filtered {
            record: PhaseRecord {
                x: kept,
                tau0: rec.tau0,
            },
            applied,
        })
    }
}

/// The filter's form, in words, as every output states it.
pub const FORM: &str = "Butterworth, bilinear transform with the corner pre-warped; started in \
the steady state of the first sample; the settling interval (five time constants of the slowest \
pole) dropped at the start and after every gap, where the filter restarts";

/// A filtered record and what was done to it.
#[derive(Debug, Clone, PartialEq)]
pub struct Filtered {
    /// The filtered record (settling intervals removed or NaN).
    pub record: PhaseRecord,
    /// What was applied.
    pub applied: AppliedFilter,
}

/// A filter as applied to a record (serialised in the `wander` document
/// as `filter`, and in `te` as `lowpass`, `highpass`).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct AppliedFilter {
    /// The filter as text that parses back (`lowpass:1:0.1Hz`).
    pub filter: String,
    /// In words.
    pub words: String,
    /// `lowpass` or `highpass`.
    pub pass: Pass,
    /// Order.
    pub order: u32,
    /// Corner, Hz.
    pub corner_hz: f64,
    /// The exact form and the handling of the start and of gaps.
    pub form: &'static str,
    /// Settling interval dropped at the start and after each gap, s.
    pub settling_s: f64,
    /// The same in samples.
    pub settling_samples: usize,
    /// Number of gaps after which the filter restarted.
    pub restarts: usize,
    /// Time of the first sample kept, s from the record's first sample.
    pub start_s: f64,
    /// Valid samples kept.
    pub points: usize,
}

impl AppliedFilter {
    /// One line for tables and reports.
    pub fn line(&self) -> String {
        let mut s = format!(
            "{} (Butterworth, bilinear transform, corner pre-warped); the first {} ({} samples, five time constants of its slowest pole) dropped as settling",
            self.words,
            format_si(self.settling_s, "s", 4),
            self.settling_samples
        );
        if self.restarts > 0 {
            s.push_str(&format!(
                "; restarted after each of {} gap(s), with its settling interval dropped after each",
                self.restarts
            ));
        }
        s
    }
}

impl std::fmt::Display for MeasurementFilter {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let kind = match self.pass {
            Pass::LowPass => "lowpass",
            Pass::HighPass => "highpass",
        };
        write!(f, "{kind}:{}:{}Hz", self.order, self.corner_hz)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lowpass_plus_highpass_is_identity_first_order() {
        // Analytic: the bilinear transform is linear in H, and
        // 1/(1+u) + u/(1+u) = 1, so the two first-order filters sum to the
        // input exactly (to rounding), with the same start-up.
        let x: Vec<f64> = (0..500)
            .map(|i| (i as f64 * 0.37).sin() + 1e-3 * i as f64)
            .collect();
        let r = PhaseRecord { x, tau0: 0.5 };
        let lp = MeasurementFilter::lowpass(0.05).apply(&r).unwrap();
        let hp = MeasurementFilter::highpass(0.05).apply(&r).unwrap();
        assert_eq!(lp.applied.settling_samples, hp.applied.settling_samples);
        let off = lp.applied.settling_samples;
        for (i, (a, b)) in lp.record.x.iter().zip(&hp.record.x).enumerate() {
            assert!((a + b - r.x[i + off]).abs() < 1e-12, "{i}");
        }
    }

    #[test]
    fn corner_at_or_above_nyquist_is_refused() {
        let e = MeasurementFilter::lowpass(0.5)
            .sections(1.0)
            .unwrap_err()
            .to_string();
        assert!(e.contains("Nyquist"), "{e}");
        assert!(MeasurementFilter::lowpass(0.499).sections(1.0).is_ok());
    }
}
