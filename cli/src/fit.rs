//! `clout fit`: integer weights and a quota whose normalized Banzhaf index
//! is closest to a target distribution of power. Targets come from a CSV
//! file (`member,share`, or `member,population` for Penrose's square-root
//! law), or from the Banzhaf indices of a rule (a rule file or `--game`).
//! Deterministic within a fixed step budget; see `clout::toolkit::fit`.

use std::fmt::Write;
use std::path::{Path, PathBuf};

use clap::Args;
use clout::drafting::{self as answers, FitOptions, BUDGET};
use clout::escape;
use clout_dsl::data::MAX_TABLE_LEN;

use crate::drafting::{self, Format};
use crate::input::{read_bounded, Input};
use crate::progress::Progress;
use crate::report::{json, CAUTION, MODEL};
use crate::text::{Align, Table};
use crate::{Failure, Outcome};

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
    /// Output format (JSON: `clout::drafting::Fit`, keys in the README).
    #[arg(long, value_enum, default_value_t = Format::Text)]
    format: Format,
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
    let goal = answers::Targets {
        names: t.names.clone(),
        values: t.values.clone(),
        populations: matches!(t.source, Source::Populations),
    };
    let options = FitOptions {
        seconds: args.seconds,
        max_total: args.max_total,
    };
    let found = answers::fit(&goal, &options, &mut Progress).map_err(|f| {
        Failure::from(clout::Failure {
            message: format!("{}: {}", t.from, f.message),
            ..f
        })
    })?;
    if args.format == Format::Json {
        return Ok(Outcome::ok(json(&found)));
    }
    let vote = &found.weighted_vote.representation;

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
        found.budget as f64,
        args.seconds,
        drafting::thousands(args.max_total),
        found.steps as f64,
        if found.exhausted { ", budget exhausted" } else { "" }
    );
    let total = vote.total();
    let _ = writeln!(
        out,
        "Weighted vote found: {}\n  total weight {}, quota {} ({:.2}% of the total)",
        vote.notation(),
        drafting::thousands(total),
        drafting::thousands(vote.quota),
        vote.quota as f64 / total as f64 * 100.0
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
    for m in &found.members {
        table.push(vec![
            m.name.clone(),
            drafting::thousands(m.weight),
            format!("{:.6}", m.target),
            format!("{:.6}", m.banzhaf),
            format!("{:+.6}", m.deviation),
        ]);
    }
    out.push_str(
        &table
            .render()
            .lines()
            .map(|l| format!("  {l}\n"))
            .collect::<String>(),
    );
    let (max, rms) = (found.max_deviation, found.rms_deviation);
    let exactly = if max < 1e-12 { "  (the target is met)" } else { "" };
    let _ = writeln!(
        out,
        "Deviation: max {max:.6}, root-mean-square {rms:.6}{exactly}\n"
    );
    let o = &found.optimal_quota;
    let _ = writeln!(
        out,
        "For comparison, the optimal quota of Slomczynski & Zyczkowski (2006) for these weights,\n  \
         q = (1 + sqrt(sum of squared weights) / total weight) / 2 = {:.2}% of the total, is {} of {};\n  \
         with it the deviation is max {:.6}, root-mean-square {:.6}.",
        o.share * 100.0,
        drafting::thousands(o.quota),
        drafting::thousands(total),
        o.max_deviation,
        o.rms_deviation
    );
    let _ = writeln!(
        out,
        "\nThe notation lists the weights in the order of the table (`--game` reads it, naming the\n\
         members p1..p{}). Indices of the weighted vote are from the core's exact engines.\n{MODEL}\n{CAUTION}",
        t.names.len()
    );
    Ok(Outcome::ok(out))
}

fn targets(args: &FitArgs) -> Result<Targets, Failure> {
    let is_csv = args
        .targets
        .as_deref()
        .is_some_and(|p| p.extension().is_some_and(|e| e.eq_ignore_ascii_case("csv")));
    if is_csv || args.targets.as_deref() == Some(Path::new("-")) {
        let path = args.targets.as_deref().unwrap_or(Path::new("-"));
        // Bounded like every table (8 MiB): `/dev/zero` is refused, not read whole.
        let (name, bytes) = if path == Path::new("-") {
            let bytes = read_bounded(std::io::stdin(), MAX_TABLE_LEN)
                .map_err(|e| Failure::input(format!("cannot read standard input: {e}")))?;
            ("<stdin>".to_string(), bytes)
        } else {
            let name = escape::terminal(&path.to_string_lossy()).into_owned();
            let bytes = std::fs::File::open(path)
                .and_then(|f| read_bounded(f, MAX_TABLE_LEN))
                .map_err(|e| Failure::input(format!("cannot read `{name}`: {e}")))?;
            (name, bytes)
        };
        if bytes.len() > MAX_TABLE_LEN {
            return Err(Failure::input(format!(
                "`{name}` is longer than the limit of {MAX_TABLE_LEN} bytes for a table; it was not read further"
            )));
        }
        let text = String::from_utf8(bytes).map_err(|e| {
            Failure::input(format!(
                "`{name}` is not UTF-8 text (byte {})",
                e.utf8_error().valid_up_to()
            ))
        })?;
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
    let power = answers::exact_power(&rule.rule, &rule.name, BUDGET, &mut Progress)?;
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
