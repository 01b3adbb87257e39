//! Readers for frequency-domain tables: phase-noise tables (offset frequency
//! against L(f), S_φ or S_y), weighting-filter files (|H(f)|² in dB against
//! offset) and spur lists (offset against level in dBc).
//!
//! All three are plain-text tables read through [`super::text`] (comments,
//! delimiter sniffing, one optional header line). Conventions (ours):
//!
//! - column 1 is the offset frequency, column 2 the value (both can be
//!   chosen); other columns are ignored;
//! - offsets are in Hz unless the header names the offset column's unit:
//!   `Hz`, `kHz`, `MHz` or `GHz` in brackets or parentheses, or after an
//!   underscore (`offset (kHz)`, `f[MHz]`, `freq_kHz`);
//! - offsets must be positive and strictly increasing (spurs: positive);
//! - a missing field is an error naming the line; at least 2 rows
//!   (spur lists: at least 1).

use super::text::{open_input, read_table, Table};
use super::ReadError;
use crate::spectrum::gt;
use crate::spectrum::jitter::Spur;
use crate::spectrum::loglog::LogLog;
use crate::spectrum::{Quantity, Spectrum};
use std::path::Path;

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
    pub fn parse(text: &str) -> crate::Result<Self> {
        match text.trim().to_ascii_lowercase().as_str() {
            "lf" => Ok(TableQuantity::Lf),
            "sphi" => Ok(TableQuantity::Sphi),
            "sphi-db" | "sphidb" => Ok(TableQuantity::SphiDb),
            "sy" => Ok(TableQuantity::Sy),
            _ => Err(crate::Error::invalid(format!(
                "unknown table quantity '{text}': expected one of lf sphi sphi-db sy"
            ))),
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
}

/// How to read a phase-noise table.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TableOptions {
    /// What the value column holds.
    pub quantity: TableQuantity,
    /// Offset column (1-based; default 1).
    pub offset_column: Option<usize>,
    /// Value column (1-based; default 2).
    pub value_column: Option<usize>,
    /// Carrier ν0 in Hz, stored in the spectrum (needed for conversions).
    pub carrier: Option<f64>,
}

impl Default for TableOptions {
    fn default() -> Self {
        Self {
            quantity: TableQuantity::Lf,
            offset_column: None,
            value_column: None,
            carrier: None,
        }
    }
}

/// A phase-noise table as read.
#[derive(Debug, Clone, PartialEq)]
pub struct LfTable {
    /// The table as a spectrum (L(f) for `lf` and `sphi-db`, else as read).
    pub spectrum: Spectrum,
    /// The path as given.
    pub path: String,
    /// Scale applied to the offsets (1 for Hz, 1e3 for kHz …).
    pub offset_scale: f64,
    /// The header fields, if the file had a header line.
    pub header: Option<Vec<String>>,
}

/// The offset unit declared in a header field: `(kHz)`, `[MHz]`, `_kHz`, …
fn header_unit(field: &str) -> Option<f64> {
    let f = field.trim();
    let inner = if let (Some(a), Some(b)) = (f.rfind(['(', '[']), f.rfind([')', ']'])) {
        if b > a {
            Some(&f[a + 1..b])
        } else {
            None
        }
    } else {
        f.rsplit_once('_').map(|p| p.1)
    }?;
    match inner.trim().to_ascii_lowercase().as_str() {
        "hz" => Some(1.0),
        "khz" => Some(1e3),
        "mhz" => Some(1e6),
        "ghz" => Some(1e9),
        _ => None,
    }
}

/// Rows of (line, offset in Hz, value), and the offset scale applied.
type Pairs = (Vec<(u64, f64, f64)>, f64);

/// Read the raw rows of column pair (oc, vc), 1-based, applying the
/// header's offset unit. Errors name line and field.
fn pairs(table: &Table, path: &Path, oc: usize, vc: usize, what: &str) -> Result<Pairs, ReadError> {
    let scale = table
        .header
        .as_ref()
        .and_then(|h| h.get(oc - 1))
        .and_then(|f| header_unit(f))
        .unwrap_or(1.0);
    let mut out = Vec::with_capacity(table.rows.len());
    for row in &table.rows {
        let get = |c: usize, name: &str| -> Result<f64, ReadError> {
            match row.fields.get(c - 1) {
                Some(Some(v)) => Ok(*v),
                Some(None) => Err(ReadError {
                    path: path.to_path_buf(),
                    line: Some(row.line),
                    column: Some(c),
                    expected: format!("field {c} ({name}) is missing; expected a number"),
                }),
                None => Err(ReadError {
                    path: path.to_path_buf(),
                    line: Some(row.line),
                    column: None,
                    expected: format!(
                        "only {} field(s); expected {name} in column {c} of {what}",
                        row.fields.len()
                    ),
                }),
            }
        };
        let f = get(oc, "offset frequency")? * scale;
        let v = get(vc, "value")?;
        if !gt(f, 0.0) {
            return Err(ReadError::at(
                path,
                row.line,
                format!("offset {f} Hz: expected a positive offset frequency"),
            ));
        }
        out.push((row.line, f, v));
    }
    Ok((out, scale))
}

