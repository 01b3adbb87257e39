//! Units at the edges: parsing durations and frequencies written by people,
//! the phase and frequency units of input files, and SI-prefixed output.
//!
//! Inside tauwise everything is SI: seconds, hertz, fractional frequency
//! (dimensionless), rad²/Hz. Conversion happens only here.

use thiserror::Error;

/// A value written by a person (an option value, a DUT-file value) could
/// not be understood. One variant per cause; each names the text as given.
#[derive(Debug, Error, Clone, PartialEq)]
pub enum UnitError {
    /// The text is not a number followed by a known suffix.
    #[error("'{text}' is not a {what}: expected {expected}")]
    Bad {
        /// The text as given.
        text: String,
        /// What was being parsed ("duration", "frequency", …).
        what: &'static str,
        /// What would have been accepted.
        expected: &'static str,
    },
    /// A number that decides a verdict was given without its unit.
    #[error("'{text}' has no unit: give a unit, e.g. 1.5us / 24h (a bare number is refused where it decides a verdict)")]
    NoUnit {
        /// The text as given.
        text: String,
    },
    /// A rate was given without the time it is per.
    #[error("'{text}' has no time unit: give a unit, e.g. 5e-11/day, 1ppb/day, 2e-12/24h (a bare rate could be per second or per day)")]
    NoTime {
        /// The text as given.
        text: String,
    },
    /// The value must be above zero.
    #[error("'{text}': expected a positive {what}")]
    NotPositive {
        /// The text as given.
        text: String,
        /// What was being parsed.
        what: &'static str,
    },
    /// The value is outside the range this quantity takes.
    #[error("'{text}': {what} must be {range}")]
    OutOfRange {
        /// The text as given.
        text: String,
        /// The part out of range ("filter order", "confidence", …).
        what: &'static str,
        /// The accepted range in words.
        range: &'static str,
    },
    /// A list has an empty entry (`oadev,,mdev`).
    #[error("'{text}' has an empty entry: expected {what} separated by commas, e.g. {example}")]
    EmptyEntry {
        /// The list as given.
        text: String,
        /// What the entries are.
        what: &'static str,
        /// A valid list.
        example: &'static str,
    },
    /// A name that is not one of the known ones, or a value the quantity's
    /// own rules refuse (the reason says which).
    #[error("{reason}")]
    Invalid {
        /// The text as given.
        text: String,
        /// What was expected, with the text.
        reason: String,
    },
}

impl UnitError {
    /// The text the error is about, as given.
    pub fn text(&self) -> &str {
        match self {
            UnitError::Bad { text, .. }
            | UnitError::NoUnit { text }
            | UnitError::NoTime { text }
            | UnitError::NotPositive { text, .. }
            | UnitError::OutOfRange { text, .. }
            | UnitError::EmptyEntry { text, .. }
            | UnitError::Invalid { text, .. } => text,
        }
    }
}

fn bad(text: &str, what: &'static str, expected: &'static str) -> UnitError {
    UnitError::Bad {
        text: text.to_string(),
        what,
        expected,
    }
}

/// `value · scale`, exact to the last bit for the decimal submultiples: a
/// scale below 1 (10⁻³, 10⁻⁹, …) is applied as a division by its exact
/// reciprocal (10³, 10⁹, …), so that `150fs` is the double nearest to
/// 150·10⁻¹⁵, as the literal `150e-15` is.
pub fn scaled(value: f64, scale: f64) -> f64 {
    if scale < 1.0 && scale > 0.0 {
        value / (1.0 / scale).round()
    } else {
        value * scale
    }
}

/// Split `"2.5us"` into `(2.5, "us")`. The number part follows Rust's `f64`
/// grammar (including exponents such as `1e-3`).
fn split_number(text: &str) -> Option<(f64, &str)> {
    let t = text.trim();
    // Longest prefix that parses as a float.
    let bytes = t.as_bytes();
    let mut end = 0;
    let mut best: Option<(f64, usize)> = None;
    while end < bytes.len() {
        end += 1;
        if !t.is_char_boundary(end) {
            continue;
        }
        let head = &t[..end];
        // Avoid taking the 'e' of a suffix such as "1e" without digits.
        if let Ok(v) = head.parse::<f64>() {
            if head
                .chars()
                .all(|c| c.is_ascii_digit() || "+-.eE".contains(c))
            {
                best = Some((v, end));
            }
        }
    }
    let (v, n) = best?;
    Some((v, t[n..].trim()))
}

