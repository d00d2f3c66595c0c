//! The meter: what a running computation may spend, charged as it runs.
//!
//! A [`Meter`] holds a step budget, a memory limit in bytes, an optional
//! cancellation flag and a progress counter. Engines, the approximations,
//! the four-state measures and the drafting commands charge it as they go:
//! [`Meter::charge`] for elementary steps (in batches, once per level, row,
//! node or sample batch, never per inner-loop step), [`Meter::claim`] and
//! [`Meter::release`] for the bytes of their tables, before they allocate.
//! The first charge past a limit, or the first after the flag is raised,
//! is an error ([`Error::OverBudget`], [`Error::MemoryLimit`],
//! [`Error::Cancelled`]) and the computation stops there.
//!
//! A front end polls [`Meter::progress`] from another thread: steps charged
//! so far out of the steps expected ([`Meter::expect`], set by the runner
//! from its estimate). All counters are atomics with relaxed ordering, so a
//! meter is `Sync` and shared by reference among worker threads; it holds
//! no heap and works without `alloc`.
//!
//! Time O(1) per charge (one compare-and-swap loop). Overflow: counters
//! saturate at their maximum and are compared with the limits, never
//! printed as figures. On targets without 64-bit atomics the counters are
//! 32 bits wide, so budgets and limits above 2^32 - 1 act as unlimited.

use core::sync::atomic::{AtomicBool, Ordering};

#[cfg(not(target_has_atomic = "64"))]
use core::sync::atomic::AtomicU32 as Tally;
#[cfg(target_has_atomic = "64")]
use core::sync::atomic::AtomicU64 as Tally;

use crate::model::error::Error;

/// Largest value a counter holds.
#[cfg(target_has_atomic = "64")]
const TALLY_MAX: u64 = u64::MAX;
#[cfg(not(target_has_atomic = "64"))]
const TALLY_MAX: u64 = u32::MAX as u64;

/// `v` as a counter value (saturating on 32-bit counters).
#[cfg(target_has_atomic = "64")]
fn word(v: u64) -> u64 {
    v
}
#[cfg(not(target_has_atomic = "64"))]
fn word(v: u64) -> u32 {
    u32::try_from(v).unwrap_or(u32::MAX)
}

fn tally(v: u64) -> Tally {
    Tally::new(word(v))
}

fn load(t: &Tally) -> u64 {
    #[allow(clippy::useless_conversion)] // u32 -> u64 on 32-bit counters
    u64::from(t.load(Ordering::Relaxed))
}

/// Adds `v` (saturating) and returns the new value.
fn add(t: &Tally, v: u64) -> u64 {
    let v = word(v);
    let old = t
        .fetch_update(Ordering::Relaxed, Ordering::Relaxed, |x| {
            Some(x.saturating_add(v))
        })
        .unwrap_or_else(|x| x);
    #[allow(clippy::useless_conversion)] // u32 -> u64 on 32-bit counters
    u64::from(old.saturating_add(v))
}

fn sub(t: &Tally, v: u64) {
    let v = word(v);
    let _ = t.fetch_update(Ordering::Relaxed, Ordering::Relaxed, |x| {
        Some(x.saturating_sub(v))
    });
}

/// A step budget, a memory limit, a cancellation flag and a progress
/// counter for one computation (see the module docs).
#[derive(Debug)]
pub struct Meter<'a> {
    budget: u128,
    memory: u64,
    steps: Tally,
    expected: Tally,
    held: Tally,
    peak: Tally,
    cancel: Option<&'a AtomicBool>,
}

impl Meter<'static> {
    /// A meter that allows `budget` steps and `memory` bytes.
    pub fn new(budget: u128, memory: u64) -> Self {
        Meter {
            budget,
            memory,
            steps: tally(0),
            expected: tally(0),
            held: tally(0),
            peak: tally(0),
            cancel: None,
        }
    }

    /// A meter with no step budget and no memory limit (tests, and callers
    /// that bound the work by planning alone).
    pub fn unlimited() -> Self {
        Self::new(u128::MAX, u64::MAX)
    }
}

