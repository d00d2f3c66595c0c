//! pest's pairs to the syntax tree: the only module that walks `Pair`s.
//!
//! pest parses a slice of the file (one declaration, or the whole file for
//! the `[q; ...]` form); [`Builder::offset`] turns the slice's positions back
//! into the file's. Numbers go through [`super::numbers`]; their errors are
//! collected in [`Builder::errors`] and the number is replaced by 0 so that
//! the tree stays whole (the caller sets such a declaration aside).
//!
//! Time O(pairs). Recursion follows the nesting of conditions, which
//! [`super::scan`] bounds by `MAX_NESTING` before pest runs.

use pest::iterators::Pair;

use super::grammar::Rule as G;
use super::numbers;
use super::tree::{
    Amount, AmountValue, AttributeDecl, BlocDecl, Comparison, Declaration, Expr, File, Game, GameWeight,
    GroupDecl, GroupSide, GroupWord, MemberDecl, Name, NamedExpr, Quantity, Subject, TableDecl, Threshold,
    Weight,
};
use crate::diagnostic::{Diagnostic, Span};

pub(super) struct Builder {
    /// Where the parsed slice starts in the file.
    pub offset: usize,
    /// Number errors, in the order written.
    pub errors: Vec<Diagnostic>,
}

impl Builder {
    pub(super) fn new(offset: usize) -> Self {
        Builder {
            offset,
            errors: Vec::new(),
        }
    }

    fn span_of(&self, pair: &Pair<'_, G>) -> Span {
        let s = pair.as_span();
        Span::new(self.offset + s.start(), self.offset + s.end())
    }

    /// A `file` pair: a game, or declarations.
    pub(super) fn file(&mut self, pair: Pair<'_, G>) -> File {
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

    /// A `one_declaration` pair: its declaration.
    pub(super) fn one(&mut self, pair: Pair<'_, G>) -> Option<Declaration> {
        pair.into_inner()
            .find(|p| p.as_rule() != G::EOI)
            .map(|p| self.declaration(p))
    }

    fn game(&mut self, pair: Pair<'_, G>) -> Game {
        let span = self.span_of(&pair);
        let mut inner = pair.into_inner();
        let quota = inner
            .next()
            .map(|p| (self.integer(&p), self.span_of(&p)))
            .unwrap_or_default();
        let weights = inner
            .filter(|p| p.as_rule() == G::game_weight)
            .map(|p| {
                let span = self.span_of(&p);
                let mut parts = p.into_inner();
                let weight = parts.next().map(|w| self.integer(&w)).unwrap_or(0);
                let repeat = parts.next().map(|r| self.repeat(r).0).unwrap_or(1);
                GameWeight { weight, repeat, span }
            })
            .collect();
        Game { quota, weights, span }
    }

    pub(super) fn declaration(&mut self, pair: Pair<'_, G>) -> Declaration {
        let span = self.span_of(&pair);
        let kind = pair.as_rule();
        // Skip the keyword.
        let mut inner = pair.into_inner().skip(1).peekable();
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
                let name = self.name(inner.next());
                let weights = inner.map(|w| self.weight(w)).collect();
                Declaration::Member(MemberDecl { name, weights, span })
            }
            G::group => {
                let name = self.name(inner.next());
                if let Some(table) = inner.next_if(|p| p.as_rule() == G::table) {
                    return Declaration::Table(self.table(name, table, span));
                }
                let count = inner.next().map(|r| self.repeat(r)).unwrap_or_default();
                let weights = inner.map(|w| self.weight(w)).collect();
                Declaration::Group(GroupDecl {
                    name,
                    count,
                    weights,
                    span,
                })
            }
            G::attribute => {
                let name = self.name(inner.next());
                // Skip `decimals`.
                let decimals = inner
                    .nth(1)
                    .map(|d| (self.integer(&d), self.span_of(&d)))
                    .unwrap_or_default();
                // Skip `unit`.
                let unit = inner.nth(1).map(|u| self.quantity(&u));
                Declaration::Attribute(AttributeDecl {
                    name,
                    decimals,
                    unit,
                    span,
                })
            }
            G::bloc => {
                let name = self.name(inner.next());
                let parts = inner.map(|p| self.name_of(&p)).collect();
                Declaration::Bloc(BlocDecl { name, parts, span })
            }
            _ => {
                let name = self.name(inner.next());
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

    /// `from "FILE" name=COLUMN attr=COLUMN ...` of a `members` declaration.
    fn table(&mut self, name: Name, pair: Pair<'_, G>, span: Span) -> TableDecl {
        let mut inner = pair.into_inner().skip(1);
        let path = inner
            .next()
            .map(|s| {
                let text = s
                    .clone()
                    .into_inner()
                    .next()
                    .map_or("", |t| t.as_str())
                    .to_string();
                (text, self.span_of(&s))
            })
            .unwrap_or_default();
        let mut name_column = None;
        let mut columns = Vec::new();
        for column in inner {
            let mut parts = column.into_inner();
            let attribute = self.name(parts.next());
            let from = self.name(parts.next());
            if attribute.text == "name" && name_column.is_none() && !attribute.quoted {
                name_column = Some(from);
            } else {
                columns.push((attribute, from));
            }
        }
        TableDecl {
            name,
            path,
            name_column,
            columns,
            span,
        }
    }

    fn quantity(&mut self, pair: &Pair<'_, G>) -> Quantity {
        let span = self.span_of(pair);
        numbers::quantity(pair.as_str(), span).unwrap_or_else(|e| {
            self.errors.push(e);
            Quantity::default()
        })
    }

    fn weight(&mut self, pair: Pair<'_, G>) -> Weight {
        let span = self.span_of(&pair);
        let mut inner = pair.into_inner();
        let attribute = self.name(inner.next());
        let value = inner.next().map(|v| self.quantity(&v)).unwrap_or_default();
        Weight {
            attribute,
            value,
            span,
        }
    }

    fn repeat(&mut self, pair: Pair<'_, G>) -> (u64, Span) {
        let span = self.span_of(&pair);
        let value = pair.into_inner().next().map(|v| self.integer(&v)).unwrap_or(0);
        (value, span)
    }

    fn expr(&mut self, pair: Pair<'_, G>) -> Expr {
        let span = self.span_of(&pair);
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
                let keyword = inner.next().map_or(span, |k| self.span_of(&k));
                let operand = inner
                    .next()
                    .map(|p| self.expr(p))
                    .unwrap_or(Expr::All(Vec::new(), span));
                Expr::Not(Box::new(operand), keyword)
            }
            G::k_of => {
                let mut inner = pair.into_inner();
                let amount = self.amount(inner.next());
                let bloc = self.name(inner.nth(1));
                Expr::OfBloc { amount, bloc, span }
            }
            G::condition => self.threshold(pair),
            _ => Expr::Reference(self.name(pair.into_inner().next())),
        }
    }

