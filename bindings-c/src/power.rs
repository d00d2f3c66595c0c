//! Swing counts and power indices for rules of at most 64 members (the
//! core's no-heap capacity).
//!
//! Counts are exact: the core counts in `u128` and every member's swing
//! count fits a `uint64_t` (at most 2^63 swings among 64 members). Indices
//! are `double`s computed from the exact counts. The engine is the one the
//! core's planner picks within its default budget; its scratch comes from
//! the system allocator, refused allocations give `CLOUT_RESULT_OUT_OF_MEMORY`.
//!
//! Model: every member votes yes or no independently with equal chance.

//! Needs the heap (feature `alloc`); a build without it returns
//! `CLOUT_RESULT_NOT_IN_BUILD` after the usual argument checks.

#[cfg(feature = "alloc")]
use alloc::vec::Vec;

#[cfg(feature = "alloc")]
use clout_core::engine::{self, Workspace};
#[cfg(feature = "alloc")]
use clout_core::planner::{plan, DEFAULT_BUDGET};
use clout_core::{MemberCounts, PowerTable, RuleCounts};

use crate::ffi::{self, clout_rule, LoadedRule};
use crate::status::clout_result;

/// Most members `clout_power` handles.
pub const CLOUT_POWER_MAX_MEMBERS: usize = 64;

/// A zeroed vector of `len` elements, or `OutOfMemory`.
#[cfg(feature = "alloc")]
fn scratch<T: Clone>(len: usize, zero: T) -> Result<Vec<T>, clout_result> {
    let mut v = Vec::new();
    v.try_reserve_exact(len).map_err(|_| clout_result::OutOfMemory)?;
    v.resize(len, zero);
    Ok(v)
}

/// Exact counts for every member, by the planner's engine.
#[cfg(feature = "alloc")]
fn count(rule: &LoadedRule) -> Result<(RuleCounts<u128>, Vec<MemberCounts<u128>>), clout_result> {
    let chosen = plan(rule, DEFAULT_BUDGET)?;
    let need = engine::need(rule, chosen.engine)?;
    let mut counts = scratch(need.counts, 0u128)?;
    let mut indices = scratch(need.indices, 0u32)?;
    let mut members = scratch(rule.members(), MemberCounts::EMPTY)?;
    let work = Workspace {
        counts: &mut counts,
        indices: &mut indices,
    };
    let totals = engine::try_count(rule, chosen.engine, &mut members, work)?;
    Ok((totals, members))
}

/// Without the heap there is no scratch to count in.
#[cfg(not(feature = "alloc"))]
fn count(_: &LoadedRule) -> Result<(RuleCounts<u128>, [MemberCounts<u128>; 0]), clout_result> {
    Err(clout_result::NotInBuild)
}

/// Computes each member's swing count (winning coalitions that lose
/// without the member), normalized Banzhaf index and Shapley-Shubik index
/// into three caller arrays of `len >= members` entries each (entries from
/// `members` on are left alone). Rules of more than
/// `CLOUT_POWER_MAX_MEMBERS` members give `CLOUT_RESULT_POWER_CAPACITY`.
/// A build without the heap returns `CLOUT_RESULT_NOT_IN_BUILD`.
#[no_mangle]
pub extern "C" fn clout_power(
    rule: *const clout_rule,
    swings: *mut u64,
    banzhaf: *mut f64,
    shapley_shubik: *mut f64,
    len: usize,
) -> clout_result {
    ffi::guard(|| {
        let rule = ffi::rule(rule)?;
        let swings = ffi::output(swings, len)?;
        let banzhaf = ffi::output(banzhaf, len)?;
        let shapley_shubik = ffi::output(shapley_shubik, len)?;
        let n = rule.members();
        if n > CLOUT_POWER_MAX_MEMBERS {
            return Err(clout_result::PowerCapacity);
        }
        if len < n {
            return Err(clout_result::BufferTooSmall);
        }
        let (totals, members) = count(rule)?;
        let mut exact = [0u64; CLOUT_POWER_MAX_MEMBERS];
        for (e, m) in exact.iter_mut().zip(&members) {
            *e = u64::try_from(m.swings).map_err(|_| clout_result::CountOverflow)?;
        }
        let table = PowerTable::new(&totals, &members);
        let outputs = swings
            .iter_mut()
            .zip(banzhaf.iter_mut())
            .zip(shapley_shubik.iter_mut());
        for (i, ((s, b), ss)) in outputs.enumerate().take(n) {
            s.write(exact[i]);
            b.write(table.banzhaf(i));
            ss.write(table.shapley_shubik(i));
        }
        Ok(())
    })
}
