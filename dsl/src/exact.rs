//! One exact analysis of a compiled rule, flattened for front ends.
//!
//! Calls the core's engines ([`clout_core::analyze_with`]) with a count type
//! of at least n + 64 bits (1024 bits up to 960 members, 4096 up to 4,032,
//! 65,600 beyond): counts reach 2^n and the engines' intermediates n + log2 n
//! bits, so no count can overflow. Turns exact counts into decimal strings
//! and indices into `f64`. When the planner's cheapest
//! engine does not compute minimal winning coalitions (the dense engine),
//! an engine that does is preferred if it costs at most 8 times as much (or
//! under 10^8 steps) and fits the budget, so that the Johnston,
//! Deegan-Packel and Holler indices are usually available.
//!
//! Time: the chosen engine's (see `clout_core::engine`); this layer adds
//! O(n) conversions. Memory: the engine's scratch, in the chosen count type.

use clout_core::planner::{self, Plan};
use clout_core::{analyze_metered, Counter, Engine, Error, Meter, Options, Rule, Wide};

/// Exact figures for one member.
#[derive(Clone, Debug, PartialEq)]
pub struct MemberPower {
    /// Swing count (raw Banzhaf), exact decimal.
    pub swings: String,
    /// Normalized Banzhaf index.
    pub banzhaf: f64,
    /// Absolute Banzhaf (Penrose) measure.
    pub penrose: f64,
    /// Shapley-Shubik index.
    pub shapley_shubik: f64,
    /// Shapley-Shubik as an exact `(numerator, n!)` pair of decimals, when n! fits the count type.
    pub shapley_shubik_exact: Option<(String, String)>,
    /// Coleman's power to prevent action.
    pub coleman_prevent: f64,
    /// Coleman's power to initiate action.
    pub coleman_initiate: f64,
    /// Johnston index (when the engine computes minimal coalitions).
    pub johnston: Option<f64>,
    /// Deegan-Packel index (likewise).
    pub deegan_packel: Option<f64>,
    /// Holler public good index (likewise).
    pub public_good: Option<f64>,
    /// Never a swing.
    pub dummy: bool,
    /// In every winning coalition.
    pub veto: bool,
    /// Decides alone.
    pub dictator: bool,
}

/// Exact figures for a rule and its members.
#[derive(Clone, Debug, PartialEq)]
pub struct Power {
    /// The engine that counted.
    pub engine: Engine,
    /// Its estimated cost in steps.
    pub cost: u128,
    /// One entry per member, in member order.
    pub members: Vec<MemberPower>,
    /// Winning coalitions, exact decimal.
    pub winning: String,
    /// Minimal winning coalitions, exact decimal (when computed).
    pub minimal_winning: Option<String>,
    /// Minimal blocking coalitions, exact decimal (when computed).
    pub minimal_blocking: Option<String>,
    /// Probability of passage: winning / 2^n.
    pub passage_probability: f64,
    /// Size of a smallest winning coalition.
    pub smallest_winning: Option<usize>,
    /// No two disjoint coalitions both win.
    pub proper: bool,
    /// Of a coalition and its complement, at least one wins.
    pub strong: bool,
    /// Proper and strong.
    pub decisive: bool,
}

/// 64-bit limbs of the count type used for `members` members.
pub fn limbs_for(members: usize) -> usize {
    match members + 64 {
        0..=1024 => 16,
        1025..=4096 => 64,
        _ => 1025,
    }
}

/// The core's cost estimate for `engine` plus the share of wide arithmetic it
/// leaves out: turning per-member counts into indices is about n^2
/// multiplications of counts of L = [`limbs_for`]`(n)` limbs, each about
/// L^2 / 16 steps (measured on one core: 4,032 members of one type take 4 s,
/// 4,033 members, in 1025-limb counts, 2 minutes).
pub fn estimate<W: AsRef<[u64]>>(rule: &Rule<W>, engine: Engine) -> Result<u128, Error> {
    let n = rule.members() as u128;
    let limbs = limbs_for(rule.members()) as u128;
    let wide = n * n * limbs * limbs / 16;
    Ok(clout_core::engine::cost(rule, engine)?.saturating_add(wide))
}

