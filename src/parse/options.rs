//! The other option values of the command line, each read one way: counts
//! (`2000`, `1e6`), the time column (`3`, `none`), the snap fraction, MAD
//! limits, segment overlaps, comment characters, temperature coefficients
//! and swings (with their kelvin), standard uncertainties and τ ranges
//! (`1s:3h`, with units). Each refusal is a [`UnitError`] naming the text
//! and what was expected (a bad command line: exit 2).

use super::{Duration, Fraction};
use crate::units::UnitError;

/// The time column of a record (`--time-column N|none`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TimeColumn {
    /// 1-based column number.
    Number(usize),
    /// Readings without stamps.
    None,
}

/// `--time-column`: a column number from 1, or `none`.
pub fn time_column(text: &str) -> std::result::Result<TimeColumn, UnitError> {
    let t = text.trim();
    if t.eq_ignore_ascii_case("none") {
        return Ok(TimeColumn::None);
    }
    match t.parse::<usize>() {
        Ok(n) if n >= 1 => Ok(TimeColumn::Number(n)),
        _ => Err(UnitError::Bad {
            text: t.to_string(),
            what: "time column",
            expected: "a column number (1, 2, …) or none",
        }),
    }
}

/// `--snap=FRAC`: a fraction of τ0 above 0 and below 0.5.
pub fn snap_fraction(text: &str) -> std::result::Result<f64, UnitError> {
    let t = text.trim();
    match t.parse::<f64>() {
        Ok(f) if f > 0.0 && f < 0.5 => Ok(f),
        _ => Err(UnitError::OutOfRange {
            text: t.to_string(),
            what: "the snap fraction",
            range: "a fraction of τ0 above 0 and below 0.5 (e.g. --snap=0.25)",
        }),
    }
}

/// A limit in scaled MADs (`--outliers K`): a positive number.
pub fn mad_limit(text: &str) -> std::result::Result<f64, UnitError> {
    let t = text.trim();
    match t.parse::<f64>() {
        Ok(k) if k.is_finite() && k > 0.0 => Ok(k),
        _ => Err(UnitError::NotPositive {
            text: t.to_string(),
            what: "number of scaled MADs (e.g. 5)",
        }),
    }
}

/// An overlap of consecutive segments (`--overlap`): 0 ≤ FRAC < 1.
pub fn overlap_fraction(text: &str) -> std::result::Result<f64, UnitError> {
    let t = text.trim();
    match t.parse::<f64>() {
        Ok(f) if (0.0..1.0).contains(&f) => Ok(f),
        _ => Err(UnitError::OutOfRange {
            text: t.to_string(),
            what: "the overlap",
            range: "a fraction of a segment from 0 to below 1 (e.g. 0.5)",
        }),
    }
}

/// `--comment CHARS`: characters that may start a comment line.
pub fn comment_chars(text: &str) -> std::result::Result<String, UnitError> {
    crate::io::text::CommentStyle::with_extra(text)
        .map(|_| text.to_string())
        .map_err(|m| UnitError::Invalid {
            text: text.to_string(),
            reason: format!("'{text}': {m}"),
        })
}

/// A count on the command line (`--paths`, `--steps`, `--per-decade`, …):
/// a whole number, also in exponent form (`2000`, `1e6`). Each command
/// bounds its counts by the memory they would need; this only reads them.
pub fn count(text: &str) -> std::result::Result<usize, String> {
    let t = text.trim();
    if let Ok(n) = t.parse::<usize>() {
        return Ok(n);
    }
    match t.parse::<f64>() {
        Ok(v) if v.is_finite() && v >= 0.0 && v.fract() == 0.0 && v < 1.8e19 => Ok(v as usize),
        _ => Err(format!("'{text}' is not a whole number (e.g. 2000 or 1e6)")),
    }
}

/// `--temp-coeff`: a temperature coefficient of frequency per kelvin
/// (`1e-11/K`); the kelvin is required, like every number that decides.
pub fn temp_coeff(text: &str) -> std::result::Result<f64, UnitError> {
    kelvin(text, "/K", "a number per kelvin (e.g. 1e-11/K)")
}

/// `--temp-swing`: a temperature swing in kelvin (`5K`).
pub fn temp_swing(text: &str) -> std::result::Result<f64, UnitError> {
    kelvin(text, "K", "a number of kelvin (e.g. 5K)")
}

pub fn kelvin(
    text: &str,
    unit: &str,
    expected: &'static str,
) -> std::result::Result<f64, UnitError> {
    let t = text.trim();
    let Some(num) = t.strip_suffix(unit) else {
        return Err(UnitError::Invalid {
            text: t.to_string(),
            reason: format!("'{t}' has no unit: give a unit, e.g. {expected}"),
        });
    };
    num.trim()
        .parse::<f64>()
        .ok()
        .filter(|v| v.is_finite())
        .ok_or_else(|| UnitError::Bad {
            text: t.to_string(),
            what: "temperature value",
            expected,
        })
}

/// `--y0-sigma`: a standard uncertainty, ≥ 0.
pub fn non_negative_fraction(text: &str) -> std::result::Result<Fraction, UnitError> {
    let f: Fraction = text.parse()?;
    if f.value() >= 0.0 {
        Ok(f)
    } else {
        Err(UnitError::OutOfRange {
            text: text.trim().to_string(),
            what: "a standard uncertainty",
            range: "≥ 0",
        })
    }
}

/// `FROM:TO`, two durations with their units (`1s:3h`).
pub fn parse_tau_range(text: &str) -> std::result::Result<(f64, f64), UnitError> {
    let t = text.trim();
    let (a, b) = t.split_once(':').ok_or_else(|| UnitError::Bad {
        text: t.to_string(),
        what: "τ range",
        expected: "FROM:TO with units, e.g. 1s:3h",
    })?;
    let (a, b) = (
        Duration::positive_with_unit(a)?.seconds(),
        Duration::positive_with_unit(b)?.seconds(),
    );
    if b < a {
        return Err(UnitError::OutOfRange {
            text: t.to_string(),
            what: "a τ range FROM:TO",
            range: "0 < FROM ≤ TO (e.g. 1s:3h)",
        });
    }
    Ok((a, b))
}

/// `--points`: a positive whole number, also in exponent form (`1e6`).
pub fn points(text: &str) -> Result<usize, UnitError> {
    let t = text.trim();
    let bad = || UnitError::Bad {
        text: t.to_string(),
        what: "number of points",
        expected: "a positive whole number (e.g. 100000 or 1e6)",
    };
    if let Ok(n) = t.parse::<usize>() {
        return if n > 0 { Ok(n) } else { Err(bad()) };
    }
    let v: f64 = t.parse().map_err(|_| bad())?;
    if v.is_finite() && v >= 1.0 && v.fract() == 0.0 && v <= 1e18 {
        Ok(v as usize)
    } else {
        Err(bad())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_and_points() {
        assert_eq!(points("1e6").unwrap(), 1_000_000);
        assert!(points("0").is_err());
        assert!(points("2.5").is_err());
        assert_eq!(count("2000").unwrap(), 2000);
        assert_eq!(count("1e6").unwrap(), 1_000_000);
        assert!(count("-1").is_err());
    }

    #[test]
    fn tau_ranges_need_units_and_order() {
        assert_eq!(parse_tau_range("1s:3h").unwrap(), (1.0, 10800.0));
        assert!(parse_tau_range("1:3").is_err());
        assert!(parse_tau_range("3h:1s").is_err());
    }
}
