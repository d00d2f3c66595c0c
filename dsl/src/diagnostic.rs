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
}

impl Diagnostic {
    /// An error at `span`.
    pub fn error(span: Span, message: impl Into<String>) -> Self {
        Diagnostic {
            severity: Severity::Error,
            span,
            message: message.into(),
            hint: None,
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

    /// 1-based line and column of the start.
    pub fn line_col(&self, source: &str) -> (usize, usize) {
        self.span.line_col(source)
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
        let (line, col) = self.line_col(source);
        let mut out = format!(
            "{file}:{line}:{col}: {}: {}\n",
            self.severity.label(),
            printable(&self.message)
        );
        let start = floor_char_boundary(source, self.span.start);
        let line_start = source[..start].rfind('\n').map_or(0, |i| i + 1);
        let line_end = source[start..].find('\n').map_or(source.len(), |i| start + i);
        let text: Vec<char> = source[line_start..line_end]
            .trim_end_matches('\r')
            .chars()
            .map(|c| if c == '\t' { ' ' } else { shown(c) })
            .collect();
        let end = floor_char_boundary(source, self.span.end.clamp(start, line_end));
        let width = source[start..end].chars().count().max(1);
        // Window: from a little before the span, at most LINE_WINDOW characters.
        let first = if text.len() > LINE_WINDOW {
            (col - 1).saturating_sub(LINE_WINDOW / 4)
        } else {
            0
        };
        let last = (first + LINE_WINDOW).min(text.len());
        let before = if first > 0 { "..." } else { "" };
        let after = if last < text.len() { "..." } else { "" };
        let window: String = text[first.min(last)..last].iter().collect();
        let width = width.min(LINE_WINDOW.saturating_sub(col - 1 - first).max(1));
        let gutter = line.to_string().len().max(4);
        let _ = writeln!(out, "{line:>gutter$} | {before}{window}{after}");
        let _ = writeln!(
            out,
            "{:gutter$} | {}{}",
            "",
            " ".repeat(col - 1 - first + before.len()),
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
pub fn limit(mut diagnostics: Vec<Diagnostic>) -> Vec<Diagnostic> {
    if diagnostics.len() > MAX_DIAGNOSTICS {
        let dropped = diagnostics.len() - MAX_DIAGNOSTICS;
        let at = diagnostics[MAX_DIAGNOSTICS].span;
        diagnostics.truncate(MAX_DIAGNOSTICS);
        diagnostics.push(
            Diagnostic::note(at, format!("{dropped} more errors not shown"))
                .with_hint("fix the errors above and check the file again"),
        );
    }
    diagnostics
}

/// A character as it may be shown on a terminal: control characters and
/// bidirectional formatting characters (which can reorder or hide text)
/// become U+FFFD.
fn shown(c: char) -> char {
    let bidi =
        matches!(c, '\u{202a}'..='\u{202e}' | '\u{2066}'..='\u{2069}' | '\u{200e}' | '\u{200f}' | '\u{061c}');
    if (c.is_control() && c != '\n') || bidi {
        '\u{fffd}'
    } else {
        c
    }
}

/// `text` with [`shown`] applied to every character.
fn printable(text: &str) -> std::borrow::Cow<'_, str> {
    if text.chars().all(|c| shown(c) == c) {
        std::borrow::Cow::Borrowed(text)
    } else {
        std::borrow::Cow::Owned(text.chars().map(shown).collect())
    }
}

/// Renders every diagnostic, in order.
pub fn render_all(diagnostics: &[Diagnostic], file: &str, source: &str) -> String {
    diagnostics.iter().map(|d| d.render(file, source)).collect()
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
}
