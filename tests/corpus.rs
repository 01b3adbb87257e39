//! The instrument-file corpus in `tests/data/`: invented files shaped like
//! what counters, loggers and analysers write (preambles, comments, units
//! in headers, quoted CSV, decimal commas, byte-order marks, PC stamps,
//! wrapping readings, a phase-noise export with a spur list), each read to
//! the right points, gaps, τ0 and values, and each broken variant refused
//! naming file and line. Also: tauwise's own outputs read back, and `.npy`
//! input written here by hand from numpy's published format description.
//!
//! Every corpus file is made by a generator below from a closed-form
//! formula; the first test checks that the files on disk are exactly what
//! the generators make (`TAUWISE_WRITE_CORPUS=1 cargo test --test corpus`
//! rewrites them), and the expected values are computed here from the same
//! formulas and the text as written (analytic; unit definitions: 1 ns =
//! 10⁻⁹ s, 1 ppb = 10⁻⁹; IEEE Std 1139 definition y = (ν − ν0)/ν0).

mod common;
use common::tauwise as bin;
use std::path::{Path, PathBuf};
use tauwise::io::lf_table::{read_lf_table, TableOptions};
use tauwise::io::parallel::RowReading;
use tauwise::io::series::{read_series, read_series_with, Series, SeriesOptions, UnitSource};
use tauwise::io::ReadError;
use tauwise::units::{FreqUnit, PhaseUnit, ValueUnit};
use tauwise::{DataKind, Record};

const BOM: &str = "\u{feff}";

fn data_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data")
}

fn path(name: &str) -> PathBuf {
    data_dir().join(name)
}

fn values(r: &Record) -> &[f64] {
    match r {
        Record::Phase(p) => &p.x,
        Record::Frequency(f) => &f.y,
    }
}

fn read(name: &str, opts: &SeriesOptions) -> Series {
    read_series(&path(name), opts).unwrap_or_else(|e| panic!("{name}: {e}"))
}

fn refused(name: &str, opts: &SeriesOptions, line: u64, text: &str) {
    let e = read_series(&path(name), opts).expect_err(name);
    let m = e.to_string();
    assert_eq!(e.line, Some(line), "{name}: {m}");
    assert!(m.contains(name), "{m}");
    assert!(m.contains(&format!(":{line}:")), "{m}");
    assert!(m.contains(text), "expected '{text}' in: {m}");
}

/// Compare a record with expected values (NaN = gap), relative 1e-12.
fn check(name: &str, got: &[f64], want: &[f64]) {
    assert_eq!(got.len(), want.len(), "{name}: length");
    for (i, (a, b)) in got.iter().zip(want).enumerate() {
        assert!(
            (a.is_nan() && b.is_nan()) || (a - b).abs() <= 1e-12 * b.abs().max(1e-300),
            "{name}[{i}]: {a} vs {b}"
        );
    }
}

fn num(s: &str) -> f64 {
    s.parse().unwrap()
}

// ------------------------------------------------------------ generators

/// Counter log: 1200 s at 1 s from 2024-03-11 09:00:00 UTC, the minute
/// 09:07 missing, one outlier at 09:15:00 (i = 900). x_i in ns.
fn counter_x(i: usize) -> f64 {
    let t = i as f64;
    let mut x = 12.3 + 0.0021 * t + 0.05 * (0.7 * t).sin() + 0.03 * (2.3 * t).sin();
    if i == 900 {
        x += 35.0;
    }
    x
}
const COUNTER_GAP: std::ops::Range<usize> = 420..480;
/// 2024-03-11T09:00:00Z in Unix seconds (19793 days × 86400 s + 9 h).
const COUNTER_START: i64 = 19793 * 86400 + 9 * 3600;

fn counter_log(bad_at: Option<usize>) -> String {
    let mut s = String::from(
        "Time interval log\n\
         Instrument: bench time-interval counter, unit 2\n\
         Channel A: DUT 10 MHz, channel B: house reference 10 MHz\n\
         Gate: 1 s, trigger level 0.5 V, slope rising\n\
         Started: 2024-03-11 09:00:00 UTC\n\
         \n\
         Timestamp,Time interval (ns)\n",
    );
    for i in (0..1200).filter(|i| !COUNTER_GAP.contains(i)) {
        let d = chrono::DateTime::from_timestamp(COUNTER_START + i as i64, 0).unwrap();
        let v = if bad_at == Some(i) {
            "12.34.5".to_string()
        } else {
            format!("{:.4}", counter_x(i))
        };
        s.push_str(&format!("{},{v}\n", d.format("%Y-%m-%dT%H:%M:%SZ")));
    }
    s
}
/// Line of row i of the counter log (8 lines before the first row).
fn counter_line(i: usize) -> u64 {
    8 + i as u64 - if i >= COUNTER_GAP.end { 60 } else { 0 }
}

/// Frequency log in Hz, 10 s gate, `;` comments, white-space columns.
fn freq_nu(i: usize) -> f64 {
    let t = i as f64;
    1e7 * (1.0 + 1.23e-11 + 2e-13 * (0.31 * t).sin() + 1e-13 * (1.7 * t).cos())
}

fn frequency_hz(backwards_at: Option<usize>) -> String {
    let mut s = String::from(
        "; frequency log of DUT-7 against the house reference\n\
         ; gate 10 s, counter in frequency mode\n\
         elapsed_s    frequency_Hz\n",
    );
    for i in 0..360 {
        if i == 180 {
            s.push_str("; operator note: lab door opened\n");
        }
        let t = if backwards_at == Some(i) {
            10 * (i - 1)
        } else {
            10 * i
        };
        s.push_str(&format!("{t:<12} {:.6}\n", freq_nu(i)));
    }
    s.push_str("; end of log\n");
    s
}

