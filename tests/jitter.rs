//! Integrated jitter against the analytic cases of docs/checks.md §E and closed
//! forms of weighted integrals.

use std::f64::consts::PI;
use tauwise::spectrum::jitter::{integrate_band, Band, FilterTable, JitterSetup, Spur, Weighting};
use tauwise::spectrum::loglog::LogLog;
use tauwise::spectrum::{Quantity, Spectrum};

fn flat(l: f64, carrier: f64) -> Spectrum {
    Spectrum::new(vec![1.0, 1e9], vec![l, l], Quantity::Lf, Some(carrier)).unwrap()
}

/// docs/checks.md §E (analytic): flat −150 dBc/Hz, 12 kHz–20 MHz, 100 MHz carrier:
/// σ_φ² = 2·10^−15·(20e6 − 12e3) rad², σ_φ = 1.99940e−4 rad,
/// σ_t = 3.1822e−13 s; to 1e−6 relative against the closed form.
#[test]
fn flat_floor_100mhz() {
    let j = integrate_band(
        &flat(-150.0, 100e6),
        Band {
            from: 12e3,
            to: 20e6,
        },
        &JitterSetup::default(),
        None,
    )
    .unwrap();
    let exact = (2e-15f64 * (20e6 - 12e3)).sqrt();
    assert!((j.rms_rad / exact - 1.0).abs() < 1e-6);
    assert!((j.rms_rad / 1.99940e-4 - 1.0).abs() < 5e-6, "{}", j.rms_rad);
    assert!((j.rms_s / 3.1822e-13 - 1.0).abs() < 5e-5, "{}", j.rms_s);
    assert!((j.rms_deg - exact.to_degrees()).abs() < 1e-12);
    assert_eq!(j.rms_ui, None);
    assert!(j.extrapolated.is_empty());
}

/// Analytic (issue 4, docs/checks.md §E): flat −155 dBc/Hz over 12 kHz–20 MHz on
/// a 10 MHz carrier is 1.124e−4 rad and 1.789 ps rms. With a 10.3125 Gb/s
/// line rate the UI figure is σ_t·R.
#[test]
fn flat_floor_10mhz_and_ui() {
    let j = integrate_band(
        &flat(-155.0, 10e6),
        Band {
            from: 12e3,
            to: 20e6,
        },
        &JitterSetup::default(),
        Some(10.3125e9),
    )
    .unwrap();
    assert!((j.rms_rad / 1.124e-4 - 1.0).abs() < 5e-4, "{}", j.rms_rad);
    assert!((j.rms_s / 1.789e-12 - 1.0).abs() < 5e-4, "{}", j.rms_s);
    assert!((j.rms_ui.unwrap() - j.rms_s * 10.3125e9).abs() < 1e-15);
    assert!((j.rms_s - j.rms_rad / (2.0 * PI * 10e6)).abs() < 1e-25);
}

/// Analytic: L falling at 20 dB/decade, L(f) = L0 − 20·log10(f/f0), gives
/// S_φ = 2·10^(L0/10)·(f0/f)² and ∫_a^b S_φ df = 2·10^(L0/10)·f0²·(1/a − 1/b).
#[test]
fn minus_20db_per_decade_segment() {
    let (f0, l0) = (100.0, -80.0);
    let s = Spectrum::new(vec![f0, 1e5], vec![l0, l0 - 60.0], Quantity::Lf, Some(10e6)).unwrap();
    let (a, b) = (150.0, 7e4);
    let j = integrate_band(&s, Band { from: a, to: b }, &JitterSetup::default(), None).unwrap();
    let want = 2.0 * 10f64.powf(l0 / 10.0) * f0 * f0 * (1.0 / a - 1.0 / b);
    assert!((j.rms_rad.powi(2) / want - 1.0).abs() < 1e-9);
    // Across a knot: −20 dB/dec then flat.
    let s2 = Spectrum::new(
        vec![f0, 1e3, 1e6],
        vec![l0, l0 - 20.0, l0 - 20.0],
        Quantity::Lf,
        Some(10e6),
    )
    .unwrap();
    let j2 = integrate_band(
        &s2,
        Band { from: f0, to: 1e6 },
        &JitterSetup::default(),
        None,
    )
    .unwrap();
    let s0 = 2.0 * 10f64.powf(l0 / 10.0);
    let want2 = s0 * f0 * f0 * (1.0 / f0 - 1.0 / 1e3) + s0 / 100.0 * (1e6 - 1e3);
    assert!((j2.rms_rad.powi(2) / want2 - 1.0).abs() < 1e-9);
}

/// Analytic: a first-order Butterworth high-pass on a flat floor S0:
/// ∫_a^b S0·f²/(f² + fc²) df = S0·[f − fc·atan(f/fc)]_a^b.
/// And second order: ∫ S0 f⁴/(f⁴ + fc⁴) df checked against its closed form
/// via the substitution of the standard integral ∫ dx/(1 + x⁴).
#[test]
fn highpass_on_flat_floor() {
    let l = -150.0;
    let s0 = 2.0 * 10f64.powf(l / 10.0);
    let fc = 50e3;
    let (a, b) = (1e3, 20e6);
    let setup = JitterSetup {
        filters: vec![Weighting::HighPass { order: 1, fc }],
        ..Default::default()
    };
    let j = integrate_band(&flat(l, 100e6), Band { from: a, to: b }, &setup, None).unwrap();
    let prim = |f: f64| f - fc * (f / fc).atan();
    let want = s0 * (prim(b) - prim(a));
    assert!(
        (j.rms_rad.powi(2) / want - 1.0).abs() < 1e-8,
        "{} {}",
        j.rms_rad.powi(2),
        want
    );
    assert!(j.filter.starts_with("highpass:1:"));
    // Low-pass first order: ∫ S0 /(1 + (f/fc)²) = S0·fc·[atan(f/fc)].
    let setup = JitterSetup {
        filters: vec![Weighting::LowPass { order: 1, fc }],
        ..Default::default()
    };
    let j = integrate_band(&flat(l, 100e6), Band { from: a, to: b }, &setup, None).unwrap();
    let want = s0 * fc * ((b / fc).atan() - (a / fc).atan());
    assert!((j.rms_rad.powi(2) / want - 1.0).abs() < 1e-8);
}

