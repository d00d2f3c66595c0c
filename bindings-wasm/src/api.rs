//! The package's calls in plain Rust: a compiled rule file and what can be
//! asked of it, with results as `serde_json` values carrying the command
//! line's JSON keys and errors as [`Thrown`]. `lib.rs` only moves these
//! across the JavaScript boundary, so everything here is tested on the host.

use clout::drafting::{self, Unwatched};
use clout::report::{self, Method, Report};
use clout::{decision, Diagnostic, Failure, FailureKind};
use clout_dsl::syntax::MAX_SOURCE_LEN;
use clout_dsl::{AttributeKind, CompiledRule, RuleFile};
use std::collections::HashMap;

use serde::Serialize;
use serde_json::Value;

use crate::options;

/// What the package throws: the first error's place, message and hint, and
/// every error of the text (a file can have several).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Thrown {
    /// `rule-text` for errors in the text, else the library's failure kind:
    /// `input`, `limit` or `unsuitable`.
    pub kind: &'static str,
    /// Short, lowercase, names the offender.
    pub message: String,
    /// What to do about it.
    pub hint: Option<String>,
    /// 1-based line of the first error (null when not about the text).
    pub line: Option<usize>,
    /// 1-based column in characters (null when not about the text).
    pub column: Option<usize>,
    /// Every error of the text, each with its place (empty otherwise).
    pub errors: Vec<Located>,
    /// The errors as the command line prints them, with carets.
    pub rendered: String,
}

/// One error in the text.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Located {
    /// 1-based line.
    pub line: usize,
    /// 1-based column in characters.
    pub column: usize,
    /// 1-based line where it ends.
    pub end_line: usize,
    /// 1-based column just past its end.
    pub end_column: usize,
    /// `error` or `note`.
    pub severity: &'static str,
    /// What is wrong.
    pub message: String,
    /// What to do about it.
    pub hint: Option<String>,
}

impl Thrown {
    /// The errors of a rule text.
    pub fn from_diagnostics(diagnostics: &[Diagnostic], source: &str) -> Thrown {
        let errors: Vec<Located> = diagnostics
            .iter()
            .map(|d| {
                let (line, column) = d.line_col(source);
                let (end_line, end_column) = clout_dsl::Span::new(d.span.end, d.span.end).line_col(source);
                Located {
                    line,
                    column,
                    end_line,
                    end_column,
                    severity: match d.severity {
                        clout_dsl::Severity::Error => "error",
                        clout_dsl::Severity::Warning => "warning",
                        clout_dsl::Severity::Note => "note",
                    },
                    message: d.message.clone(),
                    hint: d.hint.clone(),
                }
            })
            .collect();
        let first = errors.first();
        Thrown {
            kind: "rule-text",
            message: first.map_or_else(
                || "the rule text does not compile".to_string(),
                |e| e.message.clone(),
            ),
            hint: first.and_then(|e| e.hint.clone()),
            line: first.map(|e| e.line),
            column: first.map(|e| e.column),
            rendered: clout_dsl::render_all(diagnostics, "rule text", source),
            errors,
        }
    }
}

/// The library's hints name the command line's options; JavaScript callers
/// pass options objects instead.
const OPTION_NAMES: [(&str, &str); 11] = [
    ("--budget STEPS", "the option `budget: STEPS`"),
    ("--memory BYTES", "the option `memory: BYTES`"),
    ("leave out --exact", "leave out `exact: true`"),
    ("leave out --engine", "leave out `engine`"),
    ("--by position", "`by: \"position\"`"),
    ("--attr NAME", "`attribute: \"NAME\"`"),
    ("--condition N", "`condition: N`"),
    ("--ternary and --attendance", "`ternary` and `attendance`"),
    ("e.g. --attendance 0.8", "e.g. `attendance: 0.8`"),
    ("e.g. --tolerance 0.001", "e.g. `tolerance: 0.001`"),
    ("--from is above --to", "`start` is above `stop`"),
];

impl From<Failure> for Box<Thrown> {
    fn from(mut f: Failure) -> Box<Thrown> {
        for text in [Some(&mut f.message), f.hint.as_mut()].into_iter().flatten() {
            for (cli, js) in OPTION_NAMES {
                *text = text.replace(cli, js);
            }
        }
        Box::new(Thrown {
            kind: match f.kind {
                FailureKind::Limit => "limit",
                FailureKind::Unsuitable => "unsuitable",
                _ => "input",
            },
            rendered: format!("error: {f}\n"),
            message: f.message,
            hint: f.hint,
            line: None,
            column: None,
            errors: Vec::new(),
        })
    }
}

