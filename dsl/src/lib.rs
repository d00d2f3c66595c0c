//! # clout-dsl
//!
//! The clout rule language: a rule file in text becomes the core's rule IR
//! ([`clout_core::Rule`]), with every quota an exact integer and every error
//! pointing at the line and column that caused it.
//!
//! ```
//! let source = "
//!     title \"Alder Creek Council (fictional)\"
//!     member mayor seats=3
//!     members ward x4 seats=1
//!     rule motion = seats > 1/2 and mayor
//! ";
//! let file = clout_dsl::compile(source).unwrap();
//! let motion = file.rule(None).unwrap();
//! assert_eq!(motion.rule.members(), 5);
//! // "more than half of 7 seats" is the exact quota 4.
//! assert_eq!(motion.rule.atoms()[0].quota, 4);
//! ```
//!
//! Pipeline, one folder or module each: [`syntax`] (pest grammar, tree with
//! spans; every syntax error of a file, each declaration parsed on its own)
//! -> [`mod@compile`] (passes: names, blocs, exact quotas, lowering to the IR)
//! -> [`mod@lint`] (warnings that need the core's counts: dummies, improper
//! rules). [`mod@print`] writes a rule back as text that compiles to the same
//! rule; [`exact`] runs one exact analysis with a count type wide enough for
//! the member count. Errors are [`Diagnostic`]s; pest's types never leave the
//! crate. No step recurses deeper than a fixed bound, whatever the input.
//!
//! | step | time |
//! | --- | --- |
//! | parse + compile | O(source + members * attributes + bloc entries) |
//! | lint | one exact analysis per rule, all rules of a file within one work budget |
//! | print | O(members * attributes + nodes) |

#![deny(unsafe_code)]
#![warn(missing_docs)]

pub mod amount;
pub mod compile;
pub mod data;
pub mod diagnostic;
pub mod escape;
pub mod exact;
pub mod lint;
pub mod print;
pub mod quote;
pub mod syntax;

pub use compile::{
    compile, compile_with, Amounts, Attribute, AttributeKind, Bloc, CompiledRule, Condition, ExactCondition,
    Group, Member, NoTables, RuleFile, Tables,
};
pub use diagnostic::{error_count, render_all, Diagnostic, Place, Severity, Span};
pub use lint::lint;
pub use print::print_rule;
