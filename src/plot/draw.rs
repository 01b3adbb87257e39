//! The chart renderer: lays out a [`Chart`] on a canvas and draws it with
//! plotters primitives on any backend (SVG or bitmap).
//!
//! Everything is mapped to pixel space by hand and clipped to the plotting
//! rectangle ([`super::clip`]), so no mark ever lands on the axes, the
//! strip, the legend or the notes.

use super::clip::{self, Rect};
use super::scale::{self, ResolvedAxis};
use super::style::{self, FONT_FAMILY};
use super::{Chart, Line, Marker, Orientation, Style};
use crate::error::{Error, Result};
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

type Area<DB> = DrawingArea<DB, Shift>;

fn fail<E: std::fmt::Debug>(e: E) -> Error {
    Error::invalid(format!("could not draw the chart: {e:?}"))
}

/// A legend entry.
enum Swatch {
    Series(Style),
    Fill(RGBColor),
    Rule(RGBColor, Line),
}

/// Font sizes and the outer padding, in pixels, for a canvas scale `s`.
struct Fonts {
    title: f64,
    sub: f64,
    tick: f64,
    axis: f64,
    legend: f64,
    strip: f64,
    note: f64,
    pad: f64,
}

impl Fonts {
    /// The sizes on the 960×600 reference canvas, times `s`.
    fn scaled(s: f64) -> Self {
        Self {
            title: 19.0 * s,
            sub: 13.0 * s,
            tick: 12.0 * s,
            axis: 13.0 * s,
            legend: 12.0 * s,
            strip: 11.0 * s,
            note: 10.5 * s,
            pad: 12.0 * s,
        }
    }
}

/// One span's mark in the strip above the plot.
struct StripMark {
    /// The span in axis space, clamped to the visible range (lo ≤ hi).
    axis: (f64, f64),
    /// Where its label is anchored: x in pixels and the horizontal anchor.
    label_at: (f64, HPos),
    /// The strip row it sits in.
    row: usize,
}

/// Where everything goes: computed from the chart and the canvas size (text
/// is measured, nothing is painted) by [`layout`], then painted by the
/// `paint_*` functions.
struct Layout {
    /// Scale factor against the 960×600 reference canvas.
    s: f64,
    /// Canvas height in pixels.
    h: f64,
    fonts: Fonts,
    xa: ResolvedAxis,
    ya: ResolvedAxis,
    /// Legend entries, in order, and the width of the legend column.
    legend: Vec<(String, Swatch)>,
    legend_w: f64,
    swatch_w: f64,
    title_lines: Vec<String>,
    sub_lines: Vec<String>,
    note_lines: Vec<String>,
    strip: Vec<StripMark>,
    plot: Rect,
    strip_top: f64,
    strip_row: f64,
    legend_x: f64,
    notes_top: f64,
}

impl Layout {
    fn mapper(&self) -> Mapper<'_> {
        Mapper {
            x: &self.xa,
            y: &self.ya,
            r: self.plot,
        }
    }
}

fn font(size: f64) -> TextStyle<'static> {
    (FONT_FAMILY, size.max(6.0)).into_font().color(&style::INK)
}

fn measure<DB: DrawingBackend>(root: &Area<DB>, text: &str, size: f64) -> Result<(f64, f64)> {
    if text.is_empty() {
        return Ok((0.0, 0.0));
    }
    let (w, h) = root.estimate_text_size(text, &font(size)).map_err(fail)?;
    Ok((w as f64, h as f64))
}

/// Break `text` into lines no wider than `width` pixels.
fn wrap<DB: DrawingBackend>(
    root: &Area<DB>,
    text: &str,
    size: f64,
    width: f64,
) -> Result<Vec<String>> {
    let mut lines = Vec::new();
    let mut cur = String::new();
    for word in text.split_whitespace() {
        let cand = if cur.is_empty() {
            word.to_string()
        } else {
            format!("{cur} {word}")
        };
        if measure(root, &cand, size)?.0 > width && !cur.is_empty() {
            lines.push(std::mem::take(&mut cur));
            cur = word.to_string();
        } else {
            cur = cand;
        }
    }
    if !cur.is_empty() {
        lines.push(cur);
    }
    Ok(lines)
}

/// Shorten `text` with an ellipsis until it fits `width`.
fn fit<DB: DrawingBackend>(root: &Area<DB>, text: &str, size: f64, width: f64) -> Result<String> {
    if measure(root, text, size)?.0 <= width {
        return Ok(text.to_string());
    }
    let chars: Vec<char> = text.chars().collect();
    for n in (1..chars.len()).rev() {
        let t: String = chars[..n].iter().collect::<String>() + "…";
        if measure(root, &t, size)?.0 <= width {
            return Ok(t);
        }
    }
    Ok("…".into())
}

