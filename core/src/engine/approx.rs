//! Engine 4: approximations for bodies beyond exact reach (feature `alloc`;
//! threads with `std`).
//!
//! * Seeded Monte Carlo. Banzhaf: draw coalitions with each member voting
//!   yes with chance 1/2 and count, for every member at once, how often it
//!   is a swing; the rate estimates its Penrose measure. Shapley-Shubik:
//!   draw orderings and count who is pivotal. Each estimate carries a
//!   Wilson score interval at the chosen confidence (Wilson 1927); sampling
//!   runs in fixed batches, each seeded from the seed and its own index, and
//!   stops after the first round in which every interval is narrow enough,
//!   so results are bit-identical for any number of threads.
//! * Owen's multilinear-extension normal approximation for one weighted
//!   threshold (Owen 1975): the sum of the other members' weights is taken
//!   as normal; the Berry-Esseen bound with Shevtsova's constant 0.56
//!   (Shevtsova 2010) bounds the error of each figure.
//!
//! Every figure here is an estimate and is labelled with its half-width;
//! nothing in this module is exact.
//!
//! Time: Monte Carlo O(samples * (n + atoms + nodes)) per figure set,
//! at most `max_samples` draws; [`penrose_f64`] O(n q) for quota q below
//! 2^31; [`normal_approximation`] O(n) for Penrose and O(400 n) for
//! Shapley-Shubik. Space O(n) per thread (plus a 256-entry sum table per 8
//! members in the one-threshold sampler), O(q) for [`penrose_f64`].
//! Overflow: hit counters are `u64` and count at most `max_samples` draws;
//! coalition sums stay below the checked attribute totals; the rest is `f64`.

// Hot loops index their tables and add bounded integers directly (checked
// arithmetic would cost the engines' speed). Why nothing is out of range or
// overflows, listed in DEVELOPERS.md ("Panics"):
// sampling indices are below the member count; hit counters are u64 and count at
// most `max_samples` draws each (a u64), so they cannot pass u64::MAX; the rest is f64.
#![allow(clippy::indexing_slicing, clippy::arithmetic_side_effects)]

use alloc::vec;
use alloc::vec::Vec;

use crate::model::engine_id::Engine;
use crate::model::error::Error;
use crate::model::limits::MAX_ATTRIBUTES;
use crate::model::meter::Meter;
use crate::model::rule::Rule;

/// An approximate figure: `value ± half_width`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Estimate {
    /// The point estimate.
    pub value: f64,
    /// Half-width of the interval (a confidence interval for Monte Carlo, a
    /// worst-case bound for the normal approximation).
    pub half_width: f64,
}

/// How to sample.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Sampling {
    /// Seed of the pseudo-random stream.
    pub seed: u64,
    /// Target half-width of every interval.
    pub tolerance: f64,
    /// Confidence level of each interval (0.95 for 95%).
    pub confidence: f64,
    /// Stop after this many samples even if the target is not met.
    pub max_samples: u64,
    /// Worker threads (`std` only; 0 means [`crate::threads::available`]). Results do not depend on it.
    pub threads: usize,
}

impl Default for Sampling {
    fn default() -> Self {
        Sampling {
            seed: 1,
            tolerance: 0.001,
            confidence: 0.95,
            max_samples: 50_000_000,
            threads: 0,
        }
    }
}

/// Monte Carlo estimates for every member.
#[derive(Clone, Debug, PartialEq)]
pub struct SampledPower {
    /// One estimate per member (Penrose measure, or Shapley-Shubik index).
    pub members: Vec<Estimate>,
    /// Samples drawn.
    pub samples: u64,
    /// Whether every half-width met the tolerance.
    pub converged: bool,
}

/// Samples per batch; batches are the unit of seeding and of work sharing.
const BATCH: u64 = 4096;
/// Batches per round; convergence is checked between rounds.
const ROUND: u64 = 16;

/// wyrand (Wang Yi's public-domain generator): fast, passes BigCrush.
#[derive(Clone, Copy)]
struct Rng(u64);

