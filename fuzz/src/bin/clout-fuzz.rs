//! `clout-fuzz run TARGET [--seconds N] [--seed S] [--out DIR] [--timeout-ms T]`
//! `clout-fuzz replay TARGET FILE...`
//! `clout-fuzz minimize TARGET FILE OUT`
//! `clout-fuzz list`

use std::path::PathBuf;
use std::process::ExitCode;
use std::time::Duration;

use clout_fuzz::driver::{self, Campaign};
use clout_fuzz::targets::{target, TARGETS};

fn usage() -> ExitCode {
    eprintln!(
        "usage: clout-fuzz run TARGET [--seconds N] [--seed S] [--out DIR] [--timeout-ms T]\n       \
         clout-fuzz replay TARGET FILE...\n       clout-fuzz minimize TARGET FILE OUT\n       clout-fuzz list"
    );
    ExitCode::from(2)
}

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let fuzz_dir = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    match args.first().map(String::as_str) {
        Some("show") => {
            // The rule an `engines` input describes, and each engine's winning count.
            let Some(file) = args.get(1) else { return usage() };
            let Ok(input) = std::fs::read(file) else {
                return usage();
            };
            let mut r = clout_fuzz::targets::reader::Reader::new(&input);
            let rule = clout_fuzz::targets::engines::rule(&mut r);
            println!("{rule:#?}");
            if let Some(rule) = rule {
                for e in clout_core::Engine::ALL {
                    let a = clout_core::analyze_with::<_, clout_core::Count1024>(&rule, e);
                    println!(
                        "{}: {:?}",
                        e.name(),
                        a.map(|a| (
                            a.rule.winning,
                            a.members.iter().map(|m| m.swings).collect::<Vec<_>>()
                        ))
                    );
                }
            }
            ExitCode::SUCCESS
        }
        Some("seeds") => {
            seeds(&fuzz_dir);
            ExitCode::SUCCESS
        }
        Some("list") => {
            for t in TARGETS {
                println!("{}", t.name);
            }
            ExitCode::SUCCESS
        }
        Some("run") => {
            let Some(t) = args.get(1).and_then(|n| target(n)) else {
                return usage();
            };
            let mut c = Campaign {
                target: t,
                seeds: fuzz_dir.join("corpus").join(t.name),
                out: fuzz_dir.join("out").join(t.name),
                duration: Duration::from_secs(60),
                seed: 0x9E37_79B9_7F4A_7C15,
                timeout: Duration::from_millis(2000),
            };
            let mut rest = args[2..].iter();
            while let Some(flag) = rest.next() {
                let Some(value) = rest.next() else { return usage() };
                match flag.as_str() {
                    "--seconds" => c.duration = Duration::from_secs(value.parse().unwrap_or(60)),
                    "--seed" => c.seed = value.parse().unwrap_or(1),
                    "--out" => c.out = PathBuf::from(value),
                    "--timeout-ms" => c.timeout = Duration::from_millis(value.parse().unwrap_or(2000)),
                    _ => return usage(),
                }
            }
            let s = driver::run(&c);
            println!(
                "target={} seconds={:.0} execs={} execs_per_second={:.0} corpus={} edges={} counters={} crashes={}",
                t.name,
                s.seconds,
                s.execs,
                s.execs as f64 / s.seconds.max(1e-9),
                s.corpus,
                s.edges,
                s.counters,
                s.crashes
            );
            if s.crashes > 0 {
                ExitCode::FAILURE
            } else {
                ExitCode::SUCCESS
            }
        }
        Some("replay") => {
            let Some(t) = args.get(1).and_then(|n| target(n)) else {
                return usage();
            };
            let files: Vec<PathBuf> = args[2..].iter().map(PathBuf::from).collect();
            if driver::replay(t, &files) > 0 {
                ExitCode::FAILURE
            } else {
                ExitCode::SUCCESS
            }
        }
        Some("minimize") => {
            let (Some(t), Some(file), Some(out)) =
                (args.get(1).and_then(|n| target(n)), args.get(2), args.get(3))
            else {
                return usage();
            };
            let Ok(input) = std::fs::read(file) else {
                return usage();
            };
            let small = driver::minimize(t, &input);
            let _ = std::fs::write(out, &small);
            eprintln!("{} -> {} bytes", input.len(), small.len());
            ExitCode::SUCCESS
        }
        _ => usage(),
    }
}

