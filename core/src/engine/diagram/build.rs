//! Building decision diagrams: the equivalence classes of each atom's
//! residual quota (Bolus 2011), per-level hash tables of node tuples, the
//! diagram of a rule, and the product diagram of a rule and its complement
//! (for proper and strong).
//!
//! Time O(N m log N) for N nodes and m atoms (class look-ups in ordered
//! maps); space O(N m) words, refused past a node limit
//! ([`Error::TooCostly`]). Class bounds are below the checked attribute
//! totals, so they stay clear of the TRUE and FALSE keys.

// Hot loops index their tables and add bounded integers directly (checked
// arithmetic would cost the engines' speed). Why nothing is out of range or
// overflows, listed in DEVELOPERS.md ("Panics"):
// levels are member positions (< n), class indices come from the classes built for that
// level, node keys from the nodes pushed on the previous level; weights sums are below
// the attribute totals checked at construction; the memory estimate is checked against
// the caller's limit before any table is allocated; path counts use the checked
// `Counter`.
#![allow(clippy::indexing_slicing, clippy::arithmetic_side_effects)]

use alloc::collections::BTreeMap;
use alloc::vec;
use alloc::vec::Vec;

use crate::model::error::Error;
use crate::model::rule::Rule;

use super::DiagramStats;

const TRUE_KEY: u64 = u64::MAX;
const FALSE_KEY: u64 = u64::MAX - 1;

// Class lower bounds reach at most total + 1 <= MAX_TOTAL + 1 = 2^64 - 3,
// below both keys (crate::limits::MAX_TOTAL keeps them apart).

/// The 1-D equivalence classes of one atom's residual quota.
struct AtomClasses {
    /// Weight of the member decided at each level.
    weights: Vec<u64>,
    /// Sum of the weights of levels ℓ.. (remaining total).
    rest: Vec<u64>,
    /// Per level: class lower bound -> upper bound (inclusive; u64::MAX = unbounded).
    memo: Vec<BTreeMap<u64, u64>>,
}

impl AtomClasses {
    fn new(weights: Vec<u64>) -> Self {
        let n = weights.len();
        let mut rest = vec![0u64; n + 1];
        for l in (0..n).rev() {
            rest[l] = rest[l + 1].saturating_add(weights[l]);
        }
        AtomClasses {
            weights,
            rest,
            memo: (0..=n).map(|_| BTreeMap::new()).collect(),
        }
    }

    fn trivial(&self, level: usize, r: u64) -> Option<(u64, u64)> {
        if r == 0 {
            Some((0, 0))
        } else if r > self.rest[level] {
            Some((self.rest[level] + 1, u64::MAX))
        } else {
            let m = &self.memo[level];
            let (&lo, &hi) = m.range(..=r).next_back()?;
            (hi >= r).then_some((lo, hi))
        }
    }

    /// Class `(lo, hi)` of residual `r` at `level`; `lo == 0` is the class
    /// of quotas already met. Iterative, so deep diagrams cannot overflow
    /// the stack.
    fn class(&mut self, level: usize, r: u64) -> (u64, u64) {
        if let Some(c) = self.trivial(level, r) {
            return c;
        }
        // Frames: (level, r). A frame is finished when both children are known.
        let mut stack: Vec<(usize, u64)> = vec![(level, r)];
        while let Some(&(l, r)) = stack.last() {
            if self.trivial(l, r).is_some() {
                stack.pop();
                continue;
            }
            let w = self.weights[l];
            let yes = self.trivial(l + 1, r.saturating_sub(w));
            let no = self.trivial(l + 1, r);
            match (yes, no) {
                (Some((ylo, yhi)), Some((nlo, nhi))) => {
                    // The yes child sees r - w; shift its class back by w. The
                    // met class (lo = 0) stretches to -inf, so it bounds nothing below.
                    let lo = if ylo == 0 {
                        nlo
                    } else {
                        nlo.max(ylo.saturating_add(w))
                    };
                    let hi = nhi.min(yhi.saturating_add(w));
                    self.memo[l].insert(lo, hi);
                    stack.pop();
                }
                (None, _) => stack.push((l + 1, r.saturating_sub(w))),
                (_, None) => stack.push((l + 1, r)),
            }
        }
        self.trivial(level, r).unwrap_or((0, 0))
    }
}

/// Open-addressing table from node tuples to node ids, for one level.
struct LevelTable {
    width: usize,
    keys: Vec<u64>,
    slots: Vec<u32>,
}

