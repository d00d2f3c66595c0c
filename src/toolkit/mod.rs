//! The drafter's toolkit: whether a rule is secretly simpler than it looks,
//! whether two drafts are the same rule, how power moves with the quota, and
//! which weights give the power a drafter intends.
//!
//! | module | does | time |
//! | --- | --- | --- |
//! | [`profile`] | the winning table over profiles of interchangeable members | O(P (m + atoms + nodes)), P = Π(c_t + 1) |
//! | [`weighted`] | weightedness (integer programs, answers checked exactly), minimal-sum representation, trading transfers, an intersection of weighted rules | P m per round plus the solver |
//! | [`desirability`] | Isbell's desirability relation, symmetric classes | O(m^2 P) |
//! | [`compare`] | same simple game? a smallest coalition where two rules differ | O(P m) |
//! | [`sweep`] | indices and probability of passage as a quota moves | one exact analysis per point |
//! | [`fit`] | integer weights and a quota whose Banzhaf index is closest to a target | a work budget |
//! | [`coalitions`] | minimal winning and minimal blocking coalitions, listed and counted | O(P m) |
//!
//! A *type* is a set of members with identical weights in every attribute of
//! a rule: they are interchangeable, so a coalition matters only through its
//! *profile*, how many members of each type it holds. Tables over profiles
//! are exact and small for bodies made of a few large groups (the 536
//! members of two chambers and an executive have 88,072 profiles) and equal
//! to tables over coalitions when every member is its own type. Every table
//! is refused beyond [`PROFILE_LIMIT`] profiles, before it is allocated.
//!
//! Exactness: the linear and integer programs are solved in floating point
//! (`microlp`), and no answer is taken on trust. A representation `[q; w]`
//! is accepted only after integer arithmetic has checked it on every profile;
//! "not weighted" is stated only with a trading transfer whose coalitions
//! were checked to win and lose and to hold every member equally often.
//! Counts of coalitions are exact integers (the core's wide counters).

pub mod coalitions;
pub mod compare;
pub mod desirability;
pub mod fit;
mod lp;
pub mod profile;
pub mod sweep;
pub mod weighted;

use std::fmt;

/// Most profiles a table may hold (2^22; 512 KiB of winning bits).
pub const PROFILE_LIMIT: usize = 1 << 22;

/// What can go wrong in the toolkit.
#[derive(Clone, Debug, PartialEq)]
#[non_exhaustive]
pub enum Error {
    /// The exact test would need more profiles than the limit.
    TooLarge {
        /// Profiles needed (saturating).
        profiles: u128,
        /// The limit.
        limit: usize,
    },
    /// The core refused something (a rule, a count).
    Core(clout_core::Error),
    /// The solver failed, or its answer did not pass the exact check.
    Solver(String),
    /// Inputs that do not fit together (member counts, targets).
    Mismatch(String),
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Error::TooLarge { profiles, limit } => write!(
                f,
                "the exact test would visit {profiles} profiles of interchangeable members, over the \
                 limit of {limit}"
            ),
            Error::Core(e) => write!(f, "{e}"),
            Error::Solver(m) => write!(f, "the linear-programming solver failed: {m}"),
            Error::Mismatch(m) => write!(f, "{m}"),
        }
    }
}

impl std::error::Error for Error {}

impl From<clout_core::Error> for Error {
    fn from(e: clout_core::Error) -> Self {
        Error::Core(e)
    }
}
