//! The rule language end to end: exact quotas, names, definitions, the
//! `[q; w...]` notation, a table of bad inputs with their positions and
//! messages, warnings, published check values, and the print/compile round
//! trip on random rules.

mod support;

use clout_core::{Atom, Node};
use clout_dsl::{compile, exact, lint, print_rule, AttributeKind, RuleFile, Severity};
use proptest::prelude::*;
use support::rules;

const TRANSIT: &str = include_str!("../../examples/transit.clout");
const TWO_CHAMBER: &str = include_str!("../../examples/two-chamber.clout");

fn ok(source: &str) -> RuleFile {
    match compile(source) {
        Ok(f) => f,
        Err(e) => panic!("{}", clout_dsl::render_all(&e, "test", source)),
    }
}

fn quotas(file: &RuleFile, rule: &str) -> Vec<(String, u64)> {
    let r = file.rule(Some(rule)).unwrap();
    r.rule
        .atoms()
        .iter()
        .map(|a| (r.attributes[usize::from(a.attribute)].name.clone(), a.quota))
        .collect()
}

#[test]
fn transit_quotas_are_exact_integers() {
    let f = ok(TRANSIT);
    assert_eq!(f.members.len(), 15);
    assert_eq!(f.members[3].name, "delegate1");
    assert_eq!(f.members[14].name, "delegate12");
    assert_eq!(f.attributes, ["seats", "riders"]);
    // seats total 9 + 7 + 1 + 12 = 29; riders 712,000.
    // 2/3 of 29 = 19.33.. -> 20; 60% of 29 = 17.4 -> 18; 65% of 712,000 = 462,800 exactly;
    // fewer than 2 of 15 against -> at least 14 yes; more than half of 29 -> 15;
    // more than 50% of 712,000 -> 356,001.
    let s = |a: &str, q: u64| (a.to_string(), q);
    assert_eq!(quotas(&f, "budget"), [s("seats", 20), s("count", 3)]);
    assert_eq!(
        quotas(&f, "charter"),
        [s("seats", 18), s("riders", 462_800), s("count", 14)]
    );
    assert_eq!(quotas(&f, "closure"), [s("seats", 15), s("founders", 2)]);
    assert_eq!(quotas(&f, "quick"), [s("founders", 2), s("riders", 356_001)]);
    let charter = f.rule(Some("charter")).unwrap();
    assert_eq!(
        charter.rule.formula(),
        [
            Node::Atom(0),
            Node::Atom(1),
            Node::All(2),
            Node::Atom(2),
            Node::Any(2)
        ]
    );
    assert_eq!(charter.attributes[2].kind, AttributeKind::Count);
    assert_eq!(charter.conditions[2].text, "count against < 2");
    assert_eq!(f.rule(None).unwrap().name, "budget");
}

#[test]
fn percentages_fractions_and_blocs() {
    let f = ok(
        "member a w=3\nmember b w=5\nmembers c x6 w=0\nbloc ab = a, b\nbloc big = ab, c2\n\
         rule p = w >= 62.5% and 2/3 of big\nrule q = ab >= 1/2 and big against <= 1 and c",
    );
    // 62.5% of 8 = 5 exactly; 2/3 of 3 members = 2; 1/2 of 2 = 1; at most 1 of 3 against -> 2.
    assert_eq!(quotas(&f, "p"), [("w".into(), 5), ("big".into(), 2)]);
    assert_eq!(
        quotas(&f, "q"),
        [("ab".into(), 1), ("big".into(), 2), ("c".into(), 6)]
    );
    let big = f.blocs.iter().find(|b| b.name == "big").unwrap();
    assert_eq!(big.members, [0, 1, 3]);
    let q = f.rule(Some("q")).unwrap();
    // The group `c` is a bloc of its six members.
    let c = q.attributes.iter().position(|a| a.name == "c").unwrap();
    assert_eq!(q.rule.attribute_weights(c), [0, 0, 1, 1, 1, 1, 1, 1]);
}

