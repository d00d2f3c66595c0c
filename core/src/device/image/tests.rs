//! Tests of the image format: golden bytes, damage of every kind, round trips.

use super::*;
use crate::device::decide::{critical, decide, decide_ballot};
use crate::model::atom::{Atom, Linear};
use crate::model::ballot::{Ballot, Vote};
use crate::model::coalition::Coalition;
use crate::model::limits::MAX_MEMBERS;
use crate::model::rule::{Node, Rule};
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

/// The same rule in format version 2, as this build writes it (without
/// names): the version-1 layout with the version changed to 2 and the
/// length to 81, then the roster digest and a names length of 0. The
/// digest was computed independently with Python's `hashlib.sha256` over
/// the data docs/image-format.md describes, and the CRC with `zlib.crc32`.
const EEC_IMAGE_V2: [u8; 81] = [
    0x89, b'C', b'L', b'R', // magic
    2, 0, // version
    1, 0, // attributes
    81, 0, 0, 0, // length
    6, 0, 0, 0, // members
    1, 0, // atoms
    1, 0, // nodes
    1, // width of attribute 0
    4, 4, 4, 2, 2, 1, // weights
    0, 0, 0, 12, 0, 0, 0, 0, 0, 0, 0, // condition 0: threshold, attribute 0, quota 12
    0, 0, 0, // node 0: atom 0
    0x83, 0xcf, 0x7c, 0xc4, 0xcf, 0xab, 0x02, 0x8f, 0xb1, 0x0c, 0xa0, 0x4d, 0x3f, 0x11, 0x45, 0x4a, //
    0xc9, 0x8e, 0x6a, 0x91, 0x87, 0xd0, 0xd5, 0x59, 0xd5, 0x67, 0xc6, 0x5c, 0x3e, 0x31, 0xbd,
    0x17, // digest
    0, 0, 0, 0, // no names
    0x99, 0x28, 0xb9, 0x19, // CRC-32
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
    assert_eq!(encoded(&eec()), EEC_IMAGE_V2);
    assert_eq!(encoded_len(&eec()), EEC_IMAGE_V2.len());
}

#[cfg(feature = "alloc")]
#[test]
fn encode_matches_encode_into() {
    assert_eq!(encode(&eec()), EEC_IMAGE_V2);
}

/// Version-1 images (no roster section) still load, to the same rule as
/// their version-2 form, with no digest.
#[test]
fn version_1_images_still_load() {
    let (mut w1, mut w2) = ([0u64; 6], [0u64; 6]);
    let (old, none) = load_with_roster(&EEC_IMAGE, &mut w1, |t| t).unwrap();
    let (new, digest) = load_with_roster(&EEC_IMAGE_V2, &mut w2, |t| t).unwrap();
    assert_eq!(old, new);
    assert_eq!(none, None);
    assert_eq!(digest.as_ref().map(|d| &d[..]), EEC_IMAGE_V2.get(41..73));
    assert!(roster(&EEC_IMAGE).unwrap().is_none());
}

