//! Exact counts: the [`Counter`] trait and the fixed-width [`Wide`] integer.
//!
//! Every engine is generic over its count type, so a device can count in
//! `u64` or `u128` and an analyst's build in [`Count1024`]. All arithmetic is
//! checked: an overflow is [`crate::Error::CountOverflow`], never a wrap.
//!
//! Costs: `Wide<L>` addition is O(L); multiplication is O(a*b) in the limbs
//! actually in use; conversion to `f64` is O(L).

use core::cmp::Ordering;
use core::fmt;

use crate::model::error::Error;

/// An exact, non-negative integer with checked arithmetic.
pub trait Counter: Copy + Clone + Eq + Ord + fmt::Debug + fmt::Display {
    /// 0.
    const ZERO: Self;
    /// 1.
    const ONE: Self;
    /// Bits of precision (the largest count is `2^BITS - 1`).
    const BITS: u32;
    /// The value `v`.
    fn from_u64(v: u64) -> Self;
    /// `self + rhs`, or `None` on overflow.
    fn checked_add(self, rhs: Self) -> Option<Self>;
    /// `self - rhs`, or `None` when `rhs > self`.
    fn checked_sub(self, rhs: Self) -> Option<Self>;
    /// `self * rhs`, or `None` on overflow.
    fn checked_mul(self, rhs: Self) -> Option<Self>;
    /// `(m, e)` with `self ≈ m * 2^e` and `m` in `[0.5, 1)` (or `(0.0, 0)` for 0).
    /// Keeps ratios of huge counts finite; relative error below 2^-52.
    fn to_f64_parts(self) -> (f64, i32);
    /// The value `v`, or `None` if it does not fit.
    fn from_u128(v: u128) -> Option<Self>;
    /// `(self / d, self % d)` for a non-zero small divisor.
    fn div_rem_u64(self, d: u64) -> (Self, u64);
    /// Whether the value is zero.
    fn is_zero(self) -> bool {
        self == Self::ZERO
    }
    /// `self + rhs`, or [`Error::CountOverflow`].
    fn add(self, rhs: Self) -> Result<Self, Error> {
        self.checked_add(rhs).ok_or(Error::CountOverflow)
    }
    /// `self - rhs`, or [`Error::CountOverflow`] (an internal inconsistency).
    fn sub(self, rhs: Self) -> Result<Self, Error> {
        self.checked_sub(rhs).ok_or(Error::CountOverflow)
    }
    /// `self * rhs`, or [`Error::CountOverflow`].
    fn mul(self, rhs: Self) -> Result<Self, Error> {
        self.checked_mul(rhs).ok_or(Error::CountOverflow)
    }
    /// `self * v` for a small factor.
    fn mul_u64(self, v: u64) -> Result<Self, Error> {
        self.mul(Self::from_u64(v))
    }
    /// `2^k`, or [`Error::CountOverflow`].
    fn pow2(k: u32) -> Result<Self, Error> {
        if k >= Self::BITS {
            return Err(Error::CountOverflow);
        }
        let mut v = Self::ONE;
        let mut left = k;
        while left > 0 {
            let step = left.min(32);
            v = v.mul_u64(1u64 << step)?;
            left = left.saturating_sub(step);
        }
        Ok(v)
    }
    /// The value as an `f64` (infinite beyond `f64::MAX`).
    fn to_f64(self) -> f64 {
        let (m, e) = self.to_f64_parts();
        libm::ldexp(m, e)
    }
}

/// `a / b` as an `f64`, exact to rounding even when both exceed `f64::MAX`.
/// Returns 0 when `b` is zero (an empty denominator means no power to share).
pub fn ratio<C: Counter>(a: C, b: C) -> f64 {
    if b.is_zero() {
        return 0.0;
    }
    let (ma, ea) = a.to_f64_parts();
    let (mb, eb) = b.to_f64_parts();
    // Mantissas are in [0.5, 1); exponents of counts are far from i32's ends.
    libm::ldexp(ma / mb, ea.saturating_sub(eb))
}

/// `count * 2^-shift` as an `f64`, without forming 2^shift.
pub(crate) fn scaled<C: Counter>(count: C, shift: usize) -> f64 {
    let (m, e) = count.to_f64_parts();
    libm::ldexp(m, e.saturating_sub(shift as i32))
}

fn parts_u128(v: u128) -> (f64, i32) {
    if v == 0 {
        return (0.0, 0);
    }
    let bits = 128i32.saturating_sub(v.leading_zeros() as i32);
    // Keep the top 64 bits; the rest only moves the value by < 2^-63 relative.
    let shift = bits.saturating_sub(64).max(0);
    let top = v.checked_shr(shift as u32).unwrap_or(0) as u64;
    let (m, e) = libm::frexp(top as f64);
    (m, e.saturating_add(shift))
}

