//! Exact integer quotas from the forms drafters write.
//!
//! Every condition becomes "sum of an attribute over the yes-voters >= q" with
//! `q` computed in integer arithmetic (`u128` intermediates, no floats):
//!
//! | form | quota | rounding |
//! | --- | --- | --- |
//! | at least `p/d` of total `T` | `ceil(p*T/d)` | up: "at least 65% of 1001" is 651 (650.65 rounds up) |
//! | more than `p/d` of `T` | `floor(p*T/d) + 1` | "more than half of 115" is 58; "more than half of 100" is 51 |
//! | at least `k` | `k` | none |
//! | more than `k` | `k + 1` | none |
//! | fewer than `k` against | `T - k + 1` | "fewer than 4 of 27 against" is 24 |
//! | at most `k` against | `T - k` | "at most 3 of 27 against" is 24 |
//!
//! Each is O(1), no heap. Overflow: products are taken in `u128`, where a
//! share of at most 1 times a `u64` total cannot overflow; a quota that
//! does not fit is [`Error::CountOverflow`].
//!
//! A quota above `T` can never be met and a quota of 0 is always met; both
//! are representable (the rule language warns about them). Upper bounds on
//! yes votes ("fewer than 10 seats in favour") are rejected as
//! [`Error::NonMonotone`].

use crate::model::error::Error;

/// How the yes-sum is compared with the bound.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Comparison {
    /// `>=`
    AtLeast,
    /// `>`
    MoreThan,
    /// `<=` (not monotone when applied to yes votes)
    AtMost,
    /// `<` (not monotone when applied to yes votes)
    LessThan,
}

/// The right-hand side of a condition.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Bound {
    /// An absolute amount of the attribute.
    Amount(u64),
    /// A share `numerator / denominator` of the attribute's total; a
    /// percentage `62.5%` is the share `625 / 1000`.
    #[allow(missing_docs)]
    Share { numerator: u64, denominator: u64 },
}

fn check_share(numerator: u64, denominator: u64) -> Result<(), Error> {
    if denominator == 0 || numerator > denominator {
        Err(Error::BadFraction {
            numerator,
            denominator,
        })
    } else {
        Ok(())
    }
}

/// `ceil(total * numerator / denominator)`: the least sum that is at least the share.
pub fn at_least_share(numerator: u64, denominator: u64, total: u64) -> Result<u64, Error> {
    check_share(numerator, denominator)?;
    // Both factors are below 2^64, so the product fits in u128.
    let product = u128::from(total).saturating_mul(u128::from(numerator));
    let q = product.div_ceil(u128::from(denominator));
    // q <= total because numerator <= denominator.
    u64::try_from(q).map_err(|_| Error::CountOverflow)
}

/// `floor(total * numerator / denominator) + 1`: the least sum strictly above the share.
pub fn more_than_share(numerator: u64, denominator: u64, total: u64) -> Result<u64, Error> {
    check_share(numerator, denominator)?;
    let product = u128::from(total).saturating_mul(u128::from(numerator));
    // check_share refused a zero denominator.
    let q = product
        .checked_div(u128::from(denominator))
        .unwrap_or(0)
        .saturating_add(1);
    u64::try_from(q).map_err(|_| Error::CountOverflow)
}

/// Quota for "yes-sum `cmp` `bound`" where the attribute totals `total`.
pub fn threshold(cmp: Comparison, bound: Bound, total: u64) -> Result<u64, Error> {
    match (cmp, bound) {
        (Comparison::AtMost | Comparison::LessThan, _) => Err(Error::NonMonotone),
        (Comparison::AtLeast, Bound::Amount(k)) => Ok(k),
        (Comparison::MoreThan, Bound::Amount(k)) => k.checked_add(1).ok_or(Error::CountOverflow),
        (
            Comparison::AtLeast,
            Bound::Share {
                numerator,
                denominator,
            },
        ) => at_least_share(numerator, denominator, total),
        (
            Comparison::MoreThan,
            Bound::Share {
                numerator,
                denominator,
            },
        ) => more_than_share(numerator, denominator, total),
    }
}

