//! Loading a scenario: check that the bytes are UTF-8 text (a byte order mark is allowed) and
//! that brackets nest no deeper than a scenario can use, then the format version, then parse
//! with `ron` (format 2, or format 1 through its own types and the mapping of its old words)
//! and turn its errors into located messages that name the field in the file's own terms.

use std::path::Path;

use ron::extensions::Extensions;

use crate::error::ScenarioError;
use crate::format1;
use crate::scenario::{FORMAT, FormatRead, OLDEST_FORMAT, Scenario};
use crate::source::{Location, SourceMap};
use crate::syntax::{not_utf8, syntax_error, too_deep};

/// Reads a scenario from RON text.
///
/// Refuses a file of a newer format (naming both versions) before looking at anything else,
/// and reports syntax errors, unknown or missing fields and wrong types with their line and
/// column. A file of format 1 is read with format 1's words and converted to format 2
/// ([`Scenario::format_read`] says so). Does not check that the scenario makes sense: see
/// [`Scenario::check`].
///
/// `Some(...)` around optional blocks may be left out (`max_step: 0.01` reads like
/// `max_step: Some(0.01)`). A byte order mark at the start is skipped. Brackets nested deeper
/// than a scenario can use (more than 32) are refused with the place and the field before
/// `ron` reads the text, so no text can make loading take more than time and memory in
/// proportion to its length.
pub fn load_str(text: &str) -> Result<Scenario, ScenarioError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let source = SourceMap::scan(text).map_err(|deep| too_deep(&deep))?;
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

/// Reads a scenario from the bytes of a file: UTF-8 text, perhaps with a byte order mark;
/// see [`load_str`]. Bytes that are not UTF-8 are refused with the line and column of the
/// first bad one.
pub fn load_bytes(bytes: &[u8]) -> Result<Scenario, ScenarioError> {
    let text = std::str::from_utf8(bytes).map_err(|err| not_utf8(bytes, &err))?;
    load_str(text)
}

/// Reads a scenario from a file; see [`load_bytes`] and [`load_str`].
pub fn load_file(path: &Path) -> Result<Scenario, ScenarioError> {
    let bytes = std::fs::read(path).map_err(|source| ScenarioError::Io {
        path: path.to_owned(),
        source,
    })?;
    load_bytes(&bytes)
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
