//! Plain-text tables: opening an input (file or standard input), reading it
//! line by line into one reused buffer, skipping `#` comments and blank
//! lines, sniffing the field delimiter, splitting fields and classifying them
//! as numbers, missing values or text, and recognising one header line.
//!
//! Every reader of text input (time series in [`super::series`], L(f) tables)
//! goes through this module, so that they accept the same files and fail with
//! the same messages (`<path>:<line>: <what was expected>`).
//!
//! Conventions accepted here (ours):
//! - a line whose first non-blank character is `#` is a comment; blank lines
//!   are skipped; a trailing `\r` (Windows line end) is removed;
//! - fields are separated by one of: tab, `;`, `,`, or runs of spaces/tabs
//!   ([`Delimiter::sniff`] picks one from the first data line);
//! - a field may be wrapped in double quotes, which are removed;
//! - `NaN` (any case), an empty field and `-` mean "missing" (a gap);
//! - a number may be written with one decimal comma (`2,5`) when the fields
//!   are separated by `;`, tabs or spaces;
//! - with the whitespace delimiter, an ISO-8601 date followed by a time of
//!   day (`2024-05-01 12:00:00`) is one field;
//! - lines are at most [`MAX_LINE_BYTES`] long; content lines (not comments)
//!   must be UTF-8.

use super::ReadError;
use std::fs::File;
use std::io::{BufRead, BufReader};
use std::path::{Path, PathBuf};

/// Longest line accepted (bytes). A longer "line" is almost certainly a
/// binary file; refusing it keeps memory bounded.
pub const MAX_LINE_BYTES: usize = 1 << 20;

/// Buffer size used when reading files (large reads are faster than 8 KiB).
const READ_BUFFER: usize = 1 << 18;

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
        return Err(ReadError::file(
            path,
            "is a directory; expected a text file of readings",
        ));
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
    ReadError::file(path, what)
}

/// Reads a text input line by line, counting lines and bytes, and handing
/// out only content lines (not comments or blanks).
///
/// A line that lies whole in the reader's buffer is handed out in place
/// (no copy); only a line split across two buffer fills is copied, into one
/// reused buffer. So memory stays bounded whatever the input's size.
pub struct LineReader<R> {
    reader: R,
    buf: Vec<u8>,
    /// Bytes of the reader's buffer handed out last time, to consume first.
    pending: usize,
    path: PathBuf,
    line: u64,
    bytes: u64,
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
        }
    }

    /// The path used in messages.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Number of lines read so far (all lines, including comments and blanks).
    pub fn lines(&self) -> u64 {
        self.line
    }

    /// Number of bytes read so far.
    pub fn bytes(&self) -> u64 {
        self.bytes
    }

    /// An error on the current line.
    pub fn error(&self, expected: impl Into<String>) -> ReadError {
        ReadError::at(&self.path, self.line, expected)
    }

    fn too_long(&self) -> ReadError {
        ReadError::at(
            &self.path,
            self.line + 1,
            format!(
                "line longer than {MAX_LINE_BYTES} bytes; expected a text file with one reading per line"
            ),
        )
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
                    ))
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
    pub fn next_line(&mut self) -> Result<Option<Line<'_>>, ReadError> {
        let (raw, start, end) = loop {
            let raw = self.read_raw()?;
            if let Raw::End = raw {
                return Ok(None);
            }
            let bytes = raw_bytes(&mut self.reader, &self.buf, &raw, &self.path, self.line)?;
            let start = bytes
                .iter()
                .position(|b| !b.is_ascii_whitespace())
                .unwrap_or(bytes.len());
            let end = bytes
                .iter()
                .rposition(|b| !b.is_ascii_whitespace())
                .map_or(start, |i| i + 1);
            if start < end && bytes[start] != b'#' {
                break (raw, start, end);
            }
        };
        let number = self.line;
        let bytes = &raw_bytes(&mut self.reader, &self.buf, &raw, &self.path, number)?[start..end];
        match std::str::from_utf8(bytes) {
            Ok(t) => {
                // Already trimmed of ASCII white space; trim Unicode white
                // space only when the line starts or ends outside ASCII.
                let text = if bytes[0] >= 0x80 || bytes[bytes.len() - 1] >= 0x80 {
                    t.trim()
                } else {
                    t
                };
                Ok(Some(Line { number, text }))
            }
            Err(e) => {
                let at = e.valid_up_to();
                Err(ReadError::at(
                    &self.path,
                    number,
                    format!(
                        "byte 0x{:02x} at position {} is not UTF-8 text; expected a plain text file",
                        bytes[at],
                        start + at + 1
                    ),
                ))
            }
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
            let avail = reader
                .fill_buf()
                .map_err(|e| ReadError::at(path, line, format!("could not read: {e}")))?;
            Ok(&avail[..len.min(avail.len())])
        }
    }
}

