//! Every limit has its own clear error, at the limit and one past it:
//! members, attributes, atoms, formula size, nesting depth, name length,
//! file size, weight size, weight sums, count overflow, memory and time
//! budgets, four-state bounds, and the C ABI's power capacity.
//!
//! The limits themselves are in `clout_core::limits` and
//! `clout_dsl::syntax` (`MAX_SOURCE_LEN`, `MAX_NAME_LEN`); SECURITY.md lists them.

use clout_core::engine::Scope;
use clout_core::limits::{MAX_ATOMS, MAX_ATTRIBUTES, MAX_DEPTH, MAX_MEMBERS, MAX_NODES, MAX_TOTAL};
use clout_core::{
    analyze_opts, image, Atom, Condition, Engine, Error, ImageError, Linear, Node, Options, Rule,
};
use clout_dsl::syntax::{decode, MAX_NAME_LEN, MAX_SOURCE_LEN};
use clout_dsl::Diagnostic;

fn atom(attribute: u16, quota: u64) -> Atom {
    Atom { attribute, quota }
}

/// The first error of a file that must not compile, as `line:col: message`.
fn first_error(source: &str) -> String {
    let errors = match clout_dsl::compile(source) {
        Ok(_) => panic!("compiled, but should not:\n{source:.200}"),
        Err(e) => e,
    };
    let d: &Diagnostic = &errors[0];
    let (line, col) = d.line_col(source);
    format!("{line}:{col}: {}", d.message)
}

#[test]
fn members() {
    let ok = Rule::weighted(1, vec![1u64; MAX_MEMBERS]).unwrap();
    assert_eq!(ok.members(), 65_535);
    assert_eq!(
        Rule::weighted(1, vec![1u64; MAX_MEMBERS + 1]).unwrap_err(),
        Error::TooManyMembers {
            members: 65_536,
            limit: 65_535
        }
    );
    assert_eq!(
        first_error("members d x65536 seats=1\nrule r = seats > 1/2\n"),
        "1:11: more than 65535 members"
    );
    assert!(clout_dsl::compile("members d x65535 seats=1\nrule r = seats > 1/2\n").is_ok());
}

#[test]
fn attributes() {
    let f = [Node::Atom(0)];
    assert!(Rule::new(1, vec![1u64; MAX_ATTRIBUTES], &[atom(0, 1)], &f).is_ok());
    assert_eq!(
        Rule::new(1, vec![1u64; MAX_ATTRIBUTES + 1], &[atom(0, 1)], &f).unwrap_err(),
        Error::TooManyAttributes {
            attributes: 65,
            limit: 64
        }
    );
    // 65 declared attributes in the language.
    let weights: Vec<String> = (0..65).map(|i| format!("w{i}=1")).collect();
    let source = format!("member a {}\nrule r = w0 >= 1\n", weights.join(" "));
    assert!(
        first_error(&source).ends_with("more than 64 attributes"),
        "{}",
        first_error(&source)
    );
}

#[test]
fn atoms_and_formula_size() {
    let weights = vec![1u64; 2];
    let atoms: Vec<Atom> = (0..=MAX_ATOMS).map(|_| atom(0, 1)).collect();
    let any = |k: usize| {
        let mut f: Vec<Node> = (0..k).map(|i| Node::Atom(i as u16)).collect();
        f.push(Node::Any(k as u16));
        f
    };
    assert!(Rule::new(2, weights.clone(), &atoms[..MAX_ATOMS], &any(MAX_ATOMS)).is_ok());
    assert_eq!(
        Rule::new(2, weights.clone(), &atoms, &any(MAX_ATOMS + 1)).unwrap_err(),
        Error::TooManyAtoms { atoms: 65, limit: 64 }
    );
    // 129 nodes: 128 uses of atom 0 and one operator.
    let mut long: Vec<Node> = vec![Node::Atom(0); MAX_NODES];
    long.push(Node::All(MAX_NODES as u16));
    assert_eq!(
        Rule::new(2, weights, &atoms[..1], &long).unwrap_err(),
        Error::TooManyNodes {
            nodes: 129,
            limit: 128
        }
    );
}