#[test]
fn definitions_share_their_atoms() {
    let f = ok(
        "member a w=2\nmember b w=1\nmember c w=1\ndefine half = w > 1/2\n\
         rule r = half and (half or count >= 2)",
    );
    let r = f.rule(None).unwrap();
    assert_eq!(
        r.rule.atoms(),
        [
            Atom {
                attribute: 0,
                quota: 3
            },
            Atom {
                attribute: 1,
                quota: 2
            }
        ]
    );
    assert_eq!(
        r.rule.formula(),
        [
            Node::Atom(0),
            Node::Atom(0),
            Node::Atom(1),
            Node::Any(2),
            Node::All(2)
        ]
    );
}

#[test]
fn member_names_alone_and_ranges() {
    let f = ok(TWO_CHAMBER);
    assert_eq!(f.members.len(), 536);
    let r = f.rule(None).unwrap();
    // more than 1/2 of 435 -> 218; of 100 -> 51; 2/3 of 435 -> 290; of 100 -> 67 (66.67 rounds up).
    assert_eq!(
        quotas(&f, "passage"),
        [
            ("rep".into(), 218),
            ("senator".into(), 51),
            ("executive".into(), 1),
            ("rep".into(), 290),
            ("senator".into(), 67)
        ]
    );
    assert_eq!(r.attributes.last().unwrap().kind, AttributeKind::Member);
    assert_eq!(f.members_named("rep3..rep5"), Some(vec![2, 3, 4]));
    assert_eq!(f.members_named("rep5..senator1"), None);
    assert_eq!(f.members_named("senator").map(|m| m.len()), Some(100));
    assert_eq!(
        f.describe_members(&[0, 1, 2, 435, 535]),
        ["rep1..rep3", "senator1", "executive"]
    );
}

#[test]
fn weighted_game_notation() {
    let f = ok("# fictional\n[39; 7 x5, 1 x10]\n");
    let r = f.rule(None).unwrap();
    assert_eq!(r.name, "game");
    assert_eq!(f.members.len(), 15);
    assert_eq!(f.members[14].name, "p15");
    assert_eq!(r.rule.single_threshold(), Some((0, 39)));
    assert_eq!(r.rule.total(0), 45);
    assert_eq!(f.members_named("p2..p4"), Some(vec![1, 2, 3]));
    assert_eq!(f.describe_members(&[0, 1, 2, 3, 4]), ["p1..p5"]);
    assert_eq!(ok("[2; 1, 1, 1,]").members.len(), 3);
}

