//! Power under a voting model (feature `alloc`): each member is present
//! with chance `present`, and when present abstains with chance `abstain`,
//! otherwise votes yes with chance `yes` and no otherwise; members vote
//! independently (Straffin 1977, "Homogeneity, independence and power
//! indices", Public Choice 30: the independence assumption, with each
//! member's own chances; from memory).
//!
//! Figures, for a rule read on four-state ballots (see
//! [`Rule::passes_with_group_sums`]):
//! * member i's **decisive probability**: the chance that the outcome with
//!   i voting yes differs from the outcome with i voting no, the others
//!   voting by the model. With everyone present and yes or no at even odds
//!   this is the Penrose measure, swings / 2^(n-1) (Felsenthal & Machover
//!   1998, *The Measurement of Voting Power*, ch. 3: the absolute Banzhaf
//!   measure as the probability of being decisive);
//! * the **probability of passage**;
//! * the **probability of a failed quorum**: the chance that those present
//!   could not pass the motion even if all of them voted yes.
//!
//! **Exact path** ([`exact_model`]): the distribution of the rule's linear
//! forms (each condition's left-hand side, deduplicated) is built member by
//! member as a sparse generating function: a sorted list of (encoded form
//! values, probability), where adding a member merges four shifted copies.
//! Decisive probabilities need the distribution without each member type
//! (identical weights and chances); those are built by leaving one out in
//! halves (O(T log T) member steps over the shared rest). Probabilities are
//! `f64`: every one is a sum of non-negative products, so its relative
//! error is at most γ_k = k u / (1 - k u), u = 2^-53, with k = 8 n + S
//! (four chances per member from at most four operations, one product and
//! at most three additions per member step, and a final sum over at most S
//! states; Higham 2002, *Accuracy and Stability of Numerical Algorithms*,
//! lemma 3.1 and §4.2). The bound is returned with the figures.
//!
//! **Monte Carlo** ([`sample_model`]): ballots drawn from the model in
//! seeded batches, every member's decisiveness decided on each ballot of
//! the others; Wilson intervals as in [`crate::approx`].
//!
//! Time: exact O((n + T log T) S) merges of 4 lists for S reachable states,
//! refused past `max_states` states ([`Error::TooCostly`]); Monte Carlo
//! O(samples n (atoms + nodes)). Space O(S log T), O(n) per thread.
//! Overflow: encoded states are mixed-radix numbers below 2^126 (refused
//! otherwise); form values are `i128` sums of weights below 2^64 times
//! coefficients below 2^31.

// Hot loops index their tables directly; every index is a member below n, a
// form below `forms.len()` or a list position below its length; form values
// are bounded as said above. Listed in DEVELOPERS.md ("Panics").
#![allow(clippy::indexing_slicing, clippy::arithmetic_side_effects)]

use alloc::vec;
use alloc::vec::Vec;

use crate::engine::approx::{sample_rounds, Estimate, Sampling, BATCH};
use crate::model::error::Error;
use crate::model::limits::MAX_ATTRIBUTES;
use crate::model::rule::Rule;

/// One member's chances under the model.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Chances {
    /// Chance of being present.
    pub present: f64,
    /// Chance of voting yes when present and not abstaining.
    pub yes: f64,
    /// Chance of abstaining when present.
    pub abstain: f64,
}

impl Chances {
    /// The a priori model: present, yes or no at even odds.
    pub const A_PRIORI: Chances = Chances {
        present: 1.0,
        yes: 0.5,
        abstain: 0.0,
    };

    /// One turnout for everyone: present with chance `p`, then yes or no at even odds.
    pub fn turnout(p: f64) -> Chances {
        Chances {
            present: p,
            yes: 0.5,
            abstain: 0.0,
        }
    }

    /// Chances of (yes, no, abstain, absent), summing to 1 up to rounding.
    pub fn votes(&self) -> [f64; 4] {
        let voting = self.present * (1.0 - self.abstain);
        [
            voting * self.yes,
            voting * (1.0 - self.yes),
            self.present * self.abstain,
            1.0 - self.present,
        ]
    }

