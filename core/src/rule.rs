//! The rule IR: members, weight attributes, threshold atoms and a monotone
//! AND/OR formula over them (a simple game in the trade's sense).
//!
//! Storage: the weight table is owned by the caller through any
//! `W: AsRef<[u64]>` (a borrowed slice on a device, a `Vec` with `alloc`);
//! atoms and formula live in fixed-capacity vectors of
//! [`MAX_ATOMS`](crate::limits::MAX_ATOMS) and [`MAX_NODES`](crate::limits::MAX_NODES).
//! Evaluating the formula is O(nodes) time with a 128-bit stack; no heap.
//!
//! Monotonicity: there is no negation in the IR and every atom is a lower
//! bound on a sum of non-negative weights, so every rule that can be built is
//! monotone (adding a yes vote never turns a pass into a fail).

use crate::limits::{MAX_ATOMS, MAX_ATTRIBUTES, MAX_DEPTH, MAX_MEMBERS, MAX_NODES};
use crate::{Coalition, Error};

/// One threshold condition: the sum of `attribute` over the yes-voters is at
/// least `quota`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct Atom {
    /// Index of the weight attribute.
    pub attribute: u16,
    /// The least sum that meets the condition.
    pub quota: u64,
}

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
        if table.len() % members != 0 {
            return Err(Error::WeightTableShape {
                len: table.len(),
                members,
            });
        }
        let attributes = table.len() / members;
        if attributes > MAX_ATTRIBUTES {
            return Err(Error::TooManyAttributes {
                attributes,
                limit: MAX_ATTRIBUTES,
            });
        }
        for (a, row) in table.chunks_exact(members).enumerate() {
            row.iter()
                .try_fold(0u64, |acc, &w| acc.checked_add(w))
                .ok_or(Error::WeightSumOverflow { attribute: a })?;
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
        Ok(Rule {
            members,
            attributes,
            weights,
            atoms: atoms_vec,
            formula: formula_vec,
        })
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
            .get(attribute * self.members + member)
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

    /// Sum of attribute `a` over all members (checked at construction).
    pub fn total(&self, attribute: usize) -> u64 {
        self.attribute_weights(attribute)
            .iter()
            .fold(0u64, |s, &w| s.saturating_add(w))
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

    /// Whether the coalition `yes` passes the rule.
    pub fn passes<const B: usize>(&self, yes: &Coalition<B>) -> Result<bool, Error> {
        let mut sums = [0u64; MAX_ATTRIBUTES];
        self.yes_sums(yes, &mut sums)?;
        Ok(self.passes_with_sums(&sums[..self.attributes]))
    }

    /// Writes the yes-sum of every used attribute into `sums` (unused: 0).
    pub fn yes_sums<const B: usize>(
        &self,
        yes: &Coalition<B>,
        sums: &mut [u64; MAX_ATTRIBUTES],
    ) -> Result<(), Error> {
        if self.members > Coalition::<B>::CAPACITY || yes.has_member_at_or_beyond(self.members) {
            return Err(Error::BallotMismatch {
                members: self.members,
                capacity: Coalition::<B>::CAPACITY.min(self.members),
            });
        }
        let used = self.used_attributes();
        for (a, slot) in sums.iter_mut().enumerate().take(self.attributes) {
            *slot = 0;
            if used & (1 << a) == 0 {
                continue;
            }
            let row = self.attribute_weights(a);
            // No overflow: the whole row's sum was checked at construction.
            *slot = yes
                .iter()
                .map(|i| row.get(i).copied().unwrap_or(0))
                .fold(0u64, u64::wrapping_add);
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
                let mask = if k >= 128 { u128::MAX } else { (1u128 << k) - 1 };
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
                depths[height] = 0;
                height += 1;
            }
            Node::All(k) | Node::Any(k) => {
                let k = usize::from(k);
                if k == 0 {
                    return Err(Error::EmptyOperator { node: n });
                }
                if k > height {
                    return Err(Error::MalformedFormula { node: n });
                }
                let deepest = depths[height - k..height].iter().copied().max().unwrap_or(0);
                let depth = usize::from(deepest) + 1;
                if depth > MAX_DEPTH {
                    return Err(Error::TooDeep {
                        depth,
                        limit: MAX_DEPTH,
                    });
                }
                height -= k;
                depths[height] = depth as u8;
                height += 1;
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
        let atoms = [
            Atom {
                attribute: 0,
                quota: 4,
            },
            Atom {
                attribute: 1,
                quota: 2,
            },
            Atom {
                attribute: 0,
                quota: 6,
            },
        ];
        let f = [
            Node::Atom(0),
            Node::Atom(1),
            Node::All(2),
            Node::Atom(2),
            Node::Any(2),
        ];
        let r = Rule::new(3, &w[..], &atoms, &f).unwrap();
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
