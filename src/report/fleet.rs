//! The comparison report of several devices: each device's report built
//! from its DUT file (in parallel, by the same [`super::build`] path as the
//! single report, so every verdict is the single report's), the verdict
//! matrix ([`crate::results::FleetMatrix`]) with the answer first, charts
//! that overlay the devices — one colour and marker per device, the same
//! in every chart ([`crate::plot::style::DEVICE_PALETTE`]) — the summary
//! rows, and every device's full sections below, linked by anchors.
//!
//! Sections of the comparison (our own names): the answer; verdict matrix;
//! the devices side by side (charts); summary per device; then one block per
//! device with the single report's sections, ids prefixed `d1-`, `d2-`, ….

use super::html::{n, t, Cell, Html, CSS};
use super::{build, Part, Report};
use crate::error::{Error, Result};
use crate::io::dut::Dut;
use crate::plot::holdover::time_unit;
use crate::plot::style::{device_colour, device_marker};
use crate::plot::{Axis, Chart, Colour, Line, Marker, Orientation, Rule, Series, Style, XY};
use crate::results::{CheckKind, FleetMatrix};
use crate::units::{format_margin_db, format_si, format_sig};
use crate::verdict::Verdict;
use rayon::prelude::*;

/// Inline chart size (pixels; the SVG scales with the page).
const CHART: (u32, u32) = (920, 540);

/// The comparison sections, in document order (ids and headings).
pub const FLEET_SECTION_IDS: [(&str, &str); 4] = [
    ("answer", "The answer"),
    ("matrix", "Verdict matrix"),
    ("side-by-side", "The devices side by side"),
    ("summary", "Summary per device"),
];

/// Several devices' reports and their matrix.
#[derive(Debug, Clone, PartialEq)]
pub struct Fleet {
    /// Each device's report, in input order.
    pub reports: Vec<Report>,
    /// The matrix.
    pub matrix: FleetMatrix,
    /// When it was made (UTC, text).
    pub generated: String,
}

impl Fleet {
    /// The comparison of reports already built, each with its DUT file.
    /// Two devices of one name are refused: the legends, the ranking and
    /// the matrix name devices.
    pub fn from_reports(reports: Vec<Report>, duts: &[String]) -> Result<Self> {
        let names: Vec<&str> = reports.iter().map(|r| r.device.as_str()).collect();
        distinct_names(&names, duts)?;
        let pairs: Vec<(&Report, String)> = reports
            .iter()
            .zip(duts)
            .map(|(r, d)| (r, d.clone()))
            .collect();
        let matrix = FleetMatrix::build(&pairs);
        Ok(Self {
            reports,
            matrix,
            generated: super::now_utc(),
        })
    }
}

/// Refuse two devices of one name (`files` name their DUT files).
fn distinct_names(names: &[&str], files: &[String]) -> Result<()> {
    for (i, n) in names.iter().enumerate() {
        if let Some(j) = names[..i].iter().position(|o| o == n) {
            return Err(Error::invalid(format!(
                "{} and {} both name the device \"{n}\": give each DUT file its own [device] name",
                files.get(j).map(String::as_str).unwrap_or("?"),
                files.get(i).map(String::as_str).unwrap_or("?"),
            )));
        }
    }
    Ok(())
}

/// Build every device's report in parallel (rayon) and the matrix.
/// `progress(device, done, total, what)` is called before each step of
/// each device, from the worker threads.
pub fn build(
    duts: &[Dut],
    opts: &build::BuildOptions,
    progress: &(dyn Fn(usize, usize, usize, &str) + Sync),
) -> Result<Fleet> {
    let files: Vec<String> = duts.iter().map(|d| d.file.display().to_string()).collect();
    let names: Vec<&str> = duts.iter().map(|d| d.name.as_str()).collect();
    distinct_names(&names, &files)?;
    let reports: Vec<Report> = duts
        .par_iter()
        .enumerate()
        .map(|(i, d)| {
            build::from_dut_with_progress(d, opts, &mut |done, total, what| {
                progress(i, done, total, what)
            })
        })
        .collect::<Result<Vec<_>>>()?;
    Fleet::from_reports(reports, &files)
}

