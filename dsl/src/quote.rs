//! Names as written in rule text: plain identifiers (`harbor`, `rep12`) or,
//! for any other string a data table may hold (`0x3f5a…`, `Zoë Brandt`,
//! `Smith, J.`), a quoted name `"..."` with escapes.
//!
//! | escape | stands for |
//! | --- | --- |
//! | `\"` | `"` |
//! | `\\` | `\` |
//! | `\n`, `\t` | line feed, tab |
//! | `\u{1F600}` | any character by its hexadecimal code point |
//!
//! [`written`] gives the form a name must take in rule text, so every name
//! the language prints compiles back: plain when it is an identifier and
//! not a keyword, quoted otherwise, with `"` and `\` escaped and every
//! control character and bidirectional formatting character (which can
//! reorder or hide text on a terminal) written as `\u{...}`. Output is
//! therefore safe to print on a terminal. Time O(length) everywhere.

use std::borrow::Cow;

/// Words that are never plain names (the language's keywords).
pub(crate) const KEYWORDS: [&str; 13] = [
    "title",
    "members",
    "member",
    "attribute",
    "bloc",
    "define",
    "rule",
    "count",
    "against",
    "of",
    "and",
    "or",
    "not",
];

/// Whether `name` can be written without quotes: an identifier (a letter
/// or `_`, then letters, digits and `_`, all ASCII) that is not a keyword.
pub fn is_plain(name: &str) -> bool {
    let mut bytes = name.bytes();
    let starts = matches!(bytes.next(), Some(b) if b.is_ascii_alphabetic() || b == b'_');
    starts
        && bytes.all(|b| b.is_ascii_alphanumeric() || b == b'_')
        && !KEYWORDS.iter().any(|k| k.eq_ignore_ascii_case(name))
}

/// Whether a character must be escaped inside a quoted name: control,
/// bidirectional and other invisible format characters
/// ([`crate::escape::is_hidden`]).
fn needs_escape(c: char) -> bool {
    crate::escape::is_hidden(c)
}

/// `name` as it must be written in rule text: as is when plain, else quoted
/// and escaped. Safe to print on a terminal.
pub fn written(name: &str) -> Cow<'_, str> {
    if is_plain(name) {
        return Cow::Borrowed(name);
    }
    let mut out = String::with_capacity(name.len() + 2);
    out.push('"');
    for c in name.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            '\n' => out.push_str("\\n"),
            '\t' => out.push_str("\\t"),
            c if needs_escape(c) => out.push_str(&format!("\\u{{{:x}}}", u32::from(c))),
            c => out.push(c),
        }
    }
    out.push('"');
    Cow::Owned(out)
}

/// Any text (a motion's name, a file name) safe to print on a terminal:
/// control and bidirectional formatting characters written as `\u{...}`,
/// everything else as is, without quotes.
pub fn shown(text: &str) -> Cow<'_, str> {
    crate::escape::terminal(text)
}

/// The text between the quotes of a quoted name, unescaped. On a bad
/// escape: the byte offset of its backslash within `inner` and a message.
pub fn unescape(inner: &str) -> Result<String, (usize, String)> {
    let mut out = String::with_capacity(inner.len());
    let mut chars = inner.char_indices();
    while let Some((at, c)) = chars.next() {
        if c != '\\' {
            out.push(c);
            continue;
        }
        let bad = |what: String| (at, what);
        match chars.next() {
            Some((_, '"')) => out.push('"'),
            Some((_, '\\')) => out.push('\\'),
            Some((_, 'n')) => out.push('\n'),
            Some((_, 't')) => out.push('\t'),
            Some((_, 'u')) => {
                let rest = &inner[at + 2..];
                let code = rest
                    .strip_prefix('{')
                    .and_then(|r| r.split_once('}'))
                    .map(|(hex, _)| hex)
                    .filter(|hex| (1..=6).contains(&hex.len()));
                let Some(hex) = code else {
                    return Err(bad(
                        "`\\u` needs a code point in braces, e.g. `\\u{e9}`".to_string()
                    ));
                };
                let c = u32::from_str_radix(hex, 16)
                    .ok()
                    .and_then(char::from_u32)
                    .ok_or_else(|| bad(format!("`\\u{{{hex}}}` is not a character")))?;
                out.push(c);
                // Skip `{hex}`.
                for _ in 0..hex.len() + 2 {
                    chars.next();
                }
            }
            Some((_, other)) => return Err(bad(format!("unknown escape `\\{other}`"))),
            None => return Err(bad("a quoted name ends with `\\`".to_string())),
        }
    }
    Ok(out)
}

