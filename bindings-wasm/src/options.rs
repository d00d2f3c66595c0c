//! Options objects from JavaScript, read strictly: every key must be known
//! and every value of the right type, or the call throws with the key's name
//! and a hint. A misspelt `budgte` must not silently run with the default.
//!
//! Objects arrive as JSON text (`JSON.stringify` on the JavaScript side), so
//! the readers work on `serde_json` values and are tested on the host.

use clout::decision::{NamedBallot, Rest};
use clout::drafting::{
    CoalitionKind, CoalitionOptions, CompareOptions, FitOptions, Matching, SimplifyOptions, SweepOptions,
    Targets, BUDGET,
};
use clout::report::Options;
use clout::toolkit::sweep::Level;
use clout::{Engine, Failure};
use clout_dsl::diagnostic::closest;
use serde_json::{Map, Value};

/// The keys of one options object, taken one by one; [`Fields::finish`]
/// refuses whatever is left.
pub struct Fields {
    /// Which call the object was given to, for messages (`report`).
    call: &'static str,
    map: Map<String, Value>,
    known: Vec<&'static str>,
}

impl Fields {
    /// Reads `value` (an object, or null/undefined for "no options").
    pub fn of(call: &'static str, value: Value) -> Result<Fields, Failure> {
        let map = match value {
            Value::Null => Map::new(),
            Value::Object(m) => m,
            other => {
                return Err(Failure::input(format!(
                    "{call}: options must be an object, not {}",
                    kind(&other)
                ))
                .with_hint(format!("e.g. {call}({{ rule: \"budget\" }})")))
            }
        };
        Ok(Fields {
            call,
            map,
            known: Vec::new(),
        })
    }

    fn take(&mut self, key: &'static str) -> Option<Value> {
        self.known.push(key);
        self.map.remove(key).filter(|v| !v.is_null())
    }

    fn wrong(&self, key: &str, wanted: &str, got: &Value) -> Failure {
        Failure::input(format!(
            "{}: option `{key}` must be {wanted}, not {}",
            self.call,
            shown(got)
        ))
    }

    /// A string, if given.
    pub fn string(&mut self, key: &'static str) -> Result<Option<String>, Failure> {
        match self.take(key) {
            None => Ok(None),
            Some(Value::String(s)) => Ok(Some(s)),
            Some(v) => Err(self.wrong(key, "a string", &v)),
        }
    }

    /// A boolean, if given.
    pub fn boolean(&mut self, key: &'static str) -> Result<Option<bool>, Failure> {
        match self.take(key) {
            None => Ok(None),
            Some(Value::Bool(b)) => Ok(Some(b)),
            Some(v) => Err(self.wrong(key, "true or false", &v)),
        }
    }

    /// A finite number, if given.
    pub fn number(&mut self, key: &'static str) -> Result<Option<f64>, Failure> {
        match self.take(key) {
            None => Ok(None),
            Some(v) => match v.as_f64() {
                Some(x) if x.is_finite() => Ok(Some(x)),
                _ => Err(self.wrong(key, "a number", &v)),
            },
        }
    }

    /// A non-negative whole number, if given. JavaScript numbers are exact
    /// integers up to 2^53; a larger one is refused rather than rounded.
    pub fn whole(&mut self, key: &'static str) -> Result<Option<u64>, Failure> {
        const EXACT: f64 = 9_007_199_254_740_992.0; // 2^53
        match self.take(key) {
            None => Ok(None),
            Some(v) => match (v.as_u64(), v.as_f64()) {
                (Some(n), _) => Ok(Some(n)),
                (None, Some(x)) if x >= 0.0 && x.fract() == 0.0 && x <= EXACT => Ok(Some(x as u64)),
                _ => Err(self.wrong(key, "a whole number from 0 to 2^53", &v)),
            },
        }
    }

