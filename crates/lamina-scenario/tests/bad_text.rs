//! Text that is not a scenario at all, or one on purpose: brackets nested without end, byte
//! order marks and bytes that are not UTF-8, comments and strings never closed, counts too
//! large for their field. Each is refused (or read) with a located message in plain words, in
//! time and memory in proportion to the text.

mod common;

use common::{EXAMPLE, EXAMPLE_FORMAT1, MINIMAL, column_of, edit, load, syntax_error};
use lamina_scenario::{ScenarioError, load_bytes, load_file, load_str};

/// Words of `ron`'s own messages and of Rust's types that a message must not show.
const FOREIGN_WORDS: [&str; 9] = [
    "`",
    "ron::",
    "Expected",
    "identifier",
    "struct ",
    "enum ",
    "u32",
    "f64",
    "r#",
];

/// Asserts that `message` is in Lamina's words: none of `ron`'s, and no bare field index
/// (`5: unclosed ...`) in front.
fn assert_plain(message: &str) {
    for word in FOREIGN_WORDS {
        assert!(!message.contains(word), "'{word}' in: {message}");
    }
    let first = message.split(':').next().unwrap_or_default();
    assert!(
        first.parse::<usize>().is_err(),
        "a bare index starts: {message}"
    );
}

#[test]
fn brackets_nested_without_end_are_refused_where_they_go_too_deep() {
    // 100 KB of '[' and 100 000 '(' then as many ')': the 33rd bracket is one too many
    let squares = "[".repeat(100_000);
    let parens = format!("{}{}", "(".repeat(100_000), ")".repeat(100_000));
    for text in [squares, parens] {
        let (line, column, field, message, display) = syntax_error(&text);
        assert_eq!((line, column, field), (1, 33, None), "{display}");
        assert!(
            message.starts_with("the scenario: this '")
                && message.contains("nests brackets more than 32 deep"),
            "{message}"
        );
        assert_plain(&message);
    }
}

#[test]
fn deep_nesting_names_the_field_that_holds_it() {
    // top '(' 1, states '[' 2, the state's '(' 3: the rate's 30th '[' is the 33rd bracket
    let deep = "[".repeat(5000);
    let text = edit(MINIMAL, "rate: \"v\"", &format!("rate: {deep}"));
    let (line, column, field, message, _) = syntax_error(&text);
    let rate_column = column_of(&text, 6, "[[");
    assert_eq!((line, column), (6, rate_column + 29));
    assert_eq!(field.as_deref(), Some("states[0].rate"));
    assert!(message.starts_with("states[0].rate: this '['"), "{message}");

    // also inside Some(...) and named blocks, and in the format-1 reader
    let deep = format!("{}0.0{}", "Some(".repeat(40), ")".repeat(40));
    let text = edit(MINIMAL, "rtol: 1e-8", &format!("rtol: {deep}"));
    let (line, _, field, _, _) = syntax_error(&text);
    assert_eq!((line, field.as_deref()), (12, Some("integrator.rtol")));
    let deep = "(".repeat(1000);
    let text = edit(
        EXAMPLE_FORMAT1,
        "notes: \"free text\"",
        &format!("notes: {deep}"),
    );
    let (line, column, field, message, _) = syntax_error(&text);
    // top '(' 1: the notes' 32nd '(' is the 33rd bracket
    assert_eq!((line, column), (4, column_of(&text, 4, "((") + 31));
    assert_eq!(field.as_deref(), Some("notes"));
    assert!(message.contains("more than 32 deep"), "{message}");
}

#[test]
fn nesting_up_to_the_limit_is_left_to_the_parser() {
    // 32 brackets deep is allowed: the parser then says what is wrong in its own place
    let (_, column, _, message, _) = syntax_error(&"[".repeat(32));
    assert_eq!(column, 1);
    assert_eq!(message, "the scenario: expected '(' to open the scenario");
    let (_, column, _, message, _) = syntax_error(&"[".repeat(33));
    assert_eq!(column, 33);
    assert!(message.contains("more than 32 deep"), "{message}");
    // the deep '(' of old: no stray index, a plain word
    let (line, column, field, message, _) = syntax_error(&"(".repeat(20));
    assert_eq!((line, column, field), (1, 2, None));
    assert_eq!(
        message,
        "the scenario: expected a field name here, a word followed by ':'"
    );
}

#[test]
fn brackets_in_strings_and_comments_do_not_count() {
    let deep = "([{".repeat(2000);
    let text = edit(
        MINIMAL,
        "title: \"Damped spring\",",
        &format!(
            "title: \"{deep}\",\n    notes: r#\"{deep}\"#, // {deep}\n    /* {deep} /* nested */ {deep} */"
        ),
    );
    let scenario = load(&text);
    assert_eq!(scenario.title, deep);
    assert_eq!(scenario.notes, deep);
}

