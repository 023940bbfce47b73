//! Output files that never lose what was there: a regular file is written to a temporary file
//! beside it and renamed over it only when complete (a failure leaves the old file, or nothing,
//! in place); a symbolic link is written through to the file it points at (the link stays); a
//! device, FIFO or other special file is written directly (it is never replaced by a regular
//! file). A replaced file keeps its permissions (and, where allowed, its owner); a new file
//! gets the usual permissions under the process's umask.

use std::fs::{self, File, OpenOptions};
use std::io::{self, Write};
use std::path::{Path, PathBuf};

use tempfile::NamedTempFile;

use crate::ExportError;

/// Symbolic links followed at most in a chain (as the kernel's `MAXSYMLINKS`).
const MAX_LINKS: usize = 40;
/// The word in the name of the file that takes the valid part of an unfinished run.
pub const UNFINISHED: &str = "unfinished";

/// A file being written; it replaces its target only on [`AtomicFile::commit`]. Dropping it
/// without committing removes the temporary file and leaves the target untouched.
pub struct AtomicFile {
    /// The path as given.
    target: PathBuf,
    way: Way,
}

/// How the target is written.
enum Way {
    /// A regular file, or none yet: a temporary file beside `destination` (the target with
    /// its symbolic links resolved), renamed over it on commit.
    Replace {
        destination: PathBuf,
        temp: io::BufWriter<NamedTempFile>,
        /// Whether a file was there when writing began.
        existed: bool,
    },
    /// A device, FIFO or other special file, written as it goes.
    Direct { file: io::BufWriter<File> },
}

/// Where a committed file went.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Written {
    /// The target got it.
    Target(PathBuf),
    /// The target's existing file was left as it was; the contents went to the file beside
    /// it (`NAME.unfinished.EXT`).
    Beside {
        /// The existing file, untouched.
        kept: PathBuf,
        /// Where the contents went.
        written: PathBuf,
    },
}

fn io_error(path: &Path, source: io::Error) -> ExportError {
    ExportError::Io {
        path: path.display().to_string(),
        source,
    }
}

/// `path` with its symbolic links followed to the file they name (which need not exist).
fn resolve_links(path: &Path) -> io::Result<PathBuf> {
    let mut current = path.to_path_buf();
    for _ in 0..MAX_LINKS {
        match fs::symlink_metadata(&current) {
            Ok(meta) if meta.file_type().is_symlink() => {
                let link = fs::read_link(&current)?;
                current = match current.parent() {
                    Some(parent) if link.is_relative() => parent.join(link),
                    _ => link,
                };
            }
            // an existing file (canonical, so a link in a directory above is resolved too)
            Ok(_) => return fs::canonicalize(&current),
            Err(err) if err.kind() == io::ErrorKind::NotFound => return Ok(current),
            Err(err) => return Err(err),
        }
    }
    Err(io::Error::other("too many levels of symbolic links"))
}

/// The directory of `path` (`.` for a bare file name).
fn directory_of(path: &Path) -> PathBuf {
    match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

/// Whether `meta` is something other than a regular file or a directory (a device, FIFO,
/// socket).
fn is_special(meta: &fs::Metadata) -> bool {
    let kind = meta.file_type();
    !kind.is_file() && !kind.is_dir()
}

impl AtomicFile {
    /// Starts writing `target`: a regular file (or a new one) through a temporary file in its
    /// directory (after following symbolic links); a device or FIFO directly (opened now). The
    /// target's directory must exist and be writable, so a bad path fails here, before any
    /// long computation.
    ///
    /// # Errors
    /// [`ExportError::Io`] naming the target: a missing or unwritable directory, a target that
    /// is a directory or a socket, a link chain too long.
    pub fn create(target: impl AsRef<Path>) -> Result<Self, ExportError> {
        let target = target.as_ref().to_path_buf();
        let error = |e| io_error(&target, e);
        match fs::metadata(&target) {
            Ok(meta) if meta.is_dir() => {
                return Err(error(io::Error::other("is a directory")));
            }
            Ok(meta) if is_special(&meta) => {
                if is_socket(&meta) {
                    return Err(error(io::Error::other("is a socket; cannot write to it")));
                }
                // written as it goes, never replaced (the kernel follows any links)
                let file = OpenOptions::new()
                    .write(true)
                    .open(&target)
                    .map_err(error)?;
                return Ok(Self {
                    target,
                    way: Way::Direct {
                        file: io::BufWriter::new(file),
                    },
                });
            }
            _ => {}
        }
        let destination = resolve_links(&target).map_err(error)?;
        let existing = fs::metadata(&destination)
            .ok()
            .filter(fs::Metadata::is_file);
        let mut builder = tempfile::Builder::new();
        builder.prefix(".lamina-").suffix(".partial");
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            // a new file: the usual 0666 under the umask (the kernel applies it on creation);
            // an existing file's own permissions are set exactly once the file exists
            builder.permissions(fs::Permissions::from_mode(0o666));
        }
        let temp = builder
            .tempfile_in(directory_of(&destination))
            .map_err(error)?;
        if let Some(meta) = &existing {
            keep_owner_and_permissions(temp.as_file(), meta).map_err(error)?;
        }
        Ok(Self {
            target,
            way: Way::Replace {
                destination,
                temp: io::BufWriter::new(temp),
                existed: existing.is_some(),
            },
        })
    }

    /// The file that will be replaced, as given.
    pub fn target(&self) -> &Path {
        &self.target
    }

    /// Whether committing would replace a file that was there when writing began (a device
    /// or FIFO is written, never replaced).
    pub fn replaces_existing(&self) -> bool {
        matches!(self.way, Way::Replace { existed: true, .. })
    }

    /// Flushes, syncs and renames the temporary file over the target (for a device or FIFO:
    /// flushes).
    ///
    /// # Errors
    /// [`ExportError::Io`] when writing, syncing or renaming fails (the target is then left
    /// as it was and the temporary file removed).
    pub fn commit(self) -> Result<(), ExportError> {
        match self.way {
            Way::Direct { mut file } => file.flush().map_err(|e| io_error(&self.target, e)),
            Way::Replace {
                destination, temp, ..
            } => persist(&self.target, temp, &destination),
        }
    }

    /// Commits to the target if `succeeded` or if there is no file there to lose; otherwise
    /// (the output of a run that failed would replace an existing file) leaves that file as
    /// it was and writes `NAME.unfinished.EXT` beside it instead.
    ///
    /// # Errors
    /// As [`AtomicFile::commit`].
    pub fn commit_unless_failed(self, succeeded: bool) -> Result<Written, ExportError> {
        let Self { target, way } = self;
        match way {
            Way::Replace {
                destination,
                temp,
                existed: true,
            } if !succeeded => {
                let written = beside(&destination, UNFINISHED);
                persist(&target, temp, &written)?;
                Ok(Written::Beside {
                    kept: target,
                    written,
                })
            }
            way => {
                let file = Self {
                    target: target.clone(),
                    way,
                };
                file.commit()?;
                Ok(Written::Target(target))
            }
        }
    }
}