macro_rules! native_counter {
    ($t:ty) => {
        impl Counter for $t {
            const ZERO: Self = 0;
            const ONE: Self = 1;
            const BITS: u32 = <$t>::BITS;
            fn from_u64(v: u64) -> Self {
                v as $t
            }
            fn checked_add(self, rhs: Self) -> Option<Self> {
                <$t>::checked_add(self, rhs)
            }
            fn checked_sub(self, rhs: Self) -> Option<Self> {
                <$t>::checked_sub(self, rhs)
            }
            fn checked_mul(self, rhs: Self) -> Option<Self> {
                <$t>::checked_mul(self, rhs)
            }
            fn to_f64_parts(self) -> (f64, i32) {
                parts_u128(self as u128)
            }
            fn from_u128(v: u128) -> Option<Self> {
                <$t>::try_from(v).ok()
            }
            fn div_rem_u64(self, d: u64) -> (Self, u64) {
                let d = d as $t;
                // A zero divisor breaks the trait's contract; answer (0, 0) rather than panic.
                (
                    self.checked_div(d).unwrap_or(0),
                    self.checked_rem(d).unwrap_or(0) as u64,
                )
            }
        }
    };
}
native_counter!(u64);
native_counter!(u128);

/// A fixed-width unsigned integer of `L` 64-bit limbs (little-endian limbs).
///
/// Just what exact counting needs: checked add, subtract and multiply,
/// comparison, conversion to `f64`, and decimal display without allocation.
#[derive(Clone, Copy, PartialEq, Eq, Hash)]
pub struct Wide<const L: usize> {
    limbs: [u64; L],
}

/// 1024-bit counts: exact for every count over up to 1023 members.
pub type Count1024 = Wide<16>;

impl<const L: usize> Wide<L> {
    /// The limbs, least significant first.
    pub fn limbs(&self) -> &[u64; L] {
        &self.limbs
    }

    /// From limbs, least significant first.
    pub fn from_limbs(limbs: [u64; L]) -> Self {
        Wide { limbs }
    }

    fn used(&self) -> usize {
        self.limbs
            .iter()
            .rposition(|&l| l != 0)
            .map_or(0, |i| i.saturating_add(1))
    }

    /// Divides in place by a small divisor, returning the remainder.
    fn div_rem_small(&mut self, d: u64) -> u64 {
        let Some(d) = core::num::NonZeroU128::new(u128::from(d)) else {
            // A zero divisor breaks the trait's contract; answer (0, 0) rather than panic.
            self.limbs = [0; L];
            return 0;
        };
        let mut rem: u128 = 0;
        for limb in self.limbs.iter_mut().rev() {
            // rem < d <= 2^64, so the shift keeps every bit.
            let cur = (rem << 64) | u128::from(*limb);
            *limb = (cur / d) as u64;
            rem = cur % d;
        }
        rem as u64
    }
}

impl<const L: usize> Ord for Wide<L> {
    fn cmp(&self, other: &Self) -> Ordering {
        for (a, b) in self.limbs.iter().zip(&other.limbs).rev() {
            match a.cmp(b) {
                Ordering::Equal => continue,
                o => return o,
            }
        }
        Ordering::Equal
    }
}

impl<const L: usize> PartialOrd for Wide<L> {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

impl<const L: usize> Counter for Wide<L> {
    const ZERO: Self = Wide { limbs: [0; L] };
    const ONE: Self = {
        let mut limbs = [0; L];
        limbs[0] = 1;
        Wide { limbs }
    };
    const BITS: u32 = 64 * L as u32;

    fn from_u64(v: u64) -> Self {
        let mut limbs = [0; L];
        if let Some(low) = limbs.first_mut() {
            *low = v;
        }
        Wide { limbs }
    }

    fn checked_add(self, rhs: Self) -> Option<Self> {
        let mut out = [0u64; L];
        let mut carry = false;
        for ((o, a), b) in out.iter_mut().zip(&self.limbs).zip(&rhs.limbs) {
            let (s1, c1) = a.overflowing_add(*b);
            let (s2, c2) = s1.overflowing_add(u64::from(carry));
            *o = s2;
            carry = c1 || c2;
        }
        (!carry).then_some(Wide { limbs: out })
    }

    fn checked_sub(self, rhs: Self) -> Option<Self> {
        let mut out = [0u64; L];
        let mut borrow = false;
        for ((o, a), b) in out.iter_mut().zip(&self.limbs).zip(&rhs.limbs) {
            let (d1, b1) = a.overflowing_sub(*b);
            let (d2, b2) = d1.overflowing_sub(u64::from(borrow));
            *o = d2;
            borrow = b1 || b2;
        }
        (!borrow).then_some(Wide { limbs: out })
    }

