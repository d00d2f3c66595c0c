//! Allocating convenience layer (`alloc` feature): plan, allocate scratch,
//! count, and keep the results together.

use alloc::vec;
use alloc::vec::Vec;

use crate::count::Counter;
use crate::engine::{self, Engine, Workspace};
use crate::planner::{plan, Plan, DEFAULT_BUDGET};
use crate::power::{MemberCounts, PowerTable, RuleCounts};
use crate::{Error, Rule};

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

/// Plans within the default budget and counts with the chosen engine.
pub fn analyze<W: AsRef<[u64]>, C: Counter>(rule: &Rule<W>) -> Result<Analysis<C>, Error> {
    let p = plan(rule, DEFAULT_BUDGET)?;
    run(rule, p)
}

/// Counts with a forced engine.
pub fn analyze_with<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    engine: Engine,
) -> Result<Analysis<C>, Error> {
    let mut p = plan(rule, u128::MAX).unwrap_or(Plan {
        engine,
        cost: 0,
        costs: Engine::ALL.map(|e| (e, None)),
    });
    p.engine = engine;
    p.cost = engine::cost(rule, engine)?;
    run(rule, p)
}

fn run<W: AsRef<[u64]>, C: Counter>(rule: &Rule<W>, plan: Plan) -> Result<Analysis<C>, Error> {
    let need = engine::need(rule, plan.engine)?;
    let mut counts = vec![C::ZERO; need.counts];
    let mut indices = vec![0u32; need.indices];
    let mut members = vec![MemberCounts::EMPTY; rule.members()];
    let work = Workspace {
        counts: &mut counts,
        indices: &mut indices,
    };
    let totals = engine::try_count(rule, plan.engine, &mut members, work)?;
    Ok(Analysis {
        rule: totals,
        members,
        plan,
    })
}
