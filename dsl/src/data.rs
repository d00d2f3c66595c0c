//! Data tables: CSV (through the `csv` crate) and JSON (through
//! `serde_json`) read into one shape, a header and rows of text cells, with
//! every cell locatable as `file:line:column` for errors.
//!
//! Member snapshots (`members holder from "holders.csv" ...`) and records
//! of votes (`clout decide --ballots`) are both tables:
//!
//! - CSV: a header row, then one row per record. A UTF-8 byte-order mark
//!   and CRLF line ends are accepted; fields may be quoted (`"Smith, J."`,
//!   `"say ""hi"""`); spaces around fields are dropped. Every row has as
//!   many fields as the header.
//! - JSON: an array of objects, one per row, all with the same keys (the
//!   first object's keys, in its order, are the header); each value a
//!   string or a number, numbers kept exactly as written (`1520.565494`).
//!
//! The format is JSON when the name ends in `.json` or the text starts with
//! `[` or `{`, else CSV.
//!
//! Limits: [`MAX_TABLE_LEN`] bytes (64 MiB) and [`MAX_ROWS`] rows
//! (1,000,000), checked before and while reading. Time O(bytes); every
//! cell is copied once. Locating a cell for an error re-reads one line.

use std::cell::OnceCell;

use serde::de::{self, Deserializer, MapAccess, SeqAccess, Visitor};
use serde_json::value::RawValue;

use crate::diagnostic::{Diagnostic, LineStarts, Place, Span};

/// Largest table accepted, in bytes (64 MiB): a million rows of an address
/// and a balance take about 70 MB as text only with long fields.
pub const MAX_TABLE_LEN: usize = 64 << 20;

/// Most rows (besides the header) a table may hold.
pub const MAX_ROWS: usize = 1_000_000;

/// How a table is written.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Format {
    /// Comma-separated values with a header row.
    Csv,
    /// An array of objects.
    Json,
}

/// A table read from CSV or JSON: the header and the rows, as text.
#[derive(Debug)]
pub struct Table {
    /// Shown in messages (the path as given, or `<stdin>`).
    pub name: String,
    /// How it was written.
    pub format: Format,
    /// The column names, in order.
    pub columns: Vec<String>,
    /// The rows; each has one cell per column.
    pub rows: Vec<Vec<String>>,
    text: String,
    /// Byte offset of each header cell.
    column_at: Vec<usize>,
    /// Per row: byte offsets of its cells (JSON), or of the row (CSV).
    row_at: Vec<Vec<usize>>,
    lines: OnceCell<LineStarts>,
}

/// Where a message about a table points.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum At {
    /// The start of the table.
    Start,
    /// A header cell.
    Column(usize),
    /// A row, as a whole.
    Row(usize),
    /// One cell: row, column.
    Cell(usize, usize),
}

impl Table {
    /// Reads a table. `name` is shown in messages; errors are placed in it.
    pub fn read(name: &str, bytes: &[u8]) -> Result<Table, Diagnostic> {
        let mut table = Table {
            name: name.to_string(),
            format: Format::Csv,
            columns: Vec::new(),
            rows: Vec::new(),
            text: String::new(),
            column_at: Vec::new(),
            row_at: Vec::new(),
            lines: OnceCell::new(),
        };
        if bytes.len() > MAX_TABLE_LEN {
            let end = floor_boundary(bytes, MAX_TABLE_LEN.min(4096));
            table.text = String::from_utf8_lossy(&bytes[..end]).into_owned();
            return Err(table.error(
                At::Start,
                format!(
                    "the table is {} bytes, over the limit of {MAX_TABLE_LEN} (64 MiB)",
                    bytes.len()
                ),
                "split the table, or leave out columns the rule does not use",
            ));
        }
        table.text = match std::str::from_utf8(bytes) {
            Ok(t) => t.to_string(),
            Err(e) => {
                let at = e.valid_up_to();
                table.text = String::from_utf8_lossy(bytes).into_owned();
                let place = table.place(at, 1);
                return Err(Diagnostic::error(
                    Span::default(),
                    format!(
                        "the table is not UTF-8 text: byte 0x{:02X} cannot start or continue a character",
                        bytes[at]
                    ),
                )
                .with_hint("save the table as UTF-8 (spreadsheets call it \"CSV UTF-8\")")
                .in_table(place));
            }
        };
        let trimmed = table.text.trim_start_matches(['\u{feff}', ' ', '\t', '\r', '\n']);
        let json = name.to_ascii_lowercase().ends_with(".json") || trimmed.starts_with(['[', '{']);
        if json {
            table.format = Format::Json;
            table.read_json()?;
        } else {
            table.read_csv()?;
        }
        if table.columns.is_empty() {
            return Err(table.error(
                At::Start,
                "the table is empty".to_string(),
                "a table starts with a header naming its columns",
            ));
        }
        Ok(table)
    }

