//! The output folder compile writes into, kept trustworthy.
//!
//! - **One compile at a time.** [`Folder::open`] takes an exclusive lock on
//!   `DIR/.glowscore.lock` (the operating system's file lock, released when
//!   the process ends, however it ends); a second compile into the same
//!   folder is refused with a message saying so.
//! - **Staging.** Every file is first written into a hidden staging folder
//!   beside DIR (`.DIR.glowscore-staging-PID` in DIR's parent). Staging
//!   folders left by an interrupted run are removed by the next run (it
//!   holds the lock, so no other run is using them), and an interrupt
//!   (Ctrl-C) removes the current one ([`abandon_staging`]).
//! - **A manifest.** `DIR/.glowscore-manifest` lists the files the last
//!   successful compile wrote. The files of the previous manifest that the
//!   new compile does not write again (a renamed prop's old tables) do not
//!   survive it, so no stale table is left to be flashed by mistake. Files
//!   glowscore did not write are never removed.
//! - **One swap.** When the set is complete, the maker's own files in DIR
//!   (those no manifest names, and the lock) are hard-linked into the staging
//!   folder beside the new files and the new manifest, every new file is
//!   flushed to the disk, and the staging folder and DIR exchange places in
//!   one atomic rename (Linux `renameat2` with `RENAME_EXCHANGE`). Whatever
//!   stops the process, at any instant, DIR holds either the whole old set
//!   or the whole new one. The old set, now in the staging folder's place, is
//!   then removed.
//! - **Where one swap cannot be made** (not Linux, a file system without hard
//!   links or the exchange, DIR without a parent, or DIR holding folders or
//!   links of the maker's own), files are moved into place one rename at a
//!   time, `report.json` last and the manifest after it: a run killed between
//!   two renames leaves some new files beside old ones, and the manifest
//!   still names the previous set, until the next compile replaces them all.
//!   Either way, every target is checked to be replaceable before the first
//!   file moves, so a refused compile leaves the folder as it was.

use std::fs::{self, File};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::Mutex;

/// The lock file's name inside the output folder.
pub const LOCK_FILE: &str = ".glowscore.lock";
/// The manifest's name inside the output folder.
pub const MANIFEST_FILE: &str = ".glowscore-manifest";
/// What every staging folder's name holds, after `.` and the output
/// folder's own name, before the process id.
pub const STAGING_MARK: &str = ".glowscore-staging-";

/// The staging folder being written, for [`abandon_staging`].
static STAGING: Mutex<Option<PathBuf>> = Mutex::new(None);

/// Why the output folder could not be used.
#[derive(Debug, thiserror::Error)]
pub enum FolderError {
    /// Another compile holds the lock.
    #[error(
        "another glowscore compile is writing into `{}`; wait for it to finish (or choose another --out)",
        dir.display()
    )]
    Busy {
        /// The output folder.
        dir: PathBuf,
    },
    /// An output's name is taken by something compile must not replace.
    #[error(
        "cannot replace `{}`: it is a folder or a link, not a file compile wrote; move it away (nothing was changed)",
        path.display()
    )]
    InTheWay {
        /// The folder or link in the way.
        path: PathBuf,
    },
    /// A file or folder could not be made, moved or removed.
    #[error("cannot write `{}`: {source}", path.display())]
    Io {
        /// The file or folder.
        path: PathBuf,
        /// The cause.
        #[source]
        source: std::io::Error,
    },
}

fn io(path: &Path) -> impl Fn(std::io::Error) -> FolderError + '_ {
    move |source| FolderError::Io {
        path: path.to_path_buf(),
        source,
    }
}

/// How [`Folder::commit`] put the new set in place.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Swap {
    /// One atomic exchange of the staging folder and the output folder.
    Exchange,
    /// One rename per file (see the module's notes).
    FileByFile,
}

/// The output folder, locked for this run, with its staging folder.
#[derive(Debug)]
pub struct Folder {
    dir: PathBuf,
    staging: PathBuf,
    /// Held open: the lock lasts as long as the file is open.
    _lock: File,
}

