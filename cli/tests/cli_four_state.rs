//! Four-state ballots (yes, no, abstain, absent) through the language and
//! the real binary: hand-checked ballots for every form, boundary ballots
//! one vote either side of each threshold, the binary equivalence of the new
//! forms, and the ternary and attendance figures. Each ballot's arithmetic
//! is in its comment.

mod cli_support;

use cli_support::clout_with_input;
use serde_json::Value;

/// `clout decide` on a rule given as text; returns (passed, conditions).
fn decide(src: &str, rule: &str, votes: &[&str]) -> (bool, Vec<Value>) {
    let mut args = vec!["decide", "-", "--rule", rule, "--format", "json"];
    args.extend_from_slice(votes);
    let run = clout_with_input(&args, src);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let v: Value = serde_json::from_str(&run.stdout).expect("JSON");
    (
        v["passed"].as_bool().expect("passed"),
        v["conditions"].as_array().expect("conditions").clone(),
    )
}

/// Ten members of one seat each and a chair of two (total 12 seats, 11 heads).
const BODY: &str = "
members m x10 seats=1
member chair seats=2
rule cast_majority = seats yes > 1/2 of cast
rule two_thirds    = count yes >= 2/3 of present
rule quorum        = count present >= 1/3
rule more_yes      = seats yes > seats no
rule few_against   = count no < 3
rule plain         = seats > 1/2
";

#[test]
fn more_than_half_of_the_votes_cast() {
    // 3 yes (3 seats) vs 2 no (2 seats), the rest absent: 2*3 = 6 > 5 = cast: passes.
    let (p, c) = decide(BODY, "cast_majority", &["--yes", "m1..m3", "--no", "m4,m5"]);
    assert!(p);
    assert_eq!(
        (c[0]["sum"].as_str(), c[0]["no"].as_str()),
        (Some("3"), Some("2"))
    );
    // One vote either side: 3 vs 3 (2*3 = 6 > 6 fails), 4 vs 3 passes.
    assert!(!decide(BODY, "cast_majority", &["--yes", "m1..m3", "--no", "m4..m6"]).0);
    assert!(decide(BODY, "cast_majority", &["--yes", "m1..m4", "--no", "m5..m7"]).0);
    // Abstentions do not count as cast: 1 yes, 0 no, 9 abstain passes (2 > 1).
    assert!(decide(BODY, "cast_majority", &["--yes", "m1", "--abstain", "m2..m10"]).0);
    // The chair's 2 seats against 1 yes seat: 2*1 = 2 > 3 fails.
    assert!(!decide(BODY, "cast_majority", &["--yes", "m1", "--no", "chair"]).0);
}

#[test]
fn two_thirds_of_those_present() {
    // 4 yes, 2 no, 0 abstain: 3*4 = 12 >= 2*6 = 12 passes (exactly two thirds).
    assert!(decide(BODY, "two_thirds", &["--yes", "m1..m4", "--no", "m5,m6"]).0);
    // Add one abstainer: present 7, 3*4 = 12 < 14 fails: abstaining counts against here.
    assert!(
        !decide(
            BODY,
            "two_thirds",
            &["--yes", "m1..m4", "--no", "m5,m6", "--abstain", "m7"]
        )
        .0
    );
    // 5 yes of 7 present: 15 >= 14 passes.
    assert!(
        decide(
            BODY,
            "two_thirds",
            &["--yes", "m1..m5", "--no", "m6", "--abstain", "m7"]
        )
        .0
    );
}

#[test]
fn quorum_of_a_third_present() {
    // 11 heads: a third is 3.67, so 4 must be present. 3 present (1 yes,
    // 1 no, 1 abstain) fails; 4 present passes; nobody voting yes is fine.
    assert!(!decide(BODY, "quorum", &["--yes", "m1", "--no", "m2", "--abstain", "m3"]).0);
    assert!(
        decide(
            BODY,
            "quorum",
            &["--yes", "m1", "--no", "m2", "--abstain", "m3,m4"]
        )
        .0
    );
    assert!(decide(BODY, "quorum", &["--no", "m1..m4"]).0);
    // `--rest no` makes everyone present.
    assert!(decide(BODY, "quorum", &["--no", "m1", "--rest", "no"]).0);
}

#[test]
fn more_yes_than_no_and_few_against() {
    // seats yes 3 (m1..m3) vs no 2 (chair): 3 > 2 passes; vs chair + m4: 3 > 3 fails.
    assert!(decide(BODY, "more_yes", &["--yes", "m1..m3", "--no", "chair"]).0);
    assert!(!decide(BODY, "more_yes", &["--yes", "m1..m3", "--no", "chair,m4"]).0);
    // count no < 3: two actual no votes pass even with nobody in favour; three fail.
    assert!(decide(BODY, "few_against", &["--no", "m1,m2"]).0);
    assert!(!decide(BODY, "few_against", &["--no", "m1..m3"]).0);
}

#[test]
fn two_state_ballots_keep_their_meaning() {
    // With only --yes, everyone else votes no (two states). `seats yes > 1/2
    // of cast` then equals `seats > 1/2`: 12 seats, more than half is 7.
    for (yes, expect) in [
        ("m1..m6", false),
        ("m1..m7", true),
        ("m1..m4,chair", false),
        ("m1..m5,chair", true),
    ] {
        let (a, _) = decide(BODY, "cast_majority", &["--yes", yes]);
        let (b, _) = decide(BODY, "plain", &["--yes", yes]);
        assert_eq!((a, b), (expect, expect), "{yes}");
    }
}