/// Device `i`'s style: its colour, its marker, a solid line.
fn device_style(i: usize) -> Style {
    Style {
        colour: device_colour(i),
        line: Line::Solid,
        width: 2.0,
        marker: device_marker(i),
    }
}

fn fleet_title(what: &str) -> String {
    format!("Devices compared — {what}")
}

/// The overlaid charts, with file-name stems: `fleet-stability` (OADEV of
/// each device's first record, with intervals), `fleet-phase-noise` (each
/// device's L(f) table), `fleet-mtie`, `fleet-tdev` (each device's
/// measured curve against every mask), `fleet-holdover` (p95 of |TE| solid,
/// p50 dashed, against each budget). Every series of a device is named by
/// the device and drawn in its colour and marker.
pub fn charts(f: &Fleet) -> Vec<(String, Chart)> {
    vec![
        ("fleet-stability".into(), stability_chart(f)),
        ("fleet-phase-noise".into(), phase_noise_chart(f)),
        (
            "fleet-mtie".into(),
            wander_chart(f, crate::wander::masks::Metric::Mtie),
        ),
        (
            "fleet-tdev".into(),
            wander_chart(f, crate::wander::masks::Metric::Tdev),
        ),
        ("fleet-holdover".into(), holdover_chart(f)),
    ]
}

fn missing_note(missing: &[String], what: &str) -> Option<String> {
    (!missing.is_empty()).then(|| format!("Not shown ({what}): {}.", missing.join(", ")))
}

fn stability_chart(f: &Fleet) -> Chart {
    use crate::deviation::{Estimator, Origin};
    let mut ch = Chart::new(
        &fleet_title("frequency stability"),
        Axis::log_si("averaging time τ", "s"),
        Axis::log_plain("Allan deviation σ_y(τ)", ""),
    );
    let mut conf = None;
    let mut missing = Vec::new();
    for (i, r) in f.reports.iter().enumerate() {
        let curve = match &r.stability {
            Part::Done(list) => list.first().and_then(|s| {
                s.plot.as_ref().and_then(|p| {
                    conf = conf.or(p.confidence);
                    p.curves
                        .iter()
                        .find(|c| c.estimator == Estimator::Oadev && c.origin == Origin::Measured)
                })
            }),
            Part::Absent(_) => None,
        };
        match curve {
            Some(c) => ch.series.push(Series {
                name: r.device.clone(),
                points: c.points.clone(),
                style: device_style(i),
            }),
            None => missing.push(r.device.clone()),
        }
    }
    ch.subtitle = match conf {
        Some(p) => format!(
            "OADEV of each device's first record, as prepared for its report · bars: {:.1} % confidence intervals",
            p * 100.0
        ),
        None => "OADEV of each device's first record, as prepared for its report".into(),
    };
    ch.notes.extend(missing_note(&missing, "no OADEV"));
    ch
}

fn phase_noise_chart(f: &Fleet) -> Chart {
    use crate::plot::phase_noise::TraceKind;
    let mut ch = Chart::new(
        &fleet_title("phase noise"),
        Axis::log_si("offset frequency", "Hz"),
        Axis::linear_plain("single-sideband phase noise L(f)", "dBc/Hz"),
    );
    ch.subtitle = "each device's L(f) table · L(f) = S_φ(f)/2 (IEEE Std 1139)".into();
    let mut missing = Vec::new();
    let mut carriers = Vec::new();
    for (i, r) in f.reports.iter().enumerate() {
        let trace = match &r.phase_noise {
            Part::Done(p) => {
                carriers.push(p.carrier);
                p.plot.traces.iter().find(|t| t.kind == TraceKind::Table)
            }
            Part::Absent(_) => None,
        };
        match trace {
            Some(t) => ch.series.push(Series {
                name: r.device.clone(),
                points: t.points.iter().map(|&(x, y)| XY::new(x, y)).collect(),
                style: Style {
                    marker: if t.points.len() <= 80 {
                        device_marker(i)
                    } else {
                        Marker::None
                    },
                    ..device_style(i)
                },
            }),
            None => missing.push(r.device.clone()),
        }
    }
    carriers.dedup();
    if carriers.len() > 1 {
        ch.notes.push(
            "The devices' carriers differ: L(f) of different carriers is not directly comparable."
                .into(),
        );
    }
    ch.notes
        .extend(missing_note(&missing, "no phase-noise table"));
    ch
}

