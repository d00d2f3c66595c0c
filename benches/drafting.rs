//! Drafting commands on the treaty-scale example `examples/union.clout`
//! (27 members with distinct exact populations): the minimal winning and
//! minimal blocking coalitions counted, the desirability order, the exact
//! comparison with a variant whose blocking minority is five, and the full
//! report's exact analysis (with the minimal-coalition indices). The README's
//! performance table records these.

use std::hint::black_box;

use clout::drafting::{
    coalitions, compare, order, CoalitionKind, CoalitionOptions, CompareOptions, Unwatched,
};
use clout::language::exact;
use criterion::{criterion_group, criterion_main, Criterion};

const UNION: &str = include_str!("../examples/union.clout");

fn drafting(c: &mut Criterion) {
    let file = clout::compile(UNION).unwrap();
    let variant = clout::compile(&UNION.replace("count against < 4", "count against < 5")).unwrap();
    let rule = &file.rules[0];
    let mut g = c.benchmark_group("drafting");
    g.sample_size(10);
    for (name, kind) in [
        ("minimal-winning", CoalitionKind::MinimalWinning),
        ("minimal-blocking", CoalitionKind::MinimalBlocking),
    ] {
        let options = CoalitionOptions { kind, limit: 0 };
        g.bench_function(format!("union-27/coalitions-{name}-counted"), |b| {
            b.iter(|| black_box(coalitions(&file, rule, &options, &mut Unwatched).unwrap().count))
        });
    }
    g.bench_function("union-27/order", |b| {
        b.iter(|| black_box(order(&file, rule, &mut Unwatched).unwrap().classes.len()))
    });
    let options = CompareOptions::default();
    g.bench_function("union-27/compare-with-variant", |b| {
        b.iter(|| {
            black_box(
                compare(&file, rule, &variant, &variant.rules[0], &options, &mut Unwatched)
                    .unwrap()
                    .differing_coalitions,
            )
        })
    });
    g.bench_function("union-27/report-exact-analysis", |b| {
        b.iter(|| {
            let plan = exact::choose(&rule.rule, u128::MAX).unwrap();
            black_box(exact::power(&rule.rule, plan.engine).unwrap().minimal_winning)
        })
    });
    g.finish();
}

criterion_group!(benches, drafting);
criterion_main!(benches);
