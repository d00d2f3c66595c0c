//! Engine 1: every coalition, in Gray-code order (the oracle).
//!
//! Time O(2^n * n * (atoms + nodes)); each step changes one member, so the
//! per-attribute sums are updated in O(attributes). Scratch: 3 n^2 counts
//! (pivots by size, swings by the number of swings in the coalition,
//! minimal winning coalitions by size). Limited to n <= [`MAX_MEMBERS`],
//! which keeps 2^n and every table index in range. Counts use the caller's
//! checked [`Counter`] (overflow is [`Error::CountOverflow`]); coalition sums
//! stay below the checked attribute totals.

// Hot loops index their tables and add bounded integers directly (checked
// arithmetic would cost the engines' speed). Why nothing is out of range or
// overflows, listed in DEVELOPERS.md ("Panics"):
// n <= 30 members (checked by `check`), so 2^n, Gray-code indices and 3 n^2 scratch fit
// in usize; every table index is below its `need`, which `try_count_for` checked against
// the caller's scratch.
#![allow(clippy::indexing_slicing, clippy::arithmetic_side_effects)]

use crate::engine::counts::{MemberCounts, RuleCounts};
use crate::engine::pivots::{reciprocal_sum, shapley_from_sizes, sum_counts};
use crate::engine::registry::{Counting, Job};
use crate::engine::{Need, Scope, Workspace};
use crate::model::count::Counter;
use crate::model::engine_id::Engine;
use crate::model::error::Error;
use crate::model::limits::MAX_ATTRIBUTES;
use crate::model::meter::Meter;
use crate::model::rule::Rule;

/// Most members the enumeration engine accepts.
pub const MAX_MEMBERS: usize = 30;

fn check<W: AsRef<[u64]>>(rule: &Rule<W>) -> Result<usize, Error> {
    let n = rule.members();
    if n > MAX_MEMBERS {
        return Err(Error::EngineUnsuitable {
            engine: Engine::Enumerate,
        });
    }
    Ok(n)
}

/// The enumeration engine.
pub(crate) struct Enumeration;

impl Counting for Enumeration {
    const ENGINE: Engine = Engine::Enumerate;
    const DESCRIPTION: &'static str = "visits every coalition (2^n of them)";
    const MINIMAL_COALITIONS: bool = true;

    fn scratch<W: AsRef<[u64]>>(rule: &Rule<W>, _: Scope) -> Result<Need, Error> {
        let n = check(rule)?;
        Ok(Need {
            counts: 3 * n * n,
            indices: 0,
        })
    }

    fn cost<W: AsRef<[u64]>>(rule: &Rule<W>, _: Scope) -> Result<u128, Error> {
        let n = check(rule)?;
        let per = (n as u128 + 2) * (rule.atoms().len() + rule.formula().len()) as u128;
        Ok((1u128 << n) * per)
    }

    fn run<W: AsRef<[u64]>, C: Counter>(job: Job<'_, W, C>) -> Result<RuleCounts<C>, Error> {
        count(job.rule, job.members, job.work, job.meter)
    }
}

struct Sums<'r, W: AsRef<[u64]>> {
    rule: &'r Rule<W>,
    sums: [u64; MAX_ATTRIBUTES],
}

impl<W: AsRef<[u64]>> Sums<'_, W> {
    fn wins(&self) -> bool {
        self.rule.passes_with_sums(&self.sums[..self.rule.attributes()])
    }
    /// Outcome with member `i` added (`sign = true`) or removed.
    fn wins_changed(&self, i: usize, add: bool) -> bool {
        let rule = self.rule;
        rule.eval(|a| {
            rule.atoms().get(a).is_some_and(|atom| {
                let attr = usize::from(atom.attribute);
                let s = self.sums[attr];
                let w = rule.weight(attr, i);
                let s = if add {
                    s.saturating_add(w)
                } else {
                    s.saturating_sub(w)
                };
                s >= atom.quota
            })
        })
    }
    fn wins_complement(&self, totals: &[u64; MAX_ATTRIBUTES]) -> bool {
        let mut c = [0u64; MAX_ATTRIBUTES];
        for (a, slot) in c.iter_mut().enumerate() {
            *slot = totals[a].saturating_sub(self.sums[a]);
        }
        self.rule.passes_with_sums(&c[..self.rule.attributes()])
    }
}

