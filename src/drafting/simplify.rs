//! Is the rule secretly simpler than it looks? Its dummies, whether it is
//! one weighted vote (and with which integer weights of least total), or
//! why not (a trading transfer) and an intersection of weighted votes that
//! gives it.
//!
//! Every answer is checked exactly before it is returned: the weighted vote
//! against the rule on every pattern and by the exact engines; the trading
//! transfer coalition by coalition against the rule; the intersection on
//! every pattern (inside [`weighted::test`]). A failed check is a
//! [`Failure`], never an answer. Time: see [`crate::toolkit::weighted`].

use clout_dsl::{CompiledRule, RuleFile};

use super::{
    exact_power, internal, rule_ref, toolkit_failure, Checked, LeastTotal, Members, Search, Simplification,
    TradingTransfer, Watch, WeightedVote,
};
use crate::failure::{Failure, FailureKind};
use crate::report::CAUTION;
use crate::toolkit::profile;
use crate::toolkit::weighted::{self, Level, Minimality, Representation, Verdict};
use crate::toolkit::Error;

/// Limits of [`simplify`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct SimplifyOptions {
    /// Most elementary steps of each exact cross-check by the engines.
    pub budget: u128,
}

impl Default for SimplifyOptions {
    fn default() -> Self {
        SimplifyOptions {
            budget: super::BUDGET,
        }
    }
}

/// The dummies of `rule` and whether it is weighted, checked exactly.
pub fn simplify(
    file: &RuleFile,
    rule: &CompiledRule,
    options: &SimplifyOptions,
    watch: &mut impl Watch,
) -> Result<Simplification, Failure> {
    let name = &rule.name;
    let n = rule.rule.members();
    let table = watch.step(&format!("tabulating rule `{name}`"), || {
        weighted::table_for(&rule.rule)
    })?;
    let (table, level) = match table {
        Ok(t) => t,
        Err(e @ Error::TooLarge { .. }) => return too_large(file, rule, e, options, watch),
        Err(e) => return Err(toolkit_failure(name, e)),
    };
    let vote = |representation: Representation| WeightedVote {
        members: file.members.iter().map(|m| m.name.clone()).collect(),
        representation,
    };
    let mut answer = Simplification {
        rule: rule_ref(file, rule),
        dummies: Members::of(file, weighted::dummies(&table)),
        weighted: false,
        weighted_vote: None,
        least_total: None,
        trading_transfer: None,
        intersection: None,
        checked: Some(Checked {
            patterns: table.len() as u128,
            // With one member per type, patterns are coalitions.
            patterns_are_coalitions: level == Level::Members || table.types().iter().all(|t| t.len() == 1),
            winning_coalitions: None,
            minimal_winning_coalitions: None,
        }),
        too_large: None,
        search: None,
        caution: CAUTION.to_string(),
    };
    let w = watch
        .step(&format!("testing whether rule `{name}` is weighted"), || {
            weighted::test(&table)
        })?
        .map_err(|e| toolkit_failure(name, e))?;
    answer.search = Some(Search {
        minimal_winning: w.minimal_winning,
        maximal_losing: w.maximal_losing,
        rounds: w.rounds,
    });
    match w.verdict {
        Verdict::Weighted {
            representation,
            minimal,
        } => {
            let new = representation.rule().map_err(|e| toolkit_failure(name, e))?;
            if !weighted::same_on_table(&table, &new) {
                return Err(internal(name, "the weighted vote differs from the rule"));
            }
            let counts = cross_check(rule, &new, options.budget, watch)?;
            if let (Some(c), Some((winning, minimal_winning))) = (answer.checked.as_mut(), counts) {
                c.winning_coalitions = Some(winning);
                c.minimal_winning_coalitions = minimal_winning;
            }
            answer.weighted = true;
            answer.weighted_vote = Some(vote(representation));
            answer.least_total = Some(match minimal {
                Minimality::Proved => LeastTotal::Proved,
                Minimality::ProvedAmongEqual => LeastTotal::AmongEqualWeights,
                Minimality::NotProved => LeastTotal::NotProved,
            });
        }
        Verdict::NotWeighted {
            transfer,
            intersection,
        } => {
            if !transfer.holds(n, |c| profile::passes(&rule.rule, c)) {
                return Err(internal(name, "the trading transfer does not hold"));
            }
            let coalitions = |cs: Vec<Vec<usize>>| -> Vec<Members> {
                cs.into_iter().map(|c| Members::of(file, c)).collect()
            };
            answer.trading_transfer = Some(TradingTransfer {
                winning: coalitions(transfer.winning),
                losing: coalitions(transfer.losing),
            });
            answer.intersection = Some(intersection.into_iter().map(vote).collect());
        }
    }
    Ok(answer)
}

/// The exact engines on the rule and its weighted vote: the same winning
/// and minimal winning counts and the same swings for every member. The
/// counts (winning, minimal winning), or `None` when over the budget.
fn cross_check(
    rule: &CompiledRule,
    new: &clout_core::Rule<Vec<u64>>,
    budget: u128,
    watch: &mut impl Watch,
) -> Result<Option<(String, Option<String>)>, Failure> {
    let results = [
        exact_power(&rule.rule, &rule.name, budget, watch),
        exact_power(new, "weighted vote", budget, watch),
    ];
    if let Some(Err(stop)) = results
        .iter()
        .find(|r| r.as_ref().is_err_and(|f| f.kind == FailureKind::Interrupted))
    {
        return Err(stop.clone());
    }
    let [Ok(a), Ok(b)] = results else {
        // Over the budget: the cross-check is skipped, and the answer says so.
        return Ok(None);
    };
    let same_swings = a
        .members
        .iter()
        .zip(&b.members)
        .all(|(x, y)| x.swings == y.swings);
    if a.winning != b.winning
        || !same_swings
        || (a.minimal_winning.is_some()
            && b.minimal_winning.is_some()
            && a.minimal_winning != b.minimal_winning)
    {
        return Err(internal(
            &rule.name,
            "the exact engines disagree with the weighted vote",
        ));
    }
    Ok(Some((a.winning, a.minimal_winning)))
}

/// Too many distinct members for the exact test: a single weighted
/// condition is still weighted as written, and its dummies are exact.
fn too_large(
    file: &RuleFile,
    rule: &CompiledRule,
    err: Error,
    options: &SimplifyOptions,
    watch: &mut impl Watch,
) -> Result<Simplification, Failure> {
    let Some((attribute, quota)) = rule.rule.single_threshold() else {
        return Err(toolkit_failure(&rule.name, err));
    };
    let power = exact_power(&rule.rule, &rule.name, options.budget, watch)?;
    let dummies = (0..rule.rule.members())
        .filter(|&i| power.members[i].dummy)
        .collect();
    let representation = Representation {
        quota,
        weights: rule.rule.attribute_weights(attribute).to_vec(),
    };
    Ok(Simplification {
        rule: rule_ref(file, rule),
        dummies: Members::of(file, dummies),
        weighted: true,
        weighted_vote: Some(WeightedVote {
            members: file.members.iter().map(|m| m.name.clone()).collect(),
            representation,
        }),
        least_total: Some(LeastTotal::NotSearched),
        trading_transfer: None,
        intersection: None,
        checked: None,
        too_large: Some(toolkit_failure(&rule.name, err).to_string()),
        search: None,
        caution: CAUTION.to_string(),
    })
}
