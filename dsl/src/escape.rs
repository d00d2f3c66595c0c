//! Making input-derived text safe for the place it is printed: a terminal,
//! an XML/SVG/HTML document, a CSV file or a JSON document.
//!
//! Titles, member, rule, attribute and bloc names, file names and quoted
//! source lines come from files written by strangers. Raw, they could clear
//! or retitle a terminal (`ESC [2J`, OSC sequences, C1 controls), reorder
//! what a reader sees (bidirectional overrides and isolates), hide text
//! (zero-width format characters), break a document (`<`, `]]>`, characters
//! XML 1.0 forbids) or run a formula in a spreadsheet (`=`, `+`, `-`, `@`).
//! Every renderer of the library and the command passes such text through
//! one function of this module, chosen by the output:
//!
//! | output | function | what changes |
//! | --- | --- | --- |
//! | terminal, plain text | [`terminal`] | controls, format and separator characters become visible `\u{..}` |
//! | XML, SVG, HTML | [`xml`] | `& < > " '` become entities; characters XML 1.0 forbids become U+FFFD; tab and line breaks stay; the rest as [`terminal`] |
//! | CSV | [`csv_field`] | as [`terminal`], a leading formula trigger gets a `'`, then quoting |
//! | JSON | [`json_pretty`] | serde_json's escaping, plus `\uXXXX` for every character [`terminal`] would escape |
//!
//! Every function is linear in the text and allocates only when something
//! changes (a borrowed [`Cow`] otherwise). Nothing can overflow: lengths
//! only grow by at most ten bytes per character.

use std::borrow::Cow;
use std::fmt::Write as _;

/// True for a character that must not reach a terminal or a reader raw:
/// C0 and C1 controls and DEL (general category Cc), format characters
/// (category Cf: bidirectional embeddings, overrides and isolates
/// U+202A-202E and U+2066-2069, marks U+200E/U+200F/U+061C, zero-width
/// characters, the byte-order mark, tags, ...) and the line and paragraph
/// separators U+2028/U+2029 (categories Zl, Zp).
///
/// The Cf ranges follow the Unicode Character Database,
/// `DerivedGeneralCategory.txt`, category Cf, Unicode 15.0 (from memory; the
/// bidirectional controls are listed in Unicode Standard Annex #9, table 1).
pub fn is_hidden(c: char) -> bool {
    c.is_control()
        || matches!(
            c,
            '\u{00ad}'
                | '\u{0600}'..='\u{0605}'
                | '\u{061c}'
                | '\u{06dd}'
                | '\u{070f}'
                | '\u{0890}'..='\u{0891}'
                | '\u{08e2}'
                | '\u{180e}'
                | '\u{200b}'..='\u{200f}'
                | '\u{2028}'..='\u{202e}'
                | '\u{2060}'..='\u{2064}'
                | '\u{2066}'..='\u{206f}'
                | '\u{feff}'
                | '\u{fff9}'..='\u{fffb}'
                | '\u{110bd}'
                | '\u{110cd}'
                | '\u{13430}'..='\u{1343f}'
                | '\u{1bca0}'..='\u{1bca3}'
                | '\u{1d173}'..='\u{1d17a}'
                | '\u{e0001}'
                | '\u{e0020}'..='\u{e007f}'
        )
}

/// `text` for a terminal or any plain-text output: every [`is_hidden`]
/// character (including newline and tab) is written as a visible escape in
/// Rust's notation, `\u{1b}`, `\u{202e}`; everything else is unchanged.
///
/// ```
/// use clout_dsl::escape::terminal;
/// assert_eq!(terminal("Board"), "Board");
/// assert_eq!(terminal("a\u{1b}[2Jb\u{202e}c"), "a\\u{1b}[2Jb\\u{202e}c");
/// ```
pub fn terminal(text: &str) -> Cow<'_, str> {
    if !text.chars().any(is_hidden) {
        return Cow::Borrowed(text);
    }
    let mut out = String::with_capacity(text.len() + 8);
    for c in text.chars() {
        push_terminal(&mut out, c);
    }
    Cow::Owned(out)
}

