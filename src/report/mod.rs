//! The power report as data: every member's swings and indices and the
//! rule's properties, exact when an exact engine fits the work budget and the
//! memory limit, otherwise approximate with a half-width on every figure.
//!
//! This is the one schema of the project: the command line's `--format
//! json` is [`Report`] serialized with serde, the Python package's dict and
//! the WebAssembly package's object are the same serialization, and the
//! text and CSV renderings read the same fields. Exact integers are decimal
//! strings (they outgrow every machine integer); indices are `f64`.
//!
//! Flow: [`plan`] picks exact counting (an engine and its estimated steps)
//! or approximation (with the reason); [`build`] runs it. A front end that
//! shows progress calls the two separately; [`report`] does both.
//!
//! Time and memory: those of the chosen engine (see `clout_core::engine`),
//! bounded by [`Options::budget`] and [`Options::memory`]; this layer adds
//! O(n * attributes) for the conversion.

mod approx;
mod extras;
pub mod rounding;

use clout_core::Meter;
use clout_dsl::exact::{self, Power};
use clout_dsl::{CompiledRule, RuleFile};
use serde::Serialize;

use crate::failure::{Failure, FailureKind};
use crate::Engine;

pub use approx::Approximation;

/// The model every figure assumes, in one line.
pub const MODEL: &str = "Model: each member votes yes or no independently with equal chance; \
indices measure a priori power under the rule's text, not predicted behaviour.";

/// The legal caution, in one line.
pub const CAUTION: &str = "Caution: the legal outcome of a vote follows the governing instrument, \
applicable election law and certified counting procedures; this report is an aid, not an authority.";

/// What to compute and within which limits.
#[derive(Clone, Debug, PartialEq)]
pub struct Options {
    /// Force this engine instead of planning (still within the budget).
    pub engine: Option<Engine>,
    /// Most estimated elementary steps of exact counting.
    pub budget: u128,
    /// Most bytes an exact engine may use.
    pub memory: u64,
    /// Refuse to approximate.
    pub exact: bool,
    /// Target half-width of approximate figures (95% confidence).
    pub tolerance: f64,
    /// Seed of the Monte Carlo sampler.
    pub seed: u64,
    /// Also Felsenthal & Machover's ternary Banzhaf measure.
    pub ternary: bool,
    /// Also the probability of passage when each member attends with this chance.
    pub attendance: Option<f64>,
}

impl Default for Options {
    fn default() -> Self {
        Options {
            engine: None,
            budget: clout_core::planner::DEFAULT_BUDGET,
            memory: clout_core::planner::DEFAULT_MEMORY,
            exact: false,
            tolerance: 0.001,
            seed: 1,
            ternary: false,
            attendance: None,
        }
    }
}

/// How a report will be computed.
#[derive(Clone, Debug, PartialEq)]
pub enum Method {
    /// Exact counting with this engine, about this many steps.
    Exact {
        /// The engine.
        engine: Engine,
        /// Its estimated steps.
        cost: u128,
    },
    /// Approximation, because exact counting does not fit.
    Approximate {
        /// Why exact counting was not possible, in a drafter's words.
        reason: String,
    },
}