    /// Whether every chance lies in [0, 1].
    pub fn is_valid(&self) -> bool {
        [self.present, self.yes, self.abstain]
            .iter()
            .all(|c| (0.0..=1.0).contains(c))
    }
}

/// Exact figures under a voting model.
#[derive(Clone, Debug, PartialEq)]
pub struct ModelFigures {
    /// Each member's decisive probability.
    pub decisive: Vec<f64>,
    /// Probability that the motion passes.
    pub passage: f64,
    /// Probability that those present could not pass it however they vote.
    pub quorum_failure: f64,
    /// Relative rounding bound of every figure (γ_k, see the module docs).
    pub relative_error: f64,
    /// Largest number of states a distribution reached.
    pub states: usize,
}

/// Monte Carlo figures under a voting model.
#[derive(Clone, Debug, PartialEq)]
pub struct SampledModel {
    /// Each member's decisive probability.
    pub decisive: Vec<Estimate>,
    /// Probability that the motion passes.
    pub passage: Estimate,
    /// Probability of a failed quorum.
    pub quorum_failure: Estimate,
    /// Ballots drawn.
    pub samples: u64,
    /// Whether every half-width met the tolerance.
    pub converged: bool,
}

/// The rule's conditions as linear forms over (yes, no, abstain) sums.
struct Forms {
    /// (attribute, yes, no, abstain coefficients), deduplicated.
    forms: Vec<(usize, [i128; 3])>,
    /// Per atom: (form index, bound).
    atoms: Vec<(usize, i128)>,
}

impl Forms {
    fn of<W: AsRef<[u64]>>(rule: &Rule<W>) -> Forms {
        let mut forms: Vec<(usize, [i128; 3])> = Vec::new();
        let mut atoms = Vec::new();
        for (i, atom) in rule.atoms().iter().enumerate() {
            let a = usize::from(atom.attribute);
            let (key, bound) = match rule.linear(i) {
                Some(l) => (
                    [i128::from(l.yes), i128::from(l.no), i128::from(l.abstain)],
                    l.bound,
                ),
                None => ([1, 0, 0], i128::from(atom.quota)),
            };
            let f = match forms.iter().position(|&(fa, k)| fa == a && k == key) {
                Some(f) => f,
                None => {
                    forms.push((a, key));
                    forms.len() - 1
                }
            };
            atoms.push((f, bound));
        }
        Forms { forms, atoms }
    }

    /// Member i's change of each form for each vote (yes, no, abstain; absent is 0).
    fn deltas<W: AsRef<[u64]>>(&self, rule: &Rule<W>, i: usize) -> Vec<[i128; 3]> {
        self.forms
            .iter()
            .map(|&(a, c)| {
                let w = i128::from(rule.weight(a, i));
                [c[0] * w, c[1] * w, c[2] * w]
            })
            .collect()
    }

    fn passes<W: AsRef<[u64]>>(&self, rule: &Rule<W>, values: &[i128]) -> bool {
        rule.eval(|k| {
            let (f, bound) = self.atoms[k];
            values[f] >= bound
        })
    }
}

/// Mixed-radix encoding of form values: digit f is value - low[f].
struct Encoding {
    low: Vec<i128>,
    stride: Vec<i128>,
    /// Encoded change of each member's yes, no and abstain vote.
    moves: Vec<[i128; 3]>,
}