/// Many lines for a terminal: as [`terminal`], but newlines are kept.
/// For messages and whole outputs whose line breaks are their own.
pub fn terminal_lines(text: &str) -> Cow<'_, str> {
    if !text.chars().any(|c| c != '\n' && is_hidden(c)) {
        return Cow::Borrowed(text);
    }
    let mut out = String::with_capacity(text.len() + 8);
    for c in text.chars() {
        if c == '\n' {
            out.push(c);
        } else {
            push_terminal(&mut out, c);
        }
    }
    Cow::Owned(out)
}

/// [`terminal`] for one character, appended to `out`.
pub fn push_terminal(out: &mut String, c: char) {
    if is_hidden(c) {
        let _ = write!(out, "\\u{{{:x}}}", c as u32);
    } else {
        out.push(c);
    }
}

/// The number of characters [`terminal`] writes for `c` (1 unless escaped),
/// for aligning carets under an escaped line.
pub fn terminal_width(c: char) -> usize {
    if is_hidden(c) {
        // `\u{` + hex digits + `}`
        let digits = (32 - (c as u32 | 1).leading_zeros()).div_ceil(4) as usize;
        4 + digits
    } else {
        1
    }
}

/// True when XML 1.0 allows `c` in a document (production `Char`, XML 1.0
/// fifth edition, section 2.2): tab, newline, carriage return, U+0020 to
/// U+D7FF, U+E000 to U+FFFD and U+10000 up.
pub fn xml_allowed(c: char) -> bool {
    matches!(c, '\t' | '\n' | '\r' | '\u{20}'..='\u{d7ff}' | '\u{e000}'..='\u{fffd}' | '\u{10000}'..)
}

/// `text` for XML, SVG or HTML element content and attribute values (quoted
/// with `"` or `'`): `&`, `<`, `>`, `"` and `'` become entities, characters
/// XML 1.0 forbids become U+FFFD, tab, line feed and carriage return stay
/// (preformatted text keeps its lines), and other [`is_hidden`] characters
/// are written as [`terminal`] writes them, so a chart shows what a
/// terminal shows. `]]>` cannot survive (its `>` becomes `&gt;`).
///
/// ```
/// use clout_dsl::escape::xml;
/// assert_eq!(xml("A & B <i>"), "A &amp; B &lt;i&gt;");
/// assert_eq!(xml("x\u{7}y"), "x\u{fffd}y");
/// ```
pub fn xml(text: &str) -> Cow<'_, str> {
    let plain = |c: char| {
        matches!(c, '\t' | '\n' | '\r')
            || !matches!(c, '&' | '<' | '>' | '"' | '\'') && !is_hidden(c) && xml_allowed(c)
    };
    if text.chars().all(plain) {
        return Cow::Borrowed(text);
    }
    let mut out = String::with_capacity(text.len() + 16);
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            '\t' | '\n' | '\r' => out.push(c),
            c if !xml_allowed(c) => out.push('\u{fffd}'),
            c => push_terminal(&mut out, c),
        }
    }
    Cow::Owned(out)
}

/// True when a spreadsheet would read a cell starting with `c` as a formula
/// (common practice, as the OWASP "CSV Injection" page lists them: `=`, `+`,
/// `-`, `@`, tab and carriage return).
fn formula_trigger(c: char) -> bool {
    matches!(c, '=' | '+' | '-' | '@' | '\t' | '\r')
}

/// `text` as one CSV field (RFC 4180 quoting): first as [`terminal`] (so the
/// file is also safe to print), then a `'` before a leading formula trigger
/// (`=`, `+`, `-`, `@`), then quoted with doubled `"` when it holds a comma,
/// a quote, a line break or leading or trailing space. Use it for text
/// fields only; numbers are written as they are.
///
/// ```
/// use clout_dsl::escape::csv_field;
/// assert_eq!(csv_field("north"), "north");
/// assert_eq!(csv_field("=1+2"), "'=1+2");
/// assert_eq!(csv_field("a, \"b\""), "\"a, \"\"b\"\"\"");
/// ```
pub fn csv_field(text: &str) -> Cow<'_, str> {
    let shown = terminal(text);
    let guarded = match shown.chars().next() {
        Some(c) if formula_trigger(c) => Cow::Owned(format!("'{shown}")),
        _ => shown,
    };
    let needs_quotes =
        guarded.contains([',', '"', '\n', '\r']) || guarded.starts_with(' ') || guarded.ends_with(' ');
    if needs_quotes {
        Cow::Owned(format!("\"{}\"", guarded.replace('"', "\"\"")))
    } else {
        guarded
    }
}