/// A compiled rule file and its text.
pub struct Loaded {
    /// The text as given.
    pub source: String,
    /// The compiled file.
    pub file: RuleFile,
}

/// The fictional example rule files shipped with the package, the demo
/// (`clout report`'s default) first: (file name, text).
/// (`treasury.clout` reads a 3,000-row table and is not shipped.)
pub const EXAMPLES: [(&str, &str); 12] = [
    ("transit.clout", include_str!("../../examples/transit.clout")),
    ("council.clout", include_str!("../../examples/council.clout")),
    (
        "cooperative.clout",
        include_str!("../../examples/cooperative.clout"),
    ),
    ("compact.clout", include_str!("../../examples/compact.clout")),
    (
        "two-chamber.clout",
        include_str!("../../examples/two-chamber.clout"),
    ),
    ("union.clout", include_str!("../../examples/union.clout")),
    ("union-30.clout", include_str!("../../examples/union-30.clout")),
    ("treaty-30.clout", include_str!("../../examples/treaty-30.clout")),
    (
        "treaty-30-variant.clout",
        include_str!("../../examples/treaty-30-variant.clout"),
    ),
    ("assembly.clout", include_str!("../../examples/assembly.clout")),
    ("token-dao.clout", include_str!("../../examples/token-dao.clout")),
    (
        "transit-simple.clout",
        include_str!("../../examples/transit-simple.clout"),
    ),
];

/// Compiles a rule file, or every error in it.
pub fn parse(text: &str) -> Result<Loaded, Box<Thrown>> {
    parse_with(text, HashMap::new())
}

/// Compiles a rule file whose `members NAME from "FILE"` declarations read
/// the tables given by path, as written in the file.
pub fn parse_with(text: &str, mut tables: HashMap<String, String>) -> Result<Loaded, Box<Thrown>> {
    if text.len() > MAX_SOURCE_LEN {
        return Err(Failure::input(format!(
            "the rule text is {} bytes, over the limit of {MAX_SOURCE_LEN}",
            text.len()
        ))
        .with_hint("rule files are text of at most 8 MiB; describe large bodies with `members NAME xK`")
        .into());
    }
    clout_dsl::compile_with(text, &mut tables)
        .map(|file| Loaded {
            source: text.to_string(),
            file,
        })
        .map_err(|d| Box::new(Thrown::from_diagnostics(&d, text)))
}

/// A value with the command line's JSON keys.
fn json(value: &impl Serialize) -> Value {
    serde_json::to_value(value).unwrap_or(Value::Null)
}

/// How a report will be computed (the progress line of a front end).
#[derive(Serialize)]
struct Plan<'a> {
    rule: &'a str,
    members: usize,
    approximate: bool,
    engine: Option<&'static str>,
    steps: Option<f64>,
    reason: Option<String>,
}

impl Loaded {
    /// The rule named `name`, or the first; an unknown name names the closest.
    pub fn rule(&self, name: Option<&str>) -> Result<&CompiledRule, Box<Thrown>> {
        Ok(drafting::rule(&self.file, name)?)
    }

    /// The file's outline: title, attributes, members, groups, blocs, rules.
    pub fn outline(&self) -> Value {
        let f = &self.file;
        let line = |span: clout_dsl::Span| span.line_col(&self.source).0;
        serde_json::json!({
            "title": f.title,
            "attributes": f.attributes,
            "members": f.members.iter().map(|m| serde_json::json!({
                "name": m.name,
                "group": m.group.map(|g| f.groups[g].name.clone()),
                "line": line(m.span),
            })).collect::<Vec<_>>(),
            "groups": f.groups.iter().map(|g| serde_json::json!({
                "name": g.name,
                "members": f.members[g.first..g.first + g.len].iter().map(|m| m.name.clone()).collect::<Vec<_>>(),
            })).collect::<Vec<_>>(),
            "blocs": f.blocs.iter().map(|b| serde_json::json!({
                "name": b.name,
                "members": b.members.iter().map(|&i| f.members[i].name.clone()).collect::<Vec<_>>(),
            })).collect::<Vec<_>>(),
            "rules": f.rules.iter().map(|r| serde_json::json!({
                "name": r.name,
                "text": r.text,
                "line": line(r.span),
            })).collect::<Vec<_>>(),
        })
    }

