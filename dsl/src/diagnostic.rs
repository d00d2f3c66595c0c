//! Errors and warnings that point at the input.
//!
//! A [`Diagnostic`] holds a byte [`Span`] into the source, a short lowercase
//! message and an optional hint. [`Diagnostic::render`] gives the form every
//! front end prints:
//!
//! ```text
//! board.clout:5:17: error: unknown name `harbour`
//!     5 | bloc founders = harbour, mill
//!       |                 ^^^^^^^
//!       = hint: did you mean `harbor`?
//! ```
//!
//! Lines and columns are 1-based; columns count characters, not bytes.
//! Rendering is O(length of the source) for the line lookup.

use std::fmt::Write;

/// A byte range `start..end` in the source text.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
pub struct Span {
    /// First byte.
    pub start: usize,
    /// One past the last byte.
    pub end: usize,
}

impl Span {
    /// The range `start..end`.
    pub fn new(start: usize, end: usize) -> Self {
        Span { start, end }
    }

    /// The smallest span covering both.
    pub fn to(self, other: Span) -> Span {
        Span::new(self.start.min(other.start), self.end.max(other.end))
    }

    /// The text this span covers (empty when out of range).
    pub fn text(self, source: &str) -> &str {
        source.get(self.start..self.end).unwrap_or("")
    }

    /// 1-based line and column (in characters) of the span's start.
    pub fn line_col(self, source: &str) -> (usize, usize) {
        let start = floor_char_boundary(source, self.start);
        let before = &source[..start];
        let line = before.matches('\n').count() + 1;
        let line_start = before.rfind('\n').map_or(0, |i| i + 1);
        let col = source[line_start..start].chars().count() + 1;
        (line, col)
    }
}

fn floor_char_boundary(s: &str, mut i: usize) -> usize {
    i = i.min(s.len());
    while !s.is_char_boundary(i) {
        i -= 1;
    }
    i
}

/// How serious a diagnostic is.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Severity {
    /// Information that changes nothing (for example a check that was skipped).
    Note,
    /// The file compiles, but probably not to what its author meant.
    Warning,
    /// The file does not compile.
    Error,
}

impl Severity {
    fn label(self) -> &'static str {
        match self {
            Severity::Note => "note",
            Severity::Warning => "warning",
            Severity::Error => "error",
        }
    }
}

/// One error, warning or note about a source file.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Diagnostic {
    /// How serious it is.
    pub severity: Severity,
    /// Where in the source.
    pub span: Span,
    /// What is wrong: short, lowercase, naming the offender.
    pub message: String,
    /// What to do about it.
    pub hint: Option<String>,
    /// For an error in a data table (not in the rule text): the table's
    /// name and the line and column in it; `span` then means nothing.
    pub place: Option<Box<Place>>,
}

/// Where in a data table (CSV or JSON) an error is: the file as named,
/// 1-based line and column (in characters), and that line's text.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Place {
    /// The table as shown in messages (its path, or `<stdin>`).
    pub file: String,
    /// 1-based line.
    pub line: usize,
    /// 1-based column, in characters.
    pub column: usize,
    /// The text of the line (without its line end).
    pub text: String,
    /// Characters to underline (at least 1).
    pub width: usize,
}

impl Diagnostic {
    /// An error at `span`.
    pub fn error(span: Span, message: impl Into<String>) -> Self {
        Diagnostic {
            severity: Severity::Error,
            span,
            message: message.into(),
            hint: None,
            place: None,
        }
    }

    /// A warning at `span`.
    pub fn warning(span: Span, message: impl Into<String>) -> Self {
        Diagnostic {
            severity: Severity::Warning,
            ..Diagnostic::error(span, message)
        }
    }

    /// A note at `span`.
    pub fn note(span: Span, message: impl Into<String>) -> Self {
        Diagnostic {
            severity: Severity::Note,
            ..Diagnostic::error(span, message)
        }
    }

    /// The same diagnostic with a hint.
    pub fn with_hint(mut self, hint: impl Into<String>) -> Self {
        self.hint = Some(hint.into());
        self
    }

