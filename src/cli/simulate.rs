//! `tauwise simulate`: write a synthetic power-law noise record, generated
//! by [`tauwise::simulate`], in the form every command reads back as it was
//! ([`tauwise::io::record_file`]): `#` comment lines (model, seed, command),
//! a header `time (s),phase (ns)` naming the units, rows of time and value.

use super::Outcome;
use clap::Args;
use std::path::PathBuf;
use tauwise::parse::{Duration, Fraction, Frequency, Model, Rate};
use tauwise::results::simulated_file;
use tauwise::simulate::{simulate_frequency, simulate_phase, SimSpec};
use tauwise::units::{parse_value_unit, FreqUnit, PhaseUnit, ValueUnit};
use tauwise::{DataKind, Error, Record};

/// Synthetic power-law noise records (seeded; Kasdin & Walter 1992).
#[derive(Debug, Args)]
#[command(
    after_help = "Example:\n  tauwise simulate --model h0=1e-22,h-2=1e-30 --tau0 1s --points 100000 \
                  --seed 7 --units ns -o ocxo.csv"
)]
pub struct SimulateArgs {
    /// Power-law model in h_α notation, e.g. h0=1e-22,h-1=3e-26,h-2=1e-31
    /// (terms h2 h1 h0 h-1 h-2; fh, if given, must be 1/(2·τ0)).
    #[arg(long, value_name = "MODEL", value_parser = str::parse::<Model>)]
    pub model: Model,
    /// Sampling interval τ0 (1s, 100ms, …).
    #[arg(long, value_name = "DUR", default_value = "1s", allow_hyphen_values = true, value_parser = Duration::positive)]
    pub tau0: Duration,
    /// Number of samples (100000, 1e6, …).
    #[arg(long, value_name = "N", value_parser = tauwise::parse::points)]
    pub points: usize,
    /// Seed of the random generator (the same seed gives the same record).
    #[arg(long, value_name = "N", default_value_t = 1)]
    pub seed: u64,
    /// Write phase or fractional frequency: phase or freq.
    #[arg(long, value_name = "KIND", default_value = "phase", value_parser = str::parse::<DataKind>)]
    pub data: DataKind,
    /// Units of the values written: s ms us ns ps (phase), frac ppm ppb hz (freq).
    #[arg(long, value_name = "UNIT", value_parser = parse_value_unit)]
    pub units: Option<ValueUnit>,
    /// Nominal (carrier) frequency, needed for --units hz.
    #[arg(long, value_name = "FREQ", allow_hyphen_values = true, value_parser = Frequency::positive)]
    pub carrier: Option<Frequency>,
    /// Constant fractional-frequency offset (1e-9, 2ppb, …).
    #[arg(long, value_name = "Y0", allow_hyphen_values = true, value_parser = str::parse::<Fraction>)]
    pub offset: Option<Fraction>,
    /// Linear frequency drift, fractional per time (1e-10/day, 1ppb/day,
    /// 3ppb/24h, 5e-11/week; the time is required).
    #[arg(long, value_name = "RATE", allow_hyphen_values = true, value_parser = str::parse::<Rate>)]
    pub drift: Option<Rate>,
    /// Output file (written atomically); standard output when absent.
    #[arg(short = 'o', long, value_name = "FILE")]
    pub output: Option<PathBuf>,
}

/// Run `tauwise simulate`.
pub fn run(args: SimulateArgs) -> Result<Outcome, Error> {
    super::common::check_output_paths(&[], &[args.output.as_deref()])?;
    let tau0 = args.tau0.seconds();
    let points = args.points;
    let model = args.model.power_law(0.5 / tau0);
    // The record's bandwidth is 1/(2τ0); a model that says otherwise for
    // its WPM/FPM terms contradicts --tau0 (the library refuses it too).
    if let Some(fh) = args.model.f_h {
        let uses_fh = model.get(2) > 0.0 || model.get(1) > 0.0;
        if uses_fh && (fh - 0.5 / tau0).abs() > 1e-9 * (0.5 / tau0) {
            return Err(Error::option(
                "--model",
                format!(
                    "fh = {fh} Hz, but the synthesised record has bandwidth f_h = 1/(2τ0) = {} Hz: omit fh or set it to 1/(2τ0)",
                    0.5 / tau0
                ),
            ));
        }
    }
    let mut spec = SimSpec::new(model, tau0, points, args.seed);
    if let Some(o) = args.offset {
        spec.freq_offset = o.value();
    }
    if let Some(d) = args.drift {
        spec.drift_per_s = d.per_second();
    }

    let unit = args.units.unwrap_or(match args.data {
        DataKind::Phase => ValueUnit::Phase(PhaseUnit::S),
        DataKind::Freq => ValueUnit::Freq(FreqUnit::Frac),
    });
    let unit_text = match unit {
        ValueUnit::Phase(u) => u.symbol(),
        ValueUnit::Freq(u) => u.symbol(),
    };
    let carrier = args.carrier.map(Frequency::hertz);
    let record = match (args.data, unit) {
        (DataKind::Phase, ValueUnit::Phase(_)) => Record::Phase(simulate_phase(&spec)?),
        (DataKind::Freq, ValueUnit::Freq(u)) => {
            if u == FreqUnit::Hz && !carrier.is_some_and(|c| c > 0.0) {
                return Err(Error::option(
                    "--units hz",
                    "writes absolute frequency and needs --carrier FREQ (e.g. 10MHz)",
                ));
            }
            Record::Frequency(simulate_frequency(&spec)?)
        }
        (DataKind::Phase, ValueUnit::Freq(_)) => {
            return Err(Error::option(
                format!("--units {unit_text}"),
                "is a frequency unit, but --data phase writes phase: use one of s ms us ns ps",
            ))
        }
        (DataKind::Freq, ValueUnit::Phase(_)) => {
            return Err(Error::option(
                format!("--units {unit_text}"),
                "is a phase unit, but --data freq writes frequency: use one of frac ppm ppb hz",
            ))
        }
    };
    let command: Vec<String> = std::iter::once("tauwise".to_string())
        .chain(std::env::args().skip(1))
        .collect();
    let out = simulated_file(&spec, &record, unit, carrier, &command)
        .map_err(|e| Error::invalid(format!("could not write the record: {e}")))?;
    super::common::emit_to(args.output.as_deref(), &out)?;
    Ok(Outcome::Done)
}
