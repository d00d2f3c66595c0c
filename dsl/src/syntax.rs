//! Text to syntax tree: the pest grammar (`grammar.pest`) and a tree whose
//! every node carries its [`Span`].
//!
//! Parsing is linear in the input for every file the grammar accepts (PEG
//! with no unbounded backtracking across declarations); nesting of
//! parentheses is bounded by [`MAX_NESTING`] before pest recurses, so a
//! hostile file cannot exhaust the stack. pest's `Pair`s never leave this
//! module: callers see the tree or [`Diagnostic`]s.
//!
//! Numbers are checked here: every integer fits in `u64`, every percentage
//! is at most 100 with at most [`MAX_DECIMALS`] decimals, every fraction has
//! a non-zero denominator and is at most 1. All such errors of a file are
//! collected; a syntax error stops parsing (pest reports only the first).

use pest::iterators::Pair;
use pest::Parser as _;

use crate::diagnostic::{closest, Diagnostic, Span};

mod grammar {
    #[derive(pest_derive::Parser)]
    #[grammar = "grammar.pest"]
    pub struct Grammar;
}
use grammar::{Grammar, Rule as G};

/// Deepest nesting of parentheses and `not` accepted.
pub const MAX_NESTING: usize = 64;

/// Most decimals in a percentage (so that `10^(decimals+2)` fits in `u64`).
pub const MAX_DECIMALS: usize = 15;

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

/// A name with its place in the source.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Name {
    /// The identifier.
    pub text: String,
    /// Where it is written.
    pub span: Span,
}

/// A parsed file: declarations, or the trade's `[q; w1, ..., wn]` notation.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum File {
    /// A file of declarations.
    Declarations(Vec<Declaration>),
    /// `[q; w1, ..., wn]`.
    Game(Game),
}

/// `[q; w1, ..., wn]`, with `w xK` standing for K copies of `w`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Game {
    /// The quota and where it is written.
    pub quota: (u64, Span),
    /// Each weight with its repeat count (1 when not repeated).
    pub weights: Vec<GameWeight>,
    /// The whole notation.
    pub span: Span,
}

/// One entry of a `[q; ...]` weight list.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct GameWeight {
    /// The weight.
    pub weight: u64,
    /// How many members carry it.
    pub repeat: u64,
    /// The entry.
    pub span: Span,
}

/// One declaration.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Declaration {
    /// `title "..."`.
    Title {
        /// The text between the quotes.
        text: String,
        /// The whole declaration.
        span: Span,
    },
    /// `member NAME attr=v ...`.
    Member(MemberDecl),
    /// `members NAME xK attr=v ...`: K identical members NAME1..NAMEK.
    Group(GroupDecl),
    /// `bloc NAME = a, b, ...`.
    Bloc(BlocDecl),
    /// `define NAME = EXPR`: a named condition for use in rules.
    Define(NamedExpr),
    /// `rule NAME = EXPR`.
    Rule(NamedExpr),
}

/// `member NAME attr=v ...`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct MemberDecl {
    /// The member's name.
    pub name: Name,
    /// Its weights.
    pub weights: Vec<Weight>,
    /// The whole declaration.
    pub span: Span,
}

/// `members NAME xK attr=v ...`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct GroupDecl {
    /// The group's name; members are named NAME1..NAMEK.
    pub name: Name,
    /// K and where it is written.
    pub count: (u64, Span),
    /// Every member's weights.
    pub weights: Vec<Weight>,
    /// The whole declaration.
    pub span: Span,
}

/// `attr=v`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Weight {
    /// The attribute.
    pub attribute: Name,
    /// The weight.
    pub value: u64,
    /// The whole assignment.
    pub span: Span,
}

/// `bloc NAME = a, b, ...`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct BlocDecl {
    /// The bloc's name.
    pub name: Name,
    /// Members, groups or other blocs.
    pub parts: Vec<Name>,
    /// The whole declaration.
    pub span: Span,
}

/// `define NAME = EXPR` or `rule NAME = EXPR`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct NamedExpr {
    /// The name.
    pub name: Name,
    /// The condition.
    pub expr: Expr,
    /// The whole declaration.
    pub span: Span,
}

