//! Figures under a voting model (`--turnout P`, `--chances FILE`): each
//! member's decisive probability and its share, the probability of passage
//! and of a failed quorum (the core's `chances` engine; sources there:
//! Straffin 1977 on independence, Felsenthal & Machover 1998 on the Penrose
//! measure as the probability of being decisive).
//!
//! The model reads the rule as written, four-state conditions included
//! (nothing is settled away: a participation quorum matters here). Exact
//! sparse generating functions when the distribution stays within
//! [`MAX_STATES`] states, with a relative rounding bound; Monte Carlo with
//! Wilson intervals beyond (at most [`MODEL_SAMPLES`] ballots).

use clout_core::approx::Sampling;
use clout_core::chances::{exact_model, sample_model, Chances};
use clout_dsl::data::{At, Table};
use clout_dsl::{CompiledRule, Diagnostic, RuleFile};
use serde::Serialize;

use crate::failure::Failure;

/// Most states a distribution of the exact path may reach.
pub const MAX_STATES: usize = 1 << 20;

/// Most ballots drawn by the Monte Carlo path.
pub const MODEL_SAMPLES: u64 = 200_000;

/// The voting model asked for.
#[derive(Clone, Debug, PartialEq)]
pub enum VotingModel {
    /// Everyone present with this chance, then yes or no at even odds.
    Turnout(f64),
    /// Per-member chances read from a table.
    Chances {
        /// The table as shown (its path).
        file: String,
        /// One entry per member, in declaration order.
        chances: Vec<Chances>,
    },
}

impl VotingModel {
    /// One line saying what the model assumes.
    pub fn describe(&self) -> String {
        match self {
            VotingModel::Turnout(p) => format!(
                "Voting model: each member is present with chance {p} and then votes yes or no with equal chance, \
                 independently of the others (Straffin 1977)."
            ),
            VotingModel::Chances { file, .. } => format!(
                "Voting model: each member is present, abstains and votes yes with their own chances from {file}, \
                 independently of the others (Straffin 1977)."
            ),
        }
    }

    fn chances(&self, members: usize) -> Vec<Chances> {
        match self {
            VotingModel::Turnout(p) => vec![Chances::turnout(*p); members],
            VotingModel::Chances { chances, .. } => chances.clone(),
        }
    }
}

/// The model's figures for the rule (JSON `voting_model`).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ModelReport {
    /// `turnout` or `chances`.
    pub kind: String,
    /// The turnout (kind `turnout`).
    pub turnout: Option<f64>,
    /// The chances table (kind `chances`).
    pub chances_file: Option<String>,
    /// What the model assumes, in one line.
    pub description: String,
    /// How the figures were computed.
    pub method: String,
    /// Whether the figures are Monte Carlo estimates.
    pub approximate: bool,
    /// Relative rounding bound of every exact figure (null when approximate).
    pub rounding_bound: Option<f64>,
    /// Confidence of the half-widths (null when exact).
    pub confidence: Option<f64>,
    /// Ballots drawn (null when exact).
    pub samples: Option<u64>,
    /// Probability that the motion passes.
    pub passage_probability: f64,
    /// Its half-width (null when exact).
    pub passage_probability_half_width: Option<f64>,
    /// Probability that those present could not pass the motion even if all voted yes.
    pub quorum_failure_probability: f64,
    /// Its half-width (null when exact).
    pub quorum_failure_probability_half_width: Option<f64>,
}

/// Per member: (decisive probability, its half-width when estimated).
pub type Decisive = Vec<(f64, Option<f64>)>;

