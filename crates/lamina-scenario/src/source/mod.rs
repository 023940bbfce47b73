//! Where each field is in a scenario's text: a tolerant scan of the RON source that records the
//! line and column of every value under its field path (`states[1].rate`, `cut.axes.1`,
//! `cut.surface.normal["v"]`), and names the field at a given position for parse errors.
//!
//! The scan fails only on brackets nested deeper than a scenario can use ([`TooDeep`]); on
//! other text that is not valid RON it still records what it can, which is what locating a
//! syntax error needs. It takes time and memory linear in the text (see `scanner`).

mod scanner;

use std::collections::HashMap;
use std::fmt;

use scanner::{Bracket, Scanner};
pub(crate) use scanner::{MAX_NESTING, Opened, TooDeep};

/// A 1-based line and column (in characters) in a scenario's text.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct Location {
    /// Line, from 1.
    pub line: usize,
    /// Column in characters, from 1.
    pub column: usize,
}

impl fmt::Display for Location {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "line {}, column {}", self.line, self.column)
    }
}

/// One value found in the text.
#[derive(Clone, Debug)]
struct Entry {
    /// Where the value starts.
    location: Location,
    /// Byte range of the value's first token.
    token: (usize, usize),
    /// Whether the value is a `"..."` string without escapes or line breaks, so that a
    /// character offset inside it maps to a column directly.
    plain_string: bool,
}

/// The location of every value of a scenario's text, by field path.
///
/// Equality ignores the contents: two scenarios that differ only in where their fields
/// were written are equal.
#[derive(Clone, Debug, Default)]
pub struct SourceMap {
    /// The first value recorded under each field path.
    entries: HashMap<String, Entry>,
}

impl PartialEq for SourceMap {
    fn eq(&self, _other: &Self) -> bool {
        true
    }
}

impl SourceMap {
    /// Scans `text`; refuses brackets nested deeper than [`MAX_NESTING`], saying where.
    pub(crate) fn scan(text: &str) -> Result<Self, TooDeep> {
        let mut scanner = Scanner::new(text);
        scanner.run(None);
        match scanner.too_deep {
            Some(too_deep) => Err(too_deep),
            None => Ok(Self {
                entries: scanner.entries,
            }),
        }
    }

    fn entry(&self, path: &str) -> Option<&Entry> {
        self.entries.get(path)
    }

    /// Where the value at `path` starts, if it was in the text.
    pub(crate) fn location(&self, path: &str) -> Option<Location> {
        self.entry(path).map(|e| e.location)
    }

    /// Where character `char_offset` of the string at `path` is, if the string is written
    /// plainly (no escapes, on one line); otherwise where the value starts.
    pub(crate) fn location_in_string(&self, path: &str, char_offset: usize) -> Option<Location> {
        let entry = self.entry(path)?;
        if entry.plain_string {
            Some(Location {
                line: entry.location.line,
                column: entry.location.column + 1 + char_offset,
            })
        } else {
            Some(entry.location)
        }
    }

    /// Files the value recorded at `old` under `new` instead (a field renamed since the
    /// text's format).
    pub(crate) fn rename(&mut self, old: &str, new: &str) {
        if let Some(entry) = self.entries.remove(old) {
            self.entries.insert(new.to_owned(), entry);
        }
    }

    /// The text of the first token of the value at `path`.
    pub(crate) fn token<'a>(&self, text: &'a str, path: &str) -> Option<&'a str> {
        let (start, end) = self.entry(path)?.token;
        text.get(start..end)
    }
}

/// What encloses a position in the text: the innermost container's path and, when the
/// position is at a value, that value's path; and what the text before it left open.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub(crate) struct Context {
    /// Path of the innermost open `(`, `[` or `{` (empty at the top).
    pub container: String,
    /// Path of the value being read at the position, if any (`None` where a field name or
    /// map key belongs).
    pub value: Option<String>,
    /// The innermost bracket still open at the position.
    pub open: Option<Opened>,
    /// The first `/*` before the position that is never closed.
    pub unclosed_comment: Option<Location>,
    /// The first string before the position that is never closed.
    pub unclosed_string: Option<Location>,
    /// Where the token just before the position starts, if it is a string running over
    /// several lines (perhaps its closing quote is missing).
    pub after_multiline_string: Option<Location>,
    /// Whether only whitespace and comments follow the position.
    pub at_end: bool,
}

/// The context at `location` in `text`.
pub(crate) fn context_at(text: &str, location: Location) -> Context {
    let offset = byte_offset(text, location);
    let mut scanner = Scanner::new(text);
    scanner.run(Some(offset));
    scanner.skip_trivia();
    let at_end = scanner.pos >= text.len();
    let open = scanner.stack.last().map(scanner::Frame::opened);
    let (unclosed_comment, unclosed_string) = (scanner.unclosed_comment, scanner.unclosed_string);
    let after_multiline_string = scanner.after_multiline_string;
    Context {
        open,
        unclosed_comment,
        unclosed_string,
        after_multiline_string,
        at_end,
        ..context_of(&mut scanner)
    }
}

