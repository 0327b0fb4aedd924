//! The ledger file on disk: exclusive locking, verified appends, and setting a damaged or
//! unwanted file aside without overwriting anything.
//!
//! The lock is taken on a sidecar file, `<ledger>.lock` (for `study.ledger.jsonl`,
//! `study.ledger.jsonl.lock`), never on the ledger itself, and that file is never renamed or
//! deleted. The reason is [`LockedLedger::set_aside`]: it renames the ledger away. A lock on
//! the ledger would go with the renamed file, and a run that had opened the ledger while
//! waiting would, once it got the lock, append to the file that was just set aside. With a
//! sidecar, every run waits on the same lock file whatever happens to the ledger, and opens the
//! ledger only after it holds the lock, so it always sees the current file. Deleting the lock
//! file after use would reopen that race (a waiter would hold a lock on a deleted file while a
//! newcomer locks a fresh one), which is why it stays, empty, beside the ledger.
//!
//! The lock is an advisory whole-file lock (`File::lock`): the operating system releases it
//! when the holder closes the file or dies, so a crashed run never leaves the ledger locked.
//! It excludes other surety runs, not other programs; a change by another program between
//! [`LockedLedger::read`] and [`LockedLedger::append`] is detected and refused instead.

use super::{Ledger, LedgerError, LedgerErrorKind};
use crate::provenance::sha256_hex;
use std::ffi::OsString;
use std::fs::{self, File, OpenOptions};
use std::io::{self, Read, Seek, SeekFrom, Write};
use std::path::{Path, PathBuf};

/// How many `replaced-N` names are tried before giving up; only reached if the folder is full
/// of them or refuses every name for the same reason.
const MAX_REPLACED: u64 = 100_000;

/// An open ledger file held under an exclusive lock until dropped.
///
/// While it exists no other surety run can read or write this ledger: [`LockedLedger::open`]
/// in another run (or thread) blocks until this one is dropped.
#[derive(Debug)]
pub struct LockedLedger {
    path: PathBuf,
    /// Held only for its lock; dropping it releases the lock.
    _lock: File,
    file: File,
    /// The file's bytes as last read or written under this lock; `None` until a successful
    /// [`LockedLedger::read`] (or [`LockedLedger::set_aside`]).
    known: Option<Vec<u8>>,
}

impl LockedLedger {
    /// Open the ledger at `path`, creating it and its lock file if absent, and lock it
    /// exclusively, blocking until other runs release it. The lock belongs to this value, not
    /// to the process, so opening the same ledger again before dropping it waits forever.
    ///
    /// A newly created ledger's folder entry is synced to disk here, before anything is written
    /// to it, so that once [`LockedLedger::append`] returns the line cannot vanish with its
    /// file after a power cut.
    pub fn open(path: &Path) -> Result<LockedLedger, LedgerError> {
        let lock_path = LockedLedger::lock_path(path);
        let lock = OpenOptions::new()
            .read(true)
            .write(true)
            .create(true)
            .truncate(false)
            .open(&lock_path)
            .map_err(|e| io_error("open the lock file", &lock_path, e))?;
        lock.lock().map_err(|e| io_error("lock", &lock_path, e))?;
        // Opened only now, under the lock, so that a file set aside by the previous holder is
        // never the one this run sees.
        let (file, created) = open_or_create(path)?;
        if created {
            sync_folder(path)?;
        }
        Ok(LockedLedger {
            path: path.to_path_buf(),
            _lock: lock,
            file,
            known: None,
        })
    }

    /// The lock file used for the ledger at `path`: the same path with `.lock` appended.
    pub fn lock_path(path: &Path) -> PathBuf {
        let mut name = path.as_os_str().to_os_string();
        name.push(".lock");
        PathBuf::from(name)
    }

    /// The ledger's path, as given to [`LockedLedger::open`].
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// Read and verify the current content ([`Ledger::parse`]); an empty file is an empty
    /// ledger. Only after a successful read may this lock append. The file is never changed
    /// here, even when it is damaged.
    pub fn read(&mut self) -> Result<Ledger, LedgerError> {
        self.known = None;
        let bytes = self.current_bytes()?;
        let ledger = Ledger::parse(&bytes).map_err(|e| LedgerError {
            message: format!("{}: {}", self.path.display(), e.message),
            ..e
        })?;
        self.known = Some(bytes);
        Ok(ledger)
    }

