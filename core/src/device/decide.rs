//! Deciding one actual vote: outcome, per-condition tallies, critical members.
//!
//! [`decide`] is O(n_yes * attributes_used + nodes); [`critical`] is
//! O(n * (atoms + nodes)) after one tally. Neither allocates; the largest
//! stack object is the per-attribute sum array (`8 * MAX_ATTRIBUTES` bytes)
//! plus the tallies in [`Decision`]. Sums cannot overflow: every
//! attribute's total was checked when the rule was built, and four-state
//! conditions are evaluated exactly in `i128`.

use crate::model::atom::Atom;
use crate::model::ballot::Ballot;
use crate::model::coalition::Coalition;
use crate::model::error::Error;
use crate::model::limits::{MAX_ATOMS, MAX_ATTRIBUTES};
use crate::model::rule::Rule;

/// One condition's tally in an actual vote.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct AtomTally {
    /// Sum of the atom's attribute over the yes-voters.
    pub sum: u64,
    /// The quota it had to reach (for a four-state condition: the quota of
    /// the binary game, where everyone is present).
    pub quota: u64,
    /// Whether the condition holds.
    pub met: bool,
    /// Sum over the no-voters.
    pub no: u64,
    /// Sum over the abstainers.
    pub abstain: u64,
}

impl AtomTally {
    /// Left and right sides of atom `i`'s condition: the yes-sum and the
    /// quota for a plain threshold, `yes*Y + no*N + abstain*A` and the bound
    /// for a [`crate::Linear`] form.
    pub fn sides<W: AsRef<[u64]>>(&self, rule: &Rule<W>, i: usize) -> (i128, i128) {
        match rule.linear(i) {
            Some(l) => (l.lhs(self.sum, self.no, self.abstain), l.bound),
            None => (i128::from(self.sum), i128::from(self.quota)),
        }
    }
}

/// The outcome of one vote.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Decision {
    /// Whether the motion passes.
    pub passed: bool,
    /// One tally per atom, in the rule's atom order.
    pub tallies: heapless::Vec<AtomTally, MAX_ATOMS>,
}

/// Decides the ballot `yes` under `rule` (two states: everyone not voting
/// yes votes no).
pub fn decide<W: AsRef<[u64]>, const B: usize>(
    rule: &Rule<W>,
    yes: &Coalition<B>,
) -> Result<Decision, Error> {
    let mut tallies = heapless::Vec::new();
    let empty = AtomTally {
        sum: 0,
        quota: 0,
        met: false,
        no: 0,
        abstain: 0,
    };
    // Capacity equals MAX_ATOMS, which bounds rule.atoms().
    for _ in rule.atoms() {
        let _ = tallies.push(empty);
    }
    let passed = decide_into(rule, yes, &mut tallies)?;
    Ok(Decision { passed, tallies })
}

/// [`decide`] writing one tally per atom into a caller slice (at least as
/// long as the rule's atoms); the device path, with nothing to copy back.
pub fn decide_into<W: AsRef<[u64]>, const B: usize>(
    rule: &Rule<W>,
    yes: &Coalition<B>,
    out: &mut [AtomTally],
) -> Result<bool, Error> {
    let atoms = rule.atoms();
    if out.len() < atoms.len() {
        return Err(Error::ScratchTooSmall {
            needed: atoms.len(),
            given: out.len(),
        });
    }
    let mut sums = [0u64; MAX_ATTRIBUTES];
    rule.yes_sums(yes, &mut sums)?;
    for (atom, slot) in atoms.iter().zip(out.iter_mut()) {
        *slot = two_state_tally(
            rule,
            atom,
            sums.get(usize::from(atom.attribute)).copied().unwrap_or(0),
        );
    }
    Ok(rule.eval(|i| out.get(i).is_some_and(|t| t.met)))
}

/// The tally of a threshold atom whose attribute sums to `sum` over the
/// yes-voters, everyone else voting no. The binary quota is exact for
/// linear forms too (`Linear::binary_quota`).
fn two_state_tally<W: AsRef<[u64]>>(rule: &Rule<W>, atom: &Atom, sum: u64) -> AtomTally {
    AtomTally {
        sum,
        quota: atom.quota,
        met: sum >= atom.quota,
        no: rule.total(usize::from(atom.attribute)).saturating_sub(sum),
        abstain: 0,
    }
}

