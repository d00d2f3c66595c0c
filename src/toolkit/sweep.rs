//! How power moves as a quota moves: the chosen conditions get each quota of
//! a range in turn, and every point is one exact analysis (the planner's
//! engine, through [`clout_dsl::exact`]).
//!
//! Shares are exact: a share is held in billionths (`62.5%` is 625,000,000)
//! and becomes the integer quota ceil(share * total) with the core's
//! integer quota arithmetic. Quotas are clamped to 1..=total and repeated
//! quotas are dropped, so a small total gives one point per integer quota.
//! Time: the engine's, once per point; the budget applies to each point.

use clout_core::quota::at_least_share;
use clout_core::{Atom, Rule};
use clout_dsl::exact::{self, Power};

use super::Error;

/// Billionths: the unit of shares.
pub const BILLION: u64 = 1_000_000_000;

/// A point of a sweep range: an absolute amount or a share of the total.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Level {
    /// An absolute quota.
    Amount(u64),
    /// A share of the attribute's total, in billionths.
    Share(u64),
}

impl Level {
    /// Parses `58`, `50%` or `62.5%` (at most 7 decimals, at most 100%).
    pub fn parse(text: &str) -> Result<Level, String> {
        let t = text.trim().replace('_', "");
        let bad = || format!("`{text}` is not a quota (write e.g. 58) or a share (e.g. 50% or 62.5%)");
        if let Some(p) = t.strip_suffix('%') {
            let (whole, frac) = match p.split_once('.') {
                Some((_, "")) => return Err(bad()),
                Some(parts) => parts,
                None => (p, ""),
            };
            if whole.is_empty()
                || frac.len() > 7
                || !(whole.bytes().chain(frac.bytes())).all(|b| b.is_ascii_digit())
            {
                return Err(bad());
            }
            let whole: u64 = whole.parse().map_err(|_| bad())?;
            let frac_value: u64 = if frac.is_empty() {
                0
            } else {
                frac.parse::<u64>().map_err(|_| bad())? * 10u64.pow(7 - frac.len() as u32)
            };
            let share = whole
                .checked_mul(10_000_000)
                .and_then(|w| w.checked_add(frac_value))
                .ok_or_else(bad)?;
            if share > BILLION {
                return Err(format!("`{text}` is more than 100%"));
            }
            return Ok(Level::Share(share));
        }
        t.parse::<u64>().map(Level::Amount).map_err(|_| bad())
    }

    /// The integer quota for an attribute with this total.
    pub fn quota(self, total: u64) -> Result<u64, Error> {
        match self {
            Level::Amount(q) => Ok(q),
            Level::Share(s) => Ok(at_least_share(s, BILLION, total)?),
        }
    }
}

/// The quotas from `from` to `to` (inclusive) in steps of `step`, for an
/// attribute with this total: clamped to 1..=total, repeats dropped, at
/// most `max_points`.
pub fn quotas(total: u64, from: Level, to: Level, step: Level, max_points: usize) -> Result<Vec<u64>, Error> {
    let levels: Vec<Level> = match (from, to, step) {
        (Level::Share(a), Level::Share(b), Level::Share(s)) => ladder(a, b, s, max_points)?
            .into_iter()
            .map(Level::Share)
            .collect(),
        _ => {
            let a = from.quota(total)?;
            let b = to.quota(total)?;
            let s = match step {
                Level::Amount(s) => s,
                Level::Share(s) => at_least_share(s, BILLION, total)?.max(1),
            };
            ladder(a, b, s, max_points)?
                .into_iter()
                .map(Level::Amount)
                .collect()
        }
    };
    let mut out: Vec<u64> = Vec::new();
    for l in levels {
        let q = l.quota(total)?.clamp(1, total.max(1));
        if out.last() != Some(&q) {
            out.push(q);
        }
    }
    Ok(out)
}

