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
    // Reading about 40 MiB takes seconds at most; endless reading never ends.
    assert!(started.elapsed() < std::time::Duration::from_secs(60));
}

/// At the limit the file is read and judged as an image (here: damaged);
/// one byte past it, it is refused unread.
#[test]
fn inspect_reads_up_to_the_largest_image() {
    let max = clout::image::MAX_IMAGE_LEN;
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

/// The digest line `clout compile` and `clout inspect` print.
fn digest_line(text: &str) -> String {
    text.lines()
        .find(|l| l.contains("roster digest"))
        .and_then(|l| l.split_whitespace().find(|w| w.len() >= 64))
        .map(|w| w.trim_end_matches(',').to_string())
        .unwrap_or_default()
}

#[test]
fn images_name_their_members_and_pin_the_roster() {
    let rule = "member ash weight=3\nmember birch weight=2\nmember \"cedar\\u{202E}x\" weight=2\nrule pass = weight >= 4\n";
    let changed = rule.replace("birch weight=2", "birch weight=1");
    let (a, b) = (tmp("roster-a.clout"), tmp("roster-b.clout"));
    std::fs::write(&a, rule).expect("write");
    std::fs::write(&b, &changed).expect("write");
    let (ai, bi, h) = (tmp("roster-a.img"), tmp("roster-b.img"), tmp("roster-a.h"));
    let args = |src: &std::path::Path, img: &std::path::Path| {
        vec![
            "compile".to_string(),
            src.display().to_string(),
            "-o".to_string(),
            img.display().to_string(),
        ]
    };
    let mut with_header = args(&a, &ai);
    with_header.extend(["--c-header".to_string(), h.display().to_string()]);
    let refs: Vec<&str> = with_header.iter().map(String::as_str).collect();
    let run_a = clout_with_input(&refs, "");
    assert_eq!(run_a.code, 0, "{}", run_a.stderr);
    assert!(run_a.stdout.contains("rule memory: "), "{}", run_a.stdout);
    let refs_b = args(&b, &bi);
    let refs_b: Vec<&str> = refs_b.iter().map(String::as_str).collect();
    let run_b = clout_with_input(&refs_b, "");
    assert_eq!(run_b.code, 0, "{}", run_b.stderr);

    let inspect = clout_with_input(&["inspect", ai.to_str().expect("path")], "");
    assert_eq!(inspect.code, 0, "{}", inspect.stdout);
    assert!(
        inspect.stdout.contains("rule pass; members by index:"),
        "{}",
        inspect.stdout
    );
    assert!(
        inspect.stdout.contains("  0 ash\n  1 birch\n"),
        "{}",
        inspect.stdout
    );
    // A bidirectional override in a name is shown escaped, never raw.
    assert!(
        inspect.stdout.contains("  2 \"cedar\\u{202e}x\"\n"),
        "{}",
        inspect.stdout
    );
    assert!(!inspect.stdout.contains('\u{202E}'));
    let digest_a = digest_line(&inspect.stdout);
    assert_eq!(digest_a.len(), 64, "{}", inspect.stdout);
    assert_eq!(digest_line(&run_a.stdout), digest_a, "compile and inspect agree");
    // One weight changed: another digest.
    let inspect_b = clout_with_input(&["inspect", bi.to_str().expect("path")], "");
    assert_ne!(digest_line(&inspect_b.stdout), digest_a);

    // The C header: the image bytes, sizes, digest and member indices.
    let header = std::fs::read_to_string(&h).expect("header");
    let image = std::fs::read(&ai).expect("image");
    assert!(
        header.contains(&format!("#define RULE_IMAGE_LEN {}u", image.len())),
        "{header}"
    );
    assert!(header.contains("#define RULE_MEMBER_ASH 0u"), "{header}");
    assert!(header.contains("#define RULE_MEMBER_BIRCH 1u"), "{header}");
    assert!(
        header.contains("#define RULE_MEMBER_CEDAR___X 2u")
            || header.contains("#define RULE_MEMBER_CEDAR_X 2u"),
        "{header}"
    );
    let first = format!("0x{:02X}, 0x{:02X},", image[0], image[1]);
    assert!(header.contains(&first), "{header}");
    let digest_bytes: String = (0..4)
        .map(|i| format!("0x{}, ", &digest_a[2 * i..2 * i + 2].to_uppercase()))
        .collect();
    assert!(header.contains(digest_bytes.trim_end_matches(", ")), "{header}");
    let mut words = 0usize;
    assert_eq!(
        clout_c::clout_rule_words(image.as_ptr(), image.len(), &mut words),
        clout_c::clout_result::Ok
    );
    assert!(
        header.contains(&format!("#define RULE_WORDS {words}u")),
        "{header}"
    );

    // Two names that become one C name are refused.
    let clash = tmp("clash.clout");
    std::fs::write(
        &clash,
        "member a_b weight=1\nmember \"a-b\" weight=1\nrule r = weight >= 1\n",
    )
    .expect("write");
    let clash_h = tmp("clash.h");
    let run = clout_with_input(
        &[
            "compile",
            clash.to_str().expect("path"),
            "-o",
            tmp("clash.img").to_str().expect("path"),
            "--c-header",
            clash_h.to_str().expect("path"),
        ],
        "",
    );
    assert_eq!(run.code, 2, "{}", run.stdout);
    assert!(
        run.stderr.contains("both become RULE_MEMBER_A_B"),
        "{}",
        run.stderr
    );
}
