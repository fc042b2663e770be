//! One way for every long stage (lead field, dictionary, resamples) to say
//! how far it is and to hear that its caller wants it to stop.

/// Receives a stage's steps and answers whether to stop. Calls may come
/// from worker threads. A closure `Fn(usize)` is a `Progress` that never
/// asks to stop.
pub trait Progress: Sync {
    /// `n` more steps are done.
    fn advance(&self, n: usize);
    /// Whether the caller asks the stage to stop: a stage checks it before
    /// each step and then returns its `Cancelled` error.
    fn cancelled(&self) -> bool {
        false
    }
}

impl<F: Fn(usize) + Sync> Progress for F {
    fn advance(&self, n: usize) {
        self(n)
    }
}

/// No progress wanted; never stops.
#[derive(Debug, Clone, Copy, Default)]
pub struct Quiet;

impl Progress for Quiet {
    fn advance(&self, _n: usize) {}
}
