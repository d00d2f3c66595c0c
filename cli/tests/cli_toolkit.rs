//! The drafting commands as a user runs them: `simplify`, `order`,
//! `compare`, `sweep` (text, CSV, SVG), `fit` and `coalitions` on the
//! examples and on hand-checked rules, and bad input (exit 2 with a clear
//! message, never a panic).

mod cli_support;

use cli_support::{clout_with_input, Run};

fn clout(args: &[&str]) -> Run {
    clout_with_input(args, "")
}

fn ok(args: &[&str]) -> String {
    let run = clout(args);
    assert_eq!(run.code, 0, "clout {args:?}: {}", run.stderr);
    run.stdout
}

fn fails(args: &[&str], message: &str) {
    let run = clout(args);
    assert_eq!(run.code, 2, "clout {args:?} should fail: {}", run.stdout);
    assert!(run.stderr.contains(message), "clout {args:?}: {}", run.stderr);
}

fn examples() -> Vec<String> {
    let mut files: Vec<String> = std::fs::read_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/../examples"))
        .unwrap()
        .filter_map(|e| {
            let name = e.ok()?.file_name().into_string().ok()?;
            // 3,000 token holders of distinct weights: beyond every exact drafting method.
            let exact = name != "treasury.clout";
            (name.ends_with(".clout") && exact).then(|| format!("examples/{name}"))
        })
        .collect();
    files.sort();
    files
}

/// Exit 0, or exit 2 saying the rule is too large for the exact test.
fn done_or_too_large(run: &Run, what: &str) -> bool {
    if run.code == 2 && run.stderr.contains("too large for the exact test") {
        return false;
    }
    assert_eq!(run.code, 0, "{what}: {}", run.stderr);
    true
}

#[test]
fn every_command_on_every_example() {
    let files = examples();
    assert!(files.len() >= 6);
    for file in &files {
        let file = file.as_str();
        for command in ["simplify", "order"] {
            let run = clout(&[command, file]);
            if done_or_too_large(&run, &format!("{command} {file}")) {
                assert!(run.stdout.contains("Caution: "));
            }
        }
        let run = clout(&["coalitions", file, "--minimal-winning", "--limit", "3"]);
        done_or_too_large(&run, &format!("coalitions {file}"));
        let run = clout(&["compare", file, file]);
        assert_eq!(run.code, 0, "compare {file}: {}", run.stderr);
        assert!(
            run.stdout.contains("Same rule") || run.stdout.contains("undecided"),
            "{}",
            run.stdout
        );
        let run = clout(&["fit", file, "--seconds", "0.05"]);
        if !run.stderr.contains("more than the fit handles (120)") {
            assert_eq!(run.code, 0, "fit {file}: {}", run.stderr);
        }
    }
    // The union's 27 members with distinct populations make 2^27 patterns.
    let run = clout(&["simplify", "examples/union.clout"]);
    assert_eq!(run.code, 2);
    assert!(run.stderr.contains("134,217,728 patterns"), "{}", run.stderr);
}

#[test]
fn simplify_council_motion() {
    // seats > 1/2 (8 of 15) and 2 of the three 3-seat wards. By hand: the
    // minimal winning coalitions are the three wards, or two wards and two
    // neighbourhood seats; the maximal losing ones one ward and all six
    // seats, or two wards and one seat. Weights w (ward) and 1 (seat) with
    // quota q need 2w + 2 >= q, 3w >= q, w + 6 < q, 2w + 1 < q, so w >= 5:
    // [12; 5, 5, 5, 1 x6], total 21, is the least.
    let out = ok(&["simplify", "examples/council.clout"]);
    assert!(out.contains("Weighted: yes"), "{out}");
    assert!(out.contains("[12; 5 x3, 1 x6]"), "{out}");
    assert!(out.contains("Least total weight: 21"), "{out}");
    assert!(out.contains("on all 512 coalitions"), "{out}");
    // The printed notation is the same rule.
    let same = ok(&["compare", "examples/council.clout", "[12; 5 x3, 1 x6]"]);
    assert!(same.contains("Same rule"), "{same}");
}

