//! The rest of a text input in blocks, each cut at line ends into pieces
//! that are parsed on the rayon pool and then taken in file order.
//!
//! A text reader finds its layout line by line ([`super::text::LineReader`],
//! [`super::layout`]); the data rows after it — nearly all of a large file —
//! go through [`read_blocks`]: a block of about `block` bytes is read, cut
//! after its last line end (the partial line is carried into the next
//! block), cut again at line ends into pieces of about `piece` bytes, and
//! the pieces are parsed in parallel. Each piece counts its lines from 1;
//! the caller takes the pieces in order and adds the number of lines before
//! each one, so that every message names the file's own line. Only one
//! block (and its parsed pieces) is held at a time, so memory stays
//! bounded whatever the input's size, and standard input is read the same
//! way as a file.
//!
//! The line rules (the [`MAX_LINE_BYTES`] bound, trimming, UTF-8) are the
//! functions [`super::text`] uses for its own lines, so the two paths read
//! every line alike; `tests/reader.rs` runs both on the reader corpus.

use super::text::{too_long, MAX_LINE_BYTES};
use super::{ReadCause, ReadError};
use rayon::prelude::*;
use std::io::Read;
use std::path::Path;

/// How the data rows of a text input are read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RowReading {
    /// One line at a time ([`super::text::LineReader`]): the reference the
    /// block path is checked against.
    Serial,
    /// Blocks of about `block` bytes cut into pieces of about `piece` bytes
    /// parsed in parallel ([`read_blocks`]).
    Blocks {
        /// Bytes read at a time (at least 1).
        block: usize,
        /// Bytes per piece (at least 1).
        piece: usize,
    },
}

impl Default for RowReading {
    /// Blocks of 16 MiB in pieces of 1 MiB.
    fn default() -> Self {
        RowReading::Blocks {
            block: 16 << 20,
            piece: 1 << 20,
        }
    }
}

/// The raw lines of a piece (without their `\n`); a last line without a
/// line end is a line when it is not empty (as [`super::text::LineReader`]
/// counts).
#[inline]
pub fn raw_lines(piece: &[u8]) -> impl Iterator<Item = &[u8]> {
    let mut pos = 0;
    std::iter::from_fn(move || {
        if pos >= piece.len() {
            return None;
        }
        let rest = &piece[pos..];
        match memchr::memchr(b'\n', rest) {
            Some(i) => {
                pos += i + 1;
                Some(&rest[..i])
            }
            None => {
                pos = piece.len();
                Some(rest)
            }
        }
    })
}

/// Cut `bytes` (whole lines) after the first line end at or beyond every
/// multiple of `piece` bytes.
fn cut_pieces(bytes: &[u8], piece: usize) -> Vec<&[u8]> {
    let mut out = Vec::with_capacity(bytes.len() / piece.max(1) + 1);
    let mut start = 0;
    while start < bytes.len() {
        let aim = start + piece.max(1);
        let end = if aim >= bytes.len() {
            bytes.len()
        } else {
            match memchr::memchr(b'\n', &bytes[aim - 1..]) {
                Some(i) => aim + i,
                None => bytes.len(),
            }
        };
        out.push(&bytes[start..end]);
        start = end;
    }
    out
}

