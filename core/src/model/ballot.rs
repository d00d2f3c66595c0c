//! Four-state ballots: yes, no, abstain (present, voting neither way) and absent.
//!
//! A [`Ballot`] is three disjoint [`Coalition`]s; every member in none of
//! them is absent. A two-state ballot is the special case with no
//! abstentions and no absences. O(W) per operation, no heap; member
//! indices are checked like [`Coalition`]'s.

use crate::model::coalition::Coalition;
use crate::model::error::Error;

/// One member's vote.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Vote {
    /// In favour.
    Yes,
    /// Against.
    No,
    /// Present, voting neither way.
    Abstain,
    /// Not present.
    Absent,
}

/// A ballot of up to `64 * W` members with four states each.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
pub struct Ballot<const W: usize = 1> {
    yes: Coalition<W>,
    no: Coalition<W>,
    abstain: Coalition<W>,
}

impl<const W: usize> Ballot<W> {
    /// Everyone absent.
    pub const EMPTY: Self = Ballot {
        yes: Coalition::EMPTY,
        no: Coalition::EMPTY,
        abstain: Coalition::EMPTY,
    };

    /// From the three groups; a member in two groups is an error.
    pub fn new(yes: Coalition<W>, no: Coalition<W>, abstain: Coalition<W>) -> Result<Self, Error> {
        let words = yes.words().iter().zip(no.words()).zip(abstain.words());
        for (i, ((&y, &n), &a)) in words.enumerate() {
            let clash = (y & n) | (y & a) | (n & a);
            if clash != 0 {
                return Err(Error::BallotOverlap {
                    // i < W: below the capacity, a constant that fits.
                    member: i
                        .saturating_mul(64)
                        .saturating_add(clash.trailing_zeros() as usize),
                });
            }
        }
        Ok(Ballot { yes, no, abstain })
    }

    /// The two-state ballot of `members` members: `yes` in favour, everyone else against.
    pub fn binary(yes: Coalition<W>, members: usize) -> Result<Self, Error> {
        Ok(Ballot {
            yes,
            no: yes.complement(members)?,
            abstain: Coalition::EMPTY,
        })
    }

    /// From one vote per member, in member order.
    pub fn from_votes(votes: &[Vote]) -> Result<Self, Error> {
        let mut b = Self::EMPTY;
        for (i, v) in votes.iter().enumerate() {
            b.set(i, *v)?;
        }
        Ok(b)
    }

    /// Sets member `i`'s vote.
    pub fn set(&mut self, i: usize, vote: Vote) -> Result<(), Error> {
        if i >= Coalition::<W>::CAPACITY {
            return Err(Error::BallotMismatch {
                members: i.saturating_add(1),
                capacity: Coalition::<W>::CAPACITY,
            });
        }
        self.yes.remove(i);
        self.no.remove(i);
        self.abstain.remove(i);
        match vote {
            Vote::Yes => self.yes.insert(i),
            Vote::No => self.no.insert(i),
            Vote::Abstain => self.abstain.insert(i),
            Vote::Absent => Ok(()),
        }
    }

    /// Member `i`'s vote.
    pub fn vote(&self, i: usize) -> Vote {
        if self.yes.contains(i) {
            Vote::Yes
        } else if self.no.contains(i) {
            Vote::No
        } else if self.abstain.contains(i) {
            Vote::Abstain
        } else {
            Vote::Absent
        }
    }

    /// The yes-voters.
    pub fn yes(&self) -> &Coalition<W> {
        &self.yes
    }

    /// The no-voters.
    pub fn no(&self) -> &Coalition<W> {
        &self.no
    }

    /// The abstainers.
    pub fn abstain(&self) -> &Coalition<W> {
        &self.abstain
    }
}