    /// The index of the column called `name`.
    pub fn column(&self, name: &str) -> Option<usize> {
        self.columns.iter().position(|c| c == name)
    }

    /// An error placed at `at`, with a hint.
    pub fn error(&self, at: At, message: String, hint: impl Into<String>) -> Diagnostic {
        let (offset, width) = self.offset(at);
        Diagnostic::error(Span::default(), message)
            .with_hint(hint)
            .in_table(self.place(offset, width))
    }

    /// 1-based line of row `row` (for messages that list places).
    pub fn line_of(&self, row: usize) -> usize {
        let (offset, _) = self.offset(At::Row(row));
        self.lines().line(offset)
    }

    fn lines(&self) -> &LineStarts {
        self.lines.get_or_init(|| LineStarts::new(&self.text))
    }

    /// Byte offset and width (in characters) of what `at` names.
    fn offset(&self, at: At) -> (usize, usize) {
        let width = |cell: &str| cell.chars().count().max(1);
        match at {
            At::Start => (0, 1),
            At::Column(c) => (
                self.column_at.get(c).copied().unwrap_or(0),
                self.columns.get(c).map_or(1, |s| width(s)),
            ),
            At::Row(r) => (
                self.row_at.get(r).and_then(|o| o.first()).copied().unwrap_or(0),
                1,
            ),
            At::Cell(r, c) => {
                let cell = self
                    .rows
                    .get(r)
                    .and_then(|row| row.get(c))
                    .map_or(1, |s| width(s));
                let offset = match self.format {
                    Format::Json => self.row_at.get(r).and_then(|o| o.get(c)).copied(),
                    Format::Csv => self
                        .row_at
                        .get(r)
                        .and_then(|o| o.first())
                        .map(|&start| csv_field_offset(&self.text, start, c)),
                };
                (offset.unwrap_or(0), cell)
            }
        }
    }

    fn place(&self, offset: usize, width: usize) -> Place {
        let offset = floor_boundary(self.text.as_bytes(), offset);
        let (line, column) = self.lines().line_col(&self.text, offset);
        let start = self.text[..offset].rfind('\n').map_or(0, |i| i + 1);
        let end = self.text[offset..]
            .find('\n')
            .map_or(self.text.len(), |i| offset + i);
        let text = self.text[start..end]
            .trim_end_matches('\r')
            .trim_start_matches('\u{feff}')
            .to_string();
        let column = if line == 1 && self.text.starts_with('\u{feff}') {
            column.saturating_sub(1).max(1)
        } else {
            column
        };
        Place {
            file: self.name.clone(),
            line,
            column,
            text,
            width,
        }
    }

