//! Quantities with units: durations, frequencies, fractional frequencies,
//! rates (fractional frequency per time) and probabilities.
//!
//! The number part follows Rust's `f64` grammar (`1e-3`, `-2.5`); the units
//! are those of [`crate::units`] (SI prefixes; min, h, d, week, month = 30 d,
//! year = 365.25 d; ppm = 1e-6, ppb = 1e-9, ppt = 1e-12).

use crate::units::{self, UnitError};
use serde::{Serialize, Serializer};
use std::fmt;
use std::str::FromStr;

/// A duration in seconds, and whether it was written with its unit.
///
/// A bare number is seconds (`--tau0 0.5`); where a duration decides a
/// verdict (a budget, a span) the unit is required:
/// [`Duration::positive_with_unit`].
///
/// ```
/// use tauwise::parse::Duration;
/// let d: Duration = "150fs".parse().unwrap();
/// assert_eq!(d.seconds(), 150e-15);
/// assert_eq!("1week".parse::<Duration>().unwrap().seconds(), 604800.0);
/// assert!(Duration::positive_with_unit("1.5").is_err());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
pub struct Duration {
    seconds: f64,
    with_unit: bool,
}

impl Duration {
    /// The duration in seconds.
    pub fn seconds(self) -> f64 {
        self.seconds
    }
    /// Whether the text carried a unit (`1s`, not `1`).
    pub fn has_unit(self) -> bool {
        self.with_unit
    }
    /// A duration that must be above zero (τ0, a wrap period, a window).
    pub fn positive(text: &str) -> Result<Self, UnitError> {
        let d: Duration = text.parse()?;
        if d.seconds > 0.0 {
            Ok(d)
        } else {
            Err(UnitError::NotPositive {
                text: text.trim().to_string(),
                what: "duration",
            })
        }
    }
    /// A duration that decides a verdict: its unit is required (zero needs
    /// none: `0` is the same in every unit) — `--budget 1.5` read as
    /// seconds once turned a FAIL into a PASS.
    pub fn with_unit(text: &str) -> Result<Self, UnitError> {
        Ok(Duration {
            seconds: units::parse_duration_with_unit(text)?,
            with_unit: true,
        })
    }
    /// A duration that decides a verdict and must be above zero (a budget,
    /// a holdover span).
    pub fn positive_with_unit(text: &str) -> Result<Self, UnitError> {
        let d = Self::with_unit(text)?;
        if d.seconds > 0.0 {
            Ok(d)
        } else {
            Err(UnitError::NotPositive {
                text: text.trim().to_string(),
                what: "duration with its unit (e.g. 1.5us, 24h)",
            })
        }
    }
}

impl FromStr for Duration {
    type Err = UnitError;
    fn from_str(text: &str) -> Result<Self, UnitError> {
        let seconds = units::parse_duration(text)?;
        let with_unit = text
            .trim()
            .chars()
            .last()
            .is_some_and(|c| c.is_alphabetic());
        Ok(Duration { seconds, with_unit })
    }
}

impl fmt::Display for Duration {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}s", self.seconds)
    }
}

impl Serialize for Duration {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_f64(self.seconds)
    }
}

/// A frequency in hertz (`10MHz`, `156.25M`, `12k`, `1mHz`, `5µHz`, plain
/// hertz).
///
/// ```
/// use tauwise::parse::Frequency;
/// assert_eq!("10MHz".parse::<Frequency>().unwrap().hertz(), 10e6);
/// assert_eq!("5µHz".parse::<Frequency>().unwrap().hertz(), 5e-6);
/// assert!(Frequency::positive("0Hz").is_err());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
pub struct Frequency(f64);

impl Frequency {
    /// The frequency in hertz.
    pub fn hertz(self) -> f64 {
        self.0
    }
    /// A frequency that must be above zero (a carrier, a corner, a band edge).
    pub fn positive(text: &str) -> Result<Self, UnitError> {
        let f: Frequency = text.parse()?;
        if f.0 > 0.0 {
            Ok(f)
        } else {
            Err(UnitError::NotPositive {
                text: text.trim().to_string(),
                what: "frequency",
            })
        }
    }
}

impl FromStr for Frequency {
    type Err = UnitError;
    fn from_str(text: &str) -> Result<Self, UnitError> {
        units::parse_frequency(text).map(Frequency)
    }
}

impl fmt::Display for Frequency {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}Hz", self.0)
    }
}

impl Serialize for Frequency {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_f64(self.0)
    }
}

