//! Number formatting and aligned tables for text output.
//!
//! Exact counts of up to [`EXACT_DIGITS`] digits print in full with
//! thousands separators; longer ones print as `≈1.2346e160`, always marked
//! with `≈` so that no rounded figure passes for an exact one.

/// Longest count printed in full.
pub const EXACT_DIGITS: usize = 15;

/// `1234567` as `1,234,567`.
pub fn thousands(digits: &str) -> String {
    clout::drafting::thousands(digits)
}

/// An exact decimal count for reading: in full, or `≈` and 5 significant digits.
pub fn count(digits: &str) -> String {
    if digits.len() <= EXACT_DIGITS {
        thousands(digits)
    } else {
        format!("≈{}", scientific(digits))
    }
}

/// Whether [`count`] rounds this count.
pub fn is_rounded(digits: &str) -> bool {
    digits.len() > EXACT_DIGITS
}

/// A decimal string as `d.dddde±x`, rounded half up at the fifth digit.
fn scientific(digits: &str) -> String {
    let bytes: Vec<u8> = digits.bytes().map(|b| b - b'0').collect();
    let mut mantissa: Vec<u8> = bytes.iter().take(5).copied().collect();
    let mut exponent = bytes.len() - 1;
    if bytes.get(5).is_some_and(|&d| d >= 5) {
        let mut k = mantissa.len();
        loop {
            if k == 0 {
                mantissa.insert(0, 1);
                mantissa.pop();
                exponent += 1;
                break;
            }
            k -= 1;
            if mantissa[k] == 9 {
                mantissa[k] = 0;
            } else {
                mantissa[k] += 1;
                break;
            }
        }
    }
    let m: String = mantissa.iter().map(|d| char::from(b'0' + d)).collect();
    format!("{}.{}e{exponent}", &m[..1], &m[1..])
}

/// An index to six decimals.
pub fn index(v: f64) -> String {
    format!("{v:.6}")
}

/// `yes` / `no`.
pub fn yes_no(b: bool) -> &'static str {
    if b {
        "yes"
    } else {
        "no"
    }
}

/// Column alignment.
#[derive(Clone, Copy, PartialEq, Eq)]
pub enum Align {
    Left,
    Right,
}

/// A table printed with columns padded to their widest cell.
pub struct Table {
    columns: Vec<(String, Align)>,
    rows: Vec<Vec<String>>,
}

impl Table {
    /// Headers and cells may hold names from the rule file: each is shown
    /// as [`clout::escape::terminal`] shows it, and padded by that width.
    pub fn new(columns: Vec<(String, Align)>) -> Self {
        Table {
            columns: columns.into_iter().map(|(h, a)| (shown(h), a)).collect(),
            rows: Vec::new(),
        }
    }

    pub fn push(&mut self, row: Vec<String>) {
        self.rows.push(row.into_iter().map(shown).collect());
    }

    pub fn render(&self) -> String {
        let width = |s: &str| s.chars().count();
        let widths: Vec<usize> = (0..self.columns.len())
            .map(|c| {
                self.rows
                    .iter()
                    .filter_map(|r| r.get(c))
                    .map(|s| width(s))
                    .chain([width(&self.columns[c].0)])
                    .max()
                    .unwrap_or(0)
            })
            .collect();
        let line = |cells: Vec<&str>| {
            let mut out = String::new();
            for (c, cell) in cells.iter().enumerate() {
                let pad = widths[c].saturating_sub(width(cell));
                if c > 0 {
                    out.push_str("  ");
                }
                match self.columns[c].1 {
                    Align::Left => {
                        out.push_str(cell);
                        out.push_str(&" ".repeat(pad));
                    }
                    Align::Right => {
                        out.push_str(&" ".repeat(pad));
                        out.push_str(cell);
                    }
                }
            }
            out.truncate(out.trim_end().len());
            out.push('\n');
            out
        };
        let mut out = line(self.columns.iter().map(|(h, _)| h.as_str()).collect());
        for r in &self.rows {
            out.push_str(&line(r.iter().map(String::as_str).collect()));
        }
        out
    }
}

/// `cell` safe for a terminal (no copy when it already is).
fn shown(cell: String) -> String {
    match clout::escape::terminal(&cell) {
        std::borrow::Cow::Borrowed(_) => cell,
        std::borrow::Cow::Owned(s) => s,
    }
}

/// Everything a command prints, made safe for a terminal as a last guard:
/// every hidden character but the newline (controls, bidirectional and
/// other format characters) as a visible escape. Renderers escape the text
/// they take from input themselves (so that it cannot start a line either);
/// this catches any they missed. JSON, CSV and SVG output pass unchanged,
/// since they hold no such characters raw.
pub fn terminal_safe(out: String) -> String {
    match clout::escape::terminal_lines(&out) {
        std::borrow::Cow::Borrowed(_) => out,
        std::borrow::Cow::Owned(safe) => safe,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn separators_and_rounding() {
        assert_eq!(thousands("412000"), "412,000");
        assert_eq!(thousands("12"), "12");
        assert_eq!(thousands("1000"), "1,000");
        assert_eq!(count("123456789012345"), "123,456,789,012,345");
        assert_eq!(count("1234567890123456"), "≈1.2346e15");
        assert_eq!(count("9999990000000000"), "≈1.0000e16");
        assert_eq!(count("1234549999999999"), "≈1.2345e15");
    }
}