const DURATION_EXPECTED: &str =
    "a number of seconds or a number with one of fs ps ns us µs ms s min h d week month year (e.g. 100ms, 2.5us, 24h, 2d)";

/// Seconds in one of the time units people write after a number: the SI
/// submultiples of the second down to fs, and min, h, d (day), week, month
/// (30 d) and year (365.25 d, the Julian year of the IAU). `None` for an
/// unknown unit; the empty unit is the second.
pub fn time_unit_seconds(unit: &str) -> Option<f64> {
    Some(match unit {
        "" | "s" | "sec" | "secs" | "second" | "seconds" => 1.0,
        "fs" => 1e-15,
        "ps" => 1e-12,
        "ns" => 1e-9,
        "us" | "µs" | "μs" => 1e-6,
        "ms" => 1e-3,
        "m" | "min" | "mins" | "minute" | "minutes" => 60.0,
        "h" | "hr" | "hrs" | "hour" | "hours" => 3600.0,
        "d" | "day" | "days" => 86400.0,
        "wk" | "week" | "weeks" => 7.0 * 86400.0,
        "month" | "months" => 30.0 * 86400.0,
        "yr" | "year" | "years" => 365.25 * 86400.0,
        _ => return None,
    })
}

/// Parse a duration such as `1s`, `100ms`, `2.5us`, `24h`, `2d` or plain
/// seconds (`0.001`). Returns seconds.
///
/// ```
/// use tauwise::units::parse_duration;
/// assert_eq!(parse_duration("100ms").unwrap(), 0.1);
/// assert_eq!(parse_duration("2d").unwrap(), 172800.0);
/// assert!(parse_duration("3 fortnights").is_err());
/// ```
pub fn parse_duration(text: &str) -> Result<f64, UnitError> {
    let (v, suffix) = split_number(text).ok_or_else(|| bad(text, "duration", DURATION_EXPECTED))?;
    let scale =
        time_unit_seconds(suffix).ok_or_else(|| bad(text, "duration", DURATION_EXPECTED))?;
    let s = scaled(v, scale);
    if !s.is_finite() {
        return Err(bad(text, "duration", DURATION_EXPECTED));
    }
    Ok(s)
}

/// Parse a duration that decides a verdict — a budget, a span, a mask or
/// limit value — as [`parse_duration`] does, but refuse a bare number
/// ([`UnitError::NoUnit`]): `--budget 1.5` read as seconds once turned a
/// FAIL into a PASS. Zero needs no unit (`0` is the same in every unit).
///
/// ```
/// use tauwise::units::parse_duration_with_unit;
/// assert_eq!(parse_duration_with_unit("1.5us").unwrap(), 1.5e-6);
/// assert_eq!(parse_duration_with_unit("24h").unwrap(), 86400.0);
/// assert_eq!(parse_duration_with_unit("0").unwrap(), 0.0);
/// let e = parse_duration_with_unit("1.5").unwrap_err().to_string();
/// assert!(e.contains("give a unit, e.g. 1.5us / 24h"), "{e}");
/// ```
pub fn parse_duration_with_unit(text: &str) -> Result<f64, UnitError> {
    let (v, suffix) = split_number(text).ok_or_else(|| bad(text, "duration", DURATION_EXPECTED))?;
    if suffix.is_empty() && v != 0.0 {
        return Err(UnitError::NoUnit {
            text: text.trim().to_string(),
        });
    }
    parse_duration(text)
}

const FREQUENCY_EXPECTED: &str =
    "a number of hertz or a number with one of µHz mHz Hz k kHz M MHz G GHz (e.g. 10MHz, 156.25M, 12k)";