/// Bad inputs: (source, line, column, message). Every message is pinned.
const BAD: &[(&str, usize, usize, &str)] = &[
    (
        "member harbor seats=9\nmember mill seats=7\nbloc founders = harbour, mill\nrule r = seats > 1/2",
        3,
        17,
        "unknown member `harbour`",
    ),
    ("member a seats=9\nrule r = seat > 1/2", 2, 10, "unknown attribute `seat`"),
    ("member a seats=9\nrule r = b", 2, 10, "unknown name `b`"),
    (
        "member a seats=9\nmember b seats=1\nrule r = seats < 10",
        3,
        16,
        "`seats < 10` is not monotone: an extra yes vote could defeat the motion",
    ),
    (
        "member a seats=9\nrule r = seats <= 3",
        2,
        16,
        "`seats <= 3` is not monotone: an extra yes vote could defeat the motion",
    ),
    (
        "member a seats=9\nrule r = seats = 9",
        2,
        16,
        "`seats = 9` is not monotone: an exact amount can be overshot by an extra yes vote",
    ),
    (
        "member a seats=9\nrule r = count against > 1",
        2,
        24,
        "`count against > 1` is not monotone: more votes against would help the motion pass",
    ),
    ("member a seats=9\nrule r = not a", 2, 10, "`not` makes the rule non-monotone"),
    ("member a seats=9\nrule r = seats >= 120%", 2, 19, "the percentage 120% is above 100%"),
    ("member a seats=9\nrule r = seats >= 3/2", 2, 19, "the share 3/2 is more than the whole"),
    ("member a seats=9\nrule r = seats >= 1/0", 2, 19, "the fraction 1/0 has a zero denominator"),
    (
        "member a seats=9\nrule r = seats >= 62.5",
        2,
        19,
        "`62.5` is a decimal without a percent sign",
    ),
    (
        "member a seats=9\nrule r = seats >= 99999999999999999999",
        2,
        19,
        "the number 99999999999999999999 is too large",
    ),
    ("member a seats=9\nmember a seats=1\nrule r = a", 2, 8, "duplicate name `a`"),
    (
        "members d x3 seats=1\nmember d2\nrule r = count > 1/2",
        2,
        8,
        "duplicate name `d2`",
    ),
    ("member seats seats=1\nrule r = seats >= 1", 1, 14, "duplicate name `seats`"),
    (
        "member a seats=9\nmember b seats=1\nrule r = seats >= 11",
        3,
        10,
        "no coalition can meet `seats >= 11`: it needs 11 of a total of 10 `seats`",
    ),
    (
        "member a seats=9\nrule r = seats > 100%",
        2,
        10,
        "no coalition can meet `seats > 100%`: it needs 10 of a total of 9 `seats`",
    ),
    (
        "member a seats=9\nrule r = seats >= 0",
        2,
        10,
        "`seats >= 0` is met even when nobody votes yes",
    ),
    (
        "member a seats=9\nmember b seats=3\nrule r = count against < 5",
        3,
        10,
        "`count against < 5` is met even when nobody votes yes",
    ),
    (
        "member a\nbloc b = a\nrule r = 3 of b",
        3,
        10,
        "no coalition can meet `3 of b`: it needs 3 of the 1 members of `b`",
    ),
    ("member a\nrule r = 2 of a", 2, 15, "`a` is a member; `K of` needs a bloc or group"),
    ("member a seats=2\nrule r = seats", 2, 10, "`seats` is an attribute; compare it with an amount"),
    ("member a seats=9 seats=2\nrule r = a", 1, 18, "`seats` is given twice"),
    ("members d x0 seats=1\nrule r = count > 1/2", 1, 11, "a group of zero members"),
    (
        "member a\ndefine x = y\ndefine y = x\nrule r = x",
        2,
        8,
        "`x` refers to itself (x -> y -> x)",
    ),
    ("member a\nbloc b = a, a\nrule r = b", 2, 13, "`a` is listed twice in bloc `b`"),
    ("member a seats=9\nrule r = seats => 1", 2, 16, "`=>` is not a comparison of the language"),
    ("member a\nrule r = a\ntitle \"x\"\ntitle \"y\"", 4, 1, "a second title"),
    ("member a seats=9 # no rule\n\n", 1, 17, "the file declares no rule"),
    ("rule r = count > 1/2\n", 1, 21, "the file declares no members"),
    (
        "member a seats=9\nrule r = seats >=\n",
        2,
        18,
        "expected an amount, found the end of the file",
    ),
    (
        "member a seats=9\nrule r = seats >= 1 and\n",
        2,
        24,
        "expected a condition, found the end of the file",
    ),
    (
        "member a seats=9\nrule r = (seats >= 1 and a",
        2,
        27,
        "expected `)`, a comparison (`>=` or `>`), `against`, `and` or `or`, found the end of the file",
    ),
    (
        "member a seats=9\nmembrer b seats=1\nrule r = a",
        2,
        1,
        "expected a weight such as `seats=3` or a declaration (`title`, `member`, `members`, `attribute`, `bloc`, `define` or `rule`), found `membrer`",
    ),
    ("member count", 1, 8, "expected a name, found `count`"),
    (
        "[2; 1,2,3",
        1,
        10,
        "expected a repeat count such as `x12`, `,` or `]`, found the end of the file",
    ),
    ("[0; 1,2,3]", 1, 2, "`weight >= 0` is met even when nobody votes yes"),
    (
        "[7; 1,2,3]",
        1,
        2,
        "no coalition can meet `weight >= 7`: it needs 7 of a total of 6 `weight`",
    ),
    ("[2; 1 x0]", 1, 5, "a weight repeated zero times"),
    ("members m x70000\nrule r = m", 1, 11, "more than 65535 members"),
];

