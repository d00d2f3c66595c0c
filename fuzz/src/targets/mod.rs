//! The fuzz targets, as plain functions of a byte slice.
//!
//! Each target panics when the code under test breaks a promise: a panic of
//! its own, an overflow (the campaign build keeps overflow checks on), a
//! wrong answer against an independent oracle, a damaged input accepted, or
//! an out-parameter written on failure. Returning normally means the input
//! was handled. The same functions run under the driver (`clout-fuzz`) and
//! in the workspace tests, which replay `fuzz/corpus/` and
//! `fuzz/regressions/` (`tests/hostile.rs`).
//!
//! This directory depends only on clout-core, clout-dsl and clout-c, so a
//! test can include it with `#[path]`.

pub mod c_abi;
pub mod data_table;
pub mod engines;
pub mod image_decide;
pub mod image_load;
pub mod oracle;
pub mod reader;
pub mod rule_text;

/// A fuzz target: its name (also its corpus folder) and entry point.
#[derive(Clone, Copy)]
pub struct Target {
    /// Folder name under `fuzz/corpus/` and `fuzz/regressions/`.
    pub name: &'static str,
    /// Runs one input; panics on a finding.
    pub run: fn(&[u8]),
    /// Longest input the driver generates.
    pub max_len: usize,
    /// Tokens the mutator splices in.
    pub dictionary: &'static [&'static [u8]],
}

/// Every target.
pub const TARGETS: [Target; 6] = [
    Target {
        name: "rule_text",
        run: rule_text::run,
        max_len: 4096,
        dictionary: rule_text::DICTIONARY,
    },
    Target {
        name: "image_load",
        run: image_load::run,
        max_len: 2048,
        dictionary: image_load::DICTIONARY,
    },
    Target {
        name: "image_decide",
        run: image_decide::run,
        max_len: 2048,
        dictionary: image_load::DICTIONARY,
    },
    Target {
        name: "c_abi",
        run: c_abi::run,
        max_len: 2048,
        dictionary: image_load::DICTIONARY,
    },
    Target {
        name: "engines",
        run: engines::run,
        max_len: 512,
        dictionary: &[],
    },
    Target {
        name: "data_table",
        run: data_table::run,
        max_len: 4096,
        dictionary: data_table::DICTIONARY,
    },
];

/// The target called `name`.
pub fn target(name: &str) -> Option<Target> {
    TARGETS.iter().copied().find(|t| t.name == name)
}
