//! # clout-wasm
//!
//! The clout library for JavaScript and TypeScript, in a browser or Node,
//! with no server: `parse(text)` compiles a rule file and returns a
//! [`RuleFile`] whose methods give the power report, the outcome of a vote,
//! the drafting answers and the rule's binary image.
//!
//! Results are plain JavaScript objects with exactly the keys and values of
//! the command line's JSON (`parse(text).report()` deep-equals `clout report
//! --format json`): the library serializes them with serde and JavaScript's
//! `JSON.parse` reads them, so exact counts stay decimal strings and indices
//! are the same doubles. Errors are thrown as `Error` objects named
//! `CloutError` with `kind`, `message`, `hint`, `line`, `column` (1-based;
//! null when the error is not about the text), `errors` (every error of the
//! text) and `rendered` (the command line's text with carets).
//!
//! This file only moves values across the boundary; the calls themselves
//! are in [`api`] and [`options`], which the host build tests.

pub mod api;
pub mod options;

use serde::Serialize;
use serde_json::Value;
use wasm_bindgen::prelude::*;

use api::{Loaded, Thrown};

#[wasm_bindgen(typescript_custom_section)]
const TYPES: &'static str = include_str!("types.d.ts");

/// The fictional example rule files shipped with the package, the demo
/// first: `[{ name, text }]`.
#[wasm_bindgen(unchecked_return_type = "{ name: string; text: string }[]")]
pub fn examples() -> Result<JsValue, JsValue> {
    let list: Vec<Value> = api::EXAMPLES
        .iter()
        .map(|(name, text)| serde_json::json!({ "name": name, "text": text }))
        .collect();
    to_js(&list)
}

/// Integer weights and a quota whose normalized Banzhaf index is closest
/// to target shares of power, as `clout fit --format json` gives them.
#[wasm_bindgen(unchecked_return_type = "Fit")]
pub fn fit(
    #[wasm_bindgen(unchecked_param_type = "FitOptions")] options: JsValue,
) -> Result<JsValue, JsValue> {
    relay(Some(options), api::fit)
}

/// A compiled rule file.
#[wasm_bindgen]
pub struct RuleFile {
    inner: Loaded,
}

/// Compiles a rule file (or `[q; w1, ..., wn]`); throws a `CloutError` with
/// every error's line and column when it does not compile. `tables` maps the
/// paths that `members NAME from "FILE"` declarations name to their text.
#[wasm_bindgen(skip_typescript)] // typed in types.d.ts (optional argument)
pub fn parse(text: JsValue, tables: Option<JsValue>) -> Result<RuleFile, JsValue> {
    let Some(text) = text.as_string() else {
        return Err(throw(
            clout::Failure::input("parse: the rule text must be a string").into(),
        ));
    };
    let tables = match from_js(tables)? {
        Value::Null => Default::default(),
        Value::Object(map) => map
            .into_iter()
            .map(|(path, v)| match v {
                Value::String(t) => Ok((path, t)),
                _ => Err(throw(
                    clout::Failure::input(format!("parse: the table `{path}` must be text"))
                        .with_hint("pass tables as { \"holders.csv\": text }")
                        .into(),
                )),
            })
            .collect::<Result<_, _>>()?,
        _ => {
            return Err(throw(
                clout::Failure::input("parse: tables must be an object of path to text").into(),
            ))
        }
    };
    api::parse_with(&text, tables)
        .map(|inner| RuleFile { inner })
        .map_err(throw)
}

#[wasm_bindgen]
impl RuleFile {
    /// The file's title, if it has one.
    #[wasm_bindgen(getter)]
    pub fn title(&self) -> Option<String> {
        self.inner.file.title.clone()
    }

    /// The rule text as given to `parse`.
    #[wasm_bindgen(getter)]
    pub fn source(&self) -> String {
        self.inner.source.clone()
    }

    /// Names of the rules, in order (the first is the default).
    #[wasm_bindgen(getter)]
    pub fn rules(&self) -> Vec<String> {
        self.inner.file.rules.iter().map(|r| r.name.clone()).collect()
    }

    /// Names of the members, in declaration order.
    #[wasm_bindgen(getter)]
    pub fn members(&self) -> Vec<String> {
        self.inner.file.members.iter().map(|m| m.name.clone()).collect()
    }

    /// Title, attributes, members, groups, blocs and rules with their lines.
    #[wasm_bindgen(unchecked_return_type = "Outline")]
    pub fn outline(&self) -> Result<JsValue, JsValue> {
        to_js(&self.inner.outline())
    }

    /// How `report(options)` will compute: exact with an engine and its
    /// estimated steps, or approximate and why. Cheap; for progress lines.
    #[wasm_bindgen(skip_typescript)] // typed in types.d.ts (optional argument)
    pub fn plan(&self, options: Option<JsValue>) -> Result<JsValue, JsValue> {
        relay(options, |o| self.inner.plan(o))
    }

    /// The power report, as `clout report --format json` gives it.
    #[wasm_bindgen(skip_typescript)]
    pub fn report(&self, options: Option<JsValue>) -> Result<JsValue, JsValue> {
        relay(options, |o| self.inner.report(o))
    }

