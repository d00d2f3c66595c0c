//! What compiling gives: the members, their weights, the blocs and every
//! rule in the core's IR, with the names and spans that front ends show.
//!
//! The look-ups here are for front ends (one name or one list at a time):
//! [`RuleFile::members_named`] is O(members), [`RuleFile::describe_members`]
//! O(length of the list).

use clout_core::Rule;

use crate::diagnostic::Span;

/// A compiled rule file: the members, their weights, and every rule.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct RuleFile {
    /// The `title`, if any.
    pub title: Option<String>,
    /// Members in declaration order (a group's members in order 1..K).
    pub members: Vec<Member>,
    /// `members NAME xK` declarations.
    pub groups: Vec<Group>,
    /// Blocs, including one per group (named like the group).
    pub blocs: Vec<Bloc>,
    /// Declared attributes in order of first appearance.
    pub attributes: Vec<String>,
    /// Declared weights, attribute-major: `weights[a * members + i]`.
    pub weights: Vec<u64>,
    /// Rules in declaration order; the first is the default.
    pub rules: Vec<CompiledRule>,
    /// The attributes declared with decimals (`attribute NAME decimals D`):
    /// their exact amounts, and the unit when the weights are rounded.
    pub amounts: Vec<Amounts>,
}

/// The exact amounts of one attribute declared with decimals.
///
/// The weights the core counts (`RuleFile::weights`) are the exact base
/// units when their total fits the core (2^64 - 4); otherwise each is the
/// amount rounded to the nearest `unit` (halves up), and the report
/// certifies what that rounding can change.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Amounts {
    /// The declared attribute (an index into `RuleFile::attributes`).
    pub attribute: usize,
    /// Decimals: an amount is a whole number of 10^-decimals base units.
    pub decimals: u32,
    /// Base units per weight unit, when the weights are rounded.
    pub unit: Option<u128>,
    /// Every member's exact amount, in base units.
    pub exact: Vec<u128>,
    /// Their sum.
    pub total: u128,
}

impl Amounts {
    /// `base` base units written as a decimal amount (`1520.565494`).
    pub fn format(&self, base: u128) -> String {
        let d = self.decimals as usize;
        let digits = base.to_string();
        if d == 0 {
            return digits;
        }
        let padded = format!("{digits:0>width$}", width = d + 1);
        let (whole, fraction) = padded.split_at(padded.len() - d);
        let fraction = fraction.trim_end_matches('0');
        if fraction.is_empty() {
            whole.to_string()
        } else {
            format!("{whole}.{fraction}")
        }
    }
}

/// A condition on an attribute whose weights are rounded, on the exact amounts.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ExactCondition {
    /// The declared attribute.
    pub attribute: usize,
    /// The least exact yes-sum (base units) that meets the condition when
    /// everyone votes yes or no: the exact counterpart of the atom's quota.
    pub quota: u128,
    /// For a four-state condition, its bound over the exact sums (the
    /// coefficients are those of the rounded form, `Rule::linear`).
    pub bound: Option<i128>,
}

/// One member.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Member {
    /// Its name.
    pub name: String,
    /// Where it is declared.
    pub span: Span,
    /// The group it belongs to, if declared by `members`.
    pub group: Option<usize>,
}

/// `members NAME xK`: members `first .. first + len`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Group {
    /// The group's name.
    pub name: String,
    /// Where it is declared.
    pub span: Span,
    /// Index of NAME1.
    pub first: usize,
    /// K.
    pub len: usize,
}

/// A named set of members.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Bloc {
    /// Its name.
    pub name: String,
    /// Where it is declared.
    pub span: Span,
    /// Member indices, ascending, without repeats.
    pub members: Vec<usize>,
}