#[test]
fn nesting_depth() {
    // Atom, then (Atom, All 2) repeated: each All nests one deeper.
    let nested = |depth: usize| {
        let mut f = vec![Node::Atom(0)];
        for _ in 0..depth {
            f.push(Node::Atom(0));
            f.push(Node::All(2));
        }
        f
    };
    let w = vec![1u64; 2];
    assert!(Rule::new(2, w.clone(), &[atom(0, 1)], &nested(MAX_DEPTH)).is_ok());
    assert_eq!(
        Rule::new(2, w, &[atom(0, 1)], &nested(MAX_DEPTH + 1)).unwrap_err(),
        Error::TooDeep { depth: 33, limit: 32 }
    );
    // In the language: parentheses (64), `and`/`or` depth (32), definition chains (32:
    // d32 is the 33rd link, on line 35).
    let parens = format!(
        "member a w=1\nrule r = {}w >= 1{}\n",
        "(".repeat(65),
        ")".repeat(65)
    );
    assert_eq!(first_error(&parens), "2:74: parentheses nested deeper than 64");
    let mut chain = String::from("member a w=1\nmember b w=1\ndefine d0 = w >= 1\n");
    for i in 1..=40 {
        chain.push_str(&format!("define d{i} = d{}\n", i - 1));
    }
    chain.push_str("rule r = d40\n");
    assert_eq!(first_error(&chain), "35:8: definitions nested deeper than 32");
}

#[test]
fn name_length() {
    let at_limit = "n".repeat(MAX_NAME_LEN);
    assert!(clout_dsl::compile(&format!("member {at_limit} w=1\nrule r = w >= 1\n")).is_ok());
    let over = "n".repeat(MAX_NAME_LEN + 1);
    assert_eq!(
        first_error(&format!("member {over} w=1\nrule r = w >= 1\n")),
        "1:8: a name of 129 bytes, over the limit of 128"
    );
}

#[test]
fn file_size() {
    // A comment that fills the file: the size is checked before anything else.
    let mut source = String::from("member a w=1\nrule r = w >= 1\n#");
    source.push_str(&"x".repeat(MAX_SOURCE_LEN - source.len()));
    assert_eq!(source.len(), MAX_SOURCE_LEN);
    assert!(clout_dsl::compile(&source).is_ok());
    source.push('x');
    assert_eq!(
        first_error(&source),
        "3:8388580: the file is longer than the limit of 8388608 bytes (8 MiB)"
    );
    assert!(decode(source.as_bytes()).is_err());
    assert!(decode(&source.as_bytes()[..MAX_SOURCE_LEN]).is_ok());
}

#[test]
fn text_that_is_not_utf8() {
    let d = decode(b"member a w=1\nrule r = w >= 1 # caf\xc3\n").unwrap_err();
    assert_eq!(d.span.start, 34);
    assert!(d.message.contains("0xC3"), "{}", d.message);
}

#[test]
fn weight_size_and_weight_sums() {
    // A number may be up to 2^64 - 1; one attribute's total up to 2^64 - 4.
    assert!(clout_dsl::compile("member a w=18446744073709551612\nrule r = w >= 1\n").is_ok());
    assert_eq!(
        first_error("member a w=18446744073709551615\nrule r = w >= 1\n"),
        "1:10: the weights of `w` add up to more than 2^64 - 4"
    );
    assert_eq!(
        first_error("member a w=18446744073709551616\nrule r = w >= 1\n"),
        "1:12: the number 18446744073709551616 is too large"
    );
    assert_eq!(
        Rule::weighted(1, vec![u64::MAX, 1]).unwrap_err(),
        Error::WeightSumOverflow { attribute: 0 }
    );
    // The largest total is 2^64 - 4, so that `total + 1`, the quota of a
    // condition nobody meets, is a u64 (clout_core::limits::MAX_TOTAL).
    assert!(Rule::weighted(1, vec![MAX_TOTAL - 1, 1]).is_ok());
    assert_eq!(
        Rule::weighted(1, vec![MAX_TOTAL, 1]).unwrap_err(),
        Error::WeightSumOverflow { attribute: 0 }
    );
    assert_eq!(
        first_error("member a w=18446744073709551615\nmember b w=1\nrule r = w >= 1\n"),
        "1:10: the weights of `w` add up to more than 2^64 - 4"
    );
    // An image whose weights overflow, with a correct length and checksum.
    let mut bytes = image::encode(&Rule::weighted(1, vec![MAX_TOTAL - 1, 1]).unwrap());
    let at = image::HEADER_LEN + 1 + 8; // the second weight, 8 bytes wide
    bytes[at] = 2; // total MAX_TOTAL + 1
    let body = bytes.len() - image::CHECKSUM_LEN;
    let crc = image::crc32(&bytes[..body]);
    bytes[body..].copy_from_slice(&crc.to_le_bytes());
    assert_eq!(
        image::weights_needed(&bytes),
        Err(ImageError::Rule(Error::WeightSumOverflow { attribute: 0 }))
    );
}

#[test]
fn count_overflow() {
    // 70 equal members: 2^70 - ... winning coalitions do not fit in a u64.
    let rule = Rule::weighted(36, vec![1u64; 70]).unwrap();
    assert_eq!(
        analyze_opts::<_, u64>(&rule, &Options::default()).unwrap_err(),
        Error::CountOverflow
    );
    assert!(analyze_opts::<_, u128>(&rule, &Options::default()).is_ok());
}

