//! Engine 3: quasi-reduced ordered decision diagrams (feature `alloc`).
//!
//! Members are decided one per level in a chosen order. For each atom the
//! residual quota after the first ℓ members falls into an equivalence class
//! of quotas that the remaining members cannot tell apart: an interval
//! between consecutive subset sums (Bolus 2011). Classes are found top-down
//! by a memoized interval recursion, so their number depends on how many
//! different outcomes the remaining members can produce, not on the size of
//! the weights: populations of hundreds of millions or token balances of
//! 10^18 cost no more than small integers with the same structure.
//!
//! A node at level ℓ is the tuple of its atoms' classes; a tuple whose
//! formula is already decided becomes the level's TRUE or FALSE node. From
//! the diagram every member's swings follow from forward and backward path
//! counts at its level, and Shapley-Shubik pivots from the same counts split
//! by coalition size.
//!
//! Time: O(N (m log N + n)) to build and O(N n^2) to count with sizes
//! (O(N) without), for N nodes, m atoms and n members. Space: O(N n)
//! counts for the backward size vectors; checked against the caller's
//! memory limit before allocating ([`Error::MemoryLimit`]). Counts are in
//! the caller's [`Counter`] type, checked.
//!
//! Files: `build.rs` (equivalence classes, the level tables and the
//! diagrams of the rule and of the rule with its complement), `paths.rs`
//! (forward and backward path counts), this file (member orders,
//! estimates for the planner, the engine).

// Hot loops index their tables and add bounded integers directly (checked
// arithmetic would cost the engines' speed). Why nothing is out of range or
// overflows, listed in DEVELOPERS.md ("Panics"):
// levels are member positions (< n), class indices come from the classes built for that
// level, node keys from the nodes pushed on the previous level; weights sums are below
// the attribute totals checked at construction; the memory estimate is checked against
// the caller's limit before any table is allocated; path counts use the checked
// `Counter`.
#![allow(clippy::indexing_slicing, clippy::arithmetic_side_effects)]

mod build;
mod differ;
mod minimal;
mod paths;
#[cfg(test)]
mod tests;

use alloc::vec;
use alloc::vec::Vec;

use crate::engine::counts::{MemberCounts, RuleCounts};
use crate::engine::pivots::shapley_from_sizes;
use crate::engine::registry::{Counting, Job};
use crate::engine::{Need, Scope, DIAGRAM_DESCRIPTION};
use crate::model::count::Counter;
use crate::model::engine_id::Engine;
use crate::model::error::Error;
use crate::model::rule::Rule;
use build::{build, proper_and_strong};
pub use differ::{difference, symmetric, Difference};
use minimal::{dominance_chain, minimal_counts};
use paths::count_diagram;

/// Member order used to build the diagram.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Order {
    /// Declaration order.
    Declared,
    /// Heaviest first, by each member's largest share of an attribute's total.
    HeavyFirst,
    /// Lightest first (the reverse of `HeavyFirst`).
    LightFirst,
}

/// Size statistics of a built diagram.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct DiagramStats {
    /// Nodes, terminals included.
    pub nodes: usize,
    /// Largest number of nodes on one level.
    pub widest_level: usize,
}

/// Builds the diagram of `rule` in `order` and reports its size.
pub fn stats<W: AsRef<[u64]>>(rule: &Rule<W>, order: Order) -> Result<DiagramStats, Error> {
    Ok(build(rule, member_order(rule, order), DEFAULT_MAX_NODES)?.stats())
}

/// Default memory limit of the counting pass: 2 GiB.
pub const DEFAULT_MEMORY_LIMIT: u64 = 2 << 30;

/// Most nodes the engine builds by default.
pub const DEFAULT_MAX_NODES: usize = 20_000_000;

/// The member order for `order`.
pub(crate) fn member_order<W: AsRef<[u64]>>(rule: &Rule<W>, order: Order) -> Vec<usize> {
    let n = rule.members();
    let mut members: Vec<usize> = (0..n).collect();
    if order == Order::Declared {
        return members;
    }
    let mask = rule.used_attributes();
    let totals: Vec<u64> = (0..rule.attributes()).map(|a| rule.total(a)).collect();
    // Largest share of any used attribute, as an exact fraction compared by
    // cross-multiplication.
    let share = |i: usize| {
        (0..rule.attributes())
            .filter(|a| mask & (1 << a) != 0 && totals[*a] > 0)
            .map(|a| (rule.weight(a, i), totals[a]))
            .fold((0u64, 1u64), |best, cur| {
                if u128::from(cur.0) * u128::from(best.1) > u128::from(best.0) * u128::from(cur.1) {
                    cur
                } else {
                    best
                }
            })
    };
    members.sort_by(|&x, &y| {
        let (a, b) = (share(x), share(y));
        let o = (u128::from(b.0) * u128::from(a.1)).cmp(&(u128::from(a.0) * u128::from(b.1)));
        o.then(x.cmp(&y))
    });
    if order == Order::LightFirst {
        members.reverse();
    }
    members
}