/// A fractional frequency (dimensionless): `1e-9`, `2ppb`, `-0.5ppt`,
/// `3e-7frac`.
///
/// ```
/// use tauwise::parse::Fraction;
/// assert_eq!("2ppb".parse::<Fraction>().unwrap().value(), 2e-9);
/// ```
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
pub struct Fraction(f64);

impl Fraction {
    /// The fraction.
    pub fn value(self) -> f64 {
        self.0
    }
}

impl FromStr for Fraction {
    type Err = UnitError;
    fn from_str(text: &str) -> Result<Self, UnitError> {
        units::parse_fraction(text).map(Fraction)
    }
}

impl fmt::Display for Fraction {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.0)
    }
}

impl Serialize for Fraction {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_f64(self.0)
    }
}

/// A rate of fractional frequency per time — a drift or an aging:
/// `FRACTION/TIME` with the fraction as [`Fraction`] (ppm, ppb, ppt
/// allowed) and the time a unit (`/s /min /h /hour /d /day /week /month
/// /year`) or a duration with its unit (`/24h`, `/7d`). Stored per second.
///
/// The time is required: a bare `5e-11` could be per second or per day,
/// and an aging rate decides a holdover verdict. So is its unit: `/86400`
/// is refused.
///
/// ```
/// use tauwise::parse::Rate;
/// let r: Rate = "1ppb/day".parse().unwrap();
/// assert_eq!(r.per_second(), 1e-9 / 86400.0);
/// assert_eq!("5e-11/24h".parse::<Rate>().unwrap(), "5e-11/day".parse().unwrap());
/// assert!("5e-11".parse::<Rate>().is_err());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
pub struct Rate(f64);

/// What a rate looks like, for messages.
const RATE_EXPECTED: &str = "a fractional frequency per time, e.g. 5e-11/day, 1ppb/day, 2e-12/24h (times: s min h hour d day week month year)";

impl Rate {
    /// The rate in fractional frequency per second.
    pub fn per_second(self) -> f64 {
        self.0
    }
    /// A rate from fractional frequency per second.
    pub fn from_per_second(v: f64) -> Self {
        Rate(v)
    }
}

impl FromStr for Rate {
    type Err = UnitError;
    fn from_str(text: &str) -> Result<Self, UnitError> {
        let t = text.trim();
        let bad = || UnitError::Bad {
            text: t.to_string(),
            what: "rate",
            expected: RATE_EXPECTED,
        };
        let Some((num, per)) = t.split_once('/') else {
            return Err(UnitError::NoTime {
                text: t.to_string(),
            });
        };
        let value = units::parse_fraction(num).map_err(|_| bad())?;
        let per = per.trim();
        // `/day` is one day; `/24h` is a duration with its unit.
        let starts_with_number = per
            .chars()
            .next()
            .is_some_and(|c| c.is_ascii_digit() || c == '.');
        let per_s = if starts_with_number {
            units::parse_duration_with_unit(per).map_err(|e| match e {
                UnitError::NoUnit { .. } => UnitError::Invalid {
                    text: t.to_string(),
                    reason: format!(
                        "'{t}': the time of a rate needs its unit, e.g. /24h or /day (/{per} could be seconds or days)"
                    ),
                },
                _ => bad(),
            })?
        } else {
            units::time_unit_seconds(per)
                .filter(|_| !per.is_empty())
                .ok_or_else(bad)?
        };
        if !(per_s > 0.0 && per_s.is_finite()) {
            return Err(UnitError::NotPositive {
                text: t.to_string(),
                what: "time for the rate",
            });
        }
        let v = value / per_s;
        if !v.is_finite() {
            return Err(bad());
        }
        Ok(Rate(v))
    }
}

impl fmt::Display for Rate {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{:e}/s", self.0)
    }
}

impl Serialize for Rate {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_f64(self.0)
    }
}

/// A probability strictly between 0 and 1, e.g. the two-sided confidence
/// level of an interval (`0.683`, `0.95`).
///
/// ```
/// use tauwise::parse::Probability;
/// assert_eq!("0.95".parse::<Probability>().unwrap().value(), 0.95);
/// assert!("1".parse::<Probability>().is_err());
/// ```
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
pub struct Probability(f64);

impl Probability {
    /// The probability.
    pub fn value(self) -> f64 {
        self.0
    }
    /// A probability from a value in (0, 1) (`None` outside).
    pub fn new(p: f64) -> Option<Self> {
        (p > 0.0 && p < 1.0).then_some(Probability(p))
    }
}

