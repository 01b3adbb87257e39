//! Text inputs line by line: opening a file (or standard input), the byte
//! order mark, line ends, comment lines, the line-length bound, and reading
//! a small whole text file (masks, DUT files, JSON) within a size bound.
//!
//! Every text reader (time series in [`super::series`], L(f) tables in
//! [`super::lf_table`], masks, DUT files) goes through this module, so that
//! they accept the same files and fail with the same messages
//! (`<path>:<line>: <what was expected>`). Fields are split in
//! [`super::fields`]; where the data start (preamble, header, delimiter,
//! decimal mark) is found in [`super::layout`].
//!
//! Conventions (ours):
//! - a UTF-8 byte-order mark at the start is skipped; a UTF-16 one is
//!   refused with a clear message;
//! - a line whose first non-blank characters are `#`, `;`, `%` or `//` (or
//!   one of the `--comment` characters) is a comment; blank lines are
//!   skipped; a trailing `\r` (Windows line end) is removed;
//! - lines are at most [`MAX_LINE_BYTES`] long; content lines must be UTF-8.

use super::{ReadCause, ReadError};
use std::fs::File;
use std::io::{BufRead, BufReader, Read};
use std::path::{Path, PathBuf};

/// Longest line accepted (bytes). A longer "line" is almost certainly a
/// binary file; refusing it keeps memory bounded.
pub const MAX_LINE_BYTES: usize = 1 << 20;

/// Buffer size used when reading files (large reads are faster than 8 KiB).
const READ_BUFFER: usize = 1 << 18;

/// The UTF-8 byte-order mark.
pub const BOM: &[u8] = b"\xef\xbb\xbf";

/// Open `path` for reading; `-` is standard input.
///
/// Errors name the path: missing file, a directory, no permission.
pub fn open_input(path: &Path) -> Result<Box<dyn BufRead>, ReadError> {
    if path.as_os_str() == "-" {
        return Ok(Box::new(BufReader::with_capacity(
            READ_BUFFER,
            std::io::stdin(),
        )));
    }
    let meta = std::fs::metadata(path).map_err(|e| open_error(path, &e))?;
    if meta.is_dir() {
        return Err(
            ReadError::file(path, "is a directory; expected a text file of readings")
                .because(ReadCause::Access),
        );
    }
    let f = File::open(path).map_err(|e| open_error(path, &e))?;
    Ok(Box::new(BufReader::with_capacity(READ_BUFFER, f)))
}

fn open_error(path: &Path, e: &std::io::Error) -> ReadError {
    let what = match e.kind() {
        std::io::ErrorKind::NotFound => "no such file; expected a readable text file".to_string(),
        std::io::ErrorKind::PermissionDenied => {
            "permission denied; expected a readable text file".to_string()
        }
        _ => format!("could not open: {e}"),
    };
    ReadError::file(path, what).because(ReadCause::Access)
}

/// The first bytes of an input, without consuming them (as many as the
/// reader's buffer holds, up to `n`).
pub fn peek<R: BufRead>(reader: &mut R, n: usize) -> std::io::Result<Vec<u8>> {
    loop {
        match reader.fill_buf() {
            Ok(b) => return Ok(b[..b.len().min(n)].to_vec()),
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
            Err(e) => return Err(e),
        }
    }
}

/// Read a small text file whole (mask files, DUT files, JSON results),
/// refusing one larger than `limit` bytes before reading it all (so that
/// `/dev/zero` or a wrong file cannot fill memory). A UTF-8 byte-order mark
/// is removed; the text must be UTF-8. `what` names the kind of file in
/// messages ("mask file"). `-` is standard input.
pub fn read_small_text(path: &Path, limit: u64, what: &str) -> Result<String, ReadError> {
    let mut reader = open_input(path).map_err(|e| ReadError {
        expected: format!("{what}: {}", e.expected),
        ..e
    })?;
    let mut bytes = Vec::new();
    (&mut reader)
        .take(limit + 1)
        .read_to_end(&mut bytes)
        .map_err(|e| {
            ReadError::file(path, format!("could not read the {what}: {e}"))
                .because(ReadCause::Access)
        })?;
    if bytes.len() as u64 > limit {
        return Err(ReadError::file(
            path,
            format!(
                "larger than {}; a {what} is a short text file — is this the right file?",
                size_text(limit)
            ),
        )
        .because(ReadCause::TooLarge));
    }
    let body = bytes.strip_prefix(BOM).unwrap_or(&bytes);
    if body.starts_with(b"\xff\xfe") || body.starts_with(b"\xfe\xff") {
        return Err(utf16(path));
    }
    match std::str::from_utf8(body) {
        Ok(t) => Ok(t.to_string()),
        Err(e) => {
            let at = e.valid_up_to();
            let line = body[..at].iter().filter(|&&c| c == b'\n').count() as u64 + 1;
            Err(ReadError::at(
                path,
                line,
                format!(
                    "byte 0x{:02x} is not UTF-8 text; expected the {what} as plain text",
                    body[at]
                ),
            )
            .because(ReadCause::Encoding))
        }
    }
}