impl Encoding {
    fn new<W: AsRef<[u64]>>(rule: &Rule<W>, forms: &Forms) -> Result<Encoding, Error> {
        let n = rule.members();
        let k = forms.forms.len();
        let deltas: Vec<Vec<[i128; 3]>> = (0..n).map(|i| forms.deltas(rule, i)).collect();
        let mut low = vec![0i128; k];
        let mut high = vec![0i128; k];
        for d in &deltas {
            for f in 0..k {
                low[f] += d[f].iter().copied().min().unwrap_or(0).min(0);
                high[f] += d[f].iter().copied().max().unwrap_or(0).max(0);
            }
        }
        let mut stride = vec![0i128; k];
        let mut size: i128 = 1;
        for f in 0..k {
            stride[f] = size;
            size = size
                .checked_mul(high[f] - low[f] + 1)
                .filter(|&s| s < 1 << 126)
                .ok_or(Error::TooCostly {
                    estimate: u128::MAX,
                    budget: 1 << 126,
                })?;
        }
        let moves = deltas
            .iter()
            .map(|d| {
                let mut m = [0i128; 3];
                for (f, df) in d.iter().enumerate() {
                    for v in 0..3 {
                        m[v] += df[v] * stride[f];
                    }
                }
                m
            })
            .collect();
        Ok(Encoding { low, stride, moves })
    }

    /// The empty ballot (everyone absent): every form 0.
    fn origin(&self) -> i128 {
        self.low.iter().zip(&self.stride).map(|(l, s)| -l * s).sum()
    }

    fn decode(&self, key: i128, values: &mut [i128]) {
        let mut rest = key;
        for f in (0..self.low.len()).rev() {
            values[f] = rest / self.stride[f] + self.low[f];
            rest %= self.stride[f];
        }
    }
}

/// A sparse distribution: (encoded state, probability), sorted by state.
type States = Vec<(i128, f64)>;

/// Adds member `i` voting by `p` (yes, no, abstain, absent) to `states`:
/// a merge of four shifted copies, each sorted already.
fn add_member(states: &States, moves: [i128; 3], p: [f64; 4], max_states: usize) -> Result<States, Error> {
    let shifts = [moves[0], moves[1], moves[2], 0];
    let live: Vec<usize> = (0..4).filter(|&v| p[v] > 0.0).collect();
    let mut heads = vec![0usize; live.len()];
    let mut out: States = Vec::with_capacity(states.len() * 2);
    loop {
        let mut best: Option<i128> = None;
        for (h, &v) in live.iter().enumerate() {
            if let Some(&(k, _)) = states.get(heads[h]) {
                let k = k + shifts[v];
                if best.is_none_or(|b| k < b) {
                    best = Some(k);
                }
            }
        }
        let Some(key) = best else { break };
        let mut prob = 0.0;
        for (h, &v) in live.iter().enumerate() {
            if let Some(&(k, q)) = states.get(heads[h]) {
                if k + shifts[v] == key {
                    prob += q * p[v];
                    heads[h] += 1;
                }
            }
        }
        out.push((key, prob));
        if out.len() > max_states {
            return Err(Error::TooCostly {
                estimate: out.len() as u128,
                budget: max_states as u128,
            });
        }
    }
    Ok(out)
}

/// Builds the distribution of `members` on top of `base`.
fn add_all(
    base: &States,
    members: &[usize],
    enc: &Encoding,
    votes: &[[f64; 4]],
    max_states: usize,
    widest: &mut usize,
) -> Result<States, Error> {
    let mut s = base.clone();
    for &i in members {
        s = add_member(&s, enc.moves[i], votes[i], max_states)?;
        *widest = (*widest).max(s.len());
    }
    Ok(s)
}

/// For each of `items`, the distribution of `base` plus every other item
/// (leave-one-out in halves).
#[allow(clippy::too_many_arguments)]
fn leave_one_out(
    base: &States,
    items: &[usize],
    enc: &Encoding,
    votes: &[[f64; 4]],
    max_states: usize,
    widest: &mut usize,
    visit: &mut dyn FnMut(usize, &States),
) -> Result<(), Error> {
    match items {
        [] => Ok(()),
        [one] => {
            visit(*one, base);
            Ok(())
        }
        _ => {
            let (left, right) = items.split_at(items.len() / 2);
            let with_right = add_all(base, right, enc, votes, max_states, widest)?;
            leave_one_out(&with_right, left, enc, votes, max_states, widest, visit)?;
            drop(with_right);
            let with_left = add_all(base, left, enc, votes, max_states, widest)?;
            leave_one_out(&with_left, right, enc, votes, max_states, widest, visit)
        }
    }
}