/// A comma-separated list of names as the command line takes them
/// (`harbor,"Smith, J.",rep1..rep4`): quoted names may hold commas. Spaces
/// around each entry are dropped.
pub fn split_list(list: &str) -> Result<Vec<String>, String> {
    let mut out = Vec::new();
    let mut rest = list.trim_start();
    while !rest.is_empty() {
        if let Some(quoted) = rest.strip_prefix('"') {
            let end = closing_quote(quoted).ok_or_else(|| format!("unclosed quote in `{list}`"))?;
            let name = unescape(&quoted[..end]).map_err(|(_, m)| m)?;
            out.push(name);
            rest = quoted[end + 1..].trim_start();
            match rest.strip_prefix(',') {
                Some(r) => rest = r.trim_start(),
                None if rest.is_empty() => {}
                None => return Err(format!("expected `,` after a quoted name in `{list}`")),
            }
        } else {
            let (item, after) = rest.split_once(',').unwrap_or((rest, ""));
            out.push(item.trim().to_string());
            rest = after.trim_start();
        }
    }
    Ok(out)
}

/// The byte offset of the `"` that closes a quoted name whose text starts
/// `text` (after the opening quote).
fn closing_quote(text: &str) -> Option<usize> {
    let mut escaped = false;
    for (i, b) in text.bytes().enumerate() {
        match (escaped, b) {
            (true, _) => escaped = false,
            (false, b'\\') => escaped = true,
            (false, b'"') => return Some(i),
            _ => {}
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn plain_names_stay_and_others_are_quoted() {
        assert_eq!(written("harbor"), "harbor");
        assert_eq!(written("rep_12"), "rep_12");
        assert_eq!(written("0x3f5a"), "\"0x3f5a\"");
        assert_eq!(written("Zoë Brandt"), "\"Zoë Brandt\"");
        assert_eq!(written("rule"), "\"rule\"");
        assert_eq!(written("AND"), "\"AND\"");
        assert_eq!(written("say \"hi\"\\"), r#""say \"hi\"\\""#);
        assert_eq!(written("a\u{202e}b\u{7}"), "\"a\\u{202e}b\\u{7}\"");
    }

    #[test]
    fn unescape_inverts_written() {
        for name in [
            "0x3f",
            "Zoë",
            "a\"b\\c",
            "tab\there",
            "x\u{202e}y\u{1b}[31m",
            "",
            "😀 x",
        ] {
            let w = written(name);
            let inner = &w[1..w.len() - 1];
            assert_eq!(unescape(inner).as_deref(), Ok(name), "{w}");
        }
        assert_eq!(unescape("\\u{e9}t\\u{e9}"), Ok("été".to_string()));
        assert_eq!(unescape("a\\q").unwrap_err().0, 1);
        assert!(unescape("\\u{110000}").is_err());
        assert!(unescape("\\u{}").is_err());
        assert!(unescape("x\\").is_err());
    }

    #[test]
    fn lists_split_at_commas_outside_quotes() {
        assert_eq!(
            split_list(r#"harbor, "Smith, J.",rep1..rep4 , "a\"b""#).unwrap(),
            ["harbor", "Smith, J.", "rep1..rep4", "a\"b"]
        );
        assert!(split_list("\"open").is_err());
        assert!(split_list("\"a\" b").is_err());
        assert_eq!(split_list("").unwrap(), Vec::<String>::new());
    }
}
