//! Located messages for text that is not a well-formed scenario: `ron`'s errors in plain
//! words that name the field (never `ron`'s own codes or Rust type names), brackets nested too
//! deep, and bytes that are not UTF-8.

use ron::error::{Error as RonError, SpannedError};

use crate::error::ScenarioError;
use crate::format1;
use crate::scenario::{FORMAT, OLDEST_FORMAT};
use crate::source::{Context, Location, MAX_NESTING, TooDeep, context_at};

mod words;

use words::{
    describe_block, describe_char, expected_here, lower_first, one_of, plain_found, plain_type,
    shown_token,
};

/// Brackets nested too deep, as a located error naming the field that holds them.
pub(crate) fn too_deep(deep: &TooDeep) -> ScenarioError {
    let block = describe_block(deep.field.as_deref().unwrap_or(""));
    ScenarioError::Syntax {
        location: deep.location,
        field: deep.field.clone(),
        message: format!(
            "{block}: this '{}' nests brackets more than {MAX_NESTING} deep; a scenario needs \
             about 6 at most (is a bracket repeated, or are closing ones missing?)",
            deep.bracket
        ),
    }
}

/// Bytes that are not UTF-8 text, located at the first bad byte (line and column counted as
/// the loader counts them, in characters and without a byte order mark).
pub(crate) fn not_utf8(bytes: &[u8], err: &std::str::Utf8Error) -> ScenarioError {
    let valid_up_to = err.valid_up_to();
    if bytes.starts_with(&[0xFF, 0xFE]) || bytes.starts_with(&[0xFE, 0xFF]) {
        return ScenarioError::Syntax {
            location: Location { line: 1, column: 1 },
            field: None,
            message: "the file is UTF-16 text (it starts with a UTF-16 byte order mark); save it \
                      as UTF-8"
                .to_owned(),
        };
    }
    let valid = String::from_utf8_lossy(&bytes[..valid_up_to]);
    let valid = valid.strip_prefix('\u{feff}').unwrap_or(&valid);
    let line = valid.matches('\n').count() + 1;
    let line_start = valid.rfind('\n').map_or(0, |idx| idx + 1);
    let column = valid[line_start..].chars().count() + 1;
    let byte = bytes.get(valid_up_to).copied().unwrap_or_default();
    let what = match err.error_len() {
        None => {
            format!("it ends inside a character (byte 0x{byte:02X} starts one that is cut short)")
        }
        Some(_) => format!("byte 0x{byte:02X} here is not part of a UTF-8 character"),
    };
    ScenarioError::Syntax {
        location: Location { line, column },
        field: None,
        message: format!("the file is not UTF-8 text: {what}; save it as UTF-8"),
    }
}