fn wander_chart(f: &Fleet, metric: crate::wander::masks::Metric) -> Chart {
    let mut ch = Chart::new(
        &fleet_title(&metric.label()),
        Axis::log_si("observation interval τ", "s"),
        Axis::log_si(&metric.label(), "s"),
    );
    ch.subtitle = format!(
        "{} of each device's capture against every mask asked for (ITU-T G.810)",
        metric.label()
    );
    // Masks by name: the widest sampling of each among the devices.
    let mut masks: Vec<(String, Vec<(f64, f64)>)> = Vec::new();
    let mut missing = Vec::new();
    for (i, r) in f.reports.iter().enumerate() {
        let plot = match &r.wander {
            Part::Done(w) => w.plots.iter().find(|p| p.metric == metric),
            Part::Absent(_) => None,
        };
        let Some(p) = plot else {
            missing.push(r.device.clone());
            continue;
        };
        ch.series.push(Series {
            name: r.device.clone(),
            points: p.measured.iter().map(|&(x, y)| XY::new(x, y)).collect(),
            style: Style {
                marker: if p.measured.len() <= 120 {
                    device_marker(i)
                } else {
                    Marker::None
                },
                ..device_style(i)
            },
        });
        for m in &p.masks {
            let span = |v: &Vec<(f64, f64)>| match (v.first(), v.last()) {
                (Some(a), Some(b)) => b.0 / a.0,
                _ => 0.0,
            };
            match masks.iter_mut().find(|(n, _)| *n == m.name) {
                Some((_, pts)) if span(pts) < span(&m.limit) => *pts = m.limit.clone(),
                Some(_) => {}
                None => masks.push((m.name.clone(), m.limit.clone())),
            }
        }
    }
    let patterns = [Line::Dashed, Line::Dotted, Line::Solid];
    for (k, (name, pts)) in masks.into_iter().enumerate() {
        ch.series.push(Series {
            name: format!("mask {name}"),
            points: pts.iter().map(|&(x, y)| XY::new(x, y)).collect(),
            style: Style {
                colour: if k % 2 == 0 {
                    Colour::Limit
                } else {
                    Colour::Muted
                },
                line: patterns[k % patterns.len()],
                width: 1.8,
                marker: Marker::None,
            },
        });
    }
    ch.notes.push(
        "Violations are listed in the verdict matrix and in each device's wander section.".into(),
    );
    ch.notes
        .extend(missing_note(&missing, "no wander analysis"));
    ch
}

