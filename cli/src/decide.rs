//! `clout decide`: the outcome of one actual vote under a rule, each
//! condition's sums against what it needs, and the members whose switch
//! would have flipped the outcome (the library's [`clout::decision`]).
//!
//! Members not named vote as `--rest` says: absent by default, or no when
//! only `--yes` is given (the two-state ballot). Plain conditions count the
//! yes-sum against their quota; four-state conditions (such as `seats yes >
//! 1/2 of cast` or `count present >= 1/3`) compare their group sums.

use std::fmt::Write;

use clout::decision::{self, Decision, NamedBallot};
use clout::record::{self, Record};
use clout_dsl::quote::{shown as safe, split_list, written};
use clout_dsl::CompiledRule;

use crate::input::Input;
use crate::report::json;
use crate::text::{self, Align, Table};
use crate::{DecideArgs, DecideFormat, Failure, Outcome, Rest};

/// The names of repeated, comma-separated lists (quotes keep a comma in a name).
fn names(lists: &[String], option: &str) -> Result<Vec<String>, Failure> {
    let mut out = Vec::new();
    for list in lists {
        out.extend(split_list(list).map_err(|e| Failure::input(format!("--{option}: {e}")))?);
    }
    Ok(out)
}

pub fn run(args: &DecideArgs) -> Result<Outcome, Failure> {
    let s = &args.source;
    let input = Input::load(s.file.as_deref(), s.game.as_deref(), false)?;
    let rule = input.rule(s.rule.as_deref())?;
    if let Some(path) = &args.ballots {
        return run_record(args, &input, rule, path);
    }
    let ballot = NamedBallot {
        yes: names(&args.yes, "yes")?,
        no: names(&args.no, "no")?,
        abstain: names(&args.abstain, "abstain")?,
        rest: args.rest.map(|r| match r {
            Rest::No => decision::Rest::No,
            Rest::Abstain => decision::Rest::Abstain,
            Rest::Absent => decision::Rest::Absent,
        }),
    };
    let votes = decision::votes(&input.file, &ballot)?;
    let decided = decision::decide(&input.file, rule, &votes)?;
    let out = match args.format {
        DecideFormat::Json => json(&decided),
        DecideFormat::Text => text_decision(&input, rule, &decided),
    };
    Ok(Outcome::ok(out))
}

/// `decide --ballots FILE [--against RULE|FILE]`: every recorded motion.
fn run_record(
    args: &DecideArgs,
    input: &Input,
    rule: &CompiledRule,
    path: &std::path::Path,
) -> Result<Outcome, Failure> {
    let (shown, bytes) = crate::input::read_data_file(path)?;
    let motions = record::read(&input.file, &shown, &bytes)
        .map_err(|errors| crate::input::rendered_errors(&errors, &shown, ""))?;
    // A rule of the same file, or another file.
    let other_input;
    let other = match &args.against {
        None => None,
        Some(name) if input.file.rule(Some(name)).is_some() && args.against_rule.is_none() => {
            Some((&input.file, input.rule(Some(name))?, format!("rule `{name}`")))
        }
        Some(file) => {
            other_input = Input::load(Some(std::path::Path::new(file)), None, false)?;
            let r = other_input.rule(args.against_rule.as_deref())?;
            Some((&other_input.file, r, format!("rule `{}` of {file}", r.name)))
        }
    };
    let decided = record::decide_all(
        &input.file,
        rule,
        &motions,
        other.as_ref().map(|(f, r, _)| (*f, *r)),
    )?;
    let out = match args.format {
        DecideFormat::Json => json(&decided.motions),
        DecideFormat::Text => text_record(
            input,
            rule,
            &shown,
            &decided,
            other.as_ref().map(|o| o.2.as_str()),
        ),
    };
    Ok(Outcome::ok(out))
}