/// A `ron` error as a located message naming the field.
pub(crate) fn syntax_error(text: &str, err: &SpannedError, format: u32) -> ScenarioError {
    let mut location = Location {
        line: err.span.start.line,
        column: err.span.start.col,
    };
    let context = context_at(text, location);
    let container = context.container.clone();
    let value = context.value.clone().unwrap_or_else(|| container.clone());
    let block = describe_block(&container);
    let (field, message) = match &err.code {
        RonError::NoSuchStructField {
            expected, found, ..
        } => (
            container.clone(),
            format!(
                "unknown field '{found}' in {block}; {}{}",
                one_of(expected, "fields"),
                renamed_hint(found, expected, format)
            ),
        ),
        RonError::MissingStructField { field, .. } => (
            container.clone(),
            format!("missing field '{field}' in {block}"),
        ),
        RonError::DuplicateStructField { field, .. } => (
            container.clone(),
            format!("field '{field}' is given twice in {block}"),
        ),
        RonError::NoSuchEnumVariant {
            expected, found, ..
        } => (
            value.clone(),
            format!(
                "unknown choice '{found}' for {}; {}{}",
                describe_block(&value),
                one_of(expected, "choices"),
                renamed_hint(found, expected, format)
            ),
        ),
        RonError::InvalidValueForType { expected, found } => (
            value.clone(),
            format!(
                "{}: expected {} but found {}",
                describe_block(&value),
                plain_type(expected),
                plain_found(found)
            ),
        ),
        RonError::ExpectedDifferentLength { expected, found } => (
            value.clone(),
            format!(
                "{}: expected {} but found {found} element{}",
                describe_block(&value),
                plain_type(expected),
                if *found == 1 { "" } else { "s" }
            ),
        ),
        RonError::Eof => (container.clone(), ends_too_early(&context)),
        RonError::TrailingCharacters => (
            String::new(),
            "unexpected text after the scenario's closing ')'".to_owned(),
        ),
        RonError::ExpectedFloat => (value.clone(), expected_here(&value, "a number")),
        RonError::ExpectedInteger | RonError::InvalidIntegerDigit { .. } => {
            let found = number_at(text, location)
                .map(|token| format!(", but found {}", shown_token(&token.text)))
                .unwrap_or_default();
            let what = format!("a whole number, 0 or more{found}");
            (value.clone(), expected_here(&value, &what))
        }
        RonError::IntegerOutOfBounds => {
            let token = number_at(text, location);
            if let Some(start) = token.as_ref().and_then(|t| t.start) {
                location = start;
            }
            let shown = token.as_ref().map(|t| t.text.as_str());
            (value.clone(), out_of_bounds(&value, shown))
        }
        RonError::ExpectedStringEnd => {
            // `ron` points at the string's start; the scan may have found it before
            location = context.unclosed_string.unwrap_or(location);
            (
                value.clone(),
                format!(
                    "{}: the string that starts here is never closed (its closing '\"' is missing)",
                    describe_block(&value)
                ),
            )
        }
        RonError::ExpectedString => (
            value.clone(),
            expected_here(&value, "a string in double quotes"),
        ),
        RonError::ExpectedBoolean => (value.clone(), expected_here(&value, "true or false")),
        RonError::ExpectedOption => (value.clone(), expected_here(&value, "Some(...) or None")),
        RonError::ExpectedComma if context.at_end => (container.clone(), ends_too_early(&context)),
        RonError::ExpectedComma => match number_cut_short(text, location) {
            Some(token) if context.value.is_some() => (
                value.clone(),
                format!(
                    "{}: expected a whole number, 0 or more, but found {token}",
                    describe_block(&value)
                ),
            ),
            _ => (
                container.clone(),
                format!(
                    "expected a comma between the entries of {block}{}",
                    string_hint(&context)
                ),
            ),
        },
        RonError::ExpectedMapColon => (
            container.clone(),
            format!("expected ':' after a field name in {block}"),
        ),
        RonError::ExpectedStructLikeEnd | RonError::ExpectedOptionEnd => (
            container.clone(),
            format!(
                "{block}: expected a closing ')' here (too many values, or a bracket missing){}",
                string_hint(&context)
            ),
        ),
        RonError::ExpectedArrayEnd => (
            container.clone(),
            format!(
                "{block}: expected a closing ']' here{}",
                string_hint(&context)
            ),
        ),
        RonError::ExpectedMapEnd => (
            container.clone(),
            format!(
                "{block}: expected a closing '}}' here{}",
                string_hint(&context)
            ),
        ),
        RonError::ExpectedArray => (
            value.clone(),
            expected_here(&value, "a list in square brackets, like [...]"),
        ),
        RonError::ExpectedMap => (
            value.clone(),
            expected_here(&value, "a map in braces, like {\"v\": 1.0}"),
        ),
        RonError::ExpectedStructLike | RonError::ExpectedNamedStructLike(_) => {
            let what = if value.is_empty() {
                "'(' to open the scenario".to_owned()
            } else {
                "'(' to open its block".to_owned()
            };
            (value.clone(), expected_here(&value, &what))
        }
        RonError::ExpectedDifferentStructName { expected, found } => (
            value.clone(),
            format!(
                "{}: expected {expected}(...) or (...), not {found}(...)",
                describe_block(&value)
            ),
        ),
        RonError::ExpectedStructName(name) => (
            value.clone(),
            expected_here(&value, &format!("the name {name} before '('")),
        ),
        RonError::ExpectedUnit => (value.clone(), expected_here(&value, "()")),
        RonError::ExpectedIdentifier if context.value.is_none() => (
            container.clone(),
            format!("{block}: expected a field name here, a word followed by ':'"),
        ),
        RonError::ExpectedIdentifier => (
            value.clone(),
            expected_here(&value, "a choice, a word without quotes"),
        ),
        RonError::SuggestRawIdentifier(word) | RonError::InvalidIdentifier(word) => (
            value.clone(),
            format!(
                "{}: '{}' is not a word that names a choice or a field",
                describe_block(&value),
                shown_token(word)
            ),
        ),
        RonError::ExpectedChar | RonError::ExpectedByteLiteral => (
            value.clone(),
            expected_here(&value, "one character in single quotes"),
        ),
        RonError::ExpectedByteString => (
            value.clone(),
            expected_here(&value, "a string in double quotes"),
        ),
        RonError::InvalidEscape(what) => (
            value.clone(),
            format!(
                "{}: the string has an escape that is not one: {} (write \\\\ for a backslash)",
                describe_block(&value),
                lower_first(what)
            ),
        ),
        RonError::FloatUnderscore | RonError::UnderscoreAtBeginning => (
            value.clone(),
            format!(
                "{}: a number may not have '_' there",
                describe_block(&value)
            ),
        ),
        RonError::UnexpectedChar(c) => (
            value.clone(),
            format!(
                "{}: unexpected character {}",
                describe_block(&value),
                describe_char(*c)
            ),
        ),
        RonError::UnclosedBlockComment => {
            location = context.unclosed_comment.unwrap_or(location);
            (
                String::new(),
                "the block comment that starts here with '/*' is never closed with '*/'".to_owned(),
            )
        }
        RonError::UnclosedLineComment => (
            container.clone(),
            "the file ends inside a '//' comment".to_owned(),
        ),
        RonError::NoSuchExtension(name) => (
            String::new(),
            format!(
                "there is no RON extension named '{}' (in #![enable(...)])",
                shown_token(name)
            ),
        ),
        RonError::ExpectedAttribute | RonError::ExpectedAttributeEnd => (
            String::new(),
            "a line starting with '#!' must read #![enable(...)]".to_owned(),
        ),
        RonError::ExceededRecursionLimit => (
            container.clone(),
            format!("{block}: brackets are nested too deep here; a scenario needs about 6 at most"),
        ),
        RonError::Utf8Error(_) => (
            String::new(),
            "the text is not UTF-8 here; save the file as UTF-8".to_owned(),
        ),
        RonError::Message(message) => (
            value.clone(),
            format!("{}: {}", describe_block(&value), message.replace('`', "'")),
        ),
        RonError::ExpectedRawValue
        | RonError::ExpectedRangeSyntax
        | RonError::Fmt
        | RonError::Io(_) => (
            value.clone(),
            format!("{}: this text cannot be read here", describe_block(&value)),
        ),
        // a kind of error a later `ron` may add
        code => (
            value.clone(),
            format!(
                "{}: {}",
                describe_block(&value),
                lower_first(&code.to_string()).replace('`', "'")
            ),
        ),
    };
    ScenarioError::Syntax {
        location,
        field: (!field.is_empty()).then_some(field),
        message,
    }
}