/// The tally of atom `i` given its attribute's yes, no and abstain sums.
fn four_state_tally<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    i: usize,
    atom: &Atom,
    y: u64,
    n: u64,
    ab: u64,
) -> AtomTally {
    let met = match rule.linear(i) {
        Some(l) => l.holds(y, n, ab),
        None => y >= atom.quota,
    };
    AtomTally {
        sum: y,
        quota: atom.quota,
        met,
        no: n,
        abstain: ab,
    }
}

/// [`decide`] on a small fixed stack, for devices: no per-attribute array
/// and no [`Decision`]. Each atom's tally goes to `each(atom, tally)` in atom
/// order; returns whether the motion passes. Each atom sums its attribute
/// afresh: O(atoms * yes-voters + nodes), a few dozen bytes of stack.
pub fn decide_each<W: AsRef<[u64]>, const B: usize>(
    rule: &Rule<W>,
    yes: &Coalition<B>,
    mut each: impl FnMut(usize, AtomTally),
) -> Result<bool, Error> {
    rule.check_members(yes)?;
    let mut met = 0u64;
    for (k, atom) in rule.atoms().iter().enumerate() {
        let tally = two_state_tally(rule, atom, rule.sum_over(usize::from(atom.attribute), yes));
        // k < MAX_ATOMS = 64.
        met |= u64::from(tally.met) << k;
        each(k, tally);
    }
    Ok(rule.eval(|i| (met >> i) & 1 == 1))
}

/// [`decide_ballot`] on a small fixed stack, as [`decide_each`] is for
/// [`decide`]: O(atoms * members + nodes).
pub fn decide_ballot_each<W: AsRef<[u64]>, const B: usize>(
    rule: &Rule<W>,
    ballot: &Ballot<B>,
    mut each: impl FnMut(usize, AtomTally),
) -> Result<bool, Error> {
    rule.check_members(ballot.yes())?;
    rule.check_members(ballot.no())?;
    rule.check_members(ballot.abstain())?;
    let mut met = 0u64;
    for (k, atom) in rule.atoms().iter().enumerate() {
        let a = usize::from(atom.attribute);
        let (y, n, ab) = (
            rule.sum_over(a, ballot.yes()),
            rule.sum_over(a, ballot.no()),
            rule.sum_over(a, ballot.abstain()),
        );
        let tally = four_state_tally(rule, k, atom, y, n, ab);
        met |= u64::from(tally.met) << k;
        each(k, tally);
    }
    Ok(rule.eval(|i| (met >> i) & 1 == 1))
}

/// Decides a four-state ballot: yes, no, abstain, absent.
///
/// Plain conditions count the yes-sum against their quota (abstaining and
/// absent members simply do not add to it); [`crate::Linear`] conditions
/// compare their weighted group sums with their bound. O(n * attributes + nodes).
pub fn decide_ballot<W: AsRef<[u64]>, const B: usize>(
    rule: &Rule<W>,
    ballot: &Ballot<B>,
) -> Result<Decision, Error> {
    let mut yes = [0u64; MAX_ATTRIBUTES];
    let mut no = [0u64; MAX_ATTRIBUTES];
    let mut abstain = [0u64; MAX_ATTRIBUTES];
    rule.yes_sums(ballot.yes(), &mut yes)?;
    rule.yes_sums(ballot.no(), &mut no)?;
    rule.yes_sums(ballot.abstain(), &mut abstain)?;
    let mut tallies = heapless::Vec::new();
    for (i, atom) in rule.atoms().iter().enumerate() {
        let a = usize::from(atom.attribute);
        // a < attributes <= MAX_ATTRIBUTES (Rule::new), so every get finds it.
        let at = |sums: &[u64; MAX_ATTRIBUTES]| sums.get(a).copied().unwrap_or(0);
        let _ = tallies.push(four_state_tally(rule, i, atom, at(&yes), at(&no), at(&abstain)));
    }
    let passed = rule.eval(|i| tallies.get(i).is_some_and(|t| t.met));
    Ok(Decision { passed, tallies })
}

