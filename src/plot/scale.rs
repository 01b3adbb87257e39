//! Axis scales: the data → plot transform, automatic ranges, tick positions
//! and tick labels with SI prefixes.
//!
//! A logarithmic axis works in log10 of the value; its major ticks are the
//! decades 10^k (the decade gridlines of a σ–τ plot) and its minor ticks
//! j·10^k, j = 2 … 9. A linear axis takes "nice" steps of 1, 2, 2.5 or 5 × 10^k
//! (common practice for chart axes).

use super::{AxisUnit, Scale};

/// One tick: its position in axis space (log10 of the value on a log axis)
/// and its label (empty for an unlabelled minor tick).
#[derive(Debug, Clone, PartialEq)]
pub struct Tick {
    /// Position in transformed (axis) space.
    pub pos: f64,
    /// The tick's label; empty for an unlabelled minor tick.
    pub label: String,
    /// Major ticks get a stronger gridline.
    pub major: bool,
}

/// The resolved scale of one axis: the transform, the visible range in axis
/// space, the ticks, and the unit suffix for the axis title.
#[derive(Debug, Clone, PartialEq)]
pub struct ResolvedAxis {
    /// Linear or logarithmic.
    pub scale: Scale,
    /// Visible range in axis space (lo < hi).
    pub lo: f64,
    /// Upper end of the visible range in axis space.
    pub hi: f64,
    /// Ticks within the range.
    pub ticks: Vec<Tick>,
    /// Unit text for the axis title, e.g. `µs` or `dBc/Hz` (may be empty).
    pub unit_text: String,
}

impl ResolvedAxis {
    /// Data value → axis space (None when the value cannot be shown, e.g.
    /// zero or negative on a log axis, or not finite).
    pub fn to_axis(&self, v: f64) -> Option<f64> {
        to_axis(self.scale, v)
    }
}

/// Data value → axis space for a scale.
pub fn to_axis(scale: Scale, v: f64) -> Option<f64> {
    match scale {
        Scale::Linear if v.is_finite() => Some(v),
        Scale::Log if v.is_finite() && v > 0.0 => Some(v.log10()),
        _ => None,
    }
}

/// Resolve an axis: range from `fixed` or from the data values, then ticks.
///
/// `values` are data values (not transformed); values that the scale cannot
/// show are ignored. With no usable value the range falls back to [1, 10]
/// (log) or [0, 1] (linear).
pub fn resolve(
    scale: Scale,
    unit: &AxisUnit,
    fixed: Option<(f64, f64)>,
    values: &[f64],
) -> ResolvedAxis {
    let (lo, hi) = match fixed.and_then(|(a, b)| {
        let (a, b) = (to_axis(scale, a)?, to_axis(scale, b)?);
        (b > a).then_some((a, b))
    }) {
        Some(r) => r,
        None => auto_range(scale, values),
    };
    let (ticks, unit_text) = match scale {
        Scale::Log => (log_ticks(lo, hi, unit), unit.symbol().to_string()),
        Scale::Linear => linear_ticks(lo, hi, unit),
    };
    ResolvedAxis {
        scale,
        lo,
        hi,
        ticks,
        unit_text,
    }
}

/// Automatic range in axis space. Log: outward to whole decades. Linear:
/// outward to a nice step, including zero when the data start within a quarter of the top.
pub fn auto_range(scale: Scale, values: &[f64]) -> (f64, f64) {
    let t: Vec<f64> = values.iter().filter_map(|&v| to_axis(scale, v)).collect();
    let (mut lo, mut hi) = t
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
            (a.min(v), b.max(v))
        });
    if !lo.is_finite() || !hi.is_finite() {
        return match scale {
            Scale::Log => (0.0, 1.0),
            Scale::Linear => (0.0, 1.0),
        };
    }
    match scale {
        Scale::Log => {
            let mut a = (lo + 1e-9).floor();
            let mut b = (hi - 1e-9).ceil();
            if b <= a {
                a -= 0.5;
                b += 0.5;
                a = a.floor();
                b = b.ceil();
            }
            (a, b)
        }
        Scale::Linear => {
            if hi - lo <= f64::EPSILON * hi.abs().max(lo.abs()).max(1e-300) {
                let pad = if lo == 0.0 { 1.0 } else { lo.abs() * 0.1 };
                lo -= pad;
                hi += pad;
            }
            // Bring in zero when it is near: a time-error axis should start at 0.
            if lo > 0.0 && lo <= 0.25 * hi {
                lo = 0.0;
            }
            if hi < 0.0 && -hi <= 0.25 * -lo {
                hi = 0.0;
            }
            let step = nice_step((hi - lo) / 6.0);
            let a = (lo / step + 1e-9).floor() * step;
            let b = (hi / step - 1e-9).ceil() * step;
            (a, if b > a { b } else { a + step })
        }
    }
}