/// One content line of a text input.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Line<'a> {
    /// 1-based line number in the input.
    pub number: u64,
    /// The line, trimmed, without its line end.
    pub text: &'a str,
}

/// An error in one field (1-based column) of one line.
pub fn field_error(
    path: &Path,
    line: u64,
    column: usize,
    expected: impl Into<String>,
) -> ReadError {
    ReadError {
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
        shorten(field)
    )
}

/// How the fields of a line are separated.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Delimiter {
    /// `,`
    Comma,
    /// `;`
    Semicolon,
    /// a tab character
    Tab,
    /// one or more spaces or tabs
    Whitespace,
}

impl Delimiter {
    /// Pick the delimiter of a data line: `;` if present; else a tab if the
    /// line has tabs and no spaces; else `,` if present; else runs of
    /// spaces and tabs. `;` and tab come before `,` so that files written
    /// with a decimal comma (`1,5;2,25` or `1,5<tab>2,25`) are split
    /// correctly (see [`parse_finite`] for the decimal comma).
    pub fn sniff(line: &str) -> Self {
        if line.contains(';') {
            Delimiter::Semicolon
        } else if line.contains('\t') && !line.contains(' ') {
            Delimiter::Tab
        } else if line.contains(',') {
            Delimiter::Comma
        } else {
            Delimiter::Whitespace
        }
    }

    /// The delimiter's plain name (`comma`, `semicolon`, `tab`, `spaces`).
    pub fn name(self) -> &'static str {
        match self {
            Delimiter::Comma => "comma",
            Delimiter::Semicolon => "semicolon",
            Delimiter::Tab => "tab",
            Delimiter::Whitespace => "spaces",
        }
    }

    /// Iterate over the fields of `line` (each trimmed, quotes removed).
    pub fn fields(self, line: &str) -> Fields<'_> {
        Fields {
            rest: Some(line),
            delim: self,
        }
    }

    /// Split `line` into fields, dropping trailing empty fields produced by
    /// a line that ends with the delimiter.
    pub fn split_trimmed(self, line: &str) -> Vec<&str> {
        let mut v: Vec<&str> = self.fields(line).collect();
        while v.len() > 1 && v.last().is_some_and(|f| f.is_empty()) {
            v.pop();
        }
        v
    }
}

/// Iterator over the fields of one line; see [`Delimiter::fields`].
pub struct Fields<'a> {
    rest: Option<&'a str>,
    delim: Delimiter,
}

fn unquote(f: &str) -> &str {
    let f = f.trim_ascii();
    if f.len() >= 2 && f.starts_with('"') && f.ends_with('"') {
        f[1..f.len() - 1].trim_ascii()
    } else {
        f
    }
}

fn is_date(s: &str) -> bool {
    is_date_bytes(s.as_bytes())
}

fn is_date_bytes(b: &[u8]) -> bool {
    b.len() == 10
        && b[4] == b'-'
        && b[7] == b'-'
        && b.iter()
            .enumerate()
            .all(|(i, c)| i == 4 || i == 7 || c.is_ascii_digit())
}

