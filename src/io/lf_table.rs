//! Readers for frequency-domain tables: phase-noise tables (offset frequency
//! against L(f), S_φ or S_y), weighting-filter files (|H(f)|² in dB against
//! offset) and spur lists (offset against level in dBc).
//!
//! All three are text tables read through [`super::text`],
//! [`super::layout`] and [`super::fields`] (preamble, header, comments,
//! delimiter, decimal commas, quotes, byte-order mark — as for time series).
//! Conventions (ours, documented in `docs/input-files.md`):
//!
//! - column 1 is the offset frequency, column 2 the value (both can be
//!   chosen); other columns are ignored, text or not;
//! - offsets are in Hz unless the header names the offset column's unit
//!   (`Hz`, `kHz`, `MHz`, `GHz`, `mHz`: `offset (kHz)`, `f[MHz]`,
//!   `freq_kHz`); the value column's header may name the quantity
//!   (`dBc/Hz` → L(f), `rad²/Hz` → S_φ, `dB rad²/Hz`, `1/Hz` → S_y), used
//!   when no quantity is given and an error when it disagrees with one;
//! - offsets must be positive and strictly increasing (spurs: positive);
//! - a missing field is an error naming the line; at least 2 rows
//!   (spur lists: at least 1);
//! - L(f) above 0 dBc/Hz is accepted with a note (a model at very low
//!   offsets can have S_φ/2 > 1 rad²/Hz);
//! - a phase-noise table may end with a **spur list**: a line `[spurs]`,
//!   then (optionally) a header, then rows of offset and level in dBc (one
//!   sideband); `jitter` adds these spurs to the band jitter. Any other
//!   block of text after the rows ends the table with a note, unless rows
//!   of numbers follow it (then the text is an error naming its line).

use super::fields::{self, Decimal, NumberError, Splitter};
use super::header_units::{self, Found, HeaderUnit};
use super::layout::{self, Header, LayoutOptions};
use super::text::{self, open_input, LineReader};
use super::ReadError;
use crate::spectrum::gt;
use crate::spectrum::jitter::Spur;
use crate::spectrum::loglog::LogLog;
use crate::spectrum::{Quantity, Spectrum};
use std::io::BufRead;
use std::path::Path;

/// Most rows a table may have (a bound on memory for a wrong input).
pub const MAX_TABLE_ROWS: usize = 10_000_000;

/// What the value column of a phase-noise table holds (`--quantity`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TableQuantity {
    /// L(f) in dBc/Hz (the default).
    Lf,
    /// S_φ(f) in rad²/Hz.
    Sphi,
    /// S_φ(f) in dB rad²/Hz (10·log10 S_φ).
    SphiDb,
    /// S_y(f) in 1/Hz.
    Sy,
}

impl TableQuantity {
    /// Parse `lf`, `sphi`, `sphi-db` or `sy`.
    pub fn parse(text: &str) -> Result<Self, crate::units::UnitError> {
        match text.trim().to_ascii_lowercase().as_str() {
            "lf" => Ok(TableQuantity::Lf),
            "sphi" => Ok(TableQuantity::Sphi),
            "sphi-db" | "sphidb" => Ok(TableQuantity::SphiDb),
            "sy" => Ok(TableQuantity::Sy),
            _ => Err(crate::units::UnitError::Invalid {
                text: text.trim().to_string(),
                reason: format!(
                    "unknown table quantity '{text}': expected one of lf sphi sphi-db sy"
                ),
            }),
        }
    }

    /// The name used on the command line.
    pub fn name(self) -> &'static str {
        match self {
            TableQuantity::Lf => "lf",
            TableQuantity::Sphi => "sphi",
            TableQuantity::SphiDb => "sphi-db",
            TableQuantity::Sy => "sy",
        }
    }

    fn of_header(u: HeaderUnit) -> Option<Self> {
        Some(match u {
            HeaderUnit::Lf => TableQuantity::Lf,
            HeaderUnit::Sphi => TableQuantity::Sphi,
            HeaderUnit::SphiDb => TableQuantity::SphiDb,
            HeaderUnit::Sy => TableQuantity::Sy,
            _ => return None,
        })
    }
}

