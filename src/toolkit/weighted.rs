//! Is a rule a weighted game `[q; w1, ..., wn]`? If so, with which integer
//! weights of least total; if not, a proof, and an intersection of a few
//! weighted games that gives the rule.
//!
//! A monotone rule is weighted exactly when integer weights v >= 0 and a
//! quota q satisfy v(S) >= q for every minimal winning S and v(T) <= q - 1
//! for every maximal losing T. The integer program minimizing Σ v over these
//! constraints is solved by cutting planes: start from a sample of the
//! constraints, solve, check the answer exactly against all of them (integer
//! arithmetic, `u128`), add the violated ones, repeat. A program over a
//! subset that has no solution proves (by the solver's word) that the whole
//! has none; the rule is then shown not weighted by a *trading transfer*
//! (Taylor & Zwicker 1999): winning coalitions X1..Xk and losing Y1..Yk in
//! which every member occurs equally often. Any weights would give
//! Σ w(Xi) = Σ w(Yi), yet each w(Xi) >= q > w(Yj), so no weights exist. The
//! transfer comes from a second integer program (Farkas multipliers of the
//! failed subset, minimizing k) and is checked coalition by coalition.
//!
//! Over types of interchangeable members (see [`super::profile`]) the same
//! program gives each type one weight. That loses nothing for the question
//! "weighted or not" (averaging a representation over the permutations of
//! interchangeable members gives one), but the least total is then the least
//! among representations that weigh interchangeable members equally; with
//! one member per type it is the least of all.
//!
//! Time: one pass over the table per round (P profiles, m types) plus the
//! solver; rounds add up to 32 violated constraints of each kind.

use clout_core::Rule;

use super::lp::{self, Separation};
use super::profile::{self, interchangeable, singletons, Cyclic, ProfileTable};
use super::{Error, PROFILE_LIMIT};

/// Largest member count for which every member is its own type (2^16
/// coalitions), so that minimal totals are over all representations.
pub const MEMBER_LEVEL_LIMIT: usize = 16;

/// Constraints of each kind the first round takes.
const FIRST_ROUND: usize = 128;
/// Violated constraints of each kind one round adds.
const PER_ROUND: usize = 32;
/// Integer programs the intersection search may solve.
const INTERSECTION_PROGRAMS: usize = 600;
/// Failed attempts in a row after which one game of the intersection stops growing.
const GROUP_FAILURES: usize = 30;

/// How the table groups members.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Level {
    /// Every member is its own type: profiles are coalitions.
    Members,
    /// Interchangeable members (identical weights) form one type.
    Types,
}

/// The profile table used for the weightedness test: one member per type
/// up to [`MEMBER_LEVEL_LIMIT`] members, else types of interchangeable
/// members, within [`PROFILE_LIMIT`].
pub fn table_for<W: AsRef<[u64]>>(rule: &Rule<W>) -> Result<(ProfileTable, Level), Error> {
    if rule.members() <= MEMBER_LEVEL_LIMIT {
        let t = ProfileTable::of_rule(rule, singletons(rule.members()), PROFILE_LIMIT)?;
        return Ok((t, Level::Members));
    }
    let t = ProfileTable::of_rule(rule, interchangeable(rule), PROFILE_LIMIT)?;
    Ok((t, Level::Types))
}

/// A weighted game `[quota; weights]` over the rule's members.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Representation {
    /// Least total weight that wins.
    pub quota: u64,
    /// One weight per member, in member order.
    pub weights: Vec<u64>,
}

impl Representation {
    /// Sum of the weights.
    pub fn total(&self) -> u64 {
        self.weights.iter().sum()
    }

    /// The weighted game as a core rule.
    pub fn rule(&self) -> Result<Rule<Vec<u64>>, Error> {
        Ok(Rule::weighted(self.quota, self.weights.clone())?)
    }

