//! The one formatter of the human-readable output: a [`Table`] of titled
//! columns, each with its alignment, width and unit (how its numbers are
//! written), rows of cells, and notes under it; a [`Text`] is the blocks of
//! a command's output (lines and tables) in order. Every command's table
//! output is built by its result type and rendered here, one way.
//!
//! Widths are minimum widths, as in `format!("{:>10}")`: a cell that is
//! wider pushes the rest of its row right (the column is not cut), unless
//! the column is [`Column::fit`], whose width is then its widest cell.

use crate::units::{format_si, format_sig};
use std::fmt::Write as _;

/// A list of many items in a line: all of them up to 8, else the first
/// three, "…" and the last three (the τ or offsets a verdict exceeded at).
pub fn short_list(items: &[String]) -> String {
    if items.len() > 8 {
        format!(
            "{}, … {}",
            items[..3].join(", "),
            items[items.len() - 3..].join(", ")
        )
    } else {
        items.join(", ")
    }
}

/// How the numbers of a column are written (its unit).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Unit {
    /// Text cells only.
    Text,
    /// 4 significant digits with an SI prefix and this unit (`1.000 ks`,
    /// `500.0 mHz`).
    Si(&'static str),
    /// A plain number, 4 significant digits (`1.058e-12`, `98741`).
    Plain,
    /// Exponent notation with this many decimals (`7.9966e-5`).
    Exp(usize),
    /// Fixed point with this many decimals, then the suffix (`25.9%`,
    /// `0.0 %`, `-101.25`).
    Fixed(usize, &'static str),
}

impl Unit {
    /// `v` written in this unit.
    pub fn write(self, v: f64) -> String {
        match self {
            Unit::Text | Unit::Plain => format_sig(v, 4),
            Unit::Si(u) => format_si(v, u, 4),
            Unit::Exp(d) => format!("{v:.d$e}"),
            Unit::Fixed(d, suffix) => format!("{v:.d$}{suffix}"),
        }
    }
}

/// Alignment of a column's cells and title.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Align {
    /// Padded on the right (the last column is not padded).
    Left,
    /// Padded on the left.
    Right,
}

/// A column: its title, alignment, width, unit and the spaces before it.
#[derive(Debug, Clone)]
pub struct Column {
    /// The title in the header row (a table whose titles are all empty has
    /// no header row).
    pub title: String,
    /// Alignment.
    pub align: Align,
    /// Minimum width of a cell.
    pub width: usize,
    /// The width is the widest cell (or title), at least `width`.
    pub fit: bool,
    /// How numbers are written.
    pub unit: Unit,
    /// Spaces before the column (none before the first).
    pub gap: usize,
    /// One character after each cell for a mark (`*`: see [`Cell::mark`]);
    /// the title spans it.
    pub marked: bool,
    /// What an absent value shows.
    pub missing: &'static str,
}

impl Column {
    /// A right-aligned column of `width` with one space before it, text
    /// cells, `—` for an absent value.
    pub fn right(title: impl Into<String>, width: usize) -> Self {
        Self {
            title: title.into(),
            align: Align::Right,
            width,
            fit: false,
            unit: Unit::Text,
            gap: 1,
            marked: false,
            missing: "—",
        }
    }

    /// A left-aligned column of `width` with one space before it.
    pub fn left(title: impl Into<String>, width: usize) -> Self {
        Self {
            align: Align::Left,
            ..Self::right(title, width)
        }
    }

    /// With this unit for its numbers.
    pub fn unit(mut self, unit: Unit) -> Self {
        self.unit = unit;
        self
    }

    /// With `n` spaces before it.
    pub fn gap(mut self, n: usize) -> Self {
        self.gap = n;
        self
    }

    /// Showing `text` for an absent value.
    pub fn missing(mut self, text: &'static str) -> Self {
        self.missing = text;
        self
    }

    /// With room for a mark after each cell.
    pub fn marked(mut self) -> Self {
        self.marked = true;
        self
    }

    /// As wide as its widest cell.
    pub fn fit(mut self) -> Self {
        self.fit = true;
        self
    }
}

/// A cell: a number (written in its column's unit), a range `[lo … hi]`,
/// text, or nothing (the column's `missing` text); with an optional mark.
#[derive(Debug, Clone, PartialEq)]
pub struct Cell {
    value: Value,
    mark: Option<char>,
}

#[derive(Debug, Clone, PartialEq)]
enum Value {
    Number(f64),
    Range(f64, f64),
    Text(String),
    Missing,
}

impl Cell {
    /// A number.
    pub fn num(v: f64) -> Self {
        Self {
            value: Value::Number(v),
            mark: None,
        }
    }

    /// A number, or the column's `missing` text.
    pub fn opt(v: Option<f64>) -> Self {
        v.map_or_else(Self::none, Self::num)
    }

