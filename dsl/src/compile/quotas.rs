//! Pass 3, exact quotas: each definition and rule is resolved once into a
//! tree of atoms, each an attribute and an integer quota, so that an error
//! in a definition is reported once, not once per rule that uses it.
//!
//! Every share, percentage, strict inequality and `against` form becomes an
//! integer quota through [`clout_core::quota`] (`u128` intermediates, no
//! floats); four-state forms become one linear condition (`four_state`). A
//! quota of 0 (met by everyone) or above its total (met by no one) is an
//! error, unless a declaration set aside by the parser leaves the total
//! unknown. Attribute totals are summed with checked additions, each at most
//! [`MAX_TOTAL`].
//!
//! Time O(members * attributes + conditions). Recursion follows the nesting
//! of one condition, bounded by `syntax::MAX_NESTING`; references to other
//! definitions are not followed here.

use clout_core::limits::MAX_TOTAL;
use clout_core::quota::{self, Bound};

use super::names::{Declared, Kind};
use super::one_line;
use crate::diagnostic::{CappedErrors, Diagnostic, Span};
use crate::syntax::{self, AmountValue, Comparison, Expr, Threshold};

/// An attribute of a rule before lowering.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub(super) enum Key {
    Declared(usize),
    Count,
    Bloc(usize),
    Member(usize),
}

/// A definition or rule, resolved.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(super) enum Resolved {
    Atom {
        key: Key,
        quota: u64,
        span: Span,
        /// On an attribute with rounded weights: the quota on the exact amounts.
        exact: Option<u128>,
    },
    /// A four-state condition `yes*Y + no*N + abstain*A >= bound` on `key`.
    Linear {
        key: Key,
        coefficients: [i32; 3],
        bound: i128,
        span: Span,
        /// On an attribute with rounded weights: the bound on the exact
        /// sums and the exact two-state quota.
        exact: Option<(i128, u128)>,
    },
    All(Vec<Resolved>),
    Any(Vec<Resolved>),
    /// Another definition or rule, an index into `Declared::named`.
    Ref(usize),
}

/// Resolves every definition and rule of `d`, in declaration order; `None`
/// for one with an error.
pub(super) fn resolve_all(d: &Declared<'_>, errors: &mut CappedErrors) -> Vec<Option<Resolved>> {
    let totals = totals(d);
    let scales = (0..d.attributes.len())
        .map(|a| {
            let unit = d.scaled.get(a).copied().flatten()?;
            let exact = d
                .member_weights
                .iter()
                .flat_map(|w| w.iter().filter(|(b, _)| *b == a))
                .map(|&(_, w)| w)
                .sum::<u128>();
            Some((unit, exact))
        })
        .collect();
    let mut resolver = Resolver {
        d,
        totals,
        scales,
        errors,
    };
    d.named.iter().map(|n| resolver.resolve(&n.decl.expr)).collect()
}

/// Each declared attribute's total of the weights the core counts, `None`
/// past [`MAX_TOTAL`] (pass 1 reported it).
fn totals(d: &Declared<'_>) -> Vec<Option<u64>> {
    let mut totals: Vec<Option<u64>> = vec![Some(0); d.attributes.len()];
    for weights in &d.member_weights {
        for &(a, w) in weights {
            totals[a] = totals[a]
                .and_then(|t| t.checked_add(d.weight_of(a, w)))
                .filter(|&t| t <= MAX_TOTAL);
        }
    }
    totals
}

