//! Power and passage under abstention and attendance (feature `alloc`).
//!
//! **Ternary Banzhaf measure** (Felsenthal & Machover 1997, "Ternary voting
//! games", International Journal of Game Theory 26; definition as we recall
//! it, from memory): every member is present and votes yes, abstains or
//! votes no, each with chance 1/3, independently. Member i's measure is
//!
//! β'_i = Σ_X [pass(X, i yes) − pass(X, i no)] / (2 · 3^(n−1)),
//!
//! the sum running over the 3^(n−1) ballots X of the others: the average of
//! i's chances of turning the outcome by moving one step (no to abstain, or
//! abstain to yes), since the two steps add up to the whole move. It lies
//! in [0, 1/2]; for a rule with no four-state condition an abstention counts
//! as not voting yes.
//!
//! **Passage under attendance**: each member is present with chance p and
//! then votes yes or no with equal chance (no abstentions); the probability
//! that the rule passes.
//!
//! Both are computed over profiles of member types (identical weights in
//! every used attribute): Π (c_t + 1)(c_t + 2)/2 profiles weighted by
//! multinomial coefficients, O(T (atoms + nodes)) each, at most
//! [`MAX_PROFILES`] profiles (else [`Error::TooCostly`] before any is
//! visited); space O(n). Counts are exact in the caller's checked
//! [`Counter`] (overflow is [`Error::CountOverflow`]); the attendance
//! probability is an `f64`, summed in logarithms.

// Hot loops index their tables and add bounded integers directly (checked
// arithmetic would cost the engines' speed). Why nothing is out of range or
// overflows, listed in DEVELOPERS.md ("Panics"):
// at most MAX_PROFILES (2^32) profiles of at most MAX_TYPES types, digit (y, a) of type
// t within 0..=c_t; group sums are bounded by the attribute totals checked at
// construction; counts use the checked `Counter`.
#![allow(clippy::indexing_slicing, clippy::arithmetic_side_effects)]

use alloc::vec;
use alloc::vec::Vec;

use crate::engine::member_types::Types;
use crate::model::count::{binomial, Counter};
use crate::model::error::Error;
use crate::model::limits::MAX_ATTRIBUTES;
use crate::model::meter::Meter;
use crate::model::rule::Rule;

/// Most profiles the functions here will visit.
pub const MAX_PROFILES: u128 = 1 << 32;

/// Exact ternary swing counts: `Σ_X [pass(X, i yes) − pass(X, i no)]` per member.
#[derive(Clone, Debug, PartialEq)]
pub struct TernaryPower<C> {
    /// One count per member.
    pub swings: Vec<C>,
    /// Number of members n (the measure divides by 2 · 3^(n−1)).
    pub members: usize,
}

impl<C: Counter> TernaryPower<C> {
    /// Felsenthal & Machover's ternary Banzhaf measure of member `i`.
    pub fn measure(&self, i: usize) -> f64 {
        let Some(&c) = self.swings.get(i) else { return 0.0 };
        // c / (2 * 3^(n-1)) without forming 3^(n-1): scale step by step.
        let (m, e) = c.to_f64_parts();
        let mut v = libm::ldexp(m, e) / 2.0;
        for _ in 1..self.members {
            v /= 3.0;
        }
        v
    }
}

/// Groups the members of `rule` into types (in `order`, n entries, and
/// `starts`, n + 1), refusing rules of more than [`MAX_PROFILES`]
/// three-way profiles Π (c_t + 1)(c_t + 2)/2 before any is visited.
fn grouped<'a, W: AsRef<[u64]>>(
    rule: &Rule<W>,
    order: &'a mut [u32],
    starts: &'a mut [u32],
) -> Result<Types<'a>, Error> {
    let types = Types::group(rule, rule.used_attributes(), order, starts);
    let profiles = profiles_of(&types);
    if profiles > MAX_PROFILES {
        return Err(Error::TooCostly {
            estimate: profiles,
            budget: MAX_PROFILES,
        });
    }
    Ok(types)
}

/// Three-way profiles Π (c_t + 1)(c_t + 2)/2 of `types` (saturating).
fn profiles_of(types: &Types<'_>) -> u128 {
    (0..types.count).fold(1u128, |p, t| {
        let c = types.size(t) as u128;
        p.saturating_mul((c + 1) * (c + 2) / 2)
    })
}

