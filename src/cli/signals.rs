//! How a command ends when its output goes away: a reader that closed the pipe ends it
//! quietly.

use std::io::ErrorKind;

/// Whether `err` comes from writing to a pipe whose reader has gone (`lamina cut ... | head`).
/// Such a command has done what was asked of it and ends quietly with success, as Unix
/// filters do.
pub fn output_closed(err: &anyhow::Error) -> bool {
    err.chain().any(|cause| {
        cause
            .downcast_ref::<std::io::Error>()
            .is_some_and(|io| io.kind() == ErrorKind::BrokenPipe)
    })
}
