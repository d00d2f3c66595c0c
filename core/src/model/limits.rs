//! Every fixed limit of the core, in one table.
//!
//! The same constants drive the checks in [`crate::Rule::new`] and the
//! documentation, so a limit is stated before it is hit. Constants only:
//! no time, space or arithmetic of their own.

/// Most members a rule may have.
///
/// Without `alloc` the core is meant for devices and holds 64 members, the
/// capacity of the default one-word [`crate::Coalition`]. With `alloc` the
/// bound is 65,535 (member indices fit in a `u16`).
#[cfg(not(feature = "alloc"))]
pub const MAX_MEMBERS: usize = 64;
/// Most members a rule may have (`alloc` build).
#[cfg(feature = "alloc")]
pub const MAX_MEMBERS: usize = 65_535;

/// Most weight attributes (seats, population, head count, one per bloc, ...).
pub const MAX_ATTRIBUTES: usize = 64;

/// Most atoms (threshold conditions) in one rule.
pub const MAX_ATOMS: usize = 64;

/// Most nodes (atoms plus AND/OR operators) in one rule's formula.
///
/// Evaluation keeps one bit per pending value on a `u128` stack, so this is
/// also the stack bound of [`crate::Rule::passes`].
pub const MAX_NODES: usize = 128;

/// Deepest nesting of AND/OR operators in a formula.
pub const MAX_DEPTH: usize = 32;

/// Largest sum of one attribute's weights: 2^64 - 4.
///
/// A condition no coalition can meet has the two-state quota `total + 1`,
/// which must be a `u64`; the decision diagram also keeps the two values
/// above `total + 1` for its TRUE and FALSE node keys. (Differential fuzzing
/// found both: with a total of 2^64 - 1 an unreachable four-state condition
/// got the quota 2^64 - 1 and the full coalition passed, and diagram keys
/// collided with TRUE.) Larger sums are [`crate::Error::WeightSumOverflow`].
pub const MAX_TOTAL: u64 = u64::MAX - 3;

/// One row of the limits table: name, value, what it bounds.
pub const TABLE: [(&str, usize, &str); 5] = [
    ("members", MAX_MEMBERS, "members in one rule"),
    ("attributes", MAX_ATTRIBUTES, "weight attributes in one rule"),
    ("atoms", MAX_ATOMS, "threshold conditions in one rule"),
    ("nodes", MAX_NODES, "atoms plus operators in one formula"),
    ("depth", MAX_DEPTH, "nesting depth of AND/OR operators"),
];
