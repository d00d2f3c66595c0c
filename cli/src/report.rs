//! `clout report`: exact power of every member and the properties of the
//! rule, as a text report for drafters, JSON for software, or CSV.
//!
//! The figures are the library's [`clout::report::Report`]; JSON is that
//! report serialized, and text and CSV render the same fields. Text groups
//! members with identical weights (in every attribute the rule has, blocs
//! included) into one row with a count: such members are interchangeable,
//! so their figures are equal. JSON and CSV list every member, in
//! declaration order.

use std::fmt::Write;

use clout::chart::{self, page::Block};
use clout::escape;
use clout::report::model::{self, VotingModel};
use clout::report::{self, bytes, interchangeable, reason, MemberReport, Method, Options, Report};
use clout_dsl::exact;
use clout_dsl::{AttributeKind, CompiledRule};

use crate::input::Input;
use crate::progress::with_progress;
use crate::text::{self, Align, Table};
use crate::{Failure, Format, Outcome, ReportArgs};

pub use clout::report::{CAUTION, MODEL};

pub fn run(args: &ReportArgs) -> Result<Outcome, Failure> {
    let s = &args.source;
    let input = Input::load(s.file.as_deref(), s.game.as_deref(), true)?;
    let rule = input.rule(s.rule.as_deref())?;
    let options = Options {
        engine: args.engine.engine(),
        budget: args.budget,
        memory: args.memory,
        exact: args.exact,
        tolerance: args.tolerance,
        seed: args.seed,
        ternary: args.ternary,
        attendance: args.attendance,
        model: voting_model(&input, args)?,
    };
    let explained = if args.explain {
        explain(rule, args)
    } else {
        String::new()
    };
    let method = report::plan(rule, &options).map_err(Failure::from)?;
    let label = match &method {
        Method::Exact { engine, cost } => format!(
            "counting exactly: rule `{}`, {} engine, about {:.1e} steps",
            rule.name,
            engine.name(),
            *cost as f64
        ),
        Method::Approximate { .. } => format!(
            "estimating: rule `{}` ({} members), target ±{}",
            rule.name,
            rule.rule.members(),
            args.tolerance
        ),
    };
    let report = with_progress(&label, || report::build(&input.file, rule, &method, &options))
        .map_err(Failure::from)?;
    let text = if report.approximate {
        approximate_text(&input, rule, &report)
    } else {
        text_report(&input, rule, &report)
    };
    let mut written = String::new();
    if let Some(path) = &args.svg {
        let mut c = chart::report::chart(&input.file, rule, &report, "report");
        c.title = format!("{}: rule `{}`: power beside weight", input.title(), rule.name);
        crate::write_file(path, chart::bars::svg(&c).as_bytes())?;
        let _ = writeln!(written, "Chart written to {}.", path.display());
    }
    if let Some(path) = &args.html {
        let mut page = chart::report::page(&input.file, rule, &report);
        page.title = format!("{}: rule `{}`", input.title(), rule.name);
        page.blocks.push(Block::Heading("The report as text".to_string()));
        page.blocks.push(Block::Code(text.clone()));
        crate::write_file(path, chart::page::xhtml(&page).as_bytes())?;
        let _ = writeln!(written, "Page written to {}.", path.display());
    }
    let out = match args.format {
        Format::Text => text + &written,
        Format::Json => json(&report),
        Format::Csv => csv_report(&report),
    };
    let mut out = Outcome::ok(out);
    // The plan goes before a text report, and to stderr beside JSON or CSV so
    // that their output stays parseable.
    if args.format == Format::Text {
        out.stdout.insert_str(0, &explained);
    } else {
        out.stderr.insert_str(0, &explained);
    }
    Ok(out)
}

/// The voting model of `--turnout` or `--chances`, if either is given.
fn voting_model(input: &Input, args: &ReportArgs) -> Result<Option<VotingModel>, Failure> {
    if let Some(p) = args.turnout {
        return Ok(Some(VotingModel::Turnout(p)));
    }
    let Some(path) = &args.chances else {
        return Ok(None);
    };
    let (shown, bytes) = crate::input::read_data_file(path)?;
    let chances = model::read_chances(&input.file, &shown, &bytes)
        .map_err(|errors| crate::input::rendered_errors(&errors, &shown, ""))?;
    Ok(Some(VotingModel::Chances { file: shown, chances }))
}

