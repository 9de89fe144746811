//! Odd-but-valid situations and faults around `rerate convert` (issue: never a wrong file):
//! special files as outputs, pipes and standard input as inputs, long and non-UTF-8 names,
//! killed and concurrent runs, closed output streams, messages, and the whole conversion in
//! memory.

use std::fs;
use std::io::Write;
use std::os::unix::ffi::OsStrExt;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

use crate::util::*;
use resample_cli::audio::wav::Encoding;

/// A small 16-bit stereo WAV file at 44.1 kHz: its bytes.
fn make(path: &Path, frames: usize) -> Vec<u8> {
    if let Some(parent) = path.parent() {
        fs::create_dir_all(parent).unwrap();
    }
    write_wav(
        path,
        44_100,
        2,
        Encoding::Int(16),
        &signal(frames, 2, 44_100),
    );
    fs::read(path).unwrap()
}

fn mkfifo(path: &Path) {
    let ok = Command::new("mkfifo").arg(path).status().unwrap();
    assert!(ok.success());
}

fn is_fifo(path: &Path) -> bool {
    use std::os::unix::fs::FileTypeExt;
    fs::symlink_metadata(path).unwrap().file_type().is_fifo()
}

/// Temporary files rerate left in `dir`.
fn temporaries(dir: &Path) -> Vec<PathBuf> {
    listing(dir)
        .into_iter()
        .filter(|p| p.to_string_lossy().contains(".rerate-tmp"))
        .collect()
}

// ---- --force replaces only regular files -------------------------------------------------

#[test]
fn force_never_replaces_a_device_or_a_pipe() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    make(&d.join("a.wav"), 2000);
    // A link to the system's null device: replacing the link would be harmless here, but the
    // same run as root with -o /dev/null would replace the device itself.
    std::os::unix::fs::symlink("/dev/null", d.join("null.wav")).unwrap();
    mkfifo(&d.join("fifo.wav"));
    for (out, kind) in [("null.wav", "a character device"), ("fifo.wav", "a pipe")] {
        let o = rerate(
            d,
            &[
                "convert",
                "a.wav",
                "--out-rate",
                "16k",
                "-o",
                out,
                "--force",
            ],
        );
        assert_eq!(o.status.code(), Some(3), "{out}: {}", err(&o));
        assert!(
            err(&o).contains(&format!("{out}: is {kind}")),
            "{}",
            err(&o)
        );
        assert!(err(&o).contains("only regular files"), "{}", err(&o));
        assert!(temporaries(d).is_empty());
    }
    assert!(fs::symlink_metadata(d.join("null.wav"))
        .unwrap()
        .file_type()
        .is_symlink());
    assert!(is_fifo(&d.join("fifo.wav")));
    // A regular file is still replaced.
    fs::write(d.join("b.wav"), b"old").unwrap();
    let o = rerate(
        d,
        &[
            "convert",
            "a.wav",
            "--out-rate",
            "16k",
            "-o",
            "b.wav",
            "--force",
        ],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert_ne!(fs::read(d.join("b.wav")).unwrap(), b"old");
}

// ---- pipes and standard input as inputs ---------------------------------------------------

