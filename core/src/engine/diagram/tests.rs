//! Tests of the diagram engine against enumeration.

use super::*;
use crate::engine::count_allocating;
use crate::fixtures::{two_tier, two_tier_atoms};
use crate::model::atom::Atom;
use crate::model::limits::MAX_TOTAL;
use crate::model::rule::Node;
use proptest::prelude::*;

#[test]
fn totals_at_the_top_of_u64() {
    // The fuzzer's case: weights summing to exactly 2^64 - 1 and that
    // quota. The diagram gave 4,096 winning coalitions of 4,096 (a class
    // bound equal to the TRUE key); such totals are now refused by
    // every rule, and at the limit the diagram is exact.
    let mut weights = vec![u64::MAX - 35, 2, 0, 6, 5, 5, 4, 1, 0, 3, 3, 6];
    weights.extend([0u64; 12]);
    let atoms = [Atom {
        attribute: 0,
        quota: u64::MAX,
    }];
    assert_eq!(
        Rule::new(12, weights, &atoms, &[Node::Atom(0)]).unwrap_err(),
        Error::WeightSumOverflow { attribute: 0 }
    );
    let max = MAX_TOTAL;
    let rule = Rule::weighted(max, vec![max - 3, 1, 1, 1, 0]).unwrap();
    let d = count_allocating::<_, u128>(&rule, Engine::Diagram, Scope::All).unwrap();
    assert_eq!(d.0.winning, 2); // all four weighted members, with or without the fifth
    let e = count_allocating::<_, u128>(&rule, Engine::Enumerate, Scope::All).unwrap();
    assert_eq!(d.0.winning, e.0.winning);
    for (a, b) in d.1.iter().zip(&e.1) {
        assert_eq!(a.swings, b.swings);
    }
}

fn rule_from(n: usize, w: Vec<u64>, q: [u64; 3], shape: u8) -> Rule<Vec<u64>> {
    match shape % 3 {
        0 => two_tier(n, w, q).unwrap(),
        // (atom 0 or atom 1) and atom 2
        1 => {
            let f = [
                Node::Atom(0),
                Node::Atom(1),
                Node::Any(2),
                Node::Atom(2),
                Node::All(2),
            ];
            Rule::new(n, w, &two_tier_atoms(q), &f).unwrap()
        }
        _ => Rule::new(n, w, &two_tier_atoms(q), &[Node::Atom(0)]).unwrap(),
    }
}

/// Quotas of [`rule_from`] at shares (percent) of the two attributes' totals.
fn quotas_at(n: usize, w: &[u64], shares: &[u64]) -> [u64; 3] {
    let t0: u64 = w[..n].iter().sum();
    let t1: u64 = w[n..].iter().sum();
    [
        t0 * shares[0] / 100 + 1,
        t1 * shares[1] / 100,
        t0 * shares[2] / 100,
    ]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 300, ..ProptestConfig::default() })]
    #[test]
    fn diagram_matches_enumeration(
        n in 1usize..11,
        big in any::<bool>(),
        seed in prop::collection::vec(0u64..1000, 22),
        shares in prop::collection::vec(0u64..=100, 3),
        shape in 0u8..3,
        order in 0u8..3,
    ) {
        // Weights up to 10^15 when `big`: equivalence classes, not weights, size the diagram.
        let scale = if big { 1_000_000_000_000 } else { 1 };
        let w: Vec<u64> = seed[..2 * n].iter().map(|&x| x * scale + x % 7).collect();
        let q = quotas_at(n, &w, &shares);
        let rule = rule_from(n, w, q, shape);
        let order = [Order::Declared, Order::HeavyFirst, Order::LightFirst][order as usize];
        let (oracle, oracle_members) = count_allocating::<_, u128>(&rule, Engine::Enumerate, Scope::All).unwrap();
        let mut members = vec![MemberCounts::<u128>::EMPTY; n];
        let got = count(&rule, &mut members, order, DEFAULT_MEMORY_LIMIT).unwrap();
        prop_assert_eq!(got.winning, oracle.winning);
        prop_assert_eq!(got.losing, oracle.losing);
        prop_assert_eq!(got.proper, oracle.proper);
        prop_assert_eq!(got.strong, oracle.strong);
        prop_assert_eq!(got.smallest_winning, oracle.smallest_winning);
        for i in 0..n {
            prop_assert_eq!(members[i].swings, oracle_members[i].swings);
            prop_assert_eq!(members[i].shapley_shubik_numerator, oracle_members[i].shapley_shubik_numerator);
        }
    }
}