/// `1 MiB`, `64 KiB`, `512 bytes`.
pub fn size_text(bytes: u64) -> String {
    if bytes >= 1 << 20 && bytes % (1 << 20) == 0 {
        format!("{} MiB", bytes >> 20)
    } else if bytes >= 1 << 10 && bytes % (1 << 10) == 0 {
        format!("{} KiB", bytes >> 10)
    } else {
        format!("{bytes} bytes")
    }
}

fn utf16(path: &Path) -> ReadError {
    ReadError::at(
        path,
        1,
        "the file is UTF-16 text (it starts with a UTF-16 byte-order mark); expected UTF-8 or ASCII text — save it as UTF-8",
    )
    .because(ReadCause::Encoding)
}

/// Which lines are comments: those whose first non-blank characters are
/// `#`, `;`, `%` or `//`, or one of the extra characters given by the user.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct CommentStyle {
    extra: Vec<char>,
}

/// Characters that cannot start a comment: they start numbers, fields or
/// quoted fields.
const NOT_COMMENT: &str = "0123456789+-.,\"' \t";

impl CommentStyle {
    /// The default prefixes plus every character of `chars` (`--comment`).
    /// Characters that start numbers, fields or quotes are refused.
    pub fn with_extra(chars: &str) -> Result<Self, String> {
        let mut extra = Vec::new();
        for c in chars.chars() {
            if NOT_COMMENT.contains(c) || c.is_alphanumeric() {
                return Err(format!(
                    "'{c}' cannot start a comment: it can start a reading or a field; expected symbols such as ! * @"
                ));
            }
            if !extra.contains(&c) {
                extra.push(c);
            }
        }
        Ok(Self { extra })
    }

    /// True when the (trimmed, non-empty) line is a comment.
    #[inline(always)]
    pub fn is_comment(&self, line: &[u8]) -> bool {
        match line.first() {
            Some(b'#' | b';' | b'%') => true,
            Some(b'/') => line.get(1) == Some(&b'/'),
            Some(_) if !self.extra.is_empty() => std::str::from_utf8(line)
                .ok()
                .and_then(|s| s.chars().next())
                .is_some_and(|c| self.extra.contains(&c)),
            _ => false,
        }
    }

    /// The extra comment characters, as given.
    pub fn extra(&self) -> String {
        self.extra.iter().collect()
    }
}

/// Reads a text input line by line, counting lines and bytes, and handing
/// out content lines (and, when asked, comment lines).
///
/// A line that lies whole in the reader's buffer is handed out in place
/// (no copy); only a line split across two buffer fills is copied, into one
/// reused buffer. So memory stays bounded whatever the input's size.
///
/// A reader can start at any line of a larger input ([`LineReader::starting_at`]):
/// line numbers in messages are then counted from there, so that a chunk of
/// a file read on its own reports the file's own line numbers.
pub struct LineReader<R> {
    reader: R,
    buf: Vec<u8>,
    /// Bytes of the reader's buffer handed out last time, to consume first.
    pending: usize,
    path: PathBuf,
    line: u64,
    bytes: u64,
    comments: CommentStyle,
    at_start: bool,
    bom: bool,
}

/// Where the current raw line is.
enum Raw {
    /// In the reader's buffer: `len` bytes (without the line end).
    InPlace(usize),
    /// Copied into `buf`.
    Copied,
    /// End of input.
    End,
}

impl<R: BufRead> LineReader<R> {
    /// A reader over `reader`; `label` is the path used in error messages.
    pub fn new(reader: R, label: &Path) -> Self {
        Self {
            reader,
            buf: Vec::new(),
            pending: 0,
            path: label.to_path_buf(),
            line: 0,
            bytes: 0,
            comments: CommentStyle::default(),
            at_start: true,
            bom: false,
        }
    }