fn axis_title(label: &str, unit: &str) -> String {
    if unit.is_empty() {
        label.to_string()
    } else {
        format!("{label} ({unit})")
    }
}

/// Greedy interval partitioning of the spans into strip rows.
fn strip_rows(spans: &[(f64, f64)]) -> Vec<usize> {
    let mut order: Vec<usize> = (0..spans.len()).collect();
    order.sort_by(|&a, &b| spans[a].0.total_cmp(&spans[b].0));
    let mut row_end: Vec<f64> = Vec::new();
    let mut rows = vec![0; spans.len()];
    for i in order {
        let (a, b) = spans[i];
        let r = row_end.iter().position(|&e| e <= a + 1e-9);
        let r = match r {
            Some(r) => r,
            None => {
                row_end.push(f64::NEG_INFINITY);
                row_end.len() - 1
            }
        };
        row_end[r] = b;
        rows[i] = r;
    }
    rows
}

/// Split a polyline into dashes of `on` pixels separated by `off` pixels.
fn dashes(run: &[(f64, f64)], on: f64, off: f64) -> Vec<Vec<(f64, f64)>> {
    let mut out = Vec::new();
    let mut cur: Vec<(f64, f64)> = Vec::new();
    let mut drawing = true;
    let mut left = on;
    for w in run.windows(2) {
        let (mut a, b) = (w[0], w[1]);
        let mut len = ((b.0 - a.0).powi(2) + (b.1 - a.1).powi(2)).sqrt();
        if drawing && cur.is_empty() {
            cur.push(a);
        }
        while len > left {
            let t = left / len;
            let p = (a.0 + t * (b.0 - a.0), a.1 + t * (b.1 - a.1));
            if drawing {
                cur.push(p);
                out.push(std::mem::take(&mut cur));
            } else {
                cur.push(p);
            }
            drawing = !drawing;
            len -= left;
            left = if drawing { on } else { off };
            a = p;
        }
        left -= len;
        if drawing {
            cur.push(b);
        } else {
            cur.clear();
        }
    }
    if drawing && cur.len() >= 2 {
        out.push(cur);
    }
    out
}

fn px(p: (f64, f64)) -> (i32, i32) {
    (p.0.round() as i32, p.1.round() as i32)
}

struct Mapper<'a> {
    x: &'a ResolvedAxis,
    y: &'a ResolvedAxis,
    r: Rect,
}

impl Mapper<'_> {
    fn map(&self, x: f64, y: f64) -> Option<(f64, f64)> {
        let ax = self.x.to_axis(x)?;
        let ay = self.y.to_axis(y)?;
        Some(self.map_axis(ax, ay))
    }
    fn map_axis(&self, ax: f64, ay: f64) -> (f64, f64) {
        let fx = (ax - self.x.lo) / (self.x.hi - self.x.lo);
        let fy = (ay - self.y.lo) / (self.y.hi - self.y.lo);
        (
            self.r.x0 + fx * (self.r.x1 - self.r.x0),
            self.r.y1 - fy * (self.r.y1 - self.r.y0),
        )
    }
    fn px_x(&self, x: f64) -> Option<f64> {
        let ax = self.x.to_axis(x)?;
        Some(self.map_axis(ax, self.y.lo).0)
    }
    fn px_y(&self, y: f64) -> Option<f64> {
        let ay = self.y.to_axis(y)?;
        Some(self.map_axis(self.x.lo, ay).1)
    }
}

fn stroke<C: Color>(c: C, w: f64) -> ShapeStyle {
    ShapeStyle {
        color: c.to_rgba(),
        filled: false,
        stroke_width: w.round().max(1.0) as u32,
    }
}

fn draw_polyline<DB: DrawingBackend>(
    root: &Area<DB>,
    run: &[(f64, f64)],
    colour: RGBColor,
    width: f64,
    line: Line,
    s: f64,
) -> Result<()> {
    let pieces = match line {
        Line::None => return Ok(()),
        Line::Solid => vec![run.to_vec()],
        Line::Dashed => dashes(run, 9.0 * s, 5.0 * s),
        Line::Dotted => dashes(run, 2.5 * s, 3.5 * s),
    };
    for p in pieces {
        let pts: Vec<(i32, i32)> = p.iter().map(|&q| px(q)).collect();
        root.draw(&PathElement::new(pts, stroke(colour, width)))
            .map_err(fail)?;
    }
    Ok(())
}

