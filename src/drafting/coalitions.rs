//! The minimal winning or minimal blocking coalitions with their exact
//! number, as patterns over groups of interchangeable members ("any 218 of
//! rep1..rep435") and one by one, each list up to a limit, fewest members
//! first. One scan of the profile table, O(P m); O(n) per listed coalition
//! (see [`crate::toolkit::coalitions`]).
//!
//! Past the profile table's limit (about 22 members with distinct weights),
//! rules whose members' weights form a chain (each at least as heavy as the
//! next in every attribute, as in a double majority of head count and
//! population) are counted and listed on their decision diagram instead
//! (see [`clout_core::engine::diagram::minimal_coalitions`]), with at most
//! [`COALITION_NODES`] nodes: O(N) to count, O(n) per listed coalition.
//! The answer then has no patterns (`pattern_count` 0).

use clout_core::engine::diagram;
use clout_core::Count1024;
use clout_dsl::{CompiledRule, RuleFile};

use super::{
    core_failure, rule_ref, toolkit_failure, CoalitionKind, Coalitions, Members, Part, Pattern, Watch,
};
use crate::failure::Failure;
use crate::report::CAUTION;
use crate::toolkit::coalitions::{expand, list, Kind};
use crate::toolkit::profile::{interchangeable, ProfileTable};
use crate::toolkit::{Error, PROFILE_LIMIT};

/// Most nodes of the decision diagram [`coalitions`] builds past the
/// profile table's limit.
pub const COALITION_NODES: usize = 20_000_000;

/// What to list.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct CoalitionOptions {
    /// Minimal winning or minimal blocking.
    pub kind: CoalitionKind,
    /// Most patterns and most coalitions listed.
    pub limit: usize,
}

impl Default for CoalitionOptions {
    /// The first 50 minimal winning coalitions.
    fn default() -> Self {
        CoalitionOptions {
            kind: CoalitionKind::MinimalWinning,
            limit: 50,
        }
    }
}

/// The minimal winning or minimal blocking coalitions of `rule`.
pub fn coalitions(
    file: &RuleFile,
    rule: &CompiledRule,
    options: &CoalitionOptions,
    watch: &mut impl Watch,
) -> Result<Coalitions, Failure> {
    let fail = |e| toolkit_failure(&rule.name, e);
    let kind = match options.kind {
        CoalitionKind::MinimalWinning => Kind::MinimalWinning,
        CoalitionKind::MinimalBlocking => Kind::MinimalBlocking,
    };
    let tabulated = watch.step(&format!("listing coalitions of rule `{}`", rule.name), || {
        let table = ProfileTable::of_rule(&rule.rule, interchangeable(&rule.rule), PROFILE_LIMIT)?;
        let listing = list(&table, kind)?;
        Ok((table, listing))
    })?;
    let (table, listing) = match tabulated {
        Ok(t) => t,
        Err(e @ Error::TooLarge { .. }) => return on_diagram(file, rule, options, e, watch),
        Err(e) => return Err(fail(e)),
    };
    let mut patterns = Vec::new();
    for p in listing.patterns.iter().take(options.limit) {
        let parts = p
            .iter()
            .enumerate()
            .filter(|&(_, &take)| take > 0)
            .map(|(t, &take)| Part {
                take,
                of: Members::of(file, table.types()[t].clone()),
            })
            .collect();
        patterns.push(Pattern {
            size: table.head_count(p),
            count: table.coalitions_with(p).map_err(fail)?,
            parts,
        });
    }
    let mut coalitions = Vec::new();
    for p in &listing.patterns {
        if coalitions.len() == options.limit {
            break;
        }
        let more = expand(&table, p, options.limit - coalitions.len());
        coalitions.extend(more.into_iter().map(|c| Members::of(file, c)));
    }
    Ok(Coalitions {
        rule: rule_ref(file, rule),
        kind: options.kind,
        count: listing.total,
        pattern_count: listing.patterns.len(),
        patterns,
        coalitions,
        caution: CAUTION.to_string(),
    })
}

/// The coalitions counted and listed on the rule's decision diagram, or
/// the table's refusal `too_large` when the diagram method does not apply.
fn on_diagram(
    file: &RuleFile,
    rule: &CompiledRule,
    options: &CoalitionOptions,
    too_large: Error,
    watch: &mut impl Watch,
) -> Result<Coalitions, Failure> {
    let blocking = options.kind == CoalitionKind::MinimalBlocking;
    let found = watch
        .step(
            &format!(
                "counting coalitions of rule `{}` on its decision diagram",
                rule.name
            ),
            || {
                diagram::minimal_coalitions::<_, Count1024>(
                    &rule.rule,
                    blocking,
                    options.limit,
                    COALITION_NODES,
                )
            },
        )?
        .map_err(|e| core_failure(&rule.name, e))?;
    let Some(found) = found else {
        return Err(toolkit_failure(&rule.name, too_large));
    };
    Ok(Coalitions {
        rule: rule_ref(file, rule),
        kind: options.kind,
        count: found.count.to_string(),
        pattern_count: 0,
        patterns: Vec::new(),
        coalitions: found.listed.into_iter().map(|c| Members::of(file, c)).collect(),
        caution: CAUTION.to_string(),
    })
}
