//! The drafting answers as data: simplify, compare, sweep, coalitions, order
//! and fit, each a function from compiled rules and options to a
//! serializable answer ([`data`]), the one schema of every front end (the
//! command line's `--format json`, the Python package's dicts, the
//! WebAssembly package's objects). The text renderings of the `clout`
//! command read the same fields.
//!
//! The computations live in one module per answer and call the exact
//! machinery of [`crate::toolkit`] and the core's engines; the data types
//! never hold a method's state, so a method can be replaced without changing
//! what front ends see. Refusals are [`Failure`]s.
//!
//! Long computations run in steps (one exact analysis each). A [`Watch`]
//! runs each step: the command line draws a progress line, the Python
//! package checks for Ctrl-C between steps. [`Unwatched`] just runs them.
//!
//! Time and memory: those of the toolkit function behind each answer (see
//! the table in [`crate::toolkit`]) plus O(n) per listed coalition.

mod coalitions;
mod compare;
pub mod data;
mod fit;
mod order;
mod simplify;
mod sweep;

use clout_core::Rule;
use clout_dsl::diagnostic::closest;
use clout_dsl::exact::{self, Power};
use clout_dsl::{CompiledRule, RuleFile};

use crate::failure::{Failure, FailureKind};
use crate::toolkit::{self, PROFILE_LIMIT};

pub use coalitions::{coalitions, CoalitionOptions};
pub use compare::{compare, matching, CompareOptions};
pub use data::*;
pub use fit::{fit, FitOptions, Targets, STEPS_PER_SECOND};
pub use order::order;
pub use simplify::{simplify, SimplifyOptions};
pub use sweep::{sweep, SweepOptions, MAX_POINTS};

/// Default work budget of one exact analysis (about a minute).
pub const BUDGET: u128 = 50_000_000_000;

/// Runs the steps of a long computation; may stop it between steps.
pub trait Watch {
    /// Runs `work`, one step described by `label`, or refuses to (the
    /// computation then ends with that failure, e.g. of kind
    /// [`FailureKind::Interrupted`]).
    fn step<T: Send>(&mut self, label: &str, work: impl FnOnce() -> T + Send) -> Result<T, Failure>;
}

/// Runs every step at once, never stops.
#[derive(Clone, Copy, Debug, Default)]
pub struct Unwatched;

impl Watch for Unwatched {
    fn step<T: Send>(&mut self, _label: &str, work: impl FnOnce() -> T + Send) -> Result<T, Failure> {
        Ok(work())
    }
}

/// The rule `name` of `file`, or its first rule.
pub fn rule<'f>(file: &'f RuleFile, name: Option<&str>) -> Result<&'f CompiledRule, Failure> {
    if let Some(r) = file.rule(name) {
        return Ok(r);
    }
    let wanted = name.unwrap_or_default();
    let names: Vec<&str> = file.rules.iter().map(|r| r.name.as_str()).collect();
    let hint = match closest(wanted, names.iter().copied()) {
        Some(c) => format!("did you mean `{c}`?"),
        None => format!("the rules are: {}", names.join(", ")),
    };
    Err(Failure::input(format!("no rule named `{wanted}`")).with_hint(hint))
}

/// Which rule an answer is about.
pub fn rule_ref(file: &RuleFile, rule: &CompiledRule) -> RuleRef {
    RuleRef {
        rule: rule.name.clone(),
        title: file.title.clone(),
        text: rule.text.clone(),
        four_state: rule.rule.has_linear(),
    }
}

/// One exact analysis of a core rule within `budget` steps, as a step of `watch`.
pub fn exact_power(
    rule: &Rule<Vec<u64>>,
    name: &str,
    budget: u128,
    watch: &mut impl Watch,
) -> Result<Power, Failure> {
    let plan = exact::choose(rule, budget).map_err(|e| core_failure(name, e))?;
    let label = format!(
        "counting exactly: rule `{name}`, {} engine, about {:.1e} steps",
        plan.engine.name(),
        plan.cost as f64
    );
    watch
        .step(&label, || {
            // Charged as it runs: an estimate that was too low stops at the budget.
            let meter = clout_core::Meter::new(budget, clout_core::planner::DEFAULT_MEMORY);
            exact::power_metered(rule, plan.engine, &meter)
        })?
        .map_err(|e| core_failure(name, e))
}

/// The core's refusal of rule `name`.
pub fn core_failure(name: &str, err: clout_core::Error) -> Failure {
    let failure = Failure::input(format!("rule `{name}`: {err}"));
    match err {
        clout_core::Error::TooCostly { .. }
        | clout_core::Error::OverBudget { .. }
        | clout_core::Error::MemoryLimit { .. }
        | clout_core::Error::OutOfMemory { .. } => Failure {
            kind: FailureKind::Limit,
            ..failure.with_hint(
                "raise the limit with --budget STEPS; members with identical weights \
                 (`members NAME xK`) make exact counting much cheaper",
            )
        },
        _ => failure,
    }
}

/// The toolkit's refusal of rule `name`.
pub fn toolkit_failure(name: &str, err: toolkit::Error) -> Failure {
    match err {
        toolkit::Error::TooLarge { profiles, limit } => {
            let shown = if profiles == u128::MAX {
                "more than 10^38".to_string()
            } else {
                thousands(profiles)
            };
            Failure {
                kind: FailureKind::Limit,
                ..Failure::input(format!(
                    "rule `{name}` is too large for the exact test: it would visit {shown} patterns of \
                     interchangeable members, over the limit of {}",
                    thousands(limit)
                ))
                .with_hint(format!(
                    "the test visits every pattern (how many of each group of members with identical \
                     weights vote yes); rules whose members fall into a few such groups are cheap, \
                     while {} or more members with distinct weights are too many",
                    PROFILE_LIMIT.trailing_zeros() + 1
                ))
            }
        }
        toolkit::Error::Core(e) => core_failure(name, e),
        other => Failure::input(format!("rule `{name}`: {other}")),
    }
}

/// `n` with thousands separators.
pub fn thousands(n: impl ToString) -> String {
    let digits = n.to_string();
    let mut out = String::with_capacity(digits.len() + digits.len() / 3);
    for (k, c) in digits.chars().enumerate() {
        if k > 0 && (digits.len() - k) % 3 == 0 {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// A failed internal cross-check: a bug, never output.
fn internal(name: &str, what: &str) -> Failure {
    Failure::input(format!("rule `{name}`: internal check failed: {what}"))
}
