//! The processing calls never touch the heap once a converter is built: a counting global
//! allocator watches every `process_*` and `flush_*` call, of the fixed-ratio and the
//! any-ratio converters (and the any-ratio one's glides and queries).

use std::alloc::{GlobalAlloc, Layout, System};
use std::sync::atomic::{AtomicUsize, Ordering};

use resample_core::{
    Design, FilterSpec, GlideConverter, GlideDesign, Kernel, Phase, StreamConverter,
};

struct Counting;

static ALLOCS: AtomicUsize = AtomicUsize::new(0);

// Safety: forwards to the system allocator unchanged; only counts calls.
unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        ALLOCS.fetch_add(1, Ordering::SeqCst);
        // Safety: same contract as our caller's.
        unsafe { System.alloc(layout) }
    }
    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        // Safety: same contract as our caller's.
        unsafe { System.dealloc(ptr, layout) }
    }
    unsafe fn realloc(&self, ptr: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        ALLOCS.fetch_add(1, Ordering::SeqCst);
        // Safety: same contract as our caller's.
        unsafe { System.realloc(ptr, layout, new_size) }
    }
}

#[global_allocator]
static GLOBAL: Counting = Counting;

/// The counter is global: tests that count run one at a time (another test's designs
/// would be counted otherwise).
static ONE_AT_A_TIME: std::sync::Mutex<()> = std::sync::Mutex::new(());

fn run<T: resample_core::Sample>(d: &Design, ch: usize, kernel: Kernel) -> usize {
    let mut conv = StreamConverter::<T>::with_kernel(d, ch, kernel).unwrap();
    // All buffers made before counting starts.
    let input = vec![T::from_f64_lossy(0.25); 10_000 * ch];
    let mut out = vec![T::zero(); 777 * ch];
    let planar_in = vec![vec![T::from_f64_lossy(0.5); 3_000]; ch];
    let mut planar_out = vec![vec![T::zero(); 500]; ch];
    let before = ALLOCS.load(Ordering::SeqCst);
    for chunk in [0usize, 1, 2, 13, 512, 4095, 4096, 4097, 9_000] {
        let mut pos = 0;
        let frames = chunk.min(10_000);
        while pos < frames {
            let p = conv
                .process_interleaved(&input[pos * ch..frames * ch], &mut out)
                .unwrap();
            pos += p.frames_read;
        }
    }
    let mut pos = 0;
    while pos < 3_000 {
        let ins: [&[T]; 1] = [&planar_in[0][pos..]];
        let p = if ch == 1 {
            conv.process_planar(&ins, &mut planar_out).unwrap()
        } else {
            // Planar input of several channels, without collecting slices on the heap.
            let all: &[Vec<T>] = &planar_in;
            let p = conv.process_planar(all, &mut planar_out).unwrap();
            pos = 3_000;
            p
        };
        pos += p.frames_read;
    }
    while conv.flush_interleaved(&mut out).unwrap() > 0 {}
    conv.reset();
    let _ = conv.process_interleaved(&input, &mut out).unwrap();
    while conv.flush_planar(&mut planar_out).unwrap() > 0 {}
    ALLOCS.load(Ordering::SeqCst) - before
}

#[test]
fn processing_does_not_allocate() {
    let _one = ONE_AT_A_TIME.lock().unwrap_or_else(|e| e.into_inner());
    for kernel in Kernel::available() {
        for (a, b) in [
            (44_100, 48_000),
            (48_000, 44_100),
            (48_000, 8_000),
            (8_000, 96_000),
        ] {
            for phase in [Phase::Linear, Phase::Minimum] {
                let d = FilterSpec::new(a, b)
                    .stopband_db(100.0)
                    .phase(phase)
                    .design()
                    .unwrap();
                for ch in [1, 2, 6] {
                    let what = format!("{a}->{b} x{ch} {phase:?}");
                    assert_eq!(run::<f32>(&d, ch, kernel), 0, "f32 {what}");
                    assert_eq!(run::<f64>(&d, ch, kernel), 0, "f64 {what}");
                }
            }
        }
    }
}

fn run_glide<T: resample_core::Sample>(d: &GlideDesign, ch: usize, kernel: Kernel) -> usize {
    let mut conv = GlideConverter::<T>::with_kernel(d, ch, 0.9, kernel).unwrap();
    let input = vec![T::from_f64_lossy(0.25); 10_000 * ch];
    let mut out = vec![T::zero(); 777 * ch];
    let planar_in = vec![vec![T::from_f64_lossy(0.5); 3_000]; ch];
    let mut planar_out = vec![vec![T::zero(); 500]; ch];
    let before = ALLOCS.load(Ordering::SeqCst);
    for (chunk, ratio) in [
        (1usize, 0.1),
        (13, 1.5),
        (512, 1.0001),
        (4097, 0.3),
        (9_000, 7.0),
    ] {
        conv.glide_to(ratio, 1000).unwrap();
        let _ = conv.output_frames_for_input(chunk as u64);
        let _ = conv.input_frames_for_output(100);
        let _ = conv.max_output_frames(chunk);
        let mut pos = 0;
        while pos < chunk {
            let p = conv
                .process_interleaved(&input[pos * ch..chunk * ch], &mut out)
                .unwrap();
            pos += p.frames_read;
        }
    }
    let mut pos = 0;
    while pos < 3_000 {
        let all: &[Vec<T>] = &planar_in;
        let p = conv.process_planar(all, &mut planar_out).unwrap();
        if p.frames_read == 0 {
            break;
        }
        pos += p.frames_read;
    }
    let _ = conv.flush_frames();
    while conv.flush_interleaved(&mut out).unwrap() > 0 {}
    conv.reset();
    let _ = conv.process_interleaved(&input, &mut out).unwrap();
    while conv.flush_planar(&mut planar_out).unwrap() > 0 {}
    ALLOCS.load(Ordering::SeqCst) - before
}

#[test]
fn glide_processing_does_not_allocate() {
    let _one = ONE_AT_A_TIME.lock().unwrap_or_else(|e| e.into_inner());
    let d = FilterSpec::new(44_100, 48_000)
        .stopband_db(100.0)
        .design_glide()
        .unwrap();
    let cubic = FilterSpec::new(44_100, 48_000)
        .stopband_db(140.0)
        .design_glide()
        .unwrap();
    // A minimum-phase table (its kernel reaches far behind the output's time, little ahead).
    let minimum = FilterSpec::new(44_100, 48_000)
        .stopband_db(120.0)
        .phase(Phase::Minimum)
        .design_glide()
        .unwrap();
    for kernel in Kernel::available() {
        for d in [&d, &cubic, &minimum] {
            for ch in [1, 2, 6] {
                assert_eq!(run_glide::<f32>(d, ch, kernel), 0, "f32 x{ch} {kernel:?}");
                assert_eq!(run_glide::<f64>(d, ch, kernel), 0, "f64 x{ch} {kernel:?}");
            }
        }
    }
}

#[test]
fn the_counter_counts() {
    let _one = ONE_AT_A_TIME.lock().unwrap_or_else(|e| e.into_inner());
    // Guard against a vacuous pass: an allocation between the readings is seen.
    let before = ALLOCS.load(Ordering::SeqCst);
    let v: Vec<u8> = Vec::with_capacity(std::hint::black_box(64));
    std::hint::black_box(&v);
    assert!(ALLOCS.load(Ordering::SeqCst) > before);
}