/// `NAME.WORD.EXT` (or `NAME.WORD`) beside `path`.
pub fn beside(path: &Path, word: &str) -> PathBuf {
    let stem = path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    let name = match path.extension() {
        Some(ext) => format!("{stem}.{word}.{}", ext.to_string_lossy()),
        None => format!("{stem}.{word}"),
    };
    path.with_file_name(name)
}

/// Flushes and syncs `temp` and renames it to `destination`, then syncs the directory.
fn persist(
    target: &Path,
    temp: io::BufWriter<NamedTempFile>,
    destination: &Path,
) -> Result<(), ExportError> {
    let temp = temp
        .into_inner()
        .map_err(|e| io_error(target, e.into_error()))?;
    temp.as_file().sync_all().map_err(|e| io_error(target, e))?;
    temp.persist(destination)
        .map_err(|e| io_error(target, e.error))?;
    #[cfg(unix)]
    {
        // make the rename itself durable; the file is complete either way
        if let Ok(dir) = File::open(directory_of(destination)) {
            let _ = dir.sync_all();
        }
    }
    Ok(())
}

#[cfg(unix)]
fn is_socket(meta: &fs::Metadata) -> bool {
    use std::os::unix::fs::FileTypeExt;
    meta.file_type().is_socket()
}

#[cfg(not(unix))]
fn is_socket(_meta: &fs::Metadata) -> bool {
    false
}

/// Gives `file` the permissions of the file it will replace (exactly, not under the umask)
/// and, where the process may, its owner and group.
#[cfg(unix)]
fn keep_owner_and_permissions(file: &File, existing: &fs::Metadata) -> io::Result<()> {
    use std::os::unix::fs::MetadataExt;
    // only a privileged process may give a file away; anyone else keeps it as their own
    let _ = std::os::unix::fs::fchown(file, Some(existing.uid()), Some(existing.gid()));
    file.set_permissions(existing.permissions())
}

#[cfg(not(unix))]
fn keep_owner_and_permissions(file: &File, existing: &fs::Metadata) -> io::Result<()> {
    file.set_permissions(existing.permissions())
}

impl Write for AtomicFile {
    fn write(&mut self, buf: &[u8]) -> io::Result<usize> {
        match &mut self.way {
            Way::Replace { temp, .. } => temp.write(buf),
            Way::Direct { file } => file.write(buf),
        }
    }
    fn flush(&mut self) -> io::Result<()> {
        match &mut self.way {
            Way::Replace { temp, .. } => temp.flush(),
            Way::Direct { file } => file.flush(),
        }
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

/// What a path names, to tell whether two paths are the same file: an existing file by its
/// device and inode (so hard links and symbolic links compare equal), a file still to be
/// made by its resolved path.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum FileIdentity {
    /// An existing file.
    Existing {
        /// Device number.
        device: u64,
        /// Inode number.
        inode: u64,
        /// Whether it is a character device (`/dev/null`), which several outputs may share.
        character_device: bool,
    },
    /// A file that does not exist yet, where it would be made.
    New(PathBuf),
}

impl FileIdentity {
    /// The identity of `path`.
    pub fn of(path: &Path) -> FileIdentity {
        #[cfg(unix)]
        {
            use std::os::unix::fs::{FileTypeExt, MetadataExt};
            if let Ok(meta) = fs::metadata(path) {
                return FileIdentity::Existing {
                    device: meta.dev(),
                    inode: meta.ino(),
                    character_device: meta.file_type().is_char_device(),
                };
            }
        }
        let resolved = resolve_links(path).unwrap_or_else(|_| path.to_path_buf());
        let directory =
            fs::canonicalize(directory_of(&resolved)).unwrap_or_else(|_| directory_of(&resolved));
        match resolved.file_name() {
            Some(name) => FileIdentity::New(directory.join(name)),
            None => FileIdentity::New(resolved),
        }
    }

    /// Whether two outputs (or an output and an input) with these identities would write
    /// over each other: the same file, unless it is a character device such as `/dev/null`.
    pub fn clashes_with(&self, other: &FileIdentity) -> bool {
        match (self, other) {
            (
                FileIdentity::Existing {
                    character_device: true,
                    ..
                },
                _,
            ) => false,
            _ => self == other,
        }
    }
}