    // Schoolbook multiplication, the hot path of wide counts: i < na <= L,
    // j < nb <= L, and every write is behind `k < L`; a u64 * u64 product
    // plus two u64 carries is below 2^128. Indexing and plain arithmetic are
    // therefore in range and cannot overflow (see DEVELOPERS.md, "Panics").
    #[allow(clippy::indexing_slicing, clippy::arithmetic_side_effects)]
    fn checked_mul(self, rhs: Self) -> Option<Self> {
        let (na, nb) = (self.used(), rhs.used());
        if na == 0 || nb == 0 {
            return Some(Self::ZERO);
        }
        if na + nb > L + 1 {
            return None;
        }
        let mut out = [0u64; L];
        for i in 0..na {
            let mut carry: u128 = 0;
            for j in 0..nb {
                let k = i + j;
                let cur = u128::from(self.limbs[i]) * u128::from(rhs.limbs[j]) + carry;
                if k >= L {
                    if cur != 0 {
                        return None;
                    }
                    carry = 0;
                    continue;
                }
                let sum = cur + u128::from(out[k]);
                out[k] = sum as u64;
                carry = sum >> 64;
            }
            if carry != 0 {
                let k = i + nb;
                if k >= L {
                    return None;
                }
                out[k] = carry as u64;
            }
        }
        Some(Wide { limbs: out })
    }

    fn from_u128(v: u128) -> Option<Self> {
        let mut limbs = [0u64; L];
        match &mut limbs[..] {
            [] => return (v == 0).then_some(Wide { limbs }),
            [low] => *low = u64::try_from(v).ok()?,
            [low, high, ..] => {
                *low = v as u64;
                *high = (v >> 64) as u64;
            }
        }
        Some(Wide { limbs })
    }

    fn div_rem_u64(self, d: u64) -> (Self, u64) {
        let mut q = self;
        let r = q.div_rem_small(d);
        (q, r)
    }

    fn to_f64_parts(self) -> (f64, i32) {
        let n = self.used();
        match self.limbs.get(..n).unwrap_or(&[]) {
            [] => (0.0, 0),
            [low] => parts_u128(u128::from(*low)),
            [.., next, top] => {
                let top = (u128::from(*top) << 64) | u128::from(*next);
                let (m, e) = parts_u128(top);
                // n <= L limbs: the exponent is at most 64 L, far inside i32.
                (
                    m,
                    e.saturating_add(64i32.saturating_mul((n as i32).saturating_sub(2))),
                )
            }
        }
    }
}

impl<const L: usize> fmt::Display for Wide<L> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        // 10^19 is the largest power of ten in a u64. The 19-digit chunks are
        // found least significant first and kept in two arrays of L words
        // (64 bits hold 19.3 digits, so L limbs give at most 1.02 L + 2
        // chunks, below 2 L for every L): a loop, not a recursion whose
        // depth grows with the number (a 65,535-member count has 1,039
        // chunks, and a frame per chunk holding a `Wide` overflowed the
        // stack of a worker thread).
        const CHUNK: u64 = 10_000_000_000_000_000_000;
        fn write_chunks<const L: usize>(v: Wide<L>, out: &mut dyn fmt::Write) -> fmt::Result {
            let mut low = [0u64; L];
            let mut high = [0u64; L];
            let mut count = 0usize;
            let mut rest = v;
            loop {
                let (q, r) = rest.div_rem_u64(CHUNK);
                let slot = match count.checked_sub(L) {
                    None => low.get_mut(count),
                    Some(k) => high.get_mut(k),
                };
                *slot.ok_or(fmt::Error)? = r;
                count = count.checked_add(1).ok_or(fmt::Error)?;
                if q.used() == 0 {
                    break;
                }
                rest = q;
            }
            let chunk = |k: usize| match k.checked_sub(L) {
                None => low.get(k).copied().unwrap_or(0),
                Some(j) => high.get(j).copied().unwrap_or(0),
            };
            let top = count.saturating_sub(1);
            write!(out, "{}", chunk(top))?;
            for k in (0..top).rev() {
                write!(out, "{:019}", chunk(k))?;
            }
            Ok(())
        }
        if f.width().is_none() {
            return write_chunks(*self, f);
        }
        // Padding needs the whole text first; 1024-bit counts have at most
        // 309 digits. Longer numbers are written unpadded.
        let mut buf = DigitBuf {
            bytes: [0; 512],
            len: 0,
        };
        match write_chunks(*self, &mut buf) {
            Ok(()) => f.pad_integral(true, "", buf.as_str()),
            Err(_) => write_chunks(*self, f),
        }
    }
}

