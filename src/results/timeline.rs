//! The `timeline` document: σ(τ) in each window, the whole record's curve,
//! the events and the expected false-alarm rate.

use super::{csv_text, Result};
use crate::deviation::{Curve, Point};
use crate::timeline::{Direction, Event, FalseAlarm, Request, Timeline, Window};
use crate::units::{format_si, format_sig};
use serde::Serialize;
use std::fmt::Write as _;

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

/// A time in seconds from the first sample, in h, min or s.
fn when(t: f64) -> String {
    if t >= 7200.0 {
        format!("{} h", format_sig(t / 3600.0, 4))
    } else if t >= 120.0 {
        format!("{} min", format_sig(t / 60.0, 4))
    } else {
        format_si(t, "s", 4)
    }
}

/// The readable table: the whole record, the events, then each window's
/// ratios to the whole record.
pub fn timeline_text(path: &std::path::Path, t: &Timeline, req: &Request) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "# {}: {} in {} windows of {} moved by {} (times from the first sample)",
        path.display(),
        t.whole.estimator.name(),
        t.windows.len(),
        when(t.window_s),
        when(t.step_s)
    );
    let _ = writeln!(s);
    let _ = writeln!(s, "whole record");
    let _ = writeln!(
        s,
        "{:>10} {:>11} {:>25} {:>9} {:>5} {:>14}",
        "tau",
        "dev",
        format!("{:.1} % interval", req.confidence * 100.0),
        "edf",
        "noise",
        "false alarms"
    );
    for p in &t.whole.points {
        let fa = t
            .false_alarm
            .iter()
            .find(|f| f.tau == p.estimate.tau)
            .map(|f| format!("{:.1e}", f.rate))
            .unwrap_or_else(|| "—".into());
        let _ = writeln!(
            s,
            "{:>10} {:>11} {:>25} {:>9} {:>5} {:>14}",
            format_si(p.estimate.tau, "s", 4),
            format_sig(p.estimate.value, 4),
            match (p.lo, p.hi) {
                (Some(lo), Some(hi)) => format!("[{} … {}]", format_sig(lo, 4), format_sig(hi, 4)),
                _ => "—".into(),
            },
            p.edf
                .map(|e| format_sig(e, 4))
                .unwrap_or_else(|| "—".into()),
            p.noise().unwrap_or("—"),
            fa
        );
    }
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "events — windows whose interval and the whole record's ({:.0} % each) do not overlap",
        req.event_confidence * 100.0
    );
    if t.events.is_empty() {
        let _ = writeln!(s, "  none");
    } else {
        let _ = writeln!(
            s,
            "{:>12} {:>12} {:>10} {:>8} {:>6} {:>8}",
            "from", "to", "tau", "ratio", "", "windows"
        );
        for e in &t.events {
            let _ = writeln!(
                s,
                "{:>12} {:>12} {:>10} {:>8.3} {:>6} {:>8}",
                when(e.start),
                when(e.end),
                format_si(e.tau, "s", 4),
                e.ratio,
                match e.direction {
                    Direction::Above => "above",
                    Direction::Below => "below",
                },
                e.windows
            );
        }
    }
    let _ = writeln!(
        s,
        "false alarms: the expected fraction of windows flagged at each τ on a stationary record (log-normal approximation, docs/separate-and-timeline.md)"
    );
    let _ = writeln!(s);
    let _ = writeln!(s, "window ÷ whole record at each τ");
    let _ = write!(s, "{:>12}", "centre");
    for p in &t.whole.points {
        let _ = write!(
            s,
            " {:>7}",
            format_si(p.estimate.tau, "s", 3).replace(' ', "")
        );
    }
    let _ = writeln!(s);
    for w in &t.windows {
        let _ = write!(s, "{:>12}", when(w.centre()));
        for wp in &t.whole.points {
            let cell = w
                .points
                .iter()
                .find(|p| p.estimate.m == wp.estimate.m)
                .map(|p| format!("{:.3}", p.estimate.value / wp.estimate.value))
                .unwrap_or_else(|| "—".into());
            let _ = write!(s, " {cell:>7}");
        }
        let _ = writeln!(s);
    }
    let _ = writeln!(s, "{}", crate::DECISION_CAUTION);
    s
}
