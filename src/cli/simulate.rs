//! `tauwise simulate`: write a synthetic power-law noise record, generated
//! by [`tauwise::simulate`], in the form every command reads back as it was
//! ([`tauwise::io::record_file`]): `#` comment lines (model, seed, command),
//! a header `time (s),phase (ns)` naming the units, rows of time and value.

use super::Outcome;
use clap::{Args, ValueEnum};
use std::io::Write;
use std::path::PathBuf;
use tauwise::io::record_file::{write_record_file, RecordFile, Start};
use tauwise::model::PowerLaw;
use tauwise::simulate::{simulate_frequency, simulate_phase, SimSpec};
use tauwise::units::{parse_duration, parse_frequency, parse_value_unit, FreqUnit, ValueUnit};
use tauwise::{Error, Record};

/// Which quantity to write.
#[derive(Debug, Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum SimData {
    /// Phase (time error).
    Phase,
    /// Fractional frequency.
    Freq,
}

/// Synthetic power-law noise records (seeded; Kasdin & Walter 1992).
#[derive(Debug, Args)]
#[command(
    after_help = "Example:\n  tauwise simulate --model h0=1e-22,h-2=1e-30 --tau0 1s --points 100000 \
                  --seed 7 --units ns -o ocxo.csv"
)]
pub struct SimulateArgs {
    /// Power-law model in h_α notation, e.g. h0=1e-22,h-1=3e-26,h-2=1e-31
    /// (terms h2 h1 h0 h-1 h-2; fh, if given, must be 1/(2·τ0)).
    #[arg(long, value_name = "MODEL")]
    pub model: String,
    /// Sampling interval τ0 (1s, 100ms, …).
    #[arg(long, value_name = "DUR", default_value = "1s")]
    pub tau0: String,
    /// Number of samples (100000, 1e6, …).
    #[arg(long, value_name = "N")]
    pub points: String,
    /// Seed of the random generator (the same seed gives the same record).
    #[arg(long, value_name = "N", default_value_t = 1)]
    pub seed: u64,
    /// Write phase or fractional frequency.
    #[arg(long, value_enum, default_value = "phase")]
    pub data: SimData,
    /// Units of the values written: s ms us ns ps (phase), frac ppm ppb hz (freq).
    #[arg(long, value_name = "UNIT")]
    pub units: Option<String>,
    /// Nominal (carrier) frequency, needed for --units hz.
    #[arg(long, value_name = "FREQ")]
    pub carrier: Option<String>,
    /// Constant fractional-frequency offset (1e-9, 2ppb, …).
    #[arg(long, value_name = "Y0", allow_hyphen_values = true)]
    pub offset: Option<String>,
    /// Linear frequency drift, fractional per duration (1e-10/day, 3ppb/24h;
    /// a plain number is per second).
    #[arg(long, value_name = "RATE", allow_hyphen_values = true)]
    pub drift: Option<String>,
    /// Output file (written atomically); standard output when absent.
    #[arg(short = 'o', long, value_name = "FILE")]
    pub output: Option<PathBuf>,
}

/// Parse a fractional value: a number with an optional `ppm`, `ppb`, `ppt`
/// or `frac` suffix.
pub fn parse_fraction(text: &str) -> Result<f64, Error> {
    Ok(tauwise::units::parse_fraction(text)?)
}

/// Parse a drift rate `VALUE[/DURATION]` into fractional frequency per second.
pub fn parse_rate(text: &str) -> Result<f64, Error> {
    let (value, per) = match text.split_once('/') {
        Some((v, p)) => (v, Some(p.trim())),
        None => (text, None),
    };
    let v = parse_fraction(value)?;
    let seconds = match per {
        None => 1.0,
        Some(p) => {
            let p = if p.starts_with(|c: char| c.is_ascii_digit() || c == '.') {
                p.to_string()
            } else {
                format!("1{p}")
            };
            let s = parse_duration(&p).map_err(|_| {
                Error::invalid(format!(
                    "'{text}' is not a drift rate: expected VALUE/DURATION such as 1e-10/day, \
                     3ppb/24h or 1e-15/s"
                ))
            })?;
            if s <= 0.0 {
                return Err(Error::invalid(format!(
                    "'{text}': the duration of a drift rate must be positive"
                )));
            }
            s
        }
    };
    Ok(v / seconds)
}

