//! Random phase paths of a power-law noise model, for the holdover Monte
//! Carlo.
//!
//! [`PathSynth`] is the interface the prediction uses: one call fills one
//! path x_0 … x_n at t_k = k·Δ, relative to its start (x_0 = 0). The built-in
//! [`KasdinWalterPaths`] synthesises each h_α term by the fractional-difference
//! filter of Kasdin & Walter (1992) applied to white Gaussian noise, by FFT
//! convolution on a record zero-padded to twice its length (so the filter's
//! long memory for α ≤ −1 is not wrapped around). For phase, S_x(f) =
//! S_y(f)/(2πf)² ∝ f^−β with β = 2 − α, and the filter is
//!
//! h_0 = 1,  h_k = h_{k−1}·(β/2 + k − 1)/k.
//!
//! β = 0, 2, 4 (WPM, WFM, RWFM) are white noise, its running sum and its
//! double running sum; they are computed directly. The white-noise variance
//! Q that gives the one-sided S_x(f) = h_α/(4π²)·f^−β at low frequency is
//! (Kasdin & Walter 1992, eq. for the discrete PSD, one-sided)
//!
//! Q = h_α·(2πΔ)^β / (8π²Δ),
//!
//! so that WFM steps have variance h_0·Δ/2 (the analytic random walk with
//! σ_x²(t) = h_0·t/2). WPM uses the model's own cut-off instead:
//! Q = h_2·f_h/(4π²), the phase variance of white PM in the bandwidth f_h.

use crate::error::{Error, Result};
use crate::model::PowerLaw;
use rand::Rng;
use rand_chacha::ChaCha8Rng;
use rand_distr::StandardNormal;
use rustfft::num_complex::Complex;
use rustfft::{Fft, FftPlanner};
use std::f64::consts::PI;
use std::sync::Arc;

/// Fills random phase paths of one noise model at one step.
pub trait PathSynth: Sync {
    /// Fill `out` (length n + 1) with one path x_0 … x_n, x_0 = 0, seconds.
    fn fill(&self, rng: &mut ChaCha8Rng, out: &mut [f64]);
}

/// Builds a [`PathSynth`] for a model, a step Δ (s) and n steps.
pub type SynthFactory = dyn Fn(&PowerLaw, f64, usize) -> Result<Box<dyn PathSynth>> + Sync;

enum Term {
    /// White phase, standard deviation per sample.
    White(f64),
    /// Running sum of white noise (WFM).
    Walk(f64),
    /// Double running sum (RWFM).
    Walk2(f64),
    /// FFT-filtered (FPM, FFM): sd, the filter's spectrum, plans.
    Filtered {
        sd: f64,
        spectrum: Vec<Complex<f64>>,
        forward: Arc<dyn Fft<f64>>,
        inverse: Arc<dyn Fft<f64>>,
    },
}

/// The built-in generator (see the module notes).
pub struct KasdinWalterPaths {
    terms: Vec<Term>,
    n: usize,
}

/// The filter coefficients h_0 … h_{len−1} for exponent β (Kasdin & Walter 1992).
pub fn kw_coefficients(beta: f64, len: usize) -> Vec<f64> {
    let mut h = Vec::with_capacity(len);
    let mut v = 1.0;
    for k in 0..len {
        if k > 0 {
            v *= (beta / 2.0 + k as f64 - 1.0) / k as f64;
        }
        h.push(v);
    }
    h
}

impl KasdinWalterPaths {
    /// Prepare paths of `n` steps of `step` seconds for `model`.
    pub fn new(model: &PowerLaw, step: f64, n: usize) -> Result<Self> {
        if !(step.is_finite() && step > 0.0) || n == 0 {
            return Err(Error::invalid(format!(
                "noise paths need a positive step and at least one step, got Δ = {step} s, n = {n}"
            )));
        }
        let mut terms = Vec::new();
        let mut planner = FftPlanner::<f64>::new();
        let len = 2 * (n + 1);
        for alpha in (-2..=2).rev() {
            let h = model.get(alpha);
            if h <= 0.0 {
                continue;
            }
            let beta = (2 - alpha) as f64;
            let q = if alpha == 2 {
                h * model.f_h / (4.0 * PI * PI)
            } else {
                h * (2.0 * PI * step).powf(beta) / (8.0 * PI * PI * step)
            };
            let sd = q.sqrt();
            terms.push(match alpha {
                2 => Term::White(sd),
                0 => Term::Walk(sd),
                -2 => Term::Walk2(sd),
                _ => {
                    let forward = planner.plan_fft_forward(len);
                    let inverse = planner.plan_fft_inverse(len);
                    let mut spectrum: Vec<Complex<f64>> = kw_coefficients(beta, n + 1)
                        .into_iter()
                        .map(|c| Complex::new(c, 0.0))
                        .chain(std::iter::repeat(Complex::new(0.0, 0.0)))
                        .take(len)
                        .collect();
                    forward.process(&mut spectrum);
                    Term::Filtered {
                        sd,
                        spectrum,
                        forward,
                        inverse,
                    }
                }
            });
        }
        Ok(Self { terms, n })
    }

