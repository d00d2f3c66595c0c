//! Why a library call was refused, in words a front end can show as they
//! are: a message that names the offender and, where one helps, a hint.
//!
//! Every front end maps a [`Failure`] the same way: the command line prints
//! `error: MESSAGE` and `= hint: HINT` and exits 2, the Python package raises
//! it, the WebAssembly package throws it. Errors in rule text are
//! [`crate::Diagnostic`]s instead, because they carry a place in the text.

use std::fmt;

/// What kind of refusal a [`Failure`] is.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum FailureKind {
    /// The input is wrong: an unknown name, an option out of range, a rule
    /// that is not a simple game the method can take.
    Input,
    /// The computation would pass the work budget or the memory limit.
    Limit,
    /// A forced engine or method cannot handle the rule.
    Unsuitable,
    /// The caller stopped the computation between two of its steps (Ctrl-C
    /// in the Python package).
    Interrupted,
}

/// A refused call: its kind, a message and an optional hint.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Failure {
    /// What kind of refusal.
    pub kind: FailureKind,
    /// Short, lowercase, names the offender.
    pub message: String,
    /// What to do about it.
    pub hint: Option<String>,
}

impl Failure {
    /// Bad input, with no hint.
    pub fn input(message: impl Into<String>) -> Self {
        Failure {
            kind: FailureKind::Input,
            message: message.into(),
            hint: None,
        }
    }

    /// The same failure with a hint.
    pub fn with_hint(mut self, hint: impl Into<String>) -> Self {
        self.hint = Some(hint.into());
        self
    }
}

impl fmt::Display for Failure {
    /// `MESSAGE`, then `\n  = hint: HINT` when there is a hint.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)?;
        if let Some(h) = &self.hint {
            write!(f, "\n  = hint: {h}")?;
        }
        Ok(())
    }
}

impl std::error::Error for Failure {}