/// The container and value at the scanner's position: a value's path unless the next token
/// is a field name or map key.
fn context_of(scanner: &mut Scanner<'_>) -> Context {
    let Some(frame) = scanner.stack.last() else {
        return Context::default();
    };
    let container = frame.path.clone();
    let at_value = match frame.bracket {
        _ if frame.transparent || frame.key.is_some() => true,
        Bracket::Square => true,
        Bracket::Brace => false,
        // a struct's elements are fields: with no field name yet, a name belongs here
        Bracket::Paren if frame.struct_like => false,
        Bracket::Paren => {
            let element = frame.element_path();
            scanner.skip_trivia();
            let word_start = scanner.pos;
            if scanner
                .peek()
                .is_some_and(|c| c.is_alphabetic() || c == '_')
            {
                scanner.atom();
            }
            let is_field_name =
                scanner.pos > word_start && scanner.peek_after_trivia() == Some(':');
            return Context {
                container,
                value: (!is_field_name).then_some(element),
                ..Context::default()
            };
        }
    };
    let value = at_value.then(|| frame.element_path());
    Context {
        container,
        value,
        ..Context::default()
    }
}

/// Byte offset of a 1-based line and character column; the end of the text if beyond it.
fn byte_offset(text: &str, location: Location) -> usize {
    let mut line = 1;
    let mut column = 1;
    for (idx, c) in text.char_indices() {
        if line > location.line || (line == location.line && column >= location.column) {
            return idx;
        }
        if c == '\n' {
            line += 1;
            column = 1;
        } else {
            column += 1;
        }
    }
    text.len()
}

#[cfg(test)]
mod tests {
    use super::*;

    const TEXT: &str = r#"(
    format: 2,
    states: [
        (name: "x", start: 0.1, rate: "v"),  // comment, with: colon
        (name: "v", start: 0.0, rate: "-x"),
    ],
    /* block (comment) */
    cut: Some((
        surface: Plane(normal: {"v": 1.0, "x": 2}, offset: 0.0),
        axes: ("x", "v"),
    )),
    strobe: Some((period: "2*pi/w", surface: Level("x^2"))),
)"#;

    fn loc(line: usize, column: usize) -> Location {
        Location { line, column }
    }

    #[test]
    fn records_values_by_path() {
        let map = SourceMap::scan(TEXT).expect("nests shallowly");
        assert_eq!(map.location("format"), Some(loc(2, 13)));
        assert_eq!(map.location("states"), Some(loc(3, 13)));
        assert_eq!(map.location("states[0]"), Some(loc(4, 9)));
        assert_eq!(map.location("states[1].rate"), Some(loc(5, 39)));
        assert_eq!(map.location("cut"), Some(loc(8, 10)));
        assert_eq!(map.location("cut.surface"), Some(loc(9, 18)));
        assert_eq!(map.location("cut.surface.normal[\"v\"]"), Some(loc(9, 38)));
        assert_eq!(map.location("cut.surface.normal[\"x\"]"), Some(loc(9, 48)));
        assert_eq!(map.location("cut.surface.offset"), Some(loc(9, 60)));
        assert_eq!(map.location("cut.axes.1"), Some(loc(10, 21)));
        assert_eq!(map.location("strobe.period"), Some(loc(12, 27)));
        assert_eq!(map.location("strobe.surface.0"), Some(loc(12, 52)));
        assert_eq!(map.token(TEXT, "format"), Some("2"));
    }

    #[test]
    fn locates_characters_inside_plain_strings() {
        let map = SourceMap::scan(TEXT).expect("nests shallowly");
        // `-x`: the `x` is character 1 of the rate, one past the opening quote at column 39
        assert_eq!(
            map.location_in_string("states[1].rate", 1),
            Some(loc(5, 41))
        );
    }

    #[test]
    fn names_the_context_of_a_position() {
        let ctx = context_at(TEXT, loc(4, 39));
        assert_eq!(ctx.container, "states[0]");
        assert_eq!(ctx.value.as_deref(), Some("states[0].rate"));
        let ctx = context_at(TEXT, loc(9, 24));
        assert_eq!(ctx.container, "cut.surface");
    }

    #[test]
    fn survives_garbage() {
        for text in [
            "",
            "(",
            ")))",
            "\"unterminated",
            "(a: [1, {\"k\": ",
            "r#\"x",
            "/* open",
            "'",
        ] {
            let _ = SourceMap::scan(text).is_ok();
            let _ = context_at(text, loc(1, 3));
        }
    }
}
