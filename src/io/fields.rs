//! Fields of one text line: the delimiter, splitting a line into fields, and
//! what a field holds (a number, a missing value, a date-time, a malformed
//! number or text).
//!
//! Comma-, semicolon- and tab-separated lines are split by the parser of the
//! `csv` project (`csv-core`, RFC 4180: fields may be quoted with `"`, a
//! quote inside a quoted field is written `""`); runs of spaces and tabs are
//! split by our own code (an ISO-8601 date and a time of day separated by a
//! space stay one field). Fields are trimmed of white space; a field still
//! wrapped in quotes (`1, "2"`) is unquoted.
//!
//! # Numbers (strict)
//! A number is `[+-]digits[.digits][e[+-]digits]` (or `.5`, `5.`) and finite.
//! `NaN` (any case), `-` and an empty field are a missing value (a gap). A
//! field that starts like a number but is not one — `1.5x`, `1.2.3`, `0x1A`,
//! `1e400` (overflows), `inf` — is a *malformed reading*, never text: a file
//! whose first reading is malformed is refused at that line instead of the
//! line being taken for a header.
//!
//! # Decimal commas ([`Decimal`])
//! A comma inside a field is read as the decimal mark (`-0,000092556`,
//! `2,5e-9`) where that is unambiguous: the fields are separated by `;`, tabs
//! or spaces; or the file is one column of `digits,digits`
//! ([`super::layout`] decides); or `--decimal-comma` says so. In a
//! comma-separated file a comma can only be inside a quoted field: there
//! `"1,5"` and `"-0,25"` are decimal commas, `"1,288.5"` has a thousands
//! separator, and `"1,288"` (1.288 or 1288?) is refused with a hint.

use std::fmt;

/// How the fields of a line are separated.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
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
    /// The delimiter's plain name (`comma`, `semicolon`, `tab`, `spaces`).
    pub fn name(self) -> &'static str {
        match self {
            Delimiter::Comma => "comma",
            Delimiter::Semicolon => "semicolon",
            Delimiter::Tab => "tab",
            Delimiter::Whitespace => "spaces",
        }
    }

    fn byte(self) -> Option<u8> {
        match self {
            Delimiter::Comma => Some(b','),
            Delimiter::Semicolon => Some(b';'),
            Delimiter::Tab => Some(b'\t'),
            Delimiter::Whitespace => None,
        }
    }

    /// Pick the delimiter of a line: `;` if present; else a tab if
    /// splitting on tabs gives fields without inner spaces; else `,` if
    /// present — unless splitting on commas leaves a field with inner spaces
    /// while splitting on spaces gives only numbers with a decimal comma
    /// (`0 1,5e-9`); else runs of spaces and tabs. With `comma_is_decimal`
    /// (`--decimal-comma`) a comma separates fields only in a line with
    /// quotes (then commas inside the quotes are decimal marks).
    pub fn sniff(line: &str, comma_is_decimal: bool) -> Self {
        if line.contains(';') {
            return Delimiter::Semicolon;
        }
        if line.contains('\t') {
            let clean = line.split('\t').all(|f| {
                let f = f.trim();
                !f.contains(' ') || looks_like_datetime(f) || f.starts_with('"')
            });
            if clean {
                return Delimiter::Tab;
            }
        }
        // With --decimal-comma a comma separates fields only outside quotes
        // (a quoted comma-separated file).
        if line.contains(',') && (!comma_is_decimal || line.contains('"')) {
            let mut s = Splitter::new(Delimiter::Comma);
            let inner_space = match s.split(line) {
                Ok(n) => (0..n).any(|i| {
                    let f = s.field(line, i);
                    f.contains([' ', '\t']) && !looks_like_datetime(f)
                }),
                Err(_) => false,
            };
            if !inner_space {
                return Delimiter::Comma;
            }
            let mut w = Splitter::new(Delimiter::Whitespace);
            let all_decimal = match w.split(line) {
                Ok(n) => {
                    n >= 1
                        && (0..n).all(|i| {
                            let f = w.field(line, i);
                            matches!(
                                token(f, Decimal::Comma),
                                Token::Number(_) | Token::Missing | Token::Stamp
                            )
                        })
                }
                Err(_) => false,
            };
            if !all_decimal {
                return Delimiter::Comma;
            }
        }
        Delimiter::Whitespace
    }
}

