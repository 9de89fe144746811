//! Batches as a first-time user runs them: an interrupted batch and its accounting, a second
//! run beside the inputs (never its own outputs as inputs), resuming with --skip-existing,
//! a missing output folder, and the hints for sub-folders.

use std::io::{BufRead, BufReader};
use std::path::{Path, PathBuf};
use std::process::Stdio;

use crate::util::*;
use resample_cli::audio::wav::Encoding;

fn make(path: &Path, frames: usize) {
    if let Some(parent) = path.parent() {
        std::fs::create_dir_all(parent).unwrap();
    }
    write_wav(
        path,
        44_100,
        1,
        Encoding::Int(16),
        &signal(frames, 1, 44_100),
    );
}

fn json_lines(text: &str) -> Vec<serde_json::Value> {
    text.lines()
        .map(|l| serde_json::from_str(l).unwrap_or_else(|e| panic!("{e}: {l}")))
        .collect()
}

#[cfg(unix)]
#[test]
fn an_interrupted_batch_counts_files_never_started_apart_from_failures() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    // One long file (60 s of 96 kHz stereo to 44.1 kHz at the 200 dB default of 32-bit
    // output: a few tenths of a second of work on one thread, so the interrupt sent after
    // the first file's line lands while the second is under way even on a loaded machine)
    // under twelve names (hard links).
    std::fs::create_dir(d.join("in")).unwrap();
    write_wav(
        &d.join("in/take00.wav"),
        96_000,
        2,
        Encoding::Int(32),
        &signal(96_000 * 60, 2, 96_000),
    );
    for k in 1..12 {
        std::fs::hard_link(
            d.join("in/take00.wav"),
            d.join(format!("in/take{k:02}.wav")),
        )
        .unwrap();
    }
    let mut child = command()
        .current_dir(d)
        .args([
            "convert",
            "in",
            "--out-rate",
            "44.1k",
            "-o",
            "out",
            "--jobs",
            "1",
            "--json",
        ])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut lines = BufReader::new(child.stdout.take().unwrap()).lines();
    // The first file is done: interrupt the second while it is under way.
    let first = lines.next().unwrap().unwrap();
    assert!(first.contains("\"converted\""), "{first}");
    let k = std::process::Command::new("kill")
        .args(["-INT", &child.id().to_string()])
        .status()
        .unwrap();
    assert!(k.success());
    let rest: Vec<String> = lines.map(|l| l.unwrap()).collect();
    let o = child.wait_with_output().unwrap();
    assert_eq!(o.status.code(), Some(130), "{}", err(&o));
    let records = json_lines(&rest.join("\n"));
    let (summary, files) = records.split_last().unwrap();
    let count = |s: &str| files.iter().filter(|v| v["status"] == s).count();
    let converted = 1 + count("converted"); // the first line was one
    let interrupted = count("interrupted");
    let not_started = count("not started");
    assert_eq!(count("failed"), 0, "{rest:?}");
    assert_eq!(interrupted, 1, "the file under way: {rest:?}");
    assert_eq!(converted + interrupted + not_started, 12, "{rest:?}");
    assert!(not_started >= 9, "{rest:?}");
    let s = &summary["summary"];
    assert_eq!(s["failed"], 0, "{summary}");
    assert_eq!(s["converted"], converted, "{summary}");
    assert_eq!(s["interrupted"], 1, "{summary}");
    assert_eq!(s["not_started"], not_started, "{summary}");
    assert_eq!(s["stopped_by_signal"], true, "{summary}");
    // stderr: no line per file, one summary line.
    let e = err(&o);
    assert!(!e.contains("take"), "a line per file on stderr:\n{e}");
    let summaries: Vec<&str> = e
        .lines()
        .filter(|l| l.starts_with("rerate: interrupted:"))
        .collect();
    assert_eq!(summaries.len(), 1, "{e}");
    assert!(
        summaries[0].contains(&format!("{not_started} not started")),
        "{e}"
    );
    // Only finished outputs are left, no temporary files.
    let left = listing(&d.join("out"));
    assert_eq!(left.len(), converted, "{left:?}");
    assert!(left
        .iter()
        .all(|p| !p.to_string_lossy().contains("rerate-tmp")));
}

