//! `clout report`: exact power of every member and the properties of the
//! rule, as a text report for drafters, JSON for software, or CSV.
//!
//! Text groups members with identical weights (in every attribute the rule
//! has, blocs included) into one row with a count: such members are
//! interchangeable, so their figures are equal. JSON and CSV list every
//! member, in declaration order. Exact integers are decimal strings in
//! JSON; indices are numbers.

use std::collections::HashMap;
use std::fmt::Write;

use clout_dsl::exact::{self, MemberPower, Power};
use clout_dsl::{AttributeKind, CompiledRule};
use serde::Serialize;

use super::input::Input;
use super::progress::with_progress;
use super::text::{self, Align, Table};
use super::{Failure, Format, Outcome, ReportArgs};

/// The model every figure assumes, in one line.
pub const MODEL: &str = "Model: each member votes yes or no independently with equal chance; \
indices measure a priori power under the rule's text, not predicted behaviour.";

/// The legal caution, in one line.
pub const CAUTION: &str = "Caution: the legal outcome of a vote follows the governing instrument, \
applicable election law and certified counting procedures; this report is an aid, not an authority.";

pub fn run(args: &ReportArgs) -> Result<Outcome, Failure> {
    let s = &args.source;
    let input = Input::load(s.file.as_deref(), s.game.as_deref(), true)?;
    let rule = input.rule(s.rule.as_deref())?;
    let power = analyse(rule, args.engine.engine(), args.budget)?;
    let out = match args.format {
        Format::Text => text_report(&input, rule, &power),
        Format::Json => json_report(&input, rule, &power),
        Format::Csv => csv_report(&input, rule, &power),
    };
    Ok(Outcome::ok(out))
}

/// Plans (or takes the forced engine) and counts, with a progress line.
pub fn analyse(rule: &CompiledRule, forced: Option<clout::Engine>, budget: u128) -> Result<Power, Failure> {
    let r = &rule.rule;
    let (engine, cost) = match forced {
        Some(e) => (
            e,
            clout::engine::cost(r, e).map_err(|err| core_failure(rule, err))?,
        ),
        None => {
            let plan = exact::choose(r, budget).map_err(|err| core_failure(rule, err))?;
            (plan.engine, plan.cost)
        }
    };
    let label = format!(
        "counting exactly: rule `{}`, {} engine, about {:.1e} steps",
        rule.name,
        engine.name(),
        cost as f64
    );
    with_progress(&label, || exact::power(r, engine)).map_err(|err| core_failure(rule, err))
}

fn core_failure(rule: &CompiledRule, err: clout::Error) -> Failure {
    let hint = match err {
        clout::Error::TooCostly { .. } => {
            "\n  = hint: raise the limit with --budget STEPS (5e10 steps take about a minute); \
             members with identical weights (`members NAME xK`) make exact counting much cheaper"
        }
        clout::Error::EngineUnsuitable { .. } => "\n  = hint: leave out --engine to let the planner choose",
        _ => "",
    };
    Failure::input(format!("rule `{}`: {err}{hint}", rule.name))
}

/// Members with identical weight columns, in order of first appearance.
fn rows(rule: &CompiledRule) -> Vec<Vec<usize>> {
    let r = &rule.rule;
    let mut index: HashMap<Vec<u64>, usize> = HashMap::new();
    let mut rows: Vec<Vec<usize>> = Vec::new();
    for i in 0..r.members() {
        let key: Vec<u64> = (0..r.attributes()).map(|a| r.weight(a, i)).collect();
        let k = *index.entry(key).or_insert_with(|| {
            rows.push(Vec::new());
            rows.len() - 1
        });
        rows[k].push(i);
    }
    rows
}

fn flags(m: &MemberPower) -> String {
    let mut f = Vec::new();
    if m.dictator {
        f.push("dictator");
    }
    if m.veto {
        f.push("veto");
    }
    if m.dummy {
        f.push("dummy");
    }
    f.join(" ")
}

