//! Fictional rules shared by tests, benchmarks and demos, written once
//! (feature `fixtures`; always compiled for the core's own tests).
//!
//! Most test rules share one treaty-like shape, the one union-27 has: a
//! double majority on two attributes, or a larger majority on the first
//! alone ([`two_tier`]). Four-state tests draw their conditions from
//! [`four_state_form`]. Every number passed in is the caller's; the
//! functions only fix the shapes. Building a rule is O(members *
//! attributes + nodes), no heap ([`seats_and_heads`], feature `alloc`,
//! allocates its table); weights are checked as by [`Rule::new`].
//!
//! Import rule: fixtures build on the model only.

#[cfg(feature = "alloc")]
use alloc::vec::Vec;

use crate::model::atom::{Atom, Linear};
use crate::model::error::Error;
use crate::model::rule::{Node, Rule};

/// The formula of [`two_tier`]: (atom 0 and atom 1) or atom 2, postfix.
pub const TWO_TIER: [Node; 5] = [
    Node::Atom(0),
    Node::Atom(1),
    Node::All(2),
    Node::Atom(2),
    Node::Any(2),
];

/// The atoms of [`two_tier`]: attribute 0 >= `q[0]`, attribute 1 >=
/// `q[1]`, attribute 0 >= `q[2]`.
pub fn two_tier_atoms(quotas: [u64; 3]) -> [Atom; 3] {
    let [first, second, alone] = quotas;
    [
        Atom {
            attribute: 0,
            quota: first,
        },
        Atom {
            attribute: 1,
            quota: second,
        },
        Atom {
            attribute: 0,
            quota: alone,
        },
    ]
}

/// (attribute 0 >= `q[0]` and attribute 1 >= `q[1]`) or attribute 0 >=
/// `q[2]`, over `weights` (attribute-major, as in [`Rule::new`]).
///
/// union-27 is this with head count, population, and "fewer than 4
/// against"; the core's tests use it with seats and head count.
pub fn two_tier<W: AsRef<[u64]>>(members: usize, weights: W, quotas: [u64; 3]) -> Result<Rule<W>, Error> {
    Rule::new(members, weights, &two_tier_atoms(quotas), &TWO_TIER)
}

/// attribute 0 >= `q[0]` and attribute 1 >= `q[1]`: the double majority
/// alone (the device benchmarks decide ballots of it).
pub fn double_majority<W: AsRef<[u64]>>(
    members: usize,
    weights: W,
    quotas: [u64; 2],
) -> Result<Rule<W>, Error> {
    let [first, second, _] = two_tier_atoms([quotas[0], quotas[1], 0]);
    Rule::new(
        members,
        weights,
        &[first, second],
        &[Node::Atom(0), Node::Atom(1), Node::All(2)],
    )
}

/// The weight table of seats (attribute 0) and head count (attribute 1),
/// one member per seat entry (feature `alloc`, or the core's tests).
#[cfg(any(test, feature = "alloc"))]
pub fn seats_and_heads(seats: &[u64]) -> Vec<u64> {
    let mut weights = seats.to_vec();
    weights.extend(core::iter::repeat_n(1u64, seats.len()));
    weights
}

/// A four-state condition of a kind drafters write, over seats (attribute
/// 0) and head count (attribute 1); `form` is taken modulo 4:
///
/// 0. seats: more yes than no among those voting (Y - N >= 1);
/// 1. head count: yes at least two thirds of those present (Y - 2N - 2A >= 0);
/// 2. head count: at least `quorum` present (Y + N + A >= quorum);
/// 3. seats: yes at least twice no (Y - 2N >= 0).
pub fn four_state_form(form: usize, quorum: i128) -> Linear {
    let (attribute, yes, no, abstain, bound) = match form % 4 {
        0 => (0, 1, -1, 0, 1),
        1 => (1, 1, -2, -2, 0),
        2 => (1, 1, 1, 1, quorum),
        _ => (0, 1, -2, 0, 0),
    };
    Linear {
        attribute,
        yes,
        no,
        abstain,
        bound,
    }
}

