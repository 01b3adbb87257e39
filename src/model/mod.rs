//! The power-law noise model of an oscillator (IEEE Std 1139-2008):
//!
//! S_y(f) = Σ_{α=−2}^{2} h_α f^α  for 0 < f < f_h,
//!
//! with the time-domain variances it implies (IEEE Std 1139 table, NIST SP 1065
//! Table 3), the phase-noise quantities S_φ(f) = (ν0/f)² S_y(f) and
//! L(f) = 10·log10(S_φ(f)/2) dBc/Hz, and (in [`fit`]) its fit to measured
//! curves.

use crate::error::{Error, Result};
use std::f64::consts::{LN_2, PI};

pub mod fit;
pub mod response;

pub use fit::{fit_sy, fit_variances, Dominant, FitPoint, LeftOut, LeftOutReason, ModelFit};

/// Euler–Mascheroni constant γ (enters the FPM forms).
pub const EULER_GAMMA: f64 = 0.577_215_664_901_532_9;

/// Constant of the FPM Hadamard variance, (10γ − 6 ln2 + ln3)/3 ≈ 0.9040
/// (derived in [`PowerLaw::hvar`]).
pub const HVAR_FPM_CONST: f64 = (10.0 * EULER_GAMMA - 6.0 * LN_2 + 1.098_612_288_668_109_8) / 3.0;

/// Noise type labels by α, from α = 2 (WPM) down to α = −4 (RRFM).
pub const NOISE_LABELS: [(i32, &str); 7] = [
    (2, "WPM"),
    (1, "FPM"),
    (0, "WFM"),
    (-1, "FFM"),
    (-2, "RWFM"),
    (-3, "FWFM"),
    (-4, "RRFM"),
];

/// The trade label of the power-law noise with exponent α of S_y(f) ∝ f^α
/// (`WPM FPM WFM FFM RWFM`, and `FWFM RRFM` for α = −3, −4).
pub fn noise_label(alpha: i32) -> Option<&'static str> {
    NOISE_LABELS.iter().find(|(a, _)| *a == alpha).map(|p| p.1)
}

/// Parse a noise label (`WPM`, `wfm`, …) or a plain α (`0`, `-2`).
pub fn parse_noise(text: &str) -> Result<i32> {
    let t = text.trim();
    if let Ok(a) = t.parse::<i32>() {
        if noise_label(a).is_some() {
            return Ok(a);
        }
    }
    NOISE_LABELS
        .iter()
        .find(|(_, l)| l.eq_ignore_ascii_case(t))
        .map(|p| p.0)
        .ok_or_else(|| {
            Error::invalid(format!(
                "unknown noise type '{t}': expected one of WPM FPM WFM FFM RWFM FWFM RRFM or α from 2 to -4"
            ))
        })
}

/// A power-law model: h_α for α = −2 … 2 and the high-frequency cut-off f_h.
///
/// `h[k]` holds h_α with α = k − 2, so `h[0]` = h_−2 (RWFM) … `h[4]` = h_2 (WPM).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PowerLaw {
    /// h_−2 … h_2 (S_y in 1/Hz at f = 1 Hz for each term).
    pub h: [f64; 5],
    /// High-frequency cut-off f_h in Hz (enters WPM and FPM).
    pub f_h: f64,
}

/// Serialised as `{"h2","h1","h0","h-1","h-2","fh"}` (1/Hz at 1 Hz, and Hz).
impl serde::Serialize for PowerLaw {
    fn serialize<S: serde::Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        use serde::ser::SerializeMap;
        let mut m = s.serialize_map(Some(6))?;
        for a in (-2..=2).rev() {
            m.serialize_entry(&format!("h{a}"), &self.get(a))?;
        }
        m.serialize_entry("fh", &self.f_h)?;
        m.end()
    }
}

impl PowerLaw {
    /// A model with every h_α zero and the given cut-off.
    pub fn zero(f_h: f64) -> Self {
        Self { h: [0.0; 5], f_h }
    }

