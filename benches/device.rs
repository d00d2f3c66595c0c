//! Device benchmarks: deciding one ballot of a fictional 27-member double
//! majority (at least 15 members and at least 65% of a population of about
//! 450 million) on a rule loaded from its compiled image, from Rust and
//! through the C ABI, and loading the image itself.

use std::hint::black_box;

use clout::{decide, image, scenarios, Rule};
use clout_c::{
    clout_decide, clout_decide_members, clout_outcome, clout_result, clout_rule_load, clout_rule_words,
};
use criterion::{criterion_group, criterion_main, Criterion};

/// count >= 15 and population >= 65% of the total: the scenario's
/// fictional populations, scaled to about 450 million in all.
fn double_majority_27() -> Rule<Vec<u64>> {
    let raw = scenarios::union_27_populations();
    let raw_total: u64 = raw.iter().sum();
    let populations: Vec<u64> = raw
        .iter()
        .map(|&p| (u128::from(p) * 450_000_000 / u128::from(raw_total)) as u64)
        .collect();
    let total: u64 = populations.iter().sum();
    let mut w = vec![1u64; 27];
    w.extend(&populations);
    let quota = clout::quota::at_least_share(65, 100, total).expect("share");
    clout::fixtures::double_majority(27, w, [15, quota]).expect("valid rule")
}

fn decide_27(c: &mut Criterion) {
    let bytes = image::encode(&double_majority_27());
    let ballots = scenarios::ballots(27, 1024, 7);
    let mut g = c.benchmark_group("device/decide-27");

    let mut weights = vec![0u64; image::weights_needed(&bytes).expect("intact image")];
    let rule = image::load(&bytes, &mut weights).expect("intact image");
    let mut i = 0;
    g.bench_function("rust-decide", |b| {
        b.iter(|| {
            i = (i + 1) & 1023;
            let d = decide(&rule, black_box(&ballots[i])).expect("ballot fits");
            black_box((d.passed, d.tallies[1].sum))
        })
    });
    g.bench_function("rust-passes", |b| {
        b.iter(|| {
            i = (i + 1) & 1023;
            black_box(rule.passes(black_box(&ballots[i])).expect("ballot fits"))
        })
    });

    // The C ABI's no-heap path: rule memory owned by the caller.
    let mut words = 0usize;
    assert_eq!(
        clout_rule_words(bytes.as_ptr(), bytes.len(), &mut words),
        clout_result::Ok
    );
    let mut memory = vec![0u64; words];
    let mut handle = std::ptr::null();
    let code = clout_rule_load(
        bytes.as_ptr(),
        bytes.len(),
        memory.as_mut_ptr(),
        words,
        &mut handle,
    );
    assert_eq!(code, clout_result::Ok);
    let words: Vec<u64> = ballots.iter().map(|b| b.words()[0]).collect();
    let lists: Vec<Vec<u32>> = ballots
        .iter()
        .map(|b| b.iter().map(|m| m as u32).collect())
        .collect();
    let mut sums = [0u64; 2];
    let mut outcome = clout_outcome::default();
    g.bench_function("c-abi-bits", |b| {
        b.iter(|| {
            i = (i + 1) & 1023;
            let code = clout_decide(
                handle,
                black_box(&words[i]),
                1,
                sums.as_mut_ptr(),
                2,
                &mut outcome,
            );
            black_box((code, outcome.passed, sums[1]))
        })
    });
    g.bench_function("c-abi-member-list", |b| {
        b.iter(|| {
            i = (i + 1) & 1023;
            let list = black_box(&lists[i]);
            let code = clout_decide_members(
                handle,
                list.as_ptr(),
                list.len(),
                sums.as_mut_ptr(),
                2,
                &mut outcome,
            );
            black_box((code, outcome.passed, sums[1]))
        })
    });
    g.finish();
}

fn load_27(c: &mut Criterion) {
    let bytes = image::encode(&double_majority_27());
    let mut weights = vec![0u64; 54];
    c.bench_function("device/load-27-image", |b| {
        b.iter(|| black_box(image::load(black_box(&bytes), &mut weights).map(|r| r.members())))
    });
}

criterion_group!(benches, decide_27, load_27);
criterion_main!(benches);