/// The amount of base units behind a rule's `ATTRIBUTE >= AMOUNT`: the
/// quota on exact sums for "yes-sum `cmp` `bound`" (or "no-sum" with
/// `against`), as [`quota::threshold`] and [`quota::against`] compute it
/// for the core's weights; `None` when it does not fit.
fn exact_quota(cmp: quota::Comparison, bound: ExactBound, total: u128, against: bool) -> Option<u128> {
    use quota::Comparison as C;
    let share = |p: u64, d: u64| crate::amount::mul_div(total, p, d.max(1));
    if !against {
        return match (cmp, bound) {
            (C::AtLeast, ExactBound::Amount(k)) => Some(k),
            (C::MoreThan, ExactBound::Amount(k)) => k.checked_add(1),
            (C::AtLeast, ExactBound::Share(p, d)) => {
                let (f, divides) = share(p, d);
                Some(f + u128::from(!divides))
            }
            (C::MoreThan, ExactBound::Share(p, d)) => Some(share(p, d).0 + 1),
            _ => None,
        };
    }
    let limit = match (cmp, bound) {
        (C::AtMost, ExactBound::Amount(k)) => Some(k),
        (C::LessThan, ExactBound::Amount(k)) => k.checked_sub(1),
        (C::AtMost, ExactBound::Share(p, d)) => Some(share(p, d).0),
        (C::LessThan, ExactBound::Share(p, d)) => {
            let (f, divides) = share(p, d);
            (f + u128::from(!divides)).checked_sub(1)
        }
        _ => return None,
    };
    Some(match limit {
        None => total + 1,
        Some(l) => total.saturating_sub(l),
    })
}

/// A bound on exact amounts: base units, or a share of the total.
#[derive(Clone, Copy)]
enum ExactBound {
    Amount(u128),
    Share(u64, u64),
}

/// What a condition sums, for messages: `seats`, `count` or a bloc.
pub(super) struct Subject<'n> {
    /// As written in the file.
    pub name: &'n str,
    /// The total over all members.
    pub total: u64,
    /// The sum is over the no-voters (`against`).
    pub against: bool,
    /// A bloc or group: the total is its head count.
    pub bloc: bool,
}

/// The quota must be reachable by the grand coalition and not met by the empty one.
pub(super) fn check_quota(span: Span, text: &str, q: u64, s: &Subject<'_>) -> Result<(), Diagnostic> {
    let (name, total) = (s.name, s.total);
    let of = if s.bloc {
        format!("the {total} members of `{name}`")
    } else if name == "count" {
        format!("{total} members in all")
    } else {
        format!("a total of {total} `{name}`")
    };
    let (message, hint) = if q == 0 {
        let hint = if s.against {
            format!(
                "with {of}, that many votes against can never happen; lower the amount to at most {total}"
            )
        } else {
            format!("a condition every coalition meets does nothing; raise the amount ({of})")
        };
        (format!("`{text}` is met even when nobody votes yes"), hint)
    } else if q > total {
        let hint = if s.against {
            "no votes against at all is written `< 1`; a smaller amount cannot be met".to_string()
        } else {
            format!("lower the amount to at most {total}, or write a share such as `{name} >= 2/3`")
        };
        (
            format!("no coalition can meet `{text}`: it needs {q} of {of}"),
            hint,
        )
    } else {
        return Ok(());
    };
    Err(Diagnostic::error(span, message).with_hint(hint))
}

/// Resolves conditions against the declarations.
pub(super) struct Resolver<'r, 'a> {
    pub d: &'r Declared<'a>,
    pub totals: Vec<Option<u64>>,
    /// Per declared attribute with rounded weights: (unit, exact total).
    pub scales: Vec<Option<(u128, u128)>>,
    pub errors: &'r mut CappedErrors,
}

impl Resolver<'_, '_> {
    /// The decimals of `key`'s amounts, and (unit, exact total) when its
    /// weights are rounded.
    pub fn amount_scale(&self, key: Key) -> (u32, Option<(u128, u128)>) {
        match key {
            Key::Declared(a) => (self.d.decimals(a), self.scales.get(a).copied().flatten()),
            _ => (0, None),
        }
    }

    /// The condition as written, on one line.
    pub fn text(&self, span: Span) -> String {
        one_line(span.text(self.d.source))
    }

    /// Whether the total behind `key` is known (nothing set aside could change it).
    pub fn total_known(&self, key: Key) -> bool {
        match key {
            Key::Bloc(b) => !self.d.uncertain_blocs[b],
            _ => !self.d.names.set_aside.totals_unknown,
        }
    }

