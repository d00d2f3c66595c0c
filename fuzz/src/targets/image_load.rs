//! Target `image_load`: the image reader on any bytes.
//!
//! The first input byte chooses repairs, so the search reaches the checks
//! behind the length and the checksum: bit 0 writes the true length into the
//! header, bit 1 writes the true CRC-32 at the end. Promises checked:
//! `weights_needed`, `inspect` and `load` agree on every verdict; a failed
//! load writes nothing; a too-small buffer is `BufferTooSmall`; a loaded rule
//! encodes to an image that loads to the same rule, of `encoded_len` bytes.

use clout_core::image::{self, ImageError};
use clout_core::{Condition, Rule};

use super::reader::Reader;

/// Header fragments and interesting integers.
pub const DICTIONARY: &[&[u8]] = &[
    &[0x89, b'C', b'L', b'R', 1, 0],
    &[0xFF, 0xFF],
    &[0xFF, 0xFF, 0xFF, 0xFF],
    &[0xFF, 0xFF, 0xFF, 0xFF, 0xFF, 0xFF, 0xFF, 0xFF],
    &[0xFF, 0xFF, 0xFF, 0xFF, 0xFF, 0xFF, 0xFF, 0x7F],
    &[0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x80],
    &[0x40, 0x00],
    &[0x41, 0x00],
    &[0x80, 0x00],
    &[0x81, 0x00],
    &[0xFF, 0xFF, 0x00, 0x00],
    &[0x00, 0x00, 0x01, 0x00],
    &[1],
    &[2],
    &[4],
    &[8],
    &[3],
];

/// Runs one input.
pub fn run(data: &[u8]) {
    let mut r = Reader::new(data);
    let flags = r.u8();
    let mut bytes = r.rest().to_vec();
    repair(&mut bytes, flags);
    let _ = check(&bytes);
}

/// Writes the true length (flag bit 0) and checksum (bit 1) into an image.
pub fn repair(bytes: &mut [u8], flags: u8) {
    let len = bytes.len();
    if flags & 1 != 0 && len >= 12 {
        bytes[8..12].copy_from_slice(&(len as u32).to_le_bytes());
    }
    if flags & 2 != 0 && len >= image::HEADER_LEN + image::CHECKSUM_LEN {
        let body = len - image::CHECKSUM_LEN;
        let crc = image::crc32(&bytes[..body]);
        bytes[body..].copy_from_slice(&crc.to_le_bytes());
    }
}

/// A framed image: a flag byte (repairs), a 2-byte length, the image.
pub fn framed(r: &mut Reader<'_>) -> Vec<u8> {
    let flags = r.u8();
    let len = usize::from(r.u16());
    let mut bytes = r.bytes(len).to_vec();
    repair(&mut bytes, flags);
    bytes
}

/// The rule's own copy, owning its weights.
pub fn owned<W: AsRef<[u64]>>(rule: &Rule<W>) -> Rule<Vec<u64>> {
    let conditions: Vec<Condition> = (0..rule.atoms().len())
        .map(|i| rule.condition(i).expect("every atom has a condition"))
        .collect();
    Rule::with_conditions(
        rule.members(),
        rule.weight_table().to_vec(),
        &conditions,
        rule.formula(),
    )
    .expect("a loaded rule rebuilds")
}

/// Checks the reader's promises on `bytes`; the loaded rule if it is an image.
pub fn check(bytes: &[u8]) -> Option<Rule<Vec<u64>>> {
    let needed = image::weights_needed(bytes);
    let info = image::inspect(bytes);
    match (&needed, &info) {
        (Ok(_), Ok(info)) => assert!(info.is_intact(), "{info}"),
        (Ok(_), Err(e)) => panic!("weights_needed accepts what inspect refuses: {e}"),
        (Err(e), Ok(info)) => {
            assert_eq!(info.verdict, Err(*e), "inspect and weights_needed disagree");
            assert!(!info.is_intact());
        }
        (Err(a), Err(b)) => assert_eq!(a, b),
    }
    if let Ok(info) = &info {
        assert!(!info.to_string().is_empty());
    }
    let n = match needed {
        Ok(n) => n,
        Err(e) => {
            assert!(!e.to_string().is_empty());
            let mut untouched = [7u64; 64];
            assert_eq!(image::load(bytes, &mut untouched).err(), Some(e));
            assert!(untouched.iter().all(|&w| w == 7), "a failed load wrote weights");
            return None;
        }
    };
    // Every weight takes at least one byte of the image.
    assert!(n <= bytes.len(), "{n} weights from {} bytes", bytes.len());
    if n > 0 {
        let mut small = vec![7u64; n - 1];
        assert_eq!(
            image::load(bytes, &mut small).err(),
            Some(ImageError::BufferTooSmall {
                needed: n,
                given: n - 1
            })
        );
        assert!(small.iter().all(|&w| w == 7), "a refused load wrote weights");
    }
    let mut weights = vec![7u64; n + 1];
    let rule = match image::load(bytes, &mut weights) {
        Ok(rule) => owned(&rule),
        Err(e) => panic!("weights_needed accepted an image load refuses: {e}"),
    };
    assert_eq!(weights[n], 7, "load wrote past the table");
    let again = image::encode(&rule);
    assert_eq!(again.len(), image::encoded_len(&rule));
    let mut buf = vec![0u8; again.len()];
    assert_eq!(image::encode_into(&rule, &mut buf), Ok(again.len()));
    assert_eq!(buf, again);
    if !again.is_empty() {
        let mut short = vec![0u8; again.len() - 1];
        assert!(image::encode_into(&rule, &mut short).is_err());
    }
    let mut w2 = vec![0u64; image::weights_needed(&again).expect("a written image checks")];
    let reloaded = owned(&image::load(&again, &mut w2).expect("a written image loads"));
    assert_eq!(reloaded, rule, "encode/load changed the rule");
    // A version-1 image has no roster section, which the writer always adds.
    let roster = if bytes.get(4..6) == Some(&[1, 0][..]) {
        image::ROSTER_LEN
    } else {
        0
    };
    assert!(
        again.len() <= bytes.len() + roster,
        "the writer uses the smallest widths"
    );
    Some(rule)
}
