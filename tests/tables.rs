//! Member tables through the library: CSV and JSON give identical reports,
//! the rounding certificate covers every true difference (brute force on
//! exact big integers), and recorded votes are read and decided.

use std::collections::HashMap;

use clout::report::rounding::{certify_by, Count};
use clout::report::{self, Options};
use clout::RuleFile;
use clout_dsl::compile_with;
use proptest::prelude::*;

fn compile(rule: &str, path: &str, table: &str) -> RuleFile {
    let mut tables = HashMap::new();
    tables.insert(path.to_string(), table.to_string());
    compile_with(rule, &mut tables).unwrap_or_else(|e| panic!("{}", clout_dsl::render_all(&e, "rule", rule)))
}

fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

fn name() -> impl Strategy<Value = String> {
    proptest::string::string_regex("[a-zA-Z0-9 ,\"'éüß\u{202e}\\\\.#-]{1,12}")
        .unwrap()
        .prop_map(|s| s.trim().to_string())
        .prop_filter("a name", |s| !s.is_empty())
        // The rule file below declares these: a member of the same name is refused.
        .prop_filter("not a name the rule file declares", |s| {
            !["h", "r", "tokens", "seats", "count", "anchor", "keel"].contains(&s.as_str())
        })
}

fn amount() -> impl Strategy<Value = String> {
    (0u64..1_000, 0u32..1_000_000).prop_map(|(whole, frac)| format!("{whole}.{frac:06}"))
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(32))]

    /// One table written as CSV and as JSON: the same members, weights and report.
    #[test]
    fn csv_and_json_tables_give_identical_reports(rows in proptest::collection::vec((name(), amount(), 0u64..20), 1..9)) {
        let mut seen = std::collections::HashSet::new();
        // Two fixed members, so that every condition has something to count.
        let fixed = [("anchor".to_string(), "1.5".to_string(), 1), ("keel".to_string(), "0.25".to_string(), 2)];
        let rows: Vec<_> = fixed.into_iter().chain(rows).filter(|r| seen.insert(r.0.clone())).collect();
        let mut csv = String::from("holder,\"balance, in tokens\",seats\n");
        for (n, a, s) in &rows {
            csv.push_str(&format!("{},{a},{s}\n", csv_field(n)));
        }
        let json: Vec<serde_json::Value> = rows
            .iter()
            .map(|(n, a, s)| serde_json::json!({"seats": s, "holder": n, "balance, in tokens": a}))
            .collect();
        let json = serde_json::to_string_pretty(&json).unwrap();
        let rule = |path: &str| format!(
            "attribute tokens decimals 6\nmembers h from \"{path}\" name=holder tokens=\"balance, in tokens\" seats=seats\n\
             rule r = tokens > 1/2 or (seats >= 2/3 and count >= 2)\n"
        );
        let a = compile(&rule("t.csv"), "t.csv", &csv);
        let b = compile(&rule("t.json"), "t.json", &json);
        prop_assert_eq!(&a.members.iter().map(|m| &m.name).collect::<Vec<_>>(), &rows.iter().map(|r| &r.0).collect::<Vec<_>>());
        prop_assert_eq!(&a.weights, &b.weights);
        let ra = report::report(&a, a.rule(None).unwrap(), &Options::default()).unwrap();
        let rb = report::report(&b, b.rule(None).unwrap(), &Options::default()).unwrap();
        prop_assert_eq!(serde_json::to_string(&ra).unwrap(), serde_json::to_string(&rb).unwrap());
    }
}

/// The exact game of the certificate test, decided with big integers
/// (independently of the compiler's quotas): `x` exact base units.
fn exact_passes(form: usize, x: &[u128], coalition: u32) -> bool {
    let total: u128 = x.iter().sum();
    let yes: u128 = (0..x.len())
        .filter(|&i| coalition >> i & 1 == 1)
        .map(|i| x[i])
        .sum();
    let members = coalition.count_ones();
    match form {
        0 => 2 * yes > total,
        1 => 3 * yes >= 2 * total,
        2 => 2 * yes > total && members >= 2,
        // tokens yes > tokens no, everyone present: Y > T - Y.
        _ => yes > total - yes,
    }
}