/// A condition over the yes votes.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Expr {
    /// Every operand holds (`and`).
    All(Vec<Expr>, Span),
    /// Some operand holds (`or`).
    Any(Vec<Expr>, Span),
    /// `not EXPR` (parsed so that the compiler can explain why it is refused);
    /// the span is the keyword's.
    Not(Box<Expr>, Span),
    /// `SUBJECT [against] CMP AMOUNT`.
    Threshold(Threshold),
    /// `AMOUNT of BLOC`.
    OfBloc {
        /// How many (or what share) of the bloc.
        amount: Amount,
        /// The bloc.
        bloc: Name,
        /// The whole condition.
        span: Span,
    },
    /// A member, bloc, definition or rule named alone.
    Reference(Name),
}

impl Expr {
    /// Where the expression is written.
    pub fn span(&self) -> Span {
        match self {
            Expr::All(_, s) | Expr::Any(_, s) | Expr::Not(_, s) => *s,
            Expr::Threshold(t) => t.span,
            Expr::OfBloc { span, .. } => *span,
            Expr::Reference(n) => n.span,
        }
    }
}

/// What a threshold sums over the yes-voters (or the no-voters with `against`).
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Subject {
    /// `count`: the head count.
    Count(Span),
    /// An attribute or bloc.
    Name(Name),
}

impl Subject {
    /// Where it is written.
    pub fn span(&self) -> Span {
        match self {
            Subject::Count(s) => *s,
            Subject::Name(n) => n.span,
        }
    }
}

/// The comparison as written.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Comparison {
    /// `>=`
    AtLeast,
    /// `>`
    MoreThan,
    /// `<=`
    AtMost,
    /// `<`
    LessThan,
    /// `=` or `==`
    Equal,
    /// `!=`
    NotEqual,
    /// `=>` or `=<`, which the language spells `>=` and `<=`.
    Reversed,
}

/// Which members of a four-state ballot a sum runs over.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum GroupWord {
    /// `yes`: voting yes.
    Yes,
    /// `no`: voting no.
    No,
    /// `abstain`: present, voting neither way.
    Abstain,
    /// `cast`: yes + no.
    Cast,
    /// `present`: yes + no + abstain.
    Present,
}

impl GroupWord {
    /// Coefficients of the yes, no and abstain sums.
    pub fn vector(self) -> [i128; 3] {
        match self {
            GroupWord::Yes => [1, 0, 0],
            GroupWord::No => [0, 1, 0],
            GroupWord::Abstain => [0, 0, 1],
            GroupWord::Cast => [1, 1, 0],
            GroupWord::Present => [1, 1, 1],
        }
    }

    /// The word as written.
    pub fn word(self) -> &'static str {
        match self {
            GroupWord::Yes => "yes",
            GroupWord::No => "no",
            GroupWord::Abstain => "abstain",
            GroupWord::Cast => "cast",
            GroupWord::Present => "present",
        }
    }
}

/// The right-hand side of a four-state comparison, when it is not a plain amount.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum GroupSide {
    /// `AMOUNT of GROUP`: a share of another group's sum of the same attribute.
    ShareOf(GroupWord, Span),
    /// `[SUBJECT] GROUP`: another group's sum (of the same attribute).
    Sum(Option<Subject>, GroupWord, Span),
}

/// `SUBJECT [against] [GROUP] CMP AMOUNT`, or a four-state comparison.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Threshold {
    /// What is summed.
    pub subject: Subject,
    /// `Some` when the sum is over the no-voters.
    pub against: Option<Span>,
    /// The group word after the subject (`seats yes`, `count present`).
    pub group: Option<(GroupWord, Span)>,
    /// The comparison and where it is written.
    pub comparison: (Comparison, Span),
    /// The bound (for [`GroupSide::ShareOf`], the share).
    pub amount: Amount,
    /// A group on the right-hand side (`1/2 of cast`, `tokens no`).
    pub side: Option<GroupSide>,
    /// The whole condition.
    pub span: Span,
}

impl Threshold {
    /// Whether the condition is a four-state form (a group word anywhere).
    pub fn is_four_state(&self) -> bool {
        self.group.is_some() || self.side.is_some()
    }
}

/// A bound: an absolute amount or a share of the total.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Amount {
    /// The value.
    pub value: AmountValue,
    /// Where it is written.
    pub span: Span,
}

