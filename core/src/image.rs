//! Rule images: a compact, versioned, little-endian binary form of one
//! compiled [`Rule`], for devices that load a fixed rule from flash or a file.
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

use core::fmt;

use crate::limits::{MAX_ATOMS, MAX_ATTRIBUTES, MAX_MEMBERS, MAX_NODES, MAX_TOTAL};
use crate::{Atom, Condition, Error, Linear, Node, Rule};

/// The first four bytes of every image. The high first byte catches
/// transfers that strip the eighth bit; the rest reads "CLR".
pub const MAGIC: [u8; 4] = [0x89, b'C', b'L', b'R'];

/// The format version this build writes and reads.
pub const FORMAT_VERSION: u16 = 1;

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

/// The longest image any build can write (65,535 members, every limit
/// reached, 8-byte weights).
const MAX_IMAGE_LEN: usize = HEADER_LEN
    + MAX_ATTRIBUTES * (1 + 65_535 * 8)
    + MAX_ATOMS * LINEAR_LEN
    + MAX_NODES * NODE_LEN
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
                "image format version {found} is not supported (this build reads version {supported}); \
                 compile the rule again with this version"
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
        }
    }
}

impl core::error::Error for ImageError {}

impl From<Error> for ImageError {
    fn from(e: Error) -> Self {
        ImageError::Rule(e)
    }
}

/// CRC-32 as used by zlib, PNG and Ethernet (reflected, polynomial
/// 0xEDB88320, initial and final XOR 0xFFFFFFFF), bit by bit with no table:
/// a device pays about 8 steps a byte and no 1 KiB table in flash.
pub fn crc32(bytes: &[u8]) -> u32 {
    let mut crc = !0u32;
    for &b in bytes {
        crc ^= u32::from(b);
        for _ in 0..8 {
            let low_bit = (crc & 1).wrapping_neg();
            crc = (crc >> 1) ^ (0xEDB8_8320 & low_bit);
        }
    }
    !crc
}

/// What an image holds and whether it is intact, as far as its header can
/// be read.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ImageInfo {
    /// Format version.
    pub version: u16,
    /// Length the header declares, checksum included.
    pub declared_len: usize,
    /// Length of the data given.
    pub len: usize,
    /// Members.
    pub members: usize,
    /// Weight attributes.
    pub attributes: usize,
    /// Atoms (threshold conditions).
    pub atoms: usize,
    /// Formula nodes.
    pub nodes: usize,
    /// The stored checksum, when the data is long enough to hold it.
    pub stored_checksum: Option<u32>,
    /// The checksum computed over the declared image, when the data holds it.
    pub computed_checksum: Option<u32>,
    /// `Ok` when the image passes every check [`load`] makes.
    pub verdict: Result<(), ImageError>,
}

impl ImageInfo {
    /// Whether the image passes every check.
    pub fn is_intact(&self) -> bool {
        self.verdict.is_ok()
    }
}

impl fmt::Display for ImageInfo {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(
            f,
            "clout rule image, format version {}, {} bytes declared, {} given",
            self.version, self.declared_len, self.len
        )?;
        writeln!(
            f,
            "{} members, {} weight attributes, {} conditions, {} formula nodes",
            self.members, self.attributes, self.atoms, self.nodes
        )?;
        match (self.stored_checksum, self.computed_checksum) {
            (Some(s), Some(c)) if s == c => writeln!(f, "checksum {s:#010x} (CRC-32) matches")?,
            (Some(s), Some(c)) => writeln!(f, "checksum {s:#010x} (CRC-32) stored, {c:#010x} computed")?,
            _ => writeln!(f, "checksum not present")?,
        }
        match self.verdict {
            Ok(()) => write!(f, "intact: every check passed"),
            Err(e) => write!(f, "damaged: {e}"),
        }
    }
}

/// Header fields, read but not yet trusted.
#[derive(Clone, Copy)]
struct Header {
    version: u16,
    attributes: usize,
    declared_len: usize,
    members: usize,
    atoms: usize,
    nodes: usize,
}

fn u16_at(bytes: &[u8], at: usize) -> u16 {
    let mut b = [0u8; 2];
    if let Some(src) = bytes.get(at..at.saturating_add(2)) {
        b.copy_from_slice(src);
    }
    u16::from_le_bytes(b)
}

fn u32_at(bytes: &[u8], at: usize) -> u32 {
    let mut b = [0u8; 4];
    if let Some(src) = bytes.get(at..at.saturating_add(4)) {
        b.copy_from_slice(src);
    }
    u32::from_le_bytes(b)
}

fn i128_at(bytes: &[u8], at: usize) -> i128 {
    let mut b = [0u8; 16];
    if let Some(src) = bytes.get(at..at.saturating_add(16)) {
        b.copy_from_slice(src);
    }
    i128::from_le_bytes(b)
}

