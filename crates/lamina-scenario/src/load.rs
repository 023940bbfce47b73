//! Loading a scenario: check the format version first, then parse with `ron` and turn its
//! errors into located messages that name the field in the file's own terms.

use std::path::Path;

use ron::error::{Error as RonError, SpannedError};
use ron::extensions::Extensions;

use crate::error::ScenarioError;
use crate::scenario::{FORMAT, Scenario};
use crate::source::{Location, SourceMap, context_at};

/// Reads a scenario from RON text.
///
/// Refuses a file of a newer format (naming both versions) before looking at anything else,
/// and reports syntax errors, unknown or missing fields and wrong types with their line and
/// column. Does not check that the scenario makes sense: see [`Scenario::check`].
///
/// `Some(...)` around optional blocks may be left out (`max_step: 0.01` reads like
/// `max_step: Some(0.01)`).
pub fn load_str(text: &str) -> Result<Scenario, ScenarioError> {
    let source = SourceMap::scan(text);
    check_format(text, &source)?;
    let options = ron::Options::default().with_default_extension(Extensions::IMPLICIT_SOME);
    match options.from_str::<Scenario>(text) {
        Ok(mut scenario) => {
            // a format written in a way the pre-check does not read (e.g. `0x2`)
            if scenario.format > FORMAT {
                let found = u64::from(scenario.format);
                return Err(ScenarioError::NewerFormat {
                    found,
                    supported: FORMAT,
                });
            }
            scenario.source = source;
            Ok(scenario)
        }
        Err(err) => Err(syntax_error(text, &err)),
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

/// Refuses formats other than [`FORMAT`] from the `format` field alone, so that a newer file
/// is recognised however its other fields changed.
fn check_format(text: &str, source: &SourceMap) -> Result<(), ScenarioError> {
    let Some(token) = source.token(text, "format") else {
        return Ok(()); // missing: the full parse says so
    };
    let Ok(found) = token.replace('_', "").parse::<u64>() else {
        return Ok(()); // not a whole number: the full parse says so
    };
    if found > u64::from(FORMAT) {
        return Err(ScenarioError::NewerFormat {
            found,
            supported: FORMAT,
        });
    }
    if found < u64::from(FORMAT) {
        let location = source
            .location("format")
            .unwrap_or(Location { line: 1, column: 1 });
        return Err(ScenarioError::Syntax {
            location,
            field: Some("format".to_owned()),
            message: format!(
                "there is no format {found}; this Lamina reads format {FORMAT}, the first"
            ),
        });
    }
    Ok(())
}

/// A `ron` error as a located message naming the field.
fn syntax_error(text: &str, err: &SpannedError) -> ScenarioError {
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
                "unknown field '{found}' in {block}; {}",
                one_of(expected, "fields")
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
                "unknown choice '{found}' for {}; {}",
                describe_block(&value),
                one_of(expected, "choices")
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
