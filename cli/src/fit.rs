//! `clout fit`: integer weights and a quota whose normalized Banzhaf index
//! is closest to a target distribution of power. Targets come from a CSV
//! file (`member,share`, or `member,population` for Penrose's square-root
//! law), or from the Banzhaf indices of a rule (a rule file or `--game`).
//! Deterministic within a fixed step budget; see `clout::toolkit::fit`.

use std::fmt::Write;
use std::path::{Path, PathBuf};

use clap::Args;
use clout::toolkit::fit::{self, Options};
use clout::Rule;

use crate::drafting;
use crate::input::Input;
use crate::report::{CAUTION, MODEL};
use crate::text::{Align, Table};
use crate::{Failure, Outcome};

/// Search steps per second of `--seconds`: measured on the project's 2-core
/// machine (release build, one core: 1.6e9 steps of a 14-member fit in 6.5 s).
/// Slower machines take longer for the same answer.
const STEPS_PER_SECOND: f64 = 2.5e8;

#[derive(Args)]
pub struct FitArgs {
    /// Targets: a CSV file with the header `member,share` (target shares of power) or
    /// `member,population` (targets by Penrose's square-root law), `-` for standard input;
    /// or a rule file, whose members' Banzhaf indices are the targets.
    targets: Option<PathBuf>,
    /// Targets from the Banzhaf indices of this weighted game instead of a file.
    #[arg(long, value_name = "[q; w...]", conflicts_with = "targets")]
    game: Option<String>,
    /// Which rule of a rule file gives the targets (default: the first).
    #[arg(long, value_name = "NAME")]
    rule: Option<String>,
    /// Time budget in seconds; it is turned into a fixed number of search steps, so the same
    /// input gives the same output on every machine.
    #[arg(long, value_name = "S", default_value_t = 10.0)]
    seconds: f64,
    /// Largest total weight tried.
    #[arg(long, value_name = "W", default_value_t = 10_000)]
    max_total: u64,
}

/// Where the targets came from.
enum Source {
    Shares,
    Populations,
    Rule(String),
}

struct Targets {
    names: Vec<String>,
    values: Vec<f64>,
    source: Source,
    from: String,
}

