//! Exact decimal amounts and the integer arithmetic of scaling them.
//!
//! An attribute declared `attribute tokens decimals 18` holds amounts such
//! as `1520.565494`, read exactly as integers of *base units* (10^-18 of a
//! token): 1520565494000000000000. No floats anywhere. When the base units
//! are too large for the core (totals above `MAX_TOTAL`, 2^64 - 4), weights
//! are counted in a declared `unit` instead, each rounded to the nearest
//! unit; the rounding is certified by the report (`clout::report`), never
//! hidden.
//!
//! Limits: at most [`MAX_DECIMALS`] decimals; an attribute's exact total at
//! most [`MAX_EXACT_TOTAL`] base units (2^94 - 1, about 1.98e28: 19.8
//! billion tokens of 18 decimals), so that every four-state form over the
//! exact sums (coefficients below 2^31, three terms) stays inside `i128`.
//! Every operation is O(digits) or O(1).

/// Most decimals an attribute may declare (10^30 fits in `u128`).
pub const MAX_DECIMALS: u32 = 30;

/// Largest exact total of an attribute, in base units: 2^94 - 1.
pub const MAX_EXACT_TOTAL: u128 = (1 << 94) - 1;

/// Why a written amount was refused.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum AmountError {
    /// Nothing written.
    Empty,
    /// A minus sign.
    Negative,
    /// An exponent (`1e18`).
    Exponent,
    /// Not digits with at most one decimal point.
    NotANumber,
    /// More decimals than the attribute declares.
    TooManyDecimals {
        /// Decimals written.
        found: u32,
        /// Decimals declared.
        allowed: u32,
    },
    /// More than [`MAX_EXACT_TOTAL`] base units.
    TooLarge,
}

impl AmountError {
    /// A short message naming `written`, and a hint.
    pub fn describe(&self, written: &str, attribute: &str) -> (String, String) {
        let shown = format!("`{}`", crate::quote::shown(written));
        match self {
            AmountError::Empty => (
                format!("the amount of `{attribute}` is empty"),
                "write 0 for a member without any".to_string(),
            ),
            AmountError::Negative => (
                format!("the amount {shown} of `{attribute}` is negative"),
                "weights are amounts of at least 0".to_string(),
            ),
            AmountError::Exponent => (
                format!("the amount {shown} of `{attribute}` has an exponent"),
                "write every digit (`1000000000000000000`, or `1.5` with the attribute's decimals); exponents are not exact".to_string(),
            ),
            AmountError::NotANumber => (
                format!("the amount {shown} of `{attribute}` is not a number"),
                "write digits with at most one decimal point, without thousands separators or units (`1520.565494`)".to_string(),
            ),
            AmountError::TooManyDecimals { found, allowed: 0 } => (
                format!("the amount {shown} of `{attribute}` has {found} decimals; `{attribute}` declares none"),
                format!("declare them, e.g. `attribute {attribute} decimals {found}`"),
            ),
            AmountError::TooManyDecimals { found, allowed } => (
                format!("the amount {shown} of `{attribute}` has {found} decimals, more than the {allowed} declared"),
                format!("amounts are read exactly, never rounded: declare `attribute {attribute} decimals {found}` or correct the amount"),
            ),
            AmountError::TooLarge => (
                format!("the amount {shown} of `{attribute}` is too large"),
                format!("exact amounts are at most {MAX_EXACT_TOTAL} base units (2^94 - 1)"),
            ),
        }
    }
}

/// 10^d for d <= [`MAX_DECIMALS`].
pub fn pow10(d: u32) -> u128 {
    10u128.pow(d.min(MAX_DECIMALS))
}

/// `written` (digits, at most one `.`, nothing else; surrounding spaces
/// allowed) in base units of 10^-`decimals`.
pub fn parse(written: &str, decimals: u32) -> Result<u128, AmountError> {
    let text = written.trim();
    if text.is_empty() {
        return Err(AmountError::Empty);
    }
    if text.starts_with('-') {
        return Err(AmountError::Negative);
    }
    let (whole, fraction) = text.split_once('.').unwrap_or((text, ""));
    let digits = |s: &str| !s.is_empty() && s.bytes().all(|b| b.is_ascii_digit());
    if !digits(whole) || (text.contains('.') && !digits(fraction)) {
        let exponent = text.contains(['e', 'E']) && text.bytes().any(|b| b.is_ascii_digit());
        let scientific = exponent && text.bytes().all(|b| b.is_ascii_digit() || b"eE+-.".contains(&b));
        return Err(if scientific {
            AmountError::Exponent
        } else {
            AmountError::NotANumber
        });
    }
    let found = fraction.len() as u32;
    if found > decimals {
        return Err(AmountError::TooManyDecimals {
            found,
            allowed: decimals,
        });
    }
    let scaled = |s: &str, power: u32| -> Option<u128> {
        // Leading zeros are fine; at most 39 significant digits fit.
        let s = s.trim_start_matches('0');
        if s.is_empty() {
            return Some(0);
        }
        s.parse::<u128>().ok()?.checked_mul(pow10(power))
    };
    let value = scaled(whole, decimals)
        .zip(scaled(fraction, decimals - found))
        .and_then(|(w, f)| w.checked_add(f))
        .filter(|&v| v <= MAX_EXACT_TOTAL);
    value.ok_or(AmountError::TooLarge)
}

