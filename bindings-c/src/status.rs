//! The result code every export returns, and its messages.
//!
//! Values are explicit and never reused: a code keeps its meaning in every
//! later version, and a retired code leaves a gap. Ranges: 0 success, 1-99
//! calling errors, 100-199 damaged images, 200-299 invalid rules, 300-399
//! ballots, 400-499 power computations.

use core::ffi::c_char;

use clout_core::{Error, ImageError};

use crate::ffi;

/// Longest message of any result code, with its terminating NUL.
pub const CLOUT_MESSAGE_MAX: usize = 128;

/// What a call did: `CLOUT_RESULT_OK`, or why it did nothing.
#[repr(u32)]
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum clout_result {
    /// Success; out-parameters were written.
    Ok = 0,
    /// A required pointer was NULL.
    NullArgument = 1,
    /// An output buffer, or a ballot's words, is shorter than needed.
    BufferTooSmall = 2,
    /// A bug inside the library was caught before it reached C. Please report it.
    Panic = 3,
    /// The system allocator refused memory, or the computation needs more
    /// than its memory limit.
    OutOfMemory = 4,
    /// A pointer is not aligned for its type.
    Misaligned = 5,
    /// The pointer does not point at a loaded rule.
    NotARule = 6,
    /// `clout_rule_free` was given a rule in caller memory (from `clout_rule_load`).
    NotHeapRule = 7,
    /// A length is so large no buffer can have it.
    LengthTooLarge = 8,
    /// The library met an error this version cannot name. Please report it.
    Internal = 9,
    /// This build of the library leaves the function out (a firmware build
    /// without the heap: `clout_rule_new`, `clout_power`).
    NotInBuild = 10,
    /// Not a rule image: the magic bytes are wrong.
    ImageMagic = 100,
    /// The image is shorter than its header, or than the length it declares.
    ImageTruncated = 101,
    /// The image's format version is not supported.
    ImageVersion = 102,
    /// The image is longer than the length it declares.
    ImageTrailingBytes = 103,
    /// The image's checksum does not match its contents.
    ImageChecksum = 104,
    /// A weight width is not 1, 2, 4 or 8 bytes.
    ImageWidth = 105,
    /// The declared length does not match the image's sections.
    ImageLayout = 106,
    /// A formula node has an unknown kind.
    ImageNodeKind = 107,
    /// A condition has an unknown kind.
    ImageConditionKind = 108,
    /// The image's member names are malformed.
    ImageNames = 109,
    /// The image's roster digest does not match its names and weights.
    ImageRoster = 110,
    /// The image has no roster digest (format version 1).
    ImageNoRoster = 111,
    /// The rule has no members.
    NoMembers = 200,
    /// More members than this build holds.
    TooManyMembers = 201,
    /// More weight attributes than the limit (64).
    TooManyAttributes = 202,
    /// More conditions than the limit (64).
    TooManyConditions = 203,
    /// More formula nodes than the limit (128).
    TooManyNodes = 204,
    /// Operators nested deeper than the limit (32).
    TooDeep = 205,
    /// An attribute's weights add up to more than 2^64 - 4.
    WeightSumOverflow = 206,
    /// A condition uses an attribute that does not exist.
    UnknownAttribute = 207,
    /// A formula node uses a condition that does not exist.
    UnknownCondition = 208,
    /// The formula is not a single tree.
    MalformedFormula = 209,
    /// An operator has no operands.
    EmptyOperator = 210,
    /// A four-state condition is not monotone (a vote for could defeat the motion).
    NonMonotone = 211,
    /// A ballot names a member the rule does not have.
    BallotMember = 300,
    /// A ballot lists a member twice.
    BallotDuplicate = 301,
    /// A four-state ballot holds a vote byte other than `CLOUT_VOTE_*`.
    BallotVote = 302,
    /// Power needs a rule of at most 64 members.
    PowerCapacity = 400,
    /// The exact computation would take too long: its estimate, or the steps
    /// it spent while running, passed the step budget.
    TooCostly = 401,
    /// An exact count does not fit in the count type.
    CountOverflow = 402,
    /// No counting engine can handle this rule.
    NoEngine = 403,
}

