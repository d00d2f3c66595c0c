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
    let file = with_table(
        RULE,
        "t.csv",
        "address,balance\n0x3f5a,1520.565494\n\"Zoë, B.\",2\nc,0.000001\n",
    )
    .unwrap();
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

/// Every error of `table` (bytes, named `name`) under [`RULE`], rendered.
fn errors(name: &str, table: &[u8]) -> String {
    let rule = RULE.replace("t.csv", name);
    let mut tables = |path: &str| -> Result<(String, Vec<u8>), String> {
        assert_eq!(path, name);
        Ok((path.to_string(), table.to_vec()))
    };
    let e = compile_with(&rule, &mut tables).unwrap_err();
    render_all(&e, "rule.clout", &rule)
}

#[test]
fn bad_data_is_refused_with_file_line_column_field_and_hint() {
    let cases: [(&[u8], &str); 13] = [
        (
            b"adress,balance\n0x1,1\n",
            "t.csv:1:1: error: the header has no column `address`\n   1 | adress,balance\n     | ^\n     = hint: did you mean `adress`? (the rule file names `address` on line 2)\n",
        ),
        (
            b"address,balance\n0x1,1\n0x2\n",
            "t.csv:3:1: error: row has 1 fields, the header 2: `balance` is missing\n   3 | 0x2\n     | ^\n     = hint: every row needs one field per column of the header (address, balance); quote a field that holds a comma\n",
        ),
        (
            b"address,balance\n0x1,1\n0x2,2,3\n",
            "t.csv:3:7: error: row has 3 fields, the header 2\n   3 | 0x2,2,3\n     |       ^\n     = hint: remove the extra field, or quote a field that holds a comma (`\"Smith, J.\"`)\n",
        ),
        (
            b"address,balance\n0x1,1\n0x2,2\n0x1,3\n",
            "t.csv:4:1: error: duplicate name \"0x1\"\n   4 | 0x1,3\n     | ^^^\n     = hint: \"0x1\" is already on line 2 of the table; every member is listed once\n",
        ),
        (
            b"address,balance\n0x1,-1.5\n",
            "t.csv:2:5: error: the amount `-1.5` of `tokens` is negative\n   2 | 0x1,-1.5\n     |     ^^^^\n     = hint: weights are amounts of at least 0\n",
        ),
        (
            b"address,balance\n0x1,\n",
            "t.csv:2:5: error: the amount of `tokens` is empty\n   2 | 0x1,\n     |     ^\n     = hint: write 0 for a member without any\n",
        ),
        (
            b"address,balance\n0x1,12 tokens\n",
            "t.csv:2:5: error: the amount `12 tokens` of `tokens` is not a number\n   2 | 0x1,12 tokens\n     |     ^^^^^^^^^\n     = hint: write digits with at most one decimal point, without thousands separators or units (`1520.565494`)\n",
        ),
        (
            b"address,balance\n0x1,1e6\n",
            "t.csv:2:5: error: the amount `1e6` of `tokens` has an exponent\n   2 | 0x1,1e6\n     |     ^^^\n     = hint: write every digit (`1000000000000000000`, or `1.5` with the attribute's decimals); exponents are not exact\n",
        ),
        (
            b"address,balance\n0x1,0.0000001\n",
            "t.csv:2:5: error: the amount `0.0000001` of `tokens` has 7 decimals, more than the 6 declared\n   2 | 0x1,0.0000001\n     |     ^^^^^^^^^\n     = hint: amounts are read exactly, never rounded: declare `attribute tokens decimals 7` or correct the amount\n",
        ),
        (
            b"address,balance\n0x1,1\n\"0x\xff\",2\n",
            "t.csv:3:4: error: the table is not UTF-8 text: byte 0xFF cannot start or continue a character\n   3 | \"0x\u{fffd}\",2\n     |    ^\n     = hint: save the table as UTF-8 (spreadsheets call it \"CSV UTF-8\")\n",
        ),
        (
            b"address,balance\n",
            "t.csv:1:1: error: the table has no rows\n   1 | address,balance\n     | ^\n     = hint: a member table lists one member per row, after the header\n",
        ),
        (
            b"address,balance\n,1\n",
            "t.csv:2:1: error: a member without a name\n   2 | ,1\n     | ^\n     = hint: every row names its member in the column `address`\n",
        ),
        (
            b"address,balance\n0x1,1\n0x2,x\n0x3,-2\n",
            "t.csv:3:5: error: the amount `x` of `tokens` is not a number\n   3 | 0x2,x\n     |     ^\n     = hint: write digits with at most one decimal point, without thousands separators or units (`1520.565494`)\n\
             t.csv:4:5: error: the amount `-2` of `tokens` is negative\n   4 | 0x3,-2\n     |     ^^\n     = hint: weights are amounts of at least 0\n",
        ),
    ];
    for (table, want) in cases {
        assert_eq!(errors("t.csv", table), want, "{}", String::from_utf8_lossy(table));
    }
}

