//! The same rule gives bit-identical JSON from `clout report --format json`
//! on every run and for every number of worker threads.
//!
//! Exact counts are deterministic by construction; the parallel paths (the
//! residue engine's primes, Monte Carlo batches of the approximation) split
//! fixed, seeded pieces of work, so their results must not depend on how
//! many threads run them. `CLOUT_THREADS=N` sets that number
//! (`clout_core::threads::available`).

use std::process::Command;

/// `clout ARGS` with `CLOUT_THREADS` set (or unset), its standard output.
fn report(args: &[&str], threads: Option<usize>) -> String {
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_clout"));
    cmd.args(args)
        .current_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/.."));
    match threads {
        Some(n) => cmd.env("CLOUT_THREADS", n.to_string()),
        None => cmd.env_remove("CLOUT_THREADS"),
    };
    let out = cmd.output().expect("the clout binary runs");
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(out.status.success(), "clout {args:?} failed: {stderr}");
    String::from_utf8(out.stdout).expect("UTF-8 output")
}

fn identical_for_every_thread_count(args: &[&str]) {
    let first = report(args, None);
    assert!(first.starts_with('{'), "JSON expected: {first}");
    assert_eq!(report(args, None), first, "a second run of {args:?} differs");
    for threads in [1, 2, 3, 7] {
        assert_eq!(
            report(args, Some(threads)),
            first,
            "{args:?} with CLOUT_THREADS={threads} differs"
        );
    }
}

#[test]
fn exact_reports_are_identical_across_runs_and_threads() {
    for file in [
        "examples/council.clout",
        "examples/transit.clout",
        "examples/compact.clout",
        "examples/cooperative.clout",
    ] {
        identical_for_every_thread_count(&["report", "--format", "json", file]);
    }
}

#[test]
fn approximate_reports_are_identical_across_runs_and_threads() {
    // Monte Carlo for both indices on every thread, in seeded batches (a
    // loose tolerance keeps the debug build quick).
    for file in ["examples/council.clout", "examples/compact.clout"] {
        identical_for_every_thread_count(&approximate(file));
    }
}

/// `report` of `file` in JSON, sent to the approximation by a budget of 10 steps.
fn approximate(file: &str) -> [&str; 8] {
    [
        "report",
        "--format",
        "json",
        "--budget",
        "10",
        "--tolerance",
        "0.05",
        file,
    ]
}

#[test]
fn the_thread_count_reaches_the_sampler() {
    // Not a timing test: only that an unparsable value falls back to every
    // core instead of failing, and gives the same figures.
    let args = approximate("examples/council.clout");
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_clout"));
    cmd.args(args)
        .current_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/.."))
        .env("CLOUT_THREADS", "lots");
    let out = cmd.output().expect("runs");
    assert!(out.status.success());
    assert_eq!(
        String::from_utf8(out.stdout).expect("UTF-8"),
        report(&args, Some(1))
    );
}
