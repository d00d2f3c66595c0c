//! Minimal winning and minimal blocking coalitions, and the Johnston,
//! Deegan-Packel and Holler public good indices, from a diagram whose
//! members are decided most desirable first.
//!
//! When the members are ordered so that every member is at least as
//! desirable as every later one (Isbell's desirability relation; a
//! *complete* rule), the swings of a winning coalition S are the first
//! κ(S) of its members in that order (if j swings in S, so does every
//! member of S at least as desirable as j). So:
//! - S is minimal winning iff its last member swings: on the diagram, the
//!   yes-child of that member's node is always TRUE and its no-child is not;
//! - κ(S) is a + 1 where a members of S come before its last swing j, j's
//!   no-child leads to FALSE on S's remaining votes, and the next member of
//!   S after j (if any) does not swing. Counting the completions with these
//!   two shadows is a dynamic program over pairs of nodes of one level.
//!
//! Bolus (2011, European Journal of Operational Research 210, "Power indices
//! of simple games and vector-weighted majority games by means of binary
//! decision diagrams") counts minimal winning coalitions on quasi-reduced
//! diagrams by set operations; the shadow counts here are our own method for
//! complete rules. Rules whose members' weight vectors do not form a chain
//! under domination are not handled here (the caller leaves the figures
//! unknown).
//!
//! Time O(N n^2) for the minimal winning counts by size and O(N n + P) for
//! Johnston, for N nodes, n members and P reachable node pairs; space O(N n)
//! counts, checked against the caller's memory limit before allocating
//! ([`Error::MemoryLimit`]). Exact counts use the checked [`Counter`];
//! Johnston and Deegan-Packel are `f64` sums of exact-count ratios (each
//! term a probability, so nothing overflows).

// Hot loops index their tables and add bounded integers directly. Why nothing
// is out of range, listed in DEVELOPERS.md ("Panics"): levels are member
// positions (< n), node ids come from the built diagram, pair indices from
// the sorted pair lists of the next level; counts use the checked `Counter`.
#![allow(clippy::indexing_slicing, clippy::arithmetic_side_effects)]

use alloc::vec;
use alloc::vec::Vec;

use crate::engine::pivots::reciprocal_sum;
use crate::model::count::Counter;
use crate::model::error::Error;
use crate::model::rule::Rule;

use super::build::Diagram;

/// Minimal-coalition counts of one rule.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Minimal<C> {
    /// Minimal winning coalitions.
    pub winning: C,
    /// Minimal blocking coalitions (complements of maximal losing ones).
    pub blocking: C,
    /// Per member (declaration index): minimal winning coalitions containing it.
    pub containing: Vec<C>,
    /// Per member: Σ 1/|S| over minimal winning S containing it, times 2^-n.
    pub deegan_packel_raw: Vec<f64>,
    /// Per member: Σ 1/κ(S) over winning S in which it swings, times 2^-n.
    pub johnston_raw: Vec<f64>,
}

/// The members, most desirable first, when their weight vectors (over the
/// attributes the rule uses) form a chain under componentwise domination.
/// A member that weighs at least as much as another in every attribute is at
/// least as desirable (thresholds and the formula are monotone), so the rule
/// is then complete and this is a desirability order. `None` otherwise.
pub(crate) fn dominance_chain<W: AsRef<[u64]>>(rule: &Rule<W>) -> Option<Vec<usize>> {
    if rule.has_linear() {
        return None;
    }
    let mask = rule.used_attributes();
    let attributes: Vec<usize> = (0..rule.attributes()).filter(|a| mask & (1 << a) != 0).collect();
    let column = |i: usize| attributes.iter().map(move |&a| rule.weight(a, i));
    let mut members: Vec<usize> = (0..rule.members()).collect();
    // A chain is sorted by any linear extension; lexicographic is one.
    members.sort_by(|&x, &y| column(y).cmp(column(x)).then(x.cmp(&y)));
    let chain = members
        .windows(2)
        .all(|p| column(p[0]).zip(column(p[1])).all(|(a, b)| a >= b));
    chain.then_some(members)
}