impl clout_result {
    /// Every code, in value order.
    pub const ALL: [clout_result; 42] = {
        use clout_result::*;
        [
            Ok,
            NullArgument,
            BufferTooSmall,
            Panic,
            OutOfMemory,
            Misaligned,
            NotARule,
            NotHeapRule,
            LengthTooLarge,
            Internal,
            NotInBuild,
            ImageMagic,
            ImageTruncated,
            ImageVersion,
            ImageTrailingBytes,
            ImageChecksum,
            ImageWidth,
            ImageLayout,
            ImageNodeKind,
            ImageConditionKind,
            ImageNames,
            ImageRoster,
            ImageNoRoster,
            NoMembers,
            TooManyMembers,
            TooManyAttributes,
            TooManyConditions,
            TooManyNodes,
            TooDeep,
            WeightSumOverflow,
            UnknownAttribute,
            UnknownCondition,
            MalformedFormula,
            EmptyOperator,
            NonMonotone,
            BallotMember,
            BallotDuplicate,
            BallotVote,
            PowerCapacity,
            TooCostly,
            CountOverflow,
            NoEngine,
        ]
    };

    /// The code with this value, if any.
    pub fn from_code(code: u32) -> Option<Self> {
        Self::ALL.iter().copied().find(|c| *c as u32 == code)
    }

    /// A short lowercase message.
    pub fn message(self) -> &'static str {
        use clout_result::*;
        match self {
            Ok => "success",
            NullArgument => "a required pointer is NULL",
            BufferTooSmall => "a buffer is shorter than needed",
            Panic => "internal error caught at the library boundary; please report it",
            OutOfMemory => {
                "out of memory: the system refused it, or the computation needs more than its memory limit"
            }
            Misaligned => "a pointer is not aligned for its type",
            NotARule => "the pointer does not point at a loaded rule",
            NotHeapRule => {
                "rule lives in caller memory: release that memory instead of calling clout_rule_free"
            }
            LengthTooLarge => "a length is larger than any buffer can be",
            Internal => "internal error; please report it",
            NotInBuild => "this build of the library leaves the function out (built without the heap)",
            ImageMagic => "not a clout rule image (wrong magic bytes)",
            ImageTruncated => "image truncated: shorter than its header or declared length",
            ImageVersion => "image format version not supported; compile the rule again",
            ImageTrailingBytes => "image longer than its declared length",
            ImageChecksum => "image damaged: checksum mismatch",
            ImageWidth => "image has a weight width other than 1, 2, 4 or 8 bytes",
            ImageLayout => "image length does not match its sections",
            ImageNodeKind => "image has a formula node of unknown kind",
            ImageConditionKind => "image has a condition of unknown kind",
            ImageNames => "image has malformed member names",
            ImageRoster => "image damaged: the roster digest does not match its names and weights",
            ImageNoRoster => "image has no roster digest (format version 1); compile the rule again",
            NoMembers => "the rule has no members",
            TooManyMembers => "the rule has more members than this build holds",
            TooManyAttributes => "the rule has more than 64 weight attributes",
            TooManyConditions => "the rule has more than 64 conditions",
            TooManyNodes => "the formula has more than 128 nodes",
            TooDeep => "the formula nests deeper than 32 levels",
            WeightSumOverflow => "an attribute's weights add up to more than 2^64 - 4",
            UnknownAttribute => "a condition uses an attribute that does not exist",
            UnknownCondition => "a formula node uses a condition that does not exist",
            MalformedFormula => "the formula is not a single tree",
            EmptyOperator => "an operator has no operands",
            NonMonotone => "a four-state condition is not monotone: a vote for could defeat the motion",
            BallotMember => "the ballot names a member the rule does not have",
            BallotDuplicate => "the ballot lists a member twice",
            BallotVote => "the ballot holds a vote other than absent, yes, no or abstain",
            PowerCapacity => "power indices need a rule of at most 64 members",
            TooCostly => "the exact computation would take too long",
            CountOverflow => "an exact count does not fit in the count type",
            NoEngine => "no counting engine can handle this rule",
        }
    }
}

