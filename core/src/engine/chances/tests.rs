//! The voting model against brute force over all 4^n ballots.

use super::*;
use crate::engine::{count_allocating, Engine, Scope};
use crate::fixtures::mixed_rules;
use crate::model::ballot::{Ballot, Vote};
use proptest::prelude::*;

const STATES: [Vote; 4] = [Vote::Yes, Vote::No, Vote::Abstain, Vote::Absent];

/// Whether `votes` pass `rule`, from the ballot's own group sums.
fn passes(rule: &Rule<Vec<u64>>, votes: &[Vote]) -> bool {
    let ballot = Ballot::<1>::from_votes(votes).unwrap();
    let mut sums = [[0u64; MAX_ATTRIBUTES]; 3];
    for (group, out) in [ballot.yes(), ballot.no(), ballot.abstain()]
        .into_iter()
        .zip(&mut sums)
    {
        for (a, s) in out.iter_mut().enumerate().take(rule.attributes()) {
            *s = group.iter().map(|i| rule.weight(a, i)).sum();
        }
    }
    let n = rule.attributes();
    rule.passes_with_group_sums(&sums[0][..n], &sums[1][..n], &sums[2][..n])
}

fn chance_of(c: &Chances, v: Vote) -> f64 {
    let p = c.votes();
    match v {
        Vote::Yes => p[0],
        Vote::No => p[1],
        Vote::Abstain => p[2],
        Vote::Absent => p[3],
    }
}

/// Every figure by enumerating all 4^n ballots (member i's vote is digit
/// i of the code in base 4: yes, no, abstain, absent).
fn brute_force(rule: &Rule<Vec<u64>>, chances: &[Chances]) -> (Vec<f64>, f64, f64) {
    let n = rule.members();
    let codes = 4usize.pow(n as u32);
    let votes_of = |code: usize| -> Vec<Vote> { (0..n).map(|i| STATES[(code >> (2 * i)) & 3]).collect() };
    let pass: Vec<bool> = (0..codes).map(|c| passes(rule, &votes_of(c))).collect();
    let mut decisive = vec![0.0; n];
    let (mut passage, mut failed) = (0.0, 0.0);
    for code in 0..codes {
        let votes = votes_of(code);
        let p: f64 = votes.iter().zip(chances).map(|(v, c)| chance_of(c, *v)).product();
        if pass[code] {
            passage += p;
        }
        // Everyone present votes yes: does the motion pass?
        let carried: Vec<Vote> = votes
            .iter()
            .map(|v| {
                if *v == Vote::Absent {
                    Vote::Absent
                } else {
                    Vote::Yes
                }
            })
            .collect();
        if !passes(rule, &carried) {
            failed += p;
        }
        for i in 0..n {
            if votes[i] != Vote::Yes {
                continue;
            }
            // The same ballot with i voting no.
            let (yes, no) = (pass[code], pass[code + (1 << (2 * i))]);
            assert!(yes || !no, "monotone in yes votes");
            if yes && !no {
                decisive[i] += (0..n)
                    .filter(|&j| j != i)
                    .map(|j| chance_of(&chances[j], votes[j]))
                    .product::<f64>();
            }
        }
    }
    (decisive, passage, failed)
}

fn chance() -> impl Strategy<Value = f64> {
    prop_oneof![Just(0.0), Just(1.0), Just(0.5), 0.0f64..=1.0]
}

fn model(n: usize) -> impl Strategy<Value = Vec<Chances>> {
    prop::collection::vec((chance(), chance(), prop_oneof![Just(0.0), 0.0f64..=1.0]), n).prop_map(|v| {
        v.into_iter()
            .map(|(present, yes, abstain)| Chances {
                present,
                yes,
                abstain,
            })
            .collect()
    })
}

