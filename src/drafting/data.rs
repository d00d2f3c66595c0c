//! The drafting answers as data: the types every front end serializes
//! (`clout simplify --format json` and its siblings, the Python package's
//! dicts, the WebAssembly package's objects). Field names are the JSON keys.
//!
//! The types describe answers, not the methods behind them: members by name,
//! exact counts as decimal strings (they outgrow every machine integer),
//! verdicts, and the certificates that prove them (a trading transfer, a
//! witness coalition). Where a field says how the current method got there
//! (`search`), the README marks it as such. Weights and quotas are `u64` in
//! Rust and decimal strings in JSON, like the report's.

use serde::ser::{SerializeMap, SerializeStruct};
use serde::{Serialize, Serializer};

use crate::toolkit::weighted::Representation;

/// Serializes an integer as its decimal string.
fn decimal<S: Serializer, T: ToString>(value: &T, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_str(&value.to_string())
}

/// Some members, by name in JSON; their indices (declaration order) serve
/// renderings that write runs of a group as `rep1..rep218`.
#[derive(Clone, Debug, Default, PartialEq, Eq, Serialize)]
#[serde(transparent)]
pub struct Members {
    /// Names, ascending by declaration.
    pub names: Vec<String>,
    /// Member indices, ascending.
    #[serde(skip)]
    pub indices: Vec<usize>,
}

impl Members {
    /// Members `indices` of `file`, sorted.
    pub fn of(file: &clout_dsl::RuleFile, mut indices: Vec<usize>) -> Members {
        indices.sort_unstable();
        let names = indices
            .iter()
            .map(|&i| file.members.get(i).map_or_else(String::new, |m| m.name.clone()))
            .collect();
        Members { names, indices }
    }

    /// How many.
    pub fn len(&self) -> usize {
        self.indices.len()
    }

    /// No member.
    pub fn is_empty(&self) -> bool {
        self.indices.is_empty()
    }
}

/// Which rule an answer is about.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct RuleRef {
    /// The rule's name.
    pub rule: String,
    /// The file's title, if any.
    pub title: Option<String>,
    /// The rule as written.
    pub text: String,
    /// The rule has four-state conditions (abstentions, attendance), taken
    /// here in the yes/no model: every member present, voting yes or no.
    pub four_state: bool,
}

/// A weighted vote `[quota; w1, ..., wn]` over a rule's members.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct WeightedVote {
    /// Member names, in declaration order.
    pub members: Vec<String>,
    /// The vote.
    pub representation: Representation,
}

impl Serialize for WeightedVote {
    /// `{notation, quota, total, weights: {member: weight}}`, numbers as decimal strings.
    fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        struct Weights<'a>(&'a WeightedVote);
        impl Serialize for Weights<'_> {
            fn serialize<S: Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
                let v = self.0;
                let mut map = s.serialize_map(Some(v.members.len()))?;
                for (name, w) in v.members.iter().zip(&v.representation.weights) {
                    map.serialize_entry(name, &w.to_string())?;
                }
                map.end()
            }
        }
        let r = &self.representation;
        let mut st = s.serialize_struct("WeightedVote", 4)?;
        st.serialize_field("notation", &r.notation())?;
        st.serialize_field("quota", &r.quota.to_string())?;
        st.serialize_field("total", &r.total().to_string())?;
        st.serialize_field("weights", &Weights(self))?;
        st.end()
    }
}

// ---------------------------------------------------------------- simplify

/// Is the rule secretly simpler? Its dummies, and whether it is one weighted
/// vote (with integer weights of least total) or why not.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Simplification {
    /// The rule.
    #[serde(flatten)]
    pub rule: RuleRef,
    /// Members whose vote never changes the outcome.
    pub dummies: Members,
    /// Whether one weighted vote passes exactly the coalitions the rule passes.
    pub weighted: bool,
    /// That vote: of least total found, or as written when the exact test is
    /// too large (`least_total` is then `"not_searched"`). Null when not weighted.
    pub weighted_vote: Option<WeightedVote>,
    /// How far the least total is proved.
    pub least_total: Option<LeastTotal>,
    /// The proof that no weighted vote gives the rule. Null when weighted.
    pub trading_transfer: Option<TradingTransfer>,
    /// Weighted votes whose joint passage is the rule (its dimension is at
    /// most their number). Null when weighted.
    pub intersection: Option<Vec<WeightedVote>>,
    /// What the answer was checked on; null when the exact test is too large.
    pub checked: Option<Checked>,
    /// Why the exact test did not run (message and hint); null when it ran.
    pub too_large: Option<String>,
    /// What the current method looked at (may change with the method).
    pub search: Option<Search>,
    /// The legal caution.
    pub caution: String,
}

/// How far the least total weight of a representation is proved.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum LeastTotal {
    /// No integer weights with a smaller total give the rule.
    Proved,
    /// None that weigh interchangeable members equally has a smaller total.
    AmongEqualWeights,
    /// The solver stopped at its node limit; a smaller total may exist.
    NotProved,
    /// The vote is the rule as written; no search ran.
    NotSearched,
}

