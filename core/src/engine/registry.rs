//! The engine interface ([`Counting`]) and the registry of exact engines.
//!
//! Each exact engine is a zero-sized type implementing [`Counting`] in its
//! own module: the engine alone knows when it applies, what it costs, how
//! much memory and scratch it needs, and how to run. The trait's functions
//! are generic over the weight storage `W` and the count type `C`, so it
//! cannot be a `dyn` object. Instead [`registry!`] lists the engines once,
//! in the planner's order of preference, and generates [`Engine::ALL`] and
//! [`ask`], the one `match` from an [`Engine`] to its type. Everything done
//! with "the engine chosen at run time" is a [`Question`], answered by a
//! function generic in the engine type, and put through [`ask`]; the public
//! functions of [`crate::engine`] (`need_for`, `cost_for`, `memory_for`,
//! `try_count_for`) are such questions, and the planner, the allocating
//! layer and the language's exact checks all go through them.
//!
//! Adding an engine: a variant of [`Engine`] (with its name, in
//! `model/engine_id.rs`), a module with a type implementing [`Counting`],
//! and one line in the `registry!` call below. A variant that is not
//! registered does not compile (the match in [`ask`] is exhaustive), and a
//! line that pairs a variant with another engine's type fails a
//! compile-time assertion.
//!
//! Dispatch is one `match`: O(1), no heap, no arithmetic.

use crate::engine::counts::{MemberCounts, RuleCounts};
use crate::engine::{dense, diagram, enumerate, profile, Need, Scope, Workspace};
use crate::model::count::Counter;
use crate::model::engine_id::Engine;
use crate::model::error::Error;
use crate::model::meter::Meter;
use crate::model::rule::Rule;

/// One exact counting engine, as the planner sees it.
///
/// Applicability is the success of the estimates: an engine that cannot
/// handle a rule answers [`Error::EngineUnsuitable`] from
/// [`scratch`](Self::scratch), [`cost`](Self::cost) and
/// [`tables`](Self::tables) alike, before any work.
pub(crate) trait Counting {
    /// The identifier the engine is registered under.
    const ENGINE: Engine;
    /// What the engine does, in one line ([`Engine::describe`]).
    const DESCRIPTION: &'static str;
    /// Whether it counts minimal winning coalitions, and with them the
    /// Johnston, Deegan-Packel and Holler indices ([`Engine::computes_minimal`]).
    const MINIMAL_COALITIONS: bool;
    /// Whether the engine measures its real tables against a memory limit
    /// itself, so that [`tables`](Self::tables) is only an upper estimate
    /// and a forced run is not refused on it.
    const CHECKS_OWN_MEMORY: bool = false;

    /// Caller scratch the engine needs for `rule` and `scope`.
    fn scratch<W: AsRef<[u64]>>(rule: &Rule<W>, scope: Scope) -> Result<Need, Error>;

    /// Estimated elementary steps on `rule` for `scope` (saturating).
    fn cost<W: AsRef<[u64]>>(rule: &Rule<W>, scope: Scope) -> Result<u128, Error>;

    /// Estimated bytes of the engine's tables with counts of `count_bytes`
    /// bytes: its scratch unless it allocates tables of its own.
    fn tables<W: AsRef<[u64]>>(rule: &Rule<W>, scope: Scope, count_bytes: usize) -> Result<u64, Error> {
        Ok(Self::scratch(rule, scope)?.bytes(count_bytes))
    }