    /// A reader over a part of a larger input that begins at line
    /// `first_line` (1-based) of it. No byte-order mark is looked for unless
    /// `first_line` is 1.
    pub fn starting_at(reader: R, label: &Path, first_line: u64) -> Self {
        let mut r = Self::new(reader, label);
        r.line = first_line.saturating_sub(1);
        r.at_start = first_line <= 1;
        r
    }

    /// Use these comment prefixes.
    pub fn with_comments(mut self, comments: CommentStyle) -> Self {
        self.comments = comments;
        self
    }

    /// The path used in messages.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Number of the last line read (all lines, including comments and blanks).
    pub fn lines(&self) -> u64 {
        self.line
    }

    /// Number of bytes read so far.
    pub fn bytes(&self) -> u64 {
        self.bytes
    }

    /// True when the input started with a UTF-8 byte-order mark (skipped).
    pub fn had_bom(&self) -> bool {
        self.bom
    }

    /// An error on the current line.
    pub fn error(&self, expected: impl Into<String>) -> ReadError {
        ReadError::at(&self.path, self.line, expected)
    }

    fn too_long(&self) -> ReadError {
        too_long(&self.path, self.line + 1)
    }

    /// Find the next raw line: in place when it lies whole in the reader's
    /// buffer, else copied into `buf`.
    fn read_raw(&mut self) -> Result<Raw, ReadError> {
        if self.pending > 0 {
            self.reader.consume(self.pending);
            self.pending = 0;
        }
        self.buf.clear();
        let mut got_any = false;
        loop {
            let avail = match self.reader.fill_buf() {
                Ok(a) => a,
                Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
                Err(e) => {
                    return Err(ReadError::at(
                        &self.path,
                        self.line + 1,
                        format!("could not read: {e}"),
                    )
                    .because(ReadCause::Access))
                }
            };
            if avail.is_empty() {
                break;
            }
            match memchr::memchr(b'\n', avail) {
                Some(i) if !got_any => {
                    if i > MAX_LINE_BYTES {
                        return Err(self.too_long());
                    }
                    self.pending = i + 1;
                    self.bytes += i as u64 + 1;
                    self.line += 1;
                    return Ok(Raw::InPlace(i));
                }
                Some(i) => {
                    self.buf.extend_from_slice(&avail[..i]);
                    self.reader.consume(i + 1);
                    self.bytes += i as u64 + 1;
                    break;
                }
                None => {
                    got_any = true;
                    let n = avail.len();
                    self.buf.extend_from_slice(avail);
                    self.reader.consume(n);
                    self.bytes += n as u64;
                }
            }
            if self.buf.len() > MAX_LINE_BYTES {
                return Err(self.too_long());
            }
        }
        if !got_any && self.buf.is_empty() {
            return Ok(Raw::End);
        }
        if self.buf.len() > MAX_LINE_BYTES {
            return Err(self.too_long());
        }
        self.line += 1;
        Ok(Raw::Copied)
    }

    /// The next content line (trimmed; comments and blank lines skipped)
    /// with its 1-based number, or `None` at the end of the input.
    /// Non-UTF-8 bytes in a content line are an error naming the line.
    #[inline]
    pub fn next_line(&mut self) -> Result<Option<Line<'_>>, ReadError> {
        self.next(false)
    }

    /// The next non-blank line, comments included (see [`Line::comment`]).
    pub fn next_line_or_comment(&mut self) -> Result<Option<Line<'_>>, ReadError> {
        self.next(true)
    }

    #[inline(always)]
    fn next(&mut self, keep_comments: bool) -> Result<Option<Line<'_>>, ReadError> {
        let (raw, start, end, comment) = loop {
            let raw = self.read_raw()?;
            if let Raw::End = raw {
                return Ok(None);
            }
            let bytes = raw_bytes(&mut self.reader, &self.buf, &raw, &self.path, self.line)?;
            let mut from = 0;
            if self.at_start {
                self.at_start = false;
                if bytes.starts_with(BOM) {
                    from = BOM.len();
                    self.bom = true;
                } else if bytes.starts_with(b"\xff\xfe") || bytes.starts_with(b"\xfe\xff") {
                    return Err(utf16(&self.path));
                }
            }
            let (start, end) = trim_span(bytes, from);
            if start < end {
                let comment = self.comments.is_comment(&bytes[start..end]);
                if !comment || keep_comments {
                    break (raw, start, end, comment);
                }
            }
        };
        let number = self.line;
        let bytes = raw_bytes(&mut self.reader, &self.buf, &raw, &self.path, number)?;
        let text = line_text(bytes, start, end, &self.path, number)?;
        Ok(Some(Line {
            number,
            text,
            comment,
        }))
    }

    /// Give up line-by-line reading: the underlying reader positioned just
    /// after the last line handed out, the number of that line and the
    /// bytes read so far (for a reader that takes the rest in blocks,
    /// [`super::parallel`]). `None` while the first line has not been read
    /// (the byte-order mark is looked for there).
    pub fn into_rest(mut self) -> Option<(R, u64, u64)> {
        if self.at_start {
            return None;
        }
        if self.pending > 0 {
            self.reader.consume(self.pending);
            self.pending = 0;
        }
        Some((self.reader, self.line, self.bytes))
    }
}

