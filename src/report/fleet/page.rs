//! The comparison page: the answer, the verdict matrix, the overlaid
//! charts, the summary rows, then each device's sections (the single
//! report's, ids prefixed `d1-`, `d2-`, …).

use super::{charts, Fleet, FLEET_SECTION_IDS};
use crate::error::Result;
use crate::plot::style::device_colour;
use crate::report::html::{escape, n, t, Cell, Html, CSS};
use crate::results::CheckKind;
use crate::units::{format_margin_db, format_si, format_sig};
use crate::verdict::Verdict;

/// Inline chart size (pixels; the SVG scales with the page).
const CHART: (u32, u32) = (920, 540);

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
    // A long criterion (a single-value limit's, with its file, line and
    // note) is shortened in the header to the check's metric and limit; the
    // whole criterion is the header's tooltip and is listed under the
    // matrix.
    for c in &m.columns {
        match &c.brief {
            Some(b) => h
                .raw(&format!(
                    "<th scope=\"col\" title=\"{}\">",
                    escape(&c.criterion)
                ))
                .text(&format!("{}: {}", c.kind.word(), c.item))
                .raw("<br><span class=\"crit\">")
                .text(b)
                .raw("<sup>*</sup></span></th>"),
            None => h
                .raw("<th scope=\"col\">")
                .text(&format!("{}: {}", c.kind.word(), c.item))
                .raw("<br><span class=\"crit\">")
                .text(&c.criterion)
                .raw("</span></th>"),
        };
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
    let criteria: Vec<String> = m
        .columns
        .iter()
        .filter(|c| c.brief.is_some())
        .map(|c| format!("{}: {} — {}", c.kind.word(), c.item, c.criterion))
        .collect();
    if !criteria.is_empty() {
        h.p_class("crit-notes", "* The limit in full:");
        h.ul(&criteria);
    }
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
        Verdict::Undecided => ("undecided", "undecided"),
    };
    h.raw(&format!("<td><span class=\"badge {class}\">{word}</span>"));
    // The decision rule's probability (crate::decision): "P = 99.7 %", or
    // "meets at the estimate, P = 62.0 %" beside `undecided`.
    let p = match (c.at_estimate, c.probability) {
        (Some(e), Some(p)) => format!(
            "{} at the estimate, {}",
            e.name(),
            crate::decision::p_words(p)
        ),
        (Some(e), None) => format!("{} at the estimate", e.name()),
        (None, Some(p)) => crate::decision::p_words(p),
        (None, None) => String::new(),
    };
    if !p.is_empty() {
        h.raw(" <span class=\"probability\">")
            .text(&p)
            .raw("</span>");
    }
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
    crate::report::sections::open_document(&mut h, &title, &[CSS, FLEET_CSS]);
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
        for (id, title) in crate::report::sections::contents(r) {
            h.raw(&format!("<a href=\"#{pre}{id}\">"))
                .text(title)
                .raw("</a>\n");
        }
        h.raw("<a href=\"#matrix\">back to the matrix</a></nav>\n");
        crate::report::sections::body(&mut h, r, &pre)?;
        h.raw("</article>\n");
    }
    crate::report::sections::close_document(&mut h);
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