/// Which nodes are constant: always TRUE (whatever the remaining members
/// vote) and never TRUE. For a monotone rule a node is always TRUE iff its
/// all-no completion wins, and never TRUE iff its all-yes completion loses.
pub(crate) fn constants(d: &Diagram) -> (Vec<bool>, Vec<bool>) {
    let n = d.order.len();
    let nodes = d.starts[n + 1];
    let mut always = vec![false; nodes];
    let mut never = vec![false; nodes];
    for (k, &t) in d.last_true.iter().enumerate() {
        always[d.starts[n] + k] = t;
        never[d.starts[n] + k] = !t;
    }
    for v in (0..d.starts[n]).rev() {
        always[v] = always[d.no[v] as usize];
        never[v] = never[d.yes[v] as usize];
    }
    (always, never)
}

/// The diagram of the dual rule (S wins iff its complement does not): yes
/// and no exchanged, terminals negated. Its winning coalitions are the
/// blocking coalitions of the rule.
pub(crate) fn dual(d: &Diagram) -> Diagram {
    Diagram {
        order: d.order.clone(),
        starts: d.starts.clone(),
        yes: d.no.clone(),
        no: d.yes.clone(),
        last_true: d.last_true.iter().map(|t| !t).collect(),
    }
}

/// Number of minimal winning coalitions of a diagram in desirability order.
pub(crate) fn minimal_total<C: Counter>(d: &Diagram) -> Result<C, Error> {
    let n = d.order.len();
    let (always, _) = constants(d);
    let mut below = vec![C::ZERO; d.starts[n + 1]];
    for v in (0..d.starts[n]).rev() {
        let (y, z) = (d.yes[v] as usize, d.no[v] as usize);
        let mut c = below[y].add(below[z])?;
        if always[y] && !always[z] {
            c = c.add(C::ONE)?;
        }
        below[v] = c;
    }
    // The empty coalition is minimal winning when it wins.
    let empty = if always[0] { C::ONE } else { C::ZERO };
    below[0].add(empty)
}

/// Bytes [`minimal_counts`] allocates for a diagram of `nodes` nodes.
pub(crate) fn minimal_bytes<C>(nodes: usize, n: usize) -> u64 {
    let per = core::mem::size_of::<C>() as u64 + 8;
    (nodes as u64)
        .saturating_mul(n as u64 + 1)
        .saturating_mul(per)
        .saturating_add((nodes as u64).saturating_mul(32))
}