impl Folder {
    /// Creates `dir` if needed, locks it, removes staging folders of
    /// interrupted runs and makes a fresh one.
    pub fn open(dir: &Path) -> Result<Folder, FolderError> {
        fs::create_dir_all(dir).map_err(io(dir))?;
        let dir = fs::canonicalize(dir).map_err(io(dir))?;
        let lock_path = dir.join(LOCK_FILE);
        let lock = File::options()
            .create(true)
            .truncate(false)
            .write(true)
            .open(&lock_path)
            .map_err(io(&lock_path))?;
        // A lock just released can linger for an instant (a child process
        // forked elsewhere holds a copy of the descriptor until it starts
        // its program), so a busy folder is asked again for half a second.
        let mut tries = 0;
        loop {
            match lock.try_lock() {
                Ok(()) => break,
                Err(fs::TryLockError::WouldBlock) if tries < 10 => {
                    tries += 1;
                    std::thread::sleep(std::time::Duration::from_millis(50));
                }
                Err(fs::TryLockError::WouldBlock) => return Err(FolderError::Busy { dir }),
                Err(fs::TryLockError::Error(e)) => return Err(io(&lock_path)(e)),
            }
        }
        // Staging folders of interrupted runs: inside DIR (as earlier
        // versions made them) and beside it.
        remove_staging_in(&dir, "");
        let beside = staging_home(&dir);
        if let Some((parent, name)) = &beside {
            remove_staging_in(parent, &format!(".{name}"));
        }
        let pid = std::process::id();
        let staging = match &beside {
            Some((parent, name)) => parent.join(format!(".{name}{STAGING_MARK}{pid}")),
            None => dir.join(format!("{STAGING_MARK}{pid}")),
        };
        let staging = match fs::create_dir(&staging) {
            Ok(()) => staging,
            // The parent cannot be written: stage inside DIR, file by file.
            Err(_) if beside.is_some() => {
                let inside = dir.join(format!("{STAGING_MARK}{pid}"));
                fs::create_dir(&inside).map_err(io(&inside))?;
                inside
            }
            Err(e) => return Err(io(&staging)(e)),
        };
        if let Ok(mut s) = STAGING.lock() {
            *s = Some(staging.clone());
        }
        Ok(Folder {
            dir,
            staging,
            _lock: lock,
        })
    }

    /// The staging folder new files are written into.
    pub fn staging(&self) -> &Path {
        &self.staging
    }

    /// The output folder (made absolute).
    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// Puts the files `names`, written into staging, in place as the
    /// folder's new set, records them in the manifest, and drops the files
    /// of the previous manifest that are not among them. Says how.
    pub fn commit(&self, names: &[String]) -> Result<Swap, FolderError> {
        let old = self.manifest();
        // Nothing moves until every target is known to be replaceable.
        for name in names {
            let to = self.dir.join(name);
            if let Ok(meta) = fs::symlink_metadata(&to)
                && !meta.is_file()
            {
                return Err(FolderError::InTheWay { path: to });
            }
        }
        let tmp = self.staging.join(MANIFEST_FILE);
        let mut f = File::create(&tmp).map_err(io(&tmp))?;
        for name in names {
            writeln!(f, "{name}").map_err(io(&tmp))?;
        }
        f.sync_all().map_err(io(&tmp))?;
        drop(f);
        if self.staging.parent() != Some(self.dir.as_path()) && self.try_exchange(names, &old)? {
            return Ok(Swap::Exchange);
        }
        self.file_by_file(names, &old)?;
        Ok(Swap::FileByFile)
    }

    /// The one-swap commit; `Ok(false)` where it cannot be made here (and
    /// nothing in DIR has changed).
    fn try_exchange(&self, names: &[String], old: &[String]) -> Result<bool, FolderError> {
        if !exchange_supported() {
            return Ok(false);
        }
        // The maker's own files (and the lock) go into the new set as hard
        // links; a folder or link of theirs cannot, so it is left in place
        // and the set moves file by file.
        for entry in fs::read_dir(&self.dir).map_err(io(&self.dir))? {
            let entry = entry.map_err(io(&self.dir))?;
            let name = entry.file_name().to_string_lossy().into_owned();
            if name == MANIFEST_FILE
                || names.contains(&name)
                || old.contains(&name)
                || is_staging_name(&name, "")
            {
                continue;
            }
            let kind = entry.file_type().map_err(io(&entry.path()))?;
            if !kind.is_file() || fs::hard_link(entry.path(), self.staging.join(&name)).is_err() {
                self.unlink_carried(names)?;
                return Ok(false);
            }
        }
        for name in names {
            let p = self.staging.join(name);
            File::open(&p).and_then(|f| f.sync_all()).map_err(io(&p))?;
        }
        sync_dir(&self.staging);
        if exchange(&self.staging, &self.dir).is_err() {
            self.unlink_carried(names)?;
            return Ok(false);
        }
        if let Some(parent) = self.dir.parent() {
            sync_dir(parent);
        }
        // The staging path now holds the old set.
        let _ = fs::remove_dir_all(&self.staging);
        Ok(true)
    }