/// PC-stamped log: ppb readings at 1 s from 2024-06-03 14:00:00 UTC, the
/// PC clock's stamps off by up to ±30 ms, the reading at i = 300 missing.
fn pc_jitter_ms(i: usize) -> i64 {
    (30.0 * (2.1 * i as f64 + 0.4).sin()).round() as i64
}
fn pc_y(i: usize) -> f64 {
    let t = i as f64;
    0.5 + 0.01 * (0.05 * t).sin() + 0.004 * (1.3 * t).cos()
}
const PC_START: i64 = 19877 * 86400 + 14 * 3600;

fn pc_stamp_ms(i: usize, late_at: Option<usize>) -> i64 {
    let late = if late_at == Some(i) { 310 } else { 0 };
    (PC_START + i as i64) * 1000 + pc_jitter_ms(i) + late
}

fn pc_stamped(late_at: Option<usize>) -> String {
    let mut s = String::from(
        "# bench PC logging script; stamps from the PC clock (NTP)\n\
         # DUT-7 frequency offset against the house reference, gate 1 s\n\
         pc_time,freq_offset (ppb)\n",
    );
    for i in (0..600).filter(|&i| i != 300) {
        let ms = pc_stamp_ms(i, late_at);
        let d = chrono::DateTime::from_timestamp_millis(ms).unwrap();
        s.push_str(&format!(
            "{},{:.4}\n",
            d.format("%Y-%m-%d %H:%M:%S%.3f"),
            pc_y(i)
        ));
    }
    s
}
fn pc_line(i: usize) -> u64 {
    4 + i as u64 - u64::from(i > 300)
}

/// TIE in ns at 1/16 s, tab-separated.
fn tie_x(i: usize) -> f64 {
    let t = i as f64;
    0.2 * (0.01 * t).sin() + 0.05 * (0.37 * t).sin() + 0.001 * t
}

fn tie_16hz(text_at: Option<usize>) -> String {
    let mut s = String::from(
        "# TIE capture of DUT-7 against the house reference\n\
         # sampling: 16 per second\n\
         t (s)\tTIE (ns)\n",
    );
    for i in 0..4096 {
        let v = if text_at == Some(i) {
            "n/a".to_string()
        } else {
            format!("{:.3}", tie_x(i))
        };
        s.push_str(&format!("{:.4}\t{v}\n", i as f64 / 16.0));
    }
    s
}

/// A time-interval counter, 10 MHz against 10 MHz: readings wrap at 100 ns.
fn ti_true(i: usize) -> f64 {
    let t = i as f64;
    42.0 + 0.93 * t + 0.2 * (1.1 * t).sin()
}

fn wrapping_ti(jump_at: Option<usize>) -> String {
    let mut s = String::from(
        "# time-interval counter: start DUT 10 MHz, stop house reference 10 MHz\n\
         # one reading per second; the readings wrap every 100 ns\n\
         TI (ns)\n",
    );
    for i in 0..600 {
        let mut r = ti_true(i).rem_euclid(100.0);
        if jump_at == Some(i) {
            r = (r + 50.0).rem_euclid(100.0);
        }
        assert!(
            r > 0.001 && r < 99.999,
            "generator: reading {i} too near a wrap"
        );
        s.push_str(&format!("{r:.3}\n"));
    }
    s
}

/// Phase-noise export: 10 points per decade from 1 Hz to 1 MHz.
fn pn_offset(k: usize) -> f64 {
    10f64.powf(k as f64 / 10.0)
}
fn pn_lf(f: f64) -> f64 {
    10.0 * (10f64.powf(-9.6) / f.powi(3) + 10f64.powf(-11.8) / f + 10f64.powf(-15.2)).log10()
}

fn phase_noise_export(numbers_after_text: bool) -> String {
    let mut s = String::from(
        "Phase noise export\n\
         Device under test: DUT-7, 10 MHz OCXO\n\
         Carrier: 10.000000 MHz, 6.9 dBm\n\
         Offset range: 1 Hz to 1 MHz, 10 points per decade\n\
         Averages: 8\n\
         \n\
         Offset (Hz),Phase noise (dBc/Hz),Trace\n",
    );
    for k in 0..=60 {
        let f = pn_offset(k);
        s.push_str(&format!(
            "{:.3},{:.2},{}\n",
            f,
            pn_lf(f),
            if k % 2 == 0 { "averaged" } else { "smoothed" }
        ));
    }
    if numbers_after_text {
        s.push_str("Marker table\n2000000.000,-160.00,marker\n");
    } else {
        s.push_str("[spurs]\nOffset (Hz),Level (dBc)\n50,-101.5\n150,-108.2\n");
    }
    s
}

/// Quoted CSV with decimal commas inside quotes (four decimals: never a
/// thousands grouping).
fn quoted_x(i: usize) -> f64 {
    1.2884 + 0.0013 * i as f64 + 0.01 * (0.9 * i as f64).sin()
}

fn quoted(thousands_at: Option<usize>) -> String {
    let mut s = String::from(
        "\"Capture\",\"bench 3, channel 2\"\n\
         \"Operator\",\"shift B\"\n\
         \"time, s\",\"phase, ns\"\n",
    );
    for i in 0..300 {
        let v = if thousands_at == Some(i) {
            "1,288".to_string()
        } else {
            format!("{:.4}", quoted_x(i)).replace('.', ",")
        };
        s.push_str(&format!("\"{i}\",\"{v}\"\n"));
    }
    s
}

fn semicolon_x(i: usize) -> f64 {
    1.2345 + 0.0006 * i as f64
}

