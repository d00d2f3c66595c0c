//! Isbell's desirability relation: member i is at least as desirable as j
//! when, for every coalition S holding neither, S + j winning implies
//! S + i winning (Isbell 1958). Members desirable both ways are symmetric
//! (interchangeable in the rule's outcomes); the relation orders their
//! classes by influence. It is complete (any two members comparable) in every
//! weighted game, so an incomplete order shows at once that a rule is not
//! weighted (Taylor & Zwicker 1999).
//!
//! Computed on a profile table: members of one type are symmetric; for two
//! types t and u, every profile x with a member of each left out is
//! checked: x + (one of u) winning and x + (one of t) losing is a witness
//! against "t at least as desirable as u". O(m^2 P) time for m types and P
//! profiles, no allocation per profile.

use super::profile::ProfileTable;

/// A coalition S (members ascending, holding neither member) with S + `better`
/// losing although S + `worse` wins: `better` is not at least as desirable.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Witness {
    /// The coalition.
    pub coalition: Vec<usize>,
    /// The member whose joining wins.
    pub joins_and_wins: usize,
    /// The member whose joining loses.
    pub joins_and_loses: usize,
}

/// The desirability order of a rule's members.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Order {
    /// Classes of symmetric members (ascending), most desirable first: a
    /// class comes before every class it is strictly more desirable than.
    pub classes: Vec<Vec<usize>>,
    /// `above[a][b]`: class `a` is at least as desirable as class `b`.
    pub above: Vec<Vec<bool>>,
    /// Pairs of classes that are not comparable, each with two witnesses
    /// (one for each direction).
    pub incomparable: Vec<(usize, usize, Witness, Witness)>,
}

impl Order {
    /// Whether every two members are comparable.
    pub fn complete(&self) -> bool {
        self.incomparable.is_empty()
    }

    /// Whether class `a` is strictly more desirable than class `b`.
    pub fn strictly_above(&self, a: usize, b: usize) -> bool {
        self.above[a][b] && !self.above[b][a]
    }
}

/// The desirability order on the table's rule.
pub fn order(table: &ProfileTable) -> Order {
    let m = table.types().len();
    // against[t][u]: a witness that t is not at least as desirable as u.
    let against: Vec<Vec<Option<Witness>>> = (0..m)
        .map(|t| {
            (0..m)
                .map(|u| if t == u { None } else { witness(table, t, u) })
                .collect()
        })
        .collect();
    // Symmetric types merge into classes (the relation is transitive).
    let mut class_of: Vec<Option<usize>> = vec![None; m];
    let mut class_types: Vec<Vec<usize>> = Vec::new();
    for t in 0..m {
        if class_of[t].is_some() {
            continue;
        }
        let c = class_types.len();
        let members: Vec<usize> = (t..m)
            .filter(|&u| u == t || (against[t][u].is_none() && against[u][t].is_none()))
            .collect();
        for &u in &members {
            class_of[u] = Some(c);
        }
        class_types.push(members);
    }
    let k = class_types.len();
    let rep: Vec<usize> = class_types.iter().map(|c| c[0]).collect();
    let ge = |a: usize, b: usize| a == b || against[rep[a]][rep[b]].is_none();
    // Most desirable first: more classes below, then the lower first member.
    let below = |a: usize| (0..k).filter(|&b| b != a && ge(a, b) && !ge(b, a)).count();
    let mut sorted: Vec<usize> = (0..k).collect();
    sorted.sort_by_key(|&a| (std::cmp::Reverse(below(a)), rep[a]));
    let classes: Vec<Vec<usize>> = sorted
        .iter()
        .map(|&a| {
            let mut members: Vec<usize> = class_types[a]
                .iter()
                .flat_map(|&t| table.types()[t].iter().copied())
                .collect();
            members.sort_unstable();
            members
        })
        .collect();
    let above: Vec<Vec<bool>> = sorted
        .iter()
        .map(|&a| sorted.iter().map(|&b| ge(a, b)).collect())
        .collect();
    let mut incomparable = Vec::new();
    for (x, &a) in sorted.iter().enumerate() {
        for (y, &b) in sorted.iter().enumerate().skip(x + 1) {
            if let (Some(w1), Some(w2)) = (&against[rep[a]][rep[b]], &against[rep[b]][rep[a]]) {
                incomparable.push((x, y, w1.clone(), w2.clone()));
            }
        }
    }
    Order {
        classes,
        above,
        incomparable,
    }
}

/// A profile x (one member of t and one of u left out) with x + u winning
/// and x + t losing, as a witness that t is not at least as desirable as u.
fn witness(table: &ProfileTable, t: usize, u: usize) -> Option<Witness> {
    let (st, su) = (table.stride(t), table.stride(u));
    let (ct, cu) = (table.size(t), table.size(u));
    let mut found = None;
    table.each(|i, d| {
        if found.is_none() && d[t] < ct && d[u] < cu && table.wins(i + su) && !table.wins(i + st) {
            found = Some(d.to_vec());
        }
    });
    let digits = found?;
    // Realize: S takes the first members of each type, skipping the two
    // members who join (the last of t and of u).
    let joins_and_wins = *table.types()[u].last()?;
    let joins_and_loses = *table.types()[t].last()?;
    Some(Witness {
        coalition: table.coalition(&digits),
        joins_and_wins,
        joins_and_loses,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::toolkit::profile::{interchangeable, singletons};
    use clout_core::Rule;

    #[test]
    fn weighted_order_is_complete() {
        // [5; 3, 2, 2, 1]: 0 > {1, 2} > 3 by hand: {0,2} wins where {1,2}
        // loses, {0,1} wins where {0,3} loses, and 1, 2 have equal weights.
        let rule = Rule::weighted(5, vec![3u64, 2, 2, 1]).unwrap();
        for types in [singletons(4), interchangeable(&rule)] {
            let table = ProfileTable::of_rule(&rule, types, 1 << 10).unwrap();
            let o = order(&table);
            assert!(o.complete());
            assert_eq!(o.classes, vec![vec![0], vec![1, 2], vec![3]]);
            assert!(o.strictly_above(0, 1) && o.strictly_above(1, 2));
        }
    }

    #[test]
    fn incomplete_order_has_witnesses() {
        // (a and b) or (c and d): a and b are symmetric, so are c and d, and
        // a and c are not comparable ({b} + a wins, {b} + c loses; {d} + c
        // wins, {d} + a loses), by hand.
        let wins = |d: &[usize]| (d[0] == 1 && d[1] == 1) || (d[2] == 1 && d[3] == 1);
        let table = ProfileTable::from_fn(singletons(4), 4, 1 << 10, wins).unwrap();
        let o = order(&table);
        assert!(!o.complete());
        assert_eq!(o.classes, vec![vec![0, 1], vec![2, 3]]);
        assert_eq!(o.incomparable.len(), 1);
        for (_, _, w1, w2) in &o.incomparable {
            for w in [w1, w2] {
                assert!(!w.coalition.contains(&w.joins_and_wins));
                let mut yes = w.coalition.clone();
                yes.push(w.joins_and_wins);
                let mut no = w.coalition.clone();
                no.push(w.joins_and_loses);
                let profile = |c: &[usize]| {
                    let mut d = vec![0; 4];
                    c.iter().for_each(|&i| d[i] = 1);
                    d
                };
                assert!(wins(&profile(&yes)) && !wins(&profile(&no)));
            }
        }
    }
}
