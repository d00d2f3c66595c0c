//! Syntax tree to the core's rule IR: names resolved, every quota an exact
//! integer, one [`Rule`](clout_core::Rule) per `rule` declaration.
//!
//! The compiler runs in passes, one module each; a pass reads what the
//! passes before it produced and nothing of the passes after it:
//!
//! | pass | module | does | time |
//! | --- | --- | --- | --- |
//! | 1 | `names` | one namespace for members, groups, blocs, attributes, definitions, rules; weights | O(source + members * attributes) |
//! | 2 | `blocs` | each bloc's members, through nested blocs, on an explicit stack | O(parts + entries copied) |
//! | 3 | `quotas`, `four_state` | each definition and rule resolved once to atoms with exact quotas | O(conditions + members * attributes) |
//! | 3b | `references` | no cycles, no reference chain deeper than the core's nesting limit | O(definitions + references) |
//! | 4 | `lower` | postfix nodes and one weight table per rule | O(rules * (nodes + attributes * members)) |
//!
//! `game` compiles the `[q; w1, ..., wn]` form; `file` holds the output
//! types. Quotas use [`clout_core::quota`] (`u128` intermediates, no
//! floats). A quota of 0 (met by everyone) or above its total (met by no one)
//! is an error.
//!
//! Errors: every syntax error of the file is reported (the parser sets the
//! spoilt declarations aside, see [`syntax`]), then the
//! errors of passes 1 to 3 over the well-formed declarations. Pass 1 errors
//! (duplicates, limits) stop before pass 2; any error stops before pass 4.
//! At most [`MAX_DIAGNOSTICS`](crate::diagnostic::MAX_DIAGNOSTICS) errors are kept, then a note counts the rest
//! ([`error_count`](crate::diagnostic::error_count) reads the total back).

use crate::diagnostic::{CappedErrors, Diagnostic, Span};
use crate::syntax::{self, File};

mod blocs;
mod file;
mod four_state;
mod game;
mod lower;
mod names;
mod quotas;
mod references;

pub use blocs::MAX_BLOC_ENTRIES;
pub use file::{
    Amounts, Attribute, AttributeKind, Bloc, CompiledRule, Condition, ExactCondition, Group, Member, RuleFile,
};

/// Where the data tables a rule file names come from: the compiler never
/// touches the file system. The command line reads files relative to the
/// rule file; the Python and WebAssembly packages pass text.
///
/// `table(path)` gets the path exactly as written in the rule file and
/// returns the name to show in messages (the resolved path, say) and the
/// bytes, or why it cannot (shown after "cannot read the table `PATH`: ").
/// Implemented for closures and for a map from path to text.
pub trait Tables {
    /// The table written `path` in the rule file: its shown name and bytes.
    fn table(&mut self, path: &str) -> Result<(String, Vec<u8>), String>;
}

impl<F: FnMut(&str) -> Result<(String, Vec<u8>), String>> Tables for F {
    fn table(&mut self, path: &str) -> Result<(String, Vec<u8>), String> {
        self(path)
    }
}

impl Tables for std::collections::HashMap<String, String> {
    fn table(&mut self, path: &str) -> Result<(String, Vec<u8>), String> {
        match self.get(path) {
            Some(text) => Ok((path.to_string(), text.as_bytes().to_vec())),
            None => Err(format!(
                "no table of that name was given (given: {})",
                if self.is_empty() {
                    "none".to_string()
                } else {
                    let mut names: Vec<&str> = self.keys().map(String::as_str).collect();
                    names.sort_unstable();
                    names.join(", ")
                }
            )),
        }
    }
}

/// No tables: a rule file that names one is refused.
pub struct NoTables;

impl Tables for NoTables {
    fn table(&mut self, _path: &str) -> Result<(String, Vec<u8>), String> {
        Err("this rule text was compiled without tables (pass them with `compile_with`)".to_string())
    }
}

/// Compiles a rule file. Returns every error found. A rule file that takes
/// members from a table is refused: see [`compile_with`].
///
/// At most [`MAX_DIAGNOSTICS`](crate::diagnostic::MAX_DIAGNOSTICS) errors are kept, followed by a note that
/// counts the rest.
pub fn compile(source: &str) -> Result<RuleFile, Vec<Diagnostic>> {
    compile_with(source, &mut NoTables)
}

/// Compiles a rule file whose `members NAME from "FILE"` declarations read
/// their tables through `tables`. Errors in a table are placed in it
/// ([`Diagnostic::place`]).
pub fn compile_with(source: &str, tables: &mut dyn Tables) -> Result<RuleFile, Vec<Diagnostic>> {
    let mut errors = CappedErrors::new();
    let parsed = syntax::parse_recovering(source, &mut errors);
    match parsed.file {
        Some(File::Game(g)) if errors.is_empty() => game::compile_game(source, &g).map_err(|e| vec![e]),
        Some(File::Declarations(d)) => {
            let syntax_errors = errors.total();
            let declared = names::declare(source, &d, parsed.set_aside, tables, &mut errors);
            // Pass 1's own errors (duplicates, limits) leave the namespace unsure: stop.
            if errors.total() > syntax_errors {
                return Err(errors.into_vec());
            }
            compile_declarations(declared, errors)
        }
        _ => Err(errors.into_vec()),
    }
}

/// Passes 2 to 4 on what pass 1 declared; `errors` holds the errors so far.
fn compile_declarations(
    mut declared: names::Declared<'_>,
    mut errors: CappedErrors,
) -> Result<RuleFile, Vec<Diagnostic>> {
    blocs::resolve(&mut declared, &mut errors);
    let resolved = quotas::resolve_all(&declared, &mut errors);
    references::check(&declared.named, &resolved, &mut errors);
    if !errors.is_empty() {
        return Err(errors.into_vec());
    }
    lower::lower_file(declared, &resolved, &mut errors).ok_or_else(|| errors.into_vec())
}

/// Drops comments and collapses white space, so that conditions print on one line.
fn one_line(text: &str) -> String {
    text.lines()
        .map(|l| l.split('#').next().unwrap_or(""))
        .flat_map(str::split_whitespace)
        .collect::<Vec<_>>()
        .join(" ")
}

fn too_many_members(span: Span) -> Diagnostic {
    use clout_core::limits::MAX_MEMBERS;
    Diagnostic::error(span, format!("more than {MAX_MEMBERS} members")).with_hint(format!(
        "a rule holds at most {MAX_MEMBERS} members; model a large chamber as one group with `members NAME xK`"
    ))
}

/// Running the passes in unit tests.
#[cfg(test)]
mod testing {
    use super::names::{self, Declared};
    use crate::diagnostic::CappedErrors;
    use crate::syntax::{parse_recovering, File};

    /// Parses `source`, runs pass 1 and then `passes` on what it declared:
    /// what `passes` returns, and every error as `line:col message`.
    pub(super) fn run<T>(
        source: &str,
        passes: impl FnOnce(&mut Declared<'_>, &mut CappedErrors) -> T,
    ) -> (T, Vec<String>) {
        let mut errors = CappedErrors::new();
        let parsed = parse_recovering(source, &mut errors);
        let Some(File::Declarations(decls)) = parsed.file else {
            panic!("not declarations")
        };
        let mut d = names::declare(
            source,
            &decls,
            parsed.set_aside,
            &mut super::NoTables,
            &mut errors,
        );
        let out = passes(&mut d, &mut errors);
        let shown = errors
            .into_vec()
            .iter()
            .map(|e| {
                let (line, col) = e.line_col(source);
                format!("{line}:{col} {}", e.message)
            })
            .collect();
        (out, shown)
    }
}