/// How a comma inside a field is read.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Decimal {
    /// The decimal mark is a point; a comma in a field is an error.
    Point,
    /// A comma in a field is the decimal mark (`2,5` is 2.5): fields
    /// separated by `;`, or `--decimal-comma`.
    Comma,
    /// A comma in a field is the decimal mark (`"1,5"`, `-0,25`) unless the
    /// field could be a thousands grouping: with a point as well
    /// (`"1,288.5"`) the commas are thousands separators; without one
    /// (`1,288`: 1.288 or 1288?) the field is refused with a hint. Used for
    /// tab- and space-separated files, quoted fields of comma-separated
    /// files and one-column files of `digits,digits`.
    Guarded,
}

/// What a field holds.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Token {
    /// A finite number.
    Number(f64),
    /// A missing value: `NaN` (any case), `-`, or empty.
    Missing,
    /// An ISO-8601 date or date-time (`2024-05-01…`), not checked further.
    Stamp,
    /// Starts like a number but is not a finite number in the strict grammar
    /// (`1.5x`, `inf`, `1e400`, `0x1A`, `1.2.3`), or a comma that could be a
    /// decimal mark or a thousands separator.
    Bad,
    /// Anything else: a word.
    Text,
}

/// Why a field is not a number.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum NumberError {
    /// Not in the strict number grammar.
    Malformed,
    /// `"1,288"` in a comma-separated file: decimal comma or thousands
    /// separator?
    AmbiguousComma,
}

impl fmt::Display for NumberError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            NumberError::Malformed => f.write_str("not a number"),
            NumberError::AmbiguousComma => f.write_str("ambiguous comma"),
        }
    }
}

/// True for the spellings of a missing value: empty, `-`, `NaN` (any case).
#[inline]
pub fn is_missing(field: &str) -> bool {
    field.is_empty() || field == "-" || field.eq_ignore_ascii_case("nan")
}

/// Parse a finite number in the strict grammar, with a comma read as
/// [`Decimal`] says. `Ok(None)` is a missing value.
#[inline]
pub fn number(field: &str, decimal: Decimal) -> Result<Option<f64>, NumberError> {
    if field.is_empty() {
        return Ok(None);
    }
    // The whole field read as a number ([`number_prefix`]); anything else
    // (a missing value, a decimal comma, a word, `1e400`) is sorted out by
    // the slow path.
    match number_prefix(field.as_bytes()) {
        Some((v, n)) if n == field.len() => Ok(Some(v)),
        _ => slow_number(field, decimal),
    }
}

/// The finite number that `bytes` start with, and how many bytes it takes:
/// the value [`number`] gives for those bytes as a field of their own
/// (the same first-byte test and the same `fast-float2` parse), for a
/// reader that finds the end of a field by reading the number rather than
/// by searching for the delimiter first. `None` when the bytes do not start
/// with a finite number in that grammar (a word, `inf`, `nan`, a missing
/// value, white space); the caller then reads the line field by field.
///
/// The caller must check that the byte after the number ends the field
/// (a delimiter or the line end): `1,5` gives `(1.0, 1)`, and only the
/// delimiter test tells that `1,5` is not the field `1`.
#[inline]
pub fn number_prefix(bytes: &[u8]) -> Option<(f64, usize)> {
    // `fast-float2` (Lemire's algorithm, exact like the standard library's
    // parser, faster on short fields); the first-byte test keeps out `inf`
    // and `nan`, the finiteness test `1e400`.
    let first = *bytes.first()?;
    if !(first.is_ascii_digit() || first == b'-' || first == b'+' || first == b'.') {
        return None;
    }
    match fast_float2::parse_partial::<f64, _>(bytes) {
        Ok((v, n)) if v.is_finite() => Some((v, n)),
        _ => None,
    }
}