fn draw_marker<DB: DrawingBackend>(
    root: &Area<DB>,
    at: (f64, f64),
    marker: Marker,
    c: RGBColor,
    s: f64,
) -> Result<()> {
    let r = (3.2 * s).max(2.0);
    let (x, y) = at;
    let w = (1.6 * s).max(1.0);
    match marker {
        Marker::None => {}
        Marker::Dot => {
            root.draw(&Circle::new(px(at), r.round() as i32, c.filled()))
                .map_err(fail)?;
        }
        Marker::Square => {
            let a = px((x - r, y - r));
            let b = px((x + r, y + r));
            root.draw(&Rectangle::new([a, b], BACKGROUND_FILL.filled()))
                .map_err(fail)?;
            root.draw(&Rectangle::new([a, b], stroke(c, w)))
                .map_err(fail)?;
        }
        Marker::Triangle => {
            let k = r * 1.25;
            let pts = vec![
                px((x, y - k)),
                px((x + k, y + 0.8 * k)),
                px((x - k, y + 0.8 * k)),
            ];
            root.draw(&Polygon::new(pts, c.filled())).map_err(fail)?;
        }
        Marker::Diamond => {
            let k = r * 1.3;
            let pts = vec![
                px((x, y - k)),
                px((x + k, y)),
                px((x, y + k)),
                px((x - k, y)),
                px((x, y - k)),
            ];
            root.draw(&Polygon::new(pts.clone(), BACKGROUND_FILL.filled()))
                .map_err(fail)?;
            root.draw(&PathElement::new(pts, stroke(c, w)))
                .map_err(fail)?;
        }
        Marker::Ring => {
            root.draw(&Circle::new(
                px(at),
                r.round() as i32,
                BACKGROUND_FILL.filled(),
            ))
            .map_err(fail)?;
            root.draw(&Circle::new(px(at), r.round() as i32, stroke(c, w)))
                .map_err(fail)?;
        }
        Marker::DownTriangle => {
            let k = r * 1.25;
            let pts = vec![
                px((x, y + k)),
                px((x + k, y - 0.8 * k)),
                px((x - k, y - 0.8 * k)),
            ];
            root.draw(&Polygon::new(pts, c.filled())).map_err(fail)?;
        }
        Marker::Cross => {
            let k = r * 1.4;
            let w = (2.2 * s).max(1.5);
            root.draw(&PathElement::new(
                vec![px((x - k, y - k)), px((x + k, y + k))],
                stroke(c, w),
            ))
            .map_err(fail)?;
            root.draw(&PathElement::new(
                vec![px((x - k, y + k)), px((x + k, y - k))],
                stroke(c, w),
            ))
            .map_err(fail)?;
        }
    }
    Ok(())
}

const BACKGROUND_FILL: RGBColor = style::PLOT_BACKGROUND;

fn draw_text<DB: DrawingBackend>(
    root: &Area<DB>,
    text: &str,
    at: (f64, f64),
    size: f64,
    colour: RGBColor,
    pos: Pos,
) -> Result<()> {
    if text.is_empty() {
        return Ok(());
    }
    let st = font(size).color(&colour).pos(pos);
    root.draw(&Text::new(text.to_string(), px(at), st))
        .map_err(fail)?;
    Ok(())
}

/// Draw `chart` on `backend`: lay it out, then paint it layer by layer
/// (titles, plot background, strip and spans, bands, grid and ticks, axis
/// labels, rules, series, frame, legend, notes — later layers on top).
pub(crate) fn draw<DB: DrawingBackend>(chart: &Chart, backend: DB) -> Result<()> {
    let root = backend.into_drawing_area();
    let (w, h) = root.dim_in_pixel();
    let (w, h) = (w as f64, h as f64);
    root.fill(&style::BACKGROUND).map_err(fail)?;
    let lay = layout(chart, &root, w, h)?;
    paint_titles(&root, &lay)?;
    let r = lay.plot;
    root.draw(&Rectangle::new(
        [px((r.x0, r.y0)), px((r.x1, r.y1))],
        style::PLOT_BACKGROUND.filled(),
    ))
    .map_err(fail)?;
    paint_strip(chart, &root, &lay)?;
    paint_bands(chart, &root, &lay)?;
    paint_grid(&root, &lay)?;
    paint_tick_labels(&root, &lay)?;
    paint_axis_titles(chart, &root, &lay)?;
    paint_rules(chart, &root, &lay)?;
    paint_series(chart, &root, &lay)?;
    root.draw(&Rectangle::new(
        [px((r.x0, r.y0)), px((r.x1, r.y1))],
        stroke(style::INK_SOFT, 1.0),
    ))
    .map_err(fail)?;
    paint_legend(&root, &lay)?;
    paint_notes(&root, &lay)?;
    root.present().map_err(fail)?;
    Ok(())
}