/// How to read a phase-noise table.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct TableOptions {
    /// What the value column holds; `None`: the header's quantity, else L(f).
    pub quantity: Option<TableQuantity>,
    /// Offset column (1-based; default 1).
    pub offset_column: Option<usize>,
    /// Value column (1-based; default 2).
    pub value_column: Option<usize>,
    /// Carrier ν0 in Hz, stored in the spectrum (needed for conversions).
    pub carrier: Option<f64>,
}

/// A phase-noise table as read.
#[derive(Debug, Clone, PartialEq)]
pub struct LfTable {
    /// The table as a spectrum (L(f) for `lf` and `sphi-db`, else as read).
    pub spectrum: Spectrum,
    /// The path as given.
    pub path: String,
    /// What the value column held.
    pub quantity: TableQuantity,
    /// Scale applied to the offsets (1 for Hz, 1e3 for kHz …).
    pub offset_scale: f64,
    /// The header fields, if the file had a header line.
    pub header: Option<Vec<String>>,
    /// The lines before the first row.
    pub preamble: Vec<String>,
    /// Spurs listed after the table (`[spurs]`).
    pub spurs: Vec<Spur>,
    /// Plain statements about how the file was read.
    pub notes: Vec<String>,
}

/// The unit of an offset column from its header: hertz per unit.
fn offset_scale(path: &Path, header: Option<&Header>, col: usize) -> Result<f64, ReadError> {
    let Some((f, line)) = header.and_then(|h| h.fields.get(col - 1).map(|f| (f, h.line))) else {
        return Ok(1.0);
    };
    match header_units::unit_in(f) {
        Found::None => Ok(1.0),
        Found::Unit(HeaderUnit::Absolute(k)) => Ok(k),
        Found::Unit(u) => Err(ReadError {
            cause: super::ReadCause::Content,
            path: path.to_path_buf(),
            line: Some(line),
            column: Some(col),
            expected: format!(
                "the header of the offset column, '{}', says {}; expected offsets in Hz kHz MHz GHz (or no unit: Hz)",
                fields::shorten(f),
                u.symbol()
            ),
        }),
        Found::Unknown(w) => Err(ReadError {
            cause: super::ReadCause::Content,
            path: path.to_path_buf(),
            line: Some(line),
            column: Some(col),
            expected: format!(
                "the header of the offset column, '{}', gives the unit '{w}', which tauwise does not read; expected Hz kHz MHz or GHz",
                fields::shorten(f)
            ),
        }),
    }
}

/// One block of (offset, value) rows, as read.
struct Block {
    rows: Vec<(u64, f64, f64)>,
    header: Option<Header>,
    first_line: u64,
}

/// What a table file holds: its layout, the main block and, for phase-noise
/// tables, the spur block.
struct TableFile {
    preamble: Vec<String>,
    main: Block,
    spurs: Option<Block>,
    notes: Vec<String>,
}

/// A row of a block, or a line of text.
enum PairRow {
    Text,
    Blank,
    Pair(f64, f64),
}

#[allow(clippy::too_many_arguments)]
fn parse_pair(
    s: &mut Splitter,
    decimal: Decimal,
    path: &Path,
    number: u64,
    line: &str,
    cols: (usize, usize),
    names: (&str, &str),
    what: &str,
) -> Result<PairRow, ReadError> {
    let n = match s.split(line) {
        Ok(n) => n,
        Err(_) => {
            let first = line.split([',', ';', '\t', ' ']).next().unwrap_or("");
            if fields::is_text(fields::unquote(first), decimal) {
                return Ok(PairRow::Text);
            }
            return Err(ReadError::at(
                path,
                number,
                "a quote (\") opens a field that does not close on this line; expected a closing quote",
            ));
        }
    };
    if fields::is_text(s.field(line, 0), decimal) {
        return Ok(PairRow::Text);
    }
    if (0..n).all(|i| s.field(line, i).is_empty()) {
        return Ok(PairRow::Blank);
    }
    let get = |c: usize, name: &str| -> Result<f64, ReadError> {
        if c > n {
            return Err(ReadError::at(
                path,
                number,
                format!("only {n} field(s); expected {name} in column {c} of {what}"),
            ));
        }
        let f = s.field(line, c - 1);
        match fields::number(f, decimal) {
            Ok(Some(v)) => Ok(v),
            Ok(None) => Err(text::field_error(
                path,
                number,
                c,
                format!("field {c} ({name}) is missing; expected a number"),
            )),
            Err(NumberError::AmbiguousComma) => Err(text::field_error(
                path,
                number,
                c,
                text::ambiguous_comma(f, c),
            )),
            Err(NumberError::Malformed) => {
                Err(text::field_error(path, number, c, text::not_a_number(f, c)))
            }
        }
    };
    let x = get(cols.0, names.0)?;
    let y = get(cols.1, names.1)?;
    Ok(PairRow::Pair(x, y))
}

