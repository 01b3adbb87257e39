//! Weightings of a jitter integral: what reaches the data of a link, as a
//! function of offset frequency f. Each weighting gives |H(f)|²; several
//! weightings multiply (|H₁H₂|² = |H₁|²|H₂|²).
//!
//! - Butterworth magnitude weightings of order n and corner f_c (the
//!   maximally flat magnitude; S. Butterworth, 1930):
//!   high-pass |H|² = 1/(1 + (f_c/f)^{2n}), low-pass |H|² = 1/(1 + (f/f_c)^{2n}).
//! - Loops, as complex transfer functions of s = j2πf, so that a
//!   difference of two loops and a delay between them come out right (a
//!   difference of magnitudes would not). The second-order type-2 loop
//!   (a phase-locked loop with a proportional-plus-integral filter; e.g.
//!   F. M. Gardner, *Phaselock Techniques*, 3rd ed., 2005, ch. 2):
//!
//!   H(s) = (2ζω_n s + ω_n²)/(s² + 2ζω_n s + ω_n²),  ω_n = 2π·f_n,
//!
//!   which a transmit PLL passes to its output (`pll`); its tracking error
//!   1 − H(s) = s²/(s² + 2ζω_n s + ω_n²) is what a clock-recovery loop
//!   leaves uncorrected (`cdr`); and two loops that see one clock, one of
//!   them through a delay T, leave |H₁(s)·e^{−sT} − H₂(s)|² (`pll-diff`).
//!
//! A loop may be given by its −3 dB bandwidth and its peaking instead of
//! f_n and ζ; [`SecondOrderLoop::from_bandwidth`] converts (closed forms
//! below) and the description names both.

use crate::error::{Error, Result};
use crate::units::format_si;
use rustfft::num_complex::Complex64;
use serde::Serialize;
use std::f64::consts::PI;

/// A second-order type-2 loop, H(s) = (2ζω_n s + ω_n²)/(s² + 2ζω_n s + ω_n²).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SecondOrderLoop {
    /// Natural frequency f_n = ω_n/2π, Hz.
    pub natural_hz: f64,
    /// Damping factor ζ.
    pub damping: f64,
    /// The −3 dB bandwidth (Hz) and peaking (dB) it was given by, when it
    /// was given that way.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub given_as: Option<(f64, f64)>,
}

impl SecondOrderLoop {
    /// The loop of natural frequency `natural_hz` and damping `damping`
    /// (both finite and > 0).
    pub fn new(natural_hz: f64, damping: f64) -> Result<Self> {
        if !(natural_hz > 0.0 && natural_hz.is_finite()) {
            return Err(Error::invalid(format!(
                "loop natural frequency must be a positive frequency, not {natural_hz}"
            )));
        }
        if !(damping > 0.0 && damping.is_finite()) {
            return Err(Error::invalid(format!(
                "loop damping factor ζ must be a positive number, not {damping}"
            )));
        }
        Ok(Self {
            natural_hz,
            damping,
            given_as: None,
        })
    }

    /// x = (ω/ω_n)² at the −3 dB point, |H|² = 1/2 (analytic, from
    /// |H|² = (1 + 4ζ²x)/((1 − x)² + 4ζ²x)):
    /// x = 1 + 2ζ² + √((1 + 2ζ²)² + 1).
    fn x_3db(zeta: f64) -> f64 {
        let c = 1.0 + 2.0 * zeta * zeta;
        c + (c * c + 1.0).sqrt()
    }

    /// The peaking of |H|², linear (analytic): setting d|H|²/dx = 0 gives
    /// 4ζ²x² + 2x − 2 = 0, x* = (√(1 + 8ζ²) − 1)/(4ζ²), and the peak is
    /// |H|²(x*).
    fn peak_linear(zeta: f64) -> f64 {
        let a = 4.0 * zeta * zeta;
        let x = ((1.0 + 2.0 * a).sqrt() - 1.0) / a;
        (1.0 + a * x) / ((1.0 - x) * (1.0 - x) + a * x)
    }

    /// The −3 dB bandwidth of H (where |H|² = 1/2), Hz:
    /// f_3dB = f_n·√(1 + 2ζ² + √((1 + 2ζ²)² + 1)).
    pub fn bandwidth_3db(&self) -> f64 {
        self.natural_hz * Self::x_3db(self.damping).sqrt()
    }

    /// The peaking of H, dB: 10·log₁₀ max_f |H|² (always > 0 for a type-2
    /// loop; it falls as ζ grows).
    pub fn peaking_db(&self) -> f64 {
        10.0 * Self::peak_linear(self.damping).log10()
    }