/// Computes the model's figures, exact when it can.
pub fn compute(
    rule: &CompiledRule,
    model: &VotingModel,
    seed: u64,
    tolerance: f64,
) -> Result<(ModelReport, Decisive), Failure> {
    let r = &rule.rule;
    let chances = model.chances(r.members());
    let fail = |e: clout_core::Error| Failure::input(format!("rule `{}`: {e}", rule.name));
    let (kind, turnout, chances_file) = match model {
        VotingModel::Turnout(p) => ("turnout", Some(*p), None),
        VotingModel::Chances { file, .. } => ("chances", None, Some(file.clone())),
    };
    let mut report = ModelReport {
        kind: kind.to_string(),
        turnout,
        chances_file,
        description: model.describe(),
        method: String::new(),
        approximate: false,
        rounding_bound: None,
        confidence: None,
        samples: None,
        passage_probability: 0.0,
        passage_probability_half_width: None,
        quorum_failure_probability: 0.0,
        quorum_failure_probability_half_width: None,
    };
    match exact_model(r, &chances, MAX_STATES) {
        Ok(f) => {
            report.method = format!(
                "exact: sparse generating functions over the conditions' sums ({} states at most), floating point \
                 with relative rounding error at most {:.1e}",
                f.states, f.relative_error
            );
            report.rounding_bound = Some(f.relative_error);
            report.passage_probability = f.passage;
            report.quorum_failure_probability = f.quorum_failure;
            Ok((report, f.decisive.into_iter().map(|d| (d, None)).collect()))
        }
        Err(clout_core::Error::TooCostly { .. }) => {
            let s = Sampling {
                seed,
                tolerance,
                max_samples: MODEL_SAMPLES,
                ..Sampling::default()
            };
            let m = sample_model(r, &chances, &s).map_err(fail)?;
            let note = if m.converged {
                ""
            } else {
                " (sample limit reached before the target half-width)"
            };
            report.method = format!(
                "Monte Carlo, {} ballots, seed {seed}, Wilson 95% intervals{note}; exact counting would pass {MAX_STATES} states",
                m.samples
            );
            report.approximate = true;
            report.confidence = Some(0.95);
            report.samples = Some(m.samples);
            report.passage_probability = m.passage.value;
            report.passage_probability_half_width = Some(m.passage.half_width);
            report.quorum_failure_probability = m.quorum_failure.value;
            report.quorum_failure_probability_half_width = Some(m.quorum_failure.half_width);
            Ok((
                report,
                m.decisive.iter().map(|e| (e.value, Some(e.half_width))).collect(),
            ))
        }
        Err(e) => Err(fail(e)),
    }
}

/// Reads a chances table (header `member,present,yes,abstain`; `abstain`
/// may be left out) against the members of `file`: every member once,
/// every chance a number from 0 to 1. Errors are placed in the table.
pub fn read_chances(file: &RuleFile, name: &str, bytes: &[u8]) -> Result<Vec<Chances>, Vec<Diagnostic>> {
    let table = Table::read(name, bytes).map_err(|e| vec![e])?;
    let header: Vec<&str> = table.columns.iter().map(String::as_str).collect();
    let abstains = match header.as_slice() {
        ["member", "present", "yes", "abstain"] => true,
        ["member", "present", "yes"] => false,
        _ => {
            return Err(vec![table.error(
                At::Column(0),
                format!(
                    "the header is `{}`, not `member,present,yes,abstain`",
                    header.join(",")
                ),
                "a chances file has one row per member: member,present,yes,abstain (chances from 0 to 1)",
            )])
        }
    };
    let index: std::collections::HashMap<&str, usize> = file
        .members
        .iter()
        .enumerate()
        .map(|(i, m)| (m.name.as_str(), i))
        .collect();
    let mut chances: Vec<Option<Chances>> = vec![None; file.members.len()];
    let mut errors = Vec::new();
    for (row, cells) in table.rows.iter().enumerate() {
        let Some(&i) = index.get(cells[0].as_str()) else {
            errors.push(table.error(
                At::Cell(row, 0),
                format!("unknown member `{}`", cells[0]),
                "name a member of the rule file exactly as declared",
            ));
            continue;
        };
        let mut value = |col: usize| -> Option<f64> {
            match cells[col].parse::<f64>() {
                Ok(v) if (0.0..=1.0).contains(&v) => Some(v),
                _ => {
                    errors.push(table.error(
                        At::Cell(row, col),
                        format!("`{}` is not a chance from 0 to 1", cells[col]),
                        "write a decimal such as 0.25",
                    ));
                    None
                }
            }
        };
        let present = value(1);
        let yes = value(2);
        let abstain = if abstains { value(3) } else { Some(0.0) };
        if chances[i].is_some() {
            errors.push(table.error(
                At::Cell(row, 0),
                format!("member `{}` appears twice", cells[0]),
                "give each member one row",
            ));
        }
        if let (Some(present), Some(yes), Some(abstain)) = (present, yes, abstain) {
            chances[i] = Some(Chances {
                present,
                yes,
                abstain,
            });
        }
    }
    if errors.is_empty() {
        if let Some(missing) = chances.iter().position(Option::is_none) {
            errors.push(table.error(
                At::Start,
                format!("member `{}` has no row", file.members[missing].name),
                "give every member of the rule file one row",
            ));
        }
    }
    if errors.is_empty() {
        Ok(chances.into_iter().flatten().collect())
    } else {
        Err(clout_dsl::diagnostic::limit(errors))
    }
}