    /// Reports a quota out of range, if the total is known.
    fn check(&mut self, key: Key, span: Span, text: &str, quota: u64, subject: &Subject<'_>) -> bool {
        if !self.total_known(key) {
            return true;
        }
        match check_quota(span, text, quota, subject) {
            Ok(()) => true,
            Err(e) => {
                self.errors.push(e);
                false
            }
        }
    }

    fn resolve(&mut self, e: &Expr) -> Option<Resolved> {
        match e {
            Expr::All(ops, _) | Expr::Any(ops, _) => {
                let mut out = Vec::with_capacity(ops.len());
                let mut ok = true;
                for op in ops {
                    match self.resolve(op) {
                        Some(r) => out.push(r),
                        None => ok = false,
                    }
                }
                let any = matches!(e, Expr::Any(..));
                ok.then_some(if any {
                    Resolved::Any(out)
                } else {
                    Resolved::All(out)
                })
            }
            Expr::Not(_, span) => {
                self.errors.push(
                    Diagnostic::error(*span, "`not` makes the rule non-monotone")
                        .with_hint("indices need rules where an extra yes vote never defeats a motion; state what passage requires, e.g. `seats against < 10` rather than `not seats >= 10`"),
                );
                None
            }
            Expr::Reference(name) => self.reference(name),
            Expr::OfBloc { amount, bloc, span } => self.of_bloc(amount, bloc, *span),
            Expr::Threshold(t) => self.threshold(t),
        }
    }

    fn reference(&mut self, name: &syntax::Name) -> Option<Resolved> {
        match self.d.names.get(&name.text) {
            Some(Kind::Member(i)) => Some(Resolved::Atom {
                key: Key::Member(i),
                quota: 1,
                span: name.span,
                exact: None,
            }),
            Some(Kind::Bloc(b)) => Some(Resolved::Atom {
                key: Key::Bloc(b),
                quota: self.d.blocs[b].members.len() as u64,
                span: name.span,
                exact: None,
            }),
            Some(Kind::Named(k)) => Some(Resolved::Ref(k)),
            Some(Kind::Attribute(_)) => {
                self.errors.push(
                    Diagnostic::error(
                        name.span,
                        format!("`{}` is an attribute; compare it with an amount", name.text),
                    )
                    .with_hint(format!("for example `{0} > 1/2` or `{0} >= 10`", name.text)),
                );
                None
            }
            None => {
                self.d.names.unknown(
                    name,
                    "name",
                    |k| !matches!(k, Kind::Attribute(_)),
                    "a condition names a member, a bloc, a group, a definition or a rule declared in the file",
                    self.errors,
                );
                None
            }
        }
    }

    fn of_bloc(&mut self, amount: &syntax::Amount, bloc: &syntax::Name, span: Span) -> Option<Resolved> {
        let b = match self.d.names.get(&bloc.text) {
            Some(Kind::Bloc(b)) => b,
            Some(Kind::Member(_)) => {
                self.errors.push(
                    Diagnostic::error(
                        bloc.span,
                        format!("`{}` is a member; `K of` needs a bloc or group", bloc.text),
                    )
                    .with_hint(format!("write `{}` alone to require its yes vote", bloc.text)),
                );
                return None;
            }
            Some(other) => {
                let msg = format!(
                    "`{}` is {}; `K of` needs a bloc or group",
                    bloc.text,
                    self.d.names.word(other)
                );
                self.errors.push(
                    Diagnostic::error(bloc.span, msg)
                        .with_hint("for an attribute write `ATTRIBUTE >= AMOUNT`"),
                );
                return None;
            }
            None => {
                self.d.names.unknown(
                    bloc,
                    "bloc",
                    |k| matches!(k, Kind::Bloc(_)),
                    "declare it with `bloc NAME = member, member, ...`",
                    self.errors,
                );
                return None;
            }
        };
        let size = self.d.blocs[b].members.len() as u64;
        let quota = match amount.value {
            AmountValue::Integer(k) => k,
            AmountValue::Share {
                numerator,
                denominator,
                ..
            } => match quota::at_least_share(numerator, denominator, size) {
                Ok(q) => q,
                Err(_) => {
                    // The parser refuses zero denominators; this is the net under it.
                    self.errors.push(
                        Diagnostic::error(amount.span, "the share cannot be taken")
                            .with_hint("write a share such as `2/3`"),
                    );
                    return None;
                }
            },
        };
        let text = self.text(span);
        let subject = Subject {
            name: &bloc.text,
            total: size,
            against: false,
            bloc: true,
        };
        self.check(Key::Bloc(b), span, &text, quota, &subject)
            .then_some(Resolved::Atom {
                key: Key::Bloc(b),
                quota,
                span,
                exact: None,
            })
    }

