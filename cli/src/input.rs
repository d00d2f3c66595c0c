//! Where a rule comes from: a file, `--game "[q; w...]"`, or the embedded
//! demo; compiled, with errors rendered against their source.

use std::path::{Path, PathBuf};

use clout_dsl::data::MAX_TABLE_LEN;
use clout_dsl::diagnostic::closest;
use clout_dsl::syntax::{decode, MAX_SOURCE_LEN};
use clout_dsl::{compile_with, render_all, CompiledRule, RuleFile};

use clout::tables::Folder;
pub use clout::tables::{describe_io, read_bounded};
use clout_dsl::Tables;

use crate::Failure;

/// The demo rule file analysed by `clout report` without arguments.
pub const DEMO: &str = include_str!("../../examples/transit.clout");

/// A compiled rule file and the text it came from.
pub struct Input {
    /// Shown in messages: the path, `--game` or `demo`.
    pub name: String,
    /// The source text.
    pub source: String,
    /// The compiled file.
    pub file: RuleFile,
    /// Came from the embedded demo.
    pub demo: bool,
}

impl Input {
    /// Loads and compiles; `None` for both means the demo when `demo_allowed`.
    pub fn load(file: Option<&Path>, game: Option<&str>, demo_allowed: bool) -> Result<Input, Failure> {
        match (file, game) {
            (Some(path), _) if path.as_os_str() == "-" => {
                let bytes = read_bounded(std::io::stdin(), MAX_SOURCE_LEN).map_err(|e| {
                    Failure::input(format!("cannot read standard input: {}", describe_io(&e)))
                })?;
                Input::compile("<stdin>".to_string(), text(bytes, "<stdin>")?, false, None)
            }
            (Some(path), _) => {
                let bytes = std::fs::File::open(path)
                    .and_then(|f| read_bounded(f, MAX_SOURCE_LEN))
                    .map_err(|e| {
                        Failure::input(format!("cannot read `{}`: {}", path.display(), describe_io(&e)))
                    })?;
                let name = path.display().to_string();
                let source = text(bytes, &name)?;
                let base = path.parent().map(Path::to_path_buf).unwrap_or_default();
                Input::compile(name, source, false, Some(base))
            }
            (None, Some(game)) => Input::compile("--game".to_string(), game.to_string(), false, None),
            (None, None) if demo_allowed => Input::compile("demo".to_string(), DEMO.to_string(), true, None),
            (None, None) => Err(Failure::input(
                "no rule given: name a rule file, or pass `--game \"[q; w1, ..., wn]\"`".to_string(),
            )),
        }
    }

    /// Compiles `source`; its tables are read relative to `base` (the rule
    /// file's folder). Without a base (standard input, `--game`), only
    /// absolute paths are read: a relative one has no folder to be relative to.
    fn compile(name: String, source: String, demo: bool, base: Option<PathBuf>) -> Result<Input, Failure> {
        let mut stdin_used = false;
        let mut folder = match &base {
            Some(dir) => Folder::at(dir.clone()),
            None => Folder::none(),
        };
        let mut tables = |path: &str| -> Result<(String, Vec<u8>), String> {
            if path == "-" {
                if base.is_none() || stdin_used {
                    return Err("standard input is taken (by the rule file, or by another table)".to_string());
                }
                stdin_used = true;
                let bytes = read_bounded(std::io::stdin(), MAX_TABLE_LEN).map_err(|e| describe_io(&e))?;
                return Ok(("<stdin>".to_string(), bytes));
            }
            folder.table(path)
        };
        match compile_with(&source, &mut tables) {
            Ok(file) => Ok(Input {
                name,
                source,
                file,
                demo,
            }),
            Err(errors) => Err(rendered_errors(&errors, &name, &source)),
        }
    }

    /// The rule named by `--rule`, or the first.
    pub fn rule(&self, name: Option<&str>) -> Result<&CompiledRule, Failure> {
        if let Some(r) = self.file.rule(name) {
            return Ok(r);
        }
        let wanted = name.unwrap_or_default();
        let names: Vec<&str> = self.file.rules.iter().map(|r| r.name.as_str()).collect();
        let hint = match closest(wanted, names.iter().copied()) {
            Some(c) => format!("did you mean `{c}`?"),
            None => format!("the rules of {} are: {}", self.name, names.join(", ")),
        };
        Err(Failure::input(format!(
            "{}: no rule named `{wanted}`\n  = hint: {hint}",
            self.name
        )))
    }

    /// The title for text and charts, safe for a terminal ([`clout::escape::terminal`]).
    pub fn title(&self) -> String {
        let title = match (&self.file.title, self.demo) {
            (Some(t), true) => format!("{t} (fictional demo; `clout demo` prints its rule file)"),
            (Some(t), false) => t.clone(),
            (None, _) if self.name == "--game" => "weighted game given by --game".to_string(),
            (None, _) => self.name.clone(),
        };
        clout::escape::terminal(&title).into_owned()
    }
}

/// Every error of `name` rendered against `source`, with the count line
/// the command prints under them.
pub fn rendered_errors(errors: &[clout_dsl::Diagnostic], name: &str, source: &str) -> Failure {
    let mut text = render_all(errors, name, source);
    let n = clout_dsl::error_count(errors);
    text.push_str(&format!("{n} error{} in {name}\n", if n == 1 { "" } else { "s" }));
    Failure::rendered(text)
}

/// A data file given on the command line (`--ballots`, `--chances`): its
/// name as shown in messages and at most [`MAX_TABLE_LEN`] + 1 bytes.
pub fn read_data_file(path: &Path) -> Result<(String, Vec<u8>), Failure> {
    let shown = path.display().to_string();
    let bytes = std::fs::File::open(path)
        .and_then(|f| read_bounded(f, MAX_TABLE_LEN))
        .map_err(|e| Failure::input(format!("cannot read `{shown}`: {e}")))?;
    Ok((shown, bytes))
}

/// The bytes as text, or the error at the first byte that is not UTF-8 (or past the size limit).
fn text(bytes: Vec<u8>, name: &str) -> Result<String, Failure> {
    match decode(&bytes) {
        Ok(_) => Ok(String::from_utf8(bytes).unwrap_or_default()),
        Err(d) => {
            let mut text = d.render(name, &String::from_utf8_lossy(&bytes));
            text.push_str(&format!("1 error in {name}\n"));
            Err(Failure::rendered(text))
        }
    }
}