/// An unsigned little-endian integer of `width <= 8` bytes at `at` (0 beyond the data).
fn uint_at(bytes: &[u8], at: usize, width: usize) -> u64 {
    let mut b = [0u8; 8];
    if let (Some(src), Some(dst)) = (bytes.get(at..at.saturating_add(width)), b.get_mut(..width)) {
        dst.copy_from_slice(src);
    }
    u64::from_le_bytes(b)
}

/// Magic, header length and version: enough to trust the header's layout.
fn read_header(bytes: &[u8]) -> Result<Header, ImageError> {
    let prefix = bytes.len().min(MAGIC.len());
    if bytes.get(..prefix) != MAGIC.get(..prefix) {
        return Err(ImageError::BadMagic);
    }
    if bytes.len() < HEADER_LEN {
        return Err(ImageError::Truncated {
            needed: HEADER_LEN,
            len: bytes.len(),
        });
    }
    let version = u16_at(bytes, 4);
    if version != FORMAT_VERSION {
        return Err(ImageError::UnsupportedVersion {
            found: version,
            supported: FORMAT_VERSION,
        });
    }
    Ok(Header {
        version,
        attributes: usize::from(u16_at(bytes, 6)),
        declared_len: u32_at(bytes, 8) as usize,
        members: u32_at(bytes, 12) as usize,
        atoms: usize::from(u16_at(bytes, 16)),
        nodes: usize::from(u16_at(bytes, 18)),
    })
}

/// The declared length against the data, then the checksum.
fn check_length_and_checksum(bytes: &[u8], h: &Header) -> Result<(), ImageError> {
    if bytes.len() < h.declared_len {
        return Err(ImageError::Truncated {
            needed: h.declared_len,
            len: bytes.len(),
        });
    }
    if bytes.len() > h.declared_len {
        return Err(ImageError::TrailingBytes {
            declared: h.declared_len,
            len: bytes.len(),
        });
    }
    let Some(body) = h
        .declared_len
        .checked_sub(CHECKSUM_LEN)
        .filter(|&b| b >= HEADER_LEN)
    else {
        return Err(ImageError::LayoutMismatch {
            declared: h.declared_len,
            expected: HEADER_LEN + CHECKSUM_LEN,
        });
    };
    let stored = u32_at(bytes, body);
    // body < declared_len == bytes.len(), checked above.
    let computed = crc32(bytes.get(..body).unwrap_or(&[]));
    if stored != computed {
        return Err(ImageError::ChecksumMismatch { stored, computed });
    }
    Ok(())
}

fn check_capacity(h: &Header) -> Result<(), Error> {
    if h.members == 0 {
        return Err(Error::NoMembers);
    }
    if h.members > MAX_MEMBERS {
        return Err(Error::TooManyMembers {
            members: h.members,
            limit: MAX_MEMBERS,
        });
    }
    if h.attributes > MAX_ATTRIBUTES {
        return Err(Error::TooManyAttributes {
            attributes: h.attributes,
            limit: MAX_ATTRIBUTES,
        });
    }
    if h.atoms > MAX_ATOMS {
        return Err(Error::TooManyAtoms {
            atoms: h.atoms,
            limit: MAX_ATOMS,
        });
    }
    if h.nodes > MAX_NODES {
        return Err(Error::TooManyNodes {
            nodes: h.nodes,
            limit: MAX_NODES,
        });
    }
    Ok(())
}

/// A fully checked image: where each weight row starts, and the parsed
/// conditions and formula.
struct Checked<'a> {
    bytes: &'a [u8],
    members: usize,
    attributes: usize,
    /// Byte offset of each attribute's weight row and its width.
    rows: [(usize, usize); MAX_ATTRIBUTES],
    conditions: heapless::Vec<Condition, MAX_ATOMS>,
    formula: heapless::Vec<Node, MAX_NODES>,
}

/// The condition stored at `at`, or its unknown kind.
fn condition_at(bytes: &[u8], at: usize) -> Result<Condition, u8> {
    let field = |offset: usize| at.saturating_add(offset);
    let attribute = u16_at(bytes, field(1));
    match bytes.get(at).copied().unwrap_or(u8::MAX) {
        KIND_THRESHOLD => Ok(Condition::Yes(Atom {
            attribute,
            quota: uint_at(bytes, field(3), 8),
        })),
        KIND_LINEAR => Ok(Condition::Linear(Linear {
            attribute,
            yes: u32_at(bytes, field(3)) as i32,
            no: u32_at(bytes, field(7)) as i32,
            abstain: u32_at(bytes, field(11)) as i32,
            bound: i128_at(bytes, field(15)),
        })),
        kind => Err(kind),
    }
}

fn condition_len(c: &Condition) -> usize {
    match c {
        Condition::Yes(_) => THRESHOLD_LEN,
        Condition::Linear(_) => LINEAR_LEN,
    }
}