    /// h_α for α in −2 … 2 (0 outside).
    pub fn get(&self, alpha: i32) -> f64 {
        if (-2..=2).contains(&alpha) {
            self.h[(alpha + 2) as usize]
        } else {
            0.0
        }
    }

    /// Set h_α for α in −2 … 2.
    pub fn set(&mut self, alpha: i32, value: f64) {
        assert!((-2..=2).contains(&alpha), "α out of range");
        self.h[(alpha + 2) as usize] = value;
    }

    /// Parse a model string `h0=1e-22,h-1=3e-26,h-2=1e-31[,fh=0.5]`
    /// (separators `,` or `;` or spaces). Unnamed terms are zero; `fh`
    /// defaults to `default_fh` (for time records, the Nyquist frequency 1/(2τ0)).
    ///
    /// ```
    /// use tauwise::model::PowerLaw;
    /// let m = PowerLaw::parse("h0=1e-22,h-2=1e-30", 0.5).unwrap();
    /// assert_eq!(m.get(0), 1e-22);
    /// assert_eq!(m.get(-2), 1e-30);
    /// assert_eq!(m.f_h, 0.5);
    /// ```
    pub fn parse(text: &str, default_fh: f64) -> Result<Self> {
        Ok(text.parse::<crate::parse::Model>()?.power_law(default_fh))
    }

    /// The model as a string that [`PowerLaw::parse`] accepts (non-zero terms
    /// only, then `fh`).
    pub fn to_model_string(&self) -> String {
        let mut parts: Vec<String> = (-2..=2)
            .rev()
            .filter(|&a| self.get(a) > 0.0)
            .map(|a| format!("h{a}={:.4e}", self.get(a)))
            .collect();
        parts.push(format!("fh={}", self.f_h));
        parts.join(",")
    }

    /// S_y(f) = Σ h_α f^α for 0 < f ≤ f_h, 0 above f_h (1/Hz).
    pub fn sy(&self, f: f64) -> f64 {
        if f <= 0.0 || f > self.f_h {
            return 0.0;
        }
        (-2..=2).map(|a| self.get(a) * f.powi(a)).sum()
    }

    /// S_φ(f) = (ν0/f)² S_y(f) in rad²/Hz (IEEE Std 1139).
    pub fn sphi(&self, f: f64, nu0: f64) -> f64 {
        (nu0 / f).powi(2) * self.sy(f)
    }

    /// S_x(f) = S_y(f)/(2πf)² in s²/Hz.
    pub fn sx(&self, f: f64) -> f64 {
        self.sy(f) / (2.0 * PI * f).powi(2)
    }

    /// L(f) = 10·log10(S_φ(f)/2) in dBc/Hz (SSB convention, IEEE Std 1139).
    pub fn lf(&self, f: f64, nu0: f64) -> f64 {
        10.0 * (self.sphi(f, nu0) / 2.0).log10()
    }

    /// Allan variance σ_y²(τ), IEEE Std 1139 table (docs/checks.md §C):
    /// WPM 3f_h h_2/((2π)²τ²); FPM [1.038 + 3 ln(2πf_hτ)] h_1/((2π)²τ²);
    /// WFM h_0/(2τ); FFM 2 ln2 h_−1; RWFM (2π)² τ h_−2/6. Valid for 2πf_hτ ≫ 1.
    pub fn avar(&self, tau: f64) -> f64 {
        let w = (2.0 * PI).powi(2);
        self.get(2) * 3.0 * self.f_h / (w * tau * tau)
            + self.get(1) * (1.038 + 3.0 * (2.0 * PI * self.f_h * tau).ln()) / (w * tau * tau)
            + self.get(0) / (2.0 * tau)
            + self.get(-1) * 2.0 * LN_2
            + self.get(-2) * w * tau / 6.0
    }