#[test]
fn json_tables_are_refused_in_their_own_words() {
    let cases: [(&str, &str); 4] = [
        (
            "[{\"address\": \"0x1\", \"balance\": 1},\n {\"address\": \"0x2\"}]",
            "t.json:2:3: error: row 2 has no `balance`\n   2 |  {\"address\": \"0x2\"}]\n     |   ^\n     = hint: every object has the keys of the first (address, balance)\n",
        ),
        (
            "[{\"address\": \"0x1\", \"balance\": -3}]",
            "t.json:1:32: error: the amount `-3` of `tokens` is negative\n   1 | [{\"address\": \"0x1\", \"balance\": -3}]\n     |                                ^^\n     = hint: weights are amounts of at least 0\n",
        ),
        (
            "[{\"address\": \"0x1\", \"balance\": true}]",
            "t.json:1:32: error: the value of `balance` in row 1 is not a string or a number\n   1 | [{\"address\": \"0x1\", \"balance\": true}]\n     |                                ^\n     = hint: table cells are strings or numbers (amounts may be either: `\"1520.565494\"` or 1520.565494)\n",
        ),
        (
            "[{\"address\": \"0x1\", \"balance\": 1}",
            "t.json:1:33: error: the table is not valid JSON: EOF while parsing a list\n   1 | [{\"address\": \"0x1\", \"balance\": 1}\n     |                                 ^\n     = hint: a JSON table is an array of objects, one per row: `[{\"name\": \"a\", \"votes\": \"12.5\"}, ...]`\n",
        ),
    ];
    for (table, want) in cases {
        assert_eq!(errors("t.json", table.as_bytes()), want, "{table}");
    }
}

#[test]
fn bom_crlf_and_quoted_fields_are_read_correctly() {
    let table = "\u{feff}address,balance\r\n\"Smith, J.\",\"1.5\"\r\n\"say \"\"hi\"\"\",2\r\n";
    let file = with_table(RULE, "t.csv", table).unwrap();
    let names: Vec<&str> = file.members.iter().map(|m| m.name.as_str()).collect();
    assert_eq!(names, ["Smith, J.", "say \"hi\""]);
    assert_eq!(file.weights, [1_500_000, 2_000_000]);
    // The names print in a form that compiles back.
    let rule = format!(
        "member {} tokens=1\nmember {} tokens=2\nrule r = {} and {}\n",
        clout_dsl::quote::written(names[0]),
        clout_dsl::quote::written(names[1]),
        clout_dsl::quote::written(names[0]),
        clout_dsl::quote::written(names[1])
    );
    let again = clout_dsl::compile(&rule).unwrap();
    assert_eq!(again.members[1].name, "say \"hi\"");
}

#[test]
fn a_table_of_200000_rows_is_refused_past_the_member_limit_with_its_line() {
    let mut table = String::from("address,balance\n");
    for i in 0..200_000 {
        table.push_str(&format!("0x{i:x},{i}.5\n"));
    }
    let started = std::time::Instant::now();
    let e = errors("t.csv", table.as_bytes());
    assert!(
        e.starts_with("t.csv:65537:1: error: more than 65535 members\n"),
        "{}",
        &e[..200.min(e.len())]
    );
    assert!(e.contains("this table has 200000 rows"), "{e}");
    // Bounded work, not a timed assertion: it finishes, whatever the machine.
    let _ = started.elapsed();
}

#[test]
fn tables_need_a_resolver_and_name_their_files_when_missing() {
    let e = clout_dsl::compile(RULE).unwrap_err();
    assert_eq!(
        e[0].message,
        "cannot read the table `t.csv`: this rule text was compiled without tables (pass them with `compile_with`)"
    );
    let e = with_table(RULE, "other.csv", "a,b\n").unwrap_err();
    assert!(e.contains("rule.clout:2:21: error: cannot read the table `t.csv`: no table of that name was given (given: other.csv)"), "{e}");
}

#[test]
fn exact_amounts_too_large_for_the_core_need_a_unit_and_are_rounded_to_it() {
    let rule =
        "attribute tokens decimals 18\nmembers h from \"t.csv\" tokens=balance\nrule r = tokens > 1/2\n";
    let table = "name,balance\na,10\nb,9.5\nc,0.25\n";
    let e = with_table(rule, "t.csv", table).unwrap_err();
    assert!(
        e.contains("error: the weights of `tokens` add up to more than 2^64 - 4")
            && e.contains("e.g. `attribute tokens decimals 18 unit 0.0000000000001`"),
        "{e}"
    );
    let rule = rule.replace("decimals 18", "decimals 18 unit 0.1");
    let file = with_table(&rule, "t.csv", table).unwrap();
    // 10 -> 100, 9.5 -> 95, 0.25 -> 2.5 -> 3 (halves up) tenths.
    assert_eq!(file.weights, [100, 95, 3]);
    let r = file.rule(None).unwrap();
    let exact = r.exact[0].unwrap();
    // More than half of 19.75 tokens: 9.875 tokens + 1 base unit.
    assert_eq!(exact.quota, 9_875_000_000_000_000_001);
    // In tenths: ceil(98.75...) = 99.
    assert_eq!(r.rule.atoms()[0].quota, 99);
    assert_eq!(file.amounts[0].unit, Some(100_000_000_000_000_000));
}
