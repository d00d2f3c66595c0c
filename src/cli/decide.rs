//! `clout decide`: the outcome of one actual vote under a rule, each
//! condition's yes-sum against its quota, and the members whose switch
//! would have flipped the outcome. O(members * conditions).

use std::fmt::Write;

use clout::{critical, decide, Coalition};
use clout_dsl::diagnostic::closest;
use clout_dsl::{CompiledRule, RuleFile};
use serde::Serialize;

use super::input::Input;
use super::text::{self, Align, Table};
use super::{DecideArgs, DecideFormat, Failure, Outcome};

/// Ballots hold up to 65,536 members, the language's limit.
type Ballot = Coalition<1024>;

pub fn run(args: &DecideArgs) -> Result<Outcome, Failure> {
    let s = &args.source;
    let input = Input::load(s.file.as_deref(), s.game.as_deref(), false)?;
    let rule = input.rule(s.rule.as_deref())?;
    let file = &input.file;
    let mut yes = vec![false; file.members.len()];
    for name in &args.yes {
        for i in members(file, name, "--yes")? {
            yes[i] = true;
        }
    }
    for name in &args.no {
        for i in members(file, name, "--no")? {
            yes[i] = false;
        }
    }
    let voters: Vec<usize> = (0..yes.len()).filter(|&i| yes[i]).collect();
    let ballot = Ballot::from_members(&voters).map_err(|e| Failure::input(e.to_string()))?;
    let decision = decide(&rule.rule, &ballot).map_err(|e| Failure::input(e.to_string()))?;
    let flips: Vec<usize> = critical(&rule.rule, &ballot)
        .map_err(|e| Failure::input(e.to_string()))?
        .iter()
        .collect();
    let tallies: Vec<Tally> = rule
        .conditions
        .iter()
        .zip(&decision.tallies)
        .zip(rule.rule.atoms())
        .map(|((c, t), atom)| Tally {
            text: c.text.clone(),
            attribute: rule.attributes[usize::from(atom.attribute)].name.clone(),
            sum: t.sum.to_string(),
            quota: t.quota.to_string(),
            total: rule.rule.total(usize::from(atom.attribute)).to_string(),
            met: t.met,
        })
        .collect();
    let out = match args.format {
        DecideFormat::Json => {
            let names = |ids: &[usize]| ids.iter().map(|&i| file.members[i].name.clone()).collect();
            let report = JsonDecision {
                rule: &rule.name,
                passed: decision.passed,
                yes: names(&voters),
                critical: names(&flips),
                conditions: tallies,
            };
            let mut s = serde_json::to_string_pretty(&report).unwrap_or_default();
            s.push('\n');
            s
        }
        DecideFormat::Text => text_decision(&input, rule, decision.passed, &voters, &flips, &tallies),
    };
    Ok(Outcome::ok(out))
}

/// The members a `--yes` / `--no` item names.
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
    sum: String,
    quota: String,
    total: String,
    met: bool,
}

#[derive(Serialize)]
struct JsonDecision<'a> {
    rule: &'a str,
    passed: bool,
    yes: Vec<String>,
    critical: Vec<String>,
    conditions: Vec<Tally>,
}

fn text_decision(
    input: &Input,
    rule: &CompiledRule,
    passed: bool,
    voters: &[usize],
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
    let listed = if voters.is_empty() {
        "nobody".to_string()
    } else {
        file.describe_members(voters).join(", ")
    };
    let _ = writeln!(out, "yes ({} of {n}): {listed}\n", voters.len());
    let mut table = Table::new(vec![
        ("condition".to_string(), Align::Left),
        ("yes".to_string(), Align::Right),
        ("quota".to_string(), Align::Right),
        ("total".to_string(), Align::Right),
        ("met".to_string(), Align::Left),
    ]);
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
        table.push(vec![
            format!("{}{attribute}", t.text),
            text::thousands(&t.sum),
            text::thousands(&t.quota),
            text::thousands(&t.total),
            text::yes_no(t.met).to_string(),
        ]);
    }
    out.push_str(&table.render());
    out.push('\n');
    let who = if passed {
        "yes-voters whose switch to no would defeat it"
    } else {
        "no-voters whose switch to yes would pass it"
    };
    let listed = if flips.is_empty() {
        "none".to_string()
    } else {
        file.describe_members(flips).join(", ")
    };
    let _ = writeln!(out, "critical ({who}): {listed}");
    let _ = writeln!(out, "\n{}", super::report::CAUTION);
    out
}