/// A serde_json formatter that writes every [`is_hidden`] character as a
/// `\uXXXX` escape (a surrogate pair above U+FFFF). serde_json alone escapes
/// only U+0000-U+001F, `"` and `\`: DEL, C1 controls and bidirectional
/// overrides would reach a terminal raw. The document decodes to the same
/// strings.
struct HiddenEscaped(serde_json::ser::PrettyFormatter<'static>);

impl serde_json::ser::Formatter for HiddenEscaped {
    fn write_string_fragment<W: ?Sized + std::io::Write>(
        &mut self,
        writer: &mut W,
        fragment: &str,
    ) -> std::io::Result<()> {
        let mut start = 0;
        for (at, c) in fragment.char_indices() {
            if is_hidden(c) {
                writer.write_all(&fragment.as_bytes()[start..at])?;
                let mut units = [0u16; 2];
                for unit in c.encode_utf16(&mut units) {
                    write!(writer, "\\u{:04x}", unit)?;
                }
                start = at + c.len_utf8();
            }
        }
        writer.write_all(&fragment.as_bytes()[start..])
    }

    // The pretty layout is PrettyFormatter's; only strings differ.
    fn begin_array<W: ?Sized + std::io::Write>(&mut self, w: &mut W) -> std::io::Result<()> {
        self.0.begin_array(w)
    }
    fn end_array<W: ?Sized + std::io::Write>(&mut self, w: &mut W) -> std::io::Result<()> {
        self.0.end_array(w)
    }
    fn begin_array_value<W: ?Sized + std::io::Write>(
        &mut self,
        w: &mut W,
        first: bool,
    ) -> std::io::Result<()> {
        self.0.begin_array_value(w, first)
    }
    fn end_array_value<W: ?Sized + std::io::Write>(&mut self, w: &mut W) -> std::io::Result<()> {
        self.0.end_array_value(w)
    }
    fn begin_object<W: ?Sized + std::io::Write>(&mut self, w: &mut W) -> std::io::Result<()> {
        self.0.begin_object(w)
    }
    fn end_object<W: ?Sized + std::io::Write>(&mut self, w: &mut W) -> std::io::Result<()> {
        self.0.end_object(w)
    }
    fn begin_object_key<W: ?Sized + std::io::Write>(
        &mut self,
        w: &mut W,
        first: bool,
    ) -> std::io::Result<()> {
        self.0.begin_object_key(w, first)
    }
    fn begin_object_value<W: ?Sized + std::io::Write>(&mut self, w: &mut W) -> std::io::Result<()> {
        self.0.begin_object_value(w)
    }
    fn end_object_value<W: ?Sized + std::io::Write>(&mut self, w: &mut W) -> std::io::Result<()> {
        self.0.end_object_value(w)
    }
}

/// `value` as pretty JSON (serde_json's layout) in which every
/// [`is_hidden`] character is a `\uXXXX` escape, so the document is safe to
/// print and parses back to the same value.
///
/// ```
/// let s = clout_dsl::escape::json_pretty(&"a\u{202e}b").unwrap();
/// assert_eq!(s, "\"a\\u202eb\"");
/// ```
pub fn json_pretty<T: serde::Serialize + ?Sized>(value: &T) -> serde_json::Result<String> {
    let mut bytes = Vec::with_capacity(128);
    let formatter = HiddenEscaped(serde_json::ser::PrettyFormatter::new());
    let mut serializer = serde_json::Serializer::with_formatter(&mut bytes, formatter);
    value.serialize(&mut serializer)?;
    // The serializer writes only whole UTF-8 strings and ASCII.
    String::from_utf8(bytes).map_err(|e| serde::ser::Error::custom(e.to_string()))
}

#[cfg(test)]
mod tests {
    use super::*;

    const HOSTILE: &str = "T\u{1b}[2J\u{7}\u{202e}<script>]]>\"&'\u{9b}\u{2066}\u{feff}\u{e0041}\n\u{0}";

    #[test]
    fn terminal_leaves_no_hidden_character() {
        let shown = terminal(HOSTILE);
        assert!(!shown.chars().any(is_hidden), "{shown:?}");
        assert!(shown.contains("\\u{1b}[2J\\u{7}\\u{202e}<script>"));
        assert!(shown.contains("\\u{e0041}\\u{a}\\u{0}"));
        assert!(matches!(terminal("plain"), Cow::Borrowed(_)));
        assert_eq!(terminal_lines("a\u{1b}\nb\u{202e}\n"), "a\\u{1b}\nb\\u{202e}\n");
    }

    #[test]
    fn terminal_width_matches_the_escape() {
        for c in [
            '\u{0}',
            '\u{7}',
            '\u{1b}',
            '\u{9b}',
            '\u{202e}',
            '\u{feff}',
            '\u{e0041}',
            'a',
            'é',
        ] {
            assert_eq!(
                terminal(&c.to_string()).chars().count(),
                terminal_width(c),
                "{c:?}"
            );
        }
    }

    #[test]
    fn xml_escapes_markup_and_forbidden_characters() {
        let x = xml(HOSTILE);
        assert!(!x.contains(['<', '>', '"', '\'', '\u{1b}', '\u{7}', '\u{0}', '\u{202e}']));
        assert!(x.contains("&lt;script&gt;]]&gt;&quot;&amp;&#39;"));
        assert!(!x
            .chars()
            .any(|c| !xml_allowed(c) || (is_hidden(c) && !matches!(c, '\t' | '\n' | '\r'))));
        assert_eq!(xml("a\nb\tc"), "a\nb\tc");
        // The two non-characters XML also forbids.
        assert_eq!(xml("\u{fffe}\u{ffff}"), "\u{fffd}\u{fffd}");
    }

    #[test]
    fn csv_guards_formulas_and_quotes() {
        assert_eq!(csv_field("+1"), "'+1");
        assert_eq!(csv_field("-x"), "'-x");
        assert_eq!(csv_field("@SUM(A1)"), "'@SUM(A1)");
        assert_eq!(csv_field("a\"b"), "\"a\"\"b\"");
        assert_eq!(csv_field(" pad"), "\" pad\"");
        // Line breaks are escaped before quoting is considered.
        assert_eq!(csv_field("a\nb"), "a\\u{a}b");
        assert_eq!(csv_field("\tx"), "\\u{9}x");
    }

    #[test]
    fn csv_field_round_trips_through_the_csv_crate() {
        for text in [HOSTILE, "a,b", "\"", "=cmd|' /C calc'!A0", "  ", "", "x\r\ny"] {
            let line = format!("{},{}\n", csv_field(text), csv_field("next"));
            let mut reader = csv::ReaderBuilder::new()
                .has_headers(false)
                .from_reader(line.as_bytes());
            let record = reader.records().next().unwrap().unwrap();
            let mut expected = terminal(text).into_owned();
            if expected.starts_with(formula_trigger) {
                expected.insert(0, '\'');
            }
            assert_eq!(&record[0], expected, "{text:?}");
            assert_eq!(&record[1], "next");
        }
    }

    #[test]
    fn json_escapes_hidden_characters_and_round_trips() {
        let value = serde_json::json!({ "title": HOSTILE, "n": [1, 2] });
        let s = json_pretty(&value).unwrap();
        assert!(!s.chars().any(|c| is_hidden(c) && c != '\n'), "{s:?}");
        assert!(s.contains("\\u202e") && s.contains("\\u009b") && s.contains("\\udb40\\udc41"));
        let back: serde_json::Value = serde_json::from_str(&s).unwrap();
        assert_eq!(back, value);
        // Same layout as serde_json's own pretty printer for plain data.
        let plain = serde_json::json!({ "a": [1, { "b": "c" }], "d": [] });
        assert_eq!(
            json_pretty(&plain).unwrap(),
            serde_json::to_string_pretty(&plain).unwrap()
        );
    }
}