/// [`number_prefix`] for a column of whole numbers (a count of seconds):
/// when the bytes start with digits that neither a `.`, an exponent nor
/// more digits follow, the digits read as an integer (`lexical-core`) and
/// converted to the nearest `f64` — the value `number_prefix` gives, since
/// both round the same exact integer to nearest, ties to even — else
/// `number_prefix` itself. Faster than the float parse on such fields; a
/// little slower on others, so the reader uses it only for a column whose
/// first field is whole.
#[inline]
pub fn whole_number_prefix(bytes: &[u8]) -> Option<(f64, usize)> {
    if bytes.first().is_some_and(u8::is_ascii_digit) {
        if let Ok((n, len)) = lexical_core::parse_partial::<u64>(bytes) {
            if !matches!(bytes.get(len), Some(b'.' | b'e' | b'E' | b'0'..=b'9')) {
                return Some((n as f64, len));
            }
        }
    }
    number_prefix(bytes)
}

/// Whether `field` is a whole number written in digits alone (where
/// [`whole_number_prefix`] is the faster read).
pub fn is_whole(field: &str) -> bool {
    !field.is_empty() && field.bytes().all(|b| b.is_ascii_digit())
}

#[cold]
fn slow_number(field: &str, decimal: Decimal) -> Result<Option<f64>, NumberError> {
    if is_missing(field) {
        return Ok(None);
    }
    if !field.contains(',') || decimal == Decimal::Point {
        return Err(NumberError::Malformed);
    }
    let has_point = field.contains('.');
    if decimal == Decimal::Guarded && thousands_grouping(field) {
        if !has_point {
            return Err(NumberError::AmbiguousComma);
        }
        return strict(&field.replace(',', ""));
    }
    if has_point || field.bytes().filter(|&c| c == b',').count() != 1 {
        return Err(NumberError::Malformed);
    }
    strict(&field.replace(',', "."))
}

fn strict(s: &str) -> Result<Option<f64>, NumberError> {
    match number_prefix(s.as_bytes()) {
        Some((v, n)) if n == s.len() => Ok(Some(v)),
        _ => Err(NumberError::Malformed),
    }
}

/// `1,288`, `-12,345,678`, `1,288.5`: digits in groups of three after a
/// first group of one to three digits that is not `0`.
fn thousands_grouping(field: &str) -> bool {
    let s = field.strip_prefix(['-', '+']).unwrap_or(field);
    let int = s.split('.').next().unwrap_or("");
    let mut groups = int.split(',');
    let Some(head) = groups.next() else {
        return false;
    };
    if head.is_empty() || head.len() > 3 || head == "0" || !head.bytes().all(|c| c.is_ascii_digit())
    {
        return false;
    }
    let mut n = 0;
    for g in groups {
        if g.len() != 3 || !g.bytes().all(|c| c.is_ascii_digit()) {
            return false;
        }
        n += 1;
    }
    n >= 1
}

/// True when a field starts like a number (so that, if it is not one, it is
/// a malformed reading rather than a word): a digit, a sign or point
/// followed by a digit or point, `inf`/`infinity` with an optional sign.
pub fn number_like(field: &str) -> bool {
    let b = field.as_bytes();
    match b.first() {
        None => false,
        Some(c) if c.is_ascii_digit() => true,
        Some(b'+' | b'-' | b'.') => {
            let rest = &field[1..];
            matches!(rest.as_bytes().first(), Some(c) if c.is_ascii_digit() || *c == b'.')
                || is_infinity(rest)
        }
        _ => is_infinity(field),
    }
}

fn is_infinity(s: &str) -> bool {
    s.eq_ignore_ascii_case("inf") || s.eq_ignore_ascii_case("infinity")
}

/// Classify one (trimmed) field.
pub fn token(field: &str, decimal: Decimal) -> Token {
    if is_missing(field) {
        return Token::Missing;
    }
    match number(field, decimal) {
        Ok(Some(v)) => Token::Number(v),
        Ok(None) => Token::Missing,
        Err(NumberError::AmbiguousComma) => Token::Bad,
        Err(NumberError::Malformed) => {
            if looks_like_datetime(field) {
                Token::Stamp
            } else if number_like(field) {
                Token::Bad
            } else {
                Token::Text
            }
        }
    }
}

/// True when a field is a word (not a number, a missing value, a date-time
/// or a malformed number).
#[inline]
pub fn is_text(field: &str, decimal: Decimal) -> bool {
    matches!(token(field, decimal), Token::Text)
}