    /// How `report` with these options will compute: exact with an engine
    /// and its estimated steps, or approximate and why.
    pub fn plan(&self, options: Value) -> Result<Value, Box<Thrown>> {
        let (name, options) = options::report(options)?;
        let rule = self.rule(name.as_deref())?;
        let method = report::plan(rule, &options)?;
        let (approximate, engine, steps, reason) = match method {
            Method::Exact { engine, cost } => (false, Some(engine.name()), Some(cost as f64), None),
            Method::Approximate { reason } => (true, None, None, Some(reason)),
        };
        Ok(json(&Plan {
            rule: &rule.name,
            members: rule.rule.members(),
            approximate,
            engine,
            steps,
            reason,
        }))
    }

    /// The power report: exactly `clout report --format json`.
    pub fn report(&self, options: Value) -> Result<Report, Box<Thrown>> {
        let (name, options) = options::report(options)?;
        let rule = self.rule(name.as_deref())?;
        Ok(report::report(&self.file, rule, &options)?)
    }

    /// The report's chart of power beside weight, as SVG text: exactly the
    /// library's `chart::report::chart` drawn by `chart::bars::svg`.
    pub fn report_chart(&self, options: Value) -> Result<String, Box<Thrown>> {
        let (name, options) = options::report(options)?;
        let rule = self.rule(name.as_deref())?;
        let report = report::report(&self.file, rule, &options)?;
        let chart = clout::chart::report::chart(&self.file, rule, &report, "report");
        Ok(clout::chart::bars::svg(&chart))
    }

    /// One vote: exactly `clout decide --format json`.
    pub fn decide(&self, ballot: Value) -> Result<Value, Box<Thrown>> {
        let (name, ballot) = options::ballot(ballot)?;
        let rule = self.rule(name.as_deref())?;
        let votes = decision::votes(&self.file, &ballot)?;
        Ok(json(&decision::decide(&self.file, rule, &votes)?))
    }

    /// The rule's binary image (what `clout compile` writes).
    pub fn image(&self, options: Value) -> Result<Vec<u8>, Box<Thrown>> {
        let name = options::rule_only("image", options)?;
        Ok(clout::image::encode(&self.rule(name.as_deref())?.rule))
    }

    /// Dummies, and whether the rule is one weighted vote or a proof that it
    /// is not: exactly `clout simplify --format json`.
    pub fn simplify(&self, options: Value) -> Result<Value, Box<Thrown>> {
        let (name, options) = options::simplify(options)?;
        let rule = self.rule(name.as_deref())?;
        Ok(json(&drafting::simplify(
            &self.file,
            rule,
            &options,
            &mut Unwatched,
        )?))
    }

    /// Whether this file's rule and `other`'s pass the same coalitions:
    /// exactly `clout compare A B --format json`.
    pub fn compare(&self, other: &Loaded, options: Value) -> Result<Value, Box<Thrown>> {
        let (name, other_name, options) = options::compare(options)?;
        let (a, b) = (self.rule(name.as_deref())?, other.rule(other_name.as_deref())?);
        Ok(json(&drafting::compare(
            &self.file,
            a,
            &other.file,
            b,
            &options,
            &mut Unwatched,
        )?))
    }

    /// Power as a quota moves: exactly `clout sweep --format json`.
    pub fn sweep(&self, options: Value) -> Result<Value, Box<Thrown>> {
        let (name, options) = options::sweep(options)?;
        let rule = self.rule(name.as_deref())?;
        Ok(json(&drafting::sweep(
            &self.file,
            rule,
            &options,
            &mut Unwatched,
        )?))
    }

    /// Minimal winning or blocking coalitions: exactly `clout coalitions --format json`.
    pub fn coalitions(&self, options: Value) -> Result<Value, Box<Thrown>> {
        let (name, options) = options::coalitions(options)?;
        let rule = self.rule(name.as_deref())?;
        Ok(json(&drafting::coalitions(
            &self.file,
            rule,
            &options,
            &mut Unwatched,
        )?))
    }

