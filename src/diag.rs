//! The one diagnostic type every stage uses to report a problem: a stable code, a
//! message, where it is (file, field path, line and column) and an optional hint.
//! A result may carry many diagnostics at once.

use serde::{Deserialize, Serialize};
use std::borrow::Cow;
use std::fmt::Write as _;

/// User text made safe to print on a terminal: every control character (Unicode
/// category Cc: line breaks, tabs, ESC, BEL, the C1 range) written as an escape
/// such as `\n` or `\u{1b}`, so that a value can neither forge an output line nor
/// send the terminal a command. Text without control characters is returned as it is.
pub(crate) fn terminal_safe(text: &str) -> Cow<'_, str> {
    if !text.chars().any(char::is_control) {
        return Cow::Borrowed(text);
    }
    let mut out = String::with_capacity(text.len() + 8);
    for c in text.chars() {
        match c {
            '\n' => out.push_str("\\n"),
            '\r' => out.push_str("\\r"),
            '\t' => out.push_str("\\t"),
            c if c.is_control() => {
                let _ = write!(out, "\\u{{{:x}}}", u32::from(c));
            }
            c => out.push(c),
        }
    }
    Cow::Owned(out)
}

/// Longest message or hint shown whole, in characters; a longer one (which can only
/// come from echoing a long value) keeps its start and end around an ellipsis.
const MAX_MESSAGE: usize = 1_000;

/// `text` cut to [`MAX_MESSAGE`] characters, keeping its start and its end.
fn shortened(text: &str) -> Cow<'_, str> {
    let count = text.chars().count();
    if count <= MAX_MESSAGE {
        return Cow::Borrowed(text);
    }
    let head: String = text.chars().take(MAX_MESSAGE * 3 / 4).collect();
    let tail: String = text.chars().skip(count - MAX_MESSAGE / 5).collect();
    Cow::Owned(format!(
        "{head} ... ({} characters left out) ... {tail}",
        count - head.chars().count() - tail.chars().count()
    ))
}

/// A message, hint, field or file name as printed: shortened, then terminal-safe.
fn shown(text: &str) -> String {
    terminal_safe(&shortened(text)).into_owned()
}

/// How serious a diagnostic is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Severity {
    /// The input cannot be used.
    Error,
    /// The input can be used, but something deserves a look.
    Warning,
}

/// A position in a text file, both counted from 1.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize, Deserialize)]
pub struct Position {
    /// Line, from 1.
    pub line: usize,
    /// Column in characters, from 1.
    pub column: usize,
}

/// One problem found by any stage.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct Diagnostic {
    /// Error or warning.
    pub severity: Severity,
    /// A stable short code such as `unknown-field`; tests and scripts rely on it.
    pub code: String,
    /// What is wrong, in one sentence.
    pub message: String,
    /// The file the problem is in, as the user named it.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub file: Option<String>,
    /// The field path inside the deal file, such as `cash_flows.dated[3].date`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub field: Option<String>,
    /// Where in the file, when known.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub position: Option<Position>,
    /// A suggestion that helps fix it.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub hint: Option<String>,
}

impl Diagnostic {
    /// A new error with a code and a message.
    pub fn error(code: &str, message: impl Into<String>) -> Self {
        let message = message.into();
        Self {
            severity: Severity::Error,
            code: code.to_string(),
            message: match shortened(&message) {
                Cow::Borrowed(_) => message,
                Cow::Owned(short) => short,
            },
            file: None,
            field: None,
            position: None,
            hint: None,
        }
    }

    /// Names the file.
    pub(crate) fn in_file(mut self, file: impl Into<String>) -> Self {
        self.file = Some(file.into());
        self
    }

    /// Names the field path.
    pub(crate) fn at_field(mut self, field: impl Into<String>) -> Self {
        self.field = Some(field.into());
        self
    }

    /// Sets the position.
    pub fn at(mut self, line: usize, column: usize) -> Self {
        self.position = Some(Position { line, column });
        self
    }

    /// Adds a hint.
    pub(crate) fn with_hint(mut self, hint: impl Into<String>) -> Self {
        self.hint = Some(hint.into());
        self
    }

    /// Renders the diagnostic for a person: `file:line:column`, the message, the source
    /// line with a caret under the column, and the hint.
    pub fn render(&self, source: Option<&str>) -> String {
        let mut out = String::new();
        let label = match self.severity {
            Severity::Error => "error",
            Severity::Warning => "warning",
        };
        let _ = write!(
            out,
            "{label}[{}]: {}",
            shown(&self.code),
            shown(&self.message)
        );
        let mut location = self.file.as_deref().map(shown).unwrap_or_default();
        if let Some(p) = self.position {
            let _ = write!(location, ":{}:{}", p.line, p.column);
        }
        if !location.is_empty() || self.field.is_some() {
            out.push_str("\n  --> ");
            out.push_str(&location);
            if let Some(field) = &self.field {
                if !location.is_empty() {
                    out.push_str("  ");
                }
                let _ = write!(out, "(field `{}`)", shown(field));
            }
        }
        if let (Some(p), Some(src)) = (self.position, source) {
            if let Some(text) = src.lines().nth(p.line.saturating_sub(1)) {
                let gutter = p.line.to_string();
                let pad = " ".repeat(gutter.len());
                let (shown, caret) = excerpt(text, p.column);
                let _ = write!(out, "\n {pad} |\n {gutter} | {shown}\n {pad} | ");
                out.push_str(&" ".repeat(display_width_before(&shown, caret)));
                out.push('^');
            }
        }
        if let Some(hint) = &self.hint {
            let _ = write!(out, "\n  = hint: {}", shown(hint));
        }
        out
    }
}

