//! Saving a scenario: stable, readable RON text, written to disk atomically.

use std::io::Write;
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

/// Writes the scenario to `path` atomically: the text goes to a temporary file in the same
/// directory, is flushed to disk, then renamed over `path`. A failure at any point leaves an
/// existing file at `path` untouched and no temporary file behind.
pub fn save_file(path: &Path, scenario: &Scenario) -> Result<(), ScenarioError> {
    let io_error = |source| ScenarioError::Io {
        path: path.to_owned(),
        source,
    };
    let text = render(scenario).map_err(|err| io_error(std::io::Error::other(err)))?;
    let dir = match path.parent() {
        Some(parent) if !parent.as_os_str().is_empty() => parent,
        _ => Path::new("."),
    };
    let mut builder = tempfile::Builder::new();
    builder.prefix(".lamina-save-").suffix(".tmp");
    // Keep the permissions of the file being replaced; a new file gets the usual ones.
    if let Some(metadata) = std::fs::metadata(path)
        .ok()
        .filter(std::fs::Metadata::is_file)
    {
        builder.permissions(metadata.permissions());
    } else {
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            // the process umask still applies, as for any newly created file
            builder.permissions(std::fs::Permissions::from_mode(0o666));
        }
    }
    let mut file = builder.tempfile_in(dir).map_err(io_error)?;
    file.write_all(text.as_bytes()).map_err(io_error)?;
    file.as_file().sync_all().map_err(io_error)?;
    file.persist(path).map_err(|err| io_error(err.error))?;
    #[cfg(unix)]
    {
        // Make the rename itself durable; the file is already complete either way.
        if let Ok(dir_handle) = std::fs::File::open(dir) {
            let _ = dir_handle.sync_all();
        }
    }
    Ok(())
}
