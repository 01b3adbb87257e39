//! Wander: TIE statistics, MTIE and TDEV of a phase (TIE) record, checked
//! against network masks.
//!
//! - [`tie`] — max |TIE|, peak-to-peak, rms; constant-frequency-offset removal.
//! - MTIE and TDEV come from the estimator registry
//!   ([`crate::deviation::Estimator::Mtie`], [`crate::deviation::Estimator::Tdev`],
//!   ITU-T G.810 / NIST SP 1065), which holds their fast forms and the direct
//!   references they are tested against.
//! - [`masks`] — built-in ITU-T masks (values recalled from memory) and the
//!   mask type; [`mask_file`] — user masks in tauwise's own text format.
//! - [`check`] — a measured curve against a mask: verdict, worst margin,
//!   crossing τ, violations.
//!
//! [`analyse`] runs all of it on one record.

pub mod check;
pub mod mask_file;
pub mod masks;
pub mod tie;

use crate::deviation::{compute, Estimate, Estimator};
use crate::error::{Error, Result};
use crate::record::PhaseRecord;
use crate::tau::TauGrid;
use check::MaskCheck;
use masks::{Mask, Metric};

/// The default τ grid of the wander analysis: [`TauGrid::PerDecade`]`(10)`
/// (m = round(10^(k/10)), deduplicated) from τ0 up to a tenth of the record,
/// m ≤ (N − 1)/10.
pub const DEFAULT_GRID: TauGrid = TauGrid::PerDecade(10);

/// The averaging factors of [`DEFAULT_GRID`] for a record of `points`
/// samples: up to m = (points − 1)/10.
///
/// ```
/// let ms = tauwise::wander::default_ms(1001, 1.0).unwrap();
/// assert_eq!(&ms[..8], &[1, 2, 3, 4, 5, 6, 8, 10]);
/// assert_eq!(*ms.last().unwrap(), 100);
/// ```
pub fn default_ms(points: usize, tau0: f64) -> Result<Vec<usize>> {
    DEFAULT_GRID.ms(tau0, points.saturating_sub(1) / 10)
}

/// Everything the wander analysis reports for one record.
#[derive(Debug, Clone, PartialEq)]
pub struct WanderResult {
    /// TIE statistics over the record.
    pub tie: tie::TieStats,
    /// MTIE at each τ.
    pub mtie: Vec<Estimate>,
    /// TDEV at each τ.
    pub tdev: Vec<Estimate>,
    /// One check per mask given.
    pub checks: Vec<MaskCheck>,
}

/// Run the wander analysis: TIE statistics, MTIE and TDEV at the averaging
/// factors `ms` (see [`default_ms`] for the usual choice), and every mask
/// against the curve of its metric. With `remove_offset`, the least-squares
/// constant frequency offset is removed from the record before everything
/// else (MTIE of an offset alone is y·τ and would hide the wander); TDEV is
/// unaffected by it (second differences).
pub fn analyse(
    rec: &PhaseRecord,
    ms: &[usize],
    remove_offset: bool,
    masks: &[Mask],
) -> Result<WanderResult> {
    let valid = rec.x.iter().filter(|v| !v.is_nan()).count();
    if valid < 2 {
        return Err(Error::insufficient(format!(
            "wander needs at least two valid phase samples, the record has {valid}"
        )));
    }
    let tie = tie::tie_stats(rec, remove_offset)?;
    let owned;
    let rec = match tie.offset_removed {
        Some(y) => {
            owned = tie::remove_offset(rec, y);
            &owned
        }
        None => rec,
    };
    if ms.is_empty() {
        return Err(Error::invalid("wander needs at least one τ"));
    }
    let mtie = compute(Estimator::Mtie, rec, ms);
    let tdev = compute(Estimator::Tdev, rec, ms);
    let curve =
        |e: &[Estimate]| -> Vec<(f64, f64)> { e.iter().map(|p| (p.tau, p.value)).collect() };
    let (mc, tc) = (curve(&mtie), curve(&tdev));
    let checks = masks
        .iter()
        .map(|m| {
            check::check_mask(
                m,
                match m.metric {
                    Metric::Mtie => &mc,
                    Metric::Tdev => &tc,
                },
            )
        })
        .collect();
    Ok(WanderResult {
        tie,
        mtie,
        tdev,
        checks,
    })
}