/// The visible ranges of both axes: from the chart's fixed ranges, else
/// from every finite value it shows (points with their intervals, bands,
/// rules that extend the range; the spans when nothing else lands on x).
fn resolve_axes(chart: &Chart) -> (ResolvedAxis, ResolvedAxis) {
    let mut xs = Vec::new();
    let mut ys = Vec::new();
    for se in &chart.series {
        for p in &se.points {
            if p.y.is_finite() {
                xs.push(p.x);
                ys.push(p.y);
                ys.extend(p.lo.iter().chain(p.hi.iter()).copied());
            }
        }
    }
    for b in &chart.bands {
        xs.extend(b.x.iter().copied());
        ys.extend(b.lo.iter().chain(b.hi.iter()).copied());
    }
    for r in chart.rules.iter().filter(|r| r.extend_range) {
        match r.orientation {
            Orientation::Horizontal => ys.push(r.value),
            Orientation::Vertical => xs.push(r.value),
        }
    }
    if xs
        .iter()
        .all(|v| scale::to_axis(chart.x.scale, *v).is_none())
    {
        for sp in &chart.spans {
            xs.push(sp.from);
            xs.push(sp.to);
        }
    }
    let xa = scale::resolve(chart.x.scale, &chart.x.unit, chart.x.range, &xs);
    let ya = scale::resolve(chart.y.scale, &chart.y.unit, chart.y.range, &ys);
    (xa, ya)
}

/// The legend entries, in the order they are listed: shaded spans, bands,
/// named series, labelled rules.
fn legend_entries(chart: &Chart) -> Vec<(String, Swatch)> {
    let mut legend: Vec<(String, Swatch)> = Vec::new();
    for sp in &chart.spans {
        if let (true, Some(l)) = (sp.shade, &sp.legend) {
            legend.push((l.clone(), Swatch::Fill(sp.colour.rgb())));
        }
    }
    for b in &chart.bands {
        legend.push((b.name.clone(), Swatch::Fill(b.colour.rgb())));
    }
    for se in &chart.series {
        if !se.name.is_empty() {
            legend.push((se.name.clone(), Swatch::Series(se.style)));
        }
    }
    for r in &chart.rules {
        if !r.label.is_empty() {
            legend.push((r.label.clone(), Swatch::Rule(r.colour.rgb(), r.line)));
        }
    }
    legend
}

