//! The trade's notation `[q; w1, ..., wn]` as a whole file: one weighted
//! rule, `w xK` standing for K members of weight w.
//!
//! The member count is summed with a saturating addition and checked
//! against the core's limit before any weight is repeated; the weights are
//! summed with checked additions. Time O(members).

use clout_core::limits::{MAX_MEMBERS, MAX_TOTAL};
use clout_core::Rule;

use super::file::{Attribute, AttributeKind, Bloc, CompiledRule, Condition, Group, Member, RuleFile};
use super::lower::rule_error;
use super::quotas::{check_quota, Subject};
use super::{one_line, too_many_members};
use crate::diagnostic::Diagnostic;
use crate::syntax::Game;

/// The file `[q; w1, ..., wn]`: members p1..pn in one group `p`, one
/// attribute `weight`, one rule `game`. The first error only.
pub(super) fn compile_game(source: &str, g: &Game) -> Result<RuleFile, Diagnostic> {
    let mut n: u64 = 0;
    for w in &g.weights {
        if w.repeat == 0 {
            return Err(Diagnostic::error(w.span, "a weight repeated zero times")
                .with_hint("`w xK` needs K of at least 1"));
        }
        n = n.saturating_add(w.repeat);
        if n > MAX_MEMBERS as u64 {
            return Err(too_many_members(w.span));
        }
    }
    let weights: Vec<u64> = g
        .weights
        .iter()
        .flat_map(|w| std::iter::repeat_n(w.weight, w.repeat as usize))
        .collect();
    let total = weights.iter().try_fold(0u64, |s, &w| s.checked_add(w));
    let Some(total) = total.filter(|&t| t <= MAX_TOTAL) else {
        return Err(Diagnostic::error(
            g.span,
            "the weights add up to more than 2^64 - 4",
        ));
    };
    let (q, q_span) = g.quota;
    let text = format!("weight >= {q}");
    let subject = Subject {
        name: "weight",
        total,
        against: false,
        bloc: false,
    };
    check_quota(q_span, &text, q, &subject)?;
    let rule = Rule::weighted(q, weights.clone()).map_err(|e| rule_error(g.span, "game", e))?;
    let n = weights.len();
    let members = (1..=n)
        .map(|i| Member {
            name: format!("p{i}"),
            span: g.span,
            group: Some(0),
        })
        .collect();
    Ok(RuleFile {
        amounts: Vec::new(),
        title: None,
        members,
        // The members form one group `p`, so that `p1..p5` names a range.
        groups: vec![Group {
            name: "p".to_string(),
            span: g.span,
            first: 0,
            len: n,
        }],
        blocs: vec![Bloc {
            name: "p".to_string(),
            span: g.span,
            members: (0..n).collect(),
        }],
        attributes: vec!["weight".to_string()],
        weights,
        rules: vec![CompiledRule {
            name: "game".to_string(),
            span: g.span,
            text: one_line(g.span.text(source)),
            rule,
            attributes: vec![Attribute {
                name: "weight".to_string(),
                kind: AttributeKind::Declared,
            }],
            conditions: vec![Condition { text, span: q_span }],
            exact: vec![None],
        }],
    })
}

#[cfg(test)]
mod tests {
    use crate::compile;

    fn first_error(source: &str) -> String {
        let e = compile(source).unwrap_err();
        assert_eq!(e.len(), 1, "the notation reports one error");
        let (line, col) = e[0].line_col(source);
        format!("{line}:{col} {}", e[0].message)
    }

    #[test]
    fn repeats_expand_to_one_group() {
        let f = compile("[4; 3, 1 x3]").unwrap();
        assert_eq!(f.weights, [3, 1, 1, 1]);
        assert_eq!(f.members_named("p"), Some(vec![0, 1, 2, 3]));
        assert_eq!(f.rule(None).unwrap().rule.single_threshold(), Some((0, 4)));
    }

    #[test]
    fn member_counts_and_weight_sums_are_checked_before_use() {
        assert_eq!(
            first_error("[1; 1 x18446744073709551615, 1 x9]"),
            "1:5 more than 65535 members"
        );
        let big = u64::MAX / 2;
        assert_eq!(
            first_error(&format!("[1; {big}, {big}, 9]")),
            "1:1 the weights add up to more than 2^64 - 4"
        );
        assert_eq!(
            first_error("[9; 1, 2]"),
            "1:2 no coalition can meet `weight >= 9`: it needs 9 of a total of 3 `weight`"
        );
    }
}
