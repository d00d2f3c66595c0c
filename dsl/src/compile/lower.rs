//! Pass 4, lowering to the core's rule: each rule becomes postfix nodes over
//! atoms, with the declared attributes plus one attribute for `count`, each
//! bloc and each member it names alone, in order of first use; atoms are
//! numbered in order of first use, and a definition used twice shares its
//! atoms (this is the "compiler's image" on which print-then-compile is the
//! identity).
//!
//! Runs only on a file without errors, so references do not loop and no
//! chain of them is longer than `MAX_DEPTH` (see `references`). Definitions
//! and conditions are walked on an explicit stack, not the call stack.
//! Lowering stops at the core's node limit, so
//! definitions that double each other cannot blow up; the atom and
//! attribute limits are checked before a rule's weight table is allocated.
//! Time and space per rule O(nodes + attributes * members).

use std::collections::HashMap;

use clout_core::limits::{MAX_ATOMS, MAX_ATTRIBUTES, MAX_NODES};
use clout_core::{Atom, Condition as CoreCondition, Error as CoreError, Linear, Node, Rule};

use super::file::{Amounts, Attribute, AttributeKind, CompiledRule, Condition, ExactCondition, RuleFile};
use super::names::Declared;
use super::one_line;
use super::quotas::{Key, Resolved};
use crate::diagnostic::{CappedErrors, Diagnostic, Span};

/// The compiled file: the weight table, then each rule lowered.
pub(super) fn lower_file(
    d: Declared<'_>,
    resolved: &[Option<Resolved>],
    errors: &mut CappedErrors,
) -> Option<RuleFile> {
    let weights = weight_table(&d);
    let mut rules = Vec::new();
    for k in 0..d.named.len() {
        if d.named[k].is_rule {
            if let Some(r) = lower_rule(&d, resolved, k, &weights, errors) {
                rules.push(r);
            }
        }
    }
    if !errors.is_empty() {
        return None;
    }
    let amounts = amounts(&d);
    Some(RuleFile {
        amounts,
        title: d.title.map(|(t, _)| t),
        members: d.members,
        groups: d.groups,
        blocs: d.blocs,
        attributes: d.attributes.into_iter().map(|(a, _)| a).collect(),
        weights,
        rules,
    })
}

/// Declared weights as the core counts them, attribute-major: `table[a * members + i]`.
fn weight_table(d: &Declared<'_>) -> Vec<u64> {
    let n = d.members.len();
    let mut table = vec![0u64; d.attributes.len() * n];
    for (i, weights) in d.member_weights.iter().enumerate() {
        for &(a, w) in weights {
            table[a * n + i] = d.weight_of(a, w);
        }
    }
    table
}

/// The exact amounts of every attribute declared with decimals.
fn amounts(d: &Declared<'_>) -> Vec<Amounts> {
    let n = d.members.len();
    (0..d.attributes.len())
        .filter_map(|a| {
            let spec = d.amounts.get(a).copied().flatten()?;
            let mut exact = vec![0u128; n];
            for (i, weights) in d.member_weights.iter().enumerate() {
                for &(b, w) in weights {
                    if b == a {
                        exact[i] = w;
                    }
                }
            }
            // Pass 1 checked the sum against MAX_EXACT_TOTAL.
            let total = exact.iter().sum();
            Some(Amounts {
                attribute: a,
                decimals: spec.decimals,
                unit: d.scaled.get(a).copied().flatten(),
                exact,
                total,
            })
        })
        .collect()
}

