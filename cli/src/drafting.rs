//! What the drafting commands (`simplify`, `order`, `compare`, `sweep`,
//! `fit`, `coalitions`) share: headings, member names, groups of
//! interchangeable members, number formats. The answers themselves come
//! from `clout::drafting`.

use clap::ValueEnum;
use clout::toolkit;
use clout_dsl::{CompiledRule, RuleFile};

use crate::input::Input;
use crate::text;

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

/// Output format of the drafting commands.
#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
pub enum Format {
    Text,
    Json,
}
