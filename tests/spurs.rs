//! Spurs found in a measured trace (src/spectrum/spurs.rs) against analytic
//! sums: a flat trace with injected tones, the same without, and a spur list
//! naming one of them.

mod common;

use common::{json_of, write};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use serde_json::Value;
use std::fmt::Write as _;

/// A trace of one point every 100 Hz from 1 kHz to 1 MHz at −150 dBc/Hz,
/// with tones raised to `tones` (offset, dBc/Hz at that point) and an
/// optional seeded ripple of ±`ripple` dB.
fn trace(tones: &[(f64, f64)], ripple: f64) -> String {
    let mut rng = ChaCha8Rng::seed_from_u64(5);
    let mut t = String::from("offset (Hz),L (dBc/Hz)\n");
    for i in 10..=10_000 {
        let f = 100.0 * i as f64;
        let mut l = -150.0 + ripple * (2.0 * rng.gen::<f64>() - 1.0);
        for &(ft, lt) in tones {
            if (f - ft).abs() < 1.0 {
                l = lt;
            }
        }
        let _ = writeln!(t, "{f},{l}");
    }
    t
}

const TONES: [(f64, f64); 2] = [(12_300.0, -120.0), (456_700.0, -125.0)];

/// The level the rule gives a one-point tone on a −150 dBc/Hz floor with
/// 100 Hz between points (analytic: the run's excess power times its share
/// of the offset axis).
fn tone_dbc(l: f64) -> f64 {
    10.0 * ((10f64.powf(l / 10.0) - 1e-15) * 100.0).log10()
}

/// Two tones found exactly (offset, level) and integrated once: the band's
/// σ_φ² is the floor's 2·10^{−15}·(f2 − f1) plus 2·10^{L_s/10} per tone
/// (analytic; IEEE Std 1139 SSB convention).
#[test]
fn injected_tones_are_found_and_counted_once() {
    let dir = tempfile::tempdir().unwrap();
    let table = write(dir.path(), "trace.csv", &trace(&TONES, 0.0));
    let doc = json_of(
        "jitter",
        &[
            table.to_str().unwrap(),
            "--carrier",
            "10MHz",
            "--band",
            "2k:900k",
            "--format",
            "json",
        ],
    );
    let found = doc["found_spurs"].as_array().unwrap();
    assert_eq!(found.len(), 2, "{found:?}");
    for (s, &(f, l)) in found.iter().zip(&TONES) {
        assert_eq!(s["offset_hz"].as_f64().unwrap(), f);
        assert!((s["level_dbc"].as_f64().unwrap() - tone_dbc(l)).abs() < 1e-9);
        assert_eq!(s["replaced_by_listed"], false);
    }
    let got = doc["bands"][0]["rms_rad"].as_f64().unwrap().powi(2);
    let want = 2e-15 * (900e3 - 2e3)
        + TONES
            .iter()
            .map(|&(_, l)| 2.0 * 10f64.powf(tone_dbc(l) / 10.0))
            .sum::<f64>();
    assert!((got / want - 1.0).abs() < 1e-6, "{got} {want}");
    assert_eq!(doc["bands"][0]["spurs"], 2);
    // Without the search the peaks stay in the noise integral, interpolated
    // between their neighbours: a different (and unstated) figure.
    let plain = json_of(
        "jitter",
        &[
            table.to_str().unwrap(),
            "--carrier",
            "10MHz",
            "--band",
            "2k:900k",
            "--no-spur-search",
            "--format",
            "json",
        ],
    );
    assert!(plain["found_spurs"].as_array().unwrap().is_empty());
    assert_eq!(plain["spur_rule"], Value::Null);
}

/// A trace with a ±1 dB ripple and no tone finds none (the 10 dB rule).
#[test]
fn a_trace_without_tones_finds_none() {
    let dir = tempfile::tempdir().unwrap();
    let table = write(dir.path(), "trace.csv", &trace(&[], 1.0));
    let doc = json_of(
        "jitter",
        &[
            table.to_str().unwrap(),
            "--carrier",
            "10MHz",
            "--band",
            "2k:900k",
            "--format",
            "json",
        ],
    );
    assert!(doc["found_spurs"].as_array().unwrap().is_empty());
    assert_eq!(doc["bands"][0]["spurs"], 0);
}

/// A listed spur where a tone is found takes its place: the trace is
/// cleaned there, the listed level is used, the tone is not added again
/// (analytic sum; before, `--spurs` added its tone on top of the peak).
#[test]
fn a_listed_spur_takes_the_place_of_a_found_one() {
    let dir = tempfile::tempdir().unwrap();
    let table = write(dir.path(), "trace.csv", &trace(&TONES, 0.0));
    let spurs = write(dir.path(), "spurs.csv", "12300,-98\n");
    let doc = json_of(
        "jitter",
        &[
            table.to_str().unwrap(),
            "--carrier",
            "10MHz",
            "--band",
            "2k:900k",
            "--spurs",
            spurs.to_str().unwrap(),
            "--format",
            "json",
        ],
    );
    let found = doc["found_spurs"].as_array().unwrap();
    assert_eq!(found[0]["replaced_by_listed"], true);
    assert_eq!(found[1]["replaced_by_listed"], false);
    let got = doc["bands"][0]["rms_rad"].as_f64().unwrap().powi(2);
    let want =
        2e-15 * (900e3 - 2e3) + 2.0 * 10f64.powf(-9.8) + 2.0 * 10f64.powf(tone_dbc(-125.0) / 10.0);
    assert!((got / want - 1.0).abs() < 1e-6, "{got} {want}");
}
