//! What rounding exact amounts to a unit can change, certified.
//!
//! An attribute declared `attribute tokens decimals 18 unit 0.000001` whose
//! exact amounts (base units, `x_i`) do not fit the core is counted in
//! units: `w_i = round(x_i / u)`, so `x_i = u w_i + e_i` with `|e_i| <= u/2`.
//! A condition `X_S >= Q` on the exact sums is counted as `W_S >= q` on the
//! rounded ones (`q = ceil(Q / u)`, at most the rounded total). With `E+`
//! and `E-` the sums of the positive and of the negative `e_i`, every
//! coalition has `E- <= X_S - u W_S <= E+`, so the two can disagree only if
//!
//! - `W_S >= q` and `X_S < Q`: then `W_S <= ceil((Q - E-) / u) - 1`, or
//! - `W_S < q` and `X_S >= Q`: then `W_S >= ceil((Q - E+) / u)`.
//!
//! Every coalition decided differently therefore has, for some condition on
//! a rounded attribute, its rounded sum in that condition's *window*
//! `[min(q, ceil((Q - E+)/u)), max(q - 1, ceil((Q - E-)/u) - 1)]`, a few
//! units wide (at most about the number of members). Call A the number of
//! coalitions with a sum in a window (windows of one attribute merged, the
//! attributes' counts added). Then:
//!
//! - at most A coalitions are decided differently (for up to
//!   [`BRUTE_FORCE`] members they are counted one by one, exactly);
//! - each member's swing count changes by at most A (a pair S, S+i changes
//!   its swing status only if S or S+i is decided differently);
//! - each Penrose measure by at most A / 2^(n-1), each normalized Banzhaf
//!   index by the interval that covers every such change of all members;
//! - each Shapley-Shubik index by at most A / n (a pair weighs at most 1/n).
//!
//! A is counted exactly (the core's engines on the threshold games
//! `[from; w]` and `[to + 1; w]`: A = their difference) when that fits
//! [`COUNT_BUDGET`] and n <= 126; otherwise it is bounded:
//!
//! - Erdős (1945, "On a lemma of Littlewood and Offord", Bull. Amer. Math.
//!   Soc. 51): when t members each weigh at least the window's width δ, at
//!   most C(t, t/2) of their 2^t subsets put a given sum in the window (the
//!   subsets that do form an antichain), and C(t, t/2) / 2^t <= 1/sqrt(π t/2);
//! - a super-increasing chain d_1 < d_2 < ... with each d_j at least the sum
//!   of the ones before plus the Erdős members' total plus δ: for any choice
//!   of the others, at most one subset of the chain lands in the window,
//!   whatever the Erdős members do, so the two bounds multiply:
//!   A / 2^n <= 2^-|chain| * C(t, t/2) / 2^t.
//!
//! The best split between the two kinds of members is searched over t in
//! {0, 1, 2, 4, 8, ...}. Time O(n log n) per window for the bound (plus the
//! engines' time when counted), O(2^n n) for the brute force.

use clout_core::Rule;
use clout_dsl::{Amounts, CompiledRule, RuleFile};
use serde::Serialize;

/// Members up to which the coalitions decided differently are counted one by one.
pub const BRUTE_FORCE: usize = 20;

/// Most estimated steps spent counting the windows exactly.
pub const COUNT_BUDGET: u128 = 2_000_000_000;