impl From<Error> for clout_result {
    fn from(e: Error) -> Self {
        use clout_result::*;
        match e {
            Error::NoMembers => NoMembers,
            Error::TooManyMembers { .. } => TooManyMembers,
            Error::TooManyAttributes { .. } => TooManyAttributes,
            Error::TooManyAtoms { .. } => TooManyConditions,
            Error::TooManyNodes { .. } => TooManyNodes,
            Error::TooDeep { .. } => TooDeep,
            Error::WeightSumOverflow { .. } => WeightSumOverflow,
            Error::UnknownAttribute { .. } => UnknownAttribute,
            Error::UnknownAtom { .. } => UnknownCondition,
            Error::MalformedFormula { .. } => MalformedFormula,
            Error::EmptyOperator { .. } => EmptyOperator,
            Error::NonMonotone => NonMonotone,
            Error::BallotMismatch { .. } => BallotMember,
            Error::CountOverflow => CountOverflow,
            Error::TooCostly { .. } | Error::OverBudget { .. } => TooCostly,
            Error::MemoryLimit { .. } | Error::OutOfMemory { .. } => OutOfMemory,
            Error::EngineUnsuitable { .. } => NoEngine,
            // Shapes the C ABI never builds (weight tables, quotas from
            // shares, scratch it sized itself), and variants added later.
            _ => Internal,
        }
    }
}

impl From<ImageError> for clout_result {
    fn from(e: ImageError) -> Self {
        use clout_result::*;
        match e {
            ImageError::BadMagic => ImageMagic,
            ImageError::Truncated { .. } => ImageTruncated,
            ImageError::UnsupportedVersion { .. } => ImageVersion,
            ImageError::TrailingBytes { .. } => ImageTrailingBytes,
            ImageError::ChecksumMismatch { .. } => ImageChecksum,
            ImageError::BadWidth { .. } => ImageWidth,
            ImageError::LayoutMismatch { .. } => ImageLayout,
            ImageError::BadNodeKind { .. } => ImageNodeKind,
            ImageError::BadConditionKind { .. } => ImageConditionKind,
            ImageError::Rule(e) => e.into(),
            ImageError::BufferTooSmall { .. } => BufferTooSmall,
            ImageError::BadNames { .. } => ImageNames,
            ImageError::RosterMismatch => ImageRoster,
            _ => Internal,
        }
    }
}

/// Writes the message of result code `code` and a terminating NUL into
/// `buf` (`buf_len` bytes; `CLOUT_MESSAGE_MAX` always suffices) and its
/// length without the NUL into `*written`. An unknown code gets the message
/// "unknown result code".
#[no_mangle]
pub extern "C" fn clout_result_message(
    code: u32,
    buf: *mut c_char,
    buf_len: usize,
    written: *mut usize,
) -> clout_result {
    ffi::guard(|| {
        let text = clout_result::from_code(code).map_or("unknown result code", clout_result::message);
        ffi::write_text(text, buf, buf_len, written)
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn codes_are_distinct_and_messages_fit() {
        let codes = &clout_result::ALL;
        for (i, a) in codes.iter().enumerate() {
            assert!(a.message().len() < CLOUT_MESSAGE_MAX, "{a:?}");
            for b in &codes[i + 1..] {
                assert_ne!(*a as u32, *b as u32);
            }
        }
        assert_eq!(clout_result::from_code(104), Some(clout_result::ImageChecksum));
        assert_eq!(clout_result::from_code(42), None);
    }
}
