//! The pipelined engine: one helper thread reads and decodes input blocks ahead (also while
//! the filter is being designed), the conversion itself is cut into segments converted on
//! worker threads of their own, each taking the next segment as soon as it is done with
//! one ([`resample_core::segments`]; in one piece when there is one worker), and another
//! helper thread writes the output in the file's order (requantizing it when it is
//! dithered; otherwise the workers encode what they convert, while it is in their cache). Blocks travel through
//! bounded queues and the workers may run only a few segments ahead of the writer, so
//! memory stays bounded; every output frame is computed from the same input as by the
//! sequential engine, so the output is the same, byte for byte.

use std::collections::{BTreeMap, VecDeque};
use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};
use std::sync::{mpsc, Arc, Condvar, Mutex, MutexGuard, PoisonError};

use resample_core::{ChainConverter, Sample, StagePlan};

use super::{ConvertError, Engine, Run, Setup, BLOCK_FRAMES, SYNC_EVERY_BYTES};
use crate::audio::wav::{encode_samples, LevelStats, Quantizer, WavError, WavWriter};
use crate::audio::Input;
use resample_core::segments::{convert_chain_segment, convert_chain_segment_pieces, SegmentPlan};

/// Decoded input the reader may hold ahead of the converter, bytes (at least one block):
/// little, so that the workers take the blocks while they are still in the cache.
const READ_AHEAD_BYTES: usize = 2 << 20;
/// Decoded bytes per block the reader hands over, aimed at: blocks of several of the
/// sequential engine's blocks, so that the reader and the workers pass each other the
/// input (and wake each other up) that many times less often.
const READ_BLOCK_BYTES: usize = 1 << 20;
/// Most input frames per block of the reader.
const READ_FRAMES_MAX: usize = 8 * BLOCK_FRAMES;
/// Output blocks queued for the writer.
const WRITE_QUEUE: usize = 4;
/// Most segments converted at the same time.
const MAX_WORKERS: usize = 8;
/// Segments each worker may be ahead of the writer (past them it waits).
const AHEAD_PER_WORKER: u64 = 2;
/// Output frames a worker converts and then encodes at a time.
const ENCODE_FRAMES: usize = 2048;

/// A piece of output for the writer, with its place in the file's order.
type OutBlock<T> = (u64, Piece<T>);

/// Output for the writer.
enum Piece<T> {
    /// Samples (the first `n` count), requantized and encoded by the writer.
    Samples(Vec<T>, usize),
    /// Bytes encoded by a worker (for `n` samples), with its quantizer's figures for them.
    Encoded(Vec<u8>, usize, LevelStats),
}

/// Emptied output buffers for the workers to fill again.
struct Spare<T> {
    samples: Mutex<Vec<Vec<T>>>,
    bytes: Mutex<Vec<Vec<u8>>>,
}
/// Decoded blocks from the reader (or the error that stopped it).
type InBlock<T> = Result<Vec<T>, ConvertError>;

/// A lock that a panic elsewhere does not make unusable (the data behind it stays valid:
/// every holder leaves it consistent before anything can panic).
fn lock<V>(m: &Mutex<V>) -> MutexGuard<'_, V> {
    m.lock().unwrap_or_else(PoisonError::into_inner)
}

/// How far the writer has come, for the workers to wait on.
#[derive(Default)]
struct Flow {
    /// Pieces written, and whether waiting should end (the writer stopped, or a worker
    /// failed).
    state: Mutex<(u64, bool)>,
    changed: Condvar,
}

impl Flow {
    fn wrote(&self, pieces: u64) {
        lock(&self.state).0 = pieces;
        self.changed.notify_all();
    }

    fn stop(&self) {
        lock(&self.state).1 = true;
        self.changed.notify_all();
    }

    /// Wait until fewer than `limit` pieces before piece `j` remain unwritten; false if
    /// waiting was stopped.
    fn wait_within(&self, j: u64, limit: u64) -> bool {
        let mut st = lock(&self.state);
        while !st.1 && j >= st.0 + limit {
            st = self
                .changed
                .wait(st)
                .unwrap_or_else(PoisonError::into_inner);
        }
        !st.1
    }
}

