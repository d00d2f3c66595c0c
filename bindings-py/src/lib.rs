//! The extension module `clout._clout` behind the Python package `clout`
//! (the package's `__init__.py` re-exports it; `_errors.py` holds the
//! exception classes).
//!
//! Every answer is the library's data (`clout::report::Report`,
//! `clout::decision::Decision`, `clout::drafting::*`) serialized by serde
//! to JSON and read back by Python's `json.loads`: the dicts are exactly
//! what the `clout` command prints with `--format json`, by construction.
//!
//! Computations run with the GIL released (`Python::detach`). Ctrl-C is
//! honoured between steps: between the report's plan and its count, and
//! before every exact analysis of the drafting answers (each sweep point,
//! each side of a comparison), through a [`Watch`] that re-attaches to
//! check for signals. One running engine step is not interrupted.
//!
//! Rule text errors raise `clout.RuleError` (line, column, message, hint,
//! the rendered text, every diagnostic); refusals (`clout::Failure`)
//! raise `clout.Refused`, or its subclass `clout.LimitError` when a work or
//! memory limit would be passed. A panic raises pyo3's `PanicException`;
//! none crashes the interpreter.

use clout::decision::{self, NamedBallot, Rest};
use clout::drafting::{
    self, CoalitionKind, CoalitionOptions, CompareOptions, FitOptions, Matching, SimplifyOptions,
    SweepOptions, Targets, Watch,
};
use clout::language::diagnostic::Severity;
use clout::language::syntax::{decode, MAX_SOURCE_LEN};
use clout::language::Tables;
use clout::report::{self, Options};
use clout::tables::Folder;
use clout::toolkit::sweep::Level;
use clout::{CompiledRule, Diagnostic, Failure, FailureKind};
use pyo3::prelude::*;
use pyo3::types::{PyBytes, PyString};

/// A compiled rule file: its members, rules and every analysis of them.
#[pyclass(module = "clout", name = "RuleFile", frozen)]
struct RuleFile {
    /// Shown in error messages: the path, `<string>` or `game`.
    name: String,
    source: String,
    file: clout::RuleFile,
}

/// A Watch that checks for Ctrl-C (and other signals) before every step.
#[derive(Default)]
struct Interruptible {
    stop: Option<PyErr>,
}

impl Watch for Interruptible {
    fn step<T: Send>(&mut self, label: &str, work: impl FnOnce() -> T + Send) -> Result<T, Failure> {
        if let Err(e) = Python::attach(|py| py.check_signals()) {
            self.stop = Some(e);
            return Err(Failure {
                kind: FailureKind::Interrupted,
                message: format!("interrupted before {label}"),
                hint: None,
            });
        }
        Ok(work())
    }
}

/// Runs `work` without the GIL, with an [`Interruptible`] watch; a signal's
/// exception (KeyboardInterrupt) wins over the failure it caused.
fn detached<T: Send>(
    py: Python<'_>,
    work: impl FnOnce(&mut Interruptible) -> Result<T, Failure> + Send,
) -> PyResult<T> {
    let mut watch = Interruptible::default();
    let result = py.detach(|| work(&mut watch));
    result.map_err(|f| watch.stop.take().unwrap_or_else(|| refused(py, f)))
}

/// The library's answer as Python objects: serde's JSON read by `json.loads`.
fn to_python<'py>(py: Python<'py>, value: &impl serde::Serialize) -> PyResult<Bound<'py, PyAny>> {
    let text =
        serde_json::to_string(value).map_err(|e| pyo3::exceptions::PyRuntimeError::new_err(e.to_string()))?;
    py.import("json")?.call_method1("loads", (text,))
}

/// The exception class `name` of `clout._errors`.
fn error_class<'py>(py: Python<'py>, name: &str) -> PyResult<Bound<'py, PyAny>> {
    py.import("clout._errors")?.getattr(name)
}

/// The library's hints name the command line's options; Python users pass
/// keyword arguments instead.
const OPTION_NAMES: [(&str, &str); 7] = [
    ("--budget STEPS", "budget=STEPS"),
    ("--memory BYTES", "memory=BYTES"),
    ("leave out --exact", "leave out exact=True"),
    ("leave out --engine", "leave out engine="),
    ("--by position", "by=\"position\""),
    ("--attr NAME", "attribute=\"NAME\""),
    ("--condition N", "condition=N"),
];