    /// Boxed, for use as a [`SynthFactory`].
    pub fn boxed(model: &PowerLaw, step: f64, n: usize) -> Result<Box<dyn PathSynth>> {
        Ok(Box::new(Self::new(model, step, n)?))
    }
}

impl PathSynth for KasdinWalterPaths {
    fn fill(&self, rng: &mut ChaCha8Rng, out: &mut [f64]) {
        let n = self.n.min(out.len().saturating_sub(1));
        out.iter_mut().for_each(|v| *v = 0.0);
        let mut normal = |sd: f64| -> f64 { sd * rng.sample::<f64, _>(StandardNormal) };
        for term in &self.terms {
            match term {
                Term::White(sd) => {
                    let x0 = normal(*sd);
                    for v in out.iter_mut().take(n + 1).skip(1) {
                        *v += normal(*sd) - x0;
                    }
                }
                Term::Walk(sd) => {
                    let mut x = 0.0;
                    for v in out.iter_mut().take(n + 1).skip(1) {
                        x += normal(*sd);
                        *v += x;
                    }
                }
                Term::Walk2(sd) => {
                    let (mut y, mut x) = (0.0, 0.0);
                    for v in out.iter_mut().take(n + 1).skip(1) {
                        y += normal(*sd);
                        x += y;
                        *v += x;
                    }
                }
                Term::Filtered {
                    sd,
                    spectrum,
                    forward,
                    inverse,
                } => {
                    let len = spectrum.len();
                    let mut buf: Vec<Complex<f64>> = (0..len)
                        .map(|k| {
                            if k <= n {
                                Complex::new(normal(*sd), 0.0)
                            } else {
                                Complex::new(0.0, 0.0)
                            }
                        })
                        .collect();
                    forward.process(&mut buf);
                    for (b, s) in buf.iter_mut().zip(spectrum) {
                        *b *= s;
                    }
                    inverse.process(&mut buf);
                    let scale = 1.0 / len as f64;
                    let x0 = buf[0].re * scale;
                    for (v, b) in out.iter_mut().zip(&buf).take(n + 1).skip(1) {
                        *v += b.re * scale - x0;
                    }
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;

    #[test]
    fn kw_coefficients_of_integer_exponents() {
        // β = 2: running sum, all ones; β = 4: k + 1 (analytic).
        assert!(kw_coefficients(2.0, 5).iter().all(|&c| c == 1.0));
        assert_eq!(kw_coefficients(4.0, 4), vec![1.0, 2.0, 3.0, 4.0]);
        assert_eq!(kw_coefficients(0.0, 3), vec![1.0, 0.0, 0.0]);
    }

    /// The FFT convolution equals the direct convolution with the filter.
    #[test]
    fn filtered_term_is_the_direct_convolution() {
        let mut m = PowerLaw::zero(0.5);
        m.set(-1, 1.0);
        let n = 50;
        let g = KasdinWalterPaths::new(&m, 1.0, n).unwrap();
        let mut out = vec![0.0; n + 1];
        g.fill(&mut ChaCha8Rng::seed_from_u64(7), &mut out);
        let mut rng = ChaCha8Rng::seed_from_u64(7);
        let sd = match &g.terms[0] {
            Term::Filtered { sd, .. } => *sd,
            _ => unreachable!(),
        };
        let w: Vec<f64> = (0..=n)
            .map(|_| sd * rng.sample::<f64, _>(StandardNormal))
            .collect();
        let h = kw_coefficients(3.0, n + 1);
        let direct: Vec<f64> = (0..=n)
            .map(|k| (0..=k).map(|j| h[j] * w[k - j]).sum())
            .collect();
        for k in 1..=n {
            let want = direct[k] - direct[0];
            assert!((out[k] - want).abs() < 1e-9 * want.abs().max(sd), "k={k}");
        }
    }
}