    fn read_csv(&mut self) -> Result<(), Diagnostic> {
        let mut reader = csv::ReaderBuilder::new()
            .has_headers(false)
            .flexible(true)
            .trim(csv::Trim::All)
            .from_reader(self.text.as_bytes());
        let mut record = csv::StringRecord::new();
        let mut first = true;
        loop {
            match reader.read_record(&mut record) {
                Ok(false) => break,
                Ok(true) => {}
                Err(e) => return Err(self.csv_error(&e)),
            }
            // A record's position may sit on the line end before it.
            let mut start = record.position().map_or(0, |p| p.byte() as usize);
            while matches!(self.text.as_bytes().get(start), Some(b'\r' | b'\n')) {
                start += 1;
            }
            if first {
                first = false;
                self.columns = record.iter().map(str::to_string).collect();
                self.column_at = (0..record.len())
                    .map(|c| csv_field_offset(&self.text, start, c))
                    .collect();
                self.check_header()?;
                continue;
            }
            // A blank line is no record.
            if record.len() == 1 && record.get(0) == Some("") {
                continue;
            }
            self.row_at.push(vec![start]);
            self.rows.push(record.iter().map(str::to_string).collect());
            let r = self.rows.len() - 1;
            self.check_row_count(r)?;
            if record.len() != self.columns.len() {
                return Err(self.width_error(r, record.len()));
            }
        }
        Ok(())
    }

    fn csv_error(&self, e: &csv::Error) -> Diagnostic {
        let offset = e.position().map_or(0, |p| p.byte() as usize);
        let place = self.place(offset, 1);
        let message = match e.kind() {
            csv::ErrorKind::Utf8 { .. } => "the table is not UTF-8 text".to_string(),
            _ => format!("the table cannot be read as CSV: {e}"),
        };
        Diagnostic::error(Span::default(), message)
            .with_hint("write one record per line, fields separated by commas, quoted with `\"` when they hold commas or quotes")
            .in_table(place)
    }

    fn check_row_count(&self, r: usize) -> Result<(), Diagnostic> {
        if r >= MAX_ROWS {
            return Err(self.error(
                At::Row(r),
                format!("the table has more than {MAX_ROWS} rows"),
                "split the table; member tables hold at most 65,535 members anyway",
            ));
        }
        Ok(())
    }

    fn width_error(&self, r: usize, found: usize) -> Diagnostic {
        let expected = self.columns.len();
        if found < expected {
            self.error(
                At::Row(r),
                format!("row has {found} fields, the header {expected}: `{}` is missing", self.columns[found]),
                format!("every row needs one field per column of the header ({}); quote a field that holds a comma", self.columns.join(", ")),
            )
        } else {
            self.error(
                At::Cell(r, expected),
                format!("row has {found} fields, the header {expected}"),
                "remove the extra field, or quote a field that holds a comma (`\"Smith, J.\"`)",
            )
        }
    }

    /// Header cells are non-empty and distinct.
    fn check_header(&self) -> Result<(), Diagnostic> {
        for (c, name) in self.columns.iter().enumerate() {
            if name.is_empty() {
                return Err(self.error(
                    At::Column(c),
                    format!("column {} of the header has no name", c + 1),
                    "the first row names every column",
                ));
            }
            if let Some(first) = self.columns[..c].iter().position(|x| x == name) {
                return Err(self.error(
                    At::Column(c),
                    format!("the header names `{name}` twice"),
                    format!(
                        "columns {} and {} have the same name; rename one",
                        first + 1,
                        c + 1
                    ),
                ));
            }
        }
        Ok(())
    }