const FORMS: [&str; 4] = [
    "tokens > 1/2",
    "tokens >= 2/3",
    "tokens > 1/2 and count >= 2",
    "tokens present >= 20% and tokens yes > tokens no",
];

/// Exact swings, Penrose, Banzhaf and Shapley-Shubik of a game given by `passes`, by brute force.
fn brute_indices(n: usize, passes: impl Fn(u32) -> bool) -> (Vec<u64>, Vec<f64>, Vec<f64>, Vec<f64>) {
    let mut swings = vec![0u64; n];
    let mut ss = vec![0f64; n];
    let fact = |k: usize| (1..=k).map(|x| x as f64).product::<f64>();
    for s in 0u32..1 << n {
        for i in 0..n {
            if s >> i & 1 == 0 && passes(s | 1 << i) && !passes(s) {
                swings[i] += 1;
                let k = s.count_ones() as usize;
                ss[i] += fact(k) * fact(n - k - 1) / fact(n);
            }
        }
    }
    let total: u64 = swings.iter().sum();
    let penrose = swings
        .iter()
        .map(|&s| s as f64 / f64::from(1u32 << (n - 1)))
        .collect();
    let banzhaf = swings
        .iter()
        .map(|&s| if total == 0 { 0.0 } else { s as f64 / total as f64 })
        .collect();
    (swings, penrose, banzhaf, ss)
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]

    /// Small random snapshots whose exact amounts (18 decimals) are too large
    /// for the core, rounded to a coarse unit: every coalition decided
    /// differently, and every index's change, lies within what the report
    /// certifies, by each counting method.
    #[test]
    fn the_rounding_certificate_covers_the_true_differences(
        balances in proptest::collection::vec((0u64..30, 0u64..1_000_000_000_000_000_000), 2..9),
        unit in prop::sample::select(vec!["0.5", "1", "3", "0.1", "7.25"]),
        form in 0usize..4,
    ) {
        let mut csv = String::from("name,balance\nbase,20\n");
        for (i, (whole, frac)) in balances.iter().enumerate() {
            csv.push_str(&format!("m{i},{whole}.{frac:018}\n"));
        }
        let rule = format!(
            "attribute tokens decimals 18 unit {unit}\nmembers h from \"t.csv\" tokens=balance\nrule r = {}\n",
            FORMS[form]
        );
        let file = compile(&rule, "t.csv", &csv);
        let r = file.rule(None).unwrap();
        let exact: Vec<u128> = file.amounts[0].exact.clone();
        let n = exact.len();
        let rounded_passes = |s: u32| {
            let sums: Vec<u64> = (0..r.rule.attributes())
                .map(|a| (0..n).filter(|&i| s >> i & 1 == 1).map(|i| r.rule.weight(a, i)).sum())
                .collect();
            r.rule.passes_with_sums(&sums)
        };
        let differ = (0u32..1 << n).filter(|&s| exact_passes(form, &exact, s) != rounded_passes(s)).count() as f64;
        let (sw_e, pen_e, bz_e, ss_e) = brute_indices(n, |s| exact_passes(form, &exact, s));
        let (sw_r, pen_r, bz_r, ss_r) = brute_indices(n, rounded_passes);
        for how in [Count::Auto, Count::Windows, Count::Bound] {
            let c = certify_by(&file, r, &pen_r, how).expect("rounded");
            let bound = c.share * f64::from(1u32 << n);
            prop_assert!(differ <= bound + 1e-9, "{how:?}: {differ} differ, certified {bound}");
            if how == Count::Auto {
                prop_assert!(c.coalitions_exact);
                prop_assert_eq!(c.coalitions.clone(), Some(differ.to_string()));
            }
            for i in 0..n {
                prop_assert!((sw_e[i] as f64 - sw_r[i] as f64).abs() <= bound + 1e-9, "swings of {i}");
                prop_assert!((pen_e[i] - pen_r[i]).abs() <= c.penrose + 1e-12, "penrose of {i}");
                prop_assert!((ss_e[i] - ss_r[i]).abs() <= c.shapley_shubik + 1e-12, "shapley-shubik of {i}");
                prop_assert!((bz_e[i] - bz_r[i]).abs() <= c.banzhaf + 1e-12, "banzhaf of {i}: {} {} {}", bz_e[i], bz_r[i], c.banzhaf);
            }
        }
    }
}

