//! The rule IR: members, weight attributes, threshold atoms and a monotone
//! AND/OR formula over them (a simple game in the trade's sense).
//!
//! Storage: the weight table is owned by the caller through any
//! `W: AsRef<[u64]>` (a borrowed slice on a device, a `Vec` with `alloc`);
//! atoms and formula live in fixed-capacity vectors of
//! [`MAX_ATOMS`](crate::limits::MAX_ATOMS) and [`MAX_NODES`](crate::limits::MAX_NODES).
//! Evaluating the formula is O(nodes) time with a 128-bit stack; no heap.
//! Building a rule is O(members * attributes + nodes).
//!
//! Overflow: every attribute's total is summed with checked arithmetic when
//! the rule is built and refused above
//! [`MAX_TOTAL`](crate::limits::MAX_TOTAL), so no sum over any coalition can
//! overflow afterwards.
//!
//! Monotonicity: there is no negation in the IR and every atom is a lower
//! bound on a sum of non-negative weights, so every rule that can be built is
//! monotone (adding a yes vote never turns a pass into a fail).

use crate::model::atom::{Atom, Condition, Linear};
use crate::model::coalition::Coalition;
use crate::model::error::Error;
use crate::model::limits::{MAX_ATOMS, MAX_ATTRIBUTES, MAX_DEPTH, MAX_MEMBERS, MAX_NODES, MAX_TOTAL};

/// One node of a formula in postfix order.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Node {
    /// Push the truth of atom `i`.
    Atom(u16),
    /// Pop `k` values, push their conjunction.
    All(u16),
    /// Pop `k` values, push their disjunction.
    Any(u16),
}

/// A compiled decision rule.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Rule<W: AsRef<[u64]>> {
    members: usize,
    attributes: usize,
    weights: W,
    atoms: heapless::Vec<Atom, MAX_ATOMS>,
    /// The four-state form of each atom (`None`: a plain yes-sum threshold).
    linear: heapless::Vec<Option<Linear>, MAX_ATOMS>,
    /// Sum of each attribute over all members (checked at construction).
    totals: heapless::Vec<u64, MAX_ATTRIBUTES>,
    formula: heapless::Vec<Node, MAX_NODES>,
}

impl<W: AsRef<[u64]>> Rule<W> {
    /// Builds and validates a rule.
    ///
    /// `weights` holds one row of `members` weights per attribute
    /// (`weights[a * members + i]` is member `i`'s weight in attribute `a`).
    /// `formula` is postfix: `[Atom(0), Atom(1), All(2)]` means "atom 0 and atom 1".
    pub fn new(members: usize, weights: W, atoms: &[Atom], formula: &[Node]) -> Result<Self, Error> {
        if members == 0 {
            return Err(Error::NoMembers);
        }
        if members > MAX_MEMBERS {
            return Err(Error::TooManyMembers {
                members,
                limit: MAX_MEMBERS,
            });
        }
        let table = weights.as_ref();
        if table.len().checked_rem(members) != Some(0) {
            return Err(Error::WeightTableShape {
                len: table.len(),
                members,
            });
        }
        let attributes = table.len().checked_div(members).unwrap_or(0);
        if attributes > MAX_ATTRIBUTES {
            return Err(Error::TooManyAttributes {
                attributes,
                limit: MAX_ATTRIBUTES,
            });
        }
        let mut totals = heapless::Vec::new();
        for (a, row) in table.chunks_exact(members).enumerate() {
            let total = row
                .iter()
                .try_fold(0u64, |acc, &w| acc.checked_add(w))
                .filter(|&t| t <= MAX_TOTAL)
                .ok_or(Error::WeightSumOverflow { attribute: a })?;
            // attributes <= MAX_ATTRIBUTES was checked above.
            let _ = totals.push(total);
        }
        let atoms_vec = heapless::Vec::from_slice(atoms).map_err(|_| Error::TooManyAtoms {
            atoms: atoms.len(),
            limit: MAX_ATOMS,
        })?;
        for (i, atom) in atoms.iter().enumerate() {
            if usize::from(atom.attribute) >= attributes {
                return Err(Error::UnknownAttribute {
                    atom: i,
                    attribute: usize::from(atom.attribute),
                });
            }
        }
        let formula_vec = heapless::Vec::from_slice(formula).map_err(|_| Error::TooManyNodes {
            nodes: formula.len(),
            limit: MAX_NODES,
        })?;
        check_formula(formula, atoms.len())?;
        let mut linear = heapless::Vec::new();
        for _ in atoms {
            // Same capacity as the atoms, which fit.
            let _ = linear.push(None);
        }
        Ok(Rule {
            members,
            attributes,
            weights,
            atoms: atoms_vec,
            linear,
            totals,
            formula: formula_vec,
        })
    }