/// Ends the workers' waiting when dropped (the writer's thread ends, however it ends).
struct StopOnDrop<'a>(&'a Flow);

impl Drop for StopOnDrop<'_> {
    fn drop(&mut self) {
        self.0.stop();
    }
}

impl Run<'_> {
    /// Convert with reading and writing on helper threads; `setup`'s design runs on this
    /// thread while the reader starts, and the output is created on another meanwhile.
    pub(super) fn pipelined<T: Sample, D, C>(
        &self,
        reader: &mut Input,
        setup: Setup<D, C>,
    ) -> Result<(Arc<StagePlan>, WavWriter), ConvertError>
    where
        D: FnOnce() -> Result<Arc<StagePlan>, ConvertError>,
        C: FnOnce() -> Result<WavWriter, ConvertError> + Send,
    {
        let ch = usize::from(reader.info().channels);
        let frames_in = reader.info().frames;
        // A stream of unknown length is converted in one piece.
        let length_known = reader.length_known();
        let frame_bytes = ch * std::mem::size_of::<T>();
        let read_frames = (READ_BLOCK_BYTES / frame_bytes).clamp(BLOCK_FRAMES, READ_FRAMES_MAX);
        let depth = (READ_AHEAD_BYTES / (read_frames * frame_bytes)).clamp(1, 64);
        // Emptied output buffers, and the writer's progress (shared with its thread).
        let spare = Spare::<T> {
            samples: Mutex::new(Vec::new()),
            bytes: Mutex::new(Vec::new()),
        };
        let flow = Flow::default();
        std::thread::scope(|s| {
            // Decoded blocks (or the error that stopped reading), and emptied ones back.
            let (in_tx, in_rx) = mpsc::sync_channel::<InBlock<T>>(depth);
            let (in_back_tx, in_back_rx) = mpsc::channel::<Vec<T>>();
            s.spawn(move || loop {
                let mut buf = in_back_rx.try_recv().unwrap_or_default();
                match self.read_frames(reader, &mut buf, read_frames) {
                    Ok(0) => return,
                    // The converter stopped (error or cancel): so does the reader.
                    Ok(_) => {
                        if in_tx.send(Ok(buf)).is_err() {
                            return;
                        }
                    }
                    Err(e) => {
                        let _ = in_tx.send(Err(e));
                        return;
                    }
                }
            });

            // The output is created (a file opened, its header written) on a thread of its
            // own while this one designs: the design is what the conversion waits for.
            let made = s.spawn(setup.create);
            let design = (setup.design)();
            let writer = match made.join() {
                Ok(w) => w,
                Err(panic) => std::panic::resume_unwind(panic),
            };
            // A failed design is the error reported (the output, if made, is removed).
            let (design, mut writer) = (design?, writer?);
            // Without dither the workers encode what they convert (while it is in their
            // cache), and the writer only writes.
            let encoder = writer.parallel_encoder();

            // Output pieces, written in their order; emptied buffers go back to `spare`.
            let (out_tx, out_rx) = mpsc::sync_channel::<OutBlock<T>>(WRITE_QUEUE);
            let (spare, flow) = (&spare, &flow);
            let write = s.spawn(move || -> Result<WavWriter, WavError> {
                let _stop = StopOnDrop(flow);
                writer.sync_every(SYNC_EVERY_BYTES)?;
                let mut early = BTreeMap::new();
                let mut next = 0u64;
                for (j, piece) in out_rx {
                    early.insert(j, piece);
                    while let Some(piece) = early.remove(&next) {
                        match piece {
                            Piece::Samples(buf, n) => {
                                writer.write_frames(&buf[..n])?;
                                lock(&spare.samples).push(buf);
                            }
                            Piece::Encoded(bytes, n, stats) => {
                                writer.write_encoded(&bytes, n, &stats)?;
                                lock(&spare.bytes).push(bytes);
                            }
                        }
                        next += 1;
                        flow.wrote(next);
                    }
                }
                Ok(writer)
            });

            let workers = rayon::current_num_threads().min(MAX_WORKERS);
            let cuts = if workers >= 2 && length_known {
                SegmentPlan::for_plan(&design, frames_in, ch)
            } else {
                None
            };
            let out = Output {
                tx: &out_tx,
                spare,
                flow,
                encoder,
            };
            // The input queue goes in here and is closed on return, which stops the
            // reader if it is still going.
            let converted = match cuts {
                Some(cuts) => self.segmented(&design, cuts, workers, ch, in_rx, &in_back_tx, &out),
                None => self.whole(&design, ch, in_rx, &in_back_tx, &out),
            };
            // Let the writer drain and finish.
            drop(out_tx);
            let written = match write.join() {
                Ok(w) => w,
                Err(panic) => std::panic::resume_unwind(panic),
            };
            // The writer works on earlier blocks than the converter: its error came first.
            let writer = written?;
            converted?;
            Ok((design, writer))
        })
    }
}

