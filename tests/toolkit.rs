//! The drafter's toolkit (`clout::toolkit`) against answers that are
//! published or derivable by hand: weightedness of every monotone rule on up
//! to five members, a known non-weighted rule with its trading transfer,
//! dummies, desirability, comparison, fitting and coalition listings.

use std::collections::{BTreeMap, BTreeSet};

use clout::toolkit::profile::{self, singletons, ProfileTable};
use clout::toolkit::weighted::{self, Minimality, Representation, Verdict};
use clout::toolkit::PROFILE_LIMIT;
use clout::Rule;

/// Every monotone Boolean function of n variables as a truth table (bit S
/// set when coalition S wins), built as f = (f0, f1) with f0 <= f1 both
/// monotone in the first n - 1 variables.
fn monotone_functions(n: usize) -> Vec<u32> {
    if n == 0 {
        return vec![0, 1];
    }
    let smaller = monotone_functions(n - 1);
    let half = 1u32 << (n - 1);
    let mut out = Vec::new();
    for &f0 in &smaller {
        for &f1 in &smaller {
            if f0 & !f1 == 0 {
                // Coalitions without member n - 1 follow f0, with it f1.
                let mut table = 0u32;
                for s in 0..half {
                    table |= (f0 >> s & 1) << s;
                    table |= (f1 >> s & 1) << (s + half);
                }
                out.push(table);
            }
        }
    }
    out
}

fn table_of(n: usize, truth: u32) -> ProfileTable {
    ProfileTable::from_fn(singletons(n), n, PROFILE_LIMIT, |d| {
        let s: usize = d.iter().enumerate().map(|(i, &x)| x << i).sum();
        truth >> s & 1 == 1
    })
    .unwrap()
}

/// All truth tables of `[q; w]` with weights 0..=max_w and every useful quota.
fn threshold_tables(n: usize, max_w: u64) -> BTreeMap<u32, u64> {
    let mut least_total = BTreeMap::new();
    let mut w = vec![0u64; n];
    loop {
        let total: u64 = w.iter().sum();
        for q in 0..=total + 1 {
            let mut table = 0u32;
            for s in 0..1u32 << n {
                let sum: u64 = (0..n).filter(|&i| s >> i & 1 == 1).map(|i| w[i]).sum();
                if sum >= q {
                    table |= 1 << s;
                }
            }
            let e = least_total.entry(table).or_insert(total);
            *e = (*e).min(total);
        }
        let mut k = 0;
        while k < n && w[k] == max_w {
            w[k] = 0;
            k += 1;
        }
        if k == n {
            break;
        }
        w[k] += 1;
    }
    least_total
}

#[test]
fn dedekind_numbers() {
    // Dedekind numbers (monotone Boolean functions of n variables, the
    // constants included): 3, 6, 20, 168, 7581 for n = 1..5 (OEIS A000372,
    // confirmed with the search tool).
    let counts: Vec<usize> = (1..=5).map(|n| monotone_functions(n).len()).collect();
    assert_eq!(counts, vec![3, 6, 20, 168, 7581]);
}

#[test]
fn weighted_rules_on_up_to_five_members() {
    // The number of weighted rules (monotone threshold functions, both
    // constant rules included) on n labelled members is 3, 6, 20, 150, 3287
    // for n = 1..5: OEIS A002078 ("N-equivalence classes of threshold
    // functions of n or fewer variables", 2, 3, 6, 20, 150, 3287, ... from
    // n = 0; each class holds exactly one monotone function), after
    // S. Muroga, Threshold Logic and Its Applications, Wiley 1971, Table
    // 2.3.2. Confirmed here twice by exhaustive search: every monotone rule
    // is put to the weightedness test, and every weighted game with weights
    // 0..=6 is enumerated; the two sets must be equal.
    let expected = [3usize, 6, 20, 150, 3287];
    for n in 1..=5 {
        let by_enumeration = threshold_tables(n, 6);
        let mut weighted = BTreeSet::new();
        for truth in monotone_functions(n) {
            let table = table_of(n, truth);
            let w = weighted::test(&table).unwrap();
            match w.verdict {
                Verdict::Weighted {
                    representation,
                    minimal,
                } => {
                    assert_eq!(minimal, Minimality::Proved);
                    assert!(weighted::represents(
                        &table,
                        &representation.weights,
                        representation.quota
                    ));
                    // Least total: the enumeration of small weights agrees.
                    assert_eq!(
                        Some(&representation.total()),
                        by_enumeration.get(&truth),
                        "n = {n}, rule {truth:#x}: {}",
                        representation.notation()
                    );
                    weighted.insert(truth);
                }
                Verdict::NotWeighted {
                    transfer,
                    intersection,
                } => {
                    // The proof holds on the truth table itself.
                    let wins = |c: &[usize]| truth >> c.iter().map(|&i| 1usize << i).sum::<usize>() & 1 == 1;
                    assert!(transfer.holds(n, wins), "n = {n}, rule {truth:#x}");
                    assert!(intersection.len() >= 2);
                }
            }
        }
        assert_eq!(weighted.len(), expected[n - 1], "n = {n}");
        let enumerated: BTreeSet<u32> = by_enumeration.keys().copied().collect();
        assert_eq!(weighted, enumerated, "n = {n}");
    }
}

