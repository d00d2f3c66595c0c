//! How many worker threads the parallel paths use (feature `std`).
//!
//! The residue engine and Monte Carlo sampling split fixed pieces of work
//! (one prime, one seeded batch) over threads, so their results do not
//! depend on this number; it only changes the speed. `CLOUT_THREADS=N`
//! (a positive integer) overrides the default of every core, which is how
//! the tests check that the results are bit-identical for any count.
//! O(1), no heap, no arithmetic.

/// Worker threads: `CLOUT_THREADS` if it holds a positive integer, else the
/// number of cores (1 if unknown).
pub fn available() -> usize {
    std::env::var("CLOUT_THREADS")
        .ok()
        .and_then(|v| v.trim().parse::<usize>().ok())
        .filter(|&n| n > 0)
        .unwrap_or_else(|| std::thread::available_parallelism().map_or(1, |n| n.get()))
}