/// A row label: all names when short, else the first names and a count.
fn label(input: &Input, members: &[usize]) -> String {
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

fn text_report(input: &Input, rule: &CompiledRule, power: &Power) -> String {
    let r = &rule.rule;
    let file = &input.file;
    let mut out = String::new();
    let _ = writeln!(out, "{}: rule `{}`", input.title(), rule.name);
    let _ = writeln!(out, "  {}\n", rule.text);

    let rows = rows(rule);
    let grouped = rows.iter().any(|m| m.len() > 1);
    let blocs: Vec<usize> = (0..r.attributes())
        .filter(|&a| rule.attributes[a].kind == AttributeKind::Bloc)
        .collect();
    let mut columns = vec![("member".to_string(), Align::Left)];
    if grouped {
        columns.push(("×".to_string(), Align::Right));
    }
    for a in &file.attributes {
        columns.push((a.clone(), Align::Right));
    }
    if !blocs.is_empty() {
        columns.push(("blocs".to_string(), Align::Left));
    }
    for h in ["swings", "banzhaf", "absolute", "shapley-shubik", "flags"] {
        columns.push((
            h.to_string(),
            if h == "flags" { Align::Left } else { Align::Right },
        ));
    }
    let mut table = Table::new(columns);
    let mut rounded = false;
    for members in &rows {
        let i = members[0];
        let m = &power.members[i];
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
        rounded |= text::is_rounded(&m.swings);
        row.push(text::count(&m.swings));
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
    rounded |= text::is_rounded(&power.winning);
    let mut summary = Table::new(vec![(String::new(), Align::Left), (String::new(), Align::Left)]);
    let mut line = |k: &str, v: String| summary.push(vec![k.to_string(), v]);
    let wide = rule
        .conditions
        .iter()
        .map(|c| c.text.chars().count())
        .max()
        .unwrap_or(0);
    for (k, c) in rule.conditions.iter().enumerate() {
        let atom = r.atoms()[k];
        let a = usize::from(atom.attribute);
        let v = format!(
            "{:<wide$}  means  {} >= {} of {}",
            c.text,
            rule.attributes[a].name,
            text::thousands(&atom.quota.to_string()),
            text::thousands(&r.total(a).to_string())
        );
        line(if k == 0 { "conditions" } else { "" }, v);
    }
    line("members", text::thousands(&n.to_string()));
    line(
        "winning coalitions",
        format!("{} of {coalitions}", text::count(&power.winning)),
    );
    line(
        "probability of passage",
        format!(
            "{:.6} (share of the {coalitions} equally likely ways to vote that pass)",
            power.passage_probability
        ),
    );
    line(
        "proper",
        format!(
            "{:<3}  (no two disjoint coalitions both pass)",
            text::yes_no(power.proper)
        ),
    );
    line(
        "strong",
        format!(
            "{:<3}  (of every coalition and its complement, one passes)",
            text::yes_no(power.strong)
        ),
    );
    line(
        "decisive",
        format!("{:<3}  (proper and strong)", text::yes_no(power.decisive)),
    );
    let named = |pick: &dyn Fn(&MemberPower) -> bool| {
        let ids: Vec<usize> = (0..n).filter(|&i| pick(&power.members[i])).collect();
        if ids.is_empty() {
            "none".to_string()
        } else {
            file.describe_members(&ids).join(", ")
        }
    };
    line("dummies", named(&|m| m.dummy));
    line("veto members", named(&|m| m.veto));
    if let Some(d) = (0..n).find(|&i| power.members[i].dictator) {
        line("dictator", file.members[d].name.clone());
    }
    line(
        "smallest winning coalition",
        match power.smallest_winning {
            Some(1) => "1 member".to_string(),
            Some(k) => format!("{} members", text::thousands(&k.to_string())),
            None => "none (nothing passes)".to_string(),
        },
    );
    if let Some(m) = &power.minimal_winning {
        rounded |= text::is_rounded(m);
        line("minimal winning coalitions", text::count(m));
    }
    line(
        "engine",
        format!(
            "{} (exact counts; about {} steps)",
            power.engine.name(),
            text::thousands(&power.cost.to_string())
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
    let _ = writeln!(out, "\n{MODEL}\n{CAUTION}");
    out
}

#[derive(Serialize)]
struct JsonReport<'a> {
    rule: &'a str,
    title: Option<&'a str>,
    text: &'a str,
    members: Vec<JsonMember<'a>>,
    winning_coalitions: &'a str,
    passage_probability: f64,
    proper: bool,
    strong: bool,
    decisive: bool,
    minimal_winning_coalitions: Option<&'a str>,
    minimal_blocking_coalitions: Option<&'a str>,
    smallest_winning_coalition: Option<usize>,
    conditions: Vec<JsonCondition<'a>>,
    engine: &'static str,
    model: &'static str,
    caution: &'static str,
}

#[derive(Serialize)]
struct JsonMember<'a> {
    name: &'a str,
    weights: serde_json::Map<String, serde_json::Value>,
    swings: &'a str,
    banzhaf: f64,
    penrose: f64,
    shapley_shubik: f64,
    shapley_shubik_exact: Option<JsonFraction<'a>>,
    coleman_prevent: f64,
    coleman_initiate: f64,
    johnston: Option<f64>,
    deegan_packel: Option<f64>,
    public_good: Option<f64>,
    dummy: bool,
    veto: bool,
    dictator: bool,
}

#[derive(Serialize)]
struct JsonFraction<'a> {
    numerator: &'a str,
    denominator: &'a str,
}

#[derive(Serialize)]
struct JsonCondition<'a> {
    text: &'a str,
    attribute: &'a str,
    quota: String,
    total: String,
}

