//! `clout decide`: the outcome of one actual vote under a rule, each
//! condition's sums against what it needs, and the members whose switch
//! would have flipped the outcome.
//!
//! Ballots have four states: yes, no, abstain (present, voting neither way)
//! and absent. Members not named vote as `--rest` says: absent by default,
//! or no when only `--yes` is given (the two-state ballot). Plain conditions
//! count the yes-sum against their quota; four-state conditions (such as
//! `seats yes > 1/2 of cast` or `count present >= 1/3`) compare their group
//! sums. O(members * conditions).

use std::fmt::Write;

use clout::limits::MAX_ATTRIBUTES;
use clout::{decide_ballot, Ballot, Vote};
use clout_dsl::diagnostic::closest;
use clout_dsl::{CompiledRule, RuleFile};
use serde::Serialize;

use crate::input::Input;
use crate::text::{self, Align, Table};
use crate::{DecideArgs, DecideFormat, Failure, Outcome, Rest};

/// Ballots hold up to 65,536 members, the language's limit.
type Votes = Ballot<1024>;

pub fn run(args: &DecideArgs) -> Result<Outcome, Failure> {
    let s = &args.source;
    let input = Input::load(s.file.as_deref(), s.game.as_deref(), false)?;
    let rule = input.rule(s.rule.as_deref())?;
    let file = &input.file;
    let only_yes = args.no.is_empty() && args.abstain.is_empty();
    let rest = match args.rest {
        Some(Rest::No) => Vote::No,
        Some(Rest::Abstain) => Vote::Abstain,
        Some(Rest::Absent) => Vote::Absent,
        None if only_yes => Vote::No,
        None => Vote::Absent,
    };
    let mut votes = vec![rest; file.members.len()];
    for (list, vote, option) in [
        (&args.yes, Vote::Yes, "--yes"),
        (&args.abstain, Vote::Abstain, "--abstain"),
        (&args.no, Vote::No, "--no"),
    ] {
        for name in list {
            for i in members(file, name, option)? {
                votes[i] = vote;
            }
        }
    }
    let ballot = Votes::from_votes(&votes).map_err(|e| Failure::input(e.to_string()))?;
    let decision = decide_ballot(&rule.rule, &ballot).map_err(|e| Failure::input(e.to_string()))?;
    let flips = critical(&rule.rule, &votes, decision.passed);
    let tallies: Vec<Tally> = rule
        .conditions
        .iter()
        .zip(&decision.tallies)
        .zip(rule.rule.atoms())
        .enumerate()
        .map(|(i, ((c, t), atom))| {
            let linear = rule.rule.linear(i);
            Tally {
                text: c.text.clone(),
                attribute: rule.attributes[usize::from(atom.attribute)].name.clone(),
                sum: t.sum.to_string(),
                no: t.no.to_string(),
                abstain: t.abstain.to_string(),
                quota: t.quota.to_string(),
                needed: needed_yes(rule, i, t).map(|n| n.to_string()),
                total: rule.rule.total(usize::from(atom.attribute)).to_string(),
                four_state: linear.is_some(),
                met: t.met,
            }
        })
        .collect();
    let groups = Groups::of(&votes);
    let out = match args.format {
        DecideFormat::Json => {
            let names = |ids: &[usize]| {
                ids.iter()
                    .map(|&i| file.members[i].name.clone())
                    .collect::<Vec<_>>()
            };
            let report = JsonDecision {
                rule: &rule.name,
                passed: decision.passed,
                yes: names(&groups.yes),
                no: names(&groups.no),
                abstain: names(&groups.abstain),
                absent: names(&groups.absent),
                critical: names(&flips),
                conditions: tallies,
            };
            let mut s = serde_json::to_string_pretty(&report).unwrap_or_default();
            s.push('\n');
            s
        }
        DecideFormat::Text => text_decision(&input, rule, decision.passed, &groups, &flips, &tallies),
    };
    Ok(Outcome::ok(out))
}

/// For a four-state condition with a positive yes coefficient: the least
/// yes-sum that meets it given the no and abstain sums of this ballot.
/// For a plain condition: its quota. `None` when yes votes do not enter.
fn needed_yes(rule: &CompiledRule, i: usize, t: &clout::AtomTally) -> Option<i128> {
    match rule.rule.linear(i) {
        None => Some(i128::from(t.quota)),
        Some(l) if l.yes > 0 => {
            let rest =
                l.bound - i128::from(l.no) * i128::from(t.no) - i128::from(l.abstain) * i128::from(t.abstain);
            let a = i128::from(l.yes);
            Some((rest.div_euclid(a) + i128::from(rest.rem_euclid(a) != 0)).max(0))
        }
        Some(_) => None,
    }
}

/// Members whose own switch flips the outcome: when it passes, yes-voters
/// whose switch to no defeats it; when it fails, others whose switch to yes
/// passes it. One pass over the members, adjusting the group sums.
#[allow(clippy::needless_range_loop)] // three parallel sum rows indexed by attribute
fn critical(rule: &clout::Rule<Vec<u64>>, votes: &[Vote], passed: bool) -> Vec<usize> {
    let attributes = rule.attributes();
    let mut sums = [[0u64; MAX_ATTRIBUTES]; 3];
    for (i, v) in votes.iter().enumerate() {
        let g = match v {
            Vote::Yes => 0,
            Vote::No => 1,
            Vote::Abstain => 2,
            Vote::Absent => continue,
        };
        for a in 0..attributes {
            sums[g][a] += rule.weight(a, i);
        }
    }
    let mut out = Vec::new();
    for (i, v) in votes.iter().enumerate() {
        let (from, to) = match (passed, v) {
            (true, Vote::Yes) => (Some(0), Some(1)),
            (false, Vote::No) => (Some(1), Some(0)),
            (false, Vote::Abstain) => (Some(2), Some(0)),
            (false, Vote::Absent) => (None, Some(0)),
            _ => continue,
        };
        let mut s = sums;
        for a in 0..attributes {
            let w = rule.weight(a, i);
            if let Some(f) = from {
                s[f][a] -= w;
            }
            if let Some(t) = to {
                s[t][a] += w;
            }
        }
        if rule.passes_with_group_sums(&s[0][..attributes], &s[1][..attributes], &s[2][..attributes])
            != passed
        {
            out.push(i);
        }
    }
    out
}