impl FromStr for Probability {
    type Err = UnitError;
    fn from_str(text: &str) -> Result<Self, UnitError> {
        let t = text.trim();
        let p: f64 = t.parse().map_err(|_| UnitError::Bad {
            text: t.to_string(),
            what: "probability",
            expected: "a number strictly between 0 and 1 (e.g. 0.683, 0.95)",
        })?;
        Probability::new(p).ok_or_else(|| UnitError::OutOfRange {
            text: t.to_string(),
            what: "a probability",
            range: "strictly between 0 and 1 (e.g. 0.683, 0.95)",
        })
    }
}

impl fmt::Display for Probability {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.0)
    }
}

impl Serialize for Probability {
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.serialize_f64(self.0)
    }
}

/// The uncertainty of a phase-noise table in dB of L(f), from 0 to 20:
/// `2dB` or `2` (the command line's `--lf-uncertainty`, a DUT table's
/// `uncertainty`).
///
/// ```
/// assert_eq!(tauwise::parse::uncertainty_db("2dB").unwrap(), 2.0);
/// assert!(tauwise::parse::uncertainty_db("30dB").is_err());
/// ```
pub fn uncertainty_db(text: &str) -> Result<f64, UnitError> {
    let t = text.trim();
    let num = t.strip_suffix("dB").unwrap_or(t).trim();
    match num.parse::<f64>() {
        Ok(v) if v.is_finite() && (0.0..=20.0).contains(&v) => Ok(v),
        _ => Err(UnitError::OutOfRange {
            text: t.to_string(),
            what: "the table's uncertainty",
            range: "a number of dB from 0 to 20, e.g. 2dB",
        }),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Unit definitions (analytic: 1 day = 86 400 s, 1 week = 7 days,
    /// 1 ppb = 1e-9).
    #[test]
    fn rates() {
        let r = |t: &str| t.parse::<Rate>().map(Rate::per_second);
        assert_eq!(r("1ppb/day").unwrap(), 1e-9 / 86400.0);
        assert_eq!(r("5e-11/week").unwrap(), 5e-11 / 604800.0);
        assert_eq!(r("5e-11/24h").unwrap(), 5e-11 / 86400.0);
        assert_eq!(r("2e-12/hour").unwrap(), 2e-12 / 3600.0);
        assert_eq!(r("1e-16/s").unwrap(), 1e-16);
        assert_eq!(r(" -3ppt / d ").unwrap(), -3e-12 / 86400.0);
        assert_eq!(r("1e-8/year").unwrap(), 1e-8 / (365.25 * 86400.0));
        for bad in [
            "5e-11",
            "5e-11/86400",
            "1e-10/fortnight",
            "fast/day",
            "1e-10/",
            "1e-10/0s",
        ] {
            let e = r(bad).unwrap_err();
            assert!(e.to_string().contains(bad.trim()), "{bad}: {e}");
        }
        assert!(matches!(
            "5e-11".parse::<Rate>(),
            Err(UnitError::NoTime { .. })
        ));
    }

    #[test]
    fn durations_and_units() {
        let d = |t: &str| t.parse::<Duration>().unwrap();
        assert_eq!(d("150fs").seconds(), 150e-15);
        assert!(d("150fs").has_unit());
        assert!(!d("2.5").has_unit());
        assert_eq!(d("2weeks").seconds(), 14.0 * 86400.0);
        assert_eq!(d("3 hours").seconds(), 3.0 * 3600.0);
        assert!(Duration::positive("0s").is_err());
        assert!(Duration::positive("-1s").is_err());
        assert_eq!(Duration::with_unit("0").unwrap().seconds(), 0.0);
        assert!(matches!(
            Duration::positive_with_unit("1.5"),
            Err(UnitError::NoUnit { .. })
        ));
        assert_eq!(
            d("1.5us").to_string().parse::<Duration>().unwrap(),
            d("1.5us")
        );
    }

    #[test]
    fn frequencies_and_probabilities() {
        let f = |t: &str| t.parse::<Frequency>().unwrap().hertz();
        assert_eq!(f("1mHz"), 1e-3);
        assert_eq!(f("5uHz"), 5e-6);
        assert_eq!(f("2.5GHz"), 2.5e9);
        assert!(Frequency::positive("-1k").is_err());
        assert!("0".parse::<Probability>().is_err());
        assert!("nan".parse::<Probability>().is_err());
        assert_eq!("0.683".parse::<Probability>().unwrap().value(), 0.683);
    }
}