impl Rng {
    fn new(seed: u64, stream: u64) -> Self {
        let mut r = Rng(seed ^ stream.wrapping_mul(0x9E37_79B9_7F4A_7C15));
        r.next();
        r
    }
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0xa076_1d64_78bd_642f);
        let t = u128::from(self.0) * u128::from(self.0 ^ 0xe703_7ed1_a0b4_28db);
        ((t >> 64) as u64) ^ (t as u64)
    }
    fn below(&mut self, n: usize) -> usize {
        ((u128::from(self.next()) * n as u128) >> 64) as usize
    }
}

/// The two-sided normal quantile for `confidence` (Acklam's rational
/// approximation of the inverse normal, relative error below 1.2e-9).
#[allow(clippy::excessive_precision)] // the published coefficients, as printed
fn z_value(confidence: f64) -> f64 {
    let p = 1.0 - (1.0 - confidence.clamp(0.5, 0.999_999)) / 2.0;
    let a = [
        -3.969683028665376e+01,
        2.209460984245205e+02,
        -2.759285104469687e+02,
        1.383577518672690e+02,
        -3.066479806614716e+01,
        2.506628277459239e+00,
    ];
    let b = [
        -5.447609879822406e+01,
        1.615858368580409e+02,
        -1.556989798598866e+02,
        6.680131188771972e+01,
        -1.328068155288572e+01,
    ];
    let c = [
        -7.784894002430293e-03,
        -3.223964580411365e-01,
        -2.400758277161838e+00,
        -2.549732539343734e+00,
        4.374664141464968e+00,
        2.938163982698783e+00,
    ];
    let d = [
        7.784695709041462e-03,
        3.224671290700398e-01,
        2.445134137142996e+00,
        3.754408661907416e+00,
    ];
    if p > 0.97575 {
        let q = libm::sqrt(-2.0 * libm::log(1.0 - p));
        -(((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5])
            / ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1.0)
    } else {
        let q = p - 0.5;
        let r = q * q;
        (((((a[0] * r + a[1]) * r + a[2]) * r + a[3]) * r + a[4]) * r + a[5]) * q
            / (((((b[0] * r + b[1]) * r + b[2]) * r + b[3]) * r + b[4]) * r + 1.0)
    }
}

/// Wilson score interval for `hits` successes in `n` trials.
fn wilson(hits: u64, n: u64, z: f64) -> Estimate {
    if n == 0 {
        return Estimate {
            value: 0.0,
            half_width: 1.0,
        };
    }
    let n_f = n as f64;
    let p = hits as f64 / n_f;
    let z2 = z * z;
    let denom = 1.0 + z2 / n_f;
    let centre = (p + z2 / (2.0 * n_f)) / denom;
    let half = z * libm::sqrt(p * (1.0 - p) / n_f + z2 / (4.0 * n_f * n_f)) / denom;
    // Report the plain rate with a half-width that covers the Wilson interval.
    let half_width = (centre + half - p).max(p - (centre - half));
    Estimate { value: p, half_width }
}

