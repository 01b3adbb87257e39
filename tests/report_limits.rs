//! Limits in the report's sections and on the charts (issue 17 point 5):
//! σ limits checked on every record and `lf` limits on every table of a
//! DUT, shown in the σ–τ and L(f) tables beside the values and drawn on the
//! charts; the same lines on `stability --plot` and `jitter --plot`.

mod common;
use common::tauwise;
use std::fs;
use tauwise::io::dut::Dut;
use tauwise::model::PowerLaw;
use tauwise::report::build::{from_dut, BuildOptions};
use tauwise::report::*;
use tauwise::simulate::{simulate_phase, SimSpec};
use tauwise::verdict::Verdict;

/// A white-FM record (seeded Monte Carlo) with σ_y(τ) = √(h0/(2τ))
/// (IEEE Std 1139 / NIST SP 1065, analytic), written in ns.
fn wfm(path: &std::path::Path, h0: f64, seed: u64) {
    let mut m = PowerLaw::zero(0.5);
    m.set(0, h0);
    let x = simulate_phase(&SimSpec::new(m, 1.0, 2000, seed)).unwrap();
    let text: String = x.x.iter().map(|v| format!("{}\n", v * 1e9)).collect();
    fs::write(path, text).unwrap();
}

/// Analytic: a flat ADEV limit of 3e-12 over 1 s–100 s is met by white FM
/// with h0 = 1e-24 (σ_y(1 s) = 7.1e-13) and exceeded by h0 = 1e-22
/// (σ_y(1 s) = 7.1e-12); a flat −150 dBc/Hz table meets a −145 dBc/Hz
/// limit and a −140 dBc/Hz one exceeds it. With two records and two
/// tables where only the second of each violates, the report judges all
/// four (the second ones exceed), shows the limit beside the values and in
/// the L(f)-against-limit table, and draws the limit lines on the charts.
#[test]
fn report_checks_every_record_and_every_table() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    wfm(&d.join("a.csv"), 1e-24, 3);
    wfm(&d.join("b.csv"), 1e-22, 4);
    fs::write(d.join("lf-a.csv"), "10,-150\n1000000,-150\n").unwrap();
    fs::write(d.join("lf-b.csv"), "10,-140\n1000000,-140\n").unwrap();
    fs::write(
        d.join("lim.toml"),
        "name = \"lab\"\n[[limit]]\nmetric = \"adev\"\npoints = [[\"1s\", \"3e-12\"], [\"100s\", \"3e-12\"]]\n\
         [[limit]]\nmetric = \"lf\"\npoints = [[\"100Hz\", \"-145dBc/Hz\"], [\"100kHz\", \"-145dBc/Hz\"]]\n",
    )
    .unwrap();
    let rec = |n: &str| {
        format!("[[record]]\nname = \"{n}\"\npath = \"{n}.csv\"\ntau0 = \"1s\"\nunits = \"ns\"\ndrift = \"none\"\n")
    };
    fs::write(
        d.join("unit.toml"),
        format!(
            "[device]\nname = \"unit\"\ncarrier = \"10MHz\"\nlimit_files = [\"lim.toml\"]\n{}{}\
             [[phase_noise]]\nname = \"lf-a\"\npath = \"lf-a.csv\"\n[[phase_noise]]\nname = \"lf-b\"\npath = \"lf-b.csv\"\n",
            rec("a"),
            rec("b")
        ),
    )
    .unwrap();
    let rep = from_dut(
        &Dut::read(&d.join("unit.toml")).unwrap(),
        &BuildOptions::default(),
    )
    .unwrap();
    let sigma: Vec<&VerdictLine> = rep
        .verdicts
        .iter()
        .filter(|v| matches!(v.kind, VerdictKind::Limit))
        .collect();
    assert_eq!(sigma.len(), 2, "{:?}", rep.verdicts);
    assert_eq!(sigma[0].judgement.verdict, Verdict::Meets, "{:?}", sigma[0]);
    assert!(sigma[0].result.contains("'a'"), "{}", sigma[0].result);
    assert_eq!(
        sigma[1].judgement.verdict,
        Verdict::Exceeds,
        "{:?}",
        sigma[1]
    );
    assert!(sigma[1].result.contains("'b'"), "{}", sigma[1].result);
    let lf: Vec<&VerdictLine> = rep
        .verdicts
        .iter()
        .filter(|v| matches!(v.kind, VerdictKind::LimitPower))
        .collect();
    assert_eq!(lf.len(), 2, "{:?}", rep.verdicts);
    assert_eq!(lf[0].judgement.verdict, Verdict::Meets);
    assert_eq!(lf[1].judgement.verdict, Verdict::Exceeds);
    assert!(lf[1].result.contains("'lf-b'"), "{}", lf[1].result);
    // The stability sections carry their own checks and draw the line.
    let Part::Done(st) = &rep.stability else {
        panic!("stability missing")
    };
    assert_eq!(st[1].limit_checks[0].verdict(), Verdict::Exceeds);
    let (chart, _) = st[1].charts().unwrap();
    let line = chart
        .series
        .iter()
        .find(|s| s.name == "limit lab ADEV")
        .expect("the limit line on the σ–τ chart");
    // Drawn as checked: 3e-12 from 1 s to 100 s.
    assert!(line.points.iter().all(|p| (p.y - 3e-12).abs() < 1e-24));
    assert_eq!(line.points.first().unwrap().x, 1.0);
    assert_eq!(line.points.last().unwrap().x, 100.0);
    // The L(f) section (the first table) lists its checked points and
    // draws the limit.
    let Part::Done(pn) = &rep.phase_noise else {
        panic!("phase noise missing")
    };
    assert!(!pn.limit_rows.is_empty());
    for r in &pn.limit_rows {
        assert!((r.measured + 150.0).abs() < 1e-9 && (r.value + 145.0).abs() < 1e-9);
        assert!(r.offset >= 100.0 && r.offset <= 1e5);
    }
    assert!(pn.chart().series.iter().any(|s| s.name == "limit lab L(f)"));
    let html = render_html(&rep).unwrap();
    assert!(
        html.contains("limit at τ (measured/limit)"),
        "σ–τ column missing"
    );
    assert!(
        html.contains("L(f) against the limits"),
        "L(f) limit table missing"
    );
    assert!(
        html.contains("limit lab ADEV"),
        "limit line not in the chart's legend"
    );
}

