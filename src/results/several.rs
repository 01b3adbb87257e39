//! The documents of an analysis command given several records (`stability`,
//! `wander`, `holdover` with more than one FILE): one block per record, in
//! the order given, each the single-record document's `"input"` and
//! members. With one record the commands write the single-record document
//! unchanged.
//!
//! - JSON: `{"tool","version","schema","records":[{"input", …members}, …]}`.
//! - CSV: one table; a first column `file` names the record of each row, the
//!   other columns are the union of the blocks' columns in the order first
//!   seen (a column a block lacks is an empty cell there), so the file stays
//!   RFC 4180 with one header.
//! - Text: each block's table, under a rule naming the file.

use super::{csv_text, Input};
use crate::error::{Error, Result};
use serde::Serialize;

/// One record's block: its `"input"` and the command's members.
#[derive(Debug, Clone, Serialize)]
pub struct RecordBlock<B: Serialize> {
    /// What was read.
    pub input: Input,
    /// The command's results for this record.
    #[serde(flatten)]
    pub body: B,
}

/// The document of several records.
#[derive(Debug, Clone, Serialize)]
pub struct SeveralDocument<B: Serialize> {
    /// Always `tauwise`.
    pub tool: &'static str,
    /// The crate version that wrote the document.
    pub version: &'static str,
    /// [`super::SCHEMA`].
    pub schema: u32,
    /// One block per record, in the order given.
    pub records: Vec<RecordBlock<B>>,
}

impl<B: Serialize> SeveralDocument<B> {
    /// A document of the current schema from `(input, body)` pairs.
    pub fn new(blocks: Vec<(Input, B)>) -> Self {
        Self {
            tool: crate::TOOL,
            version: crate::VERSION,
            schema: super::SCHEMA,
            records: blocks
                .into_iter()
                .map(|(input, body)| RecordBlock { input, body })
                .collect(),
        }
    }

    /// The JSON text and the members that are not finite (as
    /// [`super::Document::json`]).
    pub fn json(&self) -> Result<(String, Vec<String>)> {
        super::json::to_text(self).map_err(|e| Error::invalid(format!("could not write JSON: {e}")))
    }
}

/// One CSV table from the CSV text of each record (`(file, csv)`): a first
/// column `file`, then the union of the blocks' columns in the order first
/// seen; a column a block lacks is an empty cell in its rows.
pub fn csv_with_file_column(blocks: &[(String, String)]) -> Result<String> {
    let fail = |e: csv::Error| Error::invalid(format!("could not join CSV tables: {e}"));
    let mut columns: Vec<String> = Vec::new();
    let mut parsed = Vec::new();
    for (file, text) in blocks {
        let mut r = csv::Reader::from_reader(text.as_bytes());
        let header: Vec<String> = r
            .headers()
            .map_err(fail)?
            .iter()
            .map(String::from)
            .collect();
        for h in &header {
            if !columns.contains(h) {
                columns.push(h.clone());
            }
        }
        let rows = r
            .records()
            .collect::<std::result::Result<Vec<_>, _>>()
            .map_err(fail)?;
        parsed.push((file, header, rows));
    }
    let mut out_header = vec!["file"];
    out_header.extend(columns.iter().map(String::as_str));
    let columns = &columns;
    let rows = parsed.iter().flat_map(|(file, header, rows)| {
        rows.iter().map(move |row| {
            let mut cells = vec![file.to_string()];
            cells.extend(columns.iter().map(|c| {
                header
                    .iter()
                    .position(|h| h == c)
                    .and_then(|i| row.get(i))
                    .unwrap_or("")
                    .to_string()
            }));
            cells
        })
    });
    csv_text(&out_header, rows)
}

/// The text tables of several records, each under a rule naming its file.
pub fn tables_text(blocks: &[(String, String)]) -> String {
    let mut out = String::new();
    for (i, (file, table)) in blocks.iter().enumerate() {
        if i > 0 {
            out.push('\n');
        }
        out.push_str(&format!("── {file} ──\n"));
        out.push_str(table);
        if !table.ends_with('\n') {
            out.push('\n');
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn csv_blocks_share_one_header_with_the_union_of_columns() {
        let blocks = vec![
            ("a.txt".to_string(), "tau,dev\n1,2\n".to_string()),
            ("b,c.txt".to_string(), "tau,dev,mask\n1,3,ok\n".to_string()),
        ];
        let text = csv_with_file_column(&blocks).unwrap();
        assert_eq!(text, "file,tau,dev,mask\na.txt,1,2,\n\"b,c.txt\",1,3,ok\n");
    }

    #[test]
    fn text_blocks_are_named() {
        let t = tables_text(&[("a".into(), "x\n".into()), ("b".into(), "y".into())]);
        assert_eq!(t, "── a ──\nx\n\n── b ──\ny\n");
    }
}
