//! The winning table of a rule over profiles of interchangeable members.
//!
//! Members are grouped into *types* (see [`interchangeable`]); a *profile*
//! gives, for each type t of c_t members, how many of them vote yes
//! (0..=c_t). Profiles are numbered in mixed radix: digit t has stride
//! Π_{s<t}(c_s + 1). The table keeps one winning bit per profile.
//!
//! Building visits the P = Π(c_t + 1) profiles in index order, updating the
//! attribute sums incrementally (an odometer: amortized O(attributes) per
//! step), and evaluates the formula once per profile: O(P (attributes +
//! nodes)) time, P / 8 bytes. P is checked against a limit before anything
//! is allocated. Sums never overflow: a profile's sum is at most the
//! attribute's total, which the core checked when it built the rule.
//!
//! Because members of one type are interchangeable, a profile wins exactly
//! when any coalition with that profile wins; with one member per type
//! ([`singletons`]) profiles are coalitions.

use std::collections::HashMap;

use clout_core::count::binomial;
use clout_core::{Counter, Rule, Wide};

use super::Error;

/// Members with identical weights in every attribute of the rule, grouped in
/// order of their first member.
pub fn interchangeable<W: AsRef<[u64]>>(rule: &Rule<W>) -> Vec<Vec<usize>> {
    group_by_key(rule.members(), |i| {
        (0..rule.attributes())
            .map(|a| rule.weight(a, i))
            .collect::<Vec<u64>>()
    })
}

/// Groups `0..n` by a key, in order of each group's first member.
pub fn group_by_key<K: std::hash::Hash + Eq>(n: usize, key: impl Fn(usize) -> K) -> Vec<Vec<usize>> {
    let mut index: HashMap<K, usize> = HashMap::new();
    let mut groups: Vec<Vec<usize>> = Vec::new();
    for i in 0..n {
        let k = *index.entry(key(i)).or_insert_with(|| {
            groups.push(Vec::new());
            groups.len() - 1
        });
        groups[k].push(i);
    }
    groups
}

/// Every member its own type: profiles are coalitions.
pub fn singletons(n: usize) -> Vec<Vec<usize>> {
    (0..n).map(|i| vec![i]).collect()
}

/// Π(c_t + 1), saturating at `u128::MAX`.
pub fn profile_count(types: &[Vec<usize>]) -> u128 {
    types
        .iter()
        .try_fold(1u128, |acc, t| acc.checked_mul(t.len() as u128 + 1))
        .unwrap_or(u128::MAX)
}

/// One winning bit per profile.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ProfileTable {
    types: Vec<Vec<usize>>,
    strides: Vec<usize>,
    len: usize,
    members: usize,
    winning: Vec<u64>,
}

impl ProfileTable {
    /// The table of `rule` over `types`, which must be interchangeable
    /// members of the rule (identical weight columns) covering every member
    /// once; at most `limit` profiles.
    pub fn of_rule<W: AsRef<[u64]>>(
        rule: &Rule<W>,
        types: Vec<Vec<usize>>,
        limit: usize,
    ) -> Result<Self, Error> {
        let k = rule.attributes();
        for t in &types {
            let first = t.first().copied().unwrap_or(0);
            if t.iter()
                .any(|&i| (0..k).any(|a| rule.weight(a, i) != rule.weight(a, first)))
            {
                return Err(Error::Mismatch(
                    "a type holds members with different weights".to_string(),
                ));
            }
        }
        // Weight of one member of each type, per attribute.
        let type_weights: Vec<Vec<u64>> = types
            .iter()
            .map(|t| (0..k).map(|a| rule.weight(a, t[0])).collect())
            .collect();
        let mut sums = vec![0u64; k];
        let mut table = Self::empty(types, rule.members(), limit)?;
        let sizes: Vec<usize> = table.types.iter().map(Vec::len).collect();
        let mut digits = vec![0usize; sizes.len()];
        for index in 0..table.len {
            if index > 0 {
                // Odometer step: the lowest digits that are full wrap to 0.
                let mut t = 0;
                while digits[t] == sizes[t] {
                    for (s, w) in sums.iter_mut().zip(&type_weights[t]) {
                        *s -= w * sizes[t] as u64;
                    }
                    digits[t] = 0;
                    t += 1;
                }
                digits[t] += 1;
                for (s, w) in sums.iter_mut().zip(&type_weights[t]) {
                    *s += w;
                }
            }
            if rule.passes_with_sums(&sums) {
                table.set(index);
            }
        }
        Ok(table)
    }

    /// The table of any monotone rule given as a function of the profile
    /// (the function is trusted to be monotone).
    pub fn from_fn(
        types: Vec<Vec<usize>>,
        members: usize,
        limit: usize,
        mut wins: impl FnMut(&[usize]) -> bool,
    ) -> Result<Self, Error> {
        let mut table = Self::empty(types, members, limit)?;
        let mut digits = vec![0usize; table.types.len()];
        for index in 0..table.len {
            table.digits_into(index, &mut digits);
            if wins(&digits) {
                table.set(index);
            }
        }
        Ok(table)
    }