/// Exact figures under the model `chances` (one entry per member), as
/// floating point with the relative rounding bound in the result. Refused
/// ([`Error::TooCostly`]) when a distribution passes `max_states` states;
/// chances outside [0, 1] are [`Error::BadFraction`].
pub fn exact_model<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    chances: &[Chances],
    max_states: usize,
) -> Result<ModelFigures, Error> {
    let n = rule.members();
    check(rule, chances)?;
    let forms = Forms::of(rule);
    let enc = Encoding::new(rule, &forms)?;
    let votes: Vec<[f64; 4]> = chances.iter().map(Chances::votes).collect();
    // Types: identical weights in every attribute and identical chances.
    let mut reps: Vec<usize> = Vec::new();
    let mut type_of = vec![0usize; n];
    for i in 0..n {
        let same = reps.iter().position(|&r| {
            chances[r] == chances[i] && (0..rule.attributes()).all(|a| rule.weight(a, r) == rule.weight(a, i))
        });
        type_of[i] = match same {
            Some(t) => t,
            None => {
                reps.push(i);
                reps.len() - 1
            }
        };
    }
    let rest: Vec<usize> = (0..n).filter(|i| !reps.contains(i)).collect();
    let mut widest = 1usize;
    let origin: States = vec![(enc.origin(), 1.0)];
    let shared = add_all(&origin, &rest, &enc, &votes, max_states, &mut widest)?;
    let k = forms.forms.len();
    let mut values = vec![0i128; k];
    let mut per_type = vec![0.0f64; reps.len()];
    let mut passage = 0.0;
    let mut first = true;
    leave_one_out(
        &shared,
        &reps,
        &enc,
        &votes,
        max_states,
        &mut widest,
        &mut |rep, others| {
            let t = type_of[rep];
            let m = enc.moves[rep];
            let mut decisive = 0.0;
            let mut pass = 0.0;
            let p = votes[rep];
            for &(key, q) in others {
                let with = |shift: i128, values: &mut [i128]| {
                    enc.decode(key + shift, values);
                    forms.passes(rule, values)
                };
                let yes = with(m[0], &mut values);
                let no = with(m[1], &mut values);
                if yes && !no {
                    decisive += q;
                }
                if first {
                    // Passage: the member votes too.
                    let abstain = with(m[2], &mut values);
                    let absent = with(0, &mut values);
                    let mut c = 0.0;
                    for (passes, pv) in [(yes, p[0]), (no, p[1]), (abstain, p[2]), (absent, p[3])] {
                        if passes {
                            c += pv;
                        }
                    }
                    pass += q * c;
                }
            }
            per_type[t] = decisive;
            if first {
                passage = pass;
                first = false;
            }
        },
    )?;
    // Quorum: every present member votes yes.
    let present: Vec<[f64; 4]> = chances
        .iter()
        .map(|c| [c.present, 0.0, 0.0, 1.0 - c.present])
        .collect();
    let all = add_all(
        &origin,
        &(0..n).collect::<Vec<_>>(),
        &enc,
        &present,
        max_states,
        &mut widest,
    )?;
    let mut carried = 0.0;
    for &(key, q) in &all {
        enc.decode(key, &mut values);
        if forms.passes(rule, &values) {
            carried += q;
        }
    }
    let k_terms = (8 * n + widest) as f64;
    let u = f64::EPSILON / 2.0;
    Ok(ModelFigures {
        decisive: (0..n).map(|i| per_type[type_of[i]]).collect(),
        passage,
        quorum_failure: (1.0 - carried).max(0.0),
        relative_error: k_terms * u / (1.0 - k_terms * u),
        states: widest,
    })
}

fn check<W: AsRef<[u64]>>(rule: &Rule<W>, chances: &[Chances]) -> Result<(), Error> {
    if chances.len() != rule.members() {
        return Err(Error::BallotMismatch {
            members: rule.members(),
            capacity: chances.len(),
        });
    }
    match chances.iter().find(|c| !c.is_valid()) {
        Some(c) => Err(Error::BadFraction {
            numerator: (c.present.max(c.yes).max(c.abstain) * 1000.0) as u64,
            denominator: 1000,
        }),
        None => Ok(()),
    }
}

