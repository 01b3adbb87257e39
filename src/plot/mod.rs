//! Charts: σ–τ stability plots, phase noise L(f), wander (MTIE/TDEV against
//! masks) and holdover time error, drawn with plotters to SVG or PNG.
//!
//! A [`Chart`] is plain data — series of (x, y, optional lo/hi) points,
//! shaded bands, labelled x-spans, reference rules — so the analysis layers
//! only have to fill it in. The four chart families have builders that take
//! their own small input structs: [`stability::StabilityPlot`],
//! [`phase_noise::PhaseNoisePlot`], [`wander::WanderPlot`] and
//! [`holdover::HoldoverPlot`].
//!
//! Layout (ours): title and subtitle on top; a strip of labelled x-spans
//! (noise-type regions, integration bands) just above the plotting area; the
//! legend in its own column to the right of the plotting area, so it never
//! covers data; a footnote (cautions, source notes) at the bottom.
//!
//! SVG needs no font at all (text is left to the viewer). PNG text is drawn
//! with DejaVu Sans embedded in the binary ([`style`]), so rendering never
//! reads a system font.

use crate::error::{Error, Result};
use std::path::Path;

pub mod clip;
pub mod convert;
mod draw;
pub mod holdover;
pub mod limit_lines;
pub mod overlay;
pub mod phase_noise;
pub mod scale;
pub mod separate;
pub mod stability;
pub mod style;
pub mod timeline;
pub mod wander;

pub use style::Colour;

/// Linear or logarithmic axis.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Scale {
    /// Linear.
    Linear,
    /// Base-10 logarithmic (values ≤ 0 are not drawn).
    Log,
}

/// How tick values are written.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum AxisUnit {
    /// An SI unit (`s`, `Hz`): ticks carry SI prefixes (log axes) or the axis
    /// title carries the prefix chosen for the range (linear axes).
    Si(String),
    /// A unit that takes no prefix (`dBc/Hz`, `h`) or none at all (σ_y).
    Plain(String),
}

impl AxisUnit {
    /// The unit symbol without prefix.
    pub fn symbol(&self) -> &str {
        match self {
            AxisUnit::Si(u) | AxisUnit::Plain(u) => u,
        }
    }
}

/// One axis.
#[derive(Debug, Clone, PartialEq)]
pub struct Axis {
    /// Axis title without unit (the unit is appended in parentheses).
    pub label: String,
    /// Unit of the values.
    pub unit: AxisUnit,
    /// Linear or log.
    pub scale: Scale,
    /// Fixed range in data units; automatic from the data when None.
    pub range: Option<(f64, f64)>,
}

impl Axis {
    /// A log axis with an SI unit.
    pub fn log_si(label: &str, unit: &str) -> Self {
        Self {
            label: label.into(),
            unit: AxisUnit::Si(unit.into()),
            scale: Scale::Log,
            range: None,
        }
    }
    /// A log axis with a plain (or no) unit.
    pub fn log_plain(label: &str, unit: &str) -> Self {
        Self {
            label: label.into(),
            unit: AxisUnit::Plain(unit.into()),
            scale: Scale::Log,
            range: None,
        }
    }
    /// A linear axis with an SI unit.
    pub fn linear_si(label: &str, unit: &str) -> Self {
        Self {
            label: label.into(),
            unit: AxisUnit::Si(unit.into()),
            scale: Scale::Linear,
            range: None,
        }
    }
    /// A linear axis with a plain unit.
    pub fn linear_plain(label: &str, unit: &str) -> Self {
        Self {
            label: label.into(),
            unit: AxisUnit::Plain(unit.into()),
            scale: Scale::Linear,
            range: None,
        }
    }
}

/// One data point, with an optional interval (drawn as a bar).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct XY {
    /// Abscissa.
    pub x: f64,
    /// Ordinate.
    pub y: f64,
    /// Lower end of the interval.
    pub lo: Option<f64>,
    /// Upper end of the interval.
    pub hi: Option<f64>,
}

impl XY {
    /// A point without interval.
    pub fn new(x: f64, y: f64) -> Self {
        Self {
            x,
            y,
            lo: None,
            hi: None,
        }
    }
    /// A point with an interval [lo, hi].
    pub fn with_interval(x: f64, y: f64, lo: Option<f64>, hi: Option<f64>) -> Self {
        Self { x, y, lo, hi }
    }
}