/// Lay out `chart` on a `w`×`h` canvas: fonts, axes, legend column, wrapped
/// titles and notes, the strip of span marks, and the plotting rectangle.
/// Measures text on `root` but paints nothing. Fails when the plot would be
/// too small for the canvas.
fn layout<DB: DrawingBackend>(chart: &Chart, root: &Area<DB>, w: f64, h: f64) -> Result<Layout> {
    let s = (w / 960.0).min(h / 600.0).clamp(0.45, 4.0);
    let f = Fonts::scaled(s);
    let pad = f.pad;
    let (xa, ya) = resolve_axes(chart);
    let legend = legend_entries(chart);

    // Horizontal layout.
    let swatch_w = 30.0 * s;
    let legend_w = if legend.is_empty() {
        0.0
    } else {
        let mut m: f64 = 0.0;
        for (t, _) in &legend {
            m = m.max(measure(root, t, f.legend)?.0);
        }
        (m + swatch_w + 2.5 * pad).min(0.34 * w)
    };
    let mut ytick_w: f64 = 0.0;
    for t in &ya.ticks {
        ytick_w = ytick_w.max(measure(root, &t.label, f.tick)?.0);
    }
    let x0 = pad + f.axis * 1.4 + ytick_w + 8.0 * s;
    let x1 = w - pad - legend_w - if legend.is_empty() { 8.0 * s } else { 0.0 };

    // Vertical layout.
    let title_lines = wrap(root, &chart.title, f.title, w - 2.0 * pad)?;
    let sub_lines = wrap(root, &chart.subtitle, f.sub, w - 2.0 * pad)?;
    let mut note_lines = Vec::new();
    for n in &chart.notes {
        note_lines.extend(wrap(root, n, f.note, w - 2.0 * pad)?);
    }
    let top_text =
        pad + title_lines.len() as f64 * f.title * 1.25 + sub_lines.len() as f64 * f.sub * 1.35;
    // Strip rows.
    let span_px: Vec<(f64, f64)> = chart
        .spans
        .iter()
        .map(|sp| {
            let a = xa.to_axis(sp.from).unwrap_or(xa.lo).clamp(xa.lo, xa.hi);
            let b = xa.to_axis(sp.to).unwrap_or(xa.hi).clamp(xa.lo, xa.hi);
            (a.min(b), a.max(b))
        })
        .collect();
    // Each strip mark takes its span; a label wider than its span is written
    // beside the mark (right, or left at the plot's right edge) and the
    // mark's extent includes it: marks are stacked in rows by these
    // extents, so no label is cut.
    let to_px = |a: f64| x0 + (a - xa.lo) / (xa.hi - xa.lo) * (x1 - x0);
    // (x, horizontal anchor) of each label, and each mark's extent.
    let mut label_at: Vec<(f64, HPos)> = Vec::with_capacity(chart.spans.len());
    let mut extents: Vec<(f64, f64)> = Vec::with_capacity(chart.spans.len());
    for (sp, &(a, b)) in chart.spans.iter().zip(&span_px) {
        let (pa, pb) = (to_px(a), to_px(b));
        let lw = if sp.label.is_empty() {
            0.0
        } else {
            measure(root, &sp.label, f.strip)?.0
        };
        let gap = 4.0 * s;
        if lw + 2.0 * gap <= pb - pa {
            label_at.push((0.5 * (pa + pb), HPos::Center));
            extents.push((pa, pb));
        } else if pb + gap + lw <= x1 || pa - gap - lw < x0 {
            label_at.push((pb + gap, HPos::Left));
            extents.push((pa, pb + 2.0 * gap + lw));
        } else {
            label_at.push((pa - gap, HPos::Right));
            extents.push((pa - 2.0 * gap - lw, pb));
        }
    }
    let rows = strip_rows(&extents);
    let n_rows = if chart.spans.is_empty() {
        0
    } else {
        rows.iter().max().map_or(0, |m| m + 1)
    };
    let strip_row = f.strip * 1.7;
    let strip_top = top_text + 6.0 * s;
    let y0 = strip_top + n_rows as f64 * strip_row + 6.0 * s;
    let notes_h = note_lines.len() as f64 * f.note * 1.35;
    let y1 = h - pad - notes_h - f.axis * 1.6 - f.tick * 1.6;
    if x1 - x0 < 60.0 || y1 - y0 < 40.0 {
        return Err(Error::invalid(format!(
            "the chart does not fit a {w}×{h} canvas with its legend and notes: use a larger size"
        )));
    }
    let strip = span_px
        .into_iter()
        .zip(label_at)
        .zip(rows)
        .map(|((axis, label_at), row)| StripMark {
            axis,
            label_at,
            row,
        })
        .collect();
    Ok(Layout {
        s,
        h,
        fonts: f,
        xa,
        ya,
        legend,
        legend_w,
        swatch_w,
        title_lines,
        sub_lines,
        note_lines,
        strip,
        plot: Rect { x0, y0, x1, y1 },
        strip_top,
        strip_row,
        legend_x: x1 + 1.5 * pad,
        notes_top: h - pad - notes_h,
    })
}

/// Title and subtitle lines, from the top left.
fn paint_titles<DB: DrawingBackend>(root: &Area<DB>, lay: &Layout) -> Result<()> {
    let f = &lay.fonts;
    let mut ty = f.pad;
    for l in &lay.title_lines {
        draw_text(
            root,
            l,
            (f.pad, ty),
            f.title,
            style::INK,
            Pos::new(HPos::Left, VPos::Top),
        )?;
        ty += f.title * 1.25;
    }
    for l in &lay.sub_lines {
        draw_text(
            root,
            l,
            (f.pad, ty),
            f.sub,
            style::INK_SOFT,
            Pos::new(HPos::Left, VPos::Top),
        )?;
        ty += f.sub * 1.35;
    }
    Ok(())
}

/// The strip marks of the spans with their labels, and each span in the
/// plot: shaded, or its edges dotted.
fn paint_strip<DB: DrawingBackend>(chart: &Chart, root: &Area<DB>, lay: &Layout) -> Result<()> {
    let (s, r, m) = (lay.s, lay.plot, lay.mapper());
    let f_strip = lay.fonts.strip;
    for (sp, mark) in chart.spans.iter().zip(&lay.strip) {
        let (a, b) = mark.axis;
        let pa = m.map_axis(a, lay.ya.lo).0;
        let pb = m.map_axis(b, lay.ya.lo).0;
        if pb - pa < 0.5 {
            continue;
        }
        let c = sp.colour.rgb();
        let top = lay.strip_top + mark.row as f64 * lay.strip_row;
        let bot = top + lay.strip_row - 2.0 * s;
        root.draw(&Rectangle::new(
            [px((pa, top)), px((pb, bot))],
            style::STRIP_BACKGROUND.filled(),
        ))
        .map_err(fail)?;
        root.draw(&Rectangle::new(
            [px((pa, top)), px((pb, bot))],
            c.mix(0.22).filled(),
        ))
        .map_err(fail)?;
        for xe in [pa, pb] {
            root.draw(&PathElement::new(
                vec![px((xe, top)), px((xe, bot))],
                stroke(c, 1.5 * s),
            ))
            .map_err(fail)?;
        }
        // The label sits inside its mark, or beside it when wider (its row
        // leaves room: see the strip layout); only a label wider than the
        // whole plot is shortened.
        let label = fit(root, &sp.label, f_strip, r.x1 - r.x0 - 4.0 * s)?;
        if label != "…" {
            let (lx, anchor) = mark.label_at;
            draw_text(
                root,
                &label,
                (lx, (top + bot) / 2.0),
                f_strip,
                style::INK,
                Pos::new(anchor, VPos::Center),
            )?;
        }
        if sp.shade {
            root.draw(&Rectangle::new(
                [px((pa, r.y0)), px((pb, r.y1))],
                c.mix(0.12).filled(),
            ))
            .map_err(fail)?;
        } else {
            for xe in [pa, pb] {
                if xe > r.x0 + 0.5 && xe < r.x1 - 0.5 {
                    draw_polyline(root, &[(xe, r.y0), (xe, r.y1)], c, 1.0 * s, Line::Dotted, s)?;
                }
            }
        }
    }
    Ok(())
}

