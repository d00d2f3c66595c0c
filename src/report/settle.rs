//! The two-state game the figures count: conditions that every two-state
//! ballot meets, or none meets, are settled before planning.
//!
//! On a two-state ballot every member is present and votes yes or no, so a
//! participation quorum (`tokens present >= 20%`) always holds and a
//! condition whose quota is above its attribute's total never does. Left
//! in, such a condition changes no outcome but can cost an engine dearly
//! (a quota of 0 widens the dense engine's table to the whole total). The
//! settled rule decides every two-state ballot as the original does (core
//! proptest `two_state_keeps_every_two_state_outcome`); figures under the
//! voting model (`--turnout`, `--chances`) and the four-state figures keep
//! the original rule, where those conditions do matter. O(n * attributes)
//! for the copy of the weight table.

use std::borrow::Cow;

use clout_dsl::CompiledRule;
use serde::Serialize;

use super::core_failure;
use crate::failure::Failure;

/// A condition settled before counting.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct SettledCondition {
    /// As written.
    pub text: String,
    /// Whether every two-state ballot meets it (false: none does).
    pub always: bool,
    /// Why, in a drafter's words.
    pub why: String,
}

/// The rule the two-state figures count, and what was settled on the way.
pub struct TwoStateGame<'a> {
    /// The original rule when nothing was settled, else the reduced one.
    pub rule: Cow<'a, CompiledRule>,
    /// The settled conditions, in the order written.
    pub settled: Vec<SettledCondition>,
}

/// Settles the constant conditions of `rule` (see the module docs).
pub fn two_state_game(rule: &CompiledRule) -> Result<TwoStateGame<'_>, Failure> {
    let r = &rule.rule;
    let two = r.two_state().map_err(|e| core_failure(&rule.name, e))?;
    let settled: Vec<SettledCondition> = two
        .settled
        .iter()
        .map(|&(i, always)| {
            let atom = r.atoms()[i];
            let a = usize::from(atom.attribute);
            let name = &rule.attributes[a].name;
            let why = if always && r.linear(i).is_some() {
                format!(
                    "met by every two-state ballot: with every member present and voting yes or no, its quota on {name} is 0"
                )
            } else if always {
                format!("met by every ballot: its quota on {name} is 0")
            } else {
                format!(
                    "met by no two-state ballot: its quota on {name} is above the total of {}",
                    r.total(a)
                )
            };
            SettledCondition {
                text: rule.conditions[i].text.clone(),
                always,
                why,
            }
        })
        .collect();
    if settled.is_empty() {
        return Ok(TwoStateGame {
            rule: Cow::Borrowed(rule),
            settled,
        });
    }
    let mut reduced = rule.clone();
    match (two.rule, two.constant) {
        (Some(kept_rule), _) => {
            reduced.conditions = two.kept.iter().map(|&i| rule.conditions[i].clone()).collect();
            reduced.exact = two.kept.iter().map(|&i| rule.exact[i]).collect();
            reduced.rule = kept_rule;
        }
        (None, constant) => {
            // Every two-state ballot has one outcome: the game of zero weights
            // with quota 0 (always) or 1 (never) is the same game.
            let quota = u64::from(constant != Some(true));
            let n = r.members();
            reduced.rule =
                clout_core::Rule::weighted(quota, vec![0; n]).map_err(|e| core_failure(&rule.name, e))?;
            reduced.attributes = vec![rule.attributes[0].clone()];
            reduced.conditions = vec![rule.conditions[0].clone()];
            reduced.exact = vec![None];
        }
    }
    Ok(TwoStateGame {
        rule: Cow::Owned(reduced),
        settled,
    })
}
