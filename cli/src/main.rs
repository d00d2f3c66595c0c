//! The `clout` command: exact power reports, single votes, checks and
//! drafting tools for rule files written in the clout rule language;
//! argument parsing, exit codes and output.
//!
//! Exit codes: 0 success; 1 warnings (`check` only); 2 bad input of any
//! kind (unreadable file, a rule that does not compile, an unknown name, a
//! computation over the work budget), with the message on stderr. Output
//! is written once at the end, so a closed pipe ends the command quietly.

mod check;
mod decide;
mod image;
mod input;
mod progress;
mod report;
mod text;
// The drafting commands (clout::toolkit).
mod coalitions;
mod compare;
mod drafting;
mod fit;
mod order;
mod simplify;
mod sweep;

use std::io::Write;
use std::path::PathBuf;
use std::process::ExitCode;

use clap::{Args, Parser, Subcommand, ValueEnum};

/// Exact voting power for weighted, compound voting rules.
///
/// Write a rule in a `.clout` file (the language is described in the
/// README), then ask for a power report, the outcome of one vote, or a
/// check of the file.
#[derive(Parser)]
#[command(name = "clout", version, about, long_about = None, propagate_version = true)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Every member's swings and power indices, and the rule's properties.
    ///
    /// With no FILE and no --game, reports on an embedded fictional demo rule.
    Report(ReportArgs),
    /// The outcome of one vote: per-condition sums and quotas, and the critical members.
    Decide(DecideArgs),
    /// Compile rule files and print warnings (dummies, rules that are not proper).
    ///
    /// Exits 0 when clean, 1 on warnings, 2 on errors.
    Check(CheckArgs),
    /// Print the embedded demo rule file (a starting point for your own).
    Demo,
    /// Write one rule as a binary image for devices and the C ABI.
    Compile(CompileArgs),
    /// Show what a rule image holds and whether it is intact (exit 2 when damaged).
    Inspect(InspectArgs),
    /// Dummies, whether the rule is one weighted vote (least integer weights), or a proof that it is not.
    Simplify(simplify::SimplifyArgs),
    /// Whether two rules are the same; if not, a smallest coalition where they differ and the power changes.
    Compare(compare::CompareArgs),
    /// Power indices and probability of passage as a quota moves (text, CSV, SVG chart).
    Sweep(sweep::SweepArgs),
    /// Integer weights and a quota whose Banzhaf index is closest to target shares of power.
    Fit(fit::FitArgs),
    /// List the minimal winning or minimal blocking coalitions, with their number.
    Coalitions(coalitions::CoalitionsArgs),
    /// Members ordered by influence (Isbell's desirability relation) and the classes of symmetric members.
    Order(order::OrderArgs),
}

#[derive(Args)]
struct Source {
    /// Rule file (`.clout`), a file holding `[q; w1, ..., wn]`, or `-` for standard input.
    file: Option<PathBuf>,
    /// The weighted game `[q; w1, ..., wn]` instead of a file (members p1..pn).
    #[arg(long, value_name = "[q; w...]", conflicts_with = "file")]
    game: Option<String>,
    /// Which rule of the file (default: the first).
    #[arg(long, value_name = "NAME")]
    rule: Option<String>,
}

#[derive(Args)]
struct ReportArgs {
    #[command(flatten)]
    source: Source,
    /// Output format.
    #[arg(long, value_enum, default_value_t = Format::Text)]
    format: Format,
    /// Counting engine (default: the planner's choice).
    #[arg(long, value_enum, default_value_t = EngineChoice::Auto)]
    engine: EngineChoice,
    /// Most elementary steps the exact computation may take.
    #[arg(long, value_name = "STEPS", value_parser = parse_steps, default_value = "5e10")]
    budget: u128,
    /// Most memory an engine may use, e.g. 2GiB or 512MiB.
    #[arg(long, value_name = "BYTES", value_parser = parse_bytes, default_value = "2GiB")]
    memory: u64,
    /// Print the planner's estimates for every engine and why it chose one.
    #[arg(long)]
    explain: bool,
    /// Refuse to approximate: fail when no exact engine fits the budget and memory.
    #[arg(long)]
    exact: bool,
    /// Target half-width of approximate figures (95% confidence).
    #[arg(long, value_name = "H", default_value_t = 0.001)]
    tolerance: f64,
    /// Seed of the Monte Carlo sampler (same seed, same figures).
    #[arg(long, value_name = "N", default_value_t = 1)]
    seed: u64,
    /// Also give Felsenthal & Machover's ternary Banzhaf measure (yes, abstain, no).
    #[arg(long)]
    ternary: bool,
    /// Also give the probability of passage when each member attends with chance P
    /// and then votes yes or no with equal chance.
    #[arg(long, value_name = "P")]
    attendance: Option<f64>,
    /// Also write the chart of power beside weight as SVG to this file.
    #[arg(long, value_name = "PATH")]
    svg: Option<std::path::PathBuf>,
    /// Also write the whole report (rule, chart, tables, model and caution) as one
    /// self-contained HTML page to this file.
    #[arg(long, value_name = "PATH")]
    html: Option<std::path::PathBuf>,
}

