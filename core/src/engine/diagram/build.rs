//! Building decision diagrams: the equivalence classes of each atom's
//! residual quota (Bolus 2011), per-level hash tables of node tuples, the
//! diagram of a rule, and the product diagram of a rule and its complement
//! (for proper and strong).
//!
//! Time O(N m log N) for N nodes and m atoms (class look-ups in ordered
//! maps); space O(N m) words. Every table is claimed from the caller's
//! [`Meter`] before it grows and allocated fallibly, and every node and
//! class charges its steps, so a diagram larger than the memory limit or
//! the budget stops as it is built ([`Error::MemoryLimit`],
//! [`Error::OverBudget`], [`Error::Cancelled`]). Class bounds are below the
//! checked attribute totals, so they stay clear of the TRUE and FALSE keys.

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
use crate::model::meter::Meter;
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
    /// Bytes claimed for `memo` (released by the builder when it is done).
    claimed: u64,
}

/// Bytes one memo entry is charged: two words and a share of its B-tree
/// node (common practice for `BTreeMap` overhead, rounded up).
const MEMO_ENTRY_BYTES: u64 = 48;

/// Steps one memo entry and one node visit are charged.
const CLASS_STEPS: u64 = 16;

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
            claimed: 0,
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
    fn class(&mut self, level: usize, r: u64, meter: &Meter<'_>) -> Result<(u64, u64), Error> {
        if let Some(c) = self.trivial(level, r) {
            return Ok(c);
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
                    meter.claim(MEMO_ENTRY_BYTES)?;
                    meter.charge(CLASS_STEPS)?;
                    self.claimed += MEMO_ENTRY_BYTES;
                    self.memo[l].insert(lo, hi);
                    stack.pop();
                }
                (None, _) => stack.push((l + 1, r.saturating_sub(w))),
                (_, None) => stack.push((l + 1, r)),
            }
        }
        Ok(self.trivial(level, r).unwrap_or((0, 0)))
    }
}

/// Releases the memo bytes of `classes` from `meter`.
fn release_classes(classes: &[AtomClasses], meter: &Meter<'_>) {
    for c in classes {
        meter.release(c.claimed);
    }
}

/// Open-addressing table from node tuples to node ids, for one level.
struct LevelTable {
    width: usize,
    keys: Vec<u64>,
    slots: Vec<u32>,
    /// Bytes claimed from the meter for `keys` and `slots`.
    claimed: u64,
}

const EMPTY: u32 = u32::MAX;

impl LevelTable {
    fn new(width: usize, meter: &Meter<'_>) -> Result<Self, Error> {
        let slots = meter.vec(16, EMPTY)?;
        Ok(LevelTable {
            width,
            keys: Vec::new(),
            slots,
            claimed: Meter::bytes_of::<u32>(16),
        })
    }
    /// Returns the table's bytes to `meter` (the table is dropped after).
    fn release(&self, meter: &Meter<'_>) {
        meter.release(self.claimed);
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
    /// The id of `key`, inserting it if new; the growth of the table is
    /// claimed from `meter` first.
    fn intern(&mut self, key: &[u64], meter: &Meter<'_>) -> Result<u32, Error> {
        if 2 * (self.len() + 1) > self.slots.len() {
            self.grow(meter)?;
        }
        let mask = self.slots.len() - 1;
        let mut at = Self::hash(key) & mask;
        loop {
            let s = self.slots[at];
            if s == EMPTY {
                if self.len() >= MAX_LEVEL_NODES {
                    return Err(Error::EngineUnsuitable {
                        engine: crate::model::engine_id::Engine::Diagram,
                    });
                }
                let id = self.len() as u32;
                self.claimed += meter.grow(&mut self.keys, key.len())?;
                self.keys.extend_from_slice(key);
                self.slots[at] = id;
                return Ok(id);
            }
            if self.key(s as usize) == key {
                return Ok(s);
            }
            at = (at + 1) & mask;
        }
    }
    fn grow(&mut self, meter: &Meter<'_>) -> Result<(), Error> {
        let size = self.slots.len() * 2;
        let fresh = meter.vec(size, EMPTY)?;
        meter.release(Meter::bytes_of::<u32>(self.slots.len()));
        self.claimed = self.claimed - Meter::bytes_of::<u32>(self.slots.len()) + Meter::bytes_of::<u32>(size);
        self.slots = fresh;
        let mask = size - 1;
        for id in 0..self.len() {
            let mut at = Self::hash(self.key(id)) & mask;
            while self.slots[at] != EMPTY {
                at = (at + 1) & mask;
            }
            self.slots[at] = id as u32;
        }
        Ok(())
    }
}

/// Most nodes on one level: node ids are `u32`, with `u32::MAX` kept for
/// empty slots and the global ids of all levels below 2^32 as well.
const MAX_LEVEL_NODES: usize = (u32::MAX / 2) as usize;

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
    /// Bytes of `yes` and `no` claimed from the builder's meter.
    claimed: u64,
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