#[test]
fn a_byte_order_mark_is_skipped() {
    let with_mark = format!("\u{feff}{MINIMAL}");
    assert_eq!(load(&with_mark), load(MINIMAL));
    let mut bytes = vec![0xEF, 0xBB, 0xBF];
    bytes.extend_from_slice(EXAMPLE.as_bytes());
    assert_eq!(load_bytes(&bytes).expect("loads"), load(EXAMPLE));
    // positions are counted as an editor shows them, after the mark
    let broken = edit(MINIMAL, "rtol: 1e-8", "rtol: \"a\"");
    let plain = syntax_error(&broken);
    let marked = syntax_error(&format!("\u{feff}{broken}"));
    assert_eq!((marked.0, marked.1), (plain.0, plain.1));
    let broken_first_line = format!("\u{feff}[{}", &MINIMAL[1..]);
    let (line, column, _, message, _) = syntax_error(&broken_first_line);
    assert!(line > 1 || column == 1, "{message}");
}

#[test]
fn bytes_that_are_not_utf8_are_located() {
    // 0xFF is never part of UTF-8 text
    let text = edit(MINIMAL, "Damped spring", "Damped spr\u{1}ng");
    let mut bytes = text.into_bytes();
    let at = bytes.iter().position(|&b| b == 1).expect("marker");
    bytes[at] = 0xFF;
    let err = load_bytes(&bytes).expect_err("not UTF-8");
    let ScenarioError::Syntax {
        location, message, ..
    } = &err
    else {
        panic!("expected a located error, got {err}")
    };
    let column = column_of(MINIMAL, 4, "ing\"");
    assert_eq!((location.line, location.column), (4, column), "{err}");
    assert_eq!(
        message,
        "the file is not UTF-8 text: byte 0xFF here is not part of a UTF-8 character; save it as UTF-8"
    );
    assert_plain(message);

    // after characters of several bytes the column still counts characters
    let bytes = [
        "(\n  title: \"Übergang µ\u{2013}".as_bytes(),
        &[0xC3, 0x28],
        b"\"\n",
    ]
    .concat();
    let err = load_bytes(&bytes).expect_err("not UTF-8");
    assert!(err.to_string().starts_with("line 2, column 22: "), "{err}");

    // a character cut short at the end, and a file saved as UTF-16
    let err = load_bytes(&[b'(', b'\n', 0xE2, 0x82]).expect_err("cut short");
    assert!(
        err.to_string().starts_with(
            "line 2, column 1: the file is not UTF-8 text: it ends inside a character"
        ),
        "{err}"
    );
    let err = load_bytes(&[0xFF, 0xFE, b'(', 0]).expect_err("UTF-16");
    assert!(err.to_string().contains("UTF-16"), "{err}");

    // from a file too
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("latin1.ron");
    std::fs::write(&path, &bytes).expect("write");
    let err = load_file(&path).expect_err("not UTF-8");
    assert!(err.to_string().starts_with("line 2, column 22: "), "{err}");
}

#[test]
fn a_comment_never_closed_is_shown_where_it_starts() {
    let text = edit(MINIMAL, "    time: (", "    /* time: (");
    let (line, column, field, message, display) = syntax_error(&text);
    assert_eq!((line, column, field), (13, 5, None), "{display}");
    assert_eq!(
        message,
        "the block comment that starts here with '/*' is never closed with '*/'"
    );
    // the outer one of nested comments
    let text = edit(MINIMAL, "    time: (", "    /* a /* b */ time: (");
    let (line, column, _, _, _) = syntax_error(&text);
    assert_eq!((line, column), (13, 5));
}

#[test]
fn a_string_never_closed_is_shown_where_it_starts() {
    let end = MINIMAL.rfind(')').expect("closing bracket");
    let text = format!("{}    notes: \"never closed\n", &MINIMAL[..end]);
    let (line, column, field, message, _) = syntax_error(&text);
    assert_eq!((line, column), (14, 12));
    assert_eq!(field.as_deref(), Some("notes"));
    assert_eq!(
        message,
        "notes: the string that starts here is never closed (its closing '\"' is missing)"
    );

    // a quote missing in the middle: the next string's quote closes it, and the message says
    // so where the text after it goes wrong
    let text = edit(
        MINIMAL,
        "title: \"Damped spring\",",
        "title: \"Damped spring,",
    );
    let (_, _, _, message, _) = syntax_error(&text);
    assert!(
        message.contains("the string at line 4, column 12 runs over several lines"),
        "{message}"
    );
}

