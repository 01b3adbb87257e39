//! Units named in column headers (`TIE (ns)`, `f[kHz]`, `phase_ns`,
//! `"phase, ns"`, `Phase noise (dBc/Hz)`).
//!
//! Where a unit is looked for in a header field, in this order:
//! 1. a bracketed group that ends the field: `TIE (ns)`, `offset [kHz]`;
//! 2. after the last underscore: `phase_ns`, `elapsed_s`, `lf_dbc_hz`;
//! 3. after the last comma or the word `in`: `phase, ns`, `phase in ns`;
//! 4. the whole field, when it is two or more letters: `ns`, `ppb`.
//!
//! The units recognised (the list is in `docs/input-files.md` and in the
//! `--units` help too):
//!
//! | kind | written |
//! |---|---|
//! | phase / time | `s` `sec` `ms` `us` `µs` `ns` `ps` |
//! | time stamps only | `min` `h` `d` (`days`), `MJD` (Modified Julian Date) |
//! | fractional frequency | `frac` `fractional` `ppm` `ppb` |
//! | absolute frequency | `Hz` `kHz` `MHz` `GHz` (`mHz` for table offsets) |
//! | phase-noise tables | `dBc/Hz` (L(f)), `rad²/Hz` `rad^2/Hz` (S_φ), `dB rad²/Hz` `dBrad²/Hz` (S_φ in dB), `1/Hz` (S_y), `dBc` (spur level) |
//!
//! A bracketed group that is not one of these (`Phase (deg)`) is an
//! *unknown unit*: the readers refuse to guess and ask for the unit
//! option, so that a column is never read silently in the wrong unit.

use crate::units::{FreqUnit, PhaseUnit};

/// A unit recognised in a header field.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum HeaderUnit {
    /// Phase (time error) or time in seconds, milliseconds, …
    Phase(PhaseUnit),
    /// A longer unit of time (seconds per unit): `min`, `h`, `d`.
    Time(f64),
    /// Modified Julian Date (days since 1858-11-17 00:00 UTC).
    Mjd,
    /// Fractional frequency (`frac`, `ppm`, `ppb`).
    Fractional(FreqUnit),
    /// Absolute frequency; hertz per unit (1 for Hz, 1e6 for MHz).
    Absolute(f64),
    /// L(f) in dBc/Hz.
    Lf,
    /// S_φ in rad²/Hz.
    Sphi,
    /// S_φ in dB rad²/Hz.
    SphiDb,
    /// S_y in 1/Hz.
    Sy,
    /// A level in dBc (spurs).
    Dbc,
}

impl HeaderUnit {
    /// How the unit is written in messages.
    pub fn symbol(self) -> String {
        match self {
            HeaderUnit::Phase(u) => u.symbol().to_string(),
            HeaderUnit::Time(k) => match k as u64 {
                60 => "min".into(),
                3600 => "h".into(),
                _ => "d".into(),
            },
            HeaderUnit::Mjd => "MJD".into(),
            HeaderUnit::Fractional(u) => u.symbol().to_string(),
            HeaderUnit::Absolute(k) => {
                if k < 1.0 {
                    "mHz".into()
                } else if k < 1e3 {
                    "Hz".into()
                } else if k < 1e6 {
                    "kHz".into()
                } else if k < 1e9 {
                    "MHz".into()
                } else {
                    "GHz".into()
                }
            }
            HeaderUnit::Lf => "dBc/Hz".into(),
            HeaderUnit::Sphi => "rad²/Hz".into(),
            HeaderUnit::SphiDb => "dB rad²/Hz".into(),
            HeaderUnit::Sy => "1/Hz".into(),
            HeaderUnit::Dbc => "dBc".into(),
        }
    }
}

/// What a header field says about its unit.
#[derive(Debug, Clone, PartialEq)]
pub enum Found {
    /// A recognised unit.
    Unit(HeaderUnit),
    /// A bracketed unit that tauwise does not read (as written).
    Unknown(String),
    /// No unit.
    None,
}