fn decimal_comma_semicolon() -> String {
    let mut s = String::from("Zeit (s);Phase (ns)\n");
    for i in 0..200 {
        s.push_str(&format!(
            "{i};{}\n",
            format!("{:.4}", semicolon_x(i)).replace('.', ",")
        ));
    }
    s
}

fn one_column_y(i: usize) -> f64 {
    -0.000092556 + 0.000000005 * i as f64
}

fn decimal_comma_one_column() -> String {
    let mut s = String::from("# Frequenzabweichung in ppm, Torzeit 1 s\n");
    for i in 0..100 {
        s.push_str(&format!(
            "{}\n",
            format!("{:.9}", one_column_y(i)).replace('.', ",")
        ));
    }
    s
}

fn spaces_x(i: usize) -> f64 {
    12.3451 + 0.0007 * i as f64
}

fn decimal_comma_spaces() -> String {
    let mut s = String::from("t_s      x_ns\n");
    for i in 0..120 {
        s.push_str(&format!(
            "{:<8} {}\n",
            format!("{:.1}", i as f64 * 0.5).replace('.', ","),
            format!("{:.4}", spaces_x(i)).replace('.', ",")
        ));
    }
    s
}

fn decimal_comma_ambiguous() -> String {
    "12,34\n12,56\n12,78\n13,12\n".to_string()
}

fn bom_one_column() -> String {
    let mut s = String::from(BOM);
    for i in 0..10 {
        s.push_str(&format!("{}.5e-9\n", i + 1));
    }
    s
}

fn bom_header() -> String {
    let mut s = format!("{BOM}time,phase (ns)\n");
    for i in 0..10 {
        s.push_str(&format!("{i},{}.5\n", i + 1));
    }
    s
}

fn bom_lf() -> String {
    format!("{BOM}f (Hz),L (dBc/Hz)\n1,-90\n10,-110\n100,-130\n1000,-145\n")
}

fn bom_limits() -> String {
    format!("{BOM}name = \"lab-limit\"\n\n[[limit]]\nmetric = \"mtie\"\nshape = \"loglog\"\npoints = [[\"0.1s\", \"40ns\"], [\"100s\", \"400ns\"]]\n")
}

fn bom_dut() -> String {
    format!(
        "{BOM}[device]\nname = \"dut-7\"\ncarrier = \"10MHz\"\n\n[[record]]\npath = \"bom-one-column.txt\"\ntau0 = \"1s\"\nunits = \"s\"\n"
    )
}

/// Every corpus file and its contents.
fn corpus() -> Vec<(&'static str, String)> {
    vec![
        ("counter-log.csv", counter_log(None)),
        ("broken/counter-log-bad-reading.csv", counter_log(Some(600))),
        ("frequency-hz.txt", frequency_hz(None)),
        ("broken/frequency-hz-backwards.txt", frequency_hz(Some(200))),
        ("pc-stamped.csv", pc_stamped(None)),
        ("broken/pc-stamped-late-stamp.csv", pc_stamped(Some(400))),
        ("tie-16hz.txt", tie_16hz(None)),
        ("broken/tie-16hz-text-value.txt", tie_16hz(Some(2000))),
        ("wrapping-ti.txt", wrapping_ti(None)),
        ("broken/wrapping-ti-half-period.txt", wrapping_ti(Some(300))),
        ("phase-noise-export.csv", phase_noise_export(false)),
        (
            "broken/phase-noise-numbers-after-text.csv",
            phase_noise_export(true),
        ),
        ("quoted.csv", quoted(None)),
        ("broken/quoted-thousands.csv", quoted(Some(5))),
        ("decimal-comma-semicolon.csv", decimal_comma_semicolon()),
        ("decimal-comma-one-column.txt", decimal_comma_one_column()),
        ("decimal-comma-spaces.txt", decimal_comma_spaces()),
        (
            "broken/decimal-comma-ambiguous.txt",
            decimal_comma_ambiguous(),
        ),
        ("bom-one-column.txt", bom_one_column()),
        ("bom-header.csv", bom_header()),
        ("bom-lf.csv", bom_lf()),
        ("bom-limits.toml", bom_limits()),
        ("bom-dut.toml", bom_dut()),
    ]
}

#[test]
fn corpus_files_are_what_the_generators_make() {
    let write = std::env::var_os("TAUWISE_WRITE_CORPUS").is_some();
    for (name, text) in corpus() {
        let p = path(name);
        if write {
            std::fs::create_dir_all(p.parent().unwrap()).unwrap();
            std::fs::write(&p, &text).unwrap();
        }
        let on_disk = std::fs::read_to_string(&p)
            .unwrap_or_else(|e| panic!("{name}: {e} (TAUWISE_WRITE_CORPUS=1 writes it)"));
        assert!(on_disk == text, "{name} differs from its generator");
    }
}

// ------------------------------------------------------------ the files

