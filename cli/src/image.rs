//! `clout compile` (a rule to a binary image for devices) and `clout
//! inspect` (what an image holds and whether it is intact).
//!
//! The image format is documented in docs/image-format.md; the core checks
//! every byte before use, so `inspect` reports the same verdict a device
//! would reach. Writing is checked by loading the written bytes back and
//! comparing the loaded rule with the compiled one.

use std::path::{Path, PathBuf};

use clout::{escape, image};

use crate::input::{read_bounded, Input};
use crate::{CompileArgs, Failure, InspectArgs, Outcome};

pub fn compile(args: &CompileArgs) -> Result<Outcome, Failure> {
    let s = &args.source;
    let input = Input::load(s.file.as_deref(), s.game.as_deref(), false)?;
    let rule = input.rule(s.rule.as_deref())?;
    let bytes = clout::images::named_image(&input.file, rule)?;
    let names: Vec<&str> = input.file.members.iter().map(|m| m.name.as_str()).collect();
    let words = rule_words(&bytes)?;
    let digest = image::roster_digest(&rule.rule, Some(&names));
    let header = match &args.c_header {
        Some(path) => Some((
            path,
            c_header(&args.c_prefix, &rule.name, &bytes, words, &digest, &names)?,
        )),
        None => None,
    };
    let out = output_path(args, s.file.as_deref(), &rule.name);
    crate::write_file(&out, &bytes)?;
    let mut text = format!(
        "wrote {} ({} bytes): rule `{}`, {} members, {} conditions, CRC-32 checked on load\n\
         rule memory: {words} words of 8 bytes (clout_rule_words)\n\
         roster digest (SHA-256 of the member names and weights): {}\n",
        escape::terminal(&out.to_string_lossy()),
        bytes.len(),
        escape::terminal(&rule.name),
        rule.rule.members(),
        rule.rule.atoms().len(),
        hex(&digest)
    );
    if let Some((path, header)) = header {
        crate::write_file(path, header.as_bytes())?;
        text.push_str(&format!("wrote {} (C header)\n", path.display()));
    }
    Ok(Outcome::ok(text))
}

/// Words of rule memory the C ABI needs for `bytes`, asked of the C ABI.
fn rule_words(bytes: &[u8]) -> Result<usize, Failure> {
    let mut words = 0usize;
    let code = clout_c::clout_rule_words(bytes.as_ptr(), bytes.len(), &mut words);
    if code != clout_c::clout_result::Ok {
        return Err(Failure::input(format!(
            "internal: the C ABI refuses the image: {}",
            code.message()
        )));
    }
    Ok(words)
}

/// A C identifier made of `name`: ASCII letters and digits upper-cased,
/// everything else `_`.
fn c_identifier(name: &str) -> String {
    name.chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() {
                c.to_ascii_uppercase()
            } else {
                '_'
            }
        })
        .collect()
}

