//! Which devices a report is about: DUT files, several of them for a
//! comparison, or the quick form of one record (and L(f) table) without a
//! DUT file; and every file they read.

use crate::io::dut::{Dut, LfQuantity, LfSource, TimeSource};
use crate::io::series::SeriesOptions;
use crate::{DataKind, Error, Result};
use std::path::{Path, PathBuf};

/// The quick form's settings: the device name, an L(f) table, and how to
/// read the record.
#[derive(Debug, Clone)]
pub struct QuickForm {
    /// Device name (default: the record's file name).
    pub name: Option<String>,
    /// An L(f) table for the phase-noise section (needs the carrier).
    pub lf: Option<PathBuf>,
    /// How to read the record.
    pub options: SeriesOptions,
}

/// A DUT file: its extension is `.toml` (any case).
pub fn is_dut_file(p: &Path) -> bool {
    p.extension()
        .and_then(|e| e.to_str())
        .is_some_and(|e| e.eq_ignore_ascii_case("toml"))
}

/// The quick form as an in-memory DUT: one record (and an L(f) table,
/// which needs the carrier), the device named after the record unless
/// `name`.
pub fn quick_dut(q: &QuickForm, input: &Path) -> Result<Dut> {
    let opts = &q.options;
    let name = q.name.clone().unwrap_or_else(|| {
        input
            .file_name()
            .map(|n| n.to_string_lossy().into_owned())
            .unwrap_or_else(|| "record".into())
    });
    let kind = opts.kind.unwrap_or(match opts.unit {
        Some(crate::units::ValueUnit::Freq(_)) => DataKind::Freq,
        _ => DataKind::Phase,
    });
    let mut phase_noise = Vec::new();
    if let Some(lf) = &q.lf {
        let carrier = opts.carrier.ok_or_else(|| {
            Error::option(
                "--lf",
                "needs --carrier (the carrier of the phase-noise table, e.g. 10MHz)",
            )
        })?;
        if !lf.is_file() {
            return Err(
                crate::io::ReadError::file(lf, "cannot open the L(f) table: no such file").into(),
            );
        }
        phase_noise.push(LfSource {
            name: lf
                .file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_default(),
            path: lf.clone(),
            quantity: LfQuantity::Lf,
            carrier,
            uncertainty_db: None,
        });
    }
    Ok(Dut {
        file: input.to_path_buf(),
        name,
        description: None,
        carrier: opts.carrier,
        records: vec![TimeSource {
            name: input
                .file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_default(),
            path: input.to_path_buf(),
            data: kind,
            tau0: opts.tau0,
            units: opts.unit,
            value_column: opts.value_column,
            time_column: opts.time_column,
            no_time_column: opts.no_time_column,
            snap: opts.snap,
            wrap: opts.wrap,
            comments: opts.comments.clone(),
            decimal_comma: opts.decimal_comma,
            binary: opts.binary,
            prepare: crate::io::dut::RECORD_STEPS,
            bandwidth: None,
        }],
        phase_noise,
        tie: Vec::new(),
        jitter: Vec::new(),
        wander: None,
        holdover: None,
        separate: None,
        timeline: None,
        limit_files: Vec::new(),
        decision: None,
    })
}

/// Every file a DUT reads (for the output check).
pub fn dut_inputs(dut: &Dut) -> Vec<&Path> {
    let mut inputs: Vec<&Path> = vec![dut.file.as_path()];
    inputs.extend(dut.records.iter().chain(&dut.tie).map(|r| r.path.as_path()));
    inputs.extend(dut.phase_noise.iter().map(|t| t.path.as_path()));
    inputs.extend(
        dut.jitter
            .iter()
            .flat_map(|j| {
                j.filter_files
                    .iter()
                    .chain(j.filter_set.iter().map(|s| &s.0))
            })
            .map(|p| p.as_path()),
    );
    if let Some(w) = &dut.wander {
        inputs.extend(w.mask_files.iter().map(|p| p.as_path()));
    }
    inputs.extend(dut.limit_files.iter().map(|p| p.as_path()));
    inputs
}

/// The devices of a report: several inputs are DUT files to compare; one
/// input is a DUT file, or a record read in the quick form. `quick_given`
/// says whether quick-form settings were given, which a DUT file refuses
/// (it holds them itself).
pub fn read_duts(inputs: &[PathBuf], quick: &QuickForm, quick_given: bool) -> Result<Vec<Dut>> {
    let Some(first) = inputs.first() else {
        return Err(Error::option("DUT|FILE", "give a DUT file or a record"));
    };
    Ok(if inputs.len() > 1 {
        if let Some(p) = inputs.iter().find(|p| !is_dut_file(p)) {
            return Err(Error::option(
                format!("{}", p.display()),
                "several inputs make a comparison of DUT files: each must be a .toml DUT file (docs/dut-file.md)",
            ));
        }
        if quick_given {
            return Err(Error::option(
                "--lf, --name, --tau0",
                "belong to the quick form of one record; a DUT file holds them itself",
            ));
        }
        inputs
            .iter()
            .map(|p| Dut::read(p).map_err(Error::from))
            .collect::<Result<_>>()?
    } else if is_dut_file(first) {
        if quick_given {
            return Err(Error::option(
                "--lf, --name, --tau0",
                "belong to the quick form; a DUT file holds them itself",
            ));
        }
        vec![Dut::read(first)?]
    } else {
        vec![quick_dut(quick, first)?]
    })
}