#[test]
fn counter_log_with_preamble_iso_stamps_missing_minute_and_outlier() {
    let s = read("counter-log.csv", &SeriesOptions::default());
    assert_eq!(s.record.kind(), DataKind::Phase);
    assert_eq!(s.record.tau0(), 1.0);
    assert_eq!(s.record.len(), 1200);
    assert_eq!(s.record.gaps(), 60);
    assert_eq!(s.info.inserted_gaps, 60);
    assert_eq!(s.info.unit, "ns");
    assert_eq!(s.info.unit_source, UnitSource::Header);
    assert_eq!(s.info.preamble_lines, 6);
    assert_eq!(s.info.preamble[0], "Time interval log");
    assert_eq!(s.info.header_line, Some(7));
    assert_eq!(s.info.start_time, Some(COUNTER_START as f64));
    let want: Vec<f64> = (0..1200)
        .map(|i| {
            if COUNTER_GAP.contains(&i) {
                f64::NAN
            } else {
                num(&format!("{:.4}", counter_x(i))) * 1e-9
            }
        })
        .collect();
    check("counter-log.csv", values(&s.record), &want);
    // The outlier is where it was written: 35 ns above its neighbours.
    let x = values(&s.record);
    assert!(x[900] - x[899] > 30e-9 && x[900] - x[901] > 30e-9);
    // --tau0 agrees with the stamps and keeps the missing minute.
    let s2 = read(
        "counter-log.csv",
        &SeriesOptions {
            tau0: Some(1.0),
            unit: Some(ValueUnit::Phase(PhaseUnit::Ns)),
            ..Default::default()
        },
    );
    assert_eq!((s2.record.len(), s2.record.gaps()), (1200, 60));
    // A --units that disagrees with the header is refused.
    let e = read_series(
        &path("counter-log.csv"),
        &SeriesOptions {
            unit: Some(ValueUnit::Phase(PhaseUnit::Ps)),
            ..Default::default()
        },
    )
    .unwrap_err();
    assert_eq!(e.line, Some(7), "{e}");
    assert!(e.to_string().contains("disagrees"), "{e}");
    // A --tau0 the stamps do not show is refused.
    let e = read_series(
        &path("counter-log.csv"),
        &SeriesOptions {
            tau0: Some(0.1),
            ..Default::default()
        },
    )
    .unwrap_err();
    assert!(e.to_string().contains("disagree"), "{e}");
    refused(
        "broken/counter-log-bad-reading.csv",
        &SeriesOptions::default(),
        counter_line(600),
        "'12.34.5'",
    );
}

#[test]
fn frequency_readings_in_hz_with_semicolon_comments() {
    let opts = SeriesOptions {
        carrier: Some(10e6),
        ..Default::default()
    };
    let s = read("frequency-hz.txt", &opts);
    assert_eq!(s.record.kind(), DataKind::Freq);
    assert_eq!(s.record.tau0(), 10.0);
    assert_eq!((s.record.len(), s.record.gaps()), (360, 0));
    assert_eq!(s.info.unit, "Hz");
    let want: Vec<f64> = (0..360)
        .map(|i| (num(&format!("{:.6}", freq_nu(i))) - 1e7) / 1e7)
        .collect();
    check("frequency-hz.txt", values(&s.record), &want);
    // Without the carrier: refused, asking for it.
    let e = read_series(&path("frequency-hz.txt"), &SeriesOptions::default()).unwrap_err();
    assert!(e.to_string().contains("--carrier"), "{e}");
    // Lines 1-3 preamble, a comment inside the data at line 184.
    refused(
        "broken/frequency-hz-backwards.txt",
        &opts,
        4 + 200 + 1,
        "not later",
    );
}

#[test]
fn pc_stamped_log_snaps_to_the_grid() {
    // Without --snap: τ0 is the lower median of the spacings (to 10
    // digits), and the reader stops at the first spacing that is not a
    // whole multiple of it within 1 %.
    let stamps: Vec<(usize, i64)> = (0..600)
        .filter(|&i| i != 300)
        .map(|i| (i, pc_stamp_ms(i, None)))
        .collect();
    let dts: Vec<(usize, f64)> = stamps
        .windows(2)
        .map(|w| (w[1].0, (w[1].1 - w[0].1) as f64 / 1000.0))
        .collect();
    let mut sorted: Vec<f64> = dts.iter().map(|d| d.1).collect();
    sorted.sort_by(f64::total_cmp);
    let tau0 = sorted[(sorted.len() - 1) / 2];
    let first_bad = dts
        .iter()
        .find(|(_, dt)| {
            let q = dt / tau0;
            (q - q.round()).abs() > 0.01
        })
        .unwrap()
        .0;
    refused(
        "pc-stamped.csv",
        &SeriesOptions::default(),
        pc_line(first_bad),
        "--snap",
    );
    let opts = SeriesOptions {
        snap: Some(0.25),
        ..Default::default()
    };
    let s = read("pc-stamped.csv", &opts);
    assert_eq!(s.record.kind(), DataKind::Freq);
    assert_eq!(s.record.tau0(), 1.0);
    assert_eq!((s.record.len(), s.record.gaps()), (600, 1));
    let want: Vec<f64> = (0..600)
        .map(|i| {
            if i == 300 {
                f64::NAN
            } else {
                num(&format!("{:.4}", pc_y(i))) * 1e-9
            }
        })
        .collect();
    check("pc-stamped.csv", values(&s.record), &want);
    // The largest distance from the grid through the first stamp, about the
    // mean distance (computed here from the stamps as written).
    let r: Vec<f64> = (0..600)
        .filter(|&i| i != 300)
        .map(|i| (pc_stamp_ms(i, None) - pc_stamp_ms(0, None) - 1000 * i as i64) as f64 / 1000.0)
        .collect();
    let mean = r.iter().sum::<f64>() / r.len() as f64;
    let largest = r.iter().map(|v| (v - mean).abs()).fold(0.0, f64::max);
    let snap = s.info.snap.unwrap();
    assert!(
        (snap.largest_jitter - largest).abs() < 1e-9,
        "{snap:?} vs {largest}"
    );
    assert!(snap.largest_jitter < 0.061);
    refused(
        "broken/pc-stamped-late-stamp.csv",
        &opts,
        pc_line(400),
        "off the τ0 grid",
    );
}