impl Checked<'_> {
    fn weight(&self, attribute: usize, member: usize) -> u64 {
        // Rows were laid out inside the checked length, so offsets stay far
        // below usize::MAX; a wrong index reads as 0 (rows beyond `attributes` are (0, 0)).
        let (at, width) = self.rows.get(attribute).copied().unwrap_or((0, 0));
        uint_at(self.bytes, at.saturating_add(member.saturating_mul(width)), width)
    }
}

/// Every check [`load`] makes, without a weight buffer.
fn check(bytes: &[u8]) -> Result<Checked<'_>, ImageError> {
    let h = read_header(bytes)?;
    check_length_and_checksum(bytes, &h)?;
    check_capacity(&h)?;
    let (n, attributes) = (h.members, h.attributes);

    // Widths, then the section layout they imply.
    // Lengths below are sums of at most a few million (limits checked above)
    // and the declared length (< 2^32); saturation cannot occur.
    let widths_end = HEADER_LEN.saturating_add(attributes);
    let body_end = h.declared_len.saturating_sub(CHECKSUM_LEN);
    if widths_end > body_end {
        return Err(ImageError::LayoutMismatch {
            declared: h.declared_len,
            expected: widths_end.saturating_add(CHECKSUM_LEN),
        });
    }
    let mut rows = [(0usize, 0usize); MAX_ATTRIBUTES];
    let mut at = widths_end;
    for (a, row) in rows.iter_mut().enumerate().take(attributes) {
        let width = bytes.get(HEADER_LEN.saturating_add(a)).copied().unwrap_or(0);
        if !matches!(width, 1 | 2 | 4 | 8) {
            return Err(ImageError::BadWidth { attribute: a, width });
        }
        *row = (at, usize::from(width));
        at = at.saturating_add(n.saturating_mul(usize::from(width)));
    }
    // Condition records differ in length by kind, so the layout is known
    // only after reading each kind (as far as the declared length reaches).
    let mut conditions = heapless::Vec::new();
    for k in 0..h.atoms {
        if at >= body_end {
            let rest = (h.atoms.saturating_sub(k))
                .saturating_mul(THRESHOLD_LEN)
                .saturating_add(h.nodes.saturating_mul(NODE_LEN))
                .saturating_add(CHECKSUM_LEN);
            return Err(ImageError::LayoutMismatch {
                declared: h.declared_len,
                expected: at.saturating_add(rest),
            });
        }
        let c = condition_at(bytes, at).map_err(|kind| ImageError::BadConditionKind { atom: k, kind })?;
        at = at.saturating_add(condition_len(&c));
        // Capacity was checked against MAX_ATOMS above.
        let _ = conditions.push(c);
    }
    let nodes_at = at;
    let expected = nodes_at
        .saturating_add(h.nodes.saturating_mul(NODE_LEN))
        .saturating_add(CHECKSUM_LEN);
    if expected != h.declared_len {
        return Err(ImageError::LayoutMismatch {
            declared: h.declared_len,
            expected,
        });
    }

    let mut checked = Checked {
        bytes,
        members: n,
        attributes,
        rows,
        conditions,
        formula: heapless::Vec::new(),
    };
    for a in 0..attributes {
        (0..n)
            .try_fold(0u64, |sum, i| sum.checked_add(checked.weight(a, i)))
            .filter(|&t| t <= MAX_TOTAL)
            .ok_or(Error::WeightSumOverflow { attribute: a })?;
    }
    for k in 0..h.nodes {
        let at = nodes_at.saturating_add(k.saturating_mul(NODE_LEN));
        let arg = u16_at(bytes, at.saturating_add(1));
        // The layout check put every node inside the body.
        let node = match bytes.get(at).copied().unwrap_or(u8::MAX) {
            KIND_ATOM => Node::Atom(arg),
            KIND_ALL => Node::All(arg),
            KIND_ANY => Node::Any(arg),
            kind => return Err(ImageError::BadNodeKind { node: k, kind }),
        };
        let _ = checked.formula.push(node);
    }
    // The rule's own checks (attributes in range, linear forms monotone,
    // formula one tree over existing atoms, depth) do not depend on the
    // weights or on the member count, so a one-member rule with a zero row
    // per attribute runs them without a buffer of the real size.
    let zeros = [0u64; MAX_ATTRIBUTES];
    let stand_in = zeros.get(..attributes).unwrap_or(&[]);
    Rule::with_conditions(1, stand_in, &checked.conditions, &checked.formula)?;
    Ok(checked)
}

/// How many `u64`s [`load`] needs for this image's weights
/// (members * attributes), after every check.
pub fn weights_needed(bytes: &[u8]) -> Result<usize, ImageError> {
    let c = check(bytes)?;
    // At most 65,535 * 64 after check().
    Ok(c.members.saturating_mul(c.attributes))
}

/// Checks `bytes` completely, writes its weight table into `weights` and
/// returns the rule over it.
///
/// `weights` must hold at least [`weights_needed`] elements; only that
/// prefix is used. Nothing is written to `weights` unless the image passes
/// every check.
pub fn load<'w>(bytes: &[u8], weights: &'w mut [u64]) -> Result<Rule<&'w [u64]>, ImageError> {
    load_with(bytes, weights, |table| table)
}

