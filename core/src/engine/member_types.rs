//! Member types: members with identical weights in every attribute a rule
//! uses are interchangeable, so the profile, dense and ternary computations
//! count once per type.
//!
//! [`group_types`] sorts member indices by weight column: O(n log n *
//! attributes) time, no heap (the caller's index slices). No arithmetic
//! beyond indices below n.

// Indexing and index arithmetic: `order` holds at least n entries and
// `starts` at least n + 1 (the callers size them from the member count), and
// there are at most n types; listed in DEVELOPERS.md ("Panics").
#![allow(clippy::indexing_slicing, clippy::arithmetic_side_effects)]

use crate::model::rule::Rule;

/// Sorts member indices so that members of one type are adjacent, and
/// writes type boundaries into `starts` (T + 1 entries). Returns T.
pub(crate) fn group_types<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    mask: u64,
    order: &mut [u32],
    starts: &mut [u32],
) -> usize {
    let n = rule.members();
    for (i, o) in order.iter_mut().enumerate().take(n) {
        *o = i as u32;
    }
    let column_cmp = |x: &u32, y: &u32| {
        for a in (0..rule.attributes()).filter(|a| mask & (1 << a) != 0) {
            let o = rule.weight(a, *x as usize).cmp(&rule.weight(a, *y as usize));
            if o.is_ne() {
                return o;
            }
        }
        core::cmp::Ordering::Equal
    };
    order[..n].sort_unstable_by(|x, y| column_cmp(x, y).then(x.cmp(y)));
    let mut types = 0;
    for i in 0..n {
        if i == 0 || column_cmp(&order[i - 1], &order[i]).is_ne() {
            starts[types] = i as u32;
            types += 1;
        }
    }
    starts[types] = n as u32;
    types
}

/// Members grouped into types: type `t` is `order[starts[t]..starts[t + 1]]`.
#[derive(Clone, Copy)]
pub(crate) struct Types<'a> {
    /// Number of types T.
    pub count: usize,
    /// Member indices, grouped by type.
    pub order: &'a [u32],
    /// Where each type starts in `order` (T + 1 entries).
    pub starts: &'a [u32],
}

impl<'a> Types<'a> {
    /// Groups the members of `rule` by their weights in the attributes of
    /// `mask`, in the caller's `order` (n entries) and `starts` (n + 1).
    pub fn group<W: AsRef<[u64]>>(
        rule: &Rule<W>,
        mask: u64,
        order: &'a mut [u32],
        starts: &'a mut [u32],
    ) -> Types<'a> {
        let count = group_types(rule, mask, order, starts);
        Types { count, order, starts }
    }

    /// Members of type `t`.
    #[inline]
    pub fn size(&self, t: usize) -> usize {
        (self.starts[t + 1] - self.starts[t]) as usize
    }

    /// The first member of type `t`, whose weights stand for the type's.
    #[inline]
    pub fn representative(&self, t: usize) -> usize {
        self.order[self.starts[t] as usize] as usize
    }

    /// The members of type `t`.
    #[inline]
    pub fn members(&self, t: usize) -> &'a [u32] {
        &self.order[self.starts[t] as usize..self.starts[t + 1] as usize]
    }
}
