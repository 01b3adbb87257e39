//! The comparison report of several devices: each device's report built
//! from its DUT file (in parallel, by the same [`super::build`] path as the
//! single report, so every verdict is the single report's; the holdover
//! Monte Carlo of all the devices in one run, each device's paths the
//! same as alone, [`crate::holdover::predict_many`]), the verdict
//! matrix ([`crate::results::FleetMatrix`]) with the answer first, charts
//! that overlay the devices — one colour and marker per device, the same
//! in every chart ([`crate::plot::style::DEVICE_PALETTE`]) — the summary
//! rows, and every device's full sections below, linked by anchors.
//!
//! Sections of the comparison (our own names): the answer; verdict matrix;
//! the devices side by side (charts); summary per device; then one block per
//! device with the single report's sections, ids prefixed `d1-`, `d2-`, ….

use super::{build, Report};
use crate::error::{Error, Result};
use crate::io::dut::Dut;
use crate::results::FleetMatrix;
use rayon::prelude::*;

mod charts;
mod page;

pub use charts::charts;
pub use page::{anchor, render_html, write};

/// The comparison sections, in document order (ids and headings).
pub const FLEET_SECTION_IDS: [(&str, &str); 4] = [
    ("answer", "The answer"),
    ("matrix", "Verdict matrix"),
    ("side-by-side", "The devices side by side"),
    ("summary", "Summary per device"),
];

/// Several devices' reports and their matrix.
#[derive(Debug, Clone, PartialEq)]
pub struct Fleet {
    /// Each device's report, in input order.
    pub reports: Vec<Report>,
    /// The matrix.
    pub matrix: FleetMatrix,
    /// When it was made (UTC, text).
    pub generated: String,
}

impl Fleet {
    /// The comparison of reports already built, each with its DUT file.
    /// Two devices of one name are refused: the legends, the ranking and
    /// the matrix name devices.
    pub fn from_reports(reports: Vec<Report>, duts: &[String]) -> Result<Self> {
        let names: Vec<&str> = reports.iter().map(|r| r.device.as_str()).collect();
        distinct_names(&names, duts)?;
        let pairs: Vec<(&Report, String)> = reports
            .iter()
            .zip(duts)
            .map(|(r, d)| (r, d.clone()))
            .collect();
        let matrix = FleetMatrix::build(&pairs);
        Ok(Self {
            reports,
            matrix,
            generated: super::now_utc(),
        })
    }
}

/// Refuse two devices of one name (`files` name their DUT files).
fn distinct_names(names: &[&str], files: &[String]) -> Result<()> {
    for (i, n) in names.iter().enumerate() {
        if let Some(j) = names[..i].iter().position(|o| o == n) {
            return Err(Error::invalid(format!(
                "{} and {} both name the device \"{n}\": give each DUT file its own [device] name",
                files.get(j).map(String::as_str).unwrap_or("?"),
                files.get(i).map(String::as_str).unwrap_or("?"),
            )));
        }
    }
    Ok(())
}

