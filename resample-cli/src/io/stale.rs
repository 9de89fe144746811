//! Temporary files left by runs that were killed (SIGKILL, a power cut, a job scheduler's
//! hard limit) before they could remove them: their names say which machine and which
//! process wrote them, and a later run that writes into the same folder removes those whose
//! process is gone. A temporary file of a run still going, on this machine or another one
//! sharing the folder, is never touched.

use std::collections::HashSet;
use std::fs;
use std::path::{Path, PathBuf};
use std::sync::{Mutex, OnceLock};

use super::staged::{is_live, TEMP_SUFFIX};

/// `HOST-PID-N`: who writes a temporary file (HOST a hash of the machine's name, 8 hex
/// digits; PID the process; N its counter).
pub(crate) fn owner_tag(pid: u32, n: u64) -> String {
    format!("{}-{pid}-{n}", host_tag())
}

/// The machine's name hashed to 8 hex digits (32-bit FNV-1a: common practice, no source).
fn host_tag() -> &'static str {
    static TAG: OnceLock<String> = OnceLock::new();
    TAG.get_or_init(|| {
        let name = fs::read_to_string("/proc/sys/kernel/hostname")
            .or_else(|_| fs::read_to_string("/etc/hostname"))
            .or_else(|_| std::env::var("HOSTNAME"))
            .or_else(|_| std::env::var("COMPUTERNAME"))
            .unwrap_or_default();
        let mut h: u32 = 0x811c_9dc5;
        for b in name.trim().bytes() {
            h ^= u32::from(b);
            h = h.wrapping_mul(0x0100_0193);
        }
        format!("{h:08x}")
    })
}

/// The process that wrote temporary file `name`, if it is one of ours from this machine.
fn writer_of(name: &str) -> Option<u32> {
    let stem = &name[..name.find(TEMP_SUFFIX)?];
    if !name.starts_with('.') {
        return None;
    }
    let tag = stem.rsplit('.').next()?;
    let mut parts = tag.split('-');
    let (host, pid, n) = (parts.next()?, parts.next()?, parts.next()?);
    if parts.next().is_some() || host != host_tag() || n.parse::<u64>().is_err() {
        return None;
    }
    pid.parse().ok()
}

/// Whether process `pid` of this machine is running. Where that cannot be told, every
/// process counts as running (nothing is removed).
fn running(pid: u32) -> bool {
    if cfg!(target_os = "linux") {
        Path::new("/proc").join(pid.to_string()).exists()
    } else {
        true
    }
}

/// Remove the stale temporary files of `folder`: ours by name, of this machine, whose
/// process is gone (or is this process, which knows its own). Returns how many.
pub(crate) fn sweep(folder: &Path) -> usize {
    let Ok(entries) = fs::read_dir(folder) else {
        return 0;
    };
    let me = std::process::id();
    let mut removed = 0;
    for entry in entries.flatten() {
        let name = entry.file_name();
        let Some(pid) = name.to_str().and_then(writer_of) else {
            continue;
        };
        let path = entry.path();
        let stale = if pid == me {
            !is_live(&path)
        } else {
            !running(pid)
        };
        if stale && fs::remove_file(&path).is_ok() {
            removed += 1;
        }
    }
    removed
}

/// [`sweep`] each folder once per run.
pub(crate) fn sweep_once(folder: &Path) {
    static SWEPT: Mutex<Option<HashSet<PathBuf>>> = Mutex::new(None);
    let first = match SWEPT.lock() {
        Ok(mut g) => g
            .get_or_insert_with(HashSet::new)
            .insert(folder.to_path_buf()),
        Err(_) => false,
    };
    if first {
        sweep(folder);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_are_read_back() {
        let tag = owner_tag(4242, 7);
        assert_eq!(
            writer_of(&format!(".take.wav.{tag}{TEMP_SUFFIX}")),
            Some(4242)
        );
        assert_eq!(
            writer_of(&format!(".a.b.{tag}{TEMP_SUFFIX}.png")),
            Some(4242)
        );
        // Another machine's, the old layout, not ours at all.
        assert_eq!(writer_of(&format!(".t.00000000-4242-7{TEMP_SUFFIX}")), None);
        assert_eq!(writer_of(&format!(".t.4242-7{TEMP_SUFFIX}")), None);
        assert_eq!(writer_of("take.wav"), None);
    }

    #[cfg(target_os = "linux")]
    #[test]
    fn only_the_dead_are_swept() {
        let d = tempfile::tempdir().unwrap();
        // A process that has ended (its id is not reused this fast in practice).
        let mut child = std::process::Command::new("true").spawn().unwrap();
        let dead = child.id();
        child.wait().unwrap();
        let gone = d
            .path()
            .join(format!(".x.wav.{}{TEMP_SUFFIX}", owner_tag(dead, 0)));
        // The test's own parent process is alive.
        let alive_pid = std::os::unix::process::parent_id();
        let live = d
            .path()
            .join(format!(".y.wav.{}{TEMP_SUFFIX}", owner_tag(alive_pid, 0)));
        let other = d
            .path()
            .join(format!(".z.wav.00000000-{dead}-0{TEMP_SUFFIX}"));
        for p in [&gone, &live, &other] {
            fs::write(p, b"x").unwrap();
        }
        assert_eq!(sweep(d.path()), 1);
        assert!(!gone.exists());
        assert!(live.exists() && other.exists());
    }
}
