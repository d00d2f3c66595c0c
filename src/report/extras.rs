//! The figures `ternary` and `attendance` ask for, over profiles of member
//! types: Felsenthal & Machover's ternary Banzhaf measure and the
//! probability of passage when members attend by chance.
//!
//! Both visit every three-way profile of the member types, so they are
//! refused above [`MAX_TERNARY_PROFILES`] profiles before any work.

use clout_core::Meter;
use clout_dsl::CompiledRule;

use super::{interchangeable, Options};
use crate::failure::Failure;

/// Most three-way profiles the ternary measure and attendance visit.
pub const MAX_TERNARY_PROFILES: f64 = 5e7;

/// The optional four-state figures of a report.
#[derive(Default)]
pub struct Extras {
    /// The ternary Banzhaf measure of every member.
    pub ternary: Option<Vec<f64>>,
    /// (attendance chance, probability of passage).
    pub attendance: Option<(f64, f64)>,
}

impl Extras {
    /// Computes what `options` ask for, or refuses when it is too large.
    /// The profiles are charged to `meter` as they are visited.
    pub fn of(rule: &CompiledRule, options: &Options, meter: &Meter<'_>) -> Result<Extras, Failure> {
        if !options.ternary && options.attendance.is_none() {
            return Ok(Extras::default());
        }
        let profiles: f64 = interchangeable(rule)
            .iter()
            .map(|m| (m.len() as f64 + 1.0) * (m.len() as f64 + 2.0) / 2.0)
            .product();
        if profiles > MAX_TERNARY_PROFILES {
            return Err(Failure::input(format!(
                "rule `{}`: three-way ballots need about {profiles:.1e} profiles of member types, over the limit of {MAX_TERNARY_PROFILES:.0e}",
                rule.name
            ))
            .with_hint("--ternary and --attendance count every way of voting yes, no or abstaining; members with identical weights make that much cheaper"));
        }
        let fail = |e: clout_core::Error| super::core_failure(&rule.name, e);
        let r = &rule.rule;
        let ternary = if options.ternary {
            let measures = if r.members() < 600 {
                clout_core::ternary::ternary_banzhaf_metered::<_, clout_core::Wide<16>>(r, meter)
                    .map(|t| (0..r.members()).map(|i| t.measure(i)).collect())
            } else {
                clout_core::ternary::ternary_banzhaf_metered::<_, clout_core::Wide<1025>>(r, meter)
                    .map(|t| (0..r.members()).map(|i| t.measure(i)).collect())
            };
            Some(measures.map_err(fail)?)
        } else {
            None
        };
        let attendance = match options.attendance {
            Some(p) => Some((
                p,
                clout_core::ternary::passage_with_attendance_metered(r, p, meter).map_err(fail)?,
            )),
            None => None,
        };
        Ok(Extras { ternary, attendance })
    }
}