#[test]
fn pipes_and_standard_input_are_read_as_streams() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let bytes = make(&d.join("a.wav"), 30_000);
    let o = rerate(
        d,
        &["convert", "a.wav", "--out-rate", "16k", "-o", "ref.wav"],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let expect = fs::read(d.join("ref.wav")).unwrap();

    // A FIFO, written by another thread while rerate reads it.
    mkfifo(&d.join("in.fifo"));
    let writer = {
        let (p, b) = (d.join("in.fifo"), bytes.clone());
        std::thread::spawn(move || fs::OpenOptions::new().write(true).open(p)?.write_all(&b))
    };
    let o = rerate(
        d,
        &["convert", "in.fifo", "--out-rate", "16k", "-o", "fifo.wav"],
    );
    writer.join().unwrap().unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert_eq!(fs::read(d.join("fifo.wav")).unwrap(), expect);

    // Standard input, "-".
    let mut child = command()
        .current_dir(d)
        .args(["convert", "-", "--out-rate", "16k", "-o", "stdin.wav"])
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    child.stdin.take().unwrap().write_all(&bytes).unwrap();
    let o = child.wait_with_output().unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert_eq!(fs::read(d.join("stdin.wav")).unwrap(), expect);

    // A process substitution, <(...), as a shell passes it (/dev/fd/N, a pipe).
    let o = Command::new("bash")
        .current_dir(d)
        .arg("-c")
        .arg(format!(
            "'{}' convert <(cat a.wav) --out-rate 16k -o subst.wav",
            env!("CARGO_BIN_EXE_rerate")
        ))
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert_eq!(fs::read(d.join("subst.wav")).unwrap(), expect);

    // A stream cut short is named as such, and leaves nothing.
    let mut child = command()
        .current_dir(d)
        .args(["convert", "-", "--out-rate", "16k", "-o", "cut.wav"])
        .stdin(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    child
        .stdin
        .take()
        .unwrap()
        .write_all(&bytes[..5000])
        .unwrap();
    let o = child.wait_with_output().unwrap();
    assert_eq!(o.status.code(), Some(3));
    assert!(
        err(&o).contains("truncated: the audio data ends at frame"),
        "{}",
        err(&o)
    );
    assert!(!d.join("cut.wav").exists());
    assert!(temporaries(d).is_empty());

    // Without -o there is no folder to write beside.
    let o = rerate(d, &["convert", "-", "--out-rate", "16k"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(err(&o).contains("standard input (-)"), "{}", err(&o));
}

// ---- names ------------------------------------------------------------------------------

#[test]
fn a_long_legal_output_name_is_written() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    make(&d.join("a.wav"), 2000);
    // 244 bytes: legal (the usual limit on a name is 255 bytes: common practice, no source).
    let name = format!("{}.wav", "n".repeat(240));
    assert_eq!(name.len(), 244);
    let o = rerate(d, &["convert", "a.wav", "--out-rate", "16k", "-o", &name]);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert!(d.join(&name).exists());
    assert!(temporaries(d).is_empty());
}

#[test]
fn non_utf8_names_keep_their_bytes_and_never_collide() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let latin1 = |b: &[u8]| PathBuf::from(std::ffi::OsStr::from_bytes(b));
    // "café" and "cafè" in Latin-1: one and the same name after a lossy conversion.
    make(&d.join("in").join(latin1(b"caf\xe9.wav")), 1000);
    make(&d.join("in").join(latin1(b"caf\xe8.wav")), 1000);
    let o = rerate(d, &["convert", "in", "--out-rate", "16k"]);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let names: Vec<Vec<u8>> = listing(&d.join("in"))
        .iter()
        .map(|p| p.as_os_str().as_bytes().to_vec())
        .collect();
    for want in [&b"caf\xe9-16k.wav"[..], b"caf\xe8-16k.wav"] {
        assert!(names.iter().any(|n| n == want), "{names:?}");
    }
}

// ---- killed and concurrent runs -----------------------------------------------------------

#[test]
fn a_later_run_removes_temporaries_of_killed_runs_only() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    // Long enough to be caught while writing.
    write_wav(
        &d.join("big.wav"),
        96_000,
        2,
        Encoding::Float32,
        &signal(96_000 * 30, 2, 96_000),
    );
    make(&d.join("small.wav"), 1000);
    let mut child = command()
        .current_dir(d)
        .args([
            "convert",
            "big.wav",
            "--out-rate",
            "44.1k",
            "-o",
            "out/big.wav",
        ])
        .args(["--jobs", "1", "--stopband-db", "180"])
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let start = Instant::now();
    let temp = loop {
        if let Some(t) = d.join("out").exists().then(|| temporaries(&d.join("out"))) {
            if let Some(t) = t.into_iter().next() {
                break t;
            }
        }
        assert!(
            start.elapsed() < Duration::from_secs(60),
            "no temporary file seen"
        );
        std::thread::sleep(Duration::from_millis(2));
    };
    child.kill().unwrap(); // SIGKILL: no chance to clean up
    child.wait().unwrap();
    let temp = d.join("out").join(temp);
    assert!(temp.exists(), "the killed run left its temporary file");
    // A temporary file of a live run (this test's own process id in the same layout).
    let name = temp.file_name().unwrap().to_string_lossy().into_owned();
    let pid = child.id().to_string();
    let live_name = name.replace(&format!("-{pid}-"), &format!("-{}-", std::process::id()));
    assert_ne!(live_name, name);
    let live = d.join("out").join(&live_name);
    fs::write(&live, b"a run still going").unwrap();

    let o = rerate(
        d,
        &[
            "convert",
            "small.wav",
            "--out-rate",
            "16k",
            "-o",
            "out/s.wav",
        ],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert!(!temp.exists(), "stale temporary file left behind");
    assert!(live.exists(), "a live run's temporary file was removed");
}

#[test]
fn skip_existing_counts_an_output_another_run_finished_as_skipped() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let bytes = make(&d.join("a.wav"), 5000);
    mkfifo(&d.join("a.fifo"));
    // Run B checks that the output is missing, then waits for its input...
    let b = command()
        .current_dir(d)
        .args(["convert", "a.fifo", "--out-rate", "16k", "-o", "out.wav"])
        .args(["--skip-existing", "--json"])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // ...while run A (the same job, started twice) writes that output.
    std::thread::sleep(Duration::from_millis(300));
    let a = rerate(
        d,
        &["convert", "a.wav", "--out-rate", "16k", "-o", "out.wav"],
    );
    assert_eq!(a.status.code(), Some(0), "{}", err(&a));
    let done = fs::read(d.join("out.wav")).unwrap();
    fs::OpenOptions::new()
        .write(true)
        .open(d.join("a.fifo"))
        .unwrap()
        .write_all(&bytes)
        .unwrap();
    let o = b.wait_with_output().unwrap();
    assert_eq!(o.status.code(), Some(0), "{}{}", out(&o), err(&o));
    // Text output has one summary line for all skipped files; JSON a record each.
    assert!(
        out(&o).contains(r#""reason":"output exists""#)
            && out(&o).contains(r#""status":"skipped""#),
        "{}",
        out(&o)
    );
    assert_eq!(fs::read(d.join("out.wav")).unwrap(), done);
    assert!(temporaries(d).is_empty());
}

#[test]
fn the_folder_is_synced_after_the_rename() {
    if Command::new("strace").arg("-V").output().is_err() {
        eprintln!("strace is not installed: folder sync not observed");
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    make(&d.join("a.wav"), 2000);
    fs::create_dir(d.join("out")).unwrap();
    let log = d.join("trace.log");
    let o = Command::new("strace")
        .current_dir(d)
        .args([
            "-f",
            "-e",
            "trace=openat,fsync,link,linkat,rename,renameat,renameat2",
        ])
        .arg("-o")
        .arg(&log)
        .arg(env!("CARGO_BIN_EXE_rerate"))
        .args(["convert", "a.wav", "--out-rate", "16k", "-o", "out/b.wav"])
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let trace = fs::read_to_string(&log).unwrap();
    let lines: Vec<&str> = trace.lines().collect();
    let moved = lines
        .iter()
        .position(|l| (l.contains("link") || l.contains("rename")) && l.contains("out/b.wav"))
        .expect("the output is moved into place");
    // After that: the folder opened, and that descriptor synced.
    let fd = lines[moved..]
        .iter()
        .find(|l| l.contains("openat(") && l.contains("\"out\""))
        .and_then(|l| l.rsplit("= ").next())
        .map(|fd| fd.trim().to_string())
        .expect("the folder is opened after the rename");
    assert!(
        lines[moved..]
            .iter()
            .any(|l| l.contains(&format!("fsync({fd})"))),
        "{trace}"
    );
}

// ---- closed output streams ------------------------------------------------------------------

/// A pipe whose reading end is already closed: every write fails with EPIPE.
fn closed_pipe() -> Stdio {
    let (r, w) = std::io::pipe().unwrap();
    drop(r);
    Stdio::from(w)
}

fn run_closed(dir: &Path, args: &[&str]) -> Output {
    command()
        .current_dir(dir)
        .args(args)
        .stdout(closed_pipe())
        .stderr(closed_pipe())
        .output()
        .unwrap()
}

#[test]
fn closed_stdout_and_stderr_never_panic() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    make(&d.join("in/a.wav"), 2000);
    make(&d.join("in/b.wav"), 2000);
    fs::write(d.join("in/bad.wav"), b"not a wav file at all").unwrap();
    // A batch with one bad file: the others are converted; the status is the batch's.
    let o = run_closed(d, &["convert", "in", "--out-rate", "16k", "-o", "out"]);
    assert_eq!(o.status.code(), Some(1));
    assert!(d.join("out/a.wav").exists() && d.join("out/b.wav").exists());
    // All good: 0, as usual.
    let o = run_closed(
        d,
        &["convert", "in/a.wav", "--out-rate", "8k", "-o", "c.wav"],
    );
    assert_eq!(o.status.code(), Some(0));
    assert!(d.join("c.wav").exists());
    // A command whose work is its printed report stops with 3.
    let o = run_closed(d, &["design", "--in-rate", "44.1k", "--out-rate", "48k"]);
    assert_eq!(o.status.code(), Some(3));
}

// ---- messages --------------------------------------------------------------------------------

#[test]
fn messages_name_the_reason() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let bytes = make(&d.join("a.wav"), 2000);
    // A folder that cannot be created: the OS's reason is given.
    fs::write(d.join("plain"), b"a file").unwrap();
    let o = rerate(
        d,
        &[
            "convert",
            "a.wav",
            "--out-rate",
            "16k",
            "-o",
            "plain/sub/x.wav",
        ],
    );
    assert_eq!(o.status.code(), Some(3));
    assert!(
        err(&o).contains("cannot create folder plain/sub: Not a directory"),
        "{}",
        err(&o)
    );
    // The streaming marker as the data size: a header its writer never completed. The audio
    // that follows is converted, with a warning (issue 13; before, this was refused).
    let mut m = bytes.clone();
    let at = m.windows(4).position(|w| w == b"data").unwrap() + 4;
    m[at..at + 4].copy_from_slice(&[0xFF; 4]);
    fs::write(d.join("marker.wav"), &m).unwrap();
    let o = rerate(d, &["convert", "marker.wav", "--out-rate", "16k"]);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert!(err(&o).contains("data size is 4294967295"), "{}", err(&o));
    assert!(
        err(&o).contains("not completed by its writer"),
        "{}",
        err(&o)
    );
}

#[test]
fn symlink_loops_under_recursive_are_skipped_with_a_warning() {
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    make(&d.join("in/a.wav"), 1000);
    make(&d.join("in/sub/b.wav"), 1000);
    std::os::unix::fs::symlink("..", d.join("in/sub/up")).unwrap();
    std::os::unix::fs::symlink("self", d.join("in/self")).unwrap();
    let o = rerate(
        d,
        &["convert", "in", "-r", "--out-rate", "16k", "-o", "out"],
    );
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    assert!(err(&o).contains("warning"), "{}", err(&o));
    assert!(err(&o).contains("symbolic link loop"), "{}", err(&o));
    assert!(err(&o).contains("cannot be followed"), "{}", err(&o));
    assert_eq!(
        listing(&d.join("out")),
        vec![PathBuf::from("a.wav"), PathBuf::from("sub/b.wav")]
    );
}

// ---- the whole path in memory ------------------------------------------------------------------

#[test]
fn conversion_in_memory_gives_the_file_conversion_bytes() {
    use resample_cli::convert::{convert_in_memory, Control, DesignCache, Settings};
    use std::sync::atomic::AtomicBool;
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path();
    let bytes = make(&d.join("a.wav"), 7001);
    let o = rerate(d, &["convert", "a.wav", "--out-rate", "48k", "-o", "b.wav"]);
    assert_eq!(o.status.code(), Some(0), "{}", err(&o));
    let cancel = AtomicBool::new(false);
    let progress = |_: u64| {};
    let ctl = Control {
        cancel: &cancel,
        progress: &progress,
    };
    for pipeline in [false, true] {
        let mut s = Settings::new(48_000);
        s.pipeline = pipeline;
        let (report, out) = convert_in_memory(bytes.clone(), &s, &DesignCache::new(), ctl).unwrap();
        assert_eq!(out, fs::read(d.join("b.wav")).unwrap());
        // ceil(n L / M) with L/M = 480/441 (common practice, no source).
        assert_eq!(report.frames_out, (7001_u64 * 480).div_ceil(441));
    }
}
