//! The spacings Δt_i = t_i − t_(i−1) of a record's stamps while τ0 is not
//! known, and τ0 and the gaps found from them.
//!
//! τ0 is the lower median of the spacings (always a spacing actually seen)
//! rounded to 10 significant digits; each spacing must then be a whole
//! number k_i of τ0 within [`SPACING_TOLERANCE`] ([`steps`]), and k_i − 1
//! missing readings (gaps) go before the reading after it.
//!
//! The spacings are held as runs of one value where they repeat bit for
//! bit, as a block of stamps that count whole seconds does (one run for a
//! whole file of such stamps, instead of 8 bytes a spacing), and listed
//! where they vary. The run form changes nothing the reader reports: every question
//! below is answered for the sequence of spacings in order.

use super::series::{steps, SPACING_TOLERANCE};
use crate::prepare::outliers::{order_statistic, rank_counts};
use rayon::prelude::*;

/// Spacings handled at a time by one thread, and the most a listed stretch
/// holds before it is looked at for a run.
const BLOCK: usize = 1 << 16;

/// A stretch of spacings.
#[derive(Debug, Clone, PartialEq)]
enum Part {
    /// `count` spacings of one value (the same bits).
    Same { value: f64, count: usize },
    /// Spacings as they came.
    Listed(Vec<f64>),
}

/// The spacings of a record's stamps, in order.
#[derive(Debug, Clone, Default, PartialEq)]
pub(super) struct Spacings {
    parts: Vec<Part>,
    len: usize,
}

/// A share of the spacings for one thread: a run, or a stretch of a list;
/// and the index of its first spacing.
enum Share<'a> {
    Same(f64, usize),
    Listed(&'a [f64]),
}

impl Spacings {
    /// The spacings of `times` (in order), when there are at least two
    /// stamps and each spacing is positive; `None` otherwise. Held as one
    /// run when all are the same, found without listing them.
    pub(super) fn of_times(times: &[f64]) -> Option<Spacings> {
        let mut same = true;
        let first = times.get(1)? - times[0];
        for w in times.windows(2) {
            let dt = w[1] - w[0];
            if !(dt > 0.0) {
                return None;
            }
            same &= dt.to_bits() == first.to_bits();
        }
        let count = times.len() - 1;
        let part = if same {
            Part::Same {
                value: first,
                count,
            }
        } else {
            Part::Listed(times.windows(2).map(|w| w[1] - w[0]).collect())
        };
        Some(Spacings {
            parts: vec![part],
            len: count,
        })
    }

    /// The number of spacings.
    pub(super) fn len(&self) -> usize {
        self.len
    }

    /// One more spacing, after the others.
    pub(super) fn push(&mut self, dt: f64) {
        match self.parts.last_mut() {
            Some(Part::Listed(l)) if l.len() < BLOCK => l.push(dt),
            _ => {
                self.seal();
                self.parts.push(Part::Listed(vec![dt]));
            }
        }
        self.len += 1;
    }

    /// `other`'s spacings after these.
    pub(super) fn append(&mut self, other: Spacings) {
        self.len += other.len;
        for part in other.parts {
            self.seal();
            self.parts.push(part);
        }
    }

    /// The last part held as a run when all its spacings are the same, and
    /// merged with a run of the same value before it.
    fn seal(&mut self) {
        if let Some(Part::Listed(l)) = self.parts.last() {
            if let Some(&value) = l.first() {
                if l.iter().all(|x| x.to_bits() == value.to_bits()) {
                    let count = l.len();
                    *self.parts.last_mut().expect("a last part") = Part::Same { value, count };
                }
            }
        }
        if let [.., Part::Same { value: a, count }, Part::Same { value: b, count: n }] =
            self.parts.as_mut_slice()
        {
            if a.to_bits() == b.to_bits() {
                *count += *n;
                self.parts.pop();
            }
        }
    }

