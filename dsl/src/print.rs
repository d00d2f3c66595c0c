//! A compiled rule back to text.
//!
//! [`print_rule`] writes any [`Rule`] as a rule file: attributes `a1..ak`,
//! members `m1..` (runs of identical neighbours as one `members gK_ xN`
//! line), and one `rule printed = ...` whose conditions are `aK >= quota`.
//! Every operator is parenthesized inside another, so the tree shape is kept.
//! When each atom is used once, in index order, conditions are written
//! inline; otherwise each atom becomes `define cK = ...` and the rule refers
//! to the definitions.
//!
//! Four-state conditions print as `aK G >= k` or `aK G1 >= p/q of G2`
//! (the shapes the compiler produces, after reduction by the gcd).
//!
//! Compiling the text gives back the same rule for every rule the compiler
//! produces (atoms numbered in order of first use, operators with at least
//! two operands, quotas between 1 and their attribute's total). O(members *
//! attributes + nodes) time.

use std::fmt::Write;

use clout_core::{Linear, Node, Rule};

enum Tree {
    Atom(u16),
    All(Vec<Tree>),
    Any(Vec<Tree>),
}

/// The rule as a rule file.
pub fn print_rule<W: AsRef<[u64]>>(rule: &Rule<W>) -> String {
    let mut out = String::from("# printed by clout-dsl\n");
    print_members(rule, &mut out);
    let Some(tree) = tree(rule.formula()) else {
        return out;
    };
    let mut order = Vec::new();
    leaves(&tree, &mut order);
    let inline =
        order.len() == rule.atoms().len() && order.iter().enumerate().all(|(k, &a)| usize::from(a) == k);
    let atom_text = |i: u16| {
        let atom = rule.atoms()[usize::from(i)];
        match rule.linear(usize::from(i)).and_then(|l| four_state_text(&l)) {
            Some(text) => text,
            None => format!("a{} >= {}", atom.attribute + 1, atom.quota),
        }
    };
    if !inline {
        for i in 0..rule.atoms().len() {
            let _ = writeln!(out, "define c{} = {}", i + 1, atom_text(i as u16));
        }
    }
    let leaf = |i: u16| {
        if inline {
            atom_text(i)
        } else {
            format!("c{}", i + 1)
        }
    };
    let _ = writeln!(out, "rule printed = {}", expression(&tree, &leaf, true));
    out
}

const GROUPS: [(&str, [i128; 3]); 5] = [
    ("yes", [1, 0, 0]),
    ("no", [0, 1, 0]),
    ("abstain", [0, 0, 1]),
    ("cast", [1, 1, 0]),
    ("present", [1, 1, 1]),
];

/// A four-state condition in the language, for the two shapes the compiler
/// produces: `aK G >= k` (or `<=`) and `aK G1 >= p/q of G2` (or `>`). `None` for
/// other coefficient vectors.
fn four_state_text(l: &Linear) -> Option<String> {
    let a = l.attribute + 1;
    let v = [i128::from(l.yes), i128::from(l.no), i128::from(l.abstain)];
    for (name, g) in GROUPS {
        if v == g {
            return Some(format!("a{a} {name} >= {}", l.bound));
        }
        if v == g.map(|x| -x) {
            return Some(format!("a{a} {name} <= {}", -l.bound));
        }
    }
    // `>=` compiles to bound 0 and `>` to bound 1 (kept by the gcd reduction).
    let op = match l.bound {
        0 => ">=",
        1 => ">",
        _ => return None,
    };
    // v = q g1 - p g2 with 0 < p <= q.
    for (n1, g1) in GROUPS {
        for (n2, g2) in GROUPS {
            for q in 1..=1000i128 {
                let Some(i) = (0..3).find(|&i| g2[i] != 0) else {
                    continue;
                };
                let p = q * g1[i] - v[i];
                if p <= 0 || p > q || p % g2[i] != 0 {
                    continue;
                }
                let p = p / g2[i];
                if (0..3).all(|k| q * g1[k] - p * g2[k] == v[k]) {
                    return Some(format!("a{a} {n1} {op} {p}/{q} of {n2}"));
                }
            }
        }
    }
    None
}

