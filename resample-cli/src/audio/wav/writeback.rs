//! Background write-back: a thread that has a file's data written to the disk while the
//! file is still being written, so that the writer never waits on the disk in between and
//! little is left to write back when the file is made durable at the end.

use std::fs::File;
use std::io;
use std::sync::mpsc::{self, SyncSender, TrySendError};
use std::thread::JoinHandle;

/// The write-back thread of one file.
#[derive(Debug)]
pub(crate) struct WriteBack {
    /// Requests to the thread; room for one, so that requests made while one is pending
    /// merge into it.
    ask: Option<SyncSender<()>>,
    thread: Option<JoinHandle<io::Result<()>>>,
}

impl WriteBack {
    /// Start a write-back thread for `file` (through a second handle to it).
    pub(crate) fn start(file: &File) -> io::Result<Self> {
        let file = file.try_clone()?;
        let (ask, requests) = mpsc::sync_channel::<()>(1);
        let thread = std::thread::Builder::new()
            .name("rerate-writeback".into())
            .spawn(move || {
                for () in requests {
                    file.sync_data()?;
                }
                Ok(())
            })?;
        Ok(Self {
            ask: Some(ask),
            thread: Some(thread),
        })
    }

    /// Ask for what has been written to the file so far to be written back; returns at
    /// once. A write-back that failed is reported here (or by [`WriteBack::finish`]).
    pub(crate) fn request(&mut self) -> io::Result<()> {
        let Some(ask) = &self.ask else {
            return Err(stopped());
        };
        match ask.try_send(()) {
            Ok(()) | Err(TrySendError::Full(())) => Ok(()),
            // The thread stopped: on an error, which is the one to report.
            Err(TrySendError::Disconnected(())) => {
                self.ask = None;
                self.join()
            }
        }
    }

    /// Wait for the pending write-back, if any, and stop the thread; its error, if it had
    /// one.
    pub(crate) fn finish(mut self) -> io::Result<()> {
        self.ask = None;
        self.join()
    }

    fn join(&mut self) -> io::Result<()> {
        match self.thread.take() {
            Some(t) => t.join().unwrap_or_else(|_| Err(stopped())),
            None => Err(stopped()),
        }
    }
}

impl Drop for WriteBack {
    /// A writer dropped without finishing (an error elsewhere): the thread is stopped and
    /// waited for, its result ignored (the file is being thrown away).
    fn drop(&mut self) {
        self.ask = None;
        if let Some(t) = self.thread.take() {
            let _ = t.join();
        }
    }
}

fn stopped() -> io::Error {
    io::Error::other("the write-back thread stopped")
}

#[cfg(test)]
mod tests {
    use std::io::Write;

    use super::*;

    #[test]
    fn requests_merge_and_finish_reports_success() {
        let dir = tempfile::tempdir().unwrap();
        let mut f = File::create(dir.path().join("a")).unwrap();
        let mut wb = WriteBack::start(&f).unwrap();
        for _ in 0..100 {
            f.write_all(&[7; 4096]).unwrap();
            wb.request().unwrap();
        }
        wb.finish().unwrap();
        assert_eq!(std::fs::read(dir.path().join("a")).unwrap().len(), 409_600);
    }

    #[cfg(unix)]
    #[test]
    fn a_failed_write_back_is_reported() {
        // A pipe cannot be fsynced (EINVAL, fsync(2)): the thread stops with that error,
        // and it comes back from a later request or from finish.
        let (reader, _writer) = std::io::pipe().unwrap();
        let file = File::from(std::os::fd::OwnedFd::from(reader));
        let mut wb = WriteBack::start(&file).unwrap();
        let mut seen = Ok(());
        for _ in 0..1000 {
            seen = wb.request();
            if seen.is_err() {
                break;
            }
            std::thread::sleep(std::time::Duration::from_millis(1));
        }
        let err = match seen {
            Err(e) => e,
            Ok(()) => wb.finish().expect_err("fsync of a pipe fails"),
        };
        assert_eq!(err.kind(), io::ErrorKind::InvalidInput, "{err}");
    }
}
