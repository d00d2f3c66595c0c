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
    pub fn new(columns: Vec<(String, Align)>) -> Self {
        Table {
            columns,
            rows: Vec::new(),
        }
    }

    pub fn push(&mut self, row: Vec<String>) {
        self.rows.push(row);
    }

    /// Each column's width: its widest cell or heading.
    fn widths(&self) -> Vec<usize> {
        let width = |s: &str| s.chars().count();
        (0..self.columns.len())
            .map(|c| {
                self.rows
                    .iter()
                    .filter_map(|r| r.get(c))
                    .map(|s| width(s))
                    .chain([width(&self.columns[c].0)])
                    .max()
                    .unwrap_or(0)
            })
            .collect()
    }

    /// As [`Self::render`] when it fits in `max_width` characters; else the
    /// columns after the first `keep` are cut into runs that fit, and each run
    /// is printed as a table of its own after the `keep` columns, with a line
    /// saying which columns it holds.
    pub fn render_within(&self, max_width: usize, keep: usize) -> String {
        let widths = self.widths();
        let keep = keep.min(widths.len());
        let fixed: usize = widths[..keep].iter().map(|w| w + 2).sum();
        let mut runs: Vec<Vec<usize>> = Vec::new();
        let mut used = fixed;
        for (c, &w) in widths.iter().enumerate().skip(keep) {
            match runs.last_mut() {
                Some(run) if used + w <= max_width => run.push(c),
                _ => {
                    runs.push(vec![c]);
                    used = fixed;
                }
            }
            used += w + 2;
        }
        if runs.len() <= 1 {
            return self.render();
        }
        let total = widths.len() - keep;
        let mut out = String::new();
        for (k, run) in runs.iter().enumerate() {
            let pick: Vec<usize> = (0..keep).chain(run.iter().copied()).collect();
            let mut part = Table::new(pick.iter().map(|&c| self.columns[c].clone()).collect());
            for r in &self.rows {
                part.push(
                    pick.iter()
                        .map(|&c| r.get(c).cloned().unwrap_or_default())
                        .collect(),
                );
            }
            if k > 0 {
                out.push('\n');
            }
            out.push_str(&format!(
                "(columns {}-{} of {total})\n",
                run[0] - keep + 1,
                run[run.len() - 1] - keep + 1
            ));
            out.push_str(&part.render());
        }
        out
    }

    pub fn render(&self) -> String {
        let width = |s: &str| s.chars().count();
        let widths = self.widths();
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wide_tables_are_cut_into_runs_that_fit() {
        let mut t = Table::new(
            ["q", "aaaa", "bbbb", "cccc"]
                .iter()
                .map(|h| (h.to_string(), Align::Right))
                .collect(),
        );
        t.push(vec!["1".into(), "0.1".into(), "0.2".into(), "0.3".into()]);
        assert_eq!(t.render_within(100, 1), t.render());
        // "q" + 2 + "aaaa" + 2 + "bbbb" = 13 fits 13; "cccc" goes on.
        assert_eq!(
            t.render_within(13, 1),
            "(columns 1-2 of 3)\nq  aaaa  bbbb\n1   0.1   0.2\n\n(columns 3-3 of 3)\nq  cccc\n1   0.3\n"
        );
        for line in t.render_within(13, 1).lines() {
            assert!(line.chars().count() <= 18);
        }
    }

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