/// Longest source line shown whole; longer lines are cut to a window around the column.
const MAX_SHOWN: usize = 100;

/// The source line as shown (tabs as spaces, long lines cut around `column` with `...`)
/// and the caret's column within what is shown.
fn excerpt(text: &str, column: usize) -> (String, usize) {
    let chars: Vec<char> = text
        .chars()
        .map(|c| match c {
            '\t' => ' ',
            // Control characters as their visible pictures (U+2400 on), one for one.
            '\0'..='\u{1f}' => char::from_u32(0x2400 + u32::from(c)).unwrap_or('\u{fffd}'),
            c if c.is_control() => '\u{fffd}',
            c => c,
        })
        .collect();
    if chars.len() <= MAX_SHOWN {
        return (chars.into_iter().collect(), column);
    }
    let at = column.saturating_sub(1).min(chars.len());
    let from = at.saturating_sub(MAX_SHOWN / 3);
    let to = (from + MAX_SHOWN).min(chars.len());
    let mut shown = String::new();
    let mut caret = at - from + 1;
    if from > 0 {
        shown.push_str("...");
        caret += 3;
    }
    shown.extend(&chars[from..to]);
    if to < chars.len() {
        shown.push_str("...");
    }
    (shown, caret)
}

/// How many terminal cells the characters before `caret` (1-based, in characters)
/// take: two for a wide character such as a CJK ideograph, none for a combining mark
/// (Unicode East Asian Width), one for each column past the end of the line.
fn display_width_before(shown: &str, caret: usize) -> usize {
    use unicode_width::UnicodeWidthChar as _;
    let before = caret.saturating_sub(1);
    let mut cells = 0;
    let mut counted = 0;
    for c in shown.chars().take(before) {
        cells += c.width().unwrap_or(0);
        counted += 1;
    }
    cells + (before - counted)
}

impl std::fmt::Display for Diagnostic {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.render(None))
    }
}

/// Several diagnostics, in the order they were found.
pub type Diagnostics = Vec<Diagnostic>;

/// A count with thousands separators, for messages: `200,000`.
pub(crate) fn grouped(n: u64) -> String {
    let digits = n.to_string();
    let mut out = String::with_capacity(digits.len() + digits.len() / 3);
    for (i, ch) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(ch);
    }
    out
}

/// Whose fault a failure is, which decides the exit code.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FailureClass {
    /// The input (a deal, a house style, an option, the environment) is at fault, or a
    /// verification found a problem: exit code 1.
    Invalid,
    /// candor itself, or the system under it, failed: exit code 2.
    Internal,
}

impl FailureClass {
    /// The exit code of a run that ends with this failure.
    pub fn exit_code(self) -> u8 {
        match self {
            FailureClass::Invalid => 1,
            FailureClass::Internal => 2,
        }
    }
}

/// Why a run could not finish: every diagnostic, the text of each file they point
/// into (so that each is shown under its own file's line), and the exit class. The
/// one failure type of the library; commands render it with [`Failure::render`].
#[derive(Debug, Clone)]
pub struct Failure {
    /// The problems found, all at once.
    pub diagnostics: Vec<Diagnostic>,
    /// Text of the files named by the diagnostics, by the name they carry in `file`.
    pub sources: Vec<(String, String)>,
    /// Whose fault it is.
    pub class: FailureClass,
}

impl Failure {
    /// A failure caused by the input, with one diagnostic.
    pub fn invalid(diagnostic: Diagnostic) -> Self {
        Self::many(vec![diagnostic], FailureClass::Invalid)
    }

    /// A failure of candor or the system, with one diagnostic.
    pub(crate) fn internal(diagnostic: Diagnostic) -> Self {
        Self::many(vec![diagnostic], FailureClass::Internal)
    }

    /// A failure with several diagnostics.
    pub fn many(diagnostics: Vec<Diagnostic>, class: FailureClass) -> Self {
        Self {
            diagnostics,
            sources: Vec::new(),
            class,
        }
    }

    /// Keeps the text of `file` for showing source lines (the name as in
    /// [`Diagnostic::file`]).
    pub(crate) fn with_source(mut self, file: impl Into<String>, text: impl Into<String>) -> Self {
        let file = file.into();
        if !self.sources.iter().any(|(f, _)| *f == file) {
            self.sources.push((file, text.into()));
        }
        self
    }

    /// The text kept for `file`, if any.
    pub(crate) fn source_of(&self, file: Option<&str>) -> Option<&str> {
        let file = file?;
        self.sources
            .iter()
            .find(|(f, _)| f == file)
            .map(|(_, t)| t.as_str())
    }

