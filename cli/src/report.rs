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

use crate::input::Input;
use crate::progress::with_progress;
use crate::text::{self, Align, Table};
use crate::{Failure, Format, Outcome, ReportArgs};

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
    if let Some(p) = args.attendance {
        if !(0.0..=1.0).contains(&p) {
            return Err(Failure::input(format!(
                "--attendance {p} is not a chance between 0 and 1\n  = hint: e.g. --attendance 0.8"
            )));
        }
    }
    let explained = if args.explain {
        explain(rule, args)
    } else {
        String::new()
    };
    let power = match analyse(rule, args.engine.engine(), args.budget, args.memory) {
        Ok(p) => p,
        Err((err, failure)) => {
            let over = matches!(
                err,
                Some(clout::Error::TooCostly { .. } | clout::Error::MemoryLimit { .. })
            );
            if over && !args.exact && args.engine.engine().is_none() {
                let why = err.map(reason).unwrap_or_default();
                let out = crate::estimate::run(&input, rule, args, &why)?;
                return Ok(with_explanation(out, explained, args.format));
            }
            return Err(failure);
        }
    };
    let extras = Extras::of(rule, args)?;
    let out = match args.format {
        Format::Text => text_report(&input, rule, &power, &extras),
        Format::Json => json_report(&input, rule, &power, &extras),
        Format::Csv => csv_report(&input, rule, &power, &extras),
    };
    Ok(with_explanation(Outcome::ok(out), explained, args.format))
}

/// The plan goes before a text report, and to stderr beside JSON or CSV so
/// that their output stays parseable.
fn with_explanation(mut out: Outcome, explained: String, format: Format) -> Outcome {
    if format == Format::Text {
        out.stdout.insert_str(0, &explained);
    } else {
        out.stderr.insert_str(0, &explained);
    }
    out
}

/// Why exact counting was refused, in a drafter's words.
fn reason(err: clout::Error) -> String {
    match err {
        clout::Error::MemoryLimit { needed, limit } => {
            let needed = if needed == u64::MAX {
                "more than 16 EiB".to_string()
            } else {
                bytes(needed)
            };
            format!(
                "the cheapest exact engine needs {needed}, over the memory limit of {}",
                bytes(limit)
            )
        }
        clout::Error::TooCostly { estimate, budget } => format!(
            "the cheapest exact engine needs about {} steps, over the budget of {}",
            steps(estimate),
            steps(budget)
        ),
        other => other.to_string(),
    }
}

/// The figures `--ternary` and `--attendance` ask for.
#[derive(Default)]
struct Extras {
    /// Felsenthal & Machover's ternary Banzhaf measure of every member.
    ternary: Option<Vec<f64>>,
    /// (attendance chance, probability of passage).
    attendance: Option<(f64, f64)>,
}

/// Most three-way profiles `--ternary` and `--attendance` visit.
const MAX_TERNARY_PROFILES: f64 = 5e7;

impl Extras {
    fn of(rule: &CompiledRule, args: &ReportArgs) -> Result<Extras, Failure> {
        if !args.ternary && args.attendance.is_none() {
            return Ok(Extras::default());
        }
        let profiles: f64 = rows(rule)
            .iter()
            .map(|m| (m.len() as f64 + 1.0) * (m.len() as f64 + 2.0) / 2.0)
            .product();
        if profiles > MAX_TERNARY_PROFILES {
            return Err(Failure::input(format!(
                "rule `{}`: three-way ballots need about {profiles:.1e} profiles of member types, over the limit of {MAX_TERNARY_PROFILES:.0e}\n  = hint: --ternary and --attendance count every way of voting yes, no or abstaining; members with identical weights make that much cheaper",
                rule.name
            )));
        }
        let fail = |e: clout::Error| Failure::input(format!("rule `{}`: {e}", rule.name));
        let r = &rule.rule;
        let ternary = if args.ternary {
            let t = with_progress("counting three-way ballots", || {
                if r.members() < 600 {
                    clout::ternary::ternary_banzhaf::<_, clout::Wide<16>>(r)
                        .map(|t| (0..r.members()).map(|i| t.measure(i)).collect())
                } else {
                    clout::ternary::ternary_banzhaf::<_, clout::Wide<1025>>(r)
                        .map(|t| (0..r.members()).map(|i| t.measure(i)).collect())
                }
            })
            .map_err(fail)?;
            Some(t)
        } else {
            None
        };
        let attendance = match args.attendance {
            Some(p) => Some((p, clout::ternary::passage_with_attendance(r, p).map_err(fail)?)),
            None => None,
        };
        Ok(Extras { ternary, attendance })
    }
}