    /// Names: one string or an array of strings.
    pub fn names(&mut self, key: &'static str) -> Result<Vec<String>, Failure> {
        match self.take(key) {
            None => Ok(Vec::new()),
            Some(Value::String(s)) => Ok(vec![s]),
            Some(Value::Array(items)) => items
                .into_iter()
                .map(|v| match v {
                    Value::String(s) => Ok(s),
                    other => Err(self.wrong(key, "an array of member names", &other)),
                })
                .collect(),
            Some(v) => Err(self.wrong(key, "a member name or an array of names", &v)),
        }
    }

    /// One of the named `choices`, if given.
    pub fn choice<T: Copy>(
        &mut self,
        key: &'static str,
        choices: &[(&str, T)],
    ) -> Result<Option<T>, Failure> {
        let Some(name) = self.string(key)? else {
            return Ok(None);
        };
        let names: Vec<&str> = choices.iter().map(|(n, _)| *n).collect();
        choices
            .iter()
            .find(|(n, _)| *n == name)
            .map(|&(_, v)| Some(v))
            .ok_or_else(|| {
                let hint = match closest(&name, names.iter().copied()) {
                    Some(c) => format!("did you mean `{c}`?"),
                    None => format!("one of {}", names.join(", ")),
                };
                Failure::input(format!("{}: unknown {key} `{name}`", self.call)).with_hint(hint)
            })
    }

    /// A quota: a whole number, or a share as text such as "62.5%".
    pub fn level(&mut self, key: &'static str, default: Level) -> Result<Level, Failure> {
        let hint = "give a whole-number quota such as 58 or a share as text such as \"50%\"";
        match self.take(key) {
            None => Ok(default),
            Some(Value::String(text)) => Level::parse(&text)
                .map_err(|e| Failure::input(format!("{}: {key}: {e}", self.call)).with_hint(hint)),
            Some(v) => match v.as_u64() {
                Some(q) => Ok(Level::Amount(q)),
                None => Err(self
                    .wrong(key, "a whole-number quota or a share such as \"50%\"", &v)
                    .with_hint(hint)),
            },
        }
    }

    /// The work budget of each exact analysis (default: the command line's).
    pub fn budget(&mut self) -> Result<u128, Failure> {
        Ok(self.whole("budget")?.map_or(BUDGET, u128::from))
    }

    /// Refuses keys nobody took, naming the closest known one.
    pub fn finish(self) -> Result<(), Failure> {
        let Some(key) = self.map.keys().next() else {
            return Ok(());
        };
        let hint = match closest(key, self.known.iter().copied()) {
            Some(c) => format!("did you mean `{c}`?"),
            None => format!("{} takes: {}", self.call, self.known.join(", ")),
        };
        Err(Failure::input(format!("{}: unknown option `{key}`", self.call)).with_hint(hint))
    }
}

/// What a report call asks for: which rule, and the library's options.
pub fn report(value: Value) -> Result<(Option<String>, Options), Failure> {
    let mut f = Fields::of("report", value)?;
    let rule = f.string("rule")?;
    let defaults = Options::default();
    let engines: Vec<(&str, Option<Engine>)> = std::iter::once(("auto", None))
        .chain(Engine::ALL.iter().map(|e| (e.name(), Some(*e))))
        .collect();
    let engine = f.choice("engine", &engines)?.flatten();
    let options = Options {
        engine,
        budget: f.budget()?,
        memory: f.whole("memory")?.unwrap_or(defaults.memory),
        exact: f.boolean("exact")?.unwrap_or(defaults.exact),
        tolerance: f.number("tolerance")?.unwrap_or(defaults.tolerance),
        seed: f.whole("seed")?.unwrap_or(defaults.seed),
        ternary: f.boolean("ternary")?.unwrap_or(defaults.ternary),
        attendance: f.number("attendance")?,
        model: f
            .number("turnout")?
            .map(clout::report::model::VotingModel::Turnout),
    };
    f.finish()?;
    Ok((rule, options))
}

/// Only a rule name (image, interchangeable members, weight shares).
pub fn rule_only(call: &'static str, value: Value) -> Result<Option<String>, Failure> {
    let mut f = Fields::of(call, value)?;
    let rule = f.string("rule")?;
    f.finish()?;
    Ok(rule)
}