/// The converter's send to the writer failed: the writer stopped on an error, which is the
/// one reported.
fn writer_stopped() -> WavError {
    WavError::Malformed("the writer stopped".into())
}

/// Where converted pieces go.
struct Output<'q, T> {
    tx: &'q mpsc::SyncSender<OutBlock<T>>,
    spare: &'q Spare<T>,
    flow: &'q Flow,
    /// A quantizer for the workers to encode with (each its own copy), when the output has
    /// no dither.
    encoder: Option<Quantizer>,
}

/// The input as the workers share it: the reader's queue, and the blocks still needed,
/// each with the frame index it starts at.
struct Feed<T> {
    rx: mpsc::Receiver<InBlock<T>>,
    window: VecDeque<(u64, Arc<Vec<T>>)>,
    next_frame: u64,
    /// The next segment to hand out.
    next_segment: u64,
}

impl Run<'_> {
    /// Convert in one piece on this thread.
    fn whole<T: Sample>(
        &self,
        design: &StagePlan,
        ch: usize,
        in_rx: mpsc::Receiver<InBlock<T>>,
        in_back: &mpsc::Sender<Vec<T>>,
        out: &Output<'_, T>,
    ) -> Result<(), ConvertError> {
        let mut engine = Engine::<T>::new(design, ch)?;
        let mut piece = 0u64;
        let mut emit = |buf: &mut Vec<T>, n: usize| -> Result<(), WavError> {
            let mut next = lock(&out.spare.samples).pop().unwrap_or_default();
            next.resize(buf.len(), T::zero());
            let full = std::mem::replace(buf, next);
            out.tx
                .send((piece, Piece::Samples(full, n)))
                .map_err(|_| writer_stopped())?;
            piece += 1;
            Ok(())
        };
        loop {
            if self.ctl.cancel.load(Ordering::Relaxed) {
                return Err(crate::error::FileError::Interrupted.into());
            }
            let Ok(block) = in_rx.recv() else {
                break; // end of the input
            };
            let block = block?;
            engine.block(&block, &mut emit)?;
            (self.ctl.progress)((block.len() / ch) as u64 * self.bytes_per_frame);
            let _ = in_back.send(block);
        }
        engine.flush(&mut emit)
    }

    /// Convert the segments of `cuts` on `workers` threads (this one and `workers - 1`
    /// more), each with its own converter taking the next segment when done with one,
    /// handing the outputs to the writer with their places in the file's order.
    #[allow(clippy::too_many_arguments)]
    fn segmented<T: Sample>(
        &self,
        design: &StagePlan,
        cuts: SegmentPlan,
        workers: usize,
        ch: usize,
        in_rx: mpsc::Receiver<InBlock<T>>,
        in_back: &mpsc::Sender<Vec<T>>,
        out: &Output<'_, T>,
    ) -> Result<(), ConvertError> {
        let count = cuts.count();
        let feed = Mutex::new(Feed {
            rx: in_rx,
            window: VecDeque::new(),
            next_frame: 0,
            next_segment: 0,
        });
        let handed = AtomicU64::new(0);
        // The first failure in the file's order (segment index), which is the one reported.
        let failure: Mutex<Option<(u64, ConvertError)>> = Mutex::new(None);
        let stop = AtomicBool::new(false);
        let fail = |j: u64, e: ConvertError| {
            let mut f = lock(&failure);
            if f.as_ref().is_none_or(|(k, _)| j < *k) {
                *f = Some((j, e));
            }
            stop.store(true, Ordering::Relaxed);
            out.flow.stop();
        };
        let limit = AHEAD_PER_WORKER * workers as u64;
        let recycle = |b: Arc<Vec<T>>| {
            if let Some(b) = Arc::into_inner(b) {
                let _ = in_back.send(b);
            }
        };
        let work = || {
            let mut conv = match ChainConverter::<T>::new(design, ch) {
                Ok(c) => c,
                Err(e) => return fail(0, e.into()),
            };
            let mut encoder = out.encoder.clone();
            // Converted samples waiting to be encoded, when this thread encodes them.
            let mut own = Vec::new();
            loop {
                if stop.load(Ordering::Relaxed) {
                    return;
                }
                if self.ctl.cancel.load(Ordering::Relaxed) {
                    let j = handed.load(Ordering::Relaxed);
                    return fail(j, crate::error::FileError::Interrupted.into());
                }
                if !out.flow.wait_within(handed.load(Ordering::Relaxed), limit) {
                    return;
                }
                // Take the next segment and the blocks that hold its input.
                let (j, seg, blocks) = {
                    let mut f = lock(&feed);
                    let j = f.next_segment;
                    let Some(seg) = cuts.segment(j) else {
                        return; // every segment is taken
                    };
                    f.next_segment += 1;
                    handed.store(f.next_segment, Ordering::Relaxed);
                    while f.next_frame < seg.end {
                        match f.rx.recv() {
                            Ok(Ok(block)) => {
                                let start = f.next_frame;
                                f.next_frame += (block.len() / ch) as u64;
                                f.window.push_back((start, Arc::new(block)));
                            }
                            Ok(Err(e)) => return fail(j, e),
                            // The input ended early: the segment's length check says so.
                            Err(_) => break,
                        }
                    }
                    // Blocks no later segment reads go back to the reader (once no
                    // worker holds them).
                    while let Some((start, block)) = f.window.front() {
                        if *start + (block.len() / ch) as u64 > seg.start {
                            break;
                        }
                        if let Some((_, block)) = f.window.pop_front() {
                            recycle(block);
                        }
                    }
                    let blocks: Vec<(u64, Arc<Vec<T>>)> = f
                        .window
                        .iter()
                        .filter(|(start, b)| {
                            *start < seg.end && start + (b.len() / ch) as u64 > seg.start
                        })
                        .cloned()
                        .collect();
                    (j, seg, blocks)
                };
                let pieces: Vec<&[T]> = blocks
                    .iter()
                    .map(|(start, block)| {
                        let end = start + (block.len() / ch) as u64;
                        let lo = seg.start.max(*start);
                        let hi = seg.end.min(end);
                        &block[(lo - start) as usize * ch..(hi - start) as usize * ch]
                    })
                    .collect();
                let n = seg.keep * ch;
                let (r, piece) = match encoder.as_mut() {
                    // Encoded piece by piece as they are made, while in the cache.
                    Some(q) => {
                        let mut bytes = lock(&out.spare.bytes).pop().unwrap_or_default();
                        bytes.clear();
                        // The segment's whole size at once: no growing (copies into fresh
                        // memory) while it is encoded.
                        bytes.reserve_exact(n * usize::from(q.encoding().bytes()));
                        let r = convert_chain_segment_pieces(
                            &mut conv,
                            &seg,
                            &pieces,
                            ENCODE_FRAMES,
                            &mut own,
                            |x| encode_samples(q, x, &mut bytes),
                        );
                        (r, Piece::Encoded(bytes, n, q.take_stats()))
                    }
                    None => {
                        let mut buf = lock(&out.spare.samples).pop().unwrap_or_default();
                        let r = convert_chain_segment(&mut conv, &seg, &pieces, &mut buf);
                        (r, Piece::Samples(buf, n))
                    }
                };
                drop(pieces);
                blocks.into_iter().for_each(|(_, b)| recycle(b));
                if let Err(e) = r {
                    return fail(j, e.into());
                }
                if out.tx.send((j, piece)).is_err() {
                    return fail(j, writer_stopped().into());
                }
                (self.ctl.progress)(cuts.covered(j) * self.bytes_per_frame);
            }
        };
        std::thread::scope(|s| {
            for _ in 1..workers.min(count.try_into().unwrap_or(usize::MAX)) {
                s.spawn(work);
            }
            work();
        });
        match failure.into_inner().unwrap_or_else(PoisonError::into_inner) {
            Some((_, e)) => Err(e),
            None => Ok(()),
        }
    }
}

