//! Text to syntax tree: the pest grammar (`grammar.pest`) and a tree whose
//! every node carries its [`Span`].
//!
//! | module | does |
//! | --- | --- |
//! | `scan` | cuts the file into declarations at their keywords; bounds nesting |
//! | `build` | pest's pairs to the tree (the only module that walks `Pair`s) |
//! | `numbers` | integers, percentages and fractions to exact values |
//! | `errors` | pest's failures to diagnostics in the language's words |
//! | `tree` | the tree types |
//!
//! **Every syntax error of a file is reported.** Declarations start with
//! keywords and cannot contain one, so the file is cut at its keywords and
//! each piece is parsed alone: an error sets that one declaration aside and
//! parsing goes on at the next keyword. Each error reads as it would if it
//! were the first of the file (see `errors`). The `[q; w1, ..., wn]` form is
//! the whole file, so it is parsed whole and reports its first syntax error.
//!
//! A declaration with a syntax error or a number error is *set aside*
//! (`SetAside`): the compiler checks the others and stays quiet about the
//! names the set-aside text mentions, instead of reporting each use of them
//! as unknown.
//!
//! Parsing is linear in the input: one lexical pass, then pest once per
//! declaration (twice for a declaration whose error sits on its border with
//! the previous one). Nesting of parentheses and `not` is bounded by
//! [`MAX_NESTING`] per declaration before pest recurses, so a hostile file
//! cannot exhaust the stack. pest's `Pair`s never leave this module: callers
//! see the tree or [`Diagnostic`]s.

use std::collections::HashSet;

use pest::Parser as _;

use crate::diagnostic::{CappedErrors, Diagnostic, Span};

mod build;
mod errors;
mod numbers;
mod scan;
mod tree;

pub(crate) use errors::end_of_content;
pub use numbers::MAX_DECIMALS;
pub use scan::MAX_NESTING;
pub use tree::*;

use build::Builder;
use scan::Chunk;

mod grammar {
    #[derive(pest_derive::Parser)]
    #[grammar = "grammar.pest"]
    pub struct Grammar;
}
use grammar::{Grammar, Rule as G};

/// Longest source accepted, in bytes (8 MiB): a body at the core's member
/// limit, one line per member, takes a few MiB; parsing stays within seconds.
pub const MAX_SOURCE_LEN: usize = 8 << 20;

/// Longest declared name, in bytes.
pub const MAX_NAME_LEN: usize = 128;

/// Checks a file's raw bytes before compiling: at most [`MAX_SOURCE_LEN`]
/// bytes of UTF-8. The error points at the first byte that is not UTF-8 (or
/// at the limit); render it against `String::from_utf8_lossy(bytes)`, whose
/// text up to that byte is the same.
pub fn decode(bytes: &[u8]) -> Result<&str, Diagnostic> {
    if bytes.len() > MAX_SOURCE_LEN {
        let at = match std::str::from_utf8(&bytes[..MAX_SOURCE_LEN]) {
            Ok(_) => MAX_SOURCE_LEN,
            Err(e) => e.valid_up_to(),
        };
        return Err(too_long(at));
    }
    std::str::from_utf8(bytes).map_err(|e| {
        let at = e.valid_up_to();
        let len = e.error_len().unwrap_or(bytes.len() - at).max(1);
        let shown: Vec<String> = bytes[at..at + len].iter().map(|b| format!("0x{b:02X}")).collect();
        Diagnostic::error(
            Span::new(at, at + 1),
            format!(
                "the file is not UTF-8 text: byte {} cannot start or continue a character",
                shown.join(" ")
            ),
        )
        .with_hint("save the file as UTF-8 (rule files are text; binary data and UTF-16 are refused)")
    })
}

fn too_long(at: usize) -> Diagnostic {
    Diagnostic::error(
        Span::new(at, at + 1),
        format!("the file is longer than the limit of {MAX_SOURCE_LEN} bytes (8 MiB)"),
    )
    .with_hint("a rule file this large is not a rule; model large chambers as groups with `members NAME xK`")
}

