//! The look of tauwise charts: our palette, and the embedded font.
//!
//! The palette is our own: eight data colours chosen to stay apart from one
//! another in print and for the common colour-vision deficiencies (they
//! differ in lightness as well as hue), an alarm red kept for violations,
//! and a dark neutral for limits and budgets.
//!
//! The font is DejaVu Sans (Bitstream Vera licence, see
//! `assets/LICENSE-DejaVu.txt`), compiled into the binary and registered with
//! plotters' `ab_glyph` text support, so a PNG never needs a system font.

use crate::error::{Error, Result};
use plotters::style::RGBColor;
use std::sync::OnceLock;

/// The embedded TrueType font (DejaVu Sans).
pub static FONT_BYTES: &[u8] = include_bytes!("../../assets/DejaVuSans.ttf");

/// The font family name under which the embedded font is registered. It is
/// also the family written into SVG text, so viewers use their own sans-serif.
pub const FONT_FAMILY: &str = "sans-serif";

static FONT_READY: OnceLock<bool> = OnceLock::new();

/// Register the embedded font once per process.
pub fn ensure_font() -> Result<()> {
    let ok = *FONT_READY.get_or_init(|| {
        plotters::style::register_font(FONT_FAMILY, plotters::style::FontStyle::Normal, FONT_BYTES)
            .is_ok()
    });
    if ok {
        Ok(())
    } else {
        Err(Error::invalid(
            "the embedded chart font could not be loaded",
        ))
    }
}

/// A colour by role.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Colour {
    /// The n-th data colour (wraps around the palette).
    Palette(usize),
    /// Violations and failures.
    Alarm,
    /// Limits, masks and budgets.
    Limit,
    /// Secondary, de-emphasised marks.
    Muted,
    /// An explicit colour.
    Rgb(u8, u8, u8),
}

/// The data colours, in order of use.
pub const PALETTE: [(u8, u8, u8); 8] = [
    (0x0f, 0x6e, 0x78), // deep teal
    (0xc0, 0x61, 0x2b), // copper
    (0x4b, 0x47, 0xa6), // indigo
    (0x7a, 0x8a, 0x1f), // olive
    (0xa1, 0x3d, 0x7a), // plum
    (0x4f, 0x64, 0x75), // slate
    (0xb8, 0x90, 0x2a), // ochre
    (0x2f, 0x7d, 0x4f), // pine
];

/// The device colours of comparison charts (a fleet report, several input
/// files on one plot): device i takes `DEVICE_PALETTE[i % 6]` and
/// [`DEVICE_MARKERS`]`[i % 6]` in every chart, so a device keeps its look
/// from chart to chart.
///
/// Ours, chosen by a search over sRGB for the largest smallest CIE 1976
/// colour difference ΔE*ab between any two of them — and between each and
/// the limit ink and the muted grey (comparison charts draw no alarm red) —
/// as seen with normal
/// colour vision and through the protanopia, deuteranopia and tritanopia
/// simulations of Machado, Oliveira & Fernandes (2009, severity 1), with a
/// spread of CIE lightness L* so that they stay apart in grey print (the
/// first three, the usual comparison, at least 15 L* apart). The test
/// `device_palette_stays_apart` in this module recomputes these figures.
/// Each device also has its own marker, so print never relies on colour
/// alone.
pub const DEVICE_PALETTE: [(u8, u8, u8); 6] = [
    (0x5b, 0x00, 0xac), // violet, L* 27
    (0xe7, 0x8c, 0x00), // amber, L* 66
    (0x08, 0x76, 0x4f), // bottle green, L* 44
    (0x8a, 0xb8, 0xfb), // sky, L* 74
    (0x8a, 0x2e, 0x7a), // mulberry, L* 36
    (0xb5, 0x6d, 0x00), // umber, L* 53
];

/// The device markers, in the order of [`DEVICE_PALETTE`].
pub const DEVICE_MARKERS: [super::Marker; 6] = [
    super::Marker::Dot,
    super::Marker::Square,
    super::Marker::Triangle,
    super::Marker::Diamond,
    super::Marker::Ring,
    super::Marker::DownTriangle,
];

/// Device `i`'s colour in comparison charts.
pub fn device_colour(i: usize) -> Colour {
    let (r, g, b) = DEVICE_PALETTE[i % DEVICE_PALETTE.len()];
    Colour::Rgb(r, g, b)
}

/// Device `i`'s marker in comparison charts.
pub fn device_marker(i: usize) -> super::Marker {
    DEVICE_MARKERS[i % DEVICE_MARKERS.len()]
}

impl Colour {
    /// The RGB value.
    pub fn rgb(self) -> RGBColor {
        let (r, g, b) = match self {
            Colour::Palette(i) => PALETTE[i % PALETTE.len()],
            Colour::Alarm => (0xd1, 0x23, 0x2a),
            Colour::Limit => (0x33, 0x36, 0x3a),
            Colour::Muted => (0x8a, 0x8f, 0x96),
            Colour::Rgb(r, g, b) => (r, g, b),
        };
        RGBColor(r, g, b)
    }
}

