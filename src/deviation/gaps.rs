//! Gap bookkeeping shared by every estimator.
//!
//! Gaps are NaN phase samples. The rule (docs/design.md §7): a term is used only
//! when its *span* — the indices from the first to the last phase sample it
//! reads — holds no gap. A prefix count of gaps answers "is the span a..=b
//! clear?" in O(1): c\[b+1\] − c\[a\] = 0.

/// Prefix counts of NaN samples; empty when the record has no gap (the common
/// case, so that gap-free records pay nothing).
#[derive(Debug, Clone)]
pub(crate) enum Gaps {
    /// No sample is missing.
    None,
    /// c\[i\] = number of NaN among x\[0..i\] (records shorter than 2³² samples).
    Small(Vec<u32>),
    /// The same for longer records.
    Large(Vec<u64>),
}

impl Gaps {
    /// Index the gaps of `x`.
    pub(crate) fn new(x: &[f64]) -> Self {
        if !x.iter().any(|v| v.is_nan()) {
            return Gaps::None;
        }
        if x.len() < u32::MAX as usize {
            let mut c = Vec::with_capacity(x.len() + 1);
            let mut n = 0u32;
            c.push(0);
            for v in x {
                n += u32::from(v.is_nan());
                c.push(n);
            }
            Gaps::Small(c)
        } else {
            let mut c = Vec::with_capacity(x.len() + 1);
            let mut n = 0u64;
            c.push(0);
            for v in x {
                n += u64::from(v.is_nan());
                c.push(n);
            }
            Gaps::Large(c)
        }
    }

    /// True when the record has no gap at all.
    #[inline]
    pub(crate) fn is_none(&self) -> bool {
        matches!(self, Gaps::None)
    }

    /// True when no sample in `a..=b` is missing (`a ≤ b` < N).
    #[inline]
    pub(crate) fn clear(&self, a: usize, b: usize) -> bool {
        match self {
            Gaps::None => true,
            Gaps::Small(c) => c[b + 1] == c[a],
            Gaps::Large(c) => c[b + 1] == c[a],
        }
    }
}

/// A phase record prepared for the estimators: the samples, τ0 and the gap
/// index (built once and shared by every τ).
#[derive(Debug, Clone)]
pub(crate) struct Prepared<'a> {
    pub(crate) x: &'a [f64],
    pub(crate) tau0: f64,
    pub(crate) gaps: Gaps,
}

impl<'a> Prepared<'a> {
    pub(crate) fn new(x: &'a [f64], tau0: f64) -> Self {
        Self {
            x,
            tau0,
            gaps: Gaps::new(x),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spans() {
        let x = [1.0, f64::NAN, 2.0, 3.0, f64::NAN];
        let g = Gaps::new(&x);
        assert!(g.clear(0, 0));
        assert!(!g.clear(0, 1));
        assert!(g.clear(2, 3));
        assert!(!g.clear(2, 4));
        assert!(Gaps::new(&[1.0, 2.0]).is_none());
    }
}
