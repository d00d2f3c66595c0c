//! Numbers as written to exact values: integers (`1_000`), percentages
//! (`62.5%`) and fractions (`2/3`), each refused with a located error when
//! it does not fit.
//!
//! Every integer fits in `u64`; a percentage has at most [`MAX_DECIMALS`]
//! decimals (so that its denominator `10^(decimals + 2)` fits in `u64`) and
//! is at most 100%; a fraction has a non-zero denominator and is at most 1.
//! No floats anywhere. Time O(digits); no arithmetic that can overflow
//! (digits go through `str::parse::<u64>`, which refuses what does not fit).

use super::tree::{AmountValue, Quantity};
use crate::diagnostic::{Diagnostic, Span};

/// Most decimals in a percentage (so that `10^(decimals+2)` fits in `u64`).
pub const MAX_DECIMALS: usize = 15;

/// `1_000` as 1000; too large for `u64` is an error at `span`.
pub(super) fn integer(written: &str, span: Span) -> Result<u64, Diagnostic> {
    written.replace('_', "").parse::<u64>().map_err(|_| {
        Diagnostic::error(span, format!("the number {written} is too large"))
            .with_hint("numbers are at most 18_446_744_073_709_551_615 (2^64 - 1)")
    })
}

/// `1520.565494` (or `412_000`) as an exact [`Quantity`]; more than 38
/// digits is an error at `span`.
pub(super) fn quantity(written: &str, span: Span) -> Result<Quantity, Diagnostic> {
    let digits = written.replace('_', "");
    let (whole, decimals) = digits.split_once('.').unwrap_or((&digits, ""));
    format!("{whole}{decimals}")
        .parse::<u128>()
        .map(|mantissa| Quantity {
            mantissa,
            scale: decimals.len() as u32,
            span,
        })
        .map_err(|_| {
            Diagnostic::error(span, format!("the number {written} is too large"))
                .with_hint("amounts have at most 38 digits")
        })
}

/// `62.5%` as the share 625/1000 (the percent sign included in `written`).
pub(super) fn percent(written: &str, span: Span) -> Result<AmountValue, Diagnostic> {
    let text = written.trim_end_matches('%').replace('_', "");
    let (whole, decimals) = text.split_once('.').unwrap_or((&text, ""));
    if decimals.len() > MAX_DECIMALS {
        return Err(Diagnostic::error(
            span,
            format!("the percentage has more than {MAX_DECIMALS} decimals"),
        )
        .with_hint("write the share as a fraction instead, e.g. `2/3`"));
    }
    let numerator = format!("{whole}{decimals}").parse::<u64>().ok();
    // decimals.len() <= MAX_DECIMALS = 15, so the power is at most 10^17.
    let denominator = 10u64.pow(decimals.len() as u32 + 2);
    match numerator {
        Some(n) if n <= denominator => Ok(AmountValue::Share {
            numerator: n,
            denominator,
            percent: true,
        }),
        _ => Err(
            Diagnostic::error(span, format!("the percentage {written} is above 100%")).with_hint(
                "a share of the total is at most 100%; for an absolute amount write a plain number",
            ),
        ),
    }
}

/// `numerator/denominator` (already read as integers) as a share of the total.
pub(super) fn fraction(
    written: &str,
    numerator: u64,
    denominator: u64,
    span: Span,
) -> Result<AmountValue, Diagnostic> {
    if denominator == 0 {
        return Err(
            Diagnostic::error(span, format!("the fraction {written} has a zero denominator"))
                .with_hint("write a share such as `2/3`"),
        );
    }
    if numerator > denominator {
        return Err(Diagnostic::error(
            span,
            format!("the share {numerator}/{denominator} is more than the whole"),
        )
        .with_hint("a share of the total is at most 1; for an absolute amount write a plain number"));
    }
    Ok(AmountValue::Share {
        numerator,
        denominator,
        percent: false,
    })
}

/// `0.5`: the grammar reads it so that the error can say what to write instead.
pub(super) fn bare_decimal(written: &str, span: Span) -> Diagnostic {
    Diagnostic::error(span, format!("`{written}` is a decimal without a percent sign"))
        .with_hint("amounts are whole numbers; write a share as a percentage (`62.5%`) or a fraction (`5/8`)")
}

#[cfg(test)]
mod tests {
    use super::*;

    const AT: Span = Span { start: 3, end: 7 };

    fn share(numerator: u64, denominator: u64, percent: bool) -> AmountValue {
        AmountValue::Share {
            numerator,
            denominator,
            percent,
        }
    }

    #[test]
    fn integers_fit_u64_or_are_refused() {
        assert_eq!(integer("1_000", AT), Ok(1000));
        assert_eq!(integer("18446744073709551615", AT), Ok(u64::MAX));
        let e = integer("18446744073709551616", AT).unwrap_err();
        assert_eq!(e.message, "the number 18446744073709551616 is too large");
        assert_eq!(e.span, AT);
    }

    #[test]
    fn percentages_are_exact_shares() {
        assert_eq!(percent("62.5%", AT), Ok(share(625, 1000, true)));
        assert_eq!(percent("100%", AT), Ok(share(100, 100, true)));
        assert_eq!(
            percent("0.000000000000001%", AT),
            Ok(share(1, 100_000_000_000_000_000, true))
        );
        let over = percent("100.000000000000001%", AT).unwrap_err();
        assert_eq!(over.message, "the percentage 100.000000000000001% is above 100%");
        let precise = percent("1.0000000000000001%", AT).unwrap_err();
        assert_eq!(precise.message, "the percentage has more than 15 decimals");
        // Digits beyond u64 are "above 100%", never a wrap.
        assert!(percent("99999999999999999999999%", AT).is_err());
    }

    #[test]
    fn fractions_are_at_most_one_with_a_denominator() {
        assert_eq!(fraction("2/3", 2, 3, AT), Ok(share(2, 3, false)));
        assert_eq!(
            fraction("1/0", 1, 0, AT).unwrap_err().message,
            "the fraction 1/0 has a zero denominator"
        );
        assert_eq!(
            fraction("3/2", 3, 2, AT).unwrap_err().message,
            "the share 3/2 is more than the whole"
        );
        assert_eq!(
            bare_decimal("0.5", AT).message,
            "`0.5` is a decimal without a percent sign"
        );
    }
}
