//! A lexical pass ahead of pest: where each declaration starts, how deeply
//! it nests, and which names a stretch of text mentions.
//!
//! Every declaration starts with a keyword (`title`, `member`, `members`,
//! `bloc`, `define`, `rule`) and no declaration can hold one (keywords are
//! not names), so the keywords cut a file into *chunks*, one declaration
//! each, whatever errors the file holds. Keywords inside comments and
//! quoted titles, and inside longer words (`rules`, `bloc_2`), are not cuts.
//!
//! Nesting (parentheses and `not`) is counted per chunk before pest sees it:
//! pest recurses once per level, so a chunk nested deeper than
//! [`MAX_NESTING`] is refused here and never parsed.
//!
//! One pass over the bytes: O(source) time, O(chunks) space; no recursion.

use crate::diagnostic::{Diagnostic, Span};

/// Deepest nesting of parentheses and `not` accepted.
pub const MAX_NESTING: usize = 64;

/// The words that start a declaration, longest first where one is a prefix
/// of another.
pub(super) const DECLARATION_KEYWORDS: [&str; 7] = [
    "title",
    "members",
    "member",
    "attribute",
    "bloc",
    "define",
    "rule",
];

/// One stretch of the source: the text before the first declaration
/// keyword, or one declaration keyword up to the next.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(super) struct Chunk {
    /// First byte: a declaration keyword, or 0 for the text before the first.
    pub start: usize,
    /// One past the last byte: the next keyword, or the end of the file.
    pub end: usize,
    /// Its keyword, `None` for the text before the first declaration.
    pub keyword: Option<&'static str>,
    /// The first place it nests too deeply, if any.
    pub too_deep: Option<Diagnostic>,
    /// Whether it holds code on more than one line.
    pub several_lines: bool,
}

impl Chunk {
    /// Records the first place the chunk nests too deeply.
    fn refuse(&mut self, span: Span, message: String, hint: &str) {
        if self.too_deep.is_none() {
            self.too_deep = Some(Diagnostic::error(span, message).with_hint(hint));
        }
    }
}

/// What the scanner is inside of.
#[derive(Clone, Copy, PartialEq, Eq)]
enum Inside {
    Code,
    /// A quoted title, which ends at `"` or at the end of the line.
    Quote,
    /// A comment, which ends at the end of the line.
    Comment,
}

fn is_ident(b: u8) -> bool {
    b.is_ascii_alphanumeric() || b == b'_'
}

/// The declaration keyword at `i` (where a word starts), if any.
fn keyword_at(bytes: &[u8], i: usize) -> Option<&'static str> {
    DECLARATION_KEYWORDS.into_iter().find(|k| {
        bytes[i..].starts_with(k.as_bytes()) && bytes.get(i + k.len()).is_none_or(|&b| !is_ident(b))
    })
}

/// The chunks of `source`, in order, covering it exactly. The first chunk
/// (keyword `None`) is the text before the first declaration; it may be empty.
pub(super) fn chunks(source: &str) -> Vec<Chunk> {
    let bytes = source.as_bytes();
    let mut out = vec![Chunk {
        start: 0,
        end: source.len(),
        keyword: None,
        too_deep: None,
        several_lines: false,
    }];
    let mut inside = Inside::Code;
    let (mut depth, mut negations) = (0usize, 0usize);
    // Inside a number (digits and `_` after a digit that starts a word).
    let mut in_number = false;
    // Lines of the current chunk that hold code, counted up to 2.
    let (mut code_lines, mut line_has_code) = (0u8, false);
    // After a backslash inside quotes: the next byte is escaped.
    let mut escaped = false;
    for (i, &b) in bytes.iter().enumerate() {
        match inside {
            Inside::Quote if escaped && b != b'\n' => escaped = false,
            Inside::Quote if b == b'\\' => escaped = true,
            Inside::Quote if b == b'"' => inside = Inside::Code,
            Inside::Quote | Inside::Comment if b == b'\n' => {
                escaped = false;
                inside = Inside::Code;
            }
            Inside::Quote | Inside::Comment => {}
            Inside::Code => {
                if b == b'\n' {
                    line_has_code = false;
                    continue;
                }
                if b.is_ascii_whitespace() {
                    continue;
                }
                if b == b'#' {
                    inside = Inside::Comment;
                    continue;
                }
                // A word starts after a non-word byte, or right after the
                // digits of a number (pest reads `2rule` as `2`, `rule`).
                let word_start = i == 0 || !is_ident(bytes[i - 1]) || (in_number && b.is_ascii_alphabetic());
                in_number = if word_start {
                    b.is_ascii_digit()
                } else {
                    in_number && (b.is_ascii_digit() || b == b'_')
                };
                if word_start {
                    if let Some(k) = keyword_at(bytes, i) {
                        in_number = false;
                        if let Some(last) = out.last_mut() {
                            last.end = i;
                            last.several_lines = code_lines > 1;
                        }
                        out.push(Chunk {
                            start: i,
                            end: source.len(),
                            keyword: Some(k),
                            too_deep: None,
                            several_lines: false,
                        });
                        (depth, negations, code_lines, line_has_code) = (0, 0, 1, true);
                        continue;
                    }
                }
                if !line_has_code {
                    line_has_code = true;
                    code_lines = code_lines.saturating_add(1);
                }
                let Some(chunk) = out.last_mut() else { continue };
                match b {
                    b'"' => inside = Inside::Quote,
                    b'(' => {
                        depth += 1;
                        if depth > MAX_NESTING {
                            chunk.refuse(
                                Span::new(i, i + 1),
                                format!("parentheses nested deeper than {MAX_NESTING}"),
                                "split the condition into named parts with `define`",
                            );
                        }
                    }
                    b')' => depth = depth.saturating_sub(1),
                    b'n' | b'N'
                        if word_start
                            && bytes[i..]
                                .get(..3)
                                .is_some_and(|w| w.eq_ignore_ascii_case(b"not"))
                            && bytes.get(i + 3).is_none_or(|&b| !is_ident(b)) =>
                    {
                        negations += 1;
                        if negations > MAX_NESTING {
                            chunk.refuse(
                                Span::new(i, i + 3),
                                format!("more than {MAX_NESTING} uses of `not`"),
                                "rules are monotone: `not` is refused anyway",
                            );
                        }
                    }
                    _ => {}
                }
            }
        }
    }
    if let Some(last) = out.last_mut() {
        last.several_lines = code_lines > 1;
    }
    out
}

