//! clout's fuzz targets and a small coverage-guided driver for stable Rust.
//!
//! * [`targets`]: one plain function per target (`rule_text`, `image_load`,
//!   `image_decide`, `c_abi`, `engines`), shared with the workspace tests.
//! * [`coverage`]: edge counters from LLVM SanitizerCoverage (`run.sh` sets
//!   the flags), no libFuzzer and no nightly needed.
//! * [`mutate`] and [`driver`]: the campaign loop: pick a corpus entry,
//!   mutate it, run it, keep it if it reached new coverage, save it if it
//!   panicked or hung.

#![allow(unsafe_code)]

pub mod coverage;
pub mod driver;
pub mod mutate;
pub mod targets;
