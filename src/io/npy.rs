//! Binary input: numpy's `.npy` format, read directly (no text parsing).
//!
//! Implemented from numpy's published description of the format
//! (`numpy.lib.format`, "NPY format", versions 1.0, 2.0 and 3.0):
//!
//! - 6 bytes of magic `\x93NUMPY`, then the major and minor version bytes;
//! - the header length: a little-endian `u16` (version 1) or `u32`
//!   (versions 2 and 3);
//! - the header: a Python dictionary literal (ASCII; UTF-8 in version 3)
//!   with the keys `descr` (the data type, e.g. `'<f8'`), `fortran_order`
//!   (`True`/`False`) and `shape` (a tuple of integers), padded with spaces
//!   and ended by a newline;
//! - the data: the array's elements, `shape` in C order (row after row) or,
//!   with `fortran_order: True`, column after column.
//!
//! tauwise reads `float64` and `float32` in either byte order (`<f8`, `>f8`,
//! `<f4`, `>f4`), one-dimensional (the readings) or two-dimensional (rows of
//! columns; the value and time columns are chosen as for text files). NaN is
//! a gap; ±∞ is an error naming the element. The data size must match the
//! header exactly (a truncated file is refused).

use super::ReadError;
use std::io::Read;
use std::path::Path;

/// The magic bytes at the start of every `.npy` file.
pub const MAGIC: &[u8] = b"\x93NUMPY";

/// Largest header accepted (bytes).
const MAX_HEADER: usize = 1 << 20;

/// Bytes converted per read.
const CHUNK: usize = 1 << 20;

/// True when `head` starts with the `.npy` magic.
pub fn is_npy(head: &[u8]) -> bool {
    head.starts_with(MAGIC)
}

/// The element type.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Dtype {
    /// 4 or 8 bytes.
    pub size: usize,
    /// Little-endian (else big-endian).
    pub little: bool,
}

impl Dtype {
    /// As numpy writes it (`<f8`).
    pub fn descr(self) -> String {
        format!("{}f{}", if self.little { '<' } else { '>' }, self.size)
    }

    #[inline]
    fn decode(self, b: &[u8]) -> f64 {
        match (self.size, self.little) {
            (8, true) => f64::from_le_bytes(b[..8].try_into().unwrap_or([0; 8])),
            (8, false) => f64::from_be_bytes(b[..8].try_into().unwrap_or([0; 8])),
            (_, true) => f32::from_le_bytes(b[..4].try_into().unwrap_or([0; 4])) as f64,
            (_, false) => f32::from_be_bytes(b[..4].try_into().unwrap_or([0; 4])) as f64,
        }
    }
}

/// The header of an `.npy` file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct NpyHeader {
    /// Format version (major, minor).
    pub version: (u8, u8),
    /// Element type.
    pub dtype: Dtype,
    /// Column after column (Fortran order) rather than row after row.
    pub fortran_order: bool,
    /// The shape: one or two dimensions.
    pub shape: Vec<usize>,
    /// Bytes before the data.
    pub data_offset: usize,
}

impl NpyHeader {
    /// Rows (the length of a 1-D array).
    pub fn rows(&self) -> usize {
        self.shape.first().copied().unwrap_or(0)
    }

    /// Columns (1 for a 1-D array).
    pub fn columns(&self) -> usize {
        self.shape.get(1).copied().unwrap_or(1)
    }
}

fn bad(path: &Path, what: impl Into<String>) -> ReadError {
    ReadError::file(path, what.into())
}

fn read_exact<R: Read>(
    r: &mut R,
    buf: &mut [u8],
    path: &Path,
    what: &str,
) -> Result<(), ReadError> {
    r.read_exact(buf).map_err(|e| {
        if e.kind() == std::io::ErrorKind::UnexpectedEof {
            bad(
                path,
                format!("the .npy file ends inside its {what}; expected a complete file"),
            )
        } else {
            bad(path, format!("could not read: {e}"))
        }
    })
}