    /// `[q; w1, w2, ...]`, runs of three or more equal weights as `w xK`
    /// (the notation `--game` reads).
    pub fn notation(&self) -> String {
        let mut parts = Vec::new();
        let mut k = 0;
        while k < self.weights.len() {
            let w = self.weights[k];
            let run = self.weights[k..].iter().take_while(|&&x| x == w).count();
            if run >= 3 {
                parts.push(format!("{w} x{run}"));
            } else {
                parts.extend(std::iter::repeat_n(w.to_string(), run));
            }
            k += run;
        }
        format!("[{}; {}]", self.quota, parts.join(", "))
    }

    fn from_types(table: &ProfileTable, type_weights: &[u64], quota: u64) -> Self {
        let mut weights = vec![0u64; table.members()];
        for (t, members) in table.types().iter().enumerate() {
            for &i in members {
                weights[i] = type_weights[t];
            }
        }
        Representation { quota, weights }
    }
}

/// How far the least total is proved.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Minimality {
    /// No integer representation has a smaller total.
    Proved,
    /// None that weighs interchangeable members equally has a smaller total.
    ProvedAmongEqual,
    /// The solver stopped at its node budget with this representation.
    NotProved,
}

/// Winning coalitions X1..Xk and losing Y1..Yk holding every member equally
/// often: a proof that no weights represent the rule.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TradingTransfer {
    /// The winning coalitions, members ascending.
    pub winning: Vec<Vec<usize>>,
    /// The losing coalitions, members ascending.
    pub losing: Vec<Vec<usize>>,
}

impl TradingTransfer {
    /// Checks the proof exactly: as many winning as losing coalitions, each
    /// `winning` coalition wins, each `losing` one loses, and every member
    /// occurs as often on both sides.
    pub fn holds(&self, members: usize, wins: impl Fn(&[usize]) -> bool) -> bool {
        let mut balance = vec![0i64; members];
        for c in &self.winning {
            for &i in c {
                match balance.get_mut(i) {
                    Some(b) => *b += 1,
                    None => return false,
                }
            }
        }
        for c in &self.losing {
            for &i in c {
                match balance.get_mut(i) {
                    Some(b) => *b -= 1,
                    None => return false,
                }
            }
        }
        !self.winning.is_empty()
            && self.winning.len() == self.losing.len()
            && balance.iter().all(|&b| b == 0)
            && self.winning.iter().all(|c| wins(c))
            && self.losing.iter().all(|c| !wins(c))
    }
}

/// The answer of the weightedness test.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Verdict {
    /// The rule is this weighted game (checked on every profile).
    Weighted {
        /// The representation of least total found.
        representation: Representation,
        /// How far its total is proved least.
        minimal: Minimality,
    },
    /// The rule is not weighted.
    NotWeighted {
        /// The proof (checked).
        transfer: TradingTransfer,
        /// Weighted games whose intersection is the rule (checked on every
        /// profile): the rule's dimension is at most their number.
        intersection: Vec<Representation>,
    },
}

/// The weightedness test's answer and what it looked at.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Weightedness {
    /// The answer.
    pub verdict: Verdict,
    /// Minimal winning profiles.
    pub minimal_winning: usize,
    /// Maximal losing profiles.
    pub maximal_losing: usize,
    /// Rounds of the cutting-plane loop.
    pub rounds: usize,
}