const EMPTY: u32 = u32::MAX;

impl LevelTable {
    fn new(width: usize) -> Self {
        LevelTable {
            width,
            keys: Vec::new(),
            slots: vec![EMPTY; 16],
        }
    }
    fn len(&self) -> usize {
        self.keys.len() / self.width.max(1)
    }
    fn hash(key: &[u64]) -> usize {
        let mut h: u64 = 0x9E37_79B9_7F4A_7C15;
        for &k in key {
            h = (h ^ k).wrapping_mul(0x100_0000_01B3).rotate_left(29);
        }
        (h ^ (h >> 31)) as usize
    }
    fn key(&self, id: usize) -> &[u64] {
        &self.keys[id * self.width..(id + 1) * self.width]
    }
    /// The id of `key`, inserting it if new.
    fn intern(&mut self, key: &[u64]) -> u32 {
        if 2 * (self.len() + 1) > self.slots.len() {
            self.grow();
        }
        let mask = self.slots.len() - 1;
        let mut at = Self::hash(key) & mask;
        loop {
            let s = self.slots[at];
            if s == EMPTY {
                let id = self.len() as u32;
                self.keys.extend_from_slice(key);
                self.slots[at] = id;
                return id;
            }
            if self.key(s as usize) == key {
                return s;
            }
            at = (at + 1) & mask;
        }
    }
    fn grow(&mut self) {
        let size = self.slots.len() * 2;
        self.slots = vec![EMPTY; size];
        let mask = size - 1;
        for id in 0..self.len() {
            let mut at = Self::hash(self.key(id)) & mask;
            while self.slots[at] != EMPTY {
                at = (at + 1) & mask;
            }
            self.slots[at] = id as u32;
        }
    }
}

/// A built diagram: children of every node, level by level.
pub(crate) struct Diagram {
    /// Member decided at each level.
    pub order: Vec<usize>,
    /// First node id of each level (n + 2 entries).
    pub starts: Vec<usize>,
    /// Yes-child and no-child (global ids) of every node above the last level.
    pub yes: Vec<u32>,
    pub no: Vec<u32>,
    /// Whether each node of the last level is TRUE.
    pub last_true: Vec<bool>,
}

impl Diagram {
    pub(crate) fn stats(&self) -> DiagramStats {
        let n = self.order.len();
        let widest = (0..=n)
            .map(|l| self.starts[l + 1] - self.starts[l])
            .max()
            .unwrap_or(0);
        DiagramStats {
            nodes: self.starts[n + 1],
            widest_level: widest,
        }
    }
}

/// Writes the class of each atom's residual at `level` into `out`, or, when
/// the formula is already decided, `[TRUE_KEY or FALSE_KEY, 0, ...]`.
fn classify<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    classes: &mut [AtomClasses],
    level: usize,
    residuals: &[u64],
    out: &mut [u64],
) {
    for (j, c) in classes.iter_mut().enumerate() {
        out[j] = c.class(level, residuals[j]).0;
    }
    // 3-valued evaluation: decided when the formula holds with every
    // undecided atom false, or fails with every undecided atom true.
    let sure = rule.eval(|j| out[j] == 0);
    let possible = rule.eval(|j| out[j] <= classes[j].rest[level]);
    if sure || !possible {
        out[0] = if sure { TRUE_KEY } else { FALSE_KEY };
        for k in out.iter_mut().skip(1) {
            *k = 0;
        }
    }
}

/// [`Error::TooCostly`] once a diagram has more than `max_nodes` nodes.
fn within_nodes(total: usize, max_nodes: usize) -> Result<(), Error> {
    if total > max_nodes {
        return Err(Error::TooCostly {
            estimate: total as u128,
            budget: max_nodes as u128,
        });
    }
    Ok(())
}

fn decided(key: &[u64]) -> bool {
    key[0] == TRUE_KEY || key[0] == FALSE_KEY
}

