//! Are two rules over the same members the same simple game (the same
//! coalitions pass)? If not, a smallest coalition on which they differ.
//!
//! Both rules are tabulated over the types of members interchangeable in
//! *both* (identical weight columns in each), and the tables are compared
//! profile by profile: an exact decision in O(P (m + atoms + nodes)) for P
//! profiles. The differing profile with the fewest members gives a smallest
//! witness. Beyond [`PROFILE_LIMIT`] profiles the comparison samples
//! coalitions (seeded, deterministic) and can only find a difference, which it
//! then shrinks member by member; it never claims sameness it did not check.

use clout_core::Rule;

use super::profile::{self, group_by_key, ProfileTable};
use super::{Error, PROFILE_LIMIT};
use crate::scenarios::Lcg;

/// Random coalitions tried when the rules are too large to tabulate.
pub const SAMPLES: usize = 200_000;

/// The answer.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Equivalence {
    /// The same coalitions pass, checked on every profile (every coalition).
    Same {
        /// Profiles compared.
        profiles: usize,
    },
    /// A coalition on which the rules differ.
    Different {
        /// Its members, ascending, in the first rule's numbering.
        coalition: Vec<usize>,
        /// Whether the first rule passes it (the second then does not).
        first_passes: bool,
        /// No smaller coalition differs (false for a sampled witness, which is
        /// only minimal under removing one member).
        smallest: bool,
    },
    /// Too large to tabulate, and no difference among the sampled coalitions.
    Undecided {
        /// Profiles a table would need.
        profiles: u128,
        /// Coalitions sampled.
        sampled: usize,
    },
}

/// The rule with members renumbered: member i of the result is member
/// `order[i]` of `rule` (the binary game; four-state forms become their
/// yes/no quotas).
pub fn reorder<W: AsRef<[u64]>>(rule: &Rule<W>, order: &[usize]) -> Result<Rule<Vec<u64>>, Error> {
    let n = rule.members();
    if order.len() != n || order.iter().any(|&j| j >= n) {
        return Err(Error::Mismatch(
            "the member order does not fit the rule".to_string(),
        ));
    }
    let mut weights = Vec::with_capacity(n * rule.attributes());
    for a in 0..rule.attributes() {
        weights.extend(order.iter().map(|&j| rule.weight(a, j)));
    }
    Ok(Rule::new(n, weights, rule.atoms(), rule.formula())?)
}

/// Compares two rules with the same members in the same order.
pub fn compare<A: AsRef<[u64]>, B: AsRef<[u64]>>(a: &Rule<A>, b: &Rule<B>) -> Result<Equivalence, Error> {
    let n = a.members();
    if b.members() != n {
        return Err(Error::Mismatch(format!(
            "the rules have {n} and {} members",
            b.members()
        )));
    }
    let column =
        |r: &dyn Fn(usize, usize) -> u64, k: usize, i: usize| (0..k).map(|x| r(x, i)).collect::<Vec<u64>>();
    let types = group_by_key(n, |i| {
        (
            column(&|x, j| a.weight(x, j), a.attributes(), i),
            column(&|x, j| b.weight(x, j), b.attributes(), i),
        )
    });
    let profiles = profile::profile_count(&types);
    if profiles > PROFILE_LIMIT as u128 {
        return Ok(sampled(a, b, profiles));
    }
    let ta = ProfileTable::of_rule(a, types.clone(), PROFILE_LIMIT)?;
    let tb = ProfileTable::of_rule(b, types, PROFILE_LIMIT)?;
    let mut best: Option<(usize, Vec<usize>, bool)> = None;
    ta.each(|i, d| {
        if ta.wins(i) != tb.wins(i) {
            let size = ta.head_count(d);
            if best.as_ref().is_none_or(|(s, _, _)| size < *s) {
                best = Some((size, d.to_vec(), ta.wins(i)));
            }
        }
    });
    Ok(match best {
        None => Equivalence::Same { profiles: ta.len() },
        Some((_, digits, first_passes)) => Equivalence::Different {
            coalition: ta.coalition(&digits),
            first_passes,
            smallest: true,
        },
    })
}

fn sampled<A: AsRef<[u64]>, B: AsRef<[u64]>>(a: &Rule<A>, b: &Rule<B>, profiles: u128) -> Equivalence {
    let n = a.members();
    let differ = |c: &[usize]| profile::passes(a, c) != profile::passes(b, c);
    let mut rng = Lcg(0x0063_6c6f_7574);
    for _ in 0..SAMPLES {
        let mut c: Vec<usize> = (0..n).filter(|_| rng.next_u64() & 1 == 1).collect();
        if !differ(&c) {
            continue;
        }
        // Shrink: drop every member whose removal keeps the difference.
        let mut k = 0;
        while k < c.len() {
            let mut smaller = c.clone();
            smaller.remove(k);
            if differ(&smaller) {
                c = smaller;
            } else {
                k += 1;
            }
        }
        let first_passes = profile::passes(a, &c);
        return Equivalence::Different {
            coalition: c,
            first_passes,
            smallest: false,
        };
    }
    Equivalence::Undecided {
        profiles,
        sampled: SAMPLES,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn same_and_different() {
        // [3; 2, 1, 1] and [5; 3, 2, 2] are the same game (by hand: the
        // first member and any other); [4; 2, 1, 1] is not: {0, 1} differs.
        let a = Rule::weighted(3, vec![2u64, 1, 1]).unwrap();
        let b = Rule::weighted(5, vec![3u64, 2, 2]).unwrap();
        let c = Rule::weighted(4, vec![2u64, 1, 1]).unwrap();
        // Types {0} and {1, 2}: 2 * 3 profiles.
        assert_eq!(compare(&a, &b).unwrap(), Equivalence::Same { profiles: 6 });
        assert_eq!(
            compare(&a, &c).unwrap(),
            Equivalence::Different {
                coalition: vec![0, 1],
                first_passes: true,
                smallest: true
            }
        );
        // Renumbered: member 0 of the result is member 2 of `a`.
        let r = reorder(&a, &[2, 1, 0]).unwrap();
        assert_eq!(r.attribute_weights(0), &[1, 1, 2]);
    }
}
