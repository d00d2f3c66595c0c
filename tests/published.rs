//! Published check values, each with its source.
//!
//! Every value is checked on every engine that can handle the rule, so a
//! wrong engine cannot hide behind a right one.

use clout::{analyze, analyze_with, Analysis, Count1024, Counter, Engine, Rule};

type C = Count1024;

fn engines_for(n: usize) -> Vec<Engine> {
    let mut e = vec![Engine::Profile, Engine::Dense];
    if n <= 20 {
        e.push(Engine::Enumerate);
    }
    e
}

fn each_engine(rule: &Rule<Vec<u64>>, check: impl Fn(Engine, &Analysis<C>)) {
    for engine in engines_for(rule.members()) {
        match analyze_with::<_, C>(rule, engine) {
            Ok(a) => check(engine, &a),
            Err(clout::Error::EngineUnsuitable { .. }) => {}
            Err(e) => panic!("{engine:?}: {e}"),
        }
    }
}

fn swings(a: &Analysis<C>) -> Vec<String> {
    a.members.iter().map(|m| m.swings.to_string()).collect()
}

fn close(x: f64, y: f64) -> bool {
    (x - y).abs() < 1e-12
}

/// Shapley-Shubik numerator / n! == p / q, checked by exact cross-multiplication.
fn ss_equals(a: &Analysis<C>, i: usize, p: u64, q: u64) -> bool {
    let (num, den) = a.table().shapley_shubik_exact(i).expect("n! fits");
    num.mul_u64(q).unwrap() == den.mul_u64(p).unwrap()
}

#[test]
fn eec_council_1958() {
    // [12; 4,4,4,2,2,1]: the Council of Ministers of the EEC, 1958.
    // Felsenthal & Machover 1998, The Measurement of Voting Power, ch. 3:
    // swings 10,10,10,6,6,0; Banzhaf 5/21, 5/21, 5/21, 3/21, 3/21, 0;
    // Shapley-Shubik 7/30, 7/30, 7/30, 3/20, 3/20, 0; Luxembourg a dummy.
    let rule = Rule::weighted(12, vec![4, 4, 4, 2, 2, 1]).unwrap();
    each_engine(&rule, |e, a| {
        let t = a.table();
        assert_eq!(swings(a), ["10", "10", "10", "6", "6", "0"], "{e:?}");
        for i in 0..3 {
            assert!(close(t.banzhaf(i), 5.0 / 21.0), "{e:?}");
            assert!(ss_equals(a, i, 7, 30), "{e:?}");
        }
        for i in 3..5 {
            assert!(close(t.banzhaf(i), 3.0 / 21.0), "{e:?}");
            assert!(ss_equals(a, i, 3, 20), "{e:?}");
        }
        assert!(t.is_dummy(5));
        assert_eq!(t.banzhaf(5), 0.0);
        assert!(ss_equals(a, 5, 0, 1));
        // 17 votes in all and a quota of 12 > 17/2: proper; {4,4,2} and
        // {4,2,1} both lose, so not strong (derived by hand).
        assert!(a.rule.proper && !a.rule.strong && !a.rule.decisive());
    });
}

#[test]
fn un_security_council() {
    // [39; 7,7,7,7,7,1 x10]: the UN Security Council since 1965 (five
    // permanent members with veto). Felsenthal & Machover 1998, The
    // Measurement of Voting Power; Taylor & Zwicker 1999, Simple Games:
    // swings 848 and 84; Shapley-Shubik 421/2145 and 4/2145.
    let mut w = vec![7u64; 5];
    w.extend([1u64; 10]);
    let rule = Rule::weighted(39, w).unwrap();
    each_engine(&rule, |e, a| {
        let t = a.table();
        for i in 0..5 {
            assert_eq!(a.members[i].swings.to_string(), "848", "{e:?}");
            assert!(ss_equals(a, i, 421, 2145), "{e:?}");
            assert!(t.is_veto(i), "{e:?}");
        }
        for i in 5..15 {
            assert_eq!(a.members[i].swings.to_string(), "84", "{e:?}");
            assert!(ss_equals(a, i, 4, 2145), "{e:?}");
            assert!(!t.is_veto(i));
        }
    });
}

#[test]
fn two_chamber_executive_override() {
    // Taylor 1995, Mathematics and Politics (from memory): the executive's
    // normalized Banzhaf index is 0.0380 and its Shapley-Shubik index 0.1605,
    // to three significant figures.
    // 435 + 100 equal members and an executive: (> 1/2 of both chambers and
    // the executive) or (>= 2/3 of both chambers); quotas 218, 51, 290, 67.
    let rule = clout::scenarios::federal_536();
    let a = analyze::<_, C>(&rule).unwrap();
    assert_eq!(a.plan.engine, Engine::Profile);
    let t = a.table();
    let exec = 535;
    assert!((t.banzhaf(exec) - 0.0380).abs() < 0.00005, "{}", t.banzhaf(exec));
    assert!(
        (t.shapley_shubik(exec) - 0.1605).abs() < 0.00005,
        "{}",
        t.shapley_shubik(exec)
    );
    // Shapley-Shubik sums to one (Shapley & Shubik 1954, efficiency).
    let total: f64 = (0..536).map(|i| t.shapley_shubik(i)).sum();
    assert!((total - 1.0).abs() < 1e-9);
    // Counts exceed 2^128 here: exact 1024-bit arithmetic is required.
    assert!(a.rule.winning > Count1024::pow2(500).unwrap());
}