/// The C header of an image: the bytes as a `static const uint8_t` array,
/// their number, the rule memory they need and one `#define` per member
/// index. Two names that make the same C name are refused.
fn c_header(
    prefix: &str,
    rule: &str,
    bytes: &[u8],
    words: usize,
    digest: &[u8; image::DIGEST_LEN],
    members: &[&str],
) -> Result<String, Failure> {
    let valid = prefix.chars().all(|c| c.is_ascii_alphanumeric() || c == '_');
    if prefix.is_empty() || !valid || prefix.starts_with(|c: char| c.is_ascii_digit()) {
        return Err(Failure::input(format!(
            "--c-prefix `{prefix}` is not a C name\n  = hint: use letters, digits and `_`, not starting with a digit"
        )));
    }
    let upper = prefix.to_ascii_uppercase();
    let lower = prefix.to_ascii_lowercase();
    let mut seen: std::collections::HashMap<String, usize> = std::collections::HashMap::new();
    let mut defines = String::new();
    for (i, name) in members.iter().enumerate() {
        let id = c_identifier(name);
        if let Some(&j) = seen.get(&id) {
            return Err(Failure::input(format!(
                "members `{}` and `{name}` both become {upper}_MEMBER_{id} in the C header\n  \
                 = hint: rename one of them; the header gives every member its own name",
                members[j]
            )));
        }
        seen.insert(id.clone(), i);
        defines.push_str(&format!(
            "#define {upper}_MEMBER_{id} {i}u /* {} */\n",
            c_comment(name)
        ));
    }
    let mut array = String::new();
    for (i, chunk) in bytes.chunks(12).enumerate() {
        if i > 0 {
            array.push('\n');
        }
        array.push_str("   ");
        for b in chunk {
            array.push_str(&format!(" 0x{b:02X},"));
        }
    }
    Ok(format!(
        "/* Rule `{rule}` as a clout rule image (docs/image-format.md), written by\n \
         * `clout compile --c-header`; compile the rule again instead of editing. */\n\
         #ifndef {upper}_IMAGE_H\n#define {upper}_IMAGE_H\n\n#include <stdint.h>\n\n\
         /* The image: hand it to clout_rule_load. */\n\
         static const uint8_t {lower}_image[{len}] = {{\n{array}\n}};\n\
         #define {upper}_IMAGE_LEN {len}u\n\
         /* uint64_t words of rule memory clout_rule_load needs (clout_rule_words). */\n\
         #define {upper}_WORDS {words}u\n\
         #define {upper}_MEMBERS {n}u\n\
         /* The roster digest (clout_rule_roster_digest): SHA-256 of the member\n \
         * names and weights. Refuse an image whose digest differs. */\n\
         static const uint8_t {lower}_roster_digest[{dlen}] = {{{digest_bytes}}};\n\n\
         /* Member indices: ballot bit, list entry or vote byte of each member. */\n\
         {defines}\n#endif\n",
        rule = c_comment(rule),
        len = bytes.len(),
        n = members.len(),
        dlen = digest.len(),
        digest_bytes = digest
            .iter()
            .map(|b| format!("0x{b:02X}"))
            .collect::<Vec<_>>()
            .join(", "),
    ))
}

/// Lowercase hexadecimal.
fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

/// `text` safe inside a C comment: printable ASCII only (anything else,
/// control characters and bidirectional overrides included, becomes `?`),
/// and no `*/`.
fn c_comment(text: &str) -> String {
    let ascii: String = text
        .chars()
        .map(|c| if c == ' ' || c.is_ascii_graphic() { c } else { '?' })
        .collect();
    ascii.replace("*/", "*_/")
}

fn output_path(args: &CompileArgs, file: Option<&Path>, rule: &str) -> PathBuf {
    match (&args.output, file) {
        (Some(o), _) => o.clone(),
        (None, Some(f)) if f != Path::new("-") => f.with_extension(format!("{rule}.img")),
        _ => PathBuf::from(format!("{rule}.img")),
    }
}

pub fn inspect(args: &InspectArgs) -> Result<Outcome, Failure> {
    let shown = escape::terminal(&args.image.to_string_lossy()).into_owned();
    let bytes = std::fs::File::open(&args.image)
        .and_then(|f| read_bounded(f, image::MAX_IMAGE_LEN))
        .map_err(|e| Failure::input(format!("cannot read {shown}: {e}")))?;
    if bytes.len() > image::MAX_IMAGE_LEN {
        return Err(Failure::input(format!(
            "{shown}: longer than the largest possible rule image ({} bytes); it was not read further\n  \
             = hint: this is not an image written by `clout compile`",
            image::MAX_IMAGE_LEN
        )));
    }
    let info = image::inspect(&bytes).map_err(|e| {
        Failure::input(format!(
            "{shown}: {e}\n  = hint: images are written by `clout compile FILE -o FILE.img`"
        ))
    })?;
    let mut text = format!("{shown}: {info}\n");
    if let Ok(Some(roster)) = image::roster(&bytes) {
        if let Some(rule) = roster.rule {
            text.push_str(&format!(
                "rule {}; members by index:\n",
                clout_dsl::quote::written(rule)
            ));
            for (i, name) in roster.members.enumerate() {
                text.push_str(&format!("  {i} {}\n", clout_dsl::quote::written(name)));
            }
        }
    }
    if info.is_intact() {
        Ok(Outcome::ok(text))
    } else {
        // A damaged image is bad input: say what is wrong on stdout, exit 2.
        Ok(Outcome {
            stdout: text,
            stderr: String::new(),
            code: 2,
        })
    }
}
