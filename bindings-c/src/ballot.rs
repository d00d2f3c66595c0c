//! Deciding ballots: outcome, per-condition sums, critical members.
//!
//! A two-state ballot (yes, or else no) is a bit array of `uint64_t` words
//! (member i at bit i % 64 of word i / 64) or a list of member indices; a
//! four-state ballot is one vote byte a member (`CLOUT_VOTE_*`). Rules of up to 64 members use a
//! one-word ballot; larger ones a 1,024-word ballot (8 KiB). Each width has
//! its own out-of-line path, built in place, so a one-word decision never
//! reserves stack for a wide ballot. Nothing allocates.
//!
//! The outcome is the core's own evaluation, in its small-stack forms
//! `decide_each` and `decide_ballot_each` (no per-attribute arrays, no
//! `Decision`; the core's tests compare them with `decide` and
//! `decide_ballot`, and a test here compares the C ABI with `decide`).

use core::mem::MaybeUninit;

use clout_core::limits::MAX_MEMBERS;
use clout_core::{
    critical as critical_of, decide_ballot_each, decide_each, Ballot as FourState, Coalition, Vote,
};

use crate::ffi::{self, clout_rule, LoadedRule};
use crate::status::clout_result;

/// The outcome of one ballot.
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct clout_outcome {
    /// Whether the motion passes.
    pub passed: bool,
    /// Number of conditions, and of sums written.
    pub conditions: u32,
    /// Bit k is set when condition k is met.
    pub met: u64,
}

/// A four-state vote: not present.
pub const CLOUT_VOTE_ABSENT: u8 = 0;
/// A four-state vote: in favour.
pub const CLOUT_VOTE_YES: u8 = 1;
/// A four-state vote: against.
pub const CLOUT_VOTE_NO: u8 = 2;
/// A four-state vote: present, voting neither way.
pub const CLOUT_VOTE_ABSTAIN: u8 = 3;

/// One condition's attribute summed over each group of a four-state ballot.
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct clout_group_sums {
    /// Over the members voting yes.
    pub yes: u64,
    /// Over the members voting no.
    pub no: u64,
    /// Over the members abstaining.
    pub abstain: u64,
}

/// Words in the ballot of a rule too large for one word (65,536 members).
const WIDE: usize = 1024;

/// Whether a rule of `members` members is decided with a one-word ballot:
/// always in a build without the heap, which holds at most 64 members (the
/// wide paths then compile to nothing).
fn one_word(members: usize) -> bool {
    members <= 64 || MAX_MEMBERS <= 64
}

/// A ballot as C gave it.
#[derive(Clone, Copy)]
enum Ballot<'a> {
    Words(&'a [u64]),
    List(&'a [u32]),
}

impl Ballot<'_> {
    /// Fills the empty `ballot` after checking this one against the rule.
    fn fill<const B: usize>(self, rule: &LoadedRule, ballot: &mut Coalition<B>) -> Result<(), clout_result> {
        match self {
            Ballot::Words(words) => fill_from_words(rule, words, ballot),
            Ballot::List(members) => fill_from_list(rule, members, ballot),
        }
    }
}

fn fill_from_words<const B: usize>(
    rule: &LoadedRule,
    words: &[u64],
    ballot: &mut Coalition<B>,
) -> Result<(), clout_result> {
    let needed = rule.members().div_ceil(64);
    if words.len() < needed {
        return Err(clout_result::BufferTooSmall);
    }
    let (used, rest) = words.split_at(needed);
    if rest.iter().any(|&w| w != 0) {
        return Err(clout_result::BallotMember);
    }
    if B == 1 {
        *ballot = Coalition::from_words([used.first().copied().unwrap_or(0); B]);
    } else {
        for (w, &word) in used.iter().enumerate() {
            let mut bits = word;
            while bits != 0 {
                ballot.insert(w * 64 + bits.trailing_zeros() as usize)?;
                bits &= bits - 1;
            }
        }
    }
    // Bits at or beyond the member count: Rule::yes_sums refuses them.
    Ok(())
}

fn fill_from_list<const B: usize>(
    rule: &LoadedRule,
    members: &[u32],
    ballot: &mut Coalition<B>,
) -> Result<(), clout_result> {
    for &m in members {
        let m = ffi::index_usize(m);
        if m >= rule.members() {
            return Err(clout_result::BallotMember);
        }
        if ballot.contains(m) {
            return Err(clout_result::BallotDuplicate);
        }
        ballot.insert(m)?;
    }
    Ok(())
}

/// Where a decision goes.
struct Report<'a> {
    sums: &'a mut [MaybeUninit<u64>],
    outcome: &'a mut MaybeUninit<clout_outcome>,
}

