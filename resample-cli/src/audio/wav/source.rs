//! Where a reader's bytes come from: a seekable source of known length (a regular file, or
//! any `Read + Seek` such as bytes in memory), or a stream read once from front to back (a
//! pipe, standard input) whose length is unknown until it ends.

use std::fmt;
use std::fs::File;
use std::io::{self, Read, Seek, SeekFrom};
use std::path::Path;

use super::error::WavError;
use crate::io::special_kind;

/// Anything readable and seekable that can move to another thread.
pub(crate) trait ReadSeek: Read + Seek + Send {}
impl<T: Read + Seek + Send> ReadSeek for T {}

/// The bytes a WAV reader reads.
pub(crate) enum Source {
    /// Seekable, of a known length.
    Seekable(Box<dyn ReadSeek>),
    /// A stream: read once, front to back; skipping means reading and discarding.
    Stream(Box<dyn Read + Send>),
}

impl fmt::Debug for Source {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Self::Seekable(_) => "Seekable",
            Self::Stream(_) => "Stream",
        })
    }
}

impl Read for Source {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        match self {
            Self::Seekable(r) => r.read(buf),
            Self::Stream(r) => r.read(buf),
        }
    }
}

impl Source {
    /// Open `path` by what it is: a regular file is seekable; a pipe (a FIFO, `<(...)`) or
    /// a character device is a stream; `-` is standard input. Anything else is refused with
    /// what it is.
    pub(crate) fn open(path: &Path) -> Result<Self, WavError> {
        if path == Path::new("-") {
            return Ok(Self::Stream(Box::new(io::stdin())));
        }
        let kind = special_kind(path).map_err(|e| WavError::io("cannot open", e))?;
        match kind {
            None | Some("a pipe") | Some("a character device") => {}
            Some(other) => return Err(WavError::NotReadable(other.into())),
        }
        let file = File::open(path).map_err(|e| WavError::io("cannot open", e))?;
        Ok(match kind {
            None => Self::Seekable(Box::new(file)),
            Some(_) => Self::Stream(Box::new(file)),
        })
    }

    /// The length of a seekable source (moving back to its start); `None` for a stream.
    pub(crate) fn len_from_start(&mut self) -> io::Result<Option<u64>> {
        match self {
            Self::Seekable(r) => {
                let len = r.seek(SeekFrom::End(0))?;
                r.seek(SeekFrom::Start(0))?;
                Ok(Some(len))
            }
            Self::Stream(_) => Ok(None),
        }
    }

    /// Move `n` bytes forward. Returns the bytes skipped: fewer than `n` only when a stream
    /// ended first (a seekable source may be positioned past its end).
    pub(crate) fn skip(&mut self, n: u64) -> io::Result<u64> {
        match self {
            Self::Seekable(r) => {
                let n_i = i64::try_from(n).map_err(|_| io::ErrorKind::InvalidInput)?;
                r.seek(SeekFrom::Current(n_i))?;
                Ok(n)
            }
            Self::Stream(r) => io::copy(&mut r.take(n), &mut io::sink()),
        }
    }

    /// Move to byte `pos` of a seekable source; a stream must already be there.
    pub(crate) fn seek_to(&mut self, pos: u64) -> io::Result<()> {
        match self {
            Self::Seekable(r) => r.seek(SeekFrom::Start(pos)).map(|_| ()),
            Self::Stream(_) => Ok(()),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A reader that is not seekable, like a pipe.
    struct Pipe(io::Cursor<Vec<u8>>);
    impl Read for Pipe {
        fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
            // Short reads, as pipes give.
            let k = buf.len().min(3);
            self.0.read(&mut buf[..k])
        }
    }

    #[test]
    fn skipping_a_stream_reads_and_stops_at_its_end() {
        let mut s = Source::Stream(Box::new(Pipe(io::Cursor::new((0..10).collect()))));
        assert_eq!(s.len_from_start().unwrap(), None);
        assert_eq!(s.skip(4).unwrap(), 4);
        let mut b = [0u8; 1];
        s.read_exact(&mut b).unwrap();
        assert_eq!(b[0], 4);
        assert_eq!(s.skip(100).unwrap(), 5);
    }

    #[test]
    fn seekable_sources_know_their_length() {
        let mut s = Source::Seekable(Box::new(io::Cursor::new(vec![1u8; 17])));
        assert_eq!(s.len_from_start().unwrap(), Some(17));
        assert_eq!(s.skip(5).unwrap(), 5);
        s.seek_to(16).unwrap();
        let mut b = [0u8; 4];
        assert_eq!(s.read(&mut b).unwrap(), 1);
    }
}
