//! Power-law noise models written in h_α notation.

use crate::model::PowerLaw;
use crate::units::UnitError;
use std::fmt;
use std::str::FromStr;

/// A power-law model as written: `h0=1e-22,h-1=3e-26,h-2=1e-31[,fh=0.5]`
/// (IEEE Std 1139: S_y(f) = Σ h_α f^α for α = −2 … 2 below f_h). Terms are
/// separated by `,` `;` or spaces; unnamed terms are zero; `fh` takes a
/// frequency with its unit or plain hertz. The cut-off stays `None` when not
/// given: the user of the model supplies its default
/// ([`Model::power_law`]; for time records the Nyquist frequency 1/(2τ0)).
///
/// ```
/// use tauwise::parse::Model;
/// let m: Model = "h0=1e-22,h-2=1e-30".parse().unwrap();
/// assert_eq!(m.power_law(0.5).get(-2), 1e-30);
/// assert_eq!(m.f_h, None);
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Model {
    /// h_−2 … h_2 (`h[k]` is h_α with α = k − 2), 1/Hz at f = 1 Hz.
    pub h: [f64; 5],
    /// High-frequency cut-off f_h in Hz, when given.
    pub f_h: Option<f64>,
}

impl Model {
    /// The model with `default_fh` as its cut-off unless it names one.
    pub fn power_law(&self, default_fh: f64) -> PowerLaw {
        PowerLaw {
            h: self.h,
            f_h: self.f_h.unwrap_or(default_fh),
        }
    }
}

impl FromStr for Model {
    type Err = UnitError;
    fn from_str(text: &str) -> Result<Self, UnitError> {
        let invalid = |reason: String| UnitError::Invalid {
            text: text.to_string(),
            reason,
        };
        let mut m = Model {
            h: [0.0; 5],
            f_h: None,
        };
        let mut any = false;
        for part in text.split([',', ';', ' ']).filter(|p| !p.trim().is_empty()) {
            let (key, val) = part.split_once('=').ok_or_else(|| {
                invalid(format!(
                    "model term '{part}' is not of the form h<α>=<value> (e.g. h0=1e-22,h-1=3e-26)"
                ))
            })?;
            let (key, val) = (key.trim(), val.trim());
            if key.eq_ignore_ascii_case("fh") {
                let f = super::Frequency::positive(val)
                    .map_err(|e| invalid(format!("model fh: {e}")))?;
                m.f_h = Some(f.hertz());
                continue;
            }
            let alpha: i32 = key
                .strip_prefix('h')
                .and_then(|a| a.parse().ok())
                .filter(|a| (-2..=2).contains(a))
                .ok_or_else(|| {
                    invalid(format!(
                        "model term '{key}' is not one of h2 h1 h0 h-1 h-2 fh"
                    ))
                })?;
            let v: f64 = val
                .parse()
                .map_err(|_| invalid(format!("model value '{val}' for {key} is not a number")))?;
            if !(v.is_finite() && v >= 0.0) {
                return Err(invalid(format!(
                    "model value for {key} must be a non-negative number, got '{val}'"
                )));
            }
            m.h[(alpha + 2) as usize] = v;
            any = true;
        }
        if !any {
            return Err(invalid(format!(
                "model '{text}' names no term: expected e.g. h0=1e-22,h-1=3e-26"
            )));
        }
        Ok(m)
    }
}

impl fmt::Display for Model {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let mut parts: Vec<String> = (0..5)
            .rev()
            .filter(|&k| self.h[k] > 0.0)
            .map(|k| format!("h{}={:e}", k as i32 - 2, self.h[k]))
            .collect();
        if let Some(fh) = self.f_h {
            parts.push(format!("fh={fh}"));
        }
        write!(f, "{}", parts.join(","))
    }
}
