//! Outliers: the MAD test on the frequency and the removal of what it finds.

use super::offset::frequency_of;
use crate::error::{Error, Result};
use crate::record::{FrequencyRecord, PhaseRecord, Record};
use rayon::prelude::*;

/// Scale factor that makes the median absolute deviation an estimate of the
/// standard deviation for normal data: 1/Φ⁻¹(3/4) = 1/0.6744898 (analytic).
pub const MAD_SCALE: f64 = 1.482_602_218_505_602;

/// Frequency outliers by the median absolute deviation (the MAD test of
/// NIST SP 1065 §5, from memory): with m = median(y) and
/// MAD = median|y_i − m| / 0.6745, y_i is an outlier when |y_i − m| > K·MAD.
///
/// When more than half of the values equal the median (coarsely quantised
/// data) the MAD is 0; then the scale used is the mean absolute deviation
/// from the median times √(π/2) (also σ for normal data, analytic), and
/// `mad_fallback` is set.
#[derive(Debug, Clone, PartialEq)]
pub struct Outliers {
    /// The limit K in units of the (scaled) MAD.
    pub limit: f64,
    /// Median of the valid frequency values.
    pub median: f64,
    /// The scaled MAD (an estimate of σ), or the fallback scale.
    pub mad: f64,
    /// True when the MAD was 0 and the fallback scale was used.
    pub mad_fallback: bool,
    /// Indices i of the outlying frequency values y_i, increasing.
    pub indices: Vec<usize>,
    /// Number of valid frequency values tested.
    pub tested: usize,
}

/// Median of `v` (reorders it, O(n) selection); `None` when empty.
pub fn median_in_place(v: &mut [f64]) -> Option<f64> {
    if v.is_empty() {
        return None;
    }
    let mid = v.len() / 2;
    let odd = v.len() % 2 == 1;
    let (lower, &mut hi, _) = v.select_nth_unstable_by(mid, f64::total_cmp);
    if odd {
        Some(hi)
    } else {
        let lo = lower.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        Some(0.5 * (lo + hi))
    }
}

/// Find the frequency outliers of a record beyond `limit`·MAD (see [`Outliers`]).
pub fn find_outliers(record: &Record, limit: f64) -> Result<Outliers> {
    find_outliers_y(&frequency_of(record), limit)
}

/// [`find_outliers`] on frequency values.
pub fn find_outliers_y(y: &[f64], limit: f64) -> Result<Outliers> {
    check_limit(limit)?;
    let valid: Vec<f64> = y.iter().copied().filter(|v| !v.is_nan()).collect();
    outliers_of(valid, y.len(), |i| y[i], limit)
}

/// The outlier limit must be a positive number of MADs.
fn check_limit(limit: f64) -> Result<()> {
    if !(limit.is_finite() && limit > 0.0) {
        return Err(Error::invalid(format!(
            "outlier limit {limit}: expected a positive number of MADs (e.g. 5)"
        )));
    }
    Ok(())
}

/// The end of both outlier searches: the MAD from the raw median absolute
/// deviation `raw` (scaled to σ for normal data), or, where half the values
/// equal the median (raw = 0), the mean absolute deviation scaled by
/// √(π/2) (the fallback); then every valid y_i = `at(i)` farther than
/// `limit` MADs from the median.
#[allow(clippy::too_many_arguments)]
fn conclude(
    len: usize,
    at: impl Fn(usize) -> f64,
    limit: f64,
    median: f64,
    raw: f64,
    mean_abs: f64,
    tested: usize,
) -> Outliers {
    let (mad, mad_fallback) = if raw > 0.0 {
        (raw * MAD_SCALE, false)
    } else {
        (mean_abs * (std::f64::consts::PI / 2.0).sqrt(), true)
    };
    let indices = if mad > 0.0 {
        (0..len)
            .filter(|&i| {
                let v = at(i);
                !v.is_nan() && (v - median).abs() > limit * mad
            })
            .collect()
    } else {
        Vec::new()
    };
    Outliers {
        limit,
        median,
        mad,
        mad_fallback,
        indices,
        tested,
    }
}