fn holdover_chart(f: &Fleet) -> Chart {
    let longest = f
        .reports
        .iter()
        .filter_map(|r| match &r.holdover {
            Part::Done(h) => Some(h.plot.span),
            Part::Absent(_) => None,
        })
        .fold(0.0f64, f64::max);
    let (unit, div) = time_unit(longest.max(1.0));
    let x = if unit == "s" {
        Axis::linear_si("time in holdover", "s")
    } else {
        Axis::linear_plain("time in holdover", unit)
    };
    let mut ch = Chart::new(
        &fleet_title("holdover"),
        x,
        Axis::linear_si("time error |TE|", "s"),
    );
    ch.x.range = Some((0.0, longest.max(1.0) / div));
    ch.subtitle =
        "p95 of |TE| (solid, markers) and p50 (dashed) of each device against its budget".into();
    let mut budgets: Vec<f64> = Vec::new();
    let mut spans: Vec<f64> = Vec::new();
    let mut missing = Vec::new();
    for (i, r) in f.reports.iter().enumerate() {
        let Part::Done(h) = &r.holdover else {
            missing.push(r.device.clone());
            continue;
        };
        let p = &h.plot;
        let xs: Vec<f64> = p.t.iter().map(|t| t / div).collect();
        let pts =
            |v: &[f64]| -> Vec<XY> { xs.iter().zip(v).map(|(&x, &y)| XY::new(x, y)).collect() };
        ch.series.push(Series {
            name: format!("{} p95", r.device),
            points: pts(&p.p95),
            style: device_style(i),
        });
        ch.series.push(Series {
            name: format!("{} p50", r.device),
            points: pts(&p.p50),
            style: Style {
                colour: device_colour(i),
                line: Line::Dashed,
                width: 1.4,
                marker: Marker::None,
            },
        });
        if !budgets.contains(&h.budget) {
            budgets.push(h.budget);
        }
        for s in &h.spans {
            if !spans.contains(&s.span) {
                spans.push(s.span);
            }
        }
    }
    for b in budgets {
        ch.rules.push(Rule {
            label: format!(
                "budget ±{} (|TE| ≤ {})",
                format_si(b, "s", 3),
                format_si(b, "s", 3)
            ),
            orientation: Orientation::Horizontal,
            value: b,
            colour: Colour::Limit,
            line: Line::Dashed,
            extend_range: true,
        });
    }
    spans.sort_by(f64::total_cmp);
    for s in spans {
        ch.rules.push(Rule {
            label: format!("span {}", format_si(s / div, unit, 3)),
            orientation: Orientation::Vertical,
            value: s / div,
            colour: Colour::Muted,
            line: Line::Dotted,
            extend_range: false,
        });
    }
    ch.notes
        .push("|TE| is the size of the time error either side of zero: a budget of ±B holds while |TE| ≤ B.".into());
    ch.notes.extend(missing_note(&missing, "no holdover"));
    ch
}

fn opt(v: Option<f64>, f: impl Fn(f64) -> String) -> String {
    v.map(f).unwrap_or_else(|| "—".into())
}

fn per_day(v: f64) -> String {
    format!("{} /day", format_sig(v, 3))
}

/// The anchor prefix of device `i` (0-based): `d1-`, `d2-`, ….
pub fn anchor(i: usize) -> String {
    format!("d{}-", i + 1)
}

fn answer_section(h: &mut Html, f: &Fleet) {
    let (id, title) = FLEET_SECTION_IDS[0];
    h.open_section(id, title);
    if f.matrix.answer.is_empty() {
        h.p_class(
            "absent",
            "No check was asked for in any DUT file: nothing to rank.",
        );
    }
    h.raw("<ul class=\"answer\">");
    for a in &f.matrix.answer {
        h.el("li", "", a);
    }
    h.raw("</ul>\n");
    h.p_class("caution", crate::DECISION_CAUTION);
    h.close_section();
}

fn device_link(h: &mut Html, i: usize, name: &str) {
    h.raw(&format!(
        "<a href=\"#{}device\"><span class=\"swatch\" style=\"background:{}\"></span>",
        anchor(i),
        css_colour(i)
    ))
    .text(name)
    .raw("</a>");
}

fn css_colour(i: usize) -> String {
    let c = device_colour(i).rgb();
    format!("#{:02x}{:02x}{:02x}", c.0, c.1, c.2)
}