/// Writes the seed corpora of the binary targets: images of the example
/// rules (and one rule with a four-state condition), with ballot bytes.
fn seeds(fuzz_dir: &std::path::Path) {
    use clout_core::{image, Atom, Condition, Linear, Node, Rule};
    let mut images: Vec<(String, Vec<u8>)> = Vec::new();
    for name in ["council", "transit", "two-chamber", "cooperative"] {
        let path = fuzz_dir.join("corpus/rule_text").join(format!("{name}.clout"));
        let Ok(text) = std::fs::read_to_string(&path) else {
            continue;
        };
        let Ok(file) = clout_dsl::compile(&text) else {
            continue;
        };
        if let Some(r) = file.rules.first() {
            images.push((name.to_string(), image::encode(&r.rule)));
            // The same rule with its names in the roster section (format version 2).
            let names: Vec<&str> = file.members.iter().map(|m| m.name.as_str()).collect();
            let roster = image::Roster {
                rule: &r.name,
                members: &names,
            };
            if let Ok(named) = image::encode_named(&r.rule, &roster) {
                images.push((format!("{name}-named"), named));
            }
        }
    }
    // A version-1 image (no roster section), which readers still accept:
    // [12; 4,4,4,2,2,1] as docs/image-format.md gives it.
    images.push((
        "weighted-v1".to_string(),
        vec![
            0x89, 0x43, 0x4C, 0x52, 1, 0, 1, 0, 45, 0, 0, 0, 6, 0, 0, 0, 1, 0, 1, 0, 1, 4, 4, 4, 2, 2, 1, 0, 0, 0,
            12, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0xA0, 0x48, 0xA3, 0x7C,
        ],
    ));
    let four = Rule::with_conditions(
        5,
        vec![3u64, 1, 1, 1, 1, 1, 1, 1, 1, 1],
        &[
            Condition::Linear(Linear {
                attribute: 0,
                yes: 1,
                no: -1,
                abstain: 0,
                bound: 1,
            }),
            Condition::Yes(Atom {
                attribute: 1,
                quota: 3,
            }),
        ],
        &[Node::Atom(0), Node::Atom(1), Node::All(2)],
    )
    .expect("a valid rule");
    images.push(("four-state".to_string(), image::encode(&four)));
    let weighted = Rule::weighted(12, vec![4u64, 4, 4, 2, 2, 1]).expect("valid");
    images.push(("weighted".to_string(), image::encode(&weighted)));
    let ballots: &[u8] = &[0, 1, 0xA5, 2, 3, 0x3C, 1, 2, 7, 9, 11, 0xFF, 0x10, 0x42];
    for (name, img) in &images {
        let mut load = vec![3u8];
        load.extend_from_slice(img);
        write(fuzz_dir, "image_load", name, &load);
        let mut framed = vec![3u8];
        framed.extend_from_slice(&(img.len() as u16).to_le_bytes());
        framed.extend_from_slice(img);
        framed.extend_from_slice(ballots);
        write(fuzz_dir, "image_decide", name, &framed);
        let mut calls = framed.clone();
        calls.truncate(3 + img.len());
        let mut c = vec![3u8];
        c.extend_from_slice(&(img.len() as u16).to_le_bytes());
        c.extend_from_slice(img);
        c.extend_from_slice(&[
            5, 40, 3, 3, 0, 0, 4, 0xA5, 0x5A, 0x0F, 0xF0, 3, 3, 3, 3, 3, 3, 1, 4, 0x11, 0x22,
        ]);
        write(fuzz_dir, "c_abi", name, &c);
    }
    let engine_seeds: [&[u8]; 4] = [
        &[5, 0, 1, 0, 3, 1, 3, 0, 0x80, 0, 1, 0x90, 0x81, 1, 0, 2, 0],
        &[11, 0, 0, 0, 9, 0, 2, 0, 100, 4, 0x83, 0, 0, 1, 0],
        &[
            7, 0, 2, 0, 5, 1, 5, 0, 0, 60, 0, 1, 4, 2, 0x7F, 3, 4, 7, 0x84, 0, 1, 0, 2, 0,
        ],
        &[
            3, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 255, 255,
        ],
    ];
    for (i, s) in engine_seeds.iter().enumerate() {
        write(fuzz_dir, "engines", &format!("seed{i}"), s);
    }
}

fn write(fuzz_dir: &std::path::Path, target: &str, name: &str, bytes: &[u8]) {
    let dir = fuzz_dir.join("corpus").join(target);
    let _ = std::fs::create_dir_all(&dir);
    let _ = std::fs::write(dir.join(name), bytes);
}
