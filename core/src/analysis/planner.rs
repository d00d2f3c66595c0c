//! Choosing an engine from cost and memory estimates.
//!
//! The planner goes through the registry of engines ([`Engine::ALL`], in
//! order of preference) and asks each for its estimated elementary steps
//! ([`crate::engine::cost_for`]) and bytes ([`crate::engine::memory_for`]);
//! an engine that cannot handle the rule answers neither. It picks the
//! cheapest engine whose memory fits and says why. Callers may force an
//! engine instead.
//!
//! Time: one estimate per engine, each at most O(n log n * attributes)
//! (grouping member types) or O(n * atoms) (the diagram's node bound); no
//! heap beyond what an estimate allocates with `alloc`. Estimates saturate
//! instead of overflowing, so an enormous rule is "too costly", never wrong.

use crate::engine::{cost_for, memory_for, Engine, Scope};
use crate::model::error::Error;
use crate::model::rule::Rule;

/// The planner's choice and its reasons.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Plan {
    /// The chosen engine.
    pub engine: Engine,
    /// Its estimated cost in elementary steps.
    pub cost: u128,
    /// Estimated cost of every engine, `None` where it cannot handle the rule.
    pub costs: [(Engine, Option<u128>); Engine::ALL.len()],
    /// Estimated bytes of every engine, `None` where it cannot handle the rule.
    pub memory: [(Engine, Option<u64>); Engine::ALL.len()],
}

impl Plan {
    /// The estimated cost of `engine`, if it can handle the rule.
    pub fn cost_of(&self, engine: Engine) -> Option<u128> {
        self.costs
            .iter()
            .find(|(e, _)| *e == engine)
            .and_then(|(_, c)| *c)
    }

    /// The estimated memory of `engine`, if it can handle the rule.
    pub fn memory_of(&self, engine: Engine) -> Option<u64> {
        self.memory
            .iter()
            .find(|(e, _)| *e == engine)
            .and_then(|(_, c)| *c)
    }
}

/// What the planner may spend.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Limits {
    /// Most estimated elementary steps.
    pub budget: u128,
    /// Most bytes an engine may use.
    pub memory: u64,
    /// Bytes of one count (the size of the caller's count type).
    pub count_bytes: usize,
}

/// Picks the cheapest engine that can handle `rule`.
///
/// Fails with [`Error::TooCostly`] when even the cheapest estimate exceeds
/// `budget` steps, and with [`Error::EngineUnsuitable`] when no engine
/// applies.
pub fn plan<W: AsRef<[u64]>>(rule: &Rule<W>, budget: u128) -> Result<Plan, Error> {
    plan_for(rule, Scope::All, budget)
}

/// [`plan`] for a chosen [`Scope`], with no memory limit.
pub fn plan_for<W: AsRef<[u64]>>(rule: &Rule<W>, scope: Scope, budget: u128) -> Result<Plan, Error> {
    plan_within(
        rule,
        scope,
        &Limits {
            budget,
            memory: u64::MAX,
            count_bytes: 16,
        },
    )
}

/// Picks the cheapest engine whose estimated memory fits `limits.memory`.
///
/// Fails with [`Error::MemoryLimit`] when no engine that can handle the rule
/// fits, and with [`Error::TooCostly`] when the cheapest one that fits
/// exceeds the step budget.
pub fn plan_within<W: AsRef<[u64]>>(rule: &Rule<W>, scope: Scope, limits: &Limits) -> Result<Plan, Error> {
    let mut costs = Engine::ALL.map(|e| (e, None));
    let mut memory = Engine::ALL.map(|e| (e, None));
    let mut best: Option<(Engine, u128)> = None;
    let mut smallest_over: Option<u64> = None;
    for (slot, mem) in costs.iter_mut().zip(memory.iter_mut()) {
        let engine = slot.0;
        let c = cost_for(rule, engine, scope).ok();
        let m = memory_for(rule, engine, scope, limits.count_bytes).ok();
        slot.1 = c;
        mem.1 = m;
        let (Some(c), Some(m)) = (c, m) else { continue };
        if m > limits.memory {
            smallest_over = Some(smallest_over.map_or(m, |s| s.min(m)));
            continue;
        }
        if best.is_none_or(|(_, b)| c < b) {
            best = Some((engine, c));
        }
    }
    let Some((engine, cost)) = best else {
        return Err(match smallest_over {
            Some(needed) => Error::MemoryLimit {
                needed,
                limit: limits.memory,
            },
            None => Error::EngineUnsuitable {
                engine: Engine::Enumerate,
            },
        });
    };
    if cost > limits.budget {
        return Err(Error::TooCostly {
            estimate: cost,
            budget: limits.budget,
        });
    }
    Ok(Plan {
        engine,
        cost,
        costs,
        memory,
    })
}

/// Default memory limit: 2 GiB.
pub const DEFAULT_MEMORY: u64 = 2 << 30;

/// Default work budget: about a minute of single-core work.
pub const DEFAULT_BUDGET: u128 = 50_000_000_000;
