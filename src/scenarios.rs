//! Deterministic fictional scenarios shared by benchmarks, tests and demos.
//!
//! Every name and number here is invented; the shapes follow the benchmark
//! scenarios of the design notes.

use crate::{Atom, Node, Rule};

/// A 64-bit linear congruential generator (Knuth's MMIX constants), so the
/// data are the same on every machine without a dependency.
pub struct Lcg(pub u64);

impl Lcg {
    /// Next pseudo-random value.
    pub fn next_u64(&mut self) -> u64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        self.0 >> 11
    }
}

/// committee-15: five members with 7 votes and a veto, ten with 1;
/// passage needs 39 of 45 (`[39; 7 x5, 1 x10]`).
pub fn committee_15() -> Rule<Vec<u64>> {
    let mut w = vec![7u64; 5];
    w.extend([1u64; 10]);
    Rule::weighted(39, w).expect("valid scenario")
}

/// federal-536: a lower chamber of 435 and an upper chamber of 100 equal
/// members and an executive; passage by (more than half of both chambers
/// and the executive) or (at least two thirds of both chambers).
pub fn federal_536() -> Rule<Vec<u64>> {
    let n = 536;
    let mut w = vec![0u64; 3 * n];
    w[..435].fill(1);
    w[n + 435..n + 535].fill(1);
    w[2 * n + 535] = 1;
    let atoms = [
        Atom {
            attribute: 0,
            quota: 218,
        },
        Atom {
            attribute: 1,
            quota: 51,
        },
        Atom {
            attribute: 2,
            quota: 1,
        },
        Atom {
            attribute: 0,
            quota: 290,
        },
        Atom {
            attribute: 1,
            quota: 67,
        },
    ];
    let f = [
        Node::Atom(0),
        Node::Atom(1),
        Node::Atom(2),
        Node::All(3),
        Node::Atom(3),
        Node::Atom(4),
        Node::All(2),
        Node::Any(2),
    ];
    Rule::new(n, w, &atoms, &f).expect("valid scenario")
}

/// Fictional exact populations of 27 member states, heavy-tailed, summing
/// to about 450 million.
pub fn union_27_populations() -> Vec<u64> {
    let mut rng = Lcg(27);
    (0..27u64)
        .map(|i| {
            // Roughly 98 million / (i + 1)^0.9 plus up to 3% noise, at least 400,000.
            let base = 98_000_000.0 / ((i + 1) as f64).powf(0.9);
            let noise = (rng.next_u64() % 3_000) as f64 / 100_000.0;
            ((base * (1.0 + noise)) as u64).max(400_000 + rng.next_u64() % 100_000)
        })
        .collect()
}

/// union-27: (at least 15 of 27 members and at least 65% of the population)
/// or fewer than 4 members against.
pub fn union_27() -> Rule<Vec<u64>> {
    union_prefix(27)
}

/// `count` pseudo-random ballots over `n` members, each member voting yes
/// with probability 1/2.
pub fn ballots(n: usize, count: usize, seed: u64) -> Vec<crate::Coalition<1>> {
    let mut rng = Lcg(seed);
    (0..count)
        .map(|_| {
            let bits = rng.next_u64() ^ (rng.next_u64() << 32);
            let mask = if n >= 64 { u64::MAX } else { (1u64 << n) - 1 };
            crate::Coalition::from_words([bits & mask])
        })
        .collect()
}

/// assembly-1000: members with weights 1, 2, ..., 1000; passage by more
/// than half of the total weight.
pub fn assembly_1000() -> Rule<Vec<u64>> {
    let w: Vec<u64> = (1..=1000).collect();
    let total: u64 = w.iter().sum();
    Rule::weighted(crate::quota::more_than_share(1, 2, total).expect("share"), w).expect("valid scenario")
}

/// Heavy-tailed fictional token balances: the largest near 10^18, then
/// falling like a power law, with noise; the total stays below 2^64.
pub fn token_balances(n: usize) -> Vec<u64> {
    let mut rng = Lcg(10_000);
    (0..n)
        .map(|i| {
            let base = 1.0e18 / ((i + 1) as f64).powf(1.2);
            let noise = 1.0 + (rng.next_u64() % 1000) as f64 / 10_000.0;
            ((base * noise) as u64).max(1_000 + rng.next_u64() % 1_000)
        })
        .collect()
}

/// token-10000: 10,000 holders with heavy-tailed balances; passage by more
/// than half of all tokens.
pub fn token_10000() -> Rule<Vec<u64>> {
    let w = token_balances(10_000);
    let total: u64 = w.iter().sum();
    Rule::weighted(crate::quota::more_than_share(1, 2, total).expect("share"), w).expect("valid scenario")
}

/// The first `n` members of union-27 under the same rule shape (for
/// extrapolating enumeration time): at least 15/27 of the members and 65%
/// of their population, or at most 3 against.
pub fn union_prefix(n: usize) -> Rule<Vec<u64>> {
    let pop: Vec<u64> = union_27_populations().into_iter().take(n).collect();
    let total: u64 = pop.iter().sum();
    let mut w = vec![1u64; n];
    w.extend(&pop);
    let quotas = [
        (15 * n as u64).div_ceil(27),
        crate::quota::at_least_share(65, 100, total).expect("share"),
        crate::quota::against(
            crate::quota::Comparison::LessThan,
            crate::quota::Bound::Amount(4),
            n as u64,
        )
        .expect("quota"),
    ];
    crate::fixtures::two_tier(n, w, quotas).expect("valid scenario")
}