/// Visits every three-way profile (y_t, a_t, n_t) of the types, calling
/// `visit(digits, yes, no, abstain)` with the group sums of each attribute.
fn for_each_profile<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    types: &Types<'_>,
    meter: &Meter<'_>,
    mut visit: impl FnMut(&[(usize, usize)], &[u64], &[u64], &[u64]) -> Result<(), Error>,
) -> Result<(), Error> {
    let attributes = rule.attributes();
    let t_count = types.count;
    // digits[t] = (yes, abstain); the rest of the type votes no.
    let mut digits = vec![(0usize, 0usize); t_count];
    let mut yes = [0u64; MAX_ATTRIBUTES];
    let mut no = [0u64; MAX_ATTRIBUTES];
    let mut abstain = [0u64; MAX_ATTRIBUTES];
    let sums = |digits: &[(usize, usize)],
                yes: &mut [u64; MAX_ATTRIBUTES],
                no: &mut [u64; MAX_ATTRIBUTES],
                ab: &mut [u64; MAX_ATTRIBUTES]| {
        for a in 0..attributes {
            let (mut y, mut n, mut b) = (0u64, 0u64, 0u64);
            for (t, &(dy, da)) in digits.iter().enumerate() {
                let w = rule.weight(a, types.representative(t));
                let c = types.size(t);
                y += w * dy as u64;
                b += w * da as u64;
                n += w * (c - dy - da) as u64;
            }
            yes[a] = y;
            no[a] = n;
            ab[a] = b;
        }
    };
    // Charged every CHUNK profiles: the group sums, the formula and, for
    // the ternary measure, one more evaluation per type.
    const CHUNK: u64 = 1024;
    let per = (attributes as u64 + 1) * (2 * t_count as u64 + 1)
        + (rule.atoms().len() + rule.formula().len()) as u64;
    meter.expect(u128::from(per).saturating_mul(profiles_of(types)));
    let mut visited: u64 = 0;
    loop {
        // After each full chunk, so a small run is never charged more than it costs.
        visited += 1;
        if visited % CHUNK == 0 {
            meter.charge(per * CHUNK)?;
        }
        sums(&digits, &mut yes, &mut no, &mut abstain);
        visit(
            &digits,
            &yes[..attributes],
            &no[..attributes],
            &abstain[..attributes],
        )?;
        // Advance: abstain count fastest, then yes count, type by type.
        let mut t = 0;
        loop {
            if t == t_count {
                return Ok(());
            }
            let c = types.size(t);
            let (y, a) = digits[t];
            if y + a < c {
                digits[t] = (y, a + 1);
                break;
            }
            if y < c {
                digits[t] = (y + 1, 0);
                break;
            }
            digits[t] = (0, 0);
            t += 1;
        }
    }
}

/// Exact ternary swing counts of every member.
pub fn ternary_banzhaf<W: AsRef<[u64]>, C: Counter>(rule: &Rule<W>) -> Result<TernaryPower<C>, Error> {
    ternary_banzhaf_metered(rule, &Meter::unlimited())
}