/// Canvas background.
pub const BACKGROUND: RGBColor = RGBColor(0xff, 0xff, 0xff);
/// Plotting-area background (a faint warm grey).
pub const PLOT_BACKGROUND: RGBColor = RGBColor(0xf8, 0xf7, 0xf3);
/// Strip (span labels) background.
pub const STRIP_BACKGROUND: RGBColor = RGBColor(0xee, 0xed, 0xe7);
/// Major gridlines (decades).
pub const GRID_MAJOR: RGBColor = RGBColor(0xc4, 0xc8, 0xcc);
/// Minor gridlines.
pub const GRID_MINOR: RGBColor = RGBColor(0xe4, 0xe5, 0xe3);
/// Text and axes.
pub const INK: RGBColor = RGBColor(0x23, 0x28, 0x2d);
/// Secondary text.
pub const INK_SOFT: RGBColor = RGBColor(0x5c, 0x63, 0x6a);

#[cfg(test)]
mod tests {
    use super::*;

    fn linear(c: u8) -> f64 {
        let c = c as f64 / 255.0;
        if c <= 0.04045 {
            c / 12.92
        } else {
            ((c + 0.055) / 1.055).powf(2.4)
        }
    }

    /// CIE L*a*b* (D65) of linear-light sRGB, per IEC 61966-2-1 and CIE
    /// 15 (analytic).
    fn lab(rgb: [f64; 3]) -> [f64; 3] {
        let [r, g, b] = rgb.map(|v| v.clamp(0.0, 1.0));
        let x = 0.4124 * r + 0.3576 * g + 0.1805 * b;
        let y = 0.2126 * r + 0.7152 * g + 0.0722 * b;
        let z = 0.0193 * r + 0.1192 * g + 0.9505 * b;
        let f = |t: f64| {
            if t > 216.0 / 24389.0 {
                t.cbrt()
            } else {
                (24389.0 / 27.0 * t + 16.0) / 116.0
            }
        };
        let (fx, fy, fz) = (f(x / 0.95047), f(y), f(z / 1.08883));
        [116.0 * fy - 16.0, 500.0 * (fx - fy), 200.0 * (fy - fz)]
    }

    /// The colour-vision simulations of Machado, Oliveira & Fernandes
    /// (2009), severity 1.0, on linear RGB (matrices from memory).
    const SIMULATIONS: [[[f64; 3]; 3]; 3] = [
        [
            [0.152286, 1.052583, -0.204868],
            [0.114503, 0.786281, 0.099216],
            [-0.003882, -0.048116, 1.051998],
        ],
        [
            [0.367322, 0.860646, -0.227968],
            [0.280085, 0.672501, 0.047413],
            [-0.011820, 0.042940, 0.968881],
        ],
        [
            [1.255528, -0.076749, -0.178779],
            [-0.078411, 0.930809, 0.147602],
            [0.004733, 0.691367, 0.303900],
        ],
    ];

    fn seen(c: (u8, u8, u8), sim: Option<&[[f64; 3]; 3]>) -> [f64; 3] {
        let l = [linear(c.0), linear(c.1), linear(c.2)];
        let l = match sim {
            None => l,
            Some(m) => [0, 1, 2].map(|i| (0..3).map(|j| m[i][j] * l[j]).sum()),
        };
        lab(l)
    }

    fn de(a: [f64; 3], b: [f64; 3]) -> f64 {
        ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
    }

    /// The device colours stay apart: ΔE*ab ≥ 15 between any two (and from
    /// the limit and muted colours; comparison charts do not use the alarm
    /// red) with normal vision and under each
    /// simulated deficiency; lightness apart for grey print (first three
    /// ≥ 15 L*, all six ≥ 7 L*, the markers doing the rest).
    #[test]
    fn device_palette_stays_apart() {
        let fixed = [
            (0x33, 0x36, 0x3a), // Colour::Limit
            (0x8a, 0x8f, 0x96), // Colour::Muted
        ];
        let sims: Vec<Option<&[[f64; 3]; 3]>> = std::iter::once(None)
            .chain(SIMULATIONS.iter().map(Some))
            .collect();
        for sim in &sims {
            for (i, &a) in DEVICE_PALETTE.iter().enumerate() {
                for &b in DEVICE_PALETTE[i + 1..].iter().chain(fixed.iter()) {
                    let d = de(seen(a, *sim), seen(b, *sim));
                    assert!(d >= 15.0, "{a:?} vs {b:?}: ΔE {d:.1} (simulation {sim:?})");
                }
            }
        }
        let l: Vec<f64> = DEVICE_PALETTE.iter().map(|&c| seen(c, None)[0]).collect();
        for i in 0..l.len() {
            for j in i + 1..l.len() {
                let gap = (l[i] - l[j]).abs();
                assert!(gap >= 7.0, "L* {} vs {}", l[i], l[j]);
                if j < 3 {
                    assert!(gap >= 15.0, "first three: L* {} vs {}", l[i], l[j]);
                }
            }
        }
        let markers: std::collections::HashSet<String> =
            DEVICE_MARKERS.iter().map(|m| format!("{m:?}")).collect();
        assert_eq!(markers.len(), DEVICE_MARKERS.len());
    }
}