/// Parses a whole file.
///
/// Returns the tree, or every syntax and number error of the file (at most
/// [`MAX_DIAGNOSTICS`](crate::diagnostic::MAX_DIAGNOSTICS), then a note that
/// counts the rest).
pub fn parse(source: &str) -> Result<File, Vec<Diagnostic>> {
    let mut errors = CappedErrors::new();
    let parsed = parse_recovering(source, &mut errors);
    match parsed.file {
        Some(file) if errors.is_empty() => Ok(file),
        _ => Err(errors.into_vec()),
    }
}

/// What [`parse_recovering`] read.
#[derive(Debug)]
pub(crate) struct Parsed {
    /// The well-formed declarations (or the game); `None` when the file is
    /// refused as a whole (too long, or a `[q; ...]` form with an error).
    pub file: Option<File>,
    /// What was set aside.
    pub set_aside: SetAside,
}

/// The declarations set aside for a syntax or number error: what the
/// compiler needs to avoid errors that only follow from them.
///
/// Policy: a later use of a name that a set-aside declaration mentions (or
/// of `NAMEk` for such a `NAME`, a member its `members NAME xK` would have
/// made) is not reported as unknown; when a set-aside declaration may have
/// declared members or weights, checks that compare an amount with a total
/// are skipped; "the file declares no members" and "no rule" are not said.
#[derive(Debug, Default)]
pub(crate) struct SetAside {
    names: HashSet<String>,
    /// A set-aside declaration may have declared members or weights, so the
    /// head count and the attribute totals are not known.
    pub totals_unknown: bool,
    /// How many declarations (or stretches of text) were set aside.
    pub count: usize,
}

impl SetAside {
    /// Sets a chunk aside; `well_formed` when pest read it (it then holds
    /// exactly one declaration, the one its keyword starts).
    fn add(&mut self, source: &str, chunk: &Chunk, well_formed: bool) {
        let declares_members = matches!(chunk.keyword, None | Some("member" | "members" | "attribute"));
        // A broken declaration over several lines may hide a misspelt `member` line.
        let totals = declares_members || (!well_formed && chunk.several_lines);
        self.add_text(&source[chunk.start..chunk.end], totals);
    }

    /// Sets aside a declaration pest read.
    fn add_declaration(&mut self, source: &str, declaration: &Declaration) {
        let (span, totals) = match declaration {
            Declaration::Member(m) => (m.span, true),
            Declaration::Group(g) => (g.span, true),
            Declaration::Table(t) => (t.span, true),
            Declaration::Attribute(a) => (a.span, true),
            Declaration::Title { span, .. } => (*span, false),
            Declaration::Bloc(b) => (b.span, false),
            Declaration::Define(n) | Declaration::Rule(n) => (n.span, false),
        };
        self.add_text(span.text(source), totals);
    }

    fn add_text(&mut self, text: &str, totals: bool) {
        // Most names repeat (`rule`, `seats`): allocate only new ones.
        let names = &mut self.names;
        scan::names_in(text, |n| {
            if !names.contains(n) {
                names.insert(n.to_string());
            }
        });
        self.totals_unknown |= totals;
        self.count += 1;
    }

    /// Whether a use of `name` may refer to something set aside.
    pub fn covers(&self, name: &str) -> bool {
        let stem = name.trim_end_matches(|c: char| c.is_ascii_digit());
        self.names.contains(name) || (stem.len() < name.len() && self.names.contains(stem))
    }

    /// Whether nothing was set aside.
    pub fn is_empty(&self) -> bool {
        self.count == 0
    }
}

/// Parses a file, going on after errors: every syntax and number error goes
/// to `errors` in the order written; the declarations they spoil are set
/// aside and the others returned.
///
/// A file pest reads whole is read in one pass, exactly as written. Only a
/// file with a syntax error is read again piece by piece ([`recover`]); its
/// first syntax error is the one pest gave for the whole file.
pub(crate) fn parse_recovering(source: &str, errors: &mut CappedErrors) -> Parsed {
    let mut set_aside = SetAside::default();
    if source.len() > MAX_SOURCE_LEN {
        let mut at = MAX_SOURCE_LEN;
        while !source.is_char_boundary(at) {
            at -= 1;
        }
        errors.push(too_long(at));
        return Parsed {
            file: None,
            set_aside,
        };
    }
    let chunks = scan::chunks(source);
    let preamble = chunks.first().map_or("", |c| &source[c.start..c.end]);
    if starts_with_bracket(preamble) {
        let file = parse_game(source, &chunks, errors);
        return Parsed { file, set_aside };
    }
    // Too deep for pest's recursion: only the other declarations are parsed.
    let first_error = match chunks.iter().any(|c| c.too_deep.is_some()) {
        true => None,
        false => match Grammar::parse(G::file, source) {
            Ok(mut pairs) => {
                let declarations = pairs
                    .next()
                    .map(|file| read_whole(source, file, &mut set_aside, errors))
                    .unwrap_or_default();
                return Parsed {
                    file: Some(File::Declarations(declarations)),
                    set_aside,
                };
            }
            Err(e) => Some((errors::position(&e), errors::syntax_error(source, 0, &e, false))),
        },
    };
    let declarations = recover(source, &chunks, first_error, &mut set_aside, errors);
    Parsed {
        file: Some(File::Declarations(declarations)),
        set_aside,
    }
}