    /// The exit code of a run that ends with this failure.
    pub fn exit_code(&self) -> u8 {
        self.class.exit_code()
    }

    /// Every diagnostic for a person, one block each, separated by blank lines; each
    /// shows the line of the file it names.
    pub fn render(&self) -> String {
        self.diagnostics
            .iter()
            .map(|d| d.render(self.source_of(d.file.as_deref())))
            .collect::<Vec<_>>()
            .join("\n\n")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn render_points_at_the_column() {
        let d = Diagnostic::error("bad-date", "no such day")
            .in_file("deal.yaml")
            .at_field("deal.as_of")
            .at(2, 10)
            .with_hint("check the month");
        let text = d.render(Some("candor: 1\n  as_of: 2027-02-30\n"));
        assert_eq!(
            text,
            "error[bad-date]: no such day\n  --> deal.yaml:2:10  (field `deal.as_of`)\n   |\n 2 |   as_of: 2027-02-30\n   |          ^\n  = hint: check the month"
        );
    }

    #[test]
    fn the_caret_sits_under_the_column_after_wide_and_combining_characters() {
        // Unicode Standard Annex #11 (East Asian Width): CJK ideographs are Wide and
        // take two terminal cells; a combining acute accent (U+0301) takes none.
        let d = Diagnostic::error("bad-amount", "not a number")
            .in_file("deal.yaml")
            .at(1, 16);
        let text = d.render(Some("name: \u{6771}\u{4eac} Cafe\u{301} x1\n"));
        let lines: Vec<&str> = text.lines().collect();
        let source = lines[3].split_once("| ").unwrap().1;
        let caret = lines[4].split_once("| ").unwrap().1;
        // Column 16 is the `x`: after `name: ` (6), two ideographs, a space, `Cafe`
        // with its accent (5 characters) and a space.
        assert_eq!(source.chars().nth(15), Some('x'));
        // Cells before it: 6 + 2 * 2 + 1 + 4 + 0 + 1 = 16.
        assert_eq!(caret, format!("{}^", " ".repeat(16)));
        // A column past the end of the line still lands one cell per column.
        assert_eq!(display_width_before("\u{6771}", 3), 3);
        assert_eq!(display_width_before("ab", 1), 0);
    }

    #[test]
    fn each_diagnostic_is_shown_under_its_own_files_line() {
        let f = Failure::many(
            vec![
                Diagnostic::error("a", "in the deal")
                    .in_file("d.yaml")
                    .at(2, 1),
                Diagnostic::error("b", "in the csv")
                    .in_file("f.csv")
                    .at(1, 3),
            ],
            FailureClass::Invalid,
        )
        .with_source("d.yaml", "one\ntwo\n")
        .with_source("f.csv", "date,amount\n");
        let text = f.render();
        assert!(text.contains(" 2 | two"), "{text}");
        assert!(text.contains(" 1 | date,amount"), "{text}");
        assert!(!text.contains("| one"), "{text}");
        assert_eq!(f.exit_code(), 1);
    }

    #[test]
    fn control_characters_are_shown_as_escapes() {
        // ECMA-48: ESC [ 2 K erases the line, ESC ] 0 ; ... BEL retitles the window.
        let d = Diagnostic::error("unknown-field", "unknown field `a\r\u{1b}[2K`")
            .in_file("deal\u{7}.yaml")
            .at_field("scenarios.\u{1b}]0;title\u{7}")
            .at(1, 1)
            .with_hint("line one\nerror: forged");
        let text = d.render(Some("a\u{1b}: 1\n"));
        assert!(
            !text.chars().any(|c| c.is_control() && c != '\n'),
            "{text:?}"
        );
        assert_eq!(text.lines().count(), 6, "{text}");
        assert!(text.contains("unknown field `a\\r\\u{1b}[2K`"), "{text}");
        assert!(text.contains("= hint: line one\\nerror: forged"), "{text}");
        assert!(
            text.contains("(field `scenarios.\\u{1b}]0;title\\u{7}`)"),
            "{text}"
        );
        assert_eq!(terminal_safe("plain é"), Cow::Borrowed("plain é"));
        assert_eq!(terminal_safe("a\tb\u{9b}"), "a\\tb\\u{9b}");
    }

    #[test]
    fn long_messages_keep_their_start_and_end() {
        let long = format!("`{}` is not a number", "9".repeat(9_000_000));
        let d = Diagnostic::error("bad-number", long);
        assert!(d.message.len() < 1_100, "{}", d.message.len());
        assert!(d.message.starts_with("`999") && d.message.ends_with("` is not a number"));
        assert!(d.message.contains("characters left out"));
    }

    #[test]
    fn long_lines_are_cut_around_the_column() {
        let line = format!("{}X{}", "a".repeat(500), "b".repeat(500));
        let (shown, caret) = excerpt(&line, 501);
        assert!(shown.len() < 120, "{}", shown.len());
        assert!(shown.starts_with("...") && shown.ends_with("..."));
        assert_eq!(shown.chars().nth(caret - 1), Some('X'));
        assert_eq!(excerpt("short", 3), ("short".to_string(), 3));
    }
}