/// Read and check the header; the reader is left at the first data byte.
pub fn read_header<R: Read>(r: &mut R, path: &Path) -> Result<NpyHeader, ReadError> {
    let mut pre = [0u8; 8];
    read_exact(r, &mut pre, path, "header")?;
    if !is_npy(&pre) {
        return Err(bad(path, "not an .npy file (no \\x93NUMPY magic)"));
    }
    let version = (pre[6], pre[7]);
    let len = match version.0 {
        1 => {
            let mut b = [0u8; 2];
            read_exact(r, &mut b, path, "header")?;
            u16::from_le_bytes(b) as usize
        }
        2 | 3 => {
            let mut b = [0u8; 4];
            read_exact(r, &mut b, path, "header")?;
            u32::from_le_bytes(b) as usize
        }
        v => {
            return Err(bad(
                path,
                format!(
                    ".npy format version {v}.{}: expected version 1, 2 or 3",
                    version.1
                ),
            ))
        }
    };
    if len > MAX_HEADER {
        return Err(bad(
            path,
            format!(".npy header of {len} bytes: expected at most {MAX_HEADER}"),
        ));
    }
    let mut h = vec![0u8; len];
    read_exact(r, &mut h, path, "header")?;
    let text = std::str::from_utf8(&h).map_err(|_| {
        bad(
            path,
            "the .npy header is not text; expected a Python dictionary",
        )
    })?;
    let data_offset = 8 + if version.0 == 1 { 2 } else { 4 } + len;
    parse_header(text, version, data_offset).map_err(|m| bad(path, m))
}

/// The value after `'key':` in the dictionary text.
fn value_of<'a>(dict: &'a str, key: &str) -> Option<&'a str> {
    for q in ['\'', '"'] {
        let pat = format!("{q}{key}{q}");
        if let Some(i) = dict.find(&pat) {
            let rest = dict[i + pat.len()..].trim_start();
            return rest.strip_prefix(':').map(str::trim_start);
        }
    }
    None
}

fn parse_header(text: &str, version: (u8, u8), data_offset: usize) -> Result<NpyHeader, String> {
    let dict = text.trim();
    if !(dict.starts_with('{') && dict.ends_with('}')) {
        return Err(format!(
            "the .npy header '{}' is not a dictionary; expected {{'descr': …, 'fortran_order': …, 'shape': …}}",
            super::fields::shorten(dict)
        ));
    }
    let descr = value_of(dict, "descr").ok_or("the .npy header has no 'descr'")?;
    let q = descr.chars().next().unwrap_or(' ');
    if q != '\'' && q != '"' {
        return Err(format!(
            "the .npy element type is not a simple one ('{}'); expected float64 or float32",
            super::fields::shorten(descr)
        ));
    }
    let end = descr[1..].find(q).ok_or("the .npy 'descr' is not closed")? + 1;
    let d = &descr[1..end];
    let dtype = match d {
        "<f8" => Dtype { size: 8, little: true },
        ">f8" => Dtype { size: 8, little: false },
        "<f4" => Dtype { size: 4, little: true },
        ">f4" => Dtype { size: 4, little: false },
        other => {
            return Err(format!(
                "the .npy elements are '{other}'; expected float64 or float32 ('<f8', '>f8', '<f4', '>f4'): convert with numpy's astype(float)"
            ))
        }
    };
    let fo = value_of(dict, "fortran_order").ok_or("the .npy header has no 'fortran_order'")?;
    let fortran_order = if fo.starts_with("True") {
        true
    } else if fo.starts_with("False") {
        false
    } else {
        return Err("the .npy 'fortran_order' is neither True nor False".into());
    };
    let sh = value_of(dict, "shape").ok_or("the .npy header has no 'shape'")?;
    let sh = sh
        .strip_prefix('(')
        .ok_or("the .npy 'shape' is not a tuple")?;
    let close = sh.find(')').ok_or("the .npy 'shape' is not closed")?;
    let mut shape = Vec::new();
    for part in sh[..close].split(',') {
        let p = part.trim().trim_end_matches('L');
        if p.is_empty() {
            continue;
        }
        shape.push(
            p.parse::<usize>()
                .map_err(|_| format!("the .npy shape has '{p}'; expected whole numbers"))?,
        );
    }
    if shape.is_empty() || shape.len() > 2 {
        return Err(format!(
            "the .npy array has {} dimensions {:?}; expected 1 (the readings) or 2 (rows of columns)",
            shape.len(),
            shape
        ));
    }
    Ok(NpyHeader {
        version,
        dtype,
        fortran_order,
        shape,
        data_offset,
    })
}

