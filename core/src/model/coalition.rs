//! Ballots and coalitions: a fixed-capacity bit set of members.
//!
//! `Coalition<W>` holds `64 * W` members in `W` words on the stack; the
//! default `W = 1` holds 64, the no-alloc capacity. All operations are O(W),
//! no heap; a member index at or beyond the capacity is an error, never a
//! wrap.

use crate::model::error::Error;

/// A set of members (the yes-voters of a ballot, or a coalition).
#[derive(Clone, Copy, PartialEq, Eq, Hash, Debug)]
pub struct Coalition<const W: usize = 1> {
    words: [u64; W],
}

impl<const W: usize> Default for Coalition<W> {
    fn default() -> Self {
        Self::EMPTY
    }
}

impl<const W: usize> Coalition<W> {
    /// Members this coalition type can hold.
    pub const CAPACITY: usize = 64 * W;

    /// The empty coalition.
    pub const EMPTY: Self = Coalition { words: [0; W] };

    /// The empty coalition.
    pub const fn new() -> Self {
        Self::EMPTY
    }

    /// The first `n` members, or an error if `n` exceeds the capacity.
    pub fn first(n: usize) -> Result<Self, Error> {
        if n > Self::CAPACITY {
            return Err(Error::BallotMismatch {
                members: n,
                capacity: Self::CAPACITY,
            });
        }
        let mut c = Self::EMPTY;
        for (i, word) in c.words.iter_mut().enumerate() {
            // i < W, so lo + 64 <= CAPACITY, a constant that fits.
            let lo = i.saturating_mul(64);
            if n >= lo.saturating_add(64) {
                *word = u64::MAX;
            } else if n > lo {
                // 1 <= n - lo <= 63: keep the low n - lo bits.
                *word = u64::MAX >> (64usize.saturating_sub(n.saturating_sub(lo)) % 64);
            }
        }
        Ok(c)
    }

    /// The coalition of the listed members.
    pub fn from_members(members: &[usize]) -> Result<Self, Error> {
        let mut c = Self::EMPTY;
        for &m in members {
            c.insert(m)?;
        }
        Ok(c)
    }

    /// From raw words, member `i` at bit `i % 64` of word `i / 64`.
    pub const fn from_words(words: [u64; W]) -> Self {
        Coalition { words }
    }

    /// The raw words.
    pub fn words(&self) -> &[u64; W] {
        &self.words
    }

    /// Adds member `i`.
    pub fn insert(&mut self, i: usize) -> Result<(), Error> {
        let word = self.words.get_mut(i / 64).ok_or(Error::BallotMismatch {
            members: i.saturating_add(1),
            capacity: Self::CAPACITY,
        })?;
        *word |= 1 << (i % 64);
        Ok(())
    }

    /// Removes member `i` (no effect beyond the capacity).
    pub fn remove(&mut self, i: usize) {
        if let Some(word) = self.words.get_mut(i / 64) {
            *word &= !(1 << (i % 64));
        }
    }

    /// Flips member `i` (no effect beyond the capacity).
    pub fn toggle(&mut self, i: usize) {
        if let Some(word) = self.words.get_mut(i / 64) {
            *word ^= 1 << (i % 64);
        }
    }

    /// Whether member `i` is in the set.
    pub fn contains(&self, i: usize) -> bool {
        self.words.get(i / 64).is_some_and(|w| (w >> (i % 64)) & 1 == 1)
    }

    /// Number of members in the set.
    pub fn len(&self) -> usize {
        self.words.iter().map(|w| w.count_ones() as usize).sum()
    }

    /// Whether the set is empty.
    pub fn is_empty(&self) -> bool {
        self.words.iter().all(|&w| w == 0)
    }

    /// The members of the set, in increasing order.
    pub fn iter(&self) -> Members<'_, W> {
        Members {
            words: &self.words,
            index: 0,
            current: self.words.first().copied().unwrap_or(0),
        }
    }

    /// Whether any member at or beyond `n` is in the set.
    pub fn has_member_at_or_beyond(&self, n: usize) -> bool {
        self.words.iter().enumerate().any(|(i, &w)| {
            let lo = i.saturating_mul(64);
            if n <= lo {
                w != 0
            } else if n < lo.saturating_add(64) {
                (w >> (n.saturating_sub(lo) % 64)) != 0
            } else {
                false
            }
        })
    }

    /// The members of the first `n` not in this set.
    pub fn complement(&self, n: usize) -> Result<Self, Error> {
        let all = Self::first(n)?;
        let mut c = Self::EMPTY;
        for ((out, a), s) in c.words.iter_mut().zip(&all.words).zip(&self.words) {
            *out = a & !s;
        }
        Ok(c)
    }
}

/// Iterator over the members of a [`Coalition`].
pub struct Members<'a, const W: usize> {
    words: &'a [u64; W],
    index: usize,
    current: u64,
}

impl<const W: usize> Iterator for Members<'_, W> {
    type Item = usize;
    fn next(&mut self) -> Option<usize> {
        loop {
            if self.current != 0 {
                let bit = self.current.trailing_zeros() as usize;
                // Clear the lowest set bit (current != 0).
                self.current &= self.current.wrapping_sub(1);
                // index < W, so index * 64 + bit < CAPACITY.
                return Some(self.index.wrapping_mul(64).wrapping_add(bit));
            }
            self.index = self.index.saturating_add(1);
            self.current = *self.words.get(self.index)?;
        }
    }
}

impl<'a, const W: usize> IntoIterator for &'a Coalition<W> {
    type Item = usize;
    type IntoIter = Members<'a, W>;
    fn into_iter(self) -> Self::IntoIter {
        self.iter()
    }
}