/// Decides whether the table's rule is weighted (see the module docs).
pub fn test(table: &ProfileTable) -> Result<Weightedness, Error> {
    let above: Vec<Vec<usize>> = table.minimal_winning().iter().map(|&i| table.digits(i)).collect();
    let below: Vec<Vec<usize>> = table.maximal_losing().iter().map(|&i| table.digits(i)).collect();
    let cost: Vec<f64> = table.types().iter().map(|t| t.len() as f64).collect();
    let all_below: Vec<usize> = (0..below.len()).collect();
    let mut rounds = 0;
    let verdict = match separate_all(&cost, &above, &below, &all_below, &mut rounds)? {
        Found::Weights {
            weights,
            quota,
            optimal,
        } => {
            let representation = Representation::from_types(table, &weights, quota);
            if !represents(table, &weights, quota) {
                return Err(Error::Solver(
                    "the representation failed the exact check".to_string(),
                ));
            }
            let minimal = match (optimal, table.types().iter().all(|t| t.len() == 1)) {
                (false, _) => Minimality::NotProved,
                (true, true) => Minimality::Proved,
                (true, false) => Minimality::ProvedAmongEqual,
            };
            Verdict::Weighted {
                representation,
                minimal,
            }
        }
        Found::Infeasible { above: a, below: b } => {
            let transfer = transfer(table, &a, &b)?;
            let intersection = intersection(table, &cost, &above, &below)?;
            Verdict::NotWeighted {
                transfer,
                intersection,
            }
        }
    };
    Ok(Weightedness {
        verdict,
        minimal_winning: above.len(),
        maximal_losing: below.len(),
        rounds,
    })
}

enum Found {
    Weights {
        weights: Vec<u64>,
        quota: u64,
        optimal: bool,
    },
    /// These constraints alone admit no weights.
    Infeasible {
        above: Vec<Vec<usize>>,
        below: Vec<Vec<usize>>,
    },
}

fn dot(weights: &[u64], digits: &[usize]) -> u128 {
    weights
        .iter()
        .zip(digits)
        .map(|(&w, &d)| u128::from(w) * d as u128)
        .sum()
}

/// Evenly spaced indices of at most `k` of `0..n`.
fn sample(n: usize, k: usize) -> Vec<usize> {
    if n <= k {
        return (0..n).collect();
    }
    (0..k).map(|j| j * n / k).collect()
}

/// Cutting planes: weights separating every profile of `above` from the
/// profiles `below[i]` for i in `chosen`, of least Σ cost v.
fn separate_all(
    cost: &[f64],
    above: &[Vec<usize>],
    below: &[Vec<usize>],
    chosen: &[usize],
    rounds: &mut usize,
) -> Result<Found, Error> {
    let mut active_above: Vec<usize> = sample(above.len(), FIRST_ROUND);
    let mut active_below: Vec<usize> = sample(chosen.len(), FIRST_ROUND)
        .into_iter()
        .map(|k| chosen[k])
        .collect();
    loop {
        *rounds += 1;
        let pick =
            |set: &[usize], from: &[Vec<usize>]| set.iter().map(|&i| from[i].clone()).collect::<Vec<_>>();
        let a = pick(&active_above, above);
        let b = pick(&active_below, below);
        let Some(Separation {
            weights,
            quota,
            optimal,
        }) = lp::separate(cost, &a, &b)?
        else {
            return Ok(Found::Infeasible { above: a, below: b });
        };
        let quota = u128::from(quota);
        let new_above: Vec<usize> = worst(
            above
                .iter()
                .enumerate()
                .filter(|(_, x)| dot(&weights, x) < quota)
                .map(|(i, x)| (i, quota - dot(&weights, x))),
            &active_above,
        );
        let new_below: Vec<usize> = worst(
            chosen
                .iter()
                .map(|&i| (i, dot(&weights, &below[i])))
                .filter(|&(_, w)| w >= quota)
                .map(|(i, w)| (i, w + 1 - quota)),
            &active_below,
        );
        if new_above.is_empty() && new_below.is_empty() {
            let violated = above.iter().any(|x| dot(&weights, x) < quota)
                || chosen.iter().any(|&i| dot(&weights, &below[i]) >= quota);
            if violated {
                return Err(Error::Solver(
                    "the solver's weights violate constraints it was given".to_string(),
                ));
            }
            // The least quota these weights allow: one above the heaviest
            // chosen losing profile (0 when nothing is to lose).
            let quota = chosen
                .iter()
                .map(|&i| dot(&weights, &below[i]) + 1)
                .max()
                .unwrap_or(0);
            let quota =
                u64::try_from(quota).map_err(|_| Error::Solver("quota beyond 64 bits".to_string()))?;
            return Ok(Found::Weights {
                weights,
                quota,
                optimal,
            });
        }
        active_above.extend(new_above);
        active_below.extend(new_below);
    }
}