/// Line pattern.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Line {
    /// No line (markers only).
    None,
    /// Solid.
    Solid,
    /// Long dashes (derived curves, models).
    Dashed,
    /// Short dots (limits, secondary traces).
    Dotted,
}

/// Marker shape.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Marker {
    /// No marker.
    None,
    /// Filled circle.
    Dot,
    /// Open square.
    Square,
    /// Filled triangle.
    Triangle,
    /// Open diamond.
    Diamond,
    /// Diagonal cross (used for violations).
    Cross,
    /// Open circle.
    Ring,
    /// Filled triangle pointing down.
    DownTriangle,
}

/// How a series is drawn.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Style {
    /// Colour.
    pub colour: Colour,
    /// Line pattern.
    pub line: Line,
    /// Line width in pixels at the reference size (scaled with the canvas).
    pub width: f64,
    /// Marker.
    pub marker: Marker,
}

impl Style {
    /// A solid line with dots.
    pub fn line_dots(colour: Colour) -> Self {
        Self {
            colour,
            line: Line::Solid,
            width: 2.0,
            marker: Marker::Dot,
        }
    }
    /// A plain line.
    pub fn line(colour: Colour, line: Line) -> Self {
        Self {
            colour,
            line,
            width: 2.0,
            marker: Marker::None,
        }
    }
    /// Markers only.
    pub fn markers(colour: Colour, marker: Marker) -> Self {
        Self {
            colour,
            line: Line::None,
            width: 2.0,
            marker,
        }
    }
}

/// A data series.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    /// Legend text.
    pub name: String,
    /// The points in drawing order; a non-finite y breaks the line.
    pub points: Vec<XY>,
    /// How to draw it.
    pub style: Style,
}

/// A shaded band between two curves lo(x) ≤ hi(x) (e.g. the p50–p95 holdover band).
#[derive(Debug, Clone, PartialEq)]
pub struct Band {
    /// Legend text.
    pub name: String,
    /// Abscissae, increasing.
    pub x: Vec<f64>,
    /// Lower edge at each x.
    pub lo: Vec<f64>,
    /// Upper edge at each x.
    pub hi: Vec<f64>,
    /// Fill colour (drawn translucent).
    pub colour: Colour,
}

/// A labelled x-interval, shown in the strip above the plotting area and
/// optionally shaded across it (integration bands; noise-type regions).
#[derive(Debug, Clone, PartialEq)]
pub struct Span {
    /// Label written in the strip (dropped when it does not fit).
    pub label: String,
    /// Start (data units).
    pub from: f64,
    /// End (data units).
    pub to: f64,
    /// Shade the interval across the plotting area.
    pub shade: bool,
    /// Colour of the strip mark and shading.
    pub colour: Colour,
    /// Legend text for a shaded span (None: not in the legend).
    pub legend: Option<String>,
}

/// Orientation of a reference rule.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Orientation {
    /// y = value.
    Horizontal,
    /// x = value.
    Vertical,
}

/// A reference line across the plotting area (budget, hold time, span end).
#[derive(Debug, Clone, PartialEq)]
pub struct Rule {
    /// Legend text (empty: not in the legend).
    pub label: String,
    /// Horizontal (y = value) or vertical (x = value).
    pub orientation: Orientation,
    /// Position in data units.
    pub value: f64,
    /// Colour.
    pub colour: Colour,
    /// Line pattern.
    pub line: Line,
    /// Widen the automatic axis range to show the rule (false: a rule
    /// outside the data's range is left off the plot, not the data squeezed).
    pub extend_range: bool,
}

/// A complete chart.
#[derive(Debug, Clone, PartialEq)]
pub struct Chart {
    /// Title (from the input: device or file name).
    pub title: String,
    /// Second line under the title (what is shown).
    pub subtitle: String,
    /// Horizontal axis.
    pub x: Axis,
    /// Vertical axis.
    pub y: Axis,
    /// Data series, drawn in order (later on top).
    pub series: Vec<Series>,
    /// Shaded bands, drawn under the series.
    pub bands: Vec<Band>,
    /// Labelled x-spans.
    pub spans: Vec<Span>,
    /// Reference rules.
    pub rules: Vec<Rule>,
    /// Footnote lines at the bottom (cautions, source notes).
    pub notes: Vec<String>,
}

