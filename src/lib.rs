//! # clout
//!
//! Exact voting power and decision rules for weighted, compound voting
//! bodies. This facade re-exports the `no_std` core ([`clout_core`]).

pub use clout_core as core;
pub use clout_core::*;

pub mod scenarios;
pub mod toolkit;