/// The core of [`find_outliers_y`]: `valid` holds the values that are not
/// NaN (in any order; used as scratch), `at(i)` the value at i < `len`.
fn outliers_of(
    mut valid: Vec<f64>,
    len: usize,
    at: impl Fn(usize) -> f64,
    limit: f64,
) -> Result<Outliers> {
    let tested = valid.len();
    let median = median_in_place(&mut valid)
        .ok_or_else(|| Error::insufficient("no frequency values to test for outliers"))?;
    for v in valid.iter_mut() {
        *v = (*v - median).abs();
    }
    let mean_abs = valid.iter().sum::<f64>() / tested as f64;
    let raw = median_in_place(&mut valid).unwrap_or(0.0);
    drop(valid);
    Ok(conclude(len, at, limit, median, raw, mean_abs, tested))
}

/// [`find_outliers_in`] without a copy of the frequencies: y_i = `at(i)`,
/// i < len. The median and the MAD are the same values
/// [`median_in_place`] picks (the selected order statistics), found by a
/// radix selection over `at` ([`valid_order_statistic`]); the fallback's
/// mean absolute deviation is summed in index order.
pub(crate) fn find_outliers_at(
    len: usize,
    at: impl Fn(usize) -> f64 + Sync,
    limit: f64,
) -> Result<Outliers> {
    check_limit(limit)?;
    let tested = (0..len)
        .into_par_iter()
        .filter(|&i| !at(i).is_nan())
        .count();
    if tested == 0 {
        return Err(Error::insufficient(
            "no frequency values to test for outliers",
        ));
    }
    let median_of = |f: &(dyn Fn(usize) -> f64 + Sync)| {
        let mid = tested / 2;
        let hi = valid_order_statistic(len, f, mid);
        if tested % 2 == 1 {
            hi
        } else {
            0.5 * (valid_order_statistic(len, f, mid - 1) + hi)
        }
    };
    let median = median_of(&at);
    let dev = |i: usize| (at(i) - median).abs();
    let mean_abs = (0..len).map(dev).filter(|v| !v.is_nan()).sum::<f64>() / tested as f64;
    let raw = median_of(&dev);
    Ok(conclude(len, at, limit, median, raw, mean_abs, tested))
}

/// The value of rank `rank` (0-based) among the values of `values()`, in
/// the order of `f64::total_cmp` — what `select_nth_unstable_by(rank,
/// f64::total_cmp)` picks on a copy of them — without the copy: a radix
/// selection on the 64-bit key of that order, 16 bits a pass (four passes
/// over the values, 2^16 counters). `values` gives the same sequence at
/// every call; rank < its length.
pub(crate) fn order_statistic<I: Iterator<Item = f64>>(values: impl Fn() -> I, rank: usize) -> f64 {
    radix_select(rank, |shift, above, prefix| {
        let mut counts = vec![0usize; 1 << 16];
        for x in values() {
            tally(&mut counts, x, shift, above, prefix);
        }
        counts
    })
}

/// The radix selection of [`order_statistic`]: `count(shift, above,
/// prefix)` gives, for the keys k whose bits `above` equal `prefix`, how
/// many have each value of the 16 bits at `shift`; four passes, from the
/// top 16 bits down, fix the key of rank `rank` 16 bits at a time.
fn radix_select(mut rank: usize, mut count: impl FnMut(u32, u64, u64) -> Vec<usize>) -> f64 {
    let mut prefix = 0u64;
    for shift in [48u32, 32, 16, 0] {
        let above = if shift == 48 {
            0
        } else {
            u64::MAX << (shift + 16)
        };
        let counts = count(shift, above, prefix);
        let mut bucket = 0;
        while rank >= counts[bucket] {
            rank -= counts[bucket];
            bucket += 1;
        }
        prefix |= (bucket as u64) << shift;
    }
    let b = if prefix >> 63 == 1 {
        prefix & !(1 << 63)
    } else {
        !prefix
    };
    f64::from_bits(b)
}

