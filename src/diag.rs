//! Diagnostics: errors and warnings that name the file, line, column and key.
//!
//! A [`Diagnostic`] carries a message, an optional byte span in the show file
//! and an optional key path (`prop.left.tether_m`). [`Diagnostics`] collects
//! many, so that a show's errors are reported all at once.

use std::fmt;
use std::ops::Range;
use std::sync::Arc;

/// Severity of a diagnostic.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Severity {
    /// The show cannot be used.
    Error,
    /// The show works, but something deserves a look.
    Warning,
}

/// The most errors a list of diagnostics prints; the rest are counted
/// ("and N more errors").
pub const MAX_PRINTED_ERRORS: usize = 50;

/// A source file's name and text, shared by its diagnostics.
#[derive(Debug)]
pub struct Source {
    /// The path as the user gave it.
    pub name: String,
    /// The whole text of the file.
    pub text: String,
    /// Byte offset of the start of every line, in order (the first is 0).
    line_starts: Vec<usize>,
}

impl Source {
    /// A source file from its name and text; indexes its line starts once,
    /// so that locating a span is a binary search.
    pub fn new(name: impl Into<String>, text: String) -> Self {
        let line_starts = std::iter::once(0)
            .chain(text.match_indices('\n').map(|(i, _)| i + 1))
            .collect();
        Source {
            name: name.into(),
            text,
            line_starts,
        }
    }

    /// Line and column (both from 1, columns in characters) of byte `offset`.
    pub fn line_col(&self, offset: usize) -> (usize, usize) {
        let offset = floor_char_boundary(&self.text, offset.min(self.text.len()));
        // The last line starting at or before `offset`.
        let line = self.line_starts.partition_point(|&s| s <= offset);
        let line_start = self.line_starts[line - 1];
        let col = self.text[line_start..offset].chars().count() + 1;
        (line, col)
    }

    /// The text of line `line` (from 1), without its newline.
    pub fn line_text(&self, line: usize) -> &str {
        let Some(&start) = self.line_starts.get(line.saturating_sub(1)) else {
            return "";
        };
        let end = self
            .line_starts
            .get(line)
            .map_or(self.text.len(), |&next| next - 1);
        self.text[start..end].trim_end_matches('\r')
    }
}

fn floor_char_boundary(s: &str, mut i: usize) -> usize {
    while i > 0 && !s.is_char_boundary(i) {
        i -= 1;
    }
    i
}

/// One error or warning.
#[derive(Clone, Debug)]
pub struct Diagnostic {
    /// Error or warning.
    pub severity: Severity,
    /// What is wrong, lower case, names in backticks.
    pub message: String,
    /// The key path at fault, e.g. `prop.left.tether_m`.
    pub key: Option<String>,
    /// Byte range in the source file.
    pub span: Option<Range<usize>>,
    /// The file the span refers to.
    pub source: Option<Arc<Source>>,
    /// What to try next.
    pub help: Option<String>,
}

impl Diagnostic {
    /// A new error with a message.
    pub fn error(message: impl Into<String>) -> Self {
        Diagnostic {
            severity: Severity::Error,
            message: message.into(),
            key: None,
            span: None,
            source: None,
            help: None,
        }
    }

    /// A new warning with a message: printed, but the show is still used.
    pub fn warning(message: impl Into<String>) -> Self {
        Diagnostic {
            severity: Severity::Warning,
            ..Diagnostic::error(message)
        }
    }

    /// Sets the key path.
    pub fn key(mut self, key: impl Into<String>) -> Self {
        self.key = Some(key.into());
        self
    }

    /// Sets the span and its file.
    pub fn at(mut self, source: &Arc<Source>, span: Range<usize>) -> Self {
        self.source = Some(source.clone());
        self.span = Some(span);
        self
    }

    /// Sets the help text.
    pub fn help(mut self, help: impl Into<String>) -> Self {
        self.help = Some(help.into());
        self
    }

    /// `file:line:column` where the diagnostic points, if it has a span.
    pub fn location(&self) -> Option<(String, usize, usize)> {
        let source = self.source.as_ref()?;
        let span = self.span.as_ref()?;
        let (line, col) = source.line_col(span.start);
        Some((source.name.clone(), line, col))
    }
}