#[test]
fn textbook_small_games() {
    // [4; 3,2,1,1]: Shapley-Shubik 1/2, 1/6, 1/6, 1/6 (standard worked
    // example; Shapley & Shubik 1954 define the index).
    let rule = Rule::weighted(4, vec![3, 2, 1, 1]).unwrap();
    each_engine(&rule, |_, a| {
        assert!(ss_equals(a, 0, 1, 2));
        for i in 1..4 {
            assert!(ss_equals(a, i, 1, 6));
        }
    });
    // [51; 50,49,1]: normalized Banzhaf 3/5, 1/5, 1/5 (Aleskerov, Warwick
    // economics research paper 898).
    let rule = Rule::weighted(51, vec![50, 49, 1]).unwrap();
    each_engine(&rule, |_, a| {
        let t = a.table();
        assert!(close(t.banzhaf(0), 0.6));
        assert!(close(t.banzhaf(1), 0.2));
        assert!(close(t.banzhaf(2), 0.2));
    });
    // [16; 10,9,6,5]: Deegan-Packel 1/3, 5/18, 5/18, 1/9 and Holler 2/7,
    // 2/7, 2/7, 1/7 (definitions: Deegan & Packel 1978; Holler 1982; the
    // minimal winning coalitions are {10,9}, {10,6}, {9,6,5}).
    let rule = Rule::weighted(16, vec![10, 9, 6, 5]).unwrap();
    for e in [Engine::Enumerate, Engine::Profile] {
        let a = analyze_with::<_, C>(&rule, e).unwrap();
        let t = a.table();
        let dp = [1.0 / 3.0, 5.0 / 18.0, 5.0 / 18.0, 1.0 / 9.0];
        let pg = [2.0 / 7.0, 2.0 / 7.0, 2.0 / 7.0, 1.0 / 7.0];
        for i in 0..4 {
            assert!(close(t.deegan_packel(i).unwrap(), dp[i]), "{e:?}");
            assert!(close(t.public_good(i).unwrap(), pg[i]), "{e:?}");
        }
        assert_eq!(a.rule.minimal_winning.unwrap().to_string(), "3");
    }
}

#[test]
fn johnston_and_coleman_by_hand() {
    // [3; 2,1,1], derived by hand from the definitions (Johnston 1978;
    // Coleman 1971). Winning: {a,b}, {a,c} (both members swing, 1/2 each)
    // and {a,b,c} (only a swings, 1). Johnston raw a = 2, b = c = 1/2, so
    // 2/3, 1/6, 1/6. Swings 3, 1, 1; W = 3, L = 5: prevent 1, 1/3, 1/3;
    // initiate 3/5, 1/5, 1/5; passage probability 3/8.
    let rule = Rule::weighted(3, vec![2, 1, 1]).unwrap();
    for e in [Engine::Enumerate, Engine::Profile] {
        let a = analyze_with::<_, C>(&rule, e).unwrap();
        let t = a.table();
        assert!(close(t.johnston(0).unwrap(), 2.0 / 3.0));
        assert!(close(t.johnston(1).unwrap(), 1.0 / 6.0));
        assert!(close(t.coleman_prevent(0), 1.0));
        assert!(close(t.coleman_prevent(1), 1.0 / 3.0));
        assert!(close(t.coleman_initiate(0), 0.6));
        assert!(close(t.coleman_initiate(2), 0.2));
        assert!(close(a.rule.passage_probability(), 3.0 / 8.0));
        // minimal blocking: {a} and {b,c} (derived by hand).
        assert_eq!(a.rule.minimal_blocking.unwrap().to_string(), "2");
        assert_eq!(a.rule.smallest_winning, Some(2));
    }
}

#[test]
fn symmetric_majority_of_101() {
    // Penrose 1946; OEIS A001405: in a majority of n (odd) members each
    // member swings C(n-1, (n-1)/2) times. For n = 101 the absolute Banzhaf
    // measure is C(100,50)/2^100 = 0.079589, close to Penrose's square-root
    // approximation sqrt(2/(pi n)) = 0.079392.
    let rule = Rule::weighted(51, vec![1u64; 101]).unwrap();
    let expected = clout::count::binomial::<C>(100, 50).unwrap();
    each_engine(&rule, |e, a| {
        let t = a.table();
        assert_eq!(a.members[0].swings, expected, "{e:?}");
        assert!((t.penrose(7) - 0.079589).abs() < 5e-7, "{e:?}");
        let approx = (2.0 / (std::f64::consts::PI * 101.0)).sqrt();
        assert!((approx - 0.079392).abs() < 5e-7);
        // An odd majority is decisive: of a coalition and its complement
        // exactly one wins (common practice).
        assert!(a.rule.decisive(), "{e:?}");
        assert!(close(a.rule.passage_probability(), 0.5));
    });
}