fn is_time_of_day(s: &str) -> bool {
    let b = s.as_bytes();
    b.len() >= 5 && b[0].is_ascii_digit() && b[1].is_ascii_digit() && b[2] == b':'
}

impl<'a> Iterator for Fields<'a> {
    type Item = &'a str;

    fn next(&mut self) -> Option<&'a str> {
        let rest = self.rest?;
        let sep = match self.delim {
            Delimiter::Comma => b',',
            Delimiter::Semicolon => b';',
            Delimiter::Tab => b'\t',
            Delimiter::Whitespace => {
                let r = rest.trim_start_matches([' ', '\t']);
                if r.is_empty() {
                    self.rest = None;
                    return None;
                }
                let end = memchr::memchr2(b' ', b'\t', r.as_bytes()).unwrap_or(r.len());
                let mut tok = &r[..end];
                let mut after = &r[end..];
                // A date and a time of day separated by spaces are one field.
                if is_date(tok) {
                    let a = after.trim_start_matches([' ', '\t']);
                    let e2 = a.find([' ', '\t']).unwrap_or(a.len());
                    if is_time_of_day(&a[..e2]) {
                        let skipped = after.len() - a.len();
                        tok = &r[..end + skipped + e2];
                        after = &a[e2..];
                    }
                }
                self.rest = if after.is_empty() { None } else { Some(after) };
                return Some(unquote(tok));
            }
        };
        match memchr::memchr(sep, rest.as_bytes()) {
            Some(i) => {
                self.rest = Some(&rest[i + 1..]);
                Some(unquote(&rest[..i]))
            }
            None => {
                self.rest = None;
                Some(unquote(rest))
            }
        }
    }
}

/// What a field holds.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Field {
    /// A finite number.
    Number(f64),
    /// A missing value: `NaN`, empty, or `-`.
    Missing,
    /// Anything else (text, `inf`, a date).
    Text,
}

/// True for the spellings of a missing value: empty, `-`, `NaN` (any case).
pub fn is_missing(field: &str) -> bool {
    field.is_empty() || field == "-" || field.eq_ignore_ascii_case("nan")
}

/// Classify one (trimmed) field.
pub fn classify(field: &str) -> Field {
    if is_missing(field) {
        return Field::Missing;
    }
    match parse_finite(field) {
        Some(v) => Field::Number(v),
        None => Field::Text,
    }
}

/// Parse a finite number (Rust `f64` grammar: `1`, `-2.5`, `1e-9`, `.5`);
/// `None` for anything else, including `inf` and `NaN`. A field with one
/// decimal comma and no point (`2,5e-9`, as some spreadsheets write with
/// `;` or tab between fields) is read as the same number with a point.
#[inline]
pub fn parse_finite(field: &str) -> Option<f64> {
    // Only digits, signs, '.', 'e'/'E' may appear: refuse "inf", "infinity".
    let b = field.as_bytes();
    let first = *b.first()?;
    if !(first.is_ascii_digit() || first == b'-' || first == b'+' || first == b'.') {
        return None;
    }
    match field.parse::<f64>() {
        Ok(v) if v.is_finite() => Some(v),
        Ok(_) => None,
        Err(_) => decimal_comma(field),
    }
}

#[cold]
fn decimal_comma(field: &str) -> Option<f64> {
    if field.bytes().filter(|&c| c == b',').count() != 1 || field.contains('.') {
        return None;
    }
    match field.replace(',', ".").parse::<f64>() {
        Ok(v) if v.is_finite() => Some(v),
        _ => None,
    }
}

/// Parse a field that must be a number or a missing value (`None`).
/// The error names the path, line and field and says what was expected.
pub fn number_or_missing(
    path: &Path,
    line: u64,
    field: &str,
    column: usize,
) -> Result<Option<f64>, ReadError> {
    if is_missing(field) {
        return Ok(None);
    }
    parse_finite(field)
        .map(Some)
        .ok_or_else(|| field_error(path, line, column, not_a_number(field, column)))
}