    /// The chart of power beside weight as SVG text, as `clout report --svg`
    /// draws it (same options as `report`).
    #[wasm_bindgen(js_name = reportChart, skip_typescript)]
    pub fn report_chart(&self, options: Option<JsValue>) -> Result<String, JsValue> {
        let options = from_js(options)?;
        self.inner.report_chart(options).map_err(throw)
    }

    /// The outcome of one vote, as `clout decide --format json` gives it.
    #[wasm_bindgen(skip_typescript)]
    pub fn decide(&self, ballot: Option<JsValue>) -> Result<JsValue, JsValue> {
        relay(ballot, |o| self.inner.decide(o))
    }

    /// The rule's binary image for devices and the C ABI (`clout compile`).
    #[wasm_bindgen(skip_typescript)]
    pub fn image(&self, options: Option<JsValue>) -> Result<Vec<u8>, JsValue> {
        let options = from_js(options)?;
        self.inner.image(options).map_err(throw)
    }

    /// Dummies, and whether the rule is one weighted vote (with integer
    /// weights of least total) or a proof that it is not, as `clout simplify
    /// --format json` gives it.
    #[wasm_bindgen(skip_typescript)]
    pub fn simplify(&self, options: Option<JsValue>) -> Result<JsValue, JsValue> {
        relay(options, |o| self.inner.simplify(o))
    }

    /// Whether this file's rule and `other`'s pass the same coalitions; if
    /// not, a smallest coalition where they differ and each member's change
    /// in power, as `clout compare --format json` gives it.
    #[wasm_bindgen(skip_typescript)]
    pub fn compare(&self, other: &RuleFile, options: Option<JsValue>) -> Result<JsValue, JsValue> {
        relay(options, |o| self.inner.compare(&other.inner, o))
    }

    /// Both indices and the probability of passage as a quota moves, as
    /// `clout sweep --format json` gives it.
    #[wasm_bindgen(skip_typescript)]
    pub fn sweep(&self, options: Option<JsValue>) -> Result<JsValue, JsValue> {
        relay(options, |o| self.inner.sweep(o))
    }

    /// Minimal winning or minimal blocking coalitions, as `clout
    /// coalitions --format json` gives them.
    #[wasm_bindgen(skip_typescript)]
    pub fn coalitions(&self, options: Option<JsValue>) -> Result<JsValue, JsValue> {
        relay(options, |o| self.inner.coalitions(o))
    }

    /// Members ordered by influence and classes of symmetric members, as
    /// `clout order --format json` gives them.
    #[wasm_bindgen(skip_typescript)]
    pub fn order(&self, options: Option<JsValue>) -> Result<JsValue, JsValue> {
        relay(options, |o| self.inner.order(o))
    }

    /// Rows of interchangeable members, whose figures are equal.
    #[wasm_bindgen(skip_typescript)]
    pub fn interchangeable(&self, options: Option<JsValue>) -> Result<JsValue, JsValue> {
        relay(options, |o| self.inner.interchangeable(o))
    }

    /// Each member's share of every weight the rule counts.
    #[wasm_bindgen(js_name = weightShares, skip_typescript)]
    pub fn weight_shares(&self, options: Option<JsValue>) -> Result<JsValue, JsValue> {
        relay(options, |o| self.inner.weight_shares(o))
    }
}

/// A JavaScript options object as JSON (undefined and null are no options).
fn from_js(value: Option<JsValue>) -> Result<Value, JsValue> {
    let Some(value) = value.filter(|v| !v.is_undefined() && !v.is_null()) else {
        return Ok(Value::Null);
    };
    let refused = || {
        throw(
            clout::Failure::input("options must be plain data (objects, arrays, strings, numbers, booleans)")
                .with_hint("BigInt values and objects that refer to themselves cannot be passed")
                .into(),
        )
    };
    let text = js_sys::JSON::stringify(&value).map_err(|_| refused())?;
    text.as_string()
        .and_then(|t| serde_json::from_str(&t).ok())
        .ok_or_else(refused)
}

/// Reads the options, runs `call` and returns its answer as a plain object.
fn relay<T: Serialize>(
    options: Option<JsValue>,
    call: impl FnOnce(Value) -> Result<T, Box<Thrown>>,
) -> Result<JsValue, JsValue> {
    to_js(&call(from_js(options)?).map_err(throw)?)
}

/// A result as a plain JavaScript object, through JSON so that keys and
/// values are exactly the command line's.
fn to_js(value: &impl Serialize) -> Result<JsValue, JsValue> {
    let text = serde_json::to_string(value).map_err(|e| JsValue::from_str(&e.to_string()))?;
    js_sys::JSON::parse(&text)
}

/// A `CloutError`: an `Error` with the fields of [`Thrown`].
fn throw(t: Box<Thrown>) -> JsValue {
    let error = js_sys::Error::new(&t.message);
    error.set_name("CloutError");
    // Every field of Thrown (message included) becomes an own property.
    if let Ok(fields) = to_js(&t).and_then(|v| v.dyn_into::<js_sys::Object>()) {
        js_sys::Object::assign(&error, &fields);
    }
    error.into()
}
