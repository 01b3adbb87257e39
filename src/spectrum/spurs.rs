//! Spurs found in a measured trace: narrow peaks standing above the smoothed
//! noise floor, taken out of the noise and counted once as discrete tones.
//!
//! A tone seen through an analyser (or a Welch spectrum) shows on a
//! dBc/Hz trace as a peak one to a few bins wide. Integrated as if it were
//! broadband noise, the interpolation between the trace's points spreads it
//! over the neighbouring segments, and a spur list given as well counts it
//! a second time. The rule used here, stated once:
//!
//! 1. **Floor**: the running median of L(f) in dB over the 2k + 1 points
//!    centred on each point (k = [`SpurRule::half_window`], default 5),
//!    the window shrunk symmetrically near the ends of the trace (so the
//!    first and last points are their own floor and are never spurs, and a
//!    smooth slope is its own floor: the median of a monotone run is its
//!    middle point).
//! 2. **Peak**: a point that is a local maximum and stands at least
//!    [`SpurRule::threshold_db`] (default 10 dB) above the floor.
//! 3. **Narrow**: the contiguous points around the peak standing 3 dB or
//!    more above the floor number at most [`SpurRule::max_width`] (default
//!    3); a wider excess is a broadband bump and stays noise.
//! 4. **Level**: the tone's power is what the run holds above the floor,
//!    P = Σ (10^{L_j/10} − 10^{F_j/10})·Δf_j with Δf_j the point's share of
//!    the offset axis (half the distance to each neighbour), so a trace of
//!    one point per resolution bin gives the analyser's own tone level;
//!    level L_s = 10·log₁₀ P dBc (one sideband), and the tone adds
//!    2·10^{L_s/10} rad² like any listed spur ([`super::jitter`]).
//! 5. **Removal**: the run's points are set to the floor, so the noise
//!    integral no longer holds the tone.
//! 6. **Listed spurs first**: a spur of the user's list falling within a
//!    found run (between the points next to it) takes its place: the trace
//!    is still cleaned there, the found tone is not added, and the output
//!    says so — no double counting.

use super::jitter::Spur;
use super::{Quantity, Spectrum};
use crate::error::Result;
use serde::Serialize;

/// The rule that finds spurs (module notes).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SpurRule {
    /// How far above the floor a peak must stand, dB.
    pub threshold_db: f64,
    /// k: the floor is the median of 2k + 1 points.
    pub half_window: usize,
    /// The widest run (points 3 dB or more above the floor) that is a spur.
    pub max_width: usize,
}

impl Default for SpurRule {
    fn default() -> Self {
        Self {
            threshold_db: 10.0,
            half_window: 5,
            max_width: 3,
        }
    }
}

impl SpurRule {
    /// The rule in words, for outputs.
    pub fn describe(&self) -> String {
        format!(
            "peaks {} dB or more above the running median of {} points, at most {} points wide",
            self.threshold_db,
            2 * self.half_window + 1,
            self.max_width
        )
    }
}

/// A spur found in the trace.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FoundSpur {
    /// Offset of the peak, Hz.
    pub offset_hz: f64,
    /// Its level as a tone, dBc (one sideband).
    pub level_dbc: f64,
    /// The trace's value at the peak, dBc/Hz.
    pub peak_dbc_hz: f64,
    /// How far the peak stands above the floor, dB.
    pub above_floor_db: f64,
    /// The offsets the run spans (the points next to it), Hz.
    pub from_hz: f64,
    /// See `from_hz`.
    pub to_hz: f64,
    /// A spur of the user's list falls here and was used instead.
    pub replaced_by_listed: bool,
}

/// A trace made ready for a jitter integral.
#[derive(Debug, Clone)]
pub struct PreparedTrace {
    /// The trace with found spurs set to the floor (the input when none).
    pub spectrum: Spectrum,
    /// The spurs to add: the listed ones, then the found ones not replaced.
    pub spurs: Vec<Spur>,
    /// What was found.
    pub found: Vec<FoundSpur>,
}

fn median(v: &mut [f64]) -> f64 {
    v.sort_by(f64::total_cmp);
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        0.5 * (v[n / 2 - 1] + v[n / 2])
    }
}

