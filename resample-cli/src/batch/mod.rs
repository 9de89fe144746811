//! Turning the command line's inputs into a batch of conversion tasks: which files, where
//! each output goes, which outputs would be unsafe, and which share of the batch this
//! machine takes.

mod naming;
mod shard;

use std::collections::{BTreeMap, HashSet};
use std::path::{Path, PathBuf};

pub use crate::io::walk::{file_id, is_wav_name, FileId};
pub use naming::{default_output_name, rate_label};
pub use shard::Shard;

/// One file to convert.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Task {
    /// The input file.
    pub input: PathBuf,
    /// Where its output goes.
    pub output: PathBuf,
    /// Its path relative to the input it was found in (the file name for a file given
    /// directly): the sort key for sharding, and the mirrored path under `-o`.
    pub rel: PathBuf,
}

/// The whole batch, in sorted order.
#[derive(Debug, Clone, Default)]
pub struct Plan {
    /// Tasks sorted by relative path (then input path).
    pub tasks: Vec<Task>,
    /// Identities of every input file found (outputs may never be one of them).
    pub inputs: HashSet<FileId>,
    /// More than one input, or a folder: `-o` names a folder.
    pub is_batch: bool,
    /// Files found but not taken as inputs because this run writes them: without `-o`,
    /// `NAME-RATE.wav` beside a `NAME.wav` of the batch is that file's output (a second
    /// run must not convert its own outputs again).
    pub excluded: usize,
    /// Folders given without `--recursive` that have sub-folders (not searched).
    pub unsearched: Vec<PathBuf>,
    /// What the walk left out and why (symbolic link loops), to be shown as warnings.
    pub warnings: Vec<String>,
}

/// A command-line mistake (exit code 2).
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{0}")]
pub struct PlanError(pub String);

/// Plan the batch. With one input file, `output` is the output file (or a folder to put it
/// in); with several inputs or a folder, `output` is a folder and each folder's structure
/// is mirrored under it; without `output`, each result goes beside its input under
/// [`default_output_name`].
pub fn plan(
    inputs: &[PathBuf],
    output: Option<&Path>,
    recursive: bool,
    out_rate: u32,
) -> Result<Plan, PlanError> {
    if inputs.is_empty() {
        return Err(PlanError("no input given".into()));
    }
    let mut found: Vec<(PathBuf, PathBuf)> = Vec::new(); // (input, rel)
    let mut any_dir = false;
    let mut unsearched = Vec::new();
    let mut warnings = Vec::new();
    for inp in inputs {
        if let Some(e) = stream_input_problem(inp, inputs.len(), output) {
            return Err(PlanError(e));
        }
        if inp.as_os_str() == "-" {
            found.push((inp.clone(), inp.clone()));
            continue;
        }
        let meta = std::fs::metadata(inp)
            .map_err(|e| PlanError(format!("{}: {}", inp.display(), describe_io(&e))))?;
        if meta.is_dir() {
            any_dir = true;
            let (files, subdirs, warned) = crate::io::walk::wav_files_counting(inp, recursive)
                .map_err(|e| PlanError(format!("{}: {}", inp.display(), describe_io(&e))))?;
            if subdirs > 0 {
                unsearched.push(inp.clone());
            }
            warnings.extend(warned);
            if files.is_empty() {
                return Err(PlanError(format!(
                    "{}: no .wav files found{}",
                    inp.display(),
                    if recursive {
                        ""
                    } else {
                        " (use --recursive to descend into sub-folders)"
                    }
                )));
            }
            found.extend(files.into_iter().map(|rel| (inp.join(&rel), rel)));
        } else {
            let name = inp
                .file_name()
                .map(PathBuf::from)
                .ok_or_else(|| PlanError(format!("{}: not a file name", inp.display())))?;
            found.push((inp.clone(), name));
        }
    }
    let is_batch = inputs.len() > 1 || any_dir;
    if let (true, Some(out)) = (is_batch, output) {
        if out.exists() && !out.is_dir() {
            return Err(PlanError(format!(
                "{}: with several inputs or a folder, -o must be a folder, and this is a file",
                out.display()
            )));
        }
    }
    // Without -o, outputs go beside their inputs: a file that is the output this run would
    // write for another input of the batch (left by an earlier run) is not an input.
    let mut excluded = 0;
    if output.is_none() {
        let own: HashSet<FileId> = found
            .iter()
            .filter_map(|(inp, _)| file_id(&default_output_name(inp, out_rate)))
            .collect();
        if !own.is_empty() {
            let before = found.len();
            found.retain(|(inp, _)| file_id(inp).is_none_or(|id| !own.contains(&id)));
            excluded = before - found.len();
        }
    }
    let mut ids = HashSet::new();
    for (inp, _) in &found {
        if let Some(id) = file_id(inp) {
            ids.insert(id);
        }
    }
    let mut tasks: Vec<Task> = found
        .into_iter()
        .map(|(input, rel)| {
            let output = match output {
                Some(out) if is_batch => out.join(&rel),
                Some(out) if out.is_dir() || names_folder(out) => out.join(&rel),
                Some(out) => out.to_path_buf(),
                None => default_output_name(&input, out_rate),
            };
            Task { input, output, rel }
        })
        .collect();
    tasks.sort_by(|a, b| (&a.rel, &a.input).cmp(&(&b.rel, &b.input)));
    // The same file named twice on the command line is converted once.
    tasks.dedup_by(|a, b| a.input == b.input);
    let mut seen: BTreeMap<&Path, &Path> = BTreeMap::new();
    for t in &tasks {
        if let Some(prev) = seen.insert(&t.output, &t.input) {
            return Err(PlanError(format!(
                "{} and {} would both be written to {}",
                prev.display(),
                t.input.display(),
                t.output.display()
            )));
        }
    }
    Ok(Plan {
        tasks,
        inputs: ids,
        is_batch,
        excluded,
        unsearched,
        warnings,
    })
}

