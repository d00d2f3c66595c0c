//! Hostile rule files through the real `clout` binary, and the fuzz corpus
//! and fuzz regressions through the fuzz targets.
//!
//! Every file in `tests/hostile/` is refused by `clout check FILE` and
//! `clout report FILE`: exit code 2, an error on stderr that names the file,
//! line and column (pinned below), no panic, and no hang: each run is killed
//! after a deadline (a child-process timeout, not a measurement of speed).
//!
//! `fuzz/corpus/<target>/` and `fuzz/regressions/<target>/` are replayed
//! through the same target functions the fuzz driver runs (`fuzz/src/targets/`),
//! so every input a campaign ever crashed on stays a test.

use std::io::Read;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

#[path = "../../fuzz/src/targets/mod.rs"]
#[allow(dead_code)]
mod targets;

/// The two tests that run the binary many times take turns, so that one
/// does not eat into the other's deadline on a small machine.
static SERIAL: std::sync::Mutex<()> = std::sync::Mutex::new(());

/// Longest a refusal may take before it counts as a hang. The slowest file
/// takes about 0.25 s in a debug build on a quiet machine (over 1 s on a
/// loaded one); the hangs these files once caused (quadratic suggestions,
/// stack exhaustion) took a minute or crashed.
const DEADLINE: Duration = Duration::from_secs(20);

struct Run {
    code: Option<i32>,
    stderr: String,
    elapsed: Duration,
}

/// Runs clout with `args`, killing it at the deadline.
fn run(args: &[&str]) -> Run {
    run_within(args, DEADLINE)
}

/// Runs clout with `args`, killing it after `deadline`.
fn run_within(args: &[&str], deadline: Duration) -> Run {
    let mut child = Command::new(env!("CARGO_BIN_EXE_clout"))
        .args(args)
        .current_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/.."))
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .expect("the clout binary runs");
    let mut pipe = child.stderr.take().expect("stderr is piped");
    // A reader thread, so a long message cannot block the child on a full pipe.
    let reader = std::thread::spawn(move || {
        let mut s = Vec::new();
        let _ = pipe.read_to_end(&mut s);
        s
    });
    let start = Instant::now();
    let status = loop {
        if let Some(status) = child.try_wait().expect("wait works") {
            break Some(status);
        }
        if start.elapsed() > deadline {
            let _ = child.kill();
            let _ = child.wait();
            break None;
        }
        std::thread::sleep(Duration::from_millis(2));
    };
    let elapsed = start.elapsed();
    let stderr = String::from_utf8(reader.join().expect("reader finishes")).expect("stderr is UTF-8");
    assert!(
        status.is_some(),
        "clout {args:?} did not finish within {DEADLINE:?}"
    );
    Run {
        code: status.and_then(|s| s.code()),
        stderr,
        elapsed,
    }
}