/// The message for a file that ends before the scenario does, naming the bracket left open.
fn ends_too_early(context: &Context) -> String {
    match &context.open {
        Some(open) => format!(
            "the file ends too early: the '{}' of {} at line {}, column {} is never closed",
            open.bracket,
            describe_block(&open.path),
            open.location.line,
            open.location.column
        ),
        None => "the file ends too early: a closing bracket or a value is missing".to_owned(),
    }
}

/// A hint when the token before the error is a string over several lines, which is what a
/// missing closing quote makes of the text after it.
fn string_hint(context: &Context) -> String {
    match context.after_multiline_string {
        Some(start) => format!(
            " (the string at line {}, column {} runs over several lines: is its closing '\"' \
             missing?)",
            start.line, start.column
        ),
        None => String::new(),
    }
}

/// What is wrong with a whole number that does not fit its field: negative, or too large
/// for the field's type (with the largest it takes).
fn out_of_bounds(path: &str, token: Option<&str>) -> String {
    let block = describe_block(path);
    let Some(token) = token else {
        return format!("{block}: the whole number does not fit here");
    };
    let shown = shown_token(token);
    if token.starts_with('-') {
        return format!("{block}: must be 0 or more, not {shown}");
    }
    match largest_whole_number(path) {
        Some(largest) => {
            format!("{block}: {shown} is too large; the largest it takes is {largest}")
        }
        None => format!("{block}: {shown} is too large for a whole number here"),
    }
}

