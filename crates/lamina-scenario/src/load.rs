//! Loading a scenario: check the format version first, then parse with `ron` (format 2, or
//! format 1 through its own types and the mapping of its old words) and turn its errors into
//! located messages that name the field in the file's own terms.

use std::path::Path;

use ron::error::{Error as RonError, SpannedError};
use ron::extensions::Extensions;

use crate::error::ScenarioError;
use crate::format1;
use crate::scenario::{FORMAT, FormatRead, OLDEST_FORMAT, Scenario};
use crate::source::{Location, SourceMap, context_at};

/// Reads a scenario from RON text.
///
/// Refuses a file of a newer format (naming both versions) before looking at anything else,
/// and reports syntax errors, unknown or missing fields and wrong types with their line and
/// column. A file of format 1 is read with format 1's words and converted to format 2
/// ([`Scenario::format_read`] says so). Does not check that the scenario makes sense: see
/// [`Scenario::check`].
///
/// `Some(...)` around optional blocks may be left out (`max_step: 0.01` reads like
/// `max_step: Some(0.01)`).
pub fn load_str(text: &str) -> Result<Scenario, ScenarioError> {
    let source = SourceMap::scan(text);
    let options = ron::Options::default().with_default_extension(Extensions::IMPLICIT_SOME);
    if stated_format(text, &source)? == Some(OLDEST_FORMAT) {
        return match options.from_str::<format1::Scenario>(text) {
            Ok(old) => Ok(old.into_current(source)),
            Err(err) => Err(syntax_error(text, &err, OLDEST_FORMAT)),
        };
    }
    match options.from_str::<Scenario>(text) {
        Ok(mut scenario) => {
            // a format written in a way the pre-check does not read
            if scenario.format > FORMAT {
                let found = u64::from(scenario.format);
                return Err(ScenarioError::NewerFormat {
                    found,
                    supported: FORMAT,
                });
            }
            scenario.source = source;
            scenario.format_read = FormatRead(Some(scenario.format));
            Ok(scenario)
        }
        Err(err) => Err(syntax_error(text, &err, FORMAT)),
    }
}

/// Reads a scenario from a file; see [`load_str`].
pub fn load_file(path: &Path) -> Result<Scenario, ScenarioError> {
    let text = std::fs::read_to_string(path).map_err(|source| ScenarioError::Io {
        path: path.to_owned(),
        source,
    })?;
    load_str(&text)
}

/// The format the `format` field states, read before anything else so that a newer file is
/// recognised however its other fields changed; refuses formats this version does not read.
/// `None` when the field is missing or not a whole number (the full parse says so).
fn stated_format(text: &str, source: &SourceMap) -> Result<Option<u32>, ScenarioError> {
    let Some(found) = source.token(text, "format").and_then(parse_whole_number) else {
        return Ok(None);
    };
    if found > u64::from(FORMAT) {
        return Err(ScenarioError::NewerFormat {
            found,
            supported: FORMAT,
        });
    }
    if found < u64::from(OLDEST_FORMAT) {
        let location = source
            .location("format")
            .unwrap_or(Location { line: 1, column: 1 });
        return Err(ScenarioError::Syntax {
            location,
            field: Some("format".to_owned()),
            message: format!(
                "there is no format {found}; this Lamina reads formats {OLDEST_FORMAT} and {FORMAT}"
            ),
        });
    }
    Ok(u32::try_from(found).ok())
}

/// A whole number as RON writes it: decimal, or `0x`, `0o`, `0b` with digits, `_` anywhere.
fn parse_whole_number(token: &str) -> Option<u64> {
    let token = token.replace('_', "");
    let token = token.strip_prefix('+').unwrap_or(&token);
    let (digits, radix) = match token.get(..2) {
        Some("0x") => (&token[2..], 16),
        Some("0o") => (&token[2..], 8),
        Some("0b") => (&token[2..], 2),
        _ => (token, 10),
    };
    u64::from_str_radix(digits, radix).ok()
}