#[test]
fn non_monotone_four_state_forms_are_refused() {
    for (cond, col) in [
        ("count yes < 4", 10),
        ("seats no > 3", 10),
        ("seats yes < 1/2 of cast", 10),
    ] {
        let src = format!("members m x4 seats=1\nrule r = {cond}\n");
        let run = clout_with_input(&["check", "-"], &src);
        assert_eq!(run.code, 2, "{cond}");
        assert!(
            run.stderr.contains(&format!("2:{col}: error:")),
            "{cond}: {}",
            run.stderr
        );
        assert!(run.stderr.contains("not monotone"), "{cond}: {}", run.stderr);
    }
}

#[test]
fn ternary_and_attendance_in_the_report() {
    // Majority of three (common practice): with every member present each
    // passes half the time; the ternary measure of a symmetric majority of 3
    // with "more yes than no" is checked against the core's enumeration in
    // core/src/ternary.rs; here the report must carry the figures through.
    let src = "members m x3 seats=1\nrule r = seats yes > seats no\n";
    let run = clout_with_input(
        &[
            "report",
            "-",
            "--format",
            "json",
            "--ternary",
            "--attendance",
            "1",
        ],
        src,
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    let v: Value = serde_json::from_str(&run.stdout).expect("JSON");
    let t = v["members"][0]["ternary_banzhaf"]
        .as_f64()
        .expect("ternary figure");
    // By hand, from the definition: over the others' 9 ballots (yes, abstain
    // or no each), count those where member 1's yes passes and its no fails;
    // the measure is that count over 2 * 3^2 = 18.
    let mut count = 0;
    for a in 0..3 {
        for b in 0..3 {
            // votes: 0 = yes, 1 = abstain, 2 = no
            let diff = |v: i32| match v {
                0 => 1,
                2 => -1,
                _ => 0,
            };
            let others = diff(a) + diff(b);
            let with_yes = others + 1 > 0;
            let with_no = others - 1 > 0;
            count += i32::from(with_yes && !with_no);
        }
    }
    assert!((t - f64::from(count) / 18.0).abs() < 1e-12, "{t} vs {count}/18");
    let p = v["attendance"]["passage_probability"]
        .as_f64()
        .expect("attendance");
    assert!((p - 0.5).abs() < 1e-12);
}

#[test]
fn approximate_when_exact_is_over_budget() {
    // A budget of one step forces the approximation; its intervals must
    // contain the exact figures (95% each; fixed seed, so deterministic).
    let exact = clout_with_input(&["report", "examples/council.clout", "--format", "json"], "");
    let approx = clout_with_input(
        &[
            "report",
            "examples/council.clout",
            "--format",
            "json",
            "--budget",
            "1",
            "--tolerance",
            "0.01",
        ],
        "",
    );
    assert_eq!((exact.code, approx.code), (0, 0), "{}", approx.stderr);
    let e: Value = serde_json::from_str(&exact.stdout).expect("JSON");
    let a: Value = serde_json::from_str(&approx.stdout).expect("JSON");
    assert_eq!(a["approximate"], Value::Bool(true));
    assert!(a["members"][0]["swings"].is_null());
    let members = e["members"].as_array().expect("members");
    let mut inside = 0;
    for (i, m) in members.iter().enumerate() {
        let (x, h) = (
            a["members"][i]["penrose"].as_f64().unwrap(),
            a["members"][i]["penrose_half_width"].as_f64().unwrap(),
        );
        inside += usize::from((x - m["penrose"].as_f64().unwrap()).abs() <= h);
        assert!(h <= 0.01 + 1e-12);
    }
    assert!(inside * 10 >= members.len() * 8, "{inside} of {}", members.len());
    // --exact refuses instead.
    let refused = clout_with_input(
        &["report", "examples/council.clout", "--budget", "1", "--exact"],
        "",
    );
    assert_eq!(refused.code, 2);
    assert!(refused.stderr.contains("over the budget"), "{}", refused.stderr);
}

#[test]
fn union_of_27_by_exact_population_is_exact() {
    // The decision diagram makes exact populations (a quota of 292 million)
    // cheap: the report must be exact (swings as integers) and efficient
    // (Shapley-Shubik sums to 1, Shapley & Shubik 1954).
    let run = clout_with_input(&["report", "examples/union.clout", "--format", "json"], "");
    assert_eq!(run.code, 0, "{}", run.stderr);
    let v: Value = serde_json::from_str(&run.stdout).expect("JSON");
    assert_eq!(v["engine"], "diagram");
    let members = v["members"].as_array().expect("members");
    assert_eq!(members.len(), 27);
    let ss: f64 = members
        .iter()
        .map(|m| m["shapley_shubik"].as_f64().unwrap())
        .sum();
    assert!((ss - 1.0).abs() < 1e-9, "{ss}");
    assert!(members
        .iter()
        .all(|m| m["swings"].as_str().unwrap().parse::<u64>().is_ok()));
    // The most populous state is never weaker than the least populous.
    let swings = |i: usize| members[i]["swings"].as_str().unwrap().parse::<u64>().unwrap();
    assert!(swings(0) >= swings(26));
}
