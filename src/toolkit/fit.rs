//! Integer weights and a quota whose normalized Banzhaf index is as close as
//! the search finds to a target distribution of power.
//!
//! Distance: the root-mean-square deviation between the index and the
//! target (both summing to 1); ties go to the smaller maximum deviation,
//! then the smaller total weight, then the lexicographically smaller weights.
//! For one weight vector the best quota is found among all quotas above half
//! the total at once (a game and its dual with quota T - q + 1 have the same
//! swings, so nothing is lost): one subset-count table, each member divided
//! out of it (Uno 2012) and prefix sums give every member's swings at every
//! quota in O(n T) steps. Counts are exact in `u128`, which bounds the
//! search to [`MAX_MEMBERS`] members.
//!
//! The search is deterministic and runs within a budget of elementary steps,
//! so the same targets and budget give the same answer on every machine:
//! apportionments of the targets at a ladder of totals, a fixed-point
//! iteration w <- w * target / index at each total (in the spirit of Leech
//! 2002), then local search (one weight up or down, or one unit moved from
//! one member to another) from the best candidates.
//!
//! For comparison, [`optimal_quota`] is the quota of Slomczynski &
//! Zyczkowski 2006, q = (1 + sqrt(Σ w_i^2) / Σ w_i) / 2 of the total weight,
//! which for weights proportional to the square roots of populations makes
//! the Penrose measure nearly proportional to the weights.

use super::Error;

/// Most members the search handles (exact swing counts in `u128`).
pub const MAX_MEMBERS: usize = 120;

/// The search's limits.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Options {
    /// Elementary steps the search may take.
    pub budget: u128,
    /// Largest total weight tried.
    pub max_total: u64,
}

/// The best weighted game found.
#[derive(Clone, Debug, PartialEq)]
pub struct Fit {
    /// Integer weights, one per member.
    pub weights: Vec<u64>,
    /// The quota.
    pub quota: u64,
    /// Normalized Banzhaf index of each member.
    pub banzhaf: Vec<f64>,
    /// Largest |index - target|.
    pub max_deviation: f64,
    /// Root-mean-square of index - target.
    pub rms_deviation: f64,
    /// Steps the search took.
    pub steps: u128,
    /// Whether the budget ran out before the search ended by itself.
    pub exhausted: bool,
}

/// Targets proportional to `values`, summing to 1.
pub fn normalize(values: &[f64]) -> Result<Vec<f64>, Error> {
    if values.iter().any(|v| !v.is_finite() || *v < 0.0) {
        return Err(Error::Mismatch(
            "targets must be non-negative numbers".to_string(),
        ));
    }
    let total: f64 = values.iter().sum();
    if total <= 0.0 {
        return Err(Error::Mismatch(
            "at least one target must be positive".to_string(),
        ));
    }
    Ok(values.iter().map(|v| v / total).collect())
}

/// Penrose's square-root law: with members representing these populations,
/// each citizen's indirect influence is equal when the members' power is
/// proportional to the square root of their population (Penrose 1946).
pub fn penrose_targets(populations: &[f64]) -> Result<Vec<f64>, Error> {
    normalize(&populations.iter().map(|p| p.max(0.0).sqrt()).collect::<Vec<_>>())
}

/// The optimal relative quota of Slomczynski & Zyczkowski 2006:
/// (1 + sqrt(Σ w^2) / Σ w) / 2.
pub fn optimal_quota(weights: &[u64]) -> f64 {
    let sum: f64 = weights.iter().map(|&w| w as f64).sum();
    let squares: f64 = weights.iter().map(|&w| (w as f64) * (w as f64)).sum();
    if sum <= 0.0 {
        return 0.5;
    }
    0.5 * (1.0 + squares.sqrt() / sum)
}

/// Normalized Banzhaf index of `[quota; weights]` (all zero when nobody
/// swings), exact counts in `u128`.
pub fn banzhaf(weights: &[u64], quota: u64) -> Result<Vec<f64>, Error> {
    check_size(weights.len())?;
    // Quota 0 (everything passes) or above the total (nothing does): no swings.
    Ok(SwingTable::new(weights, quota..=quota, &mut 0)
        .map_or_else(|| vec![0.0; weights.len()], |t| t.banzhaf(0)))
}

fn check_size(n: usize) -> Result<(), Error> {
    if n == 0 || n > MAX_MEMBERS {
        return Err(Error::Mismatch(format!(
            "the fit handles 1 to {MAX_MEMBERS} members, not {n}"
        )));
    }
    Ok(())
}

/// Every member's swings at every quota of a range.
struct SwingTable {
    first: u64,
    /// `swings[k * n + i]`: member i's swings at quota first + k.
    swings: Vec<f64>,
    n: usize,
}

