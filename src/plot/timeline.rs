//! The timeline picture: a heat map of σ(τ) through the record (window
//! centre across, τ down the rows, colour = the window's deviation over the
//! whole record's at that τ) with a scale bar, and the whole-record curve
//! beside it on the same τ rows.
//!
//! The colour map is our own: five anchors from pale straw (a quarter of
//! the whole record's deviation) through sage and teal to deep ink (four
//! times), interpolated in log₂ of the ratio; its lightness falls steadily
//! along the scale ([`relative_luminance`] is monotone), so the picture
//! reads the same printed in grey. Windows that depart from the whole
//! record (events) are framed.

use super::style::{self, FONT_FAMILY};
use crate::error::{Error, Result};
use crate::timeline::Timeline;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use std::path::Path;

/// The colour map's anchors, at ratios 1/4, 1/2, 1, 2, 4.
pub const ANCHORS: [(u8, u8, u8); 5] = [
    (0xf7, 0xf4, 0xd6),
    (0xc4, 0xe1, 0xaa),
    (0x6e, 0xba, 0xa0),
    (0x34, 0x78, 0x96),
    (0x26, 0x28, 0x5c),
];

/// The largest ratio (and the inverse of the smallest) the colours tell
/// apart; beyond it the end colours are used.
pub const RATIO_SPAN: f64 = 4.0;

/// The colour of a ratio (window over whole record).
pub fn colour_of(ratio: f64) -> (u8, u8, u8) {
    let l = (ratio.log2() / RATIO_SPAN.log2()).clamp(-1.0, 1.0); // −1 … 1
    let pos = (l + 1.0) * 2.0; // 0 … 4
    let i = (pos.floor() as usize).min(3);
    let f = pos - i as f64;
    let (a, b) = (ANCHORS[i], ANCHORS[i + 1]);
    let mix = |p: u8, q: u8| (p as f64 + (q as f64 - p as f64) * f).round() as u8;
    (mix(a.0, b.0), mix(a.1, b.1), mix(a.2, b.2))
}

/// Relative luminance (ITU-R BT.709 weights on the sRGB values linearised).
pub fn relative_luminance((r, g, b): (u8, u8, u8)) -> f64 {
    let lin = |c: u8| {
        let v = c as f64 / 255.0;
        if v <= 0.04045 {
            v / 12.92
        } else {
            ((v + 0.055) / 1.055).powf(2.4)
        }
    };
    0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b)
}

fn fail<E: std::fmt::Debug>(e: E) -> Error {
    Error::invalid(format!("could not draw the timeline: {e:?}"))
}

fn text<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    s: &str,
    at: (f64, f64),
    size: f64,
    pos: Pos,
) -> Result<()> {
    let st = (FONT_FAMILY, size).into_font().color(&style::INK).pos(pos);
    root.draw(&Text::new(s.to_string(), (at.0 as i32, at.1 as i32), st))
        .map_err(fail)
}

/// Time axis unit for a span of `span` seconds.
fn time_unit(span: f64) -> (f64, &'static str) {
    if span >= 7200.0 {
        (3600.0, "h")
    } else if span >= 120.0 {
        (60.0, "min")
    } else {
        (1.0, "s")
    }
}