fn print_members<W: AsRef<[u64]>>(rule: &Rule<W>, out: &mut String) {
    let n = rule.members();
    let k = rule.attributes();
    let same = |i: usize, j: usize| (0..k).all(|a| rule.weight(a, i) == rule.weight(a, j));
    let mut i = 0;
    let mut groups = 0;
    while i < n {
        let mut run = 1;
        while i + run < n && same(i, i + run) {
            run += 1;
        }
        if run > 1 {
            groups += 1;
            let _ = write!(out, "members g{groups}_ x{run}");
        } else {
            let _ = write!(out, "member m{}", i + 1);
        }
        for a in 0..k {
            let w = rule.weight(a, i);
            // The first line names every attribute so that their order is kept.
            if w != 0 || i == 0 {
                let _ = write!(out, " a{}={w}", a + 1);
            }
        }
        out.push('\n');
        i += run;
    }
}

fn tree(formula: &[Node]) -> Option<Tree> {
    let mut stack: Vec<Tree> = Vec::new();
    for node in formula {
        match *node {
            Node::Atom(i) => stack.push(Tree::Atom(i)),
            Node::All(k) | Node::Any(k) => {
                let at = stack.len().checked_sub(usize::from(k))?;
                let operands = stack.split_off(at);
                stack.push(match node {
                    Node::All(_) => Tree::All(operands),
                    _ => Tree::Any(operands),
                });
            }
        }
    }
    stack.pop()
}

fn leaves(t: &Tree, out: &mut Vec<u16>) {
    match t {
        Tree::Atom(i) => out.push(*i),
        Tree::All(v) | Tree::Any(v) => v.iter().for_each(|x| leaves(x, out)),
    }
}

fn expression(t: &Tree, leaf: &impl Fn(u16) -> String, top: bool) -> String {
    let (operands, word) = match t {
        Tree::Atom(i) => return leaf(*i),
        Tree::All(v) => (v, " and "),
        Tree::Any(v) => (v, " or "),
    };
    let inner: Vec<String> = operands.iter().map(|x| expression(x, leaf, false)).collect();
    let joined = inner.join(word);
    if top {
        joined
    } else {
        format!("({joined})")
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use clout_core::fixtures::{two_tier, two_tier_atoms};

    #[test]
    fn prints_groups_inline_conditions_and_definitions() {
        // Two attributes; members 2 and 3 identical; (a1 >= 3 and a2 >= 1) or a1 >= 5.
        let rule = two_tier(4, vec![3, 1, 1, 0, 0, 2, 2, 1], [3, 1, 5]).unwrap();
        assert_eq!(
            print_rule(&rule),
            "# printed by clout-dsl\n\
             member m1 a1=3 a2=0\n\
             members g1_ x2 a1=1 a2=2\n\
             member m4 a2=1\n\
             rule printed = (a1 >= 3 and a2 >= 1) or a1 >= 5\n"
        );
        // An atom used twice is written once, as a definition.
        let formula = [
            Node::Atom(0),
            Node::Atom(1),
            Node::Atom(0),
            Node::Any(2),
            Node::All(2),
        ];
        let rule = Rule::new(
            4,
            vec![3, 1, 1, 0, 0, 2, 2, 1],
            &two_tier_atoms([3, 1, 5])[..2],
            &formula,
        )
        .unwrap();
        assert!(print_rule(&rule)
            .ends_with("define c1 = a1 >= 3\ndefine c2 = a2 >= 1\nrule printed = c1 and (c2 or c1)\n"));
    }
}

#[cfg(test)]
mod four_state_tests {
    use crate::compile;

    /// Four-state rules print and compile back to the same rule.
    #[test]
    fn four_state_round_trip() {
        for cond in [
            "seats yes >= 2/3 of cast",
            "seats yes > 1/2 of cast",
            "count present >= 1/3",
            "seats yes > seats no",
            "count no < 3",
            "count yes >= 2/3 of present",
            "seats yes >= 62.5% of cast",
        ] {
            let src = format!(
                "member a seats=3\nmember b seats=2\nmember c seats=2\nmember d seats=1\nrule r = {cond}\n"
            );
            let file = compile(&src).unwrap_or_else(|e| panic!("{cond}: {e:?}"));
            let rule = &file.rules[0].rule;
            let printed = crate::print_rule(rule);
            let again = compile(&printed).unwrap_or_else(|e| panic!("{cond}: {printed}\n{e:?}"));
            assert_eq!(&again.rules[0].rule, rule, "{cond} printed as\n{printed}");
        }
    }
}
