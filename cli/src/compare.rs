//! `clout compare A B`: are two drafts the same rule (the same coalitions
//! pass)? If not, a smallest coalition on which they differ and how each
//! member's power changes. Each of A and B is a rule file, `-`, or a
//! bracket notation such as "[3; 2, 1, 1]"; members are matched by name
//! when both rules name the same members, else by position (or as `--by`
//! says). See `clout::toolkit::compare`.

use std::fmt::Write;
use std::path::Path;

use clap::{Args, ValueEnum};
use clout::drafting::{self as answers, CompareOptions, Comparison, Verdict};
use clout_dsl::CompiledRule;

use crate::drafting::{self, label, names, Format};
use crate::input::Input;
use crate::progress::Progress;
use crate::report::{json, CAUTION, MODEL};
use crate::text::{Align, Table};
use crate::{parse_steps, Failure, Outcome};

#[derive(Args)]
pub struct CompareArgs {
    /// The first rule: a rule file, `-` for standard input, or a bracket notation such as "[3; 2, 1, 1]".
    a: String,
    /// The second rule, in the same forms.
    b: String,
    /// Which rule of the first file (default: its first).
    #[arg(long, value_name = "NAME")]
    rule_a: Option<String>,
    /// Which rule of the second file (default: its first).
    #[arg(long, value_name = "NAME")]
    rule_b: Option<String>,
    /// How members of A and B are matched (default: by name when both rules name the same
    /// members, otherwise by position).
    #[arg(long, value_enum)]
    by: Option<Matching>,
    /// Most elementary steps each exact analysis of the indices may take.
    #[arg(long, value_name = "STEPS", value_parser = parse_steps, default_value = "5e10")]
    budget: u128,
    /// Output format (JSON: `clout::drafting::Comparison`, keys in the README).
    #[arg(long, value_enum, default_value_t = Format::Text)]
    format: Format,
}

#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
enum Matching {
    Name,
    Position,
}

fn load(arg: &str) -> Result<Input, Failure> {
    if arg.trim_start().starts_with('[') {
        Input::load(None, Some(arg), false)
    } else {
        Input::load(Some(Path::new(arg)), None, false)
    }
}

pub fn run(args: &CompareArgs) -> Result<Outcome, Failure> {
    if args.a == "-" && args.b == "-" {
        return Err(Failure::input(
            "A and B cannot both be `-`: standard input holds one rule\n  = hint: write one of them to a file"
                .to_string(),
        ));
    }
    let ia = load(&args.a)?;
    let ib = load(&args.b)?;
    let ra = ia.rule(args.rule_a.as_deref())?;
    let rb = ib.rule(args.rule_b.as_deref())?;
    let options = CompareOptions {
        by: args.by.map(|m| match m {
            Matching::Name => answers::Matching::Name,
            Matching::Position => answers::Matching::Position,
        }),
        budget: args.budget,
    };
    let answer = answers::compare(&ia.file, ra, &ib.file, rb, &options, &mut Progress)?;
    if args.format == Format::Json {
        return Ok(Outcome::ok(json(&answer)));
    }
    let n = ra.rule.members();
    let mut out = String::from("Compare two rules\n");
    let _ = writeln!(out, "  A: {}, rule `{}`: {}", ia.name, ra.name, ra.text);
    let _ = writeln!(out, "  B: {}, rule `{}`: {}", ib.name, rb.name, rb.text);
    let how = match answer.matched_by {
        answers::Matching::Name => "Members matched by name",
        answers::Matching::Position => "Members matched by position",
    };
    let _ = writeln!(
        out,
        "  {how} ({} members; names below are A's).\n",
        drafting::thousands(n)
    );
    for r in [ra, rb] {
        if let Some(note) = drafting::binary_note(r) {
            out.push_str(&note);
        }
    }
    match (&answer.witness, answer.sampled) {
        (None, None) => {
            let checked = if answer.differing_coalitions.is_some() {
                format!(
                    "all {} coalitions, on the decision diagram of their difference",
                    drafting::coalitions(n)
                )
            } else if answer.patterns_are_coalitions {
                format!("all {} coalitions", drafting::coalitions(n))
            } else {
                format!(
                    "all {} patterns of members interchangeable in both, so on all {} coalitions",
                    drafting::thousands(answer.patterns),
                    drafting::coalitions(n)
                )
            };
            let _ = writeln!(
                out,
                "Same rule: A and B pass exactly the same coalitions (checked on {checked}).\n\
                 Every power index is therefore the same under both."
            );
        }
        (Some(w), _) => {
            let size = w.coalition.len();
            let which = if w.smallest {
                format!(
                    "A smallest coalition on which they differ ({} member{}; none smaller differs)",
                    drafting::thousands(size),
                    if size == 1 { "" } else { "s" }
                )
            } else {
                "A coalition on which they differ (found by sampling; no member can be dropped from it)"
                    .to_string()
            };
            let (yes, no) = if w.passes == "a" { ("A", "B") } else { ("B", "A") };
            let who = if w.coalition.is_empty() {
                "nobody (every member votes no)".to_string()
            } else {
                names(&ia.file, &w.coalition.indices)
            };
            let _ = writeln!(
                out,
                "Different rules. {which}:\n  {who}\n  voting yes (the others no): {yes} passes, {no} fails."
            );
            if let Some(count) = &answer.differing_coalitions {
                let _ = writeln!(
                    out,
                    "  They decide {} of the {} coalitions differently (exact).",
                    drafting::thousands(count),
                    drafting::coalitions(n)
                );
            }
            out.push('\n');
            changes(&mut out, &ia, ra, rb, &answer)?;
        }
        (None, Some(sampled)) => {
            let _ = writeln!(
                out,
                "Too many distinct members to compare every coalition ({} patterns; limit {}), and no\n\
                 difference among {} random coalitions.",
                drafting::thousands(answer.patterns),
                drafting::thousands(clout::toolkit::PROFILE_LIMIT),
                drafting::thousands(sampled)
            );
            if answer.verdict == Verdict::Different {
                let _ = writeln!(out, "Different rules all the same: their exact counts differ.\n");
                changes(&mut out, &ia, ra, rb, &answer)?;
            } else {
                let _ = writeln!(
                    out,
                    "Their exact counts agree (winning coalitions and every member's swings), which\n\
                     does not prove them the same rule: undecided."
                );
            }
        }
    }
    let _ = writeln!(out, "\n{CAUTION}");
    Ok(Outcome::ok(out))
}

