//! Regression inputs of the resource-limit findings (issue 20, findings 2,
//! 6 and 9) through the real `clout` binary, each under a 3 GB address-space
//! cap (`ulimit -v 3000000` in `sh -c`) with `--budget 5e9 --memory 1GiB`:
//! every run must end by itself within 90 seconds (a child-process
//! deadline, not a speed measurement) with exit 0 and its figures, or exit 2
//! and a message that names the limit it hit, never an abort.
//!
//! The inputs are generated here (fictional members and weights), not
//! committed: a balanced and/or tree of 64 conditions over 28 members, the
//! same over 16 members for `--ternary`, and 65,520 members with 64
//! conditions for the approximate report.

use std::fmt::Write as _;
use std::io::Read;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// Longest a run may take before it counts as a hang.
const DEADLINE: Duration = Duration::from_secs(90);

/// The runs take turns: each may use the machine's cores for seconds.
static SERIAL: std::sync::Mutex<()> = std::sync::Mutex::new(());

struct Run {
    code: Option<i32>,
    stdout: String,
    stderr: String,
    elapsed: Duration,
}

/// Runs clout with `args` under the address-space cap, killed at the deadline.
fn capped(args: &[&str]) -> Run {
    let _turn = SERIAL.lock().unwrap_or_else(|e| e.into_inner());
    let mut child = Command::new("sh")
        .arg("-c")
        .arg("ulimit -v 3000000 && exec \"$0\" \"$@\"")
        .arg(env!("CARGO_BIN_EXE_clout"))
        .args(args)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("sh runs");
    let (mut out, mut err) = (child.stdout.take().unwrap(), child.stderr.take().unwrap());
    let out_reader = std::thread::spawn(move || {
        let mut s = String::new();
        let _ = out.read_to_string(&mut s);
        s
    });
    let err_reader = std::thread::spawn(move || {
        let mut s = String::new();
        let _ = err.read_to_string(&mut s);
        s
    });
    let start = Instant::now();
    let status = loop {
        if let Some(status) = child.try_wait().expect("wait") {
            break Some(status);
        }
        if start.elapsed() > DEADLINE {
            let _ = child.kill();
            let _ = child.wait();
            break None;
        }
        std::thread::sleep(Duration::from_millis(50));
    };
    Run {
        code: status.and_then(|s| s.code()),
        stdout: out_reader.join().unwrap_or_default(),
        stderr: err_reader.join().unwrap_or_default(),
        elapsed: start.elapsed(),
    }
}

/// Exit 0 with output, or exit 2 with a message naming a limit; within the deadline.
fn ends_cleanly(run: &Run, what: &str) {
    assert!(
        run.code.is_some(),
        "{what}: no exit within {DEADLINE:?} (or killed by a signal) after {:?}\n{}",
        run.elapsed,
        run.stderr
    );
    match run.code {
        Some(0) => assert!(!run.stdout.is_empty(), "{what}: no output"),
        Some(2) => {
            assert!(run.stderr.starts_with("error: "), "{what}: {}", run.stderr);
            let named = ["budget of", "memory limit of", "over the limit of", "more than"];
            assert!(
                named.iter().any(|n| run.stderr.contains(n)),
                "{what}: the message names no limit: {}",
                run.stderr
            );
            // Finding 9: no saturated counter printed as a figure.
            assert!(!run.stderr.contains("3.4e38"), "{what}: {}", run.stderr);
        }
        other => panic!("{what}: exit {other:?}\n{}", run.stderr),
    }
}

/// A rule file: `n` members with two attributes of fictional weights and
/// one rule, a balanced tree of 64 conditions alternating `and` and `or`.
fn tree_file(n: usize) -> String {
    let mut s = String::from("title \"Hostile tree (generated)\"\n");
    for i in 0..n {
        let seats = (i * 7919 + 5) % 97 + 1 + (i % 5) * 31;
        let pop = (i * 104_729 + 18) % 9_973 + 1 + (i % 7) * 1_009;
        let _ = writeln!(s, "member m{i} seats={seats} pop={pop}");
    }
    let conditions: Vec<String> = (0..64)
        .map(|j| {
            let attribute = if j % 2 == 0 { "seats" } else { "pop" };
            format!("{attribute} >= {}%", 30 + (j * 37) % 60)
        })
        .collect();
    let _ = writeln!(s, "rule r = {}", tree(&conditions, 0));
    s
}

fn tree(atoms: &[String], depth: usize) -> String {
    if atoms.len() == 1 {
        return atoms[0].clone();
    }
    let (left, right) = atoms.split_at(atoms.len() / 2);
    let op = if depth % 2 == 0 { "and" } else { "or" };
    format!("({} {op} {})", tree(left, depth + 1), tree(right, depth + 1))
}

/// Writes `text` to a fresh file in the target directory.
fn write(name: &str, text: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join("resource-limits");
    std::fs::create_dir_all(&dir).expect("temporary directory");
    let path = dir.join(name);
    std::fs::write(&path, text).expect("input written");
    path
}

const LIMITS: [&str; 4] = ["--budget", "5e9", "--memory", "1GiB"];

fn args<'a>(command: &'a str, path: &'a Path, more: &[&'a str]) -> Vec<&'a str> {
    let mut v = vec![command, path.to_str().expect("utf-8 path")];
    v.extend_from_slice(more);
    v.extend_from_slice(&LIMITS);
    v
}

#[test]
fn a_tree_of_64_conditions_over_28_members() {
    let path = write("tree28.clout", &tree_file(28));
    // The planner's choice: exact counting is far over the budget, so the
    // report approximates within it.
    let run = capped(&args("report", &path, &[]));
    ends_cleanly(&run, "report");
    assert_eq!(run.code, Some(0), "{}", run.stderr);
    assert!(run.stdout.contains("APPROXIMATE"), "{}", run.stdout);
    // Forced exact diagram: the build is stopped by the meter, not by the system.
    let run = capped(&args("report", &path, &["--exact", "--engine", "diagram"]));
    ends_cleanly(&run, "report --exact --engine diagram");
    assert_eq!(run.code, Some(2), "{}", run.stdout);
    // `check` spends one budget on the whole file.
    let run = capped(&args("check", &path, &[]));
    assert!(matches!(run.code, Some(0 | 1)), "{:?} {}", run.code, run.stderr);
}

#[test]
fn ternary_report_on_16_members_and_64_conditions() {
    let path = write("tree16.clout", &tree_file(16));
    let run = capped(&args("report", &path, &["--ternary"]));
    ends_cleanly(&run, "report --ternary");
    if run.code == Some(2) {
        assert!(run.stderr.contains("budget of 5.0e9 steps"), "{}", run.stderr);
    }
}

#[test]
fn approximate_report_on_65520_members_and_64_conditions() {
    let path = write("tree65520.clout", &tree_file(65_520));
    let run = capped(&args("report", &path, &["--format", "json"]));
    ends_cleanly(&run, "approximate report");
    if run.code == Some(0) {
        assert!(
            run.stdout.contains("\"approximate\": true"),
            "{}",
            run.stdout.chars().take(400).collect::<String>()
        );
        assert!(
            run.stdout.contains("step budget ended sampling"),
            "{}",
            run.stdout.chars().take(400).collect::<String>()
        );
    }
}
