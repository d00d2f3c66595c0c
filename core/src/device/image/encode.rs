//! Writing images: [`encoded_len`], [`encode_into`] a caller buffer and,
//! with `alloc`, [`encode`] into a new vector.
//!
//! O(members * attributes + atoms + nodes) time; no heap besides
//! [`encode`]'s vector. Every length is bounded by the limits a rule was
//! built under (an image stays below 2^32 bytes), so the sums and casts
//! cannot overflow or truncate.

use super::crc::crc32;
use super::roster::{roster_digest, Roster};
use super::{
    condition_len, ImageError, CHECKSUM_LEN, FORMAT_VERSION, HEADER_LEN, KIND_ALL, KIND_ANY, KIND_ATOM,
    KIND_LINEAR, KIND_THRESHOLD, MAGIC, MAX_NAME_LEN, NODE_LEN, ROSTER_LEN,
};
use crate::model::atom::Condition;
use crate::model::rule::{Node, Rule};

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

/// Bytes of the names section for `names`: a length byte and the UTF-8 of
/// each name (0 without names).
fn names_len(names: Option<&Roster<'_>>) -> usize {
    names.map_or(0, |r| {
        core::iter::once(r.rule)
            .chain(r.members.iter().copied())
            .map(|n| n.len().saturating_add(1))
            .fold(0, usize::saturating_add)
    })
}

/// Length in bytes of `rule`'s image without names.
pub fn encoded_len<W: AsRef<[u64]>>(rule: &Rule<W>) -> usize {
    encoded_len_named(rule, None)
}

/// Length in bytes of `rule`'s image with these names.
pub fn encoded_len_named<W: AsRef<[u64]>>(rule: &Rule<W>, names: Option<&Roster<'_>>) -> usize {
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
        .saturating_add(ROSTER_LEN)
        .saturating_add(names_len(names))
        .saturating_add(CHECKSUM_LEN)
}

/// Writes `rule`'s image into the front of `out` and returns its length.
///
/// Each attribute's weights are stored at the smallest width (1, 2, 4 or 8
/// bytes) that holds its largest weight.
pub fn encode_into<W: AsRef<[u64]>>(rule: &Rule<W>, out: &mut [u8]) -> Result<usize, ImageError> {
    encode_named_into(rule, None, out)
}

/// [`encode_into`] with the rule's and the members' names in the roster
/// section (one name per member, each at most [`super::MAX_NAME_LEN`]
/// bytes; `BadNames` otherwise). The roster digest covers the member names
/// (empty without names) and the weights.
pub fn encode_named_into<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    names: Option<&Roster<'_>>,
    out: &mut [u8],
) -> Result<usize, ImageError> {
    if let Some(r) = names {
        if r.members.len() != rule.members() {
            return Err(ImageError::BadNames {
                member: r.members.len().min(rule.members()).saturating_add(1),
            });
        }
        let all = core::iter::once(r.rule).chain(r.members.iter().copied());
        if let Some(entry) = all.clone().position(|n| n.len() > MAX_NAME_LEN) {
            return Err(ImageError::BadNames { member: entry });
        }
    }
    let len = encoded_len_named(rule, names);
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
    w.put(&roster_digest(rule, names.map(|r| r.members)));
    w.put(&(names_len(names) as u32).to_le_bytes());
    if let Some(r) = names {
        for name in core::iter::once(r.rule).chain(r.members.iter().copied()) {
            // At most MAX_NAME_LEN (255) bytes, checked above.
            w.put(&[name.len() as u8]);
            w.put(name.as_bytes());
        }
    }
    let crc = crc32(w.out.get(..w.at).unwrap_or(&[]));
    w.put(&crc.to_le_bytes());
    debug_assert_eq!(w.at, len);
    Ok(len)
}

/// `rule`'s image (without names) in a new vector.
#[cfg(feature = "alloc")]
pub fn encode<W: AsRef<[u64]>>(rule: &Rule<W>) -> alloc::vec::Vec<u8> {
    let mut out = alloc::vec![0u8; encoded_len(rule)];
    // The buffer has exactly encoded_len bytes, so this cannot fail.
    let _ = encode_into(rule, &mut out);
    out
}

/// `rule`'s image with names in a new vector.
#[cfg(feature = "alloc")]
pub fn encode_named<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    names: &Roster<'_>,
) -> Result<alloc::vec::Vec<u8>, ImageError> {
    let mut out = alloc::vec![0u8; encoded_len_named(rule, Some(names))];
    encode_named_into(rule, Some(names), &mut out)?;
    Ok(out)
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