/// A refusal as `clout.Refused` or `clout.LimitError`.
fn refused(py: Python<'_>, mut f: Failure) -> PyErr {
    if let Some(hint) = f.hint.as_mut() {
        for (cli, python) in OPTION_NAMES {
            *hint = hint.replace(cli, python);
        }
    }
    let (class, kind) = match f.kind {
        FailureKind::Limit => ("LimitError", "limit"),
        FailureKind::Unsuitable => ("Refused", "unsuitable"),
        FailureKind::Interrupted => ("Refused", "interrupted"),
        _ => ("Refused", "input"),
    };
    match error_class(py, class).and_then(|c| c.call1((f.message.clone(), f.hint.clone(), kind))) {
        Ok(e) => PyErr::from_value(e),
        Err(e) => e,
    }
}

/// Bad Python arguments: `clout.Refused` of kind "input", with a hint.
fn bad_argument(py: Python<'_>, message: String, hint: &str) -> PyErr {
    refused(py, Failure::input(message).with_hint(hint))
}

/// Errors in rule text as `clout.RuleError`, rendered like the command line's.
fn rule_error(py: Python<'_>, name: &str, source: &str, errors: &[Diagnostic]) -> PyErr {
    let n = errors.len();
    let mut text = clout::language::render_all(errors, name, source);
    text.push_str(&format!("{n} error{} in {name}\n", if n == 1 { "" } else { "s" }));
    let diagnostics: Vec<(usize, usize, String, Option<String>, &str)> = errors
        .iter()
        .map(|d| {
            let (line, column) = d.line_col(source);
            let severity = match d.severity {
                Severity::Error => "error",
                Severity::Warning => "warning",
                Severity::Note => "note",
            };
            (line, column, d.message.clone(), d.hint.clone(), severity)
        })
        .collect();
    match error_class(py, "RuleError").and_then(|c| c.call1((text, diagnostics))) {
        Ok(e) => PyErr::from_value(e),
        Err(e) => e,
    }
}

fn compile(
    py: Python<'_>,
    name: String,
    source: String,
    tables: &mut (dyn Tables + Send),
) -> PyResult<RuleFile> {
    match py.detach(|| clout::language::compile_with(&source, tables)) {
        Ok(file) => Ok(RuleFile { name, source, file }),
        Err(errors) => Err(rule_error(py, &name, &source, &errors)),
    }
}

/// Compiles rule text (the clout rule language, or `[q; w1, ..., wn]`).
///
/// `name` is shown in error messages. `tables` maps each table a
/// `members NAME from "FILE"` declaration reads, by the path written in the
/// text, to its contents (CSV or JSON text). Raises `RuleError` with the
/// line and column of every error.
#[pyfunction]
#[pyo3(signature = (text, name = "<string>", tables = None))]
fn parse(
    py: Python<'_>,
    text: String,
    name: &str,
    tables: Option<std::collections::HashMap<String, String>>,
) -> PyResult<RuleFile> {
    if text.len() > MAX_SOURCE_LEN {
        if let Err(d) = decode(text.as_bytes()) {
            return Err(rule_error(py, name, &text, &[d]));
        }
    }
    let mut tables = tables.unwrap_or_default();
    compile(py, name.to_string(), text, &mut tables)
}

/// Reads and compiles a rule file (at most 8 MiB of UTF-8 text); the
/// tables it reads are read from its folder, as the command line does.
///
/// Raises `OSError` when the file cannot be read and `RuleError` when it
/// is not valid rule text or a table cannot be read.
#[pyfunction]
fn load(py: Python<'_>, path: std::path::PathBuf) -> PyResult<RuleFile> {
    let name = path.display().to_string();
    let bytes = py.detach(|| -> std::io::Result<Vec<u8>> {
        let mut bytes = Vec::new();
        std::io::Read::read_to_end(
            &mut std::io::Read::take(std::fs::File::open(&path)?, MAX_SOURCE_LEN as u64 + 1),
            &mut bytes,
        )?;
        Ok(bytes)
    })?;
    match decode(&bytes) {
        Ok(text) => compile(py, name, text.to_string(), &mut Folder::beside(&path)),
        Err(d) => Err(rule_error(py, &name, &String::from_utf8_lossy(&bytes), &[d])),
    }
}