/// Decides one ballot and writes the sums and the outcome.
fn decide(rule: &LoadedRule, ballot: Ballot<'_>, out: Report<'_>) -> Result<(), clout_result> {
    if out.sums.len() < rule.atoms().len() {
        return Err(clout_result::BufferTooSmall);
    }
    if one_word(rule.members()) {
        decide_with::<1>(rule, ballot, out)
    } else {
        decide_with::<WIDE>(rule, ballot, out)
    }
}

#[inline(never)]
fn decide_with<const B: usize>(
    rule: &LoadedRule,
    ballot: Ballot<'_>,
    out: Report<'_>,
) -> Result<(), clout_result> {
    let mut yes = Coalition::<B>::EMPTY;
    ballot.fill(rule, &mut yes)?;
    let mut met = 0u64;
    let sums = out.sums;
    let passed = decide_each(rule, &yes, |k, tally| {
        if let Some(slot) = sums.get_mut(k) {
            slot.write(tally.sum);
        }
        met |= u64::from(tally.met) << k;
    })?;
    out.outcome.write(clout_outcome {
        passed,
        conditions: ffi::count_u32(rule.atoms().len()),
        met,
    });
    Ok(())
}

/// The body of both decide exports: checks, decides, reports.
fn decide_export<'a>(
    rule: *const clout_rule,
    ballot: impl FnOnce() -> Result<Ballot<'a>, clout_result>,
    sums: *mut u64,
    sums_len: usize,
    outcome: *mut clout_outcome,
) -> clout_result {
    ffi::guard(|| {
        let rule = ffi::rule(rule)?;
        let ballot = ballot()?;
        let out = Report {
            sums: ffi::output(sums, sums_len)?,
            outcome: ffi::out_param(outcome)?,
        };
        decide(rule, ballot, out)
    })
}

/// Decides a ballot given as a bit array: `yes_words` words at `yes` (at
/// least `(members + 63) / 64`; bits at or beyond `members` must be 0).
/// Writes one sum per condition (the sum of its attribute over the
/// yes-voters) into `sums` (`sums_len >= conditions`) and the outcome into
/// `*outcome`. No heap; thread-safe for a shared rule.
#[no_mangle]
pub extern "C" fn clout_decide(
    rule: *const clout_rule,
    yes: *const u64,
    yes_words: usize,
    sums: *mut u64,
    sums_len: usize,
    outcome: *mut clout_outcome,
) -> clout_result {
    let ballot = || Ok(Ballot::Words(ffi::input(yes, yes_words)?));
    decide_export(rule, ballot, sums, sums_len, outcome)
}

/// Decides a ballot given as the list of yes-voters: `yes_len` member
/// indices at `yes` (each below `members`, none twice; `yes_len` may be 0
/// with a non-NULL pointer). Outputs as for `clout_decide`.
#[no_mangle]
pub extern "C" fn clout_decide_members(
    rule: *const clout_rule,
    yes: *const u32,
    yes_len: usize,
    sums: *mut u64,
    sums_len: usize,
    outcome: *mut clout_outcome,
) -> clout_result {
    let ballot = || Ok(Ballot::List(ffi::input(yes, yes_len)?));
    decide_export(rule, ballot, sums, sums_len, outcome)
}

/// Decides a four-state ballot: `votes_len` (= members) vote bytes at
/// `votes`, each `CLOUT_VOTE_ABSENT`, `_YES`, `_NO` or `_ABSTAIN`. Threshold
/// conditions count the yes-sum; four-state (linear) conditions weigh the
/// yes, no and abstain sums. Writes each condition's group sums into `sums`
/// (`sums_len >= conditions`) and the outcome into `*outcome`. No heap.
#[no_mangle]
pub extern "C" fn clout_decide_votes(
    rule: *const clout_rule,
    votes: *const u8,
    votes_len: usize,
    sums: *mut clout_group_sums,
    sums_len: usize,
    outcome: *mut clout_outcome,
) -> clout_result {
    ffi::guard(|| {
        let rule = ffi::rule(rule)?;
        let votes = ffi::input(votes, votes_len)?;
        let sums = ffi::output(sums, sums_len)?;
        let outcome = ffi::out_param(outcome)?;
        if votes.len() < rule.members() || sums.len() < rule.atoms().len() {
            return Err(clout_result::BufferTooSmall);
        }
        if votes.len() > rule.members() {
            return Err(clout_result::BallotMember);
        }
        if one_word(rule.members()) {
            decide_votes_with::<1>(rule, votes, sums, outcome)
        } else {
            decide_votes_with::<WIDE>(rule, votes, sums, outcome)
        }
    })
}

