//! The engines: exact counting engines behind one interface, and the
//! approximate and four-state computations beside them.
//!
//! | engine | handles | time | scratch (counts) |
//! | --- | --- | --- | --- |
//! | [`Engine::Enumerate`] | any rule, n <= 30 | O(2^n * n * (atoms + nodes)) | 3 n^2 |
//! | [`Engine::Profile`] | any rule whose members fall into few types (identical weight vectors) | O(Π(c_t + 1) * T * (atoms + nodes)) | ~2n + 3Tn |
//! | [`Engine::Dense`] | any rule with modest quotas (capped partial sums) | single threshold: O(n^2 q); compound: O(T n^2 Π caps) | see [`need`] |
//! | [`Engine::Diagram`] | any rule, huge weights included (feature `alloc`) | O(N n^2) for N nodes | none (own tables, O(N n) counts, checked against a limit) |
//!
//! Every exact engine fills one [`MemberCounts`] per member and returns
//! [`RuleCounts`]; all counts are exact in the caller's [`Counter`] type and
//! overflow is [`Error::CountOverflow`]. Enumeration is the oracle the others
//! are tested against. Each engine is a type implementing the crate's
//! engine interface in its own module (see `registry.rs`): the functions
//! here ([`need_for`], [`cost_for`], [`memory_for`], [`try_count_for`]) put
//! one question to the engine an [`Engine`] names.
//!
//! Beside them (feature `alloc`): `approx` (Monte Carlo and normal
//! approximations, every figure with its error bound) and `ternary`
//! (power under abstention and attendance).
//!
//! Import rule: the engines import the model (`crate::model`) and each
//! other, never `analysis` or `device`.

mod counts;
pub(crate) mod dense;
pub(crate) mod enumerate;
pub(crate) mod member_types;
pub(crate) mod pivots;
pub(crate) mod profile;
mod registry;

#[cfg(feature = "alloc")]
pub mod approx;
#[cfg(feature = "alloc")]
pub mod diagram;
#[cfg(feature = "alloc")]
pub(crate) mod residue;
#[cfg(feature = "alloc")]
pub mod ternary;
#[cfg(feature = "std")]
pub mod threads;

pub use crate::model::engine_id::Engine;
pub use counts::{MemberCounts, RuleCounts};

#[cfg(feature = "alloc")]
use alloc::vec::Vec;

use crate::model::count::Counter;
use crate::model::error::Error;
use crate::model::limits::MAX_ATTRIBUTES;
use crate::model::meter::Meter;
use crate::model::rule::Rule;
use pivots::factorial;
use registry::{ask, Cost, Job, Scratch, Tables};

/// Scratch an engine needs for a rule: `counts` elements of the count type
/// and `indices` elements of `u32`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Need {
    /// Elements of the count type.
    pub counts: usize,
    /// `u32` elements.
    pub indices: usize,
}

impl Need {
    /// Bytes of this scratch with counts of `count_bytes` bytes (saturating).
    pub(crate) fn bytes(self, count_bytes: usize) -> u64 {
        (self.counts as u64)
            .saturating_mul(count_bytes as u64)
            .saturating_add((self.indices as u64).saturating_mul(4))
    }
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
    ask(engine, Scratch { rule, scope })
}

/// Estimated work of `engine` on `rule`, in elementary steps (saturating).
pub fn cost<W: AsRef<[u64]>>(rule: &Rule<W>, engine: Engine) -> Result<u128, Error> {
    cost_for(rule, engine, Scope::All)
}

/// Estimated work of `engine` on `rule` for `scope`.
pub fn cost_for<W: AsRef<[u64]>>(rule: &Rule<W>, engine: Engine, scope: Scope) -> Result<u128, Error> {
    ask(engine, Cost { rule, scope })
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
    let tables = ask(
        engine,
        Tables {
            rule,
            scope,
            count_bytes,
        },
    )?;
    Ok(tables.saturating_add(results))
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
    let meter = Meter::new(u128::MAX, UNMETERED_MEMORY);
    try_count_metered(rule, engine, scope, members, work, &meter)
}

/// Memory limit of the engines' own tables (the diagram's) when the caller
/// gives no meter: 2 GiB, the planner's default.
const UNMETERED_MEMORY: u64 = 2 << 30;

/// [`try_count_for`] charging `meter` as the engine runs: it stops with
/// [`Error::OverBudget`], [`Error::MemoryLimit`], [`Error::OutOfMemory`]
/// or [`Error::Cancelled`] at the first charge past a limit. The meter's
/// progress is expected to reach the engine's [`cost_for`] estimate.
pub fn try_count_metered<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    engine: Engine,
    scope: Scope,
    members: &mut [MemberCounts<C>],
    work: Workspace<'_, C>,
    meter: &Meter<'_>,
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
    let mut counts = ask(
        engine,
        Job {
            rule,
            scope,
            members: &mut *members,
            work,
            meter,
        },
    )?;
    mark_veto_and_dictators(rule, members);
    counts.factorial = factorial(n).ok();
    Ok(counts)
}

/// [`try_count_for`] with scratch and results allocated here: the
/// convenience layer's counting step and the engines' tests.
#[cfg(any(test, feature = "alloc"))]
pub(crate) fn count_allocating<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    engine: Engine,
    scope: Scope,
    meter: &Meter<'_>,
) -> Result<(RuleCounts<C>, Vec<MemberCounts<C>>), Error> {
    let need = need_for(rule, engine, scope)?;
    let mut counts = meter.vec(need.counts, C::ZERO)?;
    let mut indices = meter.vec(need.indices, 0u32)?;
    let mut members = meter.vec(rule.members(), MemberCounts::EMPTY)?;
    let work = Workspace {
        counts: &mut counts,
        indices: &mut indices,
    };
    let totals = try_count_metered(rule, engine, scope, &mut members, work, meter);
    meter.release(Meter::bytes_of::<C>(need.counts));
    meter.release(Meter::bytes_of::<u32>(need.indices));
    Ok((totals?, members))
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

/// Without `alloc` the diagram engine cannot build its tables: registered
/// all the same, it applies to no rule.
#[cfg(not(feature = "alloc"))]
mod diagram {
    use super::registry::{Counting, Job};
    use super::{Need, RuleCounts, Scope};
    use crate::model::count::Counter;
    use crate::model::engine_id::Engine;
    use crate::model::error::Error;
    use crate::model::rule::Rule;

    /// The diagram engine's place in a build without `alloc`.
    pub(crate) struct Diagrams;

    const UNSUITABLE: Error = Error::EngineUnsuitable {
        engine: Engine::Diagram,
    };

    impl Counting for Diagrams {
        const ENGINE: Engine = Engine::Diagram;
        const DESCRIPTION: &'static str = super::DIAGRAM_DESCRIPTION;
        const MINIMAL_COALITIONS: bool = false;
        fn scratch<W: AsRef<[u64]>>(_: &Rule<W>, _: Scope) -> Result<Need, Error> {
            Err(UNSUITABLE)
        }
        fn cost<W: AsRef<[u64]>>(_: &Rule<W>, _: Scope) -> Result<u128, Error> {
            Err(UNSUITABLE)
        }
        fn run<W: AsRef<[u64]>, C: Counter>(_: Job<'_, W, C>) -> Result<RuleCounts<C>, Error> {
            Err(UNSUITABLE)
        }
    }
}

/// The diagram engine's one-line description, the same in every build.
const DIAGRAM_DESCRIPTION: &str = "decision diagram over equivalence classes of residual quotas";