fn matrix_section(h: &mut Html, f: &Fleet) {
    let (id, title) = FLEET_SECTION_IDS[1];
    h.open_section(id, title);
    let m = &f.matrix;
    h.p("One row per device, best first (every check judged before any not judged, then by the worst margin); one column per check. Margin: 20·log10(limit / measured), positive within the limit — at the worst τ of a mask, at the band's rms of a jitter limit, at the span's end (p95 of |TE|) of a holdover span. — : the check is not in that device's DUT file.");
    h.raw("<table class=\"matrix\"><thead><tr><th scope=\"col\">rank</th><th scope=\"col\">device</th><th scope=\"col\">worst margin</th>");
    for c in &m.columns {
        h.raw("<th scope=\"col\">")
            .text(&format!("{}: {}", c.kind.word(), c.item))
            .raw("<br><span class=\"crit\">")
            .text(&c.criterion)
            .raw("</span></th>");
    }
    h.raw("</tr></thead><tbody>");
    for row in m.ranked() {
        let i = m
            .devices
            .iter()
            .position(|d| d.name == row.name)
            .unwrap_or(0);
        h.raw(&format!(
            "<tr><td class=\"num\">{}</td><th scope=\"row\">",
            row.rank
        ));
        device_link(h, i, &row.name);
        h.raw("</th><td class=\"num\">")
            .text(&opt(row.worst_margin_db, format_margin_db))
            .raw("</td>");
        for c in &row.checks {
            cell(h, c);
        }
        h.raw("</tr>");
    }
    h.raw("</tbody></table>\n");
    let notes: Vec<String> = m
        .devices
        .iter()
        .flat_map(|d| {
            d.checks
                .iter()
                .filter_map(move |c| match (c.verdict, &c.reason) {
                    (Some(_), Some(why)) => Some(format!("{} — {}: {why}", d.name, c.item)),
                    _ => None,
                })
        })
        .collect();
    if !notes.is_empty() {
        h.el("h3", "", "Not judged, or judged on part of the range");
        h.ul(&notes);
    }
    h.p_class("caution", &m.caution);
    h.close_section();
}

fn cell(h: &mut Html, c: &crate::results::MatrixCell) {
    let Some(v) = c.verdict else {
        h.raw("<td class=\"absent-cell\" title=\"not in this device's DUT file\">—</td>");
        return;
    };
    let (class, word) = match v {
        Verdict::Meets => ("pass", "meets"),
        Verdict::Exceeds => ("fail", "exceeds"),
        Verdict::NotJudged => ("none", "not judged"),
    };
    h.raw(&format!("<td><span class=\"badge {class}\">{word}</span>"));
    if v != Verdict::NotJudged && c.coverage == Some(crate::verdict::Coverage::Partial) {
        h.raw(" <span class=\"partial\">partial coverage</span>");
    }
    if let Some(mg) = c.margin_db {
        h.raw("<br><span class=\"margin\">")
            .text(&format!(
                "{} · ratio {}",
                format_margin_db(mg),
                format_sig(c.ratio.unwrap_or(f64::NAN), 3)
            ))
            .raw("</span>");
    }
    if c.kind == CheckKind::Holdover && v != Verdict::NotJudged {
        h.raw("<br><span class=\"hold\">")
            .text(&match c.hold_time_s {
                Some(t) => format!(
                    "p95 reaches the budget after {}",
                    format_si(t / 3600.0, "h", 3)
                ),
                None => "p95 within the budget through the span".into(),
            });
        h.raw("</span>");
    }
    h.raw("</td>");
}

fn charts_section(h: &mut Html, f: &Fleet) -> Result<()> {
    let (id, title) = FLEET_SECTION_IDS[2];
    h.open_section(id, title);
    h.raw("<p class=\"legend-key\">");
    for (i, r) in f.reports.iter().enumerate() {
        device_link(h, i, &r.device);
        h.raw(" ");
    }
    h.raw("</p>\n");
    h.p("Each device keeps its colour and marker in every chart; the legends sit beside the plotting area, never over the data.");
    let captions = [
        "σ–τ: OADEV of each device with its confidence intervals",
        "L(f) of each device's phase-noise table",
        "MTIE of each device against the masks",
        "TDEV of each device against the masks",
        "Holdover: p95 of |TE| (solid) and p50 (dashed) of each device against the budget",
    ];
    for ((_, chart), cap) in charts(f).iter().zip(captions) {
        h.figure(&crate::plot::to_svg_string(chart, CHART)?, cap);
    }
    h.close_section();
    Ok(())
}

