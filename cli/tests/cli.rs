//! The `clout` binary as a user runs it: golden text reports, the JSON and
//! CSV schemas, published check values through files and `--game`, one
//! vote with `decide`, `check`'s exit codes, and bad input of every kind
//! (exit 2, a message on stderr, never a panic).
//!
//! Golden files live in `tests/golden/`; `CLOUT_BLESS=1 cargo test --test cli`
//! rewrites them (review the diff before committing).

mod cli_support;

use std::path::Path;

use cli_support::{clout_with_input, Run};
use serde_json::Value;

fn clout(args: &[&str]) -> Run {
    clout_with_input(args, "")
}

fn json(args: &[&str]) -> Value {
    let run = clout(args);
    assert_eq!(run.code, 0, "{}", run.stderr);
    serde_json::from_str(&run.stdout).expect("valid JSON")
}

fn golden(name: &str, actual: &str) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/golden")
        .join(name);
    if std::env::var_os("CLOUT_BLESS").is_some() {
        std::fs::write(&path, actual).expect("golden file is writable");
        return;
    }
    let expected = std::fs::read_to_string(&path).expect("golden file exists (CLOUT_BLESS=1 creates it)");
    assert!(
        expected == actual,
        "{name} differs from the golden file\n--- expected\n{expected}\n--- actual\n{actual}"
    );
}

// ---- text reports ----

#[test]
fn golden_council_report() {
    // Figures checked by brute force over all 512 coalitions (winning 235;
    // swings 121 for each ward, 15 for each neighbourhood seat).
    let run = clout(&["report", "examples/council.clout"]);
    assert_eq!(run.code, 0);
    assert_eq!(run.stderr, "");
    golden("council.txt", &run.stdout);
}

#[test]
fn golden_compact_report() {
    // Checked by brute force over all 16,384 coalitions (winning 3,102; swings
    // 2,720 for the most populous state down to 458 for the least).
    let run = clout(&["report", "examples/compact.clout"]);
    assert_eq!(run.code, 0);
    golden("compact.txt", &run.stdout);
}