fn text_record(
    input: &Input,
    rule: &CompiledRule,
    shown: &str,
    record: &Record,
    other: Option<&str>,
) -> String {
    let file = &input.file;
    let n = record.motions.len();
    let mut out = String::new();
    let _ = writeln!(
        out,
        "{}: rule `{}`, {n} recorded motions ({shown})",
        input.title(),
        rule.name
    );
    let _ = writeln!(out, "  {}\n", rule.text);
    let mut columns = vec![
        ("motion".to_string(), Align::Left),
        ("outcome".to_string(), Align::Left),
    ];
    for c in &rule.conditions {
        columns.push((c.text.clone(), Align::Right));
    }
    columns.push(("critical".to_string(), Align::Left));
    let mut table = Table::new(columns);
    for m in &record.motions {
        let d = &m.decision;
        let mut row = vec![
            safe(&m.motion).into_owned(),
            if d.passed { "passes" } else { "fails" }.to_string(),
        ];
        for t in &d.conditions {
            let cell = match (&t.needed, &t.margin) {
                (Some(needed), Some(margin)) => {
                    let (sign, digits) = match margin.strip_prefix('-') {
                        Some(d) => ("-", d),
                        None => ("+", margin.as_str()),
                    };
                    format!(
                        "{}/{} {sign}{}",
                        text::thousands(&t.sum),
                        text::thousands(needed),
                        text::thousands(digits)
                    )
                }
                _ => format!(
                    "{} {}",
                    text::thousands(&t.sum),
                    if t.met { "met" } else { "not met" }
                ),
            };
            row.push(cell);
        }
        let critical = &d.indices[4];
        row.push(if critical.is_empty() {
            "none".to_string()
        } else {
            file.describe_members(critical).join(", ")
        });
        table.push(row);
    }
    out.push_str(&table.render());
    let passed = record.motions.iter().filter(|m| m.decision.passed).count();
    let _ = writeln!(
        out,
        "\n{passed} of {n} motions pass. Each condition shows yes-sum/needed and the margin (the yes-sum above what\n\
         the condition needs, negative when short); critical members are those whose own switch would\n\
         have flipped the outcome."
    );
    let _ = writeln!(out, "\nHow often each member was critical, over {n} motions:");
    let mut order: Vec<usize> = (0..file.members.len()).collect();
    order.sort_by_key(|&i| std::cmp::Reverse(record.critical[i]));
    let mut summary = Table::new(vec![
        ("member".to_string(), Align::Left),
        ("critical".to_string(), Align::Right),
        ("share".to_string(), Align::Right),
    ]);
    let never: Vec<usize> = {
        let mut v: Vec<usize> = order
            .iter()
            .copied()
            .filter(|&i| record.critical[i] == 0)
            .collect();
        v.sort_unstable();
        v
    };
    for &i in order.iter().filter(|&&i| record.critical[i] > 0) {
        summary.push(vec![
            written(&file.members[i].name).into_owned(),
            record.critical[i].to_string(),
            format!("{:.1}%", 100.0 * record.critical[i] as f64 / n.max(1) as f64),
        ]);
    }
    out.push_str(&indent(&summary.render()));
    if !never.is_empty() {
        let _ = writeln!(
            out,
            "  never critical: {}",
            file.describe_members(&never).join(", ")
        );
    }
    if let Some(other) = other {
        let differing = record.differing();
        if differing.is_empty() {
            let _ = writeln!(
                out,
                "\nAgainst {other}: every one of the {n} motions is decided the same."
            );
        } else {
            let _ = writeln!(
                out,
                "\nAgainst {other}: {} of the {n} motions are decided differently:",
                differing.len()
            );
            for m in differing {
                let (here, there) = (m.decision.passed, m.against.as_ref().is_some_and(|a| a.passed));
                let word = |p: bool| if p { "passes" } else { "fails" };
                let _ = writeln!(
                    out,
                    "  {}: {} under `{}`, {} under the other",
                    safe(&m.motion),
                    word(here),
                    rule.name,
                    word(there)
                );
            }
        }
    }
    let _ = writeln!(out, "\n{}", crate::report::CAUTION);
    out
}

fn indent(text: &str) -> String {
    text.lines().map(|l| format!("  {l}\n")).collect()
}

fn text_decision(input: &Input, rule: &CompiledRule, decided: &Decision) -> String {
    let file = &input.file;
    let n = file.members.len();
    let mut out = String::new();
    let _ = writeln!(out, "{}: rule `{}`", input.title(), decided.rule);
    let _ = writeln!(out, "  {}\n", rule.text);
    let passed = decided.passed;
    let [yes, no, abstain, absent, flips] = &decided.indices;
    let tallies = &decided.conditions;
    let verdict = if passed { "PASSES" } else { "FAILS" };
    let _ = writeln!(out, "The motion {verdict}.");
    for (label, ids) in [("yes", yes), ("no", no), ("abstain", abstain), ("absent", absent)] {
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
    let four = tallies.iter().any(|t| t.four_state) || !abstain.is_empty();
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