#[test]
fn a_file_that_ends_early_names_the_bracket_left_open() {
    let text = &EXAMPLE[..EXAMPLE.find("limits").expect("limits")];
    let (_, _, _, message, _) = syntax_error(text);
    assert_eq!(
        message,
        "the file ends too early: the '(' of the scenario at line 1, column 1 is never closed"
    );
    let text = edit(
        MINIMAL,
        "    time: (start: 0.0, settle: 0.0, span: 50.0),\n)",
        "    time: (start: 0.0,",
    );
    let (_, _, _, message, _) = syntax_error(&text);
    assert!(message.contains("the '(' of time at line 13"), "{message}");
}

#[test]
fn a_count_too_large_says_so_and_gives_the_limit() {
    let cases = [
        (
            EXAMPLE,
            "keep: 64",
            "keep: 1000000000000",
            "sweep.keep: 1000000000000 is too large; the largest it takes is 4294967295",
        ),
        (
            EXAMPLE,
            "values: 301",
            "values: 0x1_0000_0000",
            "sweep.values: 0x1_0000_0000 is too large; the largest it takes is 4294967295",
        ),
        (
            EXAMPLE,
            "values: 101",
            "values: 4294967296",
            "map.x.values: 4294967296 is too large; the largest it takes is 4294967295",
        ),
        (
            EXAMPLE,
            "max_points: 200000",
            "max_points: 18446744073709551616",
            "limits.max_points: 18446744073709551616 is too large; the largest it takes is 18446744073709551615",
        ),
        (
            EXAMPLE_FORMAT1,
            "steps: 300",
            "steps: 99999999999",
            "sweep.steps: 99999999999 is too large; the largest it takes is 4294967295",
        ),
        (
            EXAMPLE,
            "keep: 64",
            "keep: -1",
            "sweep.keep: must be 0 or more, not -1",
        ),
    ];
    for (base, from, to, expected) in cases {
        let text = edit(base, from, to);
        let (line, column, _, message, display) = syntax_error(&text);
        assert_eq!(message, expected, "{display}");
        let token = to.split_once(": ").expect("field: value").1;
        let content = text.lines().nth(line - 1).expect("line");
        assert_eq!(
            content
                .chars()
                .skip(column - 1)
                .take(token.len())
                .collect::<String>(),
            token,
            "{display}"
        );
    }
    // the largest value itself is read
    let text = edit(EXAMPLE, "keep: 64", "keep: 4294967295");
    assert_eq!(load(&text).sweep.expect("sweep").keep, u32::MAX);
    let text = edit(
        EXAMPLE,
        "max_points: 200000",
        "max_points: 18446744073709551615",
    );
    assert_eq!(load(&text).limits.max_points, u64::MAX);
    // a number of a million digits is shown by its start and length
    let text = edit(
        EXAMPLE,
        "keep: 64",
        &format!("keep: {}", "9".repeat(1_000_000)),
    );
    let (_, _, _, message, _) = syntax_error(&text);
    assert!(
        message
            .ends_with("... (1000000 characters) is too large; the largest it takes is 4294967295"),
        "{}",
        &message[..200.min(message.len())]
    );
}

#[test]
fn messages_are_in_plain_words() {
    let cases = [
        edit(MINIMAL, "method: Dp5", "method: 5"),
        edit(MINIMAL, "method: Dp5", "method: \"Dp5\""),
        edit(MINIMAL, "rtol: 1e-8", "rtol: _1"),
        edit(MINIMAL, "rtol: 1e-8", "rtol: $"),
        edit(MINIMAL, "rtol: 1e-8", "rtol: \0"),
        edit(MINIMAL, "title: \"Damped spring\"", "title: \"a\\q\""),
        edit(MINIMAL, "title: \"Damped spring\"", "title: 'ab'"),
        edit(MINIMAL, "(name: \"c\"", "Param(name: \"c\""),
        edit(MINIMAL, "range: (0.0, 1.0)", "range: [0.0, 1.0]"),
        edit(MINIMAL, "range: (0.0, 1.0)", "range: 5"),
        edit(MINIMAL, "states: [", "states: ("),
        edit(MINIMAL, "states: [", "states: {"),
        format!("#![enable(nothing)]\n{MINIMAL}"),
        format!("#![nope]\n{MINIMAL}"),
        format!("{MINIMAL} trailing"),
        "\u{feff}\u{feff}(".to_owned(),
    ];
    for text in cases {
        let Err(err) = load_str(&text) else {
            panic!("expected an error: {text}")
        };
        assert_plain(&err.to_string());
    }
}
