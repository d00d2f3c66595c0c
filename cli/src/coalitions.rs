//! `clout coalitions`: the minimal winning or minimal blocking coalitions,
//! listed by name with their exact number. Members with identical weights
//! are interchangeable, so coalitions of such members are listed as
//! patterns ("any 218 of rep1..rep435"); `--each` lists them one by one.
//! See `clout::toolkit::coalitions`.

use std::fmt::Write;

use clap::{ArgGroup, Args};
use clout::drafting::{self as answers, CoalitionKind, CoalitionOptions, Pattern};
use clout_dsl::RuleFile;

use crate::drafting::{self, label, names, Format};
use crate::input::Input;
use crate::progress::Progress;
use crate::report::{json, CAUTION};
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
    /// Output format (JSON: `clout::drafting::Coalitions`, both lists up to --limit; keys in the README).
    #[arg(long, value_enum, default_value_t = Format::Text)]
    format: Format,
}

pub fn run(args: &CoalitionsArgs) -> Result<Outcome, Failure> {
    let s = &args.source;
    let input = Input::load(s.file.as_deref(), s.game.as_deref(), false)?;
    let rule = input.rule(s.rule.as_deref())?;
    let file = &input.file;
    let (kind, what, meaning) = if args.minimal_winning {
        (
            CoalitionKind::MinimalWinning,
            "minimal winning coalitions",
            "each passes, and fails without any one of its members",
        )
    } else {
        (
            CoalitionKind::MinimalBlocking,
            "minimal blocking coalitions",
            "each, voting no, defeats the motion whatever the others do, and none of its \
             members can be spared",
        )
    };
    let options = CoalitionOptions {
        kind,
        limit: args.limit,
    };
    let listing = answers::coalitions(file, rule, &options, &mut Progress)?;
    if args.format == Format::Json {
        return Ok(Outcome::ok(json(&listing)));
    }
    let heading = format!("{}{}", what[..1].to_uppercase(), &what[1..]);
    let mut out = drafting::heading(&heading, &input, rule);
    // Patterns read better than lists once a group has three or more members.
    let grouped = drafting::groups(rule).iter().any(|t| t.len() > 2);
    let total = text::count(&listing.count);
    // No patterns when counted on the decision diagram (past the pattern table's limit).
    let patterns_mode = grouped && !args.each && listing.pattern_count > 0;
    let (table_out, complete) = if patterns_mode {
        let _ = writeln!(
            out,
            "{} {what} in {} patterns of interchangeable members;\n{meaning}:",
            total,
            drafting::thousands(listing.pattern_count)
        );
        let mut t = Table::new(vec![
            ("members".to_string(), Align::Right),
            ("coalitions".to_string(), Align::Right),
            ("pattern".to_string(), Align::Left),
        ]);
        for p in &listing.patterns {
            t.push(vec![
                drafting::thousands(p.size),
                text::count(&p.count),
                pattern(file, p),
            ]);
        }
        (t, listing.patterns.len() == listing.pattern_count)
    } else {
        let how = if listing.pattern_count == 0 && listing.count != "0" {
            " (counted exactly on the rule's decision diagram)"
        } else {
            ""
        };
        let _ = writeln!(out, "{total} {what}{how};\n{meaning}:");
        let mut t = Table::new(vec![
            ("members".to_string(), Align::Right),
            ("coalition".to_string(), Align::Left),
        ]);
        for c in &listing.coalitions {
            t.push(vec![drafting::thousands(c.len()), names(file, &c.indices)]);
        }
        (t, listing.coalitions.len().to_string() == listing.count)
    };
    let shown = if patterns_mode {
        listing.patterns.len()
    } else {
        listing.coalitions.len()
    };
    out.push_str(&indent(&table_out.render()));
    if !complete {
        let _ = writeln!(
            out,
            "(the first {} shown, fewest members first; --limit N shows more)",
            drafting::thousands(shown)
        );
    }
    if text::is_rounded(&listing.count) {
        let _ = writeln!(out, "≈ marks a rounded count; exactly {}.", listing.count);
    }
    let _ = writeln!(out, "\n{CAUTION}");
    Ok(Outcome::ok(out))
}

/// "executive, 218 of rep1..rep435, all 3 of north, river, orchard".
fn pattern(file: &RuleFile, p: &Pattern) -> String {
    let parts: Vec<String> = p
        .parts
        .iter()
        .map(|part| match (part.of.len(), part.take) {
            (1, _) => names(file, &part.of.indices),
            (c, d) if c == d => format!("all {c} of {}", label(file, &part.of.indices)),
            (_, d) => format!("{} of {}", drafting::thousands(d), label(file, &part.of.indices)),
        })
        .collect();
    if parts.is_empty() {
        "nobody (the empty coalition)".to_string()
    } else {
        parts.join(", ")
    }
}

fn indent(s: &str) -> String {
    s.lines().map(|l| format!("  {l}\n")).collect()
}
