//! A small HTML writer: escaping, elements, tables, and inline SVG. Every
//! piece of text that goes through it is escaped, so names, paths and headers
//! from an input can never become markup.

use std::fmt::Write as _;

/// Escape text for HTML element content and attribute values
/// (`& < > " '`, per the HTML Living Standard's serialisation rules).
///
/// ```
/// use tauwise::report::html::escape;
/// assert_eq!(escape("<script>alert(1)</script>"), "&lt;script&gt;alert(1)&lt;/script&gt;");
/// assert_eq!(escape("a & \"b\""), "a &amp; &quot;b&quot;");
/// ```
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + 8);
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

/// A piece of HTML under construction.
#[derive(Debug, Default, Clone)]
pub struct Html {
    buf: String,
}

impl Html {
    /// Empty.
    pub fn new() -> Self {
        Self::default()
    }
    /// Append escaped text.
    pub fn text(&mut self, t: &str) -> &mut Self {
        self.buf.push_str(&escape(t));
        self
    }
    /// Append markup written by this crate (never input text).
    pub fn raw(&mut self, markup: &str) -> &mut Self {
        self.buf.push_str(markup);
        self
    }
    /// `<tag class="…">escaped text</tag>`.
    pub fn el(&mut self, tag: &str, class: &str, t: &str) -> &mut Self {
        if class.is_empty() {
            let _ = write!(self.buf, "<{tag}>{}</{tag}>", escape(t));
        } else {
            let _ = write!(self.buf, "<{tag} class=\"{class}\">{}</{tag}>", escape(t));
        }
        self
    }
    /// A paragraph of escaped text.
    pub fn p(&mut self, t: &str) -> &mut Self {
        self.el("p", "", t)
    }
    /// A paragraph with a class.
    pub fn p_class(&mut self, class: &str, t: &str) -> &mut Self {
        self.el("p", class, t)
    }
    /// Open a section with an id and heading.
    pub fn open_section(&mut self, id: &str, heading: &str) -> &mut Self {
        let _ = write!(
            self.buf,
            "<section id=\"{id}\"><h2>{}</h2>",
            escape(heading)
        );
        self
    }
    /// Close a section.
    pub fn close_section(&mut self) -> &mut Self {
        self.buf.push_str("</section>\n");
        self
    }
    /// A table from a header row and rows of cells (all escaped). Cells
    /// starting with a verdict marker get a badge (see [`Cell`]).
    pub fn table(&mut self, class: &str, header: &[&str], rows: &[Vec<Cell>]) -> &mut Self {
        let _ = write!(self.buf, "<table class=\"{class}\"><thead><tr>");
        for h in header {
            let _ = write!(self.buf, "<th scope=\"col\">{}</th>", escape(h));
        }
        self.buf.push_str("</tr></thead><tbody>");
        for r in rows {
            self.buf.push_str("<tr>");
            for c in r {
                match c {
                    Cell::Text(t) => {
                        let _ = write!(self.buf, "<td>{}</td>", escape(t));
                    }
                    Cell::Num(t) => {
                        let _ = write!(self.buf, "<td class=\"num\">{}</td>", escape(t));
                    }
                    Cell::Verdict(j) => {
                        use crate::verdict::{Coverage, Verdict};
                        let (class, word) = match j.verdict {
                            Verdict::Meets => ("pass", "meets"),
                            Verdict::Exceeds => ("fail", "exceeds"),
                            Verdict::NotJudged => ("none", "not judged"),
                            Verdict::Undecided => ("undecided", "undecided"),
                        };
                        let partial =
                            if j.verdict != Verdict::NotJudged && j.coverage == Coverage::Partial {
                                " <span class=\"partial\">partial coverage</span>"
                            } else {
                                ""
                            };
                        // The decision: "meets, P = 99.7 %", "undecided:
                        // meets at the estimate, P = 62.0 %" (crate::decision).
                        let p = j.probability_words();
                        let p = p.trim_start_matches([',', ':']).trim();
                        let p = if p.is_empty() {
                            String::new()
                        } else {
                            format!(" <span class=\"probability\">{}</span>", escape(p))
                        };
                        let _ = write!(
                            self.buf,
                            "<td><span class=\"badge {class}\">{word}</span>{p}{partial}</td>"
                        );
                    }
                    Cell::Code(t) => {
                        let _ = write!(self.buf, "<td><code>{}</code></td>", escape(t));
                    }
                }
            }
            self.buf.push_str("</tr>");
        }
        self.buf.push_str("</tbody></table>\n");
        self
    }
    /// A definition list of (term, value) pairs, escaped.
    pub fn dl(&mut self, pairs: &[(String, String)]) -> &mut Self {
        self.buf.push_str("<dl>");
        for (k, v) in pairs {
            let _ = write!(self.buf, "<dt>{}</dt><dd>{}</dd>", escape(k), escape(v));
        }
        self.buf.push_str("</dl>\n");
        self
    }
    /// A bulleted list of escaped items.
    pub fn ul(&mut self, items: &[String]) -> &mut Self {
        self.buf.push_str("<ul>");
        for i in items {
            let _ = write!(self.buf, "<li>{}</li>", escape(i));
        }
        self.buf.push_str("</ul>\n");
        self
    }
    /// An inline SVG figure with a caption. The SVG comes from
    /// [`crate::plot::to_svg_string`] (its text already escaped); the
    /// namespace attribute is dropped, as HTML needs none, so the document
    /// carries no URL at all.
    pub fn figure(&mut self, svg: &str, caption: &str) -> &mut Self {
        let inline = svg.replacen(" xmlns=\"http://www.w3.org/2000/svg\"", "", 1);
        let inline = inline.replacen(
            "<svg ",
            &format!("<svg role=\"img\" aria-label=\"{}\" ", escape(caption)),
            1,
        );
        let _ = writeln!(
            self.buf,
            "<figure>{inline}<figcaption>{}</figcaption></figure>",
            escape(caption)
        );
        self
    }
    /// The HTML so far.
    pub fn finish(self) -> String {
        self.buf
    }
    /// Append another piece.
    pub fn append(&mut self, other: Html) -> &mut Self {
        self.buf.push_str(&other.buf);
        self
    }
}

