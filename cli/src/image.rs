//! `clout compile` (a rule to a binary image for devices) and `clout
//! inspect` (what an image holds and whether it is intact).
//!
//! The image format is documented in docs/image-format.md; the core checks
//! every byte before use, so `inspect` reports the same verdict a device
//! would reach. Writing is checked by loading the written bytes back and
//! comparing the loaded rule with the compiled one.

use std::path::{Path, PathBuf};

use clout::image;

use crate::input::Input;
use crate::{CompileArgs, Failure, InspectArgs, Outcome};

pub fn compile(args: &CompileArgs) -> Result<Outcome, Failure> {
    let s = &args.source;
    let input = Input::load(s.file.as_deref(), s.game.as_deref(), false)?;
    let rule = input.rule(s.rule.as_deref())?;
    let bytes = image::encode(&rule.rule);
    // Read back what we are about to write: the device must see the same rule.
    let mut weights = vec![0u64; image::weights_needed(&bytes).map_err(|e| Failure::input(e.to_string()))?];
    let loaded = image::load(&bytes, &mut weights).map_err(|e| Failure::input(format!("internal: {e}")))?;
    if loaded != rule.rule.as_borrowed() {
        return Err(Failure::input(
            "internal: the image does not load back to the same rule".to_string(),
        ));
    }
    let out = output_path(args, s.file.as_deref(), &rule.name);
    crate::write_file(&out, &bytes)?;
    Ok(Outcome::ok(format!(
        "wrote {} ({} bytes): rule `{}`, {} members, {} conditions, CRC-32 checked on load\n",
        out.display(),
        bytes.len(),
        rule.name,
        rule.rule.members(),
        rule.rule.atoms().len()
    )))
}

fn output_path(args: &CompileArgs, file: Option<&Path>, rule: &str) -> PathBuf {
    match (&args.output, file) {
        (Some(o), _) => o.clone(),
        (None, Some(f)) if f != Path::new("-") => f.with_extension(format!("{rule}.img")),
        _ => PathBuf::from(format!("{rule}.img")),
    }
}

pub fn inspect(args: &InspectArgs) -> Result<Outcome, Failure> {
    let bytes = std::fs::read(&args.image)
        .map_err(|e| Failure::input(format!("cannot read {}: {e}", args.image.display())))?;
    let info = image::inspect(&bytes).map_err(|e| {
        Failure::input(format!(
            "{}: {e}\n  = hint: images are written by `clout compile FILE -o FILE.img`",
            args.image.display()
        ))
    })?;
    let text = format!("{}: {info}\n", args.image.display());
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
