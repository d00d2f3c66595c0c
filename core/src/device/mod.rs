//! The device side: deciding actual votes and the rule images a device
//! loads, with no heap.
//!
//! * [`decide`]: outcome, per-condition tallies and critical members of one
//!   ballot, two-state or four-state;
//! * [`image`]: the versioned binary form of a rule, encoded on a host and
//!   checked and loaded into caller memory on a device.
//!
//! Import rule: the device side imports the model (`crate::model`) only;
//! it never needs an engine or the analysis. Bounds are in each module.

pub mod decide;
pub mod image;
