//! `clout simplify`: is the rule secretly simpler than it looks? Its
//! dummies, whether it is one weighted vote (and with which integer weights
//! of least total), or why not (a trading transfer) and how few weighted
//! votes it takes together.
//!
//! Every answer is checked exactly before it is printed: the weighted vote
//! against the rule on every coalition (or every pattern of interchangeable
//! members) and by the exact engines; the trading transfer coalition by
//! coalition; the intersection on every pattern. See `clout::toolkit`.

use std::fmt::Write;

use clap::Args;
use clout::drafting::{self as answers, Checked, LeastTotal, Members, Search, Simplification, WeightedVote};
use clout_dsl::RuleFile;

use crate::drafting::{self, names, thousands, Format};
use crate::input::Input;
use crate::progress::Progress;
use crate::report::{json, CAUTION};
use crate::{parse_steps, Failure, Outcome, Source};

#[derive(Args)]
pub struct SimplifyArgs {
    #[command(flatten)]
    source: Source,
    /// Most elementary steps each exact cross-check by the engines may take.
    #[arg(long, value_name = "STEPS", value_parser = parse_steps, default_value = "5e10")]
    budget: u128,
    /// How many weighted votes of an intersection to print.
    #[arg(long, value_name = "N", default_value_t = 4)]
    parts: usize,
    /// Output format (JSON: `clout::drafting::Simplification`, keys in the README).
    #[arg(long, value_enum, default_value_t = Format::Text)]
    format: Format,
}

pub fn run(args: &SimplifyArgs) -> Result<Outcome, Failure> {
    let s = &args.source;
    let input = Input::load(s.file.as_deref(), s.game.as_deref(), false)?;
    let rule = input.rule(s.rule.as_deref())?;
    let options = answers::SimplifyOptions { budget: args.budget };
    let answer = answers::simplify(&input.file, rule, &options, &mut Progress)?;
    if args.format == Format::Json {
        return Ok(Outcome::ok(json(&answer)));
    }
    let file = &input.file;
    let n = rule.rule.members();
    let mut out = drafting::heading("Simplify", &input, rule);
    dummies_section(&mut out, file, &answer.dummies, n);
    let (Some(checked), Some(search)) = (&answer.checked, &answer.search) else {
        too_large(&mut out, &answer);
        return Ok(Outcome::ok(out));
    };
    let everything = if checked.patterns_are_coalitions {
        format!("all {} coalitions", drafting::coalitions(n))
    } else {
        format!(
            "all {} patterns of interchangeable members, so on all {} coalitions",
            thousands(checked.patterns),
            drafting::coalitions(n)
        )
    };
    match (
        &answer.weighted_vote,
        &answer.trading_transfer,
        &answer.intersection,
    ) {
        (Some(vote), _, _) => {
            weighted_section(&mut out, file, vote, answer.least_total);
            let _ = writeln!(
                out,
                "Checked exactly: the weighted vote passes the same coalitions as the rule on {everything};\n  {}",
                engines(checked)
            );
        }
        (None, Some(transfer), Some(intersection)) => {
            transfer_section(&mut out, file, &transfer.winning, &transfer.losing);
            intersection_section(&mut out, file, intersection, &everything, args.parts);
        }
        _ => {}
    }
    footer(&mut out, checked, search);
    Ok(Outcome::ok(out))
}

fn footer(out: &mut String, checked: &Checked, w: &Search) {
    let unit = if checked.patterns_are_coalitions {
        "coalitions"
    } else {
        "patterns of interchangeable members"
    };
    let _ = writeln!(
        out,
        "\nFound by an integer program over {} minimal winning and {} maximal losing {unit} \
         ({} round{} of cutting planes), solved in floating point and then checked in exact integers.",
        thousands(w.minimal_winning),
        thousands(w.maximal_losing),
        w.rounds,
        if w.rounds == 1 { "" } else { "s" }
    );
    let _ = writeln!(out, "\n{CAUTION}");
}

fn dummies_section(out: &mut String, file: &RuleFile, dummies: &Members, n: usize) {
    let dummies = &dummies.indices;
    if dummies.is_empty() {
        let _ = writeln!(out, "Dummies: none; every member's vote decides some outcome.\n");
        return;
    }
    if dummies.len() == n {
        let _ = writeln!(
            out,
            "Dummies: every member. The outcome never depends on the votes: the rule always\n\
             gives the same result.\n"
        );
        return;
    }
    let others: Vec<usize> = (0..n).filter(|i| !dummies.contains(i)).collect();
    let _ = writeln!(
        out,
        "Dummies: {} ({} of {} members).\n  Their votes never change the outcome, so the rule is the rule of the others alone:\n  {}.\n",
        names(file, dummies),
        thousands(dummies.len()),
        thousands(n),
        names(file, &others)
    );
}