/// Winning coalitions X1..Xk and losing Y1..Yk holding every member equally
/// often: no weights can make every X outweigh every Y.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct TradingTransfer {
    /// The winning coalitions.
    pub winning: Vec<Members>,
    /// The losing coalitions.
    pub losing: Vec<Members>,
}

/// What an answer was checked on, exactly.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Checked {
    /// Patterns of interchangeable members (how many of each group of members
    /// with identical weights vote yes) on which it was checked, decimal.
    #[serde(serialize_with = "decimal")]
    pub patterns: u128,
    /// Every member was its own group: the patterns are the coalitions.
    pub patterns_are_coalitions: bool,
    /// Winning coalitions by the exact engines, on which the rule and its
    /// weighted vote agree (with every member's swings); null when not run.
    pub winning_coalitions: Option<String>,
    /// Minimal winning coalitions by the same count, when the engine gives them.
    pub minimal_winning_coalitions: Option<String>,
}

/// What the weightedness search looked at.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
pub struct Search {
    /// Minimal winning patterns.
    pub minimal_winning: usize,
    /// Maximal losing patterns.
    pub maximal_losing: usize,
    /// Rounds of the cutting-plane loop.
    pub rounds: usize,
}

// ----------------------------------------------------------------- compare

/// Whether two rules pass the same coalitions, and if not where they differ
/// and how power changes.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Comparison {
    /// The first rule.
    pub a: RuleRef,
    /// The second rule.
    pub b: RuleRef,
    /// How members were matched.
    pub matched_by: Matching,
    /// The answer.
    pub verdict: Verdict,
    /// A coalition on which they differ (by A's names); null when the same,
    /// undecided, or different only by their exact counts.
    pub witness: Option<Difference>,
    /// Coalitions that one rule passes and the other does not, exact
    /// decimal (`"0"` when the same); null when the difference diagram was
    /// over its node limit.
    pub differing_coalitions: Option<String>,
    /// Patterns of members interchangeable in both that were compared (or,
    /// when `sampled` is set, that a full comparison would need), decimal.
    #[serde(serialize_with = "decimal")]
    pub patterns: u128,
    /// The patterns are the coalitions (every member its own pattern).
    pub patterns_are_coalitions: bool,
    /// Random coalitions tried when there were too many patterns; else null.
    pub sampled: Option<usize>,
    /// Each member's indices under A and B (by A's names); null when the
    /// rules are the same.
    pub members: Option<Vec<MemberChange>>,
    /// Probability of passage under A (null when the rules are the same).
    pub passage_probability_a: Option<f64>,
    /// Under B.
    pub passage_probability_b: Option<f64>,
    /// The voting model.
    pub model: String,
    /// The legal caution.
    pub caution: String,
    /// `order[i]`: B's member matched to A's member i.
    #[serde(skip)]
    pub order: Vec<usize>,
}

/// How the members of two rules are matched.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Matching {
    /// By name: both rules name the same members.
    Name,
    /// By position in declaration order.
    Position,
}

/// The verdict of a comparison.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Verdict {
    /// The same coalitions pass (checked on every pattern).
    Same,
    /// Some coalition passes under one and fails under the other.
    Different,
    /// Too many patterns to check, no difference found, equal exact counts.
    Undecided,
}

/// A coalition on which two rules differ.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Difference {
    /// Its members voting yes (the others no).
    pub coalition: Members,
    /// Which rule passes it: `"a"` or `"b"`.
    pub passes: String,
    /// No smaller coalition differs (false for a sampled witness, from
    /// which no single member can be dropped).
    pub smallest: bool,
}

/// One member's indices under two rules.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct MemberChange {
    /// The member (A's name).
    pub name: String,
    /// Normalized Banzhaf index under A.
    pub banzhaf_a: f64,
    /// Under B.
    pub banzhaf_b: f64,
    /// Shapley-Shubik index under A.
    pub shapley_shubik_a: f64,
    /// Under B.
    pub shapley_shubik_b: f64,
}

// ------------------------------------------------------------------- sweep

/// Power as the quota of some conditions moves.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Sweep {
    /// The rule.
    #[serde(flatten)]
    pub rule: RuleRef,
    /// The attribute the moved conditions sum.
    pub attribute: String,
    /// Its total over all members.
    #[serde(serialize_with = "decimal")]
    pub total: u64,
    /// The conditions that move.
    pub conditions: Vec<MovedCondition>,
    /// One exact analysis per quota.
    pub points: Vec<SweepPoint>,
    /// The voting model.
    pub model: String,
    /// The legal caution.
    pub caution: String,
}

/// A condition of a sweep.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct MovedCondition {
    /// Its number in the rule, 1 for the first (as the report lists them).
    pub number: usize,
    /// As written.
    pub text: String,
}

