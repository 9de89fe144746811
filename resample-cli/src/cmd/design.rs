//! `rerate design`: show (or export) the filter a conversion would use.

use std::io::Write;
use std::path::Path;

use anyhow::{Context, Result};
use resample_core::FilterSpec;

use crate::io::staged::StagedFile;

use crate::args::check_filter;
use crate::args::design::DesignArgs;
use crate::exit::Status;
use crate::report::design::{report_json, report_text};

/// Run `rerate design`.
pub fn run(args: &DesignArgs) -> Result<Status> {
    check_filter(Some(args.stopband_db), args.passband)?;
    let design = FilterSpec::new(args.in_rate, args.out_rate)
        .stopband_db(args.stopband_db)
        .passband(args.passband)
        .phase(args.phase.phase())
        .design()
        .context("cannot design the filter")?;
    if let Some(path) = &args.export {
        let mut text = String::with_capacity(design.taps().len() * 24);
        for t in design.taps() {
            // Rust prints the shortest decimal that parses back to the same bits.
            text.push_str(&format!("{t:e}\n"));
        }
        export(path, text.as_bytes(), args.force)?;
    }
    let r = design.report();
    let mut out = std::io::stdout().lock();
    if args.json {
        writeln!(out, "{}", report_json(r, design.spec().phase_response()))?;
    } else {
        write!(out, "{}", report_text(r, design.spec().phase_response()))?;
        if let Some(path) = &args.export {
            writeln!(out, "taps written to {}", path.display())?;
        }
    }
    Ok(Status::Success)
}

/// Write `bytes` to `path` through a temporary file moved into place when complete; never
/// replace an existing file unless `force`.
fn export(path: &Path, bytes: &[u8], force: bool) -> Result<()> {
    let (staged, mut file) =
        StagedFile::create(path, force).map_err(|e| crate::error::about_file(path, e))?;
    file.write_all(bytes)
        .with_context(|| format!("{}: cannot write", path.display()))?;
    drop(file);
    staged
        .commit()
        .map_err(|e| crate::error::about_file(path, e))?;
    Ok(())
}