/// The weighted game `[quota; w1, ..., wn]`: members `p1` .. `pn`, attribute
/// `weight`, rule `game`.
#[pyfunction]
fn game(py: Python<'_>, quota: i128, weights: Vec<i128>) -> PyResult<RuleFile> {
    let check = |what: String, v: i128| -> PyResult<String> {
        if (0..=i128::from(u64::MAX)).contains(&v) {
            Ok(v.to_string())
        } else {
            Err(bad_argument(
                py,
                format!("{what} = {v} is not a weight"),
                "quota and weights are integers from 0 to 2^64 - 1",
            ))
        }
    };
    let mut parts = Vec::with_capacity(weights.len());
    for (i, &w) in weights.iter().enumerate() {
        parts.push(check(format!("weights[{i}]"), w)?);
    }
    let text = format!("[{}; {}]", check("quota".to_string(), quota)?, parts.join(", "));
    compile(py, "game".to_string(), text, &mut clout::language::NoTables)
}

/// Integer weights and a quota whose normalized Banzhaf index is closest to
/// `targets` (member name to target share of power, or to population with
/// `populations=True`, for Penrose's square-root law). Deterministic: the
/// same input gives the same answer on every machine.
#[pyfunction]
#[pyo3(signature = (targets, *, populations = false, seconds = 10.0, max_total = 10_000))]
fn fit<'py>(
    py: Python<'py>,
    targets: &Bound<'py, PyAny>,
    populations: bool,
    seconds: f64,
    max_total: u64,
) -> PyResult<Bound<'py, PyAny>> {
    let mut goal = Targets {
        names: Vec::new(),
        values: Vec::new(),
        populations,
    };
    for item in targets.call_method0("items")?.try_iter()? {
        let (name, value): (String, f64) = item?.extract()?;
        goal.names.push(name);
        goal.values.push(value);
    }
    let options = FitOptions { seconds, max_total };
    let found = detached(py, |w| drafting::fit(&goal, &options, w))?;
    to_python(py, &found)
}

/// A sweep bound: an integer quota or a share such as "62.5%".
fn level(py: Python<'_>, what: &str, value: &Bound<'_, PyAny>) -> PyResult<Level> {
    if let Ok(q) = value.extract::<u64>() {
        return Ok(Level::Amount(q));
    }
    let hint = "give an integer quota such as 58 or a share as text such as \"50%\"";
    if !value.is_instance_of::<PyString>() {
        return Err(bad_argument(py, format!("{what}: {value} is not a quota"), hint));
    }
    let text: String = value.extract()?;
    Level::parse(&text).map_err(|e| bad_argument(py, format!("{what}: {e}"), hint))
}

fn one_of<T: Copy>(py: Python<'_>, what: &str, value: &str, choices: &[(&str, T)]) -> PyResult<T> {
    choices
        .iter()
        .find(|(n, _)| *n == value)
        .map(|&(_, v)| v)
        .ok_or_else(|| {
            let names: Vec<&str> = choices.iter().map(|(n, _)| *n).collect();
            bad_argument(
                py,
                format!("{what}: unknown value `{value}`"),
                &format!("one of {}", names.join(", ")),
            )
        })
}

#[pymethods]
impl RuleFile {
    /// Rule names, the first being the default.
    #[getter]
    fn rules(&self) -> Vec<String> {
        self.file.rules.iter().map(|r| r.name.clone()).collect()
    }

    /// Member names in declaration order.
    #[getter]
    fn members(&self) -> Vec<String> {
        self.file.members.iter().map(|m| m.name.clone()).collect()
    }

    /// Declared weight attributes.
    #[getter]
    fn attributes(&self) -> Vec<String> {
        self.file.attributes.clone()
    }

    /// The `title`, if any.
    #[getter]
    fn title(&self) -> Option<String> {
        self.file.title.clone()
    }

    /// The source text.
    #[getter]
    fn source(&self) -> &str {
        &self.source
    }

    /// The name shown in messages (the path, `<string>` or `game`).
    #[getter]
    fn name(&self) -> &str {
        &self.name
    }

    fn __repr__(&self) -> String {
        format!(
            "<clout.RuleFile {:?}: {} members, rules {}>",
            self.name,
            self.file.members.len(),
            self.rules().join(", ")
        )
    }

