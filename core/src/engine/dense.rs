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
//! division rows, n for pivots; 2n + 1 indices. A table of more than
//! [`MAX_TABLE`] counts is refused ([`Error::EngineUnsuitable`]) before any
//! work. Counts use the caller's checked [`Counter`]: overflow is
//! [`Error::CountOverflow`]; sums are capped, so they cannot overflow.

// Hot loops index their tables and add bounded integers directly (checked
// arithmetic would cost the engines' speed). Why nothing is out of range or
// overflows, listed in DEVELOPERS.md ("Panics"):
// the table has per_row * (n + 1) <= MAX_TABLE cells (refused otherwise by `space`),
// every state index is a mixed-radix number below per_row, sums are capped at each
// attribute's cap before they index; scratch is below `need`, checked by
// `try_count_for`; counts use the checked `Counter`.
#![allow(clippy::indexing_slicing, clippy::arithmetic_side_effects)]

use crate::engine::counts::{MemberCounts, RuleCounts};
use crate::engine::member_types::Types;
use crate::engine::pivots::{shapley_from_sizes, sum_counts};
use crate::engine::registry::{Counting, Job};
use crate::engine::{Need, Scope, Workspace};
use crate::model::count::Counter;
use crate::model::engine_id::Engine;
use crate::model::error::Error;
use crate::model::limits::MAX_ATTRIBUTES;
use crate::model::meter::Meter;
use crate::model::rule::Rule;

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

/// The dense engine.
pub(crate) struct Dense;

impl Counting for Dense {
    const ENGINE: Engine = Engine::Dense;
    const DESCRIPTION: &'static str = "dynamic programming over capped partial sums (generating functions)";
    const MINIMAL_COALITIONS: bool = false;

    fn scratch<W: AsRef<[u64]>>(rule: &Rule<W>, scope: Scope) -> Result<Need, Error> {
        need(rule, scope == Scope::All)
    }

    fn cost<W: AsRef<[u64]>>(rule: &Rule<W>, scope: Scope) -> Result<u128, Error> {
        cost(rule, scope == Scope::All)
    }

    fn tables<W: AsRef<[u64]>>(rule: &Rule<W>, scope: Scope, count_bytes: usize) -> Result<u64, Error> {
        if cfg!(feature = "alloc") && scope == Scope::Swings {
            return residue_memory(rule, count_bytes);
        }
        Ok(need(rule, scope == Scope::All)?.bytes(count_bytes))
    }

    fn run<W: AsRef<[u64]>, C: Counter>(job: Job<'_, W, C>) -> Result<RuleCounts<C>, Error> {
        let all = job.scope == Scope::All;
        let mut out = count(job.rule, job.members, job.work, all, job.meter)?;
        // Without sizes the single-attribute paths count no pivots; the
        // compound path does, but only `All` promises them.
        out.shapley_shubik = all;
        Ok(out)
    }
}

fn need<W: AsRef<[u64]>>(rule: &Rule<W>, sizes: bool) -> Result<Need, Error> {
    let sp = space(rule)?;
    let n = rule.members();
    if cfg!(feature = "alloc") && !sizes && sp.dims == 1 {
        // The residue path allocates its own word tables.
        return Ok(Need {
            counts: 0,
            indices: 2 * n + 1,
        });
    }
    let rows = if sizes || sp.dims > 1 { n + 1 } else { 1 };
    let division_rows = if sp.dims == 1 {
        2 * (sp.caps[0] as usize + 1)
    } else {
        0
    };
    Ok(Need {
        counts: rows * sp.per_row + division_rows + n,
        indices: 2 * n + 1,
    })
}

/// Bytes of the residue path's word tables: two per thread, plus prefix sums.
fn residue_memory<W: AsRef<[u64]>>(rule: &Rule<W>, count_bytes: usize) -> Result<u64, Error> {
    let sp = space(rule)?;
    if sp.dims != 1 {
        let need = need(rule, false)?;
        return Ok((need.counts as u64).saturating_mul(count_bytes as u64));
    }
    let threads = 8u64; // an upper bound on the threads that run passes at once
    Ok(threads * 2 * (sp.caps[0] + 1) * 4 + rule.members() as u64 * 8)
}