/// Parse a frequency such as `10MHz`, `156.25M`, `12k`, `1.5GHz` or plain
/// hertz. Returns hertz.
///
/// ```
/// use tauwise::units::parse_frequency;
/// assert_eq!(parse_frequency("10MHz").unwrap(), 10e6);
/// assert_eq!(parse_frequency("12k").unwrap(), 12e3);
/// assert_eq!(parse_frequency("156.25M").unwrap(), 156.25e6);
/// ```
pub fn parse_frequency(text: &str) -> Result<f64, UnitError> {
    let (v, suffix) =
        split_number(text).ok_or_else(|| bad(text, "frequency", FREQUENCY_EXPECTED))?;
    let s = suffix
        .strip_suffix("Hz")
        .or_else(|| suffix.strip_suffix("hz"))
        .unwrap_or(suffix);
    let scale = match s {
        "" => 1.0,
        "u" | "µ" | "μ" => 1e-6,
        "m" => 1e-3,
        "k" | "K" => 1e3,
        "M" => 1e6,
        "G" | "g" => 1e9,
        "T" => 1e12,
        _ => return Err(bad(text, "frequency", FREQUENCY_EXPECTED)),
    };
    let f = scaled(v, scale);
    if !f.is_finite() {
        return Err(bad(text, "frequency", FREQUENCY_EXPECTED));
    }
    Ok(f)
}

const FRACTION_EXPECTED: &str = "a number, optionally with ppm, ppb or ppt (e.g. 1e-9, 2ppb)";

/// Parse a fractional frequency (a frequency offset or error) such as
/// `1e-9`, `2ppb`, `-0.5ppt` or `3e-7frac`. Returns the fraction.
///
/// ```
/// use tauwise::units::parse_fraction;
/// assert_eq!(parse_fraction("2ppb").unwrap(), 2e-9);
/// assert_eq!(parse_fraction("-1e-12").unwrap(), -1e-12);
/// assert!(parse_fraction("fast").is_err());
/// ```
pub fn parse_fraction(text: &str) -> Result<f64, UnitError> {
    let t = text.trim();
    let (num, scale) = [("ppm", 1e-6), ("ppb", 1e-9), ("ppt", 1e-12), ("frac", 1.0)]
        .iter()
        .find_map(|(s, k)| t.strip_suffix(s).map(|n| (n.trim(), *k)))
        .unwrap_or((t, 1.0));
    match num.parse::<f64>() {
        Ok(v) if v.is_finite() => Ok(scaled(v, scale)),
        _ => Err(bad(text, "fractional frequency", FRACTION_EXPECTED)),
    }
}

/// Units of phase (time-error) readings in an input file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PhaseUnit {
    /// seconds
    S,
    /// milliseconds
    Ms,
    /// microseconds
    Us,
    /// nanoseconds
    Ns,
    /// picoseconds
    Ps,
}

impl PhaseUnit {
    /// Multiply a reading by this to get seconds.
    pub fn to_seconds(self) -> f64 {
        match self {
            PhaseUnit::S => 1.0,
            PhaseUnit::Ms => 1e-3,
            PhaseUnit::Us => 1e-6,
            PhaseUnit::Ns => 1e-9,
            PhaseUnit::Ps => 1e-12,
        }
    }
    /// The unit's symbol as written on the command line.
    pub fn symbol(self) -> &'static str {
        match self {
            PhaseUnit::S => "s",
            PhaseUnit::Ms => "ms",
            PhaseUnit::Us => "us",
            PhaseUnit::Ns => "ns",
            PhaseUnit::Ps => "ps",
        }
    }
}

/// Units of frequency readings in an input file.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FreqUnit {
    /// fractional frequency (dimensionless)
    Frac,
    /// parts per million
    Ppm,
    /// parts per billion
    Ppb,
    /// absolute frequency in hertz; needs the carrier (nominal) frequency
    Hz,
}

impl FreqUnit {
    /// The unit's symbol as written on the command line.
    pub fn symbol(self) -> &'static str {
        match self {
            FreqUnit::Frac => "frac",
            FreqUnit::Ppm => "ppm",
            FreqUnit::Ppb => "ppb",
            FreqUnit::Hz => "hz",
        }
    }
}

/// A unit for the values of a time series: phase or frequency.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ValueUnit {
    /// Phase (time error) in the given unit.
    Phase(PhaseUnit),
    /// Frequency in the given unit.
    Freq(FreqUnit),
}