/// True for the line that opens a spur list.
fn is_spur_marker(line: &str) -> bool {
    line.trim().eq_ignore_ascii_case("[spurs]")
}

/// Read a whole table of (offset, value) rows in columns `cols`, and, when
/// `spur_section`, a trailing `[spurs]` block of (offset, level) rows in
/// columns 1 and 2.
fn read_file<R: BufRead>(
    reader: R,
    path: &Path,
    cols: (usize, usize),
    names: (&str, &str),
    what: &str,
    spur_section: bool,
) -> Result<TableFile, ReadError> {
    let mut lines = LineReader::new(reader, path);
    let expect = format!("rows of {} and {}", names.0, names.1);
    let start = layout::find_start(
        &mut lines,
        path,
        &LayoutOptions {
            several_columns: true,
            ..Default::default()
        },
        &expect,
    )?;
    let lay = start.layout;
    let mut s = Splitter::new(lay.delimiter);
    let decimal = lay.decimal;
    let mut notes = Vec::new();
    if let Some(n) = &lay.decimal_note {
        notes.push(n.clone());
    }
    let mut main = Block {
        rows: Vec::new(),
        header: lay.header.clone(),
        first_line: lay.first_line,
    };
    let mut spurs: Option<Block> = None;
    // In the spur block: its header (the first text line) not yet seen.
    let mut spur_header_open = false;
    // A block of text after the rows: (line, first field, count).
    let mut trailer: Option<(u64, String, u64)> = None;
    let mut last_line = lay.first_line;
    let mut queued = start.rows;
    let mut handle = |number: u64, line: &str| -> Result<(), ReadError> {
        let in_spurs = spurs.is_some();
        let (c, nm, wh) = if in_spurs {
            ((1, 2), ("spur offset", "spur level"), "a spur list")
        } else {
            (cols, names, what)
        };
        match parse_pair(&mut s, decimal, path, number, line, c, nm, wh)? {
            PairRow::Blank => {}
            PairRow::Text => {
                if trailer.is_none() && spur_section && !in_spurs && is_spur_marker(line) {
                    spurs = Some(Block {
                        rows: Vec::new(),
                        header: None,
                        first_line: number,
                    });
                    spur_header_open = true;
                } else if trailer.is_none() && in_spurs && spur_header_open {
                    spur_header_open = false;
                    let mut hs = Splitter::new(lay.delimiter);
                    if hs.split(line).is_ok() {
                        if let Some(b) = spurs.as_mut() {
                            b.header = Some(Header {
                                line: number,
                                fields: hs.all(line),
                                commented: false,
                            });
                        }
                    }
                } else {
                    match trailer.as_mut() {
                        Some(t) => t.2 += 1,
                        None => {
                            let first = line
                                .split([',', ';', '\t', ' '])
                                .next()
                                .map(fields::unquote)
                                .unwrap_or("")
                                .to_string();
                            trailer = Some((number, first, 1));
                        }
                    }
                }
            }
            PairRow::Pair(x, y) => {
                if let Some((tl, first, _)) = &trailer {
                    return Err(text::field_error(
                        path,
                        *tl,
                        1,
                        format!(
                            "{}; rows go on at line {number}, so this line is not a closing block of text{}",
                            text::not_a_number(first, 1),
                            if spur_section {
                                " (a spur list after the table starts with a line [spurs])"
                            } else {
                                ""
                            }
                        ),
                    ));
                }
                spur_header_open = false;
                let block = spurs.as_mut().unwrap_or(&mut main);
                if block.rows.len() >= MAX_TABLE_ROWS {
                    return Err(ReadError::at(
                        path,
                        number,
                        format!("more than {MAX_TABLE_ROWS} rows; expected a table of modest size"),
                    ));
                }
                block.rows.push((number, x, y));
                last_line = number;
            }
        }
        Ok(())
    };
    while let Some((n, t)) = queued.pop_front() {
        handle(n, &t)?;
    }
    while let Some(line) = lines.next_line()? {
        handle(line.number, line.text)?;
    }
    if let Some((tl, first, count)) = trailer {
        notes.push(format!(
            "the rows end at line {last_line}: {count} line(s) of text after them ignored, from line {tl} ('{}')",
            fields::shorten(&first)
        ));
    }
    Ok(TableFile {
        preamble: lay.preamble,
        main,
        spurs,
        notes,
    })
}

