//! Where two rules over the same members differ, exactly: the diagram of
//! their difference ([`build_difference`]) counted path by path, and a
//! smallest coalition on which they differ as a path to TRUE with the
//! fewest yes votes.
//!
//! Time O(N (m log N)) to build and O(N) to count and search, for N nodes
//! of the product diagram and m atoms of both rules; space O(N (m + 1))
//! words. Refused past the caller's node limit ([`Error::TooCostly`]).
//! Counts use the checked [`Counter`].

// Why nothing is out of range: see `build.rs`; node ids come from the built
// diagram and levels are member positions.
#![allow(clippy::indexing_slicing, clippy::arithmetic_side_effects)]

use alloc::vec;
use alloc::vec::Vec;

use super::build::build_difference;
use super::{member_order, Order};
use crate::model::count::Counter;
use crate::model::error::Error;
use crate::model::rule::Rule;

/// How two rules differ.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Difference<C> {
    /// Coalitions that one rule passes and the other does not (0: the same rule).
    pub coalitions: C,
    /// A coalition with the fewest members among those, ascending member
    /// indices; `None` when the rules are the same.
    pub smallest: Option<Vec<usize>>,
    /// Whether the first rule passes `smallest` (the second then does not).
    pub first_passes: bool,
    /// Nodes of the difference diagram.
    pub nodes: usize,
}

/// Compares rules `a` and `b`, whose members are matched by index, on every
/// coalition, building at most `max_nodes` nodes.
pub fn difference<A: AsRef<[u64]>, B: AsRef<[u64]>, C: Counter>(
    a: &Rule<A>,
    b: &Rule<B>,
    max_nodes: usize,
) -> Result<Difference<C>, Error> {
    let n = a.members();
    if b.members() != n {
        return Err(Error::WeightTableShape {
            len: b.members(),
            members: n,
        });
    }
    let d = build_difference(a, b, member_order(a, Order::LightFirst), max_nodes)?;
    let nodes = d.starts[n + 1];
    // Backward: differing completions and the fewest yes votes reaching one.
    let mut count = vec![C::ZERO; nodes];
    let mut fewest = vec![u32::MAX; nodes];
    for (k, &t) in d.last_true.iter().enumerate() {
        if t {
            count[d.starts[n] + k] = C::ONE;
            fewest[d.starts[n] + k] = 0;
        }
    }
    for v in (0..d.starts[n]).rev() {
        let (y, z) = (d.yes[v] as usize, d.no[v] as usize);
        count[v] = count[y].add(count[z])?;
        fewest[v] = fewest[z].min(fewest[y].saturating_add(1));
    }
    let mut out = Difference {
        coalitions: count[0],
        smallest: None,
        first_passes: false,
        nodes,
    };
    if fewest[0] == u32::MAX {
        return Ok(out);
    }
    let mut coalition = Vec::new();
    let mut v = 0usize;
    for l in 0..n {
        let (y, z) = (d.yes[v] as usize, d.no[v] as usize);
        if fewest[z] == fewest[v] {
            v = z;
        } else {
            coalition.push(d.order[l]);
            v = y;
        }
    }
    coalition.sort_unstable();
    let sums: Vec<u64> = (0..a.attributes())
        .map(|x| coalition.iter().map(|&i| a.weight(x, i)).sum())
        .collect();
    out.first_passes = a.passes_with_sums(&sums);
    out.smallest = Some(coalition);
    Ok(out)
}

/// Whether exchanging members `i` and `j` changes no outcome (Isbell's
/// symmetry), decided exactly on the difference diagram of the rule and the
/// rule with the two members' weights exchanged.
pub fn symmetric<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    i: usize,
    j: usize,
    max_nodes: usize,
) -> Result<bool, Error> {
    let n = rule.members();
    let mut weights = rule.weight_table().to_vec();
    for a in 0..rule.attributes() {
        weights.swap(a * n + i, a * n + j);
    }
    let swapped = Rule::new(n, weights, rule.atoms(), rule.formula())?;
    Ok(
        difference::<_, _, crate::model::count::Count1024>(rule, &swapped, max_nodes)?
            .coalitions
            .is_zero(),
    )
}
