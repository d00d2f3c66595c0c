//! The C ABI from C: the header agrees with the Rust declarations, the C
//! test suite (tests/c/test_clout.c) passes against the static library, and
//! the firmware-style example (examples/tally.c) builds and decides ballots.
//!
//! Rule images for the C programs are written by this test with the core's
//! encoder (damaged ones by patching intact ones), so they never go stale.
//! Set `CLOUT_VALGRIND=1` to run the C programs under valgrind.

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

use clout_core::fixtures::{four_state_form, seats_and_heads, two_tier};
use clout_core::image::{self, crc32, CHECKSUM_LEN};
use clout_core::{Atom, Condition, Node, Rule};

fn manifest_dir() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

// ---------------------------------------------------------------- header

fn generated_header() -> String {
    let dir = manifest_dir();
    let config = cbindgen::Config::from_file(dir.join("cbindgen.toml")).expect("cbindgen.toml");
    let bindings = cbindgen::Builder::new()
        .with_config(config)
        .with_src(dir.join("src/lib.rs"))
        .generate()
        .expect("cbindgen parses the crate");
    let mut out = Vec::new();
    bindings.write(&mut out);
    String::from_utf8(out).expect("UTF-8 header")
}

#[test]
fn header_matches_the_rust_declarations() {
    let path = manifest_dir().join("include/clout.h");
    let fresh = generated_header();
    if std::env::var_os("CLOUT_BLESS").is_some() {
        std::fs::write(&path, &fresh).expect("write include/clout.h");
    }
    let committed = std::fs::read_to_string(&path).unwrap_or_default();
    assert!(
        committed == fresh,
        "include/clout.h differs from the Rust declarations; regenerate it with \
         `CLOUT_BLESS=1 cargo test -p clout-c --test abi header` and review the diff"
    );
}

#[test]
fn every_result_code_is_in_the_header() {
    let header = generated_header();
    assert_eq!(
        header.matches("  CLOUT_RESULT_").count(),
        clout_c::clout_result::ALL.len()
    );
    for code in clout_c::clout_result::ALL {
        assert!(
            header.contains(&format!(" = {},", code as u32)),
            "{code:?} missing from the header"
        );
    }
}

#[test]
fn only_the_ffi_module_holds_unsafe_code() {
    for entry in std::fs::read_dir(manifest_dir().join("src")).expect("src/") {
        let path = entry.expect("entry").path();
        if path.file_name().is_some_and(|n| n == "ffi.rs") {
            continue;
        }
        let text = std::fs::read_to_string(&path).expect("source");
        for use_of_unsafe in [
            "unsafe {",
            "unsafe fn",
            "unsafe impl",
            "unsafe extern",
            "unsafe trait",
        ] {
            assert!(
                !text.contains(use_of_unsafe),
                "{} has `{use_of_unsafe}`",
                path.display()
            );
        }
    }
}

// ---------------------------------------------------------------- images

/// Recomputes the checksum after a deliberate change.
fn reseal(image: &mut [u8]) {
    let body = image.len() - CHECKSUM_LEN;
    let crc = crc32(&image[..body]);
    image[body..].copy_from_slice(&crc.to_le_bytes());
}

/// `image` with `bytes` written at `at`, checksum recomputed.
fn patched(image: &[u8], at: usize, bytes: &[u8]) -> Vec<u8> {
    let mut out = image.to_vec();
    out[at..at + bytes.len()].copy_from_slice(bytes);
    reseal(&mut out);
    out
}

fn atom(attribute: u16, quota: u64) -> Atom {
    Atom { attribute, quota }
}

/// [12; 4, 4, 4, 2, 2, 1].
fn eec() -> Rule<Vec<u64>> {
    Rule::weighted(12, vec![4, 4, 4, 2, 2, 1]).unwrap()
}

/// A fictional allotment board of five plots: seats 3, 2, 2, 1, 1; a motion
/// passes with (at least 5 seats and at least 3 plots) or at least 8 seats.
fn allotment_board() -> Rule<Vec<u64>> {
    two_tier(5, seats_and_heads(&[3, 2, 2, 1, 1]), [5, 3, 8]).unwrap()
}

