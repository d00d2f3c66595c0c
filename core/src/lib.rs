//! # clout-core
//!
//! The `no_std` heart of clout: compound voting rules, ballots, and exact
//! voting power.
//!
//! * [`Rule`]: members with integer weight attributes, threshold atoms
//!   ("sum of seats over the yes-voters >= 58") and a monotone AND/OR
//!   formula over them. [`quota`] turns "more than half", "at least 65%",
//!   "fewer than 4 against" into exact integer quotas.
//! * [`decide`] and [`critical`]: the outcome of one vote, its tallies, and
//!   the members whose switch would flip it. No heap, nanoseconds.
//! * [`engine`]: exact swing counts and pivot counts by four engines
//!   (enumeration, type profiles, capped generating functions, decision
//!   diagrams) behind one interface, chosen by [`planner::plan`] or forced
//!   by the caller; `approx` and `ternary` (feature `alloc`) beside them.
//! * [`PowerTable`]: every standard index from those counts (normalized and
//!   absolute Banzhaf, Shapley-Shubik, Coleman, Johnston, Deegan-Packel,
//!   Holler) and the dummy / veto / dictator flags; [`RuleCounts`] for
//!   winning coalitions, passage probability, proper / strong / decisive.
//!
//! ## Layout
//! The source folders follow the data: `model/` (rules, atoms, quotas,
//! coalitions, ballots, limits, counts, errors), `engine/` (the engines and
//! their registry), `analysis/` (planner, indices, the allocating layer)
//! and `device/` (deciding ballots, rule images). Each imports only from
//! the folders before it; the device side from the model alone. The public
//! paths are the re-exports below.
//!
//! ## Model
//! Indices measure a priori power: every member votes yes or no
//! independently with equal chance. They are not predictions of behaviour.
//!
//! ## Storage and limits
//! Without features nothing allocates: the caller owns the weight table,
//! the result arrays and the engine scratch ([`engine::need`] says how much;
//! too little is [`Error::ScratchTooSmall`]). Feature `alloc` adds
//! [`analyze`], which allocates for you; `std` adds nothing else yet. Limits
//! are in [`limits`].
//!
//! | operation | time | space |
//! | --- | --- | --- |
//! | [`Rule::passes`], [`decide`] | O(yes-voters * attributes + nodes) | stack, < 2 KiB |
//! | [`critical`] | O(n * (atoms + nodes)) | stack |
//! | enumeration | O(2^n n (atoms + nodes)), n <= 30 | 3 n^2 counts |
//! | profiles | O(Π(c_t + 1) T (atoms + nodes)) | ~(3T + 1) n counts |
//! | dense, one attribute | O(n^2 q) | (n + 1)(q + 1) counts |
//!
//! ## Overflow
//! Weight sums are checked when a rule is built; counts use the caller's
//! [`Counter`] (`u64`, `u128`, [`Count1024`] or any [`Wide`]) with checked
//! arithmetic, so an overflow is [`Error::CountOverflow`], never a wrap.
//!
//! ```
//! use clout_core::{engine, Coalition, Count1024, PowerTable, Rule};
//!
//! // [12; 4, 4, 4, 2, 2, 1]
//! let weights = [4u64, 4, 4, 2, 2, 1];
//! let rule = Rule::weighted(12, &weights[..]).unwrap();
//! assert!(rule.passes(&Coalition::<1>::from_members(&[0, 1, 2]).unwrap()).unwrap());
//!
//! let plan = clout_core::planner::plan(&rule, u128::MAX).unwrap();
//! let need = engine::need(&rule, plan.engine).unwrap();
//! let mut counts = [0u128; 512];
//! let mut indices = [0u32; 64];
//! assert!(need.counts <= counts.len() && need.indices <= indices.len());
//! let mut members = [clout_core::MemberCounts::<u128>::EMPTY; 6];
//! let work = engine::Workspace { counts: &mut counts, indices: &mut indices };
//! let totals = engine::try_count(&rule, plan.engine, &mut members, work).unwrap();
//! let table = PowerTable::new(&totals, &members);
//! assert_eq!(members[0].swings, 10);
//! assert!(table.is_dummy(5));
//! ```

#![cfg_attr(not(any(test, feature = "std")), no_std)]
#![deny(unsafe_code)]
// Library code cannot panic: no unwrap, expect, panic or unreachable, no
// indexing that can fail and no unchecked arithmetic. The hot loops of the
// engines opt out of the last two per module, each with the argument why
// (collected in DEVELOPERS.md, "Panics"). Tests may do as they like.
#![cfg_attr(
    not(test),
    deny(
        clippy::unwrap_used,
        clippy::expect_used,
        clippy::panic,
        clippy::unreachable,
        clippy::indexing_slicing,
        clippy::arithmetic_side_effects
    )
)]
#![warn(missing_docs)]
// Indexed loops read more clearly than zipped iterators in the DP tables.
#![allow(clippy::needless_range_loop)]

#[cfg(feature = "alloc")]
extern crate alloc;

// The stages: model -> engine -> analysis, and the device side beside them.
// Each imports only from the stages before it, the device side from the
// model alone (each folder's mod.rs states its rule; `tests/layers.rs`
// checks them).
mod analysis;
mod device;
pub mod engine;
#[cfg(any(test, feature = "fixtures"))]
pub mod fixtures;
mod model;

// Public paths, unchanged by the folders above.
pub use analysis::planner;
pub use analysis::PowerTable;
#[cfg(feature = "alloc")]
pub use analysis::{analyze, analyze_metered, analyze_opts, analyze_with, Analysis, Options};
pub use device::decide::{
    critical, decide, decide_ballot, decide_ballot_each, decide_each, decide_into, AtomTally, Decision,
};
pub use device::image;
pub use device::image::{ImageError, ImageInfo};
#[cfg(feature = "alloc")]
pub use engine::approx;
#[cfg(feature = "alloc")]
pub use engine::ternary;
#[cfg(feature = "std")]
pub use engine::threads;
pub use engine::{Engine, MemberCounts, RuleCounts};
pub use model::{count, limits, meter, quota};
pub use model::{
    Atom, Ballot, Coalition, Condition, Count1024, Counter, Error, Linear, Members, Meter, Node, Rule, Vote,
    Wide,
};
