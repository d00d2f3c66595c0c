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

use super::shapley_from_sizes;
use crate::count::Counter;
use crate::power::{MemberCounts, RuleCounts};
use crate::{Engine, Error, Rule};

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

/// Builds the diagram of `rule` in `order` and reports its size.
pub fn stats<W: AsRef<[u64]>>(rule: &Rule<W>, order: Order) -> Result<DiagramStats, Error> {
    Ok(build(rule, member_order(rule, order), DEFAULT_MAX_NODES)?.stats())
}

impl Diagram {
    fn stats(&self) -> DiagramStats {
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
        if total > max_nodes {
            return Err(Error::TooCostly {
                estimate: total as u128,
                budget: max_nodes as u128,
            });
        }
        current = next;
    }
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
    })
}

/// Bytes the counting pass needs for a diagram of `nodes` nodes.
fn counting_bytes<C>(nodes: usize, n: usize, sizes: bool) -> u64 {
    let per = core::mem::size_of::<C>() as u64;
    let width = if sizes { n as u64 + 1 } else { 1 };
    (nodes as u64)
        .saturating_mul(width)
        .saturating_mul(per)
        .saturating_mul(2)
}

/// Counts swings (and, with `sizes`, Shapley-Shubik pivots) from a diagram.
/// `on_member(member, swings, pivots_by_size)` is called once per member
/// (with an empty pivot slice when `sizes` is off).
pub(crate) fn count_diagram<C: Counter>(
    d: &Diagram,
    n: usize,
    sizes: bool,
    memory_limit: u64,
    mut on_member: impl FnMut(usize, C, &[C]) -> Result<(), Error>,
) -> Result<(C, C, Option<usize>), Error> {
    let nodes = d.starts[n + 1];
    let needed = counting_bytes::<C>(nodes, n, sizes);
    if needed > memory_limit {
        return Err(Error::MemoryLimit {
            needed,
            limit: memory_limit,
        });
    }
    // Backward: number of TRUE completions from each node, by number of yes
    // votes among the remaining members (one slot without sizes).
    let width = if sizes { n + 1 } else { 1 };
    let mut back = vec![C::ZERO; nodes * width];
    for (k, &t) in d.last_true.iter().enumerate() {
        if t {
            back[(d.starts[n] + k) * width] = C::ONE;
        }
    }
    for l in (0..n).rev() {
        let rest = n - l;
        for v in d.starts[l]..d.starts[l + 1] {
            let (y, z) = (d.yes[v] as usize, d.no[v] as usize);
            if sizes {
                for k in 0..=rest {
                    let mut c = back[z * width + k];
                    if k > 0 {
                        c = c.add(back[y * width + k - 1])?;
                    }
                    back[v * width + k] = c;
                }
            } else {
                back[v] = back[z].add(back[y])?;
            }
        }
    }
    let winning = back[..width].iter().try_fold(C::ZERO, |a, &c| a.add(c))?;
    let smallest = back[..width].iter().position(|c| !c.is_zero());
    let smallest = if sizes { smallest } else { None };
    // Forward, level by level, accumulating each level's member's pivots.
    let mut fwd = vec![C::ZERO; width];
    fwd[0] = C::ONE;
    let mut pivots = vec![C::ZERO; n];
    for l in 0..n {
        let level_nodes = d.starts[l + 1] - d.starts[l];
        let next_nodes = d.starts[l + 2] - d.starts[l + 1];
        let mut next = vec![C::ZERO; next_nodes * width];
        for c in pivots.iter_mut() {
            *c = C::ZERO;
        }
        let mut swings = C::ZERO;
        for local in 0..level_nodes {
            let v = d.starts[l] + local;
            let (y, z) = (d.yes[v] as usize, d.no[v] as usize);
            let here = &fwd[local * width..(local + 1) * width];
            let (ly, lz) = (y - d.starts[l + 1], z - d.starts[l + 1]);
            for k in 0..width.min(l + 1) {
                let f = here[k];
                if f.is_zero() {
                    continue;
                }
                next[lz * width + k] = next[lz * width + k].add(f)?;
                let ky = if sizes { k + 1 } else { 0 };
                next[ly * width + ky] = next[ly * width + ky].add(f)?;
            }
            if y == z {
                continue;
            }
            // Swings: completions that pass with this member's yes and fail
            // with its no (monotone, so back[y] >= back[z] slot by slot).
            if sizes {
                for k2 in 0..=(n - l - 1) {
                    let diff = back[y * width + k2].sub(back[z * width + k2])?;
                    if diff.is_zero() {
                        continue;
                    }
                    for k in 0..=l {
                        let f = here[k];
                        if !f.is_zero() {
                            let c = f.mul(diff)?;
                            pivots[k + k2] = pivots[k + k2].add(c)?;
                        }
                    }
                }
            } else {
                let diff = back[y].sub(back[z])?;
                swings = swings.add(here[0].mul(diff)?)?;
            }
        }
        let member = d.order[l];
        if sizes {
            let total = pivots.iter().try_fold(C::ZERO, |a, &c| a.add(c))?;
            on_member(member, total, &pivots)?;
        } else {
            on_member(member, swings, &[])?;
        }
        fwd = next;
    }
    // Losing = 2^n - winning, computed without forming 2^n when it overflows.
    let losing = C::pow2(n as u32).and_then(|all| all.sub(winning))?;
    Ok((winning, losing, smallest))
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
        if total > max_nodes {
            return Err(Error::TooCostly {
                estimate: total as u128,
                budget: max_nodes as u128,
            });
        }
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

/// Default memory limit of the counting pass: 2 GiB.
pub const DEFAULT_MEMORY_LIMIT: u64 = 2 << 30;

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

/// Most nodes the engine builds by default.
pub const DEFAULT_MAX_NODES: usize = 20_000_000;

/// Runs the diagram engine with Shapley-Shubik pivots.
///
/// Below 127 members every count fits in a `u128`, so a wider count type
/// is filled from a `u128` run (the same exact numbers, several times faster).
pub(crate) fn count<W: AsRef<[u64]>, C: Counter>(
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::analysis::analyze_with;
    use crate::{Atom, Node};
    use proptest::prelude::*;

    #[test]
    fn totals_at_the_top_of_u64() {
        // The fuzzer's case: weights summing to exactly 2^64 - 1 and that
        // quota. The diagram gave 4,096 winning coalitions of 4,096 (a class
        // bound equal to the TRUE key); such totals are now refused by
        // every rule, and at the limit the diagram is exact.
        let mut weights = vec![u64::MAX - 35, 2, 0, 6, 5, 5, 4, 1, 0, 3, 3, 6];
        weights.extend([0u64; 12]);
        let atoms = [Atom {
            attribute: 0,
            quota: u64::MAX,
        }];
        assert_eq!(
            Rule::new(12, weights, &atoms, &[Node::Atom(0)]).unwrap_err(),
            Error::WeightSumOverflow { attribute: 0 }
        );
        let max = crate::limits::MAX_TOTAL;
        let rule = Rule::weighted(max, vec![max - 3, 1, 1, 1, 0]).unwrap();
        let d = analyze_with::<_, u128>(&rule, Engine::Diagram).unwrap();
        assert_eq!(d.rule.winning, 2); // all four weighted members, with or without the fifth
        let e = analyze_with::<_, u128>(&rule, Engine::Enumerate).unwrap();
        assert_eq!(d.rule.winning, e.rule.winning);
        for (a, b) in d.members.iter().zip(&e.members) {
            assert_eq!(a.swings, b.swings);
        }
    }

    fn rule_from(n: usize, w: Vec<u64>, q: [u64; 3], shape: u8) -> Rule<Vec<u64>> {
        let atoms = [
            Atom {
                attribute: 0,
                quota: q[0],
            },
            Atom {
                attribute: 1,
                quota: q[1],
            },
            Atom {
                attribute: 0,
                quota: q[2],
            },
        ];
        let f: &[Node] = match shape % 3 {
            0 => &[
                Node::Atom(0),
                Node::Atom(1),
                Node::All(2),
                Node::Atom(2),
                Node::Any(2),
            ],
            1 => &[
                Node::Atom(0),
                Node::Atom(1),
                Node::Any(2),
                Node::Atom(2),
                Node::All(2),
            ],
            _ => &[Node::Atom(0)],
        };
        Rule::new(n, w, &atoms, f).unwrap()
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 300, ..ProptestConfig::default() })]
        #[test]
        fn diagram_matches_enumeration(
            n in 1usize..11,
            big in any::<bool>(),
            seed in prop::collection::vec(0u64..1000, 22),
            shares in prop::collection::vec(0u64..=100, 3),
            shape in 0u8..3,
            order in 0u8..3,
        ) {
            // Weights up to 10^15 when `big`: equivalence classes, not weights, size the diagram.
            let scale = if big { 1_000_000_000_000 } else { 1 };
            let w: Vec<u64> = seed[..2 * n].iter().map(|&x| x * scale + x % 7).collect();
            let t0: u64 = w[..n].iter().sum();
            let t1: u64 = w[n..].iter().sum();
            let q = [t0 * shares[0] / 100 + 1, t1 * shares[1] / 100, t0 * shares[2] / 100];
            let rule = rule_from(n, w, q, shape);
            let order = [Order::Declared, Order::HeavyFirst, Order::LightFirst][order as usize];
            let oracle = analyze_with::<_, u128>(&rule, Engine::Enumerate).unwrap();
            let mut members = vec![MemberCounts::<u128>::EMPTY; n];
            let got = count(&rule, &mut members, order, DEFAULT_MEMORY_LIMIT).unwrap();
            prop_assert_eq!(got.winning, oracle.rule.winning);
            prop_assert_eq!(got.losing, oracle.rule.losing);
            prop_assert_eq!(got.proper, oracle.rule.proper);
            prop_assert_eq!(got.strong, oracle.rule.strong);
            prop_assert_eq!(got.smallest_winning, oracle.rule.smallest_winning);
            for i in 0..n {
                prop_assert_eq!(members[i].swings, oracle.members[i].swings);
                prop_assert_eq!(members[i].shapley_shubik_numerator, oracle.members[i].shapley_shubik_numerator);
            }
        }
    }

    #[test]
    fn memory_limit_is_an_error() {
        let rule = Rule::weighted(6, vec![1u64, 2, 3, 4, 5]).unwrap();
        let mut members = vec![MemberCounts::<u128>::EMPTY; 5];
        let got = count(&rule, &mut members, Order::HeavyFirst, 64);
        assert!(matches!(got, Err(Error::MemoryLimit { limit: 64, .. })));
    }
}