    /// An interval `[lo … hi]` in the column's unit, or `missing` when one
    /// end is absent.
    pub fn range(lo: Option<f64>, hi: Option<f64>) -> Self {
        match (lo, hi) {
            (Some(lo), Some(hi)) => Self {
                value: Value::Range(lo, hi),
                mark: None,
            },
            _ => Self::none(),
        }
    }

    /// Text as it is.
    pub fn text(t: impl Into<String>) -> Self {
        Self {
            value: Value::Text(t.into()),
            mark: None,
        }
    }

    /// A whole number.
    pub fn int(n: impl std::fmt::Display) -> Self {
        Self::text(n.to_string())
    }

    /// Nothing: the column's `missing` text.
    pub fn none() -> Self {
        Self {
            value: Value::Missing,
            mark: None,
        }
    }

    /// Marked with `c` (in a [`Column::marked`] column; shown after the cell).
    pub fn mark(mut self, c: char) -> Self {
        self.mark = Some(c);
        self
    }

    fn write(&self, col: &Column) -> String {
        match &self.value {
            Value::Number(v) => col.unit.write(*v),
            Value::Range(lo, hi) => format!("[{} … {}]", col.unit.write(*lo), col.unit.write(*hi)),
            Value::Text(t) => t.clone(),
            Value::Missing => col.missing.to_string(),
        }
    }
}

/// A row of a table.
#[derive(Debug, Clone, PartialEq)]
enum Row {
    /// One cell per column, then text after the last (may be empty).
    Cells(Vec<Cell>, String),
    /// The first column's cell, then text in place of the other columns.
    Span(Cell, String),
}

/// A table: heading lines, titled columns, rows, notes under it.
#[derive(Debug, Clone, Default)]
pub struct Table {
    /// Lines above the header row.
    pub heading: Vec<String>,
    /// Spaces before every row.
    pub indent: usize,
    columns: Vec<Column>,
    rows: Vec<Row>,
    /// Lines under the rows (footnotes, summaries).
    pub notes: Vec<String>,
}

impl Table {
    /// A table of these columns, without rows.
    pub fn new(columns: Vec<Column>) -> Self {
        Self {
            columns,
            ..Self::default()
        }
    }

    /// With a heading line.
    pub fn heading(mut self, line: impl Into<String>) -> Self {
        self.heading.push(line.into());
        self
    }

    /// Rows indented by `n` spaces.
    pub fn indent(mut self, n: usize) -> Self {
        self.indent = n;
        self
    }

    /// Add a row of cells (missing cells at the end show as `missing`).
    pub fn row(&mut self, cells: Vec<Cell>) {
        self.rows.push(Row::Cells(cells, String::new()));
    }

    /// Add a row of cells followed by `tail` after the last column.
    pub fn row_with(&mut self, cells: Vec<Cell>, tail: impl Into<String>) {
        self.rows.push(Row::Cells(cells, tail.into()));
    }

    /// Add a row: the first column's cell, then `text` where the other
    /// columns would be.
    pub fn span(&mut self, first: Cell, text: impl Into<String>) {
        self.rows.push(Row::Span(first, text.into()));
    }

    /// Add a note under the rows.
    pub fn note(&mut self, line: impl Into<String>) {
        self.notes.push(line.into());
    }

    /// The number of rows.
    pub fn len(&self) -> usize {
        self.rows.len()
    }

    /// True without rows.
    pub fn is_empty(&self) -> bool {
        self.rows.is_empty()
    }

    /// The width of each column: its minimum, or for a fitted column the
    /// widest of its title and cells.
    fn widths(&self) -> Vec<usize> {
        self.columns
            .iter()
            .enumerate()
            .map(|(i, c)| {
                if !c.fit {
                    return c.width;
                }
                let cells = self.rows.iter().filter_map(|r| match r {
                    Row::Cells(cells, _) => cells.get(i).map(|x| x.write(c)),
                    Row::Span(first, _) if i == 0 => Some(first.write(c)),
                    Row::Span(..) => None,
                });
                cells
                    .chain(std::iter::once(c.title.clone()))
                    .map(|s| s.chars().count())
                    .max()
                    .unwrap_or(0)
                    .max(c.width)
            })
            .collect()
    }