#[test]
fn report_without_a_file_uses_the_demo() {
    let run = clout(&["report"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(
        run.stdout.starts_with("Tri-County Transit Board (fictional demo"),
        "{}",
        run.stdout
    );
    assert!(
        run.stdout.contains("delegate1..delegate12  12"),
        "identical members share a row"
    );
    let model = run.stdout.lines().filter(|l| l.starts_with("Model: ")).count();
    let caution = run.stdout.lines().filter(|l| l.starts_with("Caution: ")).count();
    assert_eq!((model, caution), (1, 1));
    assert!(run.stdout.contains("independently with equal chance"));
    assert!(run
        .stdout
        .contains("governing instrument, applicable election law and certified counting procedures"));
    // The demo printed by `clout demo` is the file the report analysed.
    let demo = clout(&["demo"]);
    assert_eq!(demo.stdout, include_str!("../../examples/transit.clout"));
    let same = clout(&["report", "examples/transit.clout"]);
    assert_eq!(
        same.stdout.lines().skip(1).collect::<Vec<_>>(),
        run.stdout.lines().skip(1).collect::<Vec<_>>()
    );
}

#[test]
fn large_counts_are_marked_when_rounded() {
    let run = clout(&["report", "examples/two-chamber.clout"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(run.stdout.contains("rep1..rep435          435"), "{}", run.stdout);
    assert!(run.stdout.contains("winning coalitions          ≈"));
    assert!(run.stdout.contains("≈ marks a rounded display of an exact count"));
}

// ---- JSON ----

const MEMBER_KEYS: [&str; 15] = [
    "name",
    "weights",
    "swings",
    "banzhaf",
    "penrose",
    "shapley_shubik",
    "shapley_shubik_exact",
    "coleman_prevent",
    "coleman_initiate",
    "johnston",
    "deegan_packel",
    "public_good",
    "dummy",
    "veto",
    "dictator",
];

fn check_schema(report: &Value, members: usize) {
    let top = report.as_object().expect("an object");
    for key in [
        "rule",
        "members",
        "winning_coalitions",
        "passage_probability",
        "proper",
        "strong",
        "decisive",
    ] {
        assert!(top.contains_key(key), "missing top-level key {key}");
    }
    assert!(report["rule"].is_string());
    assert!(report["winning_coalitions"]
        .as_str()
        .unwrap()
        .chars()
        .all(|c| c.is_ascii_digit()));
    assert!(report["passage_probability"].is_f64());
    for key in ["proper", "strong", "decisive"] {
        assert!(report[key].is_boolean(), "{key}");
    }
    assert!(report["engine"].is_string() && report["model"].is_string() && report["caution"].is_string());
    let list = report["members"].as_array().unwrap();
    assert_eq!(list.len(), members);
    for m in list {
        let obj = m.as_object().unwrap();
        for key in MEMBER_KEYS {
            assert!(obj.contains_key(key), "missing member key {key}");
        }
        assert!(m["name"].is_string());
        assert!(m["swings"].as_str().unwrap().chars().all(|c| c.is_ascii_digit()));
        for key in [
            "banzhaf",
            "penrose",
            "shapley_shubik",
            "coleman_prevent",
            "coleman_initiate",
        ] {
            assert!(m[key].is_number(), "{key}");
        }
        for key in ["johnston", "deegan_packel", "public_good"] {
            assert!(m[key].is_number() || m[key].is_null(), "{key}");
        }
        for key in ["dummy", "veto", "dictator"] {
            assert!(m[key].is_boolean(), "{key}");
        }
    }
}

fn member_figures(report: &Value, key: &str) -> Vec<f64> {
    report["members"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| m[key].as_f64().unwrap())
        .collect()
}

fn swings(report: &Value) -> Vec<String> {
    report["members"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| m["swings"].as_str().unwrap().to_string())
        .collect()
}

#[test]
fn json_schema_holds_for_every_example() {
    for (file, members) in [
        ("examples/council.clout", 9),
        ("examples/compact.clout", 14),
        ("examples/cooperative.clout", 12),
        ("examples/transit.clout", 15),
        ("examples/two-chamber.clout", 536),
    ] {
        let report = json(&["report", file, "--format", "json"]);
        check_schema(&report, members);
    }
    let report = json(&[
        "report",
        "examples/transit.clout",
        "--rule",
        "charter",
        "--format",
        "json",
    ]);
    assert_eq!(report["rule"], "charter");
    let names: Vec<&str> = report["members"]
        .as_array()
        .unwrap()
        .iter()
        .map(|m| m["name"].as_str().unwrap())
        .collect();
    assert_eq!(names[..4], ["harbor", "mill", "ferry", "delegate1"]);
    assert_eq!(report["members"][0]["weights"]["riders"], "412000");
    assert_eq!(report["conditions"][2]["quota"], "14");
}

#[test]
fn published_games_through_the_cli() {
    // [12; 4, 4, 4, 2, 2, 1]: swings 10, 10, 10, 6, 6, 0; Shapley-Shubik 7/30 (x3), 3/20 (x2), 0
    // (Felsenthal & Machover 1998, The Measurement of Voting Power).
    let report = json(&["report", "--game", "[12; 4, 4, 4, 2, 2, 1]", "--format", "json"]);
    check_schema(&report, 6);
    assert_eq!(swings(&report), ["10", "10", "10", "6", "6", "0"]);
    let ss = member_figures(&report, "shapley_shubik");
    for (got, want) in ss
        .iter()
        .zip([7.0 / 30.0, 7.0 / 30.0, 7.0 / 30.0, 0.15, 0.15, 0.0])
    {
        assert!((got - want).abs() < 1e-12, "{ss:?}");
    }
    assert_eq!(report["members"][5]["dummy"], true);
    assert_eq!(report["members"][0]["name"], "p1");

    // [39; 7 x5, 1 x10]: swings 848 and 84; Shapley-Shubik 421/2145 and 4/2145
    // (Felsenthal & Machover 1998; Taylor & Zwicker 1999, Simple Games).
    let report = json(&[
        "report",
        "--game",
        "[39; 7,7,7,7,7,1,1,1,1,1,1,1,1,1,1]",
        "--format",
        "json",
    ]);
    assert_eq!(swings(&report)[0], "848");
    assert_eq!(swings(&report)[14], "84");
    let ss = member_figures(&report, "shapley_shubik");
    assert!((ss[0] - 421.0 / 2145.0).abs() < 1e-12 && (ss[14] - 4.0 / 2145.0).abs() < 1e-12);
    let exact = &report["members"][0]["shapley_shubik_exact"];
    let num: u128 = exact["numerator"].as_str().unwrap().parse().unwrap();
    let den: u128 = exact["denominator"].as_str().unwrap().parse().unwrap();
    assert_eq!(num * 2145, 421 * den);
    assert_eq!(report["members"][0]["veto"], true);
}

#[test]
fn published_two_chamber_rule_through_the_cli() {
    // The 536-member two-chamber rule as a rule file: executive normalized Banzhaf
    // 0.0380 and Shapley-Shubik 0.1605 to 3 significant figures
    // (Taylor 1995, Mathematics and Politics; from memory).
    let report = json(&["report", "examples/two-chamber.clout", "--format", "json"]);
    let executive = &report["members"][535];
    assert_eq!(executive["name"], "executive");
    let b = executive["banzhaf"].as_f64().unwrap();
    let s = executive["shapley_shubik"].as_f64().unwrap();
    assert!((b - 0.0380).abs() < 0.00005, "{b}");
    assert!((s - 0.1605).abs() < 0.00005, "{s}");
    // Members of one chamber are interchangeable.
    assert_eq!(swings(&report)[0], swings(&report)[434]);
}

#[test]
fn csv_has_a_header_and_one_row_per_member() {
    let run = clout(&["report", "examples/council.clout", "--format", "csv"]);
    assert_eq!(run.code, 0);
    let lines: Vec<&str> = run.stdout.lines().collect();
    assert_eq!(
        lines[0],
        "member,seats,swings,banzhaf,penrose,shapley_shubik,coleman_prevent,coleman_initiate,johnston,deegan_packel,public_good,dummy,veto,dictator,penrose_half_width,banzhaf_half_width,shapley_shubik_half_width"
    );
    assert_eq!(lines.len(), 10);
    assert!(lines[1].starts_with("north,3,121,"), "{}", lines[1]);
    assert!(lines[9].starts_with("hood6,1,15,"), "{}", lines[9]);
    assert!(lines.iter().all(|l| l.split(',').count() == 17));
    // Exact figures have no half-widths: the last three fields are empty.
    assert!(lines[1].ends_with(",,,"), "{}", lines[1]);
}

#[test]
fn rule_text_from_standard_input() {
    let run = clout_with_input(
        &["report", "-", "--format", "json"],
        "member a w=2\nmember b w=1\nmember c w=1\nrule r = w >= 3\n",
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    let report: Value = serde_json::from_str(&run.stdout).unwrap();
    // [3; 2, 1, 1]: a swings in {a,b}, {a,c}, {a,b,c}; b only in {a,b}.
    assert_eq!(swings(&report), ["3", "1", "1"]);
}

// ---- decide ----

#[test]
fn decide_reports_outcome_tallies_and_critical_members() {
    let run = clout(&[
        "decide",
        "examples/transit.clout",
        "--yes",
        "harbor,mill,delegate1..delegate4",
    ]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(run.stdout.contains("The motion PASSES."));
    assert!(
        run.stdout.contains("seats >= 2/3   20     20     29  yes"),
        "{}",
        run.stdout
    );
    assert!(run.stdout.contains("harbor, mill, delegate1..delegate4"));

    // 19 of the 20 seats needed: any no-voter with a seat would pass it.
    let d = json(&[
        "decide",
        "examples/transit.clout",
        "--yes",
        "founders,delegate1..delegate3",
        "--format",
        "json",
    ]);
    assert_eq!(d["passed"], false);
    let critical: Vec<&str> = d["critical"]
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v.as_str().unwrap())
        .collect();
    let mut expected = vec!["ferry".to_string()];
    expected.extend((4..=12).map(|k| format!("delegate{k}")));
    assert_eq!(critical, expected);
    assert_eq!(d["conditions"][0]["text"], "seats >= 2/3");
    assert_eq!(d["conditions"][0]["attribute"], "seats");
    assert_eq!(d["conditions"][0]["met"], false);
    assert_eq!(d["conditions"][0]["sum"], "19");
    assert_eq!(d["conditions"][0]["quota"], "20");

    // `--yes all --no NAME`; the two-chamber override passes without the executive.
    let d = json(&[
        "decide",
        "examples/two-chamber.clout",
        "--yes",
        "rep1..rep290,senator1..senator67",
        "--format",
        "json",
    ]);
    assert_eq!(d["passed"], true);
    let d = json(&[
        "decide",
        "examples/two-chamber.clout",
        "--yes",
        "all",
        "--no",
        "executive",
        "--format",
        "json",
    ]);
    assert_eq!(d["passed"], true);
    assert_eq!(d["critical"].as_array().unwrap().len(), 0);
}

// ---- check and exit codes ----

#[test]
fn check_exit_codes() {
    let clean = clout(&[
        "check",
        "examples/council.clout",
        "examples/compact.clout",
        "examples/cooperative.clout",
    ]);
    assert_eq!(clean.code, 0, "{}", clean.stderr);
    assert_eq!(clean.stdout.lines().count(), 3);
    assert!(clean
        .stdout
        .starts_with("examples/council.clout: ok; 9 members, 2 rules (motion, charter)"));

    let warned = clout(&["check", "examples/transit.clout"]);
    assert_eq!(warned.code, 1);
    assert!(warned
        .stderr
        .starts_with("examples/transit.clout:19:6: warning: under rule `closure`, `ferry` and `delegate1..delegate12` are dummies"));

    let improper = clout(&["check", "--game", "[2; 1, 1, 1, 1]"]);
    assert_eq!(improper.code, 1);
    assert!(
        improper
            .stderr
            .contains("--game:1:1: warning: rule `game` is not proper"),
        "{}",
        improper.stderr
    );

    let broken = clout_with_input(&["check", "-"], "member a seats=3\nrule r = seats < 2\n");
    assert_eq!(broken.code, 2);
    assert!(
        broken
            .stderr
            .starts_with("<stdin>:2:16: error: `seats < 2` is not monotone"),
        "{}",
        broken.stderr
    );
    assert!(broken
        .stderr
        .contains("   2 | rule r = seats < 2\n     |                ^\n"));
    assert!(broken.stderr.contains("= hint: "));
}

#[test]
fn bad_input_exits_2_with_a_message() {
    let cases: &[(&[&str], &str)] = &[
        (
            &["report", "no/such/file.clout"],
            "error: cannot read `no/such/file.clout`: no such file",
        ),
        (
            &["report", "--game", "[7; 1, 2, 3]"],
            "--game:1:2: error: no coalition can meet `weight >= 7`",
        ),
        (
            &["report", "--game", "[2; 1, 2"],
            "--game:1:9: error: expected a repeat count such as `x12`, `,` or `]`",
        ),
        (
            &["report", "examples/transit.clout", "--rule", "chartr"],
            "did you mean `charter`?",
        ),
        (
            &["decide", "examples/transit.clout", "--yes", "harbour"],
            "--yes: unknown member `harbour`",
        ),
        (&["decide", "--yes", "a"], "no rule given"),
        (&["check"], "no rule given"),
        (
            &[
                "report",
                "examples/two-chamber.clout",
                "--budget",
                "10",
                "--exact",
            ],
            "over the budget of 10",
        ),
        (
            &["report", "examples/two-chamber.clout", "--engine", "enumerate"],
            "cannot handle this rule",
        ),
        (&["report", "--frobnicate"], "unexpected argument"),
        (&["report", "--format", "pdf"], "invalid value 'pdf'"),
        (
            &["report", "examples/council.clout", "--game", "[1; 1]"],
            "cannot be used with",
        ),
    ];
    for (args, message) in cases {
        let run = clout(args);
        assert_eq!(run.code, 2, "{args:?}: {}", run.stderr);
        assert!(run.stderr.contains(message), "{args:?}: {}", run.stderr);
        assert_eq!(run.stdout, "", "{args:?}");
    }
}

#[test]
fn work_over_the_budget_is_refused_at_once() {
    // 20,000 members need counts of 65,600 bits; the estimate includes that
    // width. With --exact the report is refused at once; without, it is
    // approximated and says so.
    let src = "members m x20000\nrule r = count > 1/2\n";
    let run = clout_with_input(&["report", "-", "--exact"], src);
    assert_eq!(run.code, 2);
    assert!(run.stderr.contains("over the budget of 5.0e10"), "{}", run.stderr);
    assert!(
        run.stderr.contains("hint: raise the limits with --budget STEPS"),
        "{}",
        run.stderr
    );
    // (A smaller body keeps the approximate run quick in debug builds.)
    let small = "members m x300\nrule r = count > 1/2\n";
    let run = clout_with_input(&["report", "-", "--format", "csv", "--budget", "1"], small);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(
        run.stdout
            .starts_with("member,swings,banzhaf,penrose,shapley_shubik,"),
        "{}",
        &run.stdout[..80.min(run.stdout.len())]
    );
}

#[test]
fn help_and_version_exit_0() {
    let help = clout(&["--help"]);
    assert_eq!(help.code, 0);
    for command in ["report", "decide", "check", "demo"] {
        assert!(help.stdout.contains(command), "{command}");
    }
    assert_eq!(clout(&["--version"]).code, 0);
}

#[test]
fn the_error_heading_counts_shown_and_elided_errors() {
    // 150 syntax errors: 100 are shown, a note counts the other 50, and the
    // last line counts all 150 (not the 101 diagnostics printed).
    let mut src = String::from("member a seats=2\nmember b seats=1\n");
    for k in 0..150 {
        src.push_str(&format!("rule r{k:03} = seats >> 1\n"));
    }
    let run = clout_with_input(&["check", "-"], &src);
    assert_eq!(run.code, 2);
    assert_eq!(run.stderr.matches(": error: ").count(), 100);
    assert!(run.stderr.contains("50 more errors not shown"), "{}", run.stderr);
    assert!(run.stderr.ends_with("150 errors in <stdin>\n"), "{}", run.stderr);
}
