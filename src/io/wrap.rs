//! Readings that wrap: a time-interval counter comparing two signals of the
//! same nominal frequency reads the interval modulo the carrier period
//! (10 MHz against 10 MHz: readings in [0, 100 ns)), so a steadily moving
//! phase jumps back by one period every time it crosses the end.
//!
//! [`unwrap`] adds whole periods so that each step is the smallest one
//! consistent with the readings — the usual phase-unwrapping rule (as for
//! the phase of a sampled signal: consecutive samples differ by less than
//! half a period) — with one refinement of ours: the next reading is
//! predicted from the recent mean step (so a steady drift and a gap of
//! several samples are carried across), and a step that lands within
//! [`AMBIGUOUS`] of half a period from the prediction is refused, because
//! its direction cannot be told.
//!
//! [`find_wraps`] looks for the signature of wrapping in a record that was
//! not unwrapped (jumps of nearly the readings' whole range, much larger
//! than the ordinary steps), for `inspect`'s suggestion.

use crate::prepare::outliers::order_statistic;

/// A step whose remainder (after whole periods are removed) exceeds this
/// fraction of the period cannot be unwrapped unambiguously.
pub const AMBIGUOUS: f64 = 0.4;

/// Steps averaged (exponentially) for the predicted next reading.
const SLOPE_MEMORY: f64 = 16.0;

/// A reading that cannot be unwrapped.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct UnwrapError {
    /// Index of the sample in the record.
    pub index: usize,
    /// The step from the predicted reading, after whole periods are removed
    /// (same unit as the readings).
    pub step: f64,
    /// Samples since the previous reading (1 when adjacent).
    pub gap: usize,
}

/// Unwrap `x` (NaN = gap) in place for readings that wrap at `period`;
/// returns the number of whole periods added or removed.
pub fn unwrap(x: &mut [f64], period: f64) -> Result<usize, UnwrapError> {
    let mut last: Option<(usize, f64)> = None;
    let mut offset = 0.0f64;
    let mut slope = 0.0f64;
    let mut seen = 0.0f64;
    let mut wraps = 0usize;
    for (i, xi) in x.iter_mut().enumerate() {
        let raw = *xi;
        if raw.is_nan() {
            continue;
        }
        let Some((j, prev)) = last else {
            last = Some((i, raw));
            continue;
        };
        let gap = i - j;
        let predicted = prev + slope * gap as f64;
        let d = raw + offset - predicted;
        let k = (d / period).round();
        let rest = d - k * period;
        if rest.abs() > AMBIGUOUS * period {
            return Err(UnwrapError {
                index: i,
                step: rest,
                gap,
            });
        }
        if k != 0.0 {
            offset -= k * period;
            wraps += k.abs() as usize;
        }
        let u = raw + offset;
        let step = (u - prev) / gap as f64;
        seen += 1.0;
        slope += (step - slope) / seen.min(SLOPE_MEMORY);
        *xi = u;
        last = Some((i, u));
    }
    Ok(wraps)
}

/// Signs that a record's readings wrap.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct WrapHint {
    /// The period the jumps suggest (same unit as the readings).
    pub period: f64,
    /// Jumps of about one period.
    pub jumps: usize,
    /// max − min of the readings.
    pub range: f64,
}

/// Look for jumps of nearly one period in readings that stay within one
/// period: at least one step larger than half the readings' range while the
/// median step is under 5 % of it, every such jump (less the median step)
/// within 10 % of their median. The period is that median.
pub fn find_wraps(x: &[f64]) -> Option<WrapHint> {
    // Read where used (no copy of the record): the finite readings and the
    // steps between consecutive ones; medians by radix selection.
    let valid = || x.iter().copied().filter(|v| v.is_finite());
    let steps = || {
        let mut prev: Option<f64> = None;
        valid().filter_map(move |v| {
            let d = prev.map(|p| v - p);
            prev = Some(v);
            d
        })
    };
    let count = valid().count();
    if count < 3 {
        return None;
    }
    let (lo, hi) = valid().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
        (a.min(v), b.max(v))
    });
    let range = hi - lo;
    if !(range > 0.0) {
        return None;
    }
    let big: Vec<f64> = steps().filter(|d| d.abs() > 0.5 * range).collect();
    if big.is_empty() {
        return None;
    }
    let mid = (count - 1) / 2;
    let typical = order_statistic(|| steps().map(f64::abs), mid);
    if typical >= 0.05 * range {
        return None;
    }
    let drift = order_statistic(steps, mid);
    let mut sizes: Vec<f64> = big.iter().map(|d| (d - drift).abs()).collect();
    let period = median(&mut sizes);
    if sizes.iter().any(|s| (s - period).abs() > 0.1 * period) {
        return None;
    }
    Some(WrapHint {
        period,
        jumps: big.len(),
        range,
    })
}

fn median(v: &mut [f64]) -> f64 {
    let mid = v.len() / 2;
    *v.select_nth_unstable_by(mid, f64::total_cmp).1
}

#[cfg(test)]
mod tests {
    use super::*;

    /// x_i = 42 + 0.9·i ns read modulo 100 ns (analytic).
    fn wrapped(n: usize) -> (Vec<f64>, Vec<f64>) {
        let truth: Vec<f64> = (0..n).map(|i| 42.0 + 0.9 * i as f64).collect();
        let read = truth.iter().map(|t| t.rem_euclid(100.0)).collect();
        (truth, read)
    }

    #[test]
    fn unwraps_a_steady_phase() {
        let (truth, mut x) = wrapped(500);
        let n = unwrap(&mut x, 100.0).unwrap();
        assert_eq!(n, 4);
        for (a, b) in x.iter().zip(&truth) {
            assert!((a - b).abs() < 1e-9, "{a} {b}");
        }
    }

    #[test]
    fn carries_across_gaps_and_refuses_ambiguity() {
        let (truth, mut x) = wrapped(300);
        // A gap of 80 samples (72 ns of phase) in the middle.
        for v in &mut x[100..180] {
            *v = f64::NAN;
        }
        unwrap(&mut x, 100.0).unwrap();
        assert!((x[180] - truth[180]).abs() < 1e-9);
        // A jump of half a period cannot be unwrapped.
        let mut y = vec![10.0, 11.0, 12.0, 62.0, 63.0];
        let e = unwrap(&mut y, 100.0).unwrap_err();
        assert_eq!(e.index, 3);
    }

    #[test]
    fn finds_the_period() {
        let (_, x) = wrapped(500);
        let h = find_wraps(&x).unwrap();
        assert!((h.period - 100.0).abs() < 1.0, "{h:?}");
        assert_eq!(h.jumps, 4);
        // Noise without wraps: nothing.
        let y: Vec<f64> = (0..100).map(|i| ((i * 37) % 11) as f64).collect();
        assert!(find_wraps(&y).is_none());
        let (truth, _) = wrapped(500);
        assert!(find_wraps(&truth).is_none());
    }
}