fn draw<DB: DrawingBackend>(t: &Timeline, title: &str, backend: DB) -> Result<()> {
    let root = backend.into_drawing_area();
    let (w, h) = root.dim_in_pixel();
    let (w, h) = (w as f64, h as f64);
    let s = (w / 1100.0).min(h / 620.0);
    root.fill(&style::BACKGROUND).map_err(fail)?;
    let taus: Vec<f64> = t.whole.points.iter().map(|p| p.estimate.tau).collect();
    let rows = taus.len().max(1);
    // Areas.
    let (left, top) = (90.0 * s, 70.0 * s);
    let heat_r = w * 0.70;
    let side_l = heat_r + 30.0 * s;
    let side_r = w - 25.0 * s;
    let bottom = h - 120.0 * s;
    text(
        &root,
        title,
        (20.0 * s, 14.0 * s),
        19.0 * s,
        Pos::new(HPos::Left, VPos::Top),
    )?;
    text(
        &root,
        &format!(
            "{} in a {} window moved by {}; colour = window ÷ whole record at each τ",
            t.whole.estimator.name(),
            crate::units::format_si(t.window_s, "s", 4),
            crate::units::format_si(t.step_s, "s", 4)
        ),
        (20.0 * s, 40.0 * s),
        13.0 * s,
        Pos::new(HPos::Left, VPos::Top),
    )?;
    let row_h = (bottom - top) / rows as f64;
    let row_y = |i: usize| top + i as f64 * row_h;
    root.draw(&Rectangle::new(
        [(left as i32, top as i32), (heat_r as i32, bottom as i32)],
        style::PLOT_BACKGROUND.filled(),
    ))
    .map_err(fail)?;
    // Heat map cells.
    let nwin = t.windows.len().max(1);
    let (c0, c1) = match (t.windows.first(), t.windows.last()) {
        (Some(a), Some(b)) => (a.centre(), b.centre()),
        _ => (0.0, 1.0),
    };
    let half = if nwin > 1 {
        0.5 * (c1 - c0) / (nwin - 1) as f64
    } else {
        0.5 * t.window_s
    };
    let (x_lo, x_hi) = (c0 - half, c1 + half);
    let x_of = |c: f64| left + (c - x_lo) / (x_hi - x_lo).max(1e-300) * (heat_r - left);
    for w in &t.windows {
        let c = w.centre();
        let (xa, xb) = (x_of(c - half), x_of(c + half));
        for (i, wp) in t.whole.points.iter().enumerate() {
            let Some(p) = w.points.iter().find(|p| p.estimate.m == wp.estimate.m) else {
                continue;
            };
            let ratio = p.estimate.value / wp.estimate.value;
            if !ratio.is_finite() || ratio <= 0.0 {
                continue;
            }
            let (r, g, b) = colour_of(ratio);
            root.draw(&Rectangle::new(
                [
                    (xa.floor() as i32, row_y(i).floor() as i32),
                    (xb.ceil() as i32, row_y(i + 1).ceil() as i32),
                ],
                RGBColor(r, g, b).filled(),
            ))
            .map_err(fail)?;
        }
    }
    // Events: framed runs.
    for e in &t.events {
        let Some(i) = taus.iter().position(|&x| x == e.tau) else {
            continue;
        };
        let span = t.windows.first().map_or(0.0, |w| w.end - w.start);
        let (xa, xb) = (
            x_of(e.start + 0.5 * span - half).max(left),
            x_of(e.end - 0.5 * span + half).min(heat_r),
        );
        root.draw(&Rectangle::new(
            [
                (xa as i32, row_y(i) as i32 + 1),
                (xb as i32, row_y(i + 1) as i32 - 1),
            ],
            ShapeStyle::from(&style::Colour::Alarm.rgb()).stroke_width((1.5 * s).max(1.0) as u32),
        ))
        .map_err(fail)?;
    }
    root.draw(&Rectangle::new(
        [(left as i32, top as i32), (heat_r as i32, bottom as i32)],
        ShapeStyle::from(&style::INK).stroke_width(1),
    ))
    .map_err(fail)?;
    // τ labels on the rows (every row when they fit).
    let every = ((14.0 * s / row_h).ceil() as usize).max(1);
    for (i, tau) in taus.iter().enumerate() {
        if i % every == 0 {
            text(
                &root,
                &super::scale::si_compact(*tau, "s"),
                (left - 6.0 * s, row_y(i) + 0.5 * row_h),
                12.0 * s,
                Pos::new(HPos::Right, VPos::Center),
            )?;
        }
    }
    text(
        &root,
        "τ",
        (20.0 * s, (top + bottom) / 2.0),
        13.0 * s,
        Pos::new(HPos::Left, VPos::Center),
    )?;
    // Time ticks.
    let (unit, uname) = time_unit(x_hi - x_lo);
    let span_u = (x_hi - x_lo) / unit;
    let step_u = super::scale::nice_step(span_u / 8.0);
    let mut k = (x_lo / unit / step_u).ceil();
    while k * step_u <= x_hi / unit {
        let v = k * step_u;
        let x = x_of(v * unit);
        root.draw(&PathElement::new(
            vec![
                (x as i32, bottom as i32),
                (x as i32, (bottom + 5.0 * s) as i32),
            ],
            style::INK,
        ))
        .map_err(fail)?;
        text(
            &root,
            &format!("{}", crate::units::round_sig(v, 4)),
            (x, bottom + 7.0 * s),
            12.0 * s,
            Pos::new(HPos::Center, VPos::Top),
        )?;
        k += 1.0;
    }
    text(
        &root,
        &format!("window centre ({uname} from the first sample)"),
        ((left + heat_r) / 2.0, bottom + 24.0 * s),
        13.0 * s,
        Pos::new(HPos::Center, VPos::Top),
    )?;
    // Scale bar.
    let (bar_l, bar_r) = (left, left + (heat_r - left) * 0.6);
    let (bar_t, bar_b) = (bottom + 52.0 * s, bottom + 66.0 * s);
    let steps = 120;
    for j in 0..steps {
        let f = (j as f64 + 0.5) / steps as f64;
        let ratio = RATIO_SPAN.powf(2.0 * f - 1.0);
        let (r, g, b) = colour_of(ratio);
        let xa = bar_l + (bar_r - bar_l) * j as f64 / steps as f64;
        let xb = bar_l + (bar_r - bar_l) * (j + 1) as f64 / steps as f64;
        root.draw(&Rectangle::new(
            [(xa as i32, bar_t as i32), (xb.ceil() as i32, bar_b as i32)],
            RGBColor(r, g, b).filled(),
        ))
        .map_err(fail)?;
    }
    for (lab, f) in [
        ("≤ ¼", 0.0),
        ("½", 0.25),
        ("1", 0.5),
        ("2", 0.75),
        ("≥ 4", 1.0),
    ] {
        let x = bar_l + (bar_r - bar_l) * f;
        text(
            &root,
            lab,
            (x, bar_b + 3.0 * s),
            11.0 * s,
            Pos::new(HPos::Center, VPos::Top),
        )?;
    }
    text(
        &root,
        "window ÷ whole record; framed: departs beyond both intervals",
        (bar_r + 12.0 * s, (bar_t + bar_b) / 2.0),
        11.0 * s,
        Pos::new(HPos::Left, VPos::Center),
    )?;
    // Whole-record curve beside, on the same rows: σ on a log axis.
    let vals: Vec<f64> = t
        .whole
        .points
        .iter()
        .flat_map(|p| [Some(p.estimate.value), p.lo, p.hi])
        .flatten()
        .filter(|v| v.is_finite() && *v > 0.0)
        .collect();
    root.draw(&Rectangle::new(
        [(side_l as i32, top as i32), (side_r as i32, bottom as i32)],
        style::PLOT_BACKGROUND.filled(),
    ))
    .map_err(fail)?;
    if !vals.is_empty() {
        let lo = vals
            .iter()
            .cloned()
            .fold(f64::INFINITY, f64::min)
            .log10()
            .floor();
        let hi = vals
            .iter()
            .cloned()
            .fold(0.0, f64::max)
            .log10()
            .ceil()
            .max(lo + 1.0);
        let sx = |v: f64| side_l + (v.log10() - lo) / (hi - lo) * (side_r - side_l);
        let mut d = lo;
        while d <= hi {
            let x = sx(10f64.powf(d));
            root.draw(&PathElement::new(
                vec![(x as i32, top as i32), (x as i32, bottom as i32)],
                style::GRID_MAJOR,
            ))
            .map_err(fail)?;
            text(
                &root,
                &format!("1e{}", d as i32),
                (x, bottom + 7.0 * s),
                11.0 * s,
                Pos::new(HPos::Center, VPos::Top),
            )?;
            d += 1.0;
        }
        let ink = style::Colour::Palette(0).rgb();
        let mut line = Vec::new();
        for (i, p) in t.whole.points.iter().enumerate() {
            let y = row_y(i) + 0.5 * row_h;
            if let (Some(a), Some(b)) = (p.lo, p.hi) {
                root.draw(&PathElement::new(
                    vec![(sx(a) as i32, y as i32), (sx(b) as i32, y as i32)],
                    ShapeStyle::from(&ink).stroke_width((1.5 * s).max(1.0) as u32),
                ))
                .map_err(fail)?;
            }
            if p.estimate.value > 0.0 {
                let x = sx(p.estimate.value);
                line.push((x as i32, y as i32));
                root.draw(&Circle::new(
                    (x as i32, y as i32),
                    (3.0 * s) as i32,
                    ink.filled(),
                ))
                .map_err(fail)?;
            }
        }
        root.draw(&PathElement::new(
            line,
            ShapeStyle::from(&ink).stroke_width(2),
        ))
        .map_err(fail)?;
    }
    root.draw(&Rectangle::new(
        [(side_l as i32, top as i32), (side_r as i32, bottom as i32)],
        ShapeStyle::from(&style::INK).stroke_width(1),
    ))
    .map_err(fail)?;
    text(
        &root,
        &format!("whole record {} (bars: interval)", t.whole.estimator.name()),
        ((side_l + side_r) / 2.0, bottom + 24.0 * s),
        12.0 * s,
        Pos::new(HPos::Center, VPos::Top),
    )?;
    text(
        &root,
        crate::DECISION_CAUTION,
        (20.0 * s, h - 18.0 * s),
        10.5 * s,
        Pos::new(HPos::Left, VPos::Center),
    )?;
    root.present().map_err(fail)?;
    Ok(())
}