/// The command line draws the same lines: `stability --plot` with a σ
/// limit and `jitter --plot` with an `lf` limit name them in the legend.
#[test]
fn plots_from_the_command_line_draw_the_limits() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    wfm(&d.join("a.csv"), 1e-24, 3);
    fs::write(d.join("lf.csv"), "10,-150\n1000000,-150\n").unwrap();
    fs::write(
        d.join("lim.toml"),
        "name = \"lab\"\n[[limit]]\nmetric = \"adev\"\nshape = \"step\"\npoints = [[\"1s\", \"3e-12\"], [\"100s\", \"1e-12\"]]\n\
         [[limit]]\nmetric = \"lf\"\npoints = [[\"100Hz\", \"-145dBc/Hz\"], [\"100kHz\", \"-155dBc/Hz\"]]\n",
    )
    .unwrap();
    let o = tauwise()
        .current_dir(d)
        .args(["stability", "a.csv", "--tau0", "1s", "--units", "ns"])
        .args(["--limit-file", "lim.toml", "--plot", "s.svg"])
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", common::stderr(&o));
    let svg = fs::read_to_string(d.join("s.svg")).unwrap();
    assert!(
        svg.contains("limit lab ADEV"),
        "no limit line on the σ–τ chart"
    );
    let o = tauwise()
        .current_dir(d)
        .args(["jitter", "lf.csv", "--carrier", "10MHz"])
        .args(["--limit-file", "lim.toml", "--plot", "j.svg"])
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", common::stderr(&o));
    let svg = fs::read_to_string(d.join("j.svg")).unwrap();
    assert!(
        svg.contains("limit lab L(f)"),
        "no limit line on the L(f) chart"
    );
}

/// Analytic (direct formula): a time record sampled once per carrier
/// period (τ0 = 1/ν0) has period jitter = the standard deviation of its
/// first differences x_{k+1} − x_k; when a `[[jitter]]` band asks for
/// period jitter, the report gives it for the record (the library function
/// of `jitter --record --period`), equal to the direct computation here.
#[test]
fn report_gives_period_jitter_from_the_record() {
    use rand::{Rng, SeedableRng};
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(21);
    let x: Vec<f64> = (0..4000)
        .map(|_| 2e-12 * rng.gen_range(-1.0..1.0))
        .collect();
    let text: String = x.iter().map(|v| format!("{}\n", v * 1e12)).collect();
    fs::write(d.join("clk.csv"), text).unwrap();
    fs::write(d.join("lf.csv"), "1000,-140\n10000000,-150\n").unwrap();
    fs::write(
        d.join("unit.toml"),
        "[device]\nname = \"unit\"\ncarrier = \"100MHz\"\n\
         [[record]]\nname = \"clk\"\npath = \"clk.csv\"\ntau0 = \"10ns\"\nunits = \"ps\"\ndrift = \"none\"\n\
         [[phase_noise]]\npath = \"lf.csv\"\n\
         [[jitter]]\nband = \"12kHz:20MHz\"\nperiod = true\n",
    )
    .unwrap();
    let rep = from_dut(
        &Dut::read(&d.join("unit.toml")).unwrap(),
        &BuildOptions::default(),
    )
    .unwrap();
    let Part::Done(pn) = &rep.phase_noise else {
        panic!("phase noise missing: {:?}", rep.phase_noise)
    };
    let note = pn
        .notes
        .iter()
        .find(|n| n.starts_with("Record clk: period jitter"))
        .unwrap_or_else(|| panic!("{:?}", pn.notes));
    let dx: Vec<f64> = x.windows(2).map(|w| w[1] - w[0]).collect();
    let mean = dx.iter().sum::<f64>() / dx.len() as f64;
    let sd = (dx.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (dx.len() - 1) as f64).sqrt();
    let shown = tauwise::units::format_si(sd, "s", 4);
    assert!(note.contains(&shown), "{note} vs {shown}");
}