fn ladder(from: u64, to: u64, step: u64, max_points: usize) -> Result<Vec<u64>, Error> {
    if step == 0 {
        return Err(Error::Mismatch("the step must be positive".to_string()));
    }
    if from > to {
        return Err(Error::Mismatch(
            "the range runs downwards (--from is above --to)".to_string(),
        ));
    }
    let points = (to - from) / step + 1;
    if points > max_points as u64 {
        return Err(Error::Mismatch(format!(
            "the range has {points} points, more than {max_points}; take a larger step"
        )));
    }
    let mut v: Vec<u64> = (0..points).map(|k| from + k * step).collect();
    if v.last() != Some(&to) {
        v.push(to);
    }
    Ok(v)
}

/// The rule with every atom in `atoms` given quota `quota` (the binary
/// game: four-state forms become plain quotas).
pub fn with_quota<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    atoms: &[usize],
    quota: u64,
) -> Result<Rule<Vec<u64>>, Error> {
    let changed: Vec<Atom> = rule
        .atoms()
        .iter()
        .enumerate()
        .map(|(i, a)| {
            if atoms.contains(&i) {
                Atom { quota, ..*a }
            } else {
                *a
            }
        })
        .collect();
    Ok(Rule::new(
        rule.members(),
        rule.weight_table().to_vec(),
        &changed,
        rule.formula(),
    )?)
}

/// One point of a sweep.
#[derive(Clone, Debug, PartialEq)]
pub struct Point {
    /// The quota of the moved conditions.
    pub quota: u64,
    /// Exact counts and indices at that quota.
    pub power: Power,
}

/// Exact power at every quota, `budget` steps at most per point.
pub fn sweep<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    atoms: &[usize],
    quotas: &[u64],
    budget: u128,
) -> Result<Vec<Point>, Error> {
    quotas
        .iter()
        .map(|&quota| {
            let r = with_quota(rule, atoms, quota)?;
            let plan = exact::choose(&r, budget)?;
            Ok(Point {
                quota,
                power: exact::power(&r, plan.engine)?,
            })
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn levels_and_quotas() {
        assert_eq!(Level::parse("50%"), Ok(Level::Share(500_000_000)));
        assert_eq!(Level::parse("62.5%"), Ok(Level::Share(625_000_000)));
        assert_eq!(Level::parse("58"), Ok(Level::Amount(58)));
        assert!(Level::parse("101%").is_err());
        assert!(Level::parse("5.%").is_err());
        assert!(Level::parse("half").is_err());
        // 29 seats, 50% .. 100% by 10%: ceil(14.5) = 15, 17.4 -> 18, 21 (20.3),
        // 24 (23.2), 27 (26.1), 29.
        let q = quotas(
            29,
            Level::Share(500_000_000),
            Level::Share(BILLION),
            Level::Share(100_000_000),
            100,
        )
        .unwrap();
        assert_eq!(q, vec![15, 18, 21, 24, 27, 29]);
        let q = quotas(29, Level::Amount(20), Level::Amount(25), Level::Amount(2), 100).unwrap();
        assert_eq!(q, vec![20, 22, 24, 25]);
        assert!(quotas(29, Level::Amount(25), Level::Amount(20), Level::Amount(1), 100).is_err());
    }

    #[test]
    fn sweep_of_a_weighted_game() {
        // [q; 2, 1, 1], by hand: at q = 3 member 0 is a veto player with
        // Banzhaf 3/5 (swings 3, 1, 1); at q = 4 unanimity (1/3 each, and
        // one coalition in 8 passes).
        let rule = Rule::weighted(2, vec![2u64, 1, 1]).unwrap();
        let points = sweep(&rule, &[0], &[3, 4], 1 << 40).unwrap();
        assert!((points[0].power.members[0].banzhaf - 0.6).abs() < 1e-12);
        assert!((points[1].power.members[2].banzhaf - 1.0 / 3.0).abs() < 1e-12);
        assert!((points[1].power.passage_probability - 0.125).abs() < 1e-12);
    }
}