/// Filled bands between their lower and upper curves, clipped to the plot.
fn paint_bands<DB: DrawingBackend>(chart: &Chart, root: &Area<DB>, lay: &Layout) -> Result<()> {
    let (r, m) = (lay.plot, lay.mapper());
    for b in &chart.bands {
        let n = b.x.len().min(b.lo.len()).min(b.hi.len());
        let mut poly = Vec::with_capacity(2 * n);
        let below = r.y1 + 2.0;
        for i in 0..n {
            if let Some(px_) = m.px_x(b.x[i]) {
                poly.push((px_, m.px_y(b.hi[i]).unwrap_or(below)));
            }
        }
        for i in (0..n).rev() {
            if let Some(px_) = m.px_x(b.x[i]) {
                poly.push((px_, m.px_y(b.lo[i]).unwrap_or(below)));
            }
        }
        let c = clip::clip_polygon(&r, &poly);
        if c.len() >= 3 {
            let pts: Vec<(i32, i32)> = c.iter().map(|&p| px(p)).collect();
            root.draw(&Polygon::new(pts, b.colour.rgb().mix(0.25).filled()))
                .map_err(fail)?;
        }
    }
    Ok(())
}

/// The length of a major tick mark in pixels.
fn tick_len(lay: &Layout) -> f64 {
    4.0 * lay.s
}

/// Gridlines and tick marks of both axes.
fn paint_grid<DB: DrawingBackend>(root: &Area<DB>, lay: &Layout) -> Result<()> {
    let (r, m, tick_len) = (lay.plot, lay.mapper(), tick_len(lay));
    let (xa, ya) = (&lay.xa, &lay.ya);
    for t in &xa.ticks {
        let (xp, _) = m.map_axis(t.pos, ya.lo);
        let c = if t.major {
            style::GRID_MAJOR
        } else {
            style::GRID_MINOR
        };
        root.draw(&PathElement::new(
            vec![px((xp, r.y0)), px((xp, r.y1))],
            stroke(c, 1.0),
        ))
        .map_err(fail)?;
        root.draw(&PathElement::new(
            vec![
                px((xp, r.y1)),
                px((xp, r.y1 + if t.major { tick_len } else { tick_len / 2.0 })),
            ],
            stroke(style::INK_SOFT, 1.0),
        ))
        .map_err(fail)?;
    }
    for t in &ya.ticks {
        let (_, yp) = m.map_axis(xa.lo, t.pos);
        let c = if t.major {
            style::GRID_MAJOR
        } else {
            style::GRID_MINOR
        };
        root.draw(&PathElement::new(
            vec![px((r.x0, yp)), px((r.x1, yp))],
            stroke(c, 1.0),
        ))
        .map_err(fail)?;
        root.draw(&PathElement::new(
            vec![
                px((r.x0 - if t.major { tick_len } else { tick_len / 2.0 }, yp)),
                px((r.x0, yp)),
            ],
            stroke(style::INK_SOFT, 1.0),
        ))
        .map_err(fail)?;
    }
    Ok(())
}

