//! The `wander` document: TIE statistics, MTIE and TDEV (in the point
//! shape of `stability`), and the mask checks.

use super::{csv_text, Result};
use crate::deviation::{Estimate, Point};
use crate::wander::WanderResult;
use serde::Serialize;

/// The `wander` results: `{"tie","mtie","tdev","masks","caution"?}`
/// ([`WanderResult`]); `"caution"` when masks were checked.
#[derive(Debug, Clone, Serialize)]
pub struct WanderBody {
    /// The analysis.
    #[serde(flatten)]
    pub result: WanderResult,
    /// The conditions of the masks and the decision caution.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub caution: Option<String>,
}

impl WanderBody {
    /// The document body of `result`.
    pub fn new(result: WanderResult) -> Self {
        let caution = (!result.checks.is_empty()).then(|| {
            format!(
                "{} {}",
                crate::wander::masks::CONDITIONS_NOTE,
                crate::DECISION_CAUTION
            )
        });
        Self { result, caution }
    }

    /// CSV: `estimator` (`mtie`, `tdev`), `origin` (`measured`), then
    /// [`Point::COLUMNS`], as the rows of `stability`.
    pub fn csv(&self) -> Result<String> {
        let mut header = vec!["estimator", "origin"];
        header.extend(Point::COLUMNS);
        let rows = [("mtie", &self.result.mtie), ("tdev", &self.result.tdev)]
            .into_iter()
            .flat_map(|(name, c)| {
                c.iter().map(move |e: &Estimate| {
                    let mut r = vec![name.to_string(), "measured".to_string()];
                    r.extend(Point::bare(*e).cells());
                    r
                })
            });
        csv_text(&header, rows)
    }
}