/// One value in a pass of [`radix_select`]: when its key's bits `above`
/// equal `prefix`, count it under the 16 bits at `shift`.
#[inline(always)]
fn tally(counts: &mut [usize], x: f64, shift: u32, above: u64, prefix: u64) {
    let k = order_key(x);
    if k & above == prefix {
        counts[((k >> shift) & 0xFFFF) as usize] += 1;
    }
}

/// The key of `x` in the order of `f64::total_cmp`, as an unsigned
/// integer: keys compare as the values do, and are equal only for the same
/// bits.
#[inline(always)]
fn order_key(x: f64) -> u64 {
    let b = x.to_bits();
    if b >> 63 == 1 {
        !b
    } else {
        b | (1 << 63)
    }
}

/// How many of `values` lie below `guess` and how many at it, in the order
/// of `f64::total_cmp`: `guess` is the value of rank r (from 0) exactly
/// when below ≤ r < below + at, summed over the whole set.
#[inline]
pub(crate) fn rank_counts(values: &[f64], guess: f64) -> (usize, usize) {
    let g = order_key(guess);
    values.iter().fold((0usize, 0usize), |(b, a), &x| {
        let k = order_key(x);
        (b + usize::from(k < g), a + usize::from(k == g))
    })
}

/// [`order_statistic`] among the values v(i), i < len, that are not NaN:
/// the same radix selection, each pass counted over stretches of 2^20
/// indices in parallel and the counts added (whole numbers: the same
/// outcome as one thread).
fn valid_order_statistic(len: usize, v: &(dyn Fn(usize) -> f64 + Sync), rank: usize) -> f64 {
    const STRETCH: usize = 1 << 20;
    radix_select(rank, |shift, above, prefix| {
        (0..len.div_ceil(STRETCH))
            .into_par_iter()
            .map(|c| {
                let mut counts = vec![0usize; 1 << 16];
                for x in (c * STRETCH..((c + 1) * STRETCH).min(len)).map(v) {
                    if !x.is_nan() {
                        tally(&mut counts, x, shift, above, prefix);
                    }
                }
                counts
            })
            .reduce_with(|mut a, b| {
                a.iter_mut().zip(b).for_each(|(x, y)| *x += y);
                a
            })
            .unwrap_or_else(|| vec![0; 1 << 16])
    })
}

/// The selection without a copy picks what `select_nth_unstable_by` picks
/// on a copy, at every rank, on values with repeats, both signs, zeros of
/// both signs, infinities and NaN (analytic: the same total order).
#[cfg(test)]
#[test]
fn order_statistic_is_the_selection_on_a_copy() {
    let mut v: Vec<f64> = vec![
        1.0,
        1.0,
        1.0,
        -0.0,
        0.0,
        2.5,
        -3.0,
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::NAN,
        -f64::NAN,
        1e-300,
        -1e-300,
        0.001,
        0.001,
        7.0,
    ];
    let mut state = 12345u64;
    for _ in 0..300 {
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        v.push(((state >> 11) as f64 / (1u64 << 53) as f64 - 0.3) * 1e3);
    }
    for rank in 0..v.len() {
        let mut c = v.clone();
        let want = *c.select_nth_unstable_by(rank, f64::total_cmp).1;
        let got = order_statistic(|| v.iter().copied(), rank);
        assert_eq!(got.to_bits(), want.to_bits(), "rank {rank}");
        // The guess test: the value at `rank` in the slice's own order is
        // the answer exactly when the counts say so.
        let (below, at) = rank_counts(&v, v[rank]);
        assert_eq!(
            below <= rank && rank < below + at,
            v[rank].to_bits() == want.to_bits()
        );
    }
    // Mostly one value, as the spacings of stamps: the guess is right for
    // the ranks within the run of that value and wrong for the others.
    let mut w: Vec<f64> = (0..200_000)
        .map(|i| if i % 997 == 0 { 2.0 } else { 1.0 })
        .collect();
    w[5] = 0.5;
    w[77_777] = -0.0;
    w[88_888] = 0.0;
    for rank in [0, 1, 2, 3, 100, 99_999, 199_700, 199_798, 199_799, 199_999] {
        let mut c = w.clone();
        let want = *c.select_nth_unstable_by(rank, f64::total_cmp).1;
        let (below, at) = rank_counts(&w, w[rank]);
        assert_eq!(
            below <= rank && rank < below + at,
            w[rank].to_bits() == want.to_bits(),
            "rank {rank}"
        );
    }
}

