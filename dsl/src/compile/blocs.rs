//! Pass 2, blocs and groups: each bloc's parts (members, groups, other
//! blocs) become its members, ascending and without repeats.
//!
//! Blocs nest to any depth the file writes (`bloc b0 = b1`, `bloc b1 = b2`,
//! ...), so resolution walks an explicit stack, never the call stack; each
//! bloc is resolved once. A cycle is an error on the bloc it returns to. A
//! part listed twice is found with a hash set. The members a bloc brings in
//! from the blocs inside it are copied, so their total over the file is
//! bounded by [`MAX_BLOC_ENTRIES`] (an error past it) before it is copied.
//!
//! Time O(parts + entries copied + members log members); space
//! O(blocs + entries copied).

use std::collections::HashSet;

use super::names::{Declared, Kind};
use crate::diagnostic::{CappedErrors, Diagnostic};
use crate::syntax::BlocDecl;

/// Most member entries the blocs of one file may list in all: each bloc's
/// own members plus those each bloc or group inside it brings in, repeats
/// included (4,194,304; 32 MiB of indices). A group's own list is not counted.
pub const MAX_BLOC_ENTRIES: usize = 1 << 22;

/// A bloc being resolved: its parts so far.
struct Frame<'a> {
    bloc: usize,
    decl: &'a BlocDecl,
    /// The next part to read.
    next: usize,
    members: Vec<usize>,
    /// Part names read so far, to refuse one listed twice.
    seen: HashSet<&'a str>,
    /// A part was set aside by the parser: the members are not all known.
    uncertain: bool,
}

impl<'a> Frame<'a> {
    fn new(bloc: usize, decl: &'a BlocDecl) -> Self {
        Frame {
            bloc,
            decl,
            next: 0,
            members: Vec::new(),
            seen: HashSet::new(),
            uncertain: false,
        }
    }
}

/// Resolves every bloc of `d`, in declaration order.
pub(super) fn resolve(d: &mut Declared<'_>, errors: &mut CappedErrors) {
    let mut on_path = vec![false; d.blocs.len()];
    let mut copied = 0usize;
    for root in 0..d.bloc_decls.len() {
        if !resolve_from(d, root, &mut on_path, &mut copied, errors) {
            // Past the limit: no bloc's members are known.
            d.uncertain_blocs.fill(true);
            return;
        }
    }
}

/// Resolves bloc `root` and every unresolved bloc inside it. `copied`
/// counts the entries copied so far; false once they pass the limit.
fn resolve_from(
    d: &mut Declared<'_>,
    root: usize,
    on_path: &mut [bool],
    copied: &mut usize,
    errors: &mut CappedErrors,
) -> bool {
    let Some(decl) = d.bloc_decls[root] else {
        return true;
    };
    on_path[root] = true;
    let mut stack = vec![Frame::new(root, decl)];
    while let Some(top) = stack.last_mut() {
        let Some(part) = top.decl.parts.get(top.next) else {
            // Every part read: the bloc is resolved.
            let Some(mut done) = stack.pop() else { break };
            done.members.sort_unstable();
            done.members.dedup();
            let b = done.bloc;
            d.blocs[b].members = done.members;
            d.bloc_decls[b] = None;
            d.uncertain_blocs[b] |= done.uncertain;
            on_path[b] = false;
            if let Some(parent) = stack.last_mut() {
                if !bring_in(d, parent, b, copied, errors) {
                    return false;
                }
            }
            continue;
        };
        top.next += 1;
        if !top.seen.insert(part.text.as_str()) {
            errors.push(
                Diagnostic::error(
                    part.span,
                    format!("`{}` is listed twice in bloc `{}`", part.text, top.decl.name.text),
                )
                .with_hint("list each member once"),
            );
            continue;
        }
        match d.names.get(&part.text) {
            Some(Kind::Member(i)) => {
                if !count_copies(copied, 1, part, errors) {
                    return false;
                }
                top.members.push(i);
            }
            Some(Kind::Bloc(c)) => match d.bloc_decls[c] {
                Some(inner) if !on_path[c] => {
                    on_path[c] = true;
                    stack.push(Frame::new(c, inner));
                }
                Some(_) => {
                    let path: Vec<&str> = stack.iter().map(|f| d.blocs[f.bloc].name.as_str()).collect();
                    let name = &d.blocs[c].name;
                    let message = format!("bloc `{name}` contains itself ({} -> {name})", path.join(" -> "));
                    errors.push(
                        Diagnostic::error(d.blocs[c].span, message)
                            .with_hint("a bloc lists members, groups or other blocs, without cycles"),
                    );
                    // Reported once; the bloc counts as resolved (with what it has so far).
                    d.bloc_decls[c] = None;
                    let Some(top) = stack.last_mut() else { break };
                    if !bring_in(d, top, c, copied, errors) {
                        return false;
                    }
                }
                None => {
                    if !bring_in(d, top, c, copied, errors) {
                        return false;
                    }
                }
            },
            Some(other) => {
                let message = format!(
                    "`{}` is {}, not a member, group or bloc",
                    part.text,
                    d.names.word(other)
                );
                errors.push(
                    Diagnostic::error(part.span, message)
                        .with_hint("a bloc lists members, groups or other blocs"),
                );
            }
            None if d.names.set_aside.covers(&part.text) => top.uncertain = true,
            None => d.names.unknown(
                part,
                "member",
                |k| matches!(k, Kind::Member(_) | Kind::Bloc(_)),
                "declare it with `member NAME ...` or `bloc NAME = ...`",
                errors,
            ),
        }
    }
    true
}

