//! CPU time of the calling thread, shared by the benches (each includes this file as a
//! module), so that figures taken on a machine shared with other work count only the time
//! the measuring thread was on a core.

/// CPU time this thread has run, seconds (Linux `/proc/thread-self/schedstat`; updated at
/// scheduler ticks, so only spans of a hundred milliseconds or more are meaningful). `None`
/// elsewhere (callers fall back to wall time).
pub fn thread_cpu_seconds() -> Option<f64> {
    let s = std::fs::read_to_string("/proc/thread-self/schedstat").ok()?;
    let ns: f64 = s.split_whitespace().next()?.parse().ok()?;
    Some(ns * 1e-9)
}
