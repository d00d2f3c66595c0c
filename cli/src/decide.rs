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
use clout_dsl::CompiledRule;

use crate::input::Input;
use crate::report::json;
use crate::text::{self, Align, Table};
use crate::{DecideArgs, DecideFormat, Failure, Outcome, Rest};

pub fn run(args: &DecideArgs) -> Result<Outcome, Failure> {
    let s = &args.source;
    let input = Input::load(s.file.as_deref(), s.game.as_deref(), false)?;
    let rule = input.rule(s.rule.as_deref())?;
    let ballot = NamedBallot {
        yes: args.yes.clone(),
        no: args.no.clone(),
        abstain: args.abstain.clone(),
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