/// Runs batches until every member's interval meets the tolerance.
/// `batch(rng, counts, samples)` adds the hits of `samples` draws (a whole
/// batch is [`BATCH`]) into `counts`.
///
/// Each round is charged to `meter` before it runs, `per_sample` steps a
/// sample; rounds shrink to what the budget still allows, down to a part of
/// one batch (its first draws, so the figures stay the same for the same
/// budget). When not one more draw fits, sampling stops with the intervals
/// reached so far (`converged` false), or with [`Error::OverBudget`] when
/// not even one draw fits. Cancellation stops it with [`Error::Cancelled`].
fn sample_rounds<F>(
    n: usize,
    s: &Sampling,
    per_sample: u64,
    meter: &Meter<'_>,
    batch: F,
) -> Result<SampledPower, Error>
where
    F: Fn(&mut Rng, &mut [u64], u64) + Sync,
{
    let z = z_value(s.confidence);
    let mut hits = vec![0u64; n];
    let mut drawn = 0u64;
    let mut next_batch = 0u64;
    let per_sample = per_sample.max(1);
    meter.expect(u128::from(per_sample) * u128::from(s.max_samples));
    let estimates = |hits: &[u64], drawn: u64| -> (Vec<Estimate>, bool) {
        let members: Vec<Estimate> = hits.iter().map(|&h| wilson(h, drawn, z)).collect();
        let converged = members.iter().all(|e| e.half_width <= s.tolerance);
        (members, converged)
    };
    loop {
        let left = meter.budget().saturating_sub(u128::from(meter.spent()));
        let affordable = u64::try_from(left / u128::from(per_sample)).unwrap_or(u64::MAX);
        let wanted = s.max_samples.saturating_sub(drawn).max(1);
        if affordable == 0 {
            meter.check()?;
            if drawn == 0 {
                return Err(Error::OverBudget {
                    budget: meter.budget(),
                });
            }
            let (members, converged) = estimates(&hits, drawn);
            return Ok(SampledPower {
                members,
                samples: drawn,
                converged,
            });
        }
        if affordable < BATCH {
            // The last draws the budget allows: the first ones of the next batch.
            let draws = affordable.min(wanted);
            meter.charge(draws * per_sample)?;
            batch(&mut Rng::new(s.seed, next_batch), &mut hits, draws);
            drawn += draws;
            let (members, converged) = estimates(&hits, drawn);
            return Ok(SampledPower {
                members,
                samples: drawn,
                converged,
            });
        }
        let round = ROUND.min(wanted.div_ceil(BATCH)).min(affordable / BATCH).max(1);
        meter.charge(round.saturating_mul(BATCH).saturating_mul(per_sample))?;
        run_round(n, s, next_batch, round, &batch, &mut hits);
        next_batch += round;
        drawn += round * BATCH;
        let (members, converged) = estimates(&hits, drawn);
        if converged || drawn >= s.max_samples {
            return Ok(SampledPower {
                members,
                samples: drawn,
                converged,
            });
        }
    }
}

#[cfg(feature = "std")]
fn run_round<F>(n: usize, s: &Sampling, first: u64, count: u64, batch: &F, hits: &mut [u64])
where
    F: Fn(&mut Rng, &mut [u64], u64) + Sync,
{
    let cores = crate::engine::threads::available();
    let threads = if s.threads == 0 { cores } else { s.threads }.clamp(1, count as usize);
    // One worker runs here: no thread to spawn, which WebAssembly without
    // threads (where `available()` is 1) could not do anyway.
    if threads == 1 {
        return run_in_turn(s, first, count, batch, hits);
    }
    let totals: Vec<Vec<u64>> = std::thread::scope(|scope| {
        let handles: Vec<_> = (0..threads)
            .map(|t| {
                scope.spawn(move || {
                    let mut local = vec![0u64; n];
                    // Batch k is always seeded by k, whichever thread runs it.
                    let mut k = t as u64;
                    while k < count {
                        let mut rng = Rng::new(s.seed, first + k);
                        batch(&mut rng, &mut local, BATCH);
                        k += threads as u64;
                    }
                    local
                })
            })
            .collect();
        handles
            .into_iter()
            .map(|h| h.join().unwrap_or_default())
            .collect()
    });
    for local in totals {
        for (h, l) in hits.iter_mut().zip(local) {
            *h += l;
        }
    }
}

#[cfg(not(feature = "std"))]
fn run_round<F>(_: usize, s: &Sampling, first: u64, count: u64, batch: &F, hits: &mut [u64])
where
    F: Fn(&mut Rng, &mut [u64], u64) + Sync,
{
    run_in_turn(s, first, count, batch, hits)
}

/// The batches one after the other on this thread.
fn run_in_turn<F>(s: &Sampling, first: u64, count: u64, batch: &F, hits: &mut [u64])
where
    F: Fn(&mut Rng, &mut [u64], u64),
{
    for k in 0..count {
        let mut rng = Rng::new(s.seed, first + k);
        batch(&mut rng, hits, BATCH);
    }
}