/// The members whose switch (yes to no, or no to yes) would flip the outcome
/// of the ballot `yes`.
///
/// A yes-voter is critical in a passing ballot when the motion fails without
/// them; a no-voter is critical in a failing ballot when their yes would pass
/// it. (Monotonicity means nobody else can flip the outcome.)
pub fn critical<W: AsRef<[u64]>, const B: usize>(
    rule: &Rule<W>,
    yes: &Coalition<B>,
) -> Result<Coalition<B>, Error> {
    let mut sums = [0u64; MAX_ATTRIBUTES];
    rule.yes_sums(yes, &mut sums)?;
    let passed = rule.passes_with_sums(sums.get(..rule.attributes()).unwrap_or(&[]));
    let mut out = Coalition::<B>::EMPTY;
    for i in 0..rule.members() {
        let voting_yes = yes.contains(i);
        // Only a yes-voter can break a pass; only a no-voter can make one.
        if voting_yes != passed {
            continue;
        }
        let flipped = rule.eval(|a| {
            rule.atoms().get(a).is_some_and(|atom| {
                let attr = usize::from(atom.attribute);
                let w = rule.weight(attr, i);
                let s = sums.get(attr).copied().unwrap_or(0);
                // The totals were checked for overflow, so these cannot wrap.
                let s = if voting_yes {
                    s.saturating_sub(w)
                } else {
                    s.saturating_add(w)
                };
                s >= atom.quota
            })
        });
        if flipped != passed {
            out.insert(i)?;
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fixtures::four_state_rules;
    use crate::model::ballot::Vote;
    use proptest::prelude::*;

    proptest! {
        #![proptest_config(ProptestConfig { cases: 200, ..ProptestConfig::default() })]
        /// With no abstentions and no absences every four-state form decides
        /// like its binary quota.
        #[test]
        fn binary_ballots_agree(rule in four_state_rules(), mask in 0u64..128) {
            let n = rule.members();
            let yes = Coalition::<1>::from_words([mask & ((1 << n) - 1)]);
            let four = decide_ballot(&rule, &Ballot::binary(yes, n).unwrap()).unwrap();
            let two = decide(&rule, &yes).unwrap();
            prop_assert_eq!(four.passed, two.passed);
            for (i, (a, b)) in four.tallies.iter().zip(&two.tallies).enumerate() {
                prop_assert_eq!(a.met, b.met);
                prop_assert_eq!(a.sides(&rule, i), b.sides(&rule, i));
            }
        }

        /// The small-stack forms give the same outcome and tallies as
        /// `decide` and `decide_ballot`, atom by atom, on any four-state ballot.
        #[test]
        fn small_stack_forms_agree(rule in four_state_rules(), votes in proptest::collection::vec(0u8..4, 7)) {
            let n = rule.members();
            let mut ballot = Ballot::<1>::EMPTY;
            for (i, &v) in votes.iter().enumerate().take(n) {
                let vote = [Vote::Absent, Vote::Yes, Vote::No, Vote::Abstain][usize::from(v)];
                ballot.set(i, vote).unwrap();
            }
            let mut seen = heapless::Vec::<AtomTally, MAX_ATOMS>::new();
            let passed = decide_ballot_each(&rule, &ballot, |k, t| {
                assert_eq!(k, seen.len());
                seen.push(t).unwrap();
            }).unwrap();
            let whole = decide_ballot(&rule, &ballot).unwrap();
            prop_assert_eq!(passed, whole.passed);
            prop_assert_eq!(&seen, &whole.tallies);
            seen.clear();
            let passed = decide_each(&rule, ballot.yes(), |_, t| seen.push(t).unwrap()).unwrap();
            let whole = decide(&rule, ballot.yes()).unwrap();
            prop_assert_eq!(passed, whole.passed);
            prop_assert_eq!(&seen, &whole.tallies);
        }
    }
}