#[test]
fn bad_inputs_point_at_their_cause() {
    let mut failures = Vec::new();
    for &(source, line, col, message) in BAD {
        match compile(source) {
            Ok(_) => failures.push(format!("{source:?}: compiled")),
            Err(errors) => {
                let first = &errors[0];
                let got = (first.line_col(source), first.message.as_str());
                if got != ((line, col), message) {
                    failures.push(format!(
                        "{source:?}: got {got:?}, want {:?}",
                        ((line, col), message)
                    ));
                }
                if first.hint.is_none() {
                    failures.push(format!("{source:?}: no hint"));
                }
                assert!(errors.iter().all(|e| e.severity == Severity::Error));
            }
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn every_error_of_a_file_is_reported() {
    let source = "member a seats=9\nrule r = seats >= 200 and c\nrule s = seets > 1/2\nrule t = seats < 3";
    let errors = compile(source).unwrap_err();
    let at: Vec<(usize, usize)> = errors.iter().map(|e| e.line_col(source)).collect();
    assert_eq!(at, [(2, 10), (2, 27), (3, 10), (4, 16)]);
}

#[test]
fn rendered_errors_show_the_line_a_caret_and_a_hint() {
    let source = "member harbor seats=9\nmember mill seats=7\nrule r = seats > 1/2 and harbour\n";
    let errors = compile(source).unwrap_err();
    assert_eq!(
        clout_dsl::render_all(&errors, "board.clout", source),
        "board.clout:3:26: error: unknown name `harbour`\n\
         \x20  3 | rule r = seats > 1/2 and harbour\n\
         \x20    |                          ^^^^^^^\n\
         \x20    = hint: did you mean `harbor`?\n"
    );
}

#[test]
fn lint_warns_about_dummies_and_improper_rules() {
    let f = ok(TRANSIT);
    let warnings = lint(&f, u128::MAX);
    let messages: Vec<&str> = warnings.iter().map(|d| d.message.as_str()).collect();
    assert_eq!(
        messages,
        [
            "under rule `closure`, `ferry` and `delegate1..delegate12` are dummies: their vote never changes the outcome",
            "under rule `quick`, `ferry` and `delegate1..delegate12` are dummies: their vote never changes the outcome",
        ]
    );
    // [2; 1, 1, 1, 1]: {p1, p2} and {p3, p4} both pass.
    let g = ok("[2; 1 x4]");
    let w = lint(&g, u128::MAX);
    assert_eq!(w.len(), 1);
    assert_eq!(
        w[0].message,
        "rule `game` is not proper: two disjoint coalitions can both pass"
    );
    assert!(
        w[0].hint
            .as_deref()
            .unwrap()
            .starts_with("for example {p1, p2} and {p3, p4} both pass"),
        "{:?}",
        w[0].hint
    );
    // A budget too small for any engine gives a note, not a warning.
    let n = lint(&g, 1);
    assert_eq!(n[0].severity, Severity::Note);
}

#[test]
fn lint_spends_one_budget_per_file() {
    // Two identical rules: a budget of exactly one rule's estimate checks the
    // first and leaves too little for the second (the engines never charge
    // more than their estimate on a rule they accept).
    let source = "member a seats=5\nmember b seats=4\nmember c seats=3\nmember d seats=2\nmember e seats=1\n\
                  rule first = seats >= 1/2\nrule second = seats >= 1/2\n";
    let f = ok(source);
    let one = exact::choose(&f.rule(Some("first")).unwrap().rule, u128::MAX)
        .unwrap()
        .cost;
    let both = lint(&f, u128::MAX);
    assert!(both.iter().all(|d| d.severity != Severity::Note), "{both:?}");
    let shared = lint(&f, one);
    let notes: Vec<&str> = shared
        .iter()
        .filter(|d| d.severity == Severity::Note)
        .map(|d| d.message.as_str())
        .collect();
    assert_eq!(notes.len(), 1, "{shared:?}");
    assert!(
        notes[0].starts_with("rule `second` was not checked"),
        "{}",
        notes[0]
    );
    assert!(notes[0].contains("left of the file's budget of"), "{}", notes[0]);
}

fn exact_of(source: &str) -> exact::Power {
    let f = ok(source);
    let r = &f.rule(None).unwrap().rule;
    let plan = exact::choose(r, u128::MAX).unwrap();
    exact::power(r, plan.engine).unwrap()
}

#[test]
fn published_weighted_games_through_the_language() {
    // [12; 4, 4, 4, 2, 2, 1]: swings 10, 10, 10, 6, 6, 0; Shapley-Shubik 7/30 (x3), 3/20 (x2), 0.
    // Felsenthal & Machover 1998, The Measurement of Voting Power (the 1958 EEC Council).
    for source in [
        "[12; 4, 4, 4, 2, 2, 1]",
        "member fr w=4\nmember de w=4\nmember it w=4\nmember be w=2\nmember nl w=2\nmember lu w=1\nrule r = w >= 12",
    ] {
        let p = exact_of(source);
        let swings: Vec<&str> = p.members.iter().map(|m| m.swings.as_str()).collect();
        assert_eq!(swings, ["10", "10", "10", "6", "6", "0"]);
        let ss: Vec<f64> = p.members.iter().map(|m| m.shapley_shubik).collect();
        for (got, want) in ss.iter().zip([7.0 / 30.0, 7.0 / 30.0, 7.0 / 30.0, 0.15, 0.15, 0.0]) {
            assert!((got - want).abs() < 1e-12, "{ss:?}");
        }
        assert!(p.members[5].dummy);
    }
    // [39; 7 x5, 1 x10]: swings 848 and 84; Shapley-Shubik 421/2145 and 4/2145.
    // Felsenthal & Machover 1998; Taylor & Zwicker 1999, Simple Games (the UN Security Council).
    let p = exact_of("[39; 7 x5, 1 x10]");
    assert_eq!(p.members[0].swings, "848");
    assert_eq!(p.members[5].swings, "84");
    let (num, den) = p.members[0].shapley_shubik_exact.clone().unwrap();
    let (num, den): (u128, u128) = (num.parse().unwrap(), den.parse().unwrap());
    assert_eq!(num * 2145, 421 * den);
    let (num, den) = p.members[14].shapley_shubik_exact.clone().unwrap();
    let (num, den): (u128, u128) = (num.parse().unwrap(), den.parse().unwrap());
    assert_eq!(num * 2145, 4 * den);
    assert!(p.members[0].veto && !p.members[5].veto);
}

#[test]
fn published_two_chamber_rule_through_the_language() {
    // 435 + 100 equal members and an executive: passage by more than half of both
    // chambers and the executive, or two thirds of both. Executive: normalized
    // Banzhaf 0.0380, Shapley-Shubik 0.1605 to 3 significant figures
    // (Taylor 1995, Mathematics and Politics; from memory).
    let p = exact_of(TWO_CHAMBER);
    let executive = &p.members[535];
    assert!(
        (executive.banzhaf - 0.0380).abs() < 0.00005,
        "{}",
        executive.banzhaf
    );
    assert!(
        (executive.shapley_shubik - 0.1605).abs() < 0.00005,
        "{}",
        executive.shapley_shubik
    );
    assert!(!executive.veto && !executive.dummy);
    assert!(p.proper && !p.strong);
}

proptest! {
    #[test]
    fn printed_rules_compile_to_the_same_rule(rule in rules()) {
        let text = print_rule(&rule);
        let file = match compile(&text) {
            Ok(f) => f,
            Err(e) => return Err(TestCaseError::fail(clout_dsl::render_all(&e, "printed", &text))),
        };
        prop_assert_eq!(&file.rules[0].rule, &rule, "{}", text);
    }

    #[test]
    fn compiled_rules_print_back_to_themselves(rule in rules()) {
        // compile . print is the identity on compiled rules, so printing is stable.
        let once = print_rule(&rule);
        let again = print_rule(&compile(&once).unwrap().rules[0].rule);
        prop_assert_eq!(once, again);
    }
}

/// `2^k` as a decimal string, by doubling digit strings.
fn power_of_two(k: u32) -> String {
    let mut digits = vec![1u8];
    for _ in 0..k {
        let mut carry = 0;
        for d in digits.iter_mut() {
            let v = *d * 2 + carry;
            *d = v % 10;
            carry = v / 10;
        }
        if carry > 0 {
            digits.push(carry);
        }
    }
    digits.iter().rev().map(|d| char::from(b'0' + d)).collect()
}

#[test]
fn counts_near_the_width_of_the_count_type_do_not_overflow() {
    // 1,023 equal members, more than half: by symmetry exactly half of the 2^1023
    // coalitions win, and every member has banzhaf 1/1023. Counts of 1024 bits
    // would overflow in intermediates of n + log2 n bits.
    let p = exact_of("members m x1023\nrule r = count > 1/2");
    assert_eq!(p.winning, power_of_two(1022));
    assert!((p.members[0].banzhaf - 1.0 / 1023.0).abs() < 1e-12);
    assert_eq!(p.members[0].swings, p.members[1022].swings);
    assert_eq!(exact::limbs_for(960), 16);
    assert_eq!(exact::limbs_for(961), 64);
    assert_eq!(exact::limbs_for(65_535), 1025);
}

const EXAMPLES: [&str; 5] = [
    TRANSIT,
    TWO_CHAMBER,
    include_str!("../../examples/council.clout"),
    include_str!("../../examples/compact.clout"),
    include_str!("../../examples/cooperative.clout"),
];

/// An example file with bytes replaced, inserted or deleted at random places.
fn mutated() -> impl Strategy<Value = String> {
    let edits = prop::collection::vec(
        (
            any::<prop::sample::Index>(),
            0u8..3,
            prop::sample::select(vec![
                "(",
                ")",
                " and ",
                " or ",
                "#",
                "\n",
                "x0",
                "99999999999999999999",
                "%",
                "/0",
                "<",
                "against",
                "=",
                ",",
                "\"",
                "é",
                "[",
                "]",
                ";",
                "of",
                "not ",
            ]),
        ),
        1..6,
    );
    (prop::sample::select(EXAMPLES.to_vec()), edits).prop_map(|(source, edits)| {
        let mut s = source.to_string();
        for (at, kind, text) in edits {
            let mut i = at.index(s.len() + 1);
            while !s.is_char_boundary(i) {
                i -= 1;
            }
            match kind {
                0 => s.insert_str(i, text),
                1 => {
                    let mut j = (i + text.len()).min(s.len());
                    while !s.is_char_boundary(j) {
                        j -= 1;
                    }
                    s.replace_range(i..j, text);
                }
                _ => {
                    let mut j = (i + 3).min(s.len());
                    while !s.is_char_boundary(j) {
                        j -= 1;
                    }
                    s.replace_range(i..j, "");
                }
            }
        }
        s
    })
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 300, ..ProptestConfig::default() })]

    /// Damaged files compile or fail with positioned errors; they never panic.
    #[test]
    fn damaged_files_never_panic(source in mutated()) {
        match compile(&source) {
            Ok(file) => prop_assert!(!file.rules.is_empty()),
            Err(errors) => {
                prop_assert!(!errors.is_empty());
                let text = clout_dsl::render_all(&errors, "f", &source);
                prop_assert!(text.starts_with("f:"));
                for e in &errors {
                    prop_assert!(e.span.start <= source.len());
                }
            }
        }
    }

    #[test]
    fn arbitrary_text_never_panics(source in "\\PC{0,200}") {
        if let Err(errors) = compile(&source) {
            let _ = clout_dsl::render_all(&errors, "f", &source);
        }
    }
}