/// The error for line `line` longer than [`MAX_LINE_BYTES`].
pub fn too_long(path: &Path, line: u64) -> ReadError {
    ReadError::at(
        path,
        line,
        format!(
            "line longer than {MAX_LINE_BYTES} bytes; expected a text file with one reading per line"
        ),
    )
    .because(ReadCause::Encoding)
}

/// The span of a raw line (without its `\n`) left after trimming ASCII
/// white space (`\r` included) from `bytes[from..]`: `start == end` for a
/// blank line.
#[inline(always)]
pub fn trim_span(bytes: &[u8], from: usize) -> (usize, usize) {
    let len = bytes.len();
    // The common line: no white space at either end.
    if from < len && !bytes[from].is_ascii_whitespace() && !bytes[len - 1].is_ascii_whitespace() {
        return (from, len);
    }
    let start = bytes[from..]
        .iter()
        .position(|b| !b.is_ascii_whitespace())
        .map_or(len, |i| i + from);
    let end = bytes
        .iter()
        .rposition(|b| !b.is_ascii_whitespace())
        .map_or(start, |i| (i + 1).max(start));
    (start, end)
}

/// The text of `bytes[start..end]` (a trimmed, non-blank line), refused
/// naming line `number` when it is not UTF-8; Unicode white space is
/// trimmed too when the line starts or ends outside ASCII.
#[inline(always)]
pub fn line_text<'a>(
    bytes: &'a [u8],
    start: usize,
    end: usize,
    path: &Path,
    number: u64,
) -> Result<&'a str, ReadError> {
    let b = &bytes[start..end];
    match std::str::from_utf8(b) {
        Ok(t) => Ok(if b[0] >= 0x80 || b[b.len() - 1] >= 0x80 {
            t.trim()
        } else {
            t
        }),
        Err(e) => {
            let at = e.valid_up_to();
            Err(ReadError::at(
                path,
                number,
                format!(
                    "byte 0x{:02x} at position {} is not UTF-8 text; expected a plain text file",
                    b[at],
                    start + at + 1
                ),
            )
            .because(ReadCause::Encoding))
        }
    }
}

/// The bytes of the current raw line (without `\n`): in the reader's
/// buffer (nothing was consumed yet, so `fill_buf` returns the same bytes
/// without reading) or in the copy buffer.
fn raw_bytes<'a, R: BufRead>(
    reader: &'a mut R,
    buf: &'a [u8],
    raw: &Raw,
    path: &Path,
    line: u64,
) -> Result<&'a [u8], ReadError> {
    match *raw {
        Raw::End | Raw::Copied => Ok(buf),
        Raw::InPlace(len) => {
            let avail = reader.fill_buf().map_err(|e| {
                ReadError::at(path, line, format!("could not read: {e}")).because(ReadCause::Access)
            })?;
            Ok(&avail[..len.min(avail.len())])
        }
    }
}

/// One non-blank line of a text input.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Line<'a> {
    /// 1-based line number in the input.
    pub number: u64,
    /// The line, trimmed, without its line end.
    pub text: &'a str,
    /// True for a comment line (only handed out by
    /// [`LineReader::next_line_or_comment`]).
    pub comment: bool,
}

/// An error in one field (1-based column) of one line.
pub fn field_error(
    path: &Path,
    line: u64,
    column: usize,
    expected: impl Into<String>,
) -> ReadError {
    ReadError {
        cause: super::ReadCause::Content,
        path: path.to_path_buf(),
        line: Some(line),
        column: Some(column),
        expected: expected.into(),
    }
}