fn parse_points(text: &str) -> Result<usize, Error> {
    let t = text.trim();
    let bad = || {
        Error::invalid(format!(
            "--points '{text}' is not a positive whole number (e.g. 100000 or 1e6)"
        ))
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

/// The model with every digit, as `--model` accepts it.
fn exact_model_string(m: &PowerLaw) -> String {
    let mut parts: Vec<String> = (-2..=2)
        .rev()
        .filter(|&a| m.get(a) > 0.0)
        .map(|a| format!("h{a}={:e}", m.get(a)))
        .collect();
    if parts.is_empty() {
        parts.push("(no noise)".into());
    }
    parts.join(",")
}

fn quote(arg: &str) -> String {
    if !arg.is_empty()
        && arg
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || "-_=.,/+:@%^".contains(c))
    {
        arg.to_string()
    } else {
        format!("'{}'", arg.replace('\'', "'\\''"))
    }
}

/// Run `tauwise simulate`.
pub fn run(args: SimulateArgs) -> Result<Outcome, Error> {
    super::common::check_output_paths(&[], &[args.output.as_deref()])?;
    let tau0 = parse_duration(&args.tau0)?;
    if !(tau0.is_finite() && tau0 > 0.0) {
        return Err(Error::invalid(format!(
            "--tau0 '{}' must be a positive duration",
            args.tau0
        )));
    }
    let points = parse_points(&args.points)?;
    let model = PowerLaw::parse(&args.model, 0.5 / tau0)
        .map_err(|e| Error::invalid(format!("--model: {e}")))?;
    let mut spec = SimSpec::new(model, tau0, points, args.seed);
    if let Some(o) = &args.offset {
        spec.freq_offset =
            parse_fraction(o).map_err(|e| Error::invalid(format!("--offset: {e}")))?;
    }
    if let Some(d) = &args.drift {
        spec.drift_per_s = parse_rate(d).map_err(|e| Error::invalid(format!("--drift: {e}")))?;
    }

    let unit_text = args.units.clone().unwrap_or_else(|| match args.data {
        SimData::Phase => "s".into(),
        SimData::Freq => "frac".into(),
    });
    let unit = parse_value_unit(&unit_text).map_err(|e| Error::invalid(format!("--units: {e}")))?;
    let carrier = match &args.carrier {
        Some(c) => Some(parse_frequency(c)?),
        None => None,
    };

    let (record, what): (Record, String) = match (args.data, unit) {
        (SimData::Phase, ValueUnit::Phase(u)) => (
            Record::Phase(simulate_phase(&spec)?),
            format!("phase (time error) in {}", u.symbol()),
        ),
        (SimData::Freq, ValueUnit::Freq(u)) => {
            if u == FreqUnit::Hz && !carrier.is_some_and(|c| c > 0.0) {
                return Err(Error::invalid(
                    "--units hz writes absolute frequency and needs --carrier FREQ (e.g. 10MHz)",
                ));
            }
            let what = match u {
                FreqUnit::Frac => "fractional frequency".to_string(),
                FreqUnit::Ppm => "fractional frequency in ppm".to_string(),
                FreqUnit::Ppb => "fractional frequency in ppb".to_string(),
                FreqUnit::Hz => format!(
                    "frequency in Hz about a carrier of {} Hz",
                    carrier.unwrap_or(0.0)
                ),
            };
            (Record::Frequency(simulate_frequency(&spec)?), what)
        }
        (SimData::Phase, ValueUnit::Freq(_)) => {
            return Err(Error::invalid(format!(
                "--units {unit_text} is a frequency unit, but --data phase writes phase: use one of s ms us ns ps"
            )))
        }
        (SimData::Freq, ValueUnit::Phase(_)) => {
            return Err(Error::invalid(format!(
                "--units {unit_text} is a phase unit, but --data freq writes frequency: use one of frac ppm ppb hz"
            )))
        }
    };

    let command: Vec<String> = std::iter::once("tauwise".to_string())
        .chain(std::env::args().skip(1).map(|a| quote(&a)))
        .collect();
    let comments = vec![
        format!(
            "{} {} simulate: synthetic power-law noise (Kasdin & Walter 1992), not a measurement",
            tauwise::TOOL,
            tauwise::VERSION
        ),
        format!(
            "model: {} (fh = 1/(2 tau0) = {} Hz)",
            exact_model_string(&model),
            0.5 / tau0
        ),
        format!(
            "data: {what}; tau0: {tau0} s; points: {}; seed: {}",
            record.len(),
            args.seed
        ),
        format!(
            "offset: {:e} (fractional); drift: {:e} per s (fractional frequency)",
            spec.freq_offset, spec.drift_per_s
        ),
        format!("command: {}", command.join(" ")),
    ];
    let mut out: Vec<u8> = Vec::with_capacity(record.len() * 40 + 512);
    write_record_file(
        &mut out,
        &RecordFile {
            record: &record,
            unit,
            carrier,
            start: Start::Seconds(0.0),
            comments: &comments,
        },
    )
    .map_err(|e| Error::invalid(format!("could not write the record: {e}")))?;

    match &args.output {
        Some(path) => tauwise::io::write_atomic(path, &out)?,
        None => {
            let stdout = std::io::stdout();
            let mut lock = stdout.lock();
            lock.write_all(&out)
                .and_then(|_| lock.flush())
                .map_err(|source| tauwise::io::WriteError {
                    path: PathBuf::from("-"),
                    source,
                })?;
        }
    }
    Ok(Outcome::Done)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rates_and_fractions() {
        assert_eq!(parse_fraction("2ppb").unwrap(), 2e-9);
        assert_eq!(parse_fraction("-1e-9").unwrap(), -1e-9);
        assert!(parse_fraction("fast").is_err());
        assert!((parse_rate("1e-10/day").unwrap() - 1e-10 / 86400.0).abs() < 1e-30);
        assert!((parse_rate("3ppb/24h").unwrap() - 3e-9 / 86400.0).abs() < 1e-30);
        assert_eq!(parse_rate("1e-15").unwrap(), 1e-15);
        assert!(parse_rate("1e-10/fortnight").is_err());
        assert_eq!(parse_points("1e6").unwrap(), 1_000_000);
        assert!(parse_points("0").is_err());
        assert!(parse_points("2.5").is_err());
    }
}