pub fn run(args: &FitArgs) -> Result<Outcome, Failure> {
    if !(args.seconds > 0.0 && args.seconds <= 86_400.0) {
        return Err(Failure::input(format!(
            "--seconds {} is not a time budget\n  = hint: give a number of seconds between 0 and 86400",
            args.seconds
        )));
    }
    let t = targets(args)?;
    if t.names.len() > fit::MAX_MEMBERS {
        return Err(Failure::input(format!(
            "{}: {} members, more than the fit handles ({})\n  = hint: the search counts swings \
             exactly in 128-bit integers, which bounds it to {} members",
            t.from,
            t.names.len(),
            fit::MAX_MEMBERS,
            fit::MAX_MEMBERS
        )));
    }
    let goal = match t.source {
        Source::Populations => fit::penrose_targets(&t.values),
        _ => fit::normalize(&t.values),
    }
    .map_err(|e| Failure::input(format!("{}: {e}", t.from)))?;
    let budget = (args.seconds * STEPS_PER_SECOND) as u128;
    let found = fit::fit(
        &goal,
        Options {
            budget,
            max_total: args.max_total.max(1),
        },
    )
    .map_err(|e| Failure::input(format!("{}: {e}", t.from)))?;
    let rule =
        Rule::weighted(found.quota, found.weights.clone()).map_err(|e| Failure::input(e.to_string()))?;
    let exact = drafting::power_of(&rule, "fitted vote", drafting::BUDGET)?;
    let banzhaf: Vec<f64> = exact.members.iter().map(|m| m.banzhaf).collect();
    let (max, rms) = deviation(&banzhaf, &goal);

    let mut out = format!("Fit: weights and a quota for {} members\n", t.names.len());
    let kind = match &t.source {
        Source::Shares => "target shares of power".to_string(),
        Source::Populations => {
            "populations; targets by Penrose's square-root law (power in proportion to the square \
             root of population, so that every citizen's indirect influence is equal)"
                .to_string()
        }
        Source::Rule(name) => format!("the normalized Banzhaf indices of rule `{name}`"),
    };
    let _ = writeln!(out, "  targets: {}, {kind}", t.from);
    let _ = writeln!(
        out,
        "  search: deterministic, {:.1e} steps (--seconds {}), total weight up to {}; {:.1e} steps used{}\n",
        budget as f64,
        args.seconds,
        drafting::thousands(args.max_total),
        found.steps as f64,
        if found.exhausted { ", budget exhausted" } else { "" }
    );
    let total: u64 = found.weights.iter().sum();
    let _ = writeln!(
        out,
        "Weighted vote found: {}\n  total weight {}, quota {} ({:.2}% of the total)",
        notation(found.quota, &found.weights),
        drafting::thousands(total),
        drafting::thousands(found.quota),
        found.quota as f64 / total as f64 * 100.0
    );
    let mut table = Table::new(
        [
            ("member", Align::Left),
            ("weight", Align::Right),
            ("target", Align::Right),
            ("banzhaf", Align::Right),
            ("deviation", Align::Right),
        ]
        .iter()
        .map(|(h, a)| (h.to_string(), *a))
        .collect(),
    );
    for i in 0..t.names.len() {
        table.push(vec![
            t.names[i].clone(),
            drafting::thousands(found.weights[i]),
            format!("{:.6}", goal[i]),
            format!("{:.6}", banzhaf[i]),
            format!("{:+.6}", banzhaf[i] - goal[i]),
        ]);
    }
    out.push_str(
        &table
            .render()
            .lines()
            .map(|l| format!("  {l}\n"))
            .collect::<String>(),
    );
    let exactly = if max < 1e-12 { "  (the target is met)" } else { "" };
    let _ = writeln!(
        out,
        "Deviation: max {max:.6}, root-mean-square {rms:.6}{exactly}\n"
    );

    let q_star = fit::optimal_quota(&found.weights);
    let q_int = ((q_star * total as f64).ceil() as u64).clamp(total / 2 + 1, total);
    let b_star = fit::banzhaf(&found.weights, q_int).map_err(|e| Failure::input(e.to_string()))?;
    let (max_s, rms_s) = deviation(&b_star, &goal);
    let _ = writeln!(
        out,
        "For comparison, the optimal quota of Slomczynski & Zyczkowski (2006) for these weights,\n  \
         q = (1 + sqrt(sum of squared weights) / total weight) / 2 = {:.2}% of the total, is {} of {};\n  \
         with it the deviation is max {max_s:.6}, root-mean-square {rms_s:.6}.",
        q_star * 100.0,
        drafting::thousands(q_int),
        drafting::thousands(total)
    );
    let _ = writeln!(
        out,
        "\nThe notation lists the weights in the order of the table (`--game` reads it, naming the\n\
         members p1..p{}). Indices of the weighted vote are from the core's exact engines.\n{MODEL}\n{CAUTION}",
        t.names.len()
    );
    Ok(Outcome::ok(out))
}

fn deviation(index: &[f64], goal: &[f64]) -> (f64, f64) {
    let n = goal.len().max(1) as f64;
    let max = index
        .iter()
        .zip(goal)
        .map(|(a, b)| (a - b).abs())
        .fold(0.0, f64::max);
    let rms = (index
        .iter()
        .zip(goal)
        .map(|(a, b)| (a - b) * (a - b))
        .sum::<f64>()
        / n)
        .sqrt();
    (max, rms)
}

fn notation(quota: u64, weights: &[u64]) -> String {
    clout::toolkit::weighted::Representation {
        quota,
        weights: weights.to_vec(),
    }
    .notation()
}

