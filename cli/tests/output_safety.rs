//! Issue 20, finding 7: text taken from a rule file (title, member and rule
//! names), a table or a file name reaches a terminal, an SVG, a CSV or a
//! JSON document only escaped. A hostile rule file goes through every
//! command in every format:
//!
//! * nothing printed holds a raw control, bidirectional or other hidden
//!   format character (newlines aside);
//! * JSON parses back to the original names;
//! * CSV parses with the `csv` crate to the escaped, formula-guarded names;
//! * the SVG of `sweep --svg` parses with an XML parser and shows the title.

mod cli_support;

use cli_support::{clout_with_input, Run};
use clout::escape;

/// Raw in the title (the language takes a title as written): ESC [2J
/// (clear screen), BEL, RIGHT-TO-LEFT OVERRIDE, markup, the end of a CDATA
/// section, quotes, `&`, a C1 CSI, an isolate and DEL.
const TITLE: &str = "Hostile\u{1b}[2J\u{7}\u{202e}<script>]]>\"&'\u{9b}31m\u{2066}\u{7f}";
const FIRST: &str = "=cmd\u{1b}[2J\u{202e}<script>]]>\"&";
const SECOND: &str = "+evil\u{7}\u{2066}\n";
const RULE: &str = "r\u{1b}]0;pwn\u{7}";

