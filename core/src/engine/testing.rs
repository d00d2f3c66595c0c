//! Test support: runs an engine with scratch allocated here, so the engines'
//! own tests compare against enumeration without the allocating layer in
//! `analysis` (which would make the engines' tests import a later stage).

use std::vec;
use std::vec::Vec;

use crate::engine::{need_for, try_count_for, Engine, MemberCounts, RuleCounts, Scope, Workspace};
use crate::model::count::Counter;
use crate::model::error::Error;
use crate::model::rule::Rule;

/// Exact counts of `rule` by `engine` for `scope`.
pub(crate) fn count<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    engine: Engine,
    scope: Scope,
) -> Result<(RuleCounts<C>, Vec<MemberCounts<C>>), Error> {
    let need = need_for(rule, engine, scope)?;
    let mut counts = vec![C::ZERO; need.counts];
    let mut indices = vec![0u32; need.indices];
    let mut members = vec![MemberCounts::EMPTY; rule.members()];
    let work = Workspace {
        counts: &mut counts,
        indices: &mut indices,
    };
    let totals = try_count_for(rule, engine, scope, &mut members, work)?;
    Ok((totals, members))
}