struct DigitBuf {
    bytes: [u8; 512],
    len: usize,
}

impl DigitBuf {
    fn as_str(&self) -> &str {
        core::str::from_utf8(self.bytes.get(..self.len).unwrap_or(&[])).unwrap_or("")
    }
}

impl fmt::Write for DigitBuf {
    fn write_str(&mut self, s: &str) -> fmt::Result {
        let end = self.len.checked_add(s.len()).ok_or(fmt::Error)?;
        let dest = self.bytes.get_mut(self.len..end).ok_or(fmt::Error)?;
        dest.copy_from_slice(s.as_bytes());
        self.len = end;
        Ok(())
    }
}

impl<const L: usize> fmt::Debug for Wide<L> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        fmt::Display::fmt(self, f)
    }
}

/// Binomial coefficient `C(n, k)` in count type `C`.
pub fn binomial<C: Counter>(n: u64, k: u64) -> Result<C, Error> {
    if k > n {
        return Ok(C::ZERO);
    }
    let k = k.min(n.saturating_sub(k));
    // C(n, i+1) = C(n, i) * (n - i) / (i + 1); the division is exact.
    let mut acc = C::ONE;
    for i in 0..k {
        // i < k <= n / 2: both factors are positive.
        acc = acc.mul_u64(n.saturating_sub(i))?;
        let (q, rem) = acc.div_rem_u64(i.saturating_add(1));
        if rem != 0 {
            return Err(Error::CountOverflow);
        }
        acc = q;
    }
    Ok(acc)
}

#[cfg(test)]
mod tests {
    use super::*;
    extern crate std;
    use std::string::ToString;

    type W2 = Wide<2>;

    #[test]
    fn the_widest_counts_print_on_a_small_stack() {
        // 10^19000 in 1025 limbs: 1,001 chunks of 19 digits, printed on a
        // 256 KiB thread (the recursive printer needed about 8 MiB).
        let text = std::thread::Builder::new()
            .stack_size(256 << 10)
            .spawn(|| {
                let mut v = Wide::<1025>::ONE;
                for _ in 0..19_000 {
                    v = v.mul_u64(10).unwrap();
                }
                (v.to_string(), std::format!("{:>5}", Wide::<1025>::from_u64(42)))
            })
            .unwrap()
            .join()
            .unwrap();
        assert_eq!(text.0.len(), 19_001);
        assert!(text.0.starts_with("10000") && text.0.bytes().skip(1).all(|b| b == b'0'));
        assert_eq!(text.1, "   42");
        assert_eq!(W2::ZERO.to_string(), "0");
        assert_eq!(w(u128::MAX).to_string(), u128::MAX.to_string());
    }

    fn w(v: u128) -> W2 {
        W2::from_limbs([v as u64, (v >> 64) as u64])
    }

    proptest::proptest! {
        #[test]
        fn wide_matches_u128(a: u128, b: u128) {
            proptest::prop_assert_eq!(w(a).checked_add(w(b)).map(|x| x.to_string()), a.checked_add(b).map(|x| x.to_string()));
            proptest::prop_assert_eq!(w(a).checked_sub(w(b)).map(|x| x.to_string()), a.checked_sub(b).map(|x| x.to_string()));
            proptest::prop_assert_eq!(w(a).checked_mul(w(b)).map(|x| x.to_string()), a.checked_mul(b).map(|x| x.to_string()));
            proptest::prop_assert_eq!(w(a).cmp(&w(b)), a.cmp(&b));
            proptest::prop_assert_eq!(w(a).to_f64(), a.to_f64());
        }
    }

    #[test]
    fn binomials() {
        assert_eq!(binomial::<u64>(5, 2).unwrap(), 10);
        assert_eq!(binomial::<u128>(100, 50).unwrap(), 100891344545564193334812497256);
        // C(536, 268) needs about 532 bits: exact in 1024 bits, overflow in 128.
        assert!(binomial::<Count1024>(536, 268).is_ok());
        assert_eq!(binomial::<u128>(536, 268), Err(Error::CountOverflow));
    }

    #[test]
    fn pow2_and_display() {
        let p = Count1024::pow2(200).unwrap();
        // 2^200 (a mathematical identity, checked against Python's int).
        assert_eq!(
            p.to_string(),
            "1606938044258990275541962092341162602522202993782792835301376"
        );
        assert_eq!(Count1024::pow2(1024), Err(Error::CountOverflow));
        assert_eq!(
            ratio(Count1024::pow2(1000).unwrap(), Count1024::pow2(999).unwrap()),
            2.0
        );
    }
}
