//! The CLI's JSON figures equal the core's for random rules: each rule is
//! printed as a rule file, piped to `clout report - --format json`, and
//! compared with `clout_core::analyze` on the rule itself.

#[path = "../../dsl/tests/support/mod.rs"]
mod support;

mod cli_support;

use clout::{analyze, Count1024};
use proptest::prelude::*;
use serde_json::Value;

fn report(text: &str) -> Value {
    let run = cli_support::clout_with_input(&["report", "-", "--format", "json"], text);
    assert_eq!(run.code, 0, "{}", run.stderr);
    serde_json::from_str(&run.stdout).expect("valid JSON")
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-12 * a.abs().max(b.abs()).max(1.0)
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]

    #[test]
    fn cli_figures_equal_the_core(rule in support::rules()) {
        let text = clout_dsl::print_rule(&rule);
        let json = report(&text);
        let core = analyze::<_, Count1024>(&rule).expect("small rules are analysable");
        let table = core.table();
        prop_assert_eq!(json["winning_coalitions"].as_str().map(String::from), Some(core.rule.winning.to_string()));
        prop_assert_eq!(json["proper"].as_bool(), Some(core.rule.proper));
        prop_assert_eq!(json["strong"].as_bool(), Some(core.rule.strong));
        prop_assert_eq!(json["decisive"].as_bool(), Some(core.rule.decisive()));
        prop_assert!(close(json["passage_probability"].as_f64().unwrap(), core.rule.passage_probability()));
        let members = json["members"].as_array().unwrap();
        prop_assert_eq!(members.len(), rule.members());
        for (i, m) in members.iter().enumerate() {
            prop_assert_eq!(m["swings"].as_str().map(String::from), Some(core.members[i].swings.to_string()));
            for (key, want) in [
                ("banzhaf", table.banzhaf(i)),
                ("penrose", table.penrose(i)),
                ("shapley_shubik", table.shapley_shubik(i)),
                ("coleman_prevent", table.coleman_prevent(i)),
                ("coleman_initiate", table.coleman_initiate(i)),
            ] {
                prop_assert!(close(m[key].as_f64().unwrap(), want), "{} of member {}: {} vs {}\n{}", key, i, m[key], want, text);
            }
            for (key, want) in [
                ("johnston", table.johnston(i)),
                ("deegan_packel", table.deegan_packel(i)),
                ("public_good", table.public_good(i)),
            ] {
                if let (Some(got), Some(want)) = (m[key].as_f64(), want) {
                    prop_assert!(close(got, want), "{} of member {}", key, i);
                }
            }
            prop_assert_eq!(m["dummy"].as_bool(), Some(table.is_dummy(i)));
            prop_assert_eq!(m["veto"].as_bool(), Some(table.is_veto(i)));
            prop_assert_eq!(m["dictator"].as_bool(), Some(table.is_dictator(i)));
        }
    }
}