/// The unit of one word, if it is one we read.
fn word(w: &str) -> Option<HeaderUnit> {
    let w = w.trim();
    // Case matters for the SI prefixes m and M.
    match w {
        "MHz" => return Some(HeaderUnit::Absolute(1e6)),
        "mHz" => return Some(HeaderUnit::Absolute(1e-3)),
        "MJD" | "mjd" => return Some(HeaderUnit::Mjd),
        "µs" | "μs" => return Some(HeaderUnit::Phase(PhaseUnit::Us)),
        _ => {}
    }
    let l = w.to_ascii_lowercase().replace(' ', "");
    Some(match l.as_str() {
        "s" | "sec" | "secs" | "second" | "seconds" => HeaderUnit::Phase(PhaseUnit::S),
        "ms" | "msec" => HeaderUnit::Phase(PhaseUnit::Ms),
        "us" | "usec" => HeaderUnit::Phase(PhaseUnit::Us),
        "ns" | "nsec" => HeaderUnit::Phase(PhaseUnit::Ns),
        "ps" | "psec" => HeaderUnit::Phase(PhaseUnit::Ps),
        "min" | "minutes" => HeaderUnit::Time(60.0),
        "h" | "hr" | "hours" => HeaderUnit::Time(3600.0),
        "d" | "day" | "days" => HeaderUnit::Time(86400.0),
        "hz" => HeaderUnit::Absolute(1.0),
        "khz" => HeaderUnit::Absolute(1e3),
        "ghz" => HeaderUnit::Absolute(1e9),
        "ppm" => HeaderUnit::Fractional(FreqUnit::Ppm),
        "ppb" => HeaderUnit::Fractional(FreqUnit::Ppb),
        "frac" | "fractional" => HeaderUnit::Fractional(FreqUnit::Frac),
        "dbc/hz" | "dbc_hz" => HeaderUnit::Lf,
        "rad²/hz" | "rad^2/hz" | "rad2/hz" | "rad**2/hz" | "rad2_hz" => HeaderUnit::Sphi,
        "dbrad²/hz" | "dbrad^2/hz" | "dbrad2/hz" | "db(rad²/hz)" | "db(rad^2/hz)" => {
            HeaderUnit::SphiDb
        }
        "1/hz" | "hz^-1" | "hz-1" | "hz⁻¹" => HeaderUnit::Sy,
        "dbc" => HeaderUnit::Dbc,
        _ => return None,
    })
}

/// The unit a header field names, if any.
///
/// ```
/// use tauwise::io::header_units::{unit_in, Found, HeaderUnit};
/// use tauwise::units::PhaseUnit;
/// assert_eq!(unit_in("TIE (ns)"), Found::Unit(HeaderUnit::Phase(PhaseUnit::Ns)));
/// assert_eq!(unit_in("Frequency(Hz)"), Found::Unit(HeaderUnit::Absolute(1.0)));
/// assert_eq!(unit_in("lf_dbc_hz"), Found::Unit(HeaderUnit::Lf));
/// assert_eq!(unit_in("Phase (deg)"), Found::Unknown("deg".into()));
/// assert_eq!(unit_in("phase"), Found::None);
/// ```
pub fn unit_in(field: &str) -> Found {
    let f = field.trim();
    // 1. A bracketed group at the end.
    if let Some(close) = f.chars().last().filter(|c| *c == ')' || *c == ']') {
        let open = if close == ')' { '(' } else { '[' };
        if let Some(a) = f.rfind(open) {
            let inner = f[a + open.len_utf8()..f.len() - 1].trim();
            let before = f[..a].trim_end();
            if before.to_ascii_lowercase().ends_with("db") {
                if let Some(HeaderUnit::Sphi) = word(inner) {
                    return Found::Unit(HeaderUnit::SphiDb);
                }
            }
            if let Some(u) = word(inner) {
                return Found::Unit(u);
            }
            if !inner.is_empty() && inner.chars().count() <= 12 && !inner.contains(' ') {
                return Found::Unknown(inner.to_string());
            }
            return Found::None;
        }
    }
    // 2. After the last underscore (multi-part units first).
    let lower = f.to_ascii_lowercase();
    if lower.ends_with("_dbc_hz") {
        return Found::Unit(HeaderUnit::Lf);
    }
    if lower.ends_with("_rad2_hz") {
        return Found::Unit(HeaderUnit::Sphi);
    }
    if let Some((_, tail)) = f.rsplit_once('_') {
        if !tail.contains(' ') {
            if let Some(u) = word(tail) {
                return Found::Unit(u);
            }
        }
    }
    // 3. After the last comma, or the word "in".
    if let Some((_, tail)) = f.rsplit_once(',') {
        if let Some(u) = word(tail) {
            return Found::Unit(u);
        }
    }
    if let Some((_, tail)) = f.rsplit_once(" in ") {
        if let Some(u) = word(tail) {
            return Found::Unit(u);
        }
    }
    // 4. The whole field (not a single letter: `s`, `h` and `d` alone are
    // more likely names than units).
    match word(f) {
        Some(u) if f.chars().count() >= 2 => Found::Unit(u),
        _ => Found::None,
    }
}