/// Each hostile file, the line and column of its first error, and a piece of that error's message.
const EXPECTED: &[(&str, &str, &str)] = &[
    (
        "against-lower-bound.clout",
        "4:24",
        "`count against > 1` is not monotone: more vo",
    ),
    (
        "bare-decimal.clout",
        "4:19",
        "`0.5` is a decimal without a percent sign",
    ),
    (
        "bidi-override.clout",
        "4:21",
        "expected a declaration (`title`, `member`, `",
    ),
    (
        "binary-nul.clout",
        "4:15",
        "expected a comparison (`>=` or `>`), a decla",
    ),
    (
        "binary-random.clout",
        "1:1",
        "the file is not UTF-8 text: byte 0xA5 cannot",
    ),
    (
        "bloc-chain-5000.clout",
        "5005:20",
        "no coalition can meet `seats >= 9`: it needs",
    ),
    (
        "bloc-cycle.clout",
        "4:6",
        "bloc `x` contains itself (x -> y -> x)",
    ),
    ("bloc-empty.clout", "5:1", "expected a name, found `rule`"),
    ("carriage-returns-only.clout", "1:44", "unknown attribute `seat`"),
    (
        "control-chars.clout",
        "4:1",
        "expected a declaration (`title`, `member`, `",
    ),
    ("deep-not.clout", "4:266", "more than 64 uses of `not`"),
    (
        "deep-parens-1000.clout",
        "4:74",
        "parentheses nested deeper than 64",
    ),
    (
        "deep-parens-20000.clout",
        "4:74",
        "parentheses nested deeper than 64",
    ),
    (
        "define-chain-1000.clout",
        "36:8",
        "definitions nested deeper than 32",
    ),
    (
        "doubling-defines.clout",
        "36:8",
        "definitions nested deeper than 32",
    ),
    ("duplicate-generated-name.clout", "2:8", "duplicate name `d2`"),
    ("duplicate-member.clout", "4:8", "duplicate name `a`"),
    ("duplicate-rule.clout", "5:6", "duplicate name `r`"),
    ("duplicate-weight-on-line.clout", "1:18", "`seats` is given twice"),
    (
        "emoji-before-error.clout",
        "5:25",
        "expected a condition, found `🗳`",
    ),
    ("empty.clout", "1:1", "the file declares no members"),
    (
        "escape-sequences.clout",
        "5:25",
        "expected a condition, found `\\u{1b}`",
    ),
    (
        "four-state-no-only.clout",
        "4:10",
        "`seats no >= 2` is not monotone: switching a",
    ),
    (
        "four-state-unreachable.clout",
        "4:10",
        "no ballot can meet `seats yes >= 7`",
    ),
    (
        "fraction-over-one.clout",
        "4:19",
        "the share 3/2 is more than the whole",
    ),
    ("game-empty.clout", "1:2", "expected an amount, found `;`"),
    (
        "game-huge-quota.clout",
        "1:2",
        "the number 18446744073709551616 is too large",
    ),
    ("game-many-members.clout", "1:15", "more than 65535 members"),
    (
        "game-quota-zero.clout",
        "1:2",
        "`weight >= 0` is met even when nobody votes ",
    ),
    ("game-repeat-overflow.clout", "1:5", "more than 65535 members"),
    (
        "game-then-declarations.clout",
        "2:1",
        "expected the end of the file, found `rule`",
    ),
    (
        "game-unclosed.clout",
        "1:12",
        "expected a repeat count such as `x12`, `,` o",
    ),
    (
        "game-unreachable.clout",
        "1:2",
        "no coalition can meet `weight >= 100`: it ne",
    ),
    (
        "game-weight-sum-overflow.clout",
        "1:1",
        "the weights add up to more than 2^64 - 4",
    ),
    (
        "group-huge-count.clout",
        "1:12",
        "the number 99999999999999999999 is too large",
    ),
    ("group-over-member-limit.clout", "1:11", "more than 65535 members"),
    ("group-x0.clout", "1:11", "a group of zero members"),
    (
        "groups-sum-over-member-limit.clout",
        "2:11",
        "more than 65535 members",
    ),
    (
        "huge-fraction.clout",
        "4:40",
        "the number 18446744073709551616 is too large",
    ),
    (
        "huge-percentage-digits.clout",
        "4:19",
        "the percentage has more than 15 decimals",
    ),
    (
        "huge-quota.clout",
        "4:19",
        "the number 99999999999999999999999 is too la",
    ),
    (
        "huge-weight-10000-digits.clout",
        "1:16",
        "the number 999999999999999999999999999999999",
    ),
    (
        "huge-weight.clout",
        "1:16",
        "the number 18446744073709551616 is too large",
    ),
    (
        "invalid-utf8-midline.clout",
        "4:26",
        "the file is not UTF-8 text: byte 0xC3 cannot",
    ),
    (
        "invalid-utf8-overlong.clout",
        "4:7",
        "the file is not UTF-8 text: byte 0xC0 cannot",
    ),
    ("keyword-as-name.clout", "1:8", "expected a name, found `rule`"),
    (
        "missing-equals.clout",
        "4:1",
        "expected a declaration (`title`, `member`, `",
    ),
    (
        "missing-rule-body.clout",
        "4:9",
        "expected a condition, found the end of the f",
    ),
    (
        "mutual-defines.clout",
        "4:8",
        "`d` refers to itself (d -> e -> d)",
    ),
    ("negation.clout", "4:10", "`not` makes the rule non-monotone"),
    (
        "nesting-depth-40.clout",
        "4:6",
        "rule `r` nests `and` / `or` deeper than 32",
    ),
    ("no-members.clout", "1:20", "the file declares no members"),
    ("no-rule.clout", "3:17", "the file declares no rule"),
    (
        "not-monotone-equality.clout",
        "4:16",
        "`seats = 4` is not monotone: an exact amount",
    ),
    (
        "not-monotone-upper-bound.clout",
        "4:16",
        "`seats < 4` is not monotone: an extra yes vo",
    ),
    ("only-comments.clout", "1:1", "the file declares no members"),
    ("only-whitespace.clout", "1:1", "the file declares no members"),
    (
        "percent-just-over-100.clout",
        "4:19",
        "the percentage has more than 15 decimals",
    ),
    (
        "percent-over-100.clout",
        "4:19",
        "the percentage 150% is above 100%",
    ),
    ("rule-cycle.clout", "4:6", "`r` refers to itself (r -> s -> r)"),
    ("self-define.clout", "4:8", "`d` refers to itself (d -> d)"),
    ("too-many-attributes.clout", "1:384", "more than 64 attributes"),
    (
        "too-many-conditions.clout",
        "2:6",
        "rule `r` has 70 conditions, more than the li",
    ),
    (
        "too-many-parts.clout",
        "3:6",
        "rule `r` has more than 128 parts (conditions",
    ),
    (
        "trailing-operator.clout",
        "4:24",
        "expected a condition, found the end of the f",
    ),
    (
        "trivial-against.clout",
        "4:10",
        "`count against < 20` is met even when nobody",
    ),
    (
        "trivial-quota-zero.clout",
        "4:10",
        "`seats >= 0` is met even when nobody votes y",
    ),
    (
        "trivial-zero-of.clout",
        "5:10",
        "`0 of ab` is met even when nobody votes yes",
    ),
    ("two-titles.clout", "2:1", "a second title"),
    (
        "unbalanced-parens.clout",
        "4:74",
        "parentheses nested deeper than 64",
    ),
    (
        "underscores-only-number.clout",
        "2:16",
        "expected an amount, found `_`",
    ),
    (
        "unicode-confusable.clout",
        "4:10",
        "expected a condition, found `а`",
    ),
    (
        "unicode-name.clout",
        "1:11",
        "expected a name or a declaration (`title`, `",
    ),
    ("unknown-attribute.clout", "4:10", "unknown attribute `riders`"),
    ("unknown-name.clout", "4:10", "unknown name `harbour`"),
    (
        "unreachable-k-of.clout",
        "5:10",
        "no coalition can meet `3 of ab`: it needs 3 ",
    ),
    (
        "unreachable-quota.clout",
        "4:10",
        "no coalition can meet `seats >= 7`: it needs",
    ),
    (
        "unreachable-zero-total.clout",
        "2:10",
        "no coalition can meet `seats > 1/2`: it need",
    ),
    (
        "unterminated-string.clout",
        "1:7",
        "expected a quoted title, found `\"`",
    ),
    (
        "utf16-bom.clout",
        "1:1",
        "the file is not UTF-8 text: byte 0xFF cannot",
    ),
    (
        "vertical-tab-form-feed.clout",
        "4:9",
        "expected a condition, found `\\u{b}`",
    ),
    (
        "very-long-name.clout",
        "1:8",
        "a name of 5000 bytes, over the limit of 128",
    ),
    (
        "very-long-string.clout",
        "1:7",
        "expected a quoted title, found `\"`",
    ),
    (
        "weight-sum-overflow-group.clout",
        "1:14",
        "the weights of `seats` add up to more than 2",
    ),
    (
        "weight-sum-overflow.clout",
        "1:10",
        "the weights of `seats` add up to more than 2",
    ),
    (
        "zero-denominator.clout",
        "4:18",
        "the fraction 1/0 has a zero denominator",
    ),
    (
        "zero-width-space.clout",
        "4:12",
        "expected a comparison (`>=` or `>`), a decla",
    ),
];