    /// Runs `job`, whose members have one cleared entry each and whose
    /// scratch holds at least [`scratch`](Self::scratch) (both checked by
    /// [`crate::engine::try_count_for`], which also marks veto members and
    /// dictators and sets the factorial afterwards).
    fn run<W: AsRef<[u64]>, C: Counter>(job: Job<'_, W, C>) -> Result<RuleCounts<C>, Error>;
}

/// Something to find out from, or do with, one engine; [`ask`] answers it
/// for the engine an [`Engine`] names.
pub(crate) trait Question {
    /// What the engine answers.
    type Answer;
    /// The answer of engine `E`.
    fn answer<E: Counting>(self) -> Self::Answer;
}

/// Lists the engines once: `Variant => type`, in the planner's order of
/// preference on equal cost.
macro_rules! registry {
    ($($variant:ident => $engine:ty),+ $(,)?) => {
        impl Engine {
            /// All engines, in the planner's order of preference on equal cost.
            pub const ALL: [Engine; [$(Engine::$variant),+].len()] = [$(Engine::$variant),+];
        }

        /// Puts `question` to the engine `engine` names.
        pub(crate) fn ask<Q: Question>(engine: Engine, question: Q) -> Q::Answer {
            match engine {
                $(Engine::$variant => question.answer::<$engine>(),)+
            }
        }

        $(const _: () = assert!(matches!(<$engine as Counting>::ENGINE, Engine::$variant));)+
    };
}

registry! {
    Profile => profile::Profiles,
    Dense => dense::Dense,
    Diagram => diagram::Diagrams,
    Enumerate => enumerate::Enumeration,
}

/// The engine's constant facts.
struct Facts;

/// [`Facts`]' answer.
#[derive(Clone, Copy)]
pub(crate) struct EngineFacts {
    pub description: &'static str,
    pub minimal_coalitions: bool,
    pub checks_own_memory: bool,
}

impl Question for Facts {
    type Answer = EngineFacts;
    fn answer<E: Counting>(self) -> EngineFacts {
        EngineFacts {
            description: E::DESCRIPTION,
            minimal_coalitions: E::MINIMAL_COALITIONS,
            checks_own_memory: E::CHECKS_OWN_MEMORY,
        }
    }
}

impl Engine {
    /// Whether this engine computes the minimal-coalition indices (Johnston,
    /// Deegan-Packel, Holler) and counts.
    pub fn computes_minimal(self) -> bool {
        ask(self, Facts).minimal_coalitions
    }

    /// What the engine does, in one line.
    pub fn describe(self) -> &'static str {
        ask(self, Facts).description
    }

    /// Whether the engine checks its real memory itself (its estimate is an
    /// upper bound, not a reason to refuse a forced run).
    #[cfg_attr(not(feature = "alloc"), allow(dead_code))] // used by `analyze`
    pub(crate) fn checks_own_memory(self) -> bool {
        ask(self, Facts).checks_own_memory
    }
}

/// [`Counting::scratch`] as a question.
pub(crate) struct Scratch<'r, W: AsRef<[u64]>> {
    pub rule: &'r Rule<W>,
    pub scope: Scope,
}

impl<W: AsRef<[u64]>> Question for Scratch<'_, W> {
    type Answer = Result<Need, Error>;
    fn answer<E: Counting>(self) -> Self::Answer {
        E::scratch(self.rule, self.scope)
    }
}

/// [`Counting::cost`] as a question.
pub(crate) struct Cost<'r, W: AsRef<[u64]>> {
    pub rule: &'r Rule<W>,
    pub scope: Scope,
}

impl<W: AsRef<[u64]>> Question for Cost<'_, W> {
    type Answer = Result<u128, Error>;
    fn answer<E: Counting>(self) -> Self::Answer {
        E::cost(self.rule, self.scope)
    }
}

/// [`Counting::tables`] as a question.
pub(crate) struct Tables<'r, W: AsRef<[u64]>> {
    pub rule: &'r Rule<W>,
    pub scope: Scope,
    pub count_bytes: usize,
}

impl<W: AsRef<[u64]>> Question for Tables<'_, W> {
    type Answer = Result<u64, Error>;
    fn answer<E: Counting>(self) -> Self::Answer {
        E::tables(self.rule, self.scope, self.count_bytes)
    }
}

/// One counting job, and [`Counting::run`] as a question.
pub(crate) struct Job<'a, W: AsRef<[u64]>, C> {
    /// The rule to count.
    pub rule: &'a Rule<W>,
    /// What to count.
    pub scope: Scope,
    /// One cleared entry per member.
    pub members: &'a mut [MemberCounts<C>],
    /// Scratch of at least the engine's [`Counting::scratch`].
    pub work: Workspace<'a, C>,
    /// What the run may spend; the engine charges it as it goes.
    pub meter: &'a Meter<'a>,
}

impl<W: AsRef<[u64]>, C: Counter> Question for Job<'_, W, C> {
    type Answer = Result<RuleCounts<C>, Error>;
    fn answer<E: Counting>(self) -> Self::Answer {
        E::run(self)
    }
}
