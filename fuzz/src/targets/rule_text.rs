//! Target `rule_text`: the rule language's parser and compiler on any text.
//!
//! Promises checked: `compile` returns (no panic, no overflow); every
//! diagnostic's span starts inside the text on a character boundary and renders;
//! every compiled rule prints back to text that compiles to the same rule;
//! the lint (one exact analysis per rule, within a small budget) returns.

use clout_dsl::{compile, lint, print_rule, render_all};

/// Keywords and number forms the mutator splices in.
pub const DICTIONARY: &[&[u8]] = &[
    b"title \"",
    b"member ",
    b"members ",
    b" x12 ",
    b" x65536 ",
    b"bloc ",
    b"define ",
    b"rule ",
    b" = ",
    b"seats=",
    b"count",
    b" against ",
    b" of ",
    b" and ",
    b" or ",
    b"not ",
    b">=",
    b">",
    b"<",
    b"<=",
    b"!=",
    b"%",
    b"/",
    b"(",
    b")",
    b"[",
    b"]",
    b";",
    b",",
    b"..",
    b"\n",
    b"#",
    b"_",
    b"2/3",
    b"62.5%",
    b"100%",
    b"0",
    b"18446744073709551615",
    b"18446744073709551616",
    b"340282366920938463463374607431768211456",
    b"9999999999999999999999999",
    b"0.000000000000000000001%",
];

/// Runs one input.
pub fn run(data: &[u8]) {
    // The command line refuses text that is not UTF-8 before compiling.
    let Ok(source) = std::str::from_utf8(data) else {
        return;
    };
    match compile(source) {
        Err(diagnostics) => {
            assert!(!diagnostics.is_empty(), "a failed compile says why");
            for d in &diagnostics {
                let s = d.span;
                // A span may reach one past the end: "expected ... at the end of the file".
                assert!(
                    s.start <= s.end && s.start <= source.len(),
                    "span {s:?} outside the text"
                );
                assert!(source.is_char_boundary(s.start), "span {s:?} splits a character");
                let (line, col) = d.line_col(source);
                assert!(line >= 1 && col >= 1);
                assert!(!d.message.is_empty());
            }
            let text = render_all(&diagnostics, "fuzz.clout", source);
            assert!(text.contains("fuzz.clout:"), "{text}");
        }
        Ok(file) => {
            assert!(!file.rules.is_empty(), "a compiled file has a rule");
            for r in &file.rules {
                let printed = print_rule(&r.rule);
                let again = match compile(&printed) {
                    Ok(f) => f,
                    Err(e) => panic!(
                        "printed rule does not compile:\n{}",
                        render_all(&e, "printed", &printed)
                    ),
                };
                assert_eq!(
                    again.rules[0].rule, r.rule,
                    "print/compile changed the rule:\n{printed}"
                );
            }
            let _ = lint(&file, 200_000);
        }
    }
}