fn hostile_dir() -> PathBuf {
    Path::new(concat!(env!("CARGO_MANIFEST_DIR"), "/..")).join("tests/hostile")
}

#[test]
fn the_corpus_has_at_least_fifty_files_and_each_is_pinned() {
    let mut on_disk: Vec<String> = std::fs::read_dir(hostile_dir())
        .expect("tests/hostile exists")
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(".clout"))
        .collect();
    on_disk.sort();
    let mut pinned: Vec<String> = EXPECTED.iter().map(|e| e.0.to_string()).collect();
    pinned.sort();
    assert!(on_disk.len() >= 50, "only {} hostile files", on_disk.len());
    assert_eq!(
        on_disk, pinned,
        "every file in tests/hostile is pinned in EXPECTED, and only those"
    );
}

#[test]
fn hostile_files_are_refused_with_a_located_error() {
    let _turn = SERIAL.lock().unwrap_or_else(|e| e.into_inner());
    let mut slowest = (Duration::ZERO, String::new());
    for &(file, at, message) in EXPECTED {
        let rel = format!("tests/hostile/{file}");
        for command in ["check", "report"] {
            let r = run(&[command, &rel]);
            let context = format!("clout {command} {rel}:\n{}", r.stderr);
            assert_eq!(r.code, Some(2), "{context}");
            assert!(!r.stderr.contains("panicked"), "{context}");
            let first = r.stderr.lines().next().unwrap_or_default();
            let prefix = format!("{rel}:{at}: error: ");
            assert!(
                first.starts_with(&prefix),
                "expected `{prefix}...` first\n{context}"
            );
            assert!(
                first.contains(message),
                "expected `{message}` in the first line\n{context}"
            );
            // Nothing that could drive a terminal reaches the output.
            assert!(
                !r.stderr.chars().any(|c| c.is_control() && c != '\n'),
                "control characters in the message\n{context}"
            );
            if r.elapsed > slowest.0 {
                slowest = (r.elapsed, context.lines().next().unwrap_or_default().to_string());
            }
        }
    }
    eprintln!("slowest refusal: {:?} ({})", slowest.0, slowest.1);
}