#[inline(never)]
fn decide_votes_with<const B: usize>(
    rule: &LoadedRule,
    votes: &[u8],
    sums: &mut [MaybeUninit<clout_group_sums>],
    outcome: &mut MaybeUninit<clout_outcome>,
) -> Result<(), clout_result> {
    let mut ballot = FourState::<B>::EMPTY;
    for (i, &v) in votes.iter().enumerate() {
        let vote = match v {
            CLOUT_VOTE_ABSENT => Vote::Absent,
            CLOUT_VOTE_YES => Vote::Yes,
            CLOUT_VOTE_NO => Vote::No,
            CLOUT_VOTE_ABSTAIN => Vote::Abstain,
            _ => return Err(clout_result::BallotVote),
        };
        ballot.set(i, vote)?;
    }
    let mut met = 0u64;
    let passed = decide_ballot_each(rule, &ballot, |k, t| {
        if let Some(slot) = sums.get_mut(k) {
            slot.write(clout_group_sums {
                yes: t.sum,
                no: t.no,
                abstain: t.abstain,
            });
        }
        met |= u64::from(t.met) << k;
    })?;
    outcome.write(clout_outcome {
        passed,
        conditions: ffi::count_u32(rule.atoms().len()),
        met,
    });
    Ok(())
}

/// Lists the critical members of a bit-array ballot (as for
/// `clout_decide`): those whose switch alone would flip the outcome — the
/// yes-voters of a passing ballot who would make it fail by voting no, or
/// the no-voters of a failing ballot who would make it pass by voting yes.
/// Writes their indices in increasing order into `critical` (`critical_len`
/// entries; `members` always suffices) and their number into `*count`.
#[no_mangle]
pub extern "C" fn clout_critical(
    rule: *const clout_rule,
    yes: *const u64,
    yes_words: usize,
    critical: *mut u32,
    critical_len: usize,
    count: *mut usize,
) -> clout_result {
    ffi::guard(|| {
        let rule = ffi::rule(rule)?;
        let words = ffi::input(yes, yes_words)?;
        let out = ffi::output(critical, critical_len)?;
        let count = ffi::out_param(count)?;
        if one_word(rule.members()) {
            critical_with::<1>(rule, words, out, count)
        } else {
            critical_with::<WIDE>(rule, words, out, count)
        }
    })
}

#[inline(never)]
fn critical_with<const B: usize>(
    rule: &LoadedRule,
    words: &[u64],
    out: &mut [MaybeUninit<u32>],
    count: &mut MaybeUninit<usize>,
) -> Result<(), clout_result> {
    let mut yes = Coalition::<B>::EMPTY;
    fill_from_words(rule, words, &mut yes)?;
    let found = critical_of(rule, &yes)?;
    if out.len() < found.len() {
        return Err(clout_result::BufferTooSmall);
    }
    for (slot, m) in out.iter_mut().zip(found.iter()) {
        slot.write(ffi::index_u32(m));
    }
    count.write(found.len());
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use clout_core::fixtures::double_majority;
    use clout_core::image;

    /// Deciding through the C ABI gives the core's `decide` outcome and
    /// tallies, on a 27-member double majority and on 1,000 ballots.
    #[test]
    fn c_decisions_match_the_core() {
        let n = 27;
        let mut w = vec![1u64; n];
        w.extend((0..n as u64).map(|i| 1_000_000 + i * i * 37_000));
        let total: u64 = w[n..].iter().sum();
        let source = double_majority(n, w, [15, (total * 65).div_ceil(100)]).unwrap();
        let bytes = image::encode(&source);
        let mut handle = core::ptr::null_mut();
        assert_eq!(
            crate::clout_rule_new(bytes.as_ptr(), bytes.len(), &mut handle),
            clout_result::Ok
        );
        let mut state = 0x9E37_79B9_7F4A_7C15u64;
        for _ in 0..1000 {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            let word = state & ((1 << n) - 1);
            let mut sums = [0u64; 2];
            let mut outcome = clout_outcome::default();
            let code = clout_decide(handle, &word, 1, sums.as_mut_ptr(), 2, &mut outcome);
            assert_eq!(code, clout_result::Ok);
            let expected = clout_core::decide(&source, &Coalition::<1>::from_words([word])).unwrap();
            assert_eq!(outcome.passed, expected.passed);
            for (k, t) in expected.tallies.iter().enumerate() {
                assert_eq!(sums[k], t.sum);
                assert_eq!((outcome.met >> k) & 1 == 1, t.met);
            }
        }
        assert_eq!(crate::clout_rule_free(handle), clout_result::Ok);
    }
}
