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
