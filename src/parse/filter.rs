//! Weighting filters on a jitter integral, one parser for the command line
//! and the DUT file:
//!
//! | text | weighting |
//! |---|---|
//! | `highpass:ORDER:FC`, `hp:…` | Butterworth high-pass, order 1 … 8 |
//! | `lowpass:ORDER:FC`, `lp:…` | Butterworth low-pass, order 1 … 8 |
//! | `pll:FN:ZETA` | what a type-2 PLL passes, \|H\|² |
//! | `cdr:FN:ZETA` | what a clock-recovery loop leaves, \|1 − H\|² |
//! | `pll-diff:FN1:ZETA1:FN2:ZETA2:DELAY` | \|H₁e^{−sT} − H₂\|² |
//!
//! A loop's `FN:ZETA` may be written `bw=F3DB:peak=PDB` instead (its −3 dB
//! bandwidth and peaking in dB): `pll:bw=4MHz:peak=0.1dB`. The formulas are
//! in [`crate::spectrum::weighting`].

use crate::spectrum::weighting::{SecondOrderLoop, Weighting};
use crate::units::UnitError;
use std::fmt;
use std::ops::RangeInclusive;
use std::str::FromStr;

/// The weighting filter as it is parsed: [`Weighting`].
///
/// ```
/// use tauwise::parse::Filter;
/// let f: Filter = "highpass:2:12k".parse().unwrap();
/// assert_eq!(f, Filter::HighPass { order: 2, fc: 12e3 });
/// assert!("highpass:9:12k".parse::<Filter>().is_err());
/// let l: Filter = "cdr:bw=4MHz:peak=0.1dB".parse().unwrap();
/// assert!((l.h2(4e9) - 1.0).abs() < 1e-3); // a clock-recovery loop leaves what is far above it
/// ```
pub type Filter = Weighting;

/// The Butterworth orders accepted everywhere (command line and DUT file).
///
/// 1 … 8: the weighting filters that jitter specifications name are of
/// first to third order (from memory: ITU-T O.172 and the IEEE 802.3
/// jitter filters use 20–60 dB/decade skirts), so 8 leaves room for any
/// steeper weighting one meets, while a steeper one than that is a band
/// edge, which `FROM:TO` already expresses exactly. Orders up to 20 were once
/// accepted on the command line and refused in the DUT file; one range now.
pub const FILTER_ORDERS: RangeInclusive<u32> = 1..=8;

const FILTER_EXPECTED: &str = "highpass:ORDER:FC or lowpass:ORDER:FC with ORDER 1 … 8 \
(e.g. highpass:1:12k), pll:FN:ZETA, cdr:FN:ZETA (or pll:bw=F3DB:peak=PDB), \
or pll-diff:FN1:ZETA1:FN2:ZETA2:DELAY";

/// One loop from two fields: `FN:ZETA` or `bw=F3DB:peak=PDB`.
fn parse_loop(text: &str, a: &str, b: &str) -> Result<SecondOrderLoop, UnitError> {
    let invalid = |reason: String| UnitError::Invalid {
        text: text.to_string(),
        reason: format!("filter '{text}': {reason}"),
    };
    // Only the key is case-blind: `4MHz` and `4mHz` differ.
    let strip = |t: &'_ str, key: &str| -> Option<String> {
        (t.len() >= key.len() && t[..key.len()].eq_ignore_ascii_case(key))
            .then(|| t[key.len()..].to_string())
    };
    if let Some(bw) = strip(a, "bw=") {
        let bw = super::Frequency::positive(bw.trim())
            .map_err(|e| invalid(format!("loop bandwidth {e}")))?
            .hertz();
        let peak = strip(b, "peak=")
            .ok_or_else(|| invalid("after bw=F3DB give peak=PDB (e.g. peak=0.1dB)".into()))?;
        let peak = peak.trim();
        let peak = match peak.len().checked_sub(2) {
            Some(n) if peak.is_char_boundary(n) && peak[n..].eq_ignore_ascii_case("db") => {
                peak[..n].trim()
            }
            _ => peak,
        };
        let peak: f64 = peak
            .parse()
            .map_err(|_| invalid(format!("peaking '{b}' is not a number of dB")))?;
        SecondOrderLoop::from_bandwidth(bw, peak).map_err(|e| invalid(e.to_string()))
    } else {
        let fnat = super::Frequency::positive(a)
            .map_err(|e| invalid(format!("loop natural frequency {e}")))?
            .hertz();
        let zeta: f64 = b
            .parse()
            .map_err(|_| invalid(format!("damping factor '{b}' is not a number")))?;
        SecondOrderLoop::new(fnat, zeta).map_err(|e| invalid(e.to_string()))
    }
}

