//! Choosing an engine from a cost estimate.
//!
//! Each engine reports an estimated number of elementary steps for a rule
//! (see [`crate::engine::cost`]); the planner picks the cheapest engine that
//! can handle the rule and says why. Callers may force an engine instead.

use crate::engine::{cost_for, Engine, Scope};
use crate::{Error, Rule};

/// The planner's choice and its reasons.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Plan {
    /// The chosen engine.
    pub engine: Engine,
    /// Its estimated cost in elementary steps.
    pub cost: u128,
    /// Estimated cost of every engine, `None` where it cannot handle the rule.
    pub costs: [(Engine, Option<u128>); 4],
}

/// Picks the cheapest engine that can handle `rule`.
///
/// Fails with [`Error::TooCostly`] when even the cheapest estimate exceeds
/// `budget` steps, and with [`Error::EngineUnsuitable`] when no engine
/// applies.
pub fn plan<W: AsRef<[u64]>>(rule: &Rule<W>, budget: u128) -> Result<Plan, Error> {
    plan_for(rule, Scope::All, budget)
}

/// [`plan`] for a chosen [`Scope`].
pub fn plan_for<W: AsRef<[u64]>>(rule: &Rule<W>, scope: Scope, budget: u128) -> Result<Plan, Error> {
    let mut costs = Engine::ALL.map(|e| (e, None));
    let mut best: Option<(Engine, u128)> = None;
    for slot in costs.iter_mut() {
        let engine = slot.0;
        let c = cost_for(rule, engine, scope).ok();
        slot.1 = c;
        if let Some(c) = c {
            if best.is_none_or(|(_, b)| c < b) {
                best = Some((engine, c));
            }
        }
    }
    let (engine, cost) = best.ok_or(Error::EngineUnsuitable {
        engine: Engine::Enumerate,
    })?;
    if cost > budget {
        return Err(Error::TooCostly {
            estimate: cost,
            budget,
        });
    }
    Ok(Plan { engine, cost, costs })
}

/// Default work budget: about a minute of single-core work.
pub const DEFAULT_BUDGET: u128 = 50_000_000_000;
