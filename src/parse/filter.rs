//! Butterworth weighting filters on a jitter integral:
//! `highpass:ORDER:CORNER` or `lowpass:ORDER:CORNER` (`hp`/`lp` for short).

use crate::units::UnitError;
use serde::Serialize;
use std::fmt;
use std::ops::RangeInclusive;
use std::str::FromStr;

/// The filter orders accepted everywhere (command line and DUT file).
///
/// 1 … 8: the weighting filters that jitter specifications name are of
/// first to third order (from memory: ITU-T O.172 and the IEEE 802.3
/// jitter filters use 20–60 dB/decade skirts), so 8 leaves room for any
/// steeper weighting one meets, while a steeper one than that is a band
/// edge, which `FROM:TO` already expresses exactly. Orders up to 20 were once
/// accepted on the command line and refused in the DUT file; one range now.
pub const FILTER_ORDERS: RangeInclusive<u32> = 1..=8;

/// A Butterworth magnitude weighting of order n and corner f_c:
/// high-pass |H|² = 1/(1 + (f_c/f)^{2n}), low-pass |H|² = 1/(1 + (f/f_c)^{2n})
/// (the maximally flat magnitude; S. Butterworth, 1930).
///
/// ```
/// use tauwise::parse::Filter;
/// let f: Filter = "highpass:2:12k".parse().unwrap();
/// assert!(f.highpass && f.order == 2 && f.corner == 12e3);
/// assert!("highpass:9:12k".parse::<Filter>().is_err());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Filter {
    /// High-pass (true) or low-pass (false).
    pub highpass: bool,
    /// Filter order n, in [`FILTER_ORDERS`].
    pub order: u32,
    /// Corner frequency f_c in Hz (> 0).
    pub corner: f64,
}

const FILTER_EXPECTED: &str =
    "highpass:ORDER:FC or lowpass:ORDER:FC with ORDER 1 … 8 (e.g. highpass:1:12k)";

impl FromStr for Filter {
    type Err = UnitError;
    fn from_str(text: &str) -> Result<Self, UnitError> {
        let t = text.trim();
        let bad = || UnitError::Bad {
            text: t.to_string(),
            what: "weighting filter",
            expected: FILTER_EXPECTED,
        };
        let parts: Vec<&str> = t.split(':').map(str::trim).collect();
        let [kind, order, corner] = parts[..] else {
            return Err(bad());
        };
        let highpass = match kind.to_ascii_lowercase().as_str() {
            "highpass" | "hp" => true,
            "lowpass" | "lp" => false,
            _ => return Err(bad()),
        };
        let order: u32 = order.parse().map_err(|_| bad())?;
        if !FILTER_ORDERS.contains(&order) {
            return Err(UnitError::OutOfRange {
                text: t.to_string(),
                what: "the filter order",
                range: "a whole number from 1 to 8",
            });
        }
        let corner = super::Frequency::positive(corner)
            .map_err(|e| UnitError::Invalid {
                text: t.to_string(),
                reason: format!("filter '{t}': corner {e}"),
            })?
            .hertz();
        Ok(Filter {
            highpass,
            order,
            corner,
        })
    }
}

impl fmt::Display for Filter {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let kind = if self.highpass { "highpass" } else { "lowpass" };
        write!(f, "{kind}:{}:{}Hz", self.order, self.corner)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn one_order_range() {
        for ok in ["hp:1:12k", "lowpass:8:20MHz", " LP : 3 : 1.5M "] {
            let f: Filter = ok.parse().unwrap();
            assert_eq!(f.to_string().parse::<Filter>().unwrap(), f, "{ok}");
        }
        for bad in [
            "highpass:0:1k",
            "highpass:9:1k",
            "highpass:20:1k",
            "highpass:1.5:1k",
            "bandpass:1:1k",
            "highpass:1:-1k",
            "highpass:1:0",
            "highpass:1",
            "highpass:1:1k:2",
        ] {
            let e = bad.parse::<Filter>().unwrap_err();
            assert!(e.to_string().contains(bad.trim()), "{bad}: {e}");
        }
    }
}
