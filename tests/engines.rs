//! Every fast engine agrees exactly with enumeration, and the indices obey
//! the identities of the theory, on random weighted and compound rules.

use clout::{
    analyze_with, Analysis, Atom, Coalition, Condition, Count1024, Counter, Engine, Linear, Node, Rule,
};
use proptest::prelude::*;

type C = Count1024;

/// A random rule: 1 to 3 attributes over `n` members, 1 to 4 atoms, and a
/// random AND/OR tree over the atoms.
#[derive(Clone, Debug)]
struct Spec {
    n: usize,
    weights: Vec<u64>,
    atoms: Vec<Atom>,
    formula: Vec<Node>,
}

fn formula_over(atoms: usize) -> impl Strategy<Value = Vec<Node>> {
    // Postfix built from a random binary-ish tree: fold atoms left to right,
    // each step joining the new atom with All or Any, sometimes 3-ary.
    prop::collection::vec((any::<bool>(), any::<bool>()), atoms).prop_map(move |ops| {
        let mut f = vec![Node::Atom(0)];
        let mut pending = 1u16;
        for (i, (and, close)) in ops.iter().enumerate().skip(1) {
            f.push(Node::Atom(i as u16));
            pending += 1;
            if *close || i + 1 == atoms {
                f.push(if *and {
                    Node::All(pending)
                } else {
                    Node::Any(pending)
                });
                pending = 1;
            }
        }
        if pending > 1 {
            f.push(Node::All(pending));
        }
        f
    })
}

fn spec(max_n: usize, max_weight: u64) -> impl Strategy<Value = Spec> {
    (1..=max_n, 1usize..=3, 1usize..=4).prop_flat_map(move |(n, attrs, atoms)| {
        (
            prop::collection::vec(0..=max_weight, n * attrs),
            prop::collection::vec((0..attrs as u16, 0.0f64..1.05), atoms),
            formula_over(atoms),
        )
            .prop_map(move |(weights, raw_atoms, formula)| {
                let atoms = raw_atoms
                    .iter()
                    .map(|&(a, share)| {
                        let total: u64 = weights[a as usize * n..(a as usize + 1) * n].iter().sum();
                        Atom {
                            attribute: a,
                            quota: (total as f64 * share).round() as u64,
                        }
                    })
                    .collect();
                Spec {
                    n,
                    weights,
                    atoms,
                    formula,
                }
            })
    })
}

fn weighted(max_n: usize, max_weight: u64) -> impl Strategy<Value = Spec> {
    (1..=max_n).prop_flat_map(move |n| {
        (prop::collection::vec(0..=max_weight, n), 0.0f64..1.05).prop_map(move |(weights, share)| {
            let total: u64 = weights.iter().sum();
            let quota = (total as f64 * share).round() as u64;
            Spec {
                n,
                weights,
                atoms: vec![Atom { attribute: 0, quota }],
                formula: vec![Node::Atom(0)],
            }
        })
    })
}

fn build(s: &Spec) -> Rule<Vec<u64>> {
    Rule::new(s.n, s.weights.clone(), &s.atoms, &s.formula).unwrap()
}

fn assert_same(oracle: &Analysis<C>, other: &Analysis<C>, minimal: bool) -> Result<(), TestCaseError> {
    let (o, x) = (&oracle.rule, &other.rule);
    prop_assert_eq!(o.winning, x.winning);
    prop_assert_eq!(o.losing, x.losing);
    prop_assert_eq!(o.proper, x.proper);
    prop_assert_eq!(o.strong, x.strong);
    prop_assert_eq!(o.smallest_winning, x.smallest_winning);
    if minimal {
        prop_assert_eq!(o.minimal_winning, x.minimal_winning);
        prop_assert_eq!(o.minimal_blocking, x.minimal_blocking);
    }
    let (to, tx) = (oracle.table(), other.table());
    for (i, (a, b)) in oracle.members.iter().zip(&other.members).enumerate() {
        prop_assert_eq!(a.swings, b.swings, "member {}", i);
        prop_assert_eq!(
            a.shapley_shubik_numerator,
            b.shapley_shubik_numerator,
            "member {}",
            i
        );
        prop_assert!((a.shapley_shubik - b.shapley_shubik).abs() < 1e-12);
        prop_assert_eq!(a.veto, b.veto);
        prop_assert_eq!(a.dictator, b.dictator);
        if minimal {
            prop_assert_eq!(a.minimal_winning, b.minimal_winning);
            let close = |p: Option<f64>, q: Option<f64>| (p.unwrap() - q.unwrap()).abs() < 1e-12;
            prop_assert!(close(to.johnston(i), tx.johnston(i)));
            prop_assert!(close(to.deegan_packel(i), tx.deegan_packel(i)));
            prop_assert!(close(to.public_good(i), tx.public_good(i)));
        }
    }
    Ok(())
}

