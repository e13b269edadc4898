//! Progress reporting from long runs, without any user interface in the library.
//!
//! Runners call a [`Progress`] implementation as files start, finish or fail; the binary turns
//! those calls into progress bars or log lines. Calls may come from several threads at once.

use crate::calculation::FileJob;

/// Receives progress events. Every method has an empty default.
pub trait Progress: Sync {
    /// A file is about to be read and analysed.
    fn file_started(&self, _job: &FileJob) {}
    /// A file's orbitals are done: `orbitals` in all, `cached` of them taken from the cache.
    fn file_done(&self, _job: &FileJob, _orbitals: usize, _cached: usize) {}
    /// A file failed; `error` names the file and, where known, the line.
    fn file_failed(&self, _job: &FileJob, _error: &str) {}
    /// Something worth telling that does not stop the run (a cache entry that could not be
    /// written, say).
    fn warning(&self, _message: &str) {}
}

/// Reports nothing.
#[derive(Clone, Copy, Debug, Default)]
pub struct Silent;

impl Progress for Silent {}