/// Every piece of a diagnostic is escaped as it is printed (messages and
/// help keep their line breaks): a name, key or line of the show cannot
/// send control sequences to the terminal.
impl fmt::Display for Diagnostic {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let message = escape_text(&self.message);
        let key = self.key.as_deref().map(escape);
        let label = match self.severity {
            Severity::Error => "error",
            Severity::Warning => "warning",
        };
        match (&self.source, &self.span) {
            (Some(source), Some(span)) => {
                let (line, col) = source.line_col(span.start);
                write!(f, "{}:{line}:{col}: {label}", escape(&source.name))?;
                if let Some(key) = &key {
                    write!(f, " in `{key}`")?;
                }
                writeln!(f, ": {message}")?;
                // A tab becomes one space, so that the caret, placed by
                // characters, stays under the text.
                let text = escape(&source.line_text(line).replace('\t', " "));
                let width = line.to_string().len();
                writeln!(f, "{:width$} |", "")?;
                writeln!(f, "{line} | {text}")?;
                let (end_line, end_col) = source.line_col(span.end.max(span.start + 1) - 1);
                let carets = if end_line == line {
                    (end_col + 1).saturating_sub(col).max(1)
                } else {
                    1
                };
                write!(
                    f,
                    "{:width$} | {}{}",
                    "",
                    " ".repeat(col - 1),
                    "^".repeat(carets)
                )?;
            }
            (Some(source), None) => {
                write!(f, "{}: {label}", escape(&source.name))?;
                if let Some(key) = &key {
                    write!(f, " in `{key}`")?;
                }
                write!(f, ": {message}")?;
            }
            _ => {
                write!(f, "{label}")?;
                if let Some(key) = &key {
                    write!(f, " in `{key}`")?;
                }
                write!(f, ": {message}")?;
            }
        }
        if let Some(help) = &self.help {
            write!(f, "\n  = help: {}", escape_text(help))?;
        }
        Ok(())
    }
}

/// A list of diagnostics, errors first in the order found.
#[derive(Clone, Debug, Default)]
pub struct Diagnostics(pub Vec<Diagnostic>);

impl Diagnostics {
    /// Adds one.
    pub fn push(&mut self, d: Diagnostic) {
        self.0.push(d);
    }

    /// True when any is an error.
    pub fn has_errors(&self) -> bool {
        self.0.iter().any(|d| d.severity == Severity::Error)
    }

    /// True when there are none.
    pub fn is_empty(&self) -> bool {
        self.0.is_empty()
    }

    /// True when any points into a file that was read: the file's text is
    /// at fault, not the file's absence.
    pub fn any_located(&self) -> bool {
        self.0.iter().any(|d| d.source.is_some())
    }
}

impl Diagnostics {
    /// The number of errors (warnings not counted).
    pub fn error_count(&self) -> usize {
        self.0
            .iter()
            .filter(|d| d.severity == Severity::Error)
            .count()
    }
}

/// Prints the first [`MAX_PRINTED_ERRORS`] errors (and every warning before
/// the cut), then how many more there are, then the count.
impl fmt::Display for Diagnostics {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let mut errors = 0;
        let mut printed = 0;
        for d in &self.0 {
            if d.severity == Severity::Error {
                errors += 1;
                if errors > MAX_PRINTED_ERRORS {
                    continue;
                }
            } else if errors >= MAX_PRINTED_ERRORS {
                continue;
            }
            if printed > 0 {
                writeln!(f)?;
            }
            printed += 1;
            writeln!(f, "{d}")?;
        }
        if errors > MAX_PRINTED_ERRORS {
            let more = errors - MAX_PRINTED_ERRORS;
            let s = if more == 1 { "" } else { "s" };
            writeln!(f, "\nand {more} more error{s}")?;
        }
        if errors > 1 {
            writeln!(f, "{errors} errors")?;
        }
        Ok(())
    }
}

impl std::error::Error for Diagnostics {}

impl From<Diagnostic> for Diagnostics {
    fn from(d: Diagnostic) -> Self {
        Diagnostics(vec![d])
    }
}

/// Levenshtein edit distance between two strings, in characters.
pub fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut row: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut prev = row[0];
        row[0] = i + 1;
        for (j, &cb) in b.iter().enumerate() {
            let cur = row[j + 1];
            row[j + 1] = (prev + usize::from(ca != cb)).min(row[j] + 1).min(cur + 1);
            prev = cur;
        }
    }
    row[b.len()]
}

/// The candidate closest to `word` by edit distance, if it is close enough
/// to be a likely typo (at most a third of the word's length, at least 1,
/// and never a complete rewrite of it).
pub fn did_you_mean<'a>(
    word: &str,
    candidates: impl IntoIterator<Item = &'a str>,
) -> Option<&'a str> {
    let limit = (word.chars().count() / 3).max(1);
    candidates
        .into_iter()
        .map(|c| (edit_distance(word, c), c))
        .filter(|&(d, _)| d <= limit && d < word.chars().count())
        .min_by_key(|&(d, _)| d)
        .map(|(_, c)| c)
}