/// The columns of an array read, as `f64` (NaN kept).
pub struct Columns {
    /// The value column.
    pub values: Vec<f64>,
    /// The time column, when one was asked for.
    pub times: Option<Vec<f64>>,
}

/// Read columns `value_col` and `time_col` (0-based) of the array after the
/// header. The data must be exactly `rows × columns` elements. `max_rows`
/// bounds memory. ±∞ is an error naming the element.
pub fn read_columns<R: Read>(
    r: &mut R,
    path: &Path,
    h: &NpyHeader,
    value_col: usize,
    time_col: Option<usize>,
    max_rows: usize,
) -> Result<Columns, ReadError> {
    let rows = h.rows();
    let cols = h.columns();
    if rows > max_rows {
        return Err(bad(
            path,
            format!(
                "the .npy array has {rows} rows; at most {max_rows} are read ({} GB in memory)",
                max_rows as f64 * 8.0 / 1e9
            ),
        ));
    }
    let total = rows
        .checked_mul(cols)
        .and_then(|n| n.checked_mul(h.dtype.size))
        .ok_or_else(|| bad(path, "the .npy shape is too large"))?;
    let mut values = Vec::with_capacity(rows);
    let mut times = time_col.map(|_| Vec::with_capacity(rows));
    let size = h.dtype.size;
    let mut buf = vec![0u8; CHUNK - CHUNK % (size * cols).max(1)];
    if buf.is_empty() {
        buf = vec![0u8; size * cols];
    }
    let mut done = 0usize; // bytes of data consumed
    while done < total {
        let want = buf.len().min(total - done);
        let chunk = &mut buf[..want];
        r.read_exact(chunk).map_err(|e| {
            if e.kind() == std::io::ErrorKind::UnexpectedEof {
                bad(
                    path,
                    format!(
                        "the .npy file is truncated: its header says {rows} × {cols} elements ({total} bytes of data) but the file ends sooner"
                    ),
                )
            } else {
                bad(path, format!("could not read: {e}"))
            }
        })?;
        if cols == 1 {
            // One column: decode the chunk straight into the values.
            let first = values.len();
            values.extend(chunk.chunks_exact(size).map(|b| h.dtype.decode(b)));
            if let Some(i) = values[first..].iter().position(|v| v.is_infinite()) {
                let e = first + i;
                return Err(infinite(path, e, e, 0, values[e]));
            }
            done += want;
            continue;
        }
        for (k, b) in chunk.chunks_exact(size).enumerate() {
            let e = (done / size) + k;
            let (row, col) = if h.fortran_order {
                (e % rows.max(1), e / rows.max(1))
            } else {
                (e / cols, e % cols)
            };
            let is_value = col == value_col;
            let is_time = Some(col) == time_col;
            if !is_value && !is_time {
                continue;
            }
            let v = h.dtype.decode(b);
            if v.is_infinite() {
                return Err(infinite(path, e, row, col, v));
            }
            // Row after row, or column after column: either way each
            // column's elements come in row order.
            if is_value {
                values.push(v);
            }
            if is_time {
                if let Some(t) = times.as_mut() {
                    t.push(v);
                }
            }
        }
        done += want;
    }
    let mut extra = [0u8; 1];
    match r.read(&mut extra) {
        Ok(0) => {}
        Ok(_) => {
            return Err(bad(
                path,
                format!(
                    "the .npy file has bytes after its {rows} × {cols} elements; expected exactly the array the header describes"
                ),
            ))
        }
        Err(e) => return Err(bad(path, format!("could not read: {e}"))),
    }
    Ok(Columns { values, times })
}