/// The decision-diagram engine.
pub(crate) struct Diagrams;

impl Counting for Diagrams {
    const ENGINE: Engine = Engine::Diagram;
    const DESCRIPTION: &'static str = DIAGRAM_DESCRIPTION;
    const MINIMAL_COALITIONS: bool = false;
    // The estimate bounds the nodes from above; `count_diagram` checks the
    // real size against the limit before allocating.
    const CHECKS_OWN_MEMORY: bool = true;

    /// No caller scratch: the engine allocates its own tables.
    fn scratch<W: AsRef<[u64]>>(_: &Rule<W>, _: Scope) -> Result<Need, Error> {
        Ok(Need {
            counts: 0,
            indices: 0,
        })
    }

    fn cost<W: AsRef<[u64]>>(rule: &Rule<W>, _: Scope) -> Result<u128, Error> {
        Ok(estimate(rule))
    }

    fn tables<W: AsRef<[u64]>>(rule: &Rule<W>, _: Scope, count_bytes: usize) -> Result<u64, Error> {
        Ok(estimate_memory(rule, count_bytes))
    }

    fn run<W: AsRef<[u64]>, C: Counter>(job: Job<'_, W, C>) -> Result<RuleCounts<C>, Error> {
        count(job.rule, job.members, Order::LightFirst, DEFAULT_MEMORY_LIMIT)
    }
}

/// Estimated work for the planner, without building: the diagram has at
/// most min(2^l, 2^(n-l+1), Π_j (classes of atom j)) nodes on level l, and
/// an atom has at most (remaining total + 2) classes.
pub(crate) fn estimate<W: AsRef<[u64]>>(rule: &Rule<W>) -> u128 {
    let n = rule.members() as u128;
    let per = (rule.atoms().len() as u128 + 8) * 16 + n * n;
    estimate_nodes(rule).saturating_mul(per)
}

/// Upper estimate of the bytes the engine needs with counts of `count_bytes` each.
pub(crate) fn estimate_memory<W: AsRef<[u64]>>(rule: &Rule<W>, count_bytes: usize) -> u64 {
    let per = (rule.members() as u128 + 1) * count_bytes as u128 * 2 + 16 + 8 * rule.atoms().len() as u128;
    u64::try_from(estimate_nodes(rule).saturating_mul(per)).unwrap_or(u64::MAX)
}

/// Upper estimate of the number of nodes.
fn estimate_nodes<W: AsRef<[u64]>>(rule: &Rule<W>) -> u128 {
    let n = rule.members();
    let order = member_order(rule, Order::LightFirst);
    let mut rest: Vec<u128> = rule
        .atoms()
        .iter()
        .map(|a| u128::from(rule.total(usize::from(a.attribute))))
        .collect();
    let mut nodes: u128 = 0;
    for l in 0..=n {
        let by_atoms = rest.iter().fold(1u128, |p, &r| p.saturating_mul(r + 2));
        let top = if l < 127 { 1u128 << l } else { u128::MAX };
        let bottom = if n - l < 126 {
            1u128 << (n - l + 1)
        } else {
            u128::MAX
        };
        nodes = nodes.saturating_add(by_atoms.min(top).min(bottom));
        if l < n {
            for (j, a) in rule.atoms().iter().enumerate() {
                rest[j] -= u128::from(rule.weight(usize::from(a.attribute), order[l]));
            }
        }
    }
    nodes
}

/// Runs the diagram engine with Shapley-Shubik pivots, and, for rules whose
/// members' weights form a chain under domination, the minimal winning and
/// blocking counts and the Johnston, Deegan-Packel and public good indices
/// (see [`minimal`]; left unknown for other rules or when the second diagram
/// is over the node or memory limit).
pub(crate) fn count<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    members: &mut [MemberCounts<C>],
    order: Order,
    memory_limit: u64,
) -> Result<RuleCounts<C>, Error> {
    let mut counts = count_swings(rule, members, order, memory_limit)?;
    let Some(chain) = dominance_chain(rule) else {
        return Ok(counts);
    };
    let d = match build(rule, chain, DEFAULT_MAX_NODES) {
        Ok(d) => d,
        Err(Error::TooCostly { .. }) => return Ok(counts),
        Err(e) => return Err(e),
    };
    let n = rule.members();
    let widen = |v: u128| C::from_u128(v).ok_or(Error::CountOverflow);
    let found = if C::BITS > 128 && n < 127 {
        minimal_counts::<u128>(&d, memory_limit).and_then(|m| {
            Ok(minimal::Minimal {
                winning: widen(m.winning)?,
                blocking: widen(m.blocking)?,
                containing: m.containing.into_iter().map(widen).collect::<Result<_, _>>()?,
                deegan_packel_raw: m.deegan_packel_raw,
                johnston_raw: m.johnston_raw,
            })
        })
    } else {
        minimal_counts::<C>(&d, memory_limit)
    };
    let m = match found {
        Ok(m) => m,
        Err(Error::MemoryLimit { .. }) => return Ok(counts),
        Err(e) => return Err(e),
    };
    counts.minimal_winning = Some(m.winning);
    counts.minimal_blocking = Some(m.blocking);
    for (i, out) in members.iter_mut().enumerate().take(n) {
        out.minimal_winning = Some(m.containing[i]);
        out.deegan_packel_raw = Some(m.deegan_packel_raw[i]);
        out.johnston_raw = Some(m.johnston_raw[i]);
    }
    Ok(counts)
}