    /// The loop with −3 dB bandwidth `bw_hz` and peaking `peak_db` (dB > 0):
    /// ζ solves peaking(ζ) = `peak_db` (bisection on the closed form above,
    /// which is monotone in ζ), then f_n = f_3dB/√x_3dB(ζ).
    pub fn from_bandwidth(bw_hz: f64, peak_db: f64) -> Result<Self> {
        if !(bw_hz > 0.0 && bw_hz.is_finite()) {
            return Err(Error::invalid(format!(
                "loop bandwidth must be a positive frequency, not {bw_hz}"
            )));
        }
        // ζ from 10⁻³ to 10³ covers peaking from ~60 dB down to ~4e-6 dB.
        let (mut lo, mut hi) = (1e-3_f64, 1e3_f64);
        let p = |z: f64| 10.0 * Self::peak_linear(z).log10();
        if !(peak_db.is_finite() && peak_db <= p(lo) && peak_db >= p(hi)) {
            return Err(Error::invalid(format!(
                "loop peaking {peak_db} dB is outside what a second-order type-2 loop can have \
                 ({:.1e} dB to {:.0} dB; peaking is always above 0 dB)",
                p(hi),
                p(lo)
            )));
        }
        for _ in 0..200 {
            let mid = (lo * hi).sqrt();
            if p(mid) > peak_db {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        let zeta = (lo * hi).sqrt();
        let mut l = Self::new(bw_hz / Self::x_3db(zeta).sqrt(), zeta)?;
        l.given_as = Some((bw_hz, peak_db));
        Ok(l)
    }

    fn s_and_wn(&self, f: f64) -> (Complex64, f64) {
        (
            Complex64::new(0.0, 2.0 * PI * f),
            2.0 * PI * self.natural_hz,
        )
    }

    /// H(j2πf), what the loop passes.
    pub fn pass(&self, f: f64) -> Complex64 {
        let (s, wn) = self.s_and_wn(f);
        let num = s * (2.0 * self.damping * wn) + wn * wn;
        num / (s * s + num)
    }

    /// 1 − H(j2πf) = s²/(s² + 2ζω_n s + ω_n²), what the loop leaves.
    pub fn error(&self, f: f64) -> Complex64 {
        let (s, wn) = self.s_and_wn(f);
        let s2 = s * s;
        s2 / (s2 + s * (2.0 * self.damping * wn) + wn * wn)
    }

    /// `FN:ZETA` with the converted values when given by bandwidth.
    fn describe(&self) -> String {
        let core = format!(
            "fn {} ζ {:.4}",
            format_si(self.natural_hz, "Hz", 4),
            self.damping
        );
        match self.given_as {
            Some((bw, pk)) => format!("bw {} peak {pk} dB → {core}", format_si(bw, "Hz", 4)),
            None => core,
        }
    }
}

/// A weighting of the jitter integral (see the module documentation).
/// Parsed from text by the one filter parser ([`crate::parse::Filter`]).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum Weighting {
    /// High-pass of order n at corner f_c: |H|² = 1/(1 + (f_c/f)^{2n}).
    HighPass {
        /// Order n ≥ 1.
        order: u32,
        /// Corner frequency f_c in Hz.
        fc: f64,
    },
    /// Low-pass of order n at corner f_c: |H|² = 1/(1 + (f/f_c)^{2n}).
    LowPass {
        /// Order n ≥ 1.
        order: u32,
        /// Corner frequency f_c in Hz.
        fc: f64,
    },
    /// What a PLL passes: |H(s)|².
    Pll(SecondOrderLoop),
    /// What a clock-recovery loop leaves: |1 − H(s)|².
    Cdr(SecondOrderLoop),
    /// Two loops seeing one clock, the first through a delay T:
    /// |H₁(s)·e^{−sT} − H₂(s)|².
    PllDiff {
        /// H₁, the delayed path.
        first: SecondOrderLoop,
        /// H₂.
        second: SecondOrderLoop,
        /// T, seconds (≥ 0).
        delay_s: f64,
    },
}

impl Weighting {
    /// Parse through the one filter parser ([`crate::parse::Filter`]).
    pub fn parse(text: &str) -> Result<Self> {
        Ok(text.parse::<Self>()?)
    }

    /// |H(f)|².
    pub fn h2(&self, f: f64) -> f64 {
        match *self {
            Weighting::HighPass { order, fc } => 1.0 / (1.0 + (fc / f).powi(2 * order as i32)),
            Weighting::LowPass { order, fc } => 1.0 / (1.0 + (f / fc).powi(2 * order as i32)),
            Weighting::Pll(l) => l.pass(f).norm_sqr(),
            Weighting::Cdr(l) => l.error(f).norm_sqr(),
            Weighting::PllDiff {
                first,
                second,
                delay_s,
            } => {
                let delay = Complex64::from_polar(1.0, -2.0 * PI * f * delay_s);
                (first.pass(f) * delay - second.pass(f)).norm_sqr()
            }
        }
    }

