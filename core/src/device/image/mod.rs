//! Rule images: a compact, versioned, little-endian binary form of one
//! compiled [`Rule`](crate::Rule), for devices that load a fixed rule from flash or a file.
//!
//! * [`encode_into`] writes an image into a caller buffer of
//!   [`encoded_len`] bytes; [`encode`] (feature `alloc`) returns a `Vec`.
//! * [`load`] checks an image completely, then writes its weights into a
//!   caller buffer of [`weights_needed`] `u64`s and returns a
//!   `Rule<&[u64]>` over that buffer ([`load_with`] wraps the buffer in a
//!   weight type of the caller's). Nothing allocates.
//! * [`inspect`] says what an image holds and whether it is intact
//!   ([`ImageInfo`] implements `Display`).
//!
//! The byte-by-byte layout is in `docs/image-format.md`. In short: a 20-byte
//! header (magic `\x89CLR`, format version, sizes, total length), one width
//! byte per attribute, the weight rows at that width, the conditions (a
//! kind byte, then 10 bytes for a yes-sum threshold or 30 for a four-state
//! linear form), the postfix formula (3 bytes a node) and a CRC-32 of
//! everything before it.
//!
//! Checks run in a fixed order, so every damaged image gets the same error
//! everywhere: magic, header length, version, declared length (truncated or
//! trailing bytes), checksum, capacity (members, attributes, atoms, nodes
//! against [`crate::limits`]), widths, condition kinds, section layout,
//! weight sums, node kinds, then the rule itself (indices in range, linear
//! forms monotone, the formula one tree within the depth limit). A device build (no `alloc`) holds 64 members, so an
//! image of a larger rule is refused with
//! [`Error::TooManyMembers`] inside [`ImageError::Rule`].
//!
//! Time: O(image length) for the checksum (bitwise CRC, about 8 steps a byte)
//! plus O(members * attributes) to decode. Space: no heap; `load` keeps the
//! parsed conditions and nodes on the stack (about 3.5 KiB) and builds a
//! stand-in rule for the rule checks, besides the returned `Rule`. Lengths are computed in `usize` from sizes that were first
//! checked against the limits, so they cannot overflow.

//!
//! Files: `encode.rs` (rule to bytes), `load.rs` (the checks, in order, and
//! loading into caller memory), `inspect.rs` (what an image holds),
//! `crc.rs` (the table-free CRC-32).

use core::fmt;

use crate::model::atom::Condition;
use crate::model::error::Error;
use crate::model::limits::{MAX_ATOMS, MAX_ATTRIBUTES, MAX_NODES};

mod crc;
mod encode;
mod inspect;
mod load;
mod roster;
#[cfg(test)]
mod tests;

pub use crc::crc32;
#[cfg(feature = "alloc")]
pub use encode::{encode, encode_named};
pub use encode::{encode_into, encode_named_into, encoded_len, encoded_len_named};
pub use inspect::{inspect, ImageInfo};
pub use load::{load, load_with, load_with_roster, weights_needed};
pub use roster::{roster, roster_digest, Names, Roster, RosterInfo, DIGEST_LEN};

/// The first four bytes of every image. The high first byte catches
/// transfers that strip the eighth bit; the rest reads "CLR".
pub const MAGIC: [u8; 4] = [0x89, b'C', b'L', b'R'];

/// The format version this build writes. It also reads version 1
/// ([`OLDEST_VERSION`]), which has no roster section.
pub const FORMAT_VERSION: u16 = 2;

/// The oldest format version this build reads.
pub const OLDEST_VERSION: u16 = 1;

/// Longest member or rule name an image stores, in bytes of UTF-8.
pub const MAX_NAME_LEN: usize = 255;

/// Bytes in the fixed header.
pub const HEADER_LEN: usize = 20;

/// Bytes of the trailing checksum.
pub const CHECKSUM_LEN: usize = 4;

/// Bytes of an encoded yes-sum threshold: kind (u8), attribute (u16), quota (u64).
pub const THRESHOLD_LEN: usize = 11;

/// Bytes of an encoded four-state linear condition: kind (u8), attribute
/// (u16), yes, no and abstain coefficients (i32 each), bound (i128).
pub const LINEAR_LEN: usize = 31;

/// Bytes of one encoded formula node: kind (u8) and argument (u16).
pub const NODE_LEN: usize = 3;

/// Condition kinds as stored.
const KIND_THRESHOLD: u8 = 0;
const KIND_LINEAR: u8 = 1;

/// Node kinds as stored.
const KIND_ATOM: u8 = 0;
const KIND_ALL: u8 = 1;
const KIND_ANY: u8 = 2;

/// Bytes of the roster section besides the names: the digest and the
/// names' length (u32).
pub const ROSTER_LEN: usize = roster::DIGEST_LEN + 4;

