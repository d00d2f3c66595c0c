//! Checking an image and loading it into caller memory.
//!
//! [`check`] runs every check in the order `docs/image-format.md` lists
//! (magic, header length, version, declared length, checksum, capacity,
//! widths, condition kinds, layout, weight sums, node kinds, the rule's own
//! checks); [`load_with`] writes the weights only after all of them pass.
//! Time O(image length); no heap, about 3.5 KiB of stack for the parsed
//! conditions and nodes. Offsets are `usize` sums of sizes first checked
//! against the limits, so they cannot overflow; weight sums are checked.

use super::crc::crc32;
use super::roster::{digest_of, split_names, DIGEST_LEN};
use super::{
    condition_len, ImageError, CHECKSUM_LEN, FORMAT_VERSION, HEADER_LEN, KIND_ALL, KIND_ANY, KIND_ATOM,
    KIND_LINEAR, KIND_THRESHOLD, MAGIC, NODE_LEN, OLDEST_VERSION, ROSTER_LEN, THRESHOLD_LEN,
};
use crate::model::atom::{Atom, Condition, Linear};
use crate::model::error::Error;
use crate::model::limits::{MAX_ATOMS, MAX_ATTRIBUTES, MAX_MEMBERS, MAX_NODES, MAX_TOTAL};
use crate::model::rule::{Node, Rule};

/// Header fields, read but not yet trusted.
#[derive(Clone, Copy)]
pub(super) struct Header {
    pub version: u16,
    pub attributes: usize,
    pub declared_len: usize,
    pub members: usize,
    pub atoms: usize,
    pub nodes: usize,
}

fn u16_at(bytes: &[u8], at: usize) -> u16 {
    let mut b = [0u8; 2];
    if let Some(src) = bytes.get(at..at.saturating_add(2)) {
        b.copy_from_slice(src);
    }
    u16::from_le_bytes(b)
}

pub(super) fn u32_at(bytes: &[u8], at: usize) -> u32 {
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
pub(super) fn read_header(bytes: &[u8]) -> Result<Header, ImageError> {
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
    if !(OLDEST_VERSION..=FORMAT_VERSION).contains(&version) {
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
pub(super) struct Checked<'a> {
    bytes: &'a [u8],
    pub members: usize,
    attributes: usize,
    /// Byte offset of each attribute's weight row and its width.
    rows: [(usize, usize); MAX_ATTRIBUTES],
    conditions: heapless::Vec<Condition, MAX_ATOMS>,
    formula: heapless::Vec<Node, MAX_NODES>,
    /// The roster digest (version 2 and later).
    pub digest: Option<[u8; DIGEST_LEN]>,
    /// The names section, when the image stores names.
    pub names: Option<&'a [u8]>,
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

impl Checked<'_> {
    fn weight(&self, attribute: usize, member: usize) -> u64 {
        // Rows were laid out inside the checked length, so offsets stay far
        // below usize::MAX; a wrong index reads as 0 (rows beyond `attributes` are (0, 0)).
        let (at, width) = self.rows.get(attribute).copied().unwrap_or((0, 0));
        uint_at(self.bytes, at.saturating_add(member.saturating_mul(width)), width)
    }
}

/// Every check [`load`] makes, without a weight buffer.
pub(super) fn check(bytes: &[u8]) -> Result<Checked<'_>, ImageError> {
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
    let nodes_end = nodes_at.saturating_add(h.nodes.saturating_mul(NODE_LEN));
    // Version 2 adds the roster section: digest, names length, names.
    let (roster_at, names_len) = if h.version >= 2 {
        let names_len_at = nodes_end.saturating_add(DIGEST_LEN);
        if names_len_at.saturating_add(4) > body_end {
            return Err(ImageError::LayoutMismatch {
                declared: h.declared_len,
                expected: nodes_end.saturating_add(ROSTER_LEN).saturating_add(CHECKSUM_LEN),
            });
        }
        (Some(nodes_end), u32_at(bytes, names_len_at) as usize)
    } else {
        (None, 0)
    };
    let roster_len = if roster_at.is_some() {
        ROSTER_LEN.saturating_add(names_len)
    } else {
        0
    };
    let expected = nodes_end.saturating_add(roster_len).saturating_add(CHECKSUM_LEN);
    if expected != h.declared_len {
        return Err(ImageError::LayoutMismatch {
            declared: h.declared_len,
            expected,
        });
    }
    let digest = roster_at.map(|r| {
        let mut d = [0u8; DIGEST_LEN];
        if let Some(src) = bytes.get(r..r.saturating_add(DIGEST_LEN)) {
            d.copy_from_slice(src);
        }
        d
    });
    let names_at = nodes_end.saturating_add(ROSTER_LEN);
    let names = roster_at
        .filter(|_| names_len > 0)
        .and_then(|_| bytes.get(names_at..names_at.saturating_add(names_len)));

    let mut checked = Checked {
        bytes,
        members: n,
        attributes,
        rows,
        conditions,
        formula: heapless::Vec::new(),
        digest,
        names,
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
    // Names, when stored, must be one per member and agree with the digest.
    if let (Some(section), Some(stored)) = (checked.names, checked.digest) {
        let (_, mut names) = split_names(section, n)?;
        let computed = digest_of(
            n,
            attributes,
            |_| names.next().map_or(&[][..], str::as_bytes),
            |a, i| checked.weight(a, i),
        );
        if computed != stored {
            return Err(ImageError::RosterMismatch);
        }
    }
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
    Ok(load_with_roster(bytes, weights, wrap)?.0)
}

/// [`load_with`], also returning the image's roster digest (`None` for a
/// version-1 image).
pub fn load_with_roster<'w, W: AsRef<[u64]>>(
    bytes: &[u8],
    weights: &'w mut [u64],
    wrap: impl FnOnce(&'w [u64]) -> W,
) -> Result<(Rule<W>, Option<[u8; DIGEST_LEN]>), ImageError> {
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
    let rule = Rule::with_conditions(c.members, wrap(table), &c.conditions, &c.formula)?;
    Ok((rule, c.digest))
}
