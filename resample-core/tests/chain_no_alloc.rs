//! The two-stage converter's processing calls never touch the heap once it is built: a
//! counting global allocator watches every `process_*` and `flush_*` call and the queries.

use std::alloc::{GlobalAlloc, Layout, System};
use std::sync::atomic::{AtomicUsize, Ordering};

use resample_core::{ChainConverter, FilterSpec, Sample, StageChoice};

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

fn run<T: Sample>(a: u32, b: u32) -> usize {
    let plan = FilterSpec::new(a, b)
        .stopband_db(100.0)
        .stage_choice(StageChoice::Two)
        .plan()
        .unwrap();
    assert!(plan.is_two_stage());
    let mut conv = ChainConverter::<T>::new(&plan, 2).unwrap();
    // All buffers made before counting starts.
    let input: Vec<T> = (0..20_000 * 2).map(|_| T::from_f64_lossy(0.25)).collect();
    let mut out = vec![T::zero(); 777 * 2];
    let (left, right) = (
        vec![T::from_f64_lossy(0.5); 9_000],
        vec![T::from_f64_lossy(-0.5); 9_000],
    );
    let (mut ol, mut or) = (vec![T::zero(); 500], vec![T::zero(); 500]);
    let before = ALLOCS.load(Ordering::SeqCst);
    for chunk in [0usize, 1, 2, 13, 512, 4095, 4096, 4097, 20_000] {
        let mut pos = 0;
        while pos < chunk {
            let p = conv
                .process_interleaved(&input[pos * 2..chunk * 2], &mut out)
                .unwrap();
            pos += p.frames_read;
            let _ = conv.output_frames_for_input(100);
            let _ = conv.input_frames_for_output(100);
        }
    }
    let mut pos = 0;
    while pos < 9_000 {
        let ins: [&[T]; 2] = [&left[pos..], &right[pos..]];
        let mut outs: [&mut [T]; 2] = [&mut ol[..], &mut or[..]];
        let p = conv.process_planar(&ins, &mut outs).unwrap();
        pos += p.frames_read;
    }
    loop {
        let mut outs: [&mut [T]; 2] = [&mut ol[..], &mut or[..]];
        if conv.flush_planar(&mut outs).unwrap() == 0 {
            break;
        }
    }
    conv.reset();
    ALLOCS.load(Ordering::SeqCst) - before
}

#[test]
fn processing_does_not_allocate() {
    for (a, b) in [(192_000, 44_100), (8_000, 48_000)] {
        assert_eq!(run::<f32>(a, b), 0, "{a} -> {b} f32");
        assert_eq!(run::<f64>(a, b), 0, "{a} -> {b} f64");
    }
}