    /// Members by influence and symmetric classes: exactly `clout order --format json`.
    pub fn order(&self, options: Value) -> Result<Value, Box<Thrown>> {
        let name = options::rule_only("order", options)?;
        let rule = self.rule(name.as_deref())?;
        Ok(json(&drafting::order(&self.file, rule, &mut Unwatched)?))
    }

    /// Rows of interchangeable members (identical weights in every attribute
    /// of the rule, blocs included), whose figures are therefore equal, with
    /// a label such as `delegate1..delegate12`.
    pub fn interchangeable(&self, options: Value) -> Result<Value, Box<Thrown>> {
        let name = options::rule_only("interchangeable", options)?;
        let rule = self.rule(name.as_deref())?;
        let rows: Vec<Value> = report::interchangeable(rule)
            .iter()
            .map(|ids| {
                serde_json::json!({
                    "members": ids.iter().map(|&i| self.file.members[i].name.clone()).collect::<Vec<_>>(),
                    "indices": ids,
                    "label": self.file.describe_members(ids).join(", "),
                })
            })
            .collect();
        Ok(Value::Array(rows))
    }

    /// Each member's share of every weight the rule counts (declared
    /// attributes and `count`; not blocs): weight / total, as the chart
    /// sets it beside the shares of power.
    pub fn weight_shares(&self, options: Value) -> Result<Value, Box<Thrown>> {
        let name = options::rule_only("weightShares", options)?;
        let rule = self.rule(name.as_deref())?;
        let r = &rule.rule;
        let shares: Vec<Value> = rule
            .attributes
            .iter()
            .enumerate()
            .filter(|(_, a)| matches!(a.kind, AttributeKind::Declared | AttributeKind::Count))
            .map(|(a, attribute)| {
                let total = r.total(a);
                let share = |i: usize| {
                    if total == 0 {
                        0.0
                    } else {
                        r.weight(a, i) as f64 / total as f64
                    }
                };
                serde_json::json!({
                    "attribute": attribute.name,
                    "total": total.to_string(),
                    "shares": (0..r.members()).map(share).collect::<Vec<f64>>(),
                })
            })
            .collect();
        Ok(Value::Array(shares))
    }
}

