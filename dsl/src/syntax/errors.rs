//! Syntax errors: pest's failures as [`Diagnostic`]s that say what was
//! expected (in the language's words, not the grammar's rule names), what
//! was found, and a hint.
//!
//! Time O(length of the offending token) per error, plus O(distance back to
//! the last token) when the error is at the end of the file.

use super::grammar::Rule as G;
use crate::diagnostic::{closest, Diagnostic, Span};

/// Turns a pest error into ours: what was expected, what was found, and a
/// hint chosen from what was expected.
///
/// pest parsed `source[offset..]`; `alone` says that it read one
/// declaration alone (`one_declaration`). Where pest then expected the end
/// of its input, the file as a whole expects another declaration or its
/// end, and the message says so: each error reads as it would if it were
/// the first of the file.
pub(super) fn syntax_error(
    source: &str,
    offset: usize,
    e: &pest::error::Error<G>,
    alone: bool,
) -> Diagnostic {
    let (span, found) = located(source, offset, e);
    let mut positives: Vec<G> = match &e.variant {
        pest::error::ErrorVariant::ParsingError { positives, .. } => positives.clone(),
        // pest's own limits ("stack limit reached" on a thread with little stack).
        pest::error::ErrorVariant::CustomError { message } => {
            return Diagnostic::error(span, format!("the parser stopped here: {message}")).with_hint(
                "split the condition into named parts with `define`, or give the program more stack",
            );
        }
    };
    if alone && positives.contains(&G::EOI) {
        // What pest attempts at the start of a declaration; pest lists its
        // positives sorted and without repeats, so this list does too.
        let keywords = [
            G::kw_title,
            G::kw_member,
            G::kw_members,
            G::kw_attribute,
            G::kw_bloc,
            G::kw_define,
            G::kw_rule,
        ];
        positives.extend(keywords);
        positives.sort_unstable();
        positives.dedup();
    }
    let mut expected: Vec<&str> = Vec::new();
    for d in positives.iter().filter_map(|r| describe(*r)) {
        if !expected.contains(&d) {
            expected.push(d);
        }
    }
    if expected.len() > 1 {
        expected.retain(|d| *d != "the end of the file");
    }
    let condition = expected.contains(&"a name") && expected.contains(&"an amount");
    if condition {
        expected.retain(|d| *d != "a name" && *d != "an amount");
        expected.insert(0, "a condition");
    }
    let shown = if found.is_empty() {
        "the end of the file".to_string()
    } else {
        format!("`{found}`")
    };
    let message = match expected.as_slice() {
        [] => format!("unexpected {shown}"),
        [one] => format!("expected {one}, found {shown}"),
        [init @ .., last] => format!("expected {} or {last}, found {shown}", init.join(", ")),
    };
    let is_word = found.len() > 2 && found.chars().all(|c| c.is_ascii_alphabetic());
    let typo = closest(found, KEYWORDS).filter(|k| *k != found && is_word);
    let hint = match typo {
        Some(k) => Some(format!("did you mean `{k}`?")),
        None => positives
            .iter()
            .chain(condition.then_some(&G::condition))
            .filter_map(|r| hint_for(*r))
            .min_by_key(|(rank, _)| *rank)
            .map(|(_, h)| h.to_string()),
    };
    let d = Diagnostic::error(span, message);
    match hint {
        Some(h) => d.with_hint(h),
        None => d,
    }
}

/// Where the error is shown, and the token found there (empty at the end of the file).
fn located<'s>(source: &'s str, offset: usize, e: &pest::error::Error<G>) -> (Span, &'s str) {
    let at = offset + position(e);
    let found = token_at(source, at);
    // At the end of the file, point just after the last thing written.
    let at = if found.is_empty() {
        end_of_content(source, at)
    } else {
        at
    };
    (Span::new(at, at + found.len().max(1)), found)
}

/// The error where [`syntax_error`] puts it, without its text: for an error
/// that is only counted (past the ones shown), at a fraction of the cost.
pub(super) fn counted_only(source: &str, offset: usize, e: &pest::error::Error<G>) -> Diagnostic {
    Diagnostic::error(located(source, offset, e).0, String::new())
}

/// Where pest failed, in its input.
pub(super) fn position(e: &pest::error::Error<G>) -> usize {
    match e.location {
        pest::error::InputLocation::Pos(p) => p,
        pest::error::InputLocation::Span((s, _)) => s,
    }
}

use crate::quote::KEYWORDS;

/// The end of the last token before `at` (skipping white space and
/// comments), found by walking back line by line from `at`.
pub(crate) fn end_of_content(source: &str, at: usize) -> usize {
    let mut at = at.min(source.len());
    while !source.is_char_boundary(at) {
        at -= 1;
    }
    let before = &source[..at];
    for line in before.split_inclusive('\n').rev() {
        let code = line.split('#').next().unwrap_or("");
        let trimmed = code.trim_end();
        if !trimmed.is_empty() {
            let start = line.as_ptr() as usize - before.as_ptr() as usize;
            return start + trimmed.len();
        }
    }
    0
}

/// The token starting at byte `at`: a word, a number, or one symbol.
fn token_at(source: &str, at: usize) -> &str {
    let rest = source.get(at..).unwrap_or("");
    let word = rest
        .char_indices()
        .find(|(_, c)| !(c.is_alphanumeric() || *c == '_' || *c == '.' || *c == '%'))
        .map_or(rest.len(), |(i, _)| i);
    if word > 0 {
        return &rest[..word];
    }
    match rest.chars().next() {
        Some(c) if c != '\n' && c != '\r' => &rest[..c.len_utf8()],
        _ => "",
    }
}