impl SwingTable {
    fn new(weights: &[u64], quotas: std::ops::RangeInclusive<u64>, steps: &mut u128) -> Option<Self> {
        let n = weights.len();
        let total: u64 = weights.iter().sum();
        let (first, last) = (*quotas.start(), (*quotas.end()).min(total));
        if first > last || first == 0 {
            return None;
        }
        let t = total as usize;
        // count[s]: subsets of all members with weight s (exact below 2^128).
        let mut count = vec![0u128; t + 1];
        count[0] = 1;
        let mut reach = 0usize;
        for &w in weights {
            let w = w as usize;
            reach += w;
            if w > 0 {
                for s in (w..=reach).rev() {
                    count[s] = count[s].wrapping_add(count[s - w]);
                }
            }
        }
        let width = (last - first + 1) as usize;
        let mut swings = vec![0.0f64; width * n];
        let mut without = vec![0u128; t + 1];
        let mut prefix = vec![0u128; t + 2];
        for (i, &w) in weights.iter().enumerate() {
            let w = w as usize;
            if w == 0 {
                continue;
            }
            // Divide member i out: without[s] = count[s] - without[s - w].
            for s in 0..=t {
                let sub = if s >= w { without[s - w] } else { 0 };
                without[s] = count[s].wrapping_sub(sub);
            }
            // prefix[s] = Σ_{r < s} without[r]
            for s in 0..=t {
                prefix[s + 1] = prefix[s].wrapping_add(without[s]);
            }
            // Swings at q: subsets of the others with weight in [q - w, q - 1].
            for k in 0..width {
                let q = first as usize + k;
                let lo = q.saturating_sub(w);
                swings[k * n + i] = prefix[q].wrapping_sub(prefix[lo]) as f64;
            }
        }
        *steps += (n as u128) * (3 * t as u128 + width as u128);
        Some(SwingTable { first, swings, n })
    }

    fn banzhaf(&self, k: usize) -> Vec<f64> {
        let row = &self.swings[k * self.n..(k + 1) * self.n];
        let total: f64 = row.iter().sum();
        if total == 0.0 {
            return vec![0.0; self.n];
        }
        row.iter().map(|s| s / total).collect()
    }
}

/// A candidate with its distance.
#[derive(Clone, Debug, PartialEq)]
struct Candidate {
    weights: Vec<u64>,
    quota: u64,
    banzhaf: Vec<f64>,
    squares: f64,
    max: f64,
    total: u64,
}

impl Candidate {
    fn better_than(&self, other: &Candidate) -> bool {
        (self.squares, self.max, self.total, &self.weights)
            < (other.squares, other.max, other.total, &other.weights)
    }
}

struct Search<'a> {
    targets: &'a [f64],
    options: Options,
    steps: u128,
    exhausted: bool,
    best: Option<Candidate>,
}

/// Tolerance below which the fit counts as exact.
const EXACT: f64 = 1e-24;

impl Search<'_> {
    fn done(&self) -> bool {
        self.exhausted || self.best.as_ref().is_some_and(|b| b.squares < EXACT)
    }

    /// The best quota for these weights, or `None` (no weight, or over budget).
    fn evaluate(&mut self, weights: &[u64]) -> Option<Candidate> {
        let total: u64 = weights.iter().sum();
        if total == 0 || total > self.options.max_total {
            return None;
        }
        let cost = (weights.len() as u128) * (3 * u128::from(total) + u128::from(total) / 2 + 1);
        if self.steps + cost > self.options.budget {
            self.exhausted = true;
            return None;
        }
        let table = SwingTable::new(weights, total / 2 + 1..=total, &mut self.steps)?;
        // Same weights for every quota: compare distances only (ties keep the lower quota).
        let mut best: Option<(f64, f64, usize)> = None;
        for k in 0..(total - total / 2) as usize {
            let row = &table.swings[k * table.n..(k + 1) * table.n];
            let sum: f64 = row.iter().sum();
            let (squares, max) = row
                .iter()
                .zip(self.targets)
                .fold((0.0f64, 0.0f64), |(s, m), (x, t)| {
                    let d = if sum == 0.0 { -t } else { x / sum - t };
                    (s + d * d, m.max(d.abs()))
                });
            if best.is_none_or(|(s, m, _)| (squares, max) < (s, m)) {
                best = Some((squares, max, k));
            }
        }
        let best = best.map(|(squares, max, k)| Candidate {
            weights: weights.to_vec(),
            quota: table.first + k as u64,
            banzhaf: table.banzhaf(k),
            squares,
            max,
            total,
        });
        let c = best?;
        if self.best.as_ref().is_none_or(|b| c.better_than(b)) {
            self.best = Some(c.clone());
        }
        Some(c)
    }

    /// Fixed-point iteration at one total: returns the best candidate met.
    fn iterate(&mut self, total: u64) -> Option<Candidate> {
        let mut x: Vec<f64> = self.targets.to_vec();
        let mut best: Option<Candidate> = None;
        for _ in 0..12 {
            if self.done() {
                break;
            }
            let w = apportion(&x, total);
            let Some(c) = self.evaluate(&w) else { break };
            let b = c.banzhaf.clone();
            if best.as_ref().is_none_or(|b| c.better_than(b)) {
                best = Some(c);
            }
            for i in 0..x.len() {
                let t = self.targets[i];
                x[i] = if t == 0.0 {
                    0.0
                } else if b[i] == 0.0 {
                    x[i] * 2.0 + 1.0 / total as f64
                } else {
                    x[i] * (t / b[i])
                };
            }
        }
        best
    }

    /// Local search from a candidate: first improvement among single-weight
    /// steps and one-unit transfers, until none improves.
    fn descend(&mut self, start: Candidate) {
        let n = start.weights.len();
        let mut current = start;
        'improve: while !self.done() {
            let mut moves: Vec<Vec<u64>> = Vec::new();
            for i in 0..n {
                let mut up = current.weights.clone();
                up[i] += 1;
                moves.push(up);
                if current.weights[i] > 0 {
                    let mut down = current.weights.clone();
                    down[i] -= 1;
                    moves.push(down);
                }
            }
            for i in 0..n {
                for j in 0..n {
                    if i != j && current.weights[j] > 0 {
                        let mut m = current.weights.clone();
                        m[i] += 1;
                        m[j] -= 1;
                        moves.push(m);
                    }
                }
            }
            for m in moves {
                if let Some(c) = self.evaluate(&m) {
                    if c.better_than(&current) {
                        current = c;
                        continue 'improve;
                    }
                }
                if self.done() {
                    return;
                }
            }
            return;
        }
    }
}

