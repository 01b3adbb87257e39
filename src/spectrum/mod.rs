//! The frequency domain: one [`Spectrum`] type for L(f), S_φ(f), S_y(f) and
//! S_x(f) with exact conversions, Welch PSD estimation of phase records
//! ([`welch`]), log–log table integration ([`loglog`]), σ(τ) from a spectrum
//! ([`sigma`]) and integrated phase jitter ([`jitter`]).
//!
//! Definitions (IEEE Std 1139-2008; docs/design.md §6), all one-sided, for offset
//! frequency f > 0 from a carrier ν0:
//!
//! - L(f) = 10·log10(S_φ(f)/2) dBc/Hz (the SSB convention: L is half of S_φ);
//! - S_y(f) = (f/ν0)²·S_φ(f) (1/Hz), fractional frequency;
//! - S_x(f) = S_φ(f)/(2πν0)² (s²/Hz), phase as time;
//! - hence S_y(f) = (2πf)²·S_x(f), which needs no carrier.

/// Most points of a table made from a model ([`Spectrum::from_model`]).
pub const MAX_MODEL_POINTS: usize = 10_000_000;

/// Memory a point of a model table takes on its way out (offset, value,
/// S_y, converted values and the text line), for the bound's message.
const BYTES_PER_POINT: usize = 64;

pub mod jitter;
pub mod loglog;
pub mod quad;
pub mod sigma;
pub mod spurs;
pub mod weighting;
pub mod welch;

use crate::error::{Error, Result};
use crate::model::PowerLaw;
use std::f64::consts::PI;

/// `a > b`, false when either is NaN: the checks write `!gt(x, 0.0)` to
/// refuse NaN along with non-positive values.
#[inline]
pub fn gt(a: f64, b: f64) -> bool {
    a > b
}

/// Which spectral quantity a [`Spectrum`] holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Quantity {
    /// L(f) in dBc/Hz (SSB phase noise, L = 10·log10(S_φ/2)).
    Lf,
    /// S_φ(f) in rad²/Hz.
    Sphi,
    /// S_y(f) in 1/Hz (fractional frequency).
    Sy,
    /// S_x(f) in s²/Hz (phase expressed as time).
    Sx,
}

impl Quantity {
    /// The name used on the command line and in JSON (`lf`, `sphi`, `sy`, `sx`).
    pub fn name(self) -> &'static str {
        match self {
            Quantity::Lf => "lf",
            Quantity::Sphi => "sphi",
            Quantity::Sy => "sy",
            Quantity::Sx => "sx",
        }
    }

    /// The unit of the values.
    pub fn unit(self) -> &'static str {
        match self {
            Quantity::Lf => "dBc/Hz",
            Quantity::Sphi => "rad²/Hz",
            Quantity::Sy => "1/Hz",
            Quantity::Sx => "s²/Hz",
        }
    }

    /// Parse `lf`, `sphi`, `sy` or `sx`.
    pub fn parse(text: &str) -> Result<Self> {
        match text.trim().to_ascii_lowercase().as_str() {
            "lf" | "l" => Ok(Quantity::Lf),
            "sphi" => Ok(Quantity::Sphi),
            "sy" => Ok(Quantity::Sy),
            "sx" => Ok(Quantity::Sx),
            _ => Err(Error::invalid(format!(
                "unknown spectral quantity '{text}': expected one of lf sphi sy sx"
            ))),
        }
    }

    /// True when converting between this quantity and `other` needs ν0.
    /// L ↔ S_φ and S_y ↔ S_x do not; the phase-angle pair ↔ the time pair do.
    pub fn needs_carrier(self, other: Quantity) -> bool {
        self.is_angle() != other.is_angle()
    }

    fn is_angle(self) -> bool {
        matches!(self, Quantity::Lf | Quantity::Sphi)
    }
}