/// Builds the diagram of `rule` in `order`, refusing to grow past
/// `max_nodes`.
pub(crate) fn build<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    order: Vec<usize>,
    max_nodes: usize,
) -> Result<Diagram, Error> {
    let n = rule.members();
    let atoms = rule.atoms();
    let m = atoms.len();
    let mut classes: Vec<AtomClasses> = atoms
        .iter()
        .map(|a| {
            AtomClasses::new(
                order
                    .iter()
                    .map(|&i| rule.weight(usize::from(a.attribute), i))
                    .collect(),
            )
        })
        .collect();
    let mut starts = vec![0usize];
    let mut yes = Vec::new();
    let mut no = Vec::new();
    let mut current = LevelTable::new(m);
    let mut tuple = vec![0u64; m];
    let quotas: Vec<u64> = atoms.iter().map(|a| a.quota).collect();
    classify(rule, &mut classes, 0, &quotas, &mut tuple);
    current.intern(&tuple);
    let mut total = 1usize;
    let mut residual = vec![0u64; m];
    for level in 0..n {
        starts.push(starts[level] + current.len());
        let mut next = LevelTable::new(m);
        let member = order[level];
        for id in 0..current.len() {
            let key = current.key(id);
            let (y, z) = if decided(key) {
                tuple.copy_from_slice(key);
                let t = next.intern(&tuple);
                (t, t)
            } else {
                for j in 0..m {
                    residual[j] = key[j].saturating_sub(rule.weight(usize::from(atoms[j].attribute), member));
                }
                classify(rule, &mut classes, level + 1, &residual, &mut tuple);
                let y = next.intern(&tuple);
                residual.copy_from_slice(current.key(id));
                classify(rule, &mut classes, level + 1, &residual, &mut tuple);
                (y, next.intern(&tuple))
            };
            yes.push(y);
            no.push(z);
        }
        total += next.len();
        within_nodes(total, max_nodes)?;
        current = next;
    }
    Ok(finish(order, starts, yes, no, &current, |k| k[0] == TRUE_KEY))
}

/// The diagram from its level-local children and last level, whose nodes
/// are TRUE where `is_true` says of their keys.
fn finish(
    order: Vec<usize>,
    mut starts: Vec<usize>,
    mut yes: Vec<u32>,
    mut no: Vec<u32>,
    last: &LevelTable,
    is_true: impl Fn(&[u64]) -> bool,
) -> Diagram {
    let n = order.len();
    let base = starts[n];
    // Children ids so far are level-local; make them global.
    for l in 0..n {
        for v in starts[l]..starts[l + 1] {
            yes[v] += starts[l + 1] as u32;
            no[v] += starts[l + 1] as u32;
        }
    }
    let last_true = (0..last.len()).map(|id| is_true(last.key(id))).collect();
    starts.push(base + last.len());
    Diagram {
        order,
        starts,
        yes,
        no,
        last_true,
    }
}

/// Whether the rule is proper and strong, from a product diagram of the rule
/// on the yes-voters and the rule on the no-voters (the complement).
pub(crate) fn proper_and_strong<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    order: &[usize],
    max_nodes: usize,
) -> Result<(bool, bool), Error> {
    let atoms = rule.atoms();
    let m = atoms.len();
    let weights = |j: usize| -> Vec<u64> {
        order
            .iter()
            .map(|&i| rule.weight(usize::from(atoms[j].attribute), i))
            .collect()
    };
    // Yes-residuals shrink on yes edges; complement residuals on no edges.
    let mut yes_classes: Vec<AtomClasses> = (0..m).map(|j| AtomClasses::new(weights(j))).collect();
    let mut no_classes: Vec<AtomClasses> = (0..m).map(|j| AtomClasses::new(weights(j))).collect();
    let quotas: Vec<u64> = atoms.iter().map(|a| a.quota).collect();
    let mut key = vec![0u64; 2 * m];
    let mut current = LevelTable::new(2 * m);
    {
        let (ky, kn) = key.split_at_mut(m);
        classify(rule, &mut yes_classes, 0, &quotas, ky);
        classify(rule, &mut no_classes, 0, &quotas, kn);
    }
    current.intern(&key);
    let mut total = 1usize;
    let mut residual = vec![0u64; m];
    for (level, &member) in order.iter().enumerate() {
        let mut next = LevelTable::new(2 * m);
        for id in 0..current.len() {
            let cur: Vec<u64> = current.key(id).to_vec();
            for vote_yes in [true, false] {
                for (part, classes) in [(0usize, &mut yes_classes), (1, &mut no_classes)] {
                    let src = &cur[part * m..(part + 1) * m];
                    let dst = &mut key[part * m..(part + 1) * m];
                    if decided(src) {
                        dst.copy_from_slice(src);
                        continue;
                    }
                    let shrinks = vote_yes == (part == 0);
                    for j in 0..m {
                        let w = rule.weight(usize::from(atoms[j].attribute), member);
                        residual[j] = if shrinks { src[j].saturating_sub(w) } else { src[j] };
                    }
                    classify(rule, classes, level + 1, &residual, dst);
                }
                next.intern(&key);
            }
        }
        total += next.len();
        within_nodes(total, max_nodes)?;
        current = next;
    }
    let (mut proper, mut strong) = (true, true);
    for id in 0..current.len() {
        let k = current.key(id);
        let wins = k[0] == TRUE_KEY;
        let complement_wins = k[m] == TRUE_KEY;
        if wins && complement_wins {
            proper = false;
        }
        if !wins && !complement_wins {
            strong = false;
        }
    }
    Ok((proper, strong))
}