/// A rule over seats and head count ([`seats_and_heads`]): the four-state
/// `form` alone, or joined by `join` (`Node::All(2)` or `Node::Any(2)`)
/// with the plain condition "seats >= `quota`" as `plain = Some((join,
/// quota))` (feature `alloc`, or the core's tests).
#[cfg(any(test, feature = "alloc"))]
pub fn four_state_rule(
    seats: &[u64],
    form: Linear,
    plain: Option<(Node, u64)>,
) -> Result<Rule<Vec<u64>>, Error> {
    use crate::model::atom::Condition;
    let weights = seats_and_heads(seats);
    match plain {
        None => Rule::with_conditions(seats.len(), weights, &[Condition::Linear(form)], &[Node::Atom(0)]),
        Some((join, quota)) => Rule::with_conditions(
            seats.len(),
            weights,
            &[
                Condition::Linear(form),
                Condition::Yes(Atom { attribute: 0, quota }),
            ],
            &[Node::Atom(0), Node::Atom(1), join],
        ),
    }
}

/// Random rules of 1 to 7 members mixing plain and four-state conditions,
/// for the core's proptests.
#[cfg(test)]
pub(crate) fn four_state_rules() -> impl proptest::strategy::Strategy<Value = Rule<Vec<u64>>> {
    use proptest::prelude::*;
    (
        1usize..=7,
        prop::collection::vec(0u64..5, 7),
        0usize..4,
        0u64..12,
        any::<bool>(),
    )
        .prop_map(|(n, seats, form, k, both)| {
            let seats = &seats[..n];
            let form = four_state_form(form, i128::from(k % (n as u64 + 2)));
            let total: u64 = seats.iter().sum();
            let plain = both.then_some((Node::All(2), (total / 3).max(k % 3)));
            four_state_rule(seats, form, plain).unwrap()
        })
}

/// Random rules of 1 to 9 members over seats and head count: one to four
/// conditions, each plain (any quota from 0 to one past the total, so
/// constant conditions occur) or four-state (any monotone coefficients and
/// bound), joined by AND, by OR, or as (c0 and c1) or the rest. For the
/// proptests of the two-state reduction and of the voting model.
#[cfg(test)]
pub(crate) fn mixed_rules() -> impl proptest::strategy::Strategy<Value = Rule<Vec<u64>>> {
    use crate::model::atom::Condition;
    use proptest::prelude::*;
    let condition = (
        any::<bool>(),
        0u16..2,
        0u64..40,
        1i32..=3,
        -2i32..=3,
        -2i32..=3,
        -12i128..=14,
    );
    (
        1usize..=9,
        prop::collection::vec(0u64..6, 9),
        prop::collection::vec(condition, 1..=4),
        0u8..3,
    )
        .prop_map(|(n, seats, conditions, shape)| {
            let seats = &seats[..n];
            let weights = seats_and_heads(seats);
            let totals = [seats.iter().sum::<u64>(), n as u64];
            let conditions: Vec<Condition> = conditions
                .into_iter()
                .map(|(plain, attribute, q, yes, no, abstain, bound)| {
                    if plain {
                        let total = totals[usize::from(attribute)];
                        Condition::Yes(Atom {
                            attribute,
                            quota: q % (total + 2),
                        })
                    } else {
                        Condition::Linear(Linear {
                            attribute,
                            yes,
                            no: no.min(yes),
                            abstain: abstain.min(yes),
                            bound,
                        })
                    }
                })
                .collect();
            let k = conditions.len() as u16;
            let mut formula: Vec<Node> = (0..k).map(Node::Atom).collect();
            match (shape, k) {
                (_, 1) => {}
                (0, _) => formula.push(Node::All(k)),
                (1, _) | (_, 2) => formula.push(Node::Any(k)),
                _ => {
                    formula.insert(2, Node::All(2));
                    formula.push(Node::Any(k - 1));
                }
            }
            Rule::with_conditions(n, weights, &conditions, &formula).unwrap()
        })
}