/// [`load`], with the filled weight table (exactly [`weights_needed`]
/// elements) handed to `wrap`, whose result becomes the rule's weight type:
/// for a handle that must own its table without a lifetime, such as the C
/// ABI's.
pub fn load_with<'w, W: AsRef<[u64]>>(
    bytes: &[u8],
    weights: &'w mut [u64],
    wrap: impl FnOnce(&'w [u64]) -> W,
) -> Result<Rule<W>, ImageError> {
    let c = check(bytes)?;
    let needed = c.members.saturating_mul(c.attributes);
    let given = weights.len();
    let table = weights
        .get_mut(..needed)
        .ok_or(ImageError::BufferTooSmall { needed, given })?;
    // check() refused zero members, so the row length is never 0.
    for (a, row) in table.chunks_exact_mut(c.members.max(1)).enumerate() {
        for (i, w) in row.iter_mut().enumerate() {
            *w = c.weight(a, i);
        }
    }
    let table: &'w [u64] = table;
    Ok(Rule::with_conditions(
        c.members,
        wrap(table),
        &c.conditions,
        &c.formula,
    )?)
}

/// What the image holds and whether it is intact. Fails only when not even
/// the header can be read (not an image, too short, unknown version).
pub fn inspect(bytes: &[u8]) -> Result<ImageInfo, ImageError> {
    let h = read_header(bytes)?;
    let body = h
        .declared_len
        .checked_sub(CHECKSUM_LEN)
        .filter(|&b| b >= HEADER_LEN && bytes.len() >= h.declared_len);
    let (stored, computed) = match body.and_then(|b| bytes.get(..b)) {
        Some(covered) => (Some(u32_at(bytes, covered.len())), Some(crc32(covered))),
        None => (None, None),
    };
    Ok(ImageInfo {
        version: h.version,
        declared_len: h.declared_len,
        len: bytes.len(),
        members: h.members,
        attributes: h.attributes,
        atoms: h.atoms,
        nodes: h.nodes,
        stored_checksum: stored,
        computed_checksum: computed,
        verdict: check(bytes).map(|_| ()),
    })
}

/// Bytes needed to store one weight of attribute `a` (1, 2, 4 or 8).
fn width_of<W: AsRef<[u64]>>(rule: &Rule<W>, attribute: usize) -> usize {
    let max = rule
        .attribute_weights(attribute)
        .iter()
        .copied()
        .max()
        .unwrap_or(0);
    match max {
        0..=0xFF => 1,
        0x100..=0xFFFF => 2,
        0x1_0000..=0xFFFF_FFFF => 4,
        _ => 8,
    }
}

/// Length in bytes of `rule`'s image.
pub fn encoded_len<W: AsRef<[u64]>>(rule: &Rule<W>) -> usize {
    // A valid rule's image is at most MAX_IMAGE_LEN (< 2^32) bytes: no saturation.
    let rows: usize = (0..rule.attributes())
        .map(|a| rule.members().saturating_mul(width_of(rule, a)).saturating_add(1))
        .fold(0, usize::saturating_add);
    let conditions: usize = (0..rule.atoms().len())
        .filter_map(|i| rule.condition(i))
        .map(|c| condition_len(&c))
        .fold(0, usize::saturating_add);
    HEADER_LEN
        .saturating_add(rows)
        .saturating_add(conditions)
        .saturating_add(rule.formula().len().saturating_mul(NODE_LEN))
        .saturating_add(CHECKSUM_LEN)
}

/// Writes `rule`'s image into the front of `out` and returns its length.
///
/// Each attribute's weights are stored at the smallest width (1, 2, 4 or 8
/// bytes) that holds its largest weight.
pub fn encode_into<W: AsRef<[u64]>>(rule: &Rule<W>, out: &mut [u8]) -> Result<usize, ImageError> {
    let len = encoded_len(rule);
    let given = out.len();
    let out = out
        .get_mut(..len)
        .ok_or(ImageError::BufferTooSmall { needed: len, given })?;
    let mut w = Writer { out, at: 0 };
    // Every size below is bounded by the limits a Rule was checked against,
    // and MAX_IMAGE_LEN fits a u32, so none of these casts truncates.
    w.put(&MAGIC);
    w.put(&FORMAT_VERSION.to_le_bytes());
    w.put(&(rule.attributes() as u16).to_le_bytes());
    w.put(&(len as u32).to_le_bytes());
    w.put(&(rule.members() as u32).to_le_bytes());
    w.put(&(rule.atoms().len() as u16).to_le_bytes());
    w.put(&(rule.formula().len() as u16).to_le_bytes());
    for a in 0..rule.attributes() {
        w.put(&[width_of(rule, a) as u8]);
    }
    for a in 0..rule.attributes() {
        let width = width_of(rule, a);
        for &weight in rule.attribute_weights(a) {
            w.put(weight.to_le_bytes().get(..width).unwrap_or(&[]));
        }
    }
    for condition in (0..rule.atoms().len()).filter_map(|i| rule.condition(i)) {
        match condition {
            Condition::Yes(atom) => {
                w.put(&[KIND_THRESHOLD]);
                w.put(&atom.attribute.to_le_bytes());
                w.put(&atom.quota.to_le_bytes());
            }
            Condition::Linear(l) => {
                w.put(&[KIND_LINEAR]);
                w.put(&l.attribute.to_le_bytes());
                for coefficient in [l.yes, l.no, l.abstain] {
                    w.put(&coefficient.to_le_bytes());
                }
                w.put(&l.bound.to_le_bytes());
            }
        }
    }
    for node in rule.formula() {
        let (kind, arg) = match *node {
            Node::Atom(i) => (KIND_ATOM, i),
            Node::All(k) => (KIND_ALL, k),
            Node::Any(k) => (KIND_ANY, k),
        };
        w.put(&[kind]);
        w.put(&arg.to_le_bytes());
    }
    let crc = crc32(w.out.get(..w.at).unwrap_or(&[]));
    w.put(&crc.to_le_bytes());
    debug_assert_eq!(w.at, len);
    Ok(len)
}

