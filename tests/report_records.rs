//! The report prepares every record before analysing it, as its DUT entry
//! says, and says what it did: a data-quality block per record, the drift
//! removed for the stability picture (by default), outliers named with their
//! times, gaps. Records are synthesised with tauwise's own power-law
//! synthesiser (Kasdin & Walter 1992, seeded); the checks name their source.

use std::fs;
use std::path::Path;
use tauwise::io::dut::Dut;
use tauwise::model::PowerLaw;
use tauwise::report::build::{from_dut, BuildOptions};
use tauwise::report::*;
use tauwise::simulate::{simulate_phase, SimSpec};

fn write_ns(path: &Path, x: &[f64]) {
    let text: String = x.iter().map(|v| format!("{}\n", v * 1e9)).collect();
    fs::write(path, text).unwrap();
}

fn report(dir: &Path, name: &str, dut: &str) -> Report {
    let p = dir.join(format!("{name}.toml"));
    fs::write(&p, dut).unwrap();
    from_dut(&Dut::read(&p).unwrap(), &BuildOptions::default()).unwrap()
}

fn sections(r: &Report) -> &[StabilitySection] {
    match &r.stability {
        Part::Done(s) => s,
        Part::Absent(a) => panic!("no stability section: {a:?}"),
    }
}

fn oadev_at(s: &StabilitySection, m: usize) -> f64 {
    s.rows
        .iter()
        .find(|r| r.estimator == tauwise::deviation::Estimator::Oadev && r.m == m)
        .unwrap_or_else(|| panic!("no oadev at m = {m}"))
        .dev
}

/// The holdover's fitted noise model, read back from the report.
fn holdover_noise(r: &Report) -> PowerLaw {
    let Part::Done(h) = &r.holdover else {
        panic!("no holdover section")
    };
    let m = &h
        .parameters
        .iter()
        .find(|(k, _)| k == "noise model")
        .unwrap()
        .1;
    PowerLaw::parse(m, 0.5).unwrap()
}

const TAIL: &str = "[holdover]\nbudget = \"1.5us\"\nspans = [\"2h\"]\npaths = 200\n";

