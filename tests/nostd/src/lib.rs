//! A `#![no_std]` library with no allocator that uses clout-core the way
//! firmware would: a fixed rule, stack scratch, exact swing counts.
#![no_std]

use clout_core::engine::{self, Workspace};
use clout_core::{Coalition, Engine, MemberCounts, Rule};

/// Swing counts of [12; 4,4,4,2,2,1] into `out`, or the core's error.
pub fn eec_swings(out: &mut [u64; 6]) -> Result<(), clout_core::Error> {
    let weights = [4u64, 4, 4, 2, 2, 1];
    let rule = Rule::weighted(12, &weights[..])?;
    let mut members = [MemberCounts::<u64>::EMPTY; 6];
    let mut counts = [0u64; 128];
    let mut indices = [0u32; 32];
    let work = Workspace { counts: &mut counts, indices: &mut indices };
    engine::try_count(&rule, Engine::Enumerate, &mut members, work)?;
    for (o, m) in out.iter_mut().zip(members.iter()) {
        *o = m.swings;
    }
    Ok(())
}

/// Whether the listed members pass [12; 4,4,4,2,2,1].
pub fn eec_passes(yes: &[usize]) -> bool {
    let weights = [4u64, 4, 4, 2, 2, 1];
    match (Rule::weighted(12, &weights[..]), Coalition::<1>::from_members(yes)) {
        (Ok(rule), Ok(ballot)) => rule.passes(&ballot).unwrap_or(false),
        _ => false,
    }
}