    fn read_json(&mut self) -> Result<(), Diagnostic> {
        let text = std::mem::take(&mut self.text);
        let parsed = parse_json(&text);
        self.text = text;
        let rows = match parsed {
            Ok(rows) => rows,
            Err(JsonError::Syntax(e)) => {
                let line = e.line();
                let offset = self.lines_offset(line, e.column());
                let place = self.place(offset, 1);
                let detail = e.to_string();
                let detail = detail.split(" at line").next().unwrap_or(&detail).to_string();
                return Err(Diagnostic::error(Span::default(), format!("the table is not valid JSON: {detail}"))
                    .with_hint("a JSON table is an array of objects, one per row: `[{\"name\": \"a\", \"votes\": \"12.5\"}, ...]`")
                    .in_table(place));
            }
            Err(JsonError::Shape(offset, message, hint)) => {
                return Err(Diagnostic::error(Span::default(), message)
                    .with_hint(hint)
                    .in_table(self.place(offset, 1)))
            }
        };
        for (r, row) in rows.into_iter().enumerate() {
            if r == 0 {
                self.columns = row.iter().map(|c| c.key.clone()).collect();
                self.column_at = row.iter().map(|c| c.key_at).collect();
                self.check_header()?;
            }
            self.check_row_count(r)?;
            let mut cells = vec![None; self.columns.len()];
            let mut offsets = vec![row.first().map_or(0, |c| c.key_at); self.columns.len()];
            for cell in &row {
                let Some(c) = self.column(&cell.key) else {
                    let place = self.place(cell.key_at, cell.key.chars().count() + 2);
                    return Err(Diagnostic::error(
                        Span::default(),
                        format!(
                            "row {} has a key `{}` the first row does not have",
                            r + 1,
                            cell.key
                        ),
                    )
                    .with_hint(format!(
                        "every object has the keys of the first ({})",
                        self.columns.join(", ")
                    ))
                    .in_table(place));
                };
                if cells[c].is_some() {
                    let place = self.place(cell.key_at, cell.key.chars().count() + 2);
                    return Err(Diagnostic::error(
                        Span::default(),
                        format!("row {} gives `{}` twice", r + 1, cell.key),
                    )
                    .with_hint("give each key once per object")
                    .in_table(place));
                }
                cells[c] = Some(cell.value.clone());
                offsets[c] = cell.value_at;
            }
            let object_at = row.first().map_or(0, |c| c.key_at);
            if let Some(missing) = cells.iter().position(Option::is_none) {
                let place = self.place(object_at, 1);
                return Err(Diagnostic::error(
                    Span::default(),
                    format!("row {} has no `{}`", r + 1, self.columns[missing]),
                )
                .with_hint(format!(
                    "every object has the keys of the first ({})",
                    self.columns.join(", ")
                ))
                .in_table(place));
            }
            self.rows
                .push(cells.into_iter().map(Option::unwrap_or_default).collect());
            self.row_at.push(offsets);
        }
        Ok(())
    }

    /// Byte offset of 1-based `line` and `column` (serde_json's column counts bytes).
    fn lines_offset(&self, line: usize, column: usize) -> usize {
        let start = self
            .text
            .split_inclusive('\n')
            .take(line.saturating_sub(1))
            .map(str::len)
            .sum::<usize>();
        (start + column.saturating_sub(1)).min(self.text.len())
    }
}

/// Largest char boundary at or below `at` in `bytes` taken as UTF-8 (or `at` itself).
fn floor_boundary(bytes: &[u8], at: usize) -> usize {
    let mut at = at.min(bytes.len());
    while at > 0 && at < bytes.len() && (bytes[at] & 0xC0) == 0x80 {
        at -= 1;
    }
    at
}

/// Byte offset of field `c` of the CSV record starting at `start`: walks
/// the record's raw text, honouring quotes (only for error messages).
fn csv_field_offset(text: &str, start: usize, c: usize) -> usize {
    let bytes = text.as_bytes();
    let mut at = start;
    // A byte-order mark before the header is not part of the first field.
    if text[start.min(text.len())..].starts_with('\u{feff}') {
        at += 3;
    }
    let mut field = 0;
    let mut field_start = at;
    let mut quoted = false;
    while at < bytes.len() && field < c {
        match bytes[at] {
            b'"' => quoted = !quoted,
            b',' if !quoted => {
                field += 1;
                field_start = at + 1;
            }
            b'\n' if !quoted => break,
            _ => {}
        }
        at += 1;
    }
    // Skip the spaces csv trims.
    while field_start < bytes.len() && matches!(bytes[field_start], b' ' | b'\t') {
        field_start += 1;
    }
    field_start
}

