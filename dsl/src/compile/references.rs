//! Between passes 3 and 4: the references between definitions and rules
//! must not loop, and no chain of them may be longer than the core's
//! nesting limit [`MAX_DEPTH`], so that lowering never follows more than
//! `MAX_DEPTH` references.
//!
//! A depth-first search whose path is cut at `MAX_DEPTH + 1` (an error), so
//! its recursion is bounded by that constant whatever the file holds. Each
//! definition is visited once: O(definitions + references).

use clout_core::limits::MAX_DEPTH;

use super::names::NamedDecl;
use super::quotas::Resolved;
use crate::diagnostic::{CappedErrors, Diagnostic};

/// Where the search stands on a definition.
#[derive(Clone, Copy, PartialEq, Eq)]
enum Visit {
    New,
    OnPath,
    Done,
}

/// Reports reference cycles and chains deeper than [`MAX_DEPTH`].
pub(super) fn check(named: &[NamedDecl<'_>], resolved: &[Option<Resolved>], errors: &mut CappedErrors) {
    let mut search = Search {
        named,
        resolved,
        errors,
        state: vec![Visit::New; named.len()],
        height: vec![0; named.len()],
        path: Vec::new(),
    };
    for k in 0..named.len() {
        search.visit(k);
    }
}

struct Search<'s, 'a> {
    named: &'s [NamedDecl<'a>],
    resolved: &'s [Option<Resolved>],
    errors: &'s mut CappedErrors,
    state: Vec<Visit>,
    /// The longest chain of references below each definition, so a chain
    /// declared bottom-up (d1 = d0, d2 = d1, ...) is measured too;
    /// `usize::MAX` once reported.
    height: Vec<usize>,
    path: Vec<usize>,
}

impl Search<'_, '_> {
    fn too_deep(&mut self, k: usize) {
        let decl = self.named[k].decl;
        self.errors.push(
            Diagnostic::error(
                decl.name.span,
                format!("definitions nested deeper than {MAX_DEPTH}"),
            )
            .with_hint("flatten the chain of definitions"),
        );
        self.height[k] = usize::MAX;
    }

    fn visit(&mut self, k: usize) {
        match self.state[k] {
            Visit::Done => return,
            Visit::OnPath => {
                let names: Vec<&str> = self
                    .path
                    .iter()
                    .skip_while(|&&x| x != k)
                    .map(|&x| self.named[x].decl.name.text.as_str())
                    .collect();
                let decl = self.named[k].decl;
                let message = format!(
                    "`{}` refers to itself ({} -> {})",
                    decl.name.text,
                    names.join(" -> "),
                    decl.name.text
                );
                self.errors.push(
                    Diagnostic::error(decl.name.span, message)
                        .with_hint("a definition or rule may use others, but not itself"),
                );
                return;
            }
            Visit::New => {}
        }
        if self.path.len() > MAX_DEPTH {
            // The recursion stops here: at most MAX_DEPTH + 2 frames.
            self.too_deep(k);
            self.state[k] = Visit::Done;
            return;
        }
        self.state[k] = Visit::OnPath;
        self.path.push(k);
        let mut refs = Vec::new();
        if let Some(r) = &self.resolved[k] {
            collect_refs(r, &mut refs);
        }
        let mut below = 0usize;
        for r in refs {
            self.visit(r);
            below = below.max(self.height[r]);
        }
        self.path.pop();
        self.state[k] = Visit::Done;
        self.height[k] = below.saturating_add(1);
        if below != usize::MAX && self.height[k] > MAX_DEPTH {
            // Reported once, on the first definition past the limit; those above it stay quiet.
            self.too_deep(k);
        }
    }
}

/// The definitions `r` refers to, in order. Recursion follows the nesting
/// of one condition (bounded by `syntax::MAX_NESTING`), not references.
pub(super) fn collect_refs(r: &Resolved, out: &mut Vec<usize>) {
    match r {
        Resolved::Ref(k) => out.push(*k),
        Resolved::All(v) | Resolved::Any(v) => v.iter().for_each(|x| collect_refs(x, out)),
        Resolved::Atom { .. } | Resolved::Linear { .. } => {}
    }
}

#[cfg(test)]
mod tests {
    use crate::compile;

    fn first_error(source: &str) -> String {
        let e = compile(source).unwrap_err();
        let (line, col) = e[0].line_col(source);
        format!("{line}:{col} {}", e[0].message)
    }

    #[test]
    fn cycles_name_their_path() {
        assert_eq!(
            first_error("member a\ndefine x = y\ndefine y = z and a\ndefine z = x\nrule r = x\n"),
            "2:8 `x` refers to itself (x -> y -> z -> x)"
        );
    }

    #[test]
    fn chains_are_bounded_in_both_directions() {
        let mut down = String::from("member a\nmember b\ndefine d0 = a\n");
        let mut up = String::from("member a\nmember b\n");
        for i in 1..=40 {
            down.push_str(&format!("define d{i} = d{} and b\n", i - 1));
        }
        for i in 0..40 {
            up.push_str(&format!("define d{i} = d{} and b\n", i + 1));
        }
        up.push_str("define d40 = a\n");
        down.push_str("rule r = d40\n");
        up.push_str("rule r = d0\n");
        // Bottom-up: d32, the first 33 links high; top-down: d33, the 34th on the path.
        assert_eq!(first_error(&down), "35:8 definitions nested deeper than 32");
        assert_eq!(first_error(&up), "36:8 definitions nested deeper than 32");
    }
}
