//! The core's single error type: small, `Copy`, never boxed.
//!
//! Formatting is O(1) into the caller's formatter; no heap, no arithmetic.

use core::fmt;

use crate::model::engine_id::Engine;

/// Everything that can go wrong in the core.
///
/// Each variant carries just enough to say what and where (an index, a needed
/// size). The enum is `#[non_exhaustive]`: new failure kinds may appear.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
#[allow(missing_docs)] // field names say what they hold
pub enum Error {
    /// The rule has no members.
    NoMembers,
    /// More members than [`crate::limits::MAX_MEMBERS`] (or than a caller's capacity).
    TooManyMembers { members: usize, limit: usize },
    /// The weight table's length is not `attributes * members`.
    WeightTableShape { len: usize, members: usize },
    /// More attributes than [`crate::limits::MAX_ATTRIBUTES`].
    TooManyAttributes { attributes: usize, limit: usize },
    /// More atoms than [`crate::limits::MAX_ATOMS`].
    TooManyAtoms { atoms: usize, limit: usize },
    /// More formula nodes than [`crate::limits::MAX_NODES`].
    TooManyNodes { nodes: usize, limit: usize },
    /// Operators nested deeper than [`crate::limits::MAX_DEPTH`].
    TooDeep { depth: usize, limit: usize },
    /// The weights of one attribute add up to more than
    /// [`crate::limits::MAX_TOTAL`] (2^64 - 4).
    WeightSumOverflow { attribute: usize },
    /// An atom names an attribute that does not exist.
    UnknownAttribute { atom: usize, attribute: usize },
    /// A formula node names an atom that does not exist.
    UnknownAtom { node: usize, atom: usize },
    /// The formula (postfix) is not one tree: an operator lacks operands, or
    /// values are left over. `node` is where it was noticed.
    MalformedFormula { node: usize },
    /// An operator with no operands.
    EmptyOperator { node: usize },
    /// A condition that cannot be expressed as a monotone threshold (an upper
    /// bound on yes votes, such as "seats < 10"): power indices assume that
    /// adding a yes vote never turns a pass into a fail.
    NonMonotone,
    /// A fraction with zero denominator, or above 1 where a share is expected.
    BadFraction { numerator: u64, denominator: u64 },
    /// A ballot names a member index at or beyond the rule's member count, or
    /// has too few words for the rule.
    BallotMismatch { members: usize, capacity: usize },
    /// An exact count does not fit in the chosen count type.
    CountOverflow,
    /// A caller-provided buffer is too small.
    ScratchTooSmall { needed: usize, given: usize },
    /// The chosen engine cannot handle this rule (e.g. too many members to
    /// enumerate, or a compound rule for a single-threshold method).
    EngineUnsuitable { engine: Engine },
    /// The exact computation would take more work than the caller allows.
    TooCostly { estimate: u128, budget: u128 },
    /// A member appears in two groups of a four-state ballot.
    BallotOverlap { member: usize },
    /// The computation would need more memory than the caller allows.
    MemoryLimit { needed: u64, limit: u64 },
    /// A running computation charged more steps than its [`crate::Meter`]'s budget.
    OverBudget { budget: u128 },
    /// The computation was cancelled through its [`crate::Meter`]'s flag.
    Cancelled,
    /// The system allocator refused `bytes` bytes (within the memory limit).
    OutOfMemory { bytes: u64 },
}

/// Writes `steps` for a message: "more than 10^38" for a saturated
/// estimate, never the saturated number itself.
fn write_steps(f: &mut fmt::Formatter<'_>, steps: u128) -> fmt::Result {
    if steps == u128::MAX {
        write!(f, "more than 10^38")
    } else {
        write!(f, "{steps}")
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        use Error::*;
        match *self {
            NoMembers => write!(f, "the rule has no members"),
            TooManyMembers { members, limit } => {
                write!(f, "{members} members exceed the limit of {limit}")
            }
            WeightTableShape { len, members } => write!(
                f,
                "weight table of length {len} is not a whole number of attributes for {members} members"
            ),
            TooManyAttributes { attributes, limit } => {
                write!(f, "{attributes} attributes exceed the limit of {limit}")
            }
            TooManyAtoms { atoms, limit } => write!(f, "{atoms} conditions exceed the limit of {limit}"),
            TooManyNodes { nodes, limit } => {
                write!(f, "formula of {nodes} nodes exceeds the limit of {limit}")
            }
            TooDeep { depth, limit } => write!(f, "nesting depth {depth} exceeds the limit of {limit}"),
            WeightSumOverflow { attribute } => {
                write!(f, "the weights of attribute {attribute} add up to more than 2^64 - 4")
            }
            UnknownAttribute { atom, attribute } => {
                write!(f, "condition {atom} uses attribute {attribute}, which does not exist")
            }
            UnknownAtom { node, atom } => {
                write!(f, "formula node {node} uses condition {atom}, which does not exist")
            }
            MalformedFormula { node } => write!(f, "the formula is not a single tree (at node {node})"),
            EmptyOperator { node } => write!(f, "operator at node {node} has no operands"),
            NonMonotone => write!(
                f,
                "the condition is not monotone: an upper bound on yes votes lets an extra yes vote defeat a motion"
            ),
            BadFraction { numerator, denominator } => {
                write!(f, "{numerator}/{denominator} is not a share between 0 and 1")
            }
            BallotMismatch { members, capacity } => write!(
                f,
                "ballot holds {capacity} members but the rule has {members}"
            ),
            CountOverflow => write!(f, "an exact count does not fit in the count type; use a wider one"),
            ScratchTooSmall { needed, given } => {
                write!(f, "scratch of {given} elements is too small, {needed} needed")
            }
            EngineUnsuitable { engine } => write!(f, "the {} engine cannot handle this rule", engine.name()),
            BallotOverlap { member } => {
                write!(f, "member {member} appears in more than one of yes, no and abstain")
            }
            MemoryLimit { needed, limit } if needed == u64::MAX => write!(
                f,
                "the computation needs more than 16 EiB, over the memory limit of {limit} bytes"
            ),
            MemoryLimit { needed, limit } => write!(
                f,
                "the computation needs at least {needed} bytes, over the memory limit of {limit} bytes"
            ),
            TooCostly { estimate, budget } => {
                write!(f, "the exact computation needs about ")?;
                write_steps(f, estimate)?;
                write!(f, " steps, over the budget of ")?;
                write_steps(f, budget)?;
                write!(f, " steps")
            }
            OverBudget { budget } => {
                write!(f, "the computation used up its budget of ")?;
                write_steps(f, budget)?;
                write!(f, " steps before it finished")
            }
            Cancelled => write!(f, "the computation was cancelled"),
            OutOfMemory { bytes } => write!(
                f,
                "the system refused to allocate {bytes} more bytes (within the memory limit)"
            ),
        }
    }
}

impl core::error::Error for Error {}
