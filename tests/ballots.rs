//! Deciding actual votes, critical members, caller scratch and overflow.

use clout::engine::{self, Workspace};
use clout::fixtures::{seats_and_heads, two_tier};
use clout::{critical, decide, Coalition, Count1024, Engine, Error, MemberCounts, Rule};
use proptest::prelude::*;

/// A fictional board: seats 5,4,3,2,1 and head count; passes with
/// (seats >= 9 and count >= 3) or seats >= 12.
fn board() -> Rule<Vec<u64>> {
    two_tier(5, seats_and_heads(&[5, 4, 3, 2, 1]), [9, 3, 12]).unwrap()
}

fn ballot(m: &[usize]) -> Coalition<1> {
    Coalition::from_members(m).unwrap()
}

#[test]
fn hand_checked_ballots() {
    let r = board();
    // {5,4}: seats 9 >= 9 but count 2 < 3, seats 9 < 12: fails.
    let d = decide(&r, &ballot(&[0, 1])).unwrap();
    assert!(!d.passed);
    assert_eq!(
        (d.tallies[0].sum, d.tallies[0].quota, d.tallies[0].met),
        (9, 9, true)
    );
    assert_eq!((d.tallies[1].sum, d.tallies[1].met), (2, false));
    // {5,3,1}: seats 9, count 3: passes through the first branch.
    assert!(decide(&r, &ballot(&[0, 2, 4])).unwrap().passed);
    // {5,4,3}: seats 12: passes both ways.
    let d = decide(&r, &ballot(&[0, 1, 2])).unwrap();
    assert!(d.passed && d.tallies.iter().all(|t| t.met));
    // Critical in {5,4,3}: removing 5 leaves 7 seats (fail), 4 leaves 8
    // (fail), 3 leaves 9 seats with 2 heads (fail): all three critical.
    let c = critical(&r, &ballot(&[0, 1, 2])).unwrap();
    assert_eq!(c.iter().collect::<Vec<_>>(), [0, 1, 2]);
    // Critical in the failing {5,4}: adding 3 (12 seats), 2 (11 seats, 3
    // heads) or 1 (10 seats, 3 heads) passes it.
    let c = critical(&r, &ballot(&[0, 1])).unwrap();
    assert_eq!(c.iter().collect::<Vec<_>>(), [2, 3, 4]);
    // A ballot naming a member the rule does not have is an error.
    assert!(matches!(
        decide(&r, &ballot(&[7])),
        Err(Error::BallotMismatch { .. })
    ));
}

proptest! {
    #[test]
    fn critical_matches_definition(mask in 0u64..32) {
        let r = board();
        let mut b = Coalition::<1>::new();
        for i in 0..5 {
            if mask >> i & 1 == 1 { b.insert(i).unwrap(); }
        }
        let passed = r.passes(&b).unwrap();
        let c = critical(&r, &b).unwrap();
        for i in 0..5 {
            let mut flipped = b;
            flipped.toggle(i);
            prop_assert_eq!(c.contains(i), r.passes(&flipped).unwrap() != passed);
        }
    }
}

#[test]
fn caller_scratch_without_allocation_semantics() {
    let w = [4u64, 4, 4, 2, 2, 1];
    let r = Rule::weighted(12, &w[..]).unwrap();
    for e in [Engine::Enumerate, Engine::Profile, Engine::Dense] {
        let need = engine::need(&r, e).unwrap();
        let mut members = [MemberCounts::<u64>::EMPTY; 6];
        let mut counts = vec![0u64; need.counts];
        let mut indices = vec![0u32; need.indices];
        if need.counts > 0 {
            let short = &mut counts[..need.counts - 1];
            let got = engine::try_count(
                &r,
                e,
                &mut members,
                Workspace {
                    counts: short,
                    indices: &mut indices,
                },
            );
            assert_eq!(
                got.unwrap_err(),
                Error::ScratchTooSmall {
                    needed: need.counts,
                    given: need.counts - 1
                }
            );
        }
        if need.indices > 0 {
            let short = &mut indices[..need.indices - 1];
            let got = engine::try_count(
                &r,
                e,
                &mut members,
                Workspace {
                    counts: &mut counts,
                    indices: short,
                },
            );
            assert!(matches!(got, Err(Error::ScratchTooSmall { .. })));
        }
        let mut few = [MemberCounts::<u64>::EMPTY; 5];
        let got = engine::try_count(
            &r,
            e,
            &mut few,
            Workspace {
                counts: &mut counts,
                indices: &mut indices,
            },
        );
        assert!(matches!(got, Err(Error::ScratchTooSmall { needed: 6, given: 5 })));
        let rc = engine::try_count(
            &r,
            e,
            &mut members,
            Workspace {
                counts: &mut counts,
                indices: &mut indices,
            },
        )
        .unwrap();
        assert_eq!(rc.winning, 14);
        assert_eq!(members.map(|m| m.swings), [10, 10, 10, 6, 6, 0]);
    }
}