#[test]
fn simplify_finds_the_dummies_of_the_closure_rule() {
    // closure = seats > 1/2 (15 of 29) and both founders (harbor 9 + mill 7
    // = 16 seats): the founders alone decide; everyone else is a dummy (by hand).
    let out = ok(&["simplify", "examples/transit.clout", "--rule", "closure"]);
    assert!(
        out.contains("Dummies: ferry, delegate1..delegate12 (13 of 15 members)"),
        "{out}"
    );
    assert!(out.contains("[2; 1, 1, 0 x13]"), "{out}");
    // The rule of the others: harbor and mill both, as a game on the 15 members.
    let same = ok(&[
        "compare",
        "examples/transit.clout",
        "[2; 1, 1, 0 x13]",
        "--rule-a",
        "closure",
    ]);
    assert!(same.contains("Same rule"), "{same}");
}

#[test]
fn simplify_two_chambers_gives_a_checked_trading_transfer() {
    // Taylor & Zwicker, Simple Games (1999), from memory: the two-chamber
    // rule with an executive and an override is not weighted and has
    // dimension 2. The transfer itself is checked by the command.
    let out = ok(&["simplify", "examples/two-chamber.clout"]);
    assert!(out.contains("Weighted: no"), "{out}");
    assert!(
        out.contains("X2") && out.contains("Y2") && !out.contains("X3"),
        "{out}"
    );
    assert!(out.contains("Dimension: at most 2"), "{out}");
    assert!(out.contains("88,072 patterns"), "{out}");
}

#[test]
fn order_two_chambers_is_incomplete() {
    // By hand: with 290 representatives and 66 senators, one more senator
    // passes (override) and one more representative does not; with 289 and
    // 67 the reverse. So senators and representatives are not comparable.
    let out = ok(&["order", "examples/two-chamber.clout"]);
    assert!(out.contains("Not complete"), "{out}");
    assert!(out.contains("rep1..rep435  (435 symmetric members)"), "{out}");
    let transit = ok(&["order", "examples/transit.clout"]);
    assert!(
        transit.contains("harbor  >  mill  >  ferry, delegate1..delegate12"),
        "{transit}"
    );
}

#[test]
fn compare_finds_a_smallest_difference() {
    // [3; 2, 1, 1] against [4; 2, 1, 1]: {p1, p2} has weight 3; it passes
    // the first and fails the second; no single member differs (by hand).
    let out = ok(&["compare", "[3; 2, 1, 1]", "[4; 2, 1, 1]"]);
    assert!(out.contains("Different rules"), "{out}");
    assert!(out.contains("(2 members; none smaller differs)"), "{out}");
    assert!(
        out.contains("p1, p2\n  voting yes (the others no): A passes, B fails."),
        "{out}"
    );
    // Under B (unanimity) each member has Banzhaf 1/3; under A p1 has 3/5.
    assert!(out.contains("0.600000  0.333333  -0.266667"), "{out}");
    assert!(out.contains("Model: "), "{out}");
}

#[test]
fn compare_matches_members_by_name_or_position() {
    let both = ok(&[
        "compare",
        "examples/council.clout",
        "examples/council.clout",
        "--rule-b",
        "charter",
    ]);
    assert!(both.contains("Members matched by name"), "{both}");
    let game = ok(&["compare", "examples/council.clout", "[12; 5 x3, 1 x6]"]);
    assert!(game.contains("Members matched by position"), "{game}");
    fails(
        &["compare", "examples/council.clout", "[2; 1, 1]"],
        "A has 9 members and B has 2",
    );
    fails(
        &[
            "compare",
            "examples/council.clout",
            "[12; 5 x3, 1 x6]",
            "--by",
            "name",
        ],
        "the rules name different members",
    );
}

/// `[q; 2, 1, 1]` from q = 2 to 4.
const SWEEP_2_4: &[&str] = &[
    "sweep",
    "--game",
    "[2; 2, 1, 1]",
    "--from",
    "2",
    "--to",
    "4",
    "--step",
    "1",
];

