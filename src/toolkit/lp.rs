//! The two integer programs behind weightedness, solved by `microlp`
//! (floating-point simplex with branch and bound, deterministic).
//!
//! Nothing here is trusted: values are rounded to integers and every caller
//! checks them exactly against the profile table. Node budgets keep branch
//! and bound finite; a program that runs out of nodes without an answer is
//! an [`Error::Solver`], never a guess.

use microlp::{ComparisonOp, OptimizationDirection, Problem, SolveOptions, SolveOutcome};

use super::Error;

/// Largest weight or quota the weight program may choose.
const MAX_WEIGHT: i32 = 1 << 30;
/// Largest multiplicity of one coalition in a trading transfer.
const MAX_MULTIPLICITY: i32 = 1 << 12;
/// Branch-and-bound nodes per program.
const NODES: u64 = 200_000;

/// An integer solution of the weight program.
pub(super) struct Separation {
    /// One weight per type.
    pub weights: Vec<u64>,
    /// The quota.
    pub quota: u64,
    /// The solver proved its total minimal (for the constraints it was given).
    pub optimal: bool,
}

/// Integer weights v_t >= 0 and a quota q >= 0 with v·x >= q for every
/// profile x in `above` and v·y <= q - 1 for every y in `below`, minimizing
/// Σ cost_t v_t. `Ok(None)`: no such weights (the solver's word).
pub(super) fn separate(
    cost: &[f64],
    above: &[Vec<usize>],
    below: &[Vec<usize>],
) -> Result<Option<Separation>, Error> {
    let mut p = Problem::new(OptimizationDirection::Minimize);
    let v: Vec<_> = cost
        .iter()
        .map(|&c| p.add_integer_var(c, (0, MAX_WEIGHT)))
        .collect();
    let q = p.add_integer_var(0.0, (0, MAX_WEIGHT));
    let row = |x: &[usize]| {
        let mut terms: Vec<_> = x
            .iter()
            .zip(&v)
            .filter(|(&d, _)| d > 0)
            .map(|(&d, &var)| (var, d as f64))
            .collect();
        terms.push((q, -1.0));
        terms
    };
    for x in above {
        p.add_constraint(row(x).as_slice(), ComparisonOp::Ge, 0.0);
    }
    for y in below {
        p.add_constraint(row(y).as_slice(), ComparisonOp::Le, -1.0);
    }
    let Some((values, optimal)) = solve(&p)? else {
        return Ok(None);
    };
    let weights = v
        .iter()
        .map(|&var| round(values(var)))
        .collect::<Result<_, _>>()?;
    let quota = round(values(q))?;
    Ok(Some(Separation {
        weights,
        quota,
        optimal,
    }))
}

/// Multiplicities of the winning and of the losing profiles.
pub(super) type Multipliers = (Vec<u64>, Vec<u64>);

/// Multiplicities λ (of `winning` profiles) and μ (of `losing` ones), not
/// all zero, with Σλ = Σμ and Σ λ_x x <= Σ μ_y y in every type, minimizing
/// Σλ: a trading transfer once the losing side is trimmed. `Ok(None)`: none
/// exists (the solver's word).
pub(super) fn trade(
    types: usize,
    winning: &[Vec<usize>],
    losing: &[Vec<usize>],
) -> Result<Option<Multipliers>, Error> {
    let mut p = Problem::new(OptimizationDirection::Minimize);
    let lambda: Vec<_> = winning
        .iter()
        .map(|_| p.add_integer_var(1.0, (0, MAX_MULTIPLICITY)))
        .collect();
    let mu: Vec<_> = losing
        .iter()
        .map(|_| p.add_integer_var(0.0, (0, MAX_MULTIPLICITY)))
        .collect();
    let balance: Vec<_> = lambda
        .iter()
        .map(|&l| (l, 1.0))
        .chain(mu.iter().map(|&m| (m, -1.0)))
        .collect();
    p.add_constraint(balance.as_slice(), ComparisonOp::Eq, 0.0);
    let some: Vec<_> = lambda.iter().map(|&l| (l, 1.0)).collect();
    p.add_constraint(some.as_slice(), ComparisonOp::Ge, 1.0);
    for t in 0..types {
        let terms: Vec<_> = winning
            .iter()
            .zip(&lambda)
            .filter(|(x, _)| x[t] > 0)
            .map(|(x, &l)| (l, x[t] as f64))
            .chain(
                losing
                    .iter()
                    .zip(&mu)
                    .filter(|(y, _)| y[t] > 0)
                    .map(|(y, &m)| (m, -(y[t] as f64))),
            )
            .collect();
        if !terms.is_empty() {
            p.add_constraint(terms.as_slice(), ComparisonOp::Le, 0.0);
        }
    }
    let Some((values, _)) = solve(&p)? else {
        return Ok(None);
    };
    let l = lambda
        .iter()
        .map(|&var| round(values(var)))
        .collect::<Result<_, _>>()?;
    let m = mu
        .iter()
        .map(|&var| round(values(var)))
        .collect::<Result<_, _>>()?;
    Ok(Some((l, m)))
}

type Values = Box<dyn Fn(microlp::Variable) -> f64>;

/// Solves within the node budget: the variable values and whether the
/// optimum was proved, or `None` when infeasible.
fn solve(p: &Problem) -> Result<Option<(Values, bool)>, Error> {
    let mut options = SolveOptions::default();
    options.node_limit = Some(NODES);
    match p.solve_with(options) {
        Ok(SolveOutcome::Solution(s)) => {
            let optimal = s.status() == microlp::SolutionStatus::Optimal;
            Ok(Some((Box::new(move |v| s.var_value(v)), optimal)))
        }
        Ok(SolveOutcome::Interrupted(_)) => Err(Error::Solver(format!(
            "no answer within {NODES} branch-and-bound nodes"
        ))),
        Err(microlp::Error::Infeasible) => Ok(None),
        Err(e) => Err(Error::Solver(e.to_string())),
    }
}

fn round(x: f64) -> Result<u64, Error> {
    let r = x.round();
    if !(0.0..=f64::from(MAX_WEIGHT)).contains(&r) || (x - r).abs() > 1e-3 {
        return Err(Error::Solver(format!(
            "value {x} is not a small non-negative integer"
        )));
    }
    Ok(r as u64)
}