/// A byte count such as `2GiB`, `512MiB`, `64KiB` or `1000000`.
fn parse_bytes(s: &str) -> Result<u64, String> {
    let t = s.trim().replace('_', "");
    let (digits, unit) = t.split_at(t.find(|c: char| !c.is_ascii_digit()).unwrap_or(t.len()));
    let scale: u64 = match unit.to_ascii_lowercase().as_str() {
        "" | "b" => 1,
        "kib" | "k" => 1 << 10,
        "mib" | "m" => 1 << 20,
        "gib" | "g" => 1 << 30,
        "tib" | "t" => 1 << 40,
        _ => {
            return Err(format!(
                "`{s}` is not a size (write e.g. 2GiB, 512MiB or 1000000)"
            ))
        }
    };
    digits
        .parse::<u64>()
        .ok()
        .and_then(|d| d.checked_mul(scale))
        .ok_or_else(|| format!("`{s}` is not a size (write e.g. 2GiB, 512MiB or 1000000)"))
}

#[derive(Args)]
struct DecideArgs {
    #[command(flatten)]
    source: Source,
    /// Members voting yes: names, groups, blocs, ranges such as `rep1..rep218`, or `all`,
    /// separated by commas (quote a name that holds one: `"Smith, J."`).
    #[arg(long, value_name = "NAMES")]
    yes: Vec<String>,
    /// Members voting no (same forms; applied after --yes, so `--yes all --no harbor` works).
    #[arg(long, value_name = "NAMES")]
    no: Vec<String>,
    /// Members present but abstaining (same forms; applied after --no).
    #[arg(long, value_name = "NAMES")]
    abstain: Vec<String>,
    /// A record of many votes (CSV or JSON): `motion,<member>,...` with one row per
    /// motion, or `motion,member,vote`; decides every motion.
    #[arg(long, value_name = "FILE", conflicts_with_all = ["yes", "no", "abstain", "rest"])]
    ballots: Option<PathBuf>,
    /// With --ballots: a second rule (a rule name of the same file, or another rule
    /// file with the same members) that must decide every recorded motion the same.
    #[arg(long, value_name = "RULE|FILE", requires = "ballots")]
    against: Option<String>,
    /// With --against FILE: which rule of that file (default: its first).
    #[arg(long, value_name = "NAME", requires = "against")]
    against_rule: Option<String>,
    /// How everyone not listed votes (default: absent, or no when only --yes is given).
    #[arg(long, value_enum)]
    rest: Option<Rest>,
    /// Output format.
    #[arg(long, value_enum, default_value_t = DecideFormat::Text)]
    format: DecideFormat,
}

/// How members not named on the command line vote.
#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
enum Rest {
    No,
    Abstain,
    Absent,
}

#[derive(Args)]
struct CompileArgs {
    #[command(flatten)]
    source: Source,
    /// Where to write the image (default: FILE with the extension `.RULE.img`).
    #[arg(short, long, value_name = "FILE.img")]
    output: Option<PathBuf>,
}

#[derive(Args)]
struct InspectArgs {
    /// The image file.
    image: PathBuf,
}

#[derive(Args)]
struct CheckArgs {
    /// Rule files (`-` for standard input).
    files: Vec<PathBuf>,
    /// Check the weighted game `[q; w1, ..., wn]` instead of a file.
    #[arg(long, value_name = "[q; w...]")]
    game: Option<String>,
    /// Most elementary steps the dummy and properness checks may take per rule.
    #[arg(long, value_name = "STEPS", value_parser = parse_steps, default_value = "5e10")]
    budget: u128,
}

