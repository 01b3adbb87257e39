//! Raw binary input: a file that is nothing but a flat array of IEEE 754
//! binary64 or binary32 numbers (`--binary f64le`, a DUT entry's
//! `binary = "f64le"`), as data loggers and scripts dump them
//! (`numpy.ndarray.tofile`, `fwrite` of a `double[]`).
//!
//! There is no header, so nothing in the file says what it holds: the
//! element type and byte order come from the option, the sampling interval
//! τ0 must be given (there is no time column), and the unit and kind of the
//! readings come from `--units` / `--data` as for text. Element i is the
//! reading at t = i·τ0. NaN is a gap; ±∞ is refused naming the element. A
//! file whose length is not a whole number of elements is refused (a
//! truncated dump, or the wrong element size), and so is an empty one.
//!
//! Decoding follows IEEE Std 754-2019 §3.4 (binary64: 8 bytes, binary32:
//! 4 bytes); the byte order is the option's. binary32 values are widened to
//! `f64` exactly.

use super::ReadError;
use crate::units::UnitError;
use serde::Serialize;
use std::io::Read;
use std::path::Path;

/// Bytes read and decoded per step (a whole number of elements of either
/// size).
const CHUNK: usize = 1 << 20;

/// The element type and byte order of a raw binary file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum BinaryFormat {
    /// IEEE 754 binary64, little-endian (`f64le`).
    F64le,
    /// IEEE 754 binary32, little-endian (`f32le`).
    F32le,
    /// IEEE 754 binary64, big-endian (`f64be`).
    F64be,
    /// IEEE 754 binary32, big-endian (`f32be`).
    F32be,
}

impl BinaryFormat {
    /// Every format, in the order the help lists them.
    pub const ALL: [BinaryFormat; 4] = [
        BinaryFormat::F64le,
        BinaryFormat::F32le,
        BinaryFormat::F64be,
        BinaryFormat::F32be,
    ];

    /// The name as typed (`f64le`).
    pub fn name(self) -> &'static str {
        match self {
            BinaryFormat::F64le => "f64le",
            BinaryFormat::F32le => "f32le",
            BinaryFormat::F64be => "f64be",
            BinaryFormat::F32be => "f32be",
        }
    }

    /// Bytes per element: 8 or 4.
    pub fn size(self) -> usize {
        match self {
            BinaryFormat::F64le | BinaryFormat::F64be => 8,
            BinaryFormat::F32le | BinaryFormat::F32be => 4,
        }
    }

    /// In words, for notes (`float64, little-endian`).
    pub fn describe(self) -> &'static str {
        match self {
            BinaryFormat::F64le => "float64, little-endian",
            BinaryFormat::F32le => "float32, little-endian",
            BinaryFormat::F64be => "float64, big-endian",
            BinaryFormat::F32be => "float32, big-endian",
        }
    }

    /// Decode whole elements of `bytes` (its length a multiple of
    /// [`BinaryFormat::size`]) onto the end of `out`.
    fn decode_into(self, bytes: &[u8], out: &mut Vec<f64>) {
        match self {
            BinaryFormat::F64le => out.extend(
                bytes
                    .chunks_exact(8)
                    .map(|b| f64::from_le_bytes([b[0], b[1], b[2], b[3], b[4], b[5], b[6], b[7]])),
            ),
            BinaryFormat::F64be => out.extend(
                bytes
                    .chunks_exact(8)
                    .map(|b| f64::from_be_bytes([b[0], b[1], b[2], b[3], b[4], b[5], b[6], b[7]])),
            ),
            BinaryFormat::F32le => out.extend(
                bytes
                    .chunks_exact(4)
                    .map(|b| f32::from_le_bytes([b[0], b[1], b[2], b[3]]) as f64),
            ),
            BinaryFormat::F32be => out.extend(
                bytes
                    .chunks_exact(4)
                    .map(|b| f32::from_be_bytes([b[0], b[1], b[2], b[3]]) as f64),
            ),
        }
    }
}

