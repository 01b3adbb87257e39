//! The `timeline` document: σ(τ) in each window, the whole record's curve,
//! the events and the expected false-alarm rate.

use super::{csv_text, Result};
use crate::deviation::{Curve, Point};
use crate::timeline::{Event, FalseAlarm, Timeline, Window};
use serde::Serialize;

/// The `timeline` results: `{"confidence","event_confidence","window",
/// "step","whole","windows":[{"start","end","points"}],"events":[{"start",
/// "end","tau","ratio","direction","windows"}],"false_alarm","caution"}`;
/// times in seconds from the record's first sample.
#[derive(Debug, Clone, Serialize)]
pub struct TimelineBody {
    /// Two-sided confidence of the windows' intervals.
    pub confidence: f64,
    /// Two-sided confidence of the event test's intervals.
    pub event_confidence: f64,
    /// Window length (s).
    pub window: f64,
    /// Step (s).
    pub step: f64,
    /// The whole record's curve on the windows' τ.
    pub whole: Curve,
    /// The windows.
    pub windows: Vec<Window>,
    /// The departures.
    pub events: Vec<Event>,
    /// Expected false-alarm rate of one window at each τ (stationary record).
    pub false_alarm: Vec<FalseAlarm>,
    /// [`crate::DECISION_CAUTION`].
    pub caution: &'static str,
}

impl TimelineBody {
    /// The body of a timeline.
    pub fn new(t: &Timeline, confidence: f64, event_confidence: f64) -> Self {
        Self {
            confidence,
            event_confidence,
            window: t.window_s,
            step: t.step_s,
            whole: t.whole.clone(),
            windows: t.windows.clone(),
            events: t.events.clone(),
            false_alarm: t.false_alarm.clone(),
            caution: crate::DECISION_CAUTION,
        }
    }

    /// CSV: one row per window and τ (`start`, `end`, then
    /// [`Point::COLUMNS`], then `ratio` to the whole record); the whole
    /// record's rows first with empty `start`/`end`.
    pub fn csv(&self) -> Result<String> {
        let mut header = vec!["start", "end"];
        header.extend(Point::COLUMNS);
        header.push("ratio");
        let mut rows: Vec<Vec<String>> = Vec::new();
        for p in &self.whole.points {
            let mut r = vec![String::new(), String::new()];
            r.extend(p.cells());
            r.push("1".into());
            rows.push(r);
        }
        for w in &self.windows {
            for p in &w.points {
                let mut r = vec![super::plain(w.start), super::plain(w.end)];
                r.extend(p.cells());
                let whole = self
                    .whole
                    .points
                    .iter()
                    .find(|q| q.estimate.m == p.estimate.m);
                r.push(super::plain_opt(
                    whole.map(|q| p.estimate.value / q.estimate.value),
                ));
                rows.push(r);
            }
        }
        csv_text(&header, rows)
    }
}