    /// Modified Allan variance Mod σ_y²(τ) at τ = nτ0, IEEE Std 1139 table
    /// (large-n forms, docs/checks.md §C): WPM 3f_hτ0 h_2/((2π)²τ³); FPM
    /// 3.37 h_1/((2π)²τ²); WFM h_0/(4τ); FFM 0.936 h_−1; RWFM 5.42 h_−2 τ.
    pub fn mvar(&self, tau: f64, tau0: f64) -> f64 {
        let w = (2.0 * PI).powi(2);
        self.get(2) * 3.0 * self.f_h * tau0 / (w * tau.powi(3))
            + self.get(1) * 3.37 / (w * tau * tau)
            + self.get(0) / (4.0 * tau)
            + self.get(-1) * 0.936
            + self.get(-2) * 5.42 * tau
    }

    /// Hadamard variance σ_H²(τ) from the transfer function
    /// |H(f)|² = (8/3) sin⁶(πfτ)/(πfτ)² (docs/design.md §6; NIST SP 1065 §5.2.8):
    ///
    /// | α  | σ_H²(τ)                                                      |
    /// |----|--------------------------------------------------------------|
    /// | 2  | (10/3) f_h h_2 / ((2π)² τ²)                                    |
    /// | 1  | [(10γ − 6 ln2 + ln3)/3 + (10/3) ln(2πf_hτ)] h_1 / ((2π)² τ²)   |
    /// | 0  | h_0 / (2τ)                                                   |
    /// | −1 | (8 ln2 − 3 ln3)/2 · h_−1 ≈ 1.1247 h_−1                        |
    /// | −2 | (2π)² τ h_−2 / 12                                            |
    ///
    /// Derivation (u = πfτ, so df = du/(πτ)):
    /// - WPM: (8h_2/(3π²τ²)) ∫_0^(f_h) sin⁶(πfτ) df → the mean 5/16 of sin⁶
    ///   gives (5/6) f_h h_2/(π²τ²) (exact when 2f_hτ is a whole number).
    /// - FPM: (8h_1/(3π²τ²)) ∫_0^U sin⁶u/u du with U = πf_hτ; writing
    ///   sin⁶u = [15(1−cos2u) − 6(1−cos4u) + (1−cos6u)]/32 and
    ///   ∫_0^U (1 − cos bu)/u du = γ + ln(bU) − Ci(bU) ≈ γ + ln(bU) for
    ///   large U gives [10(γ + ln U) + 4 ln2 + ln3]/32 (valid for 2πf_hτ ≫ 1,
    ///   like the table's AVAR form, whose constant 1.038 is 3γ − ln2).
    /// - WFM: (8h_0/(3πτ)) ∫_0^∞ sin⁶u/u² du = (8h_0/(3πτ))·(3π/16).
    /// - FFM: (8h_−1/3) ∫_0^∞ sin⁶u/u³ du, and with the same expansion,
    ///   ∫_0^∞ Σ a_k cos(b_k u)/u³ du = ½ Σ a_k b_k² ln b_k (Σa_k = Σa_k b_k² = 0)
    ///   = (3/16)(8 ln2 − 3 ln3).
    /// - RWFM: (8πτh_−2/3) ∫_0^∞ sin⁶u/u⁴ du, with
    ///   ∫_0^∞ Σ a_k cos(b_k u)/u⁴ du = (π/12) Σ a_k b_k³ = π/8.
    ///
    /// The same method reproduces the AVAR table (∫ sin⁴u/u² = π/4,
    /// ∫ sin⁴u/u³ = ln2, ∫ sin⁴u/u⁴ = π/3), and tests/model.rs checks every
    /// form against [`response::variance_numeric`].
    pub fn hvar(&self, tau: f64) -> f64 {
        let w = (2.0 * PI).powi(2);
        let ln3 = 1.098_612_288_668_109_8_f64;
        self.get(2) * 10.0 / 3.0 * self.f_h / (w * tau * tau)
            + self.get(1) * (HVAR_FPM_CONST + 10.0 / 3.0 * (2.0 * PI * self.f_h * tau).ln())
                / (w * tau * tau)
            + self.get(0) / (2.0 * tau)
            + self.get(-1) * (8.0 * LN_2 - 3.0 * ln3) / 2.0
            + self.get(-2) * w * tau / 12.0
    }

