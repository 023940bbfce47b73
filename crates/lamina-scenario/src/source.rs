//! Where each field is in a scenario's text: a tolerant scan of the RON source that records the
//! line and column of every value under its field path (`states[1].rate`, `cut.axes.1`,
//! `cut.surface.normal["v"]`), and names the field at a given position for parse errors.
//!
//! The scan never fails: on text that is not valid RON it still records what it can, which is
//! what locating a syntax error needs.

use std::collections::HashMap;
use std::fmt;

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
    /// Scans `text`.
    pub(crate) fn scan(text: &str) -> Self {
        let mut scanner = Scanner::new(text);
        scanner.run(None);
        Self {
            entries: scanner.entries,
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
/// position is at a value, that value's path.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub(crate) struct Context {
    /// Path of the innermost open `(`, `[` or `{` (empty at the top).
    pub container: String,
    /// Path of the value being read at the position, if any.
    pub value: Option<String>,
}

/// The context at `location` in `text`.
pub(crate) fn context_at(text: &str, location: Location) -> Context {
    let offset = byte_offset(text, location);
    let mut scanner = Scanner::new(text);
    scanner.run(Some(offset));
    scanner.context()
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

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Bracket {
    Paren,
    Square,
    Brace,
}

#[derive(Clone, Debug)]
struct Frame {
    bracket: Bracket,
    path: String,
    /// `Some(...)`: the content is the same value as the wrapper.
    transparent: bool,
    /// Element index (tuples, lists, maps).
    index: usize,
    /// Field name or map key of the current element, once its `:` was seen.
    key: Option<String>,
    /// A map key was read and its `:` is awaited.
    pending_key: Option<String>,
}

impl Frame {
    fn element_path(&self) -> String {
        if self.transparent {
            return self.path.clone();
        }
        let suffix = match (self.bracket, &self.key) {
            (Bracket::Paren, Some(key)) => key.clone(),
            (Bracket::Paren, None) => self.index.to_string(),
            (Bracket::Square, _) => return format!("{}[{}]", self.path, self.index),
            (Bracket::Brace, Some(key)) => return format!("{}[{key:?}]", self.path),
            (Bracket::Brace, None) => return format!("{}[{}]", self.path, self.index),
        };
        if self.path.is_empty() {
            suffix
        } else {
            format!("{}.{suffix}", self.path)
        }
    }

    /// Whether the next token starts an element's key rather than its value.
    fn at_key(&self) -> bool {
        self.key.is_none() && self.pending_key.is_none()
    }
}

struct Scanner<'a> {
    text: &'a str,
    pos: usize,
    line: usize,
    column: usize,
    stack: Vec<Frame>,
    entries: HashMap<String, Entry>,
    /// The top-level value was read (or opened).
    top_done: bool,
}

impl<'a> Scanner<'a> {
    fn new(text: &'a str) -> Self {
        Self {
            text,
            pos: 0,
            line: 1,
            column: 1,
            stack: Vec::new(),
            entries: HashMap::new(),
            top_done: false,
        }
    }

    fn peek(&self) -> Option<char> {
        self.text[self.pos..].chars().next()
    }

    fn bump(&mut self) -> Option<char> {
        let c = self.peek()?;
        self.pos += c.len_utf8();
        if c == '\n' {
            self.line += 1;
            self.column = 1;
        } else {
            self.column += 1;
        }
        Some(c)
    }

    fn here(&self) -> Location {
        Location {
            line: self.line,
            column: self.column,
        }
    }

    /// Skips whitespace, comments and `#![...]` attributes.
    fn skip_trivia(&mut self) {
        loop {
            let rest = &self.text[self.pos..];
            if rest.starts_with("//") {
                while let Some(c) = self.peek() {
                    if c == '\n' {
                        break;
                    }
                    self.bump();
                }
            } else if rest.starts_with("/*") {
                self.bump();
                self.bump();
                let mut depth = 1;
                while depth > 0 {
                    let rest = &self.text[self.pos..];
                    if rest.is_empty() {
                        break;
                    } else if rest.starts_with("*/") {
                        depth -= 1;
                        self.bump();
                        self.bump();
                    } else if rest.starts_with("/*") {
                        depth += 1;
                        self.bump();
                        self.bump();
                    } else {
                        self.bump();
                    }
                }
            } else if rest.starts_with("#!") || rest.starts_with("#[") {
                while let Some(c) = self.bump() {
                    if c == ']' {
                        break;
                    }
                }
            } else if self.peek().is_some_and(char::is_whitespace) {
                self.bump();
            } else {
                return;
            }
        }
    }

    /// The next non-trivia character after the current position, without moving.
    fn peek_after_trivia(&mut self) -> Option<char> {
        let saved = (self.pos, self.line, self.column);
        self.skip_trivia();
        let c = self.peek();
        (self.pos, self.line, self.column) = saved;
        c
    }

    fn value_path(&self) -> String {
        self.stack
            .last()
            .map(Frame::element_path)
            .unwrap_or_default()
    }

    /// The context at the current position: a value's path unless the next token is a
    /// field name or map key.
    fn context(&mut self) -> Context {
        let Some(frame) = self.stack.last() else {
            return Context::default();
        };
        let container = frame.path.clone();
        let at_value = match frame.bracket {
            _ if frame.transparent || frame.key.is_some() => true,
            Bracket::Square => true,
            Bracket::Brace => false,
            Bracket::Paren => {
                let element = frame.element_path();
                self.skip_trivia();
                let word_start = self.pos;
                if self.peek().is_some_and(|c| c.is_alphabetic() || c == '_') {
                    self.atom();
                }
                let is_field_name = self.pos > word_start && self.peek_after_trivia() == Some(':');
                return Context {
                    container,
                    value: (!is_field_name).then_some(element),
                };
            }
        };
        let value = at_value.then(|| frame.element_path());
        Context { container, value }
    }

    fn record(&mut self, location: Location, token: (usize, usize), plain_string: bool) {
        let path = self.value_path();
        if self.stack.is_empty() {
            if self.top_done {
                return;
            }
            self.top_done = true;
        }
        self.entries.entry(path).or_insert(Entry {
            location,
            token,
            plain_string,
        });
    }

    fn open(&mut self, bracket: Bracket, transparent: bool) {
        let path = self.value_path();
        self.stack.push(Frame {
            bracket,
            path,
            transparent,
            index: 0,
            key: None,
            pending_key: None,
        });
    }

    /// Reads a string literal (plain, raw or byte); returns whether it was plain.
    fn string(&mut self) -> bool {
        let mut hashes = 0;
        let mut raw = false;
        if self.peek() == Some('b') {
            self.bump();
        }
        if self.peek() == Some('r') {
            raw = true;
            self.bump();
            while self.peek() == Some('#') {
                hashes += 1;
                self.bump();
            }
        }
        self.bump(); // the opening quote
        let mut plain = !raw;
        while let Some(c) = self.bump() {
            match c {
                '\\' if !raw => {
                    plain = false;
                    self.bump();
                }
                '\n' => plain = false,
                '"' => {
                    let closing = "#".repeat(hashes);
                    if self.text[self.pos..].starts_with(&closing) {
                        for _ in 0..hashes {
                            self.bump();
                        }
                        return plain;
                    }
                }
                _ => {}
            }
        }
        plain
    }

    fn is_string_start(&self) -> bool {
        let rest = &self.text[self.pos..];
        rest.starts_with('"')
            || rest.starts_with("r\"")
            || rest.starts_with("r#")
            || rest.starts_with("b\"")
            || rest.starts_with("br\"")
            || rest.starts_with("br#")
    }

    /// Reads an identifier, number or other bare word.
    fn atom(&mut self) {
        while let Some(c) = self.peek() {
            if c.is_alphanumeric() || matches!(c, '_' | '.' | '+' | '-' | '#') {
                self.bump();
            } else {
                break;
            }
        }
    }

    fn run(&mut self, stop_at: Option<usize>) {
        loop {
            self.skip_trivia();
            if stop_at.is_some_and(|stop| self.pos >= stop) {
                return;
            }
            let Some(c) = self.peek() else { return };
            let start = self.pos;
            let location = self.here();
            match c {
                '(' | '[' | '{' => {
                    self.bump();
                    self.record(location, (start, self.pos), false);
                    let bracket = match c {
                        '(' => Bracket::Paren,
                        '[' => Bracket::Square,
                        _ => Bracket::Brace,
                    };
                    self.open(bracket, false);
                }
                ')' | ']' | '}' => {
                    self.bump();
                    self.stack.pop();
                }
                ',' => {
                    self.bump();
                    if let Some(frame) = self.stack.last_mut() {
                        frame.index += 1;
                        frame.key = None;
                        frame.pending_key = None;
                    }
                }
                ':' => {
                    self.bump();
                    if let Some(frame) = self.stack.last_mut()
                        && let Some(key) = frame.pending_key.take()
                    {
                        frame.key = Some(key);
                    }
                }
                '\'' => {
                    // a char literal: 'x' or '\n'
                    self.bump();
                    if self.peek() == Some('\\') {
                        self.bump();
                    }
                    self.bump();
                    if self.peek() == Some('\'') {
                        self.bump();
                    }
                    self.record(location, (start, self.pos), false);
                }
                _ if self.is_string_start() => {
                    let plain = self.string();
                    let token = (start, self.pos);
                    let in_map_key = self
                        .stack
                        .last()
                        .is_some_and(|f| f.bracket == Bracket::Brace && f.at_key());
                    if in_map_key {
                        let key = unquote(&self.text[start..self.pos]);
                        if let Some(frame) = self.stack.last_mut() {
                            frame.pending_key = Some(key);
                        }
                    } else {
                        self.record(location, token, plain);
                    }
                }
                _ if c.is_alphanumeric() || matches!(c, '_' | '.' | '+' | '-') => {
                    self.atom();
                    let token = (start, self.pos);
                    let word = &self.text[start..self.pos];
                    let next = self.peek_after_trivia();
                    let at_key = self.stack.last().is_some_and(Frame::at_key);
                    let bracket = self.stack.last().map(|f| f.bracket);
                    if at_key && next == Some(':') && bracket != Some(Bracket::Square) {
                        let key = word.to_owned();
                        if let Some(frame) = self.stack.last_mut() {
                            frame.pending_key = Some(key);
                        }
                    } else if next == Some('(')
                        && word.starts_with(|c: char| c.is_alphabetic() || c == '_')
                    {
                        // `Some(...)`, `Plane(...)`, `Level(...)` or a named struct
                        self.record(location, token, false);
                        let transparent = word == "Some";
                        self.skip_trivia();
                        if stop_at.is_some_and(|stop| self.pos >= stop) {
                            return;
                        }
                        self.bump();
                        self.open(Bracket::Paren, transparent);
                    } else {
                        self.record(location, token, false);
                    }
                }
                _ => {
                    self.bump();
                }
            }
        }
    }
}

/// The content of a simple `"..."` key (escapes are kept as written).
fn unquote(token: &str) -> String {
    let trimmed = token
        .trim_start_matches(['b', 'r', '#'])
        .trim_end_matches('#');
    trimmed
        .strip_prefix('"')
        .and_then(|s| s.strip_suffix('"'))
        .unwrap_or(trimmed)
        .to_owned()
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
        let map = SourceMap::scan(TEXT);
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
        let map = SourceMap::scan(TEXT);
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
            let _ = SourceMap::scan(text);
            let _ = context_at(text, loc(1, 3));
        }
    }
}
