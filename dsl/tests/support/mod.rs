//! Random rules of the kind the compiler produces (atoms numbered in order
//! of first use, operators of two or more operands, quotas between 1 and
//! the attribute's total), shared by the language's and the CLI's property
//! tests.

use clout_core::{Atom, Node, Rule};
use proptest::prelude::*;

#[derive(Clone, Debug)]
enum Tree {
    Leaf(u8),
    All(Vec<Tree>),
    Any(Vec<Tree>),
}

fn trees() -> impl Strategy<Value = Tree> {
    (0u8..6).prop_map(Tree::Leaf).prop_recursive(3, 16, 3, |inner| {
        prop_oneof![
            prop::collection::vec(inner.clone(), 2..4).prop_map(Tree::All),
            prop::collection::vec(inner, 2..4).prop_map(Tree::Any),
        ]
    })
}

/// Postfix nodes with atoms numbered in order of first use (as the compiler numbers them).
fn lower(t: &Tree, first_use: &mut Vec<u8>, nodes: &mut Vec<Node>) {
    match t {
        Tree::Leaf(l) => {
            let k = first_use.iter().position(|x| x == l).unwrap_or_else(|| {
                first_use.push(*l);
                first_use.len() - 1
            });
            nodes.push(Node::Atom(k as u16));
        }
        Tree::All(v) | Tree::Any(v) => {
            for x in v {
                lower(x, first_use, nodes);
            }
            let k = v.len() as u16;
            nodes.push(if matches!(t, Tree::All(_)) {
                Node::All(k)
            } else {
                Node::Any(k)
            });
        }
    }
}

/// A random rule of the kind the compiler produces.
pub fn rules() -> impl Strategy<Value = Rule<Vec<u64>>> {
    (1usize..8, 1usize..4)
        .prop_flat_map(|(n, k)| {
            (
                prop::collection::vec(0u64..6, n * k),
                trees(),
                prop::collection::vec((0usize..k, any::<u64>()), 6),
                Just((n, k)),
            )
        })
        .prop_map(|(mut weights, tree, specs, (n, k))| {
            for a in 0..k {
                if weights[a * n..(a + 1) * n].iter().all(|&w| w == 0) {
                    weights[a * n] = 1;
                }
            }
            let mut first_use = Vec::new();
            let mut nodes = Vec::new();
            lower(&tree, &mut first_use, &mut nodes);
            let atoms: Vec<Atom> = (0..first_use.len())
                .map(|i| {
                    let (a, q) = specs[i];
                    let total: u64 = weights[a * n..(a + 1) * n].iter().sum();
                    Atom {
                        attribute: a as u16,
                        quota: 1 + q % total,
                    }
                })
                .collect();
            Rule::new(n, weights, &atoms, &nodes).unwrap()
        })
}