    /// Builds a rule whose conditions may be four-state [`Linear`] forms.
    ///
    /// Each linear condition also gets the plain quota of the binary game
    /// (everyone present, yes or no), which is what the power engines see.
    pub fn with_conditions(
        members: usize,
        weights: W,
        conditions: &[Condition],
        formula: &[Node],
    ) -> Result<Self, Error> {
        let mut atoms: heapless::Vec<Atom, MAX_ATOMS> = heapless::Vec::new();
        for c in conditions {
            let attribute = match c {
                Condition::Yes(a) => a.attribute,
                Condition::Linear(l) => l.attribute,
            };
            atoms
                .push(Atom { attribute, quota: 0 })
                .map_err(|_| Error::TooManyAtoms {
                    atoms: conditions.len(),
                    limit: MAX_ATOMS,
                })?;
        }
        let mut rule = Self::new(members, weights, &atoms, formula)?;
        for (i, c) in conditions.iter().enumerate() {
            match *c {
                // `Self::new` took one atom and one linear slot per condition.
                Condition::Yes(a) => {
                    if let Some(atom) = rule.atoms.get_mut(i) {
                        atom.quota = a.quota;
                    }
                }
                Condition::Linear(l) => {
                    l.check_monotone()?;
                    let quota = l.binary_quota(rule.total(usize::from(l.attribute)));
                    if let (Some(atom), Some(slot)) = (rule.atoms.get_mut(i), rule.linear.get_mut(i)) {
                        atom.quota = quota;
                        *slot = Some(l);
                    }
                }
            }
        }
        Ok(rule)
    }

    /// The four-state form of atom `i`, if it has one.
    pub fn linear(&self, i: usize) -> Option<Linear> {
        self.linear.get(i).copied().flatten()
    }

    /// The conditions as written (plain or linear), in atom order.
    pub fn condition(&self, i: usize) -> Option<Condition> {
        match self.linear(i) {
            Some(l) => Some(Condition::Linear(l)),
            None => self.atoms.get(i).map(|a| Condition::Yes(*a)),
        }
    }

    /// Whether any condition is a four-state form.
    pub fn has_linear(&self) -> bool {
        self.linear.iter().any(Option::is_some)
    }

    /// The weighted game `[quota; w1, ..., wn]`: one attribute, one atom.
    pub fn weighted(quota: u64, weights: W) -> Result<Self, Error> {
        let n = weights.as_ref().len();
        Self::new(n, weights, &[Atom { attribute: 0, quota }], &[Node::Atom(0)])
    }

    /// Number of members.
    pub fn members(&self) -> usize {
        self.members
    }

    /// Number of weight attributes.
    pub fn attributes(&self) -> usize {
        self.attributes
    }

    /// Member `i`'s weight in attribute `a` (0 outside the table).
    pub fn weight(&self, attribute: usize, member: usize) -> u64 {
        if member >= self.members {
            return 0;
        }
        self.weights
            .as_ref()
            .get(attribute.saturating_mul(self.members).saturating_add(member))
            .copied()
            .unwrap_or(0)
    }

    /// The weights of attribute `a`, one per member (empty outside the table).
    pub fn attribute_weights(&self, attribute: usize) -> &[u64] {
        let start = attribute.saturating_mul(self.members);
        self.weights
            .as_ref()
            .get(start..start.saturating_add(self.members))
            .unwrap_or(&[])
    }

    /// The whole weight table, attribute-major.
    pub fn weight_table(&self) -> &[u64] {
        self.weights.as_ref()
    }

    /// Sum of attribute `a` over all members (checked at construction; 0
    /// outside the table).
    pub fn total(&self, attribute: usize) -> u64 {
        self.totals.get(attribute).copied().unwrap_or(0)
    }

    /// The atoms.
    pub fn atoms(&self) -> &[Atom] {
        &self.atoms
    }

    /// The formula in postfix order.
    pub fn formula(&self) -> &[Node] {
        &self.formula
    }

    /// Bit `a` is set when attribute `a` appears in some atom.
    pub fn used_attributes(&self) -> u64 {
        self.atoms.iter().fold(0u64, |m, a| m | (1u64 << a.attribute))
    }

    /// `Some((attribute, quota))` when the rule is one weighted threshold.
    pub fn single_threshold(&self) -> Option<(usize, u64)> {
        match self.formula.as_slice() {
            [Node::Atom(i)] => {
                let atom = self.atoms.get(usize::from(*i))?;
                Some((usize::from(atom.attribute), atom.quota))
            }
            _ => None,
        }
    }

    /// Evaluates the formula given each atom's truth. O(nodes), no heap.
    pub fn eval(&self, atom_met: impl FnMut(usize) -> bool) -> bool {
        eval_postfix(&self.formula, atom_met)
    }