/// The power report. Field names are the JSON keys (README, "The `clout`
/// command"); figures the method did not compute are `None` (JSON null).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Report {
    /// The rule's name.
    pub rule: String,
    /// The file's title.
    pub title: Option<String>,
    /// The rule's text as written.
    pub text: String,
    /// Whether the figures are estimates.
    pub approximate: bool,
    /// Why the figures are estimates (null when exact).
    pub reason: Option<String>,
    /// One entry per member, in declaration order.
    pub members: Vec<MemberReport>,
    /// Winning coalitions, exact decimal.
    pub winning_coalitions: Option<String>,
    /// Winning coalitions / 2^n.
    pub passage_probability: Option<f64>,
    /// No two disjoint coalitions both pass.
    pub proper: Option<bool>,
    /// Of every coalition and its complement, one passes.
    pub strong: Option<bool>,
    /// Proper and strong.
    pub decisive: Option<bool>,
    /// Minimal winning coalitions, exact decimal (when the engine finds them).
    pub minimal_winning_coalitions: Option<String>,
    /// Minimal blocking coalitions, exact decimal (likewise).
    pub minimal_blocking_coalitions: Option<String>,
    /// Members in a smallest winning coalition.
    pub smallest_winning_coalition: Option<usize>,
    /// Every condition with its exact integer quota.
    pub conditions: Vec<ConditionReport>,
    /// The exact engine's name, or `approximation`.
    pub engine: String,
    /// The exact engine's estimated steps (not in JSON: it depends on the estimate's version).
    #[serde(skip)]
    pub steps: Option<u128>,
    /// How the Penrose measures were estimated (null when exact).
    pub penrose_method: Option<String>,
    /// How the Shapley-Shubik indices were estimated (null when exact).
    pub shapley_shubik_method: Option<String>,
    /// Confidence of the half-widths (null when exact).
    pub confidence: Option<f64>,
    /// Passage when members attend by chance (`--attendance`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub attendance: Option<AttendanceReport>,
    /// What rounding exact amounts to a unit can change (null when no
    /// condition is on rounded weights).
    pub rounding: Option<rounding::Rounding>,
    /// The voting model of every figure.
    pub model: String,
    /// The legal caution.
    pub caution: String,
}

/// One member's figures.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct MemberReport {
    /// The member's name.
    pub name: String,
    /// Attribute name to the member's weight, exact decimal.
    pub weights: serde_json::Map<String, serde_json::Value>,
    /// Swing count (raw Banzhaf), exact decimal.
    pub swings: Option<String>,
    /// Normalized Banzhaf index.
    pub banzhaf: f64,
    /// Penrose measure (absolute Banzhaf index): swings / 2^(n-1).
    pub penrose: f64,
    /// Shapley-Shubik index.
    pub shapley_shubik: f64,
    /// Shapley-Shubik index as an exact fraction over n!.
    pub shapley_shubik_exact: Option<Fraction>,
    /// Coleman's power to prevent action.
    pub coleman_prevent: Option<f64>,
    /// Coleman's power to initiate action.
    pub coleman_initiate: Option<f64>,
    /// Johnston index.
    pub johnston: Option<f64>,
    /// Deegan-Packel index.
    pub deegan_packel: Option<f64>,
    /// Holler's public good index.
    pub public_good: Option<f64>,
    /// Never a swing.
    pub dummy: Option<bool>,
    /// Can block alone.
    pub veto: bool,
    /// Decides alone.
    pub dictator: bool,
    /// Half-width of `penrose` at `confidence` (null when exact).
    pub penrose_half_width: Option<f64>,
    /// Half-width of `banzhaf` (null when exact).
    pub banzhaf_half_width: Option<f64>,
    /// Half-width of `shapley_shubik` (null when exact).
    pub shapley_shubik_half_width: Option<f64>,
    /// Ternary Banzhaf measure (`--ternary`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub ternary_banzhaf: Option<f64>,
}

/// An exact fraction, numerator and denominator as decimal strings.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Fraction {
    /// Numerator.
    pub numerator: String,
    /// Denominator.
    pub denominator: String,
}

/// One condition of the rule and its exact quota.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct ConditionReport {
    /// As written.
    pub text: String,
    /// The attribute it sums.
    pub attribute: String,
    /// The exact integer quota (of the two-state game).
    pub quota: String,
    /// The attribute's total over all members.
    pub total: String,
}

/// Passage under random attendance.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct AttendanceReport {
    /// Each member's chance to attend.
    pub chance: f64,
    /// Probability that the motion passes.
    pub passage_probability: f64,
}