/// The planner's view of the rule, for `--explain`.
fn explain(rule: &CompiledRule, args: &ReportArgs) -> String {
    let r = &rule.rule;
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

/// A step count: in full below a million, else as `1.2e9`.
fn steps(n: u128) -> String {
    if n < 1_000_000 {
        n.to_string()
    } else {
        format!("{:.1e}", n as f64)
    }
}

fn bytes(b: u64) -> String {
    const UNITS: [(&str, u64); 4] = [
        ("TiB", 1 << 40),
        ("GiB", 1 << 30),
        ("MiB", 1 << 20),
        ("KiB", 1 << 10),
    ];
    for (name, size) in UNITS {
        if b >= size {
            return format!("{:.1} {name}", b as f64 / size as f64);
        }
    }
    format!("{b} B")
}

/// Plans (or takes the forced engine) and counts, with a progress line.
/// On failure, the core's error (when there is one) and the message for the user.
pub fn analyse(
    rule: &CompiledRule,
    forced: Option<clout::Engine>,
    budget: u128,
    memory: u64,
) -> Result<Power, (Option<clout::Error>, Failure)> {
    let r = &rule.rule;
    let fail = |err: clout::Error| (Some(err), core_failure(rule, err));
    let (engine, cost) = match forced {
        Some(e) => {
            let cost = clout::engine::cost(r, e).map_err(fail)?;
            // A forced engine keeps to --budget too, so it cannot run for hours unasked.
            if cost > budget {
                return Err(fail(clout::Error::TooCostly {
                    estimate: cost,
                    budget,
                }));
            }
            (e, cost)
        }
        None => {
            let plan = exact::choose_within(r, budget, memory).map_err(fail)?;
            (plan.engine, plan.cost)
        }
    };
    let label = format!(
        "counting exactly: rule `{}`, {} engine, about {:.1e} steps",
        rule.name,
        engine.name(),
        cost as f64
    );
    with_progress(&label, || exact::power(r, engine)).map_err(fail)
}

fn core_failure(rule: &CompiledRule, err: clout::Error) -> Failure {
    let hint = match err {
        clout::Error::TooCostly { .. } | clout::Error::MemoryLimit { .. } => {
            "\n  = hint: raise the limits with --budget STEPS (5e10 steps take about a minute) or --memory BYTES, \
             or leave out --exact to get approximate figures with error bounds; \
             members with identical weights (`members NAME xK`) make exact counting much cheaper"
        }
        clout::Error::EngineUnsuitable { .. } => "\n  = hint: leave out --engine to let the planner choose",
        _ => "",
    };
    Failure::input(format!("rule `{}`: {}{hint}", rule.name, reason(err)))
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

fn text_report(input: &Input, rule: &CompiledRule, power: &Power, extras: &Extras) -> String {
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
    if r.has_linear() {
        let _ = writeln!(
            out,
            "\nFour-state conditions: the figures above are for two-state ballots (every member present, yes \
or no; an abstention or absence counts as not yes), where each condition reduces to the quota shown."
        );
    }
    if let Some(ternary) = &extras.ternary {
        let _ = writeln!(
            out,
            "\nternary Banzhaf measure (yes, abstain or no, each with chance 1/3; Felsenthal & Machover 1997):"
        );
        for members in &rows {
            let _ = writeln!(
                out,
                "  {:<28} {}",
                label(input, members),
                text::index(ternary[members[0]])
            );
        }
    }
    if let Some((p, prob)) = extras.attendance {
        let _ = writeln!(
            out,
            "\nprobability of passage with attendance {p}: {prob:.6} (each member present with chance {p}, then yes or no with equal chance)"
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
    #[serde(skip_serializing_if = "Option::is_none")]
    attendance: Option<JsonAttendance>,
    model: &'static str,
    caution: &'static str,
}

#[derive(Serialize)]
struct JsonAttendance {
    chance: f64,
    passage_probability: f64,
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
    #[serde(skip_serializing_if = "Option::is_none")]
    ternary_banzhaf: Option<f64>,
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

fn json_report(input: &Input, rule: &CompiledRule, power: &Power, extras: &Extras) -> String {
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
            ternary_banzhaf: extras.ternary.as_ref().map(|t| t[i]),
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
        attendance: extras
            .attendance
            .map(|(chance, passage_probability)| JsonAttendance {
                chance,
                passage_probability,
            }),
        model: MODEL,
        caution: CAUTION,
    };
    let mut s = serde_json::to_string_pretty(&report).unwrap_or_default();
    s.push('\n');
    s
}

fn csv_report(input: &Input, _rule: &CompiledRule, power: &Power, extras: &Extras) -> String {
    let file = &input.file;
    let mut out = String::from("member");
    for a in &file.attributes {
        out.push(',');
        out.push_str(a);
    }
    out.push_str(
        ",swings,banzhaf,penrose,shapley_shubik,coleman_prevent,coleman_initiate,johnston,deegan_packel,public_good,dummy,veto,dictator",
    );
    out.push_str(if extras.ternary.is_some() {
        ",ternary_banzhaf\n"
    } else {
        "\n"
    });
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
        if let Some(t) = &extras.ternary {
            out.pop();
            let _ = writeln!(out, ",{}", t[i]);
        }
    }
    out
}
