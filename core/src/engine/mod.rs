//! Exact counting engines and what they share.
//!
//! | engine | handles | time | scratch (counts) |
//! | --- | --- | --- | --- |
//! | [`Engine::Enumerate`] | any rule, n <= 30 | O(2^n * n * (atoms + nodes)) | 3 n^2 |
//! | [`Engine::Profile`] | any rule whose members fall into few types (identical weight vectors) | O(Π(c_t + 1) * T * (atoms + nodes)) | ~2n + 3Tn |
//! | [`Engine::Dense`] | any rule with modest quotas (capped partial sums) | single threshold: O(n^2 q); compound: O(T n^2 Π caps) | see [`need`] |
//!
//! Every engine fills one [`MemberCounts`] per member and returns
//! [`RuleCounts`]; all counts are exact in the caller's [`Counter`] type and
//! overflow is an error. Enumeration is the oracle the others are tested
//! against.

pub(crate) mod dense;
#[cfg(feature = "alloc")]
pub mod diagram;
pub(crate) mod enumerate;
pub(crate) mod profile;
#[cfg(feature = "alloc")]
pub(crate) mod residue;

use crate::count::{ratio, Counter};
use crate::limits::MAX_ATTRIBUTES;
use crate::power::{MemberCounts, RuleCounts};
use crate::{Error, Rule};

/// A counting engine.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[non_exhaustive]
pub enum Engine {
    /// Visit every coalition in Gray-code order: the oracle.
    Enumerate,
    /// Visit every profile of member types (how many of each type vote yes),
    /// weighting each by its binomial multiplicity.
    Profile,
    /// Generating functions over capped partial sums (dynamic programming).
    Dense,
    /// Quasi-reduced ordered decision diagrams (feature `alloc`): exact for
    /// huge weights.
    Diagram,
}

impl Engine {
    /// All engines, in the planner's order of preference on equal cost.
    pub const ALL: [Engine; 4] = [Engine::Profile, Engine::Dense, Engine::Diagram, Engine::Enumerate];

    /// Short lowercase name.
    pub fn name(self) -> &'static str {
        match self {
            Engine::Enumerate => "enumerate",
            Engine::Profile => "profile",
            Engine::Dense => "dense",
            Engine::Diagram => "diagram",
        }
    }

    /// Whether this engine computes the minimal-coalition indices (Johnston,
    /// Deegan-Packel, Holler) and counts.
    pub fn computes_minimal(self) -> bool {
        !matches!(self, Engine::Dense | Engine::Diagram)
    }

    /// What the engine does, in one line.
    pub fn describe(self) -> &'static str {
        match self {
            Engine::Enumerate => "visits every coalition (2^n of them)",
            Engine::Profile => "visits every profile of member types, weighted by binomial coefficients",
            Engine::Dense => "dynamic programming over capped partial sums (generating functions)",
            Engine::Diagram => "decision diagram over equivalence classes of residual quotas",
        }
    }
}

/// Scratch an engine needs for a rule: `counts` elements of the count type
/// and `indices` elements of `u32`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Need {
    /// Elements of the count type.
    pub counts: usize,
    /// `u32` elements.
    pub indices: usize,
}

/// Caller-owned scratch for an engine.
pub struct Workspace<'a, C> {
    /// Count scratch, at least [`Need::counts`] long.
    pub counts: &'a mut [C],
    /// Index scratch, at least [`Need::indices`] long.
    pub indices: &'a mut [u32],
}

/// What to count.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Scope {
    /// Every index the engine can give, Shapley-Shubik included.
    All,
    /// Swing counts only (Banzhaf, Penrose, Coleman); some engines are much
    /// faster this way (the dense engine drops its coalition-size dimension).
    Swings,
}

/// How much scratch `engine` needs for `rule`.
pub fn need<W: AsRef<[u64]>>(rule: &Rule<W>, engine: Engine) -> Result<Need, Error> {
    need_for(rule, engine, Scope::All)
}

/// How much scratch `engine` needs for `rule` and `scope`.
pub fn need_for<W: AsRef<[u64]>>(rule: &Rule<W>, engine: Engine, scope: Scope) -> Result<Need, Error> {
    match engine {
        Engine::Enumerate => enumerate::need(rule),
        Engine::Profile => profile::need(rule),
        Engine::Dense => dense::need(rule, scope == Scope::All),
        // The diagram engine allocates its own storage (feature `alloc`).
        Engine::Diagram => diagram_need(),
    }
}

/// Estimated work of `engine` on `rule`, in elementary steps (saturating).
pub fn cost<W: AsRef<[u64]>>(rule: &Rule<W>, engine: Engine) -> Result<u128, Error> {
    cost_for(rule, engine, Scope::All)
}

