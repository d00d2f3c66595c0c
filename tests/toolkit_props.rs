//! Properties of `clout::toolkit::compare` on random weighted rules:
//! equivalent re-encodings compare equal, and perturbations that change the
//! rule are found with a witness of least size (checked by brute force over
//! all coalitions).

use clout::toolkit::compare::{compare, reorder, Equivalence};
use clout::toolkit::profile;
use clout::toolkit::weighted::{self, Verdict};
use clout::{Atom, Node, Rule};
use proptest::prelude::*;

fn game() -> impl Strategy<Value = (u64, Vec<u64>)> {
    prop::collection::vec(0u64..10, 2..=7).prop_flat_map(|w| {
        let total: u64 = w.iter().sum::<u64>().max(1);
        (1..=total, Just(w))
    })
}

/// The smallest coalition on which two rules differ, by brute force.
fn smallest_difference<A: AsRef<[u64]>, B: AsRef<[u64]>>(a: &Rule<A>, b: &Rule<B>) -> Option<usize> {
    let n = a.members();
    (0u32..1 << n)
        .map(|s| (0..n).filter(|&i| s >> i & 1 == 1).collect::<Vec<usize>>())
        .filter(|c| profile::passes(a, c) != profile::passes(b, c))
        .map(|c| c.len())
        .min()
}

/// Equivalent encodings of `[q; w]`.
fn encodings(q: u64, w: &[u64], k: u64) -> Vec<Rule<Vec<u64>>> {
    let n = w.len();
    let scaled = Rule::weighted(q * k, w.iter().map(|x| x * k).collect()).unwrap();
    // Two attributes holding the same weights, both conditions required.
    let mut table = w.to_vec();
    table.extend_from_slice(w);
    let atoms = [
        Atom {
            attribute: 0,
            quota: q,
        },
        Atom {
            attribute: 1,
            quota: q,
        },
    ];
    let both = Rule::new(n, table, &atoms, &[Node::Atom(0), Node::Atom(1), Node::All(2)]).unwrap();
    // A redundant alternative: w >= q or w >= q + k.
    let atoms = [
        Atom {
            attribute: 0,
            quota: q,
        },
        Atom {
            attribute: 0,
            quota: q + k,
        },
    ];
    let either = Rule::new(
        n,
        w.to_vec(),
        &atoms,
        &[Node::Atom(0), Node::Atom(1), Node::Any(2)],
    )
    .unwrap();
    vec![scaled, both, either]
}

proptest! {
    #[test]
    fn equivalent_encodings_compare_equal((q, w) in game(), k in 2u64..5) {
        let rule = Rule::weighted(q, w.clone()).unwrap();
        for other in encodings(q, &w, k) {
            let same = matches!(compare(&rule, &other).unwrap(), Equivalence::Same { .. });
            prop_assert!(same);
        }
        // The least-total representation found by simplify is the same rule.
        let (table, _) = weighted::table_for(&rule).unwrap();
        let Verdict::Weighted { representation, .. } = weighted::test(&table).unwrap().verdict else {
            panic!("a weighted game is weighted");
        };
        let same = matches!(compare(&rule, &representation.rule().unwrap()).unwrap(), Equivalence::Same { .. });
        prop_assert!(same);
        // Renumbering both rules the same way keeps them equal.
        let order: Vec<usize> = (0..w.len()).rev().collect();
        let a = reorder(&rule, &order).unwrap();
        let b = reorder(&encodings(q, &w, k)[0], &order).unwrap();
        let same = matches!(compare(&a, &b).unwrap(), Equivalence::Same { .. });
        prop_assert!(same);
    }

    #[test]
    fn perturbations_are_found_with_a_smallest_witness(
        (q, w) in game(),
        which in 0usize..8,
        up in any::<bool>(),
    ) {
        let rule = Rule::weighted(q, w.clone()).unwrap();
        let mut w2 = w.clone();
        let mut q2 = q;
        let step = |x: u64| if up { x + 1 } else { x.saturating_sub(1) };
        if which < w.len() {
            w2[which] = step(w2[which]);
        } else {
            q2 = step(q).max(1);
        }
        let other = Rule::weighted(q2, w2).unwrap();
        let truth = smallest_difference(&rule, &other);
        match compare(&rule, &other).unwrap() {
            Equivalence::Same { .. } => prop_assert_eq!(truth, None),
            Equivalence::Different { coalition, first_passes, smallest } => {
                prop_assert!(smallest);
                prop_assert_eq!(Some(coalition.len()), truth);
                prop_assert_eq!(profile::passes(&rule, &coalition), first_passes);
                prop_assert_eq!(profile::passes(&other, &coalition), !first_passes);
            }
            Equivalence::Undecided { .. } => prop_assert!(false, "small rules are always decided"),
        }
    }
}