#[test]
fn of_the_168_monotone_rules_on_four_members_150_are_weighted() {
    // Dedekind number 168 (OEIS A000372) and 150 weighted (OEIS A002078).
    let rules = monotone_functions(4);
    assert_eq!(rules.len(), 168);
    let weighted = rules
        .iter()
        .filter(|&&t| {
            matches!(
                weighted::test(&table_of(4, t)).unwrap().verdict,
                Verdict::Weighted { .. }
            )
        })
        .count();
    assert_eq!(weighted, 150);
}

#[test]
fn two_chambers_and_an_executive_are_not_weighted() {
    // Taylor & Zwicker, Simple Games (1999), from memory: the rule "more
    // than half of each chamber and the executive, or two thirds of each
    // chamber" (the federal system) is not a weighted game, shown by a
    // trading transfer, and has dimension 2. A 2-trade by hand: with S = 290
    // representatives and 66 senators, S + a senator passes (override) and S
    // + a representative fails; with T = 289 and 67, T + a representative
    // passes and T + a senator fails; the two passing and two failing
    // coalitions hold the same members.
    let rule = clout::scenarios::federal_536();
    let (table, level) = weighted::table_for(&rule).unwrap();
    assert_eq!(level, weighted::Level::Types);
    assert_eq!(table.len(), 436 * 101 * 2);
    let w = weighted::test(&table).unwrap();
    let Verdict::NotWeighted {
        transfer,
        intersection,
    } = w.verdict
    else {
        panic!("the federal rule is not weighted");
    };
    // Checked on the rule itself, coalition by coalition.
    assert!(transfer.holds(536, |c| profile::passes(&rule, c)));
    assert_eq!(transfer.winning.len(), 2, "a 2-trade suffices");
    assert_eq!(intersection.len(), 2);
    let mut coalitions_checked = 0;
    table.each(|i, d| {
        let c = table.coalition(d);
        let all = intersection.iter().all(|r| {
            let weight: u64 = c.iter().map(|&m| r.weights[m]).sum();
            weight >= r.quota
        });
        assert_eq!(all, table.wins(i));
        coalitions_checked += 1;
    });
    assert_eq!(coalitions_checked, 88_072);
}

#[test]
fn dummies_drop_out() {
    // [7; 4, 3, 1, 1]: only {0, 1} and its supersets reach 7 (4 + 1 + 1 = 6
    // and 3 + 1 + 1 = 5 fall short), so members 2 and 3 are dummies and the
    // rule is unanimity of the first two, [2; 1, 1, 0, 0] (by hand).
    let rule = Rule::weighted(7, vec![4u64, 3, 1, 1]).unwrap();
    let (table, _) = weighted::table_for(&rule).unwrap();
    assert_eq!(weighted::dummies(&table), vec![2, 3]);
    let w = weighted::test(&table).unwrap();
    assert_eq!(
        w.verdict,
        Verdict::Weighted {
            representation: Representation {
                quota: 2,
                weights: vec![1, 1, 0, 0]
            },
            minimal: Minimality::Proved
        }
    );
}

#[test]
fn fit_recovers_the_indices_of_a_weighted_game() {
    use clout::toolkit::fit::{self, Options};
    // Targets taken from existing weighted games' normalized Banzhaf indices
    // (computed by the core's exact engines): the fit must find a game with
    // the same indices, checked exactly as ratios of swing counts.
    let games: [(u64, &[u64]); 4] = [
        (3, &[2, 1, 1]),
        (8, &[5, 3, 2, 1, 1]),
        (12, &[6, 4, 3, 3, 2, 1]),
        (39, &[7, 7, 7, 7, 7, 1, 1, 1, 1, 1, 1, 1, 1, 1, 1]),
    ];
    for (q, w) in games {
        let rule = Rule::weighted(q, w.to_vec()).unwrap();
        let power = clout::analyze::<_, u128>(&rule).unwrap();
        let targets: Vec<f64> = (0..w.len()).map(|i| power.table().banzhaf(i)).collect();
        let found = fit::fit(
            &targets,
            Options {
                budget: 2_000_000_000,
                max_total: 10_000,
            },
        )
        .unwrap();
        assert!(found.max_deviation < 1e-12, "[{q}; {w:?}]: {found:?}");
        let again = Rule::weighted(found.quota, found.weights.clone()).unwrap();
        let p2 = clout::analyze::<_, u128>(&again).unwrap();
        let s1: Vec<u128> = power.members.iter().map(|m| m.swings).collect();
        let s2: Vec<u128> = p2.members.iter().map(|m| m.swings).collect();
        let (t1, t2): (u128, u128) = (s1.iter().sum(), s2.iter().sum());
        for i in 0..w.len() {
            assert_eq!(s1[i] * t2, s2[i] * t1, "[{q}; {w:?}] member {i}");
        }
    }
}