fn compare_all(s: &Spec) -> Result<(), TestCaseError> {
    let rule = build(s);
    let oracle = analyze_with::<_, C>(&rule, Engine::Enumerate).unwrap();
    let profile = analyze_with::<_, C>(&rule, Engine::Profile).unwrap();
    assert_same(&oracle, &profile, true)?;
    let diagram = analyze_with::<_, C>(&rule, Engine::Diagram).unwrap();
    assert_same(&oracle, &diagram, false)?;
    match analyze_with::<_, C>(&rule, Engine::Dense) {
        Ok(dense) => assert_same(&oracle, &dense, false)?,
        Err(clout::Error::EngineUnsuitable { .. }) => {}
        Err(e) => return Err(TestCaseError::fail(e.to_string())),
    }
    Ok(())
}

/// Brute force without the engine: does `rule` pass coalition `mask`?
fn passes(rule: &Rule<Vec<u64>>, mask: u64) -> bool {
    let mut c = Coalition::<1>::new();
    for i in 0..rule.members() {
        if mask >> i & 1 == 1 {
            c.insert(i).unwrap();
        }
    }
    rule.passes(&c).unwrap()
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 200, ..ProptestConfig::default() })]

    #[test]
    fn engines_agree_on_weighted_rules(s in weighted(12, 9)) {
        compare_all(&s)?;
    }

    #[test]
    fn engines_agree_on_weighted_rules_with_ties(s in weighted(14, 3)) {
        compare_all(&s)?;
    }

    #[test]
    fn engines_agree_on_compound_rules(s in spec(10, 6)) {
        compare_all(&s)?;
    }

    #[test]
    fn enumeration_matches_the_definition(s in spec(8, 5)) {
        // Swings counted straight from the definition, coalition by coalition.
        let rule = build(&s);
        let a = analyze_with::<_, C>(&rule, Engine::Enumerate).unwrap();
        let mut winning = 0u64;
        for mask in 0..1u64 << s.n {
            if passes(&rule, mask) {
                winning += 1;
            }
        }
        prop_assert_eq!(a.rule.winning.to_string(), winning.to_string());
        for i in 0..s.n {
            let swings = (0..1u64 << s.n)
                .filter(|m| m >> i & 1 == 1 && passes(&rule, *m) && !passes(&rule, m & !(1 << i)))
                .count();
            prop_assert_eq!(a.members[i].swings.to_string(), swings.to_string());
        }
    }

    #[test]
    fn index_identities(s in spec(10, 6)) {
        let rule = build(&s);
        let a = analyze_with::<_, C>(&rule, Engine::Profile).unwrap();
        let t = a.table();
        let n = s.n;
        let ss: f64 = (0..n).map(|i| t.shapley_shubik(i)).sum();
        // Efficiency (Shapley & Shubik 1954): the index sums to 1 unless no
        // member is ever pivotal (nothing wins, or the empty coalition wins).
        let trivial = a.members.iter().all(|m| m.swings.is_zero());
        prop_assert!(if trivial { ss == 0.0 } else { (ss - 1.0).abs() < 1e-9 }, "sum {}", ss);
        for i in 0..n {
            if t.is_dummy(i) {
                prop_assert_eq!(t.banzhaf(i), 0.0);
                prop_assert_eq!(t.shapley_shubik(i), 0.0);
                prop_assert_eq!(t.johnston(i).unwrap(), 0.0);
                prop_assert_eq!(t.deegan_packel(i).unwrap(), 0.0);
                prop_assert_eq!(t.public_good(i).unwrap(), 0.0);
            }
            // Members with the same weights in every attribute are symmetric.
            for j in 0..n {
                let same = (0..rule.attributes()).all(|at| rule.weight(at, i) == rule.weight(at, j));
                if same {
                    prop_assert_eq!(a.members[i].swings, a.members[j].swings);
                    prop_assert_eq!(a.members[i].shapley_shubik_numerator, a.members[j].shapley_shubik_numerator);
                }
            }
        }
    }

    #[test]
    fn local_monotonicity(s in weighted(10, 8), who in 0usize..10, extra in 1u64..5) {
        // Adding weight to a member of a weighted game (same quota) never
        // lowers its swing count: its swings are the coalitions of others
        // with q - w <= w(S) < q, a range that only widens as w grows
        // (common practice). Heavier members never swing less than lighter
        // ones either (desirability follows weight).
        let who = who % s.n;
        let mut heavier = s.clone();
        heavier.weights[who] += extra;
        let a = analyze_with::<_, C>(&build(&s), Engine::Enumerate).unwrap();
        let b = analyze_with::<_, C>(&build(&heavier), Engine::Enumerate).unwrap();
        prop_assert!(b.members[who].swings >= a.members[who].swings);
        for i in 0..s.n {
            if s.weights[i] <= s.weights[who] {
                prop_assert!(a.members[i].swings <= a.members[who].swings);
            }
        }
    }
}