/// The value of an [`Amount`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum AmountValue {
    /// An integer.
    Integer(u64),
    /// A share `numerator / denominator` (at most 1) of the total, written
    /// as a fraction or as a percentage (`62.5%` is 625/1000).
    Share {
        /// Numerator.
        numerator: u64,
        /// Denominator (non-zero).
        denominator: u64,
        /// Written with `%`.
        percent: bool,
    },
}

/// Parses a whole file.
///
/// Returns every number error of the file, or the first syntax error.
pub fn parse(source: &str) -> Result<File, Vec<Diagnostic>> {
    if source.len() > MAX_SOURCE_LEN {
        let mut at = MAX_SOURCE_LEN;
        while !source.is_char_boundary(at) {
            at -= 1;
        }
        return Err(vec![too_long(at)]);
    }
    if let Some(d) = nesting_error(source) {
        return Err(vec![d]);
    }
    let mut pairs = Grammar::parse(G::file, source).map_err(|e| vec![syntax_error(source, &e)])?;
    let mut b = Builder { errors: Vec::new() };
    let file = match pairs.next() {
        Some(file) => b.file(file),
        None => File::Declarations(Vec::new()),
    };
    if b.errors.is_empty() {
        Ok(file)
    } else {
        Err(b.errors)
    }
}

/// Refuses deep nesting before pest recurses into it.
fn nesting_error(source: &str) -> Option<Diagnostic> {
    let mut depth = 0usize;
    let mut in_comment = false;
    let mut negations = 0usize;
    for (i, c) in source.char_indices() {
        if !in_comment
            && source[i..]
                .get(..3)
                .is_some_and(|w| w.eq_ignore_ascii_case("not"))
            && is_word_at(source, i, 3)
        {
            negations += 1;
            if negations > MAX_NESTING {
                return Some(
                    Diagnostic::error(
                        Span::new(i, i + 3),
                        format!("more than {MAX_NESTING} uses of `not`"),
                    )
                    .with_hint("rules are monotone: `not` is refused anyway"),
                );
            }
        }
        match c {
            '\n' => in_comment = false,
            '#' => in_comment = true,
            '(' if !in_comment => {
                depth += 1;
                if depth > MAX_NESTING {
                    return Some(
                        Diagnostic::error(
                            Span::new(i, i + 1),
                            format!("parentheses nested deeper than {MAX_NESTING}"),
                        )
                        .with_hint("split the condition into named parts with `define`"),
                    );
                }
            }
            ')' if !in_comment => depth = depth.saturating_sub(1),
            _ => {}
        }
    }
    None
}

/// Whether `source[i..i + len]` is a whole word.
fn is_word_at(source: &str, i: usize, len: usize) -> bool {
    let is_ident = |c: char| c.is_ascii_alphanumeric() || c == '_';
    let before = source[..i].chars().next_back().is_none_or(|c| !is_ident(c));
    let after = source
        .get(i + len..)
        .and_then(|r| r.chars().next())
        .is_none_or(|c| !is_ident(c));
    before && after
}

fn span_of(pair: &Pair<'_, G>) -> Span {
    let s = pair.as_span();
    Span::new(s.start(), s.end())
}

struct Builder {
    errors: Vec<Diagnostic>,
}

impl Builder {
    fn file(&mut self, pair: Pair<'_, G>) -> File {
        let mut declarations = Vec::new();
        for p in pair.into_inner() {
            match p.as_rule() {
                G::game => return File::Game(self.game(p)),
                G::EOI => {}
                _ => declarations.push(self.declaration(p)),
            }
        }
        File::Declarations(declarations)
    }

    fn game(&mut self, pair: Pair<'_, G>) -> Game {
        let span = span_of(&pair);
        let mut inner = pair.into_inner();
        let quota = inner
            .next()
            .map(|p| (self.integer(&p), span_of(&p)))
            .unwrap_or_default();
        let weights = inner
            .filter(|p| p.as_rule() == G::game_weight)
            .map(|p| {
                let span = span_of(&p);
                let mut parts = p.into_inner();
                let weight = parts.next().map(|w| self.integer(&w)).unwrap_or(0);
                let repeat = parts.next().map(|r| self.repeat(r).0).unwrap_or(1);
                GameWeight { weight, repeat, span }
            })
            .collect();
        Game { quota, weights, span }
    }