#[test]
fn memory_limit_is_an_error() {
    let rule = Rule::weighted(6, vec![1u64, 2, 3, 4, 5]).unwrap();
    let mut members = vec![MemberCounts::<u128>::EMPTY; 5];
    let got = count(&rule, &mut members, Order::HeavyFirst, 64);
    assert!(matches!(got, Err(Error::MemoryLimit { limit: 64, .. })));
}

/// Relative closeness of two `f64` sums of exact ratios.
fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-12 * a.abs().max(b.abs()).max(1e-300)
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 300, ..ProptestConfig::default() })]
    /// Minimal winning and blocking counts, Deegan-Packel, public good and
    /// Johnston from the diagram equal those of enumerating all 2^n
    /// coalitions, on rules whose weights form a chain (the columns sorted
    /// alike, then the members shuffled) and on rules whose weights do not
    /// (where the diagram must leave them unknown).
    #[test]
    fn minimal_coalitions_match_enumeration(
        n in 1usize..13,
        chain in any::<bool>(),
        big in any::<bool>(),
        seed in prop::collection::vec(0u64..1000, 24),
        shuffle in prop::collection::vec(any::<u32>(), 12),
        shares in prop::collection::vec(0u64..=100, 3),
        shape in 0u8..3,
    ) {
        let scale = if big { 1_000_000_000_000 } else { 1 };
        let mut first: Vec<u64> = seed[..n].iter().map(|&x| x % 13).collect();
        let mut second: Vec<u64> = seed[n..2 * n].iter().map(|&x| x * scale + x % 7).collect();
        if chain {
            first.sort_unstable();
            second.sort_unstable();
            let mut perm: Vec<usize> = (0..n).collect();
            perm.sort_by_key(|&i| shuffle[i]);
            first = perm.iter().map(|&i| first[i]).collect();
            second = perm.iter().map(|&i| second[i]).collect();
        }
        let mut w = first;
        w.extend(second);
        let q = quotas_at(n, &w, &shares);
        let rule = rule_from(n, w, q, shape);
        let (oracle, oracle_members) = count_allocating::<_, u128>(&rule, Engine::Enumerate, Scope::All).unwrap();
        let mut members = vec![MemberCounts::<u128>::EMPTY; n];
        let got = count(&rule, &mut members, Order::LightFirst, DEFAULT_MEMORY_LIMIT).unwrap();
        if minimal::dominance_chain(&rule).is_none() {
            prop_assert!(!chain);
            prop_assert_eq!(got.minimal_winning, None);
            return Ok(());
        }
        prop_assert_eq!(got.minimal_winning, oracle.minimal_winning);
        prop_assert_eq!(got.minimal_blocking, oracle.minimal_blocking);
        for i in 0..n {
            let (a, b) = (&members[i], &oracle_members[i]);
            prop_assert_eq!(a.minimal_winning, b.minimal_winning, "member {}", i);
            prop_assert!(close(a.deegan_packel_raw.unwrap(), b.deegan_packel_raw.unwrap()), "member {}", i);
            prop_assert!(close(a.johnston_raw.unwrap(), b.johnston_raw.unwrap()),
                "member {}: {:?} vs {:?}", i, a.johnston_raw, b.johnston_raw);
        }
    }
}