/// Decides how to compute: exact counting when an engine fits, otherwise
/// approximation (unless `options.exact` or a forced engine forbids it).
pub fn plan(rule: &CompiledRule, options: &Options) -> Result<Method, Failure> {
    let r = &rule.rule;
    let planned = match options.engine {
        Some(engine) => clout_core::engine::cost(r, engine).and_then(|cost| {
            // A forced engine keeps to the budget too, so it cannot run for hours unasked.
            if cost > options.budget {
                Err(clout_core::Error::TooCostly {
                    estimate: cost,
                    budget: options.budget,
                })
            } else {
                Ok((engine, cost))
            }
        }),
        None => exact::choose_within(r, options.budget, options.memory).map(|p| (p.engine, p.cost)),
    };
    match planned {
        Ok((engine, cost)) => Ok(Method::Exact { engine, cost }),
        Err(e) => fallback(rule, options, e),
    }
}

/// Approximation when exact counting is over a limit and allowed to fall back.
fn fallback(rule: &CompiledRule, options: &Options, err: clout_core::Error) -> Result<Method, Failure> {
    let over = matches!(
        err,
        clout_core::Error::TooCostly { .. }
            | clout_core::Error::MemoryLimit { .. }
            | clout_core::Error::OverBudget { .. }
            | clout_core::Error::OutOfMemory { .. }
    );
    if over && !options.exact && options.engine.is_none() {
        Ok(Method::Approximate { reason: reason(err) })
    } else {
        Err(core_failure(&rule.name, err))
    }
}

/// Plans and builds the report.
pub fn report(file: &RuleFile, rule: &CompiledRule, options: &Options) -> Result<Report, Failure> {
    let method = plan(rule, options)?;
    build(file, rule, &method, options)
}

/// Runs `method` and assembles the report, within `options.budget` steps
/// and `options.memory` bytes as it runs (see [`build_metered`]).
pub fn build(
    file: &RuleFile,
    rule: &CompiledRule,
    method: &Method,
    options: &Options,
) -> Result<Report, Failure> {
    build_metered(
        file,
        rule,
        method,
        options,
        &Meter::new(options.budget, options.memory),
    )
}

/// [`build`] charging `meter` (the caller's limits, cancellation flag and
/// progress) in every part: the extras, the exact engine, the
/// approximation. Exact counting that hits a limit while it runs falls back
/// to approximation as [`plan`] would, with the step count started again.
pub fn build_metered(
    file: &RuleFile,
    rule: &CompiledRule,
    method: &Method,
    options: &Options,
    meter: &Meter<'_>,
) -> Result<Report, Failure> {
    check_options(options)?;
    let extras = extras::Extras::of(rule, options, meter)?;
    meter.restart();
    let figures = match method {
        Method::Exact { engine, .. } => match exact::power_metered(&rule.rule, *engine, meter) {
            Ok(p) => Figures::Exact(p),
            Err(e) => match fallback(rule, options, e)? {
                Method::Approximate { reason } => {
                    meter.restart();
                    Figures::Approximate(approx::approximate(rule, options, meter)?, reason)
                }
                Method::Exact { .. } => return Err(core_failure(&rule.name, e)),
            },
        },
        Method::Approximate { reason } => {
            Figures::Approximate(approx::approximate(rule, options, meter)?, reason.clone())
        }
    };
    Ok(assemble(file, rule, &figures, &extras))
}

fn check_options(options: &Options) -> Result<(), Failure> {
    if let Some(p) = options.attendance {
        if !(0.0..=1.0).contains(&p) {
            return Err(
                Failure::input(format!("attendance {p} is not a chance between 0 and 1"))
                    .with_hint("e.g. --attendance 0.8"),
            );
        }
    }
    if !(options.tolerance > 0.0 && options.tolerance <= 0.5) {
        return Err(Failure::input(format!(
            "tolerance {} is not a half-width between 0 and 0.5",
            options.tolerance
        ))
        .with_hint("e.g. --tolerance 0.001"));
    }
    Ok(())
}

enum Figures {
    Exact(Power),
    Approximate(Approximation, String),
}