    fn declaration(&mut self, pair: Pair<'_, G>) -> Declaration {
        let span = span_of(&pair);
        let kind = pair.as_rule();
        // Skip the keyword.
        let mut inner = pair.into_inner().skip(1);
        match kind {
            G::title => {
                let text = inner
                    .next()
                    .and_then(|s| s.into_inner().next())
                    .map(|t| t.as_str().to_string())
                    .unwrap_or_default();
                Declaration::Title { text, span }
            }
            G::member => {
                let name = name(inner.next());
                let weights = inner.map(|w| self.weight(w)).collect();
                Declaration::Member(MemberDecl { name, weights, span })
            }
            G::group => {
                let name = name(inner.next());
                let count = inner.next().map(|r| self.repeat(r)).unwrap_or_default();
                let weights = inner.map(|w| self.weight(w)).collect();
                Declaration::Group(GroupDecl {
                    name,
                    count,
                    weights,
                    span,
                })
            }
            G::bloc => {
                let name = name(inner.next());
                let parts = inner.map(|p| name_of(&p)).collect();
                Declaration::Bloc(BlocDecl { name, parts, span })
            }
            _ => {
                let name = name(inner.next());
                let expr = inner
                    .next()
                    .map(|e| self.expr(e))
                    .unwrap_or(Expr::All(Vec::new(), span));
                let named = NamedExpr { name, expr, span };
                if kind == G::define {
                    Declaration::Define(named)
                } else {
                    Declaration::Rule(named)
                }
            }
        }
    }

    fn weight(&mut self, pair: Pair<'_, G>) -> Weight {
        let span = span_of(&pair);
        let mut inner = pair.into_inner();
        let attribute = name(inner.next());
        let value = inner.next().map(|v| self.integer(&v)).unwrap_or(0);
        Weight {
            attribute,
            value,
            span,
        }
    }

    fn repeat(&mut self, pair: Pair<'_, G>) -> (u64, Span) {
        let span = span_of(&pair);
        let value = pair.into_inner().next().map(|v| self.integer(&v)).unwrap_or(0);
        (value, span)
    }

    fn expr(&mut self, pair: Pair<'_, G>) -> Expr {
        let span = span_of(&pair);
        match pair.as_rule() {
            G::expr => match pair.into_inner().next() {
                Some(p) => self.expr(p),
                None => Expr::All(Vec::new(), span),
            },
            G::any_of | G::all_of => {
                let any = pair.as_rule() == G::any_of;
                let mut operands: Vec<Expr> = pair
                    .into_inner()
                    .filter(|p| !matches!(p.as_rule(), G::kw_and | G::kw_or | G::close))
                    .map(|p| self.expr(p))
                    .collect();
                if operands.len() == 1 {
                    operands.remove(0)
                } else if any {
                    Expr::Any(operands, span)
                } else {
                    Expr::All(operands, span)
                }
            }
            G::negation => {
                let mut inner = pair.into_inner();
                let keyword = inner.next().map_or(span, |k| span_of(&k));
                let operand = inner
                    .next()
                    .map(|p| self.expr(p))
                    .unwrap_or(Expr::All(Vec::new(), span));
                Expr::Not(Box::new(operand), keyword)
            }
            G::k_of => {
                let mut inner = pair.into_inner();
                let amount = self.amount(inner.next());
                let bloc = name(inner.nth(1));
                Expr::OfBloc { amount, bloc, span }
            }
            G::condition => self.threshold(pair),
            _ => Expr::Reference(name(pair.into_inner().next())),
        }
    }

    fn threshold(&mut self, pair: Pair<'_, G>) -> Expr {
        let span = span_of(&pair);
        let mut subject = Subject::Count(span);
        let mut against = None;
        let mut comparison = (Comparison::AtLeast, span);
        let mut amount = None;
        let mut group = None;
        let mut side = None;
        for p in pair.into_inner() {
            match p.as_rule() {
                G::subject => subject = subject_of(p, span),
                G::against => against = Some(span_of(&p)),
                G::group_word => group = Some((group_of(p.as_str()), span_of(&p))),
                G::comparison => comparison = (comparison_of(p.as_str()), span_of(&p)),
                G::share_of => {
                    let side_span = span_of(&p);
                    let mut inner = p.into_inner();
                    amount = Some(self.amount(inner.next()));
                    let word = inner.nth(1).map_or(GroupWord::Yes, |g| group_of(g.as_str()));
                    side = Some(GroupSide::ShareOf(word, side_span));
                }
                G::side => {
                    let side_span = span_of(&p);
                    let mut other = None;
                    let mut word = GroupWord::Yes;
                    for q in p.into_inner() {
                        match q.as_rule() {
                            G::subject => other = Some(subject_of(q, side_span)),
                            _ => word = group_of(q.as_str()),
                        }
                    }
                    side = Some(GroupSide::Sum(other, word, side_span));
                }
                _ => amount = Some(self.amount(Some(p))),
            }
        }
        Expr::Threshold(Threshold {
            subject,
            against,
            group,
            side,
            comparison,
            amount: amount.unwrap_or(Amount {
                value: AmountValue::Integer(0),
                span,
            }),
            span,
        })
    }

