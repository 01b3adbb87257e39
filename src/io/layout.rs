//! Where the data of a text input start, and how they are written: the
//! preamble, the header, the delimiter and the decimal mark.
//!
//! Rules (ours; documented for users in `docs/input-files.md`):
//!
//! - A **data row** is a line whose first field is a number, a missing value
//!   (`NaN`, `-`), a date-time or a malformed number, and which has no word
//!   in it; a line that starts with a number but has words in it (a text
//!   column, `1,-95.2,ok`) is a data row when the next line has the same
//!   number of fields and also starts with a number (so `10 MHz carrier`
//!   above one-column data stays in the preamble).
//! - Every line before the first data row is the **preamble** (comment lines
//!   included), kept for `inspect` and the JSON `input.preamble_lines`.
//! - The **header** is the last non-comment line of the preamble when it
//!   splits into as many fields as the first data row; failing that, a
//!   comment line just above the data that does (`# time  phase`, two or more
//!   fields).
//! - The **delimiter** is sniffed on the first data row
//!   ([`Delimiter::sniff`]).
//! - **Decimal commas** ([`Decimal`]): with `;` every comma in a field is a
//!   decimal mark; with tabs or spaces too, except a field that could be a
//!   thousands grouping (`1,288`), which is refused; in a comma-separated
//!   file only inside quotes, with the same guard. A file whose data rows
//!   are all `digits,digits` (`-0,000092556`) is one column with a decimal
//!   comma when its header has one field, or when a row shows it (a
//!   fraction with a leading zero, `-0,…`); two columns when the header
//!   has two fields or a column option names a second column; otherwise it
//!   is ambiguous and refused with a hint.

use super::fields::{self, split_header, Decimal, Delimiter, Splitter, Token};
use super::text::{CommentStyle, LineReader};
use super::ReadError;
use std::collections::VecDeque;
use std::io::BufRead;
use std::path::Path;

/// Preamble lines kept (the rest are counted).
pub const MAX_PREAMBLE_KEPT: usize = 1000;

/// Data rows looked at ahead to decide an all-`digits,digits` file.
const LOOKAHEAD: usize = 64;

/// How to look for the data.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct LayoutOptions {
    /// `--decimal-comma`: a comma is always the decimal mark.
    pub decimal_comma: bool,
    /// A column option names a column beyond the first (the file has
    /// several columns).
    pub several_columns: bool,
    /// Comment prefixes.
    pub comments: CommentStyle,
}

/// The header line.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Header {
    /// 1-based line number.
    pub line: u64,
    /// The fields (trimmed, unquoted).
    pub fields: Vec<String>,
    /// True when it was a comment line.
    pub commented: bool,
}

/// How a text input is laid out.
#[derive(Debug, Clone, PartialEq)]
pub struct Layout {
    /// The lines before the first data row (at most [`MAX_PREAMBLE_KEPT`]).
    pub preamble: Vec<String>,
    /// How many lines the preamble has (blank lines not counted).
    pub preamble_lines: u64,
    /// The header, when one was found.
    pub header: Option<Header>,
    /// The field delimiter of the data rows.
    pub delimiter: Delimiter,
    /// How commas in fields are read.
    pub decimal: Decimal,
    /// Why commas are read as decimal marks, when they are (for `inspect`).
    pub decimal_note: Option<String>,
    /// 1-based line number of the first data row.
    pub first_line: u64,
    /// Fields in the first data row (without empty trailing ones).
    pub columns: usize,
    /// Fields in the first data row (all).
    pub columns_all: usize,
}

/// The layout and the first data rows (read ahead), in order.
pub struct Start {
    /// The layout.
    pub layout: Layout,
    /// Data rows already read: (line number, text). The first is the first
    /// data row; the caller reads the rest of the input after them.
    pub rows: VecDeque<(u64, String)>,
}

/// What a line of the preamble region looks like.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Class {
    /// Only delimiters and blanks.
    Blank,
    /// Starts with a word: preamble, header or a block of text.
    Words,
    /// Numbers (and missing values, date-times, malformed numbers) only.
    Numbers(usize),
    /// Starts with a number but has words too; the field count.
    Mixed(usize),
}

