//! Random phase paths of a power-law noise model for the holdover Monte
//! Carlo, built from the project's synthesiser
//! [`crate::simulate::power_law_phase`] (Kasdin & Walter 1992).
//!
//! One path is x_0 … x_n at t_k = k·Δ, relative to its start (x_0 = 0): each
//! term h_α of the model is drawn by `power_law_phase` with the simulation
//! step Δ as its sampling interval (n + 1 samples, started from rest at the
//! start of holdover), the terms are added, and the first sample is
//! subtracted.
//!
//! The prediction itself draws each term as a unit path u (white noise of
//! standard deviation 1, [`crate::simulate::unit_phase_pair`], two paths
//! per FFT pair) and adds σ·(u − u_0) with σ = `white_sigma(α, h_α, Δ)`:
//! the same path to rounding. Term α of path p draws from a stream of its
//! own ([`term_stream`]), so u depends on the seed, the path, α and the
//! number of steps only: one draw serves every span of the same number of
//! steps, and every model (every device of a comparison) that has the term
//! ([`crate::holdover::predict_many`]).
//!
//! # Step and bandwidth
//!
//! The paths are simulated at a step Δ = span/steps suited to the span, not
//! at the record's τ0, while the model keeps the record's bandwidth
//! f_h = 1/(2τ0). For α ≤ 0 (WFM, FFM, RWFM) the synthesiser's calibration
//! q = h_α·(2π)^(−α)·Δ^(1−α)/2 matches the model's S_x(f) at low frequency,
//! whatever Δ, so the paths are right as drawn. The phase-noise terms
//! depend on the bandwidth, and a path sampled at Δ sees everything above
//! 1/(2Δ) folded into white phase:
//! - WPM: the phase variance is h_2·f_h/(2π)² (IEEE Std 1139), so the term
//!   is drawn with h_2' = 2Δ·f_h·h_2, which gives that variance at the
//!   synthesiser's bandwidth 1/(2Δ) (exact);
//! - FPM: drawn at Δ, plus white phase holding the part of its variance
//!   between 1/(2Δ) and f_h, h_1·ln(2Δ·f_h)/(2π)² (S_x = h_1/((2π)²f)
//!   integrated), added to the WPM term when Δ > τ0.
//!
//! # Variance growth (what the tests check)
//!
//! With Δ the step and t = kΔ, the variance of x_k − x_0 is
//! - WPM: 2·h_2·f_h/(2π)², constant (analytic);
//! - WFM: h_0·t/2 exactly (a random walk of step variance h_0Δ/2);
//! - RWFM: (2π)²·h_−2·t³/6 · (1 + O(1/k)) (IEEE Std 1139 RWFM: y a random
//!   walk from rest, integrated once more; analytic);
//! - FFM: 2·h_−1·t² · (1 + O(1/k)), derived here for the filter
//!   (1 − B)^(−3/2) of the phase with q = π·h_−1·Δ²: the variance is
//!   q·[(g_k − 1)² + Σ_{i<k} g_i²] and g_i² = (4/π)(i + ¾) + O(1/i). The
//!   synthesiser's short-τ shaping of FFM and RWFM keeps the low-frequency
//!   level, so it changes only the O(1/k) part. (Flicker FM has no
//!   stationary phase increments — its variance diverges at low frequency —
//!   so some convention is needed; "from rest at the start of holdover"
//!   leaves the frequency offset at that moment to y0 and its uncertainty.)
//! - FPM: grows as ln k (about q·[(c_k − 1)² + Σ_{i<k} c_i²] with c the
//!   coefficients of (1 − B)^(−1/2) and q = h_1/(4π), plus twice the white
//!   part above) and stays below a picosecond for any plausible oscillator.

use crate::error::{Error, Result};
use crate::model::PowerLaw;
use crate::simulate::{power_law_phase, unit_phase_pair, white_sigma, PairWorkspace};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use std::f64::consts::PI;

/// Draws holdover noise paths of one model at one step (module notes).
#[derive(Debug, Clone, PartialEq)]
pub struct NoisePaths {
    /// (α, h_α as drawn at the step), only the terms present.
    terms: Vec<(i32, f64)>,
    /// Steps per path.
    n: usize,
    /// Step Δ, s.
    step: f64,
}