fn cost<W: AsRef<[u64]>>(rule: &Rule<W>, sizes: bool) -> Result<u128, Error> {
    let sp = space(rule)?;
    let n = rule.members() as u128;
    let p = sp.per_row as u128;
    if sp.dims <= 1 {
        // Build plus one division per type (at most n types).
        let rows = if sizes { n + 1 } else { 1 };
        Ok((n * rows * p).saturating_mul(2))
    } else {
        // One rebuild per type; the planner cannot sort, so assume n types.
        let build = n * (n + 1) / 2 * p * sp.dims as u128;
        Ok(build.saturating_mul(n + 1))
    }
}

/// Multiplies the table of `per_row` states a row by (1 + y x^w), where
/// adding the member moves state `s` to `shift(s)`; rows 0..=filled are in use.
fn multiply<C: Counter>(
    table: &mut [C],
    per_row: usize,
    filled: usize,
    shift: impl Fn(usize) -> usize,
) -> Result<(), Error> {
    let p = per_row;
    for k in (0..=filled).rev() {
        let (low, high) = table.split_at_mut((k + 1) * p);
        let row = &low[k * p..];
        let next = &mut high[..p];
        for (s, &c) in row.iter().enumerate() {
            if !c.is_zero() {
                let t = shift(s);
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
    meter: &Meter<'_>,
) -> Result<(), Error> {
    for c in table.iter_mut() {
        *c = C::ZERO;
    }
    table[0] = C::ONE;
    for (filled, i) in (0..rule.members()).filter(|&i| Some(i) != skip).enumerate() {
        meter.charge(((filled + 1) * sp.per_row * sp.dims) as u64)?;
        multiply(table, sp.per_row, filled, |s| sp.shifted(rule, s, i))?;
    }
    Ok(())
}

/// The single-attribute engine: one table, one division per member type.
///
/// Losing states are exactly the sums below `first_win` (one attribute and
/// a monotone formula make a threshold), so no formula is evaluated per
/// state. With `sizes` the table has one row per coalition size and
/// Shapley-Shubik pivots are counted; without, one row and swings only.
fn count_single<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    sp: &Space,
    members: &mut [MemberCounts<C>],
    work: Workspace<'_, C>,
    sizes: bool,
    meter: &Meter<'_>,
) -> Result<RuleCounts<C>, Error> {
    let n = rule.members();
    let attr = sp.attrs[0];
    let cap = sp.caps[0] as usize;
    let p = cap + 1;
    let rows = if sizes { n + 1 } else { 1 };
    let (order, starts) = work.indices.split_at_mut(n);
    let types = Types::group(rule, rule.used_attributes(), order, starts);
    let wins_sum = |s: u64| wins_with_sum(rule, attr, s);
    let first_win = first_winning_sum(rule, attr, cap);
    let total = rule.total(attr);
    #[cfg(feature = "alloc")]
    if !sizes {
        // The residue passes run on worker threads; charged at their estimate up front.
        meter.charge(u64::try_from(cost(rule, false)?).unwrap_or(u64::MAX))?;
        let mut out = super::residue::count(rule, attr, cap, first_win, &types, members)?;
        out.smallest_winning = greedy_smallest(rule, attr, types.order, first_win, p);
        return Ok(out);
    }
    let (table, rest) = work.counts.split_at_mut(rows * p);
    let (scratch, rest) = rest.split_at_mut(2 * p);
    let pivots = &mut rest[..n];

    for c in table.iter_mut() {
        *c = C::ZERO;
    }
    table[0] = C::ONE;
    for (filled, i) in (0..n).enumerate() {
        meter.charge(((filled + 1) * p) as u64)?;
        let w = rule.weight(attr, i) as usize;
        if sizes {
            // The same product as `multiply`, written out: through the shared
            // function this path ran about 4% more instructions (callgrind,
            // 60 members, Count1024), the compiler laying out the division
            // loop below differently.
            for k in (0..=filled).rev() {
                let (low, high) = table.split_at_mut((k + 1) * p);
                let row = &low[k * p..];
                let next = &mut high[..p];
                for (s, &c) in row.iter().enumerate() {
                    if !c.is_zero() {
                        let t = (s + w).min(cap);
                        next[t] = next[t].add(c)?;
                    }
                }
            }
        } else {
            // In place: every target index is at or above its source, so a
            // descending sweep reads only values not yet updated. The cap
            // bucket collects all sums at or above the cap.
            let into_cap = (cap.saturating_sub(w)..=cap).try_fold(C::ZERO, |a, s| a.add(table[s]))?;
            for s in (0..cap.saturating_sub(w)).rev() {
                table[s + w] = table[s + w].add(table[s])?;
            }
            table[cap] = table[cap].add(into_cap)?;
        }
    }

    let mut out = RuleCounts::<C>::start(n, Engine::Dense, false);
    for k in 0..rows {
        let row = &table[k * p..(k + 1) * p];
        for (s, &c) in row.iter().enumerate() {
            if c.is_zero() {
                continue;
            }
            // The complement's sum is exact whenever it matters (see the cap).
            let complement = wins_sum(total.saturating_sub(s as u64));
            if s >= first_win {
                out.winning = out.winning.add(c)?;
                if sizes {
                    out.smallest_winning = Some(out.smallest_winning.map_or(k, |m| m.min(k)));
                }
                out.proper &= !complement;
            } else {
                out.losing = out.losing.add(c)?;
                out.strong &= complement;
            }
        }
    }
    if !sizes {
        out.smallest_winning = greedy_smallest(rule, attr, types.order, first_win, p);
    }

    let (prev, cur) = scratch.split_at_mut(p);
    for t in 0..types.count {
        meter.charge((rows * p) as u64)?;
        let w = rule.weight(attr, types.representative(t)) as usize;
        for c in pivots.iter_mut() {
            *c = C::ZERO;
        }
        if w == 0 {
            // Adding nothing to a sum changes no outcome: a dummy.
            for &m in types.members(t) {
                members[m as usize] = MemberCounts::EMPTY;
            }
            let (ss, numerator) = shapley_from_sizes(n, pivots)?;
            for &m in types.members(t) {
                members[m as usize].shapley_shubik = ss;
                members[m as usize].shapley_shubik_numerator = if sizes { numerator } else { None };
            }
            continue;
        }
        // G_k[s] = F_k[s] - G_{k-1}[s - w] (without sizes: G[s] = F[s] - G[s - w]),
        // exact on losing states, which all lie below the cap.
        let lose = first_win.min(p);
        for c in prev.iter_mut() {
            *c = C::ZERO;
        }
        for k in 0..rows.min(n) {
            for s in 0..lose {
                let below = if s >= w {
                    if sizes {
                        if k > 0 {
                            prev[s - w]
                        } else {
                            C::ZERO
                        }
                    } else {
                        cur[s - w]
                    }
                } else {
                    C::ZERO
                };
                cur[s] = table[k * p + s].sub(below)?;
            }
            // Swing: losing without the member, winning with it.
            let from = lose.saturating_sub(w);
            let swing = cur[from..lose].iter().try_fold(C::ZERO, |a, &c| a.add(c))?;
            pivots[k] = pivots[k].add(swing)?;
            if sizes {
                prev[..lose].copy_from_slice(&cur[..lose]);
            }
        }
        let value = if sizes {
            let (ss, numerator) = shapley_from_sizes(n, pivots)?;
            MemberCounts {
                swings: sum_counts(pivots)?,
                shapley_shubik: ss,
                shapley_shubik_numerator: numerator,
                ..MemberCounts::EMPTY
            }
        } else {
            MemberCounts {
                swings: pivots[0],
                ..MemberCounts::EMPTY
            }
        };
        for &m in types.members(t) {
            members[m as usize] = value;
        }
    }
    Ok(out)
}

/// Whether a one-attribute rule passes when attribute `attr` sums to `sum`.
fn wins_with_sum<W: AsRef<[u64]>>(rule: &Rule<W>, attr: usize, sum: u64) -> bool {
    let mut sums = [0u64; MAX_ATTRIBUTES];
    sums[attr] = sum;
    rule.passes_with_sums(&sums[..rule.attributes()])
}

/// Least winning sum of a one-attribute rule, by binary search over
/// 0..=cap (cap + 1 when nothing wins).
pub(crate) fn first_winning_sum<W: AsRef<[u64]>>(rule: &Rule<W>, attr: usize, cap: usize) -> usize {
    let (mut lo, mut hi) = (0usize, cap + 1);
    while lo < hi {
        let mid = (lo + hi) / 2;
        if wins_with_sum(rule, attr, mid as u64) {
            hi = mid;
        } else {
            lo = mid + 1;
        }
    }
    lo
}

/// Smallest winning coalition of a one-attribute rule: heaviest members
/// first (`order` is sorted by ascending weight).
fn greedy_smallest<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    attr: usize,
    order: &[u32],
    first_win: usize,
    states: usize,
) -> Option<usize> {
    if first_win >= states {
        return None;
    }
    let mut sum = 0u64;
    for (k, &m) in order.iter().rev().enumerate() {
        if sum >= first_win as u64 {
            return Some(k);
        }
        sum = sum.saturating_add(rule.weight(attr, m as usize));
    }
    (sum >= first_win as u64).then_some(order.len())
}

fn count<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    members: &mut [MemberCounts<C>],
    work: Workspace<'_, C>,
    sizes: bool,
    meter: &Meter<'_>,
) -> Result<RuleCounts<C>, Error> {
    let sp = space(rule)?;
    if sp.dims == 1 {
        return count_single(rule, &sp, members, work, sizes, meter);
    }
    let n = rule.members();
    let attributes = rule.attributes();
    let p = sp.per_row;
    let (order, starts) = work.indices.split_at_mut(n);
    let types = Types::group(rule, rule.used_attributes(), order, starts);
    let (table, rest) = work.counts.split_at_mut((n + 1) * p);
    let pivots = &mut rest[..n];
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
    build(rule, &sp, table, None, meter)?;
    let mut out = RuleCounts::<C>::start(n, Engine::Dense, false);
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

    for t in 0..types.count {
        let rep = types.representative(t);
        for c in pivots.iter_mut() {
            *c = C::ZERO;
        }
        // Rebuild without one member of this type, then test every state.
        build(rule, &sp, table, Some(rep), meter)?;
        for k in 0..n {
            for s in 0..p {
                let c = table[k * p + s];
                if !c.is_zero() && !wins_at(s) && wins_at(sp.shifted(rule, s, rep)) {
                    pivots[k] = pivots[k].add(c)?;
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
        for &m in types.members(t) {
            members[m as usize] = value;
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use crate::engine::{count_allocating, Engine, Scope};
    use crate::model::atom::Atom;
    use crate::model::rule::{Node, Rule};
    use proptest::prelude::*;

    proptest! {
        #![proptest_config(ProptestConfig { cases: 300, ..ProptestConfig::default() })]
        /// Both scopes of the single-attribute path against enumeration,
        /// zero weights and unreachable or trivial quotas included.
        #[test]
        fn single_attribute_matches_enumeration(
            w in prop::collection::vec(0u64..9, 1..12),
            share in 0u64..=110,
            two in any::<bool>(),
        ) {
            let n = w.len();
            let total: u64 = w.iter().sum();
            let q = total * share / 100;
            let atoms = [Atom { attribute: 0, quota: q }, Atom { attribute: 0, quota: q / 2 + 1 }];
            let f: &[Node] = if two { &[Node::Atom(0), Node::Atom(1), Node::Any(2)] } else { &[Node::Atom(0)] };
            let rule = Rule::new(n, w.clone(), &atoms, f).unwrap();
            let (oracle, oracle_members) = count_allocating::<_, u128>(&rule, Engine::Enumerate, Scope::All, &crate::model::meter::Meter::unlimited()).unwrap();
            for scope in [Scope::All, Scope::Swings] {
                let (got, members) = count_allocating::<_, u128>(&rule, Engine::Dense, scope, &crate::model::meter::Meter::unlimited()).unwrap();
                prop_assert_eq!(got.winning, oracle.winning);
                prop_assert_eq!(got.losing, oracle.losing);
                prop_assert_eq!(got.proper, oracle.proper);
                prop_assert_eq!(got.strong, oracle.strong);
                prop_assert_eq!(got.smallest_winning, oracle.smallest_winning);
                prop_assert_eq!(got.shapley_shubik, scope == Scope::All);
                for i in 0..n {
                    prop_assert_eq!(members[i].swings, oracle_members[i].swings, "member {}", i);
                    if scope == Scope::All {
                        prop_assert_eq!(members[i].shapley_shubik_numerator, oracle_members[i].shapley_shubik_numerator);
                    }
                }
            }
        }
    }
}