    /// Append one sealed line (from [`Ledger::seal`], without its line end) and `'\n'`.
    ///
    /// Refuses, writing nothing, if there was no successful [`LockedLedger::read`] under this
    /// lock, if the file was changed, moved or replaced since (its bytes are compared in full),
    /// or if the file with this line added would not verify ([`Ledger::parse`]) — so a line that
    /// breaks the chain, numbers its look wrongly or holds a non-finite number is never written.
    /// The line and its line end go out in one `write_all` on a file opened for appending,
    /// followed by `sync_all`. If writing or syncing fails, the bytes this call added are cut
    /// off again (the file was just checked to be as read, under the lock), so an error means
    /// the ledger is as it was; only a crash can leave a partial line, which the next read
    /// reports as [`LedgerErrorKind::IncompleteLastLine`] and never removes.
    pub fn append(&mut self, line: &str) -> Result<(), LedgerError> {
        let Some(known) = self.known.take() else {
            return Err(LedgerError {
                line: None,
                column: None,
                kind: LedgerErrorKind::NotRead,
                message: format!(
                    "{}: nothing was appended, because the ledger was not read and verified \
                     first under this lock",
                    self.path.display()
                ),
            });
        };
        self.check_same_file()?;
        let now = self.current_bytes()?;
        if now != known {
            return Err(LedgerError {
                line: None,
                column: None,
                kind: LedgerErrorKind::Changed,
                message: format!(
                    "{}: nothing was appended, because the ledger changed while this run held \
                     it ({} bytes when read, {} now); another program wrote to it. Run again \
                     to read it afresh.",
                    self.path.display(),
                    known.len(),
                    now.len()
                ),
            });
        }
        let mut after = known.clone();
        after.extend_from_slice(line.as_bytes());
        after.push(b'\n');
        if let Err(e) = Ledger::parse(&after) {
            self.known = Some(known);
            return Err(LedgerError {
                message: format!(
                    "{}: nothing was appended, because the new line would not verify: {}",
                    self.path.display(),
                    e.message
                ),
                ..e
            });
        }
        let mut out = Vec::with_capacity(line.len() + 1);
        out.extend_from_slice(line.as_bytes());
        out.push(b'\n');
        if let Err(e) = self
            .file
            .write_all(&out)
            .and_then(|()| self.file.sync_all())
        {
            let restored = self
                .file
                .set_len(known.len() as u64)
                .and_then(|()| self.file.sync_all());
            let message = match &restored {
                Ok(()) => format!(
                    "cannot append to {}: {e} (nothing was added)",
                    self.path.display()
                ),
                Err(e2) => format!(
                    "cannot append to {}: {e}; removing the partial line failed too ({e2}), \
                     so the ledger may now end with an incomplete line",
                    self.path.display()
                ),
            };
            if restored.is_ok() {
                self.known = Some(known);
            }
            return Err(LedgerError {
                line: None,
                column: None,
                kind: LedgerErrorKind::Io,
                message,
            });
        }
        self.known = Some(after);
        Ok(())
    }

    /// For `--new-ledger`: rename the current file aside, under this lock, and leave an empty
    /// ledger in its place ready for [`LockedLedger::append`] of the new-ledger line.
    ///
    /// The old file gets the first free name `<stem>.replaced-N.<ext>` in the same folder
    /// (`study.ledger.jsonl` → `study.ledger.replaced-1.jsonl`, then `-2`, …). The name is
    /// claimed by creating it exclusively before the rename, so no existing file is ever
    /// overwritten, not even one created by another program a moment before. Works whether or
    /// not the old content verifies. Returns the new name (in the ledger's folder, relative if
    /// the ledger path was) and the SHA-256 hex of the old content, or `None` when the ledger
    /// was empty and nothing needed setting aside. The lock stays held throughout, because it
    /// is on the separate lock file, which is not moved.
    pub fn set_aside(&mut self) -> Result<Option<(PathBuf, String)>, LedgerError> {
        self.known = None;
        self.check_same_file()?;
        let bytes = self.current_bytes()?;
        if bytes.is_empty() {
            self.known = Some(bytes);
            return Ok(None);
        }
        let digest = sha256_hex(&bytes);
        let target = self.claim_replaced_name()?;
        if let Err(e) = fs::rename(&self.path, &target) {
            // The claimed name is our own empty placeholder; leaving it would only confuse.
            let _ = fs::remove_file(&target);
            return Err(io_error("set aside", &self.path, e));
        }
        let file = OpenOptions::new()
            .read(true)
            .append(true)
            .create_new(true)
            .open(&self.path)
            .map_err(|e| LedgerError {
                message: format!(
                    "the old ledger is now {}, but a new {} cannot be created: {e}",
                    target.display(),
                    self.path.display()
                ),
                ..io_error("create", &self.path, e)
            })?;
        sync_folder(&self.path)?;
        self.file = file;
        self.known = Some(Vec::new());
        Ok(Some((target, digest)))
    }

    fn claim_replaced_name(&self) -> Result<PathBuf, LedgerError> {
        for n in 1..=MAX_REPLACED {
            let candidate = replaced_name(&self.path, n);
            match OpenOptions::new()
                .write(true)
                .create_new(true)
                .open(&candidate)
            {
                Ok(_) => return Ok(candidate),
                Err(e) if e.kind() == io::ErrorKind::AlreadyExists => continue,
                Err(e) => return Err(io_error("create", &candidate, e)),
            }
        }
        Err(LedgerError {
            line: None,
            column: None,
            kind: LedgerErrorKind::Io,
            message: format!(
                "cannot set {} aside: {MAX_REPLACED} replaced-N names are already taken",
                self.path.display()
            ),
        })
    }