/// Monte Carlo estimate of every member's Penrose measure (absolute
/// Banzhaf: the chance of being a swing).
pub fn sample_penrose<W: AsRef<[u64]> + Sync>(rule: &Rule<W>, s: &Sampling) -> Result<SampledPower, Error> {
    sample_penrose_metered(rule, s, &Meter::unlimited())
}

/// [`sample_penrose`] charging `meter` round by round (see the module docs):
/// a budget too small for the target half-width ends sampling early, with
/// the wider intervals reached.
pub fn sample_penrose_metered<W: AsRef<[u64]> + Sync>(
    rule: &Rule<W>,
    s: &Sampling,
    meter: &Meter<'_>,
) -> Result<SampledPower, Error> {
    let n = rule.members();
    let attributes = rule.attributes();
    let words = n.div_ceil(64);
    if let Some((attr, _)) = rule.single_threshold() {
        return sample_penrose_threshold(rule, attr, s, meter);
    }
    let per_sample =
        (n as u64).saturating_mul(attributes as u64 + 2 + (rule.atoms().len() + rule.formula().len()) as u64);
    sample_rounds(n, s, per_sample, meter, |rng, hits, draws| {
        let mut yes = vec![0u64; words];
        for _ in 0..draws {
            for w in yes.iter_mut() {
                *w = rng.next();
            }
            let mut sums = [0u64; MAX_ATTRIBUTES];
            for a in 0..attributes {
                let row = rule.attribute_weights(a);
                sums[a] = (0..n)
                    .filter(|&i| yes[i / 64] >> (i % 64) & 1 == 1)
                    .map(|i| row[i])
                    .sum();
            }
            let passes = rule.passes_with_sums(&sums[..attributes]);
            for i in 0..n {
                let voting = yes[i / 64] >> (i % 64) & 1 == 1;
                if voting != passes {
                    continue;
                }
                let flipped = rule.eval(|j| {
                    let atom = rule.atoms()[j];
                    let a = usize::from(atom.attribute);
                    let w = rule.weight(a, i);
                    let s = if voting { sums[a] - w } else { sums[a] + w };
                    s >= atom.quota
                });
                if flipped != passes {
                    hits[i] += 1;
                }
            }
        }
    })
}

/// The one-threshold case: sums by byte-wide lookup tables, and the swings
/// of a coalition with sum W are the heaviest members on the side whose
/// switch crosses the quota, found by walking from the heaviest down.
fn sample_penrose_threshold<W: AsRef<[u64]> + Sync>(
    rule: &Rule<W>,
    attr: usize,
    s: &Sampling,
    meter: &Meter<'_>,
) -> Result<SampledPower, Error> {
    let n = rule.members();
    let q = rule.single_threshold().map_or(0, |(_, q)| q);
    let weights = rule.attribute_weights(attr);
    // Members heaviest first; position p holds member order[p].
    let mut order: Vec<usize> = (0..n).collect();
    order.sort_by(|&a, &b| weights[b].cmp(&weights[a]).then(a.cmp(&b)));
    let sorted: Vec<u64> = order.iter().map(|&i| weights[i]).collect();
    // Subset sums of each byte of 8 consecutive positions.
    let chunks = n.div_ceil(8);
    let mut table = vec![0u64; chunks * 256];
    for c in 0..chunks {
        for b in 0..256usize {
            table[c * 256 + b] = (0..8)
                .filter(|k| b >> k & 1 == 1 && c * 8 + k < n)
                .map(|k| sorted[c * 8 + k])
                .sum();
        }
    }
    let words = n.div_ceil(64);
    let per_sample = n as u64 + 8;
    let mut est = sample_rounds(n, s, per_sample, meter, |rng, hits, draws| {
        let mut yes = vec![0u64; words];
        for _ in 0..draws {
            let mut total = 0u64;
            for (wi, w) in yes.iter_mut().enumerate() {
                *w = rng.next();
                for byte in 0..8 {
                    let c = wi * 8 + byte;
                    if c < chunks {
                        total += table[c * 256 + ((*w >> (8 * byte)) & 0xff) as usize];
                    }
                }
            }
            if n % 64 != 0 {
                yes[words - 1] &= (1u64 << (n % 64)) - 1;
            }
            let passes = total >= q;
            // A yes-voter swings when total - w < q; a no-voter when total + w >= q.
            let need = if passes { total - q } else { q - total };
            for p in 0..n {
                let w = sorted[p];
                let on = yes[p / 64] >> (p % 64) & 1 == 1;
                if passes {
                    if w <= need {
                        break;
                    }
                } else if w < need {
                    break;
                }
                if on == passes {
                    hits[p] += 1;
                }
            }
        }
    })?;
    // Back to member order.
    let mut members = vec![
        Estimate {
            value: 0.0,
            half_width: 0.0
        };
        n
    ];
    for (p, &i) in order.iter().enumerate() {
        members[i] = est.members[p];
    }
    est.members = members;
    Ok(est)
}