fn summary_section(h: &mut Html, f: &Fleet) {
    let (id, title) = FLEET_SECTION_IDS[3];
    h.open_section(id, title);
    h.p("The first record of each device: the power-law model fitted to it (IEEE Std 1139), the aging fitted for holdover (± 1σ), the record's linear drift (± 1σ), the lowest OADEV (the noise floor of the σ–τ picture), L(f) at the table's highest offset, and how much data there was.");
    let rows: Vec<Vec<Cell>> = f
        .matrix
        .ranked()
        .iter()
        .map(|row| {
            let s = &row.summary;
            vec![
                t(&row.name),
                Cell::Code(if s.h.is_empty() {
                    "—".into()
                } else {
                    s.h.iter()
                        .map(|t| format!("h{}={:.3e} ({})", t.alpha, t.h, t.noise))
                        .collect::<Vec<_>>()
                        .join(", ")
                }),
                n(match (s.aging_per_day, s.aging_sigma_per_day) {
                    (Some(a), Some(sg)) => format!("{} ± {}", per_day(a), format_sig(sg, 2)),
                    (Some(a), None) => per_day(a),
                    _ => "—".into(),
                }),
                n(match (s.drift_per_day, s.drift_sigma_per_day) {
                    (Some(a), Some(sg)) => format!("{} ± {}", per_day(a), format_sig(sg, 2)),
                    (Some(a), None) => per_day(a),
                    _ => "—".into(),
                }),
                n(s.sigma_floor
                    .map(|p| {
                        format!(
                            "{} at τ = {}",
                            format_sig(p.dev, 3),
                            format_si(p.tau, "s", 3)
                        )
                    })
                    .unwrap_or_else(|| "—".into())),
                n(s.lf_far
                    .map(|p| format!("{:.1} dBc/Hz at {}", p.lf_dbc_hz, format_si(p.f, "Hz", 3)))
                    .unwrap_or_else(|| "—".into())),
                n(match (s.points, s.span_s, s.gaps) {
                    (Some(p), Some(sp), Some(g)) => format!(
                        "{p} points, {}, {g} gaps{}",
                        format_si(sp / 3600.0, "h", 3),
                        s.outliers
                            .map(|o| format!(", {o} outliers"))
                            .unwrap_or_default()
                    ),
                    _ => "—".into(),
                }),
            ]
        })
        .collect();
    h.table(
        "summary",
        &[
            "device",
            "model h_α",
            "aging",
            "drift",
            "noise floor (OADEV)",
            "L(f) far out",
            "data",
        ],
        &rows,
    );
    h.close_section();
}