    /// What a threshold sums and its total; `None` after an error (or
    /// silently for a name that a set-aside declaration mentions).
    fn subject(&mut self, subject: &syntax::Subject) -> Option<(Key, u64)> {
        let name = match subject {
            syntax::Subject::Count(_) => return Some((Key::Count, self.d.members.len() as u64)),
            syntax::Subject::Name(name) => name,
        };
        match self.d.names.get(&name.text) {
            Some(Kind::Attribute(a)) => Some((Key::Declared(a), self.totals[a]?)),
            Some(Kind::Bloc(b)) => Some((Key::Bloc(b), self.d.blocs[b].members.len() as u64)),
            Some(Kind::Member(_)) => {
                self.errors.push(
                    Diagnostic::error(
                        name.span,
                        format!("`{}` is a member, not an attribute", name.text),
                    )
                    .with_hint(format!("write `{}` alone to require its yes vote", name.text)),
                );
                None
            }
            Some(other) => {
                let msg = format!(
                    "`{}` is {}, not an attribute",
                    name.text,
                    self.d.names.word(other)
                );
                self.errors
                    .push(Diagnostic::error(name.span, msg).with_hint("write its name alone to require it"));
                None
            }
            None if self.d.names.set_aside.covers(&name.text) => None,
            None => {
                let known = self.d.names.sorted_attributes(&self.d.attributes);
                let suggestion = self.d.names.suggestion(
                    &name.text,
                    |k| matches!(k, Kind::Attribute(_) | Kind::Bloc(_)),
                    self.errors,
                );
                let hint = match suggestion {
                    Some(s) => s,
                    None if known.is_empty() => {
                        "no member line gives any attribute; use `count` for the head count".to_string()
                    }
                    None => format!(
                        "the attributes are the names used in member lines: {}",
                        known.join(", ")
                    ),
                };
                self.errors.push(
                    Diagnostic::error(name.span, format!("unknown attribute `{}`", name.text))
                        .with_hint(hint),
                );
                None
            }
        }
    }

    fn threshold(&mut self, t: &Threshold) -> Option<Resolved> {
        let (key, total) = self.subject(&t.subject)?;
        let text = self.text(t.span);
        if t.is_four_state() {
            return self.four_state(t, key, total, &text);
        }
        let comparison = self.comparison(t, &text)?;
        let (decimals, scale) = self.amount_scale(key);
        if let Some((unit, exact_total)) = scale {
            return self.rounded_threshold(t, key, comparison, decimals, (unit, exact_total), total, &text);
        }
        let bound = match t.amount.value {
            // An amount of an attribute with decimals is in its own unit: `tokens >= 1000` is 1000 tokens.
            AmountValue::Integer(k) if decimals > 0 => {
                match u64::try_from(u128::from(k) * crate::amount::pow10(decimals)) {
                    Ok(k) => Bound::Amount(k),
                    Err(_) => {
                        self.errors.push(
                            Diagnostic::error(t.amount.span, "the amount is too large")
                                .with_hint("amounts are at most 2^64 - 2 base units"),
                        );
                        return None;
                    }
                }
            }
            AmountValue::Integer(k) => Bound::Amount(k),
            AmountValue::Share {
                numerator,
                denominator,
                ..
            } => Bound::Share {
                numerator,
                denominator,
            },
        };
        let result = if t.against.is_some() {
            quota::against(comparison, bound, total)
        } else {
            quota::threshold(comparison, bound, total)
        };
        let Ok(quota) = result else {
            self.errors.push(
                Diagnostic::error(t.amount.span, "the amount is too large")
                    .with_hint("amounts are at most 2^64 - 2"),
            );
            return None;
        };
        let subject = Subject {
            name: t.subject.span().text(self.d.source),
            total,
            against: t.against.is_some(),
            bloc: matches!(key, Key::Bloc(_)),
        };
        self.check(key, t.span, &text, quota, &subject)
            .then_some(Resolved::Atom {
                key,
                quota,
                span: t.span,
                exact: None,
            })
    }