/// Monte Carlo estimate of every member's Shapley-Shubik index: draw
/// orderings, add members until the rule passes, count the pivot.
pub fn sample_shapley<W: AsRef<[u64]> + Sync>(rule: &Rule<W>, s: &Sampling) -> Result<SampledPower, Error> {
    sample_shapley_metered(rule, s, &Meter::unlimited())
}

/// [`sample_shapley`] charging `meter` round by round, as
/// [`sample_penrose_metered`] does.
pub fn sample_shapley_metered<W: AsRef<[u64]> + Sync>(
    rule: &Rule<W>,
    s: &Sampling,
    meter: &Meter<'_>,
) -> Result<SampledPower, Error> {
    let n = rule.members();
    let attributes = rule.attributes();
    let empty = [0u64; MAX_ATTRIBUTES];
    if rule.passes_with_sums(&empty[..attributes]) {
        // The empty coalition passes: nobody is ever pivotal.
        return Ok(SampledPower {
            members: vec![
                Estimate {
                    value: 0.0,
                    half_width: 0.0
                };
                n
            ],
            samples: 0,
            converged: true,
        });
    }
    // An ordering adds members until the rule passes: at most n of them.
    let per_sample =
        (n as u64).saturating_mul(attributes as u64 + 2 + (rule.atoms().len() + rule.formula().len()) as u64);
    sample_rounds(n, s, per_sample, meter, |rng, hits, draws| {
        let mut perm: Vec<usize> = (0..n).collect();
        for _ in 0..draws {
            let mut sums = [0u64; MAX_ATTRIBUTES];
            for k in 0..n {
                let j = k + rng.below(n - k);
                perm.swap(k, j);
                let m = perm[k];
                for a in 0..attributes {
                    sums[a] += rule.weight(a, m);
                }
                if rule.passes_with_sums(&sums[..attributes]) {
                    hits[m] += 1;
                    break;
                }
            }
        }
    })
}

/// Penrose measures of a one-threshold rule in floating point: the dense
/// generating function with probabilities instead of counts (each factor
/// (1 + x^w) / 2), and each member's factor divided out (Uno 2012).
///
/// O(n q) time, O(q) space, no big integers: the fast path for large
/// assemblies. Each figure carries a rounding-error bound: entries of the
/// table are sums of positive terms (relative error at most n ε after n
/// factors), and the division adds at most 2 (n + 1) ε max F per step of
/// its recurrence, over at most q / w + 1 steps.
pub fn penrose_f64<W: AsRef<[u64]>>(rule: &Rule<W>) -> Result<Vec<Estimate>, Error> {
    penrose_f64_metered(rule, &Meter::unlimited())
}