/// `rule`'s image in a new vector.
#[cfg(feature = "alloc")]
pub fn encode<W: AsRef<[u64]>>(rule: &Rule<W>) -> alloc::vec::Vec<u8> {
    let mut out = alloc::vec![0u8; encoded_len(rule)];
    // The buffer has exactly encoded_len bytes, so this cannot fail.
    let _ = encode_into(rule, &mut out);
    out
}

/// Appends bytes to a buffer whose length was computed beforehand.
struct Writer<'a> {
    out: &'a mut [u8],
    at: usize,
}

impl Writer<'_> {
    fn put(&mut self, bytes: &[u8]) {
        let end = self.at.saturating_add(bytes.len());
        if let Some(dst) = self.out.get_mut(self.at..end) {
            dst.copy_from_slice(bytes);
        }
        self.at = end;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::{critical, decide, decide_ballot, Ballot, Coalition, Vote};
    use proptest::prelude::*;

    /// [12; 4,4,4,2,2,1] byte by byte, as docs/image-format.md lays it out.
    /// The CRC was computed independently with Python's `zlib.crc32`.
    const EEC_IMAGE: [u8; 45] = [
        0x89, b'C', b'L', b'R', // magic
        1, 0, // version
        1, 0, // attributes
        45, 0, 0, 0, // length
        6, 0, 0, 0, // members
        1, 0, // atoms
        1, 0, // nodes
        1, // width of attribute 0
        4, 4, 4, 2, 2, 1, // weights
        0, 0, 0, 12, 0, 0, 0, 0, 0, 0, 0, // condition 0: threshold, attribute 0, quota 12
        0, 0, 0, // node 0: atom 0
        0xa0, 0x48, 0xa3, 0x7c, // CRC-32
    ];

    fn eec() -> Rule<[u64; 6]> {
        Rule::weighted(12, [4u64, 4, 4, 2, 2, 1]).unwrap()
    }

    fn encoded<W: AsRef<[u64]>>(rule: &Rule<W>) -> Vec<u8> {
        let mut out = vec![0u8; encoded_len(rule)];
        assert_eq!(encode_into(rule, &mut out), Ok(out.len()));
        out
    }

    /// Recomputes the checksum after a deliberate change.
    fn reseal(image: &mut [u8]) {
        let body = image.len() - CHECKSUM_LEN;
        let crc = crc32(&image[..body]);
        image[body..].copy_from_slice(&crc.to_le_bytes());
    }

    fn load_err(image: &[u8]) -> ImageError {
        let mut w = [0u64; 256];
        let e = load(image, &mut w).unwrap_err();
        assert_eq!(weights_needed(image), Err(e), "weights_needed and load disagree");
        match inspect(image) {
            Ok(info) => assert_eq!(info.verdict, Err(e), "inspect and load disagree"),
            Err(header) => assert_eq!(header, e, "inspect and load disagree"),
        }
        e
    }

    #[test]
    fn crc32_check_value() {
        // Williams 1993, A Painless Guide to CRC Error Detection Algorithms,
        // the CRC-32 model's check value over "123456789".
        assert_eq!(crc32(b"123456789"), 0xCBF4_3926);
        assert_eq!(crc32(b""), 0);
    }

    #[test]
    fn encodes_the_documented_bytes() {
        assert_eq!(encoded(&eec()), EEC_IMAGE);
        assert_eq!(encoded_len(&eec()), EEC_IMAGE.len());
    }

    #[cfg(feature = "alloc")]
    #[test]
    fn encode_matches_encode_into() {
        assert_eq!(encode(&eec()), EEC_IMAGE);
    }

    #[test]
    fn loads_and_decides_like_the_source() {
        let mut w = [0u64; 6];
        assert_eq!(weights_needed(&EEC_IMAGE), Ok(6));
        let rule = load(&EEC_IMAGE, &mut w).unwrap();
        assert_eq!(rule.weight_table(), &[4, 4, 4, 2, 2, 1]);
        assert_eq!(rule.single_threshold(), Some((0, 12)));
        let yes = Coalition::<1>::from_members(&[0, 1, 3, 4]).unwrap();
        assert!(decide(&rule, &yes).unwrap().passed);
    }

    #[test]
    fn short_buffers_are_errors() {
        let mut w = [7u64; 5];
        assert_eq!(
            load(&EEC_IMAGE, &mut w).unwrap_err(),
            ImageError::BufferTooSmall { needed: 6, given: 5 }
        );
        assert_eq!(w, [7; 5], "nothing written on failure");
        let mut out = [0u8; 44];
        assert_eq!(
            encode_into(&eec(), &mut out),
            Err(ImageError::BufferTooSmall {
                needed: 45,
                given: 44
            })
        );
    }

    #[test]
    fn every_prefix_is_truncated() {
        for len in 0..EEC_IMAGE.len() {
            let needed = if len < HEADER_LEN {
                HEADER_LEN
            } else {
                EEC_IMAGE.len()
            };
            assert_eq!(
                load_err(&EEC_IMAGE[..len]),
                ImageError::Truncated { needed, len },
                "prefix of {len} bytes"
            );
        }
    }

    #[test]
    fn every_single_bit_flip_is_rejected() {
        for at in 0..EEC_IMAGE.len() {
            for bit in 0..8 {
                let mut image = EEC_IMAGE;
                image[at] ^= 1 << bit;
                let e = load_err(&image);
                let expected_kind = match at {
                    0..=3 => matches!(e, ImageError::BadMagic),
                    4..=5 => matches!(e, ImageError::UnsupportedVersion { .. }),
                    8..=11 => matches!(e, ImageError::Truncated { .. } | ImageError::TrailingBytes { .. }),
                    _ => matches!(e, ImageError::ChecksumMismatch { .. }),
                };
                assert!(expected_kind, "byte {at} bit {bit}: {e:?}");
            }
        }
    }

    #[test]
    fn each_damage_has_its_own_error() {
        let with = |at: usize, bytes: &[u8]| {
            let mut image = EEC_IMAGE.to_vec();
            image[at..at + bytes.len()].copy_from_slice(bytes);
            reseal(&mut image);
            load_err(&image)
        };
        let mut trailing = EEC_IMAGE.to_vec();
        trailing.push(0);
        assert_eq!(
            load_err(&trailing),
            ImageError::TrailingBytes {
                declared: 45,
                len: 46
            }
        );
        assert_eq!(
            with(4, &[2, 0]),
            ImageError::UnsupportedVersion {
                found: 2,
                supported: 1
            }
        );
        assert_eq!(with(12, &[0; 4]), ImageError::Rule(Error::NoMembers));
        let too_many = (MAX_MEMBERS as u32 + 1).to_le_bytes();
        assert_eq!(
            with(12, &too_many),
            ImageError::Rule(Error::TooManyMembers {
                members: MAX_MEMBERS + 1,
                limit: MAX_MEMBERS
            })
        );
        assert_eq!(
            with(6, &[65, 0]),
            ImageError::Rule(Error::TooManyAttributes {
                attributes: 65,
                limit: 64
            })
        );
        assert_eq!(
            with(16, &[65, 0]),
            ImageError::Rule(Error::TooManyAtoms { atoms: 65, limit: 64 })
        );
        assert_eq!(
            with(18, &[129, 0]),
            ImageError::Rule(Error::TooManyNodes {
                nodes: 129,
                limit: 128
            })
        );
        assert_eq!(
            with(20, &[3]),
            ImageError::BadWidth {
                attribute: 0,
                width: 3
            }
        );
        assert_eq!(
            with(20, &[2]),
            ImageError::LayoutMismatch {
                declared: 45,
                expected: 51
            }
        );
        assert_eq!(with(27, &[5]), ImageError::BadConditionKind { atom: 0, kind: 5 });
        assert_eq!(
            with(27, &[1]),
            ImageError::LayoutMismatch {
                declared: 45,
                expected: 65
            }
        );
        assert_eq!(with(38, &[3]), ImageError::BadNodeKind { node: 0, kind: 3 });
        assert_eq!(
            with(28, &[1]),
            ImageError::Rule(Error::UnknownAttribute {
                atom: 0,
                attribute: 1
            })
        );
        assert_eq!(
            with(39, &[1]),
            ImageError::Rule(Error::UnknownAtom { node: 0, atom: 1 })
        );
        assert_eq!(
            with(38, &[1, 1, 0]),
            ImageError::Rule(Error::MalformedFormula { node: 0 })
        );
        assert_eq!(
            with(38, &[1, 0, 0]),
            ImageError::Rule(Error::EmptyOperator { node: 0 })
        );
    }

    #[test]
    fn weight_sums_and_depth_are_checked() {
        // Two members of weight 2^40: stored at width 8; then raise one to
        // u64::MAX so the row no longer sums within 64 bits.
        let rule = Rule::weighted(1, [1u64 << 40, 1u64 << 40]).unwrap();
        let mut image = encoded(&rule);
        image[HEADER_LEN + 1..HEADER_LEN + 9].copy_from_slice(&u64::MAX.to_le_bytes());
        reseal(&mut image);
        assert_eq!(
            load_err(&image),
            ImageError::Rule(Error::WeightSumOverflow { attribute: 0 })
        );

        // The deepest formula allowed, then one level more.
        let mut f = [Node::All(1); crate::limits::MAX_DEPTH + 1];
        f[0] = Node::Atom(0);
        let deep = Rule::new(
            1,
            [1u64],
            &[Atom {
                attribute: 0,
                quota: 1,
            }],
            &f,
        )
        .unwrap();
        let mut image = encoded(&deep);
        let mut w = [0u64; 1];
        assert!(load(&image, &mut w).is_ok());
        let crc_at = image.len() - CHECKSUM_LEN;
        image.splice(crc_at..crc_at, [KIND_ALL, 1, 0]);
        let nodes = (f.len() as u16 + 1).to_le_bytes();
        image[18..20].copy_from_slice(&nodes);
        let len = (image.len() as u32).to_le_bytes();
        image[8..12].copy_from_slice(&len);
        reseal(&mut image);
        assert_eq!(
            load_err(&image),
            ImageError::Rule(Error::TooDeep {
                depth: crate::limits::MAX_DEPTH + 1,
                limit: crate::limits::MAX_DEPTH
            })
        );
    }

    /// A fictional majority of those present: more yes than no
    /// (`Y - N >= 1`), stored as a four-state linear condition.
    fn more_yes_than_no() -> Rule<[u64; 3]> {
        let l = Linear {
            attribute: 0,
            yes: 1,
            no: -1,
            abstain: 0,
            bound: 1,
        };
        Rule::with_conditions(3, [2u64, 1, 1], &[Condition::Linear(l)], &[Node::Atom(0)]).unwrap()
    }

    #[test]
    fn linear_conditions_round_trip() {
        let rule = more_yes_than_no();
        let image = encoded(&rule);
        assert_eq!(
            image.len(),
            HEADER_LEN + 1 + 3 + LINEAR_LEN + NODE_LEN + CHECKSUM_LEN
        );
        let mut w = [0u64; 3];
        let loaded = load(&image, &mut w).unwrap();
        assert_eq!(loaded.condition(0), rule.condition(0));
        assert_eq!(loaded.atoms(), rule.atoms());
        // Member 0 (weight 2) yes, member 1 (1) no, member 2 abstains: 2 - 1 >= 1.
        let votes = [Vote::Yes, Vote::No, Vote::Abstain];
        let ballot = Ballot::<1>::from_votes(&votes).unwrap();
        assert!(decide_ballot(&loaded, &ballot).unwrap().passed);

        // A no coefficient above the yes one is not monotone: refused even
        // with the checksum fixed.
        let mut damaged = image.clone();
        let no_at = HEADER_LEN + 1 + 3 + 1 + 2 + 4;
        damaged[no_at..no_at + 4].copy_from_slice(&5i32.to_le_bytes());
        reseal(&mut damaged);
        assert_eq!(load_err(&damaged), ImageError::Rule(Error::NonMonotone));
    }

    #[test]
    fn inspect_describes_contents_and_integrity() {
        let info = inspect(&EEC_IMAGE).unwrap();
        assert!(info.is_intact());
        assert_eq!(
            (info.members, info.attributes, info.atoms, info.nodes),
            (6, 1, 1, 1)
        );
        assert_eq!(
            std::format!("{info}"),
            "clout rule image, format version 1, 45 bytes declared, 45 given\n\
             6 members, 1 weight attributes, 1 conditions, 1 formula nodes\n\
             checksum 0x7ca348a0 (CRC-32) matches\n\
             intact: every check passed"
        );
        let mut damaged = EEC_IMAGE;
        damaged[25] = 9;
        let info = inspect(&damaged).unwrap();
        assert_eq!(info.computed_checksum, Some(crc32(&damaged[..41])));
        let text = std::format!("{info}");
        assert!(text.contains("(CRC-32) stored, 0x"), "{text}");
        assert!(
            text.contains("damaged: image damaged: stored checksum 0x7ca348a0"),
            "{text}"
        );
        assert!(matches!(info.verdict, Err(ImageError::ChecksumMismatch { .. })));
        assert_eq!(inspect(b"GIF89a").unwrap_err(), ImageError::BadMagic);
    }

    /// A formula tree, flattened to postfix.
    #[derive(Clone, Debug)]
    enum Tree {
        Leaf(u16),
        All(Vec<Tree>),
        Any(Vec<Tree>),
    }

    impl Tree {
        fn postfix(&self, out: &mut Vec<Node>) {
            match self {
                Tree::Leaf(i) => out.push(Node::Atom(*i)),
                Tree::All(ts) | Tree::Any(ts) => {
                    for t in ts {
                        t.postfix(out);
                    }
                    let k = ts.len() as u16;
                    out.push(if matches!(self, Tree::All(_)) {
                        Node::All(k)
                    } else {
                        Node::Any(k)
                    });
                }
            }
        }
    }

    fn trees(atoms: u16) -> impl Strategy<Value = Tree> {
        (0..atoms).prop_map(Tree::Leaf).prop_recursive(4, 20, 3, |inner| {
            prop_oneof![
                prop::collection::vec(inner.clone(), 1..4).prop_map(Tree::All),
                prop::collection::vec(inner, 1..4).prop_map(Tree::Any),
            ]
        })
    }

    /// Weights of every magnitude, so every storage width appears; small
    /// enough that 12 of them never overflow a u64 sum.
    fn weight() -> impl Strategy<Value = u64> {
        prop_oneof![
            0u64..=300,
            0u64..=70_000,
            0u64..=5_000_000_000,
            0u64..=(u64::MAX / 16)
        ]
    }

    /// A condition on `attribute`: a threshold, or (when `linear`) a
    /// four-state form made monotone (no and abstain coefficients at most yes).
    fn condition(attribute: u16, total: u64, q: u64, linear: Option<(i32, i32, i32)>) -> Condition {
        match linear {
            None => Condition::Yes(Atom {
                attribute,
                quota: q % (total + 2),
            }),
            Some((yes, no, abstain)) => Condition::Linear(Linear {
                attribute,
                yes,
                no: no.min(yes),
                abstain: abstain.min(yes),
                bound: i128::from(q % (total + 2)) - i128::from(total / 2),
            }),
        }
    }

    fn rules() -> impl Strategy<Value = Rule<Vec<u64>>> {
        (1usize..=12, 1usize..=3, 1u16..=4).prop_flat_map(|(n, attributes, atoms)| {
            let weights = prop::collection::vec(weight(), n * attributes);
            let linear = prop::option::of((0i32..4, -3i32..4, -3i32..4));
            let atom = (0..attributes as u16, any::<u64>(), linear);
            let atoms_s = prop::collection::vec(atom, atoms as usize);
            (weights, atoms_s, trees(atoms)).prop_map(move |(w, raw_atoms, tree)| {
                let conditions: Vec<Condition> = raw_atoms
                    .iter()
                    .map(|&(attribute, q, linear)| {
                        let total: u64 = w[usize::from(attribute) * n..][..n].iter().sum();
                        condition(attribute, total, q, linear)
                    })
                    .collect();
                let mut f = Vec::new();
                tree.postfix(&mut f);
                Rule::with_conditions(n, w, &conditions, &f).unwrap()
            })
        })
    }

    /// A four-state ballot of `n` members, two bits a member.
    fn ballot(n: usize, bits: u128) -> Ballot<1> {
        let votes: Vec<Vote> = (0..n)
            .map(|i| [Vote::Yes, Vote::No, Vote::Abstain, Vote::Absent][(bits >> (2 * i)) as usize & 3])
            .collect();
        Ballot::from_votes(&votes).unwrap()
    }

    proptest! {
        #[test]
        fn loaded_images_decide_like_their_source(rule in rules(), ballots in prop::collection::vec(any::<u128>(), 16)) {
            let image = encoded(&rule);
            let mut w = vec![0u64; weights_needed(&image).unwrap()];
            let loaded = load(&image, &mut w).unwrap();
            prop_assert_eq!(loaded.members(), rule.members());
            prop_assert_eq!(loaded.weight_table(), rule.weight_table());
            prop_assert_eq!(loaded.atoms(), rule.atoms());
            prop_assert_eq!(loaded.formula(), rule.formula());
            for i in 0..rule.atoms().len() {
                prop_assert_eq!(loaded.condition(i), rule.condition(i));
            }
            let mask = (1u64 << rule.members()) - 1;
            for bits in ballots {
                let yes = Coalition::<1>::from_words([bits as u64 & mask]);
                prop_assert_eq!(decide(&loaded, &yes), decide(&rule, &yes));
                prop_assert_eq!(critical(&loaded, &yes), critical(&rule, &yes));
                let four_state = ballot(rule.members(), bits);
                prop_assert_eq!(decide_ballot(&loaded, &four_state), decide_ballot(&rule, &four_state));
            }
        }

        #[test]
        fn any_changed_byte_is_rejected(rule in rules(), at in any::<prop::sample::Index>(), xor in 1u8..=255) {
            let mut image = encoded(&rule);
            let at = at.index(image.len());
            image[at] ^= xor;
            let mut w = vec![0u64; rule.members() * rule.attributes()];
            prop_assert!(load(&image, &mut w).is_err());
        }
    }
}