fn assemble(file: &RuleFile, rule: &CompiledRule, figures: &Figures, extras: &extras::Extras) -> Report {
    let r = &rule.rule;
    let vetoes = approx::veto_and_dictators(r);
    let members = (0..r.members())
        .map(|i| {
            let weights = file
                .attributes
                .iter()
                .enumerate()
                .map(|(a, name)| {
                    (
                        name.clone(),
                        serde_json::Value::String(file.weight(a, i).to_string()),
                    )
                })
                .collect();
            let mut m = match figures {
                Figures::Exact(p) => {
                    let m = &p.members[i];
                    MemberReport {
                        name: file.members[i].name.clone(),
                        weights,
                        swings: Some(m.swings.clone()),
                        banzhaf: m.banzhaf,
                        penrose: m.penrose,
                        shapley_shubik: m.shapley_shubik,
                        shapley_shubik_exact: m.shapley_shubik_exact.as_ref().map(|(n, d)| Fraction {
                            numerator: n.clone(),
                            denominator: d.clone(),
                        }),
                        coleman_prevent: Some(m.coleman_prevent),
                        coleman_initiate: Some(m.coleman_initiate),
                        johnston: m.johnston,
                        deegan_packel: m.deegan_packel,
                        public_good: m.public_good,
                        dummy: Some(m.dummy),
                        veto: m.veto,
                        dictator: m.dictator,
                        penrose_half_width: None,
                        banzhaf_half_width: None,
                        shapley_shubik_half_width: None,
                        ternary_banzhaf: None,
                    }
                }
                Figures::Approximate(a, _) => {
                    let (veto, dictator) = vetoes[i];
                    MemberReport {
                        name: file.members[i].name.clone(),
                        weights,
                        swings: None,
                        banzhaf: a.banzhaf[i].value,
                        penrose: a.penrose[i].value,
                        shapley_shubik: a.shapley[i].value,
                        shapley_shubik_exact: None,
                        coleman_prevent: None,
                        coleman_initiate: None,
                        johnston: None,
                        deegan_packel: None,
                        public_good: None,
                        dummy: None,
                        veto,
                        dictator,
                        penrose_half_width: Some(a.penrose[i].half_width),
                        banzhaf_half_width: Some(a.banzhaf[i].half_width),
                        shapley_shubik_half_width: Some(a.shapley[i].half_width),
                        ternary_banzhaf: None,
                    }
                }
            };
            m.ternary_banzhaf = extras.ternary.as_ref().map(|t| t[i]);
            m
        })
        .collect();
    let conditions = rule
        .conditions
        .iter()
        .zip(r.atoms())
        .map(|(c, atom)| {
            let a = usize::from(atom.attribute);
            ConditionReport {
                text: c.text.clone(),
                attribute: rule.attributes[a].name.clone(),
                quota: atom.quota.to_string(),
                total: r.total(a).to_string(),
            }
        })
        .collect();
    let attendance = extras
        .attendance
        .map(|(chance, passage_probability)| AttendanceReport {
            chance,
            passage_probability,
        });
    let mut report = Report {
        rule: rule.name.clone(),
        title: file.title.clone(),
        text: rule.text.clone(),
        approximate: false,
        reason: None,
        members,
        winning_coalitions: None,
        passage_probability: None,
        proper: None,
        strong: None,
        decisive: None,
        minimal_winning_coalitions: None,
        minimal_blocking_coalitions: None,
        smallest_winning_coalition: None,
        conditions,
        engine: String::new(),
        steps: None,
        penrose_method: None,
        shapley_shubik_method: None,
        confidence: None,
        attendance,
        rounding: None,
        model: MODEL.to_string(),
        caution: CAUTION.to_string(),
    };
    let penrose: Vec<f64> = report.members.iter().map(|m| m.penrose).collect();
    report.rounding = rounding::certify(file, rule, &penrose);
    match figures {
        Figures::Exact(p) => {
            report.winning_coalitions = Some(p.winning.clone());
            report.passage_probability = Some(p.passage_probability);
            report.proper = Some(p.proper);
            report.strong = Some(p.strong);
            report.decisive = Some(p.decisive);
            report.minimal_winning_coalitions = p.minimal_winning.clone();
            report.minimal_blocking_coalitions = p.minimal_blocking.clone();
            report.smallest_winning_coalition = p.smallest_winning;
            report.engine = p.engine.name().to_string();
            report.steps = Some(p.cost);
        }
        Figures::Approximate(a, why) => {
            report.approximate = true;
            report.reason = Some(why.clone());
            report.engine = "approximation".to_string();
            report.penrose_method = Some(a.penrose_method.clone());
            report.shapley_shubik_method = Some(a.shapley_method.clone());
            report.confidence = Some(0.95);
        }
    }
    report
}