/// Scale the offsets of a block by its header's unit and check them:
/// positive, and (unless `any_order`) strictly increasing.
fn offsets(path: &Path, b: &mut Block, col: usize, increasing: bool) -> Result<f64, ReadError> {
    let scale = offset_scale(path, b.header.as_ref(), col)?;
    for r in b.rows.iter_mut() {
        r.1 *= scale;
        if !gt(r.1, 0.0) {
            return Err(ReadError::at(
                path,
                r.0,
                format!("offset {} Hz: expected a positive offset frequency", r.1),
            ));
        }
    }
    if increasing {
        for w in b.rows.windows(2) {
            if !gt(w[1].1, w[0].1) {
                return Err(ReadError::at(
                    path,
                    w[1].0,
                    format!(
                        "offset {} Hz does not increase (previous row: {} Hz); expected strictly increasing offsets",
                        w[1].1, w[0].1
                    ),
                ));
            }
        }
    }
    Ok(scale)
}

fn columns(oc: Option<usize>, vc: Option<usize>, path: &Path) -> Result<(usize, usize), ReadError> {
    let oc = oc.unwrap_or(1);
    let vc = vc.unwrap_or(2);
    if oc == 0 || vc == 0 || oc == vc {
        return Err(ReadError::file(
            path,
            "offset and value columns must be different 1-based column numbers",
        ));
    }
    Ok((oc, vc))
}

/// Spurs from a block of (offset, level) rows: levels at most 0 dBc.
fn spurs_of(path: &Path, mut b: Block) -> Result<Vec<Spur>, ReadError> {
    offsets(path, &mut b, 1, false)?;
    if let Some(h) = &b.header {
        if let Some(f) = h.fields.get(1) {
            match header_units::unit_in(f) {
                Found::None | Found::Unit(HeaderUnit::Dbc) => {}
                _ => {
                    return Err(ReadError {
                        cause: super::ReadCause::Content,
                        path: path.to_path_buf(),
                        line: Some(h.line),
                        column: Some(2),
                        expected: format!(
                            "the header of the spur level column, '{}', names another unit; expected levels in dBc",
                            fields::shorten(f)
                        ),
                    })
                }
            }
        }
    }
    let mut out = Vec::with_capacity(b.rows.len());
    for (line, f, dbc) in b.rows {
        if dbc > 0.0 {
            return Err(ReadError::at(
                path,
                line,
                format!("spur level {dbc} dBc is above the carrier; expected a level in dBc (≤ 0)"),
            ));
        }
        out.push(Spur { f, dbc });
    }
    Ok(out)
}

/// Read a phase-noise table from `path` (`-` = standard input).
pub fn read_lf_table(path: &Path, opt: &TableOptions) -> crate::Result<LfTable> {
    let reader = open_input(path)?;
    read_lf_table_from(reader, path, opt)
}

