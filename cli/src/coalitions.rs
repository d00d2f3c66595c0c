//! `clout coalitions`: the minimal winning or minimal blocking coalitions,
//! listed by name with their exact number. Members with identical weights
//! are interchangeable, so coalitions of such members are listed as
//! patterns ("any 218 of rep1..rep435"); `--each` lists them one by one.
//! See `clout::toolkit::coalitions`.

use std::fmt::Write;

use clap::{ArgGroup, Args};
use clout::toolkit::coalitions::{self, Kind};
use clout::toolkit::profile::ProfileTable;
use clout::toolkit::PROFILE_LIMIT;
use clout_dsl::RuleFile;

use crate::drafting::{self, label, names};
use crate::input::Input;
use crate::report::CAUTION;
use crate::text::{self, Align, Table};
use crate::{Failure, Outcome, Source};

#[derive(Args)]
#[command(group(ArgGroup::new("kind").required(true).args(["minimal_winning", "minimal_blocking"])))]
pub struct CoalitionsArgs {
    #[command(flatten)]
    source: Source,
    /// Coalitions that pass, and fail without any one of their members.
    #[arg(long)]
    minimal_winning: bool,
    /// Coalitions that can stop the rule by voting no, and cannot without any one of their members.
    #[arg(long)]
    minimal_blocking: bool,
    /// Most lines listed.
    #[arg(long, value_name = "N", default_value_t = 50)]
    limit: usize,
    /// List every coalition of each pattern of interchangeable members.
    #[arg(long)]
    each: bool,
}

pub fn run(args: &CoalitionsArgs) -> Result<Outcome, Failure> {
    let s = &args.source;
    let input = Input::load(s.file.as_deref(), s.game.as_deref(), false)?;
    let rule = input.rule(s.rule.as_deref())?;
    let file = &input.file;
    let (kind, what, meaning) = if args.minimal_winning {
        (
            Kind::MinimalWinning,
            "minimal winning coalitions",
            "each passes, and fails without any one of its members",
        )
    } else {
        (
            Kind::MinimalBlocking,
            "minimal blocking coalitions",
            "each, voting no, defeats the motion whatever the others do, and none of its \
             members can be spared",
        )
    };
    let table = ProfileTable::of_rule(&rule.rule, drafting::groups(rule), PROFILE_LIMIT)
        .map_err(|e| drafting::failure(&rule.name, e))?;
    let listing = coalitions::list(&table, kind).map_err(|e| drafting::failure(&rule.name, e))?;
    let heading = format!("{}{}", what[..1].to_uppercase(), &what[1..]);
    let mut out = drafting::heading(&heading, &input, rule);
    // Patterns read better than lists once a group has three or more members.
    let grouped = table.types().iter().any(|t| t.len() > 2);
    let total = text::count(&listing.total);
    let mut shown = 0;
    let patterns_mode = grouped && !args.each;
    let mut table_out;
    if patterns_mode {
        let _ = writeln!(
            out,
            "{} {what} in {} patterns of interchangeable members;\n{meaning}:",
            total,
            drafting::thousands(listing.patterns.len())
        );
        table_out = Table::new(vec![
            ("members".to_string(), Align::Right),
            ("coalitions".to_string(), Align::Right),
            ("pattern".to_string(), Align::Left),
        ]);
        for p in listing.patterns.iter().take(args.limit) {
            let count = table
                .coalitions_with(p)
                .map_err(|e| drafting::failure(&rule.name, e))?;
            table_out.push(vec![
                drafting::thousands(table.head_count(p)),
                text::count(&count),
                pattern(file, &table, p),
            ]);
            shown += 1;
        }
    } else {
        let _ = writeln!(out, "{total} {what};\n{meaning}:");
        table_out = Table::new(vec![
            ("members".to_string(), Align::Right),
            ("coalition".to_string(), Align::Left),
        ]);
        'all: for p in &listing.patterns {
            for c in coalitions::expand(&table, p, args.limit - shown) {
                if shown == args.limit {
                    break 'all;
                }
                table_out.push(vec![drafting::thousands(c.len()), names(file, &c)]);
                shown += 1;
            }
        }
    }
    out.push_str(&indent(&table_out.render()));
    let complete = if patterns_mode {
        shown == listing.patterns.len()
    } else {
        shown.to_string() == listing.total
    };
    if !complete {
        let _ = writeln!(
            out,
            "(the first {} shown, fewest members first; --limit N shows more)",
            drafting::thousands(shown)
        );
    }
    if text::is_rounded(&listing.total) {
        let _ = writeln!(out, "≈ marks a rounded count; exactly {}.", listing.total);
    }
    let _ = writeln!(out, "\n{CAUTION}");
    Ok(Outcome::ok(out))
}

/// "executive, 218 of rep1..rep435, all 3 of north, river, orchard".
fn pattern(file: &RuleFile, table: &ProfileTable, digits: &[usize]) -> String {
    let mut parts = Vec::new();
    for (t, &d) in digits.iter().enumerate() {
        let members = &table.types()[t];
        if d == 0 {
            continue;
        }
        let part = match (members.len(), d) {
            (1, _) => names(file, members),
            (c, d) if c == d => format!("all {c} of {}", label(file, members)),
            (_, d) => format!("{} of {}", drafting::thousands(d), label(file, members)),
        };
        parts.push(part);
    }
    if parts.is_empty() {
        "nobody (the empty coalition)".to_string()
    } else {
        parts.join(", ")
    }
}

fn indent(s: &str) -> String {
    s.lines().map(|l| format!("  {l}\n")).collect()
}