/// One key and value of a JSON row, with their byte offsets.
struct JsonCell {
    key: String,
    key_at: usize,
    value: String,
    value_at: usize,
}

enum JsonError {
    Syntax(serde_json::Error),
    /// Byte offset, message, hint.
    Shape(usize, String, String),
}

/// The rows of a JSON table, each a list of cells in the order written.
fn parse_json(text: &str) -> Result<Vec<Vec<JsonCell>>, JsonError> {
    let body = text.trim_start_matches('\u{feff}');
    let skipped = text.len() - body.len();
    let raw: Vec<Vec<(String, &RawValue)>> = {
        let mut de = serde_json::Deserializer::from_str(body);
        let rows = de.deserialize_seq(RowsVisitor).map_err(|e| {
            if e.is_data() && e.to_string().starts_with("invalid type") {
                JsonError::Shape(
                    skipped,
                    "the table is not an array of objects".to_string(),
                    "a JSON table is `[{\"name\": \"a\", \"votes\": \"12.5\"}, ...]`, one object per row"
                        .to_string(),
                )
            } else {
                JsonError::Syntax(e)
            }
        })?;
        de.end().map_err(JsonError::Syntax)?;
        rows
    };
    let offset_of = |s: &str| s.as_ptr() as usize - body.as_ptr() as usize + skipped;
    let mut rows = Vec::with_capacity(raw.len());
    for (r, object) in raw.into_iter().enumerate() {
        if r >= MAX_ROWS {
            let at = object.first().map_or(0, |(_, v)| offset_of(v.get()));
            return Err(JsonError::Shape(
                at,
                format!("the table has more than {MAX_ROWS} rows"),
                "split the table".to_string(),
            ));
        }
        let mut cells = Vec::with_capacity(object.len());
        for (key, value) in object {
            let raw = value.get();
            let value_at = offset_of(raw);
            // The key sits before the value: find its opening quote.
            let key_at = body[..value_at - skipped]
                .rfind(':')
                .and_then(|colon| body[..colon].rfind('"'))
                .and_then(|close| body[..close].rfind('"'))
                .map_or(value_at, |open| open + skipped);
            let text = match raw.as_bytes().first() {
                Some(b'"') => serde_json::from_str::<String>(raw).map_err(JsonError::Syntax)?,
                Some(b'-' | b'0'..=b'9') => raw.to_string(),
                _ => {
                    return Err(JsonError::Shape(
                        value_at,
                        format!("the value of `{key}` in row {} is not a string or a number", r + 1),
                        "table cells are strings or numbers (amounts may be either: `\"1520.565494\"` or 1520.565494)".to_string(),
                    ))
                }
            };
            cells.push(JsonCell {
                key,
                key_at,
                value: text,
                value_at,
            });
        }
        rows.push(cells);
    }
    Ok(rows)
}

/// An array of objects, each kept as (key, raw value) pairs in order.
struct RowsVisitor;

impl<'de> Visitor<'de> for RowsVisitor {
    type Value = Vec<Vec<(String, &'de RawValue)>>;

    fn expecting(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("an array of objects")
    }

    fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<Self::Value, A::Error> {
        let mut rows = Vec::new();
        while let Some(Row(row)) = seq.next_element()? {
            if rows.len() > MAX_ROWS {
                return Err(de::Error::custom(format!("more than {MAX_ROWS} rows")));
            }
            rows.push(row);
        }
        Ok(rows)
    }
}

struct Row<'de>(Vec<(String, &'de RawValue)>);