#[cfg(test)]
mod tests {
    use std::path::Path;
    use std::sync::atomic::AtomicBool;

    use super::super::{convert_file, Control, DesignCache, Settings};
    use crate::audio::wav::{Dither, Encoding, WavWriter, WriterOptions};

    /// A stereo file of `frames` frames, several blocks long, with a NaN at `nan_at`.
    fn input(path: &Path, enc: Encoding, frames: usize, nan_at: Option<usize>) {
        input_at(path, 44_100, enc, frames, nan_at);
    }

    /// [`input`] at `rate`.
    fn input_at(path: &Path, rate: u32, enc: Encoding, frames: usize, nan_at: Option<usize>) {
        let mut opts = WriterOptions::new(rate, 2, enc);
        opts.dither = Dither::None;
        let mut w = WavWriter::create(path, &opts).unwrap();
        let x: Vec<f64> = (0..frames * 2)
            .map(|i| {
                if Some(i / 2) == nan_at {
                    f64::NAN
                } else {
                    0.8 * ((i / 2) as f64 * 0.0123 * (1 + i % 2) as f64).sin()
                }
            })
            .collect();
        w.write_frames(&x).unwrap();
        w.finish().unwrap();
    }

    fn run(input: &Path, out: &Path, s: &Settings) -> Result<String, String> {
        let cancel = AtomicBool::new(false);
        let progress = |_: u64| {};
        let ctl = Control {
            cancel: &cancel,
            progress: &progress,
        };
        convert_file(input, out, s, &DesignCache::new(), ctl)
            .map(|r| {
                let mut j: serde_json::Value =
                    serde_json::from_str(&r.json()).expect("a report is JSON");
                j["elapsed_s"] = 0.into();
                j["speed_x_real_time"] = 0.into();
                j["output"] = "".into();
                j.to_string()
            })
            .map_err(|e| e.to_string())
    }