    /// A threshold on an attribute whose weights are rounded to `unit`: the
    /// quota on the exact amounts, and the core's quota in units, its
    /// ceiling (at most the rounded total). The report certifies the rest.
    #[allow(clippy::too_many_arguments)]
    fn rounded_threshold(
        &mut self,
        t: &Threshold,
        key: Key,
        comparison: quota::Comparison,
        decimals: u32,
        (unit, exact_total): (u128, u128),
        total: u64,
        text: &str,
    ) -> Option<Resolved> {
        let bound = match t.amount.value {
            AmountValue::Integer(k) => ExactBound::Amount(u128::from(k) * crate::amount::pow10(decimals)),
            AmountValue::Share {
                numerator,
                denominator,
                ..
            } => ExactBound::Share(numerator, denominator),
        };
        let against = t.against.is_some();
        let Some(exact) = exact_quota(comparison, bound, exact_total, against) else {
            self.errors.push(
                Diagnostic::error(t.amount.span, "the amount is too large")
                    .with_hint("amounts are at most 2^94 - 1 base units"),
            );
            return None;
        };
        let name = t.subject.span().text(self.d.source);
        if exact == 0 || exact > exact_total {
            // Reported as for whole weights, in base units.
            let subject = Subject {
                name,
                total: u64::try_from(exact_total).unwrap_or(u64::MAX),
                against,
                bloc: false,
            };
            let q = u64::try_from(exact).unwrap_or(u64::MAX);
            return self
                .check(
                    key,
                    t.span,
                    text,
                    if exact == 0 {
                        0
                    } else {
                        q.max(subject.total.saturating_add(1))
                    },
                    &subject,
                )
                .then_some(Resolved::Atom {
                    key,
                    quota: 0,
                    span: t.span,
                    exact: Some(exact),
                });
        }
        let rounded = crate::amount::ceil_div(i128::try_from(exact).unwrap_or(i128::MAX), unit);
        let quota = u64::try_from(rounded).unwrap_or(u64::MAX).clamp(1, total.max(1));
        Some(Resolved::Atom {
            key,
            quota,
            span: t.span,
            exact: Some(exact),
        })
    }

    /// The comparison in the core's terms, or an explained refusal.
    fn comparison(&mut self, t: &Threshold, text: &str) -> Option<quota::Comparison> {
        let (cmp, span) = t.comparison;
        let subject = t.subject.span().text(self.d.source);
        let amount = t.amount.span.text(self.d.source);
        let refuse = |message: String, hint: String| Diagnostic::error(span, message).with_hint(hint);
        let d = match (cmp, t.against.is_some()) {
            (Comparison::AtMost, true) => return Some(quota::Comparison::AtMost),
            (Comparison::LessThan, true) => return Some(quota::Comparison::LessThan),
            (Comparison::AtLeast, false) => return Some(quota::Comparison::AtLeast),
            (Comparison::MoreThan, false) => return Some(quota::Comparison::MoreThan),
            (Comparison::AtLeast | Comparison::MoreThan, true) => {
                let (op, unless) = if cmp == Comparison::AtLeast {
                    ("<", format!("{amount} or more"))
                } else {
                    ("<=", format!("more than {amount}"))
                };
                refuse(
                    format!("`{text}` is not monotone: more votes against would help the motion pass"),
                    format!("write what passage requires: `{subject} against {op} {amount}` passes unless {unless} vote no"),
                )
            }
            (Comparison::AtMost | Comparison::LessThan, false) => refuse(
                format!("`{text}` is not monotone: an extra yes vote could defeat the motion"),
                format!(
                    "indices need rules where more yes votes never hurt; to limit the votes against, write `{subject} against {} {amount}`",
                    if cmp == Comparison::AtMost { "<=" } else { "<" }
                ),
            ),
            (Comparison::Equal | Comparison::NotEqual, _) => refuse(
                format!("`{text}` is not monotone: an exact amount can be overshot by an extra yes vote"),
                format!("write a lower bound such as `{subject} >= {amount}`"),
            ),
            (Comparison::Reversed, _) => refuse(
                format!("`{}` is not a comparison of the language", span.text(self.d.source)),
                "write `>=` (at least) or `>` (more than)".to_string(),
            ),
        };
        self.errors.push(d);
        None
    }
}

