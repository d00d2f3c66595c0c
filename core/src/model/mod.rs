//! The rule model: what a rule is, what a vote is, and the vocabulary every
//! later stage shares.
//!
//! * [`rule`]: the rule IR ([`Rule`], postfix [`Node`]s) and its evaluation;
//! * [`atom`]: conditions, plain ([`Atom`]) or four-state ([`Linear`]);
//! * [`quota`]: exact integer quotas from shares and "against" forms;
//! * [`coalition`] and [`ballot`]: fixed-capacity member sets and four-state ballots;
//! * [`limits`]: every fixed limit, in one table;
//! * [`meter`]: the step budget, memory limit, cancellation and progress of a running computation;
//! * [`count`]: the checked [`Counter`] trait and fixed-width [`Wide`] integers;
//! * [`error`] and [`engine_id`]: the single error type and the engine
//!   identifiers it names.
//!
//! Import rule: the model imports nothing from the other folders
//! (`engine`, `analysis`, `device`); they all build on it. Nothing here
//! allocates (but [`Meter::vec`] with `alloc`); time and space bounds are in each module.

pub mod atom;
pub mod ballot;
pub mod coalition;
pub mod count;
pub mod engine_id;
pub mod error;
pub mod limits;
pub mod meter;
pub mod quota;
pub mod rule;

pub use atom::{Atom, Condition, Linear};
pub use ballot::{Ballot, Vote};
pub use coalition::{Coalition, Members};
pub use count::{Count1024, Counter, Wide};
pub use error::Error;
pub use meter::Meter;
pub use rule::{Node, Rule};