    fn empty(types: Vec<Vec<usize>>, members: usize, limit: usize) -> Result<Self, Error> {
        let count = profile_count(&types);
        if count > limit as u128 {
            return Err(Error::TooLarge {
                profiles: count,
                limit,
            });
        }
        let len = count as usize;
        let mut strides = Vec::with_capacity(types.len());
        let mut stride = 1usize;
        for t in &types {
            strides.push(stride);
            stride *= t.len() + 1;
        }
        Ok(ProfileTable {
            types,
            strides,
            len,
            members,
            winning: vec![0u64; len.div_ceil(64)],
        })
    }

    fn set(&mut self, index: usize) {
        self.winning[index / 64] |= 1 << (index % 64);
    }

    /// The types, each a list of member indices.
    pub fn types(&self) -> &[Vec<usize>] {
        &self.types
    }

    /// Members of type `t`.
    pub fn size(&self, t: usize) -> usize {
        self.types[t].len()
    }

    /// Number of members of the rule.
    pub fn members(&self) -> usize {
        self.members
    }

    /// Number of profiles.
    pub fn len(&self) -> usize {
        self.len
    }

    /// Never: a table has at least the empty profile.
    pub fn is_empty(&self) -> bool {
        self.len == 0
    }

    /// Index step of one more member of type `t`.
    pub fn stride(&self, t: usize) -> usize {
        self.strides[t]
    }

    /// Whether profile `index` wins.
    pub fn wins(&self, index: usize) -> bool {
        self.winning[index / 64] >> (index % 64) & 1 == 1
    }

    /// The profile with this index.
    pub fn digits(&self, index: usize) -> Vec<usize> {
        let mut d = vec![0; self.types.len()];
        self.digits_into(index, &mut d);
        d
    }

    fn digits_into(&self, mut index: usize, digits: &mut [usize]) {
        for (t, d) in digits.iter_mut().enumerate() {
            let radix = self.types[t].len() + 1;
            *d = index % radix;
            index /= radix;
        }
    }

    /// The index of a profile.
    pub fn index(&self, digits: &[usize]) -> usize {
        digits.iter().zip(&self.strides).map(|(d, s)| d * s).sum()
    }

    /// Members in a coalition with this profile.
    pub fn head_count(&self, digits: &[usize]) -> usize {
        digits.iter().sum()
    }

    /// Winning profiles from which removing any one member loses.
    pub fn minimal_winning(&self) -> Vec<usize> {
        self.filter(|index, digits| {
            self.wins(index)
                && (0..digits.len()).all(|t| digits[t] == 0 || !self.wins(index - self.strides[t]))
        })
    }

    /// Losing profiles to which adding any one member wins.
    pub fn maximal_losing(&self) -> Vec<usize> {
        self.filter(|index, digits| {
            !self.wins(index)
                && (0..digits.len())
                    .all(|t| digits[t] == self.types[t].len() || self.wins(index + self.strides[t]))
        })
    }

    /// Indices of the profiles where `keep` holds, in index order.
    pub fn filter(&self, mut keep: impl FnMut(usize, &[usize]) -> bool) -> Vec<usize> {
        let mut out = Vec::new();
        self.each(|index, digits| {
            if keep(index, digits) {
                out.push(index);
            }
        });
        out
    }

    /// Calls `f(index, profile)` for every profile in index order (an
    /// odometer, no allocation per profile).
    pub fn each(&self, mut f: impl FnMut(usize, &[usize])) {
        let mut digits = vec![0usize; self.types.len()];
        for index in 0..self.len {
            if index > 0 {
                let mut t = 0;
                while digits[t] == self.types[t].len() {
                    digits[t] = 0;
                    t += 1;
                }
                digits[t] += 1;
            }
            f(index, &digits);
        }
    }

    /// A coalition with this profile: the first members of each type.
    pub fn coalition(&self, digits: &[usize]) -> Vec<usize> {
        let mut out: Vec<usize> = self
            .types
            .iter()
            .zip(digits)
            .flat_map(|(t, &d)| t[..d].iter().copied())
            .collect();
        out.sort_unstable();
        out
    }

    /// The exact number of coalitions with this profile, Π C(c_t, x_t), in decimal.
    pub fn coalitions_with(&self, digits: &[usize]) -> Result<String, Error> {
        self.coalitions_in(&[digits.to_vec()])
    }

    /// The exact number of coalitions with any of these profiles, in decimal.
    pub fn coalitions_in(&self, profiles: &[Vec<usize>]) -> Result<String, Error> {
        // Counts reach 2^n: n + 64 bits always suffice.
        match self.members + 64 {
            0..=1024 => self.count_in::<Wide<16>>(profiles),
            1025..=4096 => self.count_in::<Wide<64>>(profiles),
            _ => self.count_in::<Wide<1025>>(profiles),
        }
    }