fn increasing(rows: &[(u64, f64, f64)], path: &Path) -> Result<(), ReadError> {
    for w in rows.windows(2) {
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
    Ok(())
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

/// Read a phase-noise table from `path` (`-` = standard input).
pub fn read_lf_table(path: &Path, opt: &TableOptions) -> crate::Result<LfTable> {
    let reader = open_input(path)?;
    read_lf_table_from(reader, path, opt)
}

/// Read a phase-noise table from any reader; `path` labels messages.
pub fn read_lf_table_from<R: std::io::BufRead>(
    reader: R,
    path: &Path,
    opt: &TableOptions,
) -> crate::Result<LfTable> {
    let table = read_table(reader, path)?;
    let (oc, vc) = columns(opt.offset_column, opt.value_column, path)?;
    let (rows, scale) = pairs(&table, path, oc, vc, "a phase-noise table")?;
    if rows.len() < 2 {
        return Err(ReadError::file(
            path,
            format!(
                "{} data row(s); expected at least 2 rows of offset and value",
                rows.len()
            ),
        )
        .into());
    }
    increasing(&rows, path)?;
    let mut values = Vec::with_capacity(rows.len());
    for &(line, _, v) in &rows {
        let (value, lf) = match opt.quantity {
            TableQuantity::Lf => (v, Some(v)),
            TableQuantity::SphiDb => (v - 10.0 * 2f64.log10(), Some(v - 10.0 * 2f64.log10())),
            TableQuantity::Sphi | TableQuantity::Sy => {
                if !gt(v, 0.0) {
                    return Err(ReadError::at(
                        path,
                        line,
                        format!(
                            "value {v}: expected a positive spectral density ({} is linear, not dB)",
                            opt.quantity.name()
                        ),
                    )
                    .into());
                }
                (v, None)
            }
        };
        if let Some(l) = lf {
            if l > 0.0 {
                return Err(ReadError::at(
                    path,
                    line,
                    format!(
                        "L(f) = {l} dBc/Hz is above 0 dBc/Hz; expected phase noise in dBc/Hz (negative){}",
                        if opt.quantity == TableQuantity::Lf {
                            " — for a table of S_φ or S_y give --quantity"
                        } else {
                            ""
                        }
                    ),
                )
                .into());
            }
        }
        values.push(value);
    }
    let quantity = match opt.quantity {
        TableQuantity::Lf | TableQuantity::SphiDb => Quantity::Lf,
        TableQuantity::Sphi => Quantity::Sphi,
        TableQuantity::Sy => Quantity::Sy,
    };
    let f = rows.iter().map(|r| r.1).collect();
    let spectrum = Spectrum::new(f, values, quantity, opt.carrier)?;
    Ok(LfTable {
        spectrum,
        path: path.display().to_string(),
        offset_scale: scale,
        header: table.header.clone(),
    })
}

/// Read a weighting-filter file: offset against |H(f)|² in dB (at least 2
/// rows, offsets increasing, values finite). Returns the linear |H|² table.
pub fn read_filter_file(path: &Path) -> crate::Result<LogLog> {
    let table = read_table(open_input(path)?, path)?;
    let (rows, _) = pairs(&table, path, 1, 2, "a filter file")?;
    if rows.len() < 2 {
        return Err(ReadError::file(
            path,
            "fewer than 2 rows; expected rows of offset and |H(f)|² in dB",
        )
        .into());
    }
    increasing(&rows, path)?;
    let f: Vec<f64> = rows.iter().map(|r| r.1).collect();
    let h: Vec<f64> = rows.iter().map(|r| 10f64.powf(r.2 / 10.0)).collect();
    LogLog::new(&f, &h)
}

/// Read a spur list: offset against level in dBc (one sideband, ≤ 0 dBc).
pub fn read_spurs(path: &Path) -> crate::Result<Vec<Spur>> {
    let table = read_table(open_input(path)?, path)?;
    let (rows, _) = pairs(&table, path, 1, 2, "a spur list")?;
    let mut out = Vec::with_capacity(rows.len());
    for (line, f, dbc) in rows {
        if dbc > 0.0 {
            return Err(ReadError::at(
                path,
                line,
                format!("spur level {dbc} dBc is above the carrier; expected a level in dBc (≤ 0)"),
            )
            .into());
        }
        out.push(Spur { f, dbc });
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(text: &str, q: TableQuantity) -> crate::Result<LfTable> {
        let opt = TableOptions {
            quantity: q,
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
        let e = read("1,-90\n10,3\n", TableQuantity::Lf).unwrap_err();
        assert!(
            e.to_string().contains("t.csv:2:") && e.to_string().contains("above 0 dBc/Hz"),
            "{e}"
        );
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
        let e = read("1,-90\n10,abc\n", TableQuantity::Lf).unwrap_err();
        assert!(e.to_string().contains("t.csv:2:"), "{e}");
    }
}