#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
enum Format {
    Text,
    Json,
    Csv,
}

#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
enum DecideFormat {
    Text,
    Json,
}

#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
enum EngineChoice {
    Auto,
    Enumerate,
    Profile,
    Dense,
    Diagram,
}

impl EngineChoice {
    fn engine(self) -> Option<clout::Engine> {
        let name = match self {
            EngineChoice::Auto => return None,
            EngineChoice::Enumerate => "enumerate",
            EngineChoice::Profile => "profile",
            EngineChoice::Dense => "dense",
            EngineChoice::Diagram => "diagram",
        };
        clout::Engine::ALL.into_iter().find(|e| e.name() == name)
    }
}

/// A step count such as `50000000000`, `50_000_000_000` or `5e10`.
fn parse_steps(s: &str) -> Result<u128, String> {
    let s = s.replace('_', "");
    if let Ok(v) = s.parse::<u128>() {
        return Ok(v);
    }
    let bad = || format!("`{s}` is not a step count (write e.g. 5e10 or 50000000000)");
    let (mantissa, exponent) = s.split_once(['e', 'E']).ok_or_else(bad)?;
    let m: u128 = mantissa.parse().map_err(|_| bad())?;
    let e: u32 = exponent.parse().map_err(|_| bad())?;
    10u128
        .checked_pow(e)
        .and_then(|p| p.checked_mul(m))
        .ok_or_else(bad)
}

/// Why a command failed, and its exit code.
pub struct Failure {
    message: String,
    code: u8,
}

impl Failure {
    /// Bad input (exit 2), shown as `error: MESSAGE`.
    fn input(message: String) -> Self {
        Failure {
            message: format!("error: {message}\n"),
            code: 2,
        }
    }

    /// Bad input (exit 2) whose message is already rendered.
    fn rendered(message: String) -> Self {
        Failure { message, code: 2 }
    }
}

/// Writes a file the user asked for (`--svg`, `--html`, `-o`).
fn write_file(path: &std::path::Path, contents: &[u8]) -> Result<(), Failure> {
    std::fs::write(path, contents).map_err(|e| {
        Failure::input(format!(
            "cannot write `{}`: {e}\n  = hint: check that its folder exists and can be written",
            path.display()
        ))
    })
}

impl From<clout::Failure> for Failure {
    fn from(f: clout::Failure) -> Self {
        Failure::input(f.to_string())
    }
}

/// What a command produced: stdout text, stderr text and the exit code.
pub struct Outcome {
    stdout: String,
    stderr: String,
    code: u8,
}

impl Outcome {
    fn ok(stdout: String) -> Self {
        Outcome {
            stdout,
            stderr: String::new(),
            code: 0,
        }
    }
}

/// Parses the arguments, runs the command and returns its exit code.
fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            // Help and version go to stdout with 0; usage errors to stderr with 2.
            let _ = e.print();
            return ExitCode::from(if e.use_stderr() { 2 } else { 0 });
        }
    };
    let outcome = match cli.command {
        Command::Report(a) => report::run(&a),
        Command::Decide(a) => decide::run(&a),
        Command::Check(a) => Ok(check::run(&a)),
        Command::Demo => Ok(Outcome::ok(input::DEMO.to_string())),
        Command::Compile(a) => image::compile(&a),
        Command::Inspect(a) => image::inspect(&a),
        Command::Simplify(a) => simplify::run(&a),
        Command::Compare(a) => compare::run(&a),
        Command::Sweep(a) => sweep::run(&a),
        Command::Fit(a) => fit::run(&a),
        Command::Coalitions(a) => coalitions::run(&a),
        Command::Order(a) => order::run(&a),
    };
    let outcome = outcome.unwrap_or_else(|f| Outcome {
        stdout: String::new(),
        stderr: f.message,
        code: f.code,
    });
    // A closed pipe (`clout report | head`) is not an error of ours.
    let _ = std::io::stdout().lock().write_all(outcome.stdout.as_bytes());
    let _ = std::io::stdout().lock().flush();
    let _ = std::io::stderr().lock().write_all(outcome.stderr.as_bytes());
    ExitCode::from(outcome.code)
}