/// A table cell.
#[derive(Debug, Clone, PartialEq)]
pub enum Cell {
    /// Text (left-aligned).
    Text(String),
    /// A number (right-aligned, tabular figures).
    Num(String),
    /// A verdict badge: meets / exceeds / not judged, with "partial
    /// coverage" beside a judged verdict that covered part of its range.
    Verdict(crate::verdict::Judgement),
    /// Monospace text (hashes, model strings).
    Code(String),
}

/// Shorthand for [`Cell::Text`].
pub fn t(s: impl Into<String>) -> Cell {
    Cell::Text(s.into())
}

/// Shorthand for [`Cell::Num`].
pub fn n(s: impl Into<String>) -> Cell {
    Cell::Num(s.into())
}

/// The report's style sheet (ours): a narrow reading column, quiet tables
/// with tabular figures, verdict badges, print-friendly.
pub const CSS: &str = r#"
:root { --ink:#23282d; --soft:#5c636a; --rule:#d9dcd8; --paper:#ffffff; --tint:#f8f7f3;
        --accent:#0f6e78; --pass:#2f7d4f; --fail:#d1232a; --none:#8a8f96; }
* { box-sizing: border-box; }
body { margin:0; background:var(--paper); color:var(--ink);
       font: 15px/1.5 "DejaVu Sans", "Helvetica Neue", Arial, sans-serif; }
header.top { padding: 28px 40px 18px; border-bottom: 4px solid var(--accent); background: var(--tint); }
header.top h1 { margin:0 0 4px; font-size: 26px; letter-spacing: .01em; }
header.top p { margin: 2px 0; color: var(--soft); }
nav.toc { padding: 10px 40px; border-bottom: 1px solid var(--rule); font-size: 13px; }
nav.toc a { color: var(--accent); text-decoration:none; margin-right: 14px; white-space: nowrap; }
main { max-width: 1080px; padding: 0 40px 60px; }
section { padding-top: 18px; border-bottom: 1px solid var(--rule); padding-bottom: 18px; }
h2 { font-size: 19px; margin: 10px 0 10px; color: var(--accent); }
h3 { font-size: 15px; margin: 16px 0 6px; }
table { border-collapse: collapse; margin: 8px 0 12px; font-size: 13px; }
th, td { padding: 4px 10px; border-bottom: 1px solid var(--rule); text-align: left; vertical-align: top; }
th { background: var(--tint); font-weight: 600; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
code { font-family: "DejaVu Sans Mono", Menlo, Consolas, monospace; font-size: 12px; word-break: break-all; }
.badge { display:inline-block; padding: 0 8px; border-radius: 9px; font-size: 12px; font-weight: 600; color: #fff; }
.badge.pass { background: var(--pass); } .badge.fail { background: var(--fail); } .badge.none { background: var(--none); } .badge.undecided { background: var(--none); outline: 2px dashed var(--fail); }
span.partial { font-size: 12px; font-style: italic; color: var(--none); white-space: nowrap; }
span.probability { font-size: 12px; white-space: nowrap; }
figure { margin: 10px 0 16px; }
figure svg { max-width: 100%; height: auto; border: 1px solid var(--rule); }
figcaption { font-size: 12px; color: var(--soft); }
p.absent { color: var(--soft); font-style: italic; }
p.caution { border-left: 4px solid var(--fail); padding: 6px 12px; background: #fbf1f0; }
dl { display: grid; grid-template-columns: max-content auto; gap: 2px 16px; font-size: 13px; }
dt { color: var(--soft); } dd { margin: 0; }
footer { padding: 18px 40px; color: var(--soft); font-size: 12px; }
@media print { nav.toc { display:none; } section { break-inside: avoid-page; } }
"#;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_everything_dangerous() {
        assert_eq!(
            escape("<a href='x'>&</a>"),
            "&lt;a href=&#39;x&#39;&gt;&amp;&lt;/a&gt;"
        );
        let mut h = Html::new();
        h.table(
            "t",
            &["<th>"],
            &[vec![t("<td>"), n("1<2"), Cell::Code("\"q\"".into())]],
        );
        let s = h.finish();
        assert!(!s.contains("<td><td>") && s.contains("&lt;td&gt;") && s.contains("1&lt;2"));
    }

    #[test]
    fn figures_drop_the_namespace_url() {
        let mut h = Html::new();
        h.figure(
            "<svg width=\"1\" height=\"1\" xmlns=\"http://www.w3.org/2000/svg\"></svg>",
            "a <b>",
        );
        let s = h.finish();
        assert!(!s.contains("http"));
        assert!(s.contains("aria-label=\"a &lt;b&gt;\""));
    }
}
