//! How a command that did not succeed ends: one stopped on a signal (Ctrl-C) with status 130
//! and a word on where it stood and what was or was not written; with `--json` any failure
//! also as a JSON object `{"error": "...", ...}` on stdout, so a script reading stdout always
//! gets one.

use std::fmt;
use std::io::Write;

use serde_json::{Map, Value};

/// A command stopped by Ctrl-C or a termination request. `main` prints the message and exits
/// with status 130.
#[derive(Debug)]
pub struct Interrupted(pub String);

impl fmt::Display for Interrupted {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for Interrupted {}

/// A failure that carries fields for the JSON object besides its message (a resting point's
/// state, say).
#[derive(Debug)]
pub struct WithFields {
    /// The message.
    pub message: String,
    /// More fields of the JSON object.
    pub fields: Map<String, Value>,
}

impl fmt::Display for WithFields {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

impl std::error::Error for WithFields {}

/// Prints `{"error": text, "command": command, ...}` on stdout (with
/// `"stopped_on_signal": true` for a command stopped on a signal, and any fields the error
/// carries).
pub fn print_json_error(command: &str, text: &str, err: &anyhow::Error) {
    let mut object = Map::new();
    object.insert("error".into(), Value::String(text.to_string()));
    object.insert("command".into(), Value::String(command.to_string()));
    if err.downcast_ref::<Interrupted>().is_some() {
        object.insert("stopped_on_signal".into(), Value::Bool(true));
    }
    if let Some(detailed) = err.chain().find_map(|c| c.downcast_ref::<WithFields>()) {
        for (key, value) in &detailed.fields {
            object.insert(key.clone(), value.clone());
        }
    }
    let mut stdout = std::io::stdout().lock();
    // a reader that has gone needs no error object
    let _ = writeln!(stdout, "{}", Value::Object(object)).and_then(|()| stdout.flush());
}