impl FromStr for Weighting {
    type Err = UnitError;
    fn from_str(text: &str) -> Result<Self, UnitError> {
        let t = text.trim();
        let bad = || UnitError::Bad {
            text: t.to_string(),
            what: "weighting filter",
            expected: FILTER_EXPECTED,
        };
        let parts: Vec<&str> = t.split(':').map(str::trim).collect();
        let kind = parts[0].to_ascii_lowercase();
        match (kind.as_str(), &parts[1..]) {
            ("highpass" | "hp" | "lowpass" | "lp", [order, corner]) => {
                let order: u32 = order.parse().map_err(|_| bad())?;
                if !FILTER_ORDERS.contains(&order) {
                    return Err(UnitError::OutOfRange {
                        text: t.to_string(),
                        what: "the filter order",
                        range: "a whole number from 1 to 8",
                    });
                }
                let fc = super::Frequency::positive(corner)
                    .map_err(|e| UnitError::Invalid {
                        text: t.to_string(),
                        reason: format!("filter '{t}': corner {e}"),
                    })?
                    .hertz();
                Ok(if kind.starts_with('h') {
                    Weighting::HighPass { order, fc }
                } else {
                    Weighting::LowPass { order, fc }
                })
            }
            ("pll", [a, b]) => Ok(Weighting::Pll(parse_loop(t, a, b)?)),
            ("cdr", [a, b]) => Ok(Weighting::Cdr(parse_loop(t, a, b)?)),
            ("pll-diff", [a1, b1, a2, b2, delay]) => {
                // A delay needs its unit (`3` would be 3 s where 3 ns was
                // meant); zero needs none.
                let delay_s = super::Duration::with_unit(delay)
                    .ok()
                    .filter(|d| d.seconds() >= 0.0 && d.seconds().is_finite())
                    .ok_or_else(|| UnitError::Invalid {
                        text: t.to_string(),
                        reason: format!(
                            "filter '{t}': delay '{delay}' is not a duration of 0 or more with its unit (e.g. 2ns)"
                        ),
                    })?
                    .seconds();
                Ok(Weighting::PllDiff {
                    first: parse_loop(t, a1, b1)?,
                    second: parse_loop(t, a2, b2)?,
                    delay_s,
                })
            }
            _ => Err(bad()),
        }
    }
}

/// Text that parses back to the same weighting (loops in their `FN:ZETA`
/// form).
impl fmt::Display for Weighting {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let lp = |l: &SecondOrderLoop| format!("{}Hz:{}", l.natural_hz, l.damping);
        match self {
            Weighting::HighPass { order, fc } => write!(f, "highpass:{order}:{fc}Hz"),
            Weighting::LowPass { order, fc } => write!(f, "lowpass:{order}:{fc}Hz"),
            Weighting::Pll(l) => write!(f, "pll:{}", lp(l)),
            Weighting::Cdr(l) => write!(f, "cdr:{}", lp(l)),
            Weighting::PllDiff {
                first,
                second,
                delay_s,
            } => write!(f, "pll-diff:{}:{}:{delay_s}s", lp(first), lp(second)),
        }
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

    #[test]
    fn loops() {
        for ok in [
            "pll:1MHz:0.707",
            "cdr:4M:0.8",
            "pll-diff:2M:0.7:10M:0.9:3ns",
            "pll-diff:2M:0.7:2M:0.7:0",
        ] {
            let f: Filter = ok.parse().unwrap();
            assert_eq!(f.to_string().parse::<Filter>().unwrap(), f, "{ok}");
        }
        let f: Filter = "pll:bw=4MHz:peak=0.1dB".parse().unwrap();
        let Weighting::Pll(l) = f else { panic!() };
        assert!((l.bandwidth_3db() / 4e6 - 1.0).abs() < 1e-9);
        assert!((l.peaking_db() - 0.1).abs() < 1e-9);
        assert_eq!(l.given_as, Some((4e6, 0.1)));
        for bad in [
            "pll:1MHz",
            "pll:-1MHz:0.7",
            "pll:1MHz:-0.7",
            "pll:1MHz:zero",
            "cdr:bw=1M:0.7",
            "cdr:bw=1M:peak=0dB",
            "pll-diff:2M:0.7:10M:0.9",
            "pll-diff:2M:0.7:10M:0.9:-1ns",
            "pll-diff:2M:0.7:10M:0.9:soon",
            "pll-diff:2M:0.7:10M:0.9:3",
        ] {
            let e = bad.parse::<Filter>().unwrap_err();
            assert!(e.to_string().contains(bad.trim()), "{bad}: {e}");
        }
    }
}