/// The declarations of a file pest read whole; one with a number error is
/// set aside.
fn read_whole(
    source: &str,
    file: pest::iterators::Pair<'_, G>,
    set_aside: &mut SetAside,
    errors: &mut CappedErrors,
) -> Vec<Declaration> {
    let mut builder = Builder::new(0);
    let mut declarations = Vec::new();
    for pair in file.into_inner().filter(|p| p.as_rule() != G::EOI) {
        let declaration = builder.declaration(pair);
        if builder.errors.is_empty() {
            declarations.push(declaration);
        } else {
            errors.extend(builder.errors.drain(..));
            set_aside.add_declaration(source, &declaration);
        }
    }
    declarations
}

/// How one chunk reads alone.
enum Reading {
    /// White space and comments before the first declaration.
    Blank,
    /// A declaration, with its number errors.
    Read(Option<Box<Declaration>>, Vec<Diagnostic>),
    /// A syntax error, or nesting too deep to parse.
    Failed(Diagnostic),
}

/// Reads a file with a syntax error one chunk at a time. `first` is pest's
/// error for the whole file (where pest stopped, and the diagnostic): it
/// stands in for the same error of the chunk it falls in, and an error a
/// chunk alone shows before it is no error of the file (pest read the file
/// further), so it is not reported.
fn recover(
    source: &str,
    chunks: &[Chunk],
    first: Option<(usize, Diagnostic)>,
    set_aside: &mut SetAside,
    errors: &mut CappedErrors,
) -> Vec<Declaration> {
    let stop = first.as_ref().map_or(0, |f| f.0);
    let mut first = first.map(|f| f.1);
    let mut declarations = Vec::new();
    let mut previous_read = false;
    for (i, chunk) in chunks.iter().enumerate() {
        if chunk.start > stop {
            // Past where pest stopped: its error comes first, in file order.
            errors.extend(first.take());
        }
        let reading = read_chunk(source, chunks, i, previous_read, !errors.is_full());
        previous_read = !matches!(reading, Reading::Failed(_));
        match reading {
            Reading::Blank => {}
            Reading::Read(declaration, number_errors) if number_errors.is_empty() => {
                declarations.extend(declaration.map(|d| *d));
            }
            Reading::Read(_, number_errors) => {
                errors.extend(number_errors);
                set_aside.add(source, chunk, true);
            }
            Reading::Failed(d) => {
                set_aside.add(source, chunk, false);
                match first.take() {
                    Some(f) if f.span == d.span => errors.push(f),
                    Some(f) if d.span.start < f.span.start => first = Some(f),
                    Some(f) => errors.extend([f, d]),
                    None => errors.push(d),
                }
            }
        }
    }
    errors.extend(first);
    declarations
}