/// The minimal-coalition counts from `d`, whose order must be a
/// desirability order, most desirable first (see [`dominance_chain`]).
pub(crate) fn minimal_counts<C: Counter>(d: &Diagram, memory_limit: u64) -> Result<Minimal<C>, Error> {
    let n = d.order.len();
    let nodes = d.starts[n + 1];
    let needed = minimal_bytes::<C>(nodes, n);
    if needed > memory_limit {
        return Err(Error::MemoryLimit {
            needed,
            limit: memory_limit,
        });
    }
    let (always, never) = constants(d);
    let width = n + 1;
    // last[v]: v's member, voting yes, is the last member of a minimal
    // winning coalition (yes-child always wins, no-child not).
    let last = |v: usize| always[d.yes[v] as usize] && !always[d.no[v] as usize];
    // below[v][b]: completions from v that end a minimal winning coalition
    // with b more yes votes.
    let mut below = vec![C::ZERO; nodes * width];
    for l in (0..n).rev() {
        for v in d.starts[l]..d.starts[l + 1] {
            let (y, z) = (d.yes[v] as usize, d.no[v] as usize);
            for b in 0..=(n - l) {
                let mut c = below[z * width + b];
                if b > 0 {
                    c = c.add(below[y * width + b - 1])?;
                }
                if b == 1 && last(v) {
                    c = c.add(C::ONE)?;
                }
                below[v * width + b] = c;
            }
        }
    }
    let johnston = Johnston::new(d, &always, &never);
    let mut out = Minimal {
        winning: minimal_total(d)?,
        blocking: minimal_total(&dual(d))?,
        containing: vec![C::ZERO; n],
        deegan_packel_raw: vec![0.0; n],
        johnston_raw: vec![0.0; n],
    };
    // Forward: paths to each node by number of yes votes, exact and as a
    // probability (each vote 1/2).
    let mut fwd = vec![C::ZERO; width];
    let mut chance = vec![0.0f64; width];
    fwd[0] = C::ONE;
    chance[0] = 1.0;
    let mut by_size = vec![C::ZERO; n];
    for l in 0..n {
        let level = d.starts[l]..d.starts[l + 1];
        let next_nodes = d.starts[l + 2] - d.starts[l + 1];
        let mut next = vec![C::ZERO; next_nodes * width];
        let mut next_chance = vec![0.0f64; next_nodes * width];
        for c in by_size.iter_mut() {
            *c = C::ZERO;
        }
        let mut jraw = 0.0;
        for (local, v) in level.enumerate() {
            let (y, z) = (d.yes[v] as usize, d.no[v] as usize);
            let (ly, lz) = (y - d.starts[l + 1], z - d.starts[l + 1]);
            for a in 0..=l {
                let f = fwd[local * width + a];
                let p = chance[local * width + a];
                if f.is_zero() {
                    continue;
                }
                next[lz * width + a] = next[lz * width + a].add(f)?;
                next[ly * width + a + 1] = next[ly * width + a + 1].add(f)?;
                next_chance[lz * width + a] += p / 2.0;
                next_chance[ly * width + a + 1] += p / 2.0;
                // Minimal winning coalitions through v's yes, of size s = a + 1 + b.
                if last(v) {
                    by_size[a] = by_size[a].add(f)?;
                }
                for b in 1..(n - l) {
                    let m = below[y * width + b];
                    if !m.is_zero() {
                        by_size[a + b] = by_size[a + b].add(f.mul(m)?)?;
                    }
                }
                jraw += p * johnston.through_yes(v, y, a);
            }
        }
        let member = d.order[l];
        out.containing[member] = by_size.iter().try_fold(C::ZERO, |s, &c| s.add(c))?;
        out.deegan_packel_raw[member] = reciprocal_sum(n, &by_size);
        out.johnston_raw[member] = jraw;
        fwd = next;
        chance = next_chance;
    }
    Ok(out)
}

/// Completion probabilities for the Johnston index (see the module docs).
struct Johnston {
    /// Per node: probability that its member votes yes and is the last
    /// swing of the coalition (with the next member of the coalition, if
    /// any, not a swing).
    last_swing: Vec<f64>,
    /// Per node v and number a of yes votes above it: Σ over completions of
    /// probability / κ, with the last swing at v or below.
    rest: Vec<f64>,
    width: usize,
}

impl Johnston {
    fn new(d: &Diagram, always: &[bool], never: &[bool]) -> Self {
        let n = d.order.len();
        let nodes = d.starts[n + 1];
        let width = n + 1;
        let pairs = ShadowPairs::count(d, always, never);
        let mut last_swing = vec![0.0f64; nodes];
        for l in 0..n {
            for v in d.starts[l]..d.starts[l + 1] {
                let (y, z) = (d.yes[v], d.no[v]);
                if y != z && !always[v] && !never[v] {
                    last_swing[v] = pairs.main(l + 1, y, z) / 2.0;
                }
            }
        }
        let mut rest = vec![0.0f64; nodes * width];
        for l in (0..n).rev() {
            for v in d.starts[l]..d.starts[l + 1] {
                let (y, z) = (d.yes[v] as usize, d.no[v] as usize);
                for a in 0..=l {
                    rest[v * width + a] = last_swing[v] / (a as f64 + 1.0)
                        + (rest[z * width + a] + rest[y * width + a + 1]) / 2.0;
                }
            }
        }
        Johnston {
            last_swing,
            rest,
            width,
        }
    }