    /// The same diagnostic, placed in a data table instead of the rule text.
    pub fn in_table(mut self, place: Place) -> Self {
        self.place = Some(Box::new(place));
        self
    }

    /// 1-based line and column of the start (in the data table, for an
    /// error placed there).
    pub fn line_col(&self, source: &str) -> (usize, usize) {
        match &self.place {
            Some(p) => (p.line, p.column),
            None => self.span.line_col(source),
        }
    }

    /// `file:line:col: severity: message`, the source line with carets under
    /// the span, and the hint.
    ///
    /// Safe to print on a terminal whatever the source holds: control
    /// characters and bidirectional overrides in the message, the hint and
    /// the line are shown as `\u{fffd}`, tabs as spaces (so the carets stay
    /// aligned), and a line longer than [`LINE_WINDOW`] characters is cut to
    /// a window around the span, marked with `...`.
    pub fn render(&self, file: &str, source: &str) -> String {
        self.render_with(file, source, &LineStarts::new(source))
    }

    /// [`Self::render`] with the line starts of `source` already found.
    fn render_with(&self, file: &str, source: &str, lines: &LineStarts) -> String {
        if let Some(place) = &self.place {
            return self.render_placed(place);
        }
        let (line, column) = lines.line_col(source, self.span.start);
        let start = floor_char_boundary(source, self.span.start);
        let line_start = source[..start].rfind('\n').map_or(0, |i| i + 1);
        let line_end = source[start..].find('\n').map_or(source.len(), |i| start + i);
        let end = floor_char_boundary(source, self.span.end.clamp(start, line_end));
        let place = Place {
            file: file.to_string(),
            line,
            column,
            text: source[line_start..line_end].trim_end_matches('\r').to_string(),
            width: source[start..end].chars().count().max(1),
        };
        self.render_placed(&place)
    }
}

impl Diagnostic {
    /// The rendering of [`Self::render`] at a place: a line of rule text or of a data table.
    fn render_placed(&self, place: &Place) -> String {
        let Place {
            file,
            line,
            column,
            text,
            width,
        } = place;
        let mut out = format!(
            "{}:{line}:{column}: {}: {}\n",
            printable(file),
            self.severity.label(),
            printable(&self.message)
        );
        let chars: Vec<char> = text
            .chars()
            .map(|c| if c == '\t' { ' ' } else { shown(c) })
            .collect();
        let col = column.saturating_sub(1).min(chars.len());
        let first = if chars.len() > LINE_WINDOW {
            col.saturating_sub(LINE_WINDOW / 4)
        } else {
            0
        };
        let last = (first + LINE_WINDOW).min(chars.len());
        let before = if first > 0 { "..." } else { "" };
        let after = if last < chars.len() { "..." } else { "" };
        let window: String = chars[first.min(last)..last].iter().collect();
        let width = (*width)
            .max(1)
            .min(LINE_WINDOW.saturating_sub(col - first).max(1));
        let gutter = line.to_string().len().max(4);
        let _ = writeln!(out, "{line:>gutter$} | {before}{window}{after}");
        let _ = writeln!(
            out,
            "{:gutter$} | {}{}",
            "",
            " ".repeat(col - first + before.len()),
            "^".repeat(width)
        );
        if let Some(hint) = &self.hint {
            let _ = writeln!(out, "{:gutter$} = hint: {}", "", printable(hint));
        }
        out
    }
}

/// Longest source line, in characters, that [`Diagnostic::render`] shows whole.
pub const LINE_WINDOW: usize = 120;

/// Most diagnostics [`limit`] keeps of one file; the rest are counted in a note.
pub const MAX_DIAGNOSTICS: usize = 100;

/// Keeps the first [`MAX_DIAGNOSTICS`] diagnostics and notes how many were
/// dropped, so a file of a hundred thousand mistakes is reported quickly.
pub fn limit(diagnostics: Vec<Diagnostic>) -> Vec<Diagnostic> {
    let mut capped = CappedErrors::new();
    capped.extend(diagnostics);
    capped.into_vec()
}