// ---- four-state conditions and the swings-only scope ----

/// A compound rule whose conditions mix yes-sum thresholds with four-state
/// linear forms (`yes*Y + no*N + abstain*A >= bound`, monotone), over a
/// random AND/OR tree; `one_attribute` puts every condition on attribute 0,
/// which sends the swings-only dense count down the residue path.
fn four_state(max_n: usize, max_weight: u64) -> impl Strategy<Value = Rule<Vec<u64>>> {
    (1..=max_n, 1usize..=3, 1usize..=5, any::<bool>()).prop_flat_map(move |(n, attrs, k, one_attribute)| {
        let condition = (
            0..attrs as u16,
            any::<bool>(),
            0i32..4,
            -3i32..4,
            -3i32..4,
            -1.2f64..1.2,
        );
        (
            prop::collection::vec(0..=max_weight, n * attrs),
            prop::collection::vec(condition, k),
            formula_over(k),
        )
            .prop_map(move |(weights, raw, formula)| {
                let conditions: Vec<Condition> = raw
                    .iter()
                    .map(|&(a, linear, yes, no, abstain, share)| {
                        let a = if one_attribute { 0 } else { a };
                        let total: u64 = weights[a as usize * n..(a as usize + 1) * n].iter().sum();
                        let bound = (total as f64 * share).round() as i128;
                        if linear {
                            // Monotone: the yes coefficient is the largest.
                            let yes = yes.max(no).max(abstain).max(0);
                            Condition::Linear(Linear {
                                attribute: a,
                                yes,
                                no,
                                abstain,
                                bound,
                            })
                        } else {
                            Condition::Yes(Atom {
                                attribute: a,
                                quota: bound.clamp(0, total as i128 + 1) as u64,
                            })
                        }
                    })
                    .collect();
                Rule::with_conditions(n, weights, &conditions, &formula).expect("a valid rule")
            })
    })
}

fn swings_only(rule: &Rule<Vec<u64>>, engine: Engine) -> Result<Analysis<C>, clout::Error> {
    clout::analyze_opts(
        rule,
        &clout::Options {
            engine: Some(engine),
            scope: clout::engine::Scope::Swings,
            budget: u128::MAX,
            ..clout::Options::default()
        },
    )
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 300, ..ProptestConfig::default() })]

    #[test]
    fn engines_agree_on_four_state_rules(rule in four_state(10, 6)) {
        let oracle = analyze_with::<_, C>(&rule, Engine::Enumerate).unwrap();
        // Enumeration against the definition, coalition by coalition.
        let n = rule.members();
        let winning = (0..1u64 << n).filter(|&m| passes(&rule, m)).count();
        prop_assert_eq!(oracle.rule.winning.to_string(), winning.to_string());
        for engine in [Engine::Profile, Engine::Diagram, Engine::Dense] {
            match analyze_with::<_, C>(&rule, engine) {
                Ok(other) => assert_same(&oracle, &other, engine == Engine::Profile)?,
                Err(clout::Error::EngineUnsuitable { .. }) if engine == Engine::Dense => {}
                Err(e) => return Err(TestCaseError::fail(format!("{}: {e}", engine.name()))),
            }
        }
    }

    #[test]
    fn swings_only_scope_agrees_with_enumeration(rule in four_state(12, 9)) {
        let oracle = analyze_with::<_, C>(&rule, Engine::Enumerate).unwrap();
        for engine in [Engine::Enumerate, Engine::Profile, Engine::Diagram, Engine::Dense] {
            match swings_only(&rule, engine) {
                Ok(a) => {
                    prop_assert_eq!(a.rule.winning, oracle.rule.winning, "{}", engine.name());
                    prop_assert_eq!(a.rule.proper, oracle.rule.proper, "{}", engine.name());
                    prop_assert_eq!(a.rule.strong, oracle.rule.strong, "{}", engine.name());
                    for (x, y) in a.members.iter().zip(&oracle.members) {
                        prop_assert_eq!(x.swings, y.swings, "{}", engine.name());
                    }
                }
                Err(clout::Error::EngineUnsuitable { .. }) if engine == Engine::Dense => {}
                Err(e) => return Err(TestCaseError::fail(format!("{}: {e}", engine.name()))),
            }
        }
    }
}
