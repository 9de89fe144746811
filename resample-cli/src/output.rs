//! Temporary names for the plot writers (files in the target folder, renamed when
//! complete) and formatting numbers for people.

use std::path::{Path, PathBuf};

/// A temporary path beside `target`, in the same folder (so the final rename is atomic).
pub fn temp_path_for(target: &Path) -> PathBuf {
    let name = target
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_else(|| "output".into());
    let tmp = format!(".{name}.{}.tmp-rerate", std::process::id());
    target.with_file_name(tmp)
}

/// A dB figure: two decimals, or "inf" for an exact (unbounded) value.
pub fn fmt_db(db: f64) -> String {
    if db.is_finite() {
        format!("{db:.2}")
    } else {
        "inf".into()
    }
}