/// Tick labels; those of x are thinned when they would collide.
fn paint_tick_labels<DB: DrawingBackend>(root: &Area<DB>, lay: &Layout) -> Result<()> {
    let (s, r, m, tick_len) = (lay.s, lay.plot, lay.mapper(), tick_len(lay));
    let (xa, ya, f_tick) = (&lay.xa, &lay.ya, lay.fonts.tick);
    let labelled: Vec<_> = xa.ticks.iter().filter(|t| !t.label.is_empty()).collect();
    let mut widest: f64 = 0.0;
    for t in &labelled {
        widest = widest.max(measure(root, &t.label, f_tick)?.0);
    }
    let spacing = if labelled.len() > 1 {
        let a = m.map_axis(labelled[0].pos, ya.lo).0;
        let b = m.map_axis(labelled[1].pos, ya.lo).0;
        (b - a).abs()
    } else {
        f64::INFINITY
    };
    let every = ((widest + 8.0 * s) / spacing).ceil().max(1.0) as usize;
    for (i, t) in labelled.iter().enumerate() {
        if i % every != 0 {
            continue;
        }
        let (xp, _) = m.map_axis(t.pos, ya.lo);
        draw_text(
            root,
            &t.label,
            (xp, r.y1 + tick_len + 3.0 * s),
            f_tick,
            style::INK,
            Pos::new(HPos::Center, VPos::Top),
        )?;
    }
    for t in &ya.ticks {
        if t.label.is_empty() {
            continue;
        }
        let (_, yp) = m.map_axis(xa.lo, t.pos);
        draw_text(
            root,
            &t.label,
            (r.x0 - tick_len - 4.0 * s, yp),
            f_tick,
            style::INK,
            Pos::new(HPos::Right, VPos::Center),
        )?;
    }
    Ok(())
}

/// The axis titles with their units; the y title is turned upright.
fn paint_axis_titles<DB: DrawingBackend>(
    chart: &Chart,
    root: &Area<DB>,
    lay: &Layout,
) -> Result<()> {
    let (s, r, f) = (lay.s, lay.plot, &lay.fonts);
    draw_text(
        root,
        &axis_title(&chart.x.label, &lay.xa.unit_text),
        (
            (r.x0 + r.x1) / 2.0,
            r.y1 + tick_len(lay) + f.tick * 1.5 + 4.0 * s,
        ),
        f.axis,
        style::INK,
        Pos::new(HPos::Center, VPos::Top),
    )?;
    let title = axis_title(&chart.y.label, &lay.ya.unit_text);
    let st = font(f.axis)
        .transform(FontTransform::Rotate270)
        .pos(Pos::new(HPos::Center, VPos::Top));
    root.draw(&Text::new(title, px((f.pad, (r.y0 + r.y1) / 2.0)), st))
        .map_err(fail)?;
    Ok(())
}

/// Horizontal and vertical rules (limits, marks), clipped to the plot.
fn paint_rules<DB: DrawingBackend>(chart: &Chart, root: &Area<DB>, lay: &Layout) -> Result<()> {
    let (s, r, m) = (lay.s, lay.plot, lay.mapper());
    for rule in &chart.rules {
        let c = rule.colour.rgb();
        let seg = match rule.orientation {
            Orientation::Horizontal => m.px_y(rule.value).map(|y| ((r.x0, y), (r.x1, y))),
            Orientation::Vertical => m.px_x(rule.value).map(|x| ((x, r.y0), (x, r.y1))),
        };
        if let Some((a, b)) = seg.and_then(|(a, b)| clip::clip_segment(&r, a, b)) {
            draw_polyline(root, &[a, b], c, 1.6 * s, rule.line, s)?;
        }
    }
    Ok(())
}

/// Each series: interval bars with caps, then its line, then its markers.
fn paint_series<DB: DrawingBackend>(chart: &Chart, root: &Area<DB>, lay: &Layout) -> Result<()> {
    let (s, r, m) = (lay.s, lay.plot, lay.mapper());
    for se in &chart.series {
        let c = se.style.colour.rgb();
        let cap = 3.0 * s;
        for p in &se.points {
            let (Some(lo), Some(hi)) = (p.lo, p.hi) else {
                continue;
            };
            let Some(xp) = m.px_x(p.x) else { continue };
            if xp < r.x0 || xp > r.x1 {
                continue;
            }
            let ylo = m.px_y(lo).unwrap_or(r.y1 + 1.0);
            let yhi = m.px_y(hi).unwrap_or(r.y1 + 1.0);
            if let Some((a, b)) = clip::clip_segment(&r, (xp, ylo), (xp, yhi)) {
                root.draw(&PathElement::new(
                    vec![px(a), px(b)],
                    stroke(c.mix(0.85), 1.2 * s),
                ))
                .map_err(fail)?;
                for yv in [ylo, yhi] {
                    if yv >= r.y0 && yv <= r.y1 {
                        root.draw(&PathElement::new(
                            vec![px((xp - cap, yv)), px((xp + cap, yv))],
                            stroke(c, 1.2 * s),
                        ))
                        .map_err(fail)?;
                    }
                }
            }
        }
        if se.style.line != Line::None {
            let pts: Vec<Option<(f64, f64)>> = se.points.iter().map(|p| m.map(p.x, p.y)).collect();
            for run in clip::clip_polyline(&r, &pts) {
                draw_polyline(root, &run, c, se.style.width * s, se.style.line, s)?;
            }
        }
        if se.style.marker != Marker::None {
            for p in &se.points {
                if let Some(q) = m.map(p.x, p.y) {
                    if r.contains(q) {
                        draw_marker(root, q, se.style.marker, c, s)?;
                    }
                }
            }
        }
    }
    Ok(())
}