/// Every image the C programs read, by file name.
fn images() -> Vec<(&'static str, Vec<u8>)> {
    let eec = image::encode(&eec());
    let mut committee = vec![7u64; 5];
    committee.extend([1u64; 10]);
    let committee = Rule::weighted(39, committee).unwrap();
    let assembly = Rule::weighted(51, vec![1u64; 100]).unwrap();
    let mut deep = [Node::All(1); 33];
    deep[0] = Node::Atom(0);
    let deep = Rule::new(1, vec![1u64], &[atom(0, 1)], &deep).unwrap();
    let heavy = Rule::weighted(1, vec![1u64 << 40, 1u64 << 40]).unwrap();
    // 64 members of distinct weights near 2^50 and a majority quota: no
    // exact engine fits the default budget.
    let costly: Vec<u64> = (0..64u64).map(|i| (1u64 << 50) + i * 7919 * 104_729).collect();
    let quota = costly.iter().sum::<u64>() / 2 + 1;
    let costly = Rule::weighted(quota, costly).unwrap();

    // "More yes than no" as a four-state condition over weights 2, 1, 1.
    let majority = four_state_form(0, 0);
    let present = Rule::with_conditions(
        3,
        vec![2u64, 1, 1],
        &[Condition::Linear(majority)],
        &[Node::Atom(0)],
    )
    .unwrap();
    let present = image::encode(&present);

    // Offsets in the [12; 4,4,4,2,2,1] image (docs/image-format.md):
    // 4 version, 6 attributes, 8 length, 12 members, 16 atoms, 18 nodes,
    // 20 width, 21..27 weights, 27 condition (kind, attribute, quota),
    // 38 node (kind, argument), 41 checksum. In the four-state image the
    // condition starts at 24 and its no coefficient at 31.
    let mut trailing = eec.clone();
    trailing.push(0);
    let mut bad_checksum = eec.clone();
    bad_checksum[21] = 5;
    let too_many_members = (clout_core::limits::MAX_MEMBERS as u32 + 1).to_le_bytes();
    let mut too_deep = image::encode(&deep);
    // One more node after the formula, before the roster section (no names).
    let roster_at = too_deep.len() - CHECKSUM_LEN - image::ROSTER_LEN;
    too_deep.splice(roster_at..roster_at, [1, 1, 0]);
    too_deep[18] += 1;
    let len = too_deep.len() as u8;
    too_deep[8] = len;
    reseal(&mut too_deep);
    let mut overflow = image::encode(&heavy);
    overflow[21..29].copy_from_slice(&u64::MAX.to_le_bytes());
    reseal(&mut overflow);

    vec![
        ("eec.img", eec.clone()),
        // The same rule in format version 1 (docs/image-format.md), which has
        // no roster section: still loaded, but without a digest.
        (
            "eec-v1.img",
            vec![
                0x89, 0x43, 0x4C, 0x52, 1, 0, 1, 0, 45, 0, 0, 0, 6, 0, 0, 0, 1, 0, 1, 0, 1, 4, 4, 4, 2, 2, 1,
                0, 0, 0, 12, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0xA0, 0x48, 0xA3, 0x7C,
            ],
        ),
        ("committee.img", image::encode(&committee)),
        ("board.img", image::encode(&allotment_board())),
        ("assembly.img", image::encode(&assembly)),
        ("costly.img", image::encode(&costly)),
        ("damaged-magic.img", patched(&eec, 0, b"GIF8")),
        ("damaged-truncated.img", eec[..eec.len() - 1].to_vec()),
        ("damaged-version.img", patched(&eec, 4, &[3, 0])),
        ("damaged-trailing.img", trailing),
        ("damaged-checksum.img", bad_checksum),
        ("damaged-width.img", patched(&eec, 20, &[3])),
        ("damaged-layout.img", patched(&eec, 20, &[2])),
        ("damaged-node-kind.img", patched(&eec, 38, &[7])),
        ("damaged-condition-kind.img", patched(&eec, 27, &[9])),
        ("damaged-no-members.img", patched(&eec, 12, &[0, 0, 0, 0])),
        (
            "damaged-too-many-members.img",
            patched(&eec, 12, &too_many_members),
        ),
        ("damaged-too-many-attributes.img", patched(&eec, 6, &[65, 0])),
        ("damaged-too-many-conditions.img", patched(&eec, 16, &[65, 0])),
        ("damaged-too-many-nodes.img", patched(&eec, 18, &[129, 0])),
        ("damaged-too-deep.img", too_deep),
        ("damaged-weight-sum.img", overflow),
        ("damaged-unknown-attribute.img", patched(&eec, 28, &[1])),
        ("damaged-unknown-condition.img", patched(&eec, 39, &[1])),
        ("damaged-malformed-formula.img", patched(&eec, 38, &[1, 1, 0])),
        ("damaged-empty-operator.img", patched(&eec, 38, &[1, 0, 0])),
        (
            "damaged-non-monotone.img",
            patched(&present, 31, &5i32.to_le_bytes()),
        ),
        ("present.img", present),
    ]
}