fn close(fast: f64, slow: f64, relative: f64) -> bool {
    (fast - slow).abs() <= relative * slow.abs() + 1e-12
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 32, ..ProptestConfig::default() })]
    /// Every exact figure equals the enumeration of all 4^n ballots, within
    /// the stated rounding bound (plus the enumeration's own rounding).
    #[test]
    fn exact_model_matches_all_ballots((rule, chances) in mixed_rules().prop_flat_map(|r| {
        let n = r.members();
        (Just(r), model(n))
    })) {
        let fast = exact_model(&rule, &chances, 1 << 20).unwrap();
        let (decisive, passage, failed) = brute_force(&rule, &chances);
        prop_assert!(fast.relative_error < 1e-10);
        for i in 0..rule.members() {
            prop_assert!(close(fast.decisive[i], decisive[i], fast.relative_error), "member {}: {} vs {}", i, fast.decisive[i], decisive[i]);
        }
        prop_assert!(close(fast.passage, passage, fast.relative_error), "passage {} vs {}", fast.passage, passage);
        prop_assert!(close(fast.quorum_failure, failed, fast.relative_error), "quorum {} vs {}", fast.quorum_failure, failed);
    }

    /// Everyone present, yes or no at even odds: the Penrose measure and the
    /// a priori probability of passage of the two-state game.
    #[test]
    fn turnout_one_is_penrose(rule in mixed_rules()) {
        let n = rule.members();
        let fast = exact_model(&rule, &vec![Chances::turnout(1.0); n], 1 << 20).unwrap();
        let (counts, members) = count_allocating::<_, u128>(&rule, Engine::Enumerate, Scope::All).unwrap();
        for i in 0..n {
            let penrose = members[i].swings as f64 / (1u128 << (n - 1)) as f64;
            prop_assert!(close(fast.decisive[i], penrose, fast.relative_error), "member {}", i);
        }
        prop_assert!(close(fast.passage, counts.passage_probability(), fast.relative_error));
        // Everyone is present, so the quorum fails exactly when the full coalition loses.
        let full = rule.passes(&crate::model::coalition::Coalition::<1>::first(n).unwrap()).unwrap();
        prop_assert_eq!(fast.quorum_failure, if full { 0.0 } else { 1.0 });
    }
}

#[test]
fn monte_carlo_covers_the_exact_figures() {
    // A fictional body: 3 large members, 6 small; more seats yes than no.
    // Small members rarely come.
    let seats = [9u64, 7, 5, 1, 1, 1, 1, 1, 1];
    let rule =
        crate::fixtures::four_state_rule(&seats, crate::fixtures::four_state_form(0, 0), None).unwrap();
    let chances: Vec<Chances> = seats
        .iter()
        .map(|&s| Chances {
            present: if s > 1 { 0.9 } else { 0.2 },
            yes: 0.5,
            abstain: 0.1,
        })
        .collect();
    let exact = exact_model(&rule, &chances, 1 << 20).unwrap();
    let s = Sampling {
        seed: 7,
        tolerance: 0.002,
        max_samples: 1 << 20,
        threads: 1,
        ..Sampling::default()
    };
    let mc = sample_model(&rule, &chances, &s).unwrap();
    for i in 0..seats.len() {
        let e = mc.decisive[i];
        assert!(
            (e.value - exact.decisive[i]).abs() <= 2.0 * e.half_width,
            "member {i}: {e:?} vs {}",
            exact.decisive[i]
        );
    }
    assert!((mc.passage.value - exact.passage).abs() <= 2.0 * mc.passage.half_width);
    assert!((mc.quorum_failure.value - exact.quorum_failure).abs() <= 2.0 * mc.quorum_failure.half_width);
}

#[test]
fn too_many_states_is_refused() {
    // 40 members of distinct weights, two forms: the distribution grows past 1,000 states.
    let weights: Vec<u64> = (1..=40).collect();
    let rule =
        crate::fixtures::four_state_rule(&weights, crate::fixtures::four_state_form(0, 0), None).unwrap();
    let chances = vec![Chances::turnout(0.5); 40];
    assert!(matches!(
        exact_model(&rule, &chances, 1000),
        Err(Error::TooCostly { .. })
    ));
}