const TRANSIT: &str = include_str!("../examples/transit.clout");

fn record_errors(table: &str) -> String {
    let file = clout::compile(TRANSIT).unwrap();
    let e = clout::record::read(&file, "m.csv", table.as_bytes()).unwrap_err();
    clout_dsl::render_all(&e, "m.csv", "")
}

#[test]
fn ballot_files_are_refused_with_their_place() {
    let cases: [(&str, &str); 5] = [
        (
            "vote,harbor\nm1,yes\n",
            "m.csv:1:1: error: the header starts with `vote`, not `motion`\n   1 | vote,harbor\n     | ^^^^\n     = hint: a ballot file's header is `motion,<member>,<member>,...` (one row per motion) or `motion,member,vote` (one row per vote)\n",
        ),
        (
            "motion,harbour,mill\nm1,yes,no\n",
            "m.csv:1:8: error: unknown member harbour\n   1 | motion,harbour,mill\n     |        ^^^^^^^\n     = hint: did you mean harbor?\n",
        ),
        (
            "motion,harbor,mill\nm1,yes,maybe\n",
            "m.csv:2:8: error: `maybe` is not a vote\n   2 | m1,yes,maybe\n     |        ^^^^^\n     = hint: a vote is `yes`, `no`, `abstain` or `absent` (also `y`, `n`, `a`, `-`, in any case)\n",
        ),
        (
            "motion,harbor\nm1,y\nm1,n\n",
            "m.csv:3:1: error: motion m1 is recorded twice\n   3 | m1,n\n     | ^^\n     = hint: it is already on line 2; give each motion one row\n",
        ),
        (
            "motion,member,vote\nm1,harbor,y\nm1,harbor,n\n",
            "m.csv:3:1: error: harbor votes twice on motion m1\n   3 | m1,harbor,n\n     | ^\n     = hint: the first vote is on line 2; keep one row per member and motion\n",
        ),
    ];
    for (table, want) in cases {
        assert_eq!(record_errors(table), want, "{table}");
    }
}

#[test]
fn a_record_of_200000_votes_is_read_and_decided() {
    let file = clout::compile(TRANSIT).unwrap();
    let mut text = String::from("motion,member,vote\n");
    let mut rows = 0;
    let mut m = 0;
    while rows < 200_000 {
        for (i, member) in file.members.iter().enumerate() {
            let vote = ["y", "N", "a", "-"][(i + m) % 4];
            text.push_str(&format!(
                "\"motion {m}, part {}\",{},{vote}\n",
                m % 7,
                member.name
            ));
            rows += 1;
        }
        m += 1;
    }
    let motions = clout::record::read(&file, "m.csv", text.as_bytes()).unwrap();
    assert_eq!(motions.len(), m);
    assert_eq!(motions[1].name, "motion 1, part 1");
    assert_eq!(
        motions[1].votes[..3],
        [clout::Vote::No, clout::Vote::Abstain, clout::Vote::Absent]
    );
    let rule = file.rule(None).unwrap();
    let record = clout::record::decide_all(&file, rule, &motions[..50], Some((&file, rule))).unwrap();
    assert!(record.differing().is_empty());
    // Wide and long layouts of the same votes decide the same.
    let wide: String = std::iter::once(format!(
        "motion,{}\n",
        file.members
            .iter()
            .map(|x| x.name.as_str())
            .collect::<Vec<_>>()
            .join(",")
    ))
    .chain(motions[..50].iter().map(|mo| {
        let cells: Vec<&str> = mo
            .votes
            .iter()
            .map(|v| match v {
                clout::Vote::Yes => "yes",
                clout::Vote::No => "no",
                clout::Vote::Abstain => "abstain",
                clout::Vote::Absent => "absent",
            })
            .collect();
        format!("\"{}\",{}\n", mo.name, cells.join(","))
    }))
    .collect();
    let again = clout::record::read(&file, "w.csv", wide.as_bytes()).unwrap();
    assert_eq!(again, motions[..50].to_vec());
}
