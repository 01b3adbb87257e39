//! The bundled demo data (invented scenario, DESIGN.md §8) is what its
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
            (lo - 1.0).abs() < 1e-9 && (hi - 10e6).abs() < 1e-3,
            "{dev}: 1 Hz – 10 MHz"
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
