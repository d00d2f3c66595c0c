//! The figures `ternary` and `attendance` ask for, over profiles of member
//! types: Felsenthal & Machover's ternary Banzhaf measure and the
//! probability of passage when members attend by chance.
//!
//! Both visit every three-way profile of the member types, so they are
//! refused above [`MAX_TERNARY_PROFILES`] profiles before any work.

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
    /// (attendance chance, probability of passage, its half-width when estimated).
    pub attendance: Option<(f64, f64, Option<f64>)>,
}

impl Extras {
    /// Computes what `options` ask for, or refuses when it is too large.
    pub fn of(rule: &CompiledRule, options: &Options) -> Result<Extras, Failure> {
        if !options.ternary && options.attendance.is_none() {
            return Ok(Extras::default());
        }
        let profiles: f64 = interchangeable(rule)
            .iter()
            .map(|m| (m.len() as f64 + 1.0) * (m.len() as f64 + 2.0) / 2.0)
            .product();
        let too_many = profiles > MAX_TERNARY_PROFILES;
        if too_many && options.ternary {
            return Err(Failure::input(format!(
                "rule `{}`: the ternary measure needs about {profiles:.1e} three-way profiles of member types, over the limit of {MAX_TERNARY_PROFILES:.0e}",
                rule.name
            ))
            .with_hint("--ternary counts every way of voting yes, no or abstaining; members with identical weights make that much cheaper (leave out --ternary for the other figures)"));
        }
        let fail = |e: clout_core::Error| Failure::input(format!("rule `{}`: {e}", rule.name));
        let r = &rule.rule;
        let ternary = if options.ternary {
            let measures = if r.members() < 600 {
                clout_core::ternary::ternary_banzhaf::<_, clout_core::Wide<16>>(r)
                    .map(|t| (0..r.members()).map(|i| t.measure(i)).collect())
            } else {
                clout_core::ternary::ternary_banzhaf::<_, clout_core::Wide<1025>>(r)
                    .map(|t| (0..r.members()).map(|i| t.measure(i)).collect())
            };
            Some(measures.map_err(fail)?)
        } else {
            None
        };
        let attendance = match options.attendance {
            Some(p) if !too_many => Some((
                p,
                clout_core::ternary::passage_with_attendance(r, p).map_err(fail)?,
                None,
            )),
            // Beyond the profiles: the voting model with that turnout.
            Some(p) => {
                let (m, _) = super::model::compute(
                    rule,
                    &super::model::VotingModel::Turnout(p),
                    options.seed,
                    options.tolerance,
                )?;
                Some((p, m.passage_probability, m.passage_probability_half_width))
            }
            None => None,
        };
        Ok(Extras { ternary, attendance })
    }
}