/// [`ternary_banzhaf`] charging `meter` for every batch of profiles visited.
pub fn ternary_banzhaf_metered<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    meter: &Meter<'_>,
) -> Result<TernaryPower<C>, Error> {
    let n = rule.members();
    let (mut order, mut starts) = (vec![0u32; rule.members()], vec![0u32; rule.members() + 1]);
    let types = grouped(rule, &mut order, &mut starts)?;
    // Binomial tables per type: C(c, k) for k = 0..=c.
    let binoms: Vec<Vec<C>> = (0..types.count)
        .map(|t| {
            let c = types.size(t) as u64;
            (0..=c).map(|k| binomial(c, k)).collect::<Result<Vec<C>, Error>>()
        })
        .collect::<Result<_, _>>()?;
    let mut per_type = vec![C::ZERO; types.count];
    let attributes = rule.attributes();
    for_each_profile(rule, &types, meter, |digits, yes, no, abstain| {
        if !rule.passes_with_group_sums(yes, no, abstain) {
            return Ok(());
        }
        // Multiplicity: Π C(c, y) C(c - y, a).
        let mut mult = C::ONE;
        for (t, &(y, a)) in digits.iter().enumerate() {
            let c = types.size(t);
            let second = binomial::<C>((c - y) as u64, a as u64)?;
            mult = mult.mul(binoms[t][y])?.mul(second)?;
        }
        for (t, &(y, _)) in digits.iter().enumerate() {
            if y == 0 {
                continue;
            }
            // Move one yes-voter of type t to no.
            let (mut y2, mut n2) = ([0u64; MAX_ATTRIBUTES], [0u64; MAX_ATTRIBUTES]);
            for a in 0..attributes {
                let w = rule.weight(a, types.representative(t));
                y2[a] = yes[a] - w;
                n2[a] = no[a] + w;
            }
            if rule.passes_with_group_sums(&y2[..attributes], &n2[..attributes], abstain) {
                continue;
            }
            // Ballots of this profile with one given member of type t voting yes.
            let (share, r) = mult.mul_u64(y as u64)?.div_rem_u64(types.size(t) as u64);
            debug_assert_eq!(r, 0);
            per_type[t] = per_type[t].add(share)?;
        }
        Ok(())
    })?;
    let mut swings = vec![C::ZERO; n];
    for t in 0..types.count {
        for &m in types.members(t) {
            swings[m as usize] = per_type[t];
        }
    }
    Ok(TernaryPower { swings, members: n })
}

fn ln_choose(n: usize, k: usize) -> f64 {
    libm::lgamma(n as f64 + 1.0) - libm::lgamma(k as f64 + 1.0) - libm::lgamma((n - k) as f64 + 1.0)
}

/// `k ln p`, with 0 for k = 0 (so a zero chance raised to the power 0 is 1).
fn ln_power(p: f64, k: usize) -> f64 {
    if k == 0 {
        0.0
    } else {
        k as f64 * libm::log(p)
    }
}

/// Probability that the rule passes when each member is present with
/// chance `attendance` and then votes yes or no with equal chance.
pub fn passage_with_attendance<W: AsRef<[u64]>>(rule: &Rule<W>, attendance: f64) -> Result<f64, Error> {
    passage_with_attendance_metered(rule, attendance, &Meter::unlimited())
}