/// One compiled rule.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct CompiledRule {
    /// The rule's name.
    pub name: String,
    /// Where the name is written.
    pub span: Span,
    /// The condition as written (white space collapsed).
    pub text: String,
    /// The rule in the core's IR.
    pub rule: Rule<Vec<u64>>,
    /// One entry per attribute of [`Self::rule`].
    pub attributes: Vec<Attribute>,
    /// One entry per atom of [`Self::rule`].
    pub conditions: Vec<Condition>,
    /// One entry per atom: the condition on the exact amounts, for atoms on
    /// an attribute whose weights are rounded (`None` for the others).
    pub exact: Vec<Option<ExactCondition>>,
}

/// What an attribute of a compiled rule stands for.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Attribute {
    /// Its name: the declared attribute, `count`, or the bloc or member name.
    pub name: String,
    /// Where it comes from.
    pub kind: AttributeKind,
}

/// Where an attribute of a compiled rule comes from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum AttributeKind {
    /// Declared in member lines.
    Declared,
    /// `count`: 1 for every member.
    Count,
    /// 1 on the bloc's (or group's) members.
    Bloc,
    /// 1 on one member named alone.
    Member,
}

/// The source of one atom.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Condition {
    /// The condition as written.
    pub text: String,
    /// Where it is written.
    pub span: Span,
}

impl RuleFile {
    /// The rule called `name`, or the first rule for `None`.
    pub fn rule(&self, name: Option<&str>) -> Option<&CompiledRule> {
        match name {
            None => self.rules.first(),
            Some(n) => self.rules.iter().find(|r| r.name == n),
        }
    }

    /// Member `i`'s weight in declared attribute `a`.
    pub fn weight(&self, attribute: usize, member: usize) -> u64 {
        self.weights
            .get(attribute * self.members.len() + member)
            .copied()
            .unwrap_or(0)
    }

    /// The members a name stands for: a member, a group, a bloc, or a range
    /// `NAMEi..NAMEj` of one group's members. `None` for an unknown name.
    pub fn members_named(&self, name: &str) -> Option<Vec<usize>> {
        if let Some(i) = self.members.iter().position(|m| m.name == name) {
            return Some(vec![i]);
        }
        if let Some(b) = self.blocs.iter().find(|b| b.name == name) {
            return Some(b.members.clone());
        }
        let (from, to) = name.split_once("..")?;
        let from = self.members.iter().position(|m| m.name == from)?;
        let to = self.members.iter().position(|m| m.name == to)?;
        let same_group =
            self.members[from].group.is_some() && self.members[from].group == self.members[to].group;
        (same_group && from <= to).then(|| (from..=to).collect())
    }

    /// Every name [`Self::members_named`] knows, for suggestions.
    pub fn member_and_bloc_names(&self) -> impl Iterator<Item = &str> {
        self.members
            .iter()
            .map(|m| m.name.as_str())
            .chain(self.blocs.iter().map(|b| b.name.as_str()))
    }

    /// Names of `members` (ascending indices) as written in rule text
    /// (quoted when not plain), with runs of one group's members written
    /// `NAMEi..NAMEj`.
    pub fn describe_members(&self, members: &[usize]) -> Vec<String> {
        let mut out = Vec::new();
        let mut k = 0;
        while k < members.len() {
            let first = members[k];
            let mut last = k;
            let group = self.members.get(first).and_then(|m| m.group);
            while group.is_some()
                && last + 1 < members.len()
                && members[last + 1] == members[last] + 1
                && self.members.get(members[last + 1]).and_then(|m| m.group) == group
            {
                last += 1;
            }
            let name = |i: usize| {
                self.members.get(i).map_or(std::borrow::Cow::Borrowed("?"), |m| {
                    crate::quote::written(&m.name)
                })
            };
            match last - k {
                0 => out.push(name(first).into_owned()),
                1 => {
                    out.push(name(first).into_owned());
                    out.push(name(members[last]).into_owned());
                }
                _ => out.push(format!("{}..{}", name(first), name(members[last]))),
            }
            k = last + 1;
        }
        out
    }
}
