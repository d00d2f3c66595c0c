//! Engine 2a: profiles of member types.
//!
//! Members with identical weights in every attribute the rule uses form a
//! type; a coalition's outcome depends only on how many of each type it
//! holds (its profile). With T types of sizes c_1..c_T the engine visits
//! Π(c_t + 1) profiles, each weighted by Π C(c_t, p_t), and evaluates the
//! rule O(T) times per profile: a 536-member two-chamber rule has 3 types
//! and 88,000 profiles instead of 2^536 coalitions.
//!
//! Every index is exact, including the minimal-coalition ones. Time
//! O(Π(c_t + 1) * T * (atoms + nodes)), planned only up to [`MAX_TYPES`]
//! types. Scratch: Σ(c_t + 1) binomials, T + 1 running products and 3 T n
//! counts; 3n + 1 indices (member order, type starts, the profile
//! odometer). Multiplicities and counts use the caller's checked
//! [`Counter`]: overflow is [`Error::CountOverflow`].

// Hot loops index their tables and add bounded integers directly (checked
// arithmetic would cost the engines' speed). Why nothing is out of range or
// overflows, listed in DEVELOPERS.md ("Panics"):
// at most MAX_TYPES types and n <= 65,535 members; the odometer digit of type t stays
// within 0..=c_t; scratch offsets are below `need`, checked by `try_count_for`; counts
// use the checked `Counter`.
#![allow(clippy::indexing_slicing, clippy::arithmetic_side_effects)]

use crate::engine::counts::{MemberCounts, RuleCounts};
use crate::engine::member_types::Types;
use crate::engine::pivots::{reciprocal_sum, shapley_from_sizes, sum_counts};
use crate::engine::registry::{Counting, Job};
use crate::engine::{Need, Scope, Workspace};
use crate::model::count::{binomial, Counter};
use crate::model::engine_id::Engine;
use crate::model::error::Error;
use crate::model::limits::MAX_ATTRIBUTES;
use crate::model::meter::Meter;
use crate::model::rule::Rule;

/// Most types the profile engine accepts.
pub const MAX_TYPES: usize = 4096;

/// Number of types and Π(c_t + 1) (saturating); `None` beyond [`MAX_TYPES`].
///
/// Used for planning, so it must stay cheap on the largest rules: with
/// `alloc` it sorts the members by weight column, O(n log n * attributes)
/// (a 33,000-member rule with two far-apart types took a second with the
/// quadratic scan, found by the fuzzer). Without `alloc` rules have at most
/// 64 members and a first-occurrence scan, O(n^2), needs no scratch.
fn shape<W: AsRef<[u64]>>(rule: &Rule<W>) -> Option<(usize, u128)> {
    #[cfg(feature = "alloc")]
    {
        let n = rule.members();
        let mut order = alloc::vec![0u32; n];
        let mut starts = alloc::vec![0u32; n + 1];
        let types =
            crate::engine::member_types::group_types(rule, rule.used_attributes(), &mut order, &mut starts);
        if types > MAX_TYPES {
            return None;
        }
        let product = starts
            .windows(2)
            .take(types)
            .fold(1u128, |p, w| p.saturating_mul(u128::from(w[1] - w[0]) + 1));
        Some((types, product))
    }
    #[cfg(not(feature = "alloc"))]
    {
        shape_by_scan(rule)
    }
}

/// [`shape`] without scratch: each member against the earlier ones.
#[cfg_attr(feature = "alloc", allow(dead_code))]
fn shape_by_scan<W: AsRef<[u64]>>(rule: &Rule<W>) -> Option<(usize, u128)> {
    let n = rule.members();
    let mask = rule.used_attributes();
    let same = |x: usize, y: usize| {
        (0..rule.attributes())
            .filter(|a| mask & (1 << a) != 0)
            .all(|a| rule.weight(a, x) == rule.weight(a, y))
    };
    let mut types = 0usize;
    let mut product: u128 = 1;
    // Representatives are the first members of their type.
    for i in 0..n {
        if (0..i).any(|j| same(i, j)) {
            continue;
        }
        types += 1;
        let c = (i..n).filter(|&j| same(i, j)).count() as u128;
        product = product.saturating_mul(c + 1);
        if types > MAX_TYPES {
            return None;
        }
    }
    Some((types, product))
}

/// The profile engine.
pub(crate) struct Profiles;

impl Counting for Profiles {
    const ENGINE: Engine = Engine::Profile;
    const DESCRIPTION: &'static str =
        "visits every profile of member types, weighted by binomial coefficients";
    const MINIMAL_COALITIONS: bool = true;

