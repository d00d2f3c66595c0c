//! Swing counts and power indices for rules of at most 64 members (the
//! core's no-heap capacity).
//!
//! Counts are exact: the core counts in `u128` and every member's swing
//! count fits a `uint64_t` (at most 2^63 swings among 64 members). Indices
//! are `double`s computed from the exact counts. The engine is the one the
//! core's planner picks within its default budget and memory limit; the
//! run is charged to a meter with the same limits, and every table comes
//! from the system allocator fallibly. Over the memory limit, or an
//! allocation the system refuses, is `CLOUT_RESULT_OUT_OF_MEMORY`; over
//! the budget (estimated or while running) is `CLOUT_RESULT_TOO_COSTLY`:
//! never an abort.
//!
//! Model: every member votes yes or no independently with equal chance.

//! Needs the heap (feature `alloc`); a build without it returns
//! `CLOUT_RESULT_NOT_IN_BUILD` after the usual argument checks.

#[cfg(feature = "alloc")]
use alloc::vec::Vec;

#[cfg(feature = "alloc")]
use clout_core::engine::{self, Scope, Workspace};
#[cfg(feature = "alloc")]
use clout_core::planner::{plan_within, Limits};
use clout_core::planner::{DEFAULT_BUDGET, DEFAULT_MEMORY};
#[cfg(feature = "alloc")]
use clout_core::Meter;
use clout_core::{MemberCounts, PowerTable, RuleCounts};

use crate::ffi::{self, clout_rule, LoadedRule};
use crate::status::clout_result;

/// Most members `clout_power` handles.
pub const CLOUT_POWER_MAX_MEMBERS: usize = 64;

/// Exact counts for every member, by the planner's engine, within
/// `budget` steps and `memory` bytes.
#[cfg(feature = "alloc")]
pub(crate) fn count(
    rule: &LoadedRule,
    budget: u128,
    memory: u64,
) -> Result<(RuleCounts<u128>, Vec<MemberCounts<u128>>), clout_result> {
    let limits = Limits {
        budget,
        memory,
        count_bytes: core::mem::size_of::<u128>(),
    };
    let chosen = plan_within(rule, Scope::All, &limits)?;
    let meter = Meter::new(budget, memory);
    let need = engine::need(rule, chosen.engine)?;
    let mut counts = meter.vec(need.counts, 0u128)?;
    let mut indices = meter.vec(need.indices, 0u32)?;
    let mut members = meter.vec(rule.members(), MemberCounts::EMPTY)?;
    let work = Workspace {
        counts: &mut counts,
        indices: &mut indices,
    };
    let totals = engine::try_count_metered(rule, chosen.engine, Scope::All, &mut members, work, &meter)?;
    Ok((totals, members))
}

/// Without the heap there is no scratch to count in.
#[cfg(not(feature = "alloc"))]
fn count(
    _: &LoadedRule,
    _: u128,
    _: u64,
) -> Result<(RuleCounts<u128>, [MemberCounts<u128>; 0]), clout_result> {
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
        let (totals, members) = count(rule, DEFAULT_BUDGET, DEFAULT_MEMORY)?;
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