impl<'de> serde::Deserialize<'de> for Row<'de> {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct ObjectVisitor;
        impl<'de> Visitor<'de> for ObjectVisitor {
            type Value = Row<'de>;
            fn expecting(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
                f.write_str("an object")
            }
            fn visit_map<M: MapAccess<'de>>(self, mut map: M) -> Result<Row<'de>, M::Error> {
                let mut cells = Vec::new();
                while let Some((k, v)) = map.next_entry::<String, &'de RawValue>()? {
                    cells.push((k, v));
                }
                Ok(Row(cells))
            }
        }
        d.deserialize_map(ObjectVisitor)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rendered(name: &str, text: &str) -> String {
        let e = Table::read(name, text.as_bytes()).unwrap_err();
        e.render("unused", "")
    }

    #[test]
    fn csv_with_bom_crlf_and_quotes_reads_exactly() {
        let t = Table::read(
            "t.csv",
            "\u{feff}name,votes\r\n\"Smith, J.\",\"1.5\"\r\n\"say \"\"hi\"\"\" , 2\r\n\r\n".as_bytes(),
        )
        .unwrap();
        assert_eq!(t.columns, ["name", "votes"]);
        assert_eq!(t.rows, [["Smith, J.", "1.5"], ["say \"hi\"", "2"]]);
        let e = t.error(At::Cell(1, 1), "x".into(), "h");
        assert_eq!(e.line_col(""), (3, 16));
        let e = t.error(At::Column(0), "x".into(), "h");
        assert_eq!(e.line_col(""), (1, 1));
    }

    #[test]
    fn json_keeps_numbers_as_written_and_places_cells() {
        let text =
            "[\n {\"name\": \"a\", \"votes\": 1520.565494},\n {\"votes\": \"2\", \"name\": \"b\\u00e9\"}\n]";
        let t = Table::read("t.json", text.as_bytes()).unwrap();
        assert_eq!(t.columns, ["name", "votes"]);
        assert_eq!(t.rows, [["a", "1520.565494"], ["bé", "2"]]);
        assert_eq!(t.error(At::Cell(1, 0), "x".into(), "h").line_col(""), (3, 25));
        assert_eq!(t.error(At::Column(1), "x".into(), "h").line_col(""), (2, 16));
    }

    #[test]
    fn bad_tables_are_refused_with_their_place() {
        assert_eq!(
            rendered("t.csv", "name,votes\na,1\nb\n"),
            "t.csv:3:1: error: row has 1 fields, the header 2: `votes` is missing\n\
             \x20  3 | b\n\x20    | ^\n\
             \x20    = hint: every row needs one field per column of the header (name, votes); quote a field that holds a comma\n"
        );
        assert!(rendered("t.csv", "name,votes\na,1,2\n")
            .starts_with("t.csv:2:5: error: row has 3 fields, the header 2"));
        assert!(
            rendered("t.csv", "name,name\n").starts_with("t.csv:1:6: error: the header names `name` twice")
        );
        assert!(rendered("t.csv", "").starts_with("t.csv:1:1: error: the table is empty"));
        assert!(rendered("t.json", "[{\"a\": 1}, {\"a\": 2, \"b\": 3}]")
            .starts_with("t.json:1:21: error: row 2 has a key `b`"));
        assert!(rendered("t.json", "[{\"a\": 1}, {}]").contains("row 2 has no `a`"));
        assert!(rendered("t.json", "[{\"a\": [1]}]")
            .starts_with("t.json:1:8: error: the value of `a` in row 1 is not a string or a number"));
        assert!(rendered("t.json", "{\"a\": 1}").contains("not an array of objects"));
        assert!(rendered("t.json", "[{\"a\": 1},\n {\"a\": 2,}]")
            .starts_with("t.json:2:10: error: the table is not valid JSON: trailing comma"));
        let bytes = b"name,votes\na\xff,1\n";
        let e = Table::read("t.csv", bytes).unwrap_err();
        assert_eq!(e.line_col(""), (2, 2));
        assert!(e.message.contains("not UTF-8"));
    }
}