/// Reads chunk `i` alone; `previous_read` when pest read chunk `i - 1`;
/// `shown` when an error would be shown (else only its place is needed).
fn read_chunk(source: &str, chunks: &[Chunk], i: usize, previous_read: bool, shown: bool) -> Reading {
    let chunk = &chunks[i];
    let text = &source[chunk.start..chunk.end];
    if chunk.keyword.is_none() && is_blank(text) {
        return Reading::Blank;
    }
    if let Some(d) = &chunk.too_deep {
        return Reading::Failed(d.clone());
    }
    // Text before the first keyword is read as a file, which is what it starts.
    let alone = chunk.keyword.is_some();
    let start = if alone { G::one_declaration } else { G::file };
    match Grammar::parse(start, text) {
        Ok(mut pairs) => {
            let mut builder = Builder::new(chunk.start);
            let declaration = pairs.next().and_then(|p| builder.one(p));
            Reading::Read(declaration.map(Box::new), builder.errors)
        }
        Err(e) if !shown => Reading::Failed(errors::counted_only(source, chunk.start, &e)),
        Err(e) => {
            let border = (errors::position(&e) == 0 && previous_read && i > 0)
                .then(|| border_error(source, &chunks[i - 1], chunk))
                .flatten();
            Reading::Failed(border.unwrap_or_else(|| errors::syntax_error(source, chunk.start, &e, alone)))
        }
    }
}

/// The error of a declaration that fails where it starts, read together with
/// the one before: the file as a whole would also have expected that one to
/// go on (`and`, another weight, ...), and the message lists it all.
fn border_error(source: &str, previous: &Chunk, chunk: &Chunk) -> Option<Diagnostic> {
    let start = if previous.keyword.is_some() {
        G::declarations
    } else {
        G::file
    };
    let e = Grammar::parse(start, &source[previous.start..chunk.end]).err()?;
    Some(errors::syntax_error(source, previous.start, &e, false))
}

/// The `[q; w1, ..., wn]` form: the whole file, parsed whole.
fn parse_game(source: &str, chunks: &[Chunk], errors: &mut CappedErrors) -> Option<File> {
    if let Some(d) = chunks.iter().find_map(|c| c.too_deep.clone()) {
        errors.push(d);
        return None;
    }
    let pairs =
        Grammar::parse(G::file, source).map_err(|e| errors.push(errors::syntax_error(source, 0, &e, false)));
    let mut builder = Builder::new(0);
    let file = pairs.ok()?.next().map(|p| builder.file(p))?;
    if builder.errors.is_empty() {
        Some(file)
    } else {
        errors.extend(builder.errors);
        None
    }
}

/// pest's white space (`grammar.pest`): space, tab, CR, LF and the byte-order mark.
fn is_pest_space(c: char) -> bool {
    matches!(c, ' ' | '\t' | '\r' | '\n' | '\u{feff}')
}

/// `text` without leading white space and comments.
fn skip_blank(mut text: &str) -> &str {
    loop {
        text = text.trim_start_matches(is_pest_space);
        match text.strip_prefix('#') {
            Some(comment) => text = comment.split_once('\n').map_or("", |(_, rest)| rest),
            None => return text,
        }
    }
}

/// Whether `text` holds only white space and comments.
fn is_blank(text: &str) -> bool {
    skip_blank(text).is_empty()
}

/// Whether the first thing written is `[`: the file is the `[q; ...]` form.
fn starts_with_bracket(text: &str) -> bool {
    skip_blank(text).starts_with('[')
}

#[cfg(test)]
mod tests {
    use super::*;

    fn parse_ok(src: &str) -> File {
        match parse(src) {
            Ok(f) => f,
            Err(e) => panic!("{e:?}"),
        }
    }

    #[test]
    fn and_binds_tighter_than_or_and_parentheses_nest() {
        let f = parse_ok("rule r = a >= 1 or b >= 2 and c >= 3\nrule s = (a >= 1 and b >= 1) and c >= 1");
        let File::Declarations(d) = f else { panic!() };
        let Declaration::Rule(r) = &d[0] else { panic!() };
        let Expr::Any(ops, _) = &r.expr else {
            panic!("{:?}", r.expr)
        };
        assert!(matches!(ops[1], Expr::All(..)));
        let Declaration::Rule(s) = &d[1] else { panic!() };
        let Expr::All(ops, _) = &s.expr else { panic!() };
        assert_eq!(ops.len(), 2);
        assert!(matches!(ops[0], Expr::All(..)));
    }

    #[test]
    fn amounts_are_exact() {
        let f = parse_ok("rule r = a >= 62.5% and b > 2/3 and c >= 1_000 and 2 of d");
        let File::Declarations(d) = f else { panic!() };
        let Declaration::Rule(r) = &d[0] else { panic!() };
        let Expr::All(ops, _) = &r.expr else { panic!() };
        let Expr::Threshold(t) = &ops[0] else { panic!() };
        assert_eq!(
            t.amount.value,
            AmountValue::Share {
                numerator: 625,
                denominator: 1000,
                percent: true
            }
        );
        let Expr::Threshold(t) = &ops[2] else { panic!() };
        assert_eq!(t.amount.value, AmountValue::Integer(1000));
    }