/// Every syntax error of a file, rendered as the command line shows them,
/// and the number of errors the list stands for.
fn rendered(source: &str) -> (String, usize) {
    let errors = compile(source).expect_err("the file has errors");
    let count = clout_dsl::diagnostic::error_count(&errors);
    (clout_dsl::render_all(&errors, "coop.clout", source), count)
}

#[test]
fn one_syntax_error_is_reported_alone() {
    // The misspelt `members` line would declare tenant1..tenant5: their uses
    // are not reported again.
    let source = "\
member north seats=4
membrs tenant x5 seats=1
bloc all = north, tenant1, tenant2
rule motion = seats > 1/2 and 3 of all
";
    let (text, count) = rendered(source);
    assert_eq!(count, 1);
    assert_eq!(
        text,
        "coop.clout:2:1: error: expected a weight such as `seats=3` or a declaration \
         (`title`, `member`, `members`, `attribute`, `bloc`, `define` or `rule`), found `membrs`\n\
         \x20  2 | membrs tenant x5 seats=1\n\
         \x20    | ^^^^^^\n\
         \x20    = hint: did you mean `members`?\n"
    );
}

#[test]
fn three_syntax_errors_on_lines_3_9_and_20_are_all_reported() {
    let source = "\
title \"Riverside Housing Cooperative (fictional)\"
member north seats=4 units=120
member south seats 3 units=80
member east seats=2 units=60
member west seats=2 units=45
members tenant x5 seats=1 units=10

# budgets need two thirds of the seats
rule budget = seats >= 2/3 and and count > 1/2
rule repairs = seats > 1/2

# a lease change needs the founders and most of the units
define lease_quorum = units >= 60%




# the founding members

bloc founders = north, , west
rule charter = founders and lease_quorum
";
    let (text, count) = rendered(source);
    assert_eq!(count, 3);
    assert_eq!(
        text,
        "coop.clout:3:14: error: expected a weight such as `seats=3` or a declaration \
         (`title`, `member`, `members`, `attribute`, `bloc`, `define` or `rule`), found `seats`\n\
         \x20  3 | member south seats 3 units=80\n\
         \x20    |              ^^^^^\n\
         \x20    = hint: every declaration starts with one of the keywords `title`, `member`, \
         `members`, `attribute`, `bloc`, `define`, `rule`\n\
         coop.clout:9:32: error: expected a condition, found `and`\n\
         \x20  9 | rule budget = seats >= 2/3 and and count > 1/2\n\
         \x20    |                                ^^^\n\
         \x20    = hint: a condition is `ATTRIBUTE >= AMOUNT`, `K of BLOC`, a member or bloc name, \
         or conditions joined by `and` / `or`\n\
         coop.clout:20:24: error: expected a name, found `,`\n\
         \x20 20 | bloc founders = north, , west\n\
         \x20    |                        ^\n\
         \x20    = hint: names start with a letter or `_`, or are written in double quotes (`\"0x3f5a\"`); \
         keywords such as `count`, `of` and `rule` are quoted to be names\n"
    );
}

