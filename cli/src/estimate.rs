//! The approximate report: what `clout report` gives when no exact engine
//! fits the work budget and the memory limit (and `--exact` is not set).
//!
//! Penrose measures come from floating-point dense counting with a rounding
//! bound when the rule is one weighted threshold of modest quota, otherwise
//! from seeded Monte Carlo with Wilson intervals; Shapley-Shubik indices
//! from seeded Monte Carlo over orderings. Every figure is printed with its
//! half-width and the report says so at the top. Same seed, same figures,
//! whatever the number of threads.

use std::fmt::Write;

use clout::approx::{penrose_f64, sample_penrose, sample_shapley, Estimate, Sampling};
use clout_dsl::CompiledRule;
use serde::Serialize;

use crate::input::Input;
use crate::report::{CAUTION, MODEL};
use crate::text::{self, Align, Table};
use crate::{Failure, Format, Outcome, ReportArgs};

/// Most Monte Carlo orderings drawn for Shapley-Shubik (the achieved
/// half-width is reported when this stops the sampler first).
const SHAPLEY_SAMPLES: u64 = 200_000;

/// Sums of table entries at or above this go to Monte Carlo instead of the
/// floating-point table.
const F64_TABLE: u64 = 1 << 27;

struct Approximation {
    penrose: Vec<Estimate>,
    banzhaf: Vec<Estimate>,
    shapley: Vec<Estimate>,
    penrose_method: String,
    shapley_method: String,
}

fn sampling(args: &ReportArgs) -> Sampling {
    Sampling {
        seed: args.seed,
        tolerance: args.tolerance,
        ..Sampling::default()
    }
}

fn approximate(rule: &CompiledRule, args: &ReportArgs) -> Result<Approximation, Failure> {
    let r = &rule.rule;
    let fail = |e: clout::Error| Failure::input(format!("rule `{}`: {e}", rule.name));
    let s = sampling(args);
    let (penrose, penrose_method) = match r.single_threshold() {
        Some((_, q)) if q < F64_TABLE => (
            penrose_f64(r).map_err(fail)?,
            "floating-point counting over sums (the bound is a worst-case rounding error)".to_string(),
        ),
        _ => {
            let p = sample_penrose(r, &s).map_err(fail)?;
            let note = if p.converged {
                ""
            } else {
                " (stopped before the target half-width)"
            };
            (
                p.members,
                format!(
                    "Monte Carlo, {} coalitions, seed {}, Wilson 95% intervals{note}",
                    p.samples, args.seed
                ),
            )
        }
    };
    let ss = sample_shapley(
        r,
        &Sampling {
            max_samples: SHAPLEY_SAMPLES,
            ..s
        },
    )
    .map_err(fail)?;
    let note = if ss.converged {
        ""
    } else {
        " (sample limit reached before the target half-width)"
    };
    let shapley_method = format!(
        "Monte Carlo, {} orderings, seed {}, Wilson 95% intervals{note}",
        ss.samples, args.seed
    );
    Ok(Approximation {
        banzhaf: normalize(&penrose),
        penrose,
        shapley: ss.members,
        penrose_method,
        shapley_method,
    })
}

/// Normalized Banzhaf from Penrose estimates, with an interval that covers
/// every combination of the members' intervals.
fn normalize(penrose: &[Estimate]) -> Vec<Estimate> {
    let total: f64 = penrose.iter().map(|e| e.value).sum();
    let slack: f64 = penrose.iter().map(|e| e.half_width).sum();
    penrose
        .iter()
        .map(|e| {
            if total <= 0.0 {
                return Estimate {
                    value: 0.0,
                    half_width: 1.0,
                };
            }
            let value = e.value / total;
            let lo = (e.value - e.half_width).max(0.0) / (total + slack);
            let hi = if total > slack {
                ((e.value + e.half_width) / (total - slack)).min(1.0)
            } else {
                1.0
            };
            Estimate {
                value,
                half_width: (value - lo).max(hi - value),
            }
        })
        .collect()
}

/// Runs the approximate report; `why` is the reason exact counting was not possible.
pub fn run(input: &Input, rule: &CompiledRule, args: &ReportArgs, why: &str) -> Result<Outcome, Failure> {
    if !(args.tolerance > 0.0 && args.tolerance <= 0.5) {
        return Err(Failure::input(format!(
            "--tolerance {} is not a half-width between 0 and 0.5\n  = hint: e.g. --tolerance 0.001",
            args.tolerance
        )));
    }
    let label = format!(
        "estimating: rule `{}` ({} members), target ±{}",
        rule.name,
        rule.rule.members(),
        args.tolerance
    );
    let a = crate::progress::with_progress(&label, || approximate(rule, args))?;
    let out = match args.format {
        Format::Text => text_report(input, rule, &a, why),
        Format::Json => json_report(input, rule, &a, why),
        Format::Csv => csv_report(input, &a),
    };
    Ok(Outcome::ok(out))
}

