//! Deciding one actual vote: outcome, per-condition tallies, critical members.
//!
//! [`decide`] is O(n_yes * attributes_used + nodes); [`critical`] is
//! O(n * (atoms + nodes)) after one tally. Neither allocates; the largest
//! stack object is the per-attribute sum array (`8 * MAX_ATTRIBUTES` bytes)
//! plus the tallies in [`Decision`].

use crate::limits::{MAX_ATOMS, MAX_ATTRIBUTES};
use crate::{Coalition, Error, Rule};

/// One condition's tally in an actual vote.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct AtomTally {
    /// Sum of the atom's attribute over the yes-voters.
    pub sum: u64,
    /// The quota it had to reach.
    pub quota: u64,
    /// `sum >= quota`.
    pub met: bool,
}

/// The outcome of one vote.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Decision {
    /// Whether the motion passes.
    pub passed: bool,
    /// One tally per atom, in the rule's atom order.
    pub tallies: heapless::Vec<AtomTally, MAX_ATOMS>,
}

/// Decides the ballot `yes` under `rule`.
pub fn decide<W: AsRef<[u64]>, const B: usize>(
    rule: &Rule<W>,
    yes: &Coalition<B>,
) -> Result<Decision, Error> {
    let mut sums = [0u64; MAX_ATTRIBUTES];
    rule.yes_sums(yes, &mut sums)?;
    let mut tallies = heapless::Vec::new();
    for atom in rule.atoms() {
        let sum = sums.get(usize::from(atom.attribute)).copied().unwrap_or(0);
        // Capacity equals MAX_ATOMS, which bounds rule.atoms().
        let _ = tallies.push(AtomTally {
            sum,
            quota: atom.quota,
            met: sum >= atom.quota,
        });
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
    let passed = rule.passes_with_sums(&sums[..rule.attributes()]);
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