/// [`passage_with_attendance`] charging `meter` for every batch of profiles visited.
pub fn passage_with_attendance_metered<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    attendance: f64,
    meter: &Meter<'_>,
) -> Result<f64, Error> {
    if !(0.0..=1.0).contains(&attendance) {
        return Err(Error::BadFraction {
            numerator: (attendance * 1000.0) as u64,
            denominator: 1000,
        });
    }
    let (mut order, mut starts) = (vec![0u32; rule.members()], vec![0u32; rule.members() + 1]);
    let types = grouped(rule, &mut order, &mut starts)?;
    let p_yes = attendance / 2.0;
    let p_absent = 1.0 - attendance;
    let mut total = 0.0;
    // Reuse the three-way profiles: the middle group stands for absent here.
    let empty = [0u64; MAX_ATTRIBUTES];
    for_each_profile(rule, &types, meter, |digits, yes, no, absent_sums| {
        let _ = absent_sums;
        if !rule.passes_with_group_sums(yes, no, &empty[..yes.len()]) {
            return Ok(());
        }
        // Multinomial weight times chances, in logarithms: counts reach
        // C(536, 268) and more.
        let mut log_prob = 0.0;
        for (t, &(y, a)) in digits.iter().enumerate() {
            let c = types.size(t);
            let n = c - y - a;
            log_prob += ln_choose(c, y) + ln_choose(c - y, a);
            log_prob += ln_power(p_yes, y + n) + ln_power(p_absent, a);
        }
        let prob = libm::exp(log_prob);
        total += prob;
        Ok(())
    })?;
    Ok(total)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::{count_allocating, Engine, Scope};
    use crate::fixtures::{four_state_form, four_state_rules};
    use crate::model::atom::Condition;
    use crate::model::ballot::{Ballot, Vote};
    use crate::model::rule::Node;
    use proptest::prelude::*;

    /// Whether `votes` pass `rule`, condition by condition as a ballot is
    /// read: an oracle independent of the profile sums.
    fn passes(rule: &Rule<Vec<u64>>, votes: &[Vote]) -> bool {
        let ballot = Ballot::<1>::from_votes(votes).unwrap();
        let mut sums = [[0u64; MAX_ATTRIBUTES]; 3];
        for (group, out) in [ballot.yes(), ballot.no(), ballot.abstain()]
            .into_iter()
            .zip(&mut sums)
        {
            rule.yes_sums(group, out).unwrap();
        }
        let [yes, no, abstain] = sums;
        rule.eval(|i| {
            let a = usize::from(rule.atoms()[i].attribute);
            match rule.linear(i) {
                Some(l) => l.holds(yes[a], no[a], abstain[a]),
                None => yes[a] >= rule.atoms()[i].quota,
            }
        })
    }

    fn votes_of(mut code: usize, n: usize, states: &[Vote]) -> Vec<Vote> {
        (0..n)
            .map(|_| {
                let v = states[code % states.len()];
                code /= states.len();
                v
            })
            .collect()
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 200, ..ProptestConfig::default() })]
        /// The profile computation equals a count over all 3^(n-1) ballots of the others.
        #[test]
        fn ternary_matches_enumeration(rule in four_state_rules()) {
            let n = rule.members();
            let fast = ternary_banzhaf::<_, u128>(&rule).unwrap();
            let states = [Vote::Yes, Vote::Abstain, Vote::No];
            for i in 0..n {
                let mut count = 0u128;
                for code in 0..3usize.pow(n as u32) {
                    let votes = votes_of(code, n, &states);
                    if votes[i] != Vote::Yes {
                        continue;
                    }
                    let mut other = votes.clone();
                    other[i] = Vote::No;
                    let pass_yes = passes(&rule, &votes);
                    let pass_no = passes(&rule, &other);
                    prop_assert!(pass_yes || !pass_no, "monotone in yes votes");
                    count += u128::from(pass_yes && !pass_no);
                }
                prop_assert_eq!(fast.swings[i], count, "member {}", i);
            }
        }

        /// Attendance: the profile sum equals the sum over all 3^n ballots
        /// (yes, no, absent) of their chances.
        #[test]
        fn attendance_matches_enumeration(rule in four_state_rules(), p in 0.0f64..=1.0) {
            let n = rule.members();
            let states = [Vote::Yes, Vote::No, Vote::Absent];
            let mut total = 0.0;
            for code in 0..3usize.pow(n as u32) {
                let votes = votes_of(code, n, &states);
                if passes(&rule, &votes) {
                    total += votes.iter().map(|v| if *v == Vote::Absent { 1.0 - p } else { p / 2.0 }).product::<f64>();
                }
            }
            let fast = passage_with_attendance(&rule, p).unwrap();
            prop_assert!((fast - total).abs() < 1e-12, "{} vs {}", fast, total);
            // Full attendance is the binary game's probability of passage.
            if p == 1.0 {
                let (binary, _) = count_allocating::<_, u128>(&rule, Engine::Enumerate, Scope::All, &crate::model::meter::Meter::unlimited()).unwrap();
                prop_assert!((fast - binary.passage_probability()).abs() < 1e-12);
            }
        }
    }

    #[test]
    fn full_attendance_of_an_odd_majority() {
        // Majority of 3 (common practice): passes half the time with everyone
        // present; with attendance p and "more yes than no among those
        // present", by symmetry P(pass) = (1 - P(tie)) / 2.
        let rule = Rule::with_conditions(
            3,
            vec![1u64; 3],
            &[Condition::Linear(four_state_form(0, 0))],
            &[Node::Atom(0)],
        )
        .unwrap();
        assert!((passage_with_attendance(&rule, 1.0).unwrap() - 0.5).abs() < 1e-15);
        // Ties (Y = N): nobody present (q^3), or one yes and one no with one
        // absent (3 * 2 * (p/2)^2 * q): P(tie) = q^3 + 1.5 p^2 q, q = 1 - p.
        let p = 0.6;
        let q = 1.0 - p;
        let expected = (1.0 - (q * q * q + 1.5 * p * p * q)) / 2.0;
        assert!((passage_with_attendance(&rule, p).unwrap() - expected).abs() < 1e-12);
        assert!(passage_with_attendance(&rule, 1.5).is_err());
    }
}