/// A quantity `mantissa / 10^scale` from rule text in base units of
/// 10^-`decimals`.
pub fn from_quantity(mantissa: u128, scale: u32, decimals: u32) -> Result<u128, AmountError> {
    if scale > decimals {
        return Err(AmountError::TooManyDecimals {
            found: scale,
            allowed: decimals,
        });
    }
    mantissa
        .checked_mul(pow10(decimals - scale))
        .filter(|&v| v <= MAX_EXACT_TOTAL)
        .ok_or(AmountError::TooLarge)
}

/// `x / unit` rounded to the nearest integer, halves up. `unit > 0`.
pub fn round_to_unit(x: u128, unit: u128) -> u128 {
    let (q, r) = (x / unit, x % unit);
    // r < unit, so r >= unit - r compares without overflow.
    q + u128::from(r >= unit - r)
}

/// `ceil(x / unit)` for any sign of `x`. `unit > 0`.
pub fn ceil_div(x: i128, unit: u128) -> i128 {
    let u = i128::try_from(unit).unwrap_or(i128::MAX);
    x.div_euclid(u) + i128::from(x.rem_euclid(u) != 0)
}

/// `floor(t * p / d)` and whether the division was exact, for `d > 0`,
/// without overflow: `t * p` may need 192 bits; the quotient is at most `t`
/// when `p <= d`.
pub fn mul_div(t: u128, p: u64, d: u64) -> (u128, bool) {
    let (p, d) = (u128::from(p), u128::from(d));
    let (hi, lo) = (t >> 64, t & u128::from(u64::MAX));
    // t * p = (hi * p) * 2^64 + lo * p; divide the high part first.
    let a = hi * p;
    let (qa, ra) = (a / d, a % d);
    // Remainder: ra * 2^64 + lo * p = (ra + bh) * 2^64 + bl.
    let b = lo * p;
    let (bh, bl) = (b >> 64, b & u128::from(u64::MAX));
    let c = ra + bh;
    let (qc, rc) = (c / d, c % d);
    // rc < d < 2^64, so rc * 2^64 + bl < 2^128.
    let e = (rc << 64) + bl;
    let (qe, re) = (e / d, e % d);
    let q = ((qa + qc) << 64).wrapping_add(qe);
    (q, re == 0)
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    #[test]
    fn amounts_are_exact_base_units() {
        assert_eq!(parse("1520.565494", 18), Ok(1_520_565_494_000_000_000_000));
        assert_eq!(parse(" 7 ", 0), Ok(7));
        assert_eq!(parse("0.000000000000000001", 18), Ok(1));
        assert_eq!(parse("007.50", 2), Ok(750));
        assert_eq!(parse("", 18), Err(AmountError::Empty));
        assert_eq!(parse("-5", 18), Err(AmountError::Negative));
        assert_eq!(parse("1e18", 18), Err(AmountError::Exponent));
        assert_eq!(parse("1,000", 18), Err(AmountError::NotANumber));
        assert_eq!(parse("12.", 18), Err(AmountError::NotANumber));
        assert_eq!(parse(".5", 18), Err(AmountError::NotANumber));
        assert_eq!(parse("abc", 18), Err(AmountError::NotANumber));
        assert_eq!(
            parse("1.5", 0),
            Err(AmountError::TooManyDecimals { found: 1, allowed: 0 })
        );
        assert_eq!(parse(&"9".repeat(40), 0), Err(AmountError::TooLarge));
        assert_eq!(parse(&MAX_EXACT_TOTAL.to_string(), 0), Ok(MAX_EXACT_TOTAL));
        assert_eq!(
            parse(&(MAX_EXACT_TOTAL + 1).to_string(), 0),
            Err(AmountError::TooLarge)
        );
    }

    #[test]
    fn rounding_is_to_the_nearest_unit_halves_up() {
        assert_eq!(round_to_unit(14, 10), 1);
        assert_eq!(round_to_unit(15, 10), 2);
        assert_eq!(round_to_unit(u128::MAX, 3), u128::MAX / 3);
        assert_eq!(ceil_div(-7, 2), -3);
        assert_eq!(ceil_div(7, 2), 4);
        assert_eq!(ceil_div(8, 2), 4);
    }

    proptest! {
        #[test]
        fn mul_div_matches_wide_arithmetic(t in any::<u128>(), p in any::<u64>(), d in 1..=u64::MAX) {
            let (q, exact) = mul_div(t, p.min(d), d);
            // Check q * d <= t * p < (q + 1) * d in 256-bit limbs.
            let p = p.min(d);
            let wide = |x: u128, y: u128| -> [u128; 2] {
                // x * y as (high, low) of 128 bits each.
                let (xh, xl) = (x >> 64, x & u128::from(u64::MAX));
                let (yh, yl) = (y >> 64, y & u128::from(u64::MAX));
                let ll = xl * yl;
                let mid = xh * yl + ((xl * yh) & u128::from(u64::MAX)) + (ll >> 64);
                let low = (ll & u128::from(u64::MAX)) | (mid << 64);
                let high = xh * yh + ((xl * yh) >> 64) + (mid >> 64);
                [high, low]
            };
            let product = wide(t, u128::from(p));
            let below = wide(q, u128::from(d));
            prop_assert!(below <= product);
            let above = wide(q + 1, u128::from(d));
            prop_assert!(product < above);
            prop_assert_eq!(exact, below == product);
        }
    }
}