/// The voting model's figures (`--turnout`, `--chances`), when asked for.
fn model_text(out: &mut String, input: &Input, rule: &CompiledRule, report: &Report) {
    let Some(m) = &report.voting_model else { return };
    let _ = writeln!(out, "\nUnder the voting model ({}):", m.method);
    let mut table = Table::new(vec![
        ("member".to_string(), Align::Left),
        ("decisive probability".to_string(), Align::Right),
        ("share".to_string(), Align::Right),
        ("penrose (a priori)".to_string(), Align::Right),
    ]);
    for members in &interchangeable(rule) {
        let x = &report.members[members[0]];
        let d = x.decisive_probability.unwrap_or_default();
        let hw = x.decisive_probability_half_width.flatten();
        table.push(vec![
            label(input, members),
            match hw {
                Some(h) => resolved(d, h, m.samples.unwrap_or(0)),
                None => text::index(d),
            },
            text::index(x.decisive_share.unwrap_or_default()),
            text::index(x.penrose),
        ]);
    }
    out.push_str(&table.render());
    let pm = |v: f64, h: Option<f64>| match h {
        Some(h) => format!("{v:.6} ±{h:.1e}"),
        None => format!("{v:.6}"),
    };
    let _ = writeln!(
        out,
        "probability of passage         {}",
        pm(m.passage_probability, m.passage_probability_half_width)
    );
    let _ =
        writeln!(
        out,
        "probability of a failed quorum {} (those present could not pass the motion even if all voted yes)",
        pm(m.quorum_failure_probability, m.quorum_failure_probability_half_width)
    );
    if let Some(b) = m.rounding_bound {
        let _ = writeln!(
            out,
            "every figure above is within a relative {b:.1e} of the exact value (floating-point rounding)"
        );
    }
}

/// An estimate with its half-width, or "< upper" when the half-width is
/// larger than the estimate (below resolution), with the samples that
/// would resolve it: n >= z^2 (1 - p) / p makes the half-width about p
/// (normal approximation to the binomial; common practice).
pub fn resolved(value: f64, half_width: f64, samples: u64) -> String {
    if half_width <= value || samples == 0 {
        return format!("{} ±{:.1e}", text::index(value), half_width);
    }
    let upper = (value + half_width).min(1.0);
    let p = if value > 0.0 { value } else { upper };
    let needed = (1.96f64 * 1.96 * (1.0 - p) / p).ceil();
    format!("< {upper:.2e} (about {needed:.0e} samples to resolve)")
}

/// The note on four-state conditions in two-state figures.
const FOUR_STATE: &str =
    "Four-state conditions: the figures above are for two-state ballots (every member present, yes \
or no; an abstention or absence counts as not yes), where each condition reduces to the quota shown.";

/// Pretty JSON with a final newline.
pub fn json(value: &impl serde::Serialize) -> String {
    // Hidden characters (C1 controls, bidirectional overrides) as \uXXXX,
    // which serde_json alone writes raw.
    let mut s = escape::json_pretty(value).unwrap_or_default();
    s.push('\n');
    s
}

/// The planner's view of the rule, for `--explain`.
fn explain(rule: &CompiledRule, args: &ReportArgs) -> String {
    let Ok(game) = report::two_state_game(rule) else {
        return String::new();
    };
    let r = &game.rule.rule;
    let count_bytes = 8 * exact::limbs_for(r.members());
    let limits = clout::planner::Limits {
        budget: u128::MAX,
        memory: u64::MAX,
        count_bytes,
    };
    let mut out = String::from("plan\n");
    let _ = writeln!(
        out,
        "  {} members, {} conditions; budget {:.1e} steps, memory limit {}",
        r.members(),
        r.atoms().len(),
        args.budget as f64,
        bytes(args.memory)
    );
    for c in &game.settled {
        let _ = writeln!(out, "  settled before planning: `{}`, {}", c.text, c.why);
    }
    match clout::planner::plan_within(r, clout::engine::Scope::All, &limits) {
        Ok(plan) => {
            for e in clout::Engine::ALL {
                let verdict = match (plan.cost_of(e), plan.memory_of(e)) {
                    (Some(c), Some(m)) => {
                        let c = exact::estimate(r, e).unwrap_or(c);
                        let mut why = Vec::new();
                        if c > args.budget {
                            why.push("over the budget");
                        }
                        if m > args.memory {
                            why.push("over the memory limit");
                        }
                        let fits = if why.is_empty() {
                            "fits".to_string()
                        } else {
                            why.join(", ")
                        };
                        format!("about {:.1e} steps, {} ({fits})", c as f64, bytes(m))
                    }
                    _ => "cannot handle this rule".to_string(),
                };
                let _ = writeln!(out, "  {:<10} {}: {verdict}", e.name(), e.describe());
            }
        }
        Err(e) => {
            let _ = writeln!(out, "  no exact engine applies: {e}");
        }
    }
    match exact::choose_within(r, args.budget, args.memory) {
        Ok(plan) => {
            let _ = writeln!(
                out,
                "  chosen: {} (the cheapest that fits{})",
                plan.engine.name(),
                if plan.engine.computes_minimal() {
                    ""
                } else {
                    "; it gives no minimal-coalition indices"
                }
            );
        }
        Err(e) if !args.exact => {
            let _ = writeln!(
                out,
                "  chosen: approximation ({}); --exact would refuse",
                reason(e)
            );
        }
        Err(e) => {
            let _ = writeln!(out, "  chosen: none ({e})");
        }
    }
    out.push('\n');
    out
}