#[test]
fn memory_budget() {
    let rule = Rule::weighted(200, (1..=40u64).collect::<Vec<_>>()).unwrap();
    let tight = Options {
        memory: 1024,
        ..Options::default()
    };
    assert!(matches!(
        analyze_opts::<_, u128>(&rule, &tight),
        Err(Error::MemoryLimit { limit: 1024, .. })
    ));
    let forced = Options {
        engine: Some(Engine::Dense),
        ..tight
    };
    assert!(matches!(
        analyze_opts::<_, u128>(&rule, &forced),
        Err(Error::MemoryLimit { limit: 1024, .. })
    ));
}

#[test]
fn time_budget() {
    let rule = Rule::weighted(200, (1..=40u64).collect::<Vec<_>>()).unwrap();
    let tight = Options {
        budget: 1000,
        ..Options::default()
    };
    assert!(matches!(
        analyze_opts::<_, u128>(&rule, &tight),
        Err(Error::TooCostly { budget: 1000, .. })
    ));
    // A forced engine keeps to the budget as well (it is refused before it runs).
    for engine in [Engine::Enumerate, Engine::Dense, Engine::Diagram, Engine::Profile] {
        let forced = Options {
            engine: Some(engine),
            scope: Scope::All,
            ..tight
        };
        match analyze_opts::<_, u128>(&rule, &forced) {
            Err(Error::TooCostly { budget: 1000, .. } | Error::EngineUnsuitable { .. }) => {}
            other => panic!("{}: {other:?}", engine.name()),
        }
    }
}

#[test]
fn four_state_bounds_at_the_ends_of_i128() {
    // A bound of -2^127 is met by every ballot; +2^127 - 1 by none. Neither
    // may overflow on the way to the two-state quota.
    let linear = |bound: i128| {
        Condition::Linear(Linear {
            attribute: 0,
            yes: 1,
            no: -(i32::MAX),
            abstain: 0,
            bound,
        })
    };
    let weights = vec![u64::MAX / 2, 5];
    let low = Rule::with_conditions(2, weights.clone(), &[linear(i128::MIN)], &[Node::Atom(0)]).unwrap();
    assert_eq!(low.atoms()[0].quota, 0);
    let high = Rule::with_conditions(2, weights, &[linear(i128::MAX)], &[Node::Atom(0)]).unwrap();
    assert_eq!(high.atoms()[0].quota, high.total(0) + 1);
    // The fuzzer's case: a condition nobody meets (0 Y - 4 N - 4 A >= 2^63)
    // on the largest total. Its quota total + 1 must still be out of reach.
    let never = Condition::Linear(Linear {
        attribute: 0,
        yes: 0,
        no: -4,
        abstain: -4,
        bound: 1 << 63,
    });
    let rule = Rule::with_conditions(1, vec![MAX_TOTAL], &[never], &[Node::Atom(0)]).unwrap();
    assert_eq!(rule.atoms()[0].quota, MAX_TOTAL + 1);
    let a = clout_core::analyze::<_, u128>(&rule).unwrap();
    assert_eq!(a.rule.winning, 0);
}

#[test]
fn c_abi_power_capacity() {
    use clout_c::*;
    let rule = Rule::weighted(33, vec![1u64; 65]).unwrap();
    let img = image::encode(&rule);
    let mut handle: *mut clout_rule = std::ptr::null_mut();
    assert_eq!(
        clout_rule_new(img.as_ptr(), img.len(), &mut handle),
        clout_result::Ok
    );
    let mut swings = [0u64; 65];
    let mut bz = [0f64; 65];
    let mut ss = [0f64; 65];
    let code = clout_power(handle, swings.as_mut_ptr(), bz.as_mut_ptr(), ss.as_mut_ptr(), 65);
    assert_eq!(code, clout_result::PowerCapacity);
    assert_eq!(clout_rule_free(handle), clout_result::Ok);
}

#[test]
fn the_command_line_keeps_a_forced_engine_to_the_budget() {
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_clout"))
        .args([
            "report",
            "examples/compact.clout",
            "--engine",
            "enumerate",
            "--budget",
            "10",
        ])
        .current_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/.."))
        .output()
        .expect("the clout binary runs");
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{stderr}");
    assert!(stderr.contains("over the budget of 10"), "{stderr}");
    assert!(out.stdout.is_empty());
}

