//! Running the real `clout` binary from integration tests.

use std::io::Write;
use std::process::{Command, Stdio};

/// What one run printed and how it exited.
pub struct Run {
    pub stdout: String,
    pub stderr: String,
    pub code: i32,
}

/// Runs `clout ARGS` in the package root with `stdin` as standard input.
/// Fails the test if clout panicked or died by a signal.
pub fn clout_with_input(args: &[&str], stdin: &str) -> Run {
    let mut child = Command::new(env!("CARGO_BIN_EXE_clout"))
        .args(args)
        .current_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/.."))
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("the clout binary runs");
    child
        .stdin
        .take()
        .expect("stdin is piped")
        .write_all(stdin.as_bytes())
        .expect("stdin is writable");
    let out = child.wait_with_output().expect("clout finishes");
    let run = Run {
        stdout: String::from_utf8(out.stdout).expect("stdout is UTF-8"),
        stderr: String::from_utf8(out.stderr).expect("stderr is UTF-8"),
        code: out.status.code().expect("clout exits normally, not by a signal"),
    };
    assert!(!run.stderr.contains("panicked"), "clout panicked: {}", run.stderr);
    run
}
