//! Files written under a temporary name in the target folder and moved into place only when
//! complete, so an interrupted or failed run never leaves a half-written file under the
//! final name. Temporary files are removed on error, on drop, and (through
//! [`remove_all_live`]) from a signal handler.

use std::collections::BTreeSet;
use std::fs::{self, File, OpenOptions};
use std::io;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::Mutex;

use super::stale;
use crate::error::FileError;

/// Suffix of every temporary file rerate writes.
pub const TEMP_SUFFIX: &str = ".rerate-tmp";

static LIVE: Mutex<BTreeSet<PathBuf>> = Mutex::new(BTreeSet::new());
static COUNTER: AtomicU64 = AtomicU64::new(0);

/// Remove every temporary file still being written (for a signal handler that is about to
/// exit the process). Returns how many were removed.
pub fn remove_all_live() -> usize {
    let live = match LIVE.lock() {
        Ok(g) => g.clone(),
        Err(p) => p.into_inner().clone(),
    };
    live.iter().filter(|p| fs::remove_file(p).is_ok()).count()
}

/// Whether `temp` is a temporary file this process is writing.
pub(crate) fn is_live(temp: &Path) -> bool {
    match LIVE.lock() {
        Ok(g) => g.contains(temp),
        Err(p) => p.into_inner().contains(temp),
    }
}

/// A file being written under a temporary name beside its final path.
#[derive(Debug)]
pub struct StagedFile {
    temp: PathBuf,
    target: PathBuf,
    force: bool,
    committed: bool,
}

impl StagedFile {
    /// Start writing `target`: refuse an existing target unless `force`, and create a new,
    /// uniquely named temporary file in the same folder.
    pub fn create(target: &Path, force: bool) -> Result<(Self, File), FileError> {
        Self::create_with_extension(target, force, None)
    }

    /// [`StagedFile::create`] with the temporary name ending in `.EXT` (for writers that
    /// choose their format by the file's extension, such as the plot backends).
    pub fn create_with_extension(
        target: &Path,
        force: bool,
        ext: Option<&str>,
    ) -> Result<(Self, File), FileError> {
        if target.symlink_metadata().is_ok() {
            if !force {
                return Err(FileError::Exists(target.display().to_string()));
            }
            check_replaceable(target)?;
        }
        let folder = match target.parent() {
            Some(p) if !p.as_os_str().is_empty() => p,
            _ => Path::new("."),
        };
        stale::sweep_once(folder);
        let n = COUNTER.fetch_add(1, Ordering::Relaxed);
        let temp = folder.join(temp_name(target, n, ext));
        if let Ok(mut live) = LIVE.lock() {
            live.insert(temp.clone());
        }
        let staged = Self {
            temp,
            target: target.to_path_buf(),
            force,
            committed: false,
        };
        let file = OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&staged.temp)
            .map_err(|e| FileError::io("cannot create the temporary output file", e))?;
        Ok((staged, file))
    }

    /// The temporary path.
    pub fn temp_path(&self) -> &Path {
        &self.temp
    }

    /// The final path.
    pub fn target(&self) -> &Path {
        &self.target
    }

    /// Make the temporary file durable and move it to the final name. Without `force` this
    /// never replaces a file that appeared meanwhile.
    pub fn commit(mut self) -> Result<(), FileError> {
        File::open(&self.temp)
            .and_then(|f| f.sync_all())
            .map_err(|e| FileError::io("cannot write", e))?;
        if self.force {
            if self.target.symlink_metadata().is_ok() {
                check_replaceable(&self.target)?;
            }
            fs::rename(&self.temp, &self.target).map_err(|e| FileError::io("cannot rename", e))?;
        } else {
            // A hard link fails if the target exists: no window in which another writer's
            // file could be replaced.
            match fs::hard_link(&self.temp, &self.target) {
                Ok(()) => {
                    let _ = fs::remove_file(&self.temp);
                }
                Err(e) if e.kind() == io::ErrorKind::AlreadyExists => {
                    return Err(FileError::Exists(self.target.display().to_string()));
                }
                Err(_) => {
                    // Filesystems without hard links.
                    if self.target.symlink_metadata().is_ok() {
                        return Err(FileError::Exists(self.target.display().to_string()));
                    }
                    fs::rename(&self.temp, &self.target)
                        .map_err(|e| FileError::io("cannot rename", e))?;
                }
            }
        }
        self.committed = true;
        self.forget();
        // The new name lives in the folder's own data: make it durable too, so that a
        // finished output survives a power cut.
        sync_folder(&self.target).map_err(|e| FileError::io("cannot write the folder", e))?;
        Ok(())
    }

    fn forget(&self) {
        if let Ok(mut live) = LIVE.lock() {
            live.remove(&self.temp);
        }
    }
}