    /// Evaluates the formula given the yes-sum of each attribute.
    pub fn passes_with_sums(&self, sums: &[u64]) -> bool {
        let atoms = &self.atoms;
        eval_postfix(&self.formula, |i| {
            atoms
                .get(i)
                .is_some_and(|a| sums.get(usize::from(a.attribute)).copied().unwrap_or(0) >= a.quota)
        })
    }

    /// Evaluates the formula given the yes, no and abstain sums of every
    /// attribute (four-state semantics; see [`Linear`]).
    pub fn passes_with_group_sums(&self, yes: &[u64], no: &[u64], abstain: &[u64]) -> bool {
        let get = |v: &[u64], a: usize| v.get(a).copied().unwrap_or(0);
        eval_postfix(&self.formula, |i| {
            let Some(atom) = self.atoms.get(i) else {
                return false;
            };
            let a = usize::from(atom.attribute);
            match self.linear(i) {
                Some(l) => l.holds(get(yes, a), get(no, a), get(abstain, a)),
                None => get(yes, a) >= atom.quota,
            }
        })
    }

    /// Whether the coalition `yes` passes the rule.
    pub fn passes<const B: usize>(&self, yes: &Coalition<B>) -> Result<bool, Error> {
        let mut sums = [0u64; MAX_ATTRIBUTES];
        self.yes_sums(yes, &mut sums)?;
        Ok(self.passes_with_sums(sums.get(..self.attributes).unwrap_or(&[])))
    }

    /// Checks that `set` is a set of this rule's members and that its
    /// width holds them all: `Error::BallotMismatch` otherwise.
    pub fn check_members<const B: usize>(&self, set: &Coalition<B>) -> Result<(), Error> {
        if self.members > Coalition::<B>::CAPACITY || set.has_member_at_or_beyond(self.members) {
            return Err(Error::BallotMismatch {
                members: self.members,
                capacity: Coalition::<B>::CAPACITY.min(self.members),
            });
        }
        Ok(())
    }

    /// The sum of attribute `a` over the members of `set` (0 for an
    /// attribute or member the rule does not have). Cannot overflow: every
    /// row's total was checked when the rule was built.
    pub fn sum_over<const B: usize>(&self, a: usize, set: &Coalition<B>) -> u64 {
        let row = self.attribute_weights(a);
        set.iter()
            .map(|i| row.get(i).copied().unwrap_or(0))
            .fold(0u64, u64::wrapping_add)
    }

    /// Writes the yes-sum of every used attribute into `sums` (unused: 0).
    pub fn yes_sums<const B: usize>(
        &self,
        yes: &Coalition<B>,
        sums: &mut [u64; MAX_ATTRIBUTES],
    ) -> Result<(), Error> {
        self.check_members(yes)?;
        let used = self.used_attributes();
        for (a, slot) in sums.iter_mut().enumerate().take(self.attributes) {
            *slot = 0;
            if used & (1 << a) == 0 {
                continue;
            }
            *slot = self.sum_over(a, yes);
        }
        Ok(())
    }

    /// A rule with the same members and formula over a borrowed weight table.
    pub fn as_borrowed(&self) -> Rule<&[u64]> {
        Rule {
            members: self.members,
            attributes: self.attributes,
            weights: self.weights.as_ref(),
            atoms: self.atoms.clone(),
            linear: self.linear.clone(),
            totals: self.totals.clone(),
            formula: self.formula.clone(),
        }
    }
}

/// Postfix evaluation with a one-bit-per-value stack in a `u128`.
fn eval_postfix(formula: &[Node], mut atom_met: impl FnMut(usize) -> bool) -> bool {
    let mut stack: u128 = 0;
    for node in formula {
        match *node {
            Node::Atom(i) => stack = (stack << 1) | u128::from(atom_met(usize::from(i))),
            Node::All(k) | Node::Any(k) => {
                let k = u32::from(k);
                let mask = u128::MAX.checked_shr(128u32.saturating_sub(k)).unwrap_or(0);
                let top = stack & mask;
                let value = match node {
                    Node::All(_) => top == mask,
                    _ => top != 0,
                };
                stack = stack.checked_shr(k).unwrap_or(0);
                stack = (stack << 1) | u128::from(value);
            }
        }
    }
    stack & 1 == 1
}

