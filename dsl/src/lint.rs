//! Warnings that need exact counts: members that are dummies under a rule,
//! and rules that are not proper (two disjoint coalitions both pass).
//!
//! Each rule is analysed once by the cheapest engine; all rules of a file
//! share one step budget (one [`Meter`]), so a file of many rules costs no
//! more than the budget in all. A rule over what is left gets a note
//! instead of a verdict. For a rule that
//! is not proper and has at most [`WITNESS_MEMBERS`] members, the warning
//! names two disjoint passing coalitions, found by enumeration
//! (O(2^n * (n + nodes))) and shrunk to minimal ones.

use clout_core::planner::DEFAULT_MEMORY;
use clout_core::{Coalition, Error, Meter, Rule};

use crate::compile::{CompiledRule, RuleFile};
use crate::diagnostic::Diagnostic;
use crate::exact;

/// Most members for which an improper rule's warning names a witness.
pub const WITNESS_MEMBERS: usize = 20;

/// Warnings (and notes for rules too costly to check) for every rule,
/// within `budget` steps for the whole file.
pub fn lint(file: &RuleFile, budget: u128) -> Vec<Diagnostic> {
    lint_metered(file, &Meter::new(budget, DEFAULT_MEMORY))
}

/// [`lint`] charging `meter` for every rule in turn: the rules share its
/// budget, memory limit and cancellation flag.
pub fn lint_metered(file: &RuleFile, meter: &Meter<'_>) -> Vec<Diagnostic> {
    file.rules
        .iter()
        .flat_map(|r| lint_rule(file, r, meter))
        .collect()
}

/// A step count for a note: "more than 10^38" for a saturated estimate.
fn steps(n: u128) -> String {
    if n == u128::MAX {
        "more than 10^38".to_string()
    } else {
        format!("{:.1e}", n as f64)
    }
}

fn lint_rule(file: &RuleFile, r: &CompiledRule, meter: &Meter<'_>) -> Vec<Diagnostic> {
    let left = meter.budget().saturating_sub(u128::from(meter.spent()));
    let counted = exact::choose(&r.rule, left).and_then(|p| exact::power_metered(&r.rule, p.engine, meter));
    let power = match counted {
        Ok(p) => p,
        Err(e) => {
            let why = match e {
                Error::TooCostly { estimate, budget } if budget < meter.budget() => format!(
                    "the exact computation needs about {} steps, more than the {} left of the file's budget of {} steps",
                    steps(estimate),
                    steps(budget),
                    steps(meter.budget())
                ),
                Error::TooCostly { estimate, budget } => format!(
                    "the exact computation needs about {} steps, over the budget of {} steps",
                    steps(estimate),
                    steps(budget)
                ),
                Error::OverBudget { budget } => format!(
                    "the file's budget of {} steps ran out while it was counted",
                    steps(budget)
                ),
                other => other.to_string(),
            };
            return vec![Diagnostic::note(
                r.span,
                format!(
                    "rule `{}` was not checked for dummies or properness: {why}",
                    r.name
                ),
            )];
        }
    };
    let mut out = Vec::new();
    let dummies: Vec<usize> = (0..power.members.len())
        .filter(|&i| power.members[i].dummy)
        .collect();
    if !dummies.is_empty() {
        let names = list(&file.describe_members(&dummies));
        let (verb, whose) = if dummies.len() == 1 {
            ("is a dummy", "its")
        } else {
            ("are dummies", "their")
        };
        out.push(
            Diagnostic::warning(
                r.span,
                format!(
                    "under rule `{}`, {names} {verb}: {whose} vote never changes the outcome",
                    r.name
                ),
            )
            .with_hint("if a dummy should count, raise its weight or lower the quotas"),
        );
    }
    if !power.proper {
        let hint = match witness(&r.rule) {
            Some((a, b)) => format!(
                "for example {{{}}} and {{{}}} both pass; a motion and its opposite could both carry (raise the quotas above one half)",
                file.describe_members(&a).join(", "),
                file.describe_members(&b).join(", ")
            ),
            None => "a motion and its opposite could both carry; raise the quotas above one half".to_string(),
        };
        out.push(
            Diagnostic::warning(
                r.span,
                format!(
                    "rule `{}` is not proper: two disjoint coalitions can both pass",
                    r.name
                ),
            )
            .with_hint(hint),
        );
    }
    out
}

/// `a`, `a and b`, `a, b and c`, or the first five and a count of the rest.
fn list(names: &[String]) -> String {
    let quoted: Vec<String> = names.iter().map(|n| format!("`{n}`")).collect();
    match quoted.as_slice() {
        [] => String::new(),
        [one] => one.clone(),
        _ if quoted.len() > 6 => format!("{} and {} more", quoted[..5].join(", "), quoted.len() - 5),
        [init @ .., last] => format!("{} and {last}", init.join(", ")),
    }
}

/// Two disjoint minimal passing coalitions, for small rules.
fn witness<W: AsRef<[u64]>>(rule: &Rule<W>) -> Option<(Vec<usize>, Vec<usize>)> {
    let n = rule.members();
    if n > WITNESS_MEMBERS {
        return None;
    }
    let passes = |members: &[usize]| {
        Coalition::<1>::from_members(members)
            .and_then(|c| rule.passes(&c))
            .unwrap_or(false)
    };
    let all = (1u64 << n) - 1;
    for mask in 1..=all {
        let side: Vec<usize> = (0..n).filter(|i| mask & (1 << i) != 0).collect();
        let other: Vec<usize> = (0..n).filter(|i| mask & (1 << i) == 0).collect();
        if passes(&side) && passes(&other) {
            return Some((shrink(side, &passes), shrink(other, &passes)));
        }
    }
    None
}

/// Drops members while the coalition still passes.
fn shrink(mut members: Vec<usize>, passes: &impl Fn(&[usize]) -> bool) -> Vec<usize> {
    let mut k = 0;
    while k < members.len() {
        let removed = members.remove(k);
        if !passes(&members) {
            members.insert(k, removed);
            k += 1;
        }
    }
    members
}
