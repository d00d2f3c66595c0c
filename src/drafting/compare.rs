//! Are two drafts the same rule (the same coalitions pass)? If not, a
//! smallest coalition on which they differ, how many coalitions they decide
//! differently, and how each member's power changes. Members are matched by
//! name when both rules name the same members, else by position (or as the
//! caller insists).
//!
//! Exact on the decision diagram of the two rules' difference (see
//! [`clout_core::engine::diagram::difference`]): every coalition, with at
//! most [`DIFFERENCE_NODES`] nodes. Rules with few patterns of members
//! interchangeable in both are also compared pattern by pattern (the two
//! answers must agree). Only when the diagram is over its limit and the
//! patterns too many does the comparison sample, and it never claims
//! sameness it did not check (see [`crate::toolkit::compare`]). Two exact
//! analyses when the rules differ.

use clout_core::engine::diagram;
use clout_core::{Count1024, Counter, Rule};
use clout_dsl::{CompiledRule, RuleFile};

use super::{
    core_failure, exact_power, internal, rule_ref, toolkit_failure, Comparison, Difference, Matching,
    MemberChange, Members, Verdict, Watch,
};
use crate::failure::Failure;
use crate::report::{CAUTION, MODEL};
use crate::toolkit::compare::{self as equivalence, Equivalence};
use crate::toolkit::{profile, PROFILE_LIMIT};

/// Most nodes of the difference diagram [`compare`] builds (about 1.5 GB at
/// the largest; union-27 against a variant takes some thousands).
pub const DIFFERENCE_NODES: usize = 20_000_000;

/// How to compare.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct CompareOptions {
    /// How to match members (default: by name when both rules name the same
    /// members, else by position).
    pub by: Option<Matching>,
    /// Most elementary steps of each exact analysis of the indices.
    pub budget: u128,
}

impl Default for CompareOptions {
    fn default() -> Self {
        CompareOptions {
            by: None,
            budget: super::BUDGET,
        }
    }
}

/// `order[i]`: B's member matched to A's member i, and how they were matched.
pub fn matching(a: &RuleFile, b: &RuleFile, by: Option<Matching>) -> Result<(Vec<usize>, Matching), Failure> {
    let na: Vec<&str> = a.members.iter().map(|m| m.name.as_str()).collect();
    let nb: Vec<&str> = b.members.iter().map(|m| m.name.as_str()).collect();
    let by_name: Option<Vec<usize>> = na.iter().map(|x| nb.iter().position(|y| y == x)).collect();
    let by_name = by_name.filter(|_| na.len() == nb.len());
    match (by, by_name) {
        (Some(Matching::Name), None) => {
            let only_a: Vec<&str> = na.iter().filter(|x| !nb.contains(x)).copied().take(8).collect();
            let only_b: Vec<&str> = nb.iter().filter(|x| !na.contains(x)).copied().take(8).collect();
            Err(Failure::input(format!(
                "the rules name different members (only in A: {}; only in B: {})",
                list_or_none(&only_a),
                list_or_none(&only_b)
            ))
            .with_hint("match them by position with --by position"))
        }
        (Some(Matching::Name) | None, Some(order)) => Ok((order, Matching::Name)),
        (Some(Matching::Position) | None, _) if na.len() == nb.len() => {
            Ok(((0..na.len()).collect(), Matching::Position))
        }
        _ => Err(Failure::input(format!(
            "A has {} members and B has {}: they cannot be matched",
            na.len(),
            nb.len()
        ))
        .with_hint("compare rules over the same members")),
    }
}

fn list_or_none(names: &[&str]) -> String {
    if names.is_empty() {
        "none".to_string()
    } else {
        names.join(", ")
    }
}