/// Shorten a field for an error message (at most 40 characters).
pub fn shorten(field: &str) -> String {
    if field.chars().count() <= 40 {
        field.to_string()
    } else {
        let s: String = field.chars().take(37).collect();
        format!("{s}...")
    }
}

/// True when a line is a header: it has at least one field that is text
/// and no field that is a number or an ISO-8601 date-time.
pub fn is_header(fields: &[&str]) -> bool {
    let mut text = false;
    for f in fields {
        match classify(f) {
            Field::Number(_) => return false,
            Field::Missing => {}
            Field::Text => {
                if looks_like_datetime(f) {
                    return false;
                }
                text = true;
            }
        }
    }
    text
}

/// A quick test for an ISO-8601 date or date-time (`YYYY-MM-DD…`).
pub fn looks_like_datetime(field: &str) -> bool {
    field.len() >= 10 && is_date_bytes(&field.as_bytes()[..10])
}

/// A small numeric table read whole: the optional header, the delimiter,
/// and the rows with their line numbers. For files of modest size (L(f)
/// tables, DUT lists); time series stream through [`super::series`].
#[derive(Debug, Clone, PartialEq)]
pub struct Table {
    /// The header fields, when the first content line was a header.
    pub header: Option<Vec<String>>,
    /// The delimiter found in the first data line.
    pub delimiter: Delimiter,
    /// The data rows.
    pub rows: Vec<TableRow>,
    /// Lines read in all.
    pub lines: u64,
}

/// One row of a [`Table`].
#[derive(Debug, Clone, PartialEq)]
pub struct TableRow {
    /// 1-based line number in the file.
    pub line: u64,
    /// The fields: `Some(number)` or `None` for a missing value.
    pub fields: Vec<Option<f64>>,
}

/// [`read_table`] on the file at `path` (`-` = standard input).
pub fn read_table_file(path: &Path) -> Result<Table, ReadError> {
    read_table(open_input(path)?, path)
}

