//! Writing files safely (temporary file in the target folder, renamed when complete) and
//! formatting numbers for people.

use std::fs;
use std::io::Write;
use std::path::{Path, PathBuf};

use anyhow::{bail, Context, Result};

/// A temporary path beside `target`, in the same folder (so the final rename is atomic).
pub fn temp_path_for(target: &Path) -> PathBuf {
    let name = target
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".into());
    let tmp = format!(".{name}.{}.tmp-rerate", std::process::id());
    target.with_file_name(tmp)
}

/// Write `bytes` to `path` through a temporary file; refuse to replace an existing file
/// unless `force`.
pub fn write_atomically(path: &Path, bytes: &[u8], force: bool) -> Result<()> {
    if path.exists() && !force {
        bail!(
            "{}: already exists (use --force to overwrite)",
            path.display()
        );
    }
    let tmp = temp_path_for(path);
    let result = (|| -> Result<()> {
        let mut f =
            fs::File::create(&tmp).with_context(|| format!("{}: cannot create", tmp.display()))?;
        f.write_all(bytes)
            .with_context(|| format!("{}: cannot write", tmp.display()))?;
        f.sync_all().ok();
        fs::rename(&tmp, path).with_context(|| format!("{}: cannot write", path.display()))?;
        Ok(())
    })();
    if result.is_err() {
        let _ = fs::remove_file(&tmp);
    }
    result
}

/// A dB figure: two decimals, or "inf" for an exact (unbounded) value.
pub fn fmt_db(db: f64) -> String {
    if db.is_finite() {
        format!("{db:.2}")
    } else {
        "inf".into()
    }
}