fn pm(e: &Estimate) -> String {
    format!("{} ±{:.1e}", text::index(e.value), e.half_width)
}

fn text_report(input: &Input, rule: &CompiledRule, a: &Approximation, why: &str) -> String {
    let file = &input.file;
    let mut out = String::new();
    let _ = writeln!(out, "{}: rule `{}`", input.title(), rule.name);
    let _ = writeln!(out, "  {}\n", rule.text);
    let _ = writeln!(out, "APPROXIMATE: no exact engine fits ({why}).");
    let _ = writeln!(
        out,
        "Every figure below is an estimate ± its half-width; `--exact` refuses to approximate.\n"
    );
    let mut columns = vec![("member".to_string(), Align::Left)];
    for name in &file.attributes {
        columns.push((name.clone(), Align::Right));
    }
    for h in ["absolute banzhaf", "banzhaf", "shapley-shubik"] {
        columns.push((h.to_string(), Align::Right));
    }
    let mut table = Table::new(columns);
    for (i, m) in file.members.iter().enumerate() {
        let mut row = vec![m.name.clone()];
        for attr in 0..file.attributes.len() {
            row.push(text::thousands(&file.weight(attr, i).to_string()));
        }
        row.push(pm(&a.penrose[i]));
        row.push(pm(&a.banzhaf[i]));
        row.push(pm(&a.shapley[i]));
        table.push(row);
    }
    out.push_str(&table.render());
    let _ = writeln!(out, "\nabsolute banzhaf  {}", a.penrose_method);
    let _ = writeln!(
        out,
        "banzhaf           the absolute figures normalized; the interval covers every combination of theirs"
    );
    let _ = writeln!(out, "shapley-shubik    {}", a.shapley_method);
    let _ = writeln!(out, "\n{MODEL}\n{CAUTION}");
    out
}

#[derive(Serialize)]
struct JsonApprox<'a> {
    rule: &'a str,
    title: Option<&'a str>,
    text: &'a str,
    approximate: bool,
    reason: &'a str,
    members: Vec<JsonMember<'a>>,
    winning_coalitions: Option<&'a str>,
    passage_probability: Option<f64>,
    proper: Option<bool>,
    strong: Option<bool>,
    decisive: Option<bool>,
    penrose_method: &'a str,
    shapley_shubik_method: &'a str,
    confidence: f64,
    model: &'static str,
    caution: &'static str,
}

#[derive(Serialize)]
struct JsonMember<'a> {
    name: &'a str,
    swings: Option<&'a str>,
    penrose: f64,
    penrose_half_width: f64,
    banzhaf: f64,
    banzhaf_half_width: f64,
    shapley_shubik: f64,
    shapley_shubik_half_width: f64,
}

fn json_report(input: &Input, rule: &CompiledRule, a: &Approximation, why: &str) -> String {
    let members = input
        .file
        .members
        .iter()
        .enumerate()
        .map(|(i, m)| JsonMember {
            name: &m.name,
            swings: None,
            penrose: a.penrose[i].value,
            penrose_half_width: a.penrose[i].half_width,
            banzhaf: a.banzhaf[i].value,
            banzhaf_half_width: a.banzhaf[i].half_width,
            shapley_shubik: a.shapley[i].value,
            shapley_shubik_half_width: a.shapley[i].half_width,
        })
        .collect();
    let report = JsonApprox {
        rule: &rule.name,
        title: input.file.title.as_deref(),
        text: &rule.text,
        approximate: true,
        reason: why,
        members,
        winning_coalitions: None,
        passage_probability: None,
        proper: None,
        strong: None,
        decisive: None,
        penrose_method: &a.penrose_method,
        shapley_shubik_method: &a.shapley_method,
        confidence: 0.95,
        model: MODEL,
        caution: CAUTION,
    };
    let mut s = serde_json::to_string_pretty(&report).unwrap_or_default();
    s.push('\n');
    s
}

fn csv_report(input: &Input, a: &Approximation) -> String {
    let file = &input.file;
    let mut out = String::from("member");
    for name in &file.attributes {
        out.push(',');
        out.push_str(name);
    }
    out.push_str(
        ",penrose,penrose_half_width,banzhaf,banzhaf_half_width,shapley_shubik,shapley_shubik_half_width\n",
    );
    for (i, m) in file.members.iter().enumerate() {
        let _ = write!(out, "{}", m.name);
        for attr in 0..file.attributes.len() {
            let _ = write!(out, ",{}", file.weight(attr, i));
        }
        let (p, b, s) = (&a.penrose[i], &a.banzhaf[i], &a.shapley[i]);
        let _ = writeln!(
            out,
            ",{},{},{},{},{},{}",
            p.value, p.half_width, b.value, b.half_width, s.value, s.half_width
        );
    }
    out
}