/// Checks that a postfix formula is one tree over existing atoms, within the
/// depth limit.
fn check_formula(formula: &[Node], atoms: usize) -> Result<(), Error> {
    if formula.is_empty() {
        return Err(Error::MalformedFormula { node: 0 });
    }
    // depth of each pending value, to bound nesting
    let mut depths = [0u8; MAX_NODES];
    let mut height = 0usize;
    for (n, node) in formula.iter().enumerate() {
        match *node {
            Node::Atom(i) => {
                if usize::from(i) >= atoms {
                    return Err(Error::UnknownAtom {
                        node: n,
                        atom: usize::from(i),
                    });
                }
                // At most one pending value per node: height < formula.len() <= MAX_NODES.
                let slot = depths
                    .get_mut(height)
                    .ok_or(Error::MalformedFormula { node: n })?;
                *slot = 0;
                height = height.saturating_add(1);
            }
            Node::All(k) | Node::Any(k) => {
                let k = usize::from(k);
                if k == 0 {
                    return Err(Error::EmptyOperator { node: n });
                }
                if k > height {
                    return Err(Error::MalformedFormula { node: n });
                }
                // k <= height was checked just above.
                let below = height.saturating_sub(k);
                let operands = depths.get(below..height).unwrap_or(&[]);
                let deepest = operands.iter().copied().max().unwrap_or(0);
                let depth = usize::from(deepest).saturating_add(1);
                if depth > MAX_DEPTH {
                    return Err(Error::TooDeep {
                        depth,
                        limit: MAX_DEPTH,
                    });
                }
                // depth <= MAX_DEPTH = 32 fits a u8.
                if let Some(slot) = depths.get_mut(below) {
                    *slot = depth as u8;
                }
                height = below.saturating_add(1);
            }
        }
    }
    if height != 1 {
        return Err(Error::MalformedFormula { node: formula.len() });
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rejects_bad_shapes() {
        let w = [1u64, 2, 3];
        assert_eq!(Rule::new(0, &w[..], &[], &[]).unwrap_err(), Error::NoMembers);
        assert_eq!(
            Rule::new(
                2,
                &w[..],
                &[Atom {
                    attribute: 0,
                    quota: 1
                }],
                &[Node::Atom(0)]
            )
            .unwrap_err(),
            Error::WeightTableShape { len: 3, members: 2 }
        );
        let atom = [Atom {
            attribute: 0,
            quota: 2,
        }];
        assert_eq!(
            Rule::new(3, &w[..], &atom, &[Node::Atom(1)]).unwrap_err(),
            Error::UnknownAtom { node: 0, atom: 1 }
        );
        assert_eq!(
            Rule::new(3, &w[..], &atom, &[Node::Atom(0), Node::Atom(0)]).unwrap_err(),
            Error::MalformedFormula { node: 2 }
        );
        assert_eq!(
            Rule::new(3, &w[..], &atom, &[Node::All(1)]).unwrap_err(),
            Error::MalformedFormula { node: 0 }
        );
        assert_eq!(
            Rule::new(3, &w[..], &atom, &[Node::Atom(0), Node::Any(0)]).unwrap_err(),
            Error::EmptyOperator { node: 1 }
        );
        let bad_attr = [Atom {
            attribute: 1,
            quota: 2,
        }];
        assert_eq!(
            Rule::new(3, &w[..], &bad_attr, &[Node::Atom(0)]).unwrap_err(),
            Error::UnknownAttribute {
                atom: 0,
                attribute: 1
            }
        );
        let huge = [u64::MAX, 1];
        assert_eq!(
            Rule::weighted(1, &huge[..]).unwrap_err(),
            Error::WeightSumOverflow { attribute: 0 }
        );
    }

    #[test]
    fn depth_limit() {
        let w = [1u64];
        let atom = [Atom {
            attribute: 0,
            quota: 1,
        }];
        let mut f = [Node::All(1); MAX_DEPTH + 2];
        f[0] = Node::Atom(0);
        assert_eq!(
            Rule::new(1, &w[..], &atom, &f).unwrap_err(),
            Error::TooDeep {
                depth: MAX_DEPTH + 1,
                limit: MAX_DEPTH
            }
        );
        assert!(Rule::new(1, &w[..], &atom, &f[..MAX_DEPTH + 1]).is_ok());
    }

    #[test]
    fn evaluates_and_or() {
        // seats: 3,2,1 ; heads: 1,1,1. (seats >= 4 and heads >= 2) or seats >= 6
        let w = [3u64, 2, 1, 1, 1, 1];
        let r = crate::fixtures::two_tier(3, &w[..], [4, 2, 6]).unwrap();
        let p = |m: &[usize]| r.passes(&Coalition::<1>::from_members(m).unwrap()).unwrap();
        assert!(p(&[0, 1]));
        assert!(p(&[0, 2]));
        assert!(!p(&[1, 2]));
        assert!(!p(&[0]));
        assert!(p(&[0, 1, 2]));
        let outside = Coalition::<1>::from_members(&[5]).unwrap();
        assert!(r.passes(&outside).is_err());
    }
}