impl std::fmt::Display for BinaryFormat {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}

impl std::str::FromStr for BinaryFormat {
    type Err = UnitError;

    /// `f64le`, `f32le`, `f64be` or `f32be` (any case).
    fn from_str(text: &str) -> Result<Self, UnitError> {
        let t = text.trim();
        BinaryFormat::ALL
            .into_iter()
            .find(|f| t.eq_ignore_ascii_case(f.name()))
            .ok_or_else(|| UnitError::Bad {
                text: t.to_string(),
                what: "binary element type",
                expected: "f64le, f32le, f64be or f32be (IEEE 754 float64/float32, little- or big-endian)",
            })
    }
}

/// Fill `buf` from `r` as far as the input goes; the bytes read.
fn fill<R: Read>(r: &mut R, buf: &mut [u8]) -> std::io::Result<usize> {
    let mut got = 0;
    while got < buf.len() {
        match r.read(&mut buf[got..]) {
            Ok(0) => break,
            Ok(n) => got += n,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
            Err(e) => return Err(e),
        }
    }
    Ok(got)
}

/// Read the whole input as a flat array of `format` elements, as `f64`
/// (NaN kept: a gap). At most `max_points` elements are read (memory:
/// 8 bytes each); a longer input is refused with the bound.
///
/// Refused, naming `path`: an empty input; a length that is not a multiple
/// of the element size (the byte count and the size are said); an
/// infinity (its 0-based element index and byte offset are said).
pub fn read_values<R: Read>(
    r: &mut R,
    path: &Path,
    format: BinaryFormat,
    max_points: usize,
) -> Result<Vec<f64>, ReadError> {
    let size = format.size();
    let mut buf = vec![0u8; CHUNK];
    let mut values: Vec<f64> = Vec::new();
    let mut total: u64 = 0;
    loop {
        let got =
            fill(r, &mut buf).map_err(|e| ReadError::file(path, format!("could not read: {e}")))?;
        total += got as u64;
        let whole = got - got % size;
        let first = values.len();
        if first + whole / size > max_points {
            return Err(ReadError::file(
                path,
                format!(
                    "the raw binary file holds more than {max_points} {} values; at most {max_points} are read ({} GB in memory)",
                    format.name(),
                    max_points as f64 * 8.0 / 1e9
                ),
            )
            .because(super::ReadCause::TooLarge));
        }
        format.decode_into(&buf[..whole], &mut values);
        if let Some(i) = values[first..].iter().position(|v| v.is_infinite()) {
            let e = first + i;
            return Err(ReadError::file(
                path,
                format!(
                    "element {e} (counting from 0; byte offset {}) is {}; expected a finite number (NaN for a gap)",
                    e * size,
                    values[e]
                ),
            ));
        }
        if got < buf.len() {
            // The end of the input: a partial element is a wrong length.
            if got != whole {
                return Err(ReadError::file(
                    path,
                    format!(
                        "the raw binary file has {total} bytes, not a multiple of the {size}-byte {} element; expected whole {} values (a truncated file, or the wrong --binary type?)",
                        format.name(),
                        format.describe()
                    ),
                ));
            }
            break;
        }
    }
    if total == 0 {
        return Err(ReadError::file(
            path,
            format!(
                "the raw binary file is empty; expected {} values ({size} bytes each)",
                format.describe()
            ),
        ));
    }
    Ok(values)
}