/// Why exact counting was refused, in a drafter's words.
pub fn reason(err: clout_core::Error) -> String {
    match err {
        clout_core::Error::MemoryLimit { needed, limit } => {
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
        clout_core::Error::TooCostly { estimate, budget } => format!(
            "the cheapest exact engine needs about {} steps, over the budget of {}",
            steps(estimate),
            steps(budget)
        ),
        clout_core::Error::OverBudget { budget } => format!(
            "the computation used up the budget of {} steps before it finished",
            steps(budget)
        ),
        clout_core::Error::OutOfMemory { bytes: b } => format!(
            "the system refused {} of memory to the exact engine, within the memory limit",
            bytes(b)
        ),
        other => other.to_string(),
    }
}

/// The core's refusal of rule `name` as a [`Failure`] with a hint.
pub fn core_failure(name: &str, err: clout_core::Error) -> Failure {
    let (kind, hint) = match err {
        clout_core::Error::TooCostly { .. }
        | clout_core::Error::MemoryLimit { .. }
        | clout_core::Error::OverBudget { .. }
        | clout_core::Error::OutOfMemory { .. } => (
            FailureKind::Limit,
            Some(
                "raise the limits with --budget STEPS (5e10 steps take about a minute) or --memory BYTES, \
                 or leave out --exact to get approximate figures with error bounds; \
                 members with identical weights (`members NAME xK`) make exact counting much cheaper",
            ),
        ),
        clout_core::Error::EngineUnsuitable { .. } => (
            FailureKind::Unsuitable,
            Some("leave out --engine to let the planner choose"),
        ),
        _ => (FailureKind::Input, None),
    };
    Failure {
        kind,
        message: format!("rule `{name}`: {}", reason(err)),
        hint: hint.map(str::to_string),
    }
}

/// A step count: in full below a million, else as `1.2e9`; a saturated
/// estimate as "more than 10^38", never as its saturated value.
pub fn steps(n: u128) -> String {
    if n == u128::MAX {
        "more than 10^38".to_string()
    } else if n < 1_000_000 {
        n.to_string()
    } else {
        format!("{:.1e}", n as f64)
    }
}

/// A byte count in binary units, one decimal.
pub fn bytes(b: u64) -> String {
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

/// Members with identical weight columns (in every attribute of the
/// compiled rule, blocs included), in order of first appearance: they are
/// interchangeable, so their figures are equal.
pub fn interchangeable(rule: &CompiledRule) -> Vec<Vec<usize>> {
    let r = &rule.rule;
    let mut index: std::collections::HashMap<Vec<u64>, usize> = std::collections::HashMap::new();
    let mut rows: Vec<Vec<usize>> = Vec::new();
    for i in 0..r.members() {
        let key: Vec<u64> = (0..r.attributes()).map(|a| r.weight(a, i)).collect();
        let k = *index.entry(key).or_insert_with(|| {
            rows.push(Vec::new());
            rows.len() - 1
        });
        if let Some(row) = rows.get_mut(k) {
            row.push(i);
        }
    }
    rows
}