    fn amount(&mut self, pair: Option<Pair<'_, G>>) -> Amount {
        let Some(pair) = pair else {
            return Amount {
                value: AmountValue::Integer(0),
                span: Span::default(),
            };
        };
        let span = span_of(&pair);
        let zero = Amount {
            value: AmountValue::Integer(0),
            span,
        };
        let Some(inner) = pair.into_inner().next() else {
            return zero;
        };
        let value = match inner.as_rule() {
            G::integer => AmountValue::Integer(self.integer(&inner)),
            G::fraction => {
                let written = inner.as_str();
                let mut parts = inner.into_inner();
                let (Some(n), Some(d)) = (parts.next(), parts.next()) else {
                    return zero;
                };
                let (numerator, denominator) = (self.integer(&n), self.integer(&d));
                if denominator == 0 {
                    self.errors.push(
                        Diagnostic::error(span, format!("the fraction {written} has a zero denominator"))
                            .with_hint("write a share such as `2/3`"),
                    );
                    return zero;
                }
                if numerator > denominator {
                    self.errors.push(
                        Diagnostic::error(
                            span,
                            format!("the share {numerator}/{denominator} is more than the whole"),
                        )
                        .with_hint(
                            "a share of the total is at most 1; for an absolute amount write a plain number",
                        ),
                    );
                    return zero;
                }
                AmountValue::Share {
                    numerator,
                    denominator,
                    percent: false,
                }
            }
            G::percent => match self.percent(&inner, span) {
                Some(v) => v,
                None => return zero,
            },
            _ => {
                self.errors.push(
                    Diagnostic::error(span, format!("`{}` is a decimal without a percent sign", inner.as_str()))
                        .with_hint("amounts are whole numbers; write a share as a percentage (`62.5%`) or a fraction (`5/8`)"),
                );
                return zero;
            }
        };
        Amount { value, span }
    }

    fn percent(&mut self, pair: &Pair<'_, G>, span: Span) -> Option<AmountValue> {
        let text = pair.as_str().trim_end_matches('%').replace('_', "");
        let (whole, decimals) = text.split_once('.').unwrap_or((&text, ""));
        if decimals.len() > MAX_DECIMALS {
            self.errors.push(
                Diagnostic::error(
                    span,
                    format!("the percentage has more than {MAX_DECIMALS} decimals"),
                )
                .with_hint("write the share as a fraction instead, e.g. `2/3`"),
            );
            return None;
        }
        let digits = format!("{whole}{decimals}");
        let numerator = digits.parse::<u64>().ok();
        let denominator = 10u64.pow(decimals.len() as u32 + 2);
        match numerator {
            Some(n) if n <= denominator => Some(AmountValue::Share {
                numerator: n,
                denominator,
                percent: true,
            }),
            _ => {
                self.errors.push(
                    Diagnostic::error(span, format!("the percentage {} is above 100%", pair.as_str()))
                        .with_hint(
                        "a share of the total is at most 100%; for an absolute amount write a plain number",
                    ),
                );
                None
            }
        }
    }

    fn integer(&mut self, pair: &Pair<'_, G>) -> u64 {
        match pair.as_str().replace('_', "").parse::<u64>() {
            Ok(v) => v,
            Err(_) => {
                self.errors.push(
                    Diagnostic::error(
                        span_of(pair),
                        format!("the number {} is too large", pair.as_str()),
                    )
                    .with_hint("numbers are at most 18_446_744_073_709_551_615 (2^64 - 1)"),
                );
                0
            }
        }
    }
}

