//! The minimal-coalition counts and indices of the decision diagram against
//! enumerating every coalition of the treaty-scale examples (2^27 each; run
//! with `cargo test --release --test drafting -- --ignored`, about a minute).

use clout::{analyze_with, Count1024, Engine, Rule};

/// Everything the diagram's minimal-coalition pass claims, counted by brute
/// force over all 2^n coalitions: winning, minimal winning, minimal
/// blocking (maximal losing), per member minimal winning containing it and
/// (member, κ) counts of winning coalitions in which the member swings with
/// κ swings in all.
struct Brute {
    winning: u64,
    minimal_winning: u64,
    minimal_blocking: u64,
    containing: Vec<u64>,
    /// `by_size[i][s - 1]`: minimal winning coalitions of size s containing i.
    by_size: Vec<Vec<u64>>,
    /// `by_kappa[i][k - 1]`: winning coalitions where i swings, k swings in all.
    by_kappa: Vec<Vec<u64>>,
}

fn brute(rule: &Rule<Vec<u64>>) -> Brute {
    let n = rule.members();
    let m = rule.attributes();
    assert!(n <= 28, "brute force is for small rules");
    // Sums over halves of the members, per attribute.
    let half = n / 2;
    let table = |from: usize, to: usize, a: usize| -> Vec<u64> {
        let k = to - from;
        let mut t = vec![0u64; 1 << k];
        for mask in 1..(1usize << k) {
            let low = mask.trailing_zeros() as usize;
            t[mask] = t[mask & (mask - 1)] + rule.weight(a, from + low);
        }
        t
    };
    let lo: Vec<Vec<u64>> = (0..m).map(|a| table(0, half, a)).collect();
    let hi: Vec<Vec<u64>> = (0..m).map(|a| table(half, n, a)).collect();
    let atoms = rule.atoms();
    let wins = |sums: &[u64]| rule.eval(|j| sums[usize::from(atoms[j].attribute)] >= atoms[j].quota);
    let mut out = Brute {
        winning: 0,
        minimal_winning: 0,
        minimal_blocking: 0,
        containing: vec![0; n],
        by_size: vec![vec![0; n]; n],
        by_kappa: vec![vec![0; n]; n],
    };
    let mut sums = vec![0u64; m];
    let mut changed = vec![0u64; m];
    let mut swings = Vec::with_capacity(n);
    for mask in 0u64..(1u64 << n) {
        let (l, h) = ((mask & ((1 << half) - 1)) as usize, (mask >> half) as usize);
        for a in 0..m {
            sums[a] = lo[a][l] + hi[a][h];
        }
        let with = |changed: &mut Vec<u64>, i: usize, add: bool| {
            for a in 0..m {
                changed[a] = if add {
                    sums[a] + rule.weight(a, i)
                } else {
                    sums[a] - rule.weight(a, i)
                };
            }
        };
        if wins(&sums) {
            out.winning += 1;
            swings.clear();
            for i in (0..n).filter(|i| mask & (1 << i) != 0) {
                with(&mut changed, i, false);
                if !wins(&changed) {
                    swings.push(i);
                }
            }
            let size = mask.count_ones() as usize;
            for &i in &swings {
                out.by_kappa[i][swings.len() - 1] += 1;
            }
            if swings.len() == size {
                out.minimal_winning += 1;
                for &i in &swings {
                    out.containing[i] += 1;
                    out.by_size[i][size - 1] += 1;
                }
            }
        } else {
            let maximal = (0..n).filter(|i| mask & (1 << i) == 0).all(|i| {
                with(&mut changed, i, true);
                wins(&changed)
            });
            if maximal {
                out.minimal_blocking += 1;
            }
        }
    }
    out
}

/// Σ counts[k] / (k + 1), exactly as a fraction's value in f64.
fn reciprocal(counts: &[u64]) -> f64 {
    counts
        .iter()
        .enumerate()
        .map(|(k, &c)| c as f64 / (k as f64 + 1.0))
        .sum()
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-12 * a.abs().max(b.abs())
}

/// The diagram's figures equal the brute-force ones.
fn diagram_agrees(rule: &Rule<Vec<u64>>) {
    let n = rule.members();
    let got = analyze_with::<_, Count1024>(rule, Engine::Diagram).unwrap();
    let b = brute(rule);
    let t = got.table();
    assert_eq!(got.rule.winning.to_string(), b.winning.to_string());
    assert_eq!(
        got.rule.minimal_winning.unwrap().to_string(),
        b.minimal_winning.to_string()
    );
    assert_eq!(
        got.rule.minimal_blocking.unwrap().to_string(),
        b.minimal_blocking.to_string()
    );
    let containing_total: u64 = b.containing.iter().sum();
    let johnston_total: f64 = b.by_kappa.iter().map(|k| reciprocal(k)).sum();
    for i in 0..n {
        assert_eq!(
            got.members[i].minimal_winning.unwrap().to_string(),
            b.containing[i].to_string(),
            "member {i}"
        );
        let public_good = b.containing[i] as f64 / containing_total as f64;
        assert!(close(t.public_good(i).unwrap(), public_good), "member {i}");
        let deegan_packel = reciprocal(&b.by_size[i]) / b.minimal_winning as f64;
        assert!(close(t.deegan_packel(i).unwrap(), deegan_packel), "member {i}");
        let johnston = reciprocal(&b.by_kappa[i]) / johnston_total;
        assert!(
            close(t.johnston(i).unwrap(), johnston),
            "member {i}: {:?} vs {johnston}",
            t.johnston(i)
        );
    }
}

#[test]
fn union_prefixes_agree_with_enumeration() {
    // The first 14 members of the benchmark union, every coalition.
    diagram_agrees(&clout::scenarios::union_prefix(14));
}

#[test]
#[ignore = "enumerates 2^27 coalitions twice; run in release"]
fn union_27_agrees_with_enumeration() {
    diagram_agrees(&clout::scenarios::union_27());
}

#[test]
#[ignore = "enumerates 2^27 coalitions; run in release"]
fn union_example_agrees_with_enumeration() {
    let file = clout::compile(include_str!("../examples/union.clout")).unwrap();
    diagram_agrees(&file.rules[0].rule);
}

/// The order of a rule past the pattern table's limit comes from the
/// diagram: complete, every class strictly above the later ones, more
/// populous members first (the core's proptest checks the symmetry test
/// behind the classes against enumeration).
#[test]
fn order_on_the_diagram_matches_the_table() {
    use clout::drafting::{order, Unwatched};
    // 27 members with distinct populations: over the table's limit.
    let file = clout::compile(include_str!("../examples/union.clout")).unwrap();
    let answer = order(&file, &file.rules[0], &mut Unwatched).unwrap();
    assert!(answer.complete);
    assert!(answer.incomparable.is_empty());
    let k = answer.classes.len();
    for (a, class) in answer.classes.iter().enumerate() {
        assert_eq!(class.above, (a + 1..k).collect::<Vec<_>>());
    }
    // More populous first.
    let r = &file.rules[0].rule;
    let heaviest = (0..r.attributes()).max_by_key(|&a| r.total(a)).unwrap();
    let population = |i: usize| r.weight(heaviest, i);
    let flat: Vec<usize> = answer
        .classes
        .iter()
        .flat_map(|c| c.members.indices.clone())
        .collect();
    assert_eq!(flat.len(), 27);
    for w in flat.windows(2) {
        assert!(population(w[0]) >= population(w[1]));
    }
}