/// What rounding can change, as the report states it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Rounding {
    /// Each rounded attribute.
    pub attributes: Vec<RoundedAttribute>,
    /// Each condition on a rounded attribute and its window.
    pub windows: Vec<Window>,
    /// How many coalitions could be decided differently by the exact
    /// amounts: exact decimal when counted, else null (see `share`).
    pub coalitions: Option<String>,
    /// Whether `coalitions` counts exactly the coalitions decided
    /// differently (else it counts those with a sum in a window, an upper bound).
    pub coalitions_exact: bool,
    /// An upper bound on the share of all 2^n coalitions decided differently.
    pub share: f64,
    /// How `coalitions` or `share` was found.
    pub method: String,
    /// Each member's swing count differs by at most this (decimal, or null when only `share` is known).
    pub swings: Option<String>,
    /// Each Penrose measure differs by at most this.
    pub penrose: f64,
    /// Each normalized Banzhaf index differs by at most this.
    pub banzhaf: f64,
    /// Each Shapley-Shubik index differs by at most this (1 when no useful bound).
    pub shapley_shubik: f64,
}

/// One attribute whose weights are rounded.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct RoundedAttribute {
    /// Its name.
    pub attribute: String,
    /// Declared decimals.
    pub decimals: u32,
    /// The unit, as an amount of the attribute (`0.000001`).
    pub unit: String,
    /// The exact total, as an amount.
    pub exact_total: String,
    /// The total of the rounded weights, in units.
    pub rounded_total: String,
    /// The largest rounding error of one member, as an amount.
    pub largest_error: String,
}

/// A condition on a rounded attribute: its quotas and the rounded sums
/// whose coalitions the exact amounts could decide otherwise.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Window {
    /// The condition as written.
    pub condition: String,
    /// The attribute.
    pub attribute: String,
    /// The two-state quota on the exact amounts, as an amount.
    pub exact_quota: String,
    /// The quota on the rounded weights, in units.
    pub quota: String,
    /// Lowest rounded sum in the window (units), or null when empty.
    pub from: Option<String>,
    /// Highest.
    pub to: Option<String>,
}

/// One window: attribute (rule attribute index) and rounded sums `from..=to`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
struct Span {
    attribute: usize,
    from: u64,
    to: u64,
}

/// The rounding certificate of `rule`, or `None` when no condition is on
/// rounded weights. `penrose` are the report's Penrose measures (for the
/// Banzhaf bound).
pub fn certify(file: &RuleFile, rule: &CompiledRule, penrose: &[f64]) -> Option<Rounding> {
    certify_by(file, rule, penrose, Count::Auto)
}

/// How [`certify_by`] finds the coalitions that could be decided differently.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Count {
    /// One by one up to [`BRUTE_FORCE`] members, else windows counted
    /// exactly when that fits, else the bound.
    Auto,
    /// Windows counted exactly when that fits, else the bound.
    Windows,
    /// The bound alone.
    Bound,
}

/// [`certify`] with the counting method chosen (for tests of each path).
pub fn certify_by(file: &RuleFile, rule: &CompiledRule, penrose: &[f64], how: Count) -> Option<Rounding> {
    if rule.exact.iter().all(Option::is_none) {
        return None;
    }
    let r = &rule.rule;
    let n = r.members();
    let mut attributes = Vec::new();
    let mut windows = Vec::new();
    let mut spans: Vec<Span> = Vec::new();
    for (k, exact) in rule.exact.iter().enumerate() {
        let Some(ec) = exact else { continue };
        let amounts = file.amounts.iter().find(|a| a.attribute == ec.attribute)?;
        let unit = amounts.unit?;
        let a = ec.attribute;
        let (low, high) = error_sums(amounts, r.attribute_weights(a), unit);
        if !attributes
            .iter()
            .any(|x: &RoundedAttribute| x.attribute == file.attributes[a])
        {
            attributes.push(describe_attribute(
                file,
                amounts,
                r.attribute_weights(a),
                r.total(a),
                unit,
            ));
        }
        let q = i128::from(r.atoms()[k].quota);
        let exact_q = i128::try_from(ec.quota).unwrap_or(i128::MAX);
        let lo = clout_dsl::amount::ceil_div(exact_q - high, unit);
        let hi = clout_dsl::amount::ceil_div(exact_q - low, unit) - 1;
        let from = lo.min(q).max(0);
        let to = hi.max(q - 1).min(i128::from(r.total(a)));
        let span = (from <= to).then_some(Span {
            attribute: a,
            from: from as u64,
            to: to as u64,
        });
        spans.extend(span);
        windows.push(Window {
            condition: rule.conditions[k].text.clone(),
            attribute: file.attributes[a].clone(),
            exact_quota: amounts.format(ec.quota),
            quota: q.to_string(),
            from: span.map(|s| s.from.to_string()),
            to: span.map(|s| s.to.to_string()),
        });
    }
    let spans = merge(spans);
    let (coalitions, coalitions_exact, share, method) = count(file, rule, &spans, how);
    let two_n = 2f64.powi(i32::try_from(n).unwrap_or(i32::MAX));
    let swings = coalitions.clone();
    let penrose_bound = (2.0 * share).min(1.0);
    let shapley_shubik = (share * two_n / n.max(1) as f64).min(1.0);
    let banzhaf = banzhaf_bound(penrose, penrose_bound);
    Some(Rounding {
        attributes,
        windows,
        coalitions,
        coalitions_exact,
        share,
        method,
        swings,
        penrose: penrose_bound,
        banzhaf,
        shapley_shubik,
    })
}