fn json_report(input: &Input, rule: &CompiledRule, power: &Power) -> String {
    let file = &input.file;
    let r = &rule.rule;
    let members = power
        .members
        .iter()
        .enumerate()
        .map(|(i, m)| JsonMember {
            name: &file.members[i].name,
            weights: file
                .attributes
                .iter()
                .enumerate()
                .map(|(a, name)| {
                    (
                        name.clone(),
                        serde_json::Value::String(file.weight(a, i).to_string()),
                    )
                })
                .collect(),
            swings: &m.swings,
            banzhaf: m.banzhaf,
            penrose: m.penrose,
            shapley_shubik: m.shapley_shubik,
            shapley_shubik_exact: m.shapley_shubik_exact.as_ref().map(|(numerator, denominator)| {
                JsonFraction {
                    numerator,
                    denominator,
                }
            }),
            coleman_prevent: m.coleman_prevent,
            coleman_initiate: m.coleman_initiate,
            johnston: m.johnston,
            deegan_packel: m.deegan_packel,
            public_good: m.public_good,
            dummy: m.dummy,
            veto: m.veto,
            dictator: m.dictator,
        })
        .collect();
    let conditions = rule
        .conditions
        .iter()
        .zip(r.atoms())
        .map(|(c, atom)| {
            let a = usize::from(atom.attribute);
            JsonCondition {
                text: &c.text,
                attribute: &rule.attributes[a].name,
                quota: atom.quota.to_string(),
                total: r.total(a).to_string(),
            }
        })
        .collect();
    let report = JsonReport {
        rule: &rule.name,
        title: file.title.as_deref(),
        text: &rule.text,
        members,
        winning_coalitions: &power.winning,
        passage_probability: power.passage_probability,
        proper: power.proper,
        strong: power.strong,
        decisive: power.decisive,
        minimal_winning_coalitions: power.minimal_winning.as_deref(),
        minimal_blocking_coalitions: power.minimal_blocking.as_deref(),
        smallest_winning_coalition: power.smallest_winning,
        conditions,
        engine: power.engine.name(),
        model: MODEL,
        caution: CAUTION,
    };
    let mut s = serde_json::to_string_pretty(&report).unwrap_or_default();
    s.push('\n');
    s
}

fn csv_report(input: &Input, _rule: &CompiledRule, power: &Power) -> String {
    let file = &input.file;
    let mut out = String::from("member");
    for a in &file.attributes {
        out.push(',');
        out.push_str(a);
    }
    out.push_str(
        ",swings,banzhaf,penrose,shapley_shubik,coleman_prevent,coleman_initiate,johnston,deegan_packel,public_good,dummy,veto,dictator\n",
    );
    let opt = |v: Option<f64>| v.map(|x| x.to_string()).unwrap_or_default();
    for (i, m) in power.members.iter().enumerate() {
        let _ = write!(out, "{}", file.members[i].name);
        for a in 0..file.attributes.len() {
            let _ = write!(out, ",{}", file.weight(a, i));
        }
        let _ = writeln!(
            out,
            ",{},{},{},{},{},{},{},{},{},{},{},{}",
            m.swings,
            m.banzhaf,
            m.penrose,
            m.shapley_shubik,
            m.coleman_prevent,
            m.coleman_initiate,
            opt(m.johnston),
            opt(m.deegan_packel),
            opt(m.public_good),
            m.dummy,
            m.veto,
            m.dictator
        );
    }
    out
}
