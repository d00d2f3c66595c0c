//! What an image holds and whether it is intact ([`inspect`], [`ImageInfo`]).
//!
//! Reads the header, recomputes the checksum and runs every check of
//! [`super::load`]: O(image length), no heap, no arithmetic beyond the
//! checked offsets.

use core::fmt;

use super::crc::crc32;
use super::load::{check, read_header, u32_at};
use super::roster::DIGEST_LEN;
use super::{ImageError, CHECKSUM_LEN, HEADER_LEN};

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
    /// `Ok` when the image passes every check [`load`](super::load) makes.
    pub verdict: Result<(), ImageError>,
    /// The roster digest of an intact version-2 image.
    pub roster_digest: Option<[u8; DIGEST_LEN]>,
    /// Whether an intact image stores the rule's and the members' names.
    pub named: bool,
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
        match (self.roster_digest, self.named) {
            (Some(d), named) => {
                write!(f, "roster digest (SHA-256) ")?;
                for b in d {
                    write!(f, "{b:02x}")?;
                }
                writeln!(
                    f,
                    "{}",
                    if named {
                        ", names stored"
                    } else {
                        ", no names stored"
                    }
                )?;
            }
            (None, _) if self.verdict.is_ok() => writeln!(f, "no roster section (format version 1)")?,
            (None, _) => {}
        }
        match self.verdict {
            Ok(()) => write!(f, "intact: every check passed"),
            Err(e) => write!(f, "damaged: {e}"),
        }
    }
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
    let checked = check(bytes);
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
        verdict: checked.as_ref().map(|_| ()).map_err(|e| *e),
        roster_digest: checked.as_ref().ok().and_then(|c| c.digest),
        named: checked.as_ref().is_ok_and(|c| c.names.is_some()),
    })
}