fn name(pair: Option<Pair<'_, G>>) -> Name {
    pair.map(|p| name_of(&p)).unwrap_or(Name {
        text: String::new(),
        span: Span::default(),
    })
}

fn name_of(pair: &Pair<'_, G>) -> Name {
    Name {
        text: pair.as_str().to_string(),
        span: span_of(pair),
    }
}

fn subject_of(pair: Pair<'_, G>, fallback: Span) -> Subject {
    match pair.into_inner().next() {
        Some(s) if s.as_rule() == G::kw_count => Subject::Count(span_of(&s)),
        Some(s) => Subject::Name(name_of(&s)),
        None => Subject::Count(fallback),
    }
}

fn group_of(text: &str) -> GroupWord {
    match text {
        "no" => GroupWord::No,
        "abstain" => GroupWord::Abstain,
        "cast" => GroupWord::Cast,
        "present" => GroupWord::Present,
        _ => GroupWord::Yes,
    }
}

fn comparison_of(text: &str) -> Comparison {
    match text {
        ">=" => Comparison::AtLeast,
        ">" => Comparison::MoreThan,
        "<=" => Comparison::AtMost,
        "<" => Comparison::LessThan,
        "=" | "==" => Comparison::Equal,
        "!=" => Comparison::NotEqual,
        _ => Comparison::Reversed,
    }
}

/// Turns pest's first error into ours: what was expected, what was found,
/// and a hint chosen from what was expected.
fn syntax_error(source: &str, e: &pest::error::Error<G>) -> Diagnostic {
    let at = match e.location {
        pest::error::InputLocation::Pos(p) => p,
        pest::error::InputLocation::Span((s, _)) => s,
    };
    let found = token_at(source, at);
    // At the end of the file, point just after the last thing written.
    let at = if found.is_empty() {
        end_of_content(source, at)
    } else {
        at
    };
    let span = Span::new(at, at + found.len().max(1));
    let positives: Vec<G> = match &e.variant {
        pest::error::ErrorVariant::ParsingError { positives, .. } => positives.clone(),
        pest::error::ErrorVariant::CustomError { .. } => Vec::new(),
    };
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

const KEYWORDS: [&str; 12] = [
    "title", "member", "members", "bloc", "define", "rule", "count", "against", "of", "and", "or", "not",
];

/// The end of the last token before `at` (skipping white space and comments).
pub(crate) fn end_of_content(source: &str, at: usize) -> usize {
    let before = &source[..at.min(source.len())];
    let mut end = 0;
    for line in before.split_inclusive('\n') {
        let code = line.split('#').next().unwrap_or("");
        let trimmed = code.trim_end();
        let start = line.as_ptr() as usize - before.as_ptr() as usize;
        if !trimmed.is_empty() {
            end = start + trimmed.len();
        }
    }
    end
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
            "a declaration (`title`, `member`, `members`, `bloc`, `define` or `rule`)"
        }
        G::game => "`[`",
        G::close => "`)`",
        G::comma => "`,`",
        G::semicolon => "`;`",
        G::game_end => "`]`",
        G::name | G::reference | G::subject => "a name",
        G::weight => "a weight such as `seats=3`",
        G::repeat => "a repeat count such as `x12`",
        G::expr | G::any_of | G::all_of | G::condition | G::k_of | G::negation | G::primary => "a condition",
        G::kw_and => "`and`",
        G::kw_or => "`or`",
        G::kw_of => "`of`",
        G::against | G::kw_against => "`against`",
        G::comparison => "a comparison (`>=` or `>`)",
        G::amount | G::integer | G::percent | G::fraction | G::decimal | G::bare_decimal => "an amount",
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
        "every declaration starts with one of the keywords `title`, `member`, `members`, `bloc`, `define`, `rule`";
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
        G::amount | G::integer | G::percent | G::fraction => {
            (5, "an amount is a whole number (`12`), a percentage (`62.5%`) or a fraction (`2/3`)")
        }
        G::repeat => (6, "`members NAME xK` declares K identical members NAME1 .. NAMEK"),
        G::weight => (7, "weights are written `attribute=number`, e.g. `seats=9`"),
        G::name => (8, "names start with a letter or `_`; keywords such as `count`, `of` and `rule` cannot be names"),
        G::string => (9, "write the title in double quotes on one line"),
        _ => return None,
    })
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
}
