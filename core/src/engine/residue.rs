//! Exact swing counts of a one-attribute rule by residues (feature `alloc`).
//!
//! Same generating function as the dense engine without the size
//! dimension, but counted modulo k primes below 2^30 with k just large
//! enough that their product exceeds 2^(n+1), then reconstructed exactly by
//! the Chinese remainder theorem (Garner's algorithm). Each prime's pass is
//! plain `u32` arithmetic over contiguous slices, which the compiler
//! vectorizes, instead of carries across 1024-bit numbers; passes run on
//! every core with `std` and give bit-identical results for any thread count.
//!
//! Time O(k (n + T) q) for T distinct weights and table length q (the cap);
//! space O(q) words per thread. The result is exact: every count is below
//! the product of the primes, so its residues determine it.

// Hot loops index their tables and add bounded integers directly (checked
// arithmetic would cost the engines' speed). Why nothing is out of range or
// overflows, listed in DEVELOPERS.md ("Panics"):
// residues are below 2^30, so the sum of two fits in u32 and a product of two in u64;
// table indices are sums capped at `cap` (the dense engine's bound); the prime count k =
// (n + 2) / 29 + 1 is small; Garner's digits are reduced modulo their prime.
#![allow(clippy::indexing_slicing, clippy::arithmetic_side_effects)]

use alloc::vec;
use alloc::vec::Vec;

use crate::engine::counts::{MemberCounts, RuleCounts};
use crate::engine::member_types::Types;
use crate::model::count::Counter;
use crate::model::engine_id::Engine;
use crate::model::error::Error;
use crate::model::rule::Rule;

/// `a * b mod m`.
fn mul_mod(a: u64, b: u64, m: u64) -> u64 {
    ((u128::from(a) * u128::from(b)) % u128::from(m)) as u64
}

fn pow_mod(mut a: u64, mut e: u64, m: u64) -> u64 {
    let mut r = 1u64;
    a %= m;
    while e > 0 {
        if e & 1 == 1 {
            r = mul_mod(r, a, m);
        }
        a = mul_mod(a, a, m);
        e >>= 1;
    }
    r
}

/// Deterministic Miller-Rabin for 64-bit numbers (the first twelve primes
/// as bases suffice below 3.3 * 10^24; common practice).
fn is_prime(n: u64) -> bool {
    if n < 2 {
        return false;
    }
    const BASES: [u64; 12] = [2, 3, 5, 7, 11, 13, 17, 19, 23, 29, 31, 37];
    for &p in &BASES {
        if n % p == 0 {
            return n == p;
        }
    }
    let (mut d, mut s) = (n - 1, 0);
    while d % 2 == 0 {
        d /= 2;
        s += 1;
    }
    'bases: for &a in &BASES {
        let mut x = pow_mod(a, d, n);
        if x == 1 || x == n - 1 {
            continue;
        }
        for _ in 1..s {
            x = mul_mod(x, x, n);
            if x == n - 1 {
                continue 'bases;
            }
        }
        return false;
    }
    true
}

/// Bits of every prime modulus: residues are `u32` and the sum of two stays
/// below 2^31, so the passes vectorize even with plain SSE2.
const PRIME_BITS: usize = 30;

/// The `k` largest primes below 2^30.
pub(crate) fn primes(k: usize) -> Vec<u64> {
    let mut out = Vec::with_capacity(k);
    let mut c = (1u64 << PRIME_BITS) - 1;
    while out.len() < k {
        if is_prime(c) {
            out.push(c);
        }
        c -= 2;
    }
    out
}

/// What one prime's pass computes, as residues.
struct Pass {
    /// winning, losing, proper witnesses, strong witnesses, then one swing count per type.
    values: Vec<u32>,
}

struct Shape<'a> {
    weights: &'a [u64],
    /// Distinct weights (one per type).
    type_weights: &'a [u64],
    cap: usize,
    first_win: usize,
    /// Sums s in [proper_lo, proper_hi] win together with their complement.
    proper: (usize, usize),
    /// Sums s in [strong_lo, strong_hi] lose together with their complement.
    strong: (usize, usize),
}

fn add_mod(a: u64, b: u64, p: u64) -> u64 {
    let s = a + b;
    if s >= p {
        s - p
    } else {
        s
    }
}

fn sub_mod(a: u64, b: u64, p: u64) -> u64 {
    if a >= b {
        a - b
    } else {
        a + p - b
    }
}

#[inline(always)]
fn add32(a: u32, b: u32, p: u32) -> u32 {
    let s = a + b;
    if s >= p {
        s - p
    } else {
        s
    }
}

#[inline(always)]
fn sub32(a: u32, b: u32, p: u32) -> u32 {
    let d = a.wrapping_sub(b);
    if a >= b {
        d
    } else {
        d.wrapping_add(p)
    }
}