/// Compares rule `ra` of `fa` with rule `rb` of `fb`.
pub fn compare(
    fa: &RuleFile,
    ra: &CompiledRule,
    fb: &RuleFile,
    rb: &CompiledRule,
    options: &CompareOptions,
    watch: &mut impl Watch,
) -> Result<Comparison, Failure> {
    let (order, matched_by) = matching(fa, fb, options.by)?;
    let n = ra.rule.members();
    let a = equivalence::reorder(&ra.rule, &(0..n).collect::<Vec<_>>())
        .map_err(|e| toolkit_failure(&ra.name, e))?;
    let b = equivalence::reorder(&rb.rule, &order).map_err(|e| toolkit_failure(&rb.name, e))?;
    let patterns = patterns_of_both(&a, &b);
    let exact = watch.step(
        &format!(
            "comparing rules `{}` and `{}` on their difference diagram",
            ra.name, rb.name
        ),
        || diagram::difference::<_, _, Count1024>(&a, &b, DIFFERENCE_NODES),
    )?;
    let exact = match exact {
        Ok(d) => Some(d),
        Err(clout_core::Error::TooCostly { .. }) => None,
        Err(e) => return Err(core_failure(&ra.name, e)),
    };
    let by_patterns = if exact.is_none() || patterns <= PROFILE_LIMIT as u128 {
        let answer = watch
            .step(
                &format!(
                    "comparing rules `{}` and `{}` pattern by pattern",
                    ra.name, rb.name
                ),
                || equivalence::compare(&a, &b),
            )?
            .map_err(|e| toolkit_failure(&ra.name, e))?;
        Some(answer)
    } else {
        None
    };
    let mut out = Comparison {
        a: rule_ref(fa, ra),
        b: rule_ref(fb, rb),
        matched_by,
        verdict: Verdict::Same,
        witness: None,
        differing_coalitions: exact.as_ref().map(|d| d.coalitions.to_string()),
        patterns,
        patterns_are_coalitions: n < 128 && patterns == 1u128 << n,
        sampled: None,
        members: None,
        passage_probability_a: None,
        passage_probability_b: None,
        model: MODEL.to_string(),
        caution: CAUTION.to_string(),
        order,
    };
    match (&exact, by_patterns) {
        (Some(d), Some(Equivalence::Same { .. })) if !d.coalitions.is_zero() => {
            return Err(internal(&ra.name, "the diagram and the patterns disagree"));
        }
        (Some(d), Some(Equivalence::Different { .. })) if d.coalitions.is_zero() => {
            return Err(internal(&ra.name, "the diagram and the patterns disagree"));
        }
        (_, Some(Equivalence::Same { .. })) => return Ok(out),
        (
            _,
            Some(Equivalence::Different {
                coalition,
                first_passes,
                smallest,
            }),
        ) => {
            out.verdict = Verdict::Different;
            out.witness = Some(Difference {
                coalition: Members::of(fa, coalition),
                passes: if first_passes { "a" } else { "b" }.to_string(),
                smallest,
            });
        }
        (Some(d), None) => {
            let Some(coalition) = d.smallest.clone() else {
                return Ok(out);
            };
            out.verdict = Verdict::Different;
            out.witness = Some(Difference {
                coalition: Members::of(fa, coalition),
                passes: if d.first_passes { "a" } else { "b" }.to_string(),
                smallest: true,
            });
        }
        (_, Some(Equivalence::Undecided { sampled, .. })) => {
            out.verdict = Verdict::Undecided;
            out.sampled = Some(sampled);
        }
        (None, None) => return Err(internal(&ra.name, "no comparison ran")),
    }
    let pa = exact_power(&ra.rule, &ra.name, options.budget, watch)?;
    let pb = exact_power(&b, &rb.name, options.budget, watch)?;
    if out.verdict == Verdict::Undecided {
        let differ = pa.winning != pb.winning
            || pa
                .members
                .iter()
                .zip(&pb.members)
                .any(|(x, y)| x.swings != y.swings);
        if differ {
            out.verdict = Verdict::Different;
        }
    }
    out.members = Some(
        fa.members
            .iter()
            .zip(pa.members.iter().zip(&pb.members))
            .map(|(m, (x, y))| MemberChange {
                name: m.name.clone(),
                banzhaf_a: x.banzhaf,
                banzhaf_b: y.banzhaf,
                shapley_shubik_a: x.shapley_shubik,
                shapley_shubik_b: y.shapley_shubik,
            })
            .collect(),
    );
    out.passage_probability_a = Some(pa.passage_probability);
    out.passage_probability_b = Some(pb.passage_probability);
    Ok(out)
}

/// Patterns of members interchangeable in both rules (saturating).
fn patterns_of_both(a: &Rule<Vec<u64>>, b: &Rule<Vec<u64>>) -> u128 {
    let column =
        |r: &Rule<Vec<u64>>, i: usize| (0..r.attributes()).map(|x| r.weight(x, i)).collect::<Vec<u64>>();
    profile::profile_count(&profile::group_by_key(a.members(), |i| {
        (column(a, i), column(b, i))
    }))
}