#[test]
fn tie_in_ns_at_a_sixteenth_of_a_second() {
    let s = read("tie-16hz.txt", &SeriesOptions::default());
    assert_eq!(s.record.tau0(), 0.0625);
    assert_eq!((s.record.len(), s.record.gaps()), (4096, 0));
    assert_eq!(s.info.unit, "ns");
    assert_eq!(s.info.header, Some(vec!["t (s)".into(), "TIE (ns)".into()]));
    let want: Vec<f64> = (0..4096)
        .map(|i| num(&format!("{:.3}", tie_x(i))) * 1e-9)
        .collect();
    check("tie-16hz.txt", values(&s.record), &want);
    refused(
        "broken/tie-16hz-text-value.txt",
        &SeriesOptions::default(),
        4 + 2000,
        "'n/a'",
    );
}

#[test]
fn wrapping_time_interval_readings() {
    let opts = SeriesOptions {
        tau0: Some(1.0),
        wrap: Some(100e-9),
        ..Default::default()
    };
    let s = read("wrapping-ti.txt", &opts);
    let want: Vec<f64> = (0..600)
        .map(|i| {
            let written = num(&format!("{:.3}", ti_true(i).rem_euclid(100.0)));
            (written + 100.0 * (ti_true(i) / 100.0).floor()) * 1e-9
        })
        .collect();
    check("wrapping-ti.txt", values(&s.record), &want);
    let wraps = (ti_true(599) / 100.0).floor() as usize;
    assert_eq!(s.info.unwrap.unwrap().wraps, wraps);
    // Read without --wrap, the jumps are seen and --wrap 100ns suggested.
    let plain = read(
        "wrapping-ti.txt",
        &SeriesOptions {
            tau0: Some(1.0),
            ..Default::default()
        },
    );
    let hints = tauwise::io::series::suggestions(&plain);
    assert_eq!(hints.len(), 1, "{hints:?}");
    assert_eq!(hints[0].option, "--wrap 100ns");
    refused(
        "broken/wrapping-ti-half-period.txt",
        &opts,
        4 + 300,
        "half a period",
    );
}

#[test]
fn phase_noise_export_with_preamble_text_column_and_spurs() {
    let t = read_lf_table(
        &path("phase-noise-export.csv"),
        &TableOptions {
            carrier: Some(10e6),
            ..Default::default()
        },
    )
    .unwrap();
    assert_eq!(t.spectrum.len(), 61);
    assert_eq!(t.preamble.len(), 6);
    for k in 0..=60 {
        assert_eq!(t.spectrum.f[k], num(&format!("{:.3}", pn_offset(k))));
        assert_eq!(
            t.spectrum.values[k],
            num(&format!("{:.2}", pn_lf(pn_offset(k))))
        );
    }
    assert_eq!(t.spurs.len(), 2);
    assert_eq!((t.spurs[0].f, t.spurs[0].dbc), (50.0, -101.5));
    assert_eq!((t.spurs[1].f, t.spurs[1].dbc), (150.0, -108.2));
    let e = read_lf_table(
        &path("broken/phase-noise-numbers-after-text.csv"),
        &TableOptions::default(),
    )
    .unwrap_err();
    let m = e.to_string();
    assert!(m.contains("phase-noise-numbers-after-text.csv:69:"), "{m}");
    assert!(m.contains("'Marker'"), "{m}");
}

#[test]
fn quoted_csv_with_commas_inside_quotes() {
    let s = read("quoted.csv", &SeriesOptions::default());
    assert_eq!(s.record.tau0(), 1.0);
    assert_eq!(s.info.unit, "ns");
    assert_eq!(
        s.info.header,
        Some(vec!["time, s".into(), "phase, ns".into()])
    );
    let want: Vec<f64> = (0..300)
        .map(|i| num(&format!("{:.4}", quoted_x(i))) * 1e-9)
        .collect();
    check("quoted.csv", values(&s.record), &want);
    refused(
        "broken/quoted-thousands.csv",
        &SeriesOptions::default(),
        4 + 5,
        "--decimal-comma",
    );
    let s = read(
        "broken/quoted-thousands.csv",
        &SeriesOptions {
            decimal_comma: true,
            ..Default::default()
        },
    );
    assert!((values(&s.record)[5] - 1.288e-9).abs() < 1e-21);
}

#[test]
fn decimal_commas() {
    let s = read("decimal-comma-semicolon.csv", &SeriesOptions::default());
    let want: Vec<f64> = (0..200)
        .map(|i| num(&format!("{:.4}", semicolon_x(i))) * 1e-9)
        .collect();
    check("decimal-comma-semicolon.csv", values(&s.record), &want);
    assert!(s.info.decimal_comma.is_some());

    let s = read(
        "decimal-comma-one-column.txt",
        &SeriesOptions {
            tau0: Some(1.0),
            unit: Some(ValueUnit::Freq(FreqUnit::Ppm)),
            ..Default::default()
        },
    );
    let want: Vec<f64> = (0..100)
        .map(|i| num(&format!("{:.9}", one_column_y(i))) * 1e-6)
        .collect();
    check("decimal-comma-one-column.txt", values(&s.record), &want);
    // The sign is kept and the scale right (issue 13: read as two columns,
    // -0 and 92556, before).
    assert!(values(&s.record)[0] < 0.0 && values(&s.record)[0] > -1e-10);

    let s = read("decimal-comma-spaces.txt", &SeriesOptions::default());
    assert_eq!(s.record.tau0(), 0.5);
    let want: Vec<f64> = (0..120)
        .map(|i| num(&format!("{:.4}", spaces_x(i))) * 1e-9)
        .collect();
    check("decimal-comma-spaces.txt", values(&s.record), &want);

    let tau = SeriesOptions {
        tau0: Some(1.0),
        ..Default::default()
    };
    refused(
        "broken/decimal-comma-ambiguous.txt",
        &tau,
        1,
        "--decimal-comma",
    );
    let s = read(
        "broken/decimal-comma-ambiguous.txt",
        &SeriesOptions {
            decimal_comma: true,
            ..tau
        },
    );
    assert_eq!(values(&s.record), &[12.34, 12.56, 12.78, 13.12]);
}

