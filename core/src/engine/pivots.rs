//! Index arithmetic shared by the engines: n!, Shapley-Shubik values from
//! pivot counts by coalition size, the reciprocal sums behind the Johnston
//! and Deegan-Packel indices.
//!
//! Each function is O(n) counter operations on slices of at most n counts,
//! no heap. Overflow: every exact value goes through the checked
//! [`Counter`] and is [`Error::CountOverflow`] when it does not fit, except
//! the Shapley-Shubik numerator over n!, which is `None` then (the `f64`
//! value is summed from exact ratios and still given).

use crate::model::count::{ratio, scaled, Counter};
use crate::model::error::Error;

/// n! in the count type.
pub(crate) fn factorial<C: Counter>(n: usize) -> Result<C, Error> {
    let mut f = C::ONE;
    for k in 2..=n as u64 {
        f = f.mul_u64(k)?;
    }
    Ok(f)
}

/// Shapley-Shubik value and exact numerator (over n!) from pivot counts by
/// size: `by_size[k]` counts coalitions S of k other members that lose
/// alone and win with the member.
///
/// φ = Σ_k by_size[k] * k! (n-1-k)! / n! = Σ_k by_size[k] / (n * C(n-1, k)).
pub(crate) fn shapley_from_sizes<C: Counter>(n: usize, by_size: &[C]) -> Result<(f64, Option<C>), Error> {
    let mut value = 0.0;
    let mut binom = C::ONE; // C(n-1, k)
    let top = n.saturating_sub(1) as u64;
    for (k, &c) in by_size.iter().enumerate().take(n) {
        if !c.is_zero() {
            value += ratio(c, binom);
        }
        let k = k as u64;
        if k < top {
            // k < top: both factors are positive.
            let (q, r) = binom
                .mul_u64(top.saturating_sub(k))?
                .div_rem_u64(k.saturating_add(1));
            debug_assert_eq!(r, 0);
            binom = q;
        }
    }
    let value = value / n as f64;
    Ok((value, shapley_numerator(n, by_size).ok()))
}

/// Σ_k by_size[k] * k! (n-1-k)!, or an overflow error.
fn shapley_numerator<C: Counter>(n: usize, by_size: &[C]) -> Result<C, Error> {
    // term_k = k! (n-1-k)!; term_0 = (n-1)!; term_{k+1} = term_k (k+1)/(n-1-k).
    let mut term: C = factorial(n.saturating_sub(1))?;
    let mut acc = C::ZERO;
    let top = n.saturating_sub(1) as u64;
    for (k, &c) in by_size.iter().enumerate().take(n) {
        acc = acc.add(c.mul(term)?)?;
        let k = k as u64;
        if k < top {
            let (q, r) = term
                .mul_u64(k.saturating_add(1))?
                .div_rem_u64(top.saturating_sub(k));
            if r != 0 {
                return Err(Error::CountOverflow);
            }
            term = q;
        }
    }
    Ok(acc)
}

/// Johnston or Deegan-Packel raw score: Σ_k counts[k] / (k+1), times 2^-n.
pub(crate) fn reciprocal_sum<C: Counter>(n: usize, counts: &[C]) -> f64 {
    counts
        .iter()
        .enumerate()
        .filter(|(_, c)| !c.is_zero())
        .map(|(k, &c)| scaled(c, n) / (k as f64 + 1.0))
        .fold(0.0, |a, b| a + b)
}

/// Sum of a slice of counts.
pub(crate) fn sum_counts<C: Counter>(counts: &[C]) -> Result<C, Error> {
    counts.iter().try_fold(C::ZERO, |acc, &c| acc.add(c))
}