/// Quota for "the no-sum `cmp` `bound`", with the no-sum being `total - yes`.
///
/// Only upper bounds on the no side are monotone in yes votes: "fewer than 4
/// against" and "at most 3 against" are fine; "more than 4 against" is not.
pub fn against(cmp: Comparison, bound: Bound, total: u64) -> Result<u64, Error> {
    // Express the bound as "no <= limit", then yes >= total - limit.
    let limit: Option<u64> = match (cmp, bound) {
        (Comparison::AtLeast | Comparison::MoreThan, _) => return Err(Error::NonMonotone),
        (Comparison::AtMost, Bound::Amount(k)) => Some(k),
        (Comparison::LessThan, Bound::Amount(k)) => k.checked_sub(1),
        (
            Comparison::AtMost,
            Bound::Share {
                numerator,
                denominator,
            },
        ) => {
            // no <= share*T  <=>  no <= floor(share*T)
            check_share(numerator, denominator)?;
            let product = u128::from(total).saturating_mul(u128::from(numerator));
            // share <= 1, so the floor is at most total and fits in u64.
            Some(product.checked_div(u128::from(denominator)).unwrap_or(0) as u64)
        }
        (
            Comparison::LessThan,
            Bound::Share {
                numerator,
                denominator,
            },
        ) => {
            // no < share*T  <=>  no <= ceil(share*T) - 1
            let c = at_least_share(numerator, denominator, total)?;
            c.checked_sub(1)
        }
    };
    match limit {
        // "fewer than 0 against": nothing passes; one more than the total.
        None => total.checked_add(1).ok_or(Error::CountOverflow),
        Some(l) => Ok(total.saturating_sub(l)),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn documented_roundings() {
        // The examples in the module table (common practice for "majority of").
        assert_eq!(more_than_share(1, 2, 115), Ok(58));
        assert_eq!(more_than_share(1, 2, 100), Ok(51));
        assert_eq!(at_least_share(65, 100, 1001), Ok(651));
        assert_eq!(at_least_share(2, 3, 435), Ok(290));
        assert_eq!(at_least_share(2, 3, 300), Ok(200));
        assert_eq!(at_least_share(625, 1000, 8), Ok(5));
        assert_eq!(against(Comparison::LessThan, Bound::Amount(4), 27), Ok(24));
        assert_eq!(against(Comparison::AtMost, Bound::Amount(3), 27), Ok(24));
        assert_eq!(against(Comparison::LessThan, Bound::Amount(0), 27), Ok(28));
        assert_eq!(against(Comparison::LessThan, Bound::Amount(40), 27), Ok(0));
    }

    #[test]
    fn non_monotone_and_bad_shares() {
        assert_eq!(
            threshold(Comparison::LessThan, Bound::Amount(10), 50),
            Err(Error::NonMonotone)
        );
        assert_eq!(
            against(Comparison::MoreThan, Bound::Amount(1), 5),
            Err(Error::NonMonotone)
        );
        assert!(matches!(at_least_share(3, 2, 10), Err(Error::BadFraction { .. })));
        assert!(matches!(at_least_share(1, 0, 10), Err(Error::BadFraction { .. })));
        assert_eq!(
            threshold(Comparison::MoreThan, Bound::Amount(u64::MAX), 5),
            Err(Error::CountOverflow)
        );
    }

    proptest::proptest! {
        /// The quota is the least integer sum that satisfies the condition.
        #[test]
        fn quota_is_least_satisfying_sum(total in 0u64..10_000, num in 0u64..=100, extra in 0u64..=100) {
            let den = num + extra;
            proptest::prop_assume!(den > 0);
            let q = at_least_share(num, den, total).unwrap();
            proptest::prop_assert!(u128::from(q) * u128::from(den) >= u128::from(num) * u128::from(total));
            if q > 0 {
                proptest::prop_assert!(u128::from(q - 1) * u128::from(den) < u128::from(num) * u128::from(total));
            }
            let q = more_than_share(num, den, total).unwrap();
            proptest::prop_assert!(u128::from(q) * u128::from(den) > u128::from(num) * u128::from(total));
            proptest::prop_assert!(u128::from(q - 1) * u128::from(den) <= u128::from(num) * u128::from(total));
        }
    }
}