/// [`penrose_f64`] with its two tables claimed from `meter` and every
/// member's pass over them charged (q steps each).
pub fn penrose_f64_metered<W: AsRef<[u64]>>(
    rule: &Rule<W>,
    meter: &Meter<'_>,
) -> Result<Vec<Estimate>, Error> {
    let (attr, q) = rule.single_threshold().ok_or(Error::EngineUnsuitable {
        engine: Engine::Dense,
    })?;
    let weights = rule.attribute_weights(attr);
    let n = weights.len();
    let total = rule.total(attr);
    if q == 0 || q > total {
        return Ok(vec![
            Estimate {
                value: 0.0,
                half_width: 0.0
            };
            n
        ]);
    }
    let q = usize::try_from(q).map_err(|_| Error::TooCostly {
        estimate: u128::from(q),
        budget: usize::MAX as u128,
    })?;
    if q > 1 << 31 {
        return Err(Error::TooCostly {
            estimate: q as u128,
            budget: 1 << 31,
        });
    }
    meter.expect(2 * n as u128 * q as u128);
    let table = Meter::bytes_of::<f64>(q).saturating_mul(2);
    // f[s] = P(sum = s) for s < q; sums at or above q are not needed.
    let f = meter.vec(q, 0.0f64)?;
    let out = match meter.vec(q, 0.0f64) {
        Ok(next) => penrose_tables(weights, q, f, next, meter),
        Err(e) => {
            meter.release(Meter::bytes_of::<f64>(q));
            return Err(e);
        }
    };
    meter.release(table);
    out
}

/// The body of [`penrose_f64_metered`] over its claimed tables.
fn penrose_tables(
    weights: &[u64],
    q: usize,
    mut f: Vec<f64>,
    mut next: Vec<f64>,
    meter: &Meter<'_>,
) -> Result<Vec<Estimate>, Error> {
    let n = weights.len();
    f[0] = 1.0;
    for &w in weights {
        meter.charge(q as u64)?;
        let w = w as usize;
        if w >= q {
            for x in f.iter_mut() {
                *x *= 0.5;
            }
            continue;
        }
        next[..w].iter_mut().zip(&f[..w]).for_each(|(d, &a)| *d = 0.5 * a);
        for ((d, &a), &b) in next[w..].iter_mut().zip(&f[w..]).zip(&f[..q - w]) {
            *d = 0.5 * (a + b);
        }
        core::mem::swap(&mut f, &mut next);
    }
    let max_f = f.iter().copied().fold(0.0, f64::max);
    let eps = f64::EPSILON;
    let mut out = vec![
        Estimate {
            value: 0.0,
            half_width: 0.0
        };
        n
    ];
    let mut done: Vec<(u64, Estimate)> = Vec::new();
    for (i, &wi) in weights.iter().enumerate() {
        if let Some(&(_, e)) = done.iter().find(|(w, _)| *w == wi) {
            out[i] = e;
            continue;
        }
        meter.charge(q as u64)?;
        let w = wi as usize;
        let e = if w == 0 {
            Estimate {
                value: 0.0,
                half_width: 0.0,
            }
        } else {
            // g = f / ((1 + x^w) / 2): g[s] = 2 f[s] - g[s - w].
            // Blocks of w entries depend only on the block before: vectorizable.
            let g = &mut next;
            for (d, &a) in g[..w.min(q)].iter_mut().zip(&f[..w.min(q)]) {
                *d = 2.0 * a;
            }
            let mut s = w;
            while s < q {
                let end = (s + w).min(q);
                let (done, rest) = g.split_at_mut(s);
                for ((d, &a), &b) in rest[..end - s]
                    .iter_mut()
                    .zip(&f[s..end])
                    .zip(&done[s - w..end - w])
                {
                    *d = 2.0 * a - b;
                }
                s = end;
            }
            // Swing: the others' sum lies in [q - w, q); the member's own vote has chance 1/2 each way.
            let window = &g[q.saturating_sub(w)..];
            let value: f64 = window.iter().map(|x| x.max(0.0)).sum();
            let steps = (q / w + 1) as f64;
            let bound = window.len() as f64 * steps * 2.0 * (n as f64 + 1.0) * eps * max_f * 2.0;
            Estimate {
                value,
                half_width: bound,
            }
        };
        done.push((wi, e));
        if done.len() > 64 {
            done.remove(0);
        }
        out[i] = e;
    }
    Ok(out)
}

fn normal_cdf(x: f64) -> f64 {
    0.5 * libm::erfc(-x / core::f64::consts::SQRT_2)
}