/// Whether `-o` was written as a folder (`new/`), so that a missing one is created rather
/// than taken as a file name.
fn names_folder(out: &Path) -> bool {
    let text = out.as_os_str().to_string_lossy();
    text.ends_with('/') || text.ends_with(std::path::MAIN_SEPARATOR)
}

/// The folders the batch writes into that do not exist yet, outermost first; made before
/// any work ([`create_folders`]).
pub fn missing_folders(tasks: &[Task]) -> Vec<PathBuf> {
    let mut dirs: Vec<PathBuf> = tasks
        .iter()
        .filter_map(|t| t.output.parent())
        .filter(|p| !p.as_os_str().is_empty() && !p.is_dir())
        .map(Path::to_path_buf)
        .collect();
    dirs.sort();
    dirs.dedup();
    dirs
}

/// Create each folder (and its parents). The error names the first folder that could not be
/// made and gives the system's reason.
pub fn create_folders(dirs: &[PathBuf]) -> Result<(), PlanError> {
    for dir in dirs {
        if let Err(e) = std::fs::create_dir_all(dir) {
            // Name the level that failed, not only the leaf asked for.
            let mut failed = dir.as_path();
            while let Some(parent) = failed.parent() {
                if parent.as_os_str().is_empty() || parent.exists() {
                    break;
                }
                failed = parent;
            }
            let reason = strip_os_code(&e);
            return Err(PlanError(if failed == dir.as_path() {
                format!("cannot create folder {}: {reason}", dir.display())
            } else {
                format!(
                    "cannot create folder {} (for {}): {reason}",
                    failed.display(),
                    dir.display()
                )
            }));
        }
    }
    Ok(())
}

/// The system's message without its "(os error N)" tail.
fn strip_os_code(e: &std::io::Error) -> String {
    let s = e.to_string();
    match s.find(" (os error") {
        Some(i) => s[..i].to_string(),
        None => s,
    }
}

/// Why a stream input (`-` for standard input, a pipe) cannot be planned as given: it
/// has no name to put an output beside, and standard input is read once.
fn stream_input_problem(inp: &Path, n_inputs: usize, output: Option<&Path>) -> Option<String> {
    let kind = if inp.as_os_str() == "-" {
        "standard input (-)"
    } else if crate::io::special_kind(inp).ok()?? == "a pipe" {
        "a pipe"
    } else {
        return None;
    };
    if inp.as_os_str() == "-" && n_inputs > 1 {
        return Some(format!("{kind} can only be converted on its own"));
    }
    match output {
        None => Some(format!(
            "{}: {kind} has no folder to write beside; give the output file with -o",
            inp.display()
        )),
        Some(_) => None,
    }
}

fn describe_io(e: &std::io::Error) -> String {
    match e.kind() {
        std::io::ErrorKind::NotFound => "no such file or folder".into(),
        std::io::ErrorKind::PermissionDenied => "permission denied".into(),
        _ => e.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::fs;

    fn touch(p: &Path) {
        fs::create_dir_all(p.parent().unwrap()).unwrap();
        fs::write(p, b"x").unwrap();
    }

    #[test]
    fn folders_are_mirrored_and_sorted() {
        let d = tempfile::tempdir().unwrap();
        let c = d.path().join("corpus");
        touch(&c.join("b/2.wav"));
        touch(&c.join("a/1.WAV"));
        touch(&c.join("z.wav"));
        touch(&c.join("notes.txt"));
        touch(&c.join("._z.wav"));
        let out = d.path().join("out");
        let p = plan(std::slice::from_ref(&c), Some(&out), true, 16_000).unwrap();
        let rels: Vec<_> = p.tasks.iter().map(|t| t.rel.clone()).collect();
        assert_eq!(
            rels,
            vec![
                PathBuf::from("a/1.WAV"),
                PathBuf::from("b/2.wav"),
                PathBuf::from("z.wav")
            ]
        );
        assert_eq!(p.tasks[1].output, out.join("b/2.wav"));
        assert!(p.is_batch);
        // Without --recursive only the top level.
        let p = plan(&[c], Some(&out), false, 16_000).unwrap();
        assert_eq!(p.tasks.len(), 1);
    }

    #[test]
    fn single_file_and_default_names() {
        let d = tempfile::tempdir().unwrap();
        let f = d.path().join("take.wav");
        touch(&f);
        let p = plan(std::slice::from_ref(&f), None, false, 44_100).unwrap();
        assert_eq!(p.tasks[0].output, d.path().join("take-44.1k.wav"));
        assert!(!p.is_batch);
        let p = plan(
            std::slice::from_ref(&f),
            Some(&d.path().join("x.wav")),
            false,
            44_100,
        )
        .unwrap();
        assert_eq!(p.tasks[0].output, d.path().join("x.wav"));
    }

    #[test]
    fn colliding_outputs_are_refused() {
        let d = tempfile::tempdir().unwrap();
        touch(&d.path().join("a/x.wav"));
        touch(&d.path().join("b/x.wav"));
        let e = plan(
            &[d.path().join("a/x.wav"), d.path().join("b/x.wav")],
            Some(&d.path().join("out")),
            false,
            8000,
        )
        .unwrap_err();
        assert!(e.0.contains("both be written"), "{e}");
    }

    #[test]
    fn missing_input_is_a_usage_error() {
        let d = tempfile::tempdir().unwrap();
        let e = plan(&[d.path().join("nope.wav")], None, false, 8000).unwrap_err();
        assert!(e.0.contains("no such file"), "{e}");
    }
}