/// A 100 ns phase hit (a step that stays) in an OCXO-like record: with
/// `outliers = 5` the report takes it out — ADEV(1 s) and the holdover's
/// fitted white-PM level are those of the clean record — and names it with
/// its time in the HTML; without the key it is still named (kept), and
/// ADEV(1 s) carries it exactly as the definition says: a step s adds
/// s²/((N − 2)·τ0²) to the overlapping Allan variance at τ0 (two second
/// differences of ±s among N − 2; NIST SP 1065 §5.2.4, analytic).
#[test]
fn a_phase_hit_is_named_and_taken_out() {
    let d = tempfile::tempdir().unwrap();
    let model = PowerLaw::parse("h2=7.9e-25,h0=2e-24,h-1=6.5e-26", 0.5).unwrap();
    let n = 20_000;
    let clean = simulate_phase(&SimSpec::new(model, 1.0, n, 5)).unwrap();
    let step = 1e-7;
    let mut hit = clean.x.clone();
    for v in hit.iter_mut().skip(12_000) {
        *v += step;
    }
    write_ns(&d.path().join("clean.txt"), &clean.x);
    write_ns(&d.path().join("hit.txt"), &hit);
    let dut = |file: &str, extra: &str| {
        format!(
            "[device]\nname = \"unit\"\n[[record]]\npath = \"{file}\"\ntau0 = \"1s\"\nunits = \"ns\"\n{extra}{TAIL}"
        )
    };
    let r_clean = report(d.path(), "clean", &dut("clean.txt", ""));
    let r_taken = report(d.path(), "taken", &dut("hit.txt", "outliers = 5\n"));
    let r_kept = report(d.path(), "kept", &dut("hit.txt", ""));
    let (c, t, k) = (
        &sections(&r_clean)[0],
        &sections(&r_taken)[0],
        &sections(&r_kept)[0],
    );
    // Taken out: ADEV(1 s) as clean (one frequency value of 20 000 is a gap).
    let a_clean = oadev_at(c, 1);
    assert!(
        (oadev_at(t, 1) / a_clean - 1.0).abs() < 0.01,
        "{} vs {a_clean}",
        oadev_at(t, 1)
    );
    // Kept: the analytic excess of the step.
    let want = (a_clean * a_clean + step * step / (n as f64 - 2.0)).sqrt();
    assert!(
        (oadev_at(k, 1) / want - 1.0).abs() < 0.01,
        "{} vs {want}",
        oadev_at(k, 1)
    );
    assert!(oadev_at(k, 1) > 20.0 * a_clean);
    // The holdover's noise fit: the white-PM level of the clean record, not
    // the step's.
    let (h_clean, h_taken, h_kept) = (
        holdover_noise(&r_clean),
        holdover_noise(&r_taken),
        holdover_noise(&r_kept),
    );
    let wpm = |m: &PowerLaw| m.avar(1.0);
    assert!(
        (wpm(&h_taken) / wpm(&h_clean) - 1.0).abs() < 0.1,
        "{h_taken:?} vs {h_clean:?}"
    );
    assert!(
        wpm(&h_kept) > 100.0 * wpm(&h_clean),
        "the kept step inflates the fit: {h_kept:?}"
    );
    // Named in the data-quality block and in the HTML, with its time:
    // y_11999 spans [11 999 s, 12 000 s], centre 11 999.5 s.
    let q = t.quality.as_ref().unwrap();
    let o = q.outliers.as_ref().unwrap();
    assert_eq!(o.events.len(), 1);
    assert_eq!(o.events[0].t, 11_999.5);
    for (r, words) in [
        (&r_taken, "phase step: taken out of the later phase"),
        (&r_kept, "kept (set outliers = K"),
    ] {
        let html = render_html(r).unwrap();
        assert!(html.contains("outlier at t = 11.9995 ks"), "time named");
        assert!(html.contains(words), "{words}");
    }
    assert!(!render_html(&r_clean).unwrap().contains("outlier at t ="));
}

/// Every `[[record]]` of the DUT file is analysed: a stability block and a
/// noise model each, under its own name, and its own charts.
#[test]
fn every_record_is_analysed() {
    let d = tempfile::tempdir().unwrap();
    let model = PowerLaw::parse("h0=1e-22", 0.5).unwrap();
    for (f, seed, tau0) in [("a.txt", 1, 1.0), ("b.txt", 2, 10.0)] {
        let x = simulate_phase(&SimSpec::new(model, tau0, 3000, seed)).unwrap();
        write_ns(&d.path().join(f), &x.x);
    }
    let r = report(
        d.path(),
        "two",
        "[device]\nname = \"unit\"\n\
         [[record]]\nname = \"first\"\npath = \"a.txt\"\ntau0 = \"1s\"\nunits = \"ns\"\n\
         [[record]]\nname = \"second\"\npath = \"b.txt\"\ntau0 = \"10s\"\nunits = \"ns\"\ndrift = \"none\"\n",
    );
    let s = sections(&r);
    assert_eq!(s.len(), 2);
    assert_eq!(
        (s[0].source.as_str(), s[1].source.as_str()),
        ("first", "second")
    );
    // The second record's τ grid starts at its own τ0.
    assert_eq!(
        s[1].rows
            .iter()
            .map(|r| r.tau)
            .fold(f64::INFINITY, f64::min),
        10.0
    );
    let Part::Done(models) = &r.noise_model else {
        panic!("no noise model")
    };
    assert_eq!(models.len(), 2);
    assert_eq!(models[1].source, "second");
    assert!(!models[1].model_string.is_empty());
    let stems: Vec<String> = charts(&r).into_iter().map(|c| c.0).collect();
    assert!(stems.contains(&"stability".to_string()));
    assert!(stems.contains(&"stability-2".to_string()), "{stems:?}");
    let html = render_html(&r).unwrap();
    assert!(html.contains("Record: second"));
    assert!(html.contains("No drift removed"));
}

