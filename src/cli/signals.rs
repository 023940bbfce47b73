//! How a command ends when its output or its user goes away: Ctrl-C (or a termination
//! request) stops a run at its next step, and a reader that closed the pipe ends it quietly.

use std::io::ErrorKind;
use std::sync::Arc;

use anyhow::{Context, Result};
use lamina_core::Interrupt;

/// Exit status of a command stopped by Ctrl-C or a termination request: 128 + SIGINT, the
/// status a shell reports for a program that Ctrl-C ended.
pub const INTERRUPTED: u8 = 130;

/// A flag that Ctrl-C, SIGTERM and SIGHUP raise instead of ending the process, so the run
/// stops at its next step and the command can leave its output in order (no temporary file
/// left behind, streamed rows ending on a whole row). Call it once per process, before the
/// run starts.
pub fn interrupt_on_signal() -> Result<Arc<Interrupt>> {
    let interrupt = Arc::new(Interrupt::new());
    let flag = Arc::clone(&interrupt);
    ctrlc::set_handler(move || flag.raise()).context("cannot catch Ctrl-C")?;
    Ok(interrupt)
}

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
