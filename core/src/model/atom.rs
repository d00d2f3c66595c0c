//! Conditions of a rule: plain yes-sum thresholds ([`Atom`]) and four-state
//! linear forms ([`Linear`]) over the yes, no and abstain sums.
//!
//! Every operation is O(1) with no heap. Overflow: linear forms are
//! evaluated in `i128`, where coefficients below 2^31 times sums below 2^64
//! cannot overflow; a quota that no yes-sum can meet is `total + 1`.

use crate::model::error::Error;

/// One threshold condition: the sum of `attribute` over the yes-voters is at
/// least `quota`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct Atom {
    /// Index of the weight attribute.
    pub attribute: u16,
    /// The least sum that meets the condition.
    pub quota: u64,
}

/// A condition over the four groups of a ballot, on one attribute:
/// `yes * Y + no * N + abstain * A >= bound`, where Y, N and A are the
/// attribute's sums over the members voting yes, voting no and abstaining
/// (absent members count in none).
///
/// "More yes than no" is `Y - N >= 1`; "two thirds of those present and
/// voting" is `3Y >= 2(Y + N)`, i.e. `Y - 2N >= 0`; a quorum "a third of all
/// seats present" is `Y + N + A >= ceil(T / 3)`. Monotone in yes votes
/// (switching any member to yes never defeats the motion) exactly when
/// `yes >= no`, `yes >= abstain` and `yes >= 0`; anything else is
/// [`Error::NonMonotone`]. Arithmetic is exact in `i128`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct Linear {
    /// Index of the weight attribute.
    pub attribute: u16,
    /// Coefficient of the yes-sum.
    pub yes: i32,
    /// Coefficient of the no-sum.
    pub no: i32,
    /// Coefficient of the abstain-sum.
    pub abstain: i32,
    /// Right-hand side.
    pub bound: i128,
}

impl Linear {
    /// Whether switching any member to yes can never defeat the condition.
    pub fn check_monotone(&self) -> Result<(), Error> {
        if self.yes >= self.no && self.yes >= self.abstain && self.yes >= 0 {
            Ok(())
        } else {
            Err(Error::NonMonotone)
        }
    }

    /// Left-hand side for the given group sums.
    pub fn lhs(&self, yes: u64, no: u64, abstain: u64) -> i128 {
        // |coefficient| <= 2^31 and sums < 2^64: each product is below 2^95
        // and the sum below 2^97, so saturation never happens.
        let term = |c: i32, s: u64| i128::from(c).saturating_mul(i128::from(s));
        term(self.yes, yes)
            .saturating_add(term(self.no, no))
            .saturating_add(term(self.abstain, abstain))
    }

    /// Whether the condition holds for the given group sums.
    pub fn holds(&self, yes: u64, no: u64, abstain: u64) -> bool {
        self.lhs(yes, no, abstain) >= self.bound
    }

    /// The least yes-sum that meets the condition when every member is
    /// present and votes yes or no (N = total - Y, A = 0): the binary game
    /// the power indices measure. `total + 1` when no yes-sum meets it.
    pub fn binary_quota(&self, total: u64) -> u64 {
        // yes*Y + no*(T - Y) >= bound  <=>  (yes - no) Y >= bound - no*T
        let d = i128::from(self.yes).saturating_sub(i128::from(self.no));
        // A bound near +-2^127 saturates here; the quota is clamped to
        // 0..=total + 1 below either way, which saturation cannot change
        // (|need| >= 2^126 while d < 2^33 and total < 2^64).
        let need = self
            .bound
            .saturating_sub(i128::from(self.no).saturating_mul(i128::from(total)));
        let never = u128::from(total).saturating_add(1);
        let q: i128 = if d <= 0 {
            if need <= 0 {
                0
            } else {
                never as i128
            }
        } else {
            // ceil(need / d) for any sign of need
            let q = need
                .div_euclid(d)
                .saturating_add(i128::from(need.rem_euclid(d) != 0));
            q.clamp(0, never as i128)
        };
        u64::try_from(q).unwrap_or(u64::MAX)
    }
}

/// One condition of a rule as written: a plain yes-sum threshold or a
/// four-state linear condition.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Condition {
    /// The sum over the yes-voters reaches the quota.
    Yes(Atom),
    /// A linear condition over the yes, no and abstain sums.
    Linear(Linear),
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn binary_quotas_of_linear_forms() {
        use crate::fixtures::four_state_form;
        // seats yes > 1/2 of cast: 2Y > Y + N  <=>  Y - N >= 1; with T = 115,
        // Y - (115 - Y) >= 1  <=>  Y >= 58 = "more than half of 115".
        let l = four_state_form(0, 0);
        assert_eq!(l.binary_quota(115), 58);
        assert_eq!(l.binary_quota(100), 51);
        // count yes >= 2/3 of present: 3Y >= 2(Y + N + A)  <=>  Y - 2N - 2A >= 0;
        // binary: 3Y >= 2T, T = 27: Y >= 18.
        assert_eq!(four_state_form(1, 0).binary_quota(27), 18);
        // count present >= 9 (a quorum): everyone is present in the binary game.
        let l = four_state_form(2, 9);
        assert_eq!(l.binary_quota(27), 0);
        // 5 members can never make a quorum of 9.
        assert_eq!(l.binary_quota(5), 6);
        // seats yes >= 2 * seats no: Y >= 2(T - Y)  <=>  3Y >= 2T; T = 10: Y >= 7.
        assert_eq!(four_state_form(3, 0).binary_quota(10), 7);
        // Not monotone: a yes vote weighs less than a no vote.
        let l = Linear {
            attribute: 0,
            yes: -1,
            no: 0,
            abstain: 0,
            bound: -3,
        };
        assert_eq!(l.check_monotone(), Err(Error::NonMonotone));
    }
}