/// Owen's normal approximation of one weighted threshold: Penrose measure
/// and Shapley-Shubik index of every member, each with a Berry-Esseen
/// error bound. Fails with [`Error::EngineUnsuitable`] on compound rules.
pub fn normal_approximation<W: AsRef<[u64]>>(
    rule: &Rule<W>,
) -> Result<(Vec<Estimate>, Vec<Estimate>), Error> {
    let (attr, q) = rule.single_threshold().ok_or(Error::EngineUnsuitable {
        engine: Engine::Dense,
    })?;
    let w: Vec<f64> = rule.attribute_weights(attr).iter().map(|&x| x as f64).collect();
    let total: f64 = w.iter().sum();
    let sq: f64 = w.iter().map(|x| x * x).sum();
    let cube: f64 = w.iter().map(|x| x * x * x).sum();
    let q = q as f64;
    // P(q - w_i <= X < q) for X = the others' sum with each member in with chance t,
    // with a continuity correction of half a unit.
    let swing = |wi: f64, t: f64| -> (f64, f64) {
        let mean = t * (total - wi);
        let var = t * (1.0 - t) * (sq - wi * wi);
        if var <= 0.0 {
            let hit = mean >= q - wi && mean < q;
            return (if hit { 1.0 } else { 0.0 }, 0.0);
        }
        let sd = libm::sqrt(var);
        let p = normal_cdf((q - 0.5 - mean) / sd) - normal_cdf((q - wi - 0.5 - mean) / sd);
        let third = t * (1.0 - t) * (t * t + (1.0 - t) * (1.0 - t)) * (cube - wi * wi * wi);
        let bound = (2.0 * 0.56 * third / (sd * sd * sd)).min(1.0);
        (p.max(0.0), bound)
    };
    let penrose = w
        .iter()
        .map(|&wi| {
            let (p, b) = swing(wi, 0.5);
            Estimate {
                value: p,
                half_width: b,
            }
        })
        .collect();
    // Shapley-Shubik: φ_i = ∫_0^1 P(i swings at chance t) dt (Owen 1972), by Simpson's rule.
    const STEPS: usize = 400;
    let shapley = w
        .iter()
        .map(|&wi| {
            let (mut v, mut b) = (0.0, 0.0);
            for k in 0..=STEPS {
                let t = k as f64 / STEPS as f64;
                let coef = if k == 0 || k == STEPS {
                    1.0
                } else if k % 2 == 1 {
                    4.0
                } else {
                    2.0
                };
                let (p, e) = swing(wi, t);
                v += coef * p;
                b += coef * e;
            }
            let h = 1.0 / (3.0 * STEPS as f64);
            Estimate {
                value: v * h,
                half_width: b * h,
            }
        })
        .collect();
    Ok((penrose, shapley))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::{count_allocating, MemberCounts, Scope};
    use crate::fixtures::{seats_and_heads, two_tier};
    use crate::model::count::{scaled, Count1024};

    fn compound() -> Rule<Vec<u64>> {
        // (seats >= 20 and count >= 5) or seats >= 26 over 9 members (fictional).
        two_tier(9, seats_and_heads(&[9, 7, 6, 4, 3, 2, 2, 1, 1]), [20, 5, 26]).unwrap()
    }

    /// Exact counts of every member by `engine`.
    fn exact(rule: &Rule<Vec<u64>>, engine: Engine) -> Vec<MemberCounts<Count1024>> {
        count_allocating::<_, Count1024>(rule, engine, Scope::All, &crate::model::meter::Meter::unlimited())
            .unwrap()
            .1
    }

    /// The Penrose measure from exact counts: swings / 2^(n - 1).
    fn penrose(members: &[MemberCounts<Count1024>], i: usize) -> f64 {
        scaled(members[i].swings, members.len() - 1)
    }

    /// Statistical test of the intervals: over 100 seeds, each run of 4,096
    /// samples, the 95% intervals must contain the exact value at least 93%
    /// of the time (900 intervals per rule). With a true coverage of 95% the
    /// chance of falling below 93% is about 3 in 1,000 (normal approximation
    /// of the binomial, z = 2.75); the seeds are fixed, so the test is
    /// deterministic.
    #[test]
    fn intervals_cover_exact_values() {
        for rule in [
            compound(),
            Rule::weighted(14, vec![9u64, 7, 6, 4, 3, 2, 2, 1, 1]).unwrap(),
        ] {
            let exact = exact(&rule, Engine::Enumerate);
            let (mut inside, mut inside_ss, mut total) = (0, 0, 0);
            for seed in 0..100 {
                let s = Sampling {
                    seed,
                    tolerance: 0.0,
                    max_samples: BATCH,
                    threads: 1,
                    ..Sampling::default()
                };
                let pen = sample_penrose(&rule, &s).unwrap();
                let ss = sample_shapley(&rule, &s).unwrap();
                assert_eq!(pen.samples, BATCH);
                for i in 0..rule.members() {
                    let e = pen.members[i];
                    inside += usize::from((e.value - penrose(&exact, i)).abs() <= e.half_width);
                    let e = ss.members[i];
                    inside_ss += usize::from((e.value - exact[i].shapley_shubik).abs() <= e.half_width);
                    total += 1;
                }
            }
            assert!(inside * 100 >= total * 93, "penrose coverage {inside}/{total}");
            assert!(
                inside_ss * 100 >= total * 93,
                "shapley coverage {inside_ss}/{total}"
            );
        }
    }

    #[test]
    fn identical_for_any_thread_count() {
        let rule = compound();
        let run = |threads| {
            let s = Sampling {
                seed: 42,
                tolerance: 0.01,
                threads,
                ..Sampling::default()
            };
            (
                sample_penrose(&rule, &s).unwrap(),
                sample_shapley(&rule, &s).unwrap(),
            )
        };
        assert_eq!(run(1), run(2));
        assert_eq!(run(1), run(3));
    }

    #[test]
    fn tolerance_stops_sampling() {
        let rule = compound();
        let s = Sampling {
            seed: 7,
            tolerance: 0.01,
            ..Sampling::default()
        };
        let p = sample_penrose(&rule, &s).unwrap();
        assert!(p.converged && p.members.iter().all(|e| e.half_width <= 0.01));
        // z^2 p(1-p)/h^2 <= 1.96^2 / (4 * 0.01^2) = 9,604 samples suffice for any p.
        assert!(p.samples <= 9_604 + ROUND * BATCH);
    }

    #[test]
    fn normal_approximation_within_its_bound() {
        // Majority of 101: Penrose measure C(100,50)/2^100 = 0.079589 (Penrose 1946)
        // and Shapley-Shubik 1/101 by symmetry.
        let rule = Rule::weighted(51, vec![1u64; 101]).unwrap();
        let (pen, ss) = normal_approximation(&rule).unwrap();
        assert!((pen[0].value - 0.079589).abs() <= pen[0].half_width);
        assert!((pen[0].value - 0.079589).abs() < 1e-3);
        assert!((ss[0].value - 1.0 / 101.0).abs() <= ss[0].half_width);
        assert!(normal_approximation(&compound()).is_err());
    }

    #[test]
    fn floating_point_penrose_within_its_bound() {
        for (q, w) in [
            (12u64, vec![4u64, 4, 4, 2, 2, 1]),
            (39, {
                let mut v = vec![7u64; 5];
                v.extend([1u64; 10]);
                v
            }),
        ] {
            let rule = Rule::weighted(q, w).unwrap();
            let exact = exact(&rule, Engine::Profile);
            let fast = penrose_f64(&rule).unwrap();
            for (i, e) in fast.iter().enumerate() {
                let truth = penrose(&exact, i);
                assert!(
                    (e.value - truth).abs() <= e.half_width.max(1e-15),
                    "{i}: {} vs {truth}",
                    e.value
                );
            }
        }
    }

    #[test]
    fn normal_quantile() {
        // Standard normal quantiles (any statistics table).
        assert!((z_value(0.95) - 1.959964).abs() < 1e-6);
        assert!((z_value(0.99) - 2.575829).abs() < 1e-6);
    }
}