/// A ballot: `{ rule, yes, no, abstain, rest }`, names as in `clout decide`.
pub fn ballot(value: Value) -> Result<(Option<String>, NamedBallot), Failure> {
    let mut f = Fields::of("decide", value)?;
    let rule = f.string("rule")?;
    let yes = f.names("yes")?;
    let no = f.names("no")?;
    let abstain = f.names("abstain")?;
    let rest = f.choice(
        "rest",
        &[
            ("no", Rest::No),
            ("abstain", Rest::Abstain),
            ("absent", Rest::Absent),
        ],
    )?;
    f.finish()?;
    Ok((
        rule,
        NamedBallot {
            yes,
            no,
            abstain,
            rest,
        },
    ))
}

/// `simplify({ rule, budget })`.
pub fn simplify(value: Value) -> Result<(Option<String>, SimplifyOptions), Failure> {
    let mut f = Fields::of("simplify", value)?;
    let rule = f.string("rule")?;
    let options = SimplifyOptions { budget: f.budget()? };
    f.finish()?;
    Ok((rule, options))
}

/// `compare(other, { rule, other_rule, by, budget })`.
pub fn compare(value: Value) -> Result<(Option<String>, Option<String>, CompareOptions), Failure> {
    let mut f = Fields::of("compare", value)?;
    let rule = f.string("rule")?;
    let other_rule = f.string("other_rule")?;
    let options = CompareOptions {
        by: f.choice(
            "by",
            &[("name", Matching::Name), ("position", Matching::Position)],
        )?,
        budget: f.budget()?,
    };
    f.finish()?;
    Ok((rule, other_rule, options))
}

/// `sweep({ rule, attribute, condition, start, stop, step, budget })`.
pub fn sweep(value: Value) -> Result<(Option<String>, SweepOptions), Failure> {
    let mut f = Fields::of("sweep", value)?;
    let rule = f.string("rule")?;
    let defaults = SweepOptions::default();
    let options = SweepOptions {
        attribute: f.string("attribute")?,
        condition: f
            .whole("condition")?
            .map(|c| usize::try_from(c).unwrap_or(usize::MAX)),
        from: f.level("start", defaults.from)?,
        to: f.level("stop", defaults.to)?,
        step: f.level("step", defaults.step)?,
        budget: f.budget()?,
    };
    f.finish()?;
    Ok((rule, options))
}

/// `coalitions({ rule, kind, limit })`.
pub fn coalitions(value: Value) -> Result<(Option<String>, CoalitionOptions), Failure> {
    let mut f = Fields::of("coalitions", value)?;
    let rule = f.string("rule")?;
    let defaults = CoalitionOptions::default();
    let kinds = [
        ("minimal_winning", CoalitionKind::MinimalWinning),
        ("minimal_blocking", CoalitionKind::MinimalBlocking),
    ];
    let options = CoalitionOptions {
        kind: f.choice("kind", &kinds)?.unwrap_or(defaults.kind),
        limit: f
            .whole("limit")?
            .map_or(defaults.limit, |l| usize::try_from(l).unwrap_or(usize::MAX)),
    };
    f.finish()?;
    Ok((rule, options))
}

/// `fit({ targets: [[name, value], ...], populations, seconds, max_total })`.
/// Targets are pairs in member order (an object's keys would lose their order).
pub fn fit(value: Value) -> Result<(Targets, FitOptions), Failure> {
    let mut f = Fields::of("fit", value)?;
    let pairs = f.take("targets").unwrap_or(Value::Null);
    let bad = |got: &Value| {
        Failure::input(format!(
            "fit: `targets` must be an array of [name, value] pairs, not {}",
            shown(got)
        ))
        .with_hint("e.g. fit({ targets: [[\"north\", 0.5], [\"south\", 0.3], [\"east\", 0.2]] })")
    };
    let Value::Array(items) = &pairs else {
        return Err(bad(&pairs));
    };
    let mut targets = Targets {
        names: Vec::new(),
        values: Vec::new(),
        populations: false,
    };
    for item in items {
        match item.as_array().map(Vec::as_slice) {
            Some([Value::String(name), value]) if value.as_f64().is_some() => {
                targets.names.push(name.clone());
                targets.values.push(value.as_f64().unwrap_or_default());
            }
            _ => return Err(bad(item)),
        }
    }
    targets.populations = f.boolean("populations")?.unwrap_or(false);
    let defaults = FitOptions::default();
    let options = FitOptions {
        seconds: f.number("seconds")?.unwrap_or(defaults.seconds),
        max_total: f.whole("max_total")?.unwrap_or(defaults.max_total),
    };
    f.finish()?;
    Ok((targets, options))
}

