//! A record of many votes as data: every motion of a ballot file decided
//! under a rule, how often each member was critical, and whether a second
//! rule would have decided every motion the same.
//!
//! Ballot files are data tables (`clout_dsl::data`: CSV or JSON), in one of
//! two layouts, told apart by the header:
//!
//! - wide: `motion,<member>,<member>,...`, one row per motion, each cell a
//!   vote; members without a column are absent from every motion;
//! - long: `motion,member,vote`, one row per member per motion; motions in
//!   the order they first appear, members not listed for a motion absent.
//!
//! Votes are `yes`, `no`, `abstain` or `absent`, also `y`, `n`, `a` and `-`,
//! in any case. Every error is placed in the file (line, column) with a
//! hint. Time O(cells) to read, then one [`decide`](crate::decision::decide)
//! per motion.

use std::collections::HashMap;

use clout_core::Vote;
use clout_dsl::data::{At, Table};
use clout_dsl::diagnostic::closest;
use clout_dsl::quote::written;
use clout_dsl::{CompiledRule, Diagnostic, RuleFile};
use serde::Serialize;

use crate::decision::{decide, Decision};
use crate::failure::Failure;

/// One recorded motion: its name and every member's vote.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Motion {
    /// As written in the file.
    pub name: String,
    /// One vote per member of the rule file, in member order.
    pub votes: Vec<Vote>,
}

/// One motion decided. The JSON keys are those of `decide --format json`
/// plus `motion` (and `against` with a second rule).
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct MotionDecision {
    /// The motion's name.
    pub motion: String,
    /// The decision under the rule.
    #[serde(flatten)]
    pub decision: Decision,
    /// Under the second rule, when one is given.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub against: Option<Against>,
}

/// The same motion under the second rule.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Against {
    /// The second rule's name.
    pub rule: String,
    /// Whether it passes there.
    pub passed: bool,
    /// Whether the two rules decide it the same.
    pub same: bool,
}

/// Every motion decided, and the summary.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Record {
    /// Per motion, in file order.
    pub motions: Vec<MotionDecision>,
    /// Per member (member order): in how many motions it was critical.
    pub critical: Vec<usize>,
}

impl Record {
    /// Motions the second rule decides otherwise (empty without one).
    pub fn differing(&self) -> Vec<&MotionDecision> {
        self.motions
            .iter()
            .filter(|m| m.against.as_ref().is_some_and(|a| !a.same))
            .collect()
    }
}

/// A vote as written in a ballot file.
pub fn parse_vote(cell: &str) -> Option<Vote> {
    match cell.trim().to_ascii_lowercase().as_str() {
        "yes" | "y" => Some(Vote::Yes),
        "no" | "n" => Some(Vote::No),
        "abstain" | "a" => Some(Vote::Abstain),
        "absent" | "-" => Some(Vote::Absent),
        _ => None,
    }
}

const VOTE_HINT: &str = "a vote is `yes`, `no`, `abstain` or `absent` (also `y`, `n`, `a`, `-`, in any case)";

/// Reads a ballot file (`name` is shown in messages) against the members of
/// `file`. Returns every motion, or the errors (at most 100, placed in the file).
pub fn read(file: &RuleFile, name: &str, bytes: &[u8]) -> Result<Vec<Motion>, Vec<Diagnostic>> {
    let table = Table::read(name, bytes).map_err(|e| vec![e])?;
    let header: Vec<&str> = table.columns.iter().map(String::as_str).collect();
    let mut errors = Vec::new();
    let motions = match header.as_slice() {
        ["motion", "member", "vote"] => long(file, &table, &mut errors),
        ["motion", ..] => wide(file, &table, &mut errors),
        _ => {
            return Err(vec![table.error(
                At::Column(0),
                format!("the header starts with `{}`, not `motion`", header.first().copied().unwrap_or("")),
                "a ballot file's header is `motion,<member>,<member>,...` (one row per motion) or `motion,member,vote` (one row per vote)",
            )])
        }
    };
    if errors.is_empty() && motions.is_empty() {
        errors.push(table.error(
            At::Start,
            "the file records no motion".to_string(),
            "add one row per motion after the header",
        ));
    }
    if errors.is_empty() {
        Ok(motions)
    } else {
        Err(clout_dsl::diagnostic::limit(errors))
    }
}

/// The member called `name` in `file`, or an error at `at`.
fn member(
    file: &RuleFile,
    index: &HashMap<&str, usize>,
    table: &Table,
    at: At,
    name: &str,
) -> Result<usize, Diagnostic> {
    index.get(name).copied().ok_or_else(|| {
        let hint = match closest(name, file.members.iter().map(|m| m.name.as_str())) {
            Some(c) => format!("did you mean {}?", written(c)),
            None => "name a member of the rule file exactly as declared".to_string(),
        };
        table.error(at, format!("unknown member {}", written(name)), hint)
    })
}

fn index(file: &RuleFile) -> HashMap<&str, usize> {
    file.members
        .iter()
        .enumerate()
        .map(|(i, m)| (m.name.as_str(), i))
        .collect()
}