fn count<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    members: &mut [MemberCounts<C>],
    work: Workspace<'_, C>,
    meter: &Meter<'_>,
) -> Result<RuleCounts<C>, Error> {
    let n = check(rule)?;
    // Charged every CHUNK coalitions, in the units of the cost estimate.
    const CHUNK: u64 = 4096;
    let per = (n as u64 + 2) * (rule.atoms().len() + rule.formula().len()) as u64;
    let (pivots, rest) = work.counts.split_at_mut(n * n);
    let (by_kappa, rest) = rest.split_at_mut(n * n);
    let minimal_by_size = &mut rest[..n * n];
    for c in pivots
        .iter_mut()
        .chain(by_kappa.iter_mut())
        .chain(minimal_by_size.iter_mut())
    {
        *c = C::ZERO;
    }
    let mut totals = [0u64; MAX_ATTRIBUTES];
    for (a, t) in totals.iter_mut().enumerate().take(rule.attributes()) {
        *t = rule.total(a);
    }
    let mut state = Sums {
        rule,
        sums: [0; MAX_ATTRIBUTES],
    };
    let mut out = RuleCounts::<C>::start(n, Engine::Enumerate, true);
    let mut mask: u64 = 0;
    let steps: u64 = 1 << n;
    for step in 0..steps {
        if step % CHUNK == 0 {
            meter.charge(per * CHUNK.min(steps - step))?;
        }
        if step > 0 {
            // Gray code: flip the member at the lowest set bit of `step`.
            let i = step.trailing_zeros() as usize;
            mask ^= 1 << i;
            let add = mask & (1 << i) != 0;
            for a in 0..rule.attributes() {
                let w = rule.weight(a, i);
                state.sums[a] = if add { state.sums[a] + w } else { state.sums[a] - w };
            }
        }
        let size = mask.count_ones() as usize;
        if state.wins() {
            out.winning = out.winning.add(C::ONE)?;
            out.smallest_winning = Some(out.smallest_winning.map_or(size, |s| s.min(size)));
            let mut swings: u64 = 0;
            for i in (0..n).filter(|i| mask & (1 << i) != 0) {
                if !state.wins_changed(i, false) {
                    swings |= 1 << i;
                }
            }
            let kappa = swings.count_ones() as usize;
            for i in (0..n).filter(|i| swings & (1 << i) != 0) {
                members[i].swings = members[i].swings.add(C::ONE)?;
                bump(pivots, i * n + size - 1)?;
                bump(by_kappa, i * n + kappa - 1)?;
            }
            if swings == mask {
                out.minimal_winning = Some(out.minimal_winning.unwrap_or(C::ZERO).add(C::ONE)?);
                for i in (0..n).filter(|i| mask & (1 << i) != 0) {
                    bump(minimal_by_size, i * n + size - 1)?;
                }
            }
            if state.wins_complement(&totals) {
                out.proper = false;
            }
        } else {
            out.losing = out.losing.add(C::ONE)?;
            if !state.wins_complement(&totals) {
                out.strong = false;
            }
            let maximal = (0..n)
                .filter(|i| mask & (1 << i) == 0)
                .all(|i| state.wins_changed(i, true));
            if maximal {
                out.minimal_blocking = Some(out.minimal_blocking.unwrap_or(C::ZERO).add(C::ONE)?);
            }
        }
    }
    for (i, m) in members.iter_mut().enumerate() {
        let row = i * n..(i + 1) * n;
        let (ss, numerator) = shapley_from_sizes(n, &pivots[row.clone()])?;
        m.shapley_shubik = ss;
        m.shapley_shubik_numerator = numerator;
        m.johnston_raw = Some(reciprocal_sum(n, &by_kappa[row.clone()]));
        m.deegan_packel_raw = Some(reciprocal_sum(n, &minimal_by_size[row.clone()]));
        m.minimal_winning = Some(sum_counts(&minimal_by_size[row])?);
    }
    Ok(out)
}

fn bump<C: Counter>(counts: &mut [C], at: usize) -> Result<(), Error> {
    let slot = counts.get_mut(at).ok_or(Error::ScratchTooSmall {
        needed: at + 1,
        given: 0,
    })?;
    *slot = slot.add(C::ONE)?;
    Ok(())
}