/// Read a whole numeric table: comments and blank lines skipped, one header
/// line recognised, the delimiter sniffed on the first data line, every
/// field a number or a missing value. Errors name the line and field. An
/// input with no data row is an error.
pub fn read_table<R: BufRead>(reader: R, label: &Path) -> Result<Table, ReadError> {
    let mut lines = LineReader::new(reader, label);
    let mut header_raw: Option<String> = None;
    let mut header: Option<Vec<String>> = None;
    let mut delimiter: Option<Delimiter> = None;
    let mut rows = Vec::new();
    while let Some(line) = lines.next_line()? {
        let d = match delimiter {
            Some(d) => d,
            None => {
                let d = Delimiter::sniff(line.text);
                if header_raw.is_none() && is_header(&d.split_trimmed(line.text)) {
                    header_raw = Some(line.text.to_string());
                    continue;
                }
                delimiter = Some(d);
                header = header_raw
                    .as_deref()
                    .map(|h| d.split_trimmed(h).iter().map(|s| s.to_string()).collect());
                d
            }
        };
        let mut fields = Vec::new();
        for (i, f) in d.split_trimmed(line.text).iter().enumerate() {
            fields.push(number_or_missing(label, line.number, f, i + 1)?);
        }
        rows.push(TableRow {
            line: line.number,
            fields,
        });
    }
    if rows.is_empty() {
        let what = if lines.bytes() == 0 {
            "the file is empty; expected lines of numbers".to_string()
        } else if header_raw.is_some() {
            "only a header line and no data; expected lines of numbers after it".to_string()
        } else {
            "no data lines (only comments or blank lines); expected lines of numbers".to_string()
        };
        return Err(ReadError::file(label, what));
    }
    Ok(Table {
        header,
        delimiter: delimiter.unwrap_or(Delimiter::Whitespace),
        rows,
        lines: lines.lines(),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sniffing() {
        assert_eq!(Delimiter::sniff("1,2"), Delimiter::Comma);
        assert_eq!(Delimiter::sniff("1;2"), Delimiter::Semicolon);
        assert_eq!(Delimiter::sniff("1\t2"), Delimiter::Tab);
        assert_eq!(Delimiter::sniff("1   2"), Delimiter::Whitespace);
        assert_eq!(Delimiter::sniff("1.5"), Delimiter::Whitespace);
        assert_eq!(Delimiter::sniff("1,5\t2,5"), Delimiter::Tab);
        assert_eq!(Delimiter::sniff("1,5;2,5"), Delimiter::Semicolon);
        assert_eq!(Delimiter::sniff("1.5, 2.5"), Delimiter::Comma);
    }

    #[test]
    fn splitting() {
        let f: Vec<_> = Delimiter::Comma.fields(" 1 , \"2\",,3").collect();
        assert_eq!(f, vec!["1", "2", "", "3"]);
        let f: Vec<_> = Delimiter::Whitespace.fields("  1   2\t 3 ").collect();
        assert_eq!(f, vec!["1", "2", "3"]);
        let f: Vec<_> = Delimiter::Whitespace
            .fields("2024-05-01 12:00:00.5  1e-9")
            .collect();
        assert_eq!(f, vec!["2024-05-01 12:00:00.5", "1e-9"]);
        assert_eq!(Delimiter::Comma.split_trimmed("1,2,"), vec!["1", "2"]);
    }

    #[test]
    fn classifying() {
        assert_eq!(classify("1e-9"), Field::Number(1e-9));
        assert_eq!(classify("NaN"), Field::Missing);
        assert_eq!(classify("-"), Field::Missing);
        assert_eq!(classify(""), Field::Missing);
        assert_eq!(classify("inf"), Field::Text);
        assert_eq!(classify("1e999"), Field::Text);
        assert_eq!(classify("phase"), Field::Text);
        assert_eq!(classify("2,5e-9"), Field::Number(2.5e-9));
        assert_eq!(classify("1,000,000"), Field::Text);
        assert_eq!(classify("1,5.2"), Field::Text);
        assert!(is_header(&["time", "phase"]));
        assert!(!is_header(&["1", "phase"]));
        assert!(!is_header(&["2024-05-01T00:00:00Z", "x"]));
        // Multi-byte characters near the tenth byte are not a date (no panic).
        assert!(!looks_like_datetime("2024-05-0éé"));
        assert!(is_header(&["ééééééééé"]));
    }

    #[test]
    fn lines_and_comments() {
        let data = b"# c\n\n 1 \r\n#x\n2\n3";
        let mut r = LineReader::new(&data[..], Path::new("t"));
        let l = r.next_line().unwrap().unwrap();
        assert_eq!((l.number, l.text), (3, "1"));
        assert_eq!(r.lines(), 3);
        assert_eq!(r.next_line().unwrap().unwrap().text, "2");
        assert_eq!(r.next_line().unwrap().unwrap().number, 6);
        assert_eq!(r.lines(), 6);
        assert_eq!(r.next_line().unwrap(), None);
        assert_eq!(r.bytes(), data.len() as u64);
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
    fn table() {
        let t = read_table(&b"f;L\n1;-80\n10;-100\n"[..], Path::new("t")).unwrap();
        assert_eq!(t.header, Some(vec!["f".to_string(), "L".to_string()]));
        assert_eq!(t.delimiter, Delimiter::Semicolon);
        assert_eq!(t.rows[1].fields, vec![Some(10.0), Some(-100.0)]);
        assert_eq!(t.rows[1].line, 3);
        let e = read_table(&b"1 2\n3 x\n"[..], Path::new("t")).unwrap_err();
        assert_eq!(e.line, Some(2));
        assert_eq!(e.column, Some(2));
        assert!(read_table(&b""[..], Path::new("t")).is_err());
        assert!(read_table(&b"a b\n"[..], Path::new("t")).is_err());
    }
}
