//! Atomic output files: written to a temporary file beside the target and renamed over it
//! only when complete, so a failure leaves the old file (or nothing) in place.

use std::io::{self, Write};
use std::path::{Path, PathBuf};

use tempfile::NamedTempFile;

use crate::ExportError;

/// A file being written; it replaces its target only on [`AtomicFile::commit`]. Dropping it
/// without committing removes the temporary file and leaves the target untouched.
pub struct AtomicFile {
    target: PathBuf,
    temp: io::BufWriter<NamedTempFile>,
}

fn io_error(path: &Path, source: io::Error) -> ExportError {
    ExportError::Io {
        path: path.display().to_string(),
        source,
    }
}

impl AtomicFile {
    /// Starts writing a replacement for `target` (a temporary file in the same directory).
    pub fn create(target: impl AsRef<Path>) -> Result<Self, ExportError> {
        let target = target.as_ref().to_path_buf();
        let dir = match target.parent() {
            Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
            _ => PathBuf::from("."),
        };
        let temp = tempfile::Builder::new()
            .prefix(".lamina-")
            .suffix(".partial")
            .tempfile_in(&dir)
            .map_err(|e| io_error(&target, e))?;
        Ok(Self {
            target,
            temp: io::BufWriter::new(temp),
        })
    }

    /// The file that will be replaced.
    pub fn target(&self) -> &Path {
        &self.target
    }

    /// Flushes, syncs and renames the temporary file over the target.
    pub fn commit(self) -> Result<(), ExportError> {
        let target = self.target;
        let temp = self
            .temp
            .into_inner()
            .map_err(|e| io_error(&target, e.into_error()))?;
        temp.as_file()
            .sync_all()
            .map_err(|e| io_error(&target, e))?;
        temp.persist(&target)
            .map_err(|e| io_error(&target, e.error))?;
        Ok(())
    }
}

impl Write for AtomicFile {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        self.temp.write(buf)
    }
    fn flush(&mut self) -> io::Result<()> {
        self.temp.flush()
    }
}

/// Writes `target` atomically with `fill`; on any error the target is left as it was.
pub fn write_atomically<E>(
    target: impl AsRef<Path>,
    fill: impl FnOnce(&mut AtomicFile) -> Result<(), E>,
) -> Result<(), E>
where
    E: From<ExportError>,
{
    let mut file = AtomicFile::create(target)?;
    fill(&mut file)?;
    file.commit()?;
    Ok(())
}

/// Writes `bytes` to `target` atomically; on any error the target is left as it was.
pub fn write_bytes_atomically(target: impl AsRef<Path>, bytes: &[u8]) -> Result<(), ExportError> {
    let target = target.as_ref();
    write_atomically(target, |f| {
        f.write_all(bytes).map_err(|e| io_error(target, e))
    })
}