/// A core error on a rule in the file's words.
pub(super) fn rule_error(span: Span, name: &str, e: CoreError) -> Diagnostic {
    let (message, hint) = match e {
        CoreError::TooManyAtoms { atoms, limit } => (
            format!("rule `{name}` has {atoms} conditions, more than the limit of {limit}"),
            "share repeated conditions through `define`, or split the rule",
        ),
        CoreError::TooManyAttributes { attributes, limit } => (
            format!("rule `{name}` needs {attributes} weight attributes, more than the limit of {limit}"),
            "each declared attribute, `count`, each bloc and each member named alone is one attribute",
        ),
        CoreError::TooManyNodes { limit, .. } => (
            format!("rule `{name}` has more than {limit} parts (conditions plus `and` / `or`)"),
            "simplify the rule or split it",
        ),
        CoreError::TooDeep { limit, .. } => (
            format!("rule `{name}` nests `and` / `or` deeper than {limit}"),
            "flatten the nesting",
        ),
        other => (
            format!("rule `{name}`: {other}"),
            "check the rule against the limits in the reference",
        ),
    };
    Diagnostic::error(span, message).with_hint(hint)
}

/// Rule `k` in the core's IR, or its error.
fn lower_rule(
    d: &Declared<'_>,
    resolved: &[Option<Resolved>],
    k: usize,
    declared: &[u64],
    errors: &mut CappedErrors,
) -> Option<CompiledRule> {
    let decl = d.named[k].decl;
    let mut lowering = Lowering {
        declared: d.attributes.len(),
        keys: Vec::new(),
        atoms: Vec::new(),
        linear: Vec::new(),
        conditions: Vec::new(),
        exact: Vec::new(),
        nodes: Vec::new(),
        cache: HashMap::new(),
        too_big: false,
    };
    lowering.lower(k, resolved, d.source);
    if let Some(e) = size_error(&lowering, d.attributes.len()) {
        errors.push(rule_error(decl.name.span, &decl.name.text, e));
        return None;
    }
    let n = d.members.len();
    let mut weights = declared.to_vec();
    let mut attributes: Vec<Attribute> = d
        .attributes
        .iter()
        .map(|(a, _)| Attribute {
            name: a.clone(),
            kind: AttributeKind::Declared,
        })
        .collect();
    for key in &lowering.keys {
        let start = weights.len();
        weights.resize(start + n, 0);
        let row = &mut weights[start..];
        let (name, kind) = match *key {
            Key::Count => {
                row.fill(1);
                ("count".to_string(), AttributeKind::Count)
            }
            Key::Bloc(b) => {
                for &i in &d.blocs[b].members {
                    row[i] = 1;
                }
                (d.blocs[b].name.clone(), AttributeKind::Bloc)
            }
            Key::Member(i) => {
                row[i] = 1;
                (d.members[i].name.clone(), AttributeKind::Member)
            }
            Key::Declared(_) => continue,
        };
        attributes.push(Attribute { name, kind });
    }
    let conditions: Vec<CoreCondition> = lowering
        .atoms
        .iter()
        .zip(&lowering.linear)
        .map(|(a, l)| match l {
            Some(l) => CoreCondition::Linear(*l),
            None => CoreCondition::Yes(*a),
        })
        .collect();
    match Rule::with_conditions(n, weights, &conditions, &lowering.nodes) {
        Ok(rule) => Some(CompiledRule {
            name: decl.name.text.clone(),
            span: decl.name.span,
            text: one_line(decl.expr.span().text(d.source)),
            rule,
            attributes,
            conditions: lowering.conditions,
            exact: lowering.exact,
        }),
        Err(e) => {
            errors.push(rule_error(decl.name.span, &decl.name.text, e));
            None
        }
    }
}

/// The core's size checks, made before the weight table is built and
/// reported as the core would report them (atoms first, then attributes).
fn size_error(lowering: &Lowering, declared: usize) -> Option<CoreError> {
    let (nodes, atoms) = (lowering.nodes.len(), lowering.atoms.len());
    let attributes = declared + lowering.keys.len();
    if lowering.too_big {
        Some(CoreError::TooManyNodes {
            nodes,
            limit: MAX_NODES,
        })
    } else if atoms > MAX_ATOMS {
        Some(CoreError::TooManyAtoms {
            atoms,
            limit: MAX_ATOMS,
        })
    } else if attributes > MAX_ATTRIBUTES {
        Some(CoreError::TooManyAttributes {
            attributes,
            limit: MAX_ATTRIBUTES,
        })
    } else {
        None
    }
}

