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
//! each one, so that every message names the file's own line. Reading,
//! parsing and taking overlap (block k + 1 is read and block k − 1 taken
//! while block k is parsed), with the outcome of doing them one after the
//! other. At most two blocks (and the parsed pieces of two) are held at a
//! time, so memory stays bounded whatever the input's size, and standard
//! input is read the same way as a file.
//!
//! The line rules (the [`MAX_LINE_BYTES`] bound, trimming, UTF-8) are the
//! functions [`super::text`] uses for its own lines, so the two paths read
//! every line alike; `tests/reader.rs` runs both on the reader corpus and
//! on seeded random files.

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

/// Why the reading of blocks stopped before the end of the input; worded
/// only once every block before it is taken, so that the line it names
/// counts them.
enum Stop {
    /// The reader failed.
    Io(std::io::Error),
    /// A line longer than [`MAX_LINE_BYTES`] fills the buffer.
    TooLong,
}

/// Read into `buf` after its first `*filled` bytes until `want` more are
/// there or the input ends (`*eof`), counting them into `*bytes`.
fn fill<R: Read>(
    reader: &mut R,
    buf: &mut Vec<u8>,
    filled: &mut usize,
    want: usize,
    eof: &mut bool,
    bytes: &mut u64,
) -> Result<(), Stop> {
    if buf.len() < *filled + want {
        buf.resize(*filled + want, 0);
    }
    while *filled < buf.len() && !*eof {
        match reader.read(&mut buf[*filled..]) {
            Ok(0) => *eof = true,
            Ok(n) => {
                *filled += n;
                *bytes += n as u64;
            }
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
            Err(e) => return Err(Stop::Io(e)),
        }
    }
    Ok(())
}

