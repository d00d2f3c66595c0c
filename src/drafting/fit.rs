//! Integer weights and a quota whose normalized Banzhaf index is closest to
//! target shares of power (or to Penrose's square-root law for
//! populations), with the optimal quota of Slomczynski & Zyczkowski (2006)
//! for comparison. The search is deterministic within a fixed number of
//! steps ([`STEPS_PER_SECOND`] per second asked for), so the same input gives
//! the same answer on every machine (see [`crate::toolkit::fit`]).

use clout_core::Rule;

use super::{exact_power, Fit, FitMember, OptimalQuota, Watch, WeightedVote};
use crate::failure::Failure;
use crate::report::{CAUTION, MODEL};
use crate::toolkit::fit as search;
use crate::toolkit::weighted::Representation;

/// Search steps per second of [`FitOptions::seconds`]: measured on the
/// project's 2-core machine (release build, one core: 1.6e9 steps of a
/// 14-member fit in 6.5 s). Slower machines take longer for the same answer.
pub const STEPS_PER_SECOND: f64 = 2.5e8;

/// What to aim at: one value per member.
#[derive(Clone, Debug, PartialEq)]
pub struct Targets {
    /// Member names.
    pub names: Vec<String>,
    /// Target shares of power (any unit; normalized), or populations.
    pub values: Vec<f64>,
    /// The values are populations: aim at power proportional to their square roots.
    pub populations: bool,
}

/// The search's limits.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FitOptions {
    /// Time budget in seconds on the project's machine, turned into a fixed
    /// number of search steps.
    pub seconds: f64,
    /// Largest total weight tried.
    pub max_total: u64,
}

impl Default for FitOptions {
    fn default() -> Self {
        FitOptions {
            seconds: 10.0,
            max_total: 10_000,
        }
    }
}

/// The weighted vote whose Banzhaf index is closest to `targets`.
pub fn fit(targets: &Targets, options: &FitOptions, watch: &mut impl Watch) -> Result<Fit, Failure> {
    if !(options.seconds > 0.0 && options.seconds <= 86_400.0) {
        return Err(
            Failure::input(format!("seconds {} is not a time budget", options.seconds))
                .with_hint("give a number of seconds between 0 and 86400"),
        );
    }
    let n = targets.names.len();
    if n != targets.values.len() {
        return Err(Failure::input(format!(
            "{n} members but {} targets",
            targets.values.len()
        )));
    }
    if n > search::MAX_MEMBERS {
        return Err(Failure::input(format!(
            "{n} members, more than the fit handles ({})",
            search::MAX_MEMBERS
        ))
        .with_hint(format!(
            "the search counts swings exactly in 128-bit integers, which bounds it to {} members",
            search::MAX_MEMBERS
        )));
    }
    let goal = if targets.populations {
        search::penrose_targets(&targets.values)
    } else {
        search::normalize(&targets.values)
    }
    .map_err(|e| Failure::input(e.to_string()))?;
    let budget = (options.seconds * STEPS_PER_SECOND) as u128;
    let limits = search::Options {
        budget,
        max_total: options.max_total.max(1),
    };
    let found = watch
        .step(&format!("searching weights for {n} members"), || {
            search::fit(&goal, limits)
        })?
        .map_err(|e| Failure::input(e.to_string()))?;
    let rule =
        Rule::weighted(found.quota, found.weights.clone()).map_err(|e| Failure::input(e.to_string()))?;
    let exact = exact_power(&rule, "fitted vote", super::BUDGET, watch)?;
    let banzhaf: Vec<f64> = exact.members.iter().map(|m| m.banzhaf).collect();
    let (max_deviation, rms_deviation) = deviation(&banzhaf, &goal);

    let total: u64 = found.weights.iter().sum();
    let share = search::optimal_quota(&found.weights);
    let quota = ((share * total as f64).ceil() as u64).clamp(total / 2 + 1, total);
    let at_optimum = search::banzhaf(&found.weights, quota).map_err(|e| Failure::input(e.to_string()))?;
    let (max_o, rms_o) = deviation(&at_optimum, &goal);
    Ok(Fit {
        members: (0..n)
            .map(|i| FitMember {
                name: targets.names[i].clone(),
                weight: found.weights[i],
                target: goal[i],
                banzhaf: banzhaf[i],
                deviation: banzhaf[i] - goal[i],
            })
            .collect(),
        weighted_vote: WeightedVote {
            members: targets.names.clone(),
            representation: Representation {
                quota: found.quota,
                weights: found.weights,
            },
        },
        max_deviation,
        rms_deviation,
        budget,
        steps: found.steps,
        exhausted: found.exhausted,
        optimal_quota: OptimalQuota {
            share,
            quota,
            max_deviation: max_o,
            rms_deviation: rms_o,
        },
        model: MODEL.to_string(),
        caution: CAUTION.to_string(),
    })
}

/// Largest and root-mean-square |index - goal|.
fn deviation(index: &[f64], goal: &[f64]) -> (f64, f64) {
    let n = goal.len().max(1) as f64;
    let max = index
        .iter()
        .zip(goal)
        .map(|(a, b)| (a - b).abs())
        .fold(0.0, f64::max);
    let rms = (index
        .iter()
        .zip(goal)
        .map(|(a, b)| (a - b) * (a - b))
        .sum::<f64>()
        / n)
        .sqrt();
    (max, rms)
}
