//! Allocating convenience layer (`alloc` feature): plan, allocate scratch,
//! count, and keep the results together.
//!
//! Time and memory are the chosen engine's, within [`Options::budget`]
//! steps and [`Options::memory`] bytes as estimated before anything is
//! allocated, and charged to a [`Meter`] while the engine runs; this layer
//! adds O(n) for the result vector. Counts are exact
//! in the caller's [`Counter`] (overflow is [`Error::CountOverflow`]).

use alloc::vec::Vec;

use crate::analysis::planner::{plan_within, Limits, Plan, DEFAULT_BUDGET, DEFAULT_MEMORY};
use crate::analysis::power::PowerTable;
use crate::engine::{self, Engine, MemberCounts, RuleCounts, Scope};
use crate::model::count::Counter;
use crate::model::error::Error;
use crate::model::meter::Meter;
use crate::model::rule::Rule;

/// Exact counts for a rule and its members, with the plan that made them.
#[derive(Clone, Debug)]
pub struct Analysis<C> {
    /// Rule-level counts and properties.
    pub rule: RuleCounts<C>,
    /// One entry per member, in member order.
    pub members: Vec<MemberCounts<C>>,
    /// The planner's decision (for a forced engine, its cost estimate).
    pub plan: Plan,
}

impl<C: Counter> Analysis<C> {
    /// The indices view.
    pub fn table(&self) -> PowerTable<'_, C> {
        PowerTable::new(&self.rule, &self.members)
    }
}

/// What to compute and within which limits.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Options {
    /// Force this engine instead of planning (still within `budget` and `memory`).
    pub engine: Option<Engine>,
    /// Every index, or swing counts only.
    pub scope: Scope,
    /// Most estimated steps the planner may choose.
    pub budget: u128,
    /// Most bytes an engine may use (default [`DEFAULT_MEMORY`], 2 GiB).
    pub memory: u64,
}

impl Default for Options {
    fn default() -> Self {
        Options {
            engine: None,
            scope: Scope::All,
            budget: DEFAULT_BUDGET,
            memory: DEFAULT_MEMORY,
        }
    }
}

/// Plans within the default budget and counts with the chosen engine.
pub fn analyze<W: AsRef<[u64]>, C: Counter>(rule: &Rule<W>) -> Result<Analysis<C>, Error> {
    analyze_opts(rule, &Options::default())
}

/// Counts with a forced engine.
pub fn analyze_with<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    engine: Engine,
) -> Result<Analysis<C>, Error> {
    analyze_opts(
        rule,
        &Options {
            engine: Some(engine),
            budget: u128::MAX,
            ..Options::default()
        },
    )
}

/// Plans (or takes the forced engine) and counts, as `options` say, with
/// a [`Meter`] of `options.budget` steps and `options.memory` bytes.
pub fn analyze_opts<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    options: &Options,
) -> Result<Analysis<C>, Error> {
    analyze_metered(rule, options, &Meter::new(options.budget, options.memory))
}

/// [`analyze_opts`] charging `meter` while the engine runs (the caller's
/// budget, memory limit, cancellation flag and progress). The plan is
/// checked against `options` first; the meter then stops the run at the
/// first charge past its own limits, so an estimate that was too low cannot
/// take more than the meter allows.
pub fn analyze_metered<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    options: &Options,
    meter: &Meter<'_>,
) -> Result<Analysis<C>, Error> {
    let limits = Limits {
        budget: options.budget,
        memory: options.memory,
        count_bytes: core::mem::size_of::<C>(),
    };
    let plan = match options.engine {
        None => plan_within(rule, options.scope, &limits)?,
        Some(engine) => {
            let unlimited = Limits {
                budget: u128::MAX,
                memory: u64::MAX,
                ..limits
            };
            let mut p = plan_within(rule, options.scope, &unlimited).unwrap_or(Plan {
                engine,
                cost: 0,
                costs: Engine::ALL.map(|e| (e, None)),
                memory: Engine::ALL.map(|e| (e, None)),
            });
            p.engine = engine;
            p.cost = engine::cost_for(rule, engine, options.scope)?;
            // A forced engine keeps to the budget too ([`analyze_with`] lifts it).
            if p.cost > options.budget {
                return Err(Error::TooCostly {
                    estimate: p.cost,
                    budget: options.budget,
                });
            }
            let needed = engine::memory_for(rule, engine, options.scope, limits.count_bytes)?;
            if needed > options.memory && !engine.checks_own_memory() {
                // Such an engine's estimate is an upper bound; it checks its real size itself.
                return Err(Error::MemoryLimit {
                    needed,
                    limit: options.memory,
                });
            }
            p
        }
    };
    meter.expect(plan.cost);
    let (totals, members) = engine::count_allocating(rule, plan.engine, options.scope, meter)?;
    Ok(Analysis {
        rule: totals,
        members,
        plan,
    })
}
