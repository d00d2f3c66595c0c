//! The voting model (`--turnout`, `--chances`) and settled conditions
//! through the real binary.

mod cli_support;

use cli_support::clout_with_input;
use serde_json::Value;

fn json(args: &[&str], stdin: &str) -> Value {
    let run = clout_with_input(args, stdin);
    assert_eq!(run.code, 0, "{}", run.stderr);
    serde_json::from_str(&run.stdout).expect("JSON")
}

/// A fictional body: a quorum of half the seats present and more seats yes than no.
const BODY: &str = "
member big seats=5
member mid seats=3
members small x3 seats=1
rule motion = seats present >= 1/2 and seats yes > seats no
rule plain  = seats > 1/2
";

#[test]
fn a_participation_quorum_is_settled_and_counted_like_the_plain_majority() {
    let q = json(&["report", "-", "--rule", "motion", "--format", "json"], BODY);
    let p = json(&["report", "-", "--rule", "plain", "--format", "json"], BODY);
    assert_eq!(q["settled_conditions"][0]["text"], "seats present >= 1/2");
    assert_eq!(q["settled_conditions"][0]["always"], true);
    assert_eq!(p["settled_conditions"].as_array().map(Vec::len), Some(0));
    assert_eq!(q["engine"], p["engine"]);
    for (a, b) in q["members"]
        .as_array()
        .unwrap()
        .iter()
        .zip(p["members"].as_array().unwrap())
    {
        assert_eq!(a["swings"], b["swings"]);
        assert_eq!(a["shapley_shubik"], b["shapley_shubik"]);
    }
    let text = clout_with_input(&["report", "-", "--rule", "motion", "--explain"], BODY);
    assert!(
        text.stdout
            .contains("settled before planning: `seats present >= 1/2`"),
        "{}",
        text.stdout
    );
}

#[test]
fn turnout_one_reproduces_penrose() {
    for rule in ["motion", "plain"] {
        let r = json(
            &[
                "report",
                "-",
                "--rule",
                rule,
                "--format",
                "json",
                "--turnout",
                "1",
            ],
            BODY,
        );
        let model = &r["voting_model"];
        assert_eq!(model["kind"], "turnout");
        assert_eq!(model["approximate"], false);
        let bound = model["rounding_bound"].as_f64().unwrap();
        assert!(bound < 1e-12);
        for m in r["members"].as_array().unwrap() {
            let d = m["decisive_probability"].as_f64().unwrap();
            let penrose = m["penrose"].as_f64().unwrap();
            assert!((d - penrose).abs() <= bound + 1e-15, "{m}");
        }
        let passage = model["passage_probability"].as_f64().unwrap();
        assert!((passage - r["passage_probability"].as_f64().unwrap()).abs() < 1e-12);
    }
}

#[test]
fn chances_from_a_table_by_hand() {
    // Only big and mid can come (small never present): big present with
    // chance 1/2, mid always; both vote yes with chance 1/2. `plain` needs
    // 6 of 11 seats yes: only big + mid (8) pass, so P(pass) = 1/2 * 1/2 * 1/2 = 1/8.
    // big is decisive when mid votes yes (1/2); mid when big is present and yes (1/4);
    // a small member (its own vote supposed, as the measure does) when the others
    // have exactly 5 seats yes: big present and yes, mid no (1/4 * 1/2 = 1/8).
    let dir = std::env::temp_dir().join(format!("clout-turnout-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("chances.csv");
    std::fs::write(
        &path,
        "member,present,yes,abstain\nbig,0.5,0.5,0\nmid,1,0.5,0\nsmall1,0,0.5,0\nsmall2,0,0.5,0\nsmall3,0,0.5,0\n",
    )
    .unwrap();
    let p = path.to_str().unwrap();
    let r = json(
        &[
            "report",
            "-",
            "--rule",
            "plain",
            "--format",
            "json",
            "--chances",
            p,
        ],
        BODY,
    );
    let m = &r["voting_model"];
    assert!((m["passage_probability"].as_f64().unwrap() - 0.125).abs() < 1e-15);
    let d: Vec<f64> = r["members"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| m["decisive_probability"].as_f64().unwrap())
        .collect();
    assert_eq!(d, vec![0.5, 0.25, 0.125, 0.125, 0.125]);
    let share = r["members"][0]["decisive_share"].as_f64().unwrap();
    assert!((share - 0.5 / 1.125).abs() < 1e-15);
    // Quorum: fails when big is absent (those present, mid's 3 seats, cannot reach 6).
    assert!((m["quorum_failure_probability"].as_f64().unwrap() - 0.5).abs() < 1e-15);
    // A bad table: the error is placed, exit 2.
    std::fs::write(&path, "member,present,yes,abstain\nbig,1.5,0.5,0\n").unwrap();
    let run = clout_with_input(&["report", "-", "--rule", "plain", "--chances", p], BODY);
    assert_eq!(run.code, 2);
    assert!(
        run.stderr.contains("`1.5` is not a chance from 0 to 1"),
        "{}",
        run.stderr
    );
    assert!(run.stderr.contains(":2:"), "{}", run.stderr);
    let run = clout_with_input(&["report", "-", "--rule", "plain", "--turnout", "2"], BODY);
    assert_eq!(run.code, 2);
    assert!(run.stderr.contains("turnout 2 is not a chance"), "{}", run.stderr);
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn approximate_reports_keep_every_option() {
    // 40 members of distinct weights and a tiny budget: approximate.
    let mut body = String::new();
    for i in 1..=40 {
        body.push_str(&format!("member m{i} seats={}\n", 1000 + 37 * i));
    }
    body.push_str("rule motion = seats present >= 1/3 and seats yes >= 2/3 of cast\n");
    let args = [
        "report",
        "-",
        "--budget",
        "1000",
        "--attendance",
        "0.5",
        "--turnout",
        "0.5",
        "--seed",
        "3",
    ];
    let run = clout_with_input(&args, &body);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let out = run.stdout;
    assert!(out.contains("APPROXIMATE"), "{out}");
    assert!(out.contains("Four-state conditions"), "{out}");
    assert!(out.contains("Settled before counting"), "{out}");
    assert!(
        out.contains("probability of passage with attendance 0.5"),
        "{out}"
    );
    assert!(out.contains("Under the voting model"), "{out}");
    assert!(
        out.contains("Voting model: each member is present with chance 0.5"),
        "{out}"
    );
    // The ternary measure cannot be counted here: refused, with why.
    let mut with_ternary = args.to_vec();
    with_ternary.push("--ternary");
    let run = clout_with_input(&with_ternary, &body);
    assert_eq!(run.code, 2);
    assert!(
        run.stderr.contains("ternary measure needs about"),
        "{}",
        run.stderr
    );
}
