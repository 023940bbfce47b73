//! The tolerant scan behind [`super::SourceMap`] and [`super::context_at`]: one pass over the
//! text that follows brackets, strings, comments, field names and map keys the way `ron`
//! reads them, in time and memory linear in the text.
//!
//! Bounds, so that no text can make it (or `ron` after it) run out of memory: brackets nest at
//! most [`MAX_NESTING`] deep (deeper, the scan stops and says where); a key is kept in paths
//! to at most [`MAX_KEY_CHARS`] characters; and the recorded locations take at most
//! [`MAX_RECORDED_BYTES`] (a file beyond that keeps the locations of its first part only).

use std::collections::HashMap;

use super::{Entry, Location};

/// The deepest nesting of brackets a scenario may have. A scenario needs about 6
/// (`view: Some((camera: Some((...))))`); `ron` itself refuses more than 128.
pub(crate) const MAX_NESTING: usize = 32;
/// Keys (field names, map keys) longer than this are cut short in field paths.
const MAX_KEY_CHARS: usize = 256;
/// The most bytes the recorded locations may take, counting each path and
/// [`ENTRY_COST`] bytes for its entry.
const MAX_RECORDED_BYTES: usize = 64 << 20;
/// What one recorded location costs besides its path, in bytes (entry and hash table).
const ENTRY_COST: usize = 96;

/// Brackets nested deeper than [`MAX_NESTING`]: where the first bracket too deep is, and the
/// field whose value nests that deep (`None` at the top level).
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct TooDeep {
    /// The bracket that goes one level too deep.
    pub location: Location,
    /// The bracket, `(`, `[` or `{`.
    pub bracket: char,
    /// Path of the innermost field whose value holds the nesting.
    pub field: Option<String>,
}

/// A bracket the scan has opened and not yet seen closed.
#[derive(Clone, Debug, PartialEq, Eq)]
pub(crate) struct Opened {
    /// `(`, `[` or `{`.
    pub bracket: char,
    /// Where it is.
    pub location: Location,
    /// Field path of the value it opens (empty at the top).
    pub path: String,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum Bracket {
    Paren,
    Square,
    Brace,
}

impl Bracket {
    fn of(c: char) -> Self {
        match c {
            '(' => Self::Paren,
            '[' => Self::Square,
            _ => Self::Brace,
        }
    }

    fn char(self) -> char {
        match self {
            Self::Paren => '(',
            Self::Square => '[',
            Self::Brace => '{',
        }
    }
}

#[derive(Clone, Debug)]
pub(super) struct Frame {
    pub(super) bracket: Bracket,
    pub(super) path: String,
    /// Where the bracket is.
    opened_at: Location,
    /// `Some(...)`: the content is the same value as the wrapper.
    pub(super) transparent: bool,
    /// The value this bracket opens is a field's or a map entry's (not a list or tuple
    /// element), or the top-level value.
    named: bool,
    /// A `(` that has had `name:` fields, or the top level: a struct, whose elements are
    /// fields, never tuple positions.
    pub(super) struct_like: bool,
    /// Element index (tuples, lists, maps).
    pub(super) index: usize,
    /// Field name or map key of the current element, once its `:` was seen.
    pub(super) key: Option<String>,
    /// A map key was read and its `:` is awaited.
    pending_key: Option<String>,
}

impl Frame {
    pub(super) fn element_path(&self) -> String {
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
    pub(super) fn at_key(&self) -> bool {
        self.key.is_none() && self.pending_key.is_none()
    }

    pub(super) fn opened(&self) -> Opened {
        Opened {
            bracket: self.bracket.char(),
            location: self.opened_at,
            path: self.path.clone(),
        }
    }
}

pub(super) struct Scanner<'a> {
    text: &'a str,
    pub(super) pos: usize,
    line: usize,
    column: usize,
    pub(super) stack: Vec<Frame>,
    pub(super) entries: HashMap<String, Entry>,
    /// Bytes the entries take, as counted against [`MAX_RECORDED_BYTES`].
    recorded_bytes: usize,
    /// The top-level value was read (or opened).
    top_done: bool,
    /// Brackets nested too deep, once found (the scan stops there).
    pub(super) too_deep: Option<TooDeep>,
    /// The first `/*` never closed.
    pub(super) unclosed_comment: Option<Location>,
    /// The first string never closed.
    pub(super) unclosed_string: Option<Location>,
    /// Where the last token started, when it was a string running over several lines.
    pub(super) after_multiline_string: Option<Location>,
}

impl<'a> Scanner<'a> {
    pub(super) fn new(text: &'a str) -> Self {
        Self {
            text,
            pos: 0,
            line: 1,
            column: 1,
            stack: Vec::new(),
            entries: HashMap::new(),
            recorded_bytes: 0,
            top_done: false,
            too_deep: None,
            unclosed_comment: None,
            unclosed_string: None,
            after_multiline_string: None,
        }
    }

    fn rest(&self) -> &'a str {
        &self.text[self.pos..]
    }