/// Adds bloc `c`'s members (as resolved so far) to `frame`.
fn bring_in(
    d: &Declared<'_>,
    frame: &mut Frame<'_>,
    c: usize,
    copied: &mut usize,
    errors: &mut CappedErrors,
) -> bool {
    let members = &d.blocs[c].members;
    let part = &frame.decl.parts[frame.next - 1];
    if !count_copies(copied, members.len(), part, errors) {
        return false;
    }
    frame.members.extend_from_slice(members);
    frame.uncertain |= d.uncertain_blocs[c];
    true
}

/// Counts `more` entries against [`MAX_BLOC_ENTRIES`]; reports the part
/// that passes it.
fn count_copies(
    copied: &mut usize,
    more: usize,
    part: &crate::syntax::Name,
    errors: &mut CappedErrors,
) -> bool {
    *copied = copied.saturating_add(more);
    if *copied <= MAX_BLOC_ENTRIES {
        return true;
    }
    errors.push(
        Diagnostic::error(
            part.span,
            format!("the blocs of the file list more than {MAX_BLOC_ENTRIES} members in all"),
        )
        .with_hint(
            "each bloc copies the members of the blocs inside it; name a large set once (a group or a bloc) and combine sets in rules",
        ),
    );
    false
}

#[cfg(test)]
mod tests {
    use super::super::testing::run;
    use super::*;

    /// Passes 1 and 2 on `source`: each bloc's members, and the errors.
    fn blocs_of(source: &str) -> (Vec<(String, Vec<usize>)>, Vec<String>) {
        run(source, |d, errors| {
            resolve(d, errors);
            d.blocs
                .iter()
                .map(|b| (b.name.clone(), b.members.clone()))
                .collect()
        })
    }

    #[test]
    fn nested_blocs_resolve_to_sorted_members_without_repeats() {
        let (blocs, errors) = blocs_of(
            "member a\nmember b\nmembers g x2\nbloc x = y, b\nbloc y = g, a\nbloc z = x, y, g2\nrule r = x\n",
        );
        assert!(errors.is_empty(), "{errors:?}");
        assert_eq!(
            blocs,
            [
                ("g".to_string(), vec![2, 3]),
                ("x".to_string(), vec![0, 1, 2, 3]),
                ("y".to_string(), vec![0, 2, 3]),
                ("z".to_string(), vec![0, 1, 2, 3]),
            ]
        );
    }

    #[test]
    fn cycles_repeats_and_wrong_kinds_are_located() {
        let (_, errors) = blocs_of(
            "member a seats=1\nbloc x = y\nbloc y = x, a, a\nbloc w = seats, q\ndefine d = a\nbloc v = d\nrule r = a\n",
        );
        assert_eq!(
            errors,
            [
                "2:6 bloc `x` contains itself (x -> y -> x)",
                "3:16 `a` is listed twice in bloc `y`",
                "4:10 `seats` is an attribute, not a member, group or bloc",
                "4:17 unknown member `q`",
                "6:10 `d` is a definition, not a member, group or bloc",
            ]
        );
    }

    #[test]
    fn a_chain_of_fifteen_thousand_blocs_uses_no_call_stack() {
        let n = 15_000;
        let mut source = String::from("member a\nmember b\n");
        for i in 0..n {
            source.push_str(&format!("bloc b{i} = b{}\n", i + 1));
        }
        source.push_str(&format!("bloc b{n} = a, b\nrule r = b0\n"));
        // A thread with a small stack: a recursion per link would overflow it.
        let (blocs, errors) = std::thread::Builder::new()
            .stack_size(256 << 10)
            .spawn(move || blocs_of(&source))
            .unwrap()
            .join()
            .unwrap();
        assert!(errors.is_empty(), "{errors:?}");
        assert_eq!(blocs.len(), n + 1);
        assert!(blocs.iter().all(|(_, m)| m == &[0, 1]));
    }

    #[test]
    fn copies_past_the_limit_are_refused() {
        // 70 blocs each bring in the same group of 60,000: 4.2 million copies.
        let mut source = String::from("members g x60000\n");
        for i in 0..70 {
            source.push_str(&format!("bloc c{i} = g\n"));
        }
        source.push_str("rule r = count > 1/2\n");
        let (_, errors) = blocs_of(&source);
        assert_eq!(
            errors,
            ["71:12 the blocs of the file list more than 4194304 members in all"]
        );
    }

    #[test]
    fn parts_set_aside_by_the_parser_are_not_reported() {
        let (_, errors) = blocs_of("member a seats=\nmember b\nbloc x = a, b\nrule r = x\n");
        assert_eq!(errors.len(), 1, "{errors:?}");
        assert!(errors[0].starts_with("2:1 expected"), "{errors:?}");
    }
}