fn classify(text: &str, decimal_comma: bool) -> Class {
    let d = Delimiter::sniff(text, decimal_comma);
    let decimal = decimal_for(d, decimal_comma);
    let mut s = Splitter::new(d);
    let n = match s.split(text) {
        Ok(n) => n,
        // An opened quote that does not close: decide on the first word.
        Err(_) => {
            let first = text.split([',', ';', '\t', ' ']).next().unwrap_or("");
            return if fields::is_text(fields::unquote(first), decimal) {
                Class::Words
            } else {
                Class::Numbers(1)
            };
        }
    };
    if (0..n).all(|i| s.field(text, i).is_empty()) {
        return Class::Blank;
    }
    if matches!(fields::token(s.field(text, 0), decimal), Token::Text) {
        return Class::Words;
    }
    let count = s.count_trimmed(text);
    if (1..n).any(|i| matches!(fields::token(s.field(text, i), decimal), Token::Text)) {
        Class::Mixed(count)
    } else {
        Class::Numbers(count)
    }
}

/// The decimal mark to use with a delimiter.
pub fn decimal_for(d: Delimiter, decimal_comma: bool) -> Decimal {
    if decimal_comma || d == Delimiter::Semicolon {
        Decimal::Comma
    } else {
        Decimal::Guarded
    }
}

/// Remove a comment prefix (`#`, `;`, `%`, `//` or an extra character).
fn strip_comment(text: &str) -> &str {
    let t = text.trim_start_matches(['#', ';', '%']);
    let t = t.strip_prefix("//").unwrap_or(t);
    match t.chars().next() {
        Some(c) if t.len() == text.len() && !c.is_alphanumeric() => t[c.len_utf8()..].trim(),
        _ => t.trim(),
    }
}

/// True for `-?digits,digits`.
fn digits_comma_digits(text: &str) -> bool {
    let t = text.strip_prefix('-').unwrap_or(text);
    match t.split_once(',') {
        Some((a, b)) => {
            !a.is_empty()
                && !b.is_empty()
                && a.bytes().all(|c| c.is_ascii_digit())
                && b.bytes().all(|c| c.is_ascii_digit())
        }
        None => false,
    }
}

/// A `digits,digits` row that cannot be two whole numbers as written.
fn shows_decimal_comma(text: &str) -> bool {
    let (a, b) = text.split_once(',').unwrap_or((text, ""));
    a == "-0" || (b.len() > 1 && b.starts_with('0'))
}

/// Lines read ahead, handed out before the reader's next ones.
struct Ahead<'r, R> {
    lines: &'r mut LineReader<R>,
    queue: VecDeque<(u64, String, bool)>,
}

impl<R: BufRead> Ahead<'_, R> {
    fn next(&mut self) -> Result<Option<(u64, String, bool)>, ReadError> {
        if let Some(l) = self.queue.pop_front() {
            return Ok(Some(l));
        }
        Ok(self
            .lines
            .next_line_or_comment()?
            .map(|l| (l.number, l.text.to_string(), l.comment)))
    }

    /// The next non-comment, non-blank line, keeping everything read in the
    /// queue (nothing is consumed).
    fn peek_content(&mut self, decimal_comma: bool) -> Result<Option<(u64, Class)>, ReadError> {
        for (n, t, c) in &self.queue {
            if !*c {
                let k = classify(t, decimal_comma);
                if k != Class::Blank {
                    return Ok(Some((*n, k)));
                }
            }
        }
        while let Some(l) = self.lines.next_line_or_comment()? {
            let own = (l.number, l.text.to_string(), l.comment);
            let k = (!own.2).then(|| classify(&own.1, decimal_comma));
            self.queue.push_back(own);
            if let Some(k) = k {
                if k != Class::Blank {
                    let n = self.queue.back().map_or(0, |l| l.0);
                    return Ok(Some((n, k)));
                }
            }
        }
        Ok(None)
    }
}

