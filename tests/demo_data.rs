//! The bundled demo data (invented scenario, demo-data/README.md) is what its
//! README says it is.

use std::path::Path;
use tauwise::io::lf_table::{read_lf_table, TableOptions};

/// Common practice (no published source): a good 10 MHz reference has a
/// phase-noise floor of about −150 to −160 dBc/Hz; the demo tables must lie
/// in that range (issue 4).
#[test]
fn demo_phase_noise_floors_are_plausible() {
    for dev in ["ocxo-a", "ocxo-b", "rb-1"] {
        let path = Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("demo-data")
            .join(format!("{dev}-lf.csv"));
        let t = read_lf_table(&path, &TableOptions::default()).unwrap();
        let lf = t
            .spectrum
            .values_as(tauwise::spectrum::Quantity::Lf)
            .unwrap();
        let floor = lf.iter().copied().fold(f64::INFINITY, f64::min);
        assert!(
            (-160.0..=-150.0).contains(&floor),
            "{dev}: floor {floor:.1} dBc/Hz"
        );
        let (lo, hi) = t.spectrum.range();
        assert!(
            (lo - 0.01).abs() < 1e-12 && (hi - 10e6).abs() < 1e-3,
            "{dev}: 10 mHz – 10 MHz"
        );
    }
}

/// Each DUT file of the demo names files that exist and parse.
#[test]
fn demo_dut_files_load() {
    for dev in ["ocxo-a", "ocxo-b", "rb-1"] {
        let path = Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("demo-data")
            .join(format!("{dev}.toml"));
        let dut = tauwise::io::dut::Dut::read(&path);
        assert!(dut.is_ok(), "{dev}: {:?}", dut.err());
    }
}

/// The demo's two views of each unit overlap and agree (DESIGN §8: tables
/// from 10 mHz so that they reach into the records' bandwidth): the record's
/// OADEV with its linear drift removed, as the report shows it, against the
/// table's σ(τ) at the record's bandwidth 1/(2τ0) (IEEE Std 1139
/// σ ↔ S_y), at three τ or more, every one within the tolerance.
#[test]
fn demo_views_overlap_and_agree() {
    use tauwise::deviation::Estimator;
    use tauwise::io::series::{read_series, SeriesOptions};
    use tauwise::prepare::{fit_drift, remove_drift, DriftModel};
    use tauwise::stability::{analyse, from_phase_noise, Request, ViewOptions};
    use tauwise::units::{PhaseUnit, ValueUnit};
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    for dev in ["ocxo-a", "ocxo-b", "rb-1"] {
        let s = read_series(
            &dir.join(format!("{dev}-phase.txt")),
            &SeriesOptions {
                unit: Some(ValueUnit::Phase(PhaseUnit::Ns)),
                tau0: Some(1.0),
                ..SeriesOptions::default()
            },
        )
        .unwrap();
        let fit = fit_drift(&s.record, DriftModel::Linear).unwrap();
        let x = remove_drift(&s.record, &fit).to_phase();
        let curves = analyse(&x, &Request::new(vec![Estimator::Oadev])).unwrap();
        let t = read_lf_table(
            &dir.join(format!("{dev}-lf.csv")),
            &TableOptions {
                carrier: Some(10e6),
                ..TableOptions::default()
            },
        )
        .unwrap();
        let v = from_phase_noise(&curves, &t.spectrum, 1.0, &ViewOptions::default()).unwrap();
        let c = &v.comparisons[0];
        assert!(c.apart.is_none(), "{dev}: {:?}", c.apart);
        assert!(c.points.len() >= 3, "{dev}: {:?}", c.points);
        assert_eq!(c.agree(), Some(true), "{dev}: {:?}", c.points);
    }
}
