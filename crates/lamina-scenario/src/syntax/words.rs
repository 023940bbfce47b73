//! Plain words for the parts of syntax messages: blocks, expected values, Rust type names,
//! `ron`'s descriptions of what it found, characters and over-long tokens.

use crate::number::Short;

/// Tokens longer than this are shown cut short.
const MAX_SHOWN_CHARS: usize = 40;

/// `integrator`, `states[1]`, or `the scenario` for the top level.
pub(super) fn describe_block(path: &str) -> String {
    if path.is_empty() {
        "the scenario".to_owned()
    } else {
        path.to_owned()
    }
}

pub(super) fn expected_here(path: &str, what: &str) -> String {
    format!("{}: expected {what}", describe_block(path))
}

/// `expected one of a, b, c` (or `expected a` for a single choice).
pub(super) fn one_of(alternatives: &[&str], none: &str) -> String {
    match alternatives {
        [] => format!("there are no {none}"),
        [only] => format!("expected {only}"),
        _ => format!("expected one of {}", alternatives.join(", ")),
    }
}

/// Serde's names of Rust types in plain words.
pub(super) fn plain_type(expected: &str) -> String {
    match expected {
        "f64" | "f32" => "a number".to_owned(),
        "u8" | "u16" | "u32" | "u64" | "usize" => "a whole number, 0 or more".to_owned(),
        "i8" | "i16" | "i32" | "i64" | "isize" => "a whole number".to_owned(),
        "a string" | "a borrowed string" => "a string in double quotes".to_owned(),
        "a boolean" => "true or false".to_owned(),
        "a tuple of size 2" => "two values in parentheses, like (a, b)".to_owned(),
        "a tuple of size 3" => "three values in parentheses, like (a, b, c)".to_owned(),
        "a sequence" => "a list in square brackets, like [...]".to_owned(),
        "option" => "Some(...) or None".to_owned(),
        "unit" => "()".to_owned(),
        other if other.starts_with("struct ") => "a block in parentheses, like (...)".to_owned(),
        other if other.starts_with("enum ") || other.starts_with("variant ") => {
            "one of its choices".to_owned()
        }
        other if other.starts_with("tuple ") => "values in parentheses, like (a, b)".to_owned(),
        other => other.replace('`', "'"),
    }
}

/// `ron`'s description of a value it found (`the floating point number `1e308``) in plain
/// words, with numbers in their short form.
pub(super) fn plain_found(found: &str) -> String {
    let quoted = found
        .split_once('`')
        .and_then(|(_, rest)| rest.rsplit_once('`'))
        .map(|(inner, _)| inner);
    let kind = found.split('`').next().unwrap_or_default().trim();
    match (kind, quoted) {
        ("the floating point number", Some(number)) => match number.parse::<f64>() {
            Ok(value) => format!("the number {}", Short(value)),
            Err(_) => format!("the number {}", shown_token(number)),
        },
        ("the unsigned integer" | "the signed integer", Some(number)) => {
            format!("the whole number {}", shown_token(number))
        }
        ("the boolean", Some(value)) => value.to_owned(),
        ("the UTF-8 character", Some(c)) => format!("the character '{c}'"),
        _ if found.starts_with("the string ") => {
            format!("the string {}", shown_token(&found["the string ".len()..]))
        }
        _ => match found {
            "a unit value" => "()".to_owned(),
            "an optional value" => "Some(...)".to_owned(),
            "a sequence" => "a list".to_owned(),
            "a map" => "a map".to_owned(),
            "an enum" | "a unit variant" | "a newtype variant" | "a tuple variant"
            | "a struct variant" => "a choice".to_owned(),
            other => shown_token(&other.replace('`', "'")),
        },
    }
}

pub(super) fn lower_first(text: &str) -> String {
    let mut chars = text.chars();
    match chars.next() {
        Some(first) => first.to_lowercase().chain(chars).collect(),
        None => String::new(),
    }
}

/// A character as a message shows it: `'x'`, or its code point when it is invisible.
pub(super) fn describe_char(c: char) -> String {
    if c.is_control() || c.is_whitespace() || c == '\u{feff}' {
        format!("U+{:04X}", u32::from(c))
    } else {
        format!("'{c}'")
    }
}

/// A token as a message shows it: whole when short, else its start and its length.
pub(super) fn shown_token(token: &str) -> String {
    match token.char_indices().nth(MAX_SHOWN_CHARS) {
        Some((cut, _)) => format!(
            "{}... ({} characters)",
            &token[..cut],
            token.chars().count()
        ),
        None => token.to_owned(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn long_tokens_are_cut_short() {
        assert_eq!(shown_token("12"), "12");
        let long = "9".repeat(100);
        assert_eq!(
            shown_token(&long),
            format!("{}... (100 characters)", "9".repeat(40))
        );
    }

    #[test]
    fn found_values_are_said_plainly() {
        let huge = format!("the floating point number `1{}`", "0".repeat(308));
        assert_eq!(plain_found(&huge), "the number 1e308");
        assert_eq!(
            plain_found("the unsigned integer `5`"),
            "the whole number 5"
        );
        assert_eq!(plain_found("the boolean `true`"), "true");
        assert_eq!(plain_found("a sequence"), "a list");
        assert_eq!(
            plain_type("struct Time"),
            "a block in parentheses, like (...)"
        );
    }

    #[test]
    fn invisible_characters_show_their_code() {
        assert_eq!(describe_char('\0'), "U+0000");
        assert_eq!(describe_char('\u{feff}'), "U+FEFF");
        assert_eq!(describe_char('$'), "'$'");
    }
}
