//! The pipelined engine: one helper thread reads and decodes input blocks ahead (also while
//! the filter is being designed), the conversion itself is cut into segments converted a
//! few at a time on rayon's pool ([`super::segments`]; in one piece when the pool has one
//! thread), and another helper thread requantizes and writes the output. Blocks travel
//! through bounded queues, so memory stays bounded; every output frame is computed from the
//! same input as by the sequential engine, so the output is the same, byte for byte.

use std::collections::VecDeque;
use std::sync::atomic::Ordering;
use std::sync::mpsc;
use std::sync::Arc;

use rayon::prelude::*;
use resample_core::{ChainConverter, Sample, StagePlan};

use super::{ConvertError, Engine, Run, BLOCK_FRAMES};
use crate::audio::wav::{WavError, WavWriter};
use crate::audio::Input;
use resample_core::segments::{convert_chain_segment, Segment, SegmentPlan};

/// Decoded input the reader may hold ahead of the converter, bytes (at least one block).
const READ_AHEAD_BYTES: usize = 4 << 20;
/// Output blocks queued for the writer.
const WRITE_QUEUE: usize = 4;
/// Most segments converted at the same time.
const MAX_WORKERS: usize = 8;
/// The writer has the disk catch up every this many bytes (see [`WavWriter::sync_every`]).
const SYNC_EVERY_BYTES: u64 = 4 << 20;