#[test]
fn a_second_run_beside_the_inputs_never_converts_its_own_outputs() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    make(&d.join("in/a.wav"), 700);
    make(&d.join("in/b.wav"), 900);
    let o = rerate(d, &["convert", "in", "--out-rate", "16k"]);
    assert!(o.status.success(), "{}", err(&o));
    let after_first = listing(&d.join("in"));
    assert_eq!(
        after_first,
        vec![
            PathBuf::from("a-16k.wav"),
            "a.wav".into(),
            "b-16k.wav".into(),
            "b.wav".into()
        ]
    );
    // Again, as is: the originals' outputs exist (refused without --force), and the outputs
    // are not inputs (no a-16k-16k.wav, no "is an input file").
    let o = rerate(d, &["convert", "in", "--out-rate", "16k", "--json"]);
    assert_eq!(o.status.code(), Some(1), "{}", err(&o));
    assert_eq!(listing(&d.join("in")), after_first);
    let recs = json_lines(&out(&o));
    let (summary, files) = recs.split_last().unwrap();
    assert_eq!(files.len(), 2, "{recs:?}");
    for f in files {
        assert_eq!(f["status"], "failed");
        assert!(
            f["error"].as_str().unwrap().contains("already exists"),
            "{f}"
        );
    }
    assert_eq!(summary["summary"]["excluded_own_outputs"], 2, "{summary}");
    assert!(
        err(&o).contains("2 files not taken as input: this run's own outputs"),
        "{}",
        err(&o)
    );
    // Resumed with --skip-existing: clean, nothing converted, one summary line.
    let o = rerate(
        d,
        &["convert", "in", "--out-rate", "16k", "--skip-existing"],
    );
    assert!(o.status.success(), "{}", err(&o));
    assert_eq!(
        out(&o).trim(),
        "0 converted, 2 skipped, 0 failed (2 selected)",
        "{}",
        out(&o)
    );
    assert_eq!(listing(&d.join("in")), after_first);
    // One output missing: only it is made; files named on the command line count too.
    std::fs::remove_file(d.join("in/b-16k.wav")).unwrap();
    let o = rerate(
        d,
        &[
            "convert",
            "in/a.wav",
            "in/a-16k.wav",
            "in/b.wav",
            "--out-rate",
            "16k",
            "--skip-existing",
        ],
    );
    assert!(o.status.success(), "{}", err(&o));
    assert!(
        out(&o).contains("1 converted, 1 skipped, 0 failed"),
        "{}",
        out(&o)
    );
    assert_eq!(listing(&d.join("in")), after_first);
    // A file that is no input's output is converted as usual.
    std::fs::remove_file(d.join("in/a.wav")).unwrap();
    let o = rerate(d, &["convert", "in/a-16k.wav", "--out-rate", "16k"]);
    assert!(o.status.success(), "{}", err(&o));
    assert!(d.join("in/a-16k-16k.wav").exists());
}

#[test]
fn a_missing_output_folder_is_created_before_the_work() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    make(&d.join("take.wav"), 500);
    let o = rerate(
        d,
        &["convert", "take.wav", "--out-rate", "48k", "-o", "new/"],
    );
    assert!(o.status.success(), "{}", err(&o));
    assert_eq!(read_wav(&d.join("new/take.wav")).0, 48_000);
    let o = rerate(
        d,
        &["convert", "take.wav", "--out-rate", "48k", "-o", "deep/er/"],
    );
    assert!(o.status.success(), "{}", err(&o));
    assert_eq!(read_wav(&d.join("deep/er/take.wav")).0, 48_000);
    // A folder that cannot be made: which one, and the system's reason; nothing written.
    std::fs::write(d.join("plain"), b"a file").unwrap();
    for target in ["plain/sub/", "plain/sub/x.wav"] {
        let o = rerate(
            d,
            &["convert", "take.wav", "--out-rate", "48k", "-o", target],
        );
        assert_eq!(o.status.code(), Some(3), "{target}: {}", err(&o));
        let e = err(&o);
        assert!(
            e.contains("cannot create folder plain/sub") && e.contains("ot a directory"),
            "{target}: {e}"
        );
        assert!(!e.contains("rename"), "{e}");
    }
    // The same for a batch's output folder.
    make(&d.join("in/a.wav"), 300);
    let o = rerate(
        d,
        &["convert", "in", "--out-rate", "48k", "-o", "plain/out"],
    );
    assert_eq!(o.status.code(), Some(3), "{}", err(&o));
    assert!(
        err(&o).contains("cannot create folder plain/out"),
        "{}",
        err(&o)
    );
}

#[test]
fn sub_folders_skipped_without_recursive_get_a_hint() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    make(&d.join("in/a.wav"), 300);
    make(&d.join("in/more/b.wav"), 300);
    let o = rerate(d, &["convert", "in", "--out-rate", "16k", "-o", "out"]);
    assert!(o.status.success(), "{}", err(&o));
    let hints: Vec<_> = err(&o)
        .lines()
        .filter(|l| l.contains("sub-folders not searched (add -r to include them)"))
        .map(String::from)
        .collect();
    assert_eq!(
        hints,
        vec!["rerate: in: sub-folders not searched (add -r to include them)"]
    );
    let o = rerate(
        d,
        &["convert", "in", "-r", "--out-rate", "16k", "-o", "out2"],
    );
    assert!(o.status.success(), "{}", err(&o));
    assert!(!err(&o).contains("not searched"), "{}", err(&o));
    assert_eq!(listing(&d.join("out2")).len(), 2);
}