/// The parallel selection over indices picks what `select_nth_unstable_by`
/// picks on a copy of the values that are not NaN (analytic: the same
/// total order), over several stretches of 2^20 indices: seeded values
/// with NaN, repeats and both signs, at ranks across the set.
#[cfg(test)]
#[test]
fn valid_order_statistic_over_stretches_is_the_selection_on_a_copy() {
    let mut state = 0x5e1ec7u64;
    let v: Vec<f64> = (0..2_500_003)
        .map(|i| {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            match i % 101 {
                0 => f64::NAN,
                1 => 0.25,
                _ => ((state >> 11) as f64 / (1u64 << 53) as f64 - 0.4) * 1e-9,
            }
        })
        .collect();
    let valid: Vec<f64> = v.iter().copied().filter(|x| !x.is_nan()).collect();
    let n = valid.len();
    for rank in [0, 1, n / 3, n / 2 - 1, n / 2, n - 25_000, n - 1] {
        let mut c = valid.clone();
        let want = *c.select_nth_unstable_by(rank, f64::total_cmp).1;
        let got = valid_order_statistic(v.len(), &|i| v[i], rank);
        assert_eq!(got.to_bits(), want.to_bits(), "rank {rank}");
    }
}

/// What replacing outliers by gaps did.
#[derive(Debug, Clone, PartialEq)]
pub struct OutlierRemoval {
    /// The record with the outliers replaced by gaps.
    pub record: Record,
    /// Samples of the record made gaps.
    pub replaced: usize,
    /// Frequency outliers that could not be removed by blanking one phase
    /// sample: isolated frequency outliers between good phase samples, i.e.
    /// phase steps (indices i of y_i). Always empty for frequency data.
    pub steps: Vec<usize>,
}