/// Integer weights and a quota whose Banzhaf index is closest to target
/// shares: exactly `clout fit --format json`.
pub fn fit(options: Value) -> Result<Value, Box<Thrown>> {
    let (targets, options) = options::fit(options)?;
    Ok(json(&drafting::fit(&targets, &options, &mut Unwatched)?))
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    const DEMO: &str = EXAMPLES[0].1;

    #[test]
    fn every_example_is_shipped_and_compiles() {
        let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/../examples");
        let mut files: Vec<String> = std::fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().into_string().unwrap())
            .filter(|n| n.ends_with(".clout"))
            .collect();
        files.sort();
        let mut shipped: Vec<String> = EXAMPLES.iter().map(|(n, _)| n.to_string()).collect();
        shipped.sort();
        // Rule files that read tables are left out (see EXAMPLES).
        files.retain(|f| {
            !std::fs::read_to_string(format!("{dir}/{f}"))
                .unwrap()
                .contains(" from \"")
        });
        assert_eq!(files, shipped);
        for (name, text) in EXAMPLES {
            assert!(parse(text).is_ok(), "{name}");
        }
    }

    #[test]
    fn report_chart_is_the_librarys_chart() {
        let loaded = parse(DEMO).unwrap();
        let svg = loaded.report_chart(json!({"rule": "budget"})).unwrap();
        let rule = loaded.file.rule(Some("budget")).unwrap();
        let report = report::report(&loaded.file, rule, &report::Options::default()).unwrap();
        let chart = clout::chart::report::chart(&loaded.file, rule, &report, "report");
        assert_eq!(svg, clout::chart::bars::svg(&chart));
        // One panel per declared weight (seats, riders), four rows in each.
        assert_eq!(svg.matches(r#"<g class="panel""#).count(), 2);
        assert_eq!(svg.matches(r#"<g class="row""#).count(), 8);
        let e = loaded.report_chart(json!({"rule": "nope"})).err().unwrap();
        assert_eq!(e.message, "no rule named `nope`");
    }

    #[test]
    fn report_is_the_librarys_report() {
        let loaded = parse(DEMO).unwrap();
        let ours = loaded.report(json!({"rule": "charter"})).unwrap();
        let rule = loaded.file.rule(Some("charter")).unwrap();
        let theirs = report::report(&loaded.file, rule, &report::Options::default()).unwrap();
        assert_eq!(ours, theirs);
        assert_eq!(json(&ours)["rule"], "charter");
    }

    #[test]
    fn errors_carry_line_column_message_and_hint() {
        let text =
            "member harbor seats=9\nmember mill seats=7\nbloc founders = harbour, mill\nrule r = founders\n";
        let e = parse(text).err().unwrap();
        assert_eq!(e.kind, "rule-text");
        assert_eq!((e.line, e.column), (Some(3), Some(17)));
        assert_eq!(e.message, "unknown member `harbour`");
        assert_eq!(e.hint.as_deref(), Some("did you mean `harbor`?"));
        assert_eq!((e.errors[0].end_line, e.errors[0].end_column), (3, 24));
        assert!(e.rendered.contains("rule text:3:17: error"), "{}", e.rendered);
    }

    #[test]
    fn failures_have_no_place_but_a_kind_and_hint() {
        let loaded = parse(DEMO).unwrap();
        let e = loaded.report(json!({"rule": "chartr"})).err().unwrap();
        assert_eq!((e.kind, e.line, e.column), ("input", None, None));
        assert_eq!(e.message, "no rule named `chartr`");
        assert_eq!(e.hint.as_deref(), Some("did you mean `charter`?"));
        let e = loaded.report(json!({"budget": 1, "exact": true})).err().unwrap();
        assert_eq!(e.kind, "limit");
        // The hint speaks of options objects, not of the command line's flags.
        let hint = e.hint.unwrap();
        assert!(
            hint.contains("the option `budget: STEPS`") && hint.contains("leave out `exact: true`"),
            "{hint}"
        );
        assert!(!hint.contains("--"), "{hint}");
        let e = loaded.decide(json!({"yes": ["harbour"]})).err().unwrap();
        assert_eq!(e.hint.as_deref(), Some("did you mean `harbor`?"));
    }

    #[test]
    fn plan_says_exact_or_approximate() {
        let loaded = parse(DEMO).unwrap();
        let p = loaded.plan(Value::Null).unwrap();
        assert_eq!(p["approximate"], false);
        assert!(p["steps"].as_f64().unwrap() > 0.0);
        let p = loaded.plan(json!({"budget": 1})).unwrap();
        assert_eq!(p["approximate"], true);
        assert!(p["reason"].as_str().unwrap().contains("budget"));
    }

    #[test]
    fn decide_names_the_critical_members() {
        let loaded = parse(DEMO).unwrap();
        let d = loaded
            .decide(json!({"rule": "closure", "yes": ["harbor", "mill"], "rest": "no"}))
            .unwrap();
        // closure = seats > 1/2 and founders: 16 of 29 seats and both founders.
        assert_eq!(d["passed"], true);
        assert_eq!(d["critical"], json!(["harbor", "mill"]));
    }

    #[test]
    fn rows_and_shares_follow_the_rule() {
        let loaded = parse(DEMO).unwrap();
        let rows = loaded.interchangeable(json!({"rule": "budget"})).unwrap();
        let rows = rows.as_array().unwrap();
        assert_eq!(rows.len(), 4, "{rows:?}");
        assert_eq!(rows[3]["label"], "delegate1..delegate12");
        let shares = loaded.weight_shares(json!({"rule": "budget"})).unwrap();
        assert_eq!(shares[0]["attribute"], "seats");
        assert_eq!(shares[0]["total"], "29");
        assert_eq!(shares[0]["shares"][0], 9.0 / 29.0);
        assert_eq!(shares[1]["attribute"], "riders");
        assert_eq!(shares[2]["attribute"], "count");
        assert_eq!(shares[2]["shares"][3], 1.0 / 15.0);
    }

    #[test]
    fn images_load_back_to_the_rule() {
        let loaded = parse(DEMO).unwrap();
        let bytes = loaded.image(json!({"rule": "quick"})).unwrap();
        let mut weights = vec![0u64; clout::image::weights_needed(&bytes).unwrap()];
        let back = clout::image::load(&bytes, &mut weights).unwrap();
        assert!(back == loaded.file.rule(Some("quick")).unwrap().rule.as_borrowed());
    }
}
