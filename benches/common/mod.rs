//! Process clocks and load for the plain-timer benches (Linux /proc; None
//! or "n/a" where it is not available). Included by each bench with
//! `#[path = "common/mod.rs"] mod common;`.
#![allow(dead_code)]

/// Two fields of /proc/self/stat after the command name (0-based index
/// after the `)`), in clock ticks of 1/100 s, summed, in seconds.
fn stat_seconds(a: usize, b: usize) -> Option<f64> {
    let stat = std::fs::read_to_string("/proc/self/stat").ok()?;
    let after = stat.rsplit_once(')')?.1;
    let fields: Vec<&str> = after.split_whitespace().collect();
    let x: f64 = fields.get(a)?.parse().ok()?;
    let y: f64 = fields.get(b)?.parse().ok()?;
    Some((x + y) / 100.0)
}

/// Process CPU time in seconds (utime + stime).
pub fn cpu_seconds() -> Option<f64> {
    stat_seconds(11, 12)
}

/// CPU time of the waited-for children in seconds (cutime + cstime).
pub fn children_cpu_seconds() -> Option<f64> {
    stat_seconds(13, 14)
}

/// The 1, 5 and 15 minute load averages, as /proc/loadavg gives them.
pub fn load_average() -> String {
    std::fs::read_to_string("/proc/loadavg")
        .map(|s| s.split_whitespace().take(3).collect::<Vec<_>>().join(" "))
        .unwrap_or_else(|_| "n/a".into())
}