/// Swings and Shapley-Shubik pivots from the diagram in `order`.
///
/// Below 127 members every count fits in a `u128`, so a wider count type
/// is filled from a `u128` run (the same exact numbers, several times faster).
fn count_swings<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    members: &mut [MemberCounts<C>],
    order: Order,
    memory_limit: u64,
) -> Result<RuleCounts<C>, Error> {
    let n = rule.members();
    if C::BITS > 128 && n < 127 {
        let widen = |v: u128| C::from_u128(v).ok_or(Error::CountOverflow);
        let mut wide = vec![C::ZERO; n];
        let r = count_as::<_, u128>(rule, order, memory_limit, |member, swings, pivots| {
            for (w, &p) in wide.iter_mut().zip(pivots) {
                *w = widen(p)?;
            }
            let m = members.get_mut(member).ok_or(Error::CountOverflow)?;
            m.swings = widen(swings)?;
            let (ss, numerator) = shapley_from_sizes(n, &wide)?;
            m.shapley_shubik = ss;
            m.shapley_shubik_numerator = numerator;
            Ok(())
        })?;
        return Ok(RuleCounts {
            members: n,
            winning: widen(r.winning)?,
            losing: widen(r.losing)?,
            minimal_winning: None,
            minimal_blocking: None,
            smallest_winning: r.smallest_winning,
            proper: r.proper,
            strong: r.strong,
            factorial: None,
            shapley_shubik: true,
            engine: Engine::Diagram,
        });
    }
    count_as::<_, C>(rule, order, memory_limit, |member, swings, pivots| {
        let m = members.get_mut(member).ok_or(Error::CountOverflow)?;
        m.swings = swings;
        let (ss, numerator) = shapley_from_sizes(n, pivots)?;
        m.shapley_shubik = ss;
        m.shapley_shubik_numerator = numerator;
        Ok(())
    })
}

fn count_as<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    order: Order,
    memory_limit: u64,
    on_member: impl FnMut(usize, C, &[C]) -> Result<(), Error>,
) -> Result<RuleCounts<C>, Error> {
    let n = rule.members();
    let members_order = member_order(rule, order);
    let d = build(rule, members_order.clone(), DEFAULT_MAX_NODES)?;
    let (winning, losing, smallest) = count_diagram(&d, n, true, memory_limit, on_member)?;
    let (proper, strong) = proper_and_strong(rule, &members_order, DEFAULT_MAX_NODES)?;
    Ok(RuleCounts {
        members: n,
        winning,
        losing,
        minimal_winning: None,
        minimal_blocking: None,
        smallest_winning: smallest,
        proper,
        strong,
        factorial: None,
        shapley_shubik: true,
        engine: Engine::Diagram,
    })
}

/// Minimal winning or minimal blocking coalitions of a rule, counted and
/// listed on its decision diagram.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct MinimalCoalitions<C> {
    /// How many there are.
    pub count: C,
    /// The first `limit` of them, fewest members first (ascending member
    /// indices within each).
    pub listed: Vec<Vec<usize>>,
    /// Nodes of the diagram.
    pub nodes: usize,
}

/// The minimal winning (or, with `blocking`, minimal blocking) coalitions
/// of `rule`, counted exactly and listed up to `limit`, on a diagram of at
/// most `max_nodes` nodes in desirability order. `Ok(None)` when the
/// members' weights do not form a chain under domination (the method needs
/// a complete rule whose order the weights show) or the rule has more than
/// 127 members. Time O(N) to count, O(n) per listed coalition (after
/// O(N) to prepare), for N nodes; space O(N) words.
pub fn minimal_coalitions<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    blocking: bool,
    limit: usize,
    max_nodes: usize,
) -> Result<Option<MinimalCoalitions<C>>, Error> {
    let Some(chain) = dominance_chain(rule) else {
        return Ok(None);
    };
    let mut d = build(rule, chain, max_nodes)?;
    if blocking {
        d = minimal::dual(&d);
    }
    let count = minimal::minimal_total::<C>(&d)?;
    let Some(listed) = minimal::list_minimal(&d, limit) else {
        return Ok(None);
    };
    Ok(Some(MinimalCoalitions {
        count,
        listed,
        nodes: d.stats().nodes,
    }))
}

/// The members most desirable first when their weight vectors (over the
/// attributes the rule uses) form a chain under componentwise domination:
/// then every member is at least as desirable as the next (Isbell's
/// relation is complete). `None` otherwise, or for rules with four-state
/// conditions.
pub fn desirability_chain<W: AsRef<[u64]>>(rule: &Rule<W>) -> Option<Vec<usize>> {
    dominance_chain(rule)
}