    fn scratch<W: AsRef<[u64]>>(rule: &Rule<W>, _: Scope) -> Result<Need, Error> {
        let n = rule.members();
        let (types, _) = shape(rule).ok_or(Error::EngineUnsuitable {
            engine: Engine::Profile,
        })?;
        // binomials Σ(c_t + 1) = n + T, products T + 1, per-type tables 3 T n.
        Ok(Need {
            counts: n + 2 * types + 1 + 3 * types * n,
            indices: 3 * n + 1,
        })
    }

    fn cost<W: AsRef<[u64]>>(rule: &Rule<W>, _: Scope) -> Result<u128, Error> {
        let (types, profiles) = shape(rule).ok_or(Error::EngineUnsuitable {
            engine: Engine::Profile,
        })?;
        let per = (2 * types as u128 + 2) * (rule.atoms().len() + rule.formula().len()) as u128;
        Ok(profiles.saturating_mul(per))
    }

    fn run<W: AsRef<[u64]>, C: Counter>(job: Job<'_, W, C>) -> Result<RuleCounts<C>, Error> {
        count(job.rule, job.members, job.work, job.meter)
    }
}

fn count<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    members: &mut [MemberCounts<C>],
    work: Workspace<'_, C>,
    meter: &Meter<'_>,
) -> Result<RuleCounts<C>, Error> {
    let n = rule.members();
    let attributes = rule.attributes();
    let mask = rule.used_attributes();
    let (order, rest) = work.indices.split_at_mut(n);
    let (starts, digits) = rest.split_at_mut(n + 1);
    let types = Types::group(rule, mask, order, starts);
    let t_count = types.count;
    let digits = &mut digits[..t_count];

    // Scratch layout: binomials (offset per type), running products, tables.
    let (binoms, rest) = work.counts.split_at_mut(n + t_count);
    let (products, rest) = rest.split_at_mut(t_count + 1);
    let (pivots, rest) = rest.split_at_mut(t_count * n);
    let (by_kappa, rest) = rest.split_at_mut(t_count * n);
    let minimal_by_size = &mut rest[..t_count * n];
    for c in pivots
        .iter_mut()
        .chain(by_kappa.iter_mut())
        .chain(minimal_by_size.iter_mut())
    {
        *c = C::ZERO;
    }
    // binomial table of type t starts at starts[t] + t and has c_t + 1 entries.
    for t in 0..t_count {
        let c = types.size(t);
        let base = types.starts[t] as usize + t;
        for p in 0..=c {
            binoms[base + p] = binomial(c as u64, p as u64)?;
        }
    }
    let binom = |binoms: &[C], t: usize, p: usize| binoms[types.starts[t] as usize + t + p];

    // Weights of each type's representative in each attribute.
    let weight = |t: usize, a: usize| rule.weight(a, types.representative(t));
    let mut totals = [0u64; MAX_ATTRIBUTES];
    for (a, slot) in totals.iter_mut().enumerate().take(attributes) {
        *slot = rule.total(a);
    }

    let mut out = RuleCounts::<C>::start(n, Engine::Profile, true);
    for d in digits.iter_mut() {
        *d = 0;
    }
    for p in products.iter_mut() {
        *p = C::ONE;
    }
    let mut sums = [0u64; MAX_ATTRIBUTES];
    let mut size = 0usize;
    let passes = |sums: &[u64; MAX_ATTRIBUTES]| rule.passes_with_sums(&sums[..attributes]);
    let shifted = |sums: &[u64; MAX_ATTRIBUTES], t: usize, add: bool| {
        let mut s = *sums;
        for (a, slot) in s.iter_mut().enumerate().take(attributes) {
            let w = weight(t, a);
            *slot = if add {
                slot.saturating_add(w)
            } else {
                slot.saturating_sub(w)
            };
        }
        s
    };

    // Charged every CHUNK profiles, in the units of the cost estimate.
    const CHUNK: u64 = 1024;
    let per = (2 * t_count as u64 + 2) * (rule.atoms().len() + rule.formula().len()) as u64;
    let mut visited: u64 = 0;
    loop {
        // After each full chunk, so a small run is never charged more than it costs.
        visited += 1;
        if visited % CHUNK == 0 {
            meter.charge(per * CHUNK)?;
        }
        let mult = products[t_count];
        let win = passes(&sums);
        let mut complement = [0u64; MAX_ATTRIBUTES];
        for a in 0..attributes {
            complement[a] = totals[a].saturating_sub(sums[a]);
        }
        if win {
            out.winning = out.winning.add(mult)?;
            out.smallest_winning = Some(out.smallest_winning.map_or(size, |s| s.min(size)));
            // kappa: number of individual swings in each coalition of this profile.
            let mut kappa = 0usize;
            let mut all_swing = true;
            for (t, &p) in digits.iter().enumerate() {
                if p == 0 {
                    continue;
                }
                if passes(&shifted(&sums, t, false)) {
                    all_swing = false;
                } else {
                    kappa += p as usize;
                }
            }
            for (t, &p) in digits.iter().enumerate() {
                let p = p as usize;
                if p == 0 {
                    continue;
                }
                let swing = kappa > 0 && !passes(&shifted(&sums, t, false));
                if !swing && !all_swing {
                    continue;
                }
                // Coalitions of this profile containing one given member of
                // type t: mult * p / c_t = C(c_t - 1, p - 1) Π_{u != t} C(c_u, p_u).
                let (per_member, r) = mult.mul_u64(p as u64)?.div_rem_u64(types.size(t) as u64);
                debug_assert_eq!(r, 0);
                if swing {
                    let row = t * n;
                    pivots[row + size - 1] = pivots[row + size - 1].add(per_member)?;
                    by_kappa[row + kappa - 1] = by_kappa[row + kappa - 1].add(per_member)?;
                }
                if all_swing {
                    let row = t * n;
                    minimal_by_size[row + size - 1] = minimal_by_size[row + size - 1].add(per_member)?;
                }
            }
            if all_swing {
                out.minimal_winning = Some(out.minimal_winning.unwrap_or(C::ZERO).add(mult)?);
            }
            if passes(&complement) {
                out.proper = false;
            }
        } else {
            out.losing = out.losing.add(mult)?;
            if !passes(&complement) {
                out.strong = false;
            }
            let maximal = (0..t_count)
                .filter(|&t| (digits[t] as usize) < types.size(t))
                .all(|t| passes(&shifted(&sums, t, true)));
            if maximal {
                out.minimal_blocking = Some(out.minimal_blocking.unwrap_or(C::ZERO).add(mult)?);
            }
        }

        // Advance the odometer: the last type is the fastest digit.
        let mut t = t_count;
        loop {
            if t == 0 {
                return finish(rule, &types, members, out, pivots, by_kappa, minimal_by_size);
            }
            t -= 1;
            let c = types.size(t);
            if (digits[t] as usize) < c {
                digits[t] += 1;
                size += 1;
                sums = shifted(&sums, t, true);
                break;
            }
            // Wrap this digit back to zero.
            for (a, slot) in sums.iter_mut().enumerate().take(attributes) {
                *slot = slot.saturating_sub(weight(t, a).saturating_mul(c as u64));
            }
            size -= c;
            digits[t] = 0;
        }
        for u in t..t_count {
            products[u + 1] = products[u].mul(binom(binoms, u, digits[u] as usize))?;
        }
    }
}

