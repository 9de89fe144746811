//! Printing lines on standard output and standard error without ever panicking: a stream
//! closed early (`rerate convert ... | head -1`, or a closed terminal) is noted and no
//! longer written to, and the work goes on. (`println!` and `eprintln!` panic when the
//! write fails, which would end a batch halfway with exit 101.)

use std::io::{self, Write};
use std::sync::atomic::{AtomicBool, Ordering};

static OUT_CLOSED: AtomicBool = AtomicBool::new(false);
static ERR_CLOSED: AtomicBool = AtomicBool::new(false);

/// Print `line` and a newline on standard output, unless it was found closed.
pub fn out_line(line: &str) {
    write_line(&mut io::stdout().lock(), &OUT_CLOSED, line);
}

/// Print `line` and a newline on standard error, unless it was found closed.
pub fn err_line(line: &str) {
    write_line(&mut io::stderr().lock(), &ERR_CLOSED, line);
}

/// Whether a write to standard output failed (the reader went away).
pub fn stdout_closed() -> bool {
    OUT_CLOSED.load(Ordering::Relaxed)
}

fn write_line(w: &mut impl Write, closed: &AtomicBool, line: &str) {
    if closed.load(Ordering::Relaxed) {
        return;
    }
    let r = w
        .write_all(line.as_bytes())
        .and_then(|()| w.write_all(b"\n"))
        .and_then(|()| w.flush());
    if r.is_err() {
        closed.store(true, Ordering::Relaxed);
    }
}

/// Whether `e` (or an error in its chain) is a write to a pipe whose reader went away.
pub fn is_broken_pipe(e: &anyhow::Error) -> bool {
    e.chain().any(|c| {
        c.downcast_ref::<io::Error>()
            .is_some_and(|io| io.kind() == io::ErrorKind::BrokenPipe)
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A writer whose reader is gone.
    struct Closed(usize);
    impl Write for Closed {
        fn write(&mut self, _: &[u8]) -> io::Result<usize> {
            self.0 += 1;
            Err(io::ErrorKind::BrokenPipe.into())
        }
        fn flush(&mut self) -> io::Result<()> {
            Ok(())
        }
    }

    #[test]
    fn a_closed_stream_is_written_once_then_left_alone() {
        let closed = AtomicBool::new(false);
        let mut w = Closed(0);
        write_line(&mut w, &closed, "a");
        write_line(&mut w, &closed, "b");
        assert!(closed.load(Ordering::Relaxed));
        assert_eq!(w.0, 1);
        let e = anyhow::Error::from(io::Error::from(io::ErrorKind::BrokenPipe));
        assert!(is_broken_pipe(&e.context("printing")));
    }
}
