//! The `lamina` binary: command-line definition and glue over the core.
fn main() {}
