//! The minimal winning or minimal blocking coalitions with their exact
//! number, as patterns over groups of interchangeable members ("any 218 of
//! rep1..rep435") and one by one, each list up to a limit, fewest members
//! first. One scan of the profile table, O(P m); O(n) per listed coalition
//! (see [`crate::toolkit::coalitions`]).

use clout_dsl::{CompiledRule, RuleFile};

use super::{rule_ref, toolkit_failure, CoalitionKind, Coalitions, Members, Part, Pattern, Watch};
use crate::failure::Failure;
use crate::report::CAUTION;
use crate::toolkit::coalitions::{expand, list, Kind};
use crate::toolkit::profile::{interchangeable, ProfileTable};
use crate::toolkit::PROFILE_LIMIT;

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
    let (table, listing) = watch
        .step(&format!("listing coalitions of rule `{}`", rule.name), || {
            let table = ProfileTable::of_rule(&rule.rule, interchangeable(&rule.rule), PROFILE_LIMIT)?;
            let listing = list(&table, kind)?;
            Ok((table, listing))
        })?
        .map_err(fail)?;
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
