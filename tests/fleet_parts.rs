//! The verdict matrix put together from devices computed apart
//! (`FleetMatrix::combine`, what a distributed run gathers: each device's
//! one-row matrix, possibly shipped between machines) equals the matrix
//! of the comparison built on one machine (`report::fleet::build`):
//! columns, cells, absent checks, ranking and answer. The devices ask for
//! different checks (a jitter limit, holdover spans, both), so columns are
//! shared by some devices and absent from others.
//!
//! Records: seeded white-FM noise (Kasdin & Walter synthesis); the table a
//! flat −155 dBc/Hz floor, 1.789 ps rms over 12 kHz–20 MHz on 10 MHz
//! (analytic), so a 2 ps limit is met and a 1 ps limit exceeded.

use std::fs;
use std::path::{Path, PathBuf};
use tauwise::model::PowerLaw;
use tauwise::report::build::{from_dut, BuildOptions};
use tauwise::report::duts::{read_duts, QuickForm};
use tauwise::results::FleetMatrix;
use tauwise::simulate::{simulate_phase, SimSpec};

fn duts(d: &Path) -> Vec<PathBuf> {
    fs::write(d.join("lf.csv"), "1000,-155\n30000000,-155\n").unwrap();
    let jitter = |limit: &str| {
        format!("[[phase_noise]]\npath = \"lf.csv\"\n[[jitter]]\nband = \"12k:20M\"\nlimit = \"{limit}\"\n")
    };
    let hold = "[holdover]\nbudget = \"1us\"\nspans = [\"1h\", \"4h\"]\npaths = 200\nseed = 4\n";
    let mut out = Vec::new();
    for (name, h0, seed, checks) in [
        ("jitter-only", 1e-25, 5u64, jitter("2ps")),
        ("holdover-only", 1e-23, 6, hold.to_string()),
        ("both", 4e-24, 7, format!("{}{hold}", jitter("1ps"))),
    ] {
        let mut m = PowerLaw::zero(0.5);
        m.set(0, h0);
        let x = simulate_phase(&SimSpec::new(m, 1.0, 6000, seed)).unwrap();
        let text: String = x.x.iter().map(|v| format!("{}\n", v * 1e9)).collect();
        fs::write(d.join(format!("{name}.csv")), text).unwrap();
        let dut = format!(
            "[device]\nname = \"{name}\"\ncarrier = \"10MHz\"\n\
             [[record]]\npath = \"{name}.csv\"\ntau0 = \"1s\"\nunits = \"ns\"\n{checks}"
        );
        let p = d.join(format!("{name}.toml"));
        fs::write(&p, dut).unwrap();
        out.push(p);
    }
    out
}

#[test]
fn devices_computed_apart_combine_to_the_single_machine_matrix() {
    let dir = tempfile::tempdir().unwrap();
    let paths = duts(dir.path());
    let quick = QuickForm {
        name: None,
        lf: None,
        options: Default::default(),
    };
    let all = read_duts(&paths, &quick, false).unwrap();
    let opts = BuildOptions::default();
    let whole = tauwise::report::fleet::build(&all, &opts, &|_, _, _, _| {}).unwrap();

    // Each device alone (its one-row matrix), then gathered.
    let parts: Vec<FleetMatrix> = all
        .iter()
        .map(|d| {
            let r = from_dut(d, &opts).unwrap();
            FleetMatrix::build(&[(&r, d.file.display().to_string())])
        })
        .collect();
    let combined = FleetMatrix::combine(&parts).unwrap();
    assert_eq!(combined, whole.matrix);

    // A part read back from its serialised form (as a distributed run ships
    // it; the Python package uses MessagePack, exact for every f64) is the
    // part: every text and count equal, every number within the last digit
    // of JSON's decimal form.
    for p in &parts {
        let text = serde_json::to_string(p).unwrap();
        let back: FleetMatrix = serde_json::from_str(&text).unwrap();
        assert_eq!(back.columns, p.columns);
        assert_eq!(back.ranking, p.ranking);
        assert_eq!(back.answer, p.answer);
        for (a, b) in back.devices.iter().zip(&p.devices) {
            assert_eq!(
                (&a.name, &a.dut, a.rank, a.gate),
                (&b.name, &b.dut, b.rank, b.gate)
            );
            for (ca, cb) in a.checks.iter().zip(&b.checks) {
                assert_eq!(
                    (ca.verdict, ca.coverage, &ca.result),
                    (cb.verdict, cb.coverage, &cb.result)
                );
                let close = |x: Option<f64>, y: Option<f64>| match (x, y) {
                    (Some(x), Some(y)) => (x - y).abs() <= 1e-15 * y.abs(),
                    (x, y) => x.is_none() && y.is_none(),
                };
                assert!(close(ca.margin_db, cb.margin_db) && close(ca.ratio, cb.ratio));
            }
        }
    }

    // The columns are shared where the checks are the same and absent
    // otherwise: jitter 2 ps, jitter 1 ps, holdover 1 h and 4 h.
    assert_eq!(combined.columns.len(), 4);
    let absent = |row: usize| {
        combined.devices[row]
            .checks
            .iter()
            .filter(|c| c.verdict.is_none())
            .count()
    };
    assert_eq!((absent(0), absent(1), absent(2)), (3, 2, 1));

    // The order the parts arrive in is the matrix's input order.
    let mut reversed = parts.clone();
    reversed.reverse();
    let back = FleetMatrix::combine(&reversed).unwrap();
    assert_eq!(back.ranking, combined.ranking);
    assert_eq!(back.devices[0].name, "both");
}

#[test]
fn two_parts_of_one_device_name_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let paths = duts(dir.path());
    let quick = QuickForm {
        name: None,
        lf: None,
        options: Default::default(),
    };
    let all = read_duts(&paths[..1], &quick, false).unwrap();
    let r = from_dut(&all[0], &BuildOptions::default()).unwrap();
    let one = FleetMatrix::build(&[(&r, all[0].file.display().to_string())]);
    let e = FleetMatrix::combine(&[one.clone(), one]).unwrap_err();
    assert!(
        e.to_string()
            .contains("both name the device \"jitter-only\""),
        "{e}"
    );
}
