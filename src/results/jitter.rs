//! The `jitter` document: integrated phase jitter per band, with its limit
//! and verdict.

use super::{csv_text, plain, Result};
use crate::spectrum::jitter::{Band, BandJitter, JitterLimit, RecordPeriodJitter};
use crate::spectrum::spurs::FoundSpur;
use crate::verdict::Judgement;
use serde::Serialize;

/// The `jitter` results: `{"carrier","ui_rate","spur_convention","bands",
/// "caution"}`, and for a record's spectrum `"window","enbw_hz",
/// "gaps_handling"`.
#[derive(Debug, Clone, Serialize)]
pub struct JitterBody {
    /// Carrier, Hz.
    pub carrier: f64,
    /// Line rate for jitter in UI, Hz (`null`: not given).
    pub ui_rate: Option<f64>,
    /// How a spur level is read.
    pub spur_convention: &'static str,
    /// One entry per `--band`, in order.
    pub bands: Vec<JitterBand>,
    /// The decision caution.
    pub caution: &'static str,
    /// The data window of a record's spectrum.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub window: Option<&'static str>,
    /// Its equivalent noise bandwidth, Hz.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub enbw_hz: Option<f64>,
    /// How its gaps were handled.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub gaps_handling: Option<String>,
    /// The name of the filter set the weightings came from (`--filters`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub filter_set: Option<String>,
    /// The rule spurs were looked for by (`null`: not looked for).
    pub spur_rule: Option<String>,
    /// Spurs found in the trace (taken out of the noise and counted once,
    /// unless a listed spur took their place).
    pub found_spurs: Vec<FoundSpur>,
    /// Period jitter measured from the record's edge differences (`--record`
    /// with `--period`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub record_period: Option<RecordPeriodJitter>,
}

/// How a spur level is read, in words.
pub const SPUR_CONVENTION: &str = "spur level in dBc of one sideband; pure PM, 2·10^(dBc/10) rad²";

/// One band: its result ([`BandJitter`]'s keys) or, when it could not be
/// computed, `{"from","to","not_computed"}`; then `"limit"` and the
/// judgement (`"verdict","coverage","reason"`; `"verdict": null` without a
/// limit).
#[derive(Debug, Clone, Serialize)]
pub struct JitterBand {
    /// The result.
    #[serde(flatten)]
    pub outcome: BandOutcome,
    /// The limit, `{"unit","value"}`.
    pub limit: Option<JitterLimit>,
    /// The verdict.
    #[serde(flatten)]
    pub judgement: MaybeJudged,
}

/// A band's result.
#[derive(Debug, Clone, Serialize)]
#[serde(untagged)]
pub enum BandOutcome {
    /// Computed.
    Computed(BandJitter),
    /// Not computed, and why.
    NotComputed {
        /// Lower offset, Hz.
        from: f64,
        /// Upper offset, Hz.
        to: f64,
        /// Why.
        not_computed: String,
    },
}

/// A judgement, or `"verdict": null` when there is no limit.
#[derive(Debug, Clone, Serialize)]
#[serde(untagged)]
pub enum MaybeJudged {
    /// Judged against a limit.
    Judged(Judgement),
    /// No limit.
    NoLimit {
        /// Always `null`.
        verdict: (),
    },
}

impl JitterBand {
    /// The entry of `band` with its outcome, limit and judgement.
    pub fn new(
        band: &Band,
        outcome: &std::result::Result<BandJitter, String>,
        limit: Option<&JitterLimit>,
        judgement: Option<&Judgement>,
    ) -> Self {
        Self {
            outcome: match outcome {
                Ok(r) => BandOutcome::Computed(r.clone()),
                Err(e) => BandOutcome::NotComputed {
                    from: band.from,
                    to: band.to,
                    not_computed: e.clone(),
                },
            },
            limit: limit.copied(),
            judgement: match judgement {
                Some(j) => MaybeJudged::Judged(j.clone()),
                None => MaybeJudged::NoLimit { verdict: () },
            },
        }
    }
}

/// The extrapolated ranges of a band as `from:to from:to` (Hz).
pub fn extrapolated_text(r: &BandJitter) -> String {
    r.extrapolated
        .iter()
        .map(|(a, b)| format!("{}:{}", plain(*a), plain(*b)))
        .collect::<Vec<_>>()
        .join(" ")
}

impl JitterBody {
    /// CSV: `from,to,filter,rms_rad,rms_deg,rms_s,rms_ui,spurs,extrapolated`,
    /// then, when period jitter was asked for, `period_rms_s,c2c_rms_s,
    /// n_period_rms_s`; one row per computed band (a weighting named by a
    /// file whose name holds a comma is quoted).
    pub fn csv(&self) -> Result<String> {
        let computed = || {
            self.bands.iter().filter_map(|b| match &b.outcome {
                BandOutcome::Computed(r) => Some(r),
                BandOutcome::NotComputed { .. } => None,
            })
        };
        let with_period = computed().any(|r| r.period.is_some());
        let mut header = vec![
            "from",
            "to",
            "filter",
            "rms_rad",
            "rms_deg",
            "rms_s",
            "rms_ui",
            "spurs",
            "extrapolated",
        ];
        if with_period {
            header.extend(["period_rms_s", "c2c_rms_s", "n_period_rms_s"]);
        }
        csv_text(
            &header,
            computed().map(|r| {
                let mut row = vec![
                    plain(r.from),
                    plain(r.to),
                    r.filter.clone(),
                    plain(r.rms_rad),
                    plain(r.rms_deg),
                    plain(r.rms_s),
                    r.rms_ui.map(plain).unwrap_or_default(),
                    r.spurs.to_string(),
                    extrapolated_text(r),
                ];
                if with_period {
                    let p = r.period.as_ref();
                    row.push(p.map(|p| plain(p.period_rms_s)).unwrap_or_default());
                    row.push(p.map(|p| plain(p.c2c_rms_s)).unwrap_or_default());
                    row.push(
                        p.and_then(|p| p.n_period_rms_s)
                            .map(plain)
                            .unwrap_or_default(),
                    );
                }
                row
            }),
        )
    }
}
