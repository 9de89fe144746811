//! What a path names when it is not a regular file, in words for messages: rerate reads
//! pipes as streams, and replaces (with `--force`) only regular files.

use std::fs;
use std::io;
use std::path::Path;

/// `None` for a regular file (symbolic links followed); otherwise what it is: "a folder",
/// "a pipe", "a character device", "a block device", "a socket", "a special file".
pub fn special_kind(path: &Path) -> io::Result<Option<&'static str>> {
    Ok(kind_of(&fs::metadata(path)?.file_type()))
}

/// [`special_kind`] of a file type already read.
pub fn kind_of(t: &fs::FileType) -> Option<&'static str> {
    if t.is_file() {
        return None;
    }
    if t.is_dir() {
        return Some("a folder");
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if t.is_fifo() {
            return Some("a pipe");
        }
        if t.is_char_device() {
            return Some("a character device");
        }
        if t.is_block_device() {
            return Some("a block device");
        }
        if t.is_socket() {
            return Some("a socket");
        }
    }
    Some("a special file")
}

#[cfg(all(test, unix))]
mod tests {
    use super::*;

    #[test]
    fn kinds() {
        let d = tempfile::tempdir().unwrap();
        let f = d.path().join("f");
        fs::write(&f, b"x").unwrap();
        assert_eq!(special_kind(&f).unwrap(), None);
        assert_eq!(special_kind(d.path()).unwrap(), Some("a folder"));
        assert_eq!(
            special_kind(Path::new("/dev/null")).unwrap(),
            Some("a character device")
        );
    }
}