struct Groups {
    yes: Vec<usize>,
    no: Vec<usize>,
    abstain: Vec<usize>,
    absent: Vec<usize>,
}

impl Groups {
    fn of(votes: &[Vote]) -> Groups {
        let pick = |want: Vote| (0..votes.len()).filter(|&i| votes[i] == want).collect();
        Groups {
            yes: pick(Vote::Yes),
            no: pick(Vote::No),
            abstain: pick(Vote::Abstain),
            absent: pick(Vote::Absent),
        }
    }
}

/// The members a `--yes` / `--no` / `--abstain` item names.
fn members(file: &RuleFile, name: &str, option: &str) -> Result<Vec<usize>, Failure> {
    let name = name.trim();
    if name.is_empty() || name == "none" {
        return Ok(Vec::new());
    }
    if name == "all" {
        return Ok((0..file.members.len()).collect());
    }
    file.members_named(name).ok_or_else(|| {
        let hint = match closest(name, file.member_and_bloc_names()) {
            Some(c) => format!("did you mean `{c}`?"),
            None => "name members, groups, blocs, a range such as `rep1..rep218`, or `all`".to_string(),
        };
        Failure::input(format!("{option}: unknown member `{name}`\n  = hint: {hint}"))
    })
}

#[derive(Serialize)]
struct Tally {
    text: String,
    attribute: String,
    /// The attribute's sum over the yes-voters.
    sum: String,
    /// Over the no-voters.
    no: String,
    /// Over the abstainers.
    abstain: String,
    /// The quota of the two-state game (everyone present, yes or no).
    quota: String,
    /// The least yes-sum that meets the condition given this ballot's no and
    /// abstain sums (for a plain condition, its quota); null when yes votes do not enter.
    needed: Option<String>,
    total: String,
    four_state: bool,
    met: bool,
}

#[derive(Serialize)]
struct JsonDecision<'a> {
    rule: &'a str,
    passed: bool,
    yes: Vec<String>,
    no: Vec<String>,
    abstain: Vec<String>,
    absent: Vec<String>,
    critical: Vec<String>,
    conditions: Vec<Tally>,
}

fn text_decision(
    input: &Input,
    rule: &CompiledRule,
    passed: bool,
    groups: &Groups,
    flips: &[usize],
    tallies: &[Tally],
) -> String {
    let file = &input.file;
    let n = file.members.len();
    let mut out = String::new();
    let _ = writeln!(out, "{}: rule `{}`", input.title(), rule.name);
    let _ = writeln!(out, "  {}\n", rule.text);
    let verdict = if passed { "PASSES" } else { "FAILS" };
    let _ = writeln!(out, "The motion {verdict}.");
    for (label, ids) in [
        ("yes", &groups.yes),
        ("no", &groups.no),
        ("abstain", &groups.abstain),
        ("absent", &groups.absent),
    ] {
        if ids.is_empty() && label != "yes" {
            continue;
        }
        let listed = if ids.is_empty() {
            "nobody".to_string()
        } else {
            file.describe_members(ids).join(", ")
        };
        let _ = writeln!(out, "{label:<8}({} of {n}): {listed}", ids.len());
    }
    out.push('\n');
    let four = tallies.iter().any(|t| t.four_state) || !groups.abstain.is_empty();
    let mut columns = vec![
        ("condition".to_string(), Align::Left),
        ("yes".to_string(), Align::Right),
    ];
    if four {
        columns.push(("no".to_string(), Align::Right));
        columns.push(("abstain".to_string(), Align::Right));
        columns.push(("yes needed".to_string(), Align::Right));
    } else {
        columns.push(("quota".to_string(), Align::Right));
    }
    columns.push(("total".to_string(), Align::Right));
    columns.push(("met".to_string(), Align::Left));
    let mut table = Table::new(columns);
    for t in tallies {
        let named = t
            .text
            .split(|c: char| !(c.is_alphanumeric() || c == '_'))
            .any(|w| w == t.attribute);
        let attribute = if named {
            String::new()
        } else {
            format!(" ({})", t.attribute)
        };
        let mut row = vec![format!("{}{attribute}", t.text), text::thousands(&t.sum)];
        if four {
            row.push(text::thousands(&t.no));
            row.push(text::thousands(&t.abstain));
            row.push(t.needed.as_deref().map_or("-".to_string(), text::thousands));
        } else {
            row.push(text::thousands(&t.quota));
        }
        row.push(text::thousands(&t.total));
        row.push(text::yes_no(t.met).to_string());
        table.push(row);
    }
    out.push_str(&table.render());
    out.push('\n');
    let who = if passed {
        "yes-voters whose switch to no would defeat it"
    } else {
        "members not voting yes whose switch to yes would pass it"
    };
    let listed = if flips.is_empty() {
        "none".to_string()
    } else {
        file.describe_members(flips).join(", ")
    };
    let _ = writeln!(out, "critical ({who}): {listed}");
    let _ = writeln!(out, "\n{}", crate::report::CAUTION);
    out
}