    fn count_in<C: Counter>(&self, profiles: &[Vec<usize>]) -> Result<String, Error> {
        let mut total = C::ZERO;
        for digits in profiles {
            let mut product = C::ONE;
            for (t, &d) in digits.iter().enumerate() {
                let b: C = binomial(self.types[t].len() as u64, d as u64)?;
                product = product.mul(b)?;
            }
            total = total.add(product)?;
        }
        Ok(total.to_string())
    }
}

/// Turns profiles into coalitions so that, over any sequence of profiles
/// with the same total per type, every member is used equally often:
/// members of each type are taken in cyclic order from a cursor, so member
/// k of a type of c members is used floor(N / c) + [k < N mod c] times
/// after N picks, whatever the sequence.
#[derive(Clone, Debug)]
pub struct Cyclic<'a> {
    types: &'a [Vec<usize>],
    cursors: Vec<usize>,
}

impl<'a> Cyclic<'a> {
    /// Cursors at the first member of every type.
    pub fn new(types: &'a [Vec<usize>]) -> Self {
        Cyclic {
            types,
            cursors: vec![0; types.len()],
        }
    }

    /// The next coalition with this profile, members ascending.
    pub fn take(&mut self, digits: &[usize]) -> Vec<usize> {
        let mut out = Vec::new();
        for (t, &d) in digits.iter().enumerate() {
            let members = &self.types[t];
            for _ in 0..d {
                out.push(members[self.cursors[t]]);
                self.cursors[t] = (self.cursors[t] + 1) % members.len();
            }
        }
        out.sort_unstable();
        out
    }
}

/// Whether a coalition (member indices) passes the rule, with exact sums.
pub fn passes<W: AsRef<[u64]>>(rule: &Rule<W>, coalition: &[usize]) -> bool {
    let sums: Vec<u64> = (0..rule.attributes())
        .map(|a| {
            let row = rule.attribute_weights(a);
            // Bounded by the attribute's total, checked by the core.
            coalition.iter().map(|&i| row.get(i).copied().unwrap_or(0)).sum()
        })
        .collect();
    rule.passes_with_sums(&sums)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn table_matches_coalitions() {
        // [5; 3, 2, 2, 1]: by hand, the minimal winning coalitions are
        // {0,1}, {0,2}, {1,2,3}; the maximal losing {1,2}, {0,3}, {1,3}, {2,3}.
        let rule = Rule::weighted(5, vec![3u64, 2, 2, 1]).unwrap();
        let single = ProfileTable::of_rule(&rule, singletons(4), 1 << 10).unwrap();
        let mw: Vec<Vec<usize>> = single
            .minimal_winning()
            .into_iter()
            .map(|i| single.coalition(&single.digits(i)))
            .collect();
        assert_eq!(mw, vec![vec![0, 1], vec![0, 2], vec![1, 2, 3]]);
        let ml: Vec<Vec<usize>> = single
            .maximal_losing()
            .into_iter()
            .map(|i| single.coalition(&single.digits(i)))
            .collect();
        assert_eq!(ml, vec![vec![1, 2], vec![0, 3], vec![1, 3], vec![2, 3]]);
        // Grouped: types {0}, {1, 2}, {3}; profiles 2 * 3 * 2.
        let types = interchangeable(&rule);
        assert_eq!(types, vec![vec![0], vec![1, 2], vec![3]]);
        let grouped = ProfileTable::of_rule(&rule, types, 1 << 10).unwrap();
        assert_eq!(grouped.len(), 12);
        for index in 0..grouped.len() {
            let d = grouped.digits(index);
            assert_eq!(grouped.index(&d), index);
            assert_eq!(grouped.wins(index), passes(&rule, &grouped.coalition(&d)));
        }
        assert_eq!(grouped.coalitions_with(&[1, 1, 0]).unwrap(), "2");
        assert_eq!(
            ProfileTable::of_rule(&rule, singletons(4), 8).unwrap_err(),
            Error::TooLarge {
                profiles: 16,
                limit: 8
            }
        );
    }

    #[test]
    fn cyclic_uses_members_equally() {
        let types = vec![vec![0, 1, 2], vec![3, 4]];
        let mut a = Cyclic::new(&types);
        let mut b = Cyclic::new(&types);
        let left: Vec<Vec<usize>> = [[2, 1], [2, 2]].iter().map(|d| a.take(d)).collect();
        let right: Vec<Vec<usize>> = [[3, 0], [1, 2], [0, 1]].iter().map(|d| b.take(d)).collect();
        let uses = |cs: &[Vec<usize>]| {
            let mut u = [0; 5];
            cs.iter().flatten().for_each(|&m| u[m] += 1);
            u
        };
        assert_eq!(uses(&left), uses(&right));
        assert_eq!(left[0], vec![0, 1, 3]);
    }
}
