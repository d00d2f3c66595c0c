//! `clout_power` returns a result code, never aborts, when memory runs out.
//!
//! The test runs itself again (the child) under an address-space cap
//! (`ulimit -v` in `sh -c`): there, a valid 42-member single-threshold rule
//! whose exact count needs about 1.4 GB of tables must come back as
//! `CLOUT_RESULT_OUT_OF_MEMORY` (the allocation is refused by the system)
//! or `CLOUT_RESULT_TOO_COSTLY`, and the child must exit normally.

use std::process::Command;

use clout_c::{clout_power, clout_result, clout_rule, clout_rule_free, clout_rule_new};
use clout_core::{image, Rule};

/// 42 members of distinct weights adding up to about 4 million, quota half:
/// the dense engine's table is (n + 1)(q + 1) counts of 16 bytes.
fn wide_rule() -> Rule<Vec<u64>> {
    let weights: Vec<u64> = (0..42u64).map(|i| 90_000 + i * 977 + (i * i) % 13).collect();
    let total: u64 = weights.iter().sum();
    Rule::weighted(total / 2 + 1, weights).expect("a valid rule")
}

fn power_code(rule: &Rule<Vec<u64>>) -> clout_result {
    let bytes = image::encode(rule);
    let mut handle: *mut clout_rule = std::ptr::null_mut();
    assert_eq!(
        clout_rule_new(bytes.as_ptr(), bytes.len(), &mut handle),
        clout_result::Ok
    );
    let n = rule.members();
    let (mut swings, mut banzhaf, mut shapley) = (vec![0u64; n], vec![0f64; n], vec![0f64; n]);
    let code = clout_power(
        handle,
        swings.as_mut_ptr(),
        banzhaf.as_mut_ptr(),
        shapley.as_mut_ptr(),
        n,
    );
    clout_rule_free(handle);
    code
}

/// The child's half: prints the code for the parent to read.
#[test]
fn child_power_under_a_cap() {
    if std::env::var_os("CLOUT_POWER_CHILD").is_none() {
        return;
    }
    let code = power_code(&wide_rule());
    println!("code={}", code as u32);
}

#[test]
fn power_under_an_address_space_cap_returns_a_code() {
    let me = std::env::current_exe().expect("the test binary");
    // 600 MB of address space: the test harness fits, the 1.4 GB table does not.
    let script =
        "ulimit -v 600000 && exec \"$0\" --exact child_power_under_a_cap --nocapture --test-threads 1";
    let out = Command::new("sh")
        .arg("-c")
        .arg(script)
        .arg(&me)
        .env("CLOUT_POWER_CHILD", "1")
        .output()
        .expect("sh runs");
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "the child aborted: {:?}\n{stdout}\n{}",
        out.status,
        String::from_utf8_lossy(&out.stderr)
    );
    let code: u32 = stdout
        .lines()
        .find_map(|l| l.split("code=").nth(1))
        .and_then(|c| c.trim().parse().ok())
        .expect("the child printed its code");
    assert!(
        code == clout_result::OutOfMemory as u32 || code == clout_result::TooCostly as u32,
        "code {code}"
    );
}

#[test]
fn memory_and_budget_refusals_have_their_own_codes() {
    use clout_core::Error;
    let memory = Error::MemoryLimit { needed: 10, limit: 5 };
    assert_eq!(clout_result::from(memory), clout_result::OutOfMemory);
    assert_eq!(
        clout_result::from(Error::OutOfMemory { bytes: 8 }),
        clout_result::OutOfMemory
    );
    assert_eq!(
        clout_result::from(Error::OverBudget { budget: 7 }),
        clout_result::TooCostly
    );
}