fn signed(v: f64) -> String {
    if v.abs() < 5e-7 {
        "0".to_string()
    } else {
        format!("{v:+.6}")
    }
}

/// Each member's Banzhaf and Shapley-Shubik index under A and B, members
/// interchangeable in both on one row.
fn changes(
    out: &mut String,
    input: &Input,
    a: &CompiledRule,
    rb: &CompiledRule,
    answer: &Comparison,
) -> Result<(), Failure> {
    let (Some(members), Some(pa), Some(pb)) = (
        &answer.members,
        answer.passage_probability_a,
        answer.passage_probability_b,
    ) else {
        return Ok(());
    };
    let b = clout::toolkit::compare::reorder(&rb.rule, &answer.order)
        .map_err(|e| answers::toolkit_failure(&rb.name, e))?;
    let n = a.rule.members();
    let groups = clout::toolkit::profile::group_by_key(n, |i| {
        let col =
            |r: &clout::Rule<Vec<u64>>| (0..r.attributes()).map(|x| r.weight(x, i)).collect::<Vec<u64>>();
        (col(&a.rule), col(&b))
    });
    let grouped = groups.iter().any(|g| g.len() > 1);
    let mut t = Table::new(
        [
            ("member", Align::Left),
            ("banzhaf A", Align::Right),
            ("B", Align::Right),
            ("change", Align::Right),
            ("shapley-shubik A", Align::Right),
            ("B", Align::Right),
            ("change", Align::Right),
        ]
        .iter()
        .map(|(h, al)| (h.to_string(), *al))
        .collect(),
    );
    for g in &groups {
        let m = &members[g[0]];
        t.push(vec![
            label(&input.file, g),
            format!("{:.6}", m.banzhaf_a),
            format!("{:.6}", m.banzhaf_b),
            signed(m.banzhaf_b - m.banzhaf_a),
            format!("{:.6}", m.shapley_shubik_a),
            format!("{:.6}", m.shapley_shubik_b),
            signed(m.shapley_shubik_b - m.shapley_shubik_a),
        ]);
    }
    let _ = writeln!(out, "Power under A and under B (change = B - A):");
    out.push_str(&t.render().lines().map(|l| format!("  {l}\n")).collect::<String>());
    if grouped {
        let _ = writeln!(
            out,
            "  Rows hold members interchangeable in both rules; figures are each member's."
        );
    }
    let _ = writeln!(
        out,
        "  Probability of passage: A {}, B {}.\n\n{MODEL}",
        drafting::probability(pa),
        drafting::probability(pb)
    );
    Ok(())
}