#[test]
fn sweep_csv_matches_hand_values() {
    // [q; 2, 1, 1] from q = 2 to 4, by hand: at q = 2 and q = 3 the swings
    // are 3, 1, 1 (Banzhaf 0.6, 0.2, 0.2); at q = 4 (unanimity) 1, 1, 1, and
    // one coalition in 8 passes.
    let out = ok(&[SWEEP_2_4, &["--format", "csv"]].concat());
    let lines: Vec<&str> = out.lines().collect();
    assert_eq!(lines.len(), 4, "{out}");
    assert!(
        lines[0].starts_with("quota,share,passage_probability,banzhaf:p1,\"banzhaf:p2, p3\","),
        "{out}"
    );
    let row = |k: usize| -> Vec<f64> { lines[k].split(',').map(|x| x.parse().unwrap()).collect() };
    assert_eq!(row(1)[0], 2.0);
    assert!((row(2)[3] - 0.6).abs() < 1e-12 && (row(2)[4] - 0.2).abs() < 1e-12);
    assert!((row(3)[2] - 0.125).abs() < 1e-12);
}

#[test]
fn sweep_svg_has_labelled_axes_and_one_series_per_group() {
    let dir = std::env::temp_dir().join(format!("clout-sweep-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("transit.svg");
    let p = path.to_str().unwrap();
    let out = ok(&["sweep", "examples/transit.clout", "--svg", p]);
    assert!(out.contains("Chart written to"), "{out}");
    let svg = std::fs::read_to_string(&path).unwrap();
    assert!(svg.starts_with("<svg xmlns=\"http://www.w3.org/2000/svg\""));
    assert!(svg.trim_end().ends_with("</svg>"));
    // Axis titles: one y title per panel (3) and the x title under each.
    let axis: Vec<&str> = svg
        .lines()
        .filter(|l| l.contains("class=\"axis-label\""))
        .collect();
    assert_eq!(axis.len(), 6, "{svg}");
    for label in [
        "Banzhaf index (normalized)",
        "Shapley-Shubik index",
        "Probability of passage",
        "quota of seats, % of the total (29)",
    ] {
        assert!(
            axis.iter().any(|l| l.contains(label)),
            "missing axis label {label}"
        );
    }
    // Under `budget` (seats >= 2/3 and count >= 3) harbor, mill, and ferry
    // with the twelve delegates (equal figures at every quota: ferry's
    // riders do not count) are three series in each index panel, plus the
    // probability of passage.
    let series = |name: &str| svg.matches(&format!("data-series=\"{name}\"")).count();
    assert_eq!(series("harbor"), 2);
    assert_eq!(series("mill"), 2);
    assert_eq!(series("ferry, delegate1..delegate12 (×13)"), 2);
    assert_eq!(svg.matches("class=\"series\"").count(), 7);
    assert_eq!(svg.matches("class=\"legend-entry\"").count(), 3);
    // 15 quotas from 15 to 29 seats: 15 points per line.
    let line = svg
        .lines()
        .find(|l| l.contains("data-series=\"harbor\""))
        .unwrap();
    let points = line.split("points=\"").nth(1).unwrap().split('"').next().unwrap();
    assert_eq!(points.split(' ').count(), 15);
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn fit_recovers_a_weighted_game() {
    // Targets: the Banzhaf indices of [8; 5, 3, 2, 1, 1] (swings 11, 5, 3,
    // 1, 1 by hand, so 11/21, 5/21, 3/21, 1/21, 1/21).
    let out = ok(&["fit", "--game", "[8; 5, 3, 2, 1, 1]", "--seconds", "1"]);
    assert!(out.contains("(the target is met)"), "{out}");
    assert!(out.contains("0.523810  0.523810"), "{out}");
    assert!(out.contains("Slomczynski & Zyczkowski (2006)"), "{out}");
    // Deterministic: the same input gives the same output.
    assert_eq!(
        out,
        ok(&["fit", "--game", "[8; 5, 3, 2, 1, 1]", "--seconds", "1"])
    );
}

#[test]
fn fit_reads_shares_and_populations() {
    let shares = ok(&["fit", "tests/data/fit-shares.csv", "--seconds", "1"]);
    assert!(shares.contains("target shares of power"), "{shares}");
    assert!(shares.contains("upper_basin"), "{shares}");
    let pops = ok(&["fit", "tests/data/fit-populations.csv", "--seconds", "0.2"]);
    assert!(pops.contains("Penrose's square-root law"), "{pops}");
    // sqrt(18,422,305) / Σ sqrt(population) = 0.153436 (computed by hand
    // from the file's figures).
    assert!(pops.contains("arvel") && pops.contains("0.153436"), "{pops}");
}

#[test]
fn fit_rejects_bad_targets() {
    let run = clout_with_input(&["fit", "-"], "member,share\nalpha,0.5\nbeta,lots\n");
    assert_eq!(run.code, 2);
    assert!(
        run.stderr
            .contains("<stdin>:3:6: `lots` is not a non-negative number"),
        "{}",
        run.stderr
    );
    let run = clout_with_input(&["fit", "-"], "name,votes\na,1\n");
    assert!(
        run.stderr.contains("<stdin>:1:1: unknown header `name,votes`"),
        "{}",
        run.stderr
    );
    let run = clout_with_input(&["fit", "-"], "member,share\na,1\na,2\n");
    assert!(run.stderr.contains("member `a` appears twice"), "{}", run.stderr);
    let run = clout_with_input(&["fit", "-"], "member,share\na,0\nb,0\n");
    assert!(
        run.stderr.contains("at least one target must be positive"),
        "{}",
        run.stderr
    );
    fails(
        &["fit", "--game", "[2; 1, 1]", "--seconds", "0"],
        "is not a time budget",
    );
    fails(&["fit"], "no targets given");
}

#[test]
fn coalitions_of_the_council() {
    // Minimal winning under `motion` (by hand, see simplify_council_motion):
    // the three wards (1) and two wards with two seats (3 * 15 = 45).
    let out = ok(&["coalitions", "examples/council.clout", "--minimal-winning"]);
    assert!(
        out.contains("46 minimal winning coalitions in 2 patterns"),
        "{out}"
    );
    assert!(out.contains("all 3 of north, river, orchard"), "{out}");
    assert!(
        out.contains("45  2 of north, river, orchard, 2 of hood1..hood6"),
        "{out}"
    );
    let each = ok(&[
        "coalitions",
        "examples/council.clout",
        "--minimal-winning",
        "--each",
        "--limit",
        "2",
    ]);
    assert!(each.contains("north, river, orchard\n"), "{each}");
    assert!(each.contains("(the first 2 shown"), "{each}");
    // [3; 2, 1, 1]: blocking coalitions p1 alone, or p2 and p3 (by hand).
    let b = ok(&["coalitions", "--game", "[3; 2, 1, 1]", "--minimal-blocking"]);
    assert!(b.contains("2 minimal blocking coalitions"), "{b}");
    assert!(b.contains("1  p1\n") && b.contains("2  p2, p3\n"), "{b}");
    fails(&["coalitions", "examples/council.clout"], "--minimal-winning");
}

#[test]
fn bad_input_exits_2() {
    fails(
        &["simplify", "no-such-file.clout"],
        "cannot read `no-such-file.clout`",
    );
    fails(&["simplify", "--game", "[3; 2, x]"], "error");
    fails(
        &["sweep", "examples/transit.clout", "--rule", "charter"],
        "say which moves",
    );
    fails(
        &["sweep", "examples/transit.clout", "--attr", "tokens"],
        "no condition of rule `budget` is on `tokens`",
    );
    fails(
        &["sweep", "examples/transit.clout", "--condition", "9"],
        "has no condition 9",
    );
    fails(
        &["sweep", "examples/transit.clout", "--from", "90%", "--to", "50%"],
        "runs downwards",
    );
    fails(
        &["sweep", "examples/transit.clout", "--from", "half"],
        "is not a quota",
    );
    fails(&["compare", "-", "-"], "cannot both be `-`");
    fails(
        &["order", "examples/council.clout", "--rule", "motoin"],
        "did you mean `motion`?",
    );
}

fn json(args: &[&str]) -> serde_json::Value {
    let mut all = args.to_vec();
    all.extend(["--format", "json"]);
    serde_json::from_str(&ok(&all)).unwrap_or_else(|e| panic!("clout {args:?}: {e}"))
}

#[test]
fn drafting_json_holds_the_answers_of_the_text() {
    // [5; 3, 2, 2, 1], by hand: minimal winning {p1, p2}, {p1, p3} and
    // {p2, p3, p4}, so no dummies; weighted (as written).
    let s = json(&["simplify", "--game", "[5; 3, 2, 2, 1]"]);
    assert_eq!(s["weighted"], true);
    assert_eq!(s["dummies"], serde_json::json!([]));
    assert_eq!(s["checked"]["patterns"], "16");
    assert_eq!(s["checked"]["patterns_are_coalitions"], true);
    let vote = &s["weighted_vote"];
    assert_eq!(vote["weights"]["p1"].as_str().unwrap().len(), 1);
    let text = ok(&["simplify", "--game", "[5; 3, 2, 2, 1]"]);
    assert!(text.contains(vote["notation"].as_str().unwrap()), "{text}");

    let c = json(&["coalitions", "--game", "[5; 3, 2, 2, 1]", "--minimal-winning"]);
    assert_eq!(c["kind"], "minimal_winning");
    assert_eq!(c["count"], "3");
    assert_eq!(
        c["coalitions"],
        serde_json::json!([["p1", "p2"], ["p1", "p3"], ["p2", "p3", "p4"]])
    );
    // Types {p1}, {p2, p3}, {p4}: patterns (1, 1, 0) standing for 2 coalitions and (0, 2, 1).
    assert_eq!(c["pattern_count"], 2);
    assert_eq!(c["patterns"][0]["count"], "2");
    assert_eq!(
        c["patterns"][0]["parts"][1],
        serde_json::json!({"take": 1, "of": ["p2", "p3"]})
    );

    let d = json(&["compare", "[3; 2, 1, 1]", "[4; 2, 1, 1]"]);
    assert_eq!(d["verdict"], "different");
    assert_eq!(d["witness"]["coalition"], serde_json::json!(["p1", "p2"]));
    assert_eq!(d["witness"]["passes"], "a");
    assert!((d["members"][0]["banzhaf_a"].as_f64().unwrap() - 0.6).abs() < 1e-12);
    assert!((d["passage_probability_b"].as_f64().unwrap() - 0.125).abs() < 1e-12);
    let same = json(&["compare", "[3; 2, 1, 1]", "[5; 3, 2, 2]"]);
    assert_eq!(same["verdict"], "same");
    assert_eq!(same["patterns"], "6");
    assert_eq!(same["members"], serde_json::Value::Null);

    let o = json(&["order", "examples/two-chamber.clout"]);
    assert_eq!(o["complete"], false);
    assert_eq!(o["classes"][0]["members"], serde_json::json!(["executive"]));
    assert_eq!(o["incomparable"].as_array().unwrap().len(), 1);

    // The JSON sweep and the CSV sweep carry the same figures.
    let w = json(SWEEP_2_4);
    let csv = ok(&[SWEEP_2_4, &["--format", "csv"]].concat());
    let row: Vec<f64> = csv
        .lines()
        .nth(3)
        .unwrap()
        .split(',')
        .map(|x| x.parse().unwrap())
        .collect();
    let last = &w["points"][2];
    assert_eq!(last["quota"], "4");
    assert_eq!(last["passage_probability"].as_f64().unwrap(), row[2]);
    assert_eq!(last["members"][0]["banzhaf"].as_f64().unwrap(), row[3]);
    assert_eq!(w["conditions"][0]["number"], 1);

    let f = json(&[
        "fit",
        "--game",
        "[5; 3, 2, 2, 1]",
        "--seconds",
        "0.05",
        "--max-total",
        "40",
    ]);
    assert_eq!(f["members"].as_array().unwrap().len(), 4);
    assert!(f["max_deviation"].as_f64().unwrap() < 1e-9, "{f}");
}
