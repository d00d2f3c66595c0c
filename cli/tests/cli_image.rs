//! `clout compile` and `clout inspect` through the real binary: an image of
//! every example loads back to a rule that decides four-state ballots as
//! the source does; damaged images are reported and exit 2.

mod cli_support;

use cli_support::clout_with_input;

fn tmp(name: &str) -> std::path::PathBuf {
    let dir = std::env::temp_dir().join(format!("clout-cli-image-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    dir.join(name)
}

#[test]
fn examples_compile_to_images_that_decide_alike() {
    for example in [
        "council",
        "transit",
        "two-chamber",
        "compact",
        "cooperative",
        "assembly",
        "token-dao",
    ] {
        let src_path = format!("examples/{example}.clout");
        let source =
            std::fs::read_to_string(format!(concat!(env!("CARGO_MANIFEST_DIR"), "/../{}"), src_path))
                .expect("example");
        let file = clout_dsl::compile(&source).expect("example compiles");
        for rule in &file.rules {
            let out = tmp(&format!("{example}-{}.img", rule.name));
            let out_s = out.to_str().expect("utf-8 path");
            let run = clout_with_input(&["compile", &src_path, "--rule", &rule.name, "-o", out_s], "");
            assert_eq!(run.code, 0, "{example}/{}: {}", rule.name, run.stderr);
            let inspect = clout_with_input(&["inspect", out_s], "");
            assert_eq!(inspect.code, 0, "{}", inspect.stdout);
            assert!(inspect.stdout.contains("intact"), "{}", inspect.stdout);
            // The image decides pseudo-random four-state ballots like the source rule.
            let bytes = std::fs::read(&out).expect("image");
            let mut weights = vec![0u64; clout::image::weights_needed(&bytes).expect("size")];
            let loaded = clout::image::load(&bytes, &mut weights).expect("loads");
            let n = rule.rule.members();
            let mut state = 0x9E37_79B9_7F4A_7C15u64 ^ n as u64;
            for _ in 0..200 {
                let mut votes = Vec::with_capacity(n);
                for _ in 0..n {
                    state = state
                        .wrapping_mul(6364136223846793005)
                        .wrapping_add(1442695040888963407);
                    votes.push(
                        [
                            clout::Vote::Yes,
                            clout::Vote::No,
                            clout::Vote::Abstain,
                            clout::Vote::Absent,
                        ][(state >> 62) as usize],
                    );
                }
                let ballot = clout::Ballot::<1024>::from_votes(&votes).expect("ballot");
                let a = clout::decide_ballot(&rule.rule, &ballot).expect("decides");
                let b = clout::decide_ballot(&loaded, &ballot).expect("decides");
                assert_eq!(a, b, "{example}/{}", rule.name);
            }
        }
    }
}

#[test]
fn damaged_images_exit_2_with_the_reason() {
    let out = tmp("flip.img");
    let out_s = out.to_str().expect("utf-8 path");
    let run = clout_with_input(&["compile", "examples/transit.clout", "-o", out_s], "");
    assert_eq!(run.code, 0, "{}", run.stderr);
    let good = std::fs::read(&out).expect("image");
    // One flipped bit in the body: the checksum catches it.
    let mut bad = good.clone();
    bad[good.len() / 2] ^= 0x10;
    std::fs::write(&out, &bad).expect("write");
    let run = clout_with_input(&["inspect", out_s], "");
    assert_eq!(run.code, 2);
    assert!(run.stdout.contains("damaged"), "{}", run.stdout);
    // Cut short: truncated.
    std::fs::write(&out, &good[..good.len() - 3]).expect("write");
    let run = clout_with_input(&["inspect", out_s], "");
    assert_eq!(run.code, 2);
    // Not an image at all.
    std::fs::write(&out, b"rule x = count >= 1").expect("write");
    let run = clout_with_input(&["inspect", out_s], "");
    assert_eq!(run.code, 2);
    assert!(run.stderr.contains("hint"), "{}", run.stderr);
}

/// Issue 20, finding 4: `inspect` read its file without a bound, so
/// `/dev/zero` grew to gigabytes. It now reads at most the largest possible
/// image plus one byte and refuses the rest with exit 2.
#[test]
fn inspect_refuses_endless_input() {
    if !std::path::Path::new("/dev/zero").exists() {
        return;
    }
    let started = std::time::Instant::now();
    let run = clout_with_input(&["inspect", "/dev/zero"], "");
    assert_eq!(run.code, 2, "{}{}", run.stdout, run.stderr);
    assert!(
        run.stderr.contains("longer than the largest possible rule image"),
        "{}",
        run.stderr
    );
    assert!(
        run.stderr.contains(&clout::image::MAX_IMAGE_LEN.to_string()),
        "{}",
        run.stderr
    );
    // Reading 32 MiB takes well under a second; endless reading never ends.
    assert!(started.elapsed() < std::time::Duration::from_secs(60));
}

/// At the limit the file is read and judged as an image (here: damaged);
/// one byte past it, it is refused unread.
#[test]
fn inspect_reads_up_to_the_largest_image() {
    let max = clout::image::MAX_IMAGE_LEN;
    // The format's own formula: header, 64 attributes of 8-byte weights for
    // every member, 64 four-state conditions, 128 nodes, checksum
    // (docs/image-format.md, "Layout").
    assert_eq!(max, 20 + 64 + 65_535 * 64 * 8 + 64 * 31 + 128 * 3 + 4);
    let at = tmp("at-limit.img");
    std::fs::write(&at, vec![0u8; max]).expect("write");
    let run = clout_with_input(&["inspect", at.to_str().expect("utf-8")], "");
    assert_eq!(run.code, 2);
    assert!(!run.stderr.contains("largest possible"), "{}", run.stderr);
    let past = tmp("past-limit.img");
    std::fs::write(&past, vec![0u8; max + 1]).expect("write");
    let run = clout_with_input(&["inspect", past.to_str().expect("utf-8")], "");
    assert_eq!(run.code, 2);
    assert!(run.stderr.contains("largest possible"), "{}", run.stderr);
    let _ = std::fs::remove_file(at);
    let _ = std::fs::remove_file(past);
}