/// The rule at one quota.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SweepPoint {
    /// The quota of the moved conditions.
    #[serde(serialize_with = "decimal")]
    pub quota: u64,
    /// quota / total.
    pub share: f64,
    /// Probability of passage.
    pub passage_probability: f64,
    /// Every member's indices, in declaration order.
    pub members: Vec<PointMember>,
}

/// One member at one quota.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PointMember {
    /// The member.
    pub name: String,
    /// Normalized Banzhaf index.
    pub banzhaf: f64,
    /// Shapley-Shubik index.
    pub shapley_shubik: f64,
}

// -------------------------------------------------------------- coalitions

/// Which coalitions to list.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum CoalitionKind {
    /// Winning, and losing without any one of their members.
    MinimalWinning,
    /// Able to defeat the motion by voting no, and not without any one of their members.
    MinimalBlocking,
}

/// The minimal winning or minimal blocking coalitions.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Coalitions {
    /// The rule.
    #[serde(flatten)]
    pub rule: RuleRef,
    /// Which coalitions.
    pub kind: CoalitionKind,
    /// How many there are, exact decimal.
    pub count: String,
    /// How many patterns of interchangeable members they form; 0 when they
    /// were counted on the decision diagram (past the pattern table's limit).
    pub pattern_count: usize,
    /// The first patterns (at most the limit), fewest members first.
    pub patterns: Vec<Pattern>,
    /// The first coalitions (at most the limit), fewest members first.
    pub coalitions: Vec<Members>,
    /// The legal caution.
    pub caution: String,
}

/// Coalitions that take so many members of each group of interchangeable members.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Pattern {
    /// Members in each coalition.
    pub size: usize,
    /// Coalitions of this pattern, exact decimal.
    pub count: String,
    /// `take` members of each group (groups with none taken are left out).
    pub parts: Vec<Part>,
}

/// Part of a pattern: any `take` of `members`.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Part {
    /// How many.
    pub take: usize,
    /// Of these interchangeable members.
    pub of: Members,
}

// ------------------------------------------------------------------- order

/// The members ordered by influence (Isbell's desirability relation).
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Order {
    /// The rule.
    #[serde(flatten)]
    pub rule: RuleRef,
    /// Every two members are comparable.
    pub complete: bool,
    /// Classes of symmetric members, more desirable first.
    pub classes: Vec<Class>,
    /// Pairs of classes that are not comparable, with coalitions that show it.
    pub incomparable: Vec<Incomparable>,
    /// The legal caution.
    pub caution: String,
}

/// Members that are symmetric (exchanging them changes no outcome).
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Class {
    /// The members.
    pub members: Members,
    /// Classes (0-based positions in `classes`) this one is strictly more desirable than.
    pub above: Vec<usize>,
}

/// Two classes neither of which is at least as desirable as the other.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Incomparable {
    /// Their 0-based positions in `classes`.
    pub classes: [usize; 2],
    /// One coalition for each direction.
    pub witnesses: [Witness; 2],
}

/// A coalition that `passes_with` joining passes and `fails_with` joining fails.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct Witness {
    /// The coalition (may be empty).
    pub coalition: Members,
    /// The member whose joining passes.
    pub passes_with: String,
    /// The member whose joining fails.
    pub fails_with: String,
}

// --------------------------------------------------------------------- fit

/// Integer weights and a quota whose normalized Banzhaf index is closest to targets.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Fit {
    /// The weighted vote found.
    pub weighted_vote: WeightedVote,
    /// Each member's weight, target and index.
    pub members: Vec<FitMember>,
    /// Largest |banzhaf - target|.
    pub max_deviation: f64,
    /// Root-mean-square of banzhaf - target.
    pub rms_deviation: f64,
    /// Search steps allowed, decimal.
    #[serde(serialize_with = "decimal")]
    pub budget: u128,
    /// Search steps used, decimal.
    #[serde(serialize_with = "decimal")]
    pub steps: u128,
    /// The budget ran out before the search ended by itself.
    pub exhausted: bool,
    /// The same weights with the optimal quota of Slomczynski & Zyczkowski (2006).
    pub optimal_quota: OptimalQuota,
    /// The voting model.
    pub model: String,
    /// The legal caution.
    pub caution: String,
}

/// One member of a fit.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FitMember {
    /// The member.
    pub name: String,
    /// Its weight, decimal.
    #[serde(serialize_with = "decimal")]
    pub weight: u64,
    /// The target share of power.
    pub target: f64,
    /// The normalized Banzhaf index with the weights found.
    pub banzhaf: f64,
    /// banzhaf - target.
    pub deviation: f64,
}

/// q = (1 + sqrt(sum of squared weights) / total) / 2, as an integer quota.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct OptimalQuota {
    /// q as a share of the total weight.
    pub share: f64,
    /// The integer quota: ceil(q * total), at least a majority.
    #[serde(serialize_with = "decimal")]
    pub quota: u64,
    /// Largest |banzhaf - target| with that quota.
    pub max_deviation: f64,
    /// Root-mean-square deviation with that quota.
    pub rms_deviation: f64,
}
