//! What every engine returns: exact counts per member ([`MemberCounts`])
//! and for the whole rule ([`RuleCounts`]).
//!
//! Plain records in the caller's [`Counter`] type; the only arithmetic is
//! [`RuleCounts::passage_probability`], W / 2^n taken on a mantissa and
//! exponent so it stays finite for any member count. No heap.

use crate::model::count::{scaled, Counter};
use crate::model::engine_id::Engine;

/// Exact counts for one member.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MemberCounts<C> {
    /// Swing count (raw Banzhaf): winning coalitions that lose without this member.
    pub swings: C,
    /// Shapley-Shubik index, from exact pivot counts by coalition size.
    pub shapley_shubik: f64,
    /// Shapley-Shubik numerator over [`RuleCounts::factorial`] (`n!`), when it fits.
    pub shapley_shubik_numerator: Option<C>,
    /// Minimal winning coalitions containing this member (when computed).
    pub minimal_winning: Option<C>,
    /// Σ 1/|S| over minimal winning S containing the member, times 2^-n.
    pub deegan_packel_raw: Option<f64>,
    /// Σ 1/κ(S) over winning S in which the member is a swing, times 2^-n.
    pub johnston_raw: Option<f64>,
    /// The member belongs to every winning coalition.
    pub veto: bool,
    /// The member alone wins and is a veto member.
    pub dictator: bool,
}

impl<C: Counter> MemberCounts<C> {
    /// All zero, nothing known.
    pub const EMPTY: Self = MemberCounts {
        swings: C::ZERO,
        shapley_shubik: 0.0,
        shapley_shubik_numerator: None,
        minimal_winning: None,
        deegan_packel_raw: None,
        johnston_raw: None,
        veto: false,
        dictator: false,
    };
}

/// Exact counts and properties of the whole rule.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RuleCounts<C> {
    /// Number of members n.
    pub members: usize,
    /// Winning coalitions W.
    pub winning: C,
    /// Losing coalitions L = 2^n - W.
    pub losing: C,
    /// Minimal winning coalitions (when computed).
    pub minimal_winning: Option<C>,
    /// Minimal blocking coalitions, i.e. complements of maximal losing ones (when computed).
    pub minimal_blocking: Option<C>,
    /// Size of a smallest winning coalition; `None` when nothing wins.
    pub smallest_winning: Option<usize>,
    /// No two disjoint coalitions both win.
    pub proper: bool,
    /// Of every coalition and its complement, at least one wins.
    pub strong: bool,
    /// `n!`, the Shapley-Shubik denominator, when it fits in the count type.
    pub factorial: Option<C>,
    /// Whether the Shapley-Shubik values were computed (see [`crate::engine::Scope`]).
    pub shapley_shubik: bool,
    /// The engine that produced the counts.
    pub engine: Engine,
}

impl<C: Counter> RuleCounts<C> {
    /// Where an engine starts on `members` members: nothing counted yet,
    /// proper and strong until a coalition shows otherwise, and the
    /// minimal-coalition counts at zero when the engine counts them
    /// (`minimal`), else unknown.
    pub(crate) fn start(members: usize, engine: Engine, minimal: bool) -> Self {
        let minimal = minimal.then_some(C::ZERO);
        RuleCounts {
            members,
            winning: C::ZERO,
            losing: C::ZERO,
            minimal_winning: minimal,
            minimal_blocking: minimal,
            smallest_winning: None,
            proper: true,
            strong: true,
            factorial: None,
            shapley_shubik: true,
            engine,
        }
    }

    /// Proper and strong: every coalition or its complement wins, never both.
    pub fn decisive(&self) -> bool {
        self.proper && self.strong
    }

    /// Probability of passage (Coleman's power of the collectivity to act):
    /// W / 2^n, assuming every member votes yes or no independently with
    /// equal chance.
    pub fn passage_probability(&self) -> f64 {
        scaled(self.winning, self.members)
    }
}
