//! # clout
//!
//! Exact voting power and decision rules for weighted, compound voting
//! bodies. This facade re-exports the `no_std` core ([`clout_core`]).

// The README's Rust examples run as doctests.
#[cfg(doctest)]
#[doc = include_str!("../README.md")]
struct ReadmeDoctests;

pub use clout_core as core;
pub use clout_core::*;

pub mod scenarios;
pub mod toolkit;