/// One rule's atoms, attributes and postfix nodes.
struct Lowering {
    declared: usize,
    keys: Vec<Key>,
    atoms: Vec<Atom>,
    /// The four-state form of each atom, if any.
    linear: Vec<Option<Linear>>,
    conditions: Vec<Condition>,
    exact: Vec<Option<ExactCondition>>,
    nodes: Vec<Node>,
    /// Nodes of each definition already lowered in this rule: a second use
    /// repeats them, sharing the atoms.
    cache: HashMap<usize, Vec<Node>>,
    too_big: bool,
}

/// One step of lowering, on an explicit stack (definitions nest up to
/// `MAX_DEPTH` deep, each with conditions up to `MAX_NESTING` deep).
enum Step<'r> {
    /// Lower this part of a condition.
    Part(&'r Resolved),
    /// All operands are lowered: push the operator.
    Operator(Node),
    /// Lower definition `k` (or repeat its nodes if lowered already).
    Definition(usize),
    /// Definition `k`'s nodes start at `start`: remember them.
    Lowered { k: usize, start: usize },
}

impl Lowering {
    fn lower(&mut self, root: usize, resolved: &[Option<Resolved>], source: &str) {
        let mut steps = vec![Step::Definition(root)];
        while let Some(step) = steps.pop() {
            if self.too_big {
                return;
            }
            match step {
                Step::Definition(k) => {
                    if let Some(nodes) = self.cache.get(&k) {
                        if self.nodes.len() + nodes.len() > MAX_NODES {
                            self.too_big = true;
                        } else {
                            self.nodes.extend_from_slice(nodes);
                        }
                        continue;
                    }
                    steps.push(Step::Lowered {
                        k,
                        start: self.nodes.len(),
                    });
                    if let Some(r) = &resolved[k] {
                        steps.push(Step::Part(r));
                    }
                }
                Step::Lowered { k, start } => {
                    let nodes = self.nodes[start..].to_vec();
                    self.cache.insert(k, nodes);
                }
                Step::Operator(node) => self.push(node),
                Step::Part(r) => self.part(r, source, &mut steps),
            }
        }
    }

    /// Lowers an atom now, or schedules the operands and then the operator.
    fn part<'r>(&mut self, r: &'r Resolved, source: &str, steps: &mut Vec<Step<'r>>) {
        match r {
            Resolved::Linear {
                key,
                coefficients,
                bound,
                span,
                exact,
            } => {
                let exact = exact.map(|(b, q)| (q, Some(b)));
                self.atom(*key, 0, Some((*coefficients, *bound)), exact, *span, source)
            }
            Resolved::Atom {
                key,
                quota,
                span,
                exact,
            } => self.atom(*key, *quota, None, exact.map(|q| (q, None)), *span, source),
            Resolved::All(v) | Resolved::Any(v) => {
                // More operands than nodes allowed make the rule too big anyway.
                let k = v.len().min(usize::from(u16::MAX)) as u16;
                let all = matches!(r, Resolved::All(_));
                steps.push(Step::Operator(if all { Node::All(k) } else { Node::Any(k) }));
                steps.extend(v.iter().rev().map(Step::Part));
            }
            Resolved::Ref(k) => steps.push(Step::Definition(*k)),
        }
    }

    /// A new atom on `key` (with its four-state form, if any) and its node.
    fn atom(
        &mut self,
        key: Key,
        quota: u64,
        four_state: Option<([i32; 3], i128)>,
        exact: Option<(u128, Option<i128>)>,
        span: Span,
        source: &str,
    ) {
        let attribute = self.attribute(key);
        self.exact.push(match (key, exact) {
            (Key::Declared(a), Some((quota, bound))) => Some(ExactCondition {
                attribute: a,
                quota,
                bound,
            }),
            _ => None,
        });
        self.atoms.push(Atom { attribute, quota });
        self.linear
            .push(four_state.map(|([yes, no, abstain], bound)| Linear {
                attribute,
                yes,
                no,
                abstain,
                bound,
            }));
        self.conditions.push(Condition {
            text: one_line(span.text(source)),
            span,
        });
        self.push(Node::Atom((self.atoms.len() - 1) as u16));
    }

    fn push(&mut self, node: Node) {
        if self.nodes.len() >= MAX_NODES || self.atoms.len() > u16::MAX as usize {
            self.too_big = true;
        } else {
            self.nodes.push(node);
        }
    }

    fn attribute(&mut self, key: Key) -> u16 {
        let index = match key {
            Key::Declared(a) => a,
            _ => {
                let pos = self.keys.iter().position(|&k| k == key).unwrap_or_else(|| {
                    self.keys.push(key);
                    self.keys.len() - 1
                });
                self.declared + pos
            }
        };
        index.min(usize::from(u16::MAX)) as u16
    }
}