/// Estimated work of `engine` on `rule` for `scope`.
pub fn cost_for<W: AsRef<[u64]>>(rule: &Rule<W>, engine: Engine, scope: Scope) -> Result<u128, Error> {
    match engine {
        Engine::Enumerate => enumerate::cost(rule),
        Engine::Profile => profile::cost(rule),
        Engine::Dense => dense::cost(rule, scope == Scope::All),
        Engine::Diagram => diagram_cost(rule),
    }
}

#[cfg(feature = "alloc")]
fn diagram_need() -> Result<Need, Error> {
    Ok(Need {
        counts: 0,
        indices: 0,
    })
}

#[cfg(not(feature = "alloc"))]
fn diagram_need() -> Result<Need, Error> {
    Err(Error::EngineUnsuitable {
        engine: Engine::Diagram,
    })
}

#[cfg(feature = "alloc")]
fn diagram_cost<W: AsRef<[u64]>>(rule: &Rule<W>) -> Result<u128, Error> {
    Ok(diagram::estimate(rule))
}

#[cfg(not(feature = "alloc"))]
fn diagram_cost<W: AsRef<[u64]>>(_: &Rule<W>) -> Result<u128, Error> {
    Err(Error::EngineUnsuitable {
        engine: Engine::Diagram,
    })
}

/// Estimated bytes `engine` needs on `rule` for `scope` with counts of
/// `count_bytes` bytes each: its scratch (or, for the engines that allocate
/// their own tables, an upper estimate of them) plus the result arrays.
pub fn memory_for<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    engine: Engine,
    scope: Scope,
    count_bytes: usize,
) -> Result<u64, Error> {
    let n = rule.members() as u64;
    let results = n.saturating_mul((count_bytes as u64).saturating_mul(2).saturating_add(48));
    let tables = match engine {
        Engine::Diagram => diagram_memory(rule, count_bytes)?,
        Engine::Dense if cfg!(feature = "alloc") && scope == Scope::Swings => {
            dense::residue_memory(rule, count_bytes)?
        }
        _ => {
            let need = need_for(rule, engine, scope)?;
            (need.counts as u64)
                .saturating_mul(count_bytes as u64)
                .saturating_add((need.indices as u64).saturating_mul(4))
        }
    };
    Ok(tables.saturating_add(results))
}

#[cfg(feature = "alloc")]
fn diagram_memory<W: AsRef<[u64]>>(rule: &Rule<W>, count_bytes: usize) -> Result<u64, Error> {
    Ok(diagram::estimate_memory(rule, count_bytes))
}

#[cfg(not(feature = "alloc"))]
fn diagram_memory<W: AsRef<[u64]>>(_: &Rule<W>, _: usize) -> Result<u64, Error> {
    Err(Error::EngineUnsuitable {
        engine: Engine::Diagram,
    })
}

/// Runs `engine` on `rule`, writing one entry per member into `members`.
pub fn try_count<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    engine: Engine,
    members: &mut [MemberCounts<C>],
    work: Workspace<'_, C>,
) -> Result<RuleCounts<C>, Error> {
    try_count_for(rule, engine, Scope::All, members, work)
}

/// [`try_count`] for a chosen [`Scope`]. With [`Scope::Swings`] an engine
/// may skip Shapley-Shubik ([`RuleCounts::shapley_shubik`] says whether it did).
pub fn try_count_for<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    engine: Engine,
    scope: Scope,
    members: &mut [MemberCounts<C>],
    work: Workspace<'_, C>,
) -> Result<RuleCounts<C>, Error> {
    let n = rule.members();
    if members.len() < n {
        return Err(Error::ScratchTooSmall {
            needed: n,
            given: members.len(),
        });
    }
    let needed = need_for(rule, engine, scope)?;
    if work.counts.len() < needed.counts {
        return Err(Error::ScratchTooSmall {
            needed: needed.counts,
            given: work.counts.len(),
        });
    }
    if work.indices.len() < needed.indices {
        return Err(Error::ScratchTooSmall {
            needed: needed.indices,
            given: work.indices.len(),
        });
    }
    // members.len() >= n was checked above.
    let members = members.get_mut(..n).unwrap_or(&mut []);
    for m in members.iter_mut() {
        *m = MemberCounts::EMPTY;
    }
    let mut counts = match engine {
        Engine::Enumerate => enumerate::count(rule, members, work)?,
        Engine::Profile => profile::count(rule, members, work)?,
        Engine::Dense => dense::count(rule, members, work, scope == Scope::All)?,
        Engine::Diagram => diagram_count(rule, members)?,
    };
    mark_veto_and_dictators(rule, members);
    counts.factorial = factorial(n).ok();
    counts.shapley_shubik = !(engine == Engine::Dense && scope == Scope::Swings);
    Ok(counts)
}