/// Find the spurs of `spectrum` by `rule` (module notes).
pub fn find_spurs(spectrum: &Spectrum, rule: &SpurRule) -> Result<(Vec<FoundSpur>, Spectrum)> {
    let lf = spectrum.to(Quantity::Lf)?;
    let (f, l) = (&lf.f, &lf.values);
    let n = f.len();
    let floor: Vec<f64> = (0..n)
        .map(|i| {
            let h = rule.half_window.min(i).min(n - 1 - i);
            median(&mut l[i - h..=i + h].to_vec())
        })
        .collect();
    let excess: Vec<f64> = l.iter().zip(&floor).map(|(a, b)| a - b).collect();
    let mut found = Vec::new();
    let mut cleaned = l.clone();
    let mut i = 1;
    while i + 1 < n {
        let is_peak = excess[i] >= rule.threshold_db && l[i] >= l[i - 1] && l[i] >= l[i + 1];
        if !is_peak {
            i += 1;
            continue;
        }
        let (mut a, mut b) = (i, i);
        while a > 0 && excess[a - 1] >= 3.0 {
            a -= 1;
        }
        while b + 1 < n && excess[b + 1] >= 3.0 {
            b += 1;
        }
        if b - a < rule.max_width && a > 0 && b + 1 < n {
            let share = |j: usize| 0.5 * (f[j + 1] - f[j - 1]);
            let power: f64 = (a..=b)
                .map(|j| (10f64.powf(l[j] / 10.0) - 10f64.powf(floor[j] / 10.0)) * share(j))
                .sum();
            if power > 0.0 {
                found.push(FoundSpur {
                    offset_hz: f[i],
                    level_dbc: 10.0 * power.log10(),
                    peak_dbc_hz: l[i],
                    above_floor_db: excess[i],
                    from_hz: f[a - 1],
                    to_hz: f[b + 1],
                    replaced_by_listed: false,
                });
                cleaned[a..=b].copy_from_slice(&floor[a..=b]);
            }
        }
        i = b + 1;
    }
    let cleaned = Spectrum::new(f.clone(), cleaned, Quantity::Lf, spectrum.carrier)?;
    Ok((found, cleaned))
}

/// The trace and spurs for a jitter integral: with a rule, spurs are found
/// and the trace cleaned; the `listed` spurs come first and take the place
/// of a found one in the same run (module notes, 6).
pub fn prepare_trace(
    spectrum: &Spectrum,
    listed: &[Spur],
    rule: Option<&SpurRule>,
) -> Result<PreparedTrace> {
    let Some(rule) = rule else {
        return Ok(PreparedTrace {
            spectrum: spectrum.clone(),
            spurs: listed.to_vec(),
            found: Vec::new(),
        });
    };
    let (mut found, cleaned) = find_spurs(spectrum, rule)?;
    let mut spurs = listed.to_vec();
    for s in &mut found {
        s.replaced_by_listed = listed.iter().any(|l| l.f > s.from_hz && l.f < s.to_hz);
        if !s.replaced_by_listed {
            spurs.push(Spur {
                f: s.offset_hz,
                dbc: s.level_dbc,
            });
        }
    }
    Ok(PreparedTrace {
        spectrum: if found.is_empty() {
            spectrum.clone()
        } else {
            cleaned
        },
        spurs,
        found,
    })
}

/// A spur threshold in dB (`--spur-threshold`): a positive number, with or
/// without `dB` (`10`, `10dB`).
pub fn threshold_db(text: &str) -> std::result::Result<f64, String> {
    let t = text.trim();
    let t = (t.strip_suffix("dB").or_else(|| t.strip_suffix("db"))).unwrap_or(t);
    match t.trim().parse::<f64>() {
        Ok(v) if v > 0.0 && v.is_finite() => Ok(v),
        _ => Err(format!(
            "'{text}' is not a positive number of dB (e.g. 10dB)"
        )),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn smooth_slopes_are_their_own_floor() {
        // −30 dB/decade at 5 points a decade: 6 dB a point, no spur.
        let f: Vec<f64> = (0..40).map(|i| 10f64.powf(i as f64 / 5.0)).collect();
        let l: Vec<f64> = f.iter().map(|f| -60.0 - 30.0 * f.log10()).collect();
        let s = Spectrum::new(f, l, Quantity::Lf, Some(10e6)).unwrap();
        let (found, _) = find_spurs(&s, &SpurRule::default()).unwrap();
        assert!(found.is_empty(), "{found:?}");
    }
}