#[test]
fn byte_order_marks_are_skipped_by_every_reader() {
    let s = read(
        "bom-one-column.txt",
        &SeriesOptions {
            tau0: Some(1.0),
            ..Default::default()
        },
    );
    assert_eq!(s.record.len(), 10);
    assert_eq!(values(&s.record)[0], 1.5e-9);
    assert!(s.info.bom);
    let s = read("bom-header.csv", &SeriesOptions::default());
    assert_eq!(
        s.info.header,
        Some(vec!["time".into(), "phase (ns)".into()])
    );
    assert_eq!(values(&s.record)[0], 1.5 * 1e-9);
    let t = read_lf_table(
        &path("bom-lf.csv"),
        &TableOptions {
            carrier: Some(10e6),
            ..Default::default()
        },
    )
    .unwrap();
    assert_eq!(t.spectrum.f, vec![1.0, 10.0, 100.0, 1000.0]);
    let m = tauwise::limits::read_limit_file(&path("bom-limits.toml")).unwrap();
    assert_eq!(m.limits.len(), 1);
    assert_eq!(m.name, "lab-limit");
    let d = tauwise::io::dut::Dut::read(&path("bom-dut.toml")).unwrap();
    assert_eq!(d.name, "dut-7");
}

// ------------------------------------------------------------ own outputs

