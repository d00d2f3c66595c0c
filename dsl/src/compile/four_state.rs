//! Pass 3, four-state conditions: `seats yes > 1/2 of cast`, `count
//! present >= 1/3`, `tokens yes > tokens no`. Each becomes one linear form
//! `a*Y + b*N + c*A >= bound` over the attribute's yes, no and abstain sums,
//! exact in integers and in its smallest form, refused unless monotone in
//! yes votes.
//!
//! Overflow: weights and totals are below 2^64 and shares at most 1, so
//! `p * T` (a share of the total) is below 2^128 and is taken in `u128`
//! then divided; every other product is below 2^96. Time O(1) per condition.

use clout_core::Linear;

use super::quotas::{Key, Resolved, Resolver};
use crate::diagnostic::Diagnostic;
use crate::syntax::{self, AmountValue, Comparison, GroupSide, GroupWord, Threshold};

impl Resolver<'_, '_> {
    /// The linear form of a four-state condition on attribute `key` (whose
    /// total is `total`), or an explained refusal.
    pub(super) fn four_state(&mut self, t: &Threshold, key: Key, total: u64, text: &str) -> Option<Resolved> {
        let (decimals, scale) = self.amount_scale(key);
        let (cmp, cmp_span) = t.comparison;
        if let Some(span) = t.against {
            self.errors.push(
                Diagnostic::error(span, "`against` cannot be combined with a group word")
                    .with_hint("the votes against are the group `no`: write e.g. `seats no < 10`"),
            );
            return None;
        }
        let left = t.group.map_or(GroupWord::Yes, |(g, _)| g).vector();
        // With a group on the right: lhs - rhs = coef . (Y, N, A) - constant,
        // compared with 0.
        let difference = match &t.side {
            None => None,
            Some(side) => Some(self.difference(t, side, left)?),
        };
        if matches!(
            cmp,
            Comparison::Equal | Comparison::NotEqual | Comparison::Reversed
        ) {
            self.errors.push(
                Diagnostic::error(
                    cmp_span,
                    format!("`{}` cannot be used here", cmp_span.text(self.d.source)),
                )
                .with_hint("write `>=`, `>`, `<=` or `<`"),
            );
            return None;
        }
        // The form over the weights the core counts, and (for rounded
        // weights) over the exact amounts: the same coefficients, bounds of
        // their own.
        let form = |total: u128| -> Option<([i128; 3], i128)> {
            Some(match (difference, t.amount.value) {
                (Some((coef, constant)), _) => smallest(orient(coef, constant, cmp)),
                (
                    None,
                    AmountValue::Share {
                        numerator,
                        denominator,
                        ..
                    },
                ) => share_of_total(left, numerator, denominator, total, cmp),
                (None, AmountValue::Integer(k)) => {
                    let k =
                        i128::from(k).checked_mul(i128::try_from(crate::amount::pow10(decimals)).ok()?)?;
                    smallest(orient(left, k, cmp))
                }
            })
        };
        let too_large = |this: &mut Self| {
            this.errors.push(
                Diagnostic::error(t.amount.span, "the amount is too large")
                    .with_hint("amounts are at most 2^64 - 2 of the attribute's unit"),
            );
        };
        let exact = match scale {
            None => None,
            Some((_, exact_total)) => match form(exact_total) {
                Some(f) => Some(f),
                None => {
                    too_large(self);
                    return None;
                }
            },
        };
        let (coef, bound) = match (exact, scale) {
            (Some((coef, b)), Some((unit, _))) => (coef, crate::amount::ceil_div(b, unit)),
            _ => match form(u128::from(total)) {
                Some(f) => f,
                None => {
                    too_large(self);
                    return None;
                }
            },
        };
        let coefficients = coef.map(|x| i32::try_from(x).ok());
        let [Some(yes), Some(no), Some(abstain)] = coefficients else {
            self.errors.push(
                Diagnostic::error(
                    t.amount.span,
                    "the share is too precise for a four-state condition",
                )
                .with_hint("use fewer decimals in the percentage"),
            );
            return None;
        };
        let linear = Linear {
            attribute: 0,
            yes,
            no,
            abstain,
            bound,
        };
        if linear.check_monotone().is_err() {
            let why = if yes < 0 {
                "an extra yes vote could defeat the motion"
            } else if yes < no {
                "switching a vote from no to yes could defeat the motion"
            } else {
                "switching from abstaining to yes could defeat the motion"
            };
            self.errors.push(
                Diagnostic::error(t.span, format!("`{text}` is not monotone: {why}"))
                    .with_hint("indices need rules where a yes vote never hurts; bound what passage requires, e.g. `seats yes > 1/2 of cast` or `count no < 10`"),
            );
            return None;
        }
        let coefficients = [yes, no, abstain];
        if self.total_known(key) {
            // Over all four-state ballots the left side ranges from T * min to
            // T * max of (0, coefficients): refuse conditions that cannot vary.
            let t_total = i128::from(total);
            let lowest = t_total * coefficients.iter().map(|&c| i128::from(c)).fold(0, i128::min);
            let highest = t_total * coefficients.iter().map(|&c| i128::from(c)).fold(0, i128::max);
            if lowest >= bound {
                self.errors.push(
                    Diagnostic::error(t.span, format!("`{text}` holds for every ballot"))
                        .with_hint("a condition every ballot meets does nothing; raise the amount"),
                );
                return None;
            }
            if highest < bound {
                self.errors.push(
                    Diagnostic::error(t.span, format!("no ballot can meet `{text}`"))
                        .with_hint(format!("lower the amount (the total is {total})")),
                );
                return None;
            }
        }
        let exact = match (exact, scale) {
            (Some((_, b)), Some((_, exact_total))) => {
                match exact_binary_quota(coefficients, b, exact_total) {
                    Some(q) => Some((b, q)),
                    None => {
                        self.errors.push(
                            Diagnostic::error(
                                t.span,
                                format!("`{text}` is too precise for the exact amounts"),
                            )
                            .with_hint("use fewer decimals in the percentage"),
                        );
                        return None;
                    }
                }
            }
            _ => None,
        };
        Some(Resolved::Linear {
            key,
            coefficients,
            bound,
            span: t.span,
            exact,
        })
    }