/// `text` safe to print to a terminal: control characters (escape
/// sequences, carriage returns, bells) written as `\u{..}`, the rest as is.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        // Control characters, and the bidirectional overrides that can make
        // a line read other than it is.
        if c.is_control() || matches!(c, '\u{202a}'..='\u{202e}' | '\u{2066}'..='\u{2069}') {
            out.push_str(&format!("\\u{{{:x}}}", u32::from(c)));
        } else {
            out.push(c);
        }
    }
    out
}

/// The cause of a failed read or write in a few plain words: "no such
/// file", "permission denied", "no space left on the device", else the
/// system's own message (without its error number).
pub fn io_phrase(e: &std::io::Error) -> String {
    use std::io::ErrorKind as K;
    match e.kind() {
        K::NotFound => "no such file".into(),
        K::PermissionDenied => "permission denied".into(),
        K::StorageFull => "no space left on the device".into(),
        K::IsADirectory => "it is a folder, not a file".into(),
        K::ReadOnlyFilesystem => "the file system is read-only".into(),
        K::QuotaExceeded => "the disk quota is exceeded".into(),
        _ => {
            let s = e.to_string();
            match s.find(" (os error") {
                Some(i) => s[..i].to_string(),
                None => s,
            }
        }
    }
}

/// [`escape`], but keeping line breaks: for messages of several lines.
pub fn escape_text(text: &str) -> String {
    text.split('\n').map(escape).collect::<Vec<_>>().join("\n")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn edit_distance_of_kitten_and_sitting_is_three() {
        // The textbook example (Levenshtein distance, e.g. Wikipedia's page).
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("", "abc"), 3);
        assert_eq!(edit_distance("tether_m", "tether_m"), 0);
    }

    #[test]
    fn suggests_close_names_only() {
        let keys = ["tether_m", "anchor_m", "leds"];
        assert_eq!(did_you_mean("tethr_m", keys), Some("tether_m"));
        assert_eq!(did_you_mean("colour", keys), None);
    }

    #[test]
    fn line_and_column_count_characters() {
        let s = Source::new("a.toml", "x = 1\ny = \"é\" z\n".into());
        assert_eq!(s.line_col(0), (1, 1));
        assert_eq!(s.line_col(6), (2, 1));
        let z = s.text.find('z').unwrap();
        assert_eq!(s.line_col(z), (2, 9));
        // The newline itself ends its line; past the end is the last line.
        assert_eq!(s.line_col(5), (1, 6));
        assert_eq!(s.line_col(1000), (3, 1));
        assert_eq!(s.line_text(2), "y = \"é\" z");
        assert_eq!(s.line_text(3), "");
        assert_eq!(s.line_text(9), "");
    }

    #[test]
    fn show_text_in_a_diagnostic_is_escaped_but_line_breaks_kept() {
        let text = "[prop.\"\u{1b}]0;pwned\u{7}\"]\n\tx = 1\n";
        let src = std::sync::Arc::new(Source::new("a.toml", text.into()));
        let d = Diagnostic::error("the name `\u{1b}]0;pwned\u{7}` cannot be used\nsecond line")
            .key("prop.\u{1b}]0;pwned\u{7}")
            .at(&src, 0..5)
            .help("try \u{202e}this");
        let shown = d.to_string();
        assert!(
            !shown.chars().any(|c| c.is_control() && c != '\n'),
            "{shown:?}"
        );
        assert!(
            shown.contains("`\\u{1b}]0;pwned\\u{7}` cannot be used\nsecond line"),
            "{shown}"
        );
        assert!(shown.contains("in `prop.\\u{1b}]0;pwned\\u{7}`"), "{shown}");
        assert!(shown.contains("try \\u{202e}this"), "{shown}");
        // A tab in the quoted line becomes a space.
        let tab = Diagnostic::error("x").at(&src, text.find('x').unwrap()..text.len() - 4);
        assert!(tab.to_string().contains("2 |  x = 1"), "{tab}");
    }

    #[test]
    fn at_most_fifty_errors_are_printed_then_the_rest_counted() {
        let src = std::sync::Arc::new(Source::new("a.toml", "x\n".repeat(80)));
        let all: Vec<Diagnostic> = (0..80)
            .map(|i| Diagnostic::error(format!("bad {i}")).at(&src, 2 * i..2 * i + 1))
            .collect();
        let text = Diagnostics(all).to_string();
        assert!(text.contains("a.toml:50:1: error: bad 49"), "{text}");
        assert!(!text.contains("bad 50"), "{text}");
        assert!(text.contains("and 30 more errors\n80 errors\n"), "{text}");
    }
}