    fn threshold(&mut self, pair: Pair<'_, G>) -> Expr {
        let span = self.span_of(&pair);
        let mut subject = Subject::Count(span);
        let mut against = None;
        let mut comparison = (Comparison::AtLeast, span);
        let mut amount = None;
        let mut group = None;
        let mut side = None;
        for p in pair.into_inner() {
            match p.as_rule() {
                G::subject => subject = self.subject_of(p, span),
                G::against => against = Some(self.span_of(&p)),
                G::group_word => group = Some((group_of(p.as_str()), self.span_of(&p))),
                G::comparison => comparison = (comparison_of(p.as_str()), self.span_of(&p)),
                G::share_of => {
                    let side_span = self.span_of(&p);
                    let mut inner = p.into_inner();
                    amount = Some(self.amount(inner.next()));
                    let word = inner.nth(1).map_or(GroupWord::Yes, |g| group_of(g.as_str()));
                    side = Some(GroupSide::ShareOf(word, side_span));
                }
                G::side => {
                    let side_span = self.span_of(&p);
                    let mut other = None;
                    let mut word = GroupWord::Yes;
                    for q in p.into_inner() {
                        match q.as_rule() {
                            G::subject => other = Some(self.subject_of(q, side_span)),
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
        let span = self.span_of(&pair);
        let zero = Amount {
            value: AmountValue::Integer(0),
            span,
        };
        let Some(inner) = pair.into_inner().next() else {
            return zero;
        };
        let value = match inner.as_rule() {
            G::integer => Ok(AmountValue::Integer(self.integer(&inner))),
            G::fraction => {
                let written = inner.as_str();
                let mut parts = inner.into_inner();
                let (Some(n), Some(d)) = (parts.next(), parts.next()) else {
                    return zero;
                };
                let before = self.errors.len();
                let (numerator, denominator) = (self.integer(&n), self.integer(&d));
                if self.errors.len() > before {
                    // A number too large is reported once, not again as a zero denominator.
                    return zero;
                }
                numbers::fraction(written, numerator, denominator, span)
            }
            G::percent => numbers::percent(inner.as_str(), span),
            _ => Err(numbers::bare_decimal(inner.as_str(), span)),
        };
        match value {
            Ok(value) => Amount { value, span },
            Err(e) => {
                self.errors.push(e);
                zero
            }
        }
    }

    fn integer(&mut self, pair: &Pair<'_, G>) -> u64 {
        numbers::integer(pair.as_str(), self.span_of(pair)).unwrap_or_else(|e| {
            self.errors.push(e);
            0
        })
    }

    fn name(&mut self, pair: Option<Pair<'_, G>>) -> Name {
        pair.map(|p| self.name_of(&p)).unwrap_or(Name {
            text: String::new(),
            span: Span::default(),
            quoted: false,
        })
    }

    /// A plain name as written, or a quoted one unescaped (a bad escape is
    /// a number-like error: the declaration is set aside).
    fn name_of(&mut self, pair: &Pair<'_, G>) -> Name {
        let span = self.span_of(pair);
        let quoted = pair
            .clone()
            .into_inner()
            .find(|p| p.as_rule() == G::quoted_name)
            .and_then(|q| q.into_inner().next());
        let Some(inner) = quoted else {
            return Name {
                text: pair.as_str().to_string(),
                span,
                quoted: false,
            };
        };
        let text = match crate::quote::unescape(inner.as_str()) {
            Ok(text) => text,
            Err((at, message)) => {
                let start = self.span_of(&inner).start + at;
                self.errors.push(
                    Diagnostic::error(Span::new(start, start + 2), message)
                        .with_hint("in a quoted name write `\\\"` for a quote, `\\\\` for a backslash, `\\u{e9}` for any character"),
                );
                String::new()
            }
        };
        Name {
            text,
            span,
            quoted: true,
        }
    }

    fn subject_of(&mut self, pair: Pair<'_, G>, fallback: Span) -> Subject {
        match pair.into_inner().next() {
            Some(s) if s.as_rule() == G::kw_count => Subject::Count(self.span_of(&s)),
            Some(s) => Subject::Name(self.name_of(&s)),
            None => Subject::Count(fallback),
        }
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