fn kind(v: &Value) -> &'static str {
    match v {
        Value::Null => "null",
        Value::Bool(_) => "a boolean",
        Value::Number(_) => "a number",
        Value::String(_) => "a string",
        Value::Array(_) => "an array",
        Value::Object(_) => "an object",
    }
}

/// A value as it appears in a message: short ones as JSON, others by kind.
fn shown(v: &Value) -> String {
    let text = v.to_string();
    if text.chars().count() <= 40 {
        text
    } else {
        kind(v).to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    #[test]
    fn report_options_fill_the_library_defaults() {
        let (rule, o) = report(Value::Null).unwrap();
        assert_eq!(rule, None);
        assert_eq!(o, Options::default());
        let (rule, o) = report(
            json!({"rule": "charter", "budget": 1000, "seed": 7, "exact": true,
            "engine": "profile", "attendance": 0.5, "tolerance": 0.01, "memory": 1024, "ternary": true}),
        )
        .unwrap();
        assert_eq!(rule.as_deref(), Some("charter"));
        assert_eq!(o.budget, 1000);
        assert_eq!(o.seed, 7);
        assert!(o.exact && o.ternary);
        assert_eq!(o.engine.map(|e| e.name()), Some("profile"));
        assert_eq!(o.attendance, Some(0.5));
        assert_eq!(o.memory, 1024);
    }

    #[test]
    fn unknown_keys_and_wrong_types_are_named() {
        let e = report(json!({"budgte": 5})).unwrap_err();
        assert_eq!(e.message, "report: unknown option `budgte`");
        assert_eq!(e.hint.as_deref(), Some("did you mean `budget`?"));
        let e = report(json!({"seed": -1})).unwrap_err();
        assert_eq!(
            e.message,
            "report: option `seed` must be a whole number from 0 to 2^53, not -1"
        );
        let e = report(json!({"seed": 1.5})).unwrap_err();
        assert!(e.message.contains("not 1.5"), "{}", e.message);
        let e = report(json!({"budget": 1e300})).unwrap_err();
        assert!(e.message.contains("`budget`"), "{}", e.message);
        let e = report(json!({"exact": "yes"})).unwrap_err();
        assert_eq!(
            e.message,
            "report: option `exact` must be true or false, not \"yes\""
        );
        let e = report(json!(["budget"])).unwrap_err();
        assert_eq!(e.message, "report: options must be an object, not an array");
        let e = report(json!({"engine": "dense-ish"})).unwrap_err();
        assert_eq!(e.message, "report: unknown engine `dense-ish`");
    }

    #[test]
    fn ballots_take_one_name_or_a_list() {
        let (rule, b) = ballot(json!({"yes": "harbor", "no": ["mill", "ferry"], "rest": "abstain"})).unwrap();
        assert_eq!(rule, None);
        assert_eq!(b.yes, ["harbor"]);
        assert_eq!(b.no, ["mill", "ferry"]);
        assert_eq!(b.rest, Some(Rest::Abstain));
        assert!(ballot(json!({"yes": [1]})).is_err());
        let e = ballot(json!({"rest": "away"})).unwrap_err();
        assert!(e.message.contains("`away`"));
        let e = ballot(json!({"abstian": []})).unwrap_err();
        assert_eq!(e.hint.as_deref(), Some("did you mean `abstain`?"));
    }
}
