//! Member tables: rule files that take their members from CSV or JSON, exact
//! decimal amounts, and every kind of bad data refused with its place.

use std::collections::HashMap;

use clout_dsl::{compile_with, render_all, RuleFile};

const RULE: &str = "attribute tokens decimals 6\nmembers holder from \"t.csv\" name=address tokens=balance\nrule r = tokens > 1/2\n";

fn with_table(rule: &str, name: &str, table: &str) -> Result<RuleFile, String> {
    let mut tables = HashMap::new();
    tables.insert(name.to_string(), table.to_string());
    compile_with(rule, &mut tables).map_err(|e| render_all(&e, "rule.clout", rule))
}

#[test]
fn members_come_from_csv_with_exact_decimals() {
    let file = with_table(RULE, "t.csv", "address,balance\n0x3f5a,1520.565494\n\"Zoë, B.\",2\nc,0.000001\n").unwrap();
    let names: Vec<&str> = file.members.iter().map(|m| m.name.as_str()).collect();
    assert_eq!(names, ["0x3f5a", "Zoë, B.", "c"]);
    assert_eq!(file.weights, [1_520_565_494, 2_000_000, 1]);
    let r = file.rule(None).unwrap();
    // More than half of 1522.565495 tokens.
    assert_eq!(r.rule.atoms()[0].quota, 761_282_748);
    assert_eq!(file.blocs[0].name, "holder");
    assert_eq!(file.blocs[0].members, [0, 1, 2]);
    assert_eq!(file.amounts[0].format(1_520_565_494), "1520.565494");
}