fn tmp(name: &str) -> std::path::PathBuf {
    let dir = std::env::temp_dir().join(format!("clout-output-safety-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    dir.join(name)
}

/// The hostile rule file (the title holds `"` only through its name: a
/// title cannot hold a raw `"`, names take it escaped).
fn hostile_file() -> std::path::PathBuf {
    let title = TITLE.replace('"', "'");
    let source = format!(
        "title \"{title}\"\n\
         member \"=cmd\\u{{1b}}[2J\\u{{202e}}<script>]]>\\\"&\" seats=3\n\
         member \"+evil\\u{{7}}\\u{{2066}}\\n\" seats=2\n\
         member plain seats=2\n\
         member other seats=1\n\
         rule \"r\\u{{1b}}]0;pwn\\u{{7}}\" = seats >= 1/2\n"
    );
    // One file per call: the tests run in parallel, and a rewrite would be
    // read half-written by another.
    static NEXT: std::sync::atomic::AtomicUsize = std::sync::atomic::AtomicUsize::new(0);
    let n = NEXT.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
    let path = tmp(&format!("hostile-{n}.clout"));
    std::fs::write(&path, source).expect("write");
    path
}

fn title() -> String {
    TITLE.replace('"', "'")
}

/// No hidden character reaches the terminal raw.
fn assert_terminal_safe(what: &str, run: &Run) {
    for (stream, text) in [("stdout", &run.stdout), ("stderr", &run.stderr)] {
        let raw: Vec<char> = text
            .chars()
            .filter(|&c| c != '\n' && escape::is_hidden(c))
            .collect();
        assert!(raw.is_empty(), "{what}: {stream} holds raw {raw:?}:\n{text}");
    }
}

fn run(args: &[&str]) -> Run {
    let run = clout_with_input(args, "");
    assert_terminal_safe(&args.join(" "), &run);
    run
}

#[test]
fn the_escapes_are_what_a_terminal_shows() {
    // Spelled out once, so that a change of notation is seen.
    assert_eq!(
        escape::terminal(TITLE),
        "Hostile\\u{1b}[2J\\u{7}\\u{202e}<script>]]>\"&'\\u{9b}31m\\u{2066}\\u{7f}"
    );
}

#[test]
fn text_output_of_every_command_is_escaped() {
    let file = hostile_file();
    let f = file.to_str().expect("utf-8 path");
    let shown_title = escape::terminal(&title()).into_owned();
    let shown_first = escape::terminal(FIRST).into_owned();
    for args in [
        vec!["report", f],
        vec!["report", f, "--explain"],
        vec!["decide", f, "--yes", "all"],
        vec!["simplify", f],
        vec!["order", f],
        vec!["coalitions", f, "--minimal-winning"],
        vec!["coalitions", f, "--minimal-blocking", "--each"],
        vec!["compare", f, f],
        vec!["sweep", f],
    ] {
        let out = run(&args);
        assert_eq!(out.code, 0, "{args:?}: {}", out.stderr);
        if args[0] != "compare" && args[0] != "coalitions" {
            assert!(out.stdout.contains(&shown_title), "{args:?}:\n{}", out.stdout);
        }
        if matches!(args[0], "report" | "order") {
            // Names print as the language writes them (quoted, `\u{..}`), or as a terminal shows them.
            let written = clout_dsl::quote::written(FIRST);
            assert!(
                out.stdout.contains(&*written) || out.stdout.contains(&shown_first),
                "{args:?}:\n{}",
                out.stdout
            );
        }
    }
    // `check` exits 1 for the warning (the rule is not proper).
    let check = run(&["check", f]);
    assert_eq!(check.code, 1, "{}", check.stderr);
    assert!(
        check.stdout.contains(&*escape::terminal(RULE)),
        "{}",
        check.stdout
    );
    assert!(
        check.stderr.contains(&*escape::terminal(RULE)),
        "{}",
        check.stderr
    );
}

#[test]
fn json_output_round_trips_the_names() {
    let file = hostile_file();
    let f = file.to_str().expect("utf-8 path");
    for args in [
        vec!["report", f, "--format", "json"],
        vec!["decide", f, "--yes", "all", "--format", "json"],
        vec!["simplify", f, "--format", "json"],
        vec!["order", f, "--format", "json"],
        vec!["coalitions", f, "--minimal-winning", "--format", "json"],
        vec!["compare", f, f, "--format", "json"],
        vec!["sweep", f, "--format", "json"],
    ] {
        let out = run(&args);
        assert_eq!(out.code, 0, "{args:?}: {}", out.stderr);
        let value: serde_json::Value = serde_json::from_str(&out.stdout).expect("JSON parses");
        // The names come back exactly as written in the file.
        if matches!(args[0], "report" | "order" | "decide") {
            let encoded = serde_json::to_string(FIRST).expect("json");
            assert!(value.to_string().contains(&encoded), "{args:?}: {value}");
        }
    }
    let report: serde_json::Value =
        serde_json::from_str(&run(&["report", f, "--format", "json"]).stdout).expect("JSON");
    assert_eq!(report["title"], title());
    assert_eq!(report["rule"], RULE);
    assert_eq!(report["members"][0]["name"], FIRST);
    assert_eq!(report["members"][1]["name"], SECOND);
}

/// A CSV as the csv crate reads it.
fn records(text: &str) -> Vec<Vec<String>> {
    csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .from_reader(text.as_bytes())
        .records()
        .map(|r| r.expect("CSV parses").iter().map(str::to_string).collect())
        .collect()
}

#[test]
fn csv_output_is_quoted_and_guarded() {
    let file = hostile_file();
    let f = file.to_str().expect("utf-8 path");
    let out = run(&["report", f, "--format", "csv"]);
    assert_eq!(out.code, 0, "{}", out.stderr);
    let rows = records(&out.stdout);
    assert_eq!(rows[0][0], "member");
    // Formula triggers get a leading `'`; the rest as a terminal shows it.
    assert_eq!(rows[1][0], format!("'{}", escape::terminal(FIRST)));
    assert_eq!(rows[2][0], format!("'{}", escape::terminal(SECOND)));
    assert_eq!(rows[3][0], "plain");
    assert!(rows.iter().all(|r| r.len() == rows[0].len()));

    let out = run(&["sweep", f, "--format", "csv", "--step", "10%"]);
    assert_eq!(out.code, 0, "{}", out.stderr);
    let rows = records(&out.stdout);
    assert!(rows.len() > 2);
    assert!(rows.iter().all(|r| r.len() == rows[0].len()), "{}", out.stdout);
}

#[test]
fn sweep_svg_is_well_formed_xml() {
    let file = hostile_file();
    let f = file.to_str().expect("utf-8 path");
    let svg = tmp("hostile.svg");
    let out = run(&["sweep", f, "--step", "10%", "--svg", svg.to_str().expect("utf-8")]);
    assert_eq!(out.code, 0, "{}", out.stderr);
    let text = std::fs::read_to_string(&svg).expect("svg written");
    let doc = roxmltree::Document::parse(&text).expect("the SVG is well-formed XML");
    let shown: String = doc
        .descendants()
        .filter_map(|n| n.text())
        .collect::<Vec<_>>()
        .join("\n");
    // The title as a terminal shows it, markup as text, nothing raw.
    assert!(shown.contains(&*escape::terminal(&title())), "{shown}");
    assert!(shown.contains("<script>]]>"), "{shown}");
    assert!(!text.chars().any(|c| c != '\n' && escape::is_hidden(c)));
}

#[test]
fn fit_and_inspect_escape_names_from_tables_and_paths() {
    let targets = tmp("targets.csv");
    std::fs::write(
        &targets,
        "member,share\n\"=a\u{1b}[2J\u{202e}\",0.5\n\"b\u{7}<x>\",0.3\nc,0.2\n",
    )
    .expect("write");
    let t = targets.to_str().expect("utf-8");
    for format in ["text", "json"] {
        let out = run(&[
            "fit",
            t,
            "--seconds",
            "1",
            "--max-total",
            "30",
            "--format",
            format,
        ]);
        assert_eq!(out.code, 0, "{}", out.stderr);
    }
    // A file name that is itself hostile, in the message of `inspect`.
    let bad = tmp("img\u{1b}[2J\u{202e}.img");
    std::fs::write(&bad, b"not an image").expect("write");
    let out = run(&["inspect", bad.to_str().expect("utf-8")]);
    assert_eq!(out.code, 2);
    assert!(
        out.stderr.contains("img\\u{1b}[2J\\u{202e}.img"),
        "{}",
        out.stderr
    );
}