    /// The spacing at index `i`.
    fn get(&self, mut i: usize) -> Option<f64> {
        for p in &self.parts {
            match p {
                Part::Same { value, count } if i < *count => return Some(*value),
                Part::Same { count, .. } => i -= count,
                Part::Listed(l) if i < l.len() => return Some(l[i]),
                Part::Listed(l) => i -= l.len(),
            }
        }
        None
    }

    /// The spacings in order.
    pub(super) fn iter(&self) -> impl Iterator<Item = f64> + '_ {
        self.parts.iter().flat_map(|p| {
            // A run, then nothing listed; or no run, then the list.
            let (value, count, list) = match p {
                Part::Same { value, count } => (*value, *count, &[][..]),
                Part::Listed(l) => (0.0, 0, &l[..]),
            };
            std::iter::repeat(value)
                .take(count)
                .chain(list.iter().copied())
        })
    }

    /// The shares for threads, each with the index of its first spacing.
    fn shares(&self) -> Vec<(usize, Share<'_>)> {
        let mut out = Vec::new();
        let mut at = 0;
        for p in &self.parts {
            match p {
                Part::Same { value, count } => {
                    out.push((at, Share::Same(*value, *count)));
                    at += count;
                }
                Part::Listed(l) => {
                    for c in l.chunks(BLOCK) {
                        out.push((at, Share::Listed(c)));
                        at += c.len();
                    }
                }
            }
        }
        out
    }

    /// The readings to insert as gaps on the grid of `tau0` (Σ (k_i − 1),
    /// k_i = [`steps`]), or the first spacing that is not a whole multiple
    /// of τ0 (its index and the message). Worked out in parallel, the first
    /// failure in order kept.
    pub(super) fn gaps(&self, tau0: f64) -> Result<u64, (usize, String)> {
        let band = one_step_band(tau0);
        let shares = self.shares();
        let each: Vec<Result<u64, (usize, String)>> = shares
            .par_iter()
            .map(|(at, s)| gaps_in(s, *at, tau0, band))
            .collect();
        each.into_iter().sum()
    }

    /// τ0 — the lower median of the spacings rounded to 10 significant
    /// digits — and [`Spacings::gaps`] on its grid. At least one spacing.
    ///
    /// One parallel pass when the spacing at the median's rank in the
    /// spacings' own order is the median, as on nearly every record (most
    /// spacings are one τ0): each share counts the spacings below and at
    /// that guess ([`rank_counts`]: it is the median exactly when below ≤
    /// rank < below + at) and the gaps on the guess's grid. When the counts
    /// refute the guess, the median is selected ([`order_statistic`]) and
    /// the gaps counted again.
    pub(super) fn tau0_and_gaps(&self) -> (f64, Result<u64, (usize, String)>) {
        let mid = (self.len - 1) / 2;
        let guess = self.get(mid).expect("at least one spacing");
        let tau0 = crate::units::round_sig(guess, 10);
        let band = one_step_band(tau0);
        let shares = self.shares();
        #[allow(clippy::type_complexity)]
        let each: Vec<((usize, usize), Result<u64, (usize, String)>)> = shares
            .par_iter()
            .map(|(at, s)| {
                let counts = match s {
                    Share::Same(v, n) => {
                        let (b, a) = rank_counts(&[*v], guess);
                        (b * n, a * n)
                    }
                    Share::Listed(l) => rank_counts(l, guess),
                };
                (counts, gaps_in(s, *at, tau0, band))
            })
            .collect();
        let (below, at) = each
            .iter()
            .fold((0, 0), |(b, a), (c, _)| (b + c.0, a + c.1));
        if below <= mid && mid < below + at {
            (tau0, each.into_iter().map(|(_, g)| g).sum())
        } else {
            let median = order_statistic(|| self.iter(), mid);
            let tau0 = crate::units::round_sig(median, 10);
            (tau0, self.gaps(tau0))
        }
    }
}

