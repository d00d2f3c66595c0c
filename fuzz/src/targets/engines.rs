//! Target `engines`: differential testing of the exact engines.
//!
//! The input bytes describe a random compound rule of up to 12 members:
//! one to three attributes with small or huge weights, up to six
//! conditions (yes-sum thresholds and four-state linear forms, whose
//! two-state quota the engines see), and a random AND/OR tree of depth up
//! to four over them (an atom may repeat). Enumeration must match the
//! oracle's brute force, and every other engine (profile, dense, decision
//! diagram; swings-only scope too, which sends one-attribute rules down
//! the dense engine's residue path) must agree with enumeration on every
//! count it gives, or refuse the rule with a stated reason.

use clout_core::engine::Scope;
use clout_core::{analyze_opts, Analysis, Condition, Count1024, Engine, Error, Linear, Node, Options, Rule};
use clout_core::{Atom, Counter};

use super::oracle;
use super::reader::Reader;

type C = Count1024;

/// A random rule from the bytes, or `None` when the core refuses it (the
/// refusal itself is checked to be a stated error, not a panic).
pub fn rule(r: &mut Reader<'_>) -> Option<Rule<Vec<u64>>> {
    let n = 1 + r.below(12);
    let attrs = 1 + r.below(3);
    let small = u64::from(r.u8() % 10);
    let weights: Vec<u64> = (0..n * attrs).map(|_| r.weight(small)).collect();
    let one_attribute = r.u8() % 3 == 0;
    let k = 1 + r.below(6);
    let mut conditions = Vec::new();
    for _ in 0..k {
        let attribute = if one_attribute { 0 } else { r.below(attrs) as u16 };
        let row = &weights[usize::from(attribute) * n..][..n];
        let total: u128 = row.iter().map(|&w| u128::from(w)).sum();
        let share = u128::from(r.u8());
        if r.u8() % 3 == 0 {
            let yes = i32::from(r.u8() % 5) - 1;
            let no = i32::from(r.u8() % 7) - 4;
            let abstain = i32::from(r.u8() % 7) - 4;
            let bound = (total * share / 128) as i128 * i128::from(r.u8() % 3) - i128::from(r.u8());
            conditions.push(Condition::Linear(Linear {
                attribute,
                yes,
                no,
                abstain,
                bound,
            }));
        } else {
            let quota = u64::try_from(total * share / 200).unwrap_or(u64::MAX);
            conditions.push(Condition::Yes(Atom { attribute, quota }));
        }
    }
    let mut formula = Vec::new();
    tree(r, k, 4, &mut formula);
    match Rule::with_conditions(n, weights, &conditions, &formula) {
        Ok(rule) => Some(rule),
        Err(Error::WeightSumOverflow { .. } | Error::NonMonotone) => None,
        Err(e) => panic!("the generator built an invalid rule: {e}"),
    }
}

/// A random AND/OR tree over `k` atoms, in postfix.
fn tree(r: &mut Reader<'_>, k: usize, depth: usize, out: &mut Vec<Node>) {
    let b = r.u8();
    if depth == 0 || b % 3 == 0 {
        out.push(Node::Atom(r.below(k) as u16));
        return;
    }
    let arity = 1 + usize::from(b / 3 % 3);
    for _ in 0..arity {
        tree(r, k, depth - 1, out);
    }
    out.push(if b & 0x80 == 0 {
        Node::All(arity as u16)
    } else {
        Node::Any(arity as u16)
    });
}

fn run_engine(rule: &Rule<Vec<u64>>, engine: Engine, scope: Scope) -> Result<Analysis<C>, Error> {
    let options = Options {
        engine: Some(engine),
        scope,
        budget: 20_000_000,
        memory: 64 << 20,
    };
    analyze_opts(rule, &options)
}

fn same(oracle: &Analysis<C>, other: &Analysis<C>, what: &str) {
    let (o, x) = (&oracle.rule, &other.rule);
    assert_eq!(o.winning, x.winning, "{what}: winning");
    assert_eq!(o.losing, x.losing, "{what}: losing");
    assert_eq!(o.proper, x.proper, "{what}: proper");
    assert_eq!(o.strong, x.strong, "{what}: strong");
    if let (Some(a), Some(b)) = (o.smallest_winning, x.smallest_winning) {
        assert_eq!(a, b, "{what}: smallest winning");
    }
    if let (Some(a), Some(b)) = (o.minimal_winning, x.minimal_winning) {
        assert_eq!(a, b, "{what}: minimal winning");
    }
    if let (Some(a), Some(b)) = (o.minimal_blocking, x.minimal_blocking) {
        assert_eq!(a, b, "{what}: minimal blocking");
    }
    for (i, (a, b)) in oracle.members.iter().zip(&other.members).enumerate() {
        assert_eq!(a.swings, b.swings, "{what}: swings of member {i}");
        assert_eq!(a.veto, b.veto, "{what}: veto of member {i}");
        assert_eq!(a.dictator, b.dictator, "{what}: dictator {i}");
        if x.shapley_shubik {
            assert_eq!(
                a.shapley_shubik_numerator, b.shapley_shubik_numerator,
                "{what}: Shapley-Shubik of member {i}"
            );
        }
    }
}

/// Runs one input.
pub fn run(data: &[u8]) {
    let mut r = Reader::new(data);
    let Some(rule) = rule(&mut r) else { return };
    let (winning, swings) = oracle::swings(&rule);
    let base = run_engine(&rule, Engine::Enumerate, Scope::All).expect("enumeration handles 12 members");
    // (2^12 coalitions times a few dozen steps each: well inside the budget.)
    assert_eq!(base.rule.winning, C::from_u64(winning), "enumeration: winning");
    for (i, s) in swings.iter().enumerate() {
        assert_eq!(
            base.members[i].swings,
            C::from_u64(*s),
            "enumeration: swings of member {i}"
        );
    }
    for engine in Engine::ALL {
        for scope in [Scope::All, Scope::Swings] {
            let what = format!("{} ({scope:?})", engine.name());
            match run_engine(&rule, engine, scope) {
                Ok(a) => same(&base, &a, &what),
                Err(Error::EngineUnsuitable { .. } | Error::MemoryLimit { .. } | Error::TooCostly { .. }) => {
                    // Only the dense engine depends on the size of the quotas.
                    assert!(engine == Engine::Dense, "{what} refused a 12-member rule");
                }
                Err(e) => panic!("{what}: {e}"),
            }
        }
    }
}