/// Bytes of the output's name kept in its temporary name (whole characters): enough to
/// tell which output a temporary file is for, short enough that the temporary name stays
/// far below the usual 255-byte limit on a name whatever the output's name.
const TEMP_NAME_KEEP: usize = 40;

/// `.NAME.HOST-PID-N.rerate-tmp[.EXT]`: NAME the output's name cut to [`TEMP_NAME_KEEP`]
/// bytes, HOST a short hash of the machine's name, PID this process, N a counter.
fn temp_name(target: &Path, n: u64, ext: Option<&str>) -> String {
    let name = target
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".into());
    let mut cut = name.len().min(TEMP_NAME_KEEP);
    while !name.is_char_boundary(cut) {
        cut -= 1;
    }
    let ext = ext.map(|e| format!(".{e}")).unwrap_or_default();
    format!(
        ".{}.{}{TEMP_SUFFIX}{ext}",
        &name[..cut],
        stale::owner_tag(std::process::id(), n)
    )
}

/// Refuse to replace anything but a regular file (a symbolic link is judged by what it
/// names): `--force` must never turn a device, a pipe or a folder into a file.
fn check_replaceable(target: &Path) -> Result<(), FileError> {
    // A dangling symbolic link (an error here): the link itself is replaced.
    let kind = crate::io::special_kind(target).unwrap_or_default();
    match kind {
        None => Ok(()),
        Some(kind) => Err(FileError::NotRegular {
            path: target.display().to_string(),
            kind,
        }),
    }
}

/// Make the folder holding `path` durable (its list of names). Unix only: elsewhere a
/// folder cannot be opened to be synced, and renames are durable by other means.
fn sync_folder(path: &Path) -> io::Result<()> {
    #[cfg(unix)]
    {
        let folder = match path.parent() {
            Some(p) if !p.as_os_str().is_empty() => p,
            _ => Path::new("."),
        };
        match File::open(folder).and_then(|f| f.sync_all()) {
            // Filesystems that cannot sync a folder (some network and FUSE ones say so).
            Err(e)
                if matches!(
                    e.kind(),
                    io::ErrorKind::InvalidInput | io::ErrorKind::Unsupported
                ) =>
            {
                Ok(())
            }
            r => r,
        }
    }
    #[cfg(not(unix))]
    {
        let _ = path;
        Ok(())
    }
}

impl Drop for StagedFile {
    fn drop(&mut self) {
        if !self.committed {
            let _ = fs::remove_file(&self.temp);
            self.forget();
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::io::Write;

    #[test]
    fn commit_moves_and_drop_cleans() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("a.wav");
        let (s, mut f) = StagedFile::create(&target, false).unwrap();
        f.write_all(b"abc").unwrap();
        drop(f);
        let temp = s.temp_path().to_path_buf();
        assert!(temp.exists());
        s.commit().unwrap();
        assert!(!temp.exists());
        assert_eq!(fs::read(&target).unwrap(), b"abc");

        // Exists, no force: refused up front.
        assert!(matches!(
            StagedFile::create(&target, false),
            Err(FileError::Exists(_))
        ));
        // Dropped without commit: temp removed, target untouched.
        let (s, mut f) = StagedFile::create(&target, true).unwrap();
        f.write_all(b"zzz").unwrap();
        let temp = s.temp_path().to_path_buf();
        drop(s);
        assert!(!temp.exists());
        assert_eq!(fs::read(&target).unwrap(), b"abc");
    }

    #[test]
    fn commit_without_force_never_replaces_a_newcomer() {
        let dir = tempfile::tempdir().unwrap();
        let target = dir.path().join("b.wav");
        let (s, _f) = StagedFile::create(&target, false).unwrap();
        fs::write(&target, b"someone else").unwrap();
        assert!(matches!(s.commit(), Err(FileError::Exists(_))));
        assert_eq!(fs::read(&target).unwrap(), b"someone else");
        let leftovers: Vec<_> = fs::read_dir(dir.path()).unwrap().collect();
        assert_eq!(leftovers.len(), 1);
    }
}