/// The longest image any build can write (65,535 members, every limit
/// reached, 8-byte weights, every name of the longest length). Readers of
/// files and streams read at most one byte more, so a huge or endless input
/// (`/dev/zero`) is refused without being read whole.
pub const MAX_IMAGE_LEN: usize = HEADER_LEN
    + MAX_ATTRIBUTES * (1 + 65_535 * 8)
    + MAX_ATOMS * LINEAR_LEN
    + MAX_NODES * NODE_LEN
    + ROSTER_LEN
    + 65_536 * (1 + MAX_NAME_LEN)
    + CHECKSUM_LEN;
// The header stores the length as a u32.
const _: () = assert!(MAX_IMAGE_LEN <= u32::MAX as usize);

/// Why an image cannot be loaded or written.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
#[allow(missing_docs)] // field names say what they hold
pub enum ImageError {
    /// The data does not start with [`MAGIC`]: not a rule image.
    BadMagic,
    /// The data is shorter than the header or than the length the header declares.
    Truncated { needed: usize, len: usize },
    /// A format version this build does not read.
    UnsupportedVersion { found: u16, supported: u16 },
    /// The data is longer than the length the header declares.
    TrailingBytes { declared: usize, len: usize },
    /// The stored CRC-32 differs from the one computed over the image.
    ChecksumMismatch { stored: u32, computed: u32 },
    /// An attribute's weight width is not 1, 2, 4 or 8 bytes.
    BadWidth { attribute: usize, width: u8 },
    /// The declared length does not match the sections the header and the
    /// widths describe.
    LayoutMismatch { declared: usize, expected: usize },
    /// A formula node has a kind other than atom (0), all (1) or any (2).
    BadNodeKind { node: usize, kind: u8 },
    /// A condition has a kind other than threshold (0) or linear (1).
    BadConditionKind { atom: usize, kind: u8 },
    /// The decoded rule is invalid: sizes beyond capacity, an index out of
    /// range, a formula that is not one tree, a weight sum over `u64::MAX`,
    /// a linear condition that is not monotone.
    Rule(Error),
    /// A caller buffer (weights for [`load`], bytes for [`encode_into`]) is too small.
    BufferTooSmall { needed: usize, given: usize },
    /// The names of a roster section do not fill it exactly, are not
    /// UTF-8, are longer than [`MAX_NAME_LEN`] bytes, or (when writing) are
    /// not one per member.
    BadNames { member: usize },
    /// The roster digest does not match the names and weights the image holds.
    RosterMismatch,
}

impl fmt::Display for ImageError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        use ImageError::*;
        match *self {
            BadMagic => write!(f, "not a clout rule image (the first bytes are not \\x89CLR)"),
            Truncated { needed, len } => write!(
                f,
                "image truncated: {len} bytes, {needed} needed; copy the whole file again"
            ),
            UnsupportedVersion { found, supported } => write!(
                f,
                "image format version {found} is not supported (this build reads versions {OLDEST_VERSION} \
                 to {supported}); compile the rule again with this version"
            ),
            TrailingBytes { declared, len } => write!(
                f,
                "image has {len} bytes but declares {declared}; extra bytes follow the image"
            ),
            ChecksumMismatch { stored, computed } => write!(
                f,
                "image damaged: stored checksum {stored:#010x}, computed {computed:#010x}"
            ),
            BadWidth { attribute, width } => write!(
                f,
                "attribute {attribute} has weight width {width}; widths are 1, 2, 4 or 8 bytes"
            ),
            LayoutMismatch { declared, expected } => write!(
                f,
                "image declares {declared} bytes but its sections take {expected}"
            ),
            BadNodeKind { node, kind } => write!(
                f,
                "formula node {node} has kind {kind}; kinds are 0 (atom), 1 (all) and 2 (any)"
            ),
            BadConditionKind { atom, kind } => write!(
                f,
                "condition {atom} has kind {kind}; kinds are 0 (threshold) and 1 (linear)"
            ),
            Rule(e) => write!(f, "image holds an invalid rule: {e}"),
            BufferTooSmall { needed, given } => {
                write!(f, "buffer of {given} elements is too small, {needed} needed")
            }
            BadNames { member } => write!(
                f,
                "the roster's names are malformed at entry {member} (not UTF-8, longer than \
                 {MAX_NAME_LEN} bytes, not one per member, or not filling the section)"
            ),
            RosterMismatch => write!(
                f,
                "the roster digest does not match the image's names and weights"
            ),
        }
    }
}

impl core::error::Error for ImageError {}

impl From<Error> for ImageError {
    fn from(e: Error) -> Self {
        ImageError::Rule(e)
    }
}

/// Bytes of one stored condition.
fn condition_len(c: &Condition) -> usize {
    match c {
        Condition::Yes(_) => THRESHOLD_LEN,
        Condition::Linear(_) => LINEAR_LEN,
    }
}