fn infinite(path: &Path, e: usize, row: usize, col: usize, v: f64) -> ReadError {
    bad(
        path,
        format!(
            "element {e} (row {}, column {}) is {v}; expected a finite number (NaN for a gap)",
            row + 1,
            col + 1
        ),
    )
}

/// Write a one- or two-dimensional `float64` array in `.npy` format
/// (version 1.0, little-endian, C order): `columns` of equal length become
/// the columns of the array (one column → a 1-D array).
pub fn write_f64<W: std::io::Write>(w: &mut W, columns: &[&[f64]]) -> std::io::Result<()> {
    let rows = columns.first().map_or(0, |c| c.len());
    let shape = if columns.len() == 1 {
        format!("({rows},)")
    } else {
        format!("({rows}, {})", columns.len())
    };
    let mut dict = format!("{{'descr': '<f8', 'fortran_order': False, 'shape': {shape}, }}");
    // Pad so that the data start on a multiple of 64 bytes, newline last.
    let unpadded = MAGIC.len() + 2 + 2 + dict.len() + 1;
    dict.push_str(&" ".repeat((64 - unpadded % 64) % 64));
    dict.push('\n');
    w.write_all(MAGIC)?;
    w.write_all(&[1, 0])?;
    w.write_all(&(dict.len() as u16).to_le_bytes())?;
    w.write_all(dict.as_bytes())?;
    let mut buf = Vec::with_capacity(CHUNK);
    for i in 0..rows {
        for c in columns {
            buf.extend_from_slice(&c.get(i).copied().unwrap_or(f64::NAN).to_le_bytes());
        }
        if buf.len() >= CHUNK {
            w.write_all(&buf)?;
            buf.clear();
        }
    }
    w.write_all(&buf)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn header_forms() {
        let h = parse_header(
            "{'descr': '<f8', 'fortran_order': False, 'shape': (10,), }",
            (1, 0),
            128,
        )
        .unwrap();
        assert_eq!(h.shape, vec![10]);
        assert_eq!((h.rows(), h.columns()), (10, 1));
        let h = parse_header(
            "{\"descr\": \">f4\", \"fortran_order\": True, \"shape\": (3, 2)}",
            (2, 0),
            128,
        )
        .unwrap();
        assert_eq!(
            h.dtype,
            Dtype {
                size: 4,
                little: false
            }
        );
        assert!(h.fortran_order);
        for bad in [
            "{'descr': '<i8', 'fortran_order': False, 'shape': (10,), }",
            "{'descr': '<f8', 'fortran_order': False, 'shape': (2, 3, 4), }",
            "{'descr': '<f8', 'fortran_order': False, 'shape': (), }",
            "{'descr': [('a', '<f8')], 'fortran_order': False, 'shape': (2,), }",
            "not a dict",
        ] {
            assert!(parse_header(bad, (1, 0), 0).is_err(), "{bad}");
        }
    }

    #[test]
    fn round_trip_in_memory() {
        let x = [1.5, f64::NAN, -2.0];
        let t = [0.0, 1.0, 2.0];
        let mut bytes = Vec::new();
        write_f64(&mut bytes, &[&t, &x]).unwrap();
        assert_eq!(bytes.len() % 64, 48); // 64-byte header, 48 bytes of data
        let mut r = &bytes[..];
        let h = read_header(&mut r, Path::new("a.npy")).unwrap();
        assert_eq!(h.shape, vec![3, 2]);
        let c = read_columns(&mut r, Path::new("a.npy"), &h, 1, Some(0), 100).unwrap();
        assert_eq!(c.times.unwrap(), t);
        assert_eq!(c.values[0], 1.5);
        assert!(c.values[1].is_nan());
    }
}