/// Integer weights summing to `total`, proportional to `x` by the largest
/// remainder method (ties to the lower index).
fn apportion(x: &[f64], total: u64) -> Vec<u64> {
    let sum: f64 = x.iter().sum();
    if sum <= 0.0 {
        return vec![0; x.len()];
    }
    let exact: Vec<f64> = x.iter().map(|v| v / sum * total as f64).collect();
    let mut w: Vec<u64> = exact.iter().map(|e| e.floor() as u64).collect();
    let mut left = total.saturating_sub(w.iter().sum());
    let mut order: Vec<usize> = (0..x.len()).collect();
    order.sort_by(|&a, &b| {
        let (ra, rb) = (exact[a] - exact[a].floor(), exact[b] - exact[b].floor());
        rb.total_cmp(&ra).then(a.cmp(&b))
    });
    for &i in order.iter().cycle().take(x.len() * 2) {
        if left == 0 {
            break;
        }
        if x[i] > 0.0 {
            w[i] += 1;
            left -= 1;
        }
    }
    w
}

/// Searches weights and a quota for `targets` (see the module docs).
pub fn fit(targets: &[f64], options: Options) -> Result<Fit, Error> {
    check_size(targets.len())?;
    let targets = normalize(targets)?;
    let n = targets.len() as u64;
    let mut search = Search {
        targets: &targets,
        options,
        steps: 0,
        exhausted: false,
        best: None,
    };
    // A ladder of totals: every total up to 4n, then growing by half.
    let mut totals: Vec<u64> = (1..=4 * n).collect();
    let mut t = 4 * n;
    while t < options.max_total {
        t = (t + t / 2).min(options.max_total);
        totals.push(t);
    }
    totals.retain(|&t| t <= options.max_total);
    let mut starts: Vec<Candidate> = Vec::new();
    for &total in &totals {
        if search.done() {
            break;
        }
        if let Some(c) = search.iterate(total) {
            starts.push(c);
        }
    }
    starts.sort_by(|a, b| a.squares.total_cmp(&b.squares).then(a.total.cmp(&b.total)));
    for start in starts.into_iter().take(4) {
        if search.done() {
            break;
        }
        search.descend(start);
    }
    let best = search
        .best
        .clone()
        .ok_or_else(|| Error::Mismatch("the budget allows no evaluation at all; raise it".to_string()))?;
    Ok(Fit {
        rms_deviation: (best.squares / targets.len() as f64).sqrt(),
        max_deviation: best.max,
        banzhaf: best.banzhaf,
        weights: best.weights,
        quota: best.quota,
        steps: search.steps,
        exhausted: search.exhausted,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn banzhaf_of_small_games() {
        // [3; 2, 1, 1]: swings 3, 1, 1 (by hand).
        let b = banzhaf(&[2, 1, 1], 3).unwrap();
        assert!((b[0] - 0.6).abs() < 1e-15 && (b[1] - 0.2).abs() < 1e-15);
        // [4; 2, 1, 1] is unanimity: 1/3 each.
        let b = banzhaf(&[2, 1, 1], 4).unwrap();
        assert!(b.iter().all(|x| (x - 1.0 / 3.0).abs() < 1e-15));
        assert_eq!(apportion(&[0.5, 0.3, 0.2], 7), vec![4, 2, 1]);
        // Equal weights: q = (1 + 1/sqrt(n)) / 2 (by hand), n = 4: 0.75.
        assert!((optimal_quota(&[1, 1, 1, 1]) - 0.75).abs() < 1e-15);
    }
}