/// The planner's choice, preferring an engine that computes minimal
/// coalitions; its cost is [`estimate`]'s, and over `budget` is
/// [`Error::TooCostly`].
pub fn choose<W: AsRef<[u64]>>(rule: &Rule<W>, budget: u128) -> Result<Plan, Error> {
    choose_within(rule, budget, u64::MAX)
}

/// [`choose`] among the engines whose estimated memory, in this module's
/// count width, fits `memory` bytes; [`Error::MemoryLimit`] when none does.
pub fn choose_within<W: AsRef<[u64]>>(rule: &Rule<W>, budget: u128, memory: u64) -> Result<Plan, Error> {
    let limits = planner::Limits {
        budget: u128::MAX,
        memory,
        count_bytes: 8 * limbs_for(rule.members()),
    };
    let mut plan = planner::plan_within(rule, clout_core::engine::Scope::All, &limits)?;
    if plan.cost > budget {
        return Err(Error::TooCostly {
            estimate: plan.cost,
            budget,
        });
    }
    plan.cost = estimate(rule, plan.engine)?;
    if plan.cost > budget {
        return Err(Error::TooCostly {
            estimate: plan.cost,
            budget,
        });
    }
    if plan.engine.computes_minimal() {
        return Ok(plan);
    }
    let acceptable = plan.cost.saturating_mul(8).max(100_000_000).min(budget);
    let better = plan
        .costs
        .iter()
        .filter(|(e, c)| e.computes_minimal() && c.is_some())
        .filter(|(e, _)| plan.memory_of(*e).is_some_and(|m| m <= memory))
        .filter_map(|&(e, _)| Some((e, estimate(rule, e).ok()?)))
        .filter(|&(_, c)| c <= acceptable)
        .min_by_key(|&(_, c)| c);
    if let Some((engine, cost)) = better {
        plan.engine = engine;
        plan.cost = cost;
    }
    Ok(plan)
}

/// Counts `rule` exactly with `engine` (see [`choose`]), with no step
/// budget and the default memory limit.
pub fn power<W: AsRef<[u64]>>(rule: &Rule<W>, engine: Engine) -> Result<Power, Error> {
    power_metered(rule, engine, &Meter::new(u128::MAX, planner::DEFAULT_MEMORY))
}

/// [`power`] charging `meter` as the engine runs: its memory limit bounds
/// the engine's tables and its budget the steps, as they are spent.
pub fn power_metered<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    engine: Engine,
    meter: &Meter<'_>,
) -> Result<Power, Error> {
    match limbs_for(rule.members()) {
        16 => power_in::<_, Wide<16>>(rule, engine, meter),
        64 => power_in::<_, Wide<64>>(rule, engine, meter),
        _ => power_in::<_, Wide<1025>>(rule, engine, meter),
    }
}

fn power_in<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    engine: Engine,
    meter: &Meter<'_>,
) -> Result<Power, Error> {
    let options = Options {
        engine: Some(engine),
        budget: u128::MAX,
        memory: meter.memory(),
        ..Options::default()
    };
    let analysis = analyze_metered::<_, C>(rule, &options, meter)?;
    let t = analysis.table();
    let members = (0..rule.members())
        .map(|i| MemberPower {
            swings: analysis.members[i].swings.to_string(),
            banzhaf: t.banzhaf(i),
            penrose: t.penrose(i),
            shapley_shubik: t.shapley_shubik(i),
            shapley_shubik_exact: t
                .shapley_shubik_exact(i)
                .map(|(num, den)| (num.to_string(), den.to_string())),
            coleman_prevent: t.coleman_prevent(i),
            coleman_initiate: t.coleman_initiate(i),
            johnston: t.johnston(i),
            deegan_packel: t.deegan_packel(i),
            public_good: t.public_good(i),
            dummy: t.is_dummy(i),
            veto: t.is_veto(i),
            dictator: t.is_dictator(i),
        })
        .collect();
    let r = &analysis.rule;
    Ok(Power {
        engine: analysis.plan.engine,
        cost: analysis.plan.cost,
        members,
        winning: r.winning.to_string(),
        minimal_winning: r.minimal_winning.map(|c| c.to_string()),
        minimal_blocking: r.minimal_blocking.map(|c| c.to_string()),
        passage_probability: r.passage_probability(),
        smallest_winning: r.smallest_winning,
        proper: r.proper,
        strong: r.strong,
        decisive: r.decisive(),
    })
}