/// Read a phase-noise table from any reader; `path` labels messages.
pub fn read_lf_table_from<R: BufRead>(
    reader: R,
    path: &Path,
    opt: &TableOptions,
) -> crate::Result<LfTable> {
    let (oc, vc) = columns(opt.offset_column, opt.value_column, path)?;
    let file = read_file(
        reader,
        path,
        (oc, vc),
        ("offset frequency", "value"),
        "a phase-noise table",
        true,
    )?;
    let mut notes = file.notes;
    let mut main = file.main;
    if main.rows.len() < 2 {
        return Err(ReadError::file(
            path,
            format!(
                "{} data row(s); expected at least 2 rows of offset and value",
                main.rows.len()
            ),
        )
        .into());
    }
    // The quantity: the option, the header, or L(f).
    let header_q = match main.header.as_ref().and_then(|h| h.fields.get(vc - 1).map(|f| (f, h.line))) {
        Some((f, line)) => match header_units::unit_in(f) {
            Found::None => None,
            Found::Unit(u) => match TableQuantity::of_header(u) {
                Some(q) => Some((q, f.clone(), line)),
                None => {
                    return Err(ReadError {
                        cause: super::ReadCause::Content,
                        path: path.to_path_buf(),
                        line: Some(line),
                        column: Some(vc),
                        expected: format!(
                            "the header of the value column, '{}', says {}; expected a phase-noise quantity (dBc/Hz, rad²/Hz, dB rad²/Hz, 1/Hz)",
                            fields::shorten(f),
                            u.symbol()
                        ),
                    }
                    .into())
                }
            },
            Found::Unknown(w) => {
                if opt.quantity.is_none() {
                    return Err(ReadError {
                        cause: super::ReadCause::Content,
                        path: path.to_path_buf(),
                        line: Some(line),
                        column: Some(vc),
                        expected: format!(
                            "the header of the value column, '{}', gives the unit '{w}', which tauwise does not read; give --quantity (lf sphi sphi-db sy)",
                            fields::shorten(f)
                        ),
                    }
                    .into());
                }
                None
            }
        },
        None => None,
    };
    let quantity = match (opt.quantity, &header_q) {
        (Some(q), Some((hq, f, line))) if q != *hq => {
            return Err(ReadError {
                cause: super::ReadCause::Content,
                path: path.to_path_buf(),
                line: Some(*line),
                column: Some(vc),
                expected: format!(
                    "the quantity {} disagrees with the header of the value column, '{}', which says {}; remove the quantity option or correct it",
                    q.name(),
                    fields::shorten(f),
                    hq.name()
                ),
            }
            .into())
        }
        (Some(q), _) => q,
        (None, Some((hq, f, _))) => {
            if *hq != TableQuantity::Lf {
                notes.push(format!(
                    "quantity {} taken from the header '{}'",
                    hq.name(),
                    fields::shorten(f)
                ));
            }
            *hq
        }
        (None, None) => TableQuantity::Lf,
    };
    let scale = offsets(path, &mut main, oc, true)?;
    let mut values = Vec::with_capacity(main.rows.len());
    let mut above: Vec<(f64, f64)> = Vec::new();
    for &(line, f, v) in &main.rows {
        let (value, lf) = match quantity {
            TableQuantity::Lf => (v, Some(v)),
            TableQuantity::SphiDb => (v - 10.0 * 2f64.log10(), Some(v - 10.0 * 2f64.log10())),
            TableQuantity::Sphi | TableQuantity::Sy => {
                if !gt(v, 0.0) {
                    return Err(ReadError::at(
                        path,
                        line,
                        format!(
                            "value {v}: expected a positive spectral density ({} is linear, not dB)",
                            quantity.name()
                        ),
                    )
                    .into());
                }
                (v, None)
            }
        };
        if let Some(l) = lf {
            if l > 0.0 {
                above.push((f, l));
            }
        }
        values.push(value);
    }
    if !above.is_empty() {
        let (f, l) =
            above.iter().copied().fold(
                (0.0, f64::NEG_INFINITY),
                |a, b| if b.1 > a.1 { b } else { a },
            );
        notes.push(format!(
            "L(f) is above 0 dBc/Hz at {} offset(s), up to {:+.2} dBc/Hz at {} Hz: legitimate for a model at low offsets (S_φ/2 > 1 rad²/Hz), unusual for a measurement",
            above.len(),
            l,
            crate::units::format_sig(f, 4)
        ));
    }
    let spurs = match file.spurs {
        Some(b) => {
            let n = b.rows.len();
            let line = b.first_line;
            let s = spurs_of(path, b)?;
            notes.push(format!(
                "{n} spur(s) listed after the table ([spurs] at line {line})"
            ));
            s
        }
        None => Vec::new(),
    };
    let q = match quantity {
        TableQuantity::Lf | TableQuantity::SphiDb => Quantity::Lf,
        TableQuantity::Sphi => Quantity::Sphi,
        TableQuantity::Sy => Quantity::Sy,
    };
    let f = main.rows.iter().map(|r| r.1).collect();
    let spectrum = Spectrum::new(f, values, q, opt.carrier)?;
    Ok(LfTable {
        spectrum,
        path: path.display().to_string(),
        quantity,
        offset_scale: scale,
        header: main.header.map(|h| h.fields),
        preamble: file.preamble,
        spurs,
        notes,
    })
}