#[cfg(feature = "alloc")]
fn diagram_count<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    members: &mut [MemberCounts<C>],
) -> Result<RuleCounts<C>, Error> {
    diagram::count(
        rule,
        members,
        diagram::Order::LightFirst,
        diagram::DEFAULT_MEMORY_LIMIT,
    )
}

#[cfg(not(feature = "alloc"))]
fn diagram_count<W: AsRef<[u64]>, C: Counter>(
    _: &Rule<W>,
    _: &mut [MemberCounts<C>],
) -> Result<RuleCounts<C>, Error> {
    Err(Error::EngineUnsuitable {
        engine: Engine::Diagram,
    })
}

/// Veto: the rule fails when everyone but the member votes yes.
/// Dictator: a veto member who also passes the rule alone.
fn mark_veto_and_dictators<W: AsRef<[u64]>, C: Counter>(rule: &Rule<W>, members: &mut [MemberCounts<C>]) {
    let mut totals = [0u64; MAX_ATTRIBUTES];
    for (a, t) in totals.iter_mut().enumerate().take(rule.attributes()) {
        *t = rule.total(a);
    }
    let attributes = rule.attributes();
    for (i, m) in members.iter_mut().enumerate() {
        let mut without = totals;
        let mut alone = [0u64; MAX_ATTRIBUTES];
        for (a, (out, solo)) in without
            .iter_mut()
            .zip(alone.iter_mut())
            .enumerate()
            .take(attributes)
        {
            let w = rule.weight(a, i);
            *out = out.saturating_sub(w);
            *solo = w;
        }
        // attributes <= MAX_ATTRIBUTES (Rule::new).
        m.veto = !rule.passes_with_sums(without.get(..attributes).unwrap_or(&[]));
        m.dictator = m.veto && rule.passes_with_sums(alone.get(..attributes).unwrap_or(&[]));
    }
}

/// n! in the count type.
pub(crate) fn factorial<C: Counter>(n: usize) -> Result<C, Error> {
    let mut f = C::ONE;
    for k in 2..=n as u64 {
        f = f.mul_u64(k)?;
    }
    Ok(f)
}

/// Shapley-Shubik value and exact numerator (over n!) from pivot counts by
/// size: `by_size[k]` counts coalitions S of k other members that lose
/// alone and win with the member.
///
/// φ = Σ_k by_size[k] * k! (n-1-k)! / n! = Σ_k by_size[k] / (n * C(n-1, k)).
pub(crate) fn shapley_from_sizes<C: Counter>(n: usize, by_size: &[C]) -> Result<(f64, Option<C>), Error> {
    let mut value = 0.0;
    let mut binom = C::ONE; // C(n-1, k)
    let top = n.saturating_sub(1) as u64;
    for (k, &c) in by_size.iter().enumerate().take(n) {
        if !c.is_zero() {
            value += ratio(c, binom);
        }
        let k = k as u64;
        if k < top {
            // k < top: both factors are positive.
            let (q, r) = binom
                .mul_u64(top.saturating_sub(k))?
                .div_rem_u64(k.saturating_add(1));
            debug_assert_eq!(r, 0);
            binom = q;
        }
    }
    let value = value / n as f64;
    Ok((value, shapley_numerator(n, by_size).ok()))
}

/// Σ_k by_size[k] * k! (n-1-k)!, or an overflow error.
fn shapley_numerator<C: Counter>(n: usize, by_size: &[C]) -> Result<C, Error> {
    // term_k = k! (n-1-k)!; term_0 = (n-1)!; term_{k+1} = term_k (k+1)/(n-1-k).
    let mut term: C = factorial(n.saturating_sub(1))?;
    let mut acc = C::ZERO;
    let top = n.saturating_sub(1) as u64;
    for (k, &c) in by_size.iter().enumerate().take(n) {
        acc = acc.add(c.mul(term)?)?;
        let k = k as u64;
        if k < top {
            let (q, r) = term
                .mul_u64(k.saturating_add(1))?
                .div_rem_u64(top.saturating_sub(k));
            if r != 0 {
                return Err(Error::CountOverflow);
            }
            term = q;
        }
    }
    Ok(acc)
}

/// Johnston or Deegan-Packel raw score: Σ_k counts[k] / (k+1), times 2^-n.
pub(crate) fn reciprocal_sum<C: Counter>(n: usize, counts: &[C]) -> f64 {
    counts
        .iter()
        .enumerate()
        .filter(|(_, c)| !c.is_zero())
        .map(|(k, &c)| crate::power::scaled(c, n) / (k as f64 + 1.0))
        .fold(0.0, |a, b| a + b)
}

/// Sum of a slice of counts.
pub(crate) fn sum_counts<C: Counter>(counts: &[C]) -> Result<C, Error> {
    counts.iter().try_fold(C::ZERO, |acc, &c| acc.add(c))
}