fn flags(m: &MemberReport) -> String {
    let mut f = Vec::new();
    if m.dictator {
        f.push("dictator");
    }
    if m.veto {
        f.push("veto");
    }
    if m.dummy == Some(true) {
        f.push("dummy");
    }
    f.join(" ")
}

/// A row label: all names when short, else the first names and a count.
pub fn label(input: &Input, members: &[usize]) -> String {
    let names = input.file.describe_members(members);
    let all = names.join(", ");
    if all.chars().count() <= 28 {
        return all;
    }
    let mut shown = String::new();
    let mut used = 0;
    for n in &names {
        if shown.chars().count() + n.chars().count() > 20 && used > 0 {
            break;
        }
        if used > 0 {
            shown.push_str(", ");
        }
        shown.push_str(n);
        used += 1;
    }
    format!("{shown}, … (+{})", names.len() - used)
}

/// The heading: title, rule name and text.
fn heading(out: &mut String, input: &Input, report: &Report) {
    let _ = writeln!(out, "{}: rule `{}`", input.title(), report.rule);
    let _ = writeln!(out, "  {}\n", report.text);
    if let Some(m) = &report.voting_model {
        let _ = writeln!(out, "{}\n", m.description);
    }
}

fn text_report(input: &Input, rule: &CompiledRule, report: &Report) -> String {
    let r = &rule.rule;
    let file = &input.file;
    let mut out = String::new();
    heading(&mut out, input, report);

    let rows = interchangeable(rule);
    let grouped = rows.iter().any(|m| m.len() > 1);
    let blocs: Vec<usize> = (0..r.attributes())
        .filter(|&a| rule.attributes[a].kind == AttributeKind::Bloc)
        .collect();
    let mut columns = vec![("member".to_string(), Align::Left)];
    if grouped {
        columns.push(("×".to_string(), Align::Right));
    }
    for a in 0..file.attributes.len() {
        columns.push((attribute_heading(file, a), Align::Right));
    }
    if !blocs.is_empty() {
        columns.push(("blocs".to_string(), Align::Left));
    }
    for h in ["swings", "banzhaf", "penrose", "shapley-shubik", "flags"] {
        columns.push((
            h.to_string(),
            if h == "flags" { Align::Left } else { Align::Right },
        ));
    }
    let mut table = Table::new(columns);
    let mut rounded = false;
    for members in &rows {
        let i = members[0];
        let m = &report.members[i];
        let mut row = vec![label(input, members)];
        if grouped {
            row.push(members.len().to_string());
        }
        for a in 0..file.attributes.len() {
            row.push(text::thousands(&file.weight(a, i).to_string()));
        }
        if !blocs.is_empty() {
            let names: Vec<&str> = blocs
                .iter()
                .filter(|&&a| r.weight(a, i) == 1)
                .map(|&a| rule.attributes[a].name.as_str())
                .collect();
            row.push(names.join(" "));
        }
        let swings = m.swings.as_deref().unwrap_or_default();
        rounded |= text::is_rounded(swings);
        row.push(text::count(swings));
        row.push(text::index(m.banzhaf));
        row.push(text::index(m.penrose));
        row.push(text::index(m.shapley_shubik));
        row.push(flags(m));
        table.push(row);
    }
    out.push_str(&table.render());
    if grouped {
        let _ = writeln!(out, "× = members in the row; the figures are each member's.");
    }
    out.push('\n');

    let n = r.members();
    let coalitions = if n <= 49 {
        text::thousands(&(1u64 << n).to_string())
    } else {
        format!("2^{n}")
    };
    let winning = report.winning_coalitions.as_deref().unwrap_or_default();
    rounded |= text::is_rounded(winning);
    let mut summary = Table::new(vec![(String::new(), Align::Left), (String::new(), Align::Left)]);
    let mut line = |k: &str, v: String| summary.push(vec![k.to_string(), v]);
    let wide = report
        .conditions
        .iter()
        .map(|c| c.text.chars().count())
        .max()
        .unwrap_or(0);
    for (k, c) in report.conditions.iter().enumerate() {
        let v = format!(
            "{:<wide$}  means  {} >= {} of {}",
            c.text,
            c.attribute,
            text::thousands(&c.quota),
            text::thousands(&c.total)
        );
        line(if k == 0 { "conditions" } else { "" }, v);
    }
    line("members", text::thousands(&n.to_string()));
    line(
        "winning coalitions",
        format!("{} of {coalitions}", text::count(winning)),
    );
    line(
        "probability of passage",
        format!(
            "{:.6} (share of the {coalitions} equally likely ways to vote that pass)",
            report.passage_probability.unwrap_or_default()
        ),
    );
    let yes_no = |b: Option<bool>| text::yes_no(b.unwrap_or_default());
    line(
        "proper",
        format!(
            "{:<3}  (no two disjoint coalitions both pass)",
            yes_no(report.proper)
        ),
    );
    line(
        "strong",
        format!(
            "{:<3}  (of every coalition and its complement, one passes)",
            yes_no(report.strong)
        ),
    );
    line(
        "decisive",
        format!("{:<3}  (proper and strong)", yes_no(report.decisive)),
    );
    let named = |pick: &dyn Fn(&MemberReport) -> bool| {
        let ids: Vec<usize> = (0..n).filter(|&i| pick(&report.members[i])).collect();
        if ids.is_empty() {
            "none".to_string()
        } else {
            file.describe_members(&ids).join(", ")
        }
    };
    line("dummies", named(&|m| m.dummy == Some(true)));
    line("veto members", named(&|m| m.veto));
    if let Some(d) = (0..n).find(|&i| report.members[i].dictator) {
        line("dictator", file.members[d].name.clone());
    }
    line(
        "smallest winning coalition",
        match report.smallest_winning_coalition {
            Some(1) => "1 member".to_string(),
            Some(k) => format!("{} members", text::thousands(&k.to_string())),
            None => "none (nothing passes)".to_string(),
        },
    );
    if let Some(m) = &report.minimal_winning_coalitions {
        rounded |= text::is_rounded(m);
        line("minimal winning coalitions", text::count(m));
    }
    line(
        "engine",
        format!(
            "{} (exact counts; about {} steps)",
            report.engine,
            text::thousands(&report.steps.unwrap_or_default().to_string())
        ),
    );
    if file.rules.len() > 1 {
        let others: Vec<&str> = file
            .rules
            .iter()
            .map(|x| x.name.as_str())
            .filter(|x| *x != rule.name)
            .collect();
        line(
            "other rules",
            format!("{} (choose one with --rule NAME)", others.join(", ")),
        );
    }
    out.push_str(
        &summary
            .render()
            .lines()
            .skip(1)
            .map(|l| format!("{l}\n"))
            .collect::<String>(),
    );
    if rounded {
        let _ = writeln!(
            out,
            "≈ marks a rounded display of an exact count; --format json gives every digit."
        );
    }
    if r.has_linear() {
        let _ = writeln!(out, "\n{FOUR_STATE}");
    }
    settled_text(&mut out, report);
    extras_text(&mut out, input, rule, report);
    model_text(&mut out, input, rule, report);
    rounding_text(&mut out, report);
    let _ = writeln!(out, "\n{MODEL}\n{CAUTION}");
    out
}