impl Chart {
    /// An empty chart with the given title and axes.
    pub fn new(title: &str, x: Axis, y: Axis) -> Self {
        Self {
            title: title.into(),
            subtitle: String::new(),
            x,
            y,
            series: Vec::new(),
            bands: Vec::new(),
            spans: Vec::new(),
            rules: Vec::new(),
            notes: Vec::new(),
        }
    }
}

/// Output format of [`render`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    /// Scalable vector graphics.
    Svg,
    /// Portable network graphics (RGB, 8 bit).
    Png,
}

impl Format {
    /// The format for a file name: `.png` → PNG, `.svg` → SVG; anything else
    /// is an error naming the path.
    pub fn from_path(path: &Path) -> Result<Self> {
        match path
            .extension()
            .and_then(|e| e.to_str())
            .map(|e| e.to_ascii_lowercase())
            .as_deref()
        {
            Some("svg") => Ok(Format::Svg),
            Some("png") => Ok(Format::Png),
            _ => Err(Error::invalid(format!(
                "{}: plot file name must end in .svg or .png",
                path.display()
            ))),
        }
    }
}

/// Smallest and largest canvas accepted, in pixels.
pub const MIN_SIZE: (u32, u32) = (240, 180);
/// Largest canvas accepted, in pixels per side.
pub const MAX_SIDE: u32 = 8000;

/// The default canvas size (pixels).
pub const DEFAULT_SIZE: (u32, u32) = (960, 600);

fn check_size(size: (u32, u32)) -> Result<()> {
    if size.0 < MIN_SIZE.0 || size.1 < MIN_SIZE.1 || size.0 > MAX_SIDE || size.1 > MAX_SIDE {
        return Err(Error::invalid(format!(
            "plot size {}×{} is outside {}×{} … {MAX_SIDE}×{MAX_SIDE} pixels",
            size.0, size.1, MIN_SIZE.0, MIN_SIZE.1
        )));
    }
    Ok(())
}

/// Render the chart to an SVG document (with its `xmlns`), `size` in pixels.
pub fn to_svg_string(chart: &Chart, size: (u32, u32)) -> Result<String> {
    check_size(size)?;
    style::ensure_font()?;
    let mut out = String::new();
    {
        let backend = plotters::backend::SVGBackend::with_string(&mut out, size);
        draw::draw(chart, backend)?;
    }
    Ok(out)
}

/// Render the chart to PNG bytes, `size` in pixels. Text uses the embedded
/// font only.
pub fn to_png_bytes(chart: &Chart, size: (u32, u32)) -> Result<Vec<u8>> {
    check_size(size)?;
    style::ensure_font()?;
    let (w, h) = size;
    let mut rgb = vec![255u8; w as usize * h as usize * 3];
    {
        let backend = plotters::backend::BitMapBackend::with_buffer(&mut rgb, size);
        draw::draw(chart, backend)?;
    }
    let mut bytes = Vec::new();
    {
        let mut enc = png::Encoder::new(&mut bytes, w, h);
        enc.set_color(png::ColorType::Rgb);
        enc.set_depth(png::BitDepth::Eight);
        let fail = |e: png::EncodingError| Error::invalid(format!("could not encode PNG: {e}"));
        let mut wr = enc.write_header().map_err(fail)?;
        wr.write_image_data(&rgb).map_err(fail)?;
        wr.finish().map_err(fail)?;
    }
    Ok(bytes)
}

/// Render the chart to `path`, SVG or PNG by the extension, written
/// atomically (temporary file, then rename).
pub fn render(chart: &Chart, path: &Path, size: (u32, u32)) -> Result<()> {
    let bytes = match Format::from_path(path)? {
        Format::Svg => to_svg_string(chart, size)?.into_bytes(),
        Format::Png => to_png_bytes(chart, size)?,
    };
    crate::io::write_atomic(path, &bytes)?;
    Ok(())
}