/// The compiler on inputs whose size once drove its depth or its time
/// (issue 20): 15,000 chained blocs overflowed the stack (a recursion per
/// link); a bloc of 200,000 parts took minutes (each part compared with
/// every earlier one). Both must finish with correct figures or a clear
/// error, quickly, on a test thread's stack.
#[test]
fn long_bloc_chains_and_wide_blocs() {
    // bloc b0 = b1, bloc b1 = b2, ..., bloc b15000 = a, b: every bloc is {a, b}.
    let mut chain = String::from("member a seats=2\nmember b seats=1\nmember c seats=1\n");
    for i in 0..15_000 {
        chain.push_str(&format!("bloc b{i} = b{}\n", i + 1));
    }
    chain.push_str("bloc b15000 = a, b\nrule r = b0 and seats > 1/2\n");
    let f = clout_dsl::compile(&chain).expect("the chain compiles");
    assert_eq!(f.blocs.len(), 15_001);
    assert!(f.blocs.iter().all(|b| b.members == [0, 1]));
    let r = f.rule(None).unwrap();
    // `b0` needs both of its members; more than half of 4 seats is 3.
    assert_eq!(r.rule.atoms().iter().map(|a| a.quota).collect::<Vec<_>>(), [2, 3]);

    // A bloc of 200,000 distinct parts: 50,000 members and 150,000 one-member blocs.
    let mut wide = String::from("members m x50000 seats=1\n");
    for i in 0..150_000 {
        wide.push_str(&format!("bloc c{i} = m{}\n", i % 50_000 + 1));
    }
    let parts: Vec<String> = (1..=50_000)
        .map(|i| format!("m{i}"))
        .chain((0..150_000).map(|i| format!("c{i}")))
        .collect();
    wide.push_str(&format!("bloc all = {}\nrule r = 2/3 of all\n", parts.join(", ")));
    let f = clout_dsl::compile(&wide).expect("the wide bloc compiles");
    let all = f.blocs.iter().find(|b| b.name == "all").unwrap();
    assert_eq!(all.members, (0..50_000).collect::<Vec<_>>());
    assert_eq!(f.rule(None).unwrap().rule.atoms()[0].quota, 33_334);

    // 200,000 parts, each of 50,000 members listed four times: 150,000 repeats,
    // each an error (100 shown, the rest counted).
    let repeats: Vec<String> = (0..200_000).map(|i| format!("m{}", i % 50_000 + 1)).collect();
    let source = format!(
        "members m x50000\nbloc all = {}\nrule r = all\n",
        repeats.join(", ")
    );
    let errors = clout_dsl::compile(&source).unwrap_err();
    assert_eq!(clout_dsl::diagnostic::error_count(&errors), 150_000);
    assert_eq!(errors[0].message, "`m1` is listed twice in bloc `all`");
    assert_eq!(errors[100].message, "149900 more errors not shown");
}

#[test]
fn entries_of_all_blocs() {
    use clout_dsl::compile::MAX_BLOC_ENTRIES;
    // 64 blocs of the whole group (64 * 65,535 entries) and one of 64 members:
    // exactly the limit; one member more is past it.
    let blocs = |extra: usize| {
        let mut s = String::from("members g x65535\n");
        for i in 0..64 {
            s.push_str(&format!("bloc c{i} = g\n"));
        }
        let last: Vec<String> = (1..=64 + extra).map(|i| format!("g{i}")).collect();
        s.push_str(&format!("bloc z = {}\nrule r = count > 1/2\n", last.join(", ")));
        s
    };
    assert_eq!(64 * 65_535 + 64, MAX_BLOC_ENTRIES);
    assert!(clout_dsl::compile(&blocs(0)).is_ok());
    assert_eq!(
        first_error(&blocs(1)),
        "66:321: the blocs of the file list more than 4194304 members in all"
    );
}

#[test]
fn four_state_share_of_the_largest_total() {
    // p/q of a total near 2^64 with p and q near 2^64: p * T is near 2^128,
    // beyond i128; it is taken exactly (it once overflowed).
    let source = "member a w=18446744073709551611\nmember b w=1\n\
        rule r = w yes >= 18446744073709551615/18446744073709551615\n";
    let f = clout_dsl::compile(source).expect("compiles");
    let l = f
        .rule(None)
        .unwrap()
        .rule
        .linear(0)
        .expect("a four-state condition");
    assert_eq!(
        (l.yes, l.no, l.abstain, l.bound),
        (1, 0, 0, i128::from(MAX_TOTAL))
    );
}

#[test]
fn syntax_errors_per_file() {
    // Every syntax error is found (parsing goes on at the next declaration),
    // 100 are kept and the rest counted, so memory stays bounded.
    let mut source = String::from("member a seats=2\nmember b seats=1\n");
    for k in 0..50_000 {
        source.push_str(&format!("rule r{k} = seats >> 1\n"));
    }
    let errors = clout_dsl::compile(&source).unwrap_err();
    assert_eq!(errors.len(), clout_dsl::diagnostic::MAX_DIAGNOSTICS + 1);
    assert_eq!(clout_dsl::error_count(&errors), 50_000);
    assert_eq!(errors[100].message, "49900 more errors not shown");
}
