//! Edge coverage from LLVM's SanitizerCoverage, on stable Rust.
//!
//! Built with `-Cpasses=sancov-module` and
//! `-Cllvm-args=-sanitizer-coverage-inline-8bit-counters` (see `run.sh`),
//! every instrumented module increments one byte counter per edge and, at
//! start-up, hands its counter array to [`__sanitizer_cov_8bit_counters_init`],
//! defined here. The driver zeroes the counters before each run and reads
//! them after it, bucketing hit counts as AFL does (1, 2, 3, 4-7, 8-15,
//! 16-31, 32-127, 128+), so an input is new when it reaches an edge or a
//! bucket no earlier input reached. Without the flags no module registers
//! and the driver falls back to blind mutation.

use std::sync::Mutex;

/// Counter arrays registered by the instrumented modules: (start, length).
static REGIONS: Mutex<Vec<(usize, usize)>> = Mutex::new(Vec::new());

/// Called by each instrumented module's constructor with its counters.
#[no_mangle]
pub extern "C" fn __sanitizer_cov_8bit_counters_init(start: *mut u8, stop: *mut u8) {
    let (start, stop) = (start as usize, stop as usize);
    if stop > start {
        if let Ok(mut regions) = REGIONS.lock() {
            if !regions.iter().any(|&(s, _)| s == start) {
                regions.push((start, stop - start));
            }
        }
    }
}

/// The coverage seen so far and the live counters.
pub struct Coverage {
    regions: Vec<(usize, usize)>,
    virgin: Vec<u8>,
    edges: usize,
}

fn bucket(hits: u8) -> u8 {
    match hits {
        0 => 0,
        1 => 1,
        2 => 2,
        3 => 4,
        4..=7 => 8,
        8..=15 => 16,
        16..=31 => 32,
        32..=127 => 64,
        _ => 128,
    }
}

impl Coverage {
    /// Takes the registered counter arrays.
    pub fn new() -> Self {
        let regions = REGIONS.lock().map(|r| r.clone()).unwrap_or_default();
        let total = regions.iter().map(|&(_, len)| len).sum();
        let c = Coverage {
            regions,
            virgin: vec![0; total],
            edges: 0,
        };
        c.reset();
        c
    }

    /// Counters available (0 without instrumentation).
    pub fn counters(&self) -> usize {
        self.virgin.len()
    }

    /// Edges reached so far.
    pub fn edges(&self) -> usize {
        self.edges
    }

    fn region(&self, k: usize) -> &'static mut [u8] {
        let (start, len) = self.regions[k];
        // SAFETY: the instrumented module registered `len` counter bytes at
        // `start`, static for the whole run; only the driver's thread
        // resets them (other threads of a target may bump them meanwhile,
        // which at worst misreads one bucket).
        unsafe { std::slice::from_raw_parts_mut(start as *mut u8, len) }
    }

    /// Zeroes the counters.
    pub fn reset(&self) {
        for k in 0..self.regions.len() {
            self.region(k).fill(0);
        }
    }

    /// Folds the counters of the last run into the coverage, zeroes them,
    /// and says whether the run reached anything new.
    pub fn collect(&mut self) -> bool {
        let mut new = false;
        let mut offset = 0;
        for k in 0..self.regions.len() {
            let counters = self.region(k);
            let len = counters.len();
            let virgin = &mut self.virgin[offset..offset + len];
            for (cs, vs) in counters.chunks_mut(32).zip(virgin.chunks_mut(32)) {
                if cs.iter().all(|&c| c == 0) {
                    continue;
                }
                for (c, v) in cs.iter_mut().zip(vs.iter_mut()) {
                    let b = bucket(*c);
                    if b != 0 && *v & b == 0 {
                        if *v == 0 {
                            self.edges += 1;
                        }
                        *v |= b;
                        new = true;
                    }
                    *c = 0;
                }
            }
            offset += len;
        }
        new
    }
}

impl Default for Coverage {
    fn default() -> Self {
        Self::new()
    }
}