/// The spacings that are surely one τ0 by [`steps`]' rule, |Δt/τ0 − 1| ≤
/// [`SPACING_TOLERANCE`]: τ0·(1 ∓ tolerance) narrowed by 10⁻⁹ relative
/// (far more than the few roundings of the bounds and of the quotient), so
/// that a spacing inside is one step without the division, and one near
/// an edge or outside goes through [`steps`]. Empty (lower bound +∞) when
/// τ0 is not a positive normal number well inside the range.
pub(super) fn one_step_band(tau0: f64) -> (f64, f64) {
    if (f64::MIN_POSITIVE * 1e3..=f64::MAX / 4.0).contains(&tau0) {
        (
            tau0 * (1.0 - SPACING_TOLERANCE) * (1.0 + 1e-9),
            tau0 * (1.0 + SPACING_TOLERANCE) * (1.0 - 1e-9),
        )
    } else {
        (f64::INFINITY, f64::NEG_INFINITY)
    }
}

/// The gaps to insert among a share's spacings, or its first failure (the
/// index counted from `at`); `band` is [`one_step_band`] of `tau0`.
fn gaps_in(
    share: &Share<'_>,
    at: usize,
    tau0: f64,
    band: (f64, f64),
) -> Result<u64, (usize, String)> {
    match *share {
        Share::Same(dt, n) => {
            let k = steps(dt, tau0).map_err(|m| (at, m))?;
            Ok((k - 1) * n as u64)
        }
        Share::Listed(l) => {
            let mut total = 0u64;
            for (i, &dt) in l.iter().enumerate() {
                if !(dt >= band.0 && dt <= band.1) {
                    total += steps(dt, tau0).map_err(|m| (at + i, m))? - 1;
                }
            }
            Ok(total)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The spacings' sequence, however they were put in.
    fn listed(s: &Spacings) -> Vec<u64> {
        s.iter().map(f64::to_bits).collect()
    }

    /// Runs and lists hold the sequence as it was put in (analytic: the
    /// plain list is the reference), with runs where a stretch repeats.
    #[test]
    fn the_parts_hold_the_sequence() {
        let mut s = Spacings::default();
        let mut want = Vec::new();
        let mut state = 77u64;
        for round in 0..40 {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            let n = 1 + (state >> 40) as usize % 150_000;
            let times: Vec<f64> = match round % 4 {
                0 => (0..=n).map(|i| i as f64).collect(),
                1 => (0..=n).map(|i| i as f64 * 0.1).collect(),
                2 => (0..=n).map(|i| (i * 2) as f64).collect(),
                _ => (0..=n).map(|i| (i + i / 7) as f64).collect(),
            };
            if round % 3 == 0 {
                for w in times.windows(2) {
                    s.push(w[1] - w[0]);
                }
            } else {
                s.append(Spacings::of_times(&times).unwrap());
            }
            want.extend(times.windows(2).map(|w| (w[1] - w[0]).to_bits()));
            s.push(1.0);
            want.push(1f64.to_bits());
            assert_eq!(s.len(), want.len());
            assert_eq!(listed(&s), want);
            for i in [0, want.len() / 3, want.len() / 2, want.len() - 1] {
                assert_eq!(s.get(i).map(f64::to_bits), Some(want[i]));
            }
            assert_eq!(s.get(want.len()), None);
        }
        // Whole seconds held as runs: far fewer parts than blocks.
        let mut r = Spacings::default();
        for _ in 0..10 {
            r.append(Spacings::of_times(&[0.0, 1.0, 2.0, 3.0]).unwrap());
            r.push(1.0);
        }
        for _ in 0..200_000 {
            r.push(1.0);
        }
        r.push(2.0);
        r.seal();
        assert_eq!(r.len(), 200_041);
        assert!(r.parts.len() <= 3, "{} parts", r.parts.len());
        assert_eq!(Spacings::of_times(&[0.0, 1.0, 1.0]), None);
        assert_eq!(Spacings::of_times(&[0.0]), None);
    }

    /// The reference: the lower median of a sorted copy rounded to 10
    /// significant digits, then every spacing through [`steps`] in order,
    /// the first failure named.
    fn reference(spacings: &[f64]) -> (f64, Result<u64, (usize, String)>) {
        let mut sorted = spacings.to_vec();
        sorted.sort_by(f64::total_cmp);
        let tau0 = crate::units::round_sig(sorted[(sorted.len() - 1) / 2], 10);
        let mut total = 0;
        for (i, &dt) in spacings.iter().enumerate() {
            match steps(dt, tau0) {
                Ok(k) => total += k - 1,
                Err(m) => return (tau0, Err((i, m))),
            }
        }
        (tau0, Ok(total))
    }

    /// The one-pass τ0 and gap count equals the textbook steps
    /// ([`reference`]), whether the spacings are listed or held as runs.
    /// Seeded random spacings of many kinds: all one τ0; jittered within
    /// and beyond the tolerance; spacings within 2000 ulps of
    /// τ0·(1 ± tolerance), where a spacing turns from one step to a
    /// failure; gaps of whole multiples; a set whose value at the median's
    /// rank is not the median (the guess refuted); zero, negative and huge
    /// spacings; many lengths.
    #[test]
    fn tau0_and_gaps_is_the_median_then_every_step() {
        let mut state = 0x7a11_2026u64;
        let mut next = move || {
            state = state
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (state >> 11) as f64 / (1u64 << 53) as f64
        };
        let mut checked = (0, 0, 0);
        for case in 0..600 {
            let tau0 = [1.0, 0.001, 0.1, 86400.0, 1e-9, 3.7e5][case % 6];
            let n = [1, 2, 3, 7, 1000, 70_000, 140_001][case % 7];
            let edge = tau0 * (1.0 + SPACING_TOLERANCE);
            let low_edge = tau0 * (1.0 - SPACING_TOLERANCE);
            let mut v: Vec<f64> = (0..n)
                .map(|_| {
                    let u = next();
                    let w = next();
                    match case % 5 {
                        0 => tau0,
                        1 => tau0 * (1.0 + (u - 0.5) * 0.019),
                        2 if u < 0.01 => tau0 * (2.0 + (w * 5.0).floor()),
                        2 => tau0,
                        3 if u < 0.7 => tau0,
                        3 => {
                            // Within 2000 ulps of τ0·(1 ± tolerance), where
                            // `steps` turns from one step to a failure.
                            let k = (w * 4001.0) as i64 - 2000;
                            let e = if u < 0.85 { edge } else { low_edge };
                            f64::from_bits((e.to_bits() as i64 + k) as u64)
                        }
                        _ => tau0 * (1.0 + (u - 0.5) * 0.05),
                    }
                })
                .collect();
            if case % 11 == 0 && n > 4 {
                // The value at the median's rank is a gap: the guess fails.
                let mid = (n - 1) / 2;
                v[mid] = tau0 * 3.0;
            }
            if case % 13 == 0 && n > 2 {
                let at = (next() * n as f64) as usize;
                v[at] = [0.0, -tau0, 1e300, f64::MIN_POSITIVE][case % 4];
            }
            let want = reference(&v);
            // Put in one by one, and in pieces of 1000 (runs where a
            // piece's spacings are all the same).
            let mut one = Spacings::default();
            v.iter().for_each(|&dt| one.push(dt));
            let mut pieces = Spacings::default();
            for c in v.chunks(1000) {
                pieces.append(Spacings {
                    parts: vec![Part::Listed(c.to_vec())],
                    len: c.len(),
                });
            }
            for s in [&one, &pieces] {
                let got = s.tau0_and_gaps();
                assert_eq!(got.0.to_bits(), want.0.to_bits(), "case {case}");
                assert_eq!(got.1, want.1, "case {case}");
                assert_eq!(s.gaps(want.0), want.1, "case {case}: gaps");
            }
            match &want.1 {
                Ok(0) => checked.0 += 1,
                Ok(_) => checked.1 += 1,
                Err(_) => checked.2 += 1,
            }
        }
        // Every outcome was met often: no gaps, gaps, a failure.
        assert!(
            checked.0 > 50 && checked.1 > 50 && checked.2 > 50,
            "{checked:?}"
        );
    }
}