/// Parse a value unit: `s ms us ns ps` (phase) or `frac ppm ppb hz` (frequency).
pub fn parse_value_unit(text: &str) -> Result<ValueUnit, UnitError> {
    Ok(match text.trim() {
        "s" => ValueUnit::Phase(PhaseUnit::S),
        "ms" => ValueUnit::Phase(PhaseUnit::Ms),
        "us" | "µs" | "μs" => ValueUnit::Phase(PhaseUnit::Us),
        "ns" => ValueUnit::Phase(PhaseUnit::Ns),
        "ps" => ValueUnit::Phase(PhaseUnit::Ps),
        "frac" => ValueUnit::Freq(FreqUnit::Frac),
        "ppm" => ValueUnit::Freq(FreqUnit::Ppm),
        "ppb" => ValueUnit::Freq(FreqUnit::Ppb),
        "hz" | "Hz" => ValueUnit::Freq(FreqUnit::Hz),
        _ => {
            return Err(bad(
                text,
                "unit",
                "one of s ms us ns ps (phase) or frac ppm ppb hz (frequency)",
            ))
        }
    })
}

/// The SI prefixes from yocto to tera: (power of ten, symbol).
pub const SI_PREFIXES: [(i32, &str); 13] = [
    (-24, "y"),
    (-21, "z"),
    (-18, "a"),
    (-15, "f"),
    (-12, "p"),
    (-9, "n"),
    (-6, "µ"),
    (-3, "m"),
    (0, ""),
    (3, "k"),
    (6, "M"),
    (9, "G"),
    (12, "T"),
];

/// Format `value` with an SI prefix and `digits` significant digits, followed
/// by `unit` (e.g. `format_si(1.234e-11, "s", 4)` → `"12.34 ps"`). Zero and
/// non-finite values are written plainly.
///
/// ```
/// use tauwise::units::format_si;
/// assert_eq!(format_si(1.234e-11, "s", 4), "12.34 ps");
/// assert_eq!(format_si(86400.0, "s", 4), "86.40 ks");
/// assert_eq!(format_si(1.0, "s", 4), "1.000 s");
/// ```
pub fn format_si(value: f64, unit: &str, digits: usize) -> String {
    if value == 0.0 || !value.is_finite() {
        return format!("{value} {unit}").trim_end().to_string();
    }
    let digits = digits.max(1);
    // Round to the significant digits first so that 999.96 becomes 1.000 k.
    let exp10 = value.abs().log10().floor() as i32;
    let rounded = round_sig(value, digits);
    let exp10 = if rounded.abs() >= 10f64.powi(exp10 + 1) {
        exp10 + 1
    } else {
        exp10
    };
    let e3 = exp10.div_euclid(3) * 3;
    if !(-24..=12).contains(&e3) {
        // Beyond the prefixes: exponent notation (`2.441e196 s`).
        return format!("{:.*e} {unit}", digits - 1, value)
            .trim_end()
            .to_string();
    }
    let prefix = SI_PREFIXES
        .iter()
        .find(|(e, _)| *e == e3)
        .map(|p| p.1)
        .unwrap_or("");
    let mantissa = rounded / 10f64.powi(e3);
    let int_digits = (exp10 - e3 + 1).max(1) as usize;
    let decimals = digits.saturating_sub(int_digits);
    format!("{mantissa:.decimals$} {prefix}{unit}")
        .trim_end()
        .to_string()
}

/// Round `value` to `digits` significant digits.
pub fn round_sig(value: f64, digits: usize) -> f64 {
    if value == 0.0 || !value.is_finite() {
        return value;
    }
    let e = value.abs().log10().floor() as i32;
    let scale = 10f64.powi(digits as i32 - 1 - e);
    (value * scale).round() / scale
}

/// Format a plain number with `digits` significant digits in the shortest of
/// fixed or scientific notation (used for dimensionless quantities such as σ_y).
///
/// ```
/// use tauwise::units::format_sig;
/// assert_eq!(format_sig(1.2345e-11, 4), "1.235e-11");
/// assert_eq!(format_sig(12.0, 4), "12.00");
/// ```
pub fn format_sig(value: f64, digits: usize) -> String {
    if value == 0.0 || !value.is_finite() {
        return format!("{value}");
    }
    let e = value.abs().log10().floor() as i32;
    if (-3..5).contains(&e) {
        let decimals = (digits as i32 - 1 - e).max(0) as usize;
        format!("{value:.decimals$}")
    } else {
        format!("{:.*e}", digits.saturating_sub(1), value)
    }
}

