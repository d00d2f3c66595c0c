//! Issue 20's findings at the exact inputs of the audit, where no other test
//! uses them (SECURITY.md, "Findings of the second audit", lists the test
//! for each finding).

mod cli_support;

use cli_support::clout_with_input;

/// Finding 8: `s yes >= 18446744073709551614/18446744073709551615` on a total
/// near 2^64 was refused as "holds for every ballot" (the product wrapped in
/// 128-bit arithmetic). With the total T = 2^64 - 4 (the largest allowed),
/// the share needs ceil(T * (q - 1) / q) = ceil(T - T / q) = T, since
/// 0 < T / q < 1 (exact arithmetic, by hand): only the full body passes.
#[test]
fn a_share_just_below_one_of_the_largest_total() {
    let dir = std::env::temp_dir().join(format!("clout-audit-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let path = dir.join("finding-8.clout");
    std::fs::write(
        &path,
        "member a s=18446744073709551611\nmember b s=1\n\
         rule r = s yes >= 18446744073709551614/18446744073709551615\n",
    )
    .expect("write");
    let f = path.to_str().expect("utf-8");
    let check = clout_with_input(&["check", f], "");
    assert_eq!(check.code, 0, "{}", check.stderr);
    let needed = |yes: &str| {
        let run = clout_with_input(&["decide", f, "--yes", yes, "--format", "json"], "");
        assert_eq!(run.code, 0, "{}", run.stderr);
        let v: serde_json::Value = serde_json::from_str(&run.stdout).expect("JSON");
        (v["passed"].clone(), v["conditions"][0]["needed"].clone())
    };
    let (passes, needed_a) = needed("a");
    assert_eq!(passes, false);
    assert_eq!(needed_a, "18446744073709551612");
    let (passes, _) = needed("a,b");
    assert_eq!(passes, true);
    let _ = std::fs::remove_dir_all(&dir);
}