    /// The variance `kind` at τ from the closed forms ([`PowerLaw::avar`],
    /// [`PowerLaw::mvar`], [`PowerLaw::hvar`]).
    ///
    /// `kind` names the estimator; its [`Estimator::variance_family`] picks
    /// the form (TDEV's variance is τ²/3 times MVAR, NIST SP 1065 eq. 17);
    /// NaN for an estimator without one (Theo1, MTIE, TIE rms).
    ///
    /// [`Estimator::variance_family`]: crate::deviation::Estimator::variance_family
    pub fn variance(&self, kind: crate::deviation::Estimator, tau: f64, tau0: f64) -> f64 {
        use crate::deviation::Estimator;
        match kind.variance_family() {
            Some(Estimator::Mdev) => self.mvar(tau, tau0),
            Some(Estimator::Tdev) => tau * tau / 3.0 * self.mvar(tau, tau0),
            Some(Estimator::Ohdev) => self.hvar(tau),
            Some(_) => self.avar(tau),
            None => f64::NAN,
        }
    }

    /// The variance `kind` at τ = nτ0 by numerical integration of S_y(f) with
    /// the transfer function ([`response::variance_numeric`]): exact at every
    /// τ, including the short τ where the closed forms (large-τ, large-n
    /// limits) are off, e.g. MVAR at n = 1 equals AVAR.
    pub fn variance_numeric(&self, kind: crate::deviation::Estimator, tau: f64, tau0: f64) -> f64 {
        (-2..=2)
            .filter(|&a| self.get(a) > 0.0)
            .map(|a| self.get(a) * response::variance_numeric(kind, a, tau, tau0, self.f_h))
            .sum()
    }

    /// Time variance σ_x²(τ) = (τ²/3) Mod σ_y²(τ) (NIST SP 1065 eq. 17).
    pub fn tvar(&self, tau: f64, tau0: f64) -> f64 {
        tau * tau / 3.0 * self.mvar(tau, tau0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parse_and_print() {
        let m = PowerLaw::parse("h2=1e-20; h-1=3e-26 fh=10k", 0.5).unwrap();
        assert_eq!(m.get(2), 1e-20);
        assert_eq!(m.get(-1), 3e-26);
        assert_eq!(m.f_h, 1e4);
        let again = PowerLaw::parse(&m.to_model_string(), 0.5).unwrap();
        assert_eq!(again.f_h, 1e4);
        assert!((again.get(-1) - 3e-26).abs() < 1e-30);
        assert!(PowerLaw::parse("h3=1", 0.5).is_err());
        assert!(PowerLaw::parse("h0=abc", 0.5).is_err());
        assert!(PowerLaw::parse("h0=-1", 0.5).is_err());
        assert!(PowerLaw::parse("", 0.5).is_err());
    }

    #[test]
    fn labels() {
        assert_eq!(noise_label(0), Some("WFM"));
        assert_eq!(parse_noise("rwfm").unwrap(), -2);
        assert_eq!(parse_noise("1").unwrap(), 1);
        assert!(parse_noise("pink").is_err());
    }

    /// IEEE Std 1139 table (docs/checks.md §C): WFM AVAR = h0/(2τ), FFM = 2 ln2 h−1.
    #[test]
    fn ieee1139_closed_forms() {
        let mut m = PowerLaw::zero(0.5);
        m.set(0, 2e-22);
        assert!((m.avar(10.0) - 1e-23).abs() < 1e-36);
        let mut f = PowerLaw::zero(0.5);
        f.set(-1, 1e-24);
        assert!((f.avar(100.0) - 2.0 * LN_2 * 1e-24).abs() < 1e-36);
    }
}
