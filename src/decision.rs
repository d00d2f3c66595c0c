//! One actual vote as data: the outcome, each condition's sums against what
//! it needs, and the critical members (those whose own switch would flip
//! the outcome). The command line's `decide --format json`, the Python
//! package's dict and the WebAssembly package's object are [`Decision`]
//! serialized; the text rendering reads the same fields.
//!
//! Ballots have four states: yes, no, abstain (present, voting neither way)
//! and absent. [`votes`] turns lists of names (members, groups, blocs,
//! ranges such as `rep1..rep218`, or `all`) into one vote per member.
//! O(members * (attributes + conditions)) per ballot.

use clout_core::limits::MAX_ATTRIBUTES;
use clout_core::{decide_ballot, AtomTally, Ballot, Rule, Vote};
use clout_dsl::diagnostic::closest;
use clout_dsl::{CompiledRule, RuleFile};
use serde::Serialize;

use crate::failure::Failure;
use crate::report::rounding;

/// Ballots hold up to 65,536 members, the language's limit.
type Votes = Ballot<1024>;

/// How members not named on a ballot vote.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Rest {
    /// They vote no.
    No,
    /// They are present and abstain.
    Abstain,
    /// They are absent.
    Absent,
}

/// A ballot given by names.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct NamedBallot {
    /// Members voting yes.
    pub yes: Vec<String>,
    /// Members voting no.
    pub no: Vec<String>,
    /// Members present but abstaining.
    pub abstain: Vec<String>,
    /// Everyone else (default: absent, or no when only `yes` is given:
    /// a two-state ballot).
    pub rest: Option<Rest>,
}

/// The outcome of one vote. Field names are the JSON keys.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Decision {
    /// The rule's name.
    pub rule: String,
    /// Whether the motion passes.
    pub passed: bool,
    /// Names of the members voting yes.
    pub yes: Vec<String>,
    /// Voting no.
    pub no: Vec<String>,
    /// Abstaining.
    pub abstain: Vec<String>,
    /// Absent.
    pub absent: Vec<String>,
    /// Members whose own switch would flip the outcome.
    pub critical: Vec<String>,
    /// Every condition's sums.
    pub conditions: Vec<Tally>,
    /// Member indices of `yes`, `no`, `abstain`, `absent` and `critical`
    /// (for renderings that group members).
    #[serde(skip)]
    pub indices: [Vec<usize>; 5],
}

/// One condition's sums in one vote.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Tally {
    /// As written.
    pub text: String,
    /// The attribute it sums.
    pub attribute: String,
    /// The attribute's sum over the yes-voters.
    pub sum: String,
    /// Over the no-voters.
    pub no: String,
    /// Over the abstainers.
    pub abstain: String,
    /// The quota of the two-state game (everyone present, yes or no).
    pub quota: String,
    /// The least yes-sum that meets the condition given this ballot's no and
    /// abstain sums (for a plain condition, its quota); null when yes votes do not enter.
    pub needed: Option<String>,
    /// The attribute's total over all members.
    pub total: String,
    /// Whether the condition compares group sums (yes, no, abstain, present).
    pub four_state: bool,
    /// Whether it is met.
    pub met: bool,
    /// `sum - needed`: how far the yes-sum is above (or, negative, below)
    /// what the condition needs; null when yes votes do not enter.
    pub margin: Option<String>,
}

/// One vote per member from a ballot given by names. Lists are applied in
/// the order yes, no, abstain (a later list overrides an earlier one, so
/// `yes: all, no: harbor` works). Members not named vote as `rest` says;
/// by default they are absent, or vote no when only `yes` lists anyone.
pub fn votes(file: &RuleFile, ballot: &NamedBallot) -> Result<Vec<Vote>, Failure> {
    let only_yes = !ballot.yes.is_empty() && ballot.no.is_empty() && ballot.abstain.is_empty();
    let rest = match ballot.rest {
        Some(Rest::No) => Vote::No,
        Some(Rest::Abstain) => Vote::Abstain,
        Some(Rest::Absent) => Vote::Absent,
        None if only_yes => Vote::No,
        None => Vote::Absent,
    };
    let mut votes = vec![rest; file.members.len()];
    for (list, vote, option) in [
        (&ballot.yes, Vote::Yes, "yes"),
        (&ballot.no, Vote::No, "no"),
        (&ballot.abstain, Vote::Abstain, "abstain"),
    ] {
        for name in list {
            for i in named(file, name, option)? {
                if let Some(v) = votes.get_mut(i) {
                    *v = vote;
                }
            }
        }
    }
    Ok(votes)
}

/// The members one name of a ballot list stands for.
fn named(file: &RuleFile, name: &str, list: &str) -> Result<Vec<usize>, Failure> {
    let name = name.trim();
    if name.is_empty() || name == "none" {
        return Ok(Vec::new());
    }
    if name == "all" {
        return Ok((0..file.members.len()).collect());
    }
    file.members_named(name).ok_or_else(|| {
        let hint = match closest(name, file.member_and_bloc_names()) {
            Some(c) => format!("did you mean `{c}`?"),
            None => "name members, groups, blocs, a range such as `rep1..rep218`, or `all`".to_string(),
        };
        Failure::input(format!("--{list}: unknown member `{name}`")).with_hint(hint)
    })
}