fn run(args: &[&str]) -> std::process::Output {
    let o = bin().args(args).output().unwrap();
    assert!(
        o.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    o
}

#[test]
fn prepare_output_reads_back_with_stamps_and_gaps() {
    let d = tempfile::tempdir().unwrap();
    let out = d.path().join("clean.csv");
    let src = path("counter-log.csv");
    run(&[
        "prepare",
        src.to_str().unwrap(),
        "-o",
        out.to_str().unwrap(),
    ]);
    let a = read_series(&src, &SeriesOptions::default()).unwrap();
    let b = read_series(&out, &SeriesOptions::default()).unwrap();
    assert_eq!(b.record.tau0(), 1.0);
    assert_eq!(b.record.gaps(), 60);
    assert_eq!(b.info.start_time, Some(COUNTER_START as f64));
    assert_eq!(b.info.unit, "s");
    check("prepare output", values(&b.record), values(&a.record));
    // A frequency record with drift removed and decimated reads back too.
    let out2 = d.path().join("freq.csv");
    run(&[
        "prepare",
        path("frequency-hz.txt").to_str().unwrap(),
        "--carrier",
        "10MHz",
        "--decimate",
        "3",
        "-o",
        out2.to_str().unwrap(),
    ]);
    let c = read_series(&out2, &SeriesOptions::default()).unwrap();
    assert_eq!(c.record.kind(), DataKind::Freq);
    assert_eq!(c.record.tau0(), 30.0);
    assert_eq!(c.record.len(), 120);
}

#[test]
fn simulate_output_reads_back_without_options() {
    let d = tempfile::tempdir().unwrap();
    let out = d.path().join("sim.csv");
    run(&[
        "simulate",
        "--model",
        "h0=1e-22",
        "--tau0",
        "100ms",
        "--points",
        "1000",
        "--seed",
        "3",
        "--units",
        "ns",
        "-o",
        out.to_str().unwrap(),
    ]);
    let s = read_series(&out, &SeriesOptions::default()).unwrap();
    assert_eq!(s.record.tau0(), 0.1);
    assert_eq!(s.record.len(), 1000);
    assert_eq!(s.info.unit, "ns");
    // The same record read with the options the old files needed.
    let s2 = read_series(
        &out,
        &SeriesOptions {
            tau0: Some(0.1),
            unit: Some(ValueUnit::Phase(PhaseUnit::Ns)),
            ..Default::default()
        },
    )
    .unwrap();
    assert_eq!(s.record, s2.record);
    let out = d.path().join("simf.csv");
    run(&[
        "simulate",
        "--model",
        "h0=1e-22",
        "--points",
        "500",
        "--data",
        "freq",
        "--units",
        "ppb",
        "-o",
        out.to_str().unwrap(),
    ]);
    let s = read_series(&out, &SeriesOptions::default()).unwrap();
    assert_eq!(s.record.kind(), DataKind::Freq);
    assert_eq!(s.info.unit, "ppb");
}

#[test]
fn converted_and_measured_lf_tables_read_back() {
    let d = tempfile::tempdir().unwrap();
    // A model whose L(f) is above 0 dBc/Hz at 1 mHz (S_φ/2 > 1 rad²/Hz).
    let o = run(&[
        "convert",
        "--model",
        "h-2=1e-20,h0=1e-22,fh=1k",
        "--carrier",
        "10MHz",
        "--to",
        "lf",
        "--from",
        "1m",
        "--to-offset",
        "1k",
        "--format",
        "csv",
    ]);
    let lf = d.path().join("model-lf.csv");
    std::fs::write(&lf, &o.stdout).unwrap();
    let t = read_lf_table(
        &lf,
        &TableOptions {
            carrier: Some(10e6),
            ..Default::default()
        },
    )
    .unwrap();
    assert!(t.spectrum.values[0] > 0.0);
    assert!(
        t.notes.iter().any(|n| n.contains("above 0 dBc/Hz")),
        "{:?}",
        t.notes
    );
    let o = run(&[
        "jitter",
        lf.to_str().unwrap(),
        "--carrier",
        "10MHz",
        "--band",
        "10:100",
        "--format",
        "json",
    ]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert!(v["bands"][0]["rms_rad"].as_f64().unwrap() > 0.0);
    // spectrum's CSV reads back as a table.
    let sim = d.path().join("sim.csv");
    run(&[
        "simulate",
        "--model",
        "h0=1e-22",
        "--points",
        "4096",
        "-o",
        sim.to_str().unwrap(),
    ]);
    let o = run(&[
        "spectrum",
        sim.to_str().unwrap(),
        "--carrier",
        "10MHz",
        "--format",
        "csv",
    ]);
    let sp = d.path().join("spectrum.csv");
    std::fs::write(&sp, &o.stdout).unwrap();
    let t = read_lf_table(
        &sp,
        &TableOptions {
            carrier: Some(10e6),
            ..Default::default()
        },
    )
    .unwrap();
    assert!(t.spectrum.len() > 5);
}

#[test]
fn jitter_uses_the_spurs_listed_after_the_table() {
    let p = path("phase-noise-export.csv");
    let o = run(&[
        "jitter",
        p.to_str().unwrap(),
        "--carrier",
        "10MHz",
        "--band",
        "10:1k",
        "--format",
        "json",
    ]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["bands"][0]["spurs"], 2);
    // Spur power 2·10^(dBc/10) rad² each (one sideband, pure PM; module notes).
    let want = 2.0 * (10f64.powf(-10.15) + 10f64.powf(-10.82));
    let got = v["bands"][0]["spurs_rad2"].as_f64().unwrap();
    assert!((got - want).abs() < 1e-12 * want, "{got} vs {want}");
    assert_eq!(v["input"]["preamble_lines"].as_array().unwrap().len(), 6);
}

// ------------------------------------------------------------ .npy

/// An `.npy` file written here from numpy's format description (version
/// 1.0: magic, version, u16 header length, dictionary padded with spaces to
/// a multiple of 64 bytes ending in a newline, then the data).
fn npy(descr: &str, shape: &str, fortran: bool, data: &[u8]) -> Vec<u8> {
    let mut dict = format!(
        "{{'descr': '{descr}', 'fortran_order': {}, 'shape': {shape}, }}",
        if fortran { "True" } else { "False" }
    );
    while (10 + dict.len() + 1) % 64 != 0 {
        dict.push(' ');
    }
    dict.push('\n');
    let mut out = b"\x93NUMPY\x01\x00".to_vec();
    out.extend_from_slice(&(dict.len() as u16).to_le_bytes());
    out.extend_from_slice(dict.as_bytes());
    out.extend_from_slice(data);
    out
}

#[test]
fn npy_input() {
    let d = tempfile::tempdir().unwrap();
    let x: Vec<f64> = (0..1000).map(|i| (i as f64 * 0.1).sin() * 1e-9).collect();
    let le: Vec<u8> = x.iter().flat_map(|v| v.to_le_bytes()).collect();
    let p = d.path().join("x.npy");
    std::fs::write(&p, npy("<f8", "(1000,)", false, &le)).unwrap();
    let tau = SeriesOptions {
        tau0: Some(1.0),
        ..Default::default()
    };
    let s = read_series(&p, &tau).unwrap();
    assert_eq!(values(&s.record), &x[..]);
    // float32, big-endian.
    let be: Vec<u8> = x.iter().flat_map(|v| (*v as f32).to_be_bytes()).collect();
    std::fs::write(&p, npy(">f4", "(1000,)", false, &be)).unwrap();
    let s = read_series(&p, &tau).unwrap();
    assert_eq!(values(&s.record)[7], x[7] as f32 as f64);
    // 2-D rows of (time, value) with a jump of 3 τ0: gaps kept.
    let mut rows = Vec::new();
    let times: [f64; 5] = [0.0, 0.5, 1.0, 2.5, 3.0];
    for (i, t) in times.iter().enumerate() {
        rows.extend_from_slice(&t.to_le_bytes());
        rows.extend_from_slice(&(i as f64).to_le_bytes());
    }
    std::fs::write(&p, npy("<f8", "(5, 2)", false, &rows)).unwrap();
    let s = read_series(&p, &SeriesOptions::default()).unwrap();
    assert_eq!(s.record.tau0(), 0.5);
    assert_eq!(s.record.len(), 7);
    assert_eq!(s.info.inserted_gaps, 2);
    // The same, column after column (Fortran order), value column named.
    let mut cols = Vec::new();
    for t in times {
        cols.extend_from_slice(&t.to_le_bytes());
    }
    for i in 0..5 {
        cols.extend_from_slice(&(i as f64).to_le_bytes());
    }
    std::fs::write(&p, npy("<f8", "(5, 2)", true, &cols)).unwrap();
    let s2 = read_series(
        &p,
        &SeriesOptions {
            value_column: Some(2),
            time_column: Some(1),
            ..Default::default()
        },
    )
    .unwrap();
    assert_eq!(s.record.tau0(), s2.record.tau0());
    check("fortran order", values(&s2.record), values(&s.record));
    // Broken files are refused by name.
    std::fs::write(&p, &npy("<f8", "(1000,)", false, &le)[..500]).unwrap();
    let e = read_series(&p, &tau).unwrap_err();
    assert!(e.to_string().contains("truncated"), "{e}");
    std::fs::write(&p, npy("<i8", "(1000,)", false, &le)).unwrap();
    let e = read_series(&p, &tau).unwrap_err();
    assert!(e.to_string().contains("float64"), "{e}");
    let mut inf = le.clone();
    inf[80..88].copy_from_slice(&f64::INFINITY.to_le_bytes());
    std::fs::write(&p, npy("<f8", "(1000,)", false, &inf)).unwrap();
    let e = read_series(&p, &tau).unwrap_err();
    assert!(e.to_string().contains("row 11"), "{e}");
    // The command line reads it too.
    std::fs::write(&p, npy("<f8", "(1000,)", false, &le)).unwrap();
    let o = run(&[
        "inspect",
        p.to_str().unwrap(),
        "--tau0",
        "1s",
        "--format",
        "json",
    ]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["input"]["points"], 1000);
    assert_eq!(v["reading"]["format"], "npy");
}

// ------------------------------------------------------------ inspect

#[test]
fn inspect_shows_preamble_unit_decimal_comma_and_suggestions() {
    let p = path("counter-log.csv");
    let o = run(&["inspect", p.to_str().unwrap()]);
    let t = String::from_utf8_lossy(&o.stdout);
    assert!(
        t.contains("| Instrument: bench time-interval counter, unit 2"),
        "{t}"
    );
    assert!(t.contains("phase in ns (from the header)"), "{t}");
    let o = run(&["inspect", p.to_str().unwrap(), "--format", "json"]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["input"]["preamble_lines"][0], "Time interval log");
    assert_eq!(v["reading"]["unit_source"], "header");
    let p = path("decimal-comma-semicolon.csv");
    let o = run(&["inspect", p.to_str().unwrap()]);
    let t = String::from_utf8_lossy(&o.stdout);
    assert!(t.contains("decimal mark"), "{t}");
    let p = path("wrapping-ti.txt");
    let o = run(&["inspect", p.to_str().unwrap(), "--tau0", "1s"]);
    let t = String::from_utf8_lossy(&o.stdout);
    assert!(t.contains("--wrap 100ns — the readings jump"), "{t}");
    let o = run(&[
        "inspect",
        p.to_str().unwrap(),
        "--tau0",
        "1s",
        "--wrap",
        "100ns",
        "--format",
        "json",
    ]);
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["suggestions"].as_array().unwrap().len(), 0);
    // Frequency offset of the unwrapped record: 0.93 ns/s = 9.3e-10 (analytic
    // slope of ti_true), the sine adding at most 0.4 ns over the record.
    let y = v["frequency_offset"].as_f64().unwrap();
    assert!((y - 9.3e-10).abs() < 0.4e-9 / 599.0 + 1e-15, "{y}");
}

// ------------------------------------------- the block reader against the line reader

/// The outcome of one reading, in a form that compares exactly: the
/// record's values bit for bit (NaN gaps included), τ0, kind and every
/// fact; or the error's full message, line, column and cause.
fn outcome(r: Result<Series, ReadError>) -> String {
    match r {
        Ok(s) => {
            let bits: Vec<u64> = values(&s.record).iter().map(|v| v.to_bits()).collect();
            format!(
                "ok {:?} {} {:?} {:?}",
                s.record.kind(),
                s.record.tau0().to_bits(),
                bits,
                s.info
            )
        }
        Err(e) => format!(
            "error {e} | line {:?} column {:?} cause {:?}",
            e.line, e.column, e.cause
        ),
    }
}

/// The block reader (pieces parsed in parallel, `tauwise::io::parallel`)
/// gives exactly what the line-by-line reader gives — the same record bit
/// for bit, the same facts, or the same error on the same line — on every
/// file of the corpus (tests/data and tests/data/broken), under the options
/// the corpus tests use and a few more, with blocks and pieces small enough
/// that every file is cut in many places (down to one byte). The reference
/// is the line reader (the serial path the corpus tests above check
/// against the generators' closed forms).
#[test]
fn block_reader_equals_line_reader_on_every_corpus_file() {
    let mut files: Vec<PathBuf> = Vec::new();
    for dir in [data_dir(), data_dir().join("broken")] {
        for e in std::fs::read_dir(dir).unwrap() {
            let p = e.unwrap().path();
            if p.is_file() {
                files.push(p);
            }
        }
    }
    files.sort();
    assert!(files.len() >= 20, "{files:?}");
    let option_sets = [
        SeriesOptions::default(),
        SeriesOptions {
            tau0: Some(1.0),
            ..Default::default()
        },
        SeriesOptions {
            tau0: Some(1.0),
            no_time_column: true,
            ..Default::default()
        },
        SeriesOptions {
            carrier: Some(10e6),
            ..Default::default()
        },
        SeriesOptions {
            snap: Some(0.25),
            ..Default::default()
        },
        SeriesOptions {
            tau0: Some(1.0),
            wrap: Some(100e-9),
            ..Default::default()
        },
        SeriesOptions {
            decimal_comma: true,
            ..Default::default()
        },
        SeriesOptions {
            tau0: Some(1.0),
            value_column: Some(2),
            comments: "!".into(),
            ..Default::default()
        },
    ];
    let readings = [
        RowReading::Blocks { block: 1, piece: 1 },
        RowReading::Blocks { block: 7, piece: 3 },
        RowReading::Blocks {
            block: 100,
            piece: 10,
        },
        RowReading::Blocks {
            block: 4096,
            piece: 200,
        },
        RowReading::default(),
    ];
    let mut compared = 0;
    for f in &files {
        for opts in &option_sets {
            let want = outcome(read_series_with(f, opts, RowReading::Serial));
            for r in readings {
                let got = outcome(read_series_with(f, opts, r));
                assert!(
                    got == want,
                    "{} {opts:?} {r:?}:\n block: {}\n  line: {}",
                    f.display(),
                    &got[..got.len().min(400)],
                    &want[..want.len().min(400)]
                );
                compared += 1;
            }
        }
    }
    assert!(compared >= 20 * 8 * 5);
}