    pub(super) fn peek(&self) -> Option<char> {
        self.rest().chars().next()
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

    /// Skips whitespace, comments (block comments nest, as in `ron`) and `#![...]`
    /// attributes.
    pub(super) fn skip_trivia(&mut self) {
        loop {
            let rest = self.rest();
            if rest.starts_with("//") {
                while let Some(c) = self.peek() {
                    if c == '\n' {
                        break;
                    }
                    self.bump();
                }
            } else if rest.starts_with("/*") {
                let start = self.here();
                self.bump();
                self.bump();
                let mut depth = 1_usize;
                while depth > 0 {
                    let rest = self.rest();
                    if rest.is_empty() {
                        self.unclosed_comment.get_or_insert(start);
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
    pub(super) fn peek_after_trivia(&mut self) -> Option<char> {
        let saved = (self.pos, self.line, self.column, self.unclosed_comment);
        self.skip_trivia();
        let c = self.peek();
        (self.pos, self.line, self.column, self.unclosed_comment) = saved;
        c
    }

    fn value_path(&self) -> String {
        self.stack
            .last()
            .map(Frame::element_path)
            .unwrap_or_default()
    }

    fn record(&mut self, location: Location, token: (usize, usize), plain_string: bool) {
        if self.stack.is_empty() {
            if self.top_done {
                return;
            }
            self.top_done = true;
        }
        let path = self.value_path();
        if self.entries.contains_key(&path) {
            return;
        }
        let cost = path.len() + ENTRY_COST;
        if self.recorded_bytes + cost > MAX_RECORDED_BYTES {
            return;
        }
        self.recorded_bytes += cost;
        self.entries.insert(
            path,
            Entry {
                location,
                token,
                plain_string,
            },
        );
    }

    /// Opens a bracket at `location`; false (and the scan must stop) when it nests too deep.
    fn open(&mut self, bracket: Bracket, location: Location, transparent: bool) -> bool {
        if self.stack.len() >= MAX_NESTING {
            let field = self
                .stack
                .iter()
                .rev()
                .find(|frame| frame.named)
                .map(|frame| frame.path.clone())
                .filter(|path| !path.is_empty());
            self.too_deep = Some(TooDeep {
                location,
                bracket: bracket.char(),
                field,
            });
            return false;
        }
        let named = match self.stack.last() {
            None => true,
            Some(parent) => parent.key.is_some() || (parent.transparent && parent.named),
        };
        let path = self.value_path();
        let struct_like = self.stack.is_empty() && bracket == Bracket::Paren;
        self.stack.push(Frame {
            bracket,
            path,
            opened_at: location,
            transparent,
            named,
            struct_like,
            index: 0,
            key: None,
            pending_key: None,
        });
        true
    }

    /// Reads a string literal (plain, raw or byte) that starts at `start`; returns whether
    /// it was plain (no escapes, one line) and whether it ran over several lines.
    fn string(&mut self, start: Location) -> (bool, bool) {
        let mut hashes = 0_usize;
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
        let mut multiline = false;
        while let Some(c) = self.bump() {
            match c {
                '\\' if !raw => {
                    plain = false;
                    if self.bump() == Some('\n') {
                        multiline = true;
                    }
                }
                '\n' => {
                    plain = false;
                    multiline = true;
                }
                '"' => {
                    // counted, never searched for: a long run of `#` costs its length once
                    let closing = self.rest().bytes().take(hashes).take_while(|&b| b == b'#');
                    if closing.count() == hashes {
                        for _ in 0..hashes {
                            self.bump();
                        }
                        return (plain, multiline);
                    }
                }
                _ => {}
            }
        }
        self.unclosed_string.get_or_insert(start);
        (plain, multiline)
    }

    pub(super) fn is_string_start(&self) -> bool {
        let rest = self.rest();
        rest.starts_with('"')
            || rest.starts_with("r\"")
            || rest.starts_with("r#")
            || rest.starts_with("b\"")
            || rest.starts_with("br\"")
            || rest.starts_with("br#")
    }

    /// Reads an identifier, number or other bare word.
    pub(super) fn atom(&mut self) {
        while let Some(c) = self.peek() {
            if c.is_alphanumeric() || matches!(c, '_' | '.' | '+' | '-' | '#') {
                self.bump();
            } else {
                break;
            }
        }
    }

    /// Scans to the end of the text, or to byte offset `stop_at`, or to brackets nested too
    /// deep.
    pub(super) fn run(&mut self, stop_at: Option<usize>) {
        loop {
            self.skip_trivia();
            if stop_at.is_some_and(|stop| self.pos >= stop) {
                return;
            }
            let Some(c) = self.peek() else { return };
            let start = self.pos;
            let location = self.here();
            let mut multiline_string = false;
            match c {
                '(' | '[' | '{' => {
                    self.bump();
                    self.record(location, (start, self.pos), false);
                    if !self.open(Bracket::of(c), location, false) {
                        return;
                    }
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
                        if frame.bracket == Bracket::Paren {
                            frame.struct_like = true;
                        }
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
                    let (plain, multiline) = self.string(location);
                    multiline_string = multiline;
                    let token = (start, self.pos);
                    let in_map_key = self
                        .stack
                        .last()
                        .is_some_and(|f| f.bracket == Bracket::Brace && f.at_key());
                    if in_map_key {
                        let key = shorten_key(&unquote(&self.text[start..self.pos]));
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
                        let key = shorten_key(word);
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
                        let bracket_at = self.here();
                        self.bump();
                        if !self.open(Bracket::Paren, bracket_at, transparent) {
                            return;
                        }
                    } else {
                        self.record(location, token, false);
                    }
                }
                _ => {
                    self.bump();
                }
            }
            self.after_multiline_string = multiline_string.then_some(location);
        }
    }
}

/// A key as kept in field paths: cut short past [`MAX_KEY_CHARS`] characters.
fn shorten_key(key: &str) -> String {
    match key.char_indices().nth(MAX_KEY_CHARS) {
        Some((cut, _)) => format!("{}...", &key[..cut]),
        None => key.to_owned(),
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
