//! Minimal winning and minimal blocking coalitions, as patterns over types
//! of interchangeable members and, on request, one by one.
//!
//! A pattern is a profile ("any 218 of the 435 representatives and the
//! executive"); it stands for Π C(c_t, x_t) coalitions, counted exactly. A
//! coalition *blocks* when the others cannot pass without it (its
//! complement loses); the minimal blocking coalitions are the complements
//! of the maximal losing ones. Patterns come from one scan of the profile
//! table (O(P m)); expanding a pattern lists its coalitions in
//! lexicographic order, O(n) per coalition, up to a caller's limit.

use super::profile::ProfileTable;
use super::Error;

/// Which coalitions to list.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Kind {
    /// Winning, and losing without any one of its members.
    MinimalWinning,
    /// Blocking, and not without any one of its members.
    MinimalBlocking,
}

/// Patterns of one kind and how many coalitions they stand for.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Listing {
    /// Profiles, fewest members first (then in table order).
    pub patterns: Vec<Vec<usize>>,
    /// Coalitions in all patterns, exact decimal.
    pub total: String,
}

/// The minimal winning or minimal blocking patterns of the table's rule.
pub fn list(table: &ProfileTable, kind: Kind) -> Result<Listing, Error> {
    let mut patterns: Vec<Vec<usize>> = match kind {
        Kind::MinimalWinning => table.minimal_winning().iter().map(|&i| table.digits(i)).collect(),
        Kind::MinimalBlocking => table
            .maximal_losing()
            .iter()
            .map(|&i| {
                let d = table.digits(i);
                d.iter().enumerate().map(|(t, &x)| table.size(t) - x).collect()
            })
            .collect(),
    };
    patterns.sort_by_key(|d| (d.iter().sum::<usize>(), table.index(d)));
    let total = table.coalitions_in(&patterns)?;
    Ok(Listing { patterns, total })
}

/// The coalitions with this profile, lexicographic within each type, at
/// most `limit` of them.
pub fn expand(table: &ProfileTable, digits: &[usize], limit: usize) -> Vec<Vec<usize>> {
    // One k-subset of each type, as positions within the type.
    let mut picks: Vec<Vec<usize>> = digits.iter().map(|&d| (0..d).collect()).collect();
    let mut out = Vec::new();
    while out.len() < limit {
        let mut c: Vec<usize> = picks
            .iter()
            .enumerate()
            .flat_map(|(t, p)| p.iter().map(move |&k| table.types()[t][k]))
            .collect();
        c.sort_unstable();
        out.push(c);
        // Next combination: advance the first type that can, reset the earlier ones.
        let mut t = 0;
        loop {
            if t == picks.len() {
                return out;
            }
            if next_combination(&mut picks[t], table.size(t)) {
                break;
            }
            picks[t] = (0..digits[t]).collect();
            t += 1;
        }
    }
    out
}

/// Advances a strictly increasing k-subset of 0..n; false after the last.
fn next_combination(p: &mut [usize], n: usize) -> bool {
    let k = p.len();
    let Some(i) = (0..k).rev().find(|&i| p[i] < n - k + i) else {
        return false;
    };
    p[i] += 1;
    for j in i + 1..k {
        p[j] = p[j - 1] + 1;
    }
    true
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::toolkit::profile::interchangeable;
    use clout_core::Rule;

    #[test]
    fn patterns_and_coalitions() {
        // [5; 3, 2, 2, 1]: minimal winning {0,1}, {0,2}, {1,2,3} (3 coalitions,
        // 2 patterns over the types {0}, {1,2}, {3}); maximal losing {1,2},
        // {0,3}, {1,3}, {2,3}, so minimal blocking {0,3}, {1,2}, {0,2}, {0,1}
        // (by hand).
        let rule = Rule::weighted(5, vec![3u64, 2, 2, 1]).unwrap();
        let table = ProfileTable::of_rule(&rule, interchangeable(&rule), 1 << 10).unwrap();
        let w = list(&table, Kind::MinimalWinning).unwrap();
        assert_eq!(w.patterns, vec![vec![1, 1, 0], vec![0, 2, 1]]);
        assert_eq!(w.total, "3");
        let all: Vec<Vec<usize>> = w.patterns.iter().flat_map(|p| expand(&table, p, 10)).collect();
        assert_eq!(all, vec![vec![0, 1], vec![0, 2], vec![1, 2, 3]]);
        let b = list(&table, Kind::MinimalBlocking).unwrap();
        assert_eq!(b.total, "4");
        let blocking: Vec<Vec<usize>> = b.patterns.iter().flat_map(|p| expand(&table, p, 10)).collect();
        assert_eq!(blocking, vec![vec![0, 1], vec![0, 2], vec![1, 2], vec![0, 3]]);
        assert_eq!(expand(&table, &[0, 1, 0], 1), vec![vec![1]]);
    }
}