/// The canvas size of the timeline picture (pixels).
pub const SIZE: (u32, u32) = (1100, 620);

/// The timeline picture as an SVG document.
pub fn to_svg(t: &Timeline, title: &str) -> Result<String> {
    style::ensure_font()?;
    let mut out = String::new();
    draw(t, title, SVGBackend::with_string(&mut out, SIZE))?;
    Ok(out)
}

/// Render the timeline picture to `path` (SVG or PNG by the extension),
/// written atomically.
pub fn render(t: &Timeline, title: &str, path: &Path) -> Result<()> {
    style::ensure_font()?;
    let (w, h) = SIZE;
    let bytes = match super::Format::from_path(path)? {
        super::Format::Svg => {
            let mut out = String::new();
            draw(t, title, SVGBackend::with_string(&mut out, SIZE))?;
            out.into_bytes()
        }
        super::Format::Png => {
            let mut rgb = vec![255u8; w as usize * h as usize * 3];
            draw(t, title, BitMapBackend::with_buffer(&mut rgb, SIZE))?;
            let mut bytes = Vec::new();
            {
                let mut enc = png::Encoder::new(&mut bytes, w, h);
                enc.set_color(png::ColorType::Rgb);
                enc.set_depth(png::BitDepth::Eight);
                let fail =
                    |e: png::EncodingError| Error::invalid(format!("could not encode PNG: {e}"));
                let mut wr = enc.write_header().map_err(fail)?;
                wr.write_image_data(&rgb).map_err(fail)?;
                wr.finish().map_err(fail)?;
            }
            bytes
        }
    };
    crate::io::write_atomic(path, &bytes)?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_colour_map_darkens_steadily_so_it_reads_in_grey() {
        // Analytic: relative luminance (BT.709) falls monotonically along the scale.
        let mut last = f64::INFINITY;
        for k in 0..=200 {
            let ratio = RATIO_SPAN.powf(2.0 * k as f64 / 200.0 - 1.0);
            let l = relative_luminance(colour_of(ratio));
            assert!(l < last + 1e-12, "not monotone at ratio {ratio}");
            last = l;
        }
        assert!(relative_luminance(ANCHORS[0]) - relative_luminance(ANCHORS[4]) > 0.7);
    }
}
