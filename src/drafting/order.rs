//! The members ordered by influence under Isbell's desirability relation:
//! classes of symmetric members, which class is more desirable than which,
//! and for each incomparable pair two coalitions that show it. O(m^2 P) for
//! m groups of interchangeable members and P patterns (see
//! [`crate::toolkit::desirability`]).
//!
//! Past the profile table's limit, a rule whose members' weights form a
//! chain (each at least as heavy as the next in every attribute) has a
//! complete order that the weights show; its classes are found by testing
//! each two neighbours for symmetry on the difference diagram of the rule
//! and the rule with the two exchanged (n - 1 diagrams of at most
//! [`ORDER_NODES`] nodes each; see
//! [`clout_core::engine::diagram::symmetric`]).

use clout_core::engine::diagram;
use clout_dsl::{CompiledRule, RuleFile};

use super::{core_failure, rule_ref, toolkit_failure, Class, Incomparable, Members, Order, Watch, Witness};
use crate::failure::Failure;
use crate::report::CAUTION;
use crate::toolkit::desirability;
use crate::toolkit::profile::{interchangeable, ProfileTable};
use crate::toolkit::{Error, PROFILE_LIMIT};

/// Most nodes of each difference diagram of the order past the profile
/// table's limit.
pub const ORDER_NODES: usize = 20_000_000;

/// The desirability order of the members of `rule`.
pub fn order(file: &RuleFile, rule: &CompiledRule, watch: &mut impl Watch) -> Result<Order, Failure> {
    let order = watch.step(&format!("ordering the members of rule `{}`", rule.name), || {
        ProfileTable::of_rule(&rule.rule, interchangeable(&rule.rule), PROFILE_LIMIT)
            .map(|table| desirability::order(&table))
    })?;
    let order = match order {
        Ok(o) => o,
        Err(e @ Error::TooLarge { .. }) => return on_diagram(file, rule, e, watch),
        Err(e) => return Err(toolkit_failure(&rule.name, e)),
    };
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

/// The complete order of a rule whose weights form a chain, its classes
/// from neighbour symmetry on the decision diagram; the table's refusal
/// `too_large` when the weights do not form a chain.
fn on_diagram(
    file: &RuleFile,
    rule: &CompiledRule,
    too_large: Error,
    watch: &mut impl Watch,
) -> Result<Order, Failure> {
    let Some(chain) = diagram::desirability_chain(&rule.rule) else {
        return Err(toolkit_failure(&rule.name, too_large));
    };
    let mut classes: Vec<Vec<usize>> = Vec::new();
    for (k, &member) in chain.iter().enumerate() {
        let joins = match k.checked_sub(1).and_then(|p| chain.get(p)) {
            Some(&previous) => watch
                .step(
                    &format!("testing members {} and {} for symmetry", k, k + 1),
                    || diagram::symmetric(&rule.rule, previous, member, ORDER_NODES),
                )?
                .map_err(|e| core_failure(&rule.name, e))?,
            None => false,
        };
        match classes.last_mut() {
            Some(last) if joins => last.push(member),
            _ => classes.push(vec![member]),
        }
    }
    let k = classes.len();
    Ok(Order {
        rule: rule_ref(file, rule),
        complete: true,
        classes: classes
            .into_iter()
            .enumerate()
            .map(|(a, members)| Class {
                members: Members::of(file, members),
                above: (a + 1..k).collect(),
            })
            .collect(),
        incomparable: Vec::new(),
        caution: CAUTION.to_string(),
    })
}