    /// A short description (`highpass:1:12 kHz`, `pll fn 1 MHz ζ 0.7071`, …).
    pub fn describe(&self) -> String {
        match *self {
            Weighting::HighPass { order, fc } => {
                format!("highpass:{order}:{}", format_si(fc, "Hz", 4))
            }
            Weighting::LowPass { order, fc } => {
                format!("lowpass:{order}:{}", format_si(fc, "Hz", 4))
            }
            Weighting::Pll(l) => format!("pll {}", l.describe()),
            Weighting::Cdr(l) => format!("cdr {}", l.describe()),
            Weighting::PllDiff {
                first,
                second,
                delay_s,
            } => format!(
                "pll-diff ({}) − ({}) delay {}",
                first.describe(),
                second.describe(),
                format_si(delay_s, "s", 4)
            ),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Analytic properties of the type-2 loop (Gardner, ch. 2): |H|² at
    /// f = f_n is (1 + 4ζ²)/(4ζ²); |H|² = 1/2 at the closed-form −3 dB
    /// bandwidth; H + (1 − H) = 1; the peak found on a dense grid equals
    /// the closed form.
    #[test]
    fn loop_against_its_analytic_properties() {
        for &(fnat, zeta) in &[(1e6, 0.707), (2.5e3, 0.3), (40.0, 3.0)] {
            let l = SecondOrderLoop::new(fnat, zeta).unwrap();
            let a = 4.0 * zeta * zeta;
            let at_fn = l.pass(fnat).norm_sqr();
            assert!((at_fn / ((1.0 + a) / a) - 1.0).abs() < 1e-12, "{at_fn}");
            let h3 = l.pass(l.bandwidth_3db()).norm_sqr();
            assert!((h3 - 0.5).abs() < 1e-12, "{h3}");
            for f in [1.0, fnat / 10.0, fnat, 7.0 * fnat] {
                let sum = l.pass(f) + l.error(f);
                assert!((sum - Complex64::new(1.0, 0.0)).norm() < 1e-12);
            }
            let mut best = 0.0_f64;
            for i in 0..200_000 {
                let f = fnat * 10f64.powf(-3.0 + 6.0 * i as f64 / 200_000.0);
                best = best.max(l.pass(f).norm_sqr());
            }
            let peak = 10.0 * best.log10();
            assert!(
                (peak - l.peaking_db()).abs() < 1e-6,
                "{peak} {}",
                l.peaking_db()
            );
        }
    }

    /// From bandwidth and peaking back to the same loop (analytic round trip).
    #[test]
    fn bandwidth_and_peaking_round_trip() {
        for &(fnat, zeta) in &[(1e6, 0.707), (2.5e3, 0.3), (40.0, 3.0)] {
            let l = SecondOrderLoop::new(fnat, zeta).unwrap();
            let back = SecondOrderLoop::from_bandwidth(l.bandwidth_3db(), l.peaking_db()).unwrap();
            assert!((back.damping / zeta - 1.0).abs() < 1e-9, "{back:?}");
            assert!((back.natural_hz / fnat - 1.0).abs() < 1e-9, "{back:?}");
        }
        assert!(SecondOrderLoop::from_bandwidth(1e6, 0.0).is_err());
        assert!(SecondOrderLoop::from_bandwidth(1e6, -1.0).is_err());
        assert!(SecondOrderLoop::from_bandwidth(-1e6, 1.0).is_err());
    }

    /// Two equal loops with no delay leave nothing; with a delay T the
    /// difference at low f is |1 − e^{−sT}|² = 4 sin²(πfT) (analytic).
    #[test]
    fn loop_difference() {
        let l = SecondOrderLoop::new(1e6, 0.7).unwrap();
        let same = Weighting::PllDiff {
            first: l,
            second: l,
            delay_s: 0.0,
        };
        for f in [1.0, 1e3, 1e6, 1e8] {
            assert!(same.h2(f) < 1e-28, "{}", same.h2(f));
        }
        let t = 1e-9;
        let d = Weighting::PllDiff {
            first: l,
            second: l,
            delay_s: t,
        };
        let f = 10.0;
        let want = 4.0 * (PI * f * t).sin().powi(2);
        assert!((d.h2(f) / want - 1.0).abs() < 1e-6, "{} {want}", d.h2(f));
    }
}