/// Write `values` as a raw binary file of `format` elements (binary32
/// rounds each value to the nearest `f32`). For tests, benchmarks and
/// scripts that make raw files.
pub fn write_values<W: std::io::Write>(
    w: &mut W,
    values: &[f64],
    format: BinaryFormat,
) -> std::io::Result<()> {
    let mut buf = Vec::with_capacity(CHUNK);
    for part in values.chunks(CHUNK / 8) {
        buf.clear();
        for &v in part {
            match format {
                BinaryFormat::F64le => buf.extend_from_slice(&v.to_le_bytes()),
                BinaryFormat::F64be => buf.extend_from_slice(&v.to_be_bytes()),
                BinaryFormat::F32le => buf.extend_from_slice(&(v as f32).to_le_bytes()),
                BinaryFormat::F32be => buf.extend_from_slice(&(v as f32).to_be_bytes()),
            }
        }
        w.write_all(&buf)?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(bytes: &[u8], f: BinaryFormat) -> Result<Vec<f64>, ReadError> {
        read_values(&mut &bytes[..], Path::new("r.bin"), f, 1000)
    }

    #[test]
    fn every_format_round_trips() {
        // Values exactly representable in binary32, so f32 round trips too.
        let x = [1.5, f64::NAN, -0.25, 3.0e-9_f32 as f64, 0.0];
        for f in BinaryFormat::ALL {
            let mut bytes = Vec::new();
            write_values(&mut bytes, &x, f).unwrap();
            assert_eq!(bytes.len(), x.len() * f.size());
            let y = read(&bytes, f).unwrap();
            assert_eq!(y.len(), x.len());
            for (a, b) in x.iter().zip(&y) {
                assert!(
                    a.to_bits() == b.to_bits() || (a.is_nan() && b.is_nan()),
                    "{f}"
                );
            }
            assert_eq!(f.name().parse::<BinaryFormat>().unwrap(), f);
        }
    }

    #[test]
    fn byte_order_is_the_options() {
        // IEEE 754: 1.0 in binary64 is 0x3FF0000000000000.
        let be = [0x3F, 0xF0, 0, 0, 0, 0, 0, 0];
        assert_eq!(read(&be, BinaryFormat::F64be).unwrap(), vec![1.0]);
        let mut le = be;
        le.reverse();
        assert_eq!(read(&le, BinaryFormat::F64le).unwrap(), vec![1.0]);
    }

    #[test]
    fn refusals() {
        let e = read(&[], BinaryFormat::F64le).unwrap_err().to_string();
        assert!(e.contains("r.bin") && e.contains("empty"), "{e}");
        let e = read(&[0u8; 12], BinaryFormat::F64le)
            .unwrap_err()
            .to_string();
        assert!(e.contains("12 bytes") && e.contains("8-byte"), "{e}");
        let mut bytes = Vec::new();
        write_values(
            &mut bytes,
            &[0.0, 1.0, f64::NEG_INFINITY],
            BinaryFormat::F32be,
        )
        .unwrap();
        let e = read(&bytes, BinaryFormat::F32be).unwrap_err().to_string();
        assert!(
            e.contains("element 2") && e.contains("byte offset 8"),
            "{e}"
        );
        let e = read(&[0u8; 8 * 1001], BinaryFormat::F64le)
            .unwrap_err()
            .to_string();
        assert!(e.contains("at most 1000"), "{e}");
        assert!("f64".parse::<BinaryFormat>().is_err());
    }

    #[test]
    fn elements_straddling_reads_are_whole() {
        // A reader that hands out 3 bytes at a time.
        struct Trickle<'a>(&'a [u8]);
        impl Read for Trickle<'_> {
            fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
                let n = self.0.len().min(3).min(buf.len());
                buf[..n].copy_from_slice(&self.0[..n]);
                self.0 = &self.0[n..];
                Ok(n)
            }
        }
        let x: Vec<f64> = (0..100).map(|i| i as f64 * 0.5).collect();
        let mut bytes = Vec::new();
        write_values(&mut bytes, &x, BinaryFormat::F64le).unwrap();
        let y = read_values(
            &mut Trickle(&bytes),
            Path::new("r.bin"),
            BinaryFormat::F64le,
            1000,
        )
        .unwrap();
        assert_eq!(x, y);
    }
}