fn range_sum(t: &[u32], (lo, hi): (usize, usize), p: u32) -> u32 {
    if lo > hi || lo >= t.len() {
        return 0;
    }
    t[lo..=hi.min(t.len() - 1)].iter().fold(0, |a, &x| add32(a, x, p))
}

fn pass(shape: &Shape<'_>, p: u32) -> Pass {
    let len = shape.cap + 1;
    let mut f = vec![0u32; len];
    let mut next = vec![0u32; len];
    f[0] = 1;
    for &w in shape.weights {
        let w = w as usize;
        if w == 0 {
            for x in f.iter_mut() {
                *x = add32(*x, *x, p);
            }
            continue;
        }
        // next[s] = f[s] + f[s - w] below the cap; the cap bucket collects the rest.
        let split = len.saturating_sub(1).saturating_sub(w).min(len - 1);
        next[..w.min(len - 1)].copy_from_slice(&f[..w.min(len - 1)]);
        if w < len - 1 {
            let (src, dst) = (&f[..len - 1 - w], &mut next[w..len - 1]);
            for ((d, &a), &b) in dst.iter_mut().zip(&f[w..len - 1]).zip(src) {
                *d = add32(a, b, p);
            }
        }
        let spill = f[split..len].iter().fold(f[len - 1], |a, &x| add32(a, x, p));
        next[len - 1] = spill;
        core::mem::swap(&mut f, &mut next);
    }
    let lose = shape.first_win.min(len);
    let winning = range_sum(&f, (lose, len - 1), p);
    let losing = if lose == 0 {
        0
    } else {
        range_sum(&f, (0, lose - 1), p)
    };
    let mut values = vec![
        winning,
        losing,
        range_sum(&f, shape.proper, p),
        range_sum(&f, shape.strong, p),
    ];
    // Divide out one member of each type without building the quotient:
    // with g = f / (1 + x^w), g[s] = Σ_j (-1)^j f[s - j w] on losing sums, so
    // the swing window Σ_{s in [L - w, L)} g[s] telescopes over prefix sums
    // P(x) = f[0] + ... + f[x] into A_0 - 2 A_1 + 2 A_2 - ..., A_j = P(L - 1 - j w):
    // O(L / w) per type instead of O(L), O(L log L) over distinct weights
    // (the harmonic-sum observation of Kakimura & Terai 2025).
    let prefix = &mut next;
    let mut acc = 0u32;
    for (d, &x) in prefix[..lose].iter_mut().zip(&f[..lose]) {
        acc = add32(acc, x, p);
        *d = acc;
    }
    for &w in shape.type_weights {
        let w = w as usize;
        if w == 0 || lose == 0 {
            values.push(0);
            continue;
        }
        let mut swing = prefix[lose - 1];
        let mut j = 1;
        while j * w < lose {
            let a = prefix[lose - 1 - j * w];
            let twice = add32(a, a, p);
            swing = if j % 2 == 1 {
                sub32(swing, twice, p)
            } else {
                add32(swing, twice, p)
            };
            j += 1;
        }
        values.push(swing);
    }
    Pass { values }
}

/// Horner form of the mixed-radix number: d_0 + p_0 (d_1 + p_1 (d_2 + ...)).
fn from_digits<C: Counter>(digits: &[u64], primes: &[u64]) -> Result<C, Error> {
    let mut x = C::ZERO;
    for i in (0..digits.len()).rev() {
        x = x.mul(C::from_u64(primes[i]))?.add(C::from_u64(digits[i]))?;
    }
    Ok(x)
}

