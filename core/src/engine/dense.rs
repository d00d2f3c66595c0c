//! Engine 2b: generating functions over capped partial sums.
//!
//! The distribution of coalitions by (size, sum of each used attribute) is
//! the product Π_i (1 + y x^{w_i}); sums are capped where larger values no
//! longer change any outcome (at the largest of q and T - q + 1 over the
//! attribute's quotas, so complements are decided exactly too).
//!
//! * One used attribute (a weighted game, or any formula over one
//!   attribute): the table is built once in O(n^2 q) and each member type's
//!   factor is divided out (Uno 2012) in O(n q), so all swings and
//!   Shapley-Shubik pivots cost O(n^2 q + T n q) rather than one
//!   recomputation per member. Division is exact below the cap, which is
//!   where every losing coalition lives.
//! * Several attributes: a losing coalition can be capped in some attribute,
//!   so the engine rebuilds the distribution without one member of each type
//!   instead: O(T n^2 P) with P = Π(cap_a + 1).
//!
//! Minimal-coalition indices are not computed by this engine (they are
//! `None`). Scratch: (n + 1) P counts for the table, 2 (cap + 1) for the
//! division rows, n for pivots; 2n + 1 indices.

use super::profile::group_types;
use super::{shapley_from_sizes, sum_counts, Need, Workspace};
use crate::count::Counter;
use crate::limits::MAX_ATTRIBUTES;
use crate::power::{MemberCounts, RuleCounts};
use crate::{Engine, Error, Rule};

/// Largest table (in counts) the engine will plan for.
pub const MAX_TABLE: u128 = 1 << 32;

/// The capped state space of a rule.
struct Space {
    dims: usize,
    attrs: [usize; MAX_ATTRIBUTES],
    caps: [u64; MAX_ATTRIBUTES],
    strides: [usize; MAX_ATTRIBUTES],
    /// Π(cap + 1): states per size row.
    per_row: usize,
}

fn space<W: AsRef<[u64]>>(rule: &Rule<W>) -> Result<Space, Error> {
    let mask = rule.used_attributes();
    let mut s = Space {
        dims: 0,
        attrs: [0; MAX_ATTRIBUTES],
        caps: [0; MAX_ATTRIBUTES],
        strides: [0; MAX_ATTRIBUTES],
        per_row: 1,
    };
    let unsuitable = Error::EngineUnsuitable {
        engine: Engine::Dense,
    };
    let mut per_row: u128 = 1;
    for a in (0..rule.attributes()).filter(|a| mask & (1 << a) != 0) {
        let total = rule.total(a);
        let cap = rule
            .atoms()
            .iter()
            .filter(|atom| usize::from(atom.attribute) == a)
            .map(|atom| atom.quota.max((total - atom.quota.min(total)).saturating_add(1)))
            .max()
            .unwrap_or(0)
            .min(total);
        s.attrs[s.dims] = a;
        s.caps[s.dims] = cap;
        s.strides[s.dims] = per_row as usize;
        per_row = per_row.saturating_mul(u128::from(cap) + 1);
        if per_row > MAX_TABLE {
            return Err(unsuitable);
        }
        s.dims += 1;
    }
    let rows = rule.members() as u128 + 1;
    if per_row.saturating_mul(rows) > MAX_TABLE {
        return Err(unsuitable);
    }
    s.per_row = per_row as usize;
    Ok(s)
}

impl Space {
    fn decode(&self, mut index: usize, sums: &mut [u64; MAX_ATTRIBUTES]) {
        for d in 0..self.dims {
            let radix = self.caps[d] as usize + 1;
            sums[self.attrs[d]] = (index % radix) as u64;
            index /= radix;
        }
    }
    /// Index of the state reached by adding the weights of `member`.
    fn shifted<W: AsRef<[u64]>>(&self, rule: &Rule<W>, index: usize, member: usize) -> usize {
        let mut out = 0;
        let mut rest = index;
        for d in 0..self.dims {
            let radix = self.caps[d] as usize + 1;
            let s = (rest % radix) as u64;
            rest /= radix;
            let moved = s
                .saturating_add(rule.weight(self.attrs[d], member))
                .min(self.caps[d]);
            out += moved as usize * self.strides[d];
        }
        out
    }
}

pub(crate) fn need<W: AsRef<[u64]>>(rule: &Rule<W>) -> Result<Need, Error> {
    let sp = space(rule)?;
    let n = rule.members();
    let division_rows = if sp.dims == 1 {
        2 * (sp.caps[0] as usize + 1)
    } else {
        0
    };
    Ok(Need {
        counts: (n + 1) * sp.per_row + division_rows + n,
        indices: 2 * n + 1,
    })
}

pub(crate) fn cost<W: AsRef<[u64]>>(rule: &Rule<W>) -> Result<u128, Error> {
    let sp = space(rule)?;
    let n = rule.members() as u128;
    let build = n * (n + 1) / 2 * sp.per_row as u128 * sp.dims.max(1) as u128;
    if sp.dims <= 1 {
        Ok(build + n * n * sp.per_row as u128)
    } else {
        // One rebuild per type; the planner cannot sort, so assume n types.
        Ok(build.saturating_mul(n + 1))
    }
}