    fn current_bytes(&mut self) -> Result<Vec<u8>, LedgerError> {
        let mut bytes = Vec::new();
        self.file
            .seek(SeekFrom::Start(0))
            .and_then(|_| self.file.read_to_end(&mut bytes))
            .map_err(|e| io_error("read", &self.path, e))?;
        Ok(bytes)
    }

    /// The handle must still be the file at the path: if another program moved or replaced the
    /// ledger, appending through the old handle would write where nobody looks.
    #[cfg(unix)]
    fn check_same_file(&self) -> Result<(), LedgerError> {
        use std::os::unix::fs::MetadataExt;
        let held = self
            .file
            .metadata()
            .map_err(|e| io_error("inspect", &self.path, e))?;
        let same = fs::metadata(&self.path)
            .map(|m| m.dev() == held.dev() && m.ino() == held.ino())
            .unwrap_or(false);
        if same {
            Ok(())
        } else {
            Err(LedgerError {
                line: None,
                column: None,
                kind: LedgerErrorKind::Changed,
                message: format!(
                    "{}: the ledger file was moved, deleted or replaced by another program \
                     while this run held it; nothing was written. Run again.",
                    self.path.display()
                ),
            })
        }
    }

    // std offers no portable file identity elsewhere; the byte comparison in `append` still
    // catches a replaced file whose content differs.
    #[cfg(not(unix))]
    fn check_same_file(&self) -> Result<(), LedgerError> {
        Ok(())
    }
}

/// `<stem>.replaced-N.<ext>` beside `path`, or `<name>.replaced-N` without an extension.
fn replaced_name(path: &Path, n: u64) -> PathBuf {
    let mut name = OsString::new();
    match (path.file_stem(), path.extension()) {
        (Some(stem), Some(ext)) => {
            name.push(stem);
            name.push(format!(".replaced-{n}."));
            name.push(ext);
        }
        _ => {
            name.push(path.file_name().unwrap_or(path.as_os_str()));
            name.push(format!(".replaced-{n}"));
        }
    }
    path.with_file_name(name)
}

/// Open the ledger for reading and appending, creating it if absent; says whether it was
/// created.
fn open_or_create(path: &Path) -> Result<(File, bool), LedgerError> {
    let mut options = OpenOptions::new();
    options.read(true).append(true);
    // Created exclusively, to know whether this run made it (and so must sync its folder).
    // The loop covers another program deleting the file between the two attempts.
    for _ in 0..3 {
        match options.clone().create_new(true).open(path) {
            Ok(f) => return Ok((f, true)),
            Err(e) if e.kind() == io::ErrorKind::AlreadyExists => {}
            Err(e) => return Err(io_error("create", path, e)),
        }
        match options.open(path) {
            Ok(f) => return Ok((f, false)),
            Err(e) if e.kind() == io::ErrorKind::NotFound => {}
            Err(e) => return Err(io_error("open", path, e)),
        }
    }
    Err(io_error(
        "open",
        path,
        io::Error::other("it keeps appearing and disappearing"),
    ))
}

/// Make a new or renamed folder entry durable. Only Unix lets a folder be opened and synced;
/// file systems that cannot sync a folder say so with these kinds, and then there is nothing
/// more this program can do.
#[cfg(unix)]
fn sync_folder(path: &Path) -> Result<(), LedgerError> {
    let folder = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p,
        _ => Path::new("."),
    };
    match File::open(folder).and_then(|d| d.sync_all()) {
        Ok(()) => Ok(()),
        Err(e)
            if matches!(
                e.kind(),
                io::ErrorKind::InvalidInput | io::ErrorKind::Unsupported
            ) =>
        {
            Ok(())
        }
        Err(e) => Err(io_error("sync the folder of", path, e)),
    }
}

#[cfg(not(unix))]
fn sync_folder(_path: &Path) -> Result<(), LedgerError> {
    Ok(())
}

fn io_error(what: &str, path: &Path, e: io::Error) -> LedgerError {
    LedgerError {
        line: None,
        column: None,
        kind: LedgerErrorKind::Io,
        message: format!("cannot {what} {}: {e}", path.display()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn replaced_names_keep_the_extension() {
        assert_eq!(
            replaced_name(Path::new("dir/study.ledger.jsonl"), 2),
            Path::new("dir/study.ledger.replaced-2.jsonl")
        );
        assert_eq!(
            replaced_name(Path::new("ledger"), 1),
            Path::new("ledger.replaced-1")
        );
        assert_eq!(
            LockedLedger::lock_path(Path::new("dir/study.ledger.jsonl")),
            Path::new("dir/study.ledger.jsonl.lock")
        );
    }
}
