//! `clout check`: compile each file and report warnings (dummies, rules
//! that are not proper). Exit 0 when every file is clean, 1 when some file
//! has warnings, 2 when some file does not compile.

use std::fmt::Write;

use clout_dsl::{lint, render_all, Severity};

use crate::input::Input;
use crate::progress::with_progress;
use crate::{CheckArgs, Failure, Outcome};

pub fn run(args: &CheckArgs) -> Outcome {
    let mut outcome = Outcome {
        stdout: String::new(),
        stderr: String::new(),
        code: 0,
    };
    let mut inputs: Vec<Result<Input, Failure>> = args
        .files
        .iter()
        .map(|f| Input::load(Some(f), None, false))
        .collect();
    if let Some(g) = &args.game {
        inputs.push(Input::load(None, Some(g), false));
    }
    if inputs.is_empty() {
        inputs.push(Input::load(None, None, false));
    }
    for input in inputs {
        let input = match input {
            Ok(i) => i,
            Err(f) => {
                outcome.stderr.push_str(&f.message);
                outcome.code = 2;
                continue;
            }
        };
        let label = format!("checking {} for dummies and properness", input.name);
        let diagnostics = with_progress(&label, || lint(&input.file, args.budget));
        outcome
            .stderr
            .push_str(&render_all(&diagnostics, &input.name, &input.source));
        let warnings = diagnostics
            .iter()
            .filter(|d| d.severity == Severity::Warning)
            .count();
        let rules: Vec<&str> = input.file.rules.iter().map(|r| r.name.as_str()).collect();
        let verdict = match warnings {
            0 => "ok".to_string(),
            1 => "1 warning".to_string(),
            w => format!("{w} warnings"),
        };
        let _ = writeln!(
            outcome.stdout,
            "{}: {verdict}; {} members, {} rule{} ({})",
            input.name,
            input.file.members.len(),
            rules.len(),
            if rules.len() == 1 { "" } else { "s" },
            rules.join(", ")
        );
        if warnings > 0 && outcome.code == 0 {
            outcome.code = 1;
        }
    }
    outcome
}