    /// The report and output bytes of `src` converted with `s` by the sequential engine,
    /// then by the pipelined one (outputs named after `tag` in `dir`).
    fn both_engines(src: &Path, dir: &Path, tag: &str, s: &mut Settings) -> Vec<(String, Vec<u8>)> {
        [false, true]
            .into_iter()
            .map(|pipeline| {
                s.pipeline = pipeline;
                let out = dir.join(format!("out-{tag}-{pipeline}.wav"));
                let report = run(src, &out, s).unwrap();
                (report, std::fs::read(&out).unwrap())
            })
            .collect()
    }

    #[test]
    fn pipelined_output_is_the_sequential_output() {
        let dir = tempfile::tempdir().unwrap();
        for (enc, out_enc, rate) in [
            (Encoding::Float32, None, 48_000),
            (Encoding::Int(24), Some(Encoding::Int(16)), 32_000),
            (Encoding::Int(16), None, 96_000),
        ] {
            let src = dir.path().join(format!("in-{rate}.wav"));
            input(&src, enc, 100_000, None);
            let mut s = Settings::new(rate);
            s.encoding = out_enc;
            s.gain_db = -1.0;
            let outs = both_engines(&src, dir.path(), &format!("{rate}"), &mut s);
            assert_eq!(outs[0].0, outs[1].0, "{enc}");
            assert!(outs[0].1 == outs[1].1, "{enc}: output bytes differ");
        }
    }