/// Writes every image into a fresh folder and returns it.
fn write_images(name: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join(name);
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("image folder");
    for (file, bytes) in images() {
        std::fs::write(dir.join(file), bytes).expect("write image");
    }
    dir
}

// ---------------------------------------------------------------- building C

/// The static library cargo built for this test run: it sits beside the
/// test binary (target/<profile>/deps) whatever the target folder is.
/// `CLOUT_STATIC_LIB` names another one (say, a release build to measure).
fn static_library() -> PathBuf {
    if let Some(path) = std::env::var_os("CLOUT_STATIC_LIB") {
        return PathBuf::from(path);
    }
    let exe = std::env::current_exe().expect("test binary path");
    let deps = exe.parent().expect("deps folder");
    let candidates = [deps.join("libclout_c.a"), deps.join("../libclout_c.a")];
    candidates
        .iter()
        .find(|p| p.is_file())
        .cloned()
        .unwrap_or_else(|| panic!("libclout_c.a not found beside {}", exe.display()))
}

/// Compiles one C program against the header and the static library.
fn compile_c(source: &Path, output: &Path, extra: &[&str]) {
    let compiler = std::env::var("CC").unwrap_or_else(|_| "cc".into());
    let result = Command::new(&compiler)
        .args([
            "-std=c11",
            "-Wall",
            "-Wextra",
            "-Werror",
            "-pedantic",
            "-O1",
            "-g",
        ])
        .args(extra)
        .arg("-I")
        .arg(manifest_dir().join("include"))
        .arg(source)
        .arg(static_library())
        // What `rustc --print native-static-libs` lists for Linux targets.
        .args(["-lgcc_s", "-lutil", "-lrt", "-lpthread", "-lm", "-ldl", "-lc"])
        .arg("-o")
        .arg(output)
        .output()
        .unwrap_or_else(|e| panic!("cannot run the C compiler `{compiler}`: {e}"));
    assert!(
        result.status.success(),
        "compiling {} failed:\n{}",
        source.display(),
        String::from_utf8_lossy(&result.stderr)
    );
}

fn under_valgrind() -> bool {
    std::env::var_os("CLOUT_VALGRIND").is_some()
}

/// Runs a built C program (under valgrind when `CLOUT_VALGRIND` is set).
fn run_c(program: &Path, args: &[&Path], stdin: &str) -> Output {
    let mut command = if under_valgrind() {
        let mut c = Command::new("valgrind");
        c.args([
            "--error-exitcode=99",
            "--leak-check=full",
            "--errors-for-leak-kinds=definite",
        ]);
        c.arg(program);
        c
    } else {
        Command::new(program)
    };
    let mut child = command
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap_or_else(|e| panic!("cannot run {}: {e}", program.display()));
    child
        .stdin
        .take()
        .expect("stdin")
        .write_all(stdin.as_bytes())
        .expect("write stdin");
    child.wait_with_output().expect("program output")
}

