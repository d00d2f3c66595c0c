//! Scale benchmarks: the scenario suite of the README's performance table.
//!
//! committee-15, union-27, federal-536, assembly-1000 (exact and f64),
//! token-10000 (approximate), plus the baselines the speedups are measured
//! against: enumeration of a 20-member union (extrapolated to 27 in the
//! README) and one table build (per-member recomputation costs n of them).

use std::hint::black_box;

use clout::approx::{penrose_f64, sample_penrose, sample_shapley, Sampling};
use clout::engine::Scope;
use clout::{analyze, analyze_opts, analyze_with, scenarios, Count1024, Engine, Options};
use criterion::{criterion_group, criterion_main, Criterion};

fn exact(c: &mut Criterion) {
    let committee = scenarios::committee_15();
    c.bench_function("committee-15/all-indices", |b| {
        b.iter(|| black_box(analyze::<_, u128>(black_box(&committee)).unwrap().rule.winning))
    });
    let mut g = c.benchmark_group("scale");
    g.sample_size(10);
    let union = scenarios::union_27();
    g.bench_function("union-27/exact-banzhaf-and-shapley", |b| {
        b.iter(|| black_box(analyze::<_, Count1024>(black_box(&union)).unwrap().rule.winning))
    });
    let union20 = scenarios::union_prefix(20);
    g.bench_function("union-20/enumerate-baseline", |b| {
        b.iter(|| {
            black_box(
                analyze_with::<_, u128>(black_box(&union20), Engine::Enumerate)
                    .unwrap()
                    .rule
                    .winning,
            )
        })
    });
    g.bench_function("union-20/diagram", |b| {
        b.iter(|| {
            black_box(
                analyze_with::<_, u128>(black_box(&union20), Engine::Diagram)
                    .unwrap()
                    .rule
                    .winning,
            )
        })
    });
    let federal = scenarios::federal_536();
    g.bench_function("federal-536/all-indices", |b| {
        b.iter(|| black_box(analyze::<_, Count1024>(black_box(&federal)).unwrap().rule.winning))
    });
    let assembly = scenarios::assembly_1000();
    let swings = Options {
        scope: Scope::Swings,
        ..Options::default()
    };
    g.bench_function("assembly-1000/exact-banzhaf", |b| {
        b.iter(|| {
            black_box(
                analyze_opts::<_, Count1024>(black_box(&assembly), &swings)
                    .unwrap()
                    .rule
                    .winning,
            )
        })
    });
    g.bench_function("assembly-1000/f64-banzhaf", |b| {
        b.iter(|| black_box(penrose_f64(black_box(&assembly)).unwrap()))
    });
    // Per-member recomputation needs one table per member; time one table
    // (a rule of 999 members) and multiply by 1,000 in the README.
    let w: Vec<u64> = (1..=999).collect();
    let one_less = clout::Rule::weighted(250_251, w).unwrap();
    g.bench_function("assembly-1000/one-table-f64", |b| {
        b.iter(|| black_box(penrose_f64(black_box(&one_less)).unwrap()))
    });
    let token = scenarios::token_10000();
    let sampling = Sampling {
        seed: 2026,
        tolerance: 0.001,
        ..Sampling::default()
    };
    g.bench_function("token-10000/approx-banzhaf", |b| {
        b.iter(|| black_box(sample_penrose(black_box(&token), &sampling).unwrap().samples))
    });
    let loose = Sampling {
        tolerance: 0.005,
        ..sampling
    };
    g.bench_function("token-10000/approx-shapley-0.005", |b| {
        b.iter(|| black_box(sample_shapley(black_box(&token), &loose).unwrap().samples))
    });
    g.finish();
}

criterion_group!(benches, exact);
criterion_main!(benches);
