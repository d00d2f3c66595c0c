//! The voting model on dao-3000: the fictional 3,000-holder treasury
//! (`examples/treasury.clout`, balances from `examples/holders.csv`), its
//! `signal` rule (20% of all tokens take part, more yes than no) under a
//! turnout of 15%. The exact path passes its state limit, so this times
//! the refusal plus Monte Carlo (at most 200,000 ballots).

use std::collections::HashMap;
use std::hint::black_box;

use clout::approx::Sampling;
use clout::chances::{exact_model, sample_model, Chances};
use clout::report::model::{MAX_STATES, MODEL_SAMPLES};
use criterion::{criterion_group, criterion_main, Criterion};

fn treasury() -> clout::RuleFile {
    let root = env!("CARGO_MANIFEST_DIR");
    let rule = std::fs::read_to_string(format!("{root}/examples/treasury.clout")).unwrap();
    let holders = std::fs::read_to_string(format!("{root}/examples/holders.csv")).unwrap();
    let mut tables = HashMap::new();
    tables.insert("holders.csv".to_string(), holders);
    clout_dsl::compile_with(&rule, &mut tables).unwrap()
}

fn model(c: &mut Criterion) {
    let file = treasury();
    let signal = &file.rule(Some("signal")).unwrap().rule;
    let chances = vec![Chances::turnout(0.15); signal.members()];
    let mut g = c.benchmark_group("dao-3000");
    g.sample_size(10);
    g.bench_function("turnout-0.15/exact-refused", |b| {
        b.iter(|| black_box(exact_model(black_box(signal), &chances, MAX_STATES).is_err()))
    });
    let s = Sampling {
        max_samples: MODEL_SAMPLES,
        ..Sampling::default()
    };
    g.bench_function("turnout-0.15/monte-carlo", |b| {
        b.iter(|| black_box(sample_model(black_box(signal), &chances, &s).unwrap().samples))
    });
    g.finish();
}

criterion_group!(benches, model);
criterion_main!(benches);