/// The nice step (1, 2, 2.5, 5 × 10^k) nearest above `raw`.
pub fn nice_step(raw: f64) -> f64 {
    if !(raw.is_finite() && raw > 0.0) {
        return 1.0;
    }
    let e = raw.log10().floor();
    let base = 10f64.powf(e);
    let f = raw / base;
    let m = if f <= 1.0 + 1e-9 {
        1.0
    } else if f <= 2.0 + 1e-9 {
        2.0
    } else if f <= 2.5 + 1e-9 {
        2.5
    } else if f <= 5.0 + 1e-9 {
        5.0
    } else {
        10.0
    };
    m * base
}

fn log_ticks(lo: f64, hi: f64, unit: &AxisUnit) -> Vec<Tick> {
    let mut ticks = Vec::new();
    let k0 = (lo - 1e-9).floor() as i32;
    let k1 = (hi + 1e-9).ceil() as i32;
    let decades = (hi - lo).max(1e-9);
    // Label every decade up to 8 decades, then every other (or every third).
    let every = if decades <= 8.0 {
        1
    } else if decades <= 16.0 {
        2
    } else {
        3
    };
    // With less than ~1.5 decades visible, also label 2 and 5.
    let label_minor = decades < 1.5;
    for k in k0..=k1 {
        for j in 1..=9 {
            let v = j as f64 * 10f64.powi(k);
            let p = v.log10();
            if p < lo - 1e-9 || p > hi + 1e-9 {
                continue;
            }
            let major = j == 1;
            let labelled =
                (major && k.rem_euclid(every) == 0) || (label_minor && (j == 2 || j == 5));
            ticks.push(Tick {
                pos: p,
                label: if labelled {
                    log_label(j, k, unit)
                } else {
                    String::new()
                },
                major,
            });
        }
    }
    ticks
}

/// Unicode superscript form of an integer exponent (`-12` → `⁻¹²`).
pub fn superscript(n: i32) -> String {
    const DIGITS: [char; 10] = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];
    let mut s = String::new();
    if n < 0 {
        s.push('⁻');
    }
    for c in n.unsigned_abs().to_string().chars() {
        s.push(DIGITS[c.to_digit(10).unwrap_or(0) as usize]);
    }
    s
}

fn log_label(j: u32, k: i32, unit: &AxisUnit) -> String {
    let v = j as f64 * 10f64.powi(k);
    match unit {
        AxisUnit::Si(u) => si_compact(v, u),
        AxisUnit::Plain(_) => {
            if (0..=3).contains(&k) {
                format!("{}", v.round())
            } else if j == 1 {
                format!("10{}", superscript(k))
            } else {
                format!("{j}×10{}", superscript(k))
            }
        }
    }
}

/// The SI prefix (exponent, symbol) for a magnitude, from yocto to tera.
pub fn si_prefix(mag: f64) -> (i32, &'static str) {
    use crate::units::SI_PREFIXES as PREFIXES;
    if !(mag.is_finite() && mag > 0.0) {
        return (0, "");
    }
    let e = (mag.log10() + 1e-9).floor() as i32;
    let e3 = (e.div_euclid(3) * 3).clamp(-24, 12);
    PREFIXES
        .iter()
        .find(|p| p.0 == e3)
        .copied()
        .unwrap_or((0, ""))
}

/// A short SI form for a tick value: `1 ms`, `20 kHz`, `2.5 µs` (up to three
/// significant digits, trailing zeros dropped).
pub fn si_compact(v: f64, unit: &str) -> String {
    if v == 0.0 {
        return format!("0 {unit}").trim_end().to_string();
    }
    let (e3, p) = si_prefix(v.abs());
    let m = crate::units::round_sig(v / 10f64.powi(e3), 3);
    let s = trim_number(&format!("{m:.2}"));
    format!("{s} {p}{unit}").trim_end().to_string()
}

fn trim_number(s: &str) -> String {
    if s.contains('.') {
        let t = s.trim_end_matches('0').trim_end_matches('.');
        if t == "-0" {
            "0".into()
        } else {
            t.to_string()
        }
    } else {
        s.to_string()
    }
}

