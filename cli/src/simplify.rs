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
use clout::toolkit::profile;
use clout::toolkit::weighted::{self, Level, Minimality, Representation, TradingTransfer, Verdict};
use clout_dsl::{CompiledRule, RuleFile};

use crate::drafting::{self, names, thousands};
use crate::input::Input;
use crate::report::CAUTION;
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
}

pub fn run(args: &SimplifyArgs) -> Result<Outcome, Failure> {
    let s = &args.source;
    let input = Input::load(s.file.as_deref(), s.game.as_deref(), false)?;
    let rule = input.rule(s.rule.as_deref())?;
    let file = &input.file;
    let n = rule.rule.members();
    let mut out = drafting::heading("Simplify", &input, rule);
    let (table, level) = match weighted::table_for(&rule.rule) {
        Ok(t) => t,
        Err(e @ clout::toolkit::Error::TooLarge { .. }) => return too_large(&input, rule, e, args.budget),
        Err(e) => return Err(drafting::failure(&rule.name, e)),
    };
    // With one member per type, patterns are coalitions.
    let singletons = level == Level::Members || table.types().iter().all(|t| t.len() == 1);
    let unit = if singletons {
        "coalitions"
    } else {
        "patterns of interchangeable members"
    };
    let everything = if singletons {
        format!("all {} coalitions", drafting::coalitions(n))
    } else {
        format!(
            "all {} patterns of interchangeable members, so on all {} coalitions",
            thousands(table.len()),
            drafting::coalitions(n)
        )
    };

    let dummies = weighted::dummies(&table);
    dummies_section(&mut out, file, &dummies, n);

    let w = weighted::test(&table).map_err(|e| drafting::failure(&rule.name, e))?;
    match &w.verdict {
        Verdict::Weighted {
            representation,
            minimal,
        } => {
            weighted_section(&mut out, file, representation, *minimal);
            let check = cross_check(rule, representation, args.budget)?;
            if !weighted::same_on_table(
                &table,
                &representation
                    .rule()
                    .map_err(|e| drafting::failure(&rule.name, e))?,
            ) {
                return Err(Failure::input(format!(
                    "rule `{}`: internal check failed: the weighted vote differs from the rule",
                    rule.name
                )));
            }
            let _ = writeln!(
                out,
                "Checked exactly: the weighted vote passes the same coalitions as the rule on {everything};\n  {check}"
            );
        }
        Verdict::NotWeighted {
            transfer,
            intersection,
        } => {
            if !transfer.holds(n, |c| profile::passes(&rule.rule, c)) {
                return Err(Failure::input(format!(
                    "rule `{}`: internal check failed: the trading transfer does not hold",
                    rule.name
                )));
            }
            transfer_section(&mut out, file, transfer);
            intersection_section(&mut out, file, intersection, &everything, args.parts);
        }
    }
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
    Ok(Outcome::ok(out))
}

fn dummies_section(out: &mut String, file: &RuleFile, dummies: &[usize], n: usize) {
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
fn weights_table(out: &mut String, file: &RuleFile, r: &Representation) {
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

fn weighted_section(out: &mut String, file: &RuleFile, r: &Representation, minimal: Minimality) {
    let _ = writeln!(
        out,
        "Weighted: yes. The rule passes exactly the coalitions whose weights reach the quota of\n  {}\n  (weights in declaration order; `--game` and `compare` read this notation):",
        r.notation()
    );
    weights_table(out, file, r);
    let total = thousands(r.total());
    let _ = match minimal {
        Minimality::Proved => writeln!(
            out,
            "  Least total weight: {total}; no integer weights with a smaller total give the same rule."
        ),
        Minimality::ProvedAmongEqual => writeln!(
            out,
            "  Least total weight: {total} among weights that are equal for interchangeable members\n  \
             (members with identical weights in the rule); unequal weights were not searched."
        ),
        Minimality::NotProved => writeln!(
            out,
            "  Total weight {total}: the solver stopped at its node limit, so a smaller total may exist."
        ),
    };
    out.push('\n');
}

/// The exact engines on both rules: same winning and minimal winning
/// counts and the same swings for every member.
fn cross_check(rule: &CompiledRule, r: &Representation, budget: u128) -> Result<String, Failure> {
    let new = r.rule().map_err(|e| drafting::failure(&rule.name, e))?;
    let (Ok(a), Ok(b)) = (
        drafting::power_of(&rule.rule, &rule.name, budget),
        drafting::power_of(&new, "weighted vote", budget),
    ) else {
        return Ok("the exact engines were not run (over the --budget).".to_string());
    };
    let same_swings = a
        .members
        .iter()
        .zip(&b.members)
        .all(|(x, y)| x.swings == y.swings);
    if a.winning != b.winning
        || !same_swings
        || (a.minimal_winning.is_some()
            && b.minimal_winning.is_some()
            && a.minimal_winning != b.minimal_winning)
    {
        return Err(Failure::input(format!(
            "rule `{}`: internal check failed: the exact engines disagree with the weighted vote",
            rule.name
        )));
    }
    let minimal = match &a.minimal_winning {
        Some(m) => format!(", {} minimal winning", crate::text::count(m)),
        None => String::new(),
    };
    Ok(format!(
        "the exact engines agree ({} winning coalitions{minimal}, the same swing count for every member).",
        crate::text::count(&a.winning)
    ))
}

fn transfer_section(out: &mut String, file: &RuleFile, t: &TradingTransfer) {
    let k = t.winning.len();
    let _ = writeln!(
        out,
        "Weighted: no. No weights and quota give this rule. Proof, a trading transfer\n  \
         (Taylor & Zwicker 1999): {k} winning coalitions"
    );
    for (i, c) in t.winning.iter().enumerate() {
        let _ = writeln!(out, "    X{}  {}", i + 1, names(file, c));
    }
    let _ = writeln!(out, "  and {k} losing coalitions");
    for (i, c) in t.losing.iter().enumerate() {
        let _ = writeln!(out, "    Y{}  {}", i + 1, names(file, c));
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
    parts: &[Representation],
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
        let _ = writeln!(out, "  {}. {}", i + 1, r.notation());
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

/// Too many distinct members for the exact test: what can still be said.
fn too_large(
    input: &Input,
    rule: &CompiledRule,
    err: clout::toolkit::Error,
    budget: u128,
) -> Result<Outcome, Failure> {
    let Some((attribute, quota)) = rule.rule.single_threshold() else {
        return Err(drafting::failure(&rule.name, err));
    };
    let mut out = drafting::heading("Simplify", input, rule);
    let power = drafting::power_of(&rule.rule, &rule.name, budget)?;
    let dummies: Vec<usize> = (0..rule.rule.members())
        .filter(|&i| power.members[i].dummy)
        .collect();
    dummies_section(&mut out, &input.file, &dummies, rule.rule.members());
    let r = Representation {
        quota,
        weights: rule.rule.attribute_weights(attribute).to_vec(),
    };
    let _ = writeln!(
        out,
        "Weighted: yes, as written: {}.\n  A least-total representation needs the exact test, which is too large here:",
        r.notation()
    );
    let reason = drafting::failure(&rule.name, err).message;
    let _ = write!(out, "  {}", reason.trim_start_matches("error: "));
    let _ = writeln!(out, "\n{CAUTION}");
    Ok(Outcome::ok(out))
}