    /// `lhs - rhs` as coefficients of (Y, N, A) and a constant, for a group
    /// on the right.
    fn difference(&mut self, t: &Threshold, side: &GroupSide, left: [i128; 3]) -> Option<([i128; 3], i128)> {
        match side {
            GroupSide::ShareOf(word, _) => match t.amount.value {
                AmountValue::Share {
                    numerator,
                    denominator,
                    ..
                } => {
                    // q * G - p * H with p <= q < 2^64 and G, H sums of 0/1 terms.
                    let (p, q) = (i128::from(numerator), i128::from(denominator));
                    let right = word.vector();
                    Some(([0, 1, 2].map(|i| q * left[i] - p * right[i]), 0))
                }
                AmountValue::Integer(_) => {
                    self.errors.push(
                        Diagnostic::error(t.amount.span, format!("`of {}` needs a share", word.word()))
                            .with_hint(format!(
                                "write a fraction or a percentage, e.g. `1/2 of {}`",
                                word.word()
                            )),
                    );
                    None
                }
            },
            GroupSide::Sum(other, word, span) => {
                let same = match (other, &t.subject) {
                    (None, _) => true,
                    (Some(syntax::Subject::Count(_)), syntax::Subject::Count(_)) => true,
                    (Some(syntax::Subject::Name(a)), syntax::Subject::Name(b)) => a.text == b.text,
                    _ => false,
                };
                if !same {
                    self.errors.push(
                        Diagnostic::error(*span, "both sides of a comparison must sum the same attribute")
                            .with_hint(format!(
                                "compare groups of one attribute, e.g. `{0} yes > {0} no`",
                                t.subject.span().text(self.d.source)
                            )),
                    );
                    return None;
                }
                let right = word.vector();
                Some(([0, 1, 2].map(|i| left[i] - right[i]), 0))
            }
        }
    }
}

/// `coef . x  cmp  constant` as `coef' . x >= bound` (cmp one of `>=`, `>`, `<=`, `<`).
fn orient(coef: [i128; 3], constant: i128, cmp: Comparison) -> ([i128; 3], i128) {
    match cmp {
        Comparison::MoreThan => (coef, constant + 1),
        Comparison::AtMost => (coef.map(|x| -x), -constant),
        Comparison::LessThan => (coef.map(|x| -x), 1 - constant),
        _ => (coef, constant),
    }
}