/// Multiplies the table by (1 + y x^{w_member}); rows 0..=filled are in use.
fn multiply<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    sp: &Space,
    table: &mut [C],
    filled: usize,
    member: usize,
) -> Result<(), Error> {
    let p = sp.per_row;
    for k in (0..=filled).rev() {
        let (low, high) = table.split_at_mut((k + 1) * p);
        let row = &low[k * p..];
        let next = &mut high[..p];
        for (s, &c) in row.iter().enumerate() {
            if !c.is_zero() {
                let t = sp.shifted(rule, s, member);
                next[t] = next[t].add(c)?;
            }
        }
    }
    Ok(())
}

/// Builds the distribution of all members except `skip` into `table`.
fn build<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    sp: &Space,
    table: &mut [C],
    skip: Option<usize>,
) -> Result<(), Error> {
    for c in table.iter_mut() {
        *c = C::ZERO;
    }
    table[0] = C::ONE;
    for (filled, i) in (0..rule.members()).filter(|&i| Some(i) != skip).enumerate() {
        multiply(rule, sp, table, filled, i)?;
    }
    Ok(())
}

pub(crate) fn count<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    members: &mut [MemberCounts<C>],
    work: Workspace<'_, C>,
) -> Result<RuleCounts<C>, Error> {
    let sp = space(rule)?;
    let n = rule.members();
    let attributes = rule.attributes();
    let p = sp.per_row;
    let (order, starts) = work.indices.split_at_mut(n);
    let types = group_types(rule, rule.used_attributes(), order, starts);
    let (table, rest) = work.counts.split_at_mut((n + 1) * p);
    let (rows, pivots) = rest.split_at_mut(if sp.dims == 1 {
        2 * (sp.caps[0] as usize + 1)
    } else {
        0
    });
    let pivots = &mut pivots[..n];
    let mut totals = [0u64; MAX_ATTRIBUTES];
    for (a, t) in totals.iter_mut().enumerate().take(attributes) {
        *t = rule.total(a);
    }
    let wins_at = |index: usize| {
        let mut sums = [0u64; MAX_ATTRIBUTES];
        sp.decode(index, &mut sums);
        rule.passes_with_sums(&sums[..attributes])
    };
    let complement_wins_at = |index: usize| {
        let mut sums = [0u64; MAX_ATTRIBUTES];
        sp.decode(index, &mut sums);
        for a in 0..attributes {
            sums[a] = totals[a].saturating_sub(sums[a]);
        }
        rule.passes_with_sums(&sums[..attributes])
    };

    // Rule-level figures from the full distribution.
    build(rule, &sp, table, None)?;
    let mut out = RuleCounts {
        members: n,
        winning: C::ZERO,
        losing: C::ZERO,
        minimal_winning: None,
        minimal_blocking: None,
        smallest_winning: None,
        proper: true,
        strong: true,
        factorial: None,
        engine: Engine::Dense,
    };
    for k in 0..=n {
        for s in 0..p {
            let c = table[k * p + s];
            if c.is_zero() {
                continue;
            }
            if wins_at(s) {
                out.winning = out.winning.add(c)?;
                out.smallest_winning = Some(out.smallest_winning.map_or(k, |m| m.min(k)));
                if complement_wins_at(s) {
                    out.proper = false;
                }
            } else {
                out.losing = out.losing.add(c)?;
                if !complement_wins_at(s) {
                    out.strong = false;
                }
            }
        }
    }

    for t in 0..types {
        let rep = order[starts[t] as usize] as usize;
        for c in pivots.iter_mut() {
            *c = C::ZERO;
        }
        if sp.dims == 1 {
            divide_out(rule, &sp, table, rows, pivots, rep, &wins_at)?;
        } else {
            // Rebuild without one member of this type, then test every state.
            build(rule, &sp, table, Some(rep))?;
            for k in 0..n {
                for s in 0..p {
                    let c = table[k * p + s];
                    if !c.is_zero() && !wins_at(s) && wins_at(sp.shifted(rule, s, rep)) {
                        pivots[k] = pivots[k].add(c)?;
                    }
                }
            }
        }
        let (ss, numerator) = shapley_from_sizes(n, pivots)?;
        let value = MemberCounts {
            swings: sum_counts(pivots)?,
            shapley_shubik: ss,
            shapley_shubik_numerator: numerator,
            ..MemberCounts::EMPTY
        };
        for &m in &order[starts[t] as usize..starts[t + 1] as usize] {
            members[m as usize] = value;
        }
    }
    Ok(out)
}

/// Divides the factor (1 + y x^w) of `member` out of the single-attribute
/// table row by row and accumulates the member's pivots by size.
fn divide_out<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    sp: &Space,
    table: &[C],
    rows: &mut [C],
    pivots: &mut [C],
    member: usize,
    wins_at: &impl Fn(usize) -> bool,
) -> Result<(), Error> {
    let n = rule.members();
    let cap = sp.caps[0] as usize;
    let p = cap + 1;
    let w = rule.weight(sp.attrs[0], member) as usize;
    let (prev, cur) = rows.split_at_mut(p);
    for c in prev.iter_mut() {
        *c = C::ZERO;
    }
    // G_k[s] = F_k[s] - G_{k-1}[s - w], exact for every losing state s
    // (losing states lie below the cap).
    for k in 0..n {
        for s in 0..p {
            if wins_at(s) {
                cur[s] = C::ZERO;
                continue;
            }
            let below = if k > 0 && s >= w { prev[s - w] } else { C::ZERO };
            cur[s] = table[k * p + s].sub(below)?;
        }
        for (s, &c) in cur.iter().enumerate() {
            if !c.is_zero() && wins_at((s + w).min(cap)) {
                pivots[k] = pivots[k].add(c)?;
            }
        }
        prev.copy_from_slice(cur);
    }
    Ok(())
}