/// The comparison as one self-contained HTML document.
pub fn render_html(f: &Fleet) -> Result<String> {
    let names: Vec<&str> = f.reports.iter().map(|r| r.device.as_str()).collect();
    let title = format!("{} — devices compared", names.join(", "));
    let mut h = Html::new();
    h.raw("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n");
    h.raw("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n");
    h.raw(&format!(
        "<meta name=\"generator\" content=\"{} {}\">\n",
        crate::TOOL,
        crate::VERSION
    ));
    h.raw("<title>").text(&title).raw("</title>\n");
    h.raw("<style>")
        .raw(CSS)
        .raw(FLEET_CSS)
        .raw("</style>\n</head>\n<body>\n");
    h.raw("<header class=\"top\">");
    h.el("h1", "", &title);
    h.p(&format!(
        "Made by {} {} on {} from {} DUT files.",
        crate::TOOL,
        crate::VERSION,
        f.generated,
        f.reports.len()
    ));
    h.raw("</header>\n<nav class=\"toc\">");
    for (id, title) in FLEET_SECTION_IDS {
        h.raw(&format!("<a href=\"#{id}\">"))
            .text(title)
            .raw("</a>\n");
    }
    for (i, r) in f.reports.iter().enumerate() {
        h.raw(&format!("<a href=\"#{}device\">", anchor(i)))
            .text(&r.device)
            .raw("</a>\n");
    }
    h.raw("</nav>\n<main>\n");
    answer_section(&mut h, f);
    matrix_section(&mut h, f);
    charts_section(&mut h, f)?;
    summary_section(&mut h, f);
    for (i, r) in f.reports.iter().enumerate() {
        let pre = anchor(i);
        h.raw(&format!("<article class=\"device\" id=\"{pre}device\">"));
        h.raw("<h2 class=\"device\">");
        h.raw(&format!(
            "<span class=\"swatch\" style=\"background:{}\"></span>",
            css_colour(i)
        ));
        h.text(&format!("Device: {}", r.device)).raw("</h2>");
        if let Some(d) = &r.description {
            h.p(d);
        }
        if let Some(file) = &r.dut_file {
            h.p(&format!("DUT file: {file}"));
        }
        h.raw("<nav class=\"toc\">");
        for (id, title) in super::SECTION_IDS {
            h.raw(&format!("<a href=\"#{pre}{id}\">"))
                .text(title)
                .raw("</a>\n");
        }
        h.raw("<a href=\"#matrix\">back to the matrix</a></nav>\n");
        super::sections::body(&mut h, r, &pre)?;
        h.raw("</article>\n");
    }
    h.raw("</main>\n<footer>");
    h.text(&format!(
        "{} {} · every value above was computed from the inputs listed; nothing was fetched from a network.",
        crate::TOOL,
        crate::VERSION
    ));
    h.raw("</footer>\n</body>\n</html>\n");
    Ok(h.finish())
}

/// Render and write the comparison atomically.
pub fn write(f: &Fleet, path: &std::path::Path) -> Result<()> {
    let html = render_html(f)?;
    crate::io::write_atomic(path, html.as_bytes())?;
    Ok(())
}

/// The comparison's extra style (ours): the matrix, swatches, device blocks.
const FLEET_CSS: &str = r#"
table.matrix th, table.matrix td { min-width: 9em; }
table.matrix th .crit { font-weight: 400; color: var(--soft); font-size: 11px; }
table.matrix td.absent-cell { color: var(--none); text-align: center; }
span.margin, span.hold { font-size: 12px; color: var(--soft); font-variant-numeric: tabular-nums; }
span.swatch { display:inline-block; width: 12px; height: 12px; border-radius: 2px; margin-right: 6px; vertical-align: -1px; }
ul.answer li { margin: 4px 0; font-size: 16px; }
p.legend-key a { margin-right: 18px; text-decoration: none; color: var(--ink); }
article.device { border-top: 4px solid var(--accent); margin-top: 28px; }
h2.device { font-size: 22px; color: var(--ink); }
"#;

#[cfg(test)]
mod tests {
    use super::*;

