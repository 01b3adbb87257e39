//! The record file `simulate` writes: a synthetic power-law noise record
//! with `#` comment lines (that it is synthetic, the model with every
//! digit, data, τ0, points, seed, offset, drift, the command), in the form
//! every command reads back as it was ([`crate::io::record_file`]).

use crate::io::record_file::{write_record_file, RecordFile, Start};
use crate::model::PowerLaw;
use crate::record::Record;
use crate::simulate::SimSpec;
use crate::units::{FreqUnit, ValueUnit};

/// The model with every digit, as `--model` accepts it.
pub fn exact_model_string(m: &PowerLaw) -> String {
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

/// A command-line word as a POSIX shell reads it back (quoted when it
/// holds anything but plain characters).
pub fn shell_word(arg: &str) -> String {
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

/// What the values of a record in `unit` are, in words (`phase (time
/// error) in ns`, `fractional frequency in ppb`, …).
pub fn values_in_words(unit: ValueUnit, carrier: Option<f64>) -> String {
    match unit {
        ValueUnit::Phase(u) => format!("phase (time error) in {}", u.symbol()),
        ValueUnit::Freq(FreqUnit::Frac) => "fractional frequency".to_string(),
        ValueUnit::Freq(FreqUnit::Ppm) => "fractional frequency in ppm".to_string(),
        ValueUnit::Freq(FreqUnit::Ppb) => "fractional frequency in ppb".to_string(),
        ValueUnit::Freq(FreqUnit::Hz) => format!(
            "frequency in Hz about a carrier of {} Hz",
            carrier.unwrap_or(0.0)
        ),
    }
}

/// The record file of a synthetic `record` made from `spec`, its values in
/// `unit` (about `carrier` for absolute frequency), `command` the words of
/// the command line that made it.
pub fn simulated_file(
    spec: &SimSpec,
    record: &Record,
    unit: ValueUnit,
    carrier: Option<f64>,
    command: &[String],
) -> std::io::Result<Vec<u8>> {
    let tau0 = spec.tau0;
    let comments = vec![
        format!(
            "{} {} simulate: synthetic power-law noise (Kasdin & Walter 1992), not a measurement",
            crate::TOOL,
            crate::VERSION
        ),
        format!(
            "model: {} (fh = 1/(2 tau0) = {} Hz)",
            exact_model_string(&spec.model),
            0.5 / tau0
        ),
        format!(
            "data: {}; tau0: {tau0} s; points: {}; seed: {}",
            values_in_words(unit, carrier),
            record.len(),
            spec.seed
        ),
        format!(
            "offset: {:e} (fractional); drift: {:e} per s (fractional frequency)",
            spec.freq_offset, spec.drift_per_s
        ),
        format!(
            "command: {}",
            command
                .iter()
                .map(|a| shell_word(a))
                .collect::<Vec<_>>()
                .join(" ")
        ),
    ];
    let mut out: Vec<u8> = Vec::with_capacity(record.len() * 40 + 512);
    write_record_file(
        &mut out,
        &RecordFile {
            record,
            unit,
            carrier,
            start: Start::Seconds(0.0),
            comments: &comments,
        },
    )?;
    Ok(out)
}