/// Counts swings (no Shapley-Shubik) of a one-attribute rule by residues:
/// attribute `attr`, sums capped at `cap`, least winning sum `first_win`.
pub(crate) fn count<W: AsRef<[u64]>, C: Counter>(
    rule: &Rule<W>,
    attr: usize,
    cap: usize,
    first_win: usize,
    types: &Types<'_>,
    members: &mut [MemberCounts<C>],
) -> Result<RuleCounts<C>, Error> {
    let n = rule.members();
    let total = rule.total(attr) as usize;
    // Winning s whose complement T - s also wins: s >= first_win and T - s >= first_win.
    let proper = (first_win, total.saturating_sub(first_win));
    // Losing s whose complement loses: s < first_win and T - s < first_win.
    let strong = ((total + 1).saturating_sub(first_win), first_win.saturating_sub(1));
    let strong = if first_win == 0 { (1, 0) } else { strong };
    let type_weights: Vec<u64> = (0..types.count)
        .map(|t| rule.weight(attr, types.representative(t)))
        .collect();
    let weights = rule.attribute_weights(attr);
    let shape = Shape {
        weights,
        type_weights: &type_weights,
        cap,
        first_win,
        proper,
        strong,
    };
    // Enough primes that their product (each > 2^61) exceeds 2^(n + 2).
    let k = (n + 2) / (PRIME_BITS - 1) + 1;
    let ps = primes(k);
    let passes = run_passes(&shape, &ps);
    let value = |idx: usize| -> Result<C, Error> {
        let residues: Vec<u64> = passes.iter().map(|p| u64::from(p.values[idx])).collect();
        reconstruct_exact(&residues, &ps)
    };
    let winning = value(0)?;
    let losing = value(1)?;
    let out = RuleCounts {
        winning,
        losing,
        proper: value(2)?.is_zero(),
        strong: value(3)?.is_zero(),
        shapley_shubik: false,
        ..RuleCounts::start(n, Engine::Dense, false)
    };
    for t in 0..types.count {
        let swings = value(4 + t)?;
        for &m in types.members(t) {
            members[m as usize] = MemberCounts {
                swings,
                ..MemberCounts::EMPTY
            };
        }
    }
    Ok(out)
}

/// Reconstructs the integer with the given residues (Garner's algorithm).
fn reconstruct_exact<C: Counter>(residues: &[u64], primes: &[u64]) -> Result<C, Error> {
    let k = primes.len();
    let mut digits = vec![0u64; k];
    for i in 0..k {
        let p = primes[i];
        let mut acc = 0u64;
        let mut prod = 1u64;
        for j in 0..i {
            acc = add_mod(acc, mul_mod(digits[j] % p, prod, p), p);
            prod = mul_mod(prod, primes[j] % p, p);
        }
        let inv = pow_mod(prod, p - 2, p);
        digits[i] = mul_mod(sub_mod(residues[i] % p, acc, p), inv, p);
    }
    from_digits(&digits, primes)
}

#[cfg(feature = "std")]
fn run_passes(shape: &Shape<'_>, primes: &[u64]) -> Vec<Pass> {
    let threads = crate::engine::threads::available().min(primes.len()).max(1);
    // One worker runs here (WebAssembly without threads cannot spawn one).
    if threads == 1 {
        return primes.iter().map(|&p| pass(shape, p as u32)).collect();
    }
    let mut out: Vec<Option<Pass>> = (0..primes.len()).map(|_| None).collect();
    std::thread::scope(|scope| {
        let chunks: Vec<_> = out
            .chunks_mut(primes.len().div_ceil(threads))
            .zip(primes.chunks(primes.len().div_ceil(threads)))
            .collect();
        for (slots, ps) in chunks {
            scope.spawn(move || {
                for (slot, &p) in slots.iter_mut().zip(ps) {
                    *slot = Some(pass(shape, p as u32));
                }
            });
        }
    });
    out.into_iter().flatten().collect()
}

#[cfg(not(feature = "std"))]
fn run_passes(shape: &Shape<'_>, primes: &[u64]) -> Vec<Pass> {
    primes.iter().map(|&p| pass(shape, p as u32)).collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::count_allocating;
    use crate::engine::Scope;
    use crate::model::count::Count1024;

    #[test]
    fn primes_are_prime_and_large() {
        let ps = primes(20);
        assert!(ps.iter().all(|&p| p > 1 << 29 && p < 1 << 30));
        // Small cases of the primality test (common practice: 2^61 - 1 is a Mersenne prime).
        assert!(is_prime((1 << 61) - 1) && !is_prime((1 << 61) + 1) && is_prime(97) && !is_prime(91));
    }

    #[test]
    fn many_primes_agree_with_the_profile_engine() {
        // 210 members of weights 1, 2, 3: counts near 2^210 need four primes.
        let w: Vec<u64> = (0..210).map(|i| 1 + i % 3).collect();
        for q in [1u64, 150, 211, 300, 420] {
            let rule = Rule::weighted(q, w.clone()).unwrap();
            let exact = count_allocating::<_, Count1024>(
                &rule,
                Engine::Profile,
                Scope::All,
                &crate::model::meter::Meter::unlimited(),
            )
            .unwrap();
            let fast = count_allocating::<_, Count1024>(
                &rule,
                Engine::Dense,
                Scope::Swings,
                &crate::model::meter::Meter::unlimited(),
            )
            .unwrap();
            assert_eq!(fast.0.winning, exact.0.winning, "q = {q}");
            assert_eq!(fast.0.losing, exact.0.losing);
            assert_eq!((fast.0.proper, fast.0.strong), (exact.0.proper, exact.0.strong));
            for i in 0..3 {
                assert_eq!(fast.1[i].swings, exact.1[i].swings, "q = {q}, member {i}");
            }
        }
    }
}