    fn report(name: &str) -> Report {
        use crate::plot::holdover::HoldoverPlot;
        use crate::plot::phase_noise::{LfTrace, PhaseNoisePlot, TraceKind};
        use crate::plot::stability::{SigmaCurve, StabilityPlot};
        use crate::plot::wander::{MaskLine, Metric, WanderPlot};
        use crate::report::*;
        let mut r = Report::empty(name, "");
        let pts: Vec<XY> = (0..8)
            .map(|k| {
                let t = 2f64.powi(k);
                XY::with_interval(t, 1e-11 / t.sqrt(), Some(0.9e-11), Some(1.1e-11))
            })
            .collect();
        r.stability = Part::Done(vec![StabilitySection {
            source: "rec".into(),
            quality: None,
            preparation: vec![],
            plot: Some(StabilityPlot {
                title: name.into(),
                curves: vec![SigmaCurve {
                    name: "oadev".into(),
                    estimator: crate::deviation::Estimator::Oadev,
                    origin: crate::deviation::Origin::Measured,
                    points: pts,
                }],
                regions: vec![],
                confidence: Some(0.683),
                notes: vec![],
            }),
            rows: vec![],
            confidence: 0.683,
            notes: vec![],
        }]);
        r.phase_noise = Part::Done(PhaseNoiseSection {
            source: "t".into(),
            carrier: 10e6,
            plot: PhaseNoisePlot {
                title: name.into(),
                carrier: Some(10e6),
                traces: vec![LfTrace {
                    name: "t".into(),
                    kind: TraceKind::Table,
                    points: vec![(1.0, -90.0), (1e6, -150.0)],
                }],
                bands: vec![],
                notes: vec![],
            },
            bands: vec![],
            notes: vec![],
        });
        let wp = |metric| WanderPlot {
            title: name.into(),
            metric,
            measured: vec![(1.0, 1e-9), (100.0, 1e-8)],
            masks: vec![MaskLine {
                name: "m".into(),
                limit: vec![(1.0, 1e-7), (100.0, 1e-6)],
                violations: vec![],
            }],
            notes: vec![],
        };
        r.wander = Part::Done(WanderSection {
            source: "tie".into(),
            tie: None,
            plots: vec![wp(Metric::Mtie), wp(Metric::Tdev)],
            masks: vec![],
            notes: vec![],
        });
        let t: Vec<f64> = (0..=8).map(|h| h as f64 * 3600.0).collect();
        r.holdover = Part::Done(HoldoverSection {
            source: "rec".into(),
            budget: 1.5e-6,
            plot: HoldoverPlot {
                title: name.into(),
                p50: t.iter().map(|s| s * 1e-11).collect(),
                p95: t.iter().map(|s| s * 2e-11).collect(),
                p99: t.iter().map(|s| s * 3e-11).collect(),
                deterministic: t.iter().map(|s| s * 1e-11).collect(),
                t,
                budget: Some(1.5e-6),
                holds_for: None,
                span: 8.0 * 3600.0,
                notes: vec![],
                observed: vec![],
            },
            spans: vec![],
            holds_for: None,
            aging_per_day: None,
            parameters: vec![],
            notes: vec![],
        });
        r
    }

    /// Every overlaid chart has one series per device (two for holdover:
    /// p95 and p50) in that device's palette colour, the same in every
    /// chart.
    #[test]
    fn one_series_per_device_in_its_colour_in_every_chart() {
        let names = ["ocxo-a", "ocxo-b", "rb-1"];
        let reports: Vec<Report> = names.iter().map(|n| report(n)).collect();
        let duts: Vec<String> = names.iter().map(|n| format!("{n}.toml")).collect();
        let f = Fleet::from_reports(reports, &duts).unwrap();
        let charts = charts(&f);
        assert_eq!(charts.len(), 5);
        for (stem, ch) in &charts {
            for (i, name) in names.iter().enumerate() {
                let mine: Vec<&Series> = ch
                    .series
                    .iter()
                    .filter(|s| s.name == *name || s.name.starts_with(&format!("{name} ")))
                    .collect();
                let want = if stem == "fleet-holdover" { 2 } else { 1 };
                assert_eq!(mine.len(), want, "{stem}: {name}");
                for s in mine {
                    assert_eq!(s.style.colour, device_colour(i), "{stem}: {name}");
                }
                if let Some(s) = ch.series.iter().find(|s| s.name == *name) {
                    assert_eq!(s.style.marker, device_marker(i), "{stem}: {name}");
                }
            }
        }
        // No other series takes a device colour.
        for (stem, ch) in &charts {
            for s in &ch.series {
                if !names.iter().any(|n| s.name.starts_with(n)) {
                    assert!(
                        !(0..names.len()).any(|i| s.style.colour == device_colour(i)),
                        "{stem}: {}",
                        s.name
                    );
                }
            }
        }
        // The same device name twice is refused.
        let twice = vec![report("x"), report("x")];
        let e = Fleet::from_reports(twice, &["a.toml".into(), "b.toml".into()]).unwrap_err();
        assert!(e.to_string().contains("a.toml") && e.to_string().contains("b.toml"));
    }
}