/// The conditions settled before counting (`Report::settled_conditions`).
fn settled_text(out: &mut String, report: &Report) {
    if report.settled_conditions.is_empty() {
        return;
    }
    let _ = writeln!(
        out,
        "\nSettled before counting (the two-state figures count the rule without these):"
    );
    for c in &report.settled_conditions {
        let _ = writeln!(out, "  `{}`: {}.", c.text, c.why);
    }
}

/// An attribute's column heading: its name, and for amounts with decimals
/// the unit its whole numbers count (`tokens ×0.000001`).
fn attribute_heading(file: &clout::RuleFile, a: usize) -> String {
    let name = &file.attributes[a];
    match file.amounts.iter().find(|x| x.attribute == a) {
        Some(x) if x.decimals > 0 || x.unit.is_some() => {
            format!("{name} ×{}", x.format(x.unit.unwrap_or(1)))
        }
        _ => name.clone(),
    }
}

/// What rounding exact amounts to a unit can change (`Report::rounding`).
fn rounding_text(out: &mut String, report: &Report) {
    let Some(c) = &report.rounding else { return };
    for a in &c.attributes {
        let _ = writeln!(
            out,
            "\nRounded amounts: `{}` has {} decimals and exact amounts totalling {}, too large for exact counting;\n\
             its weights count units of {} (each amount rounded to the nearest unit, at most {} off; {} units in all).",
            a.attribute,
            a.decimals,
            a.exact_total,
            a.unit,
            a.largest_error,
            text::thousands(&a.rounded_total)
        );
    }
    for w in &c.windows {
        let window = match (&w.from, &w.to) {
            (Some(f), Some(t)) if f == t => format!("a rounded sum of {} units", text::thousands(f)),
            (Some(f), Some(t)) => format!(
                "rounded sums {}..{} units",
                text::thousands(f),
                text::thousands(t)
            ),
            _ => "no rounded sum".to_string(),
        };
        let _ = writeln!(
            out,
            "  `{}`: exact quota {} {}, quota {} units; {window} could be decided otherwise.",
            w.condition,
            w.exact_quota,
            w.attribute,
            text::thousands(&w.quota)
        );
    }
    let how_many = match (&c.coalitions, c.coalitions_exact) {
        (Some(n), true) => format!(
            "exactly {} coalition{}",
            text::count(n),
            if n == "1" { "" } else { "s" }
        ),
        (Some(n), false) => format!("at most {} coalitions ({:.2e} of all)", text::count(n), c.share),
        (None, _) => format!("at most {:.2e} of all coalitions", c.share),
    };
    let _ = writeln!(
        out,
        "Decided differently by the exact amounts: {how_many}; {}.\n\
         So each figure is within its rounding bound of the exact amounts' figure: {}penrose ±{:.1e},\n\
         banzhaf ±{:.1e}, shapley-shubik ±{:.1e}{}.",
        c.method,
        c.swings
            .as_deref()
            .map_or(String::new(), |s| format!("swings ±{}, ", text::count(s))),
        c.penrose,
        c.banzhaf,
        c.shapley_shubik,
        if c.shapley_shubik >= 1.0 {
            " (no useful bound)"
        } else {
            ""
        }
    );
}

