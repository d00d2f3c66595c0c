//! The members ordered by influence under Isbell's desirability relation:
//! classes of symmetric members, which class is more desirable than which,
//! and for each incomparable pair two coalitions that show it. O(m^2 P) for
//! m groups of interchangeable members and P patterns (see
//! [`crate::toolkit::desirability`]).

use clout_dsl::{CompiledRule, RuleFile};

use super::{rule_ref, toolkit_failure, Class, Incomparable, Members, Order, Watch, Witness};
use crate::failure::Failure;
use crate::report::CAUTION;
use crate::toolkit::desirability;
use crate::toolkit::profile::{interchangeable, ProfileTable};
use crate::toolkit::PROFILE_LIMIT;

/// The desirability order of the members of `rule`.
pub fn order(file: &RuleFile, rule: &CompiledRule, watch: &mut impl Watch) -> Result<Order, Failure> {
    let order = watch
        .step(&format!("ordering the members of rule `{}`", rule.name), || {
            ProfileTable::of_rule(&rule.rule, interchangeable(&rule.rule), PROFILE_LIMIT)
                .map(|table| desirability::order(&table))
        })?
        .map_err(|e| toolkit_failure(&rule.name, e))?;
    let k = order.classes.len();
    let name = |i: usize| file.members.get(i).map_or_else(String::new, |m| m.name.clone());
    let witness = |w: &desirability::Witness| Witness {
        coalition: Members::of(file, w.coalition.clone()),
        passes_with: name(w.joins_and_wins),
        fails_with: name(w.joins_and_loses),
    };
    Ok(Order {
        rule: rule_ref(file, rule),
        complete: order.complete(),
        classes: order
            .classes
            .iter()
            .enumerate()
            .map(|(a, class)| Class {
                members: Members::of(file, class.clone()),
                above: (0..k).filter(|&b| order.strictly_above(a, b)).collect(),
            })
            .collect(),
        incomparable: order
            .incomparable
            .iter()
            .map(|(a, b, w1, w2)| Incomparable {
                classes: [*a, *b],
                witnesses: [witness(w1), witness(w2)],
            })
            .collect(),
        caution: CAUTION.to_string(),
    })
}