/// Linear ticks and the unit text (with the SI prefix chosen for the axis).
fn linear_ticks(lo: f64, hi: f64, unit: &AxisUnit) -> (Vec<Tick>, String) {
    let step = nice_step((hi - lo) / 6.0);
    let (scale, unit_text) = match unit {
        AxisUnit::Si(u) => {
            let (e3, p) = si_prefix(lo.abs().max(hi.abs()));
            (10f64.powi(e3), format!("{p}{u}"))
        }
        AxisUnit::Plain(u) => (1.0, u.clone()),
    };
    let scaled_step = step / scale;
    let decimals = if scaled_step >= 1.0 {
        // 2.5-steps need one decimal only when the step itself is 2.5.
        if (scaled_step / 10f64.powf(scaled_step.log10().floor()) - 2.5).abs() < 1e-9
            && scaled_step < 10.0
        {
            1
        } else {
            0
        }
    } else {
        let d = (-scaled_step.log10()).ceil() as usize;
        let frac = scaled_step * 10f64.powi(d as i32);
        if (frac - frac.round()).abs() > 1e-6 {
            d + 1
        } else {
            d
        }
    };
    let i0 = (lo / step - 1e-9).ceil() as i64;
    let i1 = (hi / step + 1e-9).floor() as i64;
    let mut ticks = Vec::new();
    for i in i0..=i1 {
        let v = i as f64 * step;
        let label = trim_number(&format!("{:.*}", decimals, v / scale));
        ticks.push(Tick {
            pos: v,
            label,
            major: true,
        });
    }
    (ticks, unit_text)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn log_range_snaps_to_decades() {
        let r = resolve(Scale::Log, &AxisUnit::Si("s".into()), None, &[1.0, 3e4]);
        assert_eq!((r.lo, r.hi), (0.0, 5.0));
        let labels: Vec<_> = r
            .ticks
            .iter()
            .filter(|t| !t.label.is_empty())
            .map(|t| t.label.clone())
            .collect();
        assert_eq!(labels, ["1 s", "10 s", "100 s", "1 ks", "10 ks", "100 ks"]);
        // 9 ticks per decade plus the closing decade.
        assert_eq!(r.ticks.len(), 5 * 9 + 1);
        assert_eq!(r.ticks.iter().filter(|t| t.major).count(), 6);
    }

    #[test]
    fn log_plain_labels_use_superscripts() {
        let r = resolve(
            Scale::Log,
            &AxisUnit::Plain(String::new()),
            None,
            &[2e-13, 5e-11],
        );
        assert_eq!((r.lo, r.hi), (-13.0, -10.0));
        assert_eq!(r.ticks[0].label, "10⁻¹³");
        assert_eq!(superscript(-12), "⁻¹²");
        assert_eq!(superscript(5), "⁵");
    }

    #[test]
    fn short_log_range_labels_2_and_5() {
        let r = resolve(
            Scale::Log,
            &AxisUnit::Si("Hz".into()),
            Some((1e3, 1e4)),
            &[],
        );
        let labels: Vec<_> = r
            .ticks
            .iter()
            .filter(|t| !t.label.is_empty())
            .map(|t| t.label.clone())
            .collect();
        assert_eq!(labels, ["1 kHz", "2 kHz", "5 kHz", "10 kHz"]);
    }

    #[test]
    fn linear_si_ticks_choose_a_prefix() {
        let r = resolve(
            Scale::Linear,
            &AxisUnit::Si("s".into()),
            None,
            &[0.0, 1.7e-6],
        );
        assert_eq!(r.unit_text, "µs");
        assert_eq!(r.lo, 0.0);
        let labels: Vec<_> = r.ticks.iter().map(|t| t.label.clone()).collect();
        assert_eq!(labels.first().map(String::as_str), Some("0"));
        assert!(r.hi >= 1.7e-6);
        for t in &r.ticks {
            assert!(t.pos >= r.lo - 1e-18 && t.pos <= r.hi + 1e-18);
        }
        // Steps are nice: consecutive differences all equal.
        let d: Vec<f64> = r.ticks.windows(2).map(|w| w[1].pos - w[0].pos).collect();
        assert!(d
            .iter()
            .all(|x| (x - d[0]).abs() < 1e-12 * d[0].abs().max(1e-30) + 1e-20));
    }

    #[test]
    fn linear_db_ticks() {
        let r = resolve(
            Scale::Linear,
            &AxisUnit::Plain("dBc/Hz".into()),
            None,
            &[-162.0, -78.0],
        );
        assert_eq!(r.unit_text, "dBc/Hz");
        assert!(r.lo <= -162.0 && r.hi >= -78.0);
        assert!(
            r.ticks.iter().all(|t| !t.label.contains('.')),
            "{:?}",
            r.ticks
        );
    }

    #[test]
    fn nice_steps() {
        assert_eq!(nice_step(0.13), 0.2);
        assert_eq!(nice_step(2.2), 2.5);
        assert_eq!(nice_step(7.0), 10.0);
        assert_eq!(nice_step(1.0), 1.0);
        assert_eq!(nice_step(-1.0), 1.0);
    }

    #[test]
    fn compact_si() {
        assert_eq!(si_compact(1e-3, "s"), "1 ms");
        assert_eq!(si_compact(2.5e-6, "s"), "2.5 µs");
        assert_eq!(si_compact(2e7, "Hz"), "20 MHz");
        assert_eq!(si_compact(100.0, "s"), "100 s");
    }

    #[test]
    fn unusable_values_are_ignored() {
        let r = resolve(
            Scale::Log,
            &AxisUnit::Plain(String::new()),
            None,
            &[0.0, -1.0, f64::NAN],
        );
        assert!(r.hi > r.lo);
        assert_eq!(to_axis(Scale::Log, 0.0), None);
        assert_eq!(to_axis(Scale::Linear, f64::INFINITY), None);
    }
}