/// Sums of the negative and of the positive rounding errors `x_i - u w_i`.
fn error_sums(amounts: &Amounts, weights: &[u64], unit: u128) -> (i128, i128) {
    let mut low = 0i128;
    let mut high = 0i128;
    for (&x, &w) in amounts.exact.iter().zip(weights) {
        // |e| <= u/2 and x < 2^94: both fit in i128.
        let e = i128::try_from(x).unwrap_or(i128::MAX)
            - i128::try_from(unit * u128::from(w)).unwrap_or(i128::MAX);
        if e < 0 {
            low += e;
        } else {
            high += e;
        }
    }
    (low, high)
}

fn describe_attribute(
    file: &RuleFile,
    amounts: &Amounts,
    weights: &[u64],
    total: u64,
    unit: u128,
) -> RoundedAttribute {
    let largest = amounts
        .exact
        .iter()
        .zip(weights)
        .map(|(&x, &w)| x.abs_diff(unit * u128::from(w)))
        .max()
        .unwrap_or(0);
    RoundedAttribute {
        attribute: file.attributes[amounts.attribute].clone(),
        decimals: amounts.decimals,
        unit: amounts.format(unit),
        exact_total: amounts.format(amounts.total),
        rounded_total: total.to_string(),
        largest_error: amounts.format(largest),
    }
}

/// Windows of one attribute merged where they overlap or touch.
fn merge(mut spans: Vec<Span>) -> Vec<Span> {
    spans.sort_by_key(|s| (s.attribute, s.from));
    let mut out: Vec<Span> = Vec::new();
    for s in spans {
        match out.last_mut() {
            Some(last) if last.attribute == s.attribute && s.from <= last.to.saturating_add(1) => {
                last.to = last.to.max(s.to);
            }
            _ => out.push(s),
        }
    }
    out
}