#[test]
fn a_hundred_and_fifty_syntax_errors_show_a_hundred_and_count_the_rest() {
    let mut source = String::from("member a seats=2\nmember b seats=1\n");
    for k in 0..150 {
        source.push_str(&format!("rule r{k:03} = seats >> 1\n"));
    }
    source.push_str("rule fine = seats > 1/2\n");
    let errors = compile(&source).unwrap_err();
    assert_eq!(clout_dsl::diagnostic::error_count(&errors), 150);
    assert_eq!(errors.len(), 101);
    for (k, e) in errors[..100].iter().enumerate() {
        assert_eq!(e.severity, Severity::Error);
        assert_eq!(e.line_col(&source), (k + 3, 20), "{}", e.message);
        assert_eq!(e.message, "expected an amount, found `>`");
    }
    let note = &errors[100];
    assert_eq!(note.severity, Severity::Note);
    assert_eq!(note.message, "50 more errors not shown");
    // The note points at the first error it counts.
    assert_eq!(note.line_col(&source), (103, 20));
    let text = clout_dsl::render_all(&errors, "f.clout", &source);
    assert_eq!(text.matches(": error: ").count(), 100);
    assert!(
        text.ends_with(
            "f.clout:103:20: note: 50 more errors not shown\n\
         \x20103 | rule r100 = seats >> 1\n\
         \x20    |                    ^\n\
         \x20    = hint: fix the errors above and check the file again\n"
        ),
        "{text}"
    );
}

#[test]
fn a_set_aside_declaration_does_not_hide_the_other_errors() {
    // Line 2 is broken: `b` and `zz` are not reported as unknown later, and
    // the totals it would change are not checked; everything else is.
    let source = "\
member a seats=3
member b seats=2 zz=
rule r1 = b and zz >= 1
bloc ab = a, b
rule r2 = 2 of ab and seats > 1/2
rule r3 = c
rule r4 = seats < 2
rule r5 = seats >= 99
";
    let errors = compile(source).unwrap_err();
    let at: Vec<((usize, usize), &str)> = errors
        .iter()
        .map(|e| (e.line_col(source), e.message.as_str()))
        .collect();
    assert_eq!(
        at,
        [
            ((3, 1), "expected an amount, found `rule`"),
            ((6, 11), "unknown name `c`"),
            (
                (7, 17),
                "`seats < 2` is not monotone: an extra yes vote could defeat the motion"
            ),
        ]
    );
}