/// A filter file of |H|² = −3.0103 dB (one half) everywhere halves σ_φ²
/// (analytic); a filter file not covering the band is an error.
#[test]
fn filter_table_weighting() {
    let half_db = 10.0 * 0.5f64.log10();
    let h = LogLog::new(&[1.0, 1e8], &[10f64.powf(half_db / 10.0); 2]).unwrap();
    let base = integrate_band(
        &flat(-150.0, 100e6),
        Band {
            from: 12e3,
            to: 20e6,
        },
        &JitterSetup::default(),
        None,
    )
    .unwrap();
    let setup = JitterSetup {
        filter_tables: vec![FilterTable {
            name: "half".into(),
            table: h.clone(),
        }],
        ..Default::default()
    };
    let j = integrate_band(
        &flat(-150.0, 100e6),
        Band {
            from: 12e3,
            to: 20e6,
        },
        &setup,
        None,
    )
    .unwrap();
    assert!((j.rms_rad.powi(2) / base.rms_rad.powi(2) - 0.5).abs() < 1e-12);
    let narrow = LogLog::new(&[1e5, 1e6], &[1.0, 1.0]).unwrap();
    let setup = JitterSetup {
        filter_tables: vec![FilterTable {
            name: "narrow".into(),
            table: narrow,
        }],
        ..Default::default()
    };
    let e = integrate_band(
        &flat(-150.0, 100e6),
        Band {
            from: 12e3,
            to: 20e6,
        },
        &setup,
        None,
    )
    .unwrap_err();
    assert!(e.to_string().contains("filter file"), "{e}");
}

/// A spur at L_s dBc (one sideband) is a pure PM line of mean-square phase
/// 2·10^(L_s/10) rad² (analytic: β²/2 with sidebands (β/2)²); it counts only
/// inside the band and is weighted by the filter.
#[test]
fn spurs_add_their_power() {
    let s = flat(-160.0, 100e6);
    let band = Band {
        from: 12e3,
        to: 20e6,
    };
    let base = integrate_band(&s, band, &JitterSetup::default(), None).unwrap();
    let setup = JitterSetup {
        spurs: vec![Spur { f: 1e6, dbc: -70.0 }, Spur { f: 1e3, dbc: -40.0 }],
        ..Default::default()
    };
    let j = integrate_band(&s, band, &setup, None).unwrap();
    assert_eq!(j.spurs, 1);
    assert!((j.spurs_rad2 / 2e-7 - 1.0).abs() < 1e-12);
    assert!((j.rms_rad.powi(2) - base.rms_rad.powi(2) - 2e-7).abs() < 1e-18);
    let fc = 1e6;
    let setup = JitterSetup {
        spurs: vec![Spur { f: 1e6, dbc: -70.0 }],
        filters: vec![Weighting::HighPass { order: 2, fc }],
        ..Default::default()
    };
    let j = integrate_band(&s, band, &setup, None).unwrap();
    assert!(
        (j.spurs_rad2 / 1e-7 - 1.0).abs() < 1e-12,
        "|H|² = 1/2 at the corner"
    );
}

/// Bad input: a band outside the table is an error naming both ranges,
/// unless extrapolation is asked for, which then reports what was extrapolated.
/// A spectrum with no carrier cannot give jitter.
#[test]
fn band_outside_table() {
    let s = Spectrum::new(
        vec![10.0, 1e6],
        vec![-100.0, -150.0],
        Quantity::Lf,
        Some(10e6),
    )
    .unwrap();
    let band = Band {
        from: 12e3,
        to: 20e6,
    };
    let e = integrate_band(&s, band, &JitterSetup::default(), None).unwrap_err();
    assert!(
        e.to_string().contains("outside the table") && e.to_string().contains("--extrapolate"),
        "{e}"
    );
    let setup = JitterSetup {
        extrapolate: true,
        ..Default::default()
    };
    let j = integrate_band(&s, band, &setup, None).unwrap();
    assert_eq!(j.extrapolated, vec![(1e6, 20e6)]);
    // End slope continued: −10 dB/dec from (10, −100) to (1e6, −150), so
    // S_φ = 2e−15·(1e6/f) above the table and the tail is 2e−15·1e6·ln 20.
    let tail = 2e-15 * 1e6 * 20f64.ln();
    let inside = integrate_band(
        &s,
        Band {
            from: 12e3,
            to: 1e6,
        },
        &JitterSetup::default(),
        None,
    )
    .unwrap();
    assert!((j.rms_rad.powi(2) / (inside.rms_rad.powi(2) + tail) - 1.0).abs() < 1e-9);
    let mut nc = s.clone();
    nc.carrier = None;
    let e = integrate_band(
        &nc,
        Band {
            from: 12e3,
            to: 1e5,
        },
        &JitterSetup::default(),
        None,
    )
    .unwrap_err();
    assert!(e.to_string().contains("--carrier"), "{e}");
}
