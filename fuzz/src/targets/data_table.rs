//! Target `data_table`: the data-table readers (CSV and JSON) and member
//! tables compiled through a rule file, on any bytes.
//!
//! The first byte picks the format (even: CSV, odd: JSON) and the declared
//! decimals (byte / 2 % 24); the rest is the table. Promises checked: reading
//! returns (no panic, no overflow); an error is placed at a line and column
//! inside the table and renders; a table that reads has one cell per column
//! in every row and reads the same when written back as JSON; compiled as
//! a member table, every member is a row, named as written, weighted by its
//! exact amount (or that amount rounded to the unit); every name prints in a
//! form that reads back to it.

use std::collections::HashMap;

use clout_dsl::amount;
use clout_dsl::data::Table;
use clout_dsl::{compile_with, quote, render_all};

/// Shapes the mutator splices in.
pub const DICTIONARY: &[&[u8]] = &[
    b"name,votes\n",
    b"\r\n",
    b"\"",
    b"\"\"",
    b",",
    b"\xef\xbb\xbf",
    b"1520.565494",
    b"0.000000000000000001",
    b"-1",
    b"1e18",
    b"[{\"name\": \"a\", \"votes\": 1}]",
    b"{\"",
    b"\": ",
    b"\\u00e9",
    b"\\u202e",
    b"99999999999999999999999999999999999999",
];

pub fn run(data: &[u8]) {
    let Some((&selector, table)) = data.split_first() else {
        return;
    };
    let name = if selector % 2 == 0 { "t.csv" } else { "t.json" };
    let decimals = u32::from(selector / 2 % 24);
    match Table::read(name, table) {
        Err(e) => {
            let place = e.place.as_ref().expect("a table error is placed in the table");
            assert!(place.line >= 1 && place.column >= 1);
            let _ = e.render("unused", "");
        }
        Ok(t) => {
            assert!(t.rows.iter().all(|r| r.len() == t.columns.len()));
            same_as_json(&t);
            if t.columns.len() >= 2 {
                member_table(&t, table, decimals);
            }
        }
    }
}

/// Written back as JSON (every cell a string, keys in the header's order),
/// the table reads the same.
fn same_as_json(t: &Table) {
    if t.rows.is_empty() {
        return;
    }
    let quoted = |s: &str| serde_json::to_string(s).expect("serializes");
    let objects: Vec<String> = t
        .rows
        .iter()
        .map(|r| {
            let pairs: Vec<String> = t
                .columns
                .iter()
                .zip(r)
                .map(|(c, v)| format!("{}: {}", quoted(c), quoted(v)))
                .collect();
            format!("{{{}}}", pairs.join(", "))
        })
        .collect();
    let text = format!("[{}]", objects.join(",\n"));
    let again = Table::read("again.json", text.as_bytes()).expect("its own JSON reads");
    assert_eq!(again.columns, t.columns);
    assert_eq!(again.rows, t.rows);
}

fn member_table(t: &Table, bytes: &[u8], decimals: u32) {
    let column = |c: &str| quote::written(c).into_owned();
    let rule = format!(
        "attribute v decimals {decimals} unit 1\nmembers m from \"t\" name={} v={}\nrule r = count >= 1\n",
        column(&t.columns[0]),
        column(&t.columns[1])
    );
    let mut tables = HashMap::new();
    tables.insert("t".to_string(), String::from_utf8_lossy(bytes).into_owned());
    // Read as bytes: the map holds text, so only UTF-8 tables get here.
    let Ok(file) = compile_with(&rule, &mut tables) else {
        return;
    };
    assert_eq!(file.members.len(), t.rows.len());
    let amounts = &file.amounts[0];
    for (i, (m, row)) in file.members.iter().zip(&t.rows).enumerate() {
        assert_eq!(m.name, row[0]);
        let w = quote::written(&m.name);
        if w.starts_with('"') {
            assert_eq!(
                quote::unescape(&w[1..w.len() - 1]).as_deref(),
                Ok(m.name.as_str())
            );
        }
        let exact = amount::parse(&row[1], decimals).expect("compiled, so it parses");
        assert_eq!(amounts.exact[i], exact);
        let weight = match amounts.unit {
            Some(u) => amount::round_to_unit(exact, u),
            None => exact,
        };
        assert_eq!(u128::from(file.weights[i]), weight);
    }
    let _ = render_all(&[], "t", "");
}
