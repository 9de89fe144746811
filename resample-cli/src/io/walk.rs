//! Finding the WAV files in a folder (optionally its sub-folders), and telling files apart
//! by identity rather than by name.

use std::collections::HashSet;
use std::fs;
use std::io;
use std::path::{Path, PathBuf};

/// Whether a file name looks like a WAV file (`.wav` / `.wave`, any case) and is not hidden
/// (hidden names include rerate's own temporary files and other tools' resource forks).
pub fn is_wav_name(name: &str) -> bool {
    let lower = name.to_ascii_lowercase();
    !name.starts_with('.') && (lower.ends_with(".wav") || lower.ends_with(".wave"))
}

/// The WAV files under `dir`, as paths relative to it (not sorted), and warnings about
/// what was left out (see [`wav_files_counting`]).
pub fn wav_files(dir: &Path, recursive: bool) -> io::Result<(Vec<PathBuf>, Vec<String>)> {
    wav_files_counting(dir, recursive).map(|(files, _, warnings)| (files, warnings))
}

/// The WAV files under `dir`, as paths relative to it (not sorted), the number of
/// sub-folders not descended into (without `recursive`; hidden ones not counted), and
/// warnings about what was left out. Symbolic links are followed, but a folder already on
/// the way (a link that loops back) is visited once, and a link that cannot be resolved (a
/// loop of links) is skipped: each is a warning, not a reason to refuse the whole walk.
#[allow(clippy::type_complexity)]
pub fn wav_files_counting(
    dir: &Path,
    recursive: bool,
) -> io::Result<(Vec<PathBuf>, usize, Vec<String>)> {
    let mut skipped = 0;
    let mut out = Vec::new();
    let mut warnings = Vec::new();
    let mut seen: HashSet<FileId> = file_id(dir).into_iter().collect();
    let mut stack = vec![PathBuf::new()];
    while let Some(rel) = stack.pop() {
        for entry in fs::read_dir(dir.join(&rel))? {
            let entry = entry?;
            let name = entry.file_name();
            let name_s = name.to_string_lossy();
            let ty = match fs::metadata(entry.path()) {
                Ok(ty) => ty, // symbolic links followed
                Err(e) if entry.file_type().is_ok_and(|t| t.is_symlink()) => {
                    warnings.push(format!(
                        "{}: skipped, a symbolic link that cannot be followed ({e})",
                        entry.path().display()
                    ));
                    continue;
                }
                Err(e) => return Err(e),
            };
            if ty.is_dir() {
                if !name_s.starts_with('.') {
                    if !recursive {
                        skipped += 1;
                        continue;
                    }
                    if let Some(id) = file_id(&entry.path()) {
                        if !seen.insert(id) {
                            warnings.push(format!(
                                "{}: skipped, a symbolic link loop (this folder is already \
                                 part of the walk)",
                                entry.path().display()
                            ));
                            continue;
                        }
                    }
                    stack.push(rel.join(&name));
                }
            } else if ty.is_file() && is_wav_name(&name_s) {
                out.push(rel.join(&name));
            }
        }
    }
    Ok((out, skipped, warnings))
}

/// A file's identity (device and inode on Unix; the canonical path elsewhere), so that two
/// names of one file (links, `..`, symlinks) are recognised as the same.
#[derive(Debug, Clone, PartialEq, Eq, Hash)]
pub struct FileId(Inner);

#[cfg(unix)]
type Inner = (u64, u64);
#[cfg(not(unix))]
type Inner = PathBuf;

/// The identity of an existing file, `None` if it does not exist.
pub fn file_id(path: &Path) -> Option<FileId> {
    #[cfg(unix)]
    {
        use std::os::unix::fs::MetadataExt;
        let m = fs::metadata(path).ok()?;
        Some(FileId((m.dev(), m.ino())))
    }
    #[cfg(not(unix))]
    {
        fs::canonicalize(path).ok().map(FileId)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names() {
        assert!(is_wav_name("a.wav"));
        assert!(is_wav_name("A.WAVE"));
        assert!(!is_wav_name("._a.wav"));
        assert!(!is_wav_name(".a.wav.123-0.rerate-tmp"));
        assert!(!is_wav_name("a.flac"));
    }

    #[cfg(unix)]
    #[test]
    fn links_share_an_identity() {
        let d = tempfile::tempdir().unwrap();
        let a = d.path().join("a.wav");
        fs::write(&a, b"x").unwrap();
        std::os::unix::fs::symlink(&a, d.path().join("s.wav")).unwrap();
        fs::hard_link(&a, d.path().join("h.wav")).unwrap();
        let id = file_id(&a).unwrap();
        assert_eq!(file_id(&d.path().join("s.wav")), Some(id.clone()));
        assert_eq!(file_id(&d.path().join("h.wav")), Some(id));
        assert_eq!(file_id(&d.path().join("none.wav")), None);
    }
}
