//! The output folder compile writes into, kept trustworthy.
//!
//! - **One compile at a time.** [`Folder::open`] takes an exclusive lock on
//!   `DIR/.glowscore.lock` (the operating system's file lock, released when
//!   the process ends, however it ends); a second compile into the same
//!   folder is refused with a message saying so.
//! - **Staging.** Every file is first written into a hidden staging folder
//!   inside DIR; staging folders left by an interrupted run are removed by
//!   the next run (it holds the lock, so no other run is using them), and
//!   an interrupt (Ctrl-C) removes the current one ([`abandon_staging`]).
//! - **A manifest.** `DIR/.glowscore-manifest` lists the files the last
//!   successful compile wrote. After a compile has moved its files into
//!   place, the files of the previous manifest that it did not write again
//!   (a renamed prop's old tables) are removed, so no stale table is left to
//!   be flashed by mistake. Files glowscore did not write are never touched.
//!
//! Files are moved into place one rename at a time, `report.json` last and
//! the manifest after it: a run killed between two renames leaves some new
//! files beside old ones, and the manifest still names the previous set,
//! until the next compile replaces them all.

use std::fs::{self, File};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::Mutex;

/// The lock file's name inside the output folder.
pub const LOCK_FILE: &str = ".glowscore.lock";
/// The manifest's name inside the output folder.
pub const MANIFEST_FILE: &str = ".glowscore-manifest";
/// What every staging folder's name starts with.
pub const STAGING_PREFIX: &str = ".glowscore-staging-";

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
        let lock_path = dir.join(LOCK_FILE);
        let lock = File::options()
            .create(true)
            .truncate(false)
            .write(true)
            .open(&lock_path)
            .map_err(io(&lock_path))?;
        match lock.try_lock() {
            Ok(()) => {}
            Err(fs::TryLockError::WouldBlock) => {
                return Err(FolderError::Busy {
                    dir: dir.to_path_buf(),
                });
            }
            Err(fs::TryLockError::Error(e)) => return Err(io(&lock_path)(e)),
        }
        for entry in fs::read_dir(dir).map_err(io(dir))?.flatten() {
            if entry
                .file_name()
                .to_string_lossy()
                .starts_with(STAGING_PREFIX)
            {
                let _ = fs::remove_dir_all(entry.path());
            }
        }
        let staging = dir.join(format!("{STAGING_PREFIX}{}", std::process::id()));
        fs::create_dir(&staging).map_err(io(&staging))?;
        if let Ok(mut s) = STAGING.lock() {
            *s = Some(staging.clone());
        }
        Ok(Folder {
            dir: dir.to_path_buf(),
            staging,
            _lock: lock,
        })
    }

    /// The staging folder new files are written into.
    pub fn staging(&self) -> &Path {
        &self.staging
    }

    /// Moves `names` from staging into the folder (in that order), records
    /// them in the manifest and removes the files of the previous manifest
    /// that are not among them.
    pub fn commit(&self, names: &[String]) -> Result<(), FolderError> {
        let old = self.manifest();
        for name in names {
            let to = self.dir.join(name);
            fs::rename(self.staging.join(name), &to).map_err(io(&to))?;
        }
        let manifest = self.dir.join(MANIFEST_FILE);
        let tmp = self.staging.join(MANIFEST_FILE);
        let mut f = File::create(&tmp).map_err(io(&tmp))?;
        for name in names {
            writeln!(f, "{name}").map_err(io(&tmp))?;
        }
        f.sync_all().map_err(io(&tmp))?;
        fs::rename(&tmp, &manifest).map_err(io(&manifest))?;
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