#[cfg(test)]
mod tests {
    use super::super::blocs;
    use super::super::testing::run;
    use super::*;

    /// Passes 1 to 3 on `source`: the resolved rules, and the errors.
    fn resolve_in(source: &str) -> (Vec<Option<Resolved>>, Vec<String>) {
        run(source, |d, errors| {
            blocs::resolve(d, errors);
            resolve_all(d, errors)
        })
    }

    fn quota_of(r: &Option<Resolved>) -> u64 {
        match r {
            Some(Resolved::Atom { quota, .. }) => *quota,
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn shares_and_against_forms_become_integer_quotas() {
        let src = "members d x115 seats=1\nrule a = seats > 1/2\nrule b = count against < 4\nrule c = 2/3 of d\nrule e = seats >= 62.5%\n";
        let (r, errors) = resolve_in(src);
        assert!(errors.is_empty(), "{errors:?}");
        // > 1/2 of 115 is >= 58; fewer than 4 of 115 against is at least 112 for.
        assert_eq!(r.iter().map(quota_of).collect::<Vec<_>>(), [58, 112, 77, 72]);
    }

    #[test]
    fn a_definition_is_resolved_once_and_referred_to() {
        let (r, errors) =
            resolve_in("member a seats=1\nmember b seats=2\ndefine big = seats >= 2\nrule r = big and a\n");
        assert!(errors.is_empty(), "{errors:?}");
        assert_eq!(
            r[1],
            Some(Resolved::All(vec![
                Resolved::Ref(0),
                Resolved::Atom {
                    key: Key::Member(0),
                    quota: 1,
                    span: Span::new(75, 76),
                    exact: None,
                }
            ]))
        );
    }

    #[test]
    fn quotas_out_of_range_are_refused_unless_a_total_is_unknown() {
        let (_, errors) = resolve_in("member a seats=9\nrule r = seats >= 10\n");
        assert_eq!(
            errors,
            ["2:10 no coalition can meet `seats >= 10`: it needs 10 of a total of 9 `seats`"]
        );
        // A broken member line may hold the missing seats: only the syntax error.
        let (_, errors) = resolve_in("member a seats=9\nmember b seats=\nrule r = seats >= 10\n");
        assert_eq!(errors.len(), 1, "{errors:?}");
        // A broken rule line changes no total: the other rule is still checked.
        let (_, errors) = resolve_in("member a seats=9\nrule q = seats >=\nrule r = seats >= 10\n");
        assert_eq!(errors.len(), 2, "{errors:?}");
        assert!(errors[1].starts_with("3:10 no coalition can meet"), "{errors:?}");
    }

    #[test]
    fn names_a_set_aside_declaration_mentions_are_not_unknown() {
        let (_, errors) = resolve_in("member a seats=1\nbloc ab = a, b c\nrule r = ab and zz and 2 of ab\n");
        assert_eq!(errors.len(), 2, "{errors:?}");
        assert!(errors[0].starts_with("2:16 expected"), "{errors:?}");
        assert_eq!(errors[1], "3:17 unknown name `zz`");
    }

    #[test]
    fn attribute_totals_are_checked_sums() {
        let max = u64::MAX - 3;
        let (_, errors) = resolve_in(&format!("member a s={max}\nmember b s=1\nrule r = s >= 1\n"));
        assert_eq!(errors, ["1:10 the weights of `s` add up to more than 2^64 - 4"]);
    }
}