/// One line per weight, heaviest first: the weight and the members holding it.
fn weights_table(out: &mut String, file: &RuleFile, vote: &WeightedVote) {
    let r = &vote.representation;
    let mut weights: Vec<u64> = r.weights.clone();
    weights.sort_unstable_by(|a, b| b.cmp(a));
    weights.dedup();
    let digits = thousands(r.total()).len().max(5);
    for w in weights {
        let members: Vec<usize> = (0..r.weights.len()).filter(|&i| r.weights[i] == w).collect();
        let each = if members.len() > 1 { " each" } else { "" };
        let _ = writeln!(
            out,
            "    {:>digits$}{each:<5}  {}",
            thousands(w),
            names(file, &members)
        );
    }
    let _ = writeln!(
        out,
        "    {:>digits$}       quota, of {} in all",
        thousands(r.quota),
        thousands(r.total())
    );
}

fn weighted_section(out: &mut String, file: &RuleFile, vote: &WeightedVote, least: Option<LeastTotal>) {
    let r = &vote.representation;
    let _ = writeln!(
        out,
        "Weighted: yes. The rule passes exactly the coalitions whose weights reach the quota of\n  {}\n  (weights in declaration order; `--game` and `compare` read this notation):",
        r.notation()
    );
    weights_table(out, file, vote);
    let total = thousands(r.total());
    let _ = match least {
        Some(LeastTotal::Proved) => writeln!(
            out,
            "  Least total weight: {total}; no integer weights with a smaller total give the same rule."
        ),
        Some(LeastTotal::AmongEqualWeights) => writeln!(
            out,
            "  Least total weight: {total} among weights that are equal for interchangeable members\n  \
             (members with identical weights in the rule); unequal weights were not searched."
        ),
        Some(LeastTotal::NotProved) => writeln!(
            out,
            "  Total weight {total}: the solver stopped at its node limit, so a smaller total may exist."
        ),
        Some(LeastTotal::NotSearched) | None => Ok(()),
    };
    out.push('\n');
}

/// What the exact engines said about the rule and its weighted vote.
fn engines(checked: &Checked) -> String {
    let Some(winning) = &checked.winning_coalitions else {
        return "the exact engines were not run (over the --budget).".to_string();
    };
    let minimal = match &checked.minimal_winning_coalitions {
        Some(m) => format!(", {} minimal winning", crate::text::count(m)),
        None => String::new(),
    };
    format!(
        "the exact engines agree ({} winning coalitions{minimal}, the same swing count for every member).",
        crate::text::count(winning)
    )
}

fn transfer_section(out: &mut String, file: &RuleFile, winning: &[Members], losing: &[Members]) {
    let k = winning.len();
    let _ = writeln!(
        out,
        "Weighted: no. No weights and quota give this rule. Proof, a trading transfer\n  \
         (Taylor & Zwicker 1999): {k} winning coalitions"
    );
    for (i, c) in winning.iter().enumerate() {
        let _ = writeln!(out, "    X{}  {}", i + 1, names(file, &c.indices));
    }
    let _ = writeln!(out, "  and {k} losing coalitions");
    for (i, c) in losing.iter().enumerate() {
        let _ = writeln!(out, "    Y{}  {}", i + 1, names(file, &c.indices));
    }
    let _ = writeln!(
        out,
        "  hold every member equally often (the Y are the X with members traded). Any weights would\n  \
         give the X the same total weight as the Y, yet every X must outweigh every Y.\n"
    );
}

fn intersection_section(
    out: &mut String,
    file: &RuleFile,
    parts: &[WeightedVote],
    everything: &str,
    shown: usize,
) {
    let k = parts.len();
    let _ = writeln!(
        out,
        "Dimension: at most {k} (at least 2, since the rule is not weighted). The rule passes exactly\n  \
         when all of these {k} weighted votes pass (checked on {everything}):"
    );
    for (i, r) in parts.iter().enumerate().take(shown) {
        let _ = writeln!(out, "  {}. {}", i + 1, r.representation.notation());
        weights_table(out, file, r);
    }
    if parts.len() > shown {
        let _ = writeln!(
            out,
            "  ... and {} more (--parts N shows more). The search is greedy: fewer may do.",
            parts.len() - shown
        );
    }
}

/// Too many distinct members for the exact test: what could still be said.
fn too_large(out: &mut String, answer: &Simplification) {
    if let Some(vote) = &answer.weighted_vote {
        let _ = writeln!(
            out,
            "Weighted: yes, as written: {}.\n  A least-total representation needs the exact test, which is too large here:",
            vote.representation.notation()
        );
    }
    if let Some(reason) = &answer.too_large {
        let _ = writeln!(out, "  {reason}");
    }
    let _ = writeln!(out, "\n{CAUTION}");
}
