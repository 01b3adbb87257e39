//! A measurement filter on a time-error record, one parser for the command
//! line (`wander --te-filter`) and the DUT file (`[wander] te_filter`):
//!
//! | text | filter |
//! |---|---|
//! | `lowpass:FC`, `lp:FC` | first-order low-pass at FC |
//! | `lowpass:ORDER:FC` | Butterworth low-pass of ORDER 1 … 8 |
//! | `highpass:FC`, `hp:FC`, `highpass:ORDER:FC` | the same, high-pass |
//!
//! FC is a frequency with its unit (`0.1Hz`, `100mHz`): a bare `0.1` is
//! refused, so that `lowpass:2` cannot be read as a 2 Hz corner when an
//! order was meant. The filter's form is in [`crate::wander::te::filter`].

use crate::units::UnitError;
use crate::wander::te::filter::{MeasurementFilter, Pass};
use std::str::FromStr;

/// The measurement filter as it is parsed: [`MeasurementFilter`].
///
/// ```
/// use tauwise::parse::TeFilter;
/// let f: TeFilter = "lowpass:0.1Hz".parse().unwrap();
/// assert_eq!((f.order, f.corner_hz), (1, 0.1));
/// let g: TeFilter = "hp:2:100mHz".parse().unwrap();
/// assert_eq!(g.to_string().parse::<TeFilter>().unwrap(), g);
/// assert!("lowpass:0.1".parse::<TeFilter>().is_err()); // no unit
/// ```
pub type TeFilter = MeasurementFilter;

const EXPECTED: &str = "lowpass:FC or highpass:FC, optionally with an order 1 … 8 \
(lowpass:ORDER:FC), FC a frequency with its unit (e.g. lowpass:0.1Hz, highpass:2:100mHz)";

impl FromStr for MeasurementFilter {
    type Err = UnitError;
    fn from_str(text: &str) -> Result<Self, UnitError> {
        let t = text.trim();
        let bad = || UnitError::Bad {
            text: t.to_string(),
            what: "measurement filter",
            expected: EXPECTED,
        };
        let parts: Vec<&str> = t.split(':').map(str::trim).collect();
        let pass = match parts[0].to_ascii_lowercase().as_str() {
            "lowpass" | "lp" => Pass::LowPass,
            "highpass" | "hp" => Pass::HighPass,
            _ => return Err(bad()),
        };
        let (order, corner) = match &parts[1..] {
            [c] => (1, *c),
            [o, c] => {
                let o: u32 = o.parse().map_err(|_| bad())?;
                if !super::FILTER_ORDERS.contains(&o) {
                    return Err(UnitError::OutOfRange {
                        text: t.to_string(),
                        what: "the filter order",
                        range: "a whole number from 1 to 8",
                    });
                }
                (o, *c)
            }
            _ => return Err(bad()),
        };
        if !corner.chars().last().is_some_and(char::is_alphabetic) {
            return Err(UnitError::Invalid {
                text: t.to_string(),
                reason: format!(
                    "filter '{t}': give the corner with its unit, e.g. 0.1Hz or 100mHz"
                ),
            });
        }
        let fc = super::Frequency::positive(corner)
            .map_err(|e| UnitError::Invalid {
                text: t.to_string(),
                reason: format!("filter '{t}': corner {e}"),
            })?
            .hertz();
        if !fc.is_finite() {
            return Err(bad());
        }
        Ok(MeasurementFilter {
            pass,
            order,
            corner_hz: fc,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn accepted_and_refused() {
        for (ok, pass, order, fc) in [
            ("lowpass:0.1Hz", Pass::LowPass, 1, 0.1),
            ("LP : 100mHz", Pass::LowPass, 1, 0.1),
            ("highpass:2:0.1Hz", Pass::HighPass, 2, 0.1),
            ("hp:8:1Hz", Pass::HighPass, 8, 1.0),
        ] {
            let f: TeFilter = ok.parse().unwrap();
            assert_eq!((f.pass, f.order), (pass, order), "{ok}");
            assert!((f.corner_hz - fc).abs() < 1e-15, "{ok}");
            assert_eq!(f.to_string().parse::<TeFilter>().unwrap(), f, "{ok}");
        }
        for bad in [
            "lowpass:0.1",
            "lowpass:2",
            "lowpass:0:0.1Hz",
            "lowpass:9:0.1Hz",
            "lowpass:1.5:0.1Hz",
            "bandpass:0.1Hz",
            "lowpass:-0.1Hz",
            "lowpass:0Hz",
            "lowpass",
            "lowpass:1:0.1Hz:3",
            "pll:1Hz:0.7",
        ] {
            let e = bad.parse::<TeFilter>().unwrap_err();
            assert!(e.to_string().contains(bad.trim()), "{bad}: {e}");
        }
    }
}