    /// Every member's swings and power indices and the rule's properties:
    /// the dict `clout report --format json` prints.
    #[pyo3(signature = (rule = None, *, engine = None, exact = false, budget = None, memory = None,
                        tolerance = 0.001, seed = 1, ternary = false, attendance = None))]
    #[allow(clippy::too_many_arguments)] // Python keyword arguments
    fn report<'py>(
        &self,
        py: Python<'py>,
        rule: Option<&str>,
        engine: Option<&str>,
        exact: bool,
        budget: Option<u128>,
        memory: Option<u64>,
        tolerance: f64,
        seed: u64,
        ternary: bool,
        attendance: Option<f64>,
    ) -> PyResult<Bound<'py, PyAny>> {
        let r = self.rule(py, rule)?;
        let defaults = Options::default();
        let engine = match engine {
            None | Some("auto") => None,
            Some(name) => {
                let engines: Vec<(&str, clout::Engine)> =
                    clout::Engine::ALL.iter().map(|e| (e.name(), *e)).collect();
                Some(one_of(py, "engine", name, &engines)?)
            }
        };
        let options = Options {
            engine,
            budget: budget.unwrap_or(defaults.budget),
            memory: memory.unwrap_or(defaults.memory),
            exact,
            tolerance,
            seed,
            ternary,
            attendance,
        };
        let method = detached(py, |_| report::plan(r, &options))?;
        py.check_signals()?;
        let answer = detached(py, |_| report::build(&self.file, r, &method, &options))?;
        to_python(py, &answer)
    }

    /// The outcome of one vote: the dict `clout decide --format json` prints.
    ///
    /// `yes`, `no` and `abstain` list members, groups, blocs, ranges such as
    /// "rep1..rep218", or "all" (applied in that order, later lists winning);
    /// `rest` ("no", "abstain" or "absent") says how everyone else votes
    /// (default: absent, or no when only `yes` is given).
    #[pyo3(signature = (yes = Vec::new(), no = Vec::new(), abstain = Vec::new(), *, rest = None, rule = None))]
    fn decide<'py>(
        &self,
        py: Python<'py>,
        yes: Vec<String>,
        no: Vec<String>,
        abstain: Vec<String>,
        rest: Option<&str>,
        rule: Option<&str>,
    ) -> PyResult<Bound<'py, PyAny>> {
        let r = self.rule(py, rule)?;
        let rest = match rest {
            None => None,
            Some(v) => Some(one_of(
                py,
                "rest",
                v,
                &[
                    ("no", Rest::No),
                    ("abstain", Rest::Abstain),
                    ("absent", Rest::Absent),
                ],
            )?),
        };
        let ballot = NamedBallot {
            yes,
            no,
            abstain,
            rest,
        };
        let answer = detached(py, |_| {
            let votes = decision::votes(&self.file, &ballot)?;
            decision::decide(&self.file, r, &votes)
        })?;
        to_python(py, &answer)
    }

    /// Dummies, and whether the rule is one weighted vote (with integer
    /// weights of least total) or a proof that it is not: the dict
    /// `clout simplify --format json` prints.
    #[pyo3(signature = (rule = None, *, budget = None))]
    fn simplify<'py>(
        &self,
        py: Python<'py>,
        rule: Option<&str>,
        budget: Option<u128>,
    ) -> PyResult<Bound<'py, PyAny>> {
        let r = self.rule(py, rule)?;
        let options = SimplifyOptions {
            budget: budget.unwrap_or(drafting::BUDGET),
        };
        let answer = detached(py, |w| drafting::simplify(&self.file, r, &options, w))?;
        to_python(py, &answer)
    }

    /// Whether this file's rule and `other`'s pass the same coalitions; if
    /// not, a smallest coalition where they differ and each member's change
    /// in power: the dict `clout compare --format json` prints. `by` is
    /// "name" or "position" (default: by name when both name the same members).
    #[pyo3(signature = (other, rule = None, other_rule = None, *, by = None, budget = None))]
    fn compare<'py>(
        &self,
        py: Python<'py>,
        other: &RuleFile,
        rule: Option<&str>,
        other_rule: Option<&str>,
        by: Option<&str>,
        budget: Option<u128>,
    ) -> PyResult<Bound<'py, PyAny>> {
        let ra = self.rule(py, rule)?;
        let rb = other.rule(py, other_rule)?;
        let by = match by {
            None => None,
            Some(v) => Some(one_of(
                py,
                "by",
                v,
                &[("name", Matching::Name), ("position", Matching::Position)],
            )?),
        };
        let options = CompareOptions {
            by,
            budget: budget.unwrap_or(drafting::BUDGET),
        };
        let answer = detached(py, |w| {
            drafting::compare(&self.file, ra, &other.file, rb, &options, w)
        })?;
        to_python(py, &answer)
    }

    /// Both power indices and the probability of passage as the quota of one
    /// attribute's conditions (or of condition number `condition`, 1 for the
    /// first) moves from `start` to `stop` by `step` (integer quotas, or
    /// shares such as "62.5%"): the dict `clout sweep --format json` prints.
    /// Ctrl-C stops it between two points.
    #[pyo3(signature = (rule = None, *, attribute = None, condition = None, start = None, stop = None,
                        step = None, budget = None))]
    #[allow(clippy::too_many_arguments)] // Python keyword arguments
    fn sweep<'py>(
        &self,
        py: Python<'py>,
        rule: Option<&str>,
        attribute: Option<String>,
        condition: Option<usize>,
        start: Option<&Bound<'py, PyAny>>,
        stop: Option<&Bound<'py, PyAny>>,
        step: Option<&Bound<'py, PyAny>>,
        budget: Option<u128>,
    ) -> PyResult<Bound<'py, PyAny>> {
        let r = self.rule(py, rule)?;
        let defaults = SweepOptions::default();
        let pick =
            |what, v: Option<&Bound<'py, PyAny>>, default| v.map_or(Ok(default), |v| level(py, what, v));
        let options = SweepOptions {
            attribute,
            condition,
            from: pick("start", start, defaults.from)?,
            to: pick("stop", stop, defaults.to)?,
            step: pick("step", step, defaults.step)?,
            budget: budget.unwrap_or(defaults.budget),
        };
        let answer = detached(py, |w| drafting::sweep(&self.file, r, &options, w))?;
        to_python(py, &answer)
    }

    /// The minimal winning (`kind="minimal_winning"`) or minimal blocking
    /// (`kind="minimal_blocking"`) coalitions, with their exact number, each
    /// list up to `limit`: the dict `clout coalitions --format json` prints.
    #[pyo3(signature = (rule = None, *, kind = "minimal_winning", limit = 50))]
    fn coalitions<'py>(
        &self,
        py: Python<'py>,
        rule: Option<&str>,
        kind: &str,
        limit: usize,
    ) -> PyResult<Bound<'py, PyAny>> {
        let r = self.rule(py, rule)?;
        let kind = one_of(
            py,
            "kind",
            kind,
            &[
                ("minimal_winning", CoalitionKind::MinimalWinning),
                ("minimal_blocking", CoalitionKind::MinimalBlocking),
            ],
        )?;
        let options = CoalitionOptions { kind, limit };
        let answer = detached(py, |w| drafting::coalitions(&self.file, r, &options, w))?;
        to_python(py, &answer)
    }

    /// The members ordered by influence (Isbell's desirability relation),
    /// classes of symmetric members and witnesses of incomparable pairs: the
    /// dict `clout order --format json` prints.
    #[pyo3(signature = (rule = None))]
    fn order<'py>(&self, py: Python<'py>, rule: Option<&str>) -> PyResult<Bound<'py, PyAny>> {
        let r = self.rule(py, rule)?;
        let answer = detached(py, |w| drafting::order(&self.file, r, w))?;
        to_python(py, &answer)
    }

    /// The rule compiled to a binary image for devices and the C ABI (the
    /// bytes `clout compile` writes), checked by loading it back.
    #[pyo3(signature = (rule = None))]
    fn image<'py>(&self, py: Python<'py>, rule: Option<&str>) -> PyResult<Bound<'py, PyBytes>> {
        let r = self.rule(py, rule)?;
        let bytes = detached(py, |_| image(&self.file, r))?;
        Ok(PyBytes::new(py, &bytes))
    }
}

impl RuleFile {
    /// The rule `name`, or the first.
    fn rule(&self, py: Python<'_>, name: Option<&str>) -> PyResult<&CompiledRule> {
        drafting::rule(&self.file, name).map_err(|f| refused(py, f))
    }
}

/// The image of a rule with its names, loaded back and compared before it
/// is returned (what `clout compile` writes).
fn image(file: &clout::RuleFile, rule: &CompiledRule) -> Result<Vec<u8>, Failure> {
    clout::images::named_image(file, rule)
}

/// Exact voting power, decisions and drafting tools for weighted, compound
/// voting rules.
#[pymodule]
fn _clout(m: &Bound<'_, PyModule>) -> PyResult<()> {
    m.add_class::<RuleFile>()?;
    m.add_function(wrap_pyfunction!(parse, m)?)?;
    m.add_function(wrap_pyfunction!(load, m)?)?;
    m.add_function(wrap_pyfunction!(game, m)?)?;
    m.add_function(wrap_pyfunction!(fit, m)?)?;
    m.add("MODEL", report::MODEL)?;
    m.add("CAUTION", report::CAUTION)?;
    Ok(())
}