    #[test]
    fn reader_blocks_of_every_width_give_the_sequential_bytes() {
        // The reader's blocks hold 1 MiB of decoded samples (at most 65 536 frames): for
        // one, two and six channels of f32 and f64 a block ends at a different frame, and
        // the lengths end just past a block, inside one and exactly on one.
        let dir = tempfile::tempdir().unwrap();
        for (k, (channels, db, frames)) in [
            (1u16, 100.0, 65_536 * 2 + 1),
            (2, 140.0, 65_536 * 3 + 12_345),
            (2, 100.0, 65_536 * 2),
            (6, 140.0, 21_845 * 5 + 7),
            (6, 100.0, 43_690 * 3 - 1),
        ]
        .into_iter()
        .enumerate()
        {
            let src = dir.path().join(format!("in-{k}.wav"));
            let mut opts = WriterOptions::new(44_100, channels, Encoding::Float32);
            opts.dither = Dither::None;
            let mut w = WavWriter::create(&src, &opts).unwrap();
            let ch = usize::from(channels);
            let x: Vec<f64> = (0..frames * ch)
                .map(|i| 0.5 * ((i / ch) as f64 * 0.0071 * (1 + i % ch) as f64).sin())
                .collect();
            w.write_frames(&x).unwrap();
            w.finish().unwrap();
            let mut s = Settings::new(48_000);
            s.stopband_db = Some(db);
            let outs = both_engines(&src, dir.path(), &format!("{k}"), &mut s);
            assert_eq!(outs[0].0, outs[1].0, "{channels} ch, {frames} frames");
            assert!(
                outs[0].1 == outs[1].1,
                "{channels} ch, {frames} frames: output bytes differ"
            );
        }
    }

    #[test]
    fn two_stages_pipelined_are_the_sequential_bytes() {
        let dir = tempfile::tempdir().unwrap();
        for (k, (in_rate, out_rate, db, frames)) in [
            (192_000, 44_100, Some(140.0), 700_001),
            (48_000, 8_000, Some(140.0), 300_000),
            (192_000, 44_100, None, 200_000),
        ]
        .into_iter()
        .enumerate()
        {
            let src = dir.path().join(format!("in-{k}.wav"));
            input_at(&src, in_rate, Encoding::Int(24), frames, None);
            let mut s = Settings::new(out_rate);
            s.stopband_db = db;
            let outs = both_engines(&src, dir.path(), &format!("{k}"), &mut s);
            let j: serde_json::Value = serde_json::from_str(&outs[0].0).unwrap();
            assert_eq!(
                j["stages"].as_array().map(Vec::len),
                Some(2),
                "{in_rate} -> {out_rate}: {}",
                outs[0].0
            );
            assert_eq!(outs[0].0, outs[1].0, "{in_rate} -> {out_rate}");
            assert!(
                outs[0].1 == outs[1].1,
                "{in_rate} -> {out_rate}: output bytes differ"
            );
        }
    }

    #[test]
    fn pipelined_errors_are_the_sequential_errors() {
        let dir = tempfile::tempdir().unwrap();
        // A NaN several blocks in, refused, then zeroed.
        let src = dir.path().join("nan.wav");
        input(&src, Encoding::Float32, 60_000, Some(41_000));
        for sanitize in [false, true] {
            let mut s = Settings::new(48_000);
            s.sanitize = sanitize;
            let mut got = Vec::new();
            for pipeline in [false, true] {
                s.pipeline = pipeline;
                let out = dir.path().join(format!("nan-{sanitize}-{pipeline}.wav"));
                let r = run(&src, &out, &s);
                let bytes = std::fs::read(&out).ok();
                got.push((r, bytes));
            }
            assert_eq!(got[0].0, got[1].0, "sanitize {sanitize}");
            assert!(
                got[0].1 == got[1].1,
                "sanitize {sanitize}: output bytes differ"
            );
            assert_eq!(got[0].0.is_err(), !sanitize);
        }
        // Nothing is left behind after an error.
        let names: Vec<_> = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name().into_string().unwrap())
            .collect();
        assert!(
            !names.iter().any(|n| n.starts_with("nan-false")),
            "{names:?}"
        );
    }
}
