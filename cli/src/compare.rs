//! `clout compare A B`: are two drafts the same rule (the same coalitions
//! pass)? If not, a smallest coalition on which they differ and how each
//! member's power changes. Each of A and B is a rule file, `-`, or a
//! bracket notation such as "[3; 2, 1, 1]"; members are matched by name
//! when both rules name the same members, else by position (or as `--by`
//! says). See `clout::toolkit::compare`.

use std::fmt::Write;
use std::path::Path;

use clap::{Args, ValueEnum};
use clout::toolkit::compare::{self, Equivalence};
use clout_dsl::exact::Power;
use clout_dsl::CompiledRule;

use crate::drafting::{self, label, names};
use crate::input::Input;
use crate::report::{CAUTION, MODEL};
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
    let (order, how) = matching(&ia, &ib, args.by)?;
    let b = compare::reorder(&rb.rule, &order).map_err(|e| drafting::failure(&rb.name, e))?;
    let answer = compare::compare(&ra.rule, &b).map_err(|e| drafting::failure(&ra.name, e))?;
    let file = &ia.file;
    let n = ra.rule.members();
    let mut out = String::from("Compare two rules\n");
    let _ = writeln!(out, "  A: {}, rule `{}`: {}", ia.name, ra.name, ra.text);
    let _ = writeln!(out, "  B: {}, rule `{}`: {}", ib.name, rb.name, rb.text);
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
    match answer {
        Equivalence::Same { profiles } => {
            let checked = if profiles as u128 == 1u128 << n.min(127) {
                format!("all {} coalitions", drafting::coalitions(n))
            } else {
                format!(
                    "all {} patterns of members interchangeable in both, so on all {} coalitions",
                    drafting::thousands(profiles),
                    drafting::coalitions(n)
                )
            };
            let _ = writeln!(
                out,
                "Same rule: A and B pass exactly the same coalitions (checked on {checked}).\n\
                 Every power index is therefore the same under both."
            );
        }
        Equivalence::Different {
            coalition,
            first_passes,
            smallest,
        } => {
            let size = coalition.len();
            let which = if smallest {
                format!(
                    "A smallest coalition on which they differ ({} member{}; none smaller differs)",
                    drafting::thousands(size),
                    if size == 1 { "" } else { "s" }
                )
            } else {
                "A coalition on which they differ (found by sampling; no member can be dropped from it)"
                    .to_string()
            };
            let (yes, no) = if first_passes { ("A", "B") } else { ("B", "A") };
            let who = if coalition.is_empty() {
                "nobody (every member votes no)".to_string()
            } else {
                names(file, &coalition)
            };
            let _ = writeln!(
                out,
                "Different rules. {which}:\n  {who}\n  voting yes (the others no): {yes} passes, {no} fails.\n"
            );
            let pa = drafting::power_of(&ra.rule, &ra.name, args.budget)?;
            let pb = drafting::power_of(&b, &rb.name, args.budget)?;
            changes(&mut out, &ia, ra, &b, &pa, &pb);
        }
        Equivalence::Undecided { profiles, sampled } => {
            let pa = drafting::power_of(&ra.rule, &ra.name, args.budget)?;
            let pb = drafting::power_of(&b, &rb.name, args.budget)?;
            let differ = pa.winning != pb.winning
                || pa
                    .members
                    .iter()
                    .zip(&pb.members)
                    .any(|(x, y)| x.swings != y.swings);
            let _ = writeln!(
                out,
                "Too many distinct members to compare every coalition ({} patterns; limit {}), and no\n\
                 difference among {} random coalitions.",
                drafting::thousands(profiles),
                drafting::thousands(clout::toolkit::PROFILE_LIMIT),
                drafting::thousands(sampled)
            );
            if differ {
                let _ = writeln!(out, "Different rules all the same: their exact counts differ.\n");
                changes(&mut out, &ia, ra, &b, &pa, &pb);
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

/// `order[i]`: B's member matched to A's member i, and how.
fn matching(a: &Input, b: &Input, by: Option<Matching>) -> Result<(Vec<usize>, &'static str), Failure> {
    let na: Vec<&str> = a.file.members.iter().map(|m| m.name.as_str()).collect();
    let nb: Vec<&str> = b.file.members.iter().map(|m| m.name.as_str()).collect();
    let by_name: Option<Vec<usize>> = na.iter().map(|x| nb.iter().position(|y| y == x)).collect();
    let by_name = by_name.filter(|_| na.len() == nb.len());
    match (by, by_name) {
        (Some(Matching::Name), None) => {
            let only_a: Vec<&str> = na.iter().filter(|x| !nb.contains(x)).copied().take(8).collect();
            let only_b: Vec<&str> = nb.iter().filter(|x| !na.contains(x)).copied().take(8).collect();
            Err(Failure::input(format!(
                "the rules name different members (only in A: {}; only in B: {})\n  = hint: match them by position with --by position",
                list_or_none(&only_a),
                list_or_none(&only_b)
            )))
        }
        (Some(Matching::Name) | None, Some(order)) => Ok((order, "Members matched by name")),
        (Some(Matching::Position) | None, _) if na.len() == nb.len() => {
            Ok(((0..na.len()).collect(), "Members matched by position"))
        }
        _ => Err(Failure::input(format!(
            "A has {} members and B has {}: they cannot be matched\n  = hint: compare rules over the same members",
            na.len(),
            nb.len()
        ))),
    }
}

fn list_or_none(names: &[&str]) -> String {
    if names.is_empty() {
        "none".to_string()
    } else {
        names.join(", ")
    }
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
    b: &clout::Rule<Vec<u64>>,
    pa: &Power,
    pb: &Power,
) {
    let n = a.rule.members();
    let groups = clout::toolkit::profile::group_by_key(n, |i| {
        let col =
            |r: &clout::Rule<Vec<u64>>| (0..r.attributes()).map(|x| r.weight(x, i)).collect::<Vec<u64>>();
        (col(&a.rule), col(b))
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
        let (x, y) = (&pa.members[g[0]], &pb.members[g[0]]);
        t.push(vec![
            label(&input.file, g),
            format!("{:.6}", x.banzhaf),
            format!("{:.6}", y.banzhaf),
            signed(y.banzhaf - x.banzhaf),
            format!("{:.6}", x.shapley_shubik),
            format!("{:.6}", y.shapley_shubik),
            signed(y.shapley_shubik - x.shapley_shubik),
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
        drafting::probability(pa.passage_probability),
        drafting::probability(pb.passage_probability)
    );
}