// ---------------------------------------------------------------- C programs

#[test]
fn c_test_suite_passes() {
    let dir = write_images("c-suite");
    let program = dir.join("test_clout");
    compile_c(&manifest_dir().join("tests/c/test_clout.c"), &program, &[]);
    let flag = Path::new("valgrind");
    let args: &[&Path] = if under_valgrind() { &[&dir, flag] } else { &[&dir] };
    let out = run_c(&program, args, "");
    let stdout = String::from_utf8_lossy(&out.stdout);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert!(out.status.success(), "C tests failed:\n{stdout}\n{stderr}");
    let summary = stdout.lines().last().unwrap_or("");
    assert!(
        summary.starts_with("c: ") && summary.ends_with(" passed, 0 failed"),
        "unexpected summary {summary:?}\n{stdout}"
    );
    println!("{stdout}");
}

#[test]
fn firmware_example_decides_ballots_from_stdin() {
    let dir = write_images("c-example");
    let program = dir.join("tally");
    compile_c(&manifest_dir().join("examples/tally.c"), &program, &[]);
    // Hand-computed for the allotment board: seats 3,2,2,1,1; conditions
    // seats >= 5, plots >= 3, seats >= 8; (c0 and c1) or c2.
    let ballots = "0 1\n0 1 3\n0,1,2,3\n\n1 2 3 4\n7\n2 2\n";
    let out = run_c(&program, &[&dir.join("board.img")], ballots);
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert_eq!(
        stdout,
        "rule: 5 members, 2 weight attributes, 3 conditions\n\
         ballot 1: fails; sums 5 2 5; met 1 0 0\n\
         ballot 2: passes; sums 6 3 6; met 1 1 0\n\
         ballot 3: passes; sums 8 4 8; met 1 1 1\n\
         ballot 4: fails; sums 0 0 0; met 0 0 0\n\
         ballot 5: passes; sums 6 4 6; met 1 1 0\n\
         ballot 6: rejected: the ballot names a member the rule does not have\n\
         ballot 7: rejected: the ballot lists a member twice\n",
        "stderr: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert_eq!(
        out.status.code(),
        Some(1),
        "a rejected ballot makes the exit status 1"
    );
    if under_valgrind() {
        let report = String::from_utf8_lossy(&out.stderr);
        assert!(
            report.contains("total heap usage: 0 allocs"),
            "the example allocated:\n{report}"
        );
    }

    // Four-state ballots on `present.img`: weights 2, 1, 1 and "more yes
    // than no" (Y - N >= 1). YNA: 2 - 1 = 1 passes; YNN: 2 - 2 = 0 fails;
    // -YA: 1 - 0 passes; --N: 0 - 1 fails; YX: not a vote letter.
    let out = run_c(
        &program,
        &[&dir.join("present.img")],
        "=YNA\n=YNN\n=-YA\n=--N\n=YX\n",
    );
    assert_eq!(
        String::from_utf8_lossy(&out.stdout),
        "rule: 3 members, 1 weight attributes, 1 conditions\n\
         ballot 1: passes; yes/no/abstain 2/1/1; met 1\n\
         ballot 2: fails; yes/no/abstain 2/2/0; met 0\n\
         ballot 3: passes; yes/no/abstain 1/0/1; met 1\n\
         ballot 4: fails; yes/no/abstain 0/1/0; met 0\n\
         ballot 5: rejected: a vote letter other than Y, N, A or -\n",
        "stderr: {}",
        String::from_utf8_lossy(&out.stderr)
    );

    let damaged = run_c(&program, &[&dir.join("damaged-checksum.img")], "");
    assert_eq!(damaged.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&damaged.stderr);
    assert!(stderr.contains("image damaged: checksum mismatch"), "{stderr}");
}