/// A margin in dB for tables and reports, two decimals with its sign
/// (`+6.02 dB`, `-0.35 dB`). A margin that rounds to zero is never written
/// `-0.00 dB`: exactly zero (a value at its limit) is `0.00 dB`, and a
/// margin smaller than 0.005 dB in magnitude keeps two significant digits
/// (`-8.7e-5 dB`), so that its sign — within or beyond the limit — shows.
///
/// ```
/// use tauwise::units::format_margin_db;
/// assert_eq!(format_margin_db(6.0206), "+6.02 dB");
/// assert_eq!(format_margin_db(-0.0), "0.00 dB");
/// assert_eq!(format_margin_db(-8.68e-5), "-8.7e-5 dB");
/// assert_eq!(format_margin_db(-0.004999), "-5.0e-3 dB");
/// ```
pub fn format_margin_db(db: f64) -> String {
    if db == 0.0 {
        return "0.00 dB".to_string();
    }
    if !db.is_finite() {
        return format!("{db} dB");
    }
    if db.abs() < 0.005 {
        return format!("{db:+.1e} dB");
    }
    format!("{db:+.2} dB")
}

/// A number of bytes in decimal SI units for messages (`32.77 GB`).
///
/// ```
/// use tauwise::units::format_bytes;
/// assert_eq!(format_bytes(32_768_000_000), "32.77 GB");
/// assert_eq!(format_bytes(512), "512 B");
/// ```
pub fn format_bytes(bytes: u128) -> String {
    if bytes < 1000 {
        return format!("{bytes} B");
    }
    if bytes >= 1_000_000_000_000_000 {
        return format!("{:.3e} B", bytes as f64);
    }
    format_si(bytes as f64, "B", 4)
}

/// 10·log10(x): power ratio to decibels.
pub fn to_db(x: f64) -> f64 {
    10.0 * x.log10()
}

/// 10^(db/10): decibels to power ratio.
pub fn from_db(db: f64) -> f64 {
    10f64.powf(db / 10.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn durations() {
        assert_eq!(parse_duration("1s").unwrap(), 1.0);
        assert_eq!(parse_duration("100ms").unwrap(), 0.1);
        assert!((parse_duration("2.5us").unwrap() - 2.5e-6).abs() < 1e-20);
        assert_eq!(parse_duration("24h").unwrap(), 86400.0);
        assert_eq!(parse_duration("2d").unwrap(), 172800.0);
        assert_eq!(parse_duration("0.001").unwrap(), 0.001);
        assert_eq!(parse_duration("1e-3").unwrap(), 0.001);
        assert_eq!(parse_duration(" 5 min").unwrap(), 300.0);
        let e = parse_duration("5 fortnights").unwrap_err();
        assert!(e.to_string().contains("'5 fortnights'"), "{e}");
        assert!(parse_duration("").is_err());
        assert!(parse_duration("s").is_err());
    }

    #[test]
    fn frequencies() {
        assert_eq!(parse_frequency("10MHz").unwrap(), 10e6);
        assert_eq!(parse_frequency("156.25M").unwrap(), 156.25e6);
        assert_eq!(parse_frequency("12k").unwrap(), 12e3);
        assert_eq!(parse_frequency("10.3125G").unwrap(), 10.3125e9);
        assert_eq!(parse_frequency("100").unwrap(), 100.0);
        assert_eq!(parse_frequency("20 MHz").unwrap(), 20e6);
        let e = parse_frequency("10 furlongs").unwrap_err();
        assert!(e.to_string().contains("'10 furlongs'"));
    }

    #[test]
    fn si_format() {
        assert_eq!(format_si(1.234e-11, "s", 4), "12.34 ps");
        assert_eq!(format_si(999.96, "s", 4), "1.000 ks");
        assert_eq!(format_si(0.1, "s", 4), "100.0 ms");
        assert_eq!(format_si(2.5e-6, "s", 4), "2.500 µs");
        assert_eq!(format_si(-3.0e-9, "s", 4), "-3.000 ns");
        assert_eq!(format_si(10e6, "Hz", 4), "10.00 MHz");
        assert_eq!(format_si(2.4410e196, "s", 4), "2.441e196 s");
        assert_eq!(format_si(3e-30, "s", 4), "3.000e-30 s");
    }

    #[test]
    fn units() {
        assert_eq!(
            parse_value_unit("ns").unwrap(),
            ValueUnit::Phase(PhaseUnit::Ns)
        );
        assert_eq!(
            parse_value_unit("ppb").unwrap(),
            ValueUnit::Freq(FreqUnit::Ppb)
        );
        assert!(parse_value_unit("parsecs").is_err());
    }
}