/// The largest value of each whole-number field, by its field path in either format.
pub(crate) fn largest_whole_number(path: &str) -> Option<u64> {
    match path {
        "format" | "sweep.values" | "sweep.steps" | "sweep.keep" | "map.x.values"
        | "map.y.values" => Some(u64::from(u32::MAX)),
        "limits.max_points" => Some(u64::MAX),
        _ => None,
    }
}

/// A number token in the text around `location`: its text and where it starts.
struct NumberToken {
    text: String,
    start: Option<Location>,
}

/// The number written around `location` (`ron` points at its first digit, after any sign).
fn number_at(text: &str, location: Location) -> Option<NumberToken> {
    let line = text.lines().nth(location.line.checked_sub(1)?)?;
    let at = line
        .char_indices()
        .nth(location.column.checked_sub(1)?)
        .map_or(line.len(), |(idx, _)| idx);
    let is_number_char = |c: char| c.is_ascii_alphanumeric() || matches!(c, '.' | '+' | '-' | '_');
    let start = line[..at]
        .char_indices()
        .rev()
        .take_while(|&(_, c)| is_number_char(c))
        .last()
        .map_or(at, |(idx, _)| idx);
    let end = line[at..]
        .find(|c: char| !is_number_char(c))
        .map_or(line.len(), |idx| at + idx);
    let token = &line[start..end];
    (!token.is_empty()).then(|| NumberToken {
        text: token.to_owned(),
        start: Some(Location {
            line: location.line,
            column: line[..start].chars().count() + 1,
        }),
    })
}

/// When the parser stopped inside a number (`3.5` where a whole number was read as `3`), that
/// number.
fn number_cut_short(text: &str, location: Location) -> Option<String> {
    let line = text.lines().nth(location.line.checked_sub(1)?)?;
    let stop = line
        .char_indices()
        .nth(location.column.checked_sub(1)?)
        .map_or(line.len(), |(idx, _)| idx);
    if !line[..stop].ends_with(|c: char| c.is_ascii_digit()) {
        return None;
    }
    let token = number_at(text, location)?.text;
    token
        .replace('_', "")
        .parse::<f64>()
        .is_ok()
        .then_some(token)
}

/// A hint when `found` is the other format's word for one of the `expected` ones: a format-2
/// file using a format-1 word, or the other way round.
fn renamed_hint(found: &str, expected: &[&str], format: u32) -> String {
    let old_to_new = format1::RENAMED_WORDS
        .iter()
        .find(|(old, new)| format == FORMAT && *old == found && expected.contains(new));
    if let Some((old, new)) = old_to_new {
        return format!(" ('{old}' is the format-1 word; format {FORMAT} says '{new}')");
    }
    let new_to_old = format1::RENAMED_WORDS
        .iter()
        .find(|(old, new)| format == OLDEST_FORMAT && *new == found && expected.contains(old));
    if let Some((old, new)) = new_to_old {
        return format!(
            " ('{new}' is format {FORMAT}'s word; this file says format: {OLDEST_FORMAT}, which says '{old}')"
        );
    }
    String::new()
}