fn wide(file: &RuleFile, table: &Table, errors: &mut Vec<Diagnostic>) -> Vec<Motion> {
    let index = index(file);
    let columns: Vec<Option<usize>> = table.columns[1..]
        .iter()
        .enumerate()
        .map(|(c, name)| {
            member(file, &index, table, At::Column(c + 1), name)
                .map_err(|e| errors.push(e))
                .ok()
        })
        .collect();
    if !errors.is_empty() {
        return Vec::new();
    }
    let mut seen: HashMap<&str, usize> = HashMap::new();
    let mut motions = Vec::with_capacity(table.rows.len());
    for (r, row) in table.rows.iter().enumerate() {
        let name = row[0].as_str();
        if !motion_name(table, r, name, &mut seen, errors) {
            continue;
        }
        let mut votes = vec![Vote::Absent; file.members.len()];
        for (c, cell) in row[1..].iter().enumerate() {
            match (parse_vote(cell), columns[c]) {
                (Some(v), Some(i)) => votes[i] = v,
                (None, _) => {
                    errors.push(table.error(At::Cell(r, c + 1), format!("`{cell}` is not a vote"), VOTE_HINT))
                }
                _ => {}
            }
        }
        motions.push(Motion {
            name: name.to_string(),
            votes,
        });
    }
    motions
}

/// Checks a motion's name (non-empty, first use in a wide file).
fn motion_name<'t>(
    table: &Table,
    r: usize,
    name: &'t str,
    seen: &mut HashMap<&'t str, usize>,
    errors: &mut Vec<Diagnostic>,
) -> bool {
    if name.is_empty() {
        errors.push(table.error(
            At::Cell(r, 0),
            "a motion without a name".to_string(),
            "name every motion in the first column",
        ));
        return false;
    }
    if let Some(&first) = seen.get(name) {
        errors.push(table.error(
            At::Cell(r, 0),
            format!("motion {} is recorded twice", written(name)),
            format!(
                "it is already on line {}; give each motion one row",
                table.line_of(first)
            ),
        ));
        return false;
    }
    seen.insert(name, r);
    true
}

fn long(file: &RuleFile, table: &Table, errors: &mut Vec<Diagnostic>) -> Vec<Motion> {
    let index = index(file);
    let mut order: HashMap<&str, usize> = HashMap::new();
    let mut motions: Vec<Motion> = Vec::new();
    // (motion, member) -> the row that gave it first.
    let mut given: HashMap<(usize, usize), usize> = HashMap::new();
    for (r, row) in table.rows.iter().enumerate() {
        let (name, who, vote) = (row[0].as_str(), row[1].as_str(), row[2].as_str());
        if name.is_empty() {
            errors.push(table.error(
                At::Cell(r, 0),
                "a vote without a motion".to_string(),
                "name the motion in the first column",
            ));
            continue;
        }
        let m = *order.entry(name).or_insert_with(|| {
            motions.push(Motion {
                name: name.to_string(),
                votes: vec![Vote::Absent; file.members.len()],
            });
            motions.len() - 1
        });
        let i = match member(file, &index, table, At::Cell(r, 1), who) {
            Ok(i) => i,
            Err(e) => {
                errors.push(e);
                continue;
            }
        };
        let Some(v) = parse_vote(vote) else {
            errors.push(table.error(At::Cell(r, 2), format!("`{vote}` is not a vote"), VOTE_HINT));
            continue;
        };
        if let Some(&first) = given.get(&(m, i)) {
            errors.push(table.error(
                At::Row(r),
                format!("{} votes twice on motion {}", written(who), written(name)),
                format!(
                    "the first vote is on line {}; keep one row per member and motion",
                    table.line_of(first)
                ),
            ));
            continue;
        }
        given.insert((m, i), r);
        motions[m].votes[i] = v;
    }
    motions
}

/// Decides every motion under `rule` and, when given, under `other` (a rule
/// of `other_file`, whose members are matched by name).
pub fn decide_all(
    file: &RuleFile,
    rule: &CompiledRule,
    motions: &[Motion],
    other: Option<(&RuleFile, &CompiledRule)>,
) -> Result<Record, Failure> {
    let mapping = match other {
        Some((other_file, _)) => Some(match_members(file, other_file)?),
        None => None,
    };
    let mut critical = vec![0usize; file.members.len()];
    let mut out = Vec::with_capacity(motions.len());
    for m in motions {
        let decision = decide(file, rule, &m.votes)?;
        for &i in &decision.indices[4] {
            critical[i] += 1;
        }
        let against = match (other, &mapping) {
            (Some((other_file, other_rule)), Some(map)) => {
                let mut votes = vec![Vote::Absent; other_file.members.len()];
                for (i, &j) in map.iter().enumerate() {
                    votes[j] = m.votes[i];
                }
                let passed = decide(other_file, other_rule, &votes)?.passed;
                Some(Against {
                    rule: other_rule.name.clone(),
                    passed,
                    same: passed == decision.passed,
                })
            }
            _ => None,
        };
        out.push(MotionDecision {
            motion: m.name.clone(),
            decision,
            against,
        });
    }
    Ok(Record {
        motions: out,
        critical,
    })
}

/// For each member of `a`, the member of `b` with the same name; the two
/// files must have exactly the same members.
fn match_members(a: &RuleFile, b: &RuleFile) -> Result<Vec<usize>, Failure> {
    let index = index(b);
    let mut map = Vec::with_capacity(a.members.len());
    for m in &a.members {
        match index.get(m.name.as_str()) {
            Some(&j) => map.push(j),
            None => {
                return Err(Failure::input(format!(
                    "the second rule's file has no member {}",
                    written(&m.name)
                ))
                .with_hint("the two rule files must declare the same members (matched by name)"))
            }
        }
    }
    if b.members.len() != a.members.len() {
        return Err(Failure::input(format!(
            "the second rule's file has {} members, the first {}",
            b.members.len(),
            a.members.len()
        ))
        .with_hint("the two rule files must declare the same members (matched by name)"));
    }
    Ok(map)
}