/// The names a broken stretch of text may mention, outside comments: each
/// word that starts with a letter or `_`, and each run of text between
/// spaces with its other characters dropped (`exec"utive`, `over,ride` and
/// `a,b` give `executive`, `override` and `ab` besides their words). Quotes
/// count as stray characters here: in broken text they often are.
pub(super) fn names_in(text: &str, mut name: impl FnMut(&str)) {
    let is_name = |w: &str| w.starts_with(|c: char| c.is_ascii_alphabetic() || c == '_');
    let is_word_char = |c: char| c.is_ascii_alphanumeric() || c == '_';
    for line in text.lines() {
        let code = line.split('#').next().unwrap_or("");
        for run in code.split_ascii_whitespace() {
            run.split(|c: char| !is_word_char(c))
                .filter(|w| is_name(w))
                .for_each(&mut name);
            if !run.chars().all(is_word_char) {
                let joined: String = run.chars().filter(|&c| is_word_char(c)).collect();
                if is_name(&joined) {
                    name(&joined);
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn cuts(source: &str) -> Vec<(usize, Option<&'static str>)> {
        chunks(source).iter().map(|c| (c.start, c.keyword)).collect()
    }

    #[test]
    fn keywords_cut_the_file_into_declarations() {
        let src = "# head\nmember a seats=1\nmembers d x3\nrule r = a\n  and d";
        assert_eq!(
            cuts(src),
            [
                (0, None),
                (7, Some("member")),
                (24, Some("members")),
                (37, Some("rule"))
            ]
        );
        let c = chunks(src);
        assert_eq!((c[0].end, c[1].end, c[3].end), (7, 24, src.len()));
        assert!(c[3].several_lines && !c[1].several_lines);
        assert!(!c[0].several_lines, "a comment is not code");
    }

    #[test]
    fn keywords_in_titles_comments_and_longer_words_do_not_cut() {
        let src = "title \"the rule # book\" # member\nrule rules = bloc_2 and xrule and rule_\n";
        assert_eq!(cuts(src), [(0, None), (0, Some("title")), (33, Some("rule"))]);
        // An unterminated title ends at the end of its line.
        assert_eq!(cuts("title \"x\nrule r = a").len(), 3);
    }

    #[test]
    fn nesting_is_counted_per_declaration() {
        let deep = format!("rule r = {}a >= 1", "(".repeat(MAX_NESTING + 1));
        let c = chunks(&deep);
        let e = c[1].too_deep.as_ref().unwrap();
        assert_eq!(e.message, "parentheses nested deeper than 64");
        assert_eq!(e.span.start, 9 + MAX_NESTING);
        // Unclosed parentheses do not carry over to the next declaration.
        let open = format!("rule r = {}\n", "(".repeat(40)).repeat(3);
        assert!(chunks(&open).iter().all(|c| c.too_deep.is_none()));
        let nots = format!("rule r = {}a", "NOT ".repeat(MAX_NESTING + 1));
        assert_eq!(
            chunks(&nots)[1].too_deep.as_ref().unwrap().message,
            "more than 64 uses of `not`"
        );
        assert!(chunks("rule r = nothing and knot")
            .iter()
            .all(|c| c.too_deep.is_none()));
    }

    #[test]
    fn a_keyword_right_after_a_number_cuts_as_pest_reads_it() {
        // pest reads `seats=2rule` as a weight 2, then a rule; `x2rule` and
        // `a2rule` are names.
        assert_eq!(
            cuts("member a seats=2rule r = a\nrule s = x2rule and a2rule and 1_0bloc"),
            [
                (0, None),
                (0, Some("member")),
                (16, Some("rule")),
                (27, Some("rule")),
                (61, Some("bloc"))
            ]
        );
        assert_eq!(cuts("rule r = 2 not2not"), [(0, None), (0, Some("rule"))]);
    }

    fn names(text: &str) -> Vec<String> {
        let mut out = Vec::new();
        names_in(text, |n| out.push(n.to_string()));
        out
    }

    #[test]
    fn names_skip_numbers_and_comments_and_join_broken_words() {
        assert_eq!(
            names("member a2 seats=1_0 # rest\nb"),
            ["member", "a2", "seats", "seats1_0", "b"]
        );
        assert_eq!(
            names("member exec\"utive"),
            ["member", "exec", "utive", "executive"]
        );
        assert_eq!(
            names("define over,ride = 2"),
            ["define", "over", "ride", "override"]
        );
    }
}