/// A `ron` error as a located message naming the field.
fn syntax_error(text: &str, err: &SpannedError, format: u32) -> ScenarioError {
    let location = Location {
        line: err.span.start.line,
        column: err.span.start.col,
    };
    let context = context_at(text, location);
    let container = context.container;
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
                "{}: expected {} but found {found}",
                describe_block(&value),
                plain_type(expected)
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
        RonError::Eof => (
            container.clone(),
            "the file ends too early: a closing bracket or a value is missing".to_owned(),
        ),
        RonError::TrailingCharacters => (
            String::new(),
            "unexpected text after the scenario's closing ')'".to_owned(),
        ),
        RonError::ExpectedFloat => (value.clone(), expected_here(&value, "a number")),
        RonError::ExpectedInteger | RonError::IntegerOutOfBounds => (
            value.clone(),
            expected_here(&value, "a whole number, 0 or more"),
        ),
        RonError::ExpectedString | RonError::ExpectedStringEnd => (
            value.clone(),
            expected_here(&value, "a string in double quotes"),
        ),
        RonError::ExpectedBoolean => (value.clone(), expected_here(&value, "true or false")),
        RonError::ExpectedOption => (value.clone(), expected_here(&value, "Some(...) or None")),
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
                format!("expected a comma between the entries of {block}"),
            ),
        },
        RonError::InvalidIntegerDigit { .. } => (
            value.clone(),
            expected_here(&value, "a whole number, 0 or more"),
        ),
        RonError::ExpectedMapColon => (
            container.clone(),
            format!("expected ':' after a field name in {block}"),
        ),
        RonError::ExpectedStructLikeEnd | RonError::ExpectedOptionEnd => (
            container.clone(),
            format!("{block}: expected a closing ')' here (too many values, or a bracket missing)"),
        ),
        RonError::ExpectedArrayEnd => (
            container.clone(),
            format!("{block}: expected a closing ']' here"),
        ),
        RonError::ExpectedMapEnd => (
            container.clone(),
            format!("{block}: expected a closing '}}' here"),
        ),
        code => (
            value.clone(),
            format!(
                "{}: {}",
                describe_block(&value),
                lower_first(&code.to_string())
            ),
        ),
    };
    ScenarioError::Syntax {
        location,
        field: (!field.is_empty()).then_some(field),
        message,
    }
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

/// When the parser stopped inside a number (`3.5` where a whole number was read as `3`), that
/// number.
fn number_cut_short(text: &str, location: Location) -> Option<String> {
    let line = text.lines().nth(location.line.checked_sub(1)?)?;
    let chars: Vec<char> = line.chars().collect();
    let stop = location.column.checked_sub(1)?;
    let is_number_char = |c: &char| c.is_ascii_alphanumeric() || matches!(c, '.' | '+' | '-' | '_');
    if stop == 0 || !chars.get(stop - 1).is_some_and(|c| c.is_ascii_digit()) {
        return None;
    }
    let start = chars[..stop]
        .iter()
        .rposition(|c| !is_number_char(c))
        .map_or(0, |i| i + 1);
    let end = chars[stop..]
        .iter()
        .position(|c| !is_number_char(c))
        .map_or(chars.len(), |i| stop + i);
    let token: String = chars[start..end].iter().collect();
    token
        .replace('_', "")
        .parse::<f64>()
        .is_ok()
        .then_some(token)
}

/// `integrator`, `states[1]`, or `the scenario` for the top level.
fn describe_block(path: &str) -> String {
    if path.is_empty() {
        "the scenario".to_owned()
    } else {
        path.to_owned()
    }
}

fn expected_here(path: &str, what: &str) -> String {
    format!("{}: expected {what}", describe_block(path))
}

/// `expected one of a, b, c` (or `expected a` for a single choice).
fn one_of(alternatives: &[&str], none: &str) -> String {
    match alternatives {
        [] => format!("there are no {none}"),
        [only] => format!("expected {only}"),
        _ => format!("expected one of {}", alternatives.join(", ")),
    }
}

/// Serde's names of Rust types in plain words.
fn plain_type(expected: &str) -> String {
    match expected {
        "f64" | "f32" => "a number".to_owned(),
        "u8" | "u16" | "u32" | "u64" | "usize" => "a whole number, 0 or more".to_owned(),
        "i8" | "i16" | "i32" | "i64" | "isize" => "a whole number".to_owned(),
        "a string" | "a borrowed string" => "a string in double quotes".to_owned(),
        "a boolean" => "true or false".to_owned(),
        "a tuple of size 2" => "two values in parentheses, like (a, b)".to_owned(),
        "a tuple of size 3" => "three values in parentheses, like (a, b, c)".to_owned(),
        other => other.to_owned(),
    }
}

fn lower_first(text: &str) -> String {
    let mut chars = text.chars();
    match chars.next() {
        Some(first) => first.to_lowercase().chain(chars).collect(),
        None => String::new(),
    }
}