    /// Johnston mass (probability / κ, over completions) of coalitions that
    /// reach node `v` with `a` yes votes and in which v's member votes yes
    /// and swings.
    fn through_yes(&self, v: usize, y: usize, a: usize) -> f64 {
        self.last_swing[v] / (a as f64 + 1.0) + self.rest[y * self.width + a + 1] / 2.0
    }
}

/// Sorted node pairs of each level with their completion probabilities:
/// `main(x, y)`: the coalition's node x and the last swing's shadow y, the
/// next yes vote not yet cast; `next(y, z)`: the shadow y and the next
/// member's shadow z.
struct ShadowPairs {
    main: Vec<PairLevel>,
}

/// One level's sorted pairs and their probabilities.
type PairLevel = (Vec<(u32, u32)>, Vec<f64>);

impl ShadowPairs {
    fn count(d: &Diagram, always: &[bool], never: &[bool]) -> Self {
        let n = d.order.len();
        // Probability that a node's completion wins.
        let mut wins = vec![0.0f64; d.starts[n + 1]];
        for (k, &t) in d.last_true.iter().enumerate() {
            wins[d.starts[n] + k] = if t { 1.0 } else { 0.0 };
        }
        for v in (0..d.starts[n]).rev() {
            wins[v] = (wins[d.yes[v] as usize] + wins[d.no[v] as usize]) / 2.0;
        }
        // Reachable pairs, level by level.
        let mut main: Vec<Vec<(u32, u32)>> = vec![Vec::new(); n + 1];
        let mut next: Vec<Vec<(u32, u32)>> = vec![Vec::new(); n + 1];
        for l in 0..n {
            for v in d.starts[l]..d.starts[l + 1] {
                let (y, z) = (d.yes[v], d.no[v]);
                if y != z && !always[v] && !never[v] {
                    main[l + 1].push((y, z));
                }
            }
            main[l].sort_unstable();
            main[l].dedup();
            next[l].sort_unstable();
            next[l].dedup();
            if l == 0 {
                continue;
            }
            for k in 0..main[l].len() {
                let (x, y) = main[l][k];
                if never[x as usize] || always[y as usize] {
                    continue;
                }
                let (xu, yu) = (x as usize, y as usize);
                main[l + 1].push((d.no[xu], d.no[yu]));
                next[l + 1].push((d.yes[yu], d.no[xu]));
            }
            for k in 0..next[l].len() {
                let (y, z) = next[l][k];
                if next_known(y as usize, z as usize, always, never, &wins).is_some() {
                    continue;
                }
                let (yu, zu) = (y as usize, z as usize);
                next[l + 1].push((d.no[yu], d.no[zu]));
                next[l + 1].push((d.yes[yu], d.yes[zu]));
            }
        }
        main[n].sort_unstable();
        main[n].dedup();
        next[n].sort_unstable();
        next[n].dedup();
        // Probabilities, bottom up.
        let mut main_p: Vec<Vec<f64>> = vec![Vec::new(); n + 1];
        let mut next_p: Vec<Vec<f64>> = vec![Vec::new(); n + 1];
        for l in (0..=n).rev() {
            let look = |table: &[(u32, u32)], p: &[f64], key: (u32, u32)| -> f64 {
                table.binary_search(&key).map_or(0.0, |i| p[i])
            };
            next_p[l] = next[l]
                .iter()
                .map(|&(y, z)| {
                    let (yu, zu) = (y as usize, z as usize);
                    if let Some(p) = next_known(yu, zu, always, never, &wins) {
                        return p;
                    }
                    // Undecided pairs have children (they are above the last level).
                    let below = (&next[l + 1], &next_p[l + 1]);
                    (look(below.0, below.1, (d.no[yu], d.no[zu]))
                        + look(below.0, below.1, (d.yes[yu], d.yes[zu])))
                        / 2.0
                })
                .collect();
            main_p[l] = main[l]
                .iter()
                .map(|&(x, y)| {
                    let (xu, yu) = (x as usize, y as usize);
                    if never[xu] || always[yu] {
                        return 0.0;
                    }
                    if l == n {
                        // x wins and y loses.
                        return 1.0;
                    }
                    let stay = look(&main[l + 1], &main_p[l + 1], (d.no[xu], d.no[yu]));
                    let cast = look(&next[l + 1], &next_p[l + 1], (d.yes[yu], d.no[xu]));
                    (stay + cast) / 2.0
                })
                .collect();
        }
        ShadowPairs {
            main: main.into_iter().zip(main_p).collect(),
        }
    }