/// Names round-trip; the digest covers names and weights, so changing one
/// weight, one name or the members' order changes it; a stored digest that
/// does not match the stored names is refused.
#[test]
fn rosters_name_members_and_pin_weights() {
    let names = ["ash", "birch", "cedar", "dogwood", "elm", "fir"];
    let named = Roster {
        rule: "motion",
        members: &names,
    };
    let mut image = vec![0u8; encoded_len_named(&eec(), Some(&named))];
    encode_named_into(&eec(), Some(&named), &mut image).unwrap();
    let info = roster(&image).unwrap().unwrap();
    assert_eq!(info.rule, Some("motion"));
    assert!(info.members.clone().eq(names.iter().copied()));
    assert_eq!(info.digest, roster_digest(&eec(), Some(&names)));
    assert!(inspect(&image).unwrap().named);

    let base = roster_digest(&eec(), Some(&names));
    let heavier = Rule::weighted(12, [4u64, 4, 4, 2, 3, 1]).unwrap();
    assert_ne!(roster_digest(&heavier, Some(&names)), base);
    let renamed = ["ash", "birch", "cedar", "dogwood", "elm", "pine"];
    assert_ne!(roster_digest(&eec(), Some(&renamed)), base);
    let moved = ["birch", "ash", "cedar", "dogwood", "elm", "fir"];
    assert_ne!(roster_digest(&eec(), Some(&moved)), base);
    assert_ne!(roster_digest(&eec(), None), base);

    // The digest of another roster, resealed: the names no longer match.
    let at = image.len() - CHECKSUM_LEN;
    let digest_at = 41;
    image[digest_at] ^= 1;
    reseal(&mut image);
    assert_eq!(load_err(&image), ImageError::RosterMismatch);
    image[digest_at] ^= 1;
    // A name that is not UTF-8.
    image[at - 1] = 0xFF;
    reseal(&mut image);
    assert_eq!(load_err(&image), ImageError::BadNames { member: 6 });
    // Wrong number of names, and a name too long, when writing.
    let short = Roster {
        rule: "motion",
        members: &names[..5],
    };
    assert!(matches!(
        encode_named_into(&eec(), Some(&short), &mut [0u8; 512]),
        Err(ImageError::BadNames { .. })
    ));
    let long = "x".repeat(MAX_NAME_LEN + 1);
    let too_long = Roster {
        rule: &long,
        members: &names,
    };
    assert_eq!(
        encode_named_into(&eec(), Some(&too_long), &mut [0u8; 1024]),
        Err(ImageError::BadNames { member: 0 })
    );
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
    let mut out = [0u8; 80];
    assert_eq!(
        encode_into(&eec(), &mut out),
        Err(ImageError::BufferTooSmall {
            needed: 81,
            given: 80
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
        with(4, &[3, 0]),
        ImageError::UnsupportedVersion {
            found: 3,
            supported: 2
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
    let mut f = [Node::All(1); crate::model::limits::MAX_DEPTH + 1];
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
    // One more node after the formula, before the roster section (no names).
    let roster_at = image.len() - CHECKSUM_LEN - ROSTER_LEN;
    image.splice(roster_at..roster_at, [KIND_ALL, 1, 0]);
    let nodes = (f.len() as u16 + 1).to_le_bytes();
    image[18..20].copy_from_slice(&nodes);
    let len = (image.len() as u32).to_le_bytes();
    image[8..12].copy_from_slice(&len);
    reseal(&mut image);
    assert_eq!(
        load_err(&image),
        ImageError::Rule(Error::TooDeep {
            depth: crate::model::limits::MAX_DEPTH + 1,
            limit: crate::model::limits::MAX_DEPTH
        })
    );
}

/// A fictional majority of those present: more yes than no
/// (`Y - N >= 1`), stored as a four-state linear condition.
fn more_yes_than_no() -> Rule<[u64; 3]> {
    let l = crate::fixtures::four_state_form(0, 0);
    Rule::with_conditions(3, [2u64, 1, 1], &[Condition::Linear(l)], &[Node::Atom(0)]).unwrap()
}

#[test]
fn linear_conditions_round_trip() {
    let rule = more_yes_than_no();
    let image = encoded(&rule);
    assert_eq!(
        image.len(),
        HEADER_LEN + 1 + 3 + LINEAR_LEN + NODE_LEN + ROSTER_LEN + CHECKSUM_LEN
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
         no roster section (format version 1)\n\
         intact: every check passed"
    );
    assert_eq!(
        std::format!("{}", inspect(&EEC_IMAGE_V2).unwrap()),
        "clout rule image, format version 2, 81 bytes declared, 81 given\n\
         6 members, 1 weight attributes, 1 conditions, 1 formula nodes\n\
         checksum 0x19b92899 (CRC-32) matches\n\
         roster digest (SHA-256) 83cf7cc4cfab028fb10ca04d3f11454ac98e6a9187d0d559d567c65c3e31bd17, no names stored\n\
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