/// Decides one vote (one [`Vote`] per member) under `rule`.
pub fn decide(file: &RuleFile, rule: &CompiledRule, votes: &[Vote]) -> Result<Decision, Failure> {
    let ballot = Votes::from_votes(votes).map_err(|e| Failure::input(e.to_string()))?;
    let mut decision = decide_ballot(&rule.rule, &ballot).map_err(|e| Failure::input(e.to_string()))?;
    let pick = |want: Vote| -> Vec<usize> { (0..votes.len()).filter(|&i| votes[i] == want).collect() };
    let groups = [pick(Vote::Yes), pick(Vote::No), pick(Vote::Abstain)];
    let rounded = rule.exact.iter().any(Option::is_some);
    let flips = if rounded {
        // Weights rounded to a unit: decide on the exact amounts instead.
        let met = rounding::conditions_met(file, rule, [&groups[0], &groups[1], &groups[2]]);
        for (t, m) in decision.tallies.iter_mut().zip(&met) {
            t.met = *m;
        }
        decision.passed = rule.rule.eval(|k| met[k]);
        exact_critical(file, rule, votes, decision.passed)
    } else {
        critical(&rule.rule, votes, decision.passed)
    };
    let conditions = rule
        .conditions
        .iter()
        .zip(&decision.tallies)
        .zip(rule.rule.atoms())
        .enumerate()
        .map(|(i, ((c, t), atom))| Tally {
            text: c.text.clone(),
            attribute: rule.attributes[usize::from(atom.attribute)].name.clone(),
            sum: t.sum.to_string(),
            no: t.no.to_string(),
            abstain: t.abstain.to_string(),
            quota: t.quota.to_string(),
            needed: needed_yes(&rule.rule, i, t).map(|n| n.to_string()),
            margin: needed_yes(&rule.rule, i, t).map(|n| (i128::from(t.sum) - n).to_string()),
            total: rule.rule.total(usize::from(atom.attribute)).to_string(),
            four_state: rule.rule.linear(i).is_some(),
            met: t.met,
        })
        .collect();
    let [yes, no, abstain] = groups;
    let indices = [yes, no, abstain, pick(Vote::Absent), flips];
    let names =
        |ids: &[usize]| -> Vec<String> { ids.iter().map(|&i| file.members[i].name.clone()).collect() };
    Ok(Decision {
        rule: rule.name.clone(),
        passed: decision.passed,
        yes: names(&indices[0]),
        no: names(&indices[1]),
        abstain: names(&indices[2]),
        absent: names(&indices[3]),
        critical: names(&indices[4]),
        conditions,
        indices,
    })
}

/// For a four-state condition with a positive yes coefficient: the least
/// yes-sum that meets it given the no and abstain sums of this ballot.
/// For a plain condition: its quota. `None` when yes votes do not enter.
fn needed_yes(rule: &Rule<Vec<u64>>, i: usize, t: &AtomTally) -> Option<i128> {
    match rule.linear(i) {
        None => Some(i128::from(t.quota)),
        Some(l) if l.yes > 0 => {
            let rest = l
                .bound
                .checked_sub(i128::from(l.no).checked_mul(i128::from(t.no))?)?
                .checked_sub(i128::from(l.abstain).checked_mul(i128::from(t.abstain))?)?;
            let a = i128::from(l.yes);
            Some((rest.div_euclid(a) + i128::from(rest.rem_euclid(a) != 0)).max(0))
        }
        Some(_) => None,
    }
}

/// [`critical`] on the exact amounts of rounded attributes: each switch is
/// decided again exactly. O(members^2 * conditions).
fn exact_critical(file: &RuleFile, rule: &CompiledRule, votes: &[Vote], passed: bool) -> Vec<usize> {
    let mut out = Vec::new();
    let mut switched = votes.to_vec();
    for (i, &v) in votes.iter().enumerate() {
        let to = match (passed, v) {
            (true, Vote::Yes) => Vote::No,
            (false, Vote::No | Vote::Abstain | Vote::Absent) => Vote::Yes,
            _ => continue,
        };
        switched[i] = to;
        let pick =
            |want: Vote| -> Vec<usize> { (0..switched.len()).filter(|&j| switched[j] == want).collect() };
        let met = rounding::conditions_met(
            file,
            rule,
            [&pick(Vote::Yes), &pick(Vote::No), &pick(Vote::Abstain)],
        );
        if rule.rule.eval(|k| met[k]) != passed {
            out.push(i);
        }
        switched[i] = v;
    }
    out
}

/// Members whose own switch flips the outcome: when it passes, yes-voters
/// whose switch to no defeats it; when it fails, others whose switch to yes
/// passes it. One pass over the members, adjusting the group sums.
#[allow(clippy::needless_range_loop)] // three parallel sum rows indexed by attribute
fn critical(rule: &Rule<Vec<u64>>, votes: &[Vote], passed: bool) -> Vec<usize> {
    let attributes = rule.attributes();
    let mut sums = [[0u64; MAX_ATTRIBUTES]; 3];
    for (i, v) in votes.iter().enumerate() {
        let g = match v {
            Vote::Yes => 0,
            Vote::No => 1,
            Vote::Abstain => 2,
            Vote::Absent => continue,
        };
        for a in 0..attributes {
            // Group sums are at most the attribute's total, which the rule checked.
            sums[g][a] += rule.weight(a, i);
        }
    }
    let mut out = Vec::new();
    for (i, v) in votes.iter().enumerate() {
        let (from, to) = match (passed, v) {
            (true, Vote::Yes) => (Some(0), Some(1)),
            (false, Vote::No) => (Some(1), Some(0)),
            (false, Vote::Abstain) => (Some(2), Some(0)),
            (false, Vote::Absent) => (None, Some(0)),
            _ => continue,
        };
        let mut s = sums;
        for a in 0..attributes {
            let w = rule.weight(a, i);
            if let Some(f) = from {
                s[f][a] -= w;
            }
            if let Some(t) = to {
                s[t][a] += w;
            }
        }
        if rule.passes_with_group_sums(&s[0][..attributes], &s[1][..attributes], &s[2][..attributes])
            != passed
        {
            out.push(i);
        }
    }
    out
}