/// Read a weighting-filter file: offset against |H(f)|² in dB (at least 2
/// rows, offsets increasing, values finite). Returns the linear |H|² table.
pub fn read_filter_file(path: &Path) -> crate::Result<LogLog> {
    let file = read_file(
        open_input(path)?,
        path,
        (1, 2),
        ("offset frequency", "|H(f)|² in dB"),
        "a filter file",
        false,
    )?;
    let mut main = file.main;
    if main.rows.len() < 2 {
        return Err(ReadError::file(
            path,
            "fewer than 2 rows; expected rows of offset and |H(f)|² in dB",
        )
        .into());
    }
    offsets(path, &mut main, 1, true)?;
    let f: Vec<f64> = main.rows.iter().map(|r| r.1).collect();
    let h: Vec<f64> = main.rows.iter().map(|r| 10f64.powf(r.2 / 10.0)).collect();
    LogLog::new(&f, &h)
}

/// Read a spur list: offset against level in dBc (one sideband, ≤ 0 dBc).
pub fn read_spurs(path: &Path) -> crate::Result<Vec<Spur>> {
    let file = read_file(
        open_input(path)?,
        path,
        (1, 2),
        ("spur offset", "spur level"),
        "a spur list",
        false,
    )?;
    Ok(spurs_of(path, file.main)?)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &str, q: TableQuantity) -> crate::Result<LfTable> {
        let opt = TableOptions {
            quantity: Some(q),
            carrier: Some(10e6),
            ..Default::default()
        };
        read_lf_table_from(text.as_bytes(), Path::new("t.csv"), &opt)
    }

    #[test]
    fn reads_units_and_quantities() {
        let t = read(
            "# analyser export\noffset (kHz),L\n0.001,-90\n1,-140\n10,-150\n",
            TableQuantity::Lf,
        )
        .unwrap();
        assert_eq!(t.spectrum.f, vec![1.0, 1e3, 1e4]);
        assert_eq!(t.offset_scale, 1e3);
        let t = read("f_MHz\tS\n1\t2e-15\n2\t2e-15\n", TableQuantity::Sphi).unwrap();
        assert_eq!(t.spectrum.f, vec![1e6, 2e6]);
        assert_eq!(t.spectrum.quantity, Quantity::Sphi);
        let t = read("1 -147\n10 -147\n", TableQuantity::SphiDb).unwrap();
        assert!((t.spectrum.values[0] + 150.0103).abs() < 1e-3);
    }

    #[test]
    fn bad_tables_name_the_line() {
        let e = read("1,-90\n10,-100\n10,-110\n", TableQuantity::Lf).unwrap_err();
        assert!(e.to_string().contains("t.csv:3:"), "{e}");
        assert!(e.to_string().contains("increasing"), "{e}");
        // Above 0 dBc/Hz: read, with a note.
        let t = read("1,-90\n10,3\n", TableQuantity::Lf).unwrap();
        assert!(t.notes[0].contains("above 0 dBc/Hz"), "{:?}", t.notes);
        let e = read("1,-90\n10,NaN\n", TableQuantity::Lf).unwrap_err();
        assert!(
            e.to_string().contains("t.csv:2:") && e.to_string().contains("missing"),
            "{e}"
        );
        let e = read("1,-90\n", TableQuantity::Lf).unwrap_err();
        assert!(e.to_string().contains("at least 2"), "{e}");
        let e = read("-1,-90\n10,-100\n", TableQuantity::Lf).unwrap_err();
        assert!(
            e.to_string().contains("t.csv:1:") && e.to_string().contains("positive"),
            "{e}"
        );
        let e = read("1,1e-20\n10,-1e-22\n", TableQuantity::Sy).unwrap_err();
        assert!(e.to_string().contains("t.csv:2:"), "{e}");
        let e = read("1,-90\n10\n", TableQuantity::Lf).unwrap_err();
        assert!(e.to_string().contains("t.csv:2:"), "{e}");
        let e = read("1,-90\n10,1.5x\n", TableQuantity::Lf).unwrap_err();
        assert!(e.to_string().contains("t.csv:2:"), "{e}");
        // Text then rows again: the text line is named.
        let e = read("1,-90\n10,-100\nmarker\n100,-110\n", TableQuantity::Lf).unwrap_err();
        assert!(e.to_string().contains("t.csv:3:"), "{e}");
    }
}