impl NoisePaths {
    /// Prepare paths of `n` steps of `step` seconds for `model`.
    ///
    /// ```
    /// use rand::SeedableRng;
    /// use tauwise::{holdover::paths::NoisePaths, model::PowerLaw};
    /// let mut m = PowerLaw::zero(0.5);
    /// m.set(0, 1e-22);
    /// let p = NoisePaths::new(&m, 10.0, 100).unwrap();
    /// let mut x = vec![1.0; 101];
    /// p.fill(&mut rand_chacha::ChaCha8Rng::seed_from_u64(1), &mut x);
    /// assert_eq!(x[0], 0.0);
    /// assert!(x[100].abs() < 1e-8);
    /// ```
    pub fn new(model: &PowerLaw, step: f64, n: usize) -> Result<Self> {
        if !(step.is_finite() && step > 0.0) || n == 0 {
            return Err(Error::invalid(format!(
                "noise paths need a positive step and at least one step, got Δ = {step} s, n = {n}"
            )));
        }
        for a in -2..=2 {
            let h = model.get(a);
            if !(h.is_finite() && h >= 0.0) {
                return Err(Error::invalid(format!(
                    "noise model h{a} must be a non-negative number, got {h}"
                )));
            }
        }
        let f_h = model.f_h;
        let (h1, h2) = (model.get(1), model.get(2));
        let mut wpm_phase_var = 0.0;
        if h2 > 0.0 || h1 > 0.0 {
            if !(f_h.is_finite() && f_h > 0.0) {
                return Err(Error::invalid(format!(
                    "a model with WPM or FPM needs a positive bandwidth f_h, got {f_h} Hz"
                )));
            }
            wpm_phase_var = h2 * f_h / (4.0 * PI * PI);
            let ratio = 2.0 * step * f_h;
            if h1 > 0.0 && ratio > 1.0 {
                wpm_phase_var += h1 * ratio.ln() / (4.0 * PI * PI);
            }
        }
        let mut terms = Vec::new();
        if wpm_phase_var > 0.0 {
            // White phase of variance σ² is h_2' = σ²·(2π)²·2Δ at bandwidth 1/(2Δ).
            terms.push((2, wpm_phase_var * 4.0 * PI * PI * 2.0 * step));
        }
        for a in [1, 0, -1, -2] {
            let h = model.get(a);
            if h > 0.0 {
                terms.push((a, h));
            }
        }
        Ok(Self { terms, n, step })
    }

    /// Steps per path.
    pub fn steps(&self) -> usize {
        self.n
    }

    /// The step Δ, s.
    pub fn step(&self) -> f64 {
        self.step
    }

    /// Fill `out` (length n + 1) with one path x_0 … x_n, x_0 = 0, seconds,
    /// drawing every term from `rng` in turn.
    pub fn fill(&self, rng: &mut ChaCha8Rng, out: &mut [f64]) {
        self.fill_with_level(rng, out);
    }

    /// [`NoisePaths::fill`], returning as well the frequency level of the
    /// random-walk FM term at the path's end, (x_n − x_{n−1})/Δ of that term
    /// alone (0 without RWFM). RWFM is the one term whose frequency is a
    /// state that carries on: a path that continues from the end starts at
    /// that frequency ([`super::fit`] uses it as the true y0 of a bootstrap
    /// record).
    pub fn fill_with_level(&self, rng: &mut ChaCha8Rng, out: &mut [f64]) -> f64 {
        let len = (self.n + 1).min(out.len());
        out.iter_mut().for_each(|v| *v = 0.0);
        let mut level = 0.0;
        for &(alpha, h) in &self.terms {
            let x = power_law_phase(alpha, h, self.step, len, rng);
            let x0 = x[0];
            for (o, v) in out.iter_mut().zip(&x) {
                *o += v - x0;
            }
            if alpha == -2 && len >= 2 {
                level = (x[len - 1] - x[len - 2]) / self.step;
            }
        }
        level
    }

    /// The terms drawn, in the order they are drawn: (α, σ) with σ the
    /// standard deviation of the term's white noise at this step,
    /// [`white_sigma`]`(α, h_α, Δ)`. A path is Σ σ·u over the terms, u the
    /// term's unit path ([`PathWorkspace::draw_batch`]).
    pub fn scales(&self) -> Vec<(i32, f64)> {
        self.terms
            .iter()
            .map(|&(alpha, h)| (alpha, white_sigma(alpha, h, self.step)))
            .collect()
    }

    /// The terms drawn, in the order they are drawn: (α, h_α as drawn at
    /// the step; WPM with the folded FPM part, module notes).
    pub fn terms(&self) -> &[(i32, f64)] {
        &self.terms
    }

    /// The exponents α of the terms drawn, in the order they are drawn
    /// (WPM first, RWFM last).
    pub fn alphas(&self) -> Vec<i32> {
        self.terms.iter().map(|t| t.0).collect()
    }
}