/// Aging is drift, not noise. A record of white FM plus a linear frequency
/// drift D: with its drift kept the OADEV rises as D·τ/√2 at long τ (NIST
/// SP 1065 §5.2.4, drift's σ_y); by default the report removes the drift for
/// the stability picture, so the long-τ OADEV stays at the white-FM level
/// h0/(2τ) (IEEE Std 1139), and it says what it removed (value ± σ).
#[test]
fn drift_is_removed_from_the_stability_picture_by_default() {
    let d = tempfile::tempdir().unwrap();
    let h0 = 1e-22;
    let model = PowerLaw::parse("h0=1e-22", 0.5).unwrap();
    let drift = 1e-13; // per second
    let mut spec = SimSpec::new(model, 1.0, 16_384, 7);
    spec.drift_per_s = drift;
    let x = simulate_phase(&spec).unwrap();
    write_ns(&d.path().join("r.txt"), &x.x);
    let dut = |extra: &str| {
        format!(
            "[device]\nname = \"unit\"\n[[record]]\npath = \"r.txt\"\ntau0 = \"1s\"\nunits = \"ns\"\n{extra}"
        )
    };
    let removed = report(d.path(), "removed", &dut(""));
    let kept = report(d.path(), "kept", &dut("drift = \"none\"\n"));
    let m = 4096;
    let tau = m as f64;
    let white = (h0 / (2.0 * tau)).sqrt();
    let with_drift = (h0 / (2.0 * tau) + (drift * tau).powi(2) / 2.0).sqrt();
    let got_kept = oadev_at(&sections(&kept)[0], m);
    assert!(
        (got_kept / with_drift - 1.0).abs() < 0.1,
        "{got_kept} vs {with_drift}"
    );
    let got = oadev_at(&sections(&removed)[0], m);
    assert!(got < 2.0 * white && got > 0.4 * white, "{got} vs {white}");
    let prep = sections(&removed)[0].preparation.join("\n");
    assert!(
        prep.contains("Linear frequency drift removed: 8.64") && prep.contains("±"),
        "{prep}"
    );
    assert!(prep.contains("Holdover fits its own aging law"), "{prep}");
    let q = sections(&removed)[0].quality.as_ref().unwrap();
    assert!((q.drift_per_day.unwrap() / (drift * 86400.0) - 1.0).abs() < 0.05);
    assert!(q.drift_sigma_per_day.unwrap() > 0.0);
}

/// The holdover's starting frequency given in the DUT file (`y0`,
/// `y0_sigma`) is used instead of the record's end, and the report says so.
#[test]
fn holdover_y0_from_the_dut_file() {
    let d = tempfile::tempdir().unwrap();
    let model = PowerLaw::parse("h0=1e-22", 0.5).unwrap();
    let x = simulate_phase(&SimSpec::new(model, 1.0, 4000, 4)).unwrap();
    write_ns(&d.path().join("r.txt"), &x.x);
    let r = report(
        d.path(),
        "y0",
        "[device]\nname = \"unit\"\n[[record]]\npath = \"r.txt\"\ntau0 = \"1s\"\nunits = \"ns\"\n\
         [holdover]\nbudget = \"1us\"\nspans = [\"1h\"]\npaths = 100\ny0 = \"2e-12\"\ny0_sigma = \"1e-12\"\n",
    );
    let Part::Done(h) = &r.holdover else {
        panic!("no holdover section")
    };
    let y0 = &h
        .parameters
        .iter()
        .find(|(k, _)| k == "initial frequency y0")
        .unwrap()
        .1;
    assert!(y0.starts_with("2.0000e-12 ± 1.00e-12 (given"), "{y0}");
}