impl<'a> Meter<'a> {
    /// The same meter, stopped with [`Error::Cancelled`] at the first
    /// charge after `flag` becomes true.
    pub fn cancelled_by<'b>(self, flag: &'b AtomicBool) -> Meter<'b>
    where
        'a: 'b,
    {
        Meter {
            cancel: Some(flag),
            ..self
        }
    }

    /// A fresh meter with `budget` steps and this one's memory limit and
    /// cancellation flag (for a second computation under other terms).
    pub fn with_budget(&self, budget: u128) -> Meter<'a> {
        Meter {
            budget,
            memory: self.memory,
            steps: tally(0),
            expected: tally(0),
            held: tally(0),
            peak: tally(0),
            cancel: self.cancel,
        }
    }

    /// The step budget.
    pub fn budget(&self) -> u128 {
        self.budget
    }

    /// The memory limit in bytes.
    pub fn memory(&self) -> u64 {
        self.memory
    }

    /// Steps charged so far (saturating).
    pub fn spent(&self) -> u64 {
        load(&self.steps)
    }

    /// Bytes claimed and not released.
    pub fn held(&self) -> u64 {
        load(&self.held)
    }

    /// Most bytes held at once so far.
    pub fn peak(&self) -> u64 {
        load(&self.peak)
    }

    /// Sets the steps the work is expected to take, for [`Self::progress`].
    pub fn expect(&self, steps: u128) {
        let steps = u64::try_from(steps).unwrap_or(u64::MAX);
        self.expected.store(word(steps), Ordering::Relaxed);
    }

    /// `(done, expected)`: steps charged so far and steps expected (0 when
    /// unknown). `done` may pass `expected` when the estimate was low.
    pub fn progress(&self) -> (u64, u64) {
        (self.spent(), load(&self.expected))
    }

    /// Starts the step count again from zero (for a second computation
    /// under the same limits, such as an approximation after an exact run
    /// that hit a limit). Claimed bytes stay claimed.
    pub fn restart(&self) {
        self.steps.store(0, Ordering::Relaxed);
    }

    /// Whether the cancellation flag is raised.
    pub fn is_cancelled(&self) -> bool {
        self.cancel.is_some_and(|f| f.load(Ordering::Relaxed))
    }

    /// Checks the cancellation flag alone.
    pub fn check(&self) -> Result<(), Error> {
        if self.is_cancelled() {
            return Err(Error::Cancelled);
        }
        Ok(())
    }

    /// Charges `steps` elementary steps: [`Error::OverBudget`] once the
    /// total passes the budget, [`Error::Cancelled`] once the flag is raised.
    pub fn charge(&self, steps: u64) -> Result<(), Error> {
        self.check()?;
        let total = add(&self.steps, steps);
        if u128::from(total) > self.budget {
            return Err(Error::OverBudget { budget: self.budget });
        }
        Ok(())
    }

    /// Claims `bytes` before allocating them: [`Error::MemoryLimit`] (with
    /// the bytes that would be held and the limit) when that passes the
    /// limit, in which case nothing is claimed.
    pub fn claim(&self, bytes: u64) -> Result<(), Error> {
        self.check()?;
        let now = add(&self.held, bytes);
        if now > self.memory || (now == TALLY_MAX && bytes > 0) {
            sub(&self.held, bytes);
            return Err(Error::MemoryLimit {
                needed: now,
                limit: self.memory,
            });
        }
        let _ = self
            .peak
            .fetch_update(Ordering::Relaxed, Ordering::Relaxed, |p| Some(p.max(word(now))));
        Ok(())
    }

    /// Returns `bytes` claimed earlier.
    pub fn release(&self, bytes: u64) {
        sub(&self.held, bytes);
    }

    /// Bytes of `len` values of `T` (saturating).
    pub fn bytes_of<T>(len: usize) -> u64 {
        (len as u64).saturating_mul(core::mem::size_of::<T>() as u64)
    }

    /// A vector of `len` copies of `value`, claimed first and allocated
    /// fallibly: [`Error::MemoryLimit`] over the limit,
    /// [`Error::OutOfMemory`] when the allocator refuses. The caller
    /// releases [`Self::bytes_of`]`::<T>(len)` when it drops the vector.
    #[cfg(feature = "alloc")]
    pub fn vec<T: Clone>(&self, len: usize, value: T) -> Result<alloc::vec::Vec<T>, Error> {
        let bytes = Self::bytes_of::<T>(len);
        self.claim(bytes)?;
        let mut v = alloc::vec::Vec::new();
        if v.try_reserve_exact(len).is_err() {
            self.release(bytes);
            return Err(Error::OutOfMemory { bytes });
        }
        v.resize(len, value);
        Ok(v)
    }

    /// Makes room for `additional` more values in `v`, claiming the growth
    /// of its capacity first (doubling, as `Vec` does) and reserving it
    /// fallibly; errors as [`Self::vec`]. Returns the bytes claimed.
    #[cfg(feature = "alloc")]
    pub fn grow<T>(&self, v: &mut alloc::vec::Vec<T>, additional: usize) -> Result<u64, Error> {
        let need = v.len().saturating_add(additional);
        let cap = v.capacity();
        if need <= cap {
            return Ok(0);
        }
        let new_cap = need.max(cap.saturating_mul(2)).max(4);
        let bytes = Self::bytes_of::<T>(new_cap.saturating_sub(cap));
        self.claim(bytes)?;
        if v.try_reserve_exact(new_cap.saturating_sub(v.len())).is_err() {
            self.release(bytes);
            return Err(Error::OutOfMemory { bytes });
        }
        Ok(bytes)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn budget_is_hit_by_the_charge_that_passes_it() {
        let m = Meter::new(100, u64::MAX);
        assert_eq!(m.charge(60), Ok(()));
        assert_eq!(m.charge(40), Ok(()));
        assert_eq!(m.charge(1), Err(Error::OverBudget { budget: 100 }));
    }

    #[test]
    fn memory_claims_are_refused_without_being_kept() {
        let m = Meter::new(u128::MAX, 1000);
        assert_eq!(m.claim(600), Ok(()));
        assert_eq!(
            m.claim(500),
            Err(Error::MemoryLimit {
                needed: 1100,
                limit: 1000
            })
        );
        assert_eq!(m.held(), 600);
        m.release(600);
        assert_eq!(m.claim(1000), Ok(()));
        assert_eq!(m.peak(), 1000);
    }

    #[test]
    fn a_raised_flag_stops_the_next_charge() {
        let flag = AtomicBool::new(false);
        let m = Meter::unlimited().cancelled_by(&flag);
        assert_eq!(m.charge(1), Ok(()));
        flag.store(true, Ordering::Relaxed);
        assert_eq!(m.charge(1), Err(Error::Cancelled));
        assert_eq!(m.claim(1), Err(Error::Cancelled));
    }

    #[test]
    fn counters_saturate_instead_of_wrapping() {
        let m = Meter::new(u128::MAX, u64::MAX);
        m.charge(u64::MAX).unwrap();
        m.charge(u64::MAX).unwrap();
        assert_eq!(m.spent(), TALLY_MAX);
        assert!(m.claim(u64::MAX).is_err());
        m.expect(u128::MAX);
        assert_eq!(m.progress(), (TALLY_MAX, TALLY_MAX));
    }

    #[cfg(feature = "alloc")]
    #[test]
    fn vectors_are_claimed_and_refused_over_the_limit() {
        let m = Meter::new(u128::MAX, 1 << 20);
        let v: alloc::vec::Vec<u64> = m.vec(1000, 7).unwrap();
        assert_eq!(v.len(), 1000);
        assert_eq!(m.held(), 8000);
        assert!(matches!(m.vec(1 << 20, 0u8), Err(Error::MemoryLimit { .. })));
        let mut w: alloc::vec::Vec<u32> = alloc::vec::Vec::new();
        let claimed = m.grow(&mut w, 10).unwrap();
        assert_eq!(claimed, 40);
        assert!(w.capacity() >= 10);
        // A huge request is refused by the limit, not attempted.
        let huge = Meter::new(u128::MAX, u64::MAX - 1);
        assert!(matches!(
            huge.vec(usize::MAX / 2, 0u64),
            Err(Error::OutOfMemory { .. } | Error::MemoryLimit { .. })
        ));
    }
}