/// True when a header field names frequency readings without a unit
/// (`Frequency`, `freq_offset`): reading them as phase would be wrong.
pub fn says_frequency(field: &str) -> bool {
    let l = field.to_ascii_lowercase();
    l.contains("freq")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn forms() {
        use HeaderUnit as H;
        let u = |s: &str| unit_in(s);
        assert_eq!(u("TIE (ns)"), Found::Unit(H::Phase(PhaseUnit::Ns)));
        assert_eq!(u("x[ps]"), Found::Unit(H::Phase(PhaseUnit::Ps)));
        assert_eq!(u("phase_ns"), Found::Unit(H::Phase(PhaseUnit::Ns)));
        assert_eq!(u("elapsed_s"), Found::Unit(H::Phase(PhaseUnit::S)));
        assert_eq!(u("phase, ns"), Found::Unit(H::Phase(PhaseUnit::Ns)));
        assert_eq!(u("time, s"), Found::Unit(H::Phase(PhaseUnit::S)));
        assert_eq!(u("phase in us"), Found::Unit(H::Phase(PhaseUnit::Us)));
        assert_eq!(u("Offset (kHz)"), Found::Unit(H::Absolute(1e3)));
        assert_eq!(u("f[MHz]"), Found::Unit(H::Absolute(1e6)));
        assert_eq!(u("freq_kHz"), Found::Unit(H::Absolute(1e3)));
        assert_eq!(u("frequency_Hz"), Found::Unit(H::Absolute(1.0)));
        assert_eq!(u("Phase noise (dBc/Hz)"), Found::Unit(H::Lf));
        assert_eq!(u("lf_dbc_hz"), Found::Unit(H::Lf));
        assert_eq!(u("S_phi (rad^2/Hz)"), Found::Unit(H::Sphi));
        assert_eq!(u("S_phi dB(rad²/Hz)"), Found::Unit(H::SphiDb));
        assert_eq!(u("S_phi (dB rad²/Hz)"), Found::Unit(H::SphiDb));
        assert_eq!(u("S_y (1/Hz)"), Found::Unit(H::Sy));
        assert_eq!(u("Level (dBc)"), Found::Unit(H::Dbc));
        assert_eq!(
            u("freq_offset (ppb)"),
            Found::Unit(H::Fractional(FreqUnit::Ppb))
        );
        assert_eq!(u("y (frac)"), Found::Unit(H::Fractional(FreqUnit::Frac)));
        assert_eq!(u("MJD"), Found::Unit(H::Mjd));
        assert_eq!(u("Time (h)"), Found::Unit(H::Time(3600.0)));
        assert_eq!(u("Phase (deg)"), Found::Unknown("deg".into()));
        assert_eq!(u("Phase (channel A minus B)"), Found::None);
        for none in [
            "phase", "Time", "sphi", "sy", "f", "Flag", "phase_a", "TI", "s", "d",
        ] {
            assert_eq!(u(none), Found::None, "{none}");
        }
        assert!(says_frequency("Frequency"));
        assert!(!says_frequency("TIE"));
        assert_eq!(H::Absolute(1e6).symbol(), "MHz");
    }
}
