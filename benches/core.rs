//! Core benchmarks: all indices of committee-15 and federal-536, and one
//! decision of the 27-member double majority (fictional scenarios).

use std::hint::black_box;

use clout::{analyze, decide, scenarios, Count1024};
use criterion::{criterion_group, criterion_main, Criterion};

fn all_indices(c: &mut Criterion) {
    let committee = scenarios::committee_15();
    c.bench_function("committee-15/all-indices", |b| {
        b.iter(|| {
            let a = analyze::<_, u128>(black_box(&committee)).unwrap();
            black_box(a.table().banzhaf(0))
        })
    });
    let federal = scenarios::federal_536();
    let mut g = c.benchmark_group("federal-536");
    g.sample_size(20);
    g.bench_function("all-indices", |b| {
        b.iter(|| {
            let a = analyze::<_, Count1024>(black_box(&federal)).unwrap();
            black_box(a.table().shapley_shubik(535))
        })
    });
    g.finish();
}

fn decide_27(c: &mut Criterion) {
    let rule = scenarios::union_27();
    let ballots = scenarios::ballots(27, 1024, 7);
    let mut i = 0;
    c.bench_function("decide-27/passes", |b| {
        b.iter(|| {
            i = (i + 1) & 1023;
            black_box(rule.passes(black_box(&ballots[i])).unwrap())
        })
    });
    let mut tallies = [clout::AtomTally {
        sum: 0,
        quota: 0,
        met: false,
        no: 0,
        abstain: 0,
    }; 8];
    c.bench_function("decide-27/decide-into-caller-tallies", |b| {
        b.iter(|| {
            i = (i + 1) & 1023;
            black_box(clout::decide_into(&rule, black_box(&ballots[i]), &mut tallies).unwrap())
        })
    });
    c.bench_function("decide-27/decide-with-tallies", |b| {
        b.iter(|| {
            i = (i + 1) & 1023;
            black_box(decide(&rule, black_box(&ballots[i])).unwrap().passed)
        })
    });
}

criterion_group!(benches, all_indices, decide_27);
criterion_main!(benches);