/// Generated floods that once hung or crashed the compiler (each took a
/// minute, or overflowed the stack): they must be refused with a located
/// error before a deadline that is generous for a debug build.
#[test]
fn floods_of_errors_and_long_chains_are_refused_quickly() {
    let _turn = SERIAL.lock().unwrap_or_else(|e| e.into_inner());
    let dir = std::env::temp_dir().join(format!("clout-hostile-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let members: String = (0..5000).map(|i| format!("member m{i} seats=1\n")).collect();
    let floods = [
        // Unknown names: each once searched every name for a suggestion.
        (
            "unknown-names",
            members.clone()
                + &(0..5000)
                    .map(|i| format!("rule r{i} = x{i} and seats >= 2\n"))
                    .collect::<String>(),
        ),
        // Duplicates: each once scanned the file for the first one's line.
        (
            "duplicates",
            "member m seats=1\n".repeat(20_000) + "rule r = seats >= 1\n",
        ),
        // One line of 10,000 unknown names, once printed whole under each error.
        (
            "long-line",
            format!(
                "member a seats=1\nrule r = {}\n",
                (0..10_000)
                    .map(|i| format!("zz{i}"))
                    .collect::<Vec<_>>()
                    .join(" and ")
            ),
        ),
        // 50,000 chained definitions, declared bottom-up: overflowed the stack.
        (
            "definition-chain",
            "member a w=1\nmember b w=1\ndefine d0 = w >= 1\n".to_string()
                + &(1..50_000)
                    .map(|i| format!("define d{i} = d{}\n", i - 1))
                    .collect::<String>()
                + "rule r = d49999\n",
        ),
    ];
    for (name, text) in floods {
        let path = dir.join(format!("{name}.clout"));
        std::fs::write(&path, text).expect("writable");
        let path = path.to_string_lossy().into_owned();
        let r = run_within(&["check", &path], Duration::from_secs(20));
        assert_eq!(r.code, Some(2), "{name}: {}", r.stderr);
        assert!(
            r.stderr.starts_with(&format!("{path}:")),
            "{name}: {:.300}",
            r.stderr
        );
        // At most 100 errors are shown, then a count of the rest.
        assert!(r.stderr.matches(": error: ").count() <= 100, "{name}");
        eprintln!("{name}: {:?}", r.elapsed);
    }
    let _ = std::fs::remove_dir_all(&dir);
}

fn replay(dir: &str) {
    let root = Path::new(concat!(env!("CARGO_MANIFEST_DIR"), "/.."))
        .join("fuzz")
        .join(dir);
    let mut ran = 0;
    for t in targets::TARGETS {
        let Ok(entries) = std::fs::read_dir(root.join(t.name)) else {
            continue;
        };
        let mut paths: Vec<PathBuf> = entries.map(|e| e.expect("entry").path()).collect();
        paths.sort();
        for p in paths {
            let input = std::fs::read(&p).expect("readable");
            let outcome = std::panic::catch_unwind(|| (t.run)(&input));
            assert!(outcome.is_ok(), "fuzz target {} fails on {}", t.name, p.display());
            ran += 1;
        }
    }
    assert!(ran > 0 || dir == "regressions", "no inputs under fuzz/{dir}");
}

#[test]
fn fuzz_seed_corpus_passes_every_target() {
    replay("corpus");
}

#[test]
fn fuzz_regressions_pass_every_target() {
    replay("regressions");
}

/// 15,000 chained blocs (`bloc b0 = b1`, `bloc b1 = b2`, ...): `clout check`
/// once aborted with a stack overflow (exit 134). It must check the file
/// cleanly (exit 0) well before a deadline generous for a debug build.
#[test]
fn a_long_chain_of_blocs_checks_cleanly() {
    let _turn = SERIAL.lock().unwrap_or_else(|e| e.into_inner());
    let dir = std::env::temp_dir().join(format!("clout-chain-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let mut text = String::from("member a seats=1\nmember b seats=1\n");
    for i in 0..15_000 {
        text.push_str(&format!("bloc b{i} = b{}\n", i + 1));
    }
    text.push_str("bloc b15000 = a, b\nrule r = b0\n");
    let path = dir.join("bloc-chain-15000.clout");
    std::fs::write(&path, text).expect("writable");
    let path = path.to_string_lossy().into_owned();
    let r = run_within(&["check", &path], Duration::from_secs(60));
    assert_eq!(r.code, Some(0), "{:.500}", r.stderr);
    eprintln!("bloc-chain-15000: {:?}", r.elapsed);
    let _ = std::fs::remove_dir_all(&dir);
}