#[test]
fn count_overflow_is_an_error() {
    // 100 equal members: 2^100 coalitions do not fit in u64.
    let r = Rule::weighted(51, vec![1u64; 100]).unwrap();
    let need = engine::need(&r, Engine::Profile).unwrap();
    let mut members = vec![MemberCounts::<u64>::EMPTY; 100];
    let mut counts = vec![0u64; need.counts];
    let mut indices = vec![0u32; need.indices];
    let got = engine::try_count(
        &r,
        Engine::Profile,
        &mut members,
        Workspace {
            counts: &mut counts,
            indices: &mut indices,
        },
    );
    assert_eq!(got.unwrap_err(), Error::CountOverflow);
    // ... but fit in u128 and in 1024 bits.
    assert!(clout::analyze::<_, u128>(&r).is_ok());
    assert!(clout::analyze::<_, Count1024>(&r).is_ok());
}

#[test]
fn engines_refuse_what_they_cannot_do() {
    let r = Rule::weighted(16, vec![1u64; 31]).unwrap();
    assert_eq!(
        engine::need(&r, Engine::Enumerate).unwrap_err(),
        Error::EngineUnsuitable {
            engine: Engine::Enumerate
        }
    );
    // 40 members with distinct huge weights: only the decision diagram is
    // exact at this size, and a small budget refuses even that.
    let w: Vec<u64> = (0..40).map(|i| 1_000_000_007u64 * (i + 1)).collect();
    let total: u64 = w.iter().sum();
    let r = Rule::weighted(total / 2 + 1, w).unwrap();
    assert_eq!(
        clout::planner::plan(&r, u128::MAX).unwrap().engine,
        Engine::Diagram
    );
    assert!(matches!(
        clout::planner::plan(&r, 1 << 20),
        Err(Error::TooCostly { .. })
    ));
}

#[test]
fn memory_limit_steers_the_planner() {
    use clout::planner::{plan_within, Limits};
    // Weights 1..=24 with a majority quota: dense needs (25 x 151) counts; a
    // limit below that sends the planner elsewhere, and a tiny limit to an error.
    let w: Vec<u64> = (1..=24).collect();
    let r = Rule::weighted(151, w).unwrap();
    let roomy = Limits {
        budget: u128::MAX,
        memory: u64::MAX,
        count_bytes: 16,
    };
    let free = plan_within(&r, engine::Scope::All, &roomy).unwrap();
    let dense = free.memory_of(Engine::Dense).unwrap();
    let tight = Limits {
        memory: dense - 1,
        ..roomy
    };
    let p = plan_within(&r, engine::Scope::All, &tight).unwrap();
    assert_ne!(p.engine, Engine::Dense);
    assert!(p.memory_of(p.engine).unwrap() < dense);
    let tiny = Limits { memory: 16, ..roomy };
    assert!(matches!(
        plan_within(&r, engine::Scope::All, &tiny),
        Err(Error::MemoryLimit { limit: 16, .. })
    ));
    // A forced engine over the limit is refused rather than run.
    let opts = clout::Options {
        engine: Some(Engine::Dense),
        memory: 16,
        ..clout::Options::default()
    };
    assert!(matches!(
        clout::analyze_opts::<_, u128>(&r, &opts),
        Err(Error::MemoryLimit { .. })
    ));
}

/// The README's promise for `decide` (and the Python `decide`): lists apply
/// in the order yes, no, abstain, a later list overriding an earlier one;
/// members not named are absent, or vote no when only yes-voters are named.
#[test]
fn decide_defaults_are_as_documented() {
    use clout::decision::{votes, NamedBallot, Rest};
    use clout::Vote::{Absent, Abstain, No, Yes};
    let file = clout::compile(
        "member harbor seats=9\nmember mill seats=7\nmember ferry seats=1\nrule r = seats > 1/2\n",
    )
    .unwrap();
    let list = |v: &[&str]| v.iter().map(|s| s.to_string()).collect::<Vec<_>>();
    let ballot = |yes: &[&str], no: &[&str], abstain: &[&str], rest| NamedBallot {
        yes: list(yes),
        no: list(no),
        abstain: list(abstain),
        rest,
    };
    // No list at all: everyone absent.
    assert_eq!(votes(&file, &ballot(&[], &[], &[], None)).unwrap(), [Absent; 3]);
    // Only --yes: a two-state ballot, the others vote no.
    assert_eq!(
        votes(&file, &ballot(&["harbor"], &[], &[], None)).unwrap(),
        [Yes, No, No]
    );
    // Any other list: the others are absent.
    assert_eq!(
        votes(&file, &ballot(&["harbor"], &["mill"], &[], None)).unwrap(),
        [Yes, No, Absent]
    );
    assert_eq!(
        votes(&file, &ballot(&[], &[], &["ferry"], None)).unwrap(),
        [Absent, Absent, Abstain]
    );
    // Order yes, no, abstain: `--yes all --no harbor` and `--no all --abstain mill`.
    assert_eq!(
        votes(&file, &ballot(&["all"], &["harbor"], &[], None)).unwrap(),
        [No, Yes, Yes]
    );
    assert_eq!(
        votes(&file, &ballot(&["all"], &["harbor", "mill"], &["mill"], None)).unwrap(),
        [No, Abstain, Yes]
    );
    // --rest overrides the default.
    assert_eq!(
        votes(&file, &ballot(&["harbor"], &[], &[], Some(Rest::Absent))).unwrap(),
        [Yes, Absent, Absent]
    );
    assert_eq!(
        votes(&file, &ballot(&[], &[], &[], Some(Rest::Abstain))).unwrap(),
        [Abstain; 3]
    );
}