/// A one-sided spectrum sampled at strictly increasing offsets f > 0.
///
/// `values` are in the unit of [`Quantity::unit`] (dBc/Hz for L(f), linear
/// otherwise). `carrier` is ν0 in Hz, needed to move between the phase-angle
/// quantities (L, S_φ) and the time/frequency ones (S_x, S_y).
#[derive(Debug, Clone, PartialEq)]
pub struct Spectrum {
    /// Offset (Fourier) frequencies in Hz, positive and strictly increasing.
    pub f: Vec<f64>,
    /// The values at each offset.
    pub values: Vec<f64>,
    /// What the values are.
    pub quantity: Quantity,
    /// Carrier frequency ν0 in Hz, when known.
    pub carrier: Option<f64>,
}

impl Spectrum {
    /// A spectrum, checked: equal lengths, at least 2 points, offsets finite,
    /// positive and strictly increasing, values finite (L) or finite and
    /// positive (linear quantities), carrier positive when given.
    pub fn new(
        f: Vec<f64>,
        values: Vec<f64>,
        quantity: Quantity,
        carrier: Option<f64>,
    ) -> Result<Self> {
        if f.len() != values.len() {
            return Err(Error::invalid(format!(
                "spectrum has {} offsets but {} values",
                f.len(),
                values.len()
            )));
        }
        if f.len() < 2 {
            return Err(Error::insufficient(format!(
                "a spectrum needs at least 2 points, got {}",
                f.len()
            )));
        }
        for (i, w) in f.windows(2).enumerate() {
            if !gt(w[1], w[0]) {
                return Err(Error::invalid(format!(
                    "spectrum offsets must increase strictly: point {} ({} Hz) follows {} Hz",
                    i + 2,
                    w[1],
                    w[0]
                )));
            }
        }
        if !(f[0] > 0.0 && f.iter().all(|v| v.is_finite())) {
            return Err(Error::invalid(
                "spectrum offsets must be positive finite frequencies",
            ));
        }
        for (i, &v) in values.iter().enumerate() {
            let ok = match quantity {
                Quantity::Lf => v.is_finite(),
                _ => v.is_finite() && v > 0.0,
            };
            if !ok {
                return Err(Error::invalid(format!(
                    "spectrum value {v} at {} Hz is not a finite {} value",
                    f[i],
                    if quantity == Quantity::Lf {
                        "dBc/Hz"
                    } else {
                        "positive"
                    }
                )));
            }
        }
        if let Some(c) = carrier {
            if !(c.is_finite() && c > 0.0) {
                return Err(Error::invalid(format!(
                    "carrier frequency must be positive, got {c} Hz"
                )));
            }
        }
        Ok(Self {
            f,
            values,
            quantity,
            carrier,
        })
    }

    /// Number of points.
    pub fn len(&self) -> usize {
        self.f.len()
    }

    /// True when there are no points (never, for a checked spectrum).
    pub fn is_empty(&self) -> bool {
        self.f.is_empty()
    }

    /// Lowest and highest offset in Hz.
    pub fn range(&self) -> (f64, f64) {
        (self.f[0], self.f[self.f.len() - 1])
    }

    fn carrier_for(&self, to: Quantity) -> Result<f64> {
        self.carrier.ok_or_else(|| {
            Error::invalid(format!(
                "converting a {} spectrum to {} needs the carrier frequency (--carrier)",
                self.quantity.name(),
                to.name()
            ))
        })
    }