/// Read the rest of `reader` in blocks, parse the pieces with `parse`
/// (given the piece's bytes; it returns what it found and the number of
/// lines in the piece) and hand them in file order to `take` with the
/// number of lines before the piece. Stops at the first error `take`
/// returns. Returns the number of lines of the whole input
/// (`lines_before` plus the lines read here) and the bytes read here.
///
/// A line that no block holds whole is refused here when it passes
/// [`MAX_LINE_BYTES`]; `parse` checks the lines within a piece against the
/// same bound ([`too_long`]), so that the error names the same line as
/// the line reader's.
pub fn read_blocks<R: Read, T: Send>(
    mut reader: R,
    path: &Path,
    lines_before: u64,
    block: usize,
    piece: usize,
    parse: impl Fn(&[u8]) -> (T, u64) + Sync,
    mut take: impl FnMut(T, u64) -> Result<(), ReadError>,
) -> Result<(u64, u64), ReadError> {
    let block = block.max(1);
    let mut buf: Vec<u8> = Vec::new();
    let mut filled = 0usize;
    let mut lines = lines_before;
    let mut bytes = 0u64;
    let mut eof = false;
    loop {
        if buf.len() < filled + block {
            buf.resize(filled + block, 0);
        }
        while filled < buf.len() && !eof {
            match reader.read(&mut buf[filled..]) {
                Ok(0) => eof = true,
                Ok(n) => {
                    filled += n;
                    bytes += n as u64;
                }
                Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
                Err(e) => {
                    return Err(
                        ReadError::at(path, lines + 1, format!("could not read: {e}"))
                            .because(ReadCause::Access),
                    )
                }
            }
        }
        let cut = if eof {
            filled
        } else {
            match memchr::memrchr(b'\n', &buf[..filled]) {
                Some(i) => i + 1,
                // One line fills the block: read on unless it is too long.
                None if filled > MAX_LINE_BYTES => return Err(too_long(path, lines + 1)),
                None => continue,
            }
        };
        if cut > 0 {
            let pieces = cut_pieces(&buf[..cut], piece);
            let parsed: Vec<(T, u64)> = if pieces.len() == 1 {
                vec![parse(pieces[0])]
            } else {
                pieces.par_iter().map(|p| parse(p)).collect()
            };
            for (t, n) in parsed {
                take(t, lines)?;
                lines += n;
            }
        }
        buf.copy_within(cut..filled, 0);
        filled -= cut;
        if eof {
            return Ok((lines, bytes));
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lines_and_pieces() {
        let lines: Vec<&[u8]> = raw_lines(b"a\n\nbc\r\nd").collect();
        assert_eq!(lines, [&b"a"[..], b"", b"bc\r", b"d"]);
        assert_eq!(raw_lines(b"a\n").count(), 1);
        let p = cut_pieces(b"aa\nbbbb\nc\n", 2);
        assert_eq!(p, [&b"aa\n"[..], b"bbbb\n", b"c\n"]);
        assert_eq!(cut_pieces(b"a\nb", 100), [&b"a\nb"[..]]);
    }

    /// Every line reaches `take` once, in order, with its own number,
    /// whatever the block and piece sizes (a line longer than a block
    /// included).
    #[test]
    fn blocks_keep_order_and_line_numbers() {
        let text: String = (1..=500)
            .map(|i| format!("{}\n", "x".repeat(i % 37)))
            .collect();
        for (block, piece) in [(1, 1), (7, 3), (64, 16), (1000, 100), (1 << 20, 1 << 10)] {
            let mut seen = Vec::new();
            let (lines, bytes) = read_blocks(
                text.as_bytes(),
                Path::new("t"),
                10,
                block,
                piece,
                |p| {
                    let l: Vec<usize> = raw_lines(p).map(|l| l.len()).collect();
                    let n = l.len() as u64;
                    (l, n)
                },
                |l, before| {
                    for (i, len) in l.into_iter().enumerate() {
                        seen.push((before + 1 + i as u64, len));
                    }
                    Ok(())
                },
            )
            .unwrap();
            assert_eq!((lines, bytes), (510, text.len() as u64));
            let want: Vec<(u64, usize)> = (1..=500).map(|i| (10 + i as u64, i % 37)).collect();
            assert_eq!(seen, want, "block {block} piece {piece}");
        }
    }

    /// A line longer than the bound, read block after block without a
    /// line end, is refused naming it (a line within a block is checked by
    /// the caller's `parse`, with the same [`too_long`]).
    #[test]
    fn an_endless_line_is_refused_naming_it() {
        let text = format!("1\n2\n{}\n3\n", "9".repeat(MAX_LINE_BYTES + 10_000));
        let e = read_blocks(
            text.as_bytes(),
            Path::new("t"),
            0,
            4096,
            1024,
            |p| ((), raw_lines(p).count() as u64),
            |_, _| Ok(()),
        )
        .unwrap_err();
        assert_eq!(e.line, Some(3));
        assert!(e.to_string().contains("line longer than"), "{e}");
    }
}