/// The ternary measure and attendance figures, when asked for.
fn extras_text(out: &mut String, input: &Input, rule: &CompiledRule, report: &Report) {
    if report.members.iter().any(|m| m.ternary_banzhaf.is_some()) {
        let _ = writeln!(
            out,
            "\nternary Banzhaf measure (yes, abstain or no, each with chance 1/3; Felsenthal & Machover 1997):"
        );
        for members in &interchangeable(rule) {
            let _ = writeln!(
                out,
                "  {:<28} {}",
                label(input, members),
                text::index(report.members[members[0]].ternary_banzhaf.unwrap_or_default())
            );
        }
    }
    if let Some(a) = &report.attendance {
        let p = a.chance;
        let hw = a
            .passage_probability_half_width
            .map_or(String::new(), |h| format!(" ±{h:.1e} (Monte Carlo, 95%)"));
        let _ = writeln!(
            out,
            "\nprobability of passage with attendance {p}: {:.6}{hw} (each member present with chance {p}, then yes or no with equal chance)",
            a.passage_probability
        );
    }
}

fn approximate_text(input: &Input, rule: &CompiledRule, report: &Report) -> String {
    let file = &input.file;
    let mut out = String::new();
    heading(&mut out, input, report);
    let why = report.reason.as_deref().unwrap_or_default();
    let _ = writeln!(out, "APPROXIMATE: no exact engine fits ({why}).");
    let _ = writeln!(
        out,
        "Every figure below is an estimate ± its half-width; `--exact` refuses to approximate.\n"
    );
    let mut columns = vec![("member".to_string(), Align::Left)];
    for a in 0..file.attributes.len() {
        columns.push((attribute_heading(file, a), Align::Right));
    }
    for h in ["penrose", "banzhaf", "shapley-shubik"] {
        columns.push((h.to_string(), Align::Right));
    }
    let mut table = Table::new(columns);
    for (i, m) in report.members.iter().enumerate() {
        let mut row = vec![clout_dsl::quote::written(&m.name).into_owned()];
        for attr in 0..file.attributes.len() {
            row.push(text::thousands(&file.weight(attr, i).to_string()));
        }
        let drawn = report.penrose_samples.unwrap_or(0);
        let orderings = report.shapley_shubik_samples.unwrap_or(0);
        row.push(resolved(
            m.penrose,
            m.penrose_half_width.unwrap_or_default(),
            drawn,
        ));
        row.push(resolved(
            m.banzhaf,
            m.banzhaf_half_width.unwrap_or_default(),
            drawn,
        ));
        row.push(resolved(
            m.shapley_shubik,
            m.shapley_shubik_half_width.unwrap_or_default(),
            orderings,
        ));
        table.push(row);
    }
    out.push_str(&table.render());
    let method = |m: &Option<String>| m.clone().unwrap_or_default();
    let _ = writeln!(out, "\npenrose           {}", method(&report.penrose_method));
    let _ = writeln!(
        out,
        "banzhaf           the Penrose measures normalized; the interval covers every combination of theirs"
    );
    let _ = writeln!(out, "shapley-shubik    {}", method(&report.shapley_shubik_method));
    for c in &report.conditions {
        let _ = writeln!(
            out,
            "condition         {}  means  {} >= {} of {}",
            c.text,
            c.attribute,
            text::thousands(&c.quota),
            text::thousands(&c.total)
        );
    }
    if rule.rule.has_linear() {
        let _ = writeln!(out, "\n{FOUR_STATE}");
    }
    settled_text(&mut out, report);
    extras_text(&mut out, input, rule, report);
    model_text(&mut out, input, rule, report);
    rounding_text(&mut out, report);
    let _ = writeln!(out, "\n{MODEL}\n{CAUTION}");
    out
}