fn targets(args: &FitArgs) -> Result<Targets, Failure> {
    let is_csv = args
        .targets
        .as_deref()
        .is_some_and(|p| p.extension().is_some_and(|e| e.eq_ignore_ascii_case("csv")));
    if is_csv || args.targets.as_deref() == Some(Path::new("-")) {
        let path = args.targets.as_deref().unwrap_or(Path::new("-"));
        let (name, text) = if path == Path::new("-") {
            let mut s = String::new();
            std::io::Read::read_to_string(&mut std::io::stdin(), &mut s)
                .map_err(|e| Failure::input(format!("cannot read standard input: {e}")))?;
            ("<stdin>".to_string(), s)
        } else {
            let s = std::fs::read_to_string(path)
                .map_err(|e| Failure::input(format!("cannot read `{}`: {e}", path.display())))?;
            (path.display().to_string(), s)
        };
        return parse_csv(&name, &text);
    }
    if args.targets.is_none() && args.game.is_none() {
        return Err(Failure::input(
            "no targets given: name a CSV file (`member,share` or `member,population`), a rule file, \
             or pass `--game \"[q; w1, ..., wn]\"`"
                .to_string(),
        ));
    }
    let input = Input::load(args.targets.as_deref(), args.game.as_deref(), false)?;
    let rule = input.rule(args.rule.as_deref())?;
    let power = drafting::power_of(&rule.rule, &rule.name, drafting::BUDGET)?;
    Ok(Targets {
        names: input.file.members.iter().map(|m| m.name.clone()).collect(),
        values: power.members.iter().map(|m| m.banzhaf).collect(),
        source: Source::Rule(rule.name.clone()),
        from: input.name.clone(),
    })
}

/// `member,share` or `member,population`, one member a line; `#` comments
/// and blank lines are skipped; shares may end in `%`.
fn parse_csv(name: &str, text: &str) -> Result<Targets, Failure> {
    let at = |line: usize, col: usize, msg: String, hint: &str| {
        Failure::input(format!("{name}:{line}:{col}: {msg}\n  = hint: {hint}"))
    };
    let mut rows = text
        .lines()
        .enumerate()
        .map(|(k, l)| (k + 1, l.trim_end_matches('\r')))
        .filter(|(_, l)| !l.trim().is_empty() && !l.trim_start().starts_with('#'));
    let header_hint = "the first line names the columns: `member,share` or `member,population`";
    let Some((hl, header)) = rows.next() else {
        return Err(at(
            1,
            1,
            "the file has no header and no members".to_string(),
            header_hint,
        ));
    };
    let cols: Vec<String> = header.split(',').map(|c| c.trim().to_ascii_lowercase()).collect();
    let source = match cols.as_slice() {
        [_, c] if c == "share" || c == "target" || c == "power" => Source::Shares,
        [_, c] if c == "population" => Source::Populations,
        _ => {
            return Err(at(
                hl,
                1,
                format!("unknown header `{}`", header.trim()),
                header_hint,
            ))
        }
    };
    let mut names: Vec<String> = Vec::new();
    let mut values = Vec::new();
    for (line, l) in rows {
        let Some((member, value)) = l.split_once(',') else {
            return Err(at(
                line,
                1,
                format!("`{}` has no comma", l.trim()),
                "write `name,number`",
            ));
        };
        let member = member.trim();
        if member.is_empty() {
            return Err(at(
                line,
                1,
                "empty member name".to_string(),
                "write `name,number`",
            ));
        }
        if names.iter().any(|n| n == member) {
            return Err(at(
                line,
                1,
                format!("member `{member}` appears twice"),
                "list each member once",
            ));
        }
        let col = l.find(',').unwrap_or(0) + 2;
        let raw = value.trim();
        let (digits, percent) = match raw.strip_suffix('%') {
            Some(d) => (d.trim(), true),
            None => (raw, false),
        };
        let v: f64 = digits
            .replace('_', "")
            .parse()
            .ok()
            .filter(|v: &f64| v.is_finite() && *v >= 0.0)
            .ok_or_else(|| {
                at(
                    line,
                    col,
                    format!("`{raw}` is not a non-negative number"),
                    "write a number such as 0.25, 25% or 412000",
                )
            })?;
        if percent && matches!(source, Source::Populations) {
            return Err(at(
                line,
                col,
                format!("`{raw}` is a percentage"),
                "populations are head counts",
            ));
        }
        names.push(member.to_string());
        values.push(v);
    }
    if names.is_empty() {
        return Err(at(
            hl,
            1,
            "no members listed".to_string(),
            "add one line `name,number` per member",
        ));
    }
    Ok(Targets {
        names,
        values,
        source,
        from: name.to_string(),
    })
}
