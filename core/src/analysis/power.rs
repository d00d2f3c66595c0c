//! Power indices and rule properties derived from an engine's exact counts.
//!
//! Engines fill one [`MemberCounts`] per member and one [`RuleCounts`]; a
//! [`PowerTable`] turns them into indices. Counts are exact integers; indices
//! are `f64` computed from them (ratios of huge counts are taken on
//! mantissa/exponent pairs, so they stay finite for any member count).
//! Each index is O(1), the normalized ones O(n); no heap, and no integer
//! arithmetic that could overflow (only `f64` ratios of exact counts).
//!
//! Definitions (n members, W winning and L losing coalitions, η_i the swings
//! of i: winning coalitions that lose without i):
//!
//! | index | formula | source |
//! | --- | --- | --- |
//! | normalized Banzhaf | η_i / Σ η_j | Banzhaf 1965 |
//! | absolute Banzhaf (Penrose) | η_i / 2^(n-1) | Penrose 1946 |
//! | Shapley-Shubik | Σ_S (|S|-1)!(n-|S|)!/n! over S where i is a swing | Shapley & Shubik 1954 |
//! | Coleman power to prevent | η_i / W | Coleman 1971 |
//! | Coleman power to initiate | η_i / L | Coleman 1971 |
//! | power of the collectivity to act | W / 2^n | Coleman 1971 |
//! | Johnston | Σ_S 1/κ(S) over winning S where i is a swing, κ(S) = swings in S, normalized | Johnston 1978 |
//! | Deegan-Packel | (1/|M|) Σ_{S∈M, i∈S} 1/|S|, M = minimal winning coalitions | Deegan & Packel 1978 |
//! | Holler public good | m_i / Σ m_j, m_i = minimal winning coalitions containing i | Holler 1982 |

use crate::engine::{MemberCounts, RuleCounts};
use crate::model::count::{ratio, scaled, Counter};

/// Indices of all members, from an engine's counts.
#[derive(Clone, Copy, Debug)]
pub struct PowerTable<'a, C> {
    /// Rule-level counts.
    pub rule: &'a RuleCounts<C>,
    /// One entry per member, in member order.
    pub members: &'a [MemberCounts<C>],
}

impl<'a, C: Counter> PowerTable<'a, C> {
    /// Pairs the two halves of an engine's output.
    pub fn new(rule: &'a RuleCounts<C>, members: &'a [MemberCounts<C>]) -> Self {
        PowerTable { rule, members }
    }

    fn member(&self, i: usize) -> MemberCounts<C> {
        self.members.get(i).copied().unwrap_or(MemberCounts::EMPTY)
    }

    /// Absolute Banzhaf (Penrose) measure: swings / 2^(n-1).
    pub fn penrose(&self, i: usize) -> f64 {
        scaled(self.member(i).swings, self.rule.members.saturating_sub(1))
    }

    /// Normalized Banzhaf index; 0 for every member when nobody swings.
    pub fn banzhaf(&self, i: usize) -> f64 {
        let total = (0..self.members.len())
            .map(|j| self.penrose(j))
            .fold(0.0, |a, b| a + b);
        if total == 0.0 {
            0.0
        } else {
            self.penrose(i) / total
        }
    }

    /// Shapley-Shubik index (0 for every member when the engine was asked
    /// for swings only; see [`Self::has_shapley_shubik`]).
    pub fn shapley_shubik(&self, i: usize) -> f64 {
        self.member(i).shapley_shubik
    }

    /// Whether Shapley-Shubik values were computed.
    pub fn has_shapley_shubik(&self) -> bool {
        self.rule.shapley_shubik
    }

    /// Shapley-Shubik index as an exact fraction `(numerator, n!)`, when it fits.
    pub fn shapley_shubik_exact(&self, i: usize) -> Option<(C, C)> {
        Some((self.member(i).shapley_shubik_numerator?, self.rule.factorial?))
    }

    /// Coleman's power to prevent action: swings / W.
    pub fn coleman_prevent(&self, i: usize) -> f64 {
        ratio(self.member(i).swings, self.rule.winning)
    }

    /// Coleman's power to initiate action: swings / L.
    pub fn coleman_initiate(&self, i: usize) -> f64 {
        ratio(self.member(i).swings, self.rule.losing)
    }

    /// Johnston index, when the engine computed it.
    pub fn johnston(&self, i: usize) -> Option<f64> {
        normalized(self.members, i, |m| m.johnston_raw)
    }

    /// Deegan-Packel index, when the engine computed it.
    pub fn deegan_packel(&self, i: usize) -> Option<f64> {
        let raw = self.member(i).deegan_packel_raw?;
        let m = self.rule.minimal_winning?;
        if m.is_zero() {
            return Some(0.0);
        }
        Some(raw / scaled(m, self.rule.members))
    }

    /// Holler public good index, when the engine computed it.
    pub fn public_good(&self, i: usize) -> Option<f64> {
        let n = self.rule.members;
        normalized(self.members, i, |m| m.minimal_winning.map(|c| scaled(c, n)))
    }

    /// The member never swings: a dummy.
    pub fn is_dummy(&self, i: usize) -> bool {
        self.member(i).swings.is_zero()
    }

    /// The member belongs to every winning coalition.
    pub fn is_veto(&self, i: usize) -> bool {
        self.member(i).veto
    }

    /// The member decides alone.
    pub fn is_dictator(&self, i: usize) -> bool {
        self.member(i).dictator
    }
}

fn normalized<C: Counter>(
    members: &[MemberCounts<C>],
    i: usize,
    raw: impl Fn(&MemberCounts<C>) -> Option<f64>,
) -> Option<f64> {
    let mine = raw(members.get(i)?)?;
    let mut total = 0.0;
    for m in members {
        total += raw(m)?;
    }
    Some(if total == 0.0 { 0.0 } else { mine / total })
}