#[cfg(test)]
mod tests {
    use crate::compile;

    #[test]
    fn attributes_and_atoms_are_numbered_in_order_of_first_use() {
        let f = compile("member a seats=2\nmember b seats=1\nbloc ab = a, b\ndefine d = count >= 2\nrule r = b and d and ab and d\n").unwrap();
        let r = f.rule(None).unwrap();
        let names: Vec<&str> = r.attributes.iter().map(|a| a.name.as_str()).collect();
        assert_eq!(names, ["seats", "b", "count", "ab"]);
        // `d` twice shares its atom: three atoms, seven nodes.
        assert_eq!(r.rule.atoms().len(), 3);
        assert_eq!(
            r.conditions.iter().map(|c| c.text.as_str()).collect::<Vec<_>>(),
            ["b", "count >= 2", "ab"]
        );
    }

    #[test]
    fn limits_are_checked_before_the_weight_table_is_built() {
        // 65 members named alone: 66 attributes with `seats`; refused as the core would.
        let mut src = String::from("members m x70 seats=1\nrule r = ");
        src.push_str(&(1..=65).map(|i| format!("m{i}")).collect::<Vec<_>>().join(" or "));
        let e = compile(&src).unwrap_err();
        assert_eq!(
            e[0].message,
            "rule `r` has 65 conditions, more than the limit of 64"
        );
        let mut src = String::from("members m x70 seats=1 a=1 b=1 c=1\nrule r = ");
        src.push_str(&(1..=62).map(|i| format!("m{i}")).collect::<Vec<_>>().join(" or "));
        let e = compile(&src).unwrap_err();
        assert_eq!(
            e[0].message,
            "rule `r` needs 66 weight attributes, more than the limit of 64"
        );
    }

    #[test]
    fn deep_definitions_of_deep_conditions_stay_on_the_stack_of_a_thread() {
        // 31 definitions, each 60 `and`s deep, under one rule: about 1,900
        // levels, the deepest lowering the limits allow (it is refused, as too big).
        let mut src = String::from("member a seats=1\nmember b seats=1\ndefine d0 = a\n");
        for i in 1..31 {
            src.push_str(&format!(
                "define d{i} = {}d{}{}\n",
                "(".repeat(60),
                i - 1,
                " and b)".repeat(60)
            ));
        }
        src.push_str("rule r = d30\n");
        let result = std::thread::Builder::new()
            .stack_size(1 << 20)
            .spawn(move || compile(&src).map(|_| ()).map_err(|e| e[0].message.clone()))
            .unwrap()
            .join()
            .unwrap();
        assert_eq!(
            result,
            Err("rule `r` has more than 128 parts (conditions plus `and` / `or`)".to_string())
        );
    }
}
