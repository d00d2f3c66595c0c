//! Analysis: from a rule to indices, over the engines.
//!
//! * [`planner`]: asks every registered engine for its cost and memory and
//!   picks the cheapest that fits;
//! * [`power`]: power indices and rule properties from an engine's exact
//!   counts ([`PowerTable`]);
//! * `analyze` (feature `alloc`): the allocating convenience layer that
//!   plans, allocates scratch, counts and keeps the results together.
//!
//! Import rule: the analysis imports the model and the engines
//! (`crate::model`, `crate::engine`), never the device side. Bounds are in
//! each module.

#[cfg(feature = "alloc")]
mod analyze;
pub mod planner;
pub mod power;

#[cfg(feature = "alloc")]
pub use analyze::{analyze, analyze_metered, analyze_opts, analyze_with, Analysis, Options};
pub use power::PowerTable;
