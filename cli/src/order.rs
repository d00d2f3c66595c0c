//! `clout order`: the members ordered by influence under Isbell's
//! desirability relation, whether the order is complete, and the classes
//! of symmetric members; each incomparable pair with coalitions that show
//! it. See `clout::toolkit::desirability`.

use std::fmt::Write;

use clap::Args;
use clout::drafting::{self as answers, Witness};
use clout_dsl::RuleFile;

use crate::drafting::{self, label, names, Format};
use crate::input::Input;
use crate::progress::Progress;
use crate::report::{json, CAUTION};
use crate::{Failure, Outcome, Source};

#[derive(Args)]
pub struct OrderArgs {
    #[command(flatten)]
    source: Source,
    /// Output format (JSON: `clout::drafting::Order`, keys in the README).
    #[arg(long, value_enum, default_value_t = Format::Text)]
    format: Format,
}

pub fn run(args: &OrderArgs) -> Result<Outcome, Failure> {
    let s = &args.source;
    let input = Input::load(s.file.as_deref(), s.game.as_deref(), false)?;
    let rule = input.rule(s.rule.as_deref())?;
    let file = &input.file;
    let order = answers::order(file, rule, &mut Progress)?;
    if args.format == Format::Json {
        return Ok(Outcome::ok(json(&order)));
    }
    let mut out = drafting::heading("Order of influence", &input, rule);
    let _ = writeln!(
        out,
        "Isbell's desirability relation: A is at least as desirable as B when, in every coalition\n\
         without both, putting A in place of B never turns a pass into a fail. Members desirable\n\
         both ways are symmetric: exchanging them changes no outcome.\n"
    );
    let k = order.classes.len();
    if order.complete {
        let _ = writeln!(
            out,
            "Complete: every two members are comparable. From most to least desirable:"
        );
    } else {
        let _ = writeln!(
            out,
            "Not complete: {} of classes {} not comparable, so the rule is not a weighted\n\
             game (weighted games always have a complete order). Classes, more desirable first:",
            match order.incomparable.len() {
                1 => "one pair".to_string(),
                k => format!("{k} pairs"),
            },
            if order.incomparable.len() == 1 {
                "is"
            } else {
                "are"
            }
        );
    }
    for (a, class) in order.classes.iter().enumerate() {
        let sym = if class.members.len() > 1 {
            format!(
                "  ({} symmetric members)",
                drafting::thousands(class.members.len())
            )
        } else {
            String::new()
        };
        let _ = writeln!(out, "  {}. {}{sym}", a + 1, names(file, &class.members.indices));
        if !order.complete {
            let below: Vec<String> = class.above.iter().map(|b| (b + 1).to_string()).collect();
            if !below.is_empty() {
                let _ = writeln!(out, "     more desirable than {}", below.join(", "));
            }
        }
    }
    if order.complete && (2..=6).contains(&k) {
        let chain: Vec<String> = order
            .classes
            .iter()
            .map(|c| label(file, &c.members.indices))
            .collect();
        let _ = writeln!(out, "\n  {}", chain.join("  >  "));
    }
    for pair in &order.incomparable {
        let [a, b] = pair.classes;
        let _ = writeln!(out, "\nClasses {} and {} are not comparable:", a + 1, b + 1);
        for w in &pair.witnesses {
            witness(&mut out, file, w);
        }
    }
    if k == 1 {
        let _ = writeln!(out, "\nAll members are symmetric: the rule treats them alike.");
    }
    let _ = writeln!(out, "\n{CAUTION}");
    Ok(Outcome::ok(out))
}

fn witness(out: &mut String, file: &RuleFile, w: &Witness) {
    let (yes, no) = (&w.passes_with, &w.fails_with);
    let _ = if w.coalition.is_empty() {
        writeln!(out, "  {yes} alone passes, {no} alone fails")
    } else {
        writeln!(
            out,
            "  with {}: adding {yes} passes, adding {no} fails",
            names(file, &w.coalition.indices)
        )
    };
}