/// The diagram of where two rules over the same members differ: its TRUE
/// leaves are the coalitions that one rule passes and the other does not.
/// A node is the pair of the two rules' node tuples; once both are decided
/// it is carried down unchanged. Refuses past `max_nodes` nodes.
pub(crate) fn build_difference<A: AsRef<[u64]>, B: AsRef<[u64]>>(
    a: &Rule<A>,
    b: &Rule<B>,
    order: Vec<usize>,
    max_nodes: usize,
) -> Result<Diagram, Error> {
    let n = a.members();
    let (ma, mb) = (a.atoms().len(), b.atoms().len());
    let weights_of = |attribute: usize, rule_weight: &dyn Fn(usize, usize) -> u64| -> Vec<u64> {
        order.iter().map(|&i| rule_weight(attribute, i)).collect()
    };
    let mut ca: Vec<AtomClasses> = a
        .atoms()
        .iter()
        .map(|t| AtomClasses::new(weights_of(usize::from(t.attribute), &|x, i| a.weight(x, i))))
        .collect();
    let mut cb: Vec<AtomClasses> = b
        .atoms()
        .iter()
        .map(|t| AtomClasses::new(weights_of(usize::from(t.attribute), &|x, i| b.weight(x, i))))
        .collect();
    let width = ma + mb;
    let mut key = vec![0u64; width];
    {
        let qa: Vec<u64> = a.atoms().iter().map(|t| t.quota).collect();
        let qb: Vec<u64> = b.atoms().iter().map(|t| t.quota).collect();
        let (ka, kb) = key.split_at_mut(ma);
        classify(a, &mut ca, 0, &qa, ka);
        classify(b, &mut cb, 0, &qb, kb);
    }
    let mut current = LevelTable::new(width);
    current.intern(&key);
    let mut starts = vec![0usize];
    let (mut yes, mut no) = (Vec::new(), Vec::new());
    let mut total = 1usize;
    let mut residual = vec![0u64; ma.max(mb)];
    for level in 0..n {
        starts.push(starts[level] + current.len());
        let member = order[level];
        let mut next = LevelTable::new(width);
        for id in 0..current.len() {
            let cur: Vec<u64> = current.key(id).to_vec();
            let mut children = [0u32; 2];
            for (slot, vote_yes) in [(0usize, true), (1, false)] {
                let (src_a, src_b) = cur.split_at(ma);
                let (dst_a, dst_b) = key.split_at_mut(ma);
                step(a, &mut ca, level, member, vote_yes, src_a, dst_a, &mut residual);
                step(b, &mut cb, level, member, vote_yes, src_b, dst_b, &mut residual);
                children[slot] = next.intern(&key);
            }
            yes.push(children[0]);
            no.push(children[1]);
        }
        total += next.len();
        within_nodes(total, max_nodes)?;
        current = next;
    }
    Ok(finish(order, starts, yes, no, &current, |k| {
        (k[0] == TRUE_KEY) != (k[ma] == TRUE_KEY)
    }))
}

/// One rule's part of a product node after `member` (at `level`) votes.
#[allow(clippy::too_many_arguments)]
fn step<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    classes: &mut [AtomClasses],
    level: usize,
    member: usize,
    vote_yes: bool,
    src: &[u64],
    dst: &mut [u64],
    residual: &mut [u64],
) {
    if decided(src) {
        dst.copy_from_slice(src);
        return;
    }
    for (j, t) in rule.atoms().iter().enumerate() {
        let w = if vote_yes {
            rule.weight(usize::from(t.attribute), member)
        } else {
            0
        };
        residual[j] = src[j].saturating_sub(w);
    }
    classify(rule, classes, level + 1, &residual[..src.len()], dst);
}
