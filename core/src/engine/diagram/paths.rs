//! Counting paths through a built diagram: backward counts of TRUE
//! completions (by number of yes votes with sizes), forward counts level
//! by level, and from both every member's swings and Shapley-Shubik pivots.
//!
//! Time O(N n^2) with sizes, O(N) without, for N nodes and n members; space
//! O(N n) counts with sizes, claimed from the caller's [`Meter`] before
//! allocating ([`Error::MemoryLimit`]) and charged level by level. Counts use the checked
//! [`Counter`]: overflow is [`Error::CountOverflow`].

// Hot loops index their tables and add bounded integers directly (checked
// arithmetic would cost the engines' speed). Why nothing is out of range or
// overflows, listed in DEVELOPERS.md ("Panics"):
// levels are member positions (< n), class indices come from the classes built for that
// level, node keys from the nodes pushed on the previous level; weights sums are below
// the attribute totals checked at construction; the memory estimate is checked against
// the caller's limit before any table is allocated; path counts use the checked
// `Counter`.
#![allow(clippy::indexing_slicing, clippy::arithmetic_side_effects)]

use crate::model::count::Counter;
use crate::model::error::Error;
use crate::model::meter::Meter;

use super::build::Diagram;

/// Bytes the counting pass needs for a diagram of `nodes` nodes: the
/// backward table and, at most as large, the forward tables of two levels.
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
// Inlined into its one caller, as it was before the diagram engine was split
// into files: called across modules it ran a third more instructions
// (callgrind, 24 members).
#[inline]
pub(crate) fn count_diagram<C: Counter>(
    d: &Diagram,
    n: usize,
    sizes: bool,
    meter: &Meter<'_>,
    on_member: impl FnMut(usize, C, &[C]) -> Result<(), Error>,
) -> Result<(C, C, Option<usize>), Error> {
    let nodes = d.starts[n + 1];
    // Claimed as a whole first, so that a diagram too large to count fails
    // before any table is filled.
    let needed = counting_bytes::<C>(nodes, n, sizes);
    meter.claim(needed)?;
    let counted = count_claimed(d, n, sizes, meter, on_member);
    meter.release(needed);
    counted
}

#[inline]
fn count_claimed<C: Counter>(
    d: &Diagram,
    n: usize,
    sizes: bool,
    meter: &Meter<'_>,
    mut on_member: impl FnMut(usize, C, &[C]) -> Result<(), Error>,
) -> Result<(C, C, Option<usize>), Error> {
    let nodes = d.starts[n + 1];
    // Backward: number of TRUE completions from each node, by number of yes
    // votes among the remaining members (one slot without sizes).
    let width = if sizes { n + 1 } else { 1 };
    let unmetered = Meter::unlimited();
    let mut back = unmetered.vec(nodes * width, C::ZERO)?;
    for (k, &t) in d.last_true.iter().enumerate() {
        if t {
            back[(d.starts[n] + k) * width] = C::ONE;
        }
    }
    for l in (0..n).rev() {
        let rest = n - l;
        let level_nodes = (d.starts[l + 1] - d.starts[l]) as u64;
        meter.charge(level_nodes * (rest as u64 + 1).min(width as u64))?;
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
    let mut fwd = unmetered.vec(width, C::ZERO)?;
    fwd[0] = C::ONE;
    let mut pivots = unmetered.vec(n, C::ZERO)?;
    for l in 0..n {
        let level_nodes = d.starts[l + 1] - d.starts[l];
        let next_nodes = d.starts[l + 2] - d.starts[l + 1];
        let per_node = if sizes { (l as u64 + 1) * (n - l) as u64 } else { 1 };
        meter.charge(level_nodes as u64 * per_node)?;
        let mut next = unmetered.vec(next_nodes * width, C::ZERO)?;
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