/// A quick test for an ISO-8601 date or date-time (`YYYY-MM-DD…`).
pub fn looks_like_datetime(field: &str) -> bool {
    field.len() >= 10 && is_date_bytes(&field.as_bytes()[..10])
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

/// Remove white space and one pair of surrounding double quotes.
#[inline]
pub fn unquote(f: &str) -> &str {
    let f = f.trim_ascii();
    if f.len() >= 2 && f.starts_with('"') && f.ends_with('"') {
        f[1..f.len() - 1].trim_ascii()
    } else {
        f
    }
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

/// Where a field's bytes are: in the line itself or in the splitter's
/// unquoting buffer.
#[derive(Debug, Clone, Copy)]
enum Span {
    Line(usize, usize),
    Buf(usize, usize),
}

/// Splits lines into fields, reusing its buffers from line to line.
///
/// A line is split whole: [`Splitter::split`] returns the number of fields,
/// [`Splitter::field`] hands out field `i` (0-based) trimmed and unquoted.
/// The line must be passed again to `field` (fields of unquoted lines point
/// into it).
pub struct Splitter {
    delim: Delimiter,
    csv: Option<csv_core::Reader>,
    out: Vec<u8>,
    ends: Vec<usize>,
    spans: Vec<Span>,
    /// Stop after this many fields (0 = all).
    limit: usize,
}

/// A line could not be split: an opened quote is not closed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct UnclosedQuote;

impl Splitter {
    /// A splitter for `delim`.
    pub fn new(delim: Delimiter) -> Self {
        let csv = delim.byte().map(|b| {
            csv_core::ReaderBuilder::new()
                .delimiter(b)
                .quoting(true)
                .double_quote(true)
                .build()
        });
        Self {
            delim,
            csv,
            out: Vec::new(),
            ends: vec![0; 16],
            spans: Vec::with_capacity(16),
            limit: 0,
        }
    }

    /// Split at most `n` leading fields (the rest of the line is not
    /// looked at); 0 for all.
    pub fn with_limit(mut self, n: usize) -> Self {
        self.limit = n;
        self
    }

    /// The delimiter.
    pub fn delimiter(&self) -> Delimiter {
        self.delim
    }

    /// Split `line` (without its line end); returns the number of fields.
    pub fn split(&mut self, line: &str) -> Result<usize, UnclosedQuote> {
        self.spans.clear();
        match self.delim {
            Delimiter::Whitespace => self.split_whitespace(line),
            d => {
                let sep = d.byte().unwrap_or(b',');
                if memchr::memchr(b'"', line.as_bytes()).is_none() {
                    self.split_plain(line, sep);
                } else {
                    self.split_csv(line)?;
                }
            }
        }
        Ok(self.spans.len())
    }

    /// Field `i` (0-based) of the line last split, trimmed and unquoted.
    #[inline]
    pub fn field<'a>(&'a self, line: &'a str, i: usize) -> &'a str {
        match self.spans.get(i) {
            Some(&Span::Line(a, b)) => unquote(&line[a..b]),
            Some(&Span::Buf(a, b)) => {
                // The unquoting buffer holds whole UTF-8 fields copied from
                // a UTF-8 line; the check cannot fail.
                std::str::from_utf8(&self.out[a..b]).map_or("", unquote)
            }
            None => "",
        }
    }

    /// The number of fields without the empty ones at the end (a line that
    /// ends with its delimiter).
    pub fn count_trimmed(&self, line: &str) -> usize {
        let mut n = self.spans.len();
        while n > 1 && self.field(line, n - 1).is_empty() {
            n -= 1;
        }
        n
    }

    /// All fields as owned strings.
    pub fn all(&self, line: &str) -> Vec<String> {
        (0..self.spans.len())
            .map(|i| self.field(line, i).to_string())
            .collect()
    }

    /// A line without quotes: RFC 4180 fields are the bytes between
    /// delimiters, found with `memchr`.
    #[inline]
    fn split_plain(&mut self, line: &str, sep: u8) {
        let b = line.as_bytes();
        let mut start = 0;
        loop {
            if self.limit > 0 && self.spans.len() + 1 == self.limit {
                self.spans.push(Span::Line(start, b.len()));
                return;
            }
            match memchr::memchr(sep, &b[start..]) {
                Some(i) => {
                    self.spans.push(Span::Line(start, start + i));
                    start += i + 1;
                }
                None => {
                    self.spans.push(Span::Line(start, b.len()));
                    return;
                }
            }
        }
    }

    /// A line with quotes: the `csv-core` parser unquotes the fields into
    /// the buffer.
    fn split_csv(&mut self, line: &str) -> Result<(), UnclosedQuote> {
        // Quotes must pair up ("" inside a quoted field is a pair too).
        if line.bytes().filter(|&c| c == b'"').count() % 2 == 1 {
            return Err(UnclosedQuote);
        }
        let Some(csv) = self.csv.as_mut() else {
            return Ok(());
        };
        csv.reset();
        if self.out.len() < line.len() + 1 {
            self.out.resize(line.len() + 1, 0);
        }
        let mut input = line.as_bytes();
        let mut nout_total = 0;
        let mut nends_total = 0;
        loop {
            let (res, nin, nout, nend) = csv.read_record(
                input,
                &mut self.out[nout_total..],
                &mut self.ends[nends_total..],
            );
            input = &input[nin..];
            nout_total += nout;
            nends_total += nend;
            match res {
                csv_core::ReadRecordResult::InputEmpty => {
                    if input.is_empty() && nin == 0 && nout == 0 && nend == 0 {
                        // Already signalled the end: no record (empty line).
                        break;
                    }
                }
                csv_core::ReadRecordResult::OutputFull => {
                    let n = self.out.len();
                    self.out.resize(n * 2 + 16, 0);
                }
                csv_core::ReadRecordResult::OutputEndsFull => {
                    let n = self.ends.len();
                    self.ends.resize(n * 2, 0);
                }
                csv_core::ReadRecordResult::Record | csv_core::ReadRecordResult::End => break,
            }
        }
        let mut a = 0;
        for &e in &self.ends[..nends_total] {
            self.spans.push(Span::Buf(a, e));
            a = e;
        }
        Ok(())
    }

    fn split_whitespace(&mut self, line: &str) {
        let b = line.as_bytes();
        let mut pos = 0;
        let skip = |mut p: usize| {
            while p < b.len() && (b[p] == b' ' || b[p] == b'\t') {
                p += 1;
            }
            p
        };
        loop {
            pos = skip(pos);
            if pos >= b.len() {
                return;
            }
            if self.limit > 0 && self.spans.len() + 1 == self.limit {
                self.spans.push(Span::Line(pos, b.len()));
                return;
            }
            let end = memchr::memchr2(b' ', b'\t', &b[pos..]).map_or(b.len(), |i| pos + i);
            let mut stop = end;
            // A date and a time of day separated by spaces are one field.
            if is_date_bytes(&b[pos..end]) {
                let a = skip(end);
                let e2 = memchr::memchr2(b' ', b'\t', &b[a..]).map_or(b.len(), |i| a + i);
                if a < b.len() && is_time_of_day(&line[a..e2]) {
                    stop = e2;
                }
            }
            self.spans.push(Span::Line(pos, stop));
            pos = stop;
        }
    }
}

/// Split a header line so that names with spaces survive: with the
/// whitespace delimiter, try runs of two or more spaces (or tabs) first,
/// then words with a bracketed unit joined to the word before
/// (`Time (s)   TIE (ns)`); keep the split whose count is `want` when one
/// is. Other delimiters split as data lines do.
pub fn split_header(line: &str, delim: Delimiter, want: usize) -> Option<Vec<String>> {
    let mut s = Splitter::new(delim);
    let n = s.split(line).ok()?;
    let plain: Vec<String> = s.all(line);
    if delim != Delimiter::Whitespace || n == want {
        return Some(plain);
    }
    let wide: Vec<String> = line
        .split('\t')
        .flat_map(|p| p.split("  "))
        .map(|f| unquote(f).to_string())
        .filter(|f| !f.is_empty())
        .collect();
    if wide.len() == want {
        return Some(wide);
    }
    let mut joined: Vec<String> = Vec::new();
    for f in plain.iter() {
        let unit_part = f.starts_with('(') || f.starts_with('[');
        match joined.last_mut() {
            Some(prev) if unit_part => {
                prev.push(' ');
                prev.push_str(f);
            }
            _ => joined.push(f.clone()),
        }
    }
    if joined.len() == want {
        return Some(joined);
    }
    Some(plain)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The number a field starts with is the field's number when a
    /// delimiter or the line end follows it, and the standard library's
    /// parse of the same text (correctly rounded, as `fast-float2`); a
    /// field that is not a plain finite number gives `None` or stops short
    /// of the delimiter.
    #[test]
    fn number_prefix_is_the_field_number() {
        let mut state = 0x2026_1204u64;
        let mut fields: Vec<String> = [
            "1",
            "-1.5e-9",
            "+.5",
            "1.",
            ".5e3",
            "0",
            "-0",
            "4.9e-324",
            "1e-400",
            "12345678901234567890",
            "9007199254740993",
            "1.7976931348623157e308",
            "0.1000000000000000055511151231257827",
            "1E5",
            "5e+2",
        ]
        .iter()
        .map(|s| s.to_string())
        .collect();
        for _ in 0..2000 {
            let state = lcg(&mut state);
            let x = f64::from_bits(state >> 2) * if state & 1 == 1 { -1.0 } else { 1.0 };
            if x.is_finite() {
                fields.push(format!("{x:e}"));
                fields.push(format!("{x:.11e}"));
                fields.push(format!("{}", (state >> 40) as f64 * 1e-6));
            }
        }
        for f in &fields {
            let want = f.parse::<f64>().unwrap();
            for end in [",", ";", "\t", "\n", "\r\n", ""] {
                let got = number_prefix(format!("{f}{end}").as_bytes());
                assert_eq!(
                    got.map(|(v, n)| (v.to_bits(), n)),
                    Some((want.to_bits(), f.len())),
                    "{f}"
                );
            }
            assert_eq!(number(f, Decimal::Point), Ok(Some(want)));
        }
        for odd in [
            "", " 1", "inf", "-inf", "nan", "NaN", "-", "1e400", "abc", "\"1\"", "e5",
        ] {
            assert_eq!(number_prefix(odd.as_bytes()), None, "{odd}");
            assert_eq!(whole_number_prefix(odd.as_bytes()), None, "{odd}");
        }
        // Stops short of what is not part of the number: the caller's
        // delimiter test then refuses the field.
        for (s, n) in [
            ("1,5", 1),
            ("1.5e", 3),
            ("0x10", 1),
            ("1 2", 1),
            ("1.5\"", 3),
        ] {
            assert_eq!(number_prefix(s.as_bytes()).map(|p| p.1), Some(n), "{s}");
            assert_eq!(
                whole_number_prefix(s.as_bytes()).map(|p| p.1),
                Some(n),
                "{s}"
            );
        }
    }

    /// The next state of a seeded linear congruential generator.
    fn lcg(state: &mut u64) -> u64 {
        *state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        *state
    }

    /// The integer read of whole fields gives what the float parse gives,
    /// bit for bit and byte for byte (the standard library's parse is the
    /// reference): on seeded random digit strings of 1 to 22 digits (past
    /// 2^53, where rounding starts, and past 2^64, where the integer read
    /// overflows and the float parse takes over), around 2^53 and 2^64,
    /// with leading zeros, and followed by each delimiter, a line end, a
    /// fraction or an exponent.
    #[test]
    fn whole_number_prefix_is_the_float_parse() {
        let mut state = 0x2026_1204_5eedu64;
        let mut fields: Vec<String> = [
            "0",
            "00",
            "007",
            "9007199254740992",
            "9007199254740993",
            "9007199254740995",
            "18014398509481987",
            "18446744073709551615",
            "18446744073709551616",
            "99999999999999999999999",
        ]
        .iter()
        .map(|s| s.to_string())
        .collect();
        for _ in 0..4000 {
            let state = lcg(&mut state);
            let digits = 1 + (state >> 59) as usize % 22;
            let mut f = String::new();
            let mut x = state;
            for _ in 0..digits {
                f.push(char::from(b'0' + (lcg(&mut x) >> 60) as u8 % 10));
            }
            fields.push(f);
        }
        for f in &fields {
            for end in [
                ",", ";", "\t", "\n", "\r\n", "", ".", ".5", "e3", "E-2", "e", ".e1",
            ] {
                let s = format!("{f}{end}");
                let want = number_prefix(s.as_bytes());
                let got = whole_number_prefix(s.as_bytes());
                assert_eq!(
                    got.map(|(v, n)| (v.to_bits(), n)),
                    want.map(|(v, n)| (v.to_bits(), n)),
                    "{s}"
                );
            }
            let want = f.parse::<f64>().unwrap();
            assert_eq!(whole_number_prefix(f.as_bytes()), Some((want, f.len())));
            assert!(is_whole(f));
        }
        for s in ["", "1.5", "-1", "+1", " 1", "1e3"] {
            assert!(!is_whole(s), "{s}");
        }
        for s in ["-12", "+12", ".5", "-0"] {
            assert_eq!(
                whole_number_prefix(s.as_bytes()),
                number_prefix(s.as_bytes())
            );
        }
    }

    fn split(d: Delimiter, line: &str) -> Vec<String> {
        let mut s = Splitter::new(d);
        s.split(line).unwrap();
        s.all(line)
    }

    #[test]
    fn sniffing() {
        assert_eq!(Delimiter::sniff("1,2", false), Delimiter::Comma);
        assert_eq!(Delimiter::sniff("1;2", false), Delimiter::Semicolon);
        assert_eq!(Delimiter::sniff("1\t2", false), Delimiter::Tab);
        assert_eq!(Delimiter::sniff("1   2", false), Delimiter::Whitespace);
        assert_eq!(Delimiter::sniff("1.5", false), Delimiter::Whitespace);
        assert_eq!(Delimiter::sniff("1,5\t2,5", false), Delimiter::Tab);
        assert_eq!(Delimiter::sniff("1,5;2,5", false), Delimiter::Semicolon);
        assert_eq!(Delimiter::sniff("1.5, 2.5", false), Delimiter::Comma);
        // Space-separated decimal commas.
        assert_eq!(Delimiter::sniff("0 1,5e-9", false), Delimiter::Whitespace);
        assert_eq!(
            Delimiter::sniff("  0,0   12,345", false),
            Delimiter::Whitespace
        );
        // A header with spaces inside comma-separated names.
        assert_eq!(
            Delimiter::sniff("Time (s), Phase (ns)", false),
            Delimiter::Comma
        );
        assert_eq!(Delimiter::sniff("0,\"1,288\"", false), Delimiter::Comma);
        assert_eq!(Delimiter::sniff("-0,5", true), Delimiter::Whitespace);
        assert_eq!(
            Delimiter::sniff("2024-05-01 12:00:00\t1.5", false),
            Delimiter::Tab
        );
    }

    #[test]
    fn splitting() {
        assert_eq!(
            split(Delimiter::Comma, " 1 , \"2\",,3"),
            ["1", "2", "", "3"]
        );
        assert_eq!(
            split(Delimiter::Whitespace, "  1   2\t 3 "),
            ["1", "2", "3"]
        );
        assert_eq!(
            split(Delimiter::Whitespace, "2024-05-01 12:00:00.5  1e-9"),
            ["2024-05-01 12:00:00.5", "1e-9"]
        );
        // RFC 4180 quoting by csv-core.
        assert_eq!(
            split(Delimiter::Comma, "\"time, s\",\"phase, ns\""),
            ["time, s", "phase, ns"]
        );
        assert_eq!(split(Delimiter::Comma, "0,\"1,288\""), ["0", "1,288"]);
        assert_eq!(
            split(Delimiter::Semicolon, "\"a \"\"b\"\"\";2"),
            ["a \"b\"", "2"]
        );
        let mut s = Splitter::new(Delimiter::Comma);
        assert_eq!(s.split("1,\"2"), Err(UnclosedQuote));
        let mut s = Splitter::new(Delimiter::Comma);
        s.split("1,2,").unwrap();
        assert_eq!(s.count_trimmed("1,2,"), 2);
        // Many fields grow the buffers.
        let long: String = (0..100).map(|i| format!("\"{i}\",")).collect();
        assert_eq!(split(Delimiter::Comma, &long).len(), 101);
        let mut s = Splitter::new(Delimiter::Comma).with_limit(2);
        assert_eq!(s.split("1,2,3,4"), Ok(2));
    }

    #[test]
    fn tokens() {
        let p = Decimal::Point;
        assert_eq!(token("1e-9", p), Token::Number(1e-9));
        assert_eq!(token("NaN", p), Token::Missing);
        assert_eq!(token("-", p), Token::Missing);
        assert_eq!(token("", p), Token::Missing);
        for bad in [
            "inf",
            "-Infinity",
            "1e400",
            "0x1A",
            "1.2.3",
            "1.5x",
            "+.5.",
            "1,5",
        ] {
            assert_eq!(token(bad, p), Token::Bad, "{bad}");
        }
        for word in ["phase", "Time", "---", "(ns)", "é", "x1"] {
            assert_eq!(token(word, p), Token::Text, "{word}");
        }
        assert_eq!(token("2024-05-01T00:00:00Z", p), Token::Stamp);
        let c = Decimal::Comma;
        assert_eq!(token("2,5e-9", c), Token::Number(2.5e-9));
        assert_eq!(token("-0,000092556", c), Token::Number(-0.000092556));
        assert_eq!(token("1,000,000", c), Token::Bad);
        assert_eq!(token("1,5.2", c), Token::Bad);
        let q = Decimal::Guarded;
        assert_eq!(number("1,5", q), Ok(Some(1.5)));
        assert_eq!(number("-0,25", q), Ok(Some(-0.25)));
        assert_eq!(number("1,2884", q), Ok(Some(1.2884)));
        assert_eq!(number("1,288.5", q), Ok(Some(1288.5)));
        assert_eq!(number("1,288", q), Err(NumberError::AmbiguousComma));
        assert_eq!(number("12,345,678", q), Err(NumberError::AmbiguousComma));
        assert_eq!(number("0,288", q), Ok(Some(0.288)));
        assert!(!looks_like_datetime("2024-05-0éé"));
    }

    /// The fast parser against the standard library's (the direct form):
    /// same value or same refusal on strings of number characters.
    #[test]
    fn fast_parser_agrees_with_the_standard_library() {
        use proptest::prelude::*;
        let mut runner = proptest::test_runner::TestRunner::default();
        runner
            .run(&"[0-9eE+.-]{1,12}", |f| {
                let first = f.as_bytes()[0];
                let direct = if first.is_ascii_digit() || b"+-.".contains(&first) {
                    f.parse::<f64>().ok().filter(|v| v.is_finite())
                } else {
                    None
                };
                let fast = number(&f, Decimal::Point).ok().flatten();
                prop_assert_eq!(fast.map(f64::to_bits), direct.map(f64::to_bits), "{}", f);
                Ok(())
            })
            .unwrap();
        for f in [
            "1", "-2.5", "1e-9", ".5", "5.", "+.5", "1.5e+300", "4.9e-324",
        ] {
            assert_eq!(
                number(f, Decimal::Point),
                Ok(Some(f.parse().unwrap())),
                "{f}"
            );
        }
        for f in ["+inf", "-nan", "1e", "1e+", "--1", "1.2.3", "0x1A", "1_0"] {
            assert_eq!(
                number(f, Decimal::Point),
                Err(NumberError::Malformed),
                "{f}"
            );
        }
    }

    #[test]
    fn headers() {
        assert_eq!(
            split_header("Time (s)   TIE (ns)", Delimiter::Whitespace, 2),
            Some(vec!["Time (s)".to_string(), "TIE (ns)".to_string()])
        );
        assert_eq!(
            split_header("Time (s) TIE (ns)", Delimiter::Whitespace, 2),
            Some(vec!["Time (s)".to_string(), "TIE (ns)".to_string()])
        );
        assert_eq!(
            split_header("elapsed_s    frequency_Hz", Delimiter::Whitespace, 2),
            Some(vec!["elapsed_s".to_string(), "frequency_Hz".to_string()])
        );
    }
}
