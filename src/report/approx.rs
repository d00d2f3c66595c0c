//! Approximate figures, for rules no exact engine can count within the
//! budget and the memory limit.
//!
//! Penrose measures come from floating-point dense counting with a rounding
//! bound when the rule is one weighted threshold of modest quota, otherwise
//! from seeded Monte Carlo with Wilson intervals; Shapley-Shubik indices
//! from seeded Monte Carlo over orderings. Same seed, same figures, whatever
//! the number of threads. Veto and dictator flags stay exact (one pass over
//! the members).

use clout_core::approx::{
    penrose_f64_metered, sample_penrose_metered, sample_shapley_metered, Estimate, Sampling,
};
use clout_core::Meter;
use clout_dsl::CompiledRule;

use super::Options;
use crate::failure::Failure;
use crate::Rule;

/// Most Monte Carlo orderings drawn for Shapley-Shubik (the achieved
/// half-width is reported when this stops the sampler first).
const SHAPLEY_SAMPLES: u64 = 200_000;

/// Sums of table entries at or above this go to Monte Carlo instead of the
/// floating-point table.
const F64_TABLE: u64 = 1 << 27;

/// Every member's estimates and how they were made.
#[derive(Clone, Debug, PartialEq)]
pub struct Approximation {
    /// Penrose measures.
    pub penrose: Vec<Estimate>,
    /// Normalized Banzhaf indices.
    pub banzhaf: Vec<Estimate>,
    /// Shapley-Shubik indices.
    pub shapley: Vec<Estimate>,
    /// How the Penrose measures were estimated.
    pub penrose_method: String,
    /// How the Shapley-Shubik indices were estimated.
    pub shapley_method: String,
}

/// The least budget an approximation gets: 5e9 steps, a few seconds. A
/// `--budget` small enough to rule out exact counting still gets figures;
/// larger budgets bound the approximation as they bound exact counting.
pub const APPROXIMATION_MIN_BUDGET: u128 = 5_000_000_000;

/// Estimates every member's Penrose measure, Banzhaf and Shapley-Shubik
/// index, charging a meter of `meter`'s budget (at least
/// [`APPROXIMATION_MIN_BUDGET`]), memory limit and cancellation flag: the
/// Penrose part may spend half of it, the Shapley-Shubik part the rest.
/// Sampling that runs out of budget stops with the wider intervals reached,
/// and says so; a budget too small for one sample is an error.
pub fn approximate(
    rule: &CompiledRule,
    options: &Options,
    meter: &Meter<'_>,
) -> Result<Approximation, Failure> {
    let meter = &meter.with_budget(meter.budget().max(APPROXIMATION_MIN_BUDGET));
    let r = &rule.rule;
    let fail = |e: clout_core::Error| match e {
        clout_core::Error::OverBudget { budget } => Failure {
            kind: crate::failure::FailureKind::Limit,
            ..Failure::input(format!(
                "rule `{}`: the budget of {} steps is too small for even one sample of the approximation",
                rule.name,
                super::steps(budget)
            ))
            .with_hint("raise the limit with --budget STEPS (5e10 steps take about a minute)")
        },
        other => super::core_failure(&rule.name, other),
    };
    let half = meter.with_budget(meter.budget() / 2);
    let s = Sampling {
        seed: options.seed,
        tolerance: options.tolerance,
        ..Sampling::default()
    };
    let (penrose, penrose_method) = match r.single_threshold() {
        Some((_, q)) if q < F64_TABLE => (
            penrose_f64_metered(r, meter).map_err(fail)?,
            "floating-point counting over sums (the bound is a worst-case rounding error)".to_string(),
        ),
        _ => {
            let p = sample_penrose_metered(r, &s, &half).map_err(fail)?;
            let note = if p.converged {
                ""
            } else if p.samples < s.max_samples {
                " (the step budget ended sampling before the target half-width)"
            } else {
                " (stopped before the target half-width)"
            };
            (
                p.members,
                format!(
                    "Monte Carlo, {} coalitions, seed {}, Wilson 95% intervals{note}",
                    p.samples, options.seed
                ),
            )
        }
    };
    meter.charge(half.spent()).map_err(fail)?;
    let shapley_sampling = Sampling {
        max_samples: SHAPLEY_SAMPLES,
        ..s
    };
    let ss = sample_shapley_metered(r, &shapley_sampling, meter).map_err(fail)?;
    let note = if ss.converged {
        ""
    } else if ss.samples < SHAPLEY_SAMPLES {
        " (the step budget ended sampling before the target half-width)"
    } else {
        " (sample limit reached before the target half-width)"
    };
    let shapley_method = format!(
        "Monte Carlo, {} orderings, seed {}, Wilson 95% intervals{note}",
        ss.samples, options.seed
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

/// Exact (veto, dictator) flags of every member: a veto member's absence
/// defeats the full coalition; a dictator is a veto member who passes alone.
/// O(n * (attributes + nodes)).
pub fn veto_and_dictators(rule: &Rule<Vec<u64>>) -> Vec<(bool, bool)> {
    let attributes = rule.attributes();
    let totals: Vec<u64> = (0..attributes).map(|a| rule.total(a)).collect();
    (0..rule.members())
        .map(|i| {
            let without: Vec<u64> = (0..attributes)
                .map(|a| totals[a].saturating_sub(rule.weight(a, i)))
                .collect();
            let alone: Vec<u64> = (0..attributes).map(|a| rule.weight(a, i)).collect();
            let veto = !rule.passes_with_sums(&without);
            (veto, veto && rule.passes_with_sums(&alone))
        })
        .collect()
}