/// Replace outliers by gaps.
///
/// Frequency data: each outlying y_i becomes a gap.
/// Phase data: a phase sample x_j becomes a gap when each of its
/// neighbouring frequencies y_{j−1}, y_j is an outlier, a gap or beyond the
/// record's end, and at least one is an outlier — a glitch in x_j. An
/// outlier y_i between two otherwise good phase samples is a step in phase,
/// which blanking a sample cannot remove; it is left in place and listed in
/// [`OutlierRemoval::steps`].
pub fn remove_outliers(record: &Record, outliers: &Outliers) -> OutlierRemoval {
    match record {
        Record::Frequency(f) => {
            let mut y = f.y.clone();
            for &i in &outliers.indices {
                if let Some(v) = y.get_mut(i) {
                    *v = f64::NAN;
                }
            }
            OutlierRemoval {
                record: Record::Frequency(FrequencyRecord { y, tau0: f.tau0 }),
                replaced: outliers.indices.len(),
                steps: Vec::new(),
            }
        }
        Record::Phase(p) => {
            let n = p.x.len();
            let ny = n.saturating_sub(1);
            let mut is_out = vec![false; ny];
            for &i in &outliers.indices {
                if i < ny {
                    is_out[i] = true;
                }
            }
            // y_i is "bad" when it is an outlier or a gap.
            let bad = |i: usize| i >= ny || is_out[i] || p.x[i].is_nan() || p.x[i + 1].is_nan();
            let mut x = p.x.clone();
            let mut blank = vec![false; n];
            let mut replaced = 0;
            for j in 0..n {
                if p.x[j].is_nan() {
                    continue;
                }
                let left = j.checked_sub(1);
                let left_bad = match left {
                    Some(i) => bad(i),
                    None => true,
                };
                let right_bad = bad(j);
                let any_out = left.is_some_and(|i| is_out[i]) || (j < ny && is_out[j]);
                if left_bad && right_bad && any_out {
                    blank[j] = true;
                    replaced += 1;
                }
            }
            let steps = outliers
                .indices
                .iter()
                .copied()
                .filter(|&i| i < ny && !blank[i] && !blank[i + 1])
                .collect();
            for (v, b) in x.iter_mut().zip(&blank) {
                if *b {
                    *v = f64::NAN;
                }
            }
            OutlierRemoval {
                record: Record::Phase(PhaseRecord { x, tau0: p.tau0 }),
                replaced,
                steps,
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::prepare::testing::{close, freq, Rng};

    #[test]
    fn median_matches_sorting() {
        let mut r = Rng(7);
        for n in [1, 2, 3, 10, 101, 1000] {
            let v: Vec<f64> = (0..n).map(|_| r.next()).collect();
            let mut s = v.clone();
            s.sort_by(f64::total_cmp);
            let want = if n % 2 == 1 {
                s[n / 2]
            } else {
                0.5 * (s[n / 2 - 1] + s[n / 2])
            };
            let mut w = v.clone();
            assert_eq!(median_in_place(&mut w), Some(want));
        }
    }

    #[test]
    fn outliers_by_scaled_mad() {
        // y alternates ±1 around 10: median 10, median |y − m| = 1, scaled MAD
        // 1.4826 (1/Φ⁻¹(3/4), analytic). 20 lies 10/1.4826 = 6.7 MADs away.
        let mut y: Vec<f64> = (0..21)
            .map(|i| 10.0 + if i % 2 == 0 { 1.0 } else { -1.0 })
            .collect();
        y[4] = 20.0;
        y[9] = 10.0 - 6.0;
        y[12] = f64::NAN;
        let o = find_outliers_y(&y, 5.0).unwrap();
        assert_eq!(o.median, 10.0);
        assert!(close(o.mad, MAD_SCALE, 1e-12));
        assert_eq!(o.indices, vec![4]);
        assert_eq!(o.tested, 20);
        let o3 = find_outliers_y(&y, 3.0).unwrap();
        assert_eq!(o3.indices, vec![4, 9]);
        assert!(find_outliers_y(&y, 0.0).is_err());
        // Quantised data: MAD 0, fallback scale.
        let mut q = vec![0.0; 100];
        q[10] = 1.0;
        q[20] = 50.0;
        let o = find_outliers_y(&q, 5.0).unwrap();
        assert!(o.mad_fallback);
        assert_eq!(o.indices, vec![20]);
    }

    #[test]
    fn outlier_replacement_in_phase() {
        // A glitch at x_5 and a step between x_12 and x_13.
        let mut r = Rng(9);
        let mut x: Vec<f64> = (0..20)
            .map(|i| i as f64 * 1e-9 + 1e-10 * r.next())
            .collect();
        x[5] += 1e-6;
        for v in x.iter_mut().skip(13) {
            *v += 1e-6;
        }
        let r = Record::Phase(PhaseRecord::new(x, 1.0).unwrap());
        let o = find_outliers(&r, 5.0).unwrap();
        assert_eq!(o.indices, vec![4, 5, 12]);
        let rem = remove_outliers(&r, &o);
        assert_eq!(rem.replaced, 1);
        assert_eq!(rem.steps, vec![12]);
        let xp = rem.record.to_phase().x;
        assert!(xp[5].is_nan());
        assert_eq!(rem.record.gaps(), 1);
        // Frequency data: the outlying value itself.
        let f = freq(vec![0.0, 1e-9, -1e-9, 1e-6, 0.0, 2e-9, -2e-9]);
        let o = find_outliers(&f, 5.0).unwrap();
        let rem = remove_outliers(&f, &o);
        assert_eq!(rem.replaced, 1);
        assert!(rem.record.to_frequency().y[3].is_nan());
    }
}
