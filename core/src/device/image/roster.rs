//! The roster section of version-2 images: who is who.
//!
//! After the formula a version-2 image holds the roster digest (32 bytes),
//! the length of the names that follow (u32), and optionally the names: the
//! rule's, then one per member in member order, each a length byte and that
//! many bytes of UTF-8. The digest is SHA-256 over the ordered roster:
//!
//! ```text
//! "clout roster 1\0"  members (u32)  attributes (u16)
//! per member: name length (u8), name (UTF-8; empty when the writer had none)
//! per attribute, per member: weight (u64)
//! ```
//!
//! all little-endian, so a device holding the digest of the roster it
//! serves can refuse an image compiled for another (a member added,
//! renamed, moved or weighted differently). When the names are present the
//! reader recomputes the digest and refuses a mismatch
//! ([`ImageError::RosterMismatch`]); without them it can only report the
//! stored digest. SHA-256 comes from the `sha2` crate (no_std, no heap).

use sha2::{Digest, Sha256};

use super::load::check;
use super::{ImageError, MAX_NAME_LEN};
use crate::model::rule::Rule;

/// Bytes of a roster digest (SHA-256).
pub const DIGEST_LEN: usize = 32;

/// What the hashed data starts with.
const DOMAIN: &[u8] = b"clout roster 1\0";

/// The names a writer stores: the rule's, and one per member in order.
#[derive(Clone, Copy, Debug)]
pub struct Roster<'a> {
    /// The rule's name.
    pub rule: &'a str,
    /// The members' names, in member order.
    pub members: &'a [&'a str],
}

/// The roster digest of `members` members over `attributes` attributes,
/// with member `i` named `name(i)` and weighing `weight(a, i)` in attribute `a`.
pub(super) fn digest_of<'n>(
    members: usize,
    attributes: usize,
    mut name: impl FnMut(usize) -> &'n [u8],
    weight: impl Fn(usize, usize) -> u64,
) -> [u8; DIGEST_LEN] {
    let mut h = Sha256::new();
    h.update(DOMAIN);
    // Members and attributes were checked against the limits (65,535 and 64).
    h.update((members as u32).to_le_bytes());
    h.update((attributes as u16).to_le_bytes());
    for i in 0..members {
        let n = name(i);
        let n = n.get(..n.len().min(MAX_NAME_LEN)).unwrap_or(&[]);
        h.update([n.len() as u8]);
        h.update(n);
    }
    for a in 0..attributes {
        for i in 0..members {
            h.update(weight(a, i).to_le_bytes());
        }
    }
    h.finalize().into()
}

/// The roster digest of `rule` with these member names (`None`: every
/// name empty), as a version-2 image stores it.
pub fn roster_digest<W: AsRef<[u64]>>(rule: &Rule<W>, names: Option<&[&str]>) -> [u8; DIGEST_LEN] {
    digest_of(
        rule.members(),
        rule.attributes(),
        |i| names.and_then(|n| n.get(i)).map_or(&[][..], |s| s.as_bytes()),
        |a, i| rule.weight(a, i),
    )
}

/// The names stored in an image: an iterator over the members' names.
#[derive(Clone, Debug)]
pub struct Names<'a> {
    rest: &'a [u8],
}

impl<'a> Iterator for Names<'a> {
    type Item = &'a str;
    fn next(&mut self) -> Option<&'a str> {
        let (&len, rest) = self.rest.split_first()?;
        let (name, rest) = rest.split_at_checked(usize::from(len))?;
        self.rest = rest;
        // The reader checked every name as UTF-8 before handing this out.
        core::str::from_utf8(name).ok()
    }
}

/// The roster section of an intact image.
#[derive(Clone, Debug)]
pub struct RosterInfo<'a> {
    /// The roster digest.
    pub digest: [u8; DIGEST_LEN],
    /// The rule's name, when the image stores names.
    pub rule: Option<&'a str>,
    /// The members' names in member order (empty when the image stores none).
    pub members: Names<'a>,
}

/// Splits a names section into the rule's name and the members' names,
/// checking that it holds exactly `1 + members` UTF-8 names.
pub(super) fn split_names(section: &[u8], members: usize) -> Result<(&str, Names<'_>), ImageError> {
    let mut at = 0usize;
    let mut rule = "";
    for entry in 0..=members {
        let bad = ImageError::BadNames { member: entry };
        let len = usize::from(*section.get(at).ok_or(bad)?);
        let start = at.saturating_add(1);
        let bytes = section.get(start..start.saturating_add(len)).ok_or(bad)?;
        let text = core::str::from_utf8(bytes).map_err(|_| bad)?;
        if entry == 0 {
            rule = text;
        }
        at = start.saturating_add(len);
    }
    if at != section.len() {
        return Err(ImageError::BadNames {
            member: members.saturating_add(1),
        });
    }
    let first = usize::from(section.first().copied().unwrap_or(0)).saturating_add(1);
    Ok((
        rule,
        Names {
            rest: section.get(first..).unwrap_or(&[]),
        },
    ))
}

/// The roster section of an image, after every check: `None` for a
/// version-1 image, which has none.
pub fn roster(bytes: &[u8]) -> Result<Option<RosterInfo<'_>>, ImageError> {
    let c = check(bytes)?;
    let Some(digest) = c.digest else {
        return Ok(None);
    };
    let (rule, members) = match c.names {
        Some(section) => {
            let (rule, names) = split_names(section, c.members)?;
            (Some(rule), names)
        }
        None => (None, Names { rest: &[] }),
    };
    Ok(Some(RosterInfo {
        digest,
        rule,
        members,
    }))
}
