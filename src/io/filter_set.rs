//! A named set of jitter weightings, written once for an interface and
//! given to `jitter --filters FILE.toml` or the DUT key `jitter.filter_set`.
//! A file of tauwise's own:
//!
//! ```toml
//! name = "example 10G serial link"
//! note = "transmit PLL and receiver clock recovery"   # optional
//! filters = ["pll:bw=4MHz:peak=0.1dB", "cdr:bw=4MHz:peak=0.1dB"]
//! filter_files = ["channel-h2.txt"]                   # optional, |H|² in dB
//! ```
//!
//! Each entry of `filters` is read by the one filter parser
//! ([`crate::parse::Filter`]); `filter_files` are relative to the set file.
//! An unknown key, a wrong type or a filter that does not parse names the
//! file, line and key.

use super::{ReadCause, ReadError};
use crate::parse::Filter;
use serde::Deserialize;
use std::path::{Path, PathBuf};
use toml::Spanned;

/// A set of weightings read from a set file.
#[derive(Debug, Clone, PartialEq)]
pub struct FilterSet {
    /// The set's name.
    pub name: String,
    /// A note saying what the set stands for.
    pub note: Option<String>,
    /// Weightings, multiplied.
    pub filters: Vec<Filter>,
    /// Filter files (|H(f)|² in dB against f), resolved against the set file.
    pub filter_files: Vec<PathBuf>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawSet {
    name: Spanned<String>,
    note: Option<String>,
    #[serde(default)]
    filters: Vec<Spanned<String>>,
    #[serde(default)]
    filter_files: Vec<Spanned<String>>,
}

fn line_of(src: &str, offset: usize) -> u64 {
    src[..offset.min(src.len())]
        .bytes()
        .filter(|&b| b == b'\n')
        .count() as u64
        + 1
}

/// Read a filter-set file.
pub fn read_filter_set(path: &Path) -> Result<FilterSet, ReadError> {
    let src = std::fs::read_to_string(path).map_err(|e| {
        ReadError::file(path, format!("cannot read the filter set: {e}")).because(ReadCause::Access)
    })?;
    parse_filter_set(path, &src)
}

/// Parse the text `src` of the filter-set file `path`.
pub fn parse_filter_set(path: &Path, src: &str) -> Result<FilterSet, ReadError> {
    let at = |offset: usize, what: String| {
        ReadError::at(path, line_of(src, offset), what).because(ReadCause::Schema)
    };
    let raw: RawSet = toml::from_str(src).map_err(|e| match e.span() {
        Some(s) => at(s.start, e.message().to_string()),
        None => ReadError::file(path, e.message().to_string()).because(ReadCause::Schema),
    })?;
    let name = raw.name.get_ref().trim().to_string();
    if name.is_empty() {
        return Err(at(
            raw.name.span().start,
            "name: expected a non-empty name".into(),
        ));
    }
    let mut filters = Vec::new();
    for (i, f) in raw.filters.iter().enumerate() {
        filters.push(
            f.get_ref()
                .parse::<Filter>()
                .map_err(|e| at(f.span().start, format!("filters[{}]: {e}", i + 1)))?,
        );
    }
    let dir = path.parent().unwrap_or(Path::new("."));
    let mut filter_files = Vec::new();
    for (i, f) in raw.filter_files.iter().enumerate() {
        let p = dir.join(f.get_ref());
        if !p.is_file() {
            return Err(at(
                f.span().start,
                format!(
                    "filter_files[{}]: {} is not a readable file",
                    i + 1,
                    p.display()
                ),
            ));
        }
        filter_files.push(p);
    }
    if filters.is_empty() && filter_files.is_empty() {
        return Err(
            ReadError::file(path, "the filter set has neither filters nor filter_files")
                .because(ReadCause::Schema),
        );
    }
    Ok(FilterSet {
        name,
        note: raw.note,
        filters,
        filter_files,
    })
}

/// The weightings of a jitter integral from their three sources — filters
/// given as text already parsed, filter files, and a filter set file — as
/// the command line and the DUT file give them: the filters (the set's after
/// the given ones) and the tables of every filter file (the given ones, then
/// the set's), with the set's name.
pub fn assemble_weightings(
    filters: &[Filter],
    filter_files: &[PathBuf],
    filter_set: Option<&Path>,
) -> crate::Result<(
    Vec<Filter>,
    Vec<crate::spectrum::jitter::FilterTable>,
    Option<String>,
)> {
    let mut filters = filters.to_vec();
    let mut files = filter_files.to_vec();
    let mut name = None;
    if let Some(p) = filter_set {
        let set = read_filter_set(p)?;
        filters.extend(set.filters.iter().copied());
        files.extend(set.filter_files.iter().cloned());
        name = Some(set.name);
    }
    let tables = files
        .iter()
        .map(|p| {
            Ok(crate::spectrum::jitter::FilterTable {
                name: p.display().to_string(),
                table: crate::io::lf_table::read_filter_file(p)?,
            })
        })
        .collect::<crate::Result<Vec<_>>>()?;
    Ok((filters, tables, name))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn reads_and_refuses_with_line() {
        let p = Path::new("link.toml");
        let s = parse_filter_set(
            p,
            "name = \"link\"\nfilters = [\"pll:1MHz:0.7\", \"cdr:bw=4MHz:peak=0.1dB\"]\n",
        )
        .unwrap();
        assert_eq!(s.filters.len(), 2);
        let e =
            parse_filter_set(p, "name = \"link\"\nfilters = [\n  \"pll:1MHz\",\n]\n").unwrap_err();
        assert_eq!(e.line, Some(3), "{e}");
        assert!(e.to_string().contains("filters[1]"), "{e}");
        let e = parse_filter_set(p, "name = \"link\"\nfilter = [\"pll:1MHz:0.7\"]\n").unwrap_err();
        assert_eq!(e.line, Some(2), "{e}");
        assert!(parse_filter_set(p, "name = \"link\"\n").is_err());
    }
}
