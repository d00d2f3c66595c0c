//! # clout
//!
//! Exact voting power and decision rules for weighted, compound voting
//! bodies: the library every front end (the `clout` command, the Python and
//! WebAssembly packages) is built on. No argument parsing, no terminal code.
//!
//! * the `no_std` core ([`clout_core`], re-exported): rules, ballots,
//!   engines, indices;
//! * the rule language ([`language`], with [`compile`] at the root);
//! * [`report`]: the power report as data (the JSON schema of every front end);
//! * [`decision`]: one actual vote as data; [`record`]: many recorded votes;
//! * [`drafting`]: the drafter's answers as data (simplify, compare, sweep,
//!   coalitions, order, fit), the JSON schema of the drafting commands;
//! * [`toolkit`]: the drafter's methods behind them;
//! * [`chart`]: the report and the sweep as SVG charts and one self-contained page;
//! * [`scenarios`]: deterministic fictional bodies for benches, tests, demos.

// The README's Rust examples run as doctests.
#[cfg(doctest)]
#[doc = include_str!("../README.md")]
struct ReadmeDoctests;

pub use clout_core as core;
pub use clout_core::*;
pub use clout_dsl as language;
pub use clout_dsl::{compile, CompiledRule, Diagnostic, RuleFile};

pub mod chart;
pub mod decision;
pub mod drafting;
mod failure;
pub mod record;
pub mod report;
pub mod scenarios;
pub mod toolkit;

pub use failure::{Failure, FailureKind};
