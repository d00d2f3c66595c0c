//! Target `image_decide`: decide, decide a four-state ballot and list the
//! critical members on rules loaded from fuzzed images.
//!
//! Input: a flag byte (repairs, as in `image_load`), a 2-byte image length,
//! the image, then ballot bytes. Each outcome, tally and critical set is
//! compared with the independent oracle for rules of up to 256 members.

use clout_core::{critical, decide, decide_ballot, Ballot, Coalition, Condition, Error, Rule, Vote};

use super::image_load::{check, framed};
use super::oracle;
use super::reader::Reader;

/// Ballots up to the alloc build's member limit.
type Wide = Coalition<1024>;

/// Runs one input.
pub fn run(data: &[u8]) {
    let mut r = Reader::new(data);
    let bytes = framed(&mut r);
    let Some(rule) = check(&bytes) else { return };
    for _ in 0..4 {
        if r.is_empty() {
            break;
        }
        ballot(&rule, &mut r);
    }
}

fn votes(n: usize, r: &mut Reader<'_>) -> Vec<Vote> {
    let mode = r.u8();
    let pattern_len = usize::from(r.u8()) + 1;
    let pattern = r.bytes(pattern_len).to_vec();
    let pattern = if pattern.is_empty() { vec![0] } else { pattern };
    (0..n)
        .map(|i| match mode % 4 {
            0 => Vote::Yes,
            1 => Vote::No,
            _ => match pattern[i % pattern.len()].wrapping_add((i / pattern.len()) as u8) % 4 {
                0 => Vote::Yes,
                1 => Vote::No,
                2 => Vote::Abstain,
                _ => Vote::Absent,
            },
        })
        .collect()
}

fn attribute(c: Condition) -> usize {
    usize::from(match c {
        Condition::Yes(a) => a.attribute,
        Condition::Linear(l) => l.attribute,
    })
}

fn ballot(rule: &Rule<Vec<u64>>, r: &mut Reader<'_>) {
    let n = rule.members();
    let votes = votes(n, r);
    let yes = Wide::from_members(&(0..n).filter(|&i| votes[i] == Vote::Yes).collect::<Vec<_>>())
        .expect("members fit a wide ballot");
    let d = decide(rule, &yes).expect("a ballot of the rule's members decides");
    let crit = critical(rule, &yes).expect("critical members of a valid ballot");
    let four = decide_ballot(rule, &Ballot::<1024>::from_votes(&votes).expect("votes fit"))
        .expect("a four-state ballot of the rule's members decides");
    if n <= 64 {
        let narrow = Coalition::<1>::from_members(&yes.iter().collect::<Vec<_>>()).expect("fits");
        assert_eq!(
            decide(rule, &narrow).expect("decides"),
            d,
            "ballot width changed the outcome"
        );
    }
    // A ballot naming a member the rule does not have is refused.
    let mut beyond = yes;
    if n < 1024 * 64 {
        beyond.insert(n).expect("room in a wide ballot");
        assert!(matches!(decide(rule, &beyond), Err(Error::BallotMismatch { .. })));
        assert!(matches!(
            critical(rule, &beyond),
            Err(Error::BallotMismatch { .. })
        ));
    }
    if n > 256 {
        return;
    }
    let is_yes = |i: usize| votes[i] == Vote::Yes;
    let passed = oracle::passes(rule, is_yes);
    assert_eq!(d.passed, passed, "decide disagrees with the oracle");
    let sums = oracle::sums(rule, is_yes);
    for (k, t) in d.tallies.iter().enumerate() {
        let c = rule.condition(k).expect("condition");
        assert_eq!(u128::from(t.sum), sums[attribute(c)], "tally {k}");
    }
    for i in 0..n {
        let flipped = oracle::passes(rule, |j| if j == i { !is_yes(j) } else { is_yes(j) });
        let is_critical = is_yes(i) == passed && flipped != passed;
        assert_eq!(crit.contains(i), is_critical, "member {i} critical?");
    }
    let group = |v: Vote| oracle::sums(rule, |i| votes[i] == v);
    let (ys, ns, abs) = (group(Vote::Yes), group(Vote::No), group(Vote::Abstain));
    let four_oracle = oracle::eval(rule.formula(), |k| {
        let c = rule.condition(k).expect("condition");
        let a = attribute(c);
        oracle::holds(c, ys[a], ns[a], abs[a])
    })
    .expect("one tree");
    assert_eq!(
        four.passed, four_oracle,
        "decide_ballot disagrees with the oracle"
    );
}