    #[test]
    fn game_notation_with_repeats() {
        let File::Game(g) = parse_ok("# a game\n[39; 7 x5, 1 x10]") else {
            panic!()
        };
        assert_eq!(g.quota.0, 39);
        assert_eq!(
            g.weights.iter().map(|w| (w.weight, w.repeat)).collect::<Vec<_>>(),
            [(7, 5), (1, 10)]
        );
    }

    #[test]
    fn keywords_are_not_names() {
        assert!(parse("member count seats=1").is_err());
        assert!(parse("member counter seats=1").is_ok());
        assert!(parse("members m x3 seats=1\nmember membership").is_ok());
    }

    #[test]
    fn deep_nesting_is_refused_before_recursion() {
        let src = format!("rule r = {}a >= 1{}", "(".repeat(10_000), ")".repeat(10_000));
        let e = parse(&src).unwrap_err();
        assert!(e[0].message.contains("nested deeper"), "{:?}", e);
    }

    /// Every error of `src` as `line:col message`.
    fn errors_of(src: &str) -> Vec<String> {
        parse(src)
            .unwrap_err()
            .iter()
            .map(|e| {
                let (line, col) = e.line_col(src);
                format!("{line}:{col} {}", e.message)
            })
            .collect()
    }

    #[test]
    fn parsing_goes_on_at_the_next_declaration() {
        let src = "member a seats=1\nrule r = seats >=\nmember b seats=x\nrule s = (a\nrule t = a\n";
        assert_eq!(
            errors_of(src),
            [
                "3:1 expected an amount, found `member`",
                "3:16 expected an amount, found `x`",
                "5:1 expected `)`, a comparison (`>=` or `>`), `against`, `and` or `or`, found `rule`",
            ]
        );
        let mut errors = CappedErrors::new();
        let parsed = parse_recovering(src, &mut errors);
        let Some(File::Declarations(d)) = parsed.file else {
            panic!()
        };
        // `member a` and `rule t` are read; the three broken ones set aside.
        assert_eq!(d.len(), 2);
        assert_eq!(parsed.set_aside.count, 3);
        assert!(
            parsed.set_aside.covers("r") && parsed.set_aside.covers("b") && !parsed.set_aside.covers("t")
        );
    }

    #[test]
    fn an_error_where_a_declaration_starts_reads_as_if_it_were_the_first() {
        // `rule s seats` fails where it starts; pest, reading the file whole,
        // also expected `rule r` to go on there. The second such error (after
        // an error) is read with its neighbour and says the same.
        let src = "member a seats=1\nrule r = a\nrule s seats\nrule u = a\nrule t seats\n";
        let errors = errors_of(src);
        assert_eq!(errors.len(), 2);
        let expected = "expected a declaration (`title`, `member`, `members`, `attribute`, `bloc`, `define` or `rule`), \
                        a comparison (`>=` or `>`), `against`, `and` or `or`, found `rule`";
        assert_eq!(errors[0], format!("3:1 {expected}"));
        assert_eq!(errors[1], format!("5:1 {expected}"));
    }

    #[test]
    fn the_bracket_form_reports_its_first_error_only() {
        assert_eq!(
            errors_of("[3; 1, 2,, 4 x]\nrule r = a\n"),
            ["1:10 expected an amount or `]`, found `,`"]
        );
        let mut set_aside_free = CappedErrors::new();
        assert!(parse_recovering("# c\n[2; 1, 1]", &mut set_aside_free)
            .file
            .is_some());
    }

    #[test]
    fn numbers_set_their_declaration_aside() {
        let src =
            "member a seats=9999999999999999999999999999999999999999\nmembers g x2\nrule r = a and g1\n";
        let mut errors = CappedErrors::new();
        let parsed = parse_recovering(src, &mut errors);
        assert_eq!(errors.total(), 1);
        assert!(parsed.set_aside.totals_unknown);
        assert!(parsed.set_aside.covers("a") && !parsed.set_aside.covers("g1"));
    }
}