    /// Returns the diagram's bytes to the meter it was built with.
    pub(crate) fn release(&self, meter: &Meter<'_>) {
        meter.release(self.claimed);
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
    meter: &Meter<'_>,
) -> Result<(), Error> {
    for (j, c) in classes.iter_mut().enumerate() {
        out[j] = c.class(level, residuals[j], meter)?.0;
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
    Ok(())
}

/// [`Error::EngineUnsuitable`] once node ids would not fit a `u32`.
fn within_ids(total: usize) -> Result<(), Error> {
    if total > MAX_LEVEL_NODES {
        return Err(Error::EngineUnsuitable {
            engine: crate::model::engine_id::Engine::Diagram,
        });
    }
    Ok(())
}

fn decided(key: &[u64]) -> bool {
    key[0] == TRUE_KEY || key[0] == FALSE_KEY
}

/// Builds the diagram of `rule` in `order`, charging `meter` for every
/// node and table as it grows. The caller releases the result's bytes
/// ([`Diagram::release`]) when done with it.
pub(crate) fn build<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    order: Vec<usize>,
    meter: &Meter<'_>,
) -> Result<Diagram, Error> {
    let atoms = rule.atoms();
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
    let mut claimed = 0u64;
    let built = build_levels(rule, order, &mut classes, meter, &mut claimed);
    release_classes(&classes, meter);
    if built.is_err() {
        meter.release(claimed);
    }
    built
}

fn build_levels<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    order: Vec<usize>,
    classes: &mut [AtomClasses],
    meter: &Meter<'_>,
    claimed: &mut u64,
) -> Result<Diagram, Error> {
    let n = rule.members();
    let atoms = rule.atoms();
    let m = atoms.len();
    let node_steps = (m as u64 + 8) * CLASS_STEPS;
    let mut starts = vec![0usize];
    let mut yes: Vec<u32> = Vec::new();
    let mut no: Vec<u32> = Vec::new();
    let mut current = LevelTable::new(m, meter)?;
    let mut tuple = vec![0u64; m];
    let quotas: Vec<u64> = atoms.iter().map(|a| a.quota).collect();
    let mut residual = vec![0u64; m];
    let result = (|| {
        classify(rule, classes, 0, &quotas, &mut tuple, meter)?;
        current.intern(&tuple, meter)?;
        let mut total = 1usize;
        for level in 0..n {
            starts.push(starts[level] + current.len());
            let mut next = LevelTable::new(m, meter)?;
            let member = order[level];
            let filled = (|| {
                *claimed += meter.grow(&mut yes, current.len())?;
                *claimed += meter.grow(&mut no, current.len())?;
                for id in 0..current.len() {
                    meter.charge(node_steps)?;
                    let key = current.key(id);
                    let (y, z) = if decided(key) {
                        tuple.copy_from_slice(key);
                        let t = next.intern(&tuple, meter)?;
                        (t, t)
                    } else {
                        for j in 0..m {
                            residual[j] =
                                key[j].saturating_sub(rule.weight(usize::from(atoms[j].attribute), member));
                        }
                        classify(rule, classes, level + 1, &residual, &mut tuple, meter)?;
                        let y = next.intern(&tuple, meter)?;
                        residual.copy_from_slice(current.key(id));
                        classify(rule, classes, level + 1, &residual, &mut tuple, meter)?;
                        (y, next.intern(&tuple, meter)?)
                    };
                    yes.push(y);
                    no.push(z);
                }
                total += next.len();
                within_ids(total)
            })();
            current.release(meter);
            current = next;
            filled?;
        }
        Ok(())
    })();
    current.release(meter);
    result?;
    let base = starts[n];
    // Children ids so far are level-local; make them global.
    for l in 0..n {
        for v in starts[l]..starts[l + 1] {
            yes[v] += starts[l + 1] as u32;
            no[v] += starts[l + 1] as u32;
        }
    }
    let last_true = (0..current.len())
        .map(|id| current.key(id)[0] == TRUE_KEY)
        .collect();
    starts.push(base + current.len());
    Ok(Diagram {
        order,
        starts,
        yes,
        no,
        last_true,
        claimed: *claimed,
    })
}

/// Whether the rule is proper and strong, from a product diagram of the rule
/// on the yes-voters and the rule on the no-voters (the complement),
/// charging `meter` as it grows.
pub(crate) fn proper_and_strong<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    order: &[usize],
    meter: &Meter<'_>,
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
    let got = product_levels(rule, order, &mut yes_classes, &mut no_classes, meter);
    release_classes(&yes_classes, meter);
    release_classes(&no_classes, meter);
    got
}

fn product_levels<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    order: &[usize],
    yes_classes: &mut [AtomClasses],
    no_classes: &mut [AtomClasses],
    meter: &Meter<'_>,
) -> Result<(bool, bool), Error> {
    let atoms = rule.atoms();
    let m = atoms.len();
    let node_steps = (2 * m as u64 + 8) * CLASS_STEPS;
    let quotas: Vec<u64> = atoms.iter().map(|a| a.quota).collect();
    let mut key = vec![0u64; 2 * m];
    let mut current = LevelTable::new(2 * m, meter)?;
    let mut residual = vec![0u64; m];
    let mut cur = vec![0u64; 2 * m];
    let result = (|| {
        {
            let (ky, kn) = key.split_at_mut(m);
            classify(rule, yes_classes, 0, &quotas, ky, meter)?;
            classify(rule, no_classes, 0, &quotas, kn, meter)?;
        }
        current.intern(&key, meter)?;
        let mut total = 1usize;
        for (level, &member) in order.iter().enumerate() {
            let mut next = LevelTable::new(2 * m, meter)?;
            let filled = (|| {
                for id in 0..current.len() {
                    meter.charge(node_steps)?;
                    cur.copy_from_slice(current.key(id));
                    for vote_yes in [true, false] {
                        for (part, classes) in [(0usize, &mut *yes_classes), (1, &mut *no_classes)] {
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
                            classify(rule, classes, level + 1, &residual, dst, meter)?;
                        }
                        next.intern(&key, meter)?;
                    }
                }
                total += next.len();
                within_ids(total)
            })();
            current.release(meter);
            current = next;
            filled?;
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
    })();
    current.release(meter);
    result
}