/// The coalitions that could be decided differently: (exact count if
/// known, whether it counts exactly the differing ones, share bound, method).
fn count(
    file: &RuleFile,
    rule: &CompiledRule,
    spans: &[Span],
    how: Count,
) -> (Option<String>, bool, f64, String) {
    let r = &rule.rule;
    let n = r.members();
    if spans.is_empty() {
        return (
            Some("0".to_string()),
            true,
            0.0,
            "no rounded sum can fall in a window".to_string(),
        );
    }
    if n <= BRUTE_FORCE && how == Count::Auto {
        let differ = brute_force(file, rule);
        return (
            Some(differ.to_string()),
            true,
            differ as f64 / 2f64.powi(n as i32),
            format!("every one of the 2^{n} coalitions decided on the exact amounts"),
        );
    }
    if n <= 126 && how != Count::Bound {
        let counted: Option<u128> = spans.iter().try_fold(0u128, |acc, s| {
            let w = r.attribute_weights(s.attribute);
            let at_least = |q: u64| winning(w, q);
            acc.checked_add(at_least(s.from)?.checked_sub(at_least(s.to.saturating_add(1))?)?)
        });
        if let Some(a) = counted {
            return (
                Some(a.to_string()),
                false,
                a as f64 / 2f64.powi(n as i32),
                "coalitions with a rounded sum in a window, counted exactly".to_string(),
            );
        }
    }
    let share: f64 = spans
        .iter()
        .map(|s| bound(r.attribute_weights(s.attribute), s.to - s.from + 1))
        .sum::<f64>()
        .min(1.0);
    (
        None,
        false,
        share,
        "upper bound on coalitions with a rounded sum in a window (Erdős's bound on members heavier than the window, times 2^-k for a super-increasing chain of k members)".to_string(),
    )
}

/// Coalitions whose weights reach `quota`, exactly, when an engine fits the budget.
fn winning(weights: &[u64], quota: u64) -> Option<u128> {
    let n = weights.len() as u32;
    let total: u64 = weights.iter().sum();
    if quota == 0 {
        return 1u128.checked_shl(n);
    }
    if quota > total {
        return Some(0);
    }
    let game = Rule::weighted(quota, weights.to_vec()).ok()?;
    let plan = clout_dsl::exact::choose(&game, COUNT_BUDGET).ok()?;
    clout_dsl::exact::power(&game, plan.engine)
        .ok()?
        .winning
        .parse()
        .ok()
}

/// A rigorous upper bound on the share of coalitions whose sum of
/// `weights` falls in a window of `width` consecutive integers.
pub fn bound(weights: &[u64], width: u64) -> f64 {
    let mut eligible: Vec<u64> = weights.iter().copied().filter(|&w| w >= width).collect();
    eligible.sort_unstable();
    let mut best = 1.0f64;
    let mut t = 0usize;
    loop {
        let t_now = t.min(eligible.len());
        let erdos_total: u128 = eligible[..t_now].iter().map(|&w| u128::from(w)).sum();
        let mut need = erdos_total + u128::from(width);
        let mut chain = 0i32;
        for &w in &eligible[t_now..] {
            if u128::from(w) >= need {
                chain += 1;
                need += u128::from(w);
            }
        }
        let erdos = match t_now {
            0 => 1.0,
            1 => 0.5,
            t => 1.0 / (std::f64::consts::PI * (t / 2) as f64).sqrt(),
        };
        best = best.min(erdos * 2f64.powi(-chain));
        if t_now == eligible.len() {
            break;
        }
        t = if t == 0 { 1 } else { t * 2 };
    }
    // Guard the floating-point rounding of the square root and the product.
    (best * (1.0 + 1e-12)).min(1.0)
}

/// The largest change of a normalized Banzhaf index when every Penrose
/// measure may move by `eps`.
fn banzhaf_bound(penrose: &[f64], eps: f64) -> f64 {
    let n = penrose.len() as f64;
    let total: f64 = penrose.iter().sum();
    if total <= 0.0 {
        return 1.0;
    }
    penrose
        .iter()
        .map(|&p| {
            let value = p / total;
            let lo = (p - eps).max(0.0) / (total + n * eps);
            let hi = if total > n * eps {
                ((p + eps) / (total - n * eps)).min(1.0)
            } else {
                1.0
            };
            (value - lo).max(hi - value)
        })
        .fold(0.0, f64::max)
        .min(1.0)
}