/// Whether `rule` passes the coalition of the bits of `mask`.
fn passes_mask(rule: &Rule<Vec<u64>>, mask: u32) -> bool {
    let sums: Vec<u64> = (0..rule.attributes())
        .map(|a| {
            (0..rule.members())
                .filter(|i| mask & (1 << i) != 0)
                .map(|i| rule.weight(a, i))
                .sum()
        })
        .collect();
    rule.passes_with_sums(&sums)
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 300, ..ProptestConfig::default() })]
    /// The difference diagram counts exactly the coalitions two rules decide
    /// differently, and its witness is one of them with the fewest members.
    #[test]
    fn difference_matches_enumeration(
        n in 1usize..13,
        seed in prop::collection::vec(0u64..1000, 24),
        shares_a in prop::collection::vec(0u64..=100, 3),
        shares_b in prop::collection::vec(0u64..=100, 3),
        shapes in (0u8..3, 0u8..3),
        same in any::<bool>(),
    ) {
        let w: Vec<u64> = seed[..2 * n].iter().map(|&x| x % 17 + x / 500).collect();
        let quotas = |s: &[u64]| quotas_at(n, &w, s);
        let a = rule_from(n, w.clone(), quotas(&shares_a), shapes.0);
        let b = if same {
            a.clone()
        } else {
            rule_from(n, w.clone(), quotas(&shares_b), shapes.1)
        };
        let mut differ = 0u128;
        let mut fewest: Option<u32> = None;
        for mask in 0u32..(1 << n) {
            if passes_mask(&a, mask) != passes_mask(&b, mask) {
                differ += 1;
                fewest = Some(fewest.map_or(mask.count_ones(), |f| f.min(mask.count_ones())));
            }
        }
        let got = difference::<_, _, u128>(&a, &b, DEFAULT_MAX_NODES).unwrap();
        prop_assert_eq!(got.coalitions, differ);
        match (&got.smallest, fewest) {
            (None, None) => {}
            (Some(c), Some(f)) => {
                prop_assert_eq!(c.len() as u32, f);
                let mask = c.iter().fold(0u32, |m, &i| m | (1 << i));
                prop_assert!(passes_mask(&a, mask) != passes_mask(&b, mask));
                prop_assert_eq!(got.first_passes, passes_mask(&a, mask));
            }
            other => prop_assert!(false, "witness {:?}", other),
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 200, ..ProptestConfig::default() })]
    /// The minimal winning and minimal blocking coalitions listed from the
    /// diagram are exactly those found by testing every coalition, fewest
    /// members first, and the counts match.
    #[test]
    fn minimal_listing_matches_enumeration(
        n in 1usize..12,
        seed in prop::collection::vec(0u64..1000, 24),
        shares in prop::collection::vec(0u64..=100, 3),
        shape in 0u8..3,
        limit in 0usize..40,
    ) {
        let mut first: Vec<u64> = seed[..n].iter().map(|&x| x % 5).collect();
        let mut second: Vec<u64> = seed[n..2 * n].to_vec();
        first.sort_unstable();
        second.sort_unstable();
        let mut w = first;
        w.extend(second);
        let q = quotas_at(n, &w, &shares);
        let rule = rule_from(n, w, q, shape);
        let all = (1u32 << n) - 1;
        for blocking in [false, true] {
            // In the blocking case a coalition "wins" when its complement loses.
            let wins = |m: u32| if blocking { !passes_mask(&rule, all & !m) } else { passes_mask(&rule, m) };
            let mut expected: Vec<u32> = (0..=all)
                .filter(|&m| wins(m) && (0..n).filter(|i| m & (1 << i) != 0).all(|i| !wins(m & !(1 << i))))
                .collect();
            let got = minimal_coalitions::<_, u128>(&rule, blocking, limit, DEFAULT_MAX_NODES).unwrap().unwrap();
            prop_assert_eq!(got.count, expected.len() as u128);
            prop_assert_eq!(got.listed.len(), expected.len().min(limit));
            let masks: Vec<u32> = got.listed.iter().map(|c| c.iter().fold(0u32, |m, &i| m | (1 << i))).collect();
            for pair in masks.windows(2) {
                prop_assert!(pair[0].count_ones() <= pair[1].count_ones());
            }
            let mut unique = masks.clone();
            unique.sort_unstable();
            unique.dedup();
            prop_assert_eq!(unique.len(), masks.len());
            expected.sort_by_key(|m| m.count_ones());
            for m in &masks {
                prop_assert!(expected.contains(m));
            }
            // Fewest first: the listed sizes are the smallest sizes there are.
            let sizes: Vec<u32> = expected.iter().take(masks.len()).map(|m| m.count_ones()).collect();
            let listed_sizes: Vec<u32> = masks.iter().map(|m| m.count_ones()).collect();
            prop_assert_eq!(sizes, listed_sizes);
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 200, ..ProptestConfig::default() })]
    /// Two members are symmetric on the diagram exactly when exchanging them
    /// changes the outcome of no coalition.
    #[test]
    fn symmetry_matches_enumeration(
        n in 2usize..11,
        seed in prop::collection::vec(0u64..6, 22),
        shares in prop::collection::vec(0u64..=100, 3),
        shape in 0u8..3,
        pair in (0usize..11, 0usize..11),
    ) {
        let (i, j) = (pair.0 % n, pair.1 % n);
        let w: Vec<u64> = seed[..2 * n].to_vec();
        let q = quotas_at(n, &w, &shares);
        let rule = rule_from(n, w, q, shape);
        let swap = |m: u32| {
            let (bi, bj) = (m >> i & 1, m >> j & 1);
            (m & !(1 << i) & !(1 << j)) | (bi << j) | (bj << i)
        };
        let expected = (0u32..(1 << n)).all(|m| passes_mask(&rule, m) == passes_mask(&rule, swap(m)));
        prop_assert_eq!(symmetric(&rule, i, j, DEFAULT_MAX_NODES).unwrap(), expected);
    }
}
