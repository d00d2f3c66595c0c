//! What the drafting commands (`simplify`, `order`, `compare`, `sweep`,
//! `fit`, `coalitions`) share: headings, member names, groups of
//! interchangeable members, exact analyses and error messages.

use clout::toolkit::{self, PROFILE_LIMIT};
use clout_dsl::exact::{self, Power};
use clout_dsl::{CompiledRule, RuleFile};

use crate::input::Input;
use crate::progress::with_progress;
use crate::text;
use crate::Failure;

/// Default work budget of one exact analysis (about a minute).
pub const BUDGET: u128 = 50_000_000_000;

/// `KIND: TITLE, rule `NAME`` and the rule's text, then a blank line.
pub fn heading(kind: &str, input: &Input, rule: &CompiledRule) -> String {
    let mut out = format!(
        "{kind}: {}, rule `{}`\n  {}\n\n",
        input.title(),
        rule.name,
        rule.text
    );
    if let Some(note) = binary_note(rule) {
        out.push_str(&note);
    }
    out
}

/// For rules with four-state conditions: what this analysis takes them to mean.
pub fn binary_note(rule: &CompiledRule) -> Option<String> {
    rule.rule.has_linear().then(|| {
        format!(
            "Note: rule `{}` has four-state conditions (abstentions, attendance); like the power\n\
             indices, this takes them in the yes/no model: every member present, voting yes or no.\n\n",
            rule.name
        )
    })
}

/// Member names, with runs of a group written `NAMEi..NAMEj`; `none` for no one.
pub fn names(file: &RuleFile, members: &[usize]) -> String {
    if members.is_empty() {
        return "none".to_string();
    }
    let mut sorted = members.to_vec();
    sorted.sort_unstable();
    file.describe_members(&sorted).join(", ")
}

/// A short label for a group of members: all names when short, else the
/// first names and how many more.
pub fn label(file: &RuleFile, members: &[usize]) -> String {
    let all = names(file, members);
    if all.chars().count() <= 30 {
        return all;
    }
    let parts = file.describe_members(members);
    let mut shown = String::new();
    let mut used = 0;
    for p in &parts {
        if used > 0 && shown.chars().count() + p.chars().count() > 22 {
            break;
        }
        if used > 0 {
            shown.push_str(", ");
        }
        shown.push_str(p);
        used += 1;
    }
    let rest: usize = parts[used..].iter().map(|p| count_in(file, p)).sum();
    format!("{shown}, … (+{rest})")
}

/// Members a described part stands for (`a` or `a1..a9`).
fn count_in(file: &RuleFile, part: &str) -> usize {
    file.members_named(part).map_or(1, |m| m.len())
}

/// Members with identical weights in every attribute of the rule.
pub fn groups(rule: &CompiledRule) -> Vec<Vec<usize>> {
    toolkit::profile::interchangeable(&rule.rule)
}

/// An exact analysis of a core rule, with a progress line.
pub fn power_of(rule: &clout::Rule<Vec<u64>>, name: &str, budget: u128) -> Result<Power, Failure> {
    let plan = exact::choose(rule, budget).map_err(|e| core_failure(name, e))?;
    let label = format!(
        "counting exactly: rule `{name}`, {} engine, about {:.1e} steps",
        plan.engine.name(),
        plan.cost as f64
    );
    with_progress(&label, || exact::power(rule, plan.engine)).map_err(|e| core_failure(name, e))
}

fn core_failure(name: &str, err: clout::Error) -> Failure {
    let hint = match err {
        clout::Error::TooCostly { .. } => {
            "\n  = hint: raise the limit with --budget STEPS; members with identical weights \
             (`members NAME xK`) make exact counting much cheaper"
        }
        _ => "",
    };
    Failure::input(format!("rule `{name}`: {err}{hint}"))
}

/// A toolkit failure as a message on the rule, with a hint.
pub fn failure(name: &str, err: toolkit::Error) -> Failure {
    match err {
        toolkit::Error::TooLarge { profiles, limit } => {
            let shown = if profiles == u128::MAX {
                "more than 10^38".to_string()
            } else {
                text::thousands(&profiles.to_string())
            };
            Failure::input(format!(
                "rule `{name}` is too large for the exact test: it would visit {shown} patterns of \
                 interchangeable members, over the limit of {}\n  = hint: the test visits every \
                 pattern (how many of each group of members with identical weights vote yes); \
                 rules whose members fall into a few such groups are cheap, while {} or more \
                 members with distinct weights are too many",
                text::thousands(&limit.to_string()),
                PROFILE_LIMIT.trailing_zeros() + 1
            ))
        }
        toolkit::Error::Core(e) => core_failure(name, e),
        other => Failure::input(format!("rule `{name}`: {other}")),
    }
}

/// `n` with thousands separators.
pub fn thousands(n: impl ToString) -> String {
    text::thousands(&n.to_string())
}

/// `2^n` written out when it fits comfortably, else as a power.
pub fn coalitions(n: usize) -> String {
    if n <= 49 {
        thousands(1u64 << n)
    } else {
        format!("2^{n}")
    }
}

/// A probability to six decimals, or in scientific notation when it would
/// print as 0.000000 without being 0.
pub fn probability(p: f64) -> String {
    if p > 0.0 && p < 5e-7 {
        format!("{p:.3e}")
    } else {
        format!("{p:.6}")
    }
}
