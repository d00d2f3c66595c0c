//! How power moves as a quota moves: the conditions on one attribute (or
//! one chosen condition) get each quota of a range in turn, and every point
//! is one exact analysis, one step of the [`Watch`] (so a sweep can be
//! stopped between points). Shares become integer quotas exactly (see
//! [`crate::toolkit::sweep`]). Time: the engine's, once per point.

use clout_dsl::{AttributeKind, CompiledRule, RuleFile};

use super::{exact_power, rule_ref, toolkit_failure, MovedCondition, PointMember, Sweep, SweepPoint, Watch};
use crate::failure::Failure;
use crate::report::{CAUTION, MODEL};
use crate::toolkit::sweep::{quotas, with_quota, Level};

/// Most points of one sweep.
pub const MAX_POINTS: usize = 201;

/// Which conditions move, through which quotas.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SweepOptions {
    /// Move every condition on this attribute (default: the rule's only
    /// declared attribute with conditions, or its only attribute).
    pub attribute: Option<String>,
    /// Move only this condition, 1 for the first.
    pub condition: Option<usize>,
    /// Start of the range.
    pub from: Level,
    /// End of the range.
    pub to: Level,
    /// Step; repeated quotas are dropped.
    pub step: Level,
    /// Most elementary steps of each point's exact analysis.
    pub budget: u128,
}

impl Default for SweepOptions {
    /// 50% to 100% by 1%.
    fn default() -> Self {
        SweepOptions {
            attribute: None,
            condition: None,
            from: Level::Share(500_000_000),
            to: Level::Share(1_000_000_000),
            step: Level::Share(10_000_000),
            budget: super::BUDGET,
        }
    }
}

/// Every member's indices and the probability of passage at each quota.
pub fn sweep(
    file: &RuleFile,
    rule: &CompiledRule,
    options: &SweepOptions,
    watch: &mut impl Watch,
) -> Result<Sweep, Failure> {
    let (attribute, atoms) = moving(rule, options.attribute.as_deref(), options.condition)?;
    let total = rule.rule.total(attribute);
    let quotas = quotas(total, options.from, options.to, options.step, MAX_POINTS)
        .map_err(|e| toolkit_failure(&rule.name, e))?;
    let mut points = Vec::with_capacity(quotas.len());
    for quota in quotas {
        let r = with_quota(&rule.rule, &atoms, quota).map_err(|e| toolkit_failure(&rule.name, e))?;
        let power = exact_power(&r, &rule.name, options.budget, watch)?;
        points.push(SweepPoint {
            quota,
            share: quota as f64 / total as f64,
            passage_probability: power.passage_probability,
            members: file
                .members
                .iter()
                .zip(&power.members)
                .map(|(m, p)| PointMember {
                    name: m.name.clone(),
                    banzhaf: p.banzhaf,
                    shapley_shubik: p.shapley_shubik,
                })
                .collect(),
        });
    }
    Ok(Sweep {
        rule: rule_ref(file, rule),
        attribute: rule.attributes[attribute].name.clone(),
        total,
        conditions: atoms
            .iter()
            .map(|&k| MovedCondition {
                number: k + 1,
                text: rule.conditions[k].text.clone(),
            })
            .collect(),
        points,
        model: MODEL.to_string(),
        caution: CAUTION.to_string(),
    })
}

/// The attribute and the conditions (atom indices) that move.
fn moving(
    rule: &CompiledRule,
    attr: Option<&str>,
    condition: Option<usize>,
) -> Result<(usize, Vec<usize>), Failure> {
    let atoms = rule.rule.atoms();
    let listing = || {
        rule.conditions
            .iter()
            .zip(atoms)
            .enumerate()
            .map(|(k, (c, a))| {
                format!(
                    "{}: `{}` on {}",
                    k + 1,
                    c.text,
                    rule.attributes[usize::from(a.attribute)].name
                )
            })
            .collect::<Vec<_>>()
            .join("; ")
    };
    if let Some(k) = condition {
        let Some(atom) = k.checked_sub(1).and_then(|i| atoms.get(i)) else {
            return Err(
                Failure::input(format!("rule `{}` has no condition {k}", rule.name))
                    .with_hint(format!("its conditions are {}", listing())),
            );
        };
        let a = usize::from(atom.attribute);
        if let Some(name) = attr {
            if rule.attributes[a].name != name {
                return Err(Failure::input(format!(
                    "condition {k} of rule `{}` is on {}, not on {name}",
                    rule.name, rule.attributes[a].name
                )));
            }
        }
        return Ok((a, vec![k - 1]));
    }
    let mut used: Vec<usize> = atoms.iter().map(|a| usize::from(a.attribute)).collect();
    used.sort_unstable();
    used.dedup();
    let attribute = match attr {
        Some(name) => {
            let Some(a) = used.iter().copied().find(|&a| rule.attributes[a].name == name) else {
                let names: Vec<&str> = used.iter().map(|&a| rule.attributes[a].name.as_str()).collect();
                return Err(
                    Failure::input(format!("no condition of rule `{}` is on `{name}`", rule.name))
                        .with_hint(format!("its conditions are on {}", names.join(", "))),
                );
            };
            a
        }
        None => {
            let declared: Vec<usize> = used
                .iter()
                .copied()
                .filter(|&a| rule.attributes[a].kind == AttributeKind::Declared)
                .collect();
            match (declared.as_slice(), used.as_slice()) {
                ([a], _) | ([], [a]) => *a,
                _ => {
                    return Err(Failure::input(format!(
                        "rule `{}` has conditions on several attributes: say which moves",
                        rule.name
                    ))
                    .with_hint(format!(
                        "--attr NAME moves every condition on NAME, --condition N moves one; the \
                         conditions are {}",
                        listing()
                    )))
                }
            }
        }
    };
    let moved = atoms
        .iter()
        .enumerate()
        .filter(|(_, a)| usize::from(a.attribute) == attribute)
        .map(|(k, _)| k)
        .collect();
    Ok((attribute, moved))
}