    /// The table as text, every line ending in `\n`.
    pub fn render(&self) -> String {
        let widths = self.widths();
        let mut out = String::new();
        for h in &self.heading {
            let _ = writeln!(out, "{h}");
        }
        let last = self.columns.len().saturating_sub(1);
        let pad = |out: &mut String, i: usize, text: &str, mark: Option<char>| {
            let c = &self.columns[i];
            if i > 0 {
                out.push_str(&" ".repeat(c.gap));
            }
            let w = widths[i];
            match (c.align, mark) {
                (Align::Right, Some(m)) => {
                    let _ = write!(out, "{text:>w$}{m}");
                }
                (Align::Right, None) => {
                    let _ = write!(out, "{text:>w$}");
                }
                (Align::Left, _) if i == last => out.push_str(text),
                (Align::Left, _) => {
                    let _ = write!(out, "{text:<w$}");
                }
            }
        };
        if self.columns.iter().any(|c| !c.title.is_empty()) {
            out.push_str(&" ".repeat(self.indent));
            for (i, c) in self.columns.iter().enumerate() {
                let widened = Column {
                    width: widths[i] + usize::from(c.marked),
                    ..c.clone()
                };
                if i > 0 {
                    out.push_str(&" ".repeat(c.gap));
                }
                let w = widened.width;
                match c.align {
                    Align::Right => {
                        let _ = write!(out, "{:>w$}", c.title);
                    }
                    Align::Left if i == last => out.push_str(&c.title),
                    Align::Left => {
                        let _ = write!(out, "{:<w$}", c.title);
                    }
                }
            }
            out.push('\n');
        }
        for r in &self.rows {
            out.push_str(&" ".repeat(self.indent));
            match r {
                Row::Cells(cells, tail) => {
                    for (i, c) in self.columns.iter().enumerate() {
                        let cell = cells.get(i).cloned().unwrap_or_else(Cell::none);
                        let mark = c.marked.then(|| cell.mark.unwrap_or(' '));
                        pad(&mut out, i, &cell.write(c), mark);
                    }
                    out.push_str(tail);
                }
                Row::Span(first, text) => {
                    if let Some(c) = self.columns.first() {
                        let mark = c.marked.then(|| first.mark.unwrap_or(' '));
                        pad(&mut out, 0, &first.write(c), mark);
                    }
                    let gap = self.columns.get(1).map_or(1, |c| c.gap);
                    let _ = write!(out, "{}{text}", " ".repeat(gap));
                }
            }
            out.push('\n');
        }
        for n in &self.notes {
            let _ = writeln!(out, "{n}");
        }
        out
    }
}

/// A block of a command's text output.
#[derive(Debug, Clone)]
pub enum Block {
    /// A line of text (may be empty).
    Line(String),
    /// A table.
    Table(Table),
}

/// A command's text output: lines and tables in order.
#[derive(Debug, Clone, Default)]
pub struct Text(pub Vec<Block>);

impl Text {
    /// Nothing yet.
    pub fn new() -> Self {
        Self::default()
    }

    /// Add a line (`\n` inside makes several).
    pub fn line(&mut self, l: impl Into<String>) {
        self.0.push(Block::Line(l.into()));
    }

    /// Add an empty line.
    pub fn blank(&mut self) {
        self.line("");
    }

    /// Add a table.
    pub fn table(&mut self, t: Table) {
        self.0.push(Block::Table(t));
    }

    /// Add the blocks of `other`.
    pub fn extend(&mut self, other: Text) {
        self.0.extend(other.0);
    }

    /// The text, every line ending in `\n`.
    pub fn render(&self) -> String {
        let mut out = String::new();
        for b in &self.0 {
            match b {
                Block::Line(l) => {
                    let _ = writeln!(out, "{l}");
                }
                Block::Table(t) => out.push_str(&t.render()),
            }
        }
        out
    }
}

impl From<Table> for Text {
    fn from(t: Table) -> Self {
        Text(vec![Block::Table(t)])
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn renders_like_format_widths() {
        let mut t = Table::new(vec![
            Column::right("tau", 10).unit(Unit::Si("s")),
            Column::right("dev", 10).unit(Unit::Plain).marked(),
            Column::right("interval", 25).unit(Unit::Plain),
            Column::right("edf", 9).unit(Unit::Plain),
        ])
        .heading("title");
        t.row(vec![
            Cell::num(1.0),
            Cell::num(1.058e-12).mark('*'),
            Cell::range(Some(1.0e-12), Some(1.1e-12)),
            Cell::none(),
        ]);
        t.span(Cell::none(), "a note across");
        t.note("* marked");
        let want = format!(
            "title\n{:>10} {:>11} {:>25} {:>9}\n{:>10} {:>10}* {:>25} {:>9}\n{:>10} a note across\n* marked\n",
            "tau",
            "dev",
            "interval",
            "edf",
            "1.000 s",
            "1.058e-12",
            "[1.000e-12 … 1.100e-12]",
            "—",
            "—"
        );
        assert_eq!(t.render(), want);
    }

    #[test]
    fn fitted_left_column_and_no_header() {
        let mut t = Table::new(vec![Column::left("", 0).fit(), Column::left("", 0).gap(2)]);
        t.row(vec![Cell::text("input"), Cell::text("a.txt")]);
        t.row(vec![Cell::text("τ0"), Cell::text("1 s")]);
        assert_eq!(t.render(), "input  a.txt\nτ0     1 s\n");
    }

    #[test]
    fn units() {
        assert_eq!(Unit::Exp(4).write(7.99662e-5), "7.9966e-5");
        assert_eq!(Unit::Fixed(1, " %").write(12.345), "12.3 %");
        assert_eq!(Unit::Si("Hz").write(0.5), "500.0 mHz");
    }
}