    /// The spectrum as `to`, converted exactly point by point (module notes).
    /// Fails when the conversion needs ν0 and none is known.
    ///
    /// ```
    /// use tauwise::spectrum::{Quantity, Spectrum};
    /// // −150 dBc/Hz is S_φ = 2e-15 rad²/Hz; at 1 kHz from 10 MHz S_y = 1e-8·S_φ.
    /// let l = Spectrum::new(vec![1e3, 1e4], vec![-150.0, -150.0], Quantity::Lf, Some(10e6)).unwrap();
    /// let sy = l.to(Quantity::Sy).unwrap();
    /// assert!((sy.values[0] / 2e-23 - 1.0).abs() < 1e-12);
    /// ```
    pub fn to(&self, to: Quantity) -> Result<Spectrum> {
        if to == self.quantity {
            return Ok(self.clone());
        }
        let nu0 = if self.quantity.needs_carrier(to) {
            Some(self.carrier_for(to)?)
        } else {
            None
        };
        let values = self
            .f
            .iter()
            .zip(&self.values)
            .map(|(&f, &v)| convert_value(v, f, self.quantity, to, nu0))
            .collect();
        Ok(Spectrum {
            f: self.f.clone(),
            values,
            quantity: to,
            carrier: self.carrier,
        })
    }

    /// The values as `to` (see [`Spectrum::to`]).
    pub fn values_as(&self, to: Quantity) -> Result<Vec<f64>> {
        Ok(self.to(to)?.values)
    }

    /// A spectrum sampled from a power-law model at `per_decade` log-spaced
    /// offsets from `f_from` to `f_to` (both included; `f_to` is clamped to
    /// the model's f_h). S_y(f) = Σ h_α f^α (IEEE Std 1139).
    /// (`per_decade` × decades is bounded by [`MAX_MODEL_POINTS`], with an
    /// error that gives the memory it would need.)
    pub fn from_model(
        model: &PowerLaw,
        quantity: Quantity,
        carrier: Option<f64>,
        f_from: f64,
        f_to: f64,
        per_decade: usize,
    ) -> Result<Spectrum> {
        let f_to = f_to.min(model.f_h);
        if !(f_from > 0.0 && f_to > f_from) {
            return Err(Error::invalid(format!(
                "model spectrum range must satisfy 0 < from < to ≤ f_h, got {f_from} Hz to {f_to} Hz"
            )));
        }
        if per_decade == 0 {
            return Err(Error::invalid("points per decade must be at least 1"));
        }
        let decades = (f_to / f_from).log10();
        let want = (decades * per_decade as f64).ceil();
        if !(want <= MAX_MODEL_POINTS as f64) {
            return Err(Error::invalid(format!(
                "{per_decade} points per decade over {decades:.2} decades would make {want:.3e} points, about {} of memory (offset, S_y and the output table, {BYTES_PER_POINT} bytes a point); at most {MAX_MODEL_POINTS} points ({}): use fewer points per decade",
                crate::units::format_bytes((want * BYTES_PER_POINT as f64) as u128),
                crate::units::format_bytes((MAX_MODEL_POINTS * BYTES_PER_POINT) as u128),
            )));
        }
        let n = (want as usize).max(1);
        let f: Vec<f64> = (0..=n)
            .map(|i| {
                if i == n {
                    f_to
                } else {
                    f_from * 10f64.powf(decades * i as f64 / n as f64)
                }
            })
            .collect();
        let sy: Vec<f64> = f.iter().map(|&fi| model.sy(fi)).collect();
        if sy.iter().any(|v| !gt(*v, 0.0)) {
            return Err(Error::invalid(
                "the model has no power at some offset of the range (all h_α zero?)",
            ));
        }
        Spectrum::new(f, sy, Quantity::Sy, carrier)?.to(quantity)
    }
}