/// Build every device's report in parallel (rayon) and the matrix.
/// `progress(device, done, total, what)` is called before each step of
/// each device, from the worker threads.
///
/// The order of the work (the results do not depend on it): first every
/// device's inputs are read and its holdover model fitted
/// (`build::begin`); then the holdover Monte Carlo of all the devices
/// runs beside the devices' other sections (`build::analyse`), the two
/// sharing the cores (the Monte Carlo's workers take batches of paths
/// until none is left, so whichever finishes first helps the other);
/// then each report is finished with its predictions.
pub fn build(
    duts: &[Dut],
    opts: &build::BuildOptions,
    progress: &(dyn Fn(usize, usize, usize, &str) + Sync),
) -> Result<Fleet> {
    let files: Vec<String> = duts.iter().map(|d| d.file.display().to_string()).collect();
    let names: Vec<&str> = duts.iter().map(|d| d.name.as_str()).collect();
    distinct_names(&names, &files)?;
    let begun: Vec<(build::Begun, build::HoldoverStart)> = duts
        .par_iter()
        .enumerate()
        .map(|(i, d)| {
            build::begin(d, opts, &mut |done, total, what| {
                progress(i, done, total, what)
            })
        })
        .collect::<Result<Vec<_>>>()?;
    let (begun, holdovers): (Vec<build::Begun>, Vec<build::HoldoverStart>) =
        begun.into_iter().unzip();
    // Every device's holdover spans in one Monte Carlo: the unit paths of
    // the noise terms the devices share are drawn once (each device's
    // predictions are those of its single report, bit for bit).
    let counts: Vec<usize> = holdovers.iter().map(|h| h.jobs().len()).collect();
    let jobs: Vec<_> = holdovers.iter().flat_map(|h| h.jobs()).collect();
    let (predictions, analysed) = rayon::join(
        || crate::holdover::predict_many(&jobs),
        || {
            begun
                .into_par_iter()
                .zip(duts)
                .enumerate()
                .map(|(i, (b, d))| {
                    build::analyse(d, opts, b, &mut |done, total, what| {
                        progress(i, done, total, what)
                    })
                })
                .collect::<Result<Vec<Report>>>()
        },
    );
    let analysed = analysed?;
    let mut results = predictions.into_iter();
    let reports: Vec<Report> = analysed
        .into_iter()
        .zip(holdovers)
        .zip(duts)
        .zip(counts)
        .map(|(((r, h), d), k)| build::finish(d, r, h, results.by_ref().take(k).collect()))
        .collect();
    Fleet::from_reports(reports, &files)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The comparison's reports are the single reports, whole (every
    /// section, every verdict in the same order): the three demo devices
    /// and a fourth whose holdover model is refused (a settle window longer
    /// than its record), so that its "not computed" holdover verdicts are
    /// placed after the limit files' as in the single report, although the
    /// comparison fits the holdover models first and runs the Monte Carlo
    /// beside the other sections. Compared as printed (every f64 to the
    /// last bit), the time of making aside. Seeded Monte Carlo (the
    /// predictions of the same seeds).
    #[test]
    fn each_device_is_its_single_report() {
        let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data");
        let dir = std::env::temp_dir().join(format!("tauwise-fleet-order-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let text = std::fs::read_to_string(root.join("ocxo-a.toml"))
            .unwrap()
            .replace("name = \"ocxo-a\"", "name = \"ocxo-a, settle too long\"")
            .replace("path = \"", &format!("path = \"{}/", root.display()))
            .replace("[holdover]", "[holdover]\nsettle = \"30d\"");
        let refused = dir.join("refused.toml");
        std::fs::write(&refused, text).unwrap();
        let mut files: Vec<std::path::PathBuf> = ["ocxo-a", "ocxo-b", "rb-1"]
            .iter()
            .map(|n| root.join(format!("{n}.toml")))
            .collect();
        files.push(refused);
        let duts: Vec<Dut> = files.iter().map(|f| Dut::read(f).unwrap()).collect();
        let opts = build::BuildOptions::default();
        let fleet = super::build(&duts, &opts, &|_, _, _, _| {}).unwrap();
        std::fs::remove_dir_all(&dir).ok();
        assert_eq!(fleet.reports.len(), 4);
        for (dut, got) in duts.iter().zip(&fleet.reports) {
            let mut want = build::from_dut(dut, &opts).unwrap();
            want.generated.clone_from(&got.generated);
            assert_eq!(format!("{got:?}"), format!("{want:?}"), "{}", dut.name);
        }
        let last = &fleet.reports[3];
        assert!(matches!(
            last.holdover,
            super::super::Part::Absent(super::super::Absent::NotComputed(_))
        ));
        let kinds: Vec<_> = last.verdicts.iter().map(|v| v.kind).collect();
        assert_eq!(
            kinds.last(),
            Some(&super::super::VerdictKind::Holdover),
            "{kinds:?}"
        );
    }
}