/// Read the rest of `reader` in blocks, parse the pieces with `parse`
/// (given the piece's bytes; it returns what it found and the number of
/// lines in the piece) and hand them in file order to `take` with the
/// number of lines before the piece. Stops at the first error `take`
/// returns. Returns the number of lines of the whole input
/// (`lines_before` plus the lines read here) and the bytes read here.
///
/// The three steps overlap: while the pool parses block k, this thread
/// hands the pieces of block k − 1 to `take` and then reads block k + 1
/// into a second buffer (the partial line at the end of block k is moved
/// there first). The outcome is the one of doing them one after the
/// other: `take` sees every piece once, in order, and stops the reading
/// at its first error; a read that fails, or a line too long, is reported
/// only after every block before it was taken, naming the line after the
/// last one taken.
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
    let mut lines = lines_before;
    let mut bytes = 0u64;
    let mut eof = false;
    // The block to parse next, and the buffer the one after it is read into.
    let (mut cur, mut next): (Vec<u8>, Vec<u8>) = (Vec::new(), Vec::new());
    let mut filled = 0usize;
    let mut stop: Option<Stop> = None;
    // The parsed pieces of the block before, not yet taken.
    let mut pending: Option<Vec<(T, u64)>> = None;
    let mut take_all = |parsed: Vec<(T, u64)>, lines: &mut u64| -> Result<(), ReadError> {
        for (t, n) in parsed {
            take(t, *lines)?;
            *lines += n;
        }
        Ok(())
    };
    loop {
        // The whole lines of `cur`; while it holds no line end (at first,
        // nothing), read on.
        let mut cut = 0;
        while stop.is_none() {
            if eof {
                cut = filled;
                break;
            }
            if let Some(i) = memchr::memrchr(b'\n', &cur[..filled]) {
                cut = i + 1;
                break;
            }
            if filled > MAX_LINE_BYTES {
                stop = Some(Stop::TooLong);
                break;
            }
            stop = fill(
                &mut reader,
                &mut cur,
                &mut filled,
                block,
                &mut eof,
                &mut bytes,
            )
            .err();
        }
        // The partial line moves to `next`, which is read into while
        // `cur[..cut]` is parsed and the block before it taken.
        let mut next_filled = filled - cut;
        if next.len() < next_filled {
            next.resize(next_filled, 0);
        }
        next[..next_filled].copy_from_slice(&cur[cut..filled]);
        let mut parsed: Option<Vec<(T, u64)>> = None;
        let mut taken = Ok(());
        let parse = &parse;
        let whole = &cur[..cut];
        rayon::in_place_scope(|s| {
            if cut > 0 {
                let out = &mut parsed;
                s.spawn(move |_| {
                    let pieces = cut_pieces(whole, piece);
                    *out = Some(if pieces.len() == 1 {
                        vec![parse(pieces[0])]
                    } else {
                        pieces.par_iter().map(|p| parse(p)).collect()
                    });
                });
            }
            if let Some(p) = pending.take() {
                taken = take_all(p, &mut lines);
            }
            if taken.is_ok() && stop.is_none() && !eof {
                stop = fill(
                    &mut reader,
                    &mut next,
                    &mut next_filled,
                    block,
                    &mut eof,
                    &mut bytes,
                )
                .err();
            }
        });
        taken?;
        pending = parsed;
        if stop.is_some() || (eof && next_filled == 0) {
            if let Some(p) = pending.take() {
                take_all(p, &mut lines)?;
            }
            return match stop {
                None => Ok((lines, bytes)),
                Some(Stop::TooLong) => Err(too_long(path, lines + 1)),
                Some(Stop::Io(e)) => {
                    Err(
                        ReadError::at(path, lines + 1, format!("could not read: {e}"))
                            .because(ReadCause::Access),
                    )
                }
            };
        }
        std::mem::swap(&mut cur, &mut next);
        filled = next_filled;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The raw lines of a piece (without their `\n`); a last line without a
    /// line end is a line when it is not empty (as [`super::text::LineReader`]
    /// counts).
    fn raw_lines(piece: &[u8]) -> impl Iterator<Item = &[u8]> {
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

    #[test]
    fn lines_and_pieces() {
        let lines: Vec<&[u8]> = raw_lines(b"a\n\nbc\r\nd").collect();
        assert_eq!(lines, [&b"a"[..], b"", b"bc\r", b"d"]);
        assert_eq!(raw_lines(b"a\n").count(), 1);
        let p = cut_pieces(b"aa\nbbbb\nc\n", 2);
        assert_eq!(p, [&b"aa\n"[..], b"bbbb\n", b"c\n"]);
        assert_eq!(cut_pieces(b"a\nb", 100), [&b"a\nb"[..]]);
    }

    /// Every line `read_blocks` hands to `take`, with the number it gives
    /// it, and the outcome.
    #[allow(clippy::type_complexity)]
    fn every_line<R: Read>(
        reader: R,
        lines_before: u64,
        block: usize,
        piece: usize,
    ) -> (Result<(u64, u64), ReadError>, Vec<(u64, Vec<u8>)>) {
        let mut seen = Vec::new();
        let outcome = read_blocks(
            reader,
            Path::new("t"),
            lines_before,
            block,
            piece,
            |p| {
                let l: Vec<Vec<u8>> = raw_lines(p).map(|l| l.to_vec()).collect();
                let n = l.len() as u64;
                (l, n)
            },
            |l, before| {
                for (i, line) in l.into_iter().enumerate() {
                    seen.push((before + 1 + i as u64, line));
                }
                Ok(())
            },
        );
        (outcome, seen)
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
            let (outcome, lines) = every_line(text.as_bytes(), 10, block, piece);
            assert_eq!(outcome.unwrap(), (510, text.len() as u64));
            let seen: Vec<(u64, usize)> = lines.into_iter().map(|(n, l)| (n, l.len())).collect();
            let want: Vec<(u64, usize)> = (1..=500).map(|i| (10 + i as u64, i % 37)).collect();
            assert_eq!(seen, want, "block {block} piece {piece}");
        }
    }

    /// Reads `text` and fails once `fail_at` bytes were handed out.
    struct FailingReader<'a> {
        text: &'a [u8],
        at: usize,
        fail_at: usize,
    }

    impl Read for FailingReader<'_> {
        fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
            if self.at >= self.fail_at {
                return Err(std::io::Error::other("device gone"));
            }
            let n = buf
                .len()
                .min(self.fail_at - self.at)
                .min(self.text.len() - self.at);
            buf[..n].copy_from_slice(&self.text[self.at..self.at + n]);
            self.at += n;
            Ok(n)
        }
    }

    /// A read that fails is reported after every line before it was taken,
    /// in order, naming the line after the last one taken; an error of
    /// `take` comes first when its line is earlier (the reading overlaps
    /// the taking, the outcome does not show it).
    #[test]
    fn a_failing_read_names_the_line_after_those_taken() {
        let text: String = (1..=1000).map(|i| format!("{i}\n")).collect();
        for (block, piece) in [(1, 1), (7, 3), (64, 16), (1000, 100), (1 << 20, 1 << 10)] {
            for fail_at in [0, 1, 5, 500, 1001, 2500] {
                let reader = FailingReader {
                    text: text.as_bytes(),
                    at: 0,
                    fail_at,
                };
                let (outcome, seen) = every_line(reader, 0, block, piece);
                let e = outcome.unwrap_err();
                let taken = seen.len() as u64;
                assert_eq!(e.line, Some(taken + 1), "block {block} fail at {fail_at}");
                assert!(e.to_string().contains("device gone"), "{e}");
                // Only whole lines read before the failure, all of them in
                // order, at most a block's worth short of the failure.
                for (k, (line, bytes)) in seen.iter().enumerate() {
                    assert_eq!(*line, k as u64 + 1);
                    assert_eq!(bytes, format!("{}", k + 1).as_bytes());
                }
                // Each read asks for at most a block, so every line that
                // ends more than a block before the failure was taken.
                let lines_in = |n: usize| {
                    text.as_bytes()[..n.min(text.len())]
                        .iter()
                        .filter(|&&b| b == b'\n')
                        .count() as u64
                };
                let surely = lines_in((fail_at + 1).saturating_sub(block));
                assert!(
                    surely <= taken && taken <= lines_in(fail_at),
                    "block {block} fail at {fail_at}: {taken} taken, {surely} sure"
                );
            }
            // `take` refuses line 120 while the failure lies in a later
            // block (while that block is read, line 120's is taken).
            let end_120 = text.find("\n120\n").unwrap() + 5;
            for fail_at in (end_120 + block..end_120 + 3 * block).step_by(block.div_ceil(4)) {
                let reader = FailingReader {
                    text: text.as_bytes(),
                    at: 0,
                    fail_at,
                };
                let mut refused = false;
                let e = read_blocks(
                    reader,
                    Path::new("t"),
                    0,
                    block,
                    piece,
                    |p| (p.to_vec(), raw_lines(p).count() as u64),
                    |p, before| {
                        // Nothing is taken after the refusal.
                        assert!(!refused, "a piece taken after the refusal");
                        let n = raw_lines(&p).count() as u64;
                        if before < 120 && before + n >= 120 {
                            refused = true;
                            return Err(ReadError::at(Path::new("t"), 120, "refused"));
                        }
                        Ok(())
                    },
                )
                .unwrap_err();
                assert_eq!(e.line, Some(120), "block {block} fail at {fail_at}");
                assert!(e.to_string().contains("refused"), "{e}");
            }
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