/// The message for a field that should have been a number.
pub fn not_a_number(field: &str, column: usize) -> String {
    format!(
        "field {column} is '{}': expected a number (or NaN, - or an empty field for a missing value)",
        super::fields::shorten(field)
    )
}

/// The message for `"1,288"` in a comma-separated file.
pub fn ambiguous_comma(field: &str, column: usize) -> String {
    format!(
        "field {column} is '{}': the comma could be a decimal mark ({}) or a thousands separator ({}); give --decimal-comma if it is the decimal mark, or write the number without grouping",
        super::fields::shorten(field),
        field.replace(',', "."),
        field.replace(',', "")
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lines_and_comments() {
        let data = b"# c\n\n 1 \r\n;x\n2\n% y\n// z\n3";
        let mut r = LineReader::new(&data[..], Path::new("t"));
        let l = r.next_line().unwrap().unwrap();
        assert_eq!((l.number, l.text), (3, "1"));
        assert_eq!(r.lines(), 3);
        assert_eq!(r.next_line().unwrap().unwrap().text, "2");
        assert_eq!(r.next_line().unwrap().unwrap().number, 8);
        assert_eq!(r.lines(), 8);
        assert_eq!(r.next_line().unwrap(), None);
        assert_eq!(r.bytes(), data.len() as u64);
        let mut r = LineReader::new(&data[..], Path::new("t"));
        let l = r.next_line_or_comment().unwrap().unwrap();
        assert!(l.comment && l.text == "# c");
    }

    #[test]
    fn extra_comment_characters() {
        let c = CommentStyle::with_extra("!*").unwrap();
        let mut r = LineReader::new(&b"! a\n* b\n1\n"[..], Path::new("t")).with_comments(c);
        assert_eq!(r.next_line().unwrap().unwrap().number, 3);
        assert!(CommentStyle::with_extra("-").is_err());
        assert!(CommentStyle::with_extra("x").is_err());
    }

    #[test]
    fn byte_order_marks() {
        let mut r = LineReader::new(&b"\xef\xbb\xbf1.5\n2\n"[..], Path::new("t"));
        assert_eq!(r.next_line().unwrap().unwrap().text, "1.5");
        assert!(r.had_bom());
        let mut r = LineReader::new(&b"\xff\xfe1\x002\x00"[..], Path::new("t"));
        let e = r.next_line().unwrap_err();
        assert!(e.to_string().contains("UTF-16"), "{e}");
        // A chunk that starts later in a file looks for no mark: the
        // character stays in the line (and will not read as a number).
        let mut r = LineReader::starting_at(&b"\xef\xbb\xbf1\n"[..], Path::new("t"), 10);
        let l = r.next_line().unwrap().unwrap();
        assert_eq!((l.number, l.text), (10, "\u{feff}1"));
    }

    #[test]
    fn line_numbers_from_an_offset() {
        let mut r = LineReader::starting_at(&b"1\n\n3\n"[..], Path::new("t"), 41);
        assert_eq!(r.next_line().unwrap().unwrap().number, 41);
        assert_eq!(r.next_line().unwrap().unwrap().number, 43);
    }

    #[test]
    fn non_utf8_names_line() {
        let data = b"1\n2\n\xff\n";
        let mut r = LineReader::new(&data[..], Path::new("t"));
        r.next_line().unwrap();
        r.next_line().unwrap();
        let e = r.next_line().unwrap_err();
        assert_eq!(e.line, Some(3));
        assert!(e.to_string().contains("UTF-8"), "{e}");
    }

    #[test]
    fn small_text_is_bounded() {
        let d = tempfile::tempdir().unwrap();
        let p = d.path().join("m.txt");
        std::fs::write(&p, b"\xef\xbb\xbfname x\n").unwrap();
        assert_eq!(read_small_text(&p, 100, "mask file").unwrap(), "name x\n");
        std::fs::write(&p, vec![b'a'; 101]).unwrap();
        let e = read_small_text(&p, 100, "mask file").unwrap_err();
        assert!(e.to_string().contains("larger than 100 bytes"), "{e}");
        assert_eq!(size_text(1 << 20), "1 MiB");
        #[cfg(unix)]
        {
            let e = read_small_text(Path::new("/dev/zero"), 1 << 20, "mask file").unwrap_err();
            assert!(e.to_string().contains("larger than 1 MiB"), "{e}");
        }
    }
}