/// The random stream of term α of Monte Carlo path `path` in the holdover
/// prediction: ChaCha8 seeded with the prediction's seed, on stream
/// 8·path + (2 − α) (WPM 0 … RWFM 4). Each term of each path has a stream
/// of its own, so a term's unit path depends on the seed, the path, α and
/// the number of steps only — not on the other terms of the model — and
/// devices predicted with the same seed, paths and steps share the unit
/// paths of the terms they have in common ([`crate::holdover::predict_many`]).
pub fn term_stream(path: usize, alpha: i32) -> u64 {
    8 * path as u64 + (2 - alpha) as u64
}

/// The random stream of the y0 and aging errors of Monte Carlo path
/// `path`: 8·path + 5 (two standard normals, drawn after nothing else).
pub fn error_stream(path: usize) -> u64 {
    8 * path as u64 + 5
}

/// ChaCha8 seeded with `seed` on `stream`.
pub fn stream_rng(seed: u64, stream: u64) -> ChaCha8Rng {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    rng.set_stream(stream);
    rng
}

/// Working memory of the Monte Carlo's unit paths, one per worker: the
/// unit paths of the last batch of paths drawn
/// ([`PathWorkspace::draw_batch`]), one buffer per exponent α (slot 2 − α),
/// path after path.
#[derive(Debug, Default)]
pub struct PathWorkspace {
    fft: PairWorkspace,
    units: [Vec<f64>; 5],
    /// Samples per path (n + 1) and paths in the batch.
    len: usize,
    count: usize,
}

impl PathWorkspace {
    /// Draw the unit paths (white noise of standard deviation 1,
    /// [`crate::simulate::unit_phase_pair`]) of each term α in `alphas`
    /// for the Monte Carlo paths `first … last − 1` (`first` even): n + 1
    /// samples each, relative to the first, term α of path p from its own
    /// stream ([`term_stream`]) of `seed`. The paths are drawn in the
    /// pairs (2i, 2i + 1) — the last one alone when `last` is odd — whose
    /// flicker terms share one FFT pair, so a path's values do not depend
    /// on how the paths are batched. σ-weighted sums of these unit paths
    /// ([`PathWorkspace::path`], [`PathWorkspace::segment`]) are the noise
    /// paths of any model whose terms are among `alphas`, at any step.
    ///
    /// # Panics
    /// When `first` is odd or `last < first`.
    pub fn draw_batch(&mut self, alphas: &[i32], n: usize, seed: u64, first: usize, last: usize) {
        assert!(
            first % 2 == 0 && last >= first,
            "a batch starts a pair and is not empty"
        );
        let len = n + 1;
        let count = last - first;
        (self.len, self.count) = (len, count);
        for &alpha in alphas {
            let units = &mut self.units[(2 - alpha) as usize];
            units.resize(count * len, 0.0);
            for (i, pair) in units.chunks_mut(2 * len).enumerate() {
                let pa = first + 2 * i;
                let mut ra = stream_rng(seed, term_stream(pa, alpha));
                let (ua, ub) = pair.split_at_mut(len);
                if ub.is_empty() {
                    unit_phase_pair(alpha, &mut ra, ua, None, &mut self.fft);
                } else {
                    let mut rb = stream_rng(seed, term_stream(pa + 1, alpha));
                    unit_phase_pair(alpha, &mut ra, ua, Some((&mut rb, ub)), &mut self.fft);
                }
            }
            for u in units.chunks_mut(len) {
                if let Some(&u0) = u.first() {
                    u.iter_mut().for_each(|v| *v -= u0);
                }
            }
        }
    }

    /// Paths in the last batch drawn.
    pub fn count(&self) -> usize {
        self.count
    }

    /// Path `j` of the last batch drawn (its `first + j`), for the term
    /// scales `scales` ([`NoisePaths::scales`]; every α among those drawn):
    /// out_k = Σ_t σ_t·u_t,k, k = 0 … n (out_0 = 0), the terms added in
    /// the order of `scales`.
    pub fn path(&self, scales: &[(i32, f64)], j: usize, out: &mut [f64]) {
        self.segment(scales, j, 0, out);
    }

    /// Samples k0 … k0 + out.len() − 1 of [`PathWorkspace::path`] (the same
    /// values: each sample is 0 + σ_1·u_1,k + σ_2·u_2,k + …, in the order of
    /// `scales`).
    pub fn segment(&self, scales: &[(i32, f64)], j: usize, k0: usize, out: &mut [f64]) {
        let at = j * self.len + k0;
        out.iter_mut().for_each(|v| *v = 0.0);
        for &(alpha, sigma) in scales {
            let u = &self.units[(2 - alpha) as usize][at..at + out.len()];
            for (o, v) in out.iter_mut().zip(u) {
                *o += sigma * v;
            }
        }
    }
}