/// Read the start of a text input up to and including the first data row
/// (and a few rows after it when needed), and describe its layout. `expect`
/// says what the data rows should hold, for the error when there are none.
pub fn find_start<R: BufRead>(
    lines: &mut LineReader<R>,
    label: &Path,
    opts: &LayoutOptions,
    expect: &str,
) -> Result<Start, ReadError> {
    let dc = opts.decimal_comma;
    let mut ahead = Ahead {
        lines,
        queue: VecDeque::new(),
    };
    let mut preamble: Vec<String> = Vec::new();
    let mut preamble_lines: u64 = 0;
    let mut candidate: Option<(u64, String)> = None;
    let mut last_comment: Option<(u64, String)> = None;
    let mut keep = |preamble: &mut Vec<String>, text: &str| {
        preamble_lines += 1;
        if preamble.len() < MAX_PREAMBLE_KEPT {
            preamble.push(text.to_string());
        }
    };
    let (first_line, first_text) = loop {
        let Some((n, text, comment)) = ahead.next()? else {
            let what = if ahead.lines.bytes() == 0 {
                format!("the file is empty; expected {expect}")
            } else if let Some((_, h)) = &candidate {
                format!(
                    "no readings: no line starts with a number (the last line of text is '{}'); expected {expect} after it",
                    fields::shorten(h)
                )
            } else {
                format!("no readings, only comments or blank lines; expected {expect}")
            };
            return Err(ReadError::file(label, what));
        };
        if comment {
            keep(&mut preamble, &text);
            last_comment = Some((n, text));
            continue;
        }
        match classify(&text, dc) {
            Class::Blank => continue,
            Class::Words => {
                keep(&mut preamble, &text);
                candidate = Some((n, text));
                last_comment = None;
            }
            Class::Numbers(_) => break (n, text),
            Class::Mixed(count) => {
                let confirmed = match ahead.peek_content(dc)? {
                    None => true,
                    Some((_, Class::Numbers(c) | Class::Mixed(c))) => c == count,
                    Some(_) => false,
                };
                if confirmed {
                    break (n, text);
                }
                keep(&mut preamble, &text);
                candidate = Some((n, text));
                last_comment = None;
            }
        }
    };

    // The delimiter and decimal mark of the data.
    let mut delimiter = Delimiter::sniff(&first_text, dc);
    let mut decimal = decimal_for(delimiter, dc);
    let mut decimal_note = if dc {
        Some("commas read as decimal marks (--decimal-comma)".to_string())
    } else if delimiter == Delimiter::Semicolon {
        Some("fields separated by ';': a comma in a field is a decimal mark".to_string())
    } else {
        None
    };
    let mut rows: VecDeque<(u64, String)> = VecDeque::new();
    rows.push_back((first_line, first_text.clone()));
    if delimiter == Delimiter::Comma && digits_comma_digits(&first_text) {
        let header_fields = candidate.as_ref().map(|(_, h)| {
            let mut s = Splitter::new(Delimiter::Comma);
            s.split(h).map_or(1, |_| s.count_trimmed(h))
        });
        let one_column = match header_fields {
            Some(1) => Some(true),
            Some(_) => Some(false),
            None if opts.several_columns => Some(false),
            None => None,
        };
        let one_column = match one_column {
            Some(b) => b,
            None => {
                // Look at the next rows: all digits,digits, and one of them
                // cannot be two whole numbers as written?
                let mut all = true;
                let mut shown = shows_decimal_comma(&first_text);
                while rows.len() <= LOOKAHEAD {
                    let Some((n, t, c)) = ahead.next()? else {
                        break;
                    };
                    if c {
                        continue;
                    }
                    if !digits_comma_digits(&t) {
                        all = false;
                    }
                    shown |= shows_decimal_comma(&t);
                    rows.push_back((n, t));
                    if !all {
                        break;
                    }
                }
                if !all {
                    false
                } else if shown {
                    true
                } else {
                    return Err(ReadError::at(
                        label,
                        first_line,
                        format!(
                            "'{}': every line is digits,digits — one column with a decimal comma, or two columns of whole numbers? give --decimal-comma for a decimal comma, or --value-column 2 for two columns",
                            fields::shorten(&first_text)
                        ),
                    ));
                }
            }
        };
        if one_column {
            delimiter = Delimiter::Whitespace;
            decimal = Decimal::Guarded;
            decimal_note =
                Some("one column of digits,digits: the comma is a decimal mark".to_string());
        }
    }
    // Queued lines after the first data row (the rest of the read-ahead).
    while let Some((n, t, c)) = ahead.queue.pop_front() {
        if !c {
            rows.push_back((n, t));
        }
    }

    let mut s = Splitter::new(delimiter);
    let columns_all = s.split(&first_text).unwrap_or(1).max(1);
    let columns = s.count_trimmed(&first_text).max(1);
    let fits = |f: &Vec<String>| f.len() == columns || f.len() == columns_all;
    let mut header = None;
    if let Some((n, h)) = &candidate {
        let mut fields = split_header(h, delimiter, columns).filter(fits);
        if fields.is_none() {
            let own = Delimiter::sniff(h, dc);
            fields = split_header(h, own, columns).filter(fits);
        }
        if let Some(f) = fields {
            header = Some(Header {
                line: *n,
                fields: f,
                commented: false,
            });
        }
    }
    if header.is_none() && columns >= 2 {
        if let Some((n, c)) = &last_comment {
            let body = strip_comment(c);
            let own = Delimiter::sniff(body, dc);
            let fields = split_header(body, delimiter, columns)
                .filter(|f| f.len() == columns)
                .or_else(|| split_header(body, own, columns).filter(|f| f.len() == columns));
            if let Some(f) = fields {
                if f.iter().any(|x| fields::is_text(x, Decimal::Point)) {
                    header = Some(Header {
                        line: *n,
                        fields: f,
                        commented: true,
                    });
                }
            }
        }
    }
    Ok(Start {
        layout: Layout {
            preamble,
            preamble_lines,
            header,
            delimiter,
            decimal,
            decimal_note,
            first_line,
            columns,
            columns_all,
        },
        rows,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn start(text: &str) -> Result<Start, ReadError> {
        let mut lines = LineReader::new(text.as_bytes(), Path::new("t"));
        find_start(
            &mut lines,
            Path::new("t"),
            &LayoutOptions::default(),
            "numbers",
        )
    }

    #[test]
    fn preamble_and_header() {
        let s = start(
            "Time interval log\nGate: 1 s, slope +\n\nTimestamp,Interval (ns)\n2024-03-11T09:00:00Z,12.5\n",
        )
        .unwrap();
        let l = &s.layout;
        assert_eq!(l.preamble.len(), 3);
        assert_eq!(l.first_line, 5);
        assert_eq!(l.delimiter, Delimiter::Comma);
        let h = l.header.as_ref().unwrap();
        assert_eq!(h.line, 4);
        assert_eq!(h.fields, ["Timestamp", "Interval (ns)"]);
    }

    #[test]
    fn mixed_lines_need_a_second_like_them() {
        // "10 MHz carrier" is not data: the next line has one field.
        let s = start("10 MHz carrier\n1.5\n2.5\n").unwrap();
        assert_eq!(s.layout.first_line, 2);
        assert_eq!(s.layout.preamble, ["10 MHz carrier"]);
        // A text column: data.
        let s = start("f,L,flag\n1,-90,ok\n10,-100,ok\n").unwrap();
        assert_eq!(s.layout.first_line, 2);
        assert_eq!(s.layout.columns, 3);
    }

    #[test]
    fn malformed_first_reading_is_data() {
        for bad in ["inf", "1e400", "0x1A", "1.2.3", "1.5x"] {
            let s = start(&format!("{bad}\n1\n2\n")).unwrap();
            assert_eq!(s.layout.first_line, 1, "{bad}");
        }
    }

    #[test]
    fn one_column_decimal_commas() {
        let s = start("-0,000092556\n-0,000092551\n").unwrap();
        assert_eq!(s.layout.delimiter, Delimiter::Whitespace);
        assert!(s.layout.decimal_note.is_some());
        let s = start("ppm\n12,5\n12,25\n").unwrap();
        assert_eq!(s.layout.delimiter, Delimiter::Whitespace);
        let s = start("t,x\n12,5\n13,25\n").unwrap();
        assert_eq!(s.layout.delimiter, Delimiter::Comma);
        let s = start("12,5\n13,-25\n").unwrap();
        assert_eq!(s.layout.delimiter, Delimiter::Comma);
        let e = start("12,5\n13,25\n").err().unwrap();
        assert_eq!(e.line, Some(1));
        assert!(e.to_string().contains("--decimal-comma"), "{e}");
    }

    #[test]
    fn commented_header() {
        let s = start("# t, a, b\n0,10,20\n1,11,21\n").unwrap();
        let h = s.layout.header.unwrap();
        assert!(h.commented);
        assert_eq!(h.fields, ["t", "a", "b"]);
        // A comment of another shape is no header.
        let s = start("# tau0: 1 s\n0.5\n").unwrap();
        assert!(s.layout.header.is_none());
    }

    #[test]
    fn no_data() {
        let e = start("").err().unwrap();
        assert!(e.to_string().contains("empty"), "{e}");
        let e = start("# x\n").err().unwrap();
        assert!(e.to_string().contains("only comments"), "{e}");
        let e = start("time,phase\n").err().unwrap();
        assert!(e.to_string().contains("'time,phase'"), "{e}");
    }
}