/// The legend in its own column right of the plot; its text shrinks to fit
/// the column's height, and what still does not fit is counted ("… n more").
fn paint_legend<DB: DrawingBackend>(root: &Area<DB>, lay: &Layout) -> Result<()> {
    let legend = &lay.legend;
    if legend.is_empty() {
        return Ok(());
    }
    let (s, r, pad, swatch_w) = (lay.s, lay.plot, lay.fonts.pad, lay.swatch_w);
    let mut size = lay.fonts.legend;
    let row = |sz: f64| sz * 1.7;
    let avail = lay.h - r.y0 - pad;
    while legend.len() as f64 * row(size) > avail && size > 7.0 * s.min(1.0) {
        size *= 0.9;
    }
    let max_rows = ((avail / row(size)).floor() as usize).max(1);
    let text_w = lay.legend_w - swatch_w - 2.0 * pad;
    let mut yy = r.y0 + row(size) / 2.0;
    let lx = lay.legend_x;
    for (i, (label, sw)) in legend.iter().enumerate() {
        if i + 1 == max_rows && legend.len() > max_rows {
            let more = format!("… {} more", legend.len() - i);
            draw_text(
                root,
                &more,
                (lx, yy),
                size,
                style::INK_SOFT,
                Pos::new(HPos::Left, VPos::Center),
            )?;
            break;
        }
        let sx0 = lx;
        let sx1 = lx + swatch_w - 8.0 * s;
        match sw {
            Swatch::Series(st) => {
                let c = st.colour.rgb();
                if st.line != Line::None {
                    draw_polyline(root, &[(sx0, yy), (sx1, yy)], c, st.width * s, st.line, s)?;
                }
                if st.marker != Marker::None {
                    draw_marker(root, ((sx0 + sx1) / 2.0, yy), st.marker, c, s)?;
                }
            }
            Swatch::Fill(c) => {
                let k = size * 0.45;
                root.draw(&Rectangle::new(
                    [px((sx0, yy - k)), px((sx1, yy + k))],
                    c.mix(0.3).filled(),
                ))
                .map_err(fail)?;
                root.draw(&Rectangle::new(
                    [px((sx0, yy - k)), px((sx1, yy + k))],
                    stroke(*c, 1.0),
                ))
                .map_err(fail)?;
            }
            Swatch::Rule(c, line) => {
                draw_polyline(root, &[(sx0, yy), (sx1, yy)], *c, 1.6 * s, *line, s)?;
            }
        }
        let t = fit(root, label, size, text_w.max(20.0))?;
        draw_text(
            root,
            &t,
            (lx + swatch_w, yy),
            size,
            style::INK,
            Pos::new(HPos::Left, VPos::Center),
        )?;
        yy += row(size);
    }
    Ok(())
}

/// The notes under the plot.
fn paint_notes<DB: DrawingBackend>(root: &Area<DB>, lay: &Layout) -> Result<()> {
    let f = &lay.fonts;
    let mut ny = lay.notes_top;
    for l in &lay.note_lines {
        draw_text(
            root,
            l,
            (f.pad, ny),
            f.note,
            style::INK_SOFT,
            Pos::new(HPos::Left, VPos::Top),
        )?;
        ny += f.note * 1.35;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rows_separate_overlapping_spans() {
        let rows = strip_rows(&[(0.0, 2.0), (1.0, 3.0), (2.0, 4.0), (0.5, 0.7)]);
        assert_eq!(rows[0], 0);
        assert_eq!(rows[2], 0, "touching spans share a row");
        assert_ne!(rows[1], rows[0]);
        assert_ne!(rows[3], rows[0]);
    }

    #[test]
    fn dashes_cover_the_expected_length() {
        let run = [(0.0, 0.0), (100.0, 0.0)];
        let d = dashes(&run, 10.0, 5.0);
        let total: f64 = d.iter().map(|p| p.last().unwrap().0 - p[0].0).sum();
        // 100 px at a 15 px period: 6 full dashes (60 px) and 10 px of the 7th.
        assert!((total - 70.0).abs() < 1e-9, "{total}");
        assert_eq!(d.len(), 7);
    }
}