/// Monte Carlo figures under the model `chances`: ballots drawn in seeded
/// batches until every half-width meets `s.tolerance` or `s.max_samples`
/// ballots are drawn. Same seed, same figures, whatever the threads.
pub fn sample_model<W: AsRef<[u64]> + Sync>(
    rule: &Rule<W>,
    chances: &[Chances],
    s: &Sampling,
) -> Result<SampledModel, Error> {
    let n = rule.members();
    check(rule, chances)?;
    let attributes = rule.attributes();
    // Cumulative thresholds of each member's (yes, no, abstain) on a u64 draw.
    let cuts: Vec<[u64; 3]> = chances
        .iter()
        .map(|c| {
            let p = c.votes();
            let scale = |x: f64| (x.clamp(0.0, 1.0) * 18_446_744_073_709_551_615.0) as u64;
            [scale(p[0]), scale(p[0] + p[1]), scale(p[0] + p[1] + p[2])]
        })
        .collect();
    let est = sample_rounds(n + 2, s, |rng, hits| {
        let mut vote = vec![3u8; n];
        for _ in 0..BATCH {
            let mut sums = [[0u64; MAX_ATTRIBUTES]; 3];
            for i in 0..n {
                let r = rng.next();
                let c = cuts[i];
                let v = if r < c[0] {
                    0
                } else if r < c[1] {
                    1
                } else if r < c[2] {
                    2
                } else {
                    3
                };
                vote[i] = v;
                if v < 3 {
                    for (a, sum) in sums[usize::from(v)].iter_mut().enumerate().take(attributes) {
                        *sum += rule.weight(a, i);
                    }
                }
            }
            let [yes, no, abstain] = &sums;
            if rule.passes_with_group_sums(&yes[..attributes], &no[..attributes], &abstain[..attributes]) {
                hits[n] += 1;
            }
            let mut present = [0u64; MAX_ATTRIBUTES];
            for a in 0..attributes {
                present[a] = yes[a] + no[a] + abstain[a];
            }
            let _ = (yes, no, abstain);
            let none = [0u64; MAX_ATTRIBUTES];
            if !rule.passes_with_group_sums(&present[..attributes], &none[..attributes], &none[..attributes])
            {
                hits[n + 1] += 1;
            }
            for i in 0..n {
                // The others' sums with i voting yes, then no; restored after.
                let v = usize::from(vote[i]);
                for a in 0..attributes {
                    let w = rule.weight(a, i);
                    if v < 3 {
                        sums[v][a] -= w;
                    }
                    sums[0][a] += w;
                }
                let with_yes = rule.passes_with_group_sums(
                    &sums[0][..attributes],
                    &sums[1][..attributes],
                    &sums[2][..attributes],
                );
                for a in 0..attributes {
                    let w = rule.weight(a, i);
                    sums[0][a] -= w;
                    sums[1][a] += w;
                }
                if with_yes
                    && !rule.passes_with_group_sums(
                        &sums[0][..attributes],
                        &sums[1][..attributes],
                        &sums[2][..attributes],
                    )
                {
                    hits[i] += 1;
                }
                for a in 0..attributes {
                    let w = rule.weight(a, i);
                    sums[1][a] -= w;
                    if v < 3 {
                        sums[v][a] += w;
                    }
                }
            }
        }
    });
    let mut members = est.members;
    let quorum_failure = members.pop().unwrap_or(Estimate {
        value: 0.0,
        half_width: 1.0,
    });
    let passage = members.pop().unwrap_or(Estimate {
        value: 0.0,
        half_width: 1.0,
    });
    Ok(SampledModel {
        decisive: members,
        passage,
        quorum_failure,
        samples: est.samples,
        converged: est.converged,
    })
}

#[cfg(test)]
mod tests;
