//! Gap filling by linear interpolation.

use crate::record::{FrequencyRecord, PhaseRecord, Record};

/// What gap filling did.
#[derive(Debug, Clone, PartialEq)]
pub struct GapFill {
    /// The filled record.
    pub record: Record,
    /// Samples filled.
    pub filled: usize,
    /// Gaps left: those before the first or after the last valid sample.
    pub left: usize,
}

/// Fill interior gaps by linear interpolation between the nearest valid
/// samples: v_j = v_a + (v_b − v_a)·(j − a)/(b − a) for a < j < b.
///
/// For phase data this interpolates phase (the frequency across the gap is
/// the mean frequency between its ends). For frequency data it interpolates
/// y (phase across the gap then follows a smooth curve). Gaps at the start or
/// end have no second neighbour and are left.
pub fn fill_gaps(record: &Record) -> GapFill {
    fn fill(v: &mut [f64]) -> (usize, usize) {
        let mut filled = 0;
        let mut prev: Option<usize> = None;
        for j in 0..v.len() {
            if v[j].is_nan() {
                continue;
            }
            if let Some(a) = prev {
                if j > a + 1 {
                    let (va, vb) = (v[a], v[j]);
                    let span = (j - a) as f64;
                    for (k, slot) in v.iter_mut().enumerate().take(j).skip(a + 1) {
                        *slot = va + (vb - va) * (k - a) as f64 / span;
                        filled += 1;
                    }
                }
            }
            prev = Some(j);
        }
        let left = v.iter().filter(|x| x.is_nan()).count();
        (filled, left)
    }
    match record {
        Record::Phase(p) => {
            let mut x = p.x.clone();
            let (filled, left) = fill(&mut x);
            GapFill {
                record: Record::Phase(PhaseRecord { x, tau0: p.tau0 }),
                filled,
                left,
            }
        }
        Record::Frequency(f) => {
            let mut y = f.y.clone();
            let (filled, left) = fill(&mut y);
            GapFill {
                record: Record::Frequency(FrequencyRecord { y, tau0: f.tau0 }),
                filled,
                left,
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gap_filling_is_linear() {
        let n = f64::NAN;
        let r = Record::Phase(PhaseRecord::new(vec![n, 1.0, n, n, 4.0, 5.0, n], 1.0).unwrap());
        let g = fill_gaps(&r);
        let x = g.record.to_phase().x;
        assert_eq!(&x[1..6], &[1.0, 2.0, 3.0, 4.0, 5.0]);
        assert!(x[0].is_nan() && x[6].is_nan());
        assert_eq!((g.filled, g.left), (2, 2));
    }
}