/// Convert one value at offset `f` between quantities (module notes).
fn convert_value(v: f64, f: f64, from: Quantity, to: Quantity, nu0: Option<f64>) -> f64 {
    // Go through S_φ when angle-based, S_x when time-based.
    let nu = nu0.unwrap_or(f64::NAN);
    let sphi = match from {
        Quantity::Lf => 2.0 * 10f64.powf(v / 10.0),
        Quantity::Sphi => v,
        Quantity::Sy => v * (nu / f).powi(2),
        Quantity::Sx => v * (2.0 * PI * nu).powi(2),
    };
    match (from.is_angle(), to.is_angle()) {
        (false, false) => {
            // S_y ↔ S_x without ν0: S_y = (2πf)² S_x.
            let w2 = (2.0 * PI * f).powi(2);
            match (from, to) {
                (Quantity::Sy, Quantity::Sx) => v / w2,
                (Quantity::Sx, Quantity::Sy) => v * w2,
                _ => v,
            }
        }
        _ => match to {
            Quantity::Lf => 10.0 * (sphi / 2.0).log10(),
            Quantity::Sphi => sphi,
            Quantity::Sy => sphi * (f / nu).powi(2),
            Quantity::Sx => sphi / (2.0 * PI * nu).powi(2),
        },
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * b.abs()
    }

    /// IEEE Std 1139 definitions, checked value by value (analytic).
    #[test]
    fn conversions_are_exact_and_invertible() {
        let nu0 = 10e6;
        let s = Spectrum::new(
            vec![1.0, 10.0, 1e3, 1e6],
            vec![-90.0, -120.0, -150.0, -160.0],
            Quantity::Lf,
            Some(nu0),
        )
        .unwrap();
        let sphi = s.to(Quantity::Sphi).unwrap();
        assert!(close(sphi.values[2], 2e-15, 1e-12));
        let sy = s.to(Quantity::Sy).unwrap();
        assert!(close(sy.values[2], 2e-15 * (1e3 / nu0).powi(2), 1e-12));
        let sx = s.to(Quantity::Sx).unwrap();
        assert!(close(sx.values[2], 2e-15 / (2.0 * PI * nu0).powi(2), 1e-12));
        // S_y = (2πf)² S_x without the carrier.
        let mut sx_nc = sx.clone();
        sx_nc.carrier = None;
        let sy2 = sx_nc.to(Quantity::Sy).unwrap();
        for (a, b) in sy2.values.iter().zip(&sy.values) {
            assert!(close(*a, *b, 1e-12));
        }
        for q in [Quantity::Sphi, Quantity::Sy, Quantity::Sx] {
            let back = s.to(q).unwrap().to(Quantity::Lf).unwrap();
            for (a, b) in back.values.iter().zip(&s.values) {
                assert!((a - b).abs() < 1e-9, "{q:?}: {a} vs {b}");
            }
        }
        assert!(sx_nc.to(Quantity::Lf).is_err(), "carrier needed");
    }

    #[test]
    fn rejects_bad_spectra() {
        assert!(Spectrum::new(vec![1.0], vec![-100.0], Quantity::Lf, None).is_err());
        assert!(Spectrum::new(vec![1.0, 1.0], vec![-1.0, -1.0], Quantity::Lf, None).is_err());
        assert!(Spectrum::new(vec![0.0, 1.0], vec![-1.0, -1.0], Quantity::Lf, None).is_err());
        assert!(Spectrum::new(vec![1.0, 2.0], vec![1.0, 0.0], Quantity::Sy, None).is_err());
        assert!(Spectrum::new(vec![1.0, 2.0], vec![1.0, 1.0], Quantity::Sy, Some(-1.0)).is_err());
    }

    /// A model sampled to L(f) is L = 10·log10(S_φ/2) exactly (IEEE Std 1139).
    #[test]
    fn model_to_lf_is_exact() {
        let m = PowerLaw::parse("h2=1e-26,h0=1e-22,h-2=1e-30", 1e6).unwrap();
        let s = Spectrum::from_model(&m, Quantity::Lf, Some(10e6), 1.0, 1e6, 10).unwrap();
        assert_eq!(s.f.len(), 61);
        for (f, l) in s.f.iter().zip(&s.values) {
            let want = 10.0 * (m.sphi(*f, 10e6) / 2.0).log10();
            assert!((l - want).abs() < 1e-9);
            assert!((l - m.lf(*f, 10e6)).abs() < 1e-9);
        }
    }
}