/// One row per member: name, weights, every figure (empty where not
/// computed), the half-widths (empty when exact) and, when asked for, the
/// ternary measure. The same columns in exact and approximate reports.
fn csv_report(report: &Report) -> String {
    let attributes: Vec<&String> = report
        .members
        .first()
        .map(|m| m.weights.keys().collect())
        .unwrap_or_default();
    let ternary = report.members.iter().any(|m| m.ternary_banzhaf.is_some());
    let mut out = String::from("member");
    for a in &attributes {
        out.push(',');
        out.push_str(&csv_field(a));
    }
    out.push_str(
        ",swings,banzhaf,penrose,shapley_shubik,coleman_prevent,coleman_initiate,johnston,deegan_packel,public_good,dummy,veto,dictator,penrose_half_width,banzhaf_half_width,shapley_shubik_half_width",
    );
    out.push_str(if ternary { ",ternary_banzhaf\n" } else { "\n" });
    let opt = |v: Option<f64>| v.map(|x| x.to_string()).unwrap_or_default();
    for m in &report.members {
        out.push_str(&csv_field(&m.name));
        for a in &attributes {
            let w = m
                .weights
                .get(a.as_str())
                .and_then(|v| v.as_str())
                .unwrap_or_default();
            let _ = write!(out, ",{w}");
        }
        let _ = write!(
            out,
            ",{},{},{},{},{},{},{},{},{},{},{},{},{},{},{}",
            m.swings.as_deref().unwrap_or_default(),
            m.banzhaf,
            m.penrose,
            m.shapley_shubik,
            opt(m.coleman_prevent),
            opt(m.coleman_initiate),
            opt(m.johnston),
            opt(m.deegan_packel),
            opt(m.public_good),
            m.dummy.map(|d| d.to_string()).unwrap_or_default(),
            m.veto,
            m.dictator,
            opt(m.penrose_half_width),
            opt(m.banzhaf_half_width),
            opt(m.shapley_shubik_half_width),
        );
        if ternary {
            let _ = write!(out, ",{}", opt(m.ternary_banzhaf));
        }
        out.push('\n');
    }
    out
}

/// A CSV text field: escaped, formula-guarded and quoted ([`escape::csv_field`]).
fn csv_field(s: &str) -> std::borrow::Cow<'_, str> {
    escape::csv_field(s)
}