    fn main(&self, level: usize, x: u32, y: u32) -> f64 {
        let (table, p) = &self.main[level];
        table.binary_search(&(x, y)).map_or(0.0, |i| p[i])
    }
}

/// Probability that shadow y loses and shadow z wins, when one of them is
/// constant; `None` when both are undecided.
fn next_known(y: usize, z: usize, always: &[bool], never: &[bool], wins: &[f64]) -> Option<f64> {
    if always[y] || never[z] {
        Some(0.0)
    } else if never[y] {
        Some(wins[z])
    } else if always[z] {
        Some(1.0 - wins[y])
    } else {
        None
    }
}

/// Minimal winning (or blocking) coalitions listed from a diagram in
/// desirability order, fewest members first, up to `limit`; `None` when
/// the diagram has more than 127 members (sizes are kept in a `u128` set).
pub(crate) fn list_minimal(d: &Diagram, limit: usize) -> Option<Vec<Vec<usize>>> {
    let n = d.order.len();
    if n > 127 {
        return None;
    }
    let (always, _) = constants(d);
    let last = |v: usize| always[d.yes[v] as usize] && !always[d.no[v] as usize];
    // sizes[v]: the numbers b of further yes votes with which some minimal
    // coalition completes from v, as a bit set.
    let mut sizes = vec![0u128; d.starts[n + 1]];
    for v in (0..d.starts[n]).rev() {
        let (y, z) = (d.yes[v] as usize, d.no[v] as usize);
        sizes[v] = sizes[z] | (sizes[y] << 1) | if last(v) { 2 } else { 0 };
    }
    let mut out = Vec::new();
    if always[0] {
        // Nothing needed: the empty coalition is the only minimal one.
        if limit > 0 {
            out.push(Vec::new());
        }
        return Some(out);
    }
    let mut path = Vec::new();
    for size in 1..=n {
        if sizes[0] & (1 << size) != 0 {
            walk(d, &sizes, &last, 0, 0, size, &mut path, &mut out, limit);
        }
        if out.len() >= limit {
            break;
        }
    }
    Some(out)
}

/// Every minimal coalition through node `v` (at `level`) with `k` more
/// members, more desirable members first.
#[allow(clippy::too_many_arguments)]
fn walk(
    d: &Diagram,
    sizes: &[u128],
    last: &dyn Fn(usize) -> bool,
    v: usize,
    level: usize,
    k: usize,
    path: &mut Vec<usize>,
    out: &mut Vec<Vec<usize>>,
    limit: usize,
) {
    if out.len() >= limit {
        return;
    }
    let (y, z) = (d.yes[v] as usize, d.no[v] as usize);
    let member = d.order[level];
    if k == 1 && last(v) {
        path.push(member);
        let mut c = path.clone();
        c.sort_unstable();
        out.push(c);
        path.pop();
    }
    if k >= 2 && sizes[y] & (1 << (k - 1)) != 0 {
        path.push(member);
        walk(d, sizes, last, y, level + 1, k - 1, path, out, limit);
        path.pop();
    }
    if sizes[z] & (1 << k) != 0 {
        walk(d, sizes, last, z, level + 1, k, path, out, limit);
    }
}
