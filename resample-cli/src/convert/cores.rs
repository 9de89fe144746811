//! The cores a batch may keep busy converting: one token per core. A file being converted
//! holds one; the extra segment workers of a file converted in segments take one for each
//! segment, so they run only on cores no other file is using (at the end of a batch, when
//! no file is left to start), and the batch never has more converting threads than cores.

use std::sync::{Condvar, Mutex, MutexGuard, PoisonError};

/// A counting semaphore of cores, shared by the files of a batch.
#[derive(Debug)]
pub struct Cores {
    free: Mutex<usize>,
    changed: Condvar,
}

/// One core, given back when dropped.
#[derive(Debug)]
pub struct Core<'a> {
    cores: &'a Cores,
}

impl Drop for Core<'_> {
    fn drop(&mut self) {
        *self.cores.lock() += 1;
        // Waiters wait for different things (a core, or the end of their file's work):
        // every one of them checks again.
        self.cores.changed.notify_all();
    }
}

impl Cores {
    /// `n` cores, all free.
    pub fn new(n: usize) -> Self {
        Self {
            free: Mutex::new(n),
            changed: Condvar::new(),
        }
    }

    fn lock(&self) -> MutexGuard<'_, usize> {
        self.free.lock().unwrap_or_else(PoisonError::into_inner)
    }

    /// Wait for a free core and take it.
    pub fn take(&self) -> Core<'_> {
        let mut free = self.lock();
        while *free == 0 {
            free = self
                .changed
                .wait(free)
                .unwrap_or_else(PoisonError::into_inner);
        }
        *free -= 1;
        Core { cores: self }
    }

    /// Wait for a free core and take it, unless `give_up` says (before one is free) that it
    /// is no longer wanted: then `None`. Whoever makes `give_up` true calls
    /// [`Cores::wake`] afterwards.
    pub fn take_unless(&self, give_up: impl Fn() -> bool) -> Option<Core<'_>> {
        let mut free = self.lock();
        loop {
            if give_up() {
                return None;
            }
            if *free > 0 {
                *free -= 1;
                return Some(Core { cores: self });
            }
            free = self
                .changed
                .wait(free)
                .unwrap_or_else(PoisonError::into_inner);
        }
    }

    /// Have every waiter check its `give_up` again.
    pub fn wake(&self) {
        let _free = self.lock();
        self.changed.notify_all();
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};

    #[test]
    fn never_more_holders_than_cores() {
        let cores = Cores::new(2);
        let holding = AtomicUsize::new(0);
        let most = AtomicUsize::new(0);
        std::thread::scope(|s| {
            for _ in 0..6 {
                s.spawn(|| {
                    for _ in 0..200 {
                        let _core = cores.take();
                        let now = holding.fetch_add(1, Ordering::SeqCst) + 1;
                        most.fetch_max(now, Ordering::SeqCst);
                        std::thread::yield_now();
                        holding.fetch_sub(1, Ordering::SeqCst);
                    }
                });
            }
        });
        assert_eq!(most.load(Ordering::SeqCst), 2);
        assert_eq!(*cores.lock(), 2, "every core given back");
    }

    #[test]
    fn a_waiter_gives_up_when_woken() {
        let cores = Cores::new(1);
        let held = cores.take();
        let done = AtomicBool::new(false);
        std::thread::scope(|s| {
            let waiter = s.spawn(|| cores.take_unless(|| done.load(Ordering::SeqCst)).is_some());
            std::thread::sleep(std::time::Duration::from_millis(20));
            done.store(true, Ordering::SeqCst);
            cores.wake();
            assert!(!waiter.join().unwrap(), "gave up rather than waited");
        });
        drop(held);
        assert!(cores.take_unless(|| false).is_some());
    }
}