/// Whether each condition of `rule` is met by the yes, no and abstain
/// groups given as member lists, with the exact amounts for the conditions
/// on rounded attributes (and the weights otherwise).
pub fn conditions_met(file: &RuleFile, rule: &CompiledRule, groups: [&[usize]; 3]) -> Vec<bool> {
    let r = &rule.rule;
    (0..r.atoms().len())
        .map(|k| {
            let atom = r.atoms()[k];
            let a = usize::from(atom.attribute);
            match (rule.exact[k], r.linear(k)) {
                (Some(ec), linear) => {
                    let Some(amounts) = file.amounts.iter().find(|x| x.attribute == ec.attribute) else {
                        return false;
                    };
                    let sum = |g: &[usize]| -> i128 {
                        g.iter()
                            .map(|&i| i128::try_from(amounts.exact[i]).unwrap_or(0))
                            .sum()
                    };
                    let (y, no, ab) = (sum(groups[0]), sum(groups[1]), sum(groups[2]));
                    match (linear, ec.bound) {
                        // Coefficients below 2^31 times sums below 2^94: no overflow.
                        (Some(l), Some(bound)) => {
                            i128::from(l.yes) * y + i128::from(l.no) * no + i128::from(l.abstain) * ab
                                >= bound
                        }
                        _ => y >= i128::try_from(ec.quota).unwrap_or(i128::MAX),
                    }
                }
                (None, linear) => {
                    let sum = |g: &[usize]| -> u64 { g.iter().map(|&i| r.weight(a, i)).sum() };
                    let (y, no, ab) = (sum(groups[0]), sum(groups[1]), sum(groups[2]));
                    match linear {
                        Some(l) => l.holds(y, no, ab),
                        None => y >= atom.quota,
                    }
                }
            }
        })
        .collect()
}

/// Counts the coalitions the exact amounts decide otherwise than the rounded
/// weights, one by one (two-state: everyone not yes votes no).
fn brute_force(file: &RuleFile, rule: &CompiledRule) -> u64 {
    let r = &rule.rule;
    let n = r.members();
    let mut differ = 0;
    for mask in 0u64..(1u64 << n) {
        let yes: Vec<usize> = (0..n).filter(|&i| mask >> i & 1 == 1).collect();
        let no: Vec<usize> = (0..n).filter(|&i| mask >> i & 1 == 0).collect();
        let exact = conditions_met(file, rule, [&yes, &no, &[]]);
        let exact_passes = r.eval(|k| exact[k]);
        let sums: Vec<u64> = (0..r.attributes())
            .map(|a| yes.iter().map(|&i| r.weight(a, i)).sum())
            .collect();
        if exact_passes != r.passes_with_sums(&sums) {
            differ += 1;
        }
    }
    differ
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Brute force of the share of subsets with a sum in `from..from + width`.
    fn share_in_window(weights: &[u64], from: u64, width: u64) -> f64 {
        let n = weights.len();
        let hits = (0u32..1 << n)
            .filter(|mask| {
                let s: u64 = (0..n).filter(|&i| mask >> i & 1 == 1).map(|i| weights[i]).sum();
                (from..from + width).contains(&s)
            })
            .count();
        hits as f64 / f64::from(1u32 << n)
    }

    #[test]
    fn the_window_bound_covers_every_window() {
        let cases: [&[u64]; 4] = [
            &[5, 5, 5, 5, 5, 5, 5, 5],
            &[1, 2, 4, 8, 16, 32, 64, 128, 256],
            &[3, 7, 7, 20, 41, 90, 1, 1, 2, 300],
            &[10, 11, 12, 13, 14, 100, 250, 600],
        ];
        for weights in cases {
            let total: u64 = weights.iter().sum();
            for width in 1..6 {
                let b = bound(weights, width);
                for from in 0..=total {
                    let s = share_in_window(weights, from, width);
                    assert!(s <= b, "{weights:?} width {width} from {from}: {s} > {b}");
                }
            }
        }
        // A doubling chain of 9 members: at most one subset per window of width 1.
        assert!(bound(&[1, 2, 4, 8, 16, 32, 64, 128, 256], 1) <= 1.0 / 512.0 * (1.0 + 1e-9));
    }
}
