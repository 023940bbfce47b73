//! Saving a scenario: stable, readable RON text, written to disk atomically.

use std::path::Path;

use ron::ser::PrettyConfig;

use crate::error::ScenarioError;
use crate::scenario::{FORMAT, Scenario};

/// The scenario as format-2 RON text (whatever its `format` field says: a scenario read from a
/// format-1 file saves in the current format): fields in the file's order, one state,
/// parameter or block per line, numbers with the fewest digits that read back to the same
/// value.
pub fn to_ron_string(scenario: &Scenario) -> String {
    // Serializing plain strings, numbers and enums into a string does not fail; should `ron`
    // ever refuse, fall back to its compact form.
    render(scenario)
        .or_else(|_| {
            ron::ser::to_string(&Scenario {
                format: FORMAT,
                ..scenario.clone()
            })
        })
        .unwrap_or_default()
}

fn render(scenario: &Scenario) -> Result<String, ron::Error> {
    if scenario.format != FORMAT {
        let current = Scenario {
            format: FORMAT,
            ..scenario.clone()
        };
        return render(&current);
    }
    let config = PrettyConfig::new()
        .depth_limit(2)
        .new_line("\n")
        .indentor("    ")
        .struct_names(false)
        .separate_tuple_members(false);
    let mut text = ron::ser::to_string_pretty(scenario, config)?;
    text.push('\n');
    Ok(text)
}

/// Writes the scenario to `path` through Lamina's output files
/// ([`lamina_export::AtomicFile`]): the text goes to a temporary file in the same directory,
/// is flushed to disk, then renamed over `path`, keeping the replaced file's permissions (a new
/// file gets the usual ones); a symbolic link is written through to its file. A failure at any
/// point leaves an existing file at `path` untouched and no temporary file behind.
pub fn save_file(path: &Path, scenario: &Scenario) -> Result<(), ScenarioError> {
    let io_error = |source| ScenarioError::Io {
        path: path.to_owned(),
        source,
    };
    let text = render(scenario).map_err(|err| io_error(std::io::Error::other(err)))?;
    lamina_export::write_bytes_atomically(path, text.as_bytes()).map_err(|err| match err {
        lamina_export::ExportError::Io { source, .. } => io_error(source),
        other => io_error(std::io::Error::other(other)),
    })
}