/// A rule that begins a declaration (the keyword or the whole declaration).
fn starts_declaration(kind: G) -> bool {
    matches!(
        kind,
        G::declaration
            | G::title
            | G::member
            | G::group
            | G::attribute
            | G::kw_attribute
            | G::bloc
            | G::define
            | G::rule
            | G::kw_title
            | G::kw_member
            | G::kw_members
            | G::kw_bloc
            | G::kw_define
            | G::kw_rule
    )
}

fn describe(kind: G) -> Option<&'static str> {
    Some(match kind {
        G::EOI => "the end of the file",
        k if starts_declaration(k) => {
            "a declaration (`title`, `member`, `members`, `attribute`, `bloc`, `define` or `rule`)"
        }
        G::game => "`[`",
        G::close => "`)`",
        G::comma => "`,`",
        G::semicolon => "`;`",
        G::game_end => "`]`",
        G::name | G::plain_name | G::quoted_name | G::reference | G::subject | G::column => "a name",
        G::weight => "a weight such as `seats=3`",
        G::repeat => "a repeat count such as `x12`",
        G::expr | G::any_of | G::all_of | G::condition | G::k_of | G::negation | G::primary => "a condition",
        G::kw_and => "`and`",
        G::kw_or => "`or`",
        G::kw_of => "`of`",
        G::against | G::kw_against => "`against`",
        G::comparison => "a comparison (`>=` or `>`)",
        G::amount | G::integer | G::percent | G::fraction | G::decimal | G::bare_decimal | G::quantity => {
            "an amount"
        }
        G::kw_decimals => "`decimals`",
        G::kw_unit => "`unit`",
        G::table | G::kw_from => "`from`",
        G::game_weight => "a weight",
        G::string | G::text => "a quoted title",
        G::kw_count => "`count`",
        _ => return None,
    })
}

/// A hint for an expected rule, with a rank: the lowest rank among the
/// expected rules wins.
fn hint_for(kind: G) -> Option<(u8, &'static str)> {
    let declaration =
        "every declaration starts with one of the keywords `title`, `member`, `members`, `attribute`, `bloc`, `define`, `rule`";
    Some(match kind {
        G::game_end | G::comma | G::semicolon => {
            (0, "the notation is `[q; w1, w2, ...]`, with `w xK` for K members of weight w")
        }
        G::close => (1, "every `(` needs its `)`"),
        k if starts_declaration(k) => (2, declaration),
        G::expr | G::any_of | G::all_of | G::condition | G::k_of | G::reference => (
            3,
            "a condition is `ATTRIBUTE >= AMOUNT`, `K of BLOC`, a member or bloc name, or conditions joined by `and` / `or`",
        ),
        G::comparison => (4, "a condition reads `ATTRIBUTE >= AMOUNT`, e.g. `seats > 1/2` or `count against < 3`"),
        G::amount | G::integer | G::percent | G::fraction | G::quantity => {
            (5, "an amount is a whole number (`12`), a percentage (`62.5%`) or a fraction (`2/3`)")
        }
        G::repeat => (6, "`members NAME xK` declares K identical members NAME1 .. NAMEK"),
        G::weight => (7, "weights are written `attribute=number`, e.g. `seats=9`"),
        G::name => (8, "names start with a letter or `_`, or are written in double quotes (`\"0x3f5a\"`); keywords such as `count`, `of` and `rule` are quoted to be names"),
        G::string => (9, "write the title in double quotes on one line"),
        _ => return None,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The old forward scan, kept as the oracle of the backward one.
    fn end_by_forward_scan(source: &str, at: usize) -> usize {
        let before = &source[..at.min(source.len())];
        let mut end = 0;
        for line in before.split_inclusive('\n') {
            let trimmed = line.split('#').next().unwrap_or("").trim_end();
            let start = line.as_ptr() as usize - before.as_ptr() as usize;
            if !trimmed.is_empty() {
                end = start + trimmed.len();
            }
        }
        end
    }

    #[test]
    fn end_of_content_skips_blank_lines_and_comments_backwards() {
        let src = "member a seats=1  # c\n\n   \n# only\nrule r = a >=\n\n";
        for at in 0..=src.len() {
            assert_eq!(end_of_content(src, at), end_by_forward_scan(src, at), "at {at}");
        }
        assert_eq!(end_of_content(src, src.len()), src.find(">=").unwrap() + 2);
        assert_eq!(end_of_content("", 0), 0);
    }

    #[test]
    fn tokens_are_words_numbers_or_one_symbol() {
        assert_eq!(token_at("seats>=3", 0), "seats");
        assert_eq!(token_at("seats>=3", 5), ">");
        assert_eq!(token_at("62.5% x", 0), "62.5%");
        assert_eq!(token_at("a\nb", 1), "");
        assert_eq!(token_at("a", 9), "");
    }

    #[test]
    fn every_declaration_rule_reads_as_a_declaration() {
        for kind in [G::declaration, G::title, G::member, G::kw_members, G::rule] {
            assert!(describe(kind).unwrap().starts_with("a declaration"));
            assert_eq!(hint_for(kind).map(|h| h.0), Some(2));
        }
    }
}