/// How many errors a list from [`limit`] (or from
/// [`compile`](crate::compile())) stands for: the errors shown plus the ones
/// its closing note counts as not shown. A front end prints this number in
/// its summary line, so that it matches what is shown and what is elided.
pub fn error_count(diagnostics: &[Diagnostic]) -> usize {
    let shown = diagnostics
        .iter()
        .filter(|d| d.severity == Severity::Error)
        .count();
    let elided: usize = diagnostics
        .iter()
        .filter(|d| d.severity == Severity::Note)
        .filter_map(|d| d.message.strip_suffix(ELIDED_SUFFIX)?.parse::<usize>().ok())
        .sum();
    shown + elided
}

/// The end of the note that counts elided errors: `"{n} more errors not shown"`.
const ELIDED_SUFFIX: &str = " more errors not shown";

/// Errors of one file in the order found: the first [`MAX_DIAGNOSTICS`] are
/// kept, the rest only counted, so memory stays bounded however many
/// mistakes a file holds. [`Self::into_vec`] closes the list with a note that
/// counts the rest (the form [`limit`] gives and [`error_count`] reads).
#[derive(Debug, Default)]
pub(crate) struct CappedErrors {
    kept: Vec<Diagnostic>,
    /// Errors counted but not kept.
    elided: usize,
    /// Where the first of them is.
    first_elided: Span,
}

impl CappedErrors {
    pub(crate) fn new() -> Self {
        CappedErrors::default()
    }

    pub(crate) fn push(&mut self, d: Diagnostic) {
        if self.kept.len() < MAX_DIAGNOSTICS {
            self.kept.push(d);
        } else {
            if self.elided == 0 {
                self.first_elided = d.span;
            }
            self.elided += 1;
        }
    }

    pub(crate) fn extend(&mut self, diagnostics: impl IntoIterator<Item = Diagnostic>) {
        for d in diagnostics {
            self.push(d);
        }
    }

    /// Errors found so far, kept or not.
    pub(crate) fn total(&self) -> usize {
        self.kept.len() + self.elided
    }

    pub(crate) fn is_empty(&self) -> bool {
        self.total() == 0
    }

    /// Whether the next error will only be counted: work that only serves
    /// the text of an error (a suggestion, say) can be skipped.
    pub(crate) fn is_full(&self) -> bool {
        self.kept.len() >= MAX_DIAGNOSTICS
    }

    /// The kept errors, then a note counting the others (if any).
    pub(crate) fn into_vec(mut self) -> Vec<Diagnostic> {
        if self.elided > 0 {
            self.kept.push(
                Diagnostic::note(self.first_elided, format!("{}{ELIDED_SUFFIX}", self.elided))
                    .with_hint("fix the errors above and check the file again"),
            );
        }
        self.kept
    }
}

/// Byte offsets where the lines of a source start: line and column of any
/// offset in O(log lines) after one O(source) pass.
#[derive(Clone, Debug)]
pub(crate) struct LineStarts(Vec<usize>);

impl LineStarts {
    pub(crate) fn new(source: &str) -> Self {
        let starts = std::iter::once(0)
            .chain(source.match_indices('\n').map(|(i, _)| i + 1))
            .collect();
        LineStarts(starts)
    }

    /// 1-based line of byte `at`.
    pub(crate) fn line(&self, at: usize) -> usize {
        self.0.partition_point(|&s| s <= at).max(1)
    }

    /// 1-based line and column (in characters) of byte `at`, as [`Span::line_col`].
    pub(crate) fn line_col(&self, source: &str, at: usize) -> (usize, usize) {
        let at = floor_char_boundary(source, at);
        let line = self.line(at);
        let start = self.0[line - 1];
        (line, source[start..at].chars().count() + 1)
    }
}

/// A character as it may be shown on a terminal: control characters,
/// bidirectional and other invisible format characters (which can reorder
/// or hide text; [`crate::escape::is_hidden`]) become U+FFFD, one column
/// wide, so the carets under a quoted line stay aligned.
pub(crate) fn shown(c: char) -> char {
    if c != '\n' && crate::escape::is_hidden(c) {
        '\u{fffd}'
    } else {
        c
    }
}