    /// Undoes the hard links of an exchange that was not made.
    fn unlink_carried(&self, names: &[String]) -> Result<(), FolderError> {
        for entry in fs::read_dir(&self.staging).map_err(io(&self.staging))? {
            let entry = entry.map_err(io(&self.staging))?;
            let name = entry.file_name().to_string_lossy().into_owned();
            if name != MANIFEST_FILE && !names.contains(&name) {
                fs::remove_file(entry.path()).map_err(io(&entry.path()))?;
            }
        }
        Ok(())
    }

    fn file_by_file(&self, names: &[String], old: &[String]) -> Result<(), FolderError> {
        for name in names {
            let to = self.dir.join(name);
            fs::rename(self.staging.join(name), &to).map_err(io(&to))?;
        }
        let manifest = self.dir.join(MANIFEST_FILE);
        fs::rename(self.staging.join(MANIFEST_FILE), &manifest).map_err(io(&manifest))?;
        for stale in old.iter().filter(|n| !names.contains(n)) {
            let _ = fs::remove_file(self.dir.join(stale));
        }
        Ok(())
    }

    /// The files the previous manifest lists (only plain names: a manifest
    /// edited to name a path elsewhere is ignored there).
    fn manifest(&self) -> Vec<String> {
        fs::read_to_string(self.dir.join(MANIFEST_FILE))
            .map(|t| {
                t.lines()
                    .filter(|l| {
                        !l.is_empty()
                            && !l.starts_with('.')
                            && !l.contains(['/', '\\'])
                            && Path::new(l).file_name().is_some()
                    })
                    .map(String::from)
                    .collect()
            })
            .unwrap_or_default()
    }
}

impl Drop for Folder {
    fn drop(&mut self) {
        let _ = fs::remove_dir_all(&self.staging);
        if let Ok(mut s) = STAGING.lock()
            && s.as_deref() == Some(self.staging.as_path())
        {
            *s = None;
        }
    }
}

/// Removes the staging folder of the compile in progress, if any: for an
/// interrupt handler, before the process exits.
pub fn abandon_staging() {
    if let Ok(mut s) = STAGING.lock()
        && let Some(dir) = s.take()
    {
        let _ = fs::remove_dir_all(dir);
    }
}

/// DIR's parent and DIR's own name, where staging beside DIR is possible.
fn staging_home(dir: &Path) -> Option<(PathBuf, String)> {
    let parent = dir.parent()?;
    let name = dir.file_name()?.to_str()?;
    Some((parent.to_path_buf(), name.to_string()))
}

/// `name` is a staging folder's name: `{lead}{STAGING_MARK}{digits}`.
fn is_staging_name(name: &str, lead: &str) -> bool {
    name.strip_prefix(lead)
        .and_then(|rest| rest.strip_prefix(STAGING_MARK))
        .is_some_and(|pid| !pid.is_empty() && pid.bytes().all(|b| b.is_ascii_digit()))
}

fn remove_staging_in(folder: &Path, lead: &str) {
    let Ok(entries) = fs::read_dir(folder) else {
        return;
    };
    for entry in entries.flatten() {
        if is_staging_name(&entry.file_name().to_string_lossy(), lead)
            && entry.file_type().is_ok_and(|t| t.is_dir())
        {
            let _ = fs::remove_dir_all(entry.path());
        }
    }
}

/// Flushes a folder's entries to the disk (best effort: not every system
/// can open a folder for this).
fn sync_dir(dir: &Path) {
    if let Ok(f) = File::open(dir) {
        let _ = f.sync_all();
    }
}

#[cfg(target_os = "linux")]
fn exchange_supported() -> bool {
    true
}

#[cfg(not(target_os = "linux"))]
fn exchange_supported() -> bool {
    false
}

/// Exchanges two paths in one atomic step (Linux `renameat2`,
/// `RENAME_EXCHANGE`, through rustix's safe wrapper).
#[cfg(target_os = "linux")]
fn exchange(a: &Path, b: &Path) -> std::io::Result<()> {
    use rustix::fs::{CWD, RenameFlags, renameat_with};
    renameat_with(CWD, a, CWD, b, RenameFlags::EXCHANGE).map_err(std::io::Error::from)
}

#[cfg(not(target_os = "linux"))]
fn exchange(_a: &Path, _b: &Path) -> std::io::Result<()> {
    Err(std::io::Error::from(std::io::ErrorKind::Unsupported))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn staging_names_are_recognised_exactly() {
        assert!(is_staging_name(".glowscore-staging-12", ""));
        assert!(is_staging_name(".out.glowscore-staging-7", ".out"));
        assert!(!is_staging_name(".out.glowscore-staging-", ".out"));
        assert!(!is_staging_name(".out.glowscore-staging-7x", ".out"));
        assert!(!is_staging_name(".x.out.glowscore-staging-7", ".out"));
        assert!(!is_staging_name("notes.txt", ""));
    }
}
