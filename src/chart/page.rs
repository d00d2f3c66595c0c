//! One self-contained page: XHTML-compatible HTML5 with its style inline
//! and its charts as inline SVG; no scripts, no fonts, no images, no links
//! to fetch, so it opens the same from an e-mail attachment with no network.
//!
//! Every text of a [`Block`] is escaped; only [`Block::Figure`]'s SVG is
//! inserted as markup, and it must be one of this module's charts (which
//! escape their own text). The output parses as XML. O(size of the text).

use std::fmt::Write;

use super::escape;

/// A table: a heading row and rows of cells.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct Table {
    /// Column headings.
    pub head: Vec<String>,
    /// Columns aligned right (figures), by index.
    pub numeric: Vec<bool>,
    /// The rows.
    pub rows: Vec<Vec<String>>,
}

/// One piece of the page, in order.
#[derive(Clone, Debug, PartialEq)]
pub enum Block {
    /// A section heading.
    Heading(String),
    /// A paragraph.
    Paragraph(String),
    /// A paragraph set apart (a warning or a caution).
    Notice(String),
    /// Preformatted text (rule text, a text report).
    Code(String),
    /// A table.
    Table(Table),
    /// An SVG chart from this module, and its caption.
    Figure {
        /// The SVG document.
        svg: String,
        /// The caption.
        caption: String,
    },
}

/// A page.
#[derive(Clone, Debug, PartialEq)]
pub struct Page {
    /// The `<title>` and the top heading.
    pub title: String,
    /// The content.
    pub blocks: Vec<Block>,
}

const STYLE: &str = "body{font-family:sans-serif;max-width:62rem;margin:1.5rem auto;padding:0 1rem;color:#1a1a1a;line-height:1.4}\
h1{font-size:1.5rem}h2{font-size:1.15rem;margin-top:1.8rem;border-bottom:1px solid #ccc}\
pre{background:#f4f4f4;padding:.6rem;overflow-x:auto;font-size:.85rem}\
table{border-collapse:collapse;margin:.5rem 0;font-size:.9rem}\
th,td{border:1px solid #ccc;padding:.2rem .5rem;text-align:left;vertical-align:top}\
th{background:#eee}td.n{text-align:right;font-variant-numeric:tabular-nums}\
.notice{border-left:4px solid #555;padding:.3rem .8rem;background:#f7f7f7}\
figure{margin:1rem 0}figure svg{max-width:100%;height:auto}figcaption{font-size:.85rem;color:#444}\
@media print{pre{white-space:pre-wrap}}";

/// The page as a document.
pub fn xhtml(page: &Page) -> String {
    let mut out = String::from("<!DOCTYPE html>\n");
    let _ = writeln!(
        out,
        "<html xmlns=\"http://www.w3.org/1999/xhtml\" lang=\"en\" xml:lang=\"en\">\n<head>\n<meta charset=\"utf-8\"/>\n\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\"/>\n<title>{}</title>\n<style>{STYLE}</style>\n</head>\n<body>\n<h1>{}</h1>",
        escape(&page.title),
        escape(&page.title)
    );
    for block in &page.blocks {
        match block {
            Block::Heading(t) => {
                let _ = writeln!(out, "<h2>{}</h2>", escape(t));
            }
            Block::Paragraph(t) => {
                let _ = writeln!(out, "<p>{}</p>", escape(t));
            }
            Block::Notice(t) => {
                let _ = writeln!(out, "<p class=\"notice\">{}</p>", escape(t));
            }
            Block::Code(t) => {
                let _ = writeln!(out, "<pre>{}</pre>", escape(t));
            }
            Block::Table(t) => table(&mut out, t),
            Block::Figure { svg, caption } => {
                let _ = writeln!(
                    out,
                    "<figure>\n{}<figcaption>{}</figcaption>\n</figure>",
                    svg,
                    escape(caption)
                );
            }
        }
    }
    out.push_str("</body>\n</html>\n");
    out
}

fn table(out: &mut String, t: &Table) {
    let class = |c: usize| {
        if t.numeric.get(c).copied().unwrap_or(false) {
            " class=\"n\""
        } else {
            ""
        }
    };
    out.push_str("<table>\n<thead><tr>");
    for (c, h) in t.head.iter().enumerate() {
        let _ = write!(out, "<th{}>{}</th>", class(c), escape(h));
    }
    out.push_str("</tr></thead>\n<tbody>\n");
    for row in &t.rows {
        out.push_str("<tr>");
        for (c, cell) in row.iter().enumerate() {
            let _ = write!(out, "<td{}>{}</td>", class(c), escape(cell));
        }
        out.push_str("</tr>\n");
    }
    out.push_str("</tbody>\n</table>\n");
}