/// A file name, message or hint for a terminal: newlines kept, every other
/// hidden character as a visible escape (`\u{1b}`, [`crate::escape`]).
fn printable(text: &str) -> std::borrow::Cow<'_, str> {
    crate::escape::terminal_lines(text)
}

/// Renders every diagnostic, in order.
pub fn render_all(diagnostics: &[Diagnostic], file: &str, source: &str) -> String {
    let lines = LineStarts::new(source);
    diagnostics
        .iter()
        .map(|d| d.render_with(file, source, &lines))
        .collect()
}

/// The candidate closest to `word` by edit distance, if close enough to be a
/// likely typo (at most a third of the word's length, and at least 1).
pub fn closest<'a>(word: &str, candidates: impl IntoIterator<Item = &'a str>) -> Option<&'a str> {
    let len = word.chars().count();
    let limit = (len / 3).max(1);
    candidates
        .into_iter()
        // Lengths that differ by more than the limit cannot be close: skip the O(|a| |b|) distance.
        .filter(|c| c.len().abs_diff(len) <= limit * 4 && c.chars().count().abs_diff(len) <= limit)
        .map(|c| (edit_distance(word, c), c))
        .filter(|&(d, _)| d <= limit)
        .min_by_key(|&(d, _)| d)
        .map(|(_, c)| c)
}

/// Levenshtein distance over characters, O(|a| |b|) time, O(|b|) space.
fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut row: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut diagonal = row[0];
        row[0] = i + 1;
        for (j, &cb) in b.iter().enumerate() {
            let substitute = diagonal + usize::from(ca != cb);
            diagonal = row[j + 1];
            row[j + 1] = substitute.min(row[j] + 1).min(row[j + 1] + 1);
        }
    }
    row[b.len()]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn renders_line_caret_and_hint() {
        let src = "member a seats=1\nrule r = sets > 1/2\n";
        let d = Diagnostic::error(Span::new(26, 30), "unknown attribute `sets`")
            .with_hint("did you mean `seats`?");
        assert_eq!(
            d.render("f.clout", src),
            "f.clout:2:10: error: unknown attribute `sets`\n\
             \x20  2 | rule r = sets > 1/2\n\
             \x20    |          ^^^^\n\
             \x20    = hint: did you mean `seats`?\n"
        );
    }

    #[test]
    fn columns_count_characters() {
        let src = "title \"Zürich\" x";
        assert_eq!(Span::new(16, 17).line_col(src), (1, 16));
    }

    #[test]
    fn suggests_close_names_only() {
        assert_eq!(closest("harbour", ["harbor", "mill"]), Some("harbor"));
        assert_eq!(closest("zzz", ["harbor", "mill"]), None);
        assert_eq!(edit_distance("kitten", "sitting"), 3);
    }

    #[test]
    fn line_starts_agree_with_the_scan() {
        let src = "a\nbé\n\ncd\n";
        let lines = LineStarts::new(src);
        for at in 0..=src.len() + 2 {
            assert_eq!(
                lines.line_col(src, at),
                Span::new(at, at).line_col(src),
                "at {at}"
            );
        }
    }

    #[test]
    fn capped_errors_keep_a_hundred_and_count_the_rest() {
        let errors: Vec<Diagnostic> = (0..250)
            .map(|i| Diagnostic::error(Span::new(i, i + 1), "x"))
            .collect();
        let kept = limit(errors);
        assert_eq!(kept.len(), MAX_DIAGNOSTICS + 1);
        let note = &kept[MAX_DIAGNOSTICS];
        assert_eq!(
            (note.severity, note.message.as_str()),
            (Severity::Note, "150 more errors not shown")
        );
        assert_eq!(note.span, Span::new(100, 101));
        assert_eq!(error_count(&kept), 250);
        assert_eq!(error_count(&kept[..3]), 3);
        assert_eq!(limit(kept[..3].to_vec()).len(), 3);
    }
}