/// The (at most [`PER_ROUND`]) most violated constraints not yet active.
fn worst(violations: impl Iterator<Item = (usize, u128)>, active: &[usize]) -> Vec<usize> {
    let mut v: Vec<(usize, u128)> = violations.filter(|(i, _)| !active.contains(i)).collect();
    v.sort_by(|a, b| b.1.cmp(&a.1).then(a.0.cmp(&b.0)));
    v.into_iter().take(PER_ROUND).map(|(i, _)| i).collect()
}

/// Whether `[quota; type weights]` wins exactly on the table's winning profiles.
pub fn represents(table: &ProfileTable, type_weights: &[u64], quota: u64) -> bool {
    let mut all = true;
    table.each(|i, d| all &= (dot(type_weights, d) >= u128::from(quota)) == table.wins(i));
    all
}

/// A checked trading transfer from constraints that admit no weights.
fn transfer(
    table: &ProfileTable,
    above: &[Vec<usize>],
    below: &[Vec<usize>],
) -> Result<TradingTransfer, Error> {
    let types = table.types().len();
    let Some((lambda, mu)) = lp::trade(types, above, below)? else {
        return Err(Error::Solver(
            "no weights exist, but no trading transfer was found".to_string(),
        ));
    };
    let repeat = |profiles: &[Vec<usize>], times: &[u64]| -> Vec<Vec<usize>> {
        profiles
            .iter()
            .zip(times)
            .flat_map(|(p, &k)| std::iter::repeat_n(p.clone(), k as usize))
            .collect()
    };
    let xs = repeat(above, &lambda);
    let mut ys = repeat(below, &mu);
    // Trim the losing side to the winning side's totals: a subset of a losing
    // coalition still loses.
    for t in 0..types {
        let have: usize = ys.iter().map(|y| y[t]).sum();
        let need: usize = xs.iter().map(|x| x[t]).sum();
        let Some(mut excess) = have.checked_sub(need) else {
            return Err(Error::Solver(
                "the transfer's multipliers do not balance".to_string(),
            ));
        };
        for y in ys.iter_mut() {
            let cut = y[t].min(excess);
            y[t] -= cut;
            excess -= cut;
        }
    }
    let mut left = Cyclic::new(table.types());
    let mut right = Cyclic::new(table.types());
    let proof = TradingTransfer {
        winning: xs.iter().map(|x| left.take(x)).collect(),
        losing: ys.iter().map(|y| right.take(y)).collect(),
    };
    let type_of = type_index(table);
    let wins = |c: &[usize]| {
        let mut digits = vec![0usize; types];
        c.iter().for_each(|&i| digits[type_of[i]] += 1);
        table.wins(table.index(&digits))
    };
    if !proof.holds(table.members(), wins) {
        return Err(Error::Solver(
            "the trading transfer failed the exact check".to_string(),
        ));
    }
    Ok(proof)
}

fn type_index(table: &ProfileTable) -> Vec<usize> {
    let mut type_of = vec![0usize; table.members()];
    for (t, members) in table.types().iter().enumerate() {
        for &i in members {
            type_of[i] = t;
        }
    }
    type_of
}

