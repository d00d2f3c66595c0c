//! An independent reading of a rule, for checking the library's answers:
//! sums in `u128`, conditions in `i128`, the postfix formula on a `Vec`
//! stack, swings by visiting every coalition. Slow and obviously right.

use clout_core::{Condition, Node, Rule};

/// The attribute sums over the members for which `yes` holds.
pub fn sums<W: AsRef<[u64]>>(rule: &Rule<W>, yes: impl Fn(usize) -> bool) -> Vec<u128> {
    (0..rule.attributes())
        .map(|a| {
            (0..rule.members())
                .filter(|&i| yes(i))
                .map(|i| u128::from(rule.weight(a, i)))
                .sum()
        })
        .collect()
}

/// Whether condition `c` holds for yes-, no- and abstain-sums of its attribute.
pub fn holds(c: Condition, yes: u128, no: u128, abstain: u128) -> bool {
    match c {
        Condition::Yes(atom) => yes >= u128::from(atom.quota),
        Condition::Linear(l) => {
            // |coefficient| < 2^31 and sums < 2^64: each product < 2^95.
            let lhs = i128::from(l.yes) * yes as i128
                + i128::from(l.no) * no as i128
                + i128::from(l.abstain) * abstain as i128;
            lhs >= l.bound
        }
    }
}

/// The formula's value, given each atom's truth; `None` if it is not one tree.
pub fn eval(formula: &[Node], atom: impl Fn(usize) -> bool) -> Option<bool> {
    let mut stack: Vec<bool> = Vec::new();
    for node in formula {
        match *node {
            Node::Atom(i) => stack.push(atom(usize::from(i))),
            Node::All(k) | Node::Any(k) => {
                let k = usize::from(k);
                if k == 0 || k > stack.len() {
                    return None;
                }
                let args = stack.split_off(stack.len() - k);
                let all = matches!(node, Node::All(_));
                stack.push(if all {
                    args.iter().all(|&b| b)
                } else {
                    args.iter().any(|&b| b)
                });
            }
        }
    }
    if stack.len() == 1 {
        stack.pop()
    } else {
        None
    }
}

/// Whether the yes-voters pass the rule when everyone else votes no.
pub fn passes<W: AsRef<[u64]>>(rule: &Rule<W>, yes: impl Fn(usize) -> bool) -> bool {
    let ys = sums(rule, yes);
    let totals = sums(rule, |_| true);
    eval(rule.formula(), |i| {
        let c = rule.condition(i).expect("atom index checked by the rule");
        let a = match c {
            Condition::Yes(x) => x.attribute,
            Condition::Linear(l) => l.attribute,
        };
        let a = usize::from(a);
        holds(c, ys[a], totals[a] - ys[a], 0)
    })
    .expect("a built rule is one tree")
}

/// Winning coalitions and each member's swings, by visiting all 2^n coalitions.
pub fn swings<W: AsRef<[u64]>>(rule: &Rule<W>) -> (u64, Vec<u64>) {
    let n = rule.members();
    assert!(n <= 16, "the oracle visits 2^n coalitions");
    let wins: Vec<bool> = (0..1u32 << n)
        .map(|m| passes(rule, |i| m >> i & 1 == 1))
        .collect();
    let winning = wins.iter().filter(|&&w| w).count() as u64;
    let swings = (0..n)
        .map(|i| {
            (0..1u32 << n)
                .filter(|m| m >> i & 1 == 1 && wins[*m as usize] && !wins[(m & !(1 << i)) as usize])
                .count() as u64
        })
        .collect();
    (winning, swings)
}