impl Run<'_> {
    /// Convert with reading and writing on helper threads; `setup` (design the filter,
    /// create the output) runs on this thread while the reader starts.
    pub(super) fn pipelined<T: Sample>(
        &self,
        reader: &mut Input,
        setup: impl FnOnce() -> Result<(Arc<StagePlan>, WavWriter), ConvertError>,
    ) -> Result<(Arc<StagePlan>, WavWriter), ConvertError> {
        let ch = usize::from(reader.info().channels);
        let frames_in = reader.info().frames;
        // A stream of unknown length is converted in one piece.
        let length_known = reader.length_known();
        let block_bytes = BLOCK_FRAMES * ch * std::mem::size_of::<T>();
        let depth = (READ_AHEAD_BYTES / block_bytes).clamp(1, 64);
        std::thread::scope(|s| {
            // Decoded blocks (or the error that stopped reading), and emptied ones back.
            let (in_tx, in_rx) = mpsc::sync_channel::<Result<Vec<T>, ConvertError>>(depth);
            let (in_back_tx, in_back_rx) = mpsc::channel::<Vec<T>>();
            s.spawn(move || loop {
                let mut buf = in_back_rx.try_recv().unwrap_or_default();
                match self.read_block(reader, &mut buf) {
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

            let (design, mut writer) = setup()?;

            // Output blocks with their sample counts, and written ones back.
            let (out_tx, out_rx) = mpsc::sync_channel::<(Vec<T>, usize)>(WRITE_QUEUE);
            let (out_back_tx, out_back_rx) = mpsc::channel::<Vec<T>>();
            let write = s.spawn(move || -> Result<WavWriter, WavError> {
                writer.sync_every(SYNC_EVERY_BYTES)?;
                for (buf, n) in out_rx {
                    writer.write_frames(&buf[..n])?;
                    let _ = out_back_tx.send(buf);
                }
                Ok(writer)
            });

            let workers = rayon::current_num_threads().min(MAX_WORKERS);
            let cuts = if workers >= 2 && length_known {
                SegmentPlan::for_plan(&design, frames_in, ch)
            } else {
                None
            };
            let converted = match cuts {
                Some(cuts) => self.segmented(
                    &design,
                    cuts,
                    workers,
                    ch,
                    (&in_rx, &in_back_tx),
                    (&out_tx, &out_back_rx),
                ),
                None => (|| -> Result<(), ConvertError> {
                    let mut engine = Engine::<T>::new(&design, ch)?;
                    let mut emit = |out: &mut Vec<T>, n: usize| -> Result<(), WavError> {
                        let next = out_back_rx
                            .try_recv()
                            .unwrap_or_else(|_| vec![T::zero(); out.len()]);
                        let full = std::mem::replace(out, next);
                        out_tx.send((full, n)).map_err(|_| writer_stopped())
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
                        let _ = in_back_tx.send(block);
                    }
                    engine.flush(&mut emit)
                })(),
            };
            // Stop the reader if it is still going, let the writer drain and finish.
            drop(in_rx);
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

/// Decoded blocks from the reader, and the way back for emptied ones.
type InQueue<'q, T> = (
    &'q mpsc::Receiver<Result<Vec<T>, ConvertError>>,
    &'q mpsc::Sender<Vec<T>>,
);
/// Output blocks to the writer (with their sample counts), and written ones back.
type OutQueue<'q, T> = (
    &'q mpsc::SyncSender<(Vec<T>, usize)>,
    &'q mpsc::Receiver<Vec<T>>,
);

impl Run<'_> {
    /// Convert `workers` segments at a time on rayon's pool, each by its own converter,
    /// handing their outputs to the writer in order.
    fn segmented<T: Sample>(
        &self,
        design: &StagePlan,
        cuts: SegmentPlan,
        workers: usize,
        ch: usize,
        (in_rx, in_back): InQueue<'_, T>,
        (out_tx, out_back): OutQueue<'_, T>,
    ) -> Result<(), ConvertError> {
        let mut convs = (0..workers)
            .map(|_| ChainConverter::<T>::new(design, ch))
            .collect::<Result<Vec<_>, _>>()?;
        let mut outs: Vec<Vec<T>> = (0..workers).map(|_| Vec::new()).collect();
        // Input blocks still needed, with the frame index each starts at.
        let mut window: VecDeque<(u64, Vec<T>)> = VecDeque::new();
        let mut next_frame = 0u64;
        let count = cuts.count();
        let mut j = 0;
        while j < count {
            if self.ctl.cancel.load(Ordering::Relaxed) {
                return Err(crate::error::FileError::Interrupted.into());
            }
            let group: Vec<Segment> = (j..(j + workers as u64).min(count))
                .filter_map(|k| cuts.segment(k))
                .collect();
            let need = group.iter().map(|g| g.end).max().unwrap_or(0);
            while next_frame < need {
                let Ok(block) = in_rx.recv() else {
                    break; // the input ended early: the length check reports it
                };
                let block = block?;
                let frames = (block.len() / ch) as u64;
                window.push_back((next_frame, block));
                next_frame += frames;
            }
            for out in outs.iter_mut().filter(|o| o.capacity() == 0) {
                if let Ok(v) = out_back.try_recv() {
                    *out = v;
                }
            }
            let blocks = &window;
            let results: Vec<Result<(), resample_core::Error>> = convs
                .par_iter_mut()
                .zip(outs.par_iter_mut())
                .zip(group.par_iter())
                .map(|((conv, out), seg)| {
                    convert_chain_segment(conv, seg, &pieces(blocks, seg, ch), out)
                })
                .collect();
            for ((r, seg), out) in results.into_iter().zip(&group).zip(outs.iter_mut()) {
                r?;
                out_tx
                    .send((std::mem::take(out), seg.keep * ch))
                    .map_err(|_| writer_stopped())?;
            }
            let covered: u64 = (j..j + group.len() as u64).map(|k| cuts.covered(k)).sum();
            (self.ctl.progress)(covered * self.bytes_per_frame);
            j += group.len() as u64;
            // Blocks no later segment reads go back to the reader.
            let keep_from = cuts.segment(j).map_or(u64::MAX, |s| s.start);
            while let Some((start, block)) = window.front() {
                if *start + (block.len() / ch) as u64 > keep_from {
                    break;
                }
                if let Some((_, block)) = window.pop_front() {
                    let _ = in_back.send(block);
                }
            }
        }
        Ok(())
    }
}

/// The parts of the blocks in `window` that hold frames `[seg.start, seg.end)`.
fn pieces<'w, T>(window: &'w VecDeque<(u64, Vec<T>)>, seg: &Segment, ch: usize) -> Vec<&'w [T]> {
    window
        .iter()
        .filter_map(|(start, block)| {
            let end = start + (block.len() / ch) as u64;
            let lo = seg.start.max(*start);
            let hi = seg.end.min(end);
            (lo < hi).then(|| &block[(lo - start) as usize * ch..(hi - start) as usize * ch])
        })
        .collect()
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
            let mut outs = Vec::new();
            for pipeline in [false, true] {
                s.pipeline = pipeline;
                let out = dir.path().join(format!("out-{rate}-{pipeline}.wav"));
                let report = run(&src, &out, &s).unwrap();
                outs.push((report, std::fs::read(&out).unwrap()));
            }
            assert_eq!(outs[0].0, outs[1].0, "{enc}");
            assert!(outs[0].1 == outs[1].1, "{enc}: output bytes differ");
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
            let mut outs = Vec::new();
            for pipeline in [false, true] {
                s.pipeline = pipeline;
                let out = dir.path().join(format!("out-{k}-{pipeline}.wav"));
                let report = run(&src, &out, &s).unwrap();
                outs.push((report, std::fs::read(&out).unwrap()));
            }
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