/// Weighted games, each accepting every winning profile, that together
/// reject every losing one: greedily, each game rejects as many of the
/// remaining maximal losing profiles as the solver allows. Checked on every
/// profile.
fn intersection(
    table: &ProfileTable,
    cost: &[f64],
    above: &[Vec<usize>],
    below: &[Vec<usize>],
) -> Result<Vec<Representation>, Error> {
    let mut uncovered: Vec<usize> = (0..below.len()).collect();
    let mut parts: Vec<(Vec<u64>, u64)> = Vec::new();
    let mut programs = 0;
    let mut rounds = 0;
    while let Some(&first) = uncovered.first() {
        programs += 1;
        let Found::Weights {
            mut weights,
            mut quota,
            ..
        } = separate_all(cost, above, below, &[first], &mut rounds)?
        else {
            return Err(Error::Solver(
                "one losing coalition could not be separated from the winning ones".to_string(),
            ));
        };
        // Grow the game: try the losing profiles it misses by the least first.
        let mut tried = vec![false; below.len()];
        let mut failures = 0;
        while programs < INTERSECTION_PROGRAMS && failures < GROUP_FAILURES {
            let quota128 = u128::from(quota);
            let next = uncovered
                .iter()
                .copied()
                .filter(|&y| !tried[y] && dot(&weights, &below[y]) >= quota128)
                .min_by_key(|&y| (dot(&weights, &below[y]) - quota128, y));
            let Some(y) = next else { break };
            tried[y] = true;
            programs += 1;
            let mut group: Vec<usize> = uncovered
                .iter()
                .copied()
                .filter(|&z| dot(&weights, &below[z]) < quota128)
                .collect();
            group.push(y);
            match separate_all(cost, above, below, &group, &mut rounds)? {
                Found::Weights {
                    weights: w, quota: q, ..
                } => {
                    weights = w;
                    quota = q;
                    failures = 0;
                }
                Found::Infeasible { .. } => failures += 1,
            }
        }
        let before = uncovered.len();
        uncovered.retain(|&y| dot(&weights, &below[y]) >= u128::from(quota));
        if uncovered.len() == before {
            return Err(Error::Solver(
                "a weighted game of the intersection covers nothing".to_string(),
            ));
        }
        parts.push((weights, quota));
    }
    let mut all_hold = true;
    table.each(|i, d| all_hold &= parts.iter().all(|(w, q)| dot(w, d) >= u128::from(*q)) == table.wins(i));
    if !all_hold {
        return Err(Error::Solver(
            "the intersection failed the exact check".to_string(),
        ));
    }
    Ok(parts
        .iter()
        .map(|(w, q)| Representation::from_types(table, w, *q))
        .collect())
}

/// Members that are dummies: their vote never changes the outcome (from the
/// table: adding one member of the type never turns a loss into a win).
pub fn dummies(table: &ProfileTable) -> Vec<usize> {
    let mut out: Vec<usize> = table
        .types()
        .iter()
        .enumerate()
        .filter(|&(t, _)| {
            let stride = table.stride(t);
            let mut dummy = true;
            table.each(|i, d| dummy &= d[t] == table.size(t) || table.wins(i) == table.wins(i + stride));
            dummy
        })
        .flat_map(|(_, m)| m.iter().copied())
        .collect();
    out.sort_unstable();
    out
}

/// Whether two rules over the same members pass exactly the same coalitions,
/// checked on the profiles of `table` (whose types must be interchangeable
/// in both rules).
pub fn same_on_table<W: AsRef<[u64]>>(table: &ProfileTable, other: &Rule<W>) -> bool {
    let mut same = true;
    table.each(|i, d| same &= profile::passes(other, &table.coalition(d)) == table.wins(i));
    same
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn notation_runs() {
        let r = Representation {
            quota: 2,
            weights: vec![1, 1, 0, 0, 0, 5],
        };
        assert_eq!(r.notation(), "[2; 1, 1, 0 x3, 5]");
        assert_eq!(r.total(), 7);
    }

    #[test]
    fn majority_of_three_is_weighted() {
        // Simple majority of three: [2; 1, 1, 1], total 3, by hand.
        let rule = Rule::weighted(5, vec![3u64, 3, 3]).unwrap();
        let (table, level) = table_for(&rule).unwrap();
        assert_eq!(level, Level::Members);
        let w = test(&table).unwrap();
        assert_eq!(
            w.verdict,
            Verdict::Weighted {
                representation: Representation {
                    quota: 2,
                    weights: vec![1, 1, 1]
                },
                minimal: Minimality::Proved
            }
        );
    }
}