fn finish<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    types: &Types<'_>,
    members: &mut [MemberCounts<C>],
    out: RuleCounts<C>,
    pivots: &[C],
    by_kappa: &[C],
    minimal_by_size: &[C],
) -> Result<RuleCounts<C>, Error> {
    let n = rule.members();
    for t in 0..types.count {
        let row = t * n..(t + 1) * n;
        let swings = sum_counts(&pivots[row.clone()])?;
        let (ss, numerator) = shapley_from_sizes(n, &pivots[row.clone()])?;
        let value = MemberCounts {
            swings,
            shapley_shubik: ss,
            shapley_shubik_numerator: numerator,
            minimal_winning: Some(sum_counts(&minimal_by_size[row.clone()])?),
            deegan_packel_raw: Some(reciprocal_sum(n, &minimal_by_size[row.clone()])),
            johnston_raw: Some(reciprocal_sum(n, &by_kappa[row])),
            veto: false,
            dictator: false,
        };
        for &m in types.members(t) {
            members[m as usize] = value;
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::atom::Atom;
    use crate::model::rule::Node;

    #[test]
    fn shape_by_sorting_matches_the_scan() {
        // Two attributes; members 0, 3, 5 alike, 1 and 4 alike, 2 alone.
        let weights = [1u64, 2, 3, 1, 2, 1, 7, 5, 7, 7, 5, 7];
        let rule = Rule::new(
            6,
            &weights[..],
            &[Atom {
                attribute: 1,
                quota: 9,
            }],
            &[Node::Atom(0)],
        )
        .unwrap();
        // Only attribute 1 is used: types {0,2,3,5} (7) and {1,4} (5).
        assert_eq!(shape(&rule), Some((2, 5 * 3)));
        assert_eq!(shape(&rule), shape_by_scan(&rule));
    }

    #[test]
    #[cfg(feature = "alloc")] // 40,000 members need the alloc build's member limit
    fn shape_of_a_large_rule_is_quick() {
        // The fuzzer's case: two far-apart blocks of identical members.
        let mut weights = vec![1u64; 20_000];
        weights.extend(std::iter::repeat_n(40_282_366_960u64, 20_000));
        let rule = Rule::weighted(39, weights).unwrap();
        assert_eq!(shape(&rule), Some((2, 20_001 * 20_001)));
    }
}