/// The smallest integer form: divide by the gcd, rounding the bound up.
fn smallest((coef, bound): ([i128; 3], i128)) -> ([i128; 3], i128) {
    let g = coef.iter().fold(0i128, |g, &x| gcd(g, x.abs()));
    if g > 1 {
        (
            coef.map(|x| x / g),
            bound.div_euclid(g) + i128::from(bound.rem_euclid(g) != 0),
        )
    } else {
        (coef, bound)
    }
}

fn gcd(mut a: i128, mut b: i128) -> i128 {
    while b != 0 {
        (a, b) = (b, a % b);
    }
    a
}

/// `G cmp p/q of T`, G = left . (Y, N, A) with 0/1 coefficients, in the
/// smallest form: `q G cmp p T` divided by q (the gcd of `q * left`), with
/// the bound rounded up, exactly: `p T` (up to 192 bits) through
/// [`crate::amount::mul_div`], whose quotient `p T / q` <= T < 2^127.
fn share_of_total(left: [i128; 3], p: u64, q: u64, total: u128, cmp: Comparison) -> ([i128; 3], i128) {
    let (floor, divides) = crate::amount::mul_div(total, p, q.max(1));
    let floor = i128::try_from(floor).unwrap_or(i128::MAX);
    let zero = p == 0 || total == 0;
    match cmp {
        Comparison::MoreThan => (left, floor + 1),
        Comparison::AtMost => (left.map(|x| -x), -floor),
        // ceil((1 - n) / q) = -floor((n - 1) / q), and 1 for n = 0.
        Comparison::LessThan if zero => (left.map(|x| -x), 1),
        Comparison::LessThan => (left.map(|x| -x), -(floor - i128::from(divides))),
        _ => (left, floor + i128::from(!divides)),
    }
}

/// The least exact yes-sum meeting `coef . (Y, N, A) >= bound` when
/// everyone votes yes or no (N = T - Y, A = 0), as `Linear::binary_quota`
/// computes it for the core's weights; `None` on overflow (refused).
pub(super) fn exact_binary_quota(coef: [i32; 3], bound: i128, total: u128) -> Option<u128> {
    let t = i128::try_from(total).ok()?;
    let d = i128::from(coef[0]) - i128::from(coef[1]);
    let need = bound.checked_sub(i128::from(coef[1]).checked_mul(t)?)?;
    let never = t.checked_add(1)?;
    let q = if d <= 0 {
        if need <= 0 {
            0
        } else {
            never
        }
    } else {
        (need.div_euclid(d) + i128::from(need.rem_euclid(d) != 0)).clamp(0, never)
    };
    u128::try_from(q).ok()
}

#[cfg(test)]
mod tests {
    use super::*;

    const COMPARISONS: [Comparison; 4] = [
        Comparison::AtLeast,
        Comparison::MoreThan,
        Comparison::AtMost,
        Comparison::LessThan,
    ];

    #[test]
    fn shares_of_the_total_match_scaling_then_dividing() {
        // The form before the u128 path: scale by q, orient, divide by the gcd.
        let words = [GroupWord::Yes, GroupWord::Cast, GroupWord::Present, GroupWord::No];
        for word in words {
            let left = word.vector();
            for q in 1..12u64 {
                for p in 0..=q {
                    for total in 0..30u64 {
                        for cmp in COMPARISONS {
                            let scaled = left.map(|x| x * i128::from(q));
                            let constant = i128::from(p) * i128::from(total);
                            let want = smallest(orient(scaled, constant, cmp));
                            assert_eq!(
                                share_of_total(left, p, q, u128::from(total), cmp),
                                want,
                                "{p}/{q} of {total} {cmp:?}"
                            );
                        }
                    }
                }
            }
        }
    }

    #[test]
    fn shares_of_the_largest_total_do_not_overflow() {
        let (p, total) = (u64::MAX, u64::MAX - 3);
        let (coef, bound) = share_of_total([1, 0, 0], p, p, u128::from(total), Comparison::AtLeast);
        assert_eq!((coef, bound), ([1, 0, 0], i128::from(total)));
        let (_, bound) = share_of_total([1, 1, 0], p - 1, p, u128::from(total), Comparison::MoreThan);
        // With M = 2^64 - 1: (M - 1)(M - 3) / M = M - 4 + 3/M, so "more than"
        // is floor + 1 = M - 3, the total.
        assert_eq!(bound, i128::from(total));
    }
}
