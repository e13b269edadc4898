//! Admission of files under a memory budget: a file starts when its estimate fits beside the
//! files in flight and the Coulomb kernels they use; otherwise it waits for one to finish.
//!
//! What is counted: each running file's own peak, and every Coulomb kernel that is cached in the
//! engine or needed by a running file, once per grid. When a file does not fit, the cached
//! kernels no running file needs are dropped first. A file whose estimate alone exceeds the
//! budget never starts ([`Ledger::check`]); every other file can run once the others are done,
//! so waiting always ends.

use super::estimate::FileEstimate;
use super::{Bytes, MemoryBudget};
use crate::diagnostics::Engine;
use crate::grid::GridGeometry;
use crate::poisson::HartreeSolver;
use std::sync::{Condvar, Mutex};

/// The files in flight and what they hold.
pub struct Ledger<'a> {
    engine: &'a Engine,
    budget: &'a MemoryBudget,
    running: Mutex<Vec<(u64, FileEstimate)>>,
    freed: Condvar,
    next: Mutex<u64>,
}

/// A running file's place in the ledger; dropping it frees the place.
pub struct Ticket<'l, 'a> {
    ledger: &'l Ledger<'a>,
    id: u64,
}

impl Drop for Ticket<'_, '_> {
    fn drop(&mut self) {
        let mut running = self.ledger.running.lock().unwrap_or_else(|e| e.into_inner());
        running.retain(|(id, _)| *id != self.id);
        self.ledger.freed.notify_all();
    }
}

impl<'a> Ledger<'a> {
    /// An empty ledger for the files `engine` runs under `budget`.
    pub fn new(engine: &'a Engine, budget: &'a MemoryBudget) -> Self {
        Ledger { engine, budget, running: Mutex::new(Vec::new()), freed: Condvar::new(), next: Mutex::new(0) }
    }

    /// Whether the file can run at all: the message for one whose estimate alone exceeds the
    /// budget (`source` names it).
    pub fn check(&self, source: &str, e: &FileEstimate) -> Result<(), String> {
        if e.total() <= self.budget.bytes {
            return Ok(());
        }
        Err(format!(
            "{source}: needs about {} for {}, more than the memory budget of {}; allow more with --memory (a workflow's `memory:`), or use a coarser grid",
            Bytes(e.total()),
            e.what,
            self.budget
        ))
    }

    /// Whether the kernels of all `estimates`' grids and the largest file's own peak fit at once
    /// (then building every kernel up front cannot crowd the files out).
    pub fn kernels_fit(&self, estimates: &[&FileEstimate]) -> bool {
        let own = estimates.iter().map(|e| e.own).max().unwrap_or(0);
        own + kernel_sum(estimates.iter().flat_map(|e| e.kernels.iter().cloned())) <= self.budget.bytes
    }

    /// Waits until `e` fits beside the running files (or nothing else runs), and books it.
    pub fn admit<'l>(&'l self, e: &FileEstimate) -> Ticket<'l, 'a> {
        let mut running = self.running.lock().unwrap_or_else(|p| p.into_inner());
        loop {
            if self.in_use(&running, e) > self.budget.bytes {
                // Kernels nobody in flight needs go first (for a lone file too, so that the
                // kernels of earlier grids do not stay beside it).
                let needed: Vec<GridGeometry> =
                    running.iter().flat_map(|(_, r)| &r.kernels).chain(&e.kernels).map(|(g, _)| g.clone()).collect();
                self.engine.release_solvers(|g| needed.iter().any(|n| n.same_lattice(g)));
            }
            if running.is_empty() || self.in_use(&running, e) <= self.budget.bytes {
                let id = {
                    let mut next = self.next.lock().unwrap_or_else(|p| p.into_inner());
                    *next += 1;
                    *next
                };
                running.push((id, e.clone()));
                return Ticket { ledger: self, id };
            }
            running = self.freed.wait(running).unwrap_or_else(|p| p.into_inner());
        }
    }

    /// Bytes in use with `e` running beside `running`: their own peaks and every kernel cached
    /// or needed, once per grid.
    fn in_use(&self, running: &[(u64, FileEstimate)], e: &FileEstimate) -> u64 {
        let own: u64 = running.iter().map(|(_, r)| r.own).sum::<u64>() + e.own;
        let params = &self.engine.params().hartree;
        let cached = self.engine.cached_solvers().into_iter().map(|g| {
            let bytes = HartreeSolver::kernel_bytes(&g, params, 1).1;
            (g, bytes)
        });
        let needed = running.iter().flat_map(|(_, r)| r.kernels.iter().cloned()).chain(e.kernels.iter().cloned());
        own + kernel_sum(needed.chain(cached))
    }
}

/// The bytes of `kernels`, each grid once (the first figure given for it).
fn kernel_sum(kernels: impl Iterator<Item = (GridGeometry, u64)>) -> u64 {
    let mut seen: Vec<GridGeometry> = Vec::new();
    let mut sum = 0;
    for (g, bytes) in kernels {
        if !seen.iter().any(|s| s.same_lattice(&g)) {
            seen.push(g);
            sum += bytes;
        }
    }
    sum
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diagnostics::EngineParams;
    use crate::memory::MIB;
    use crate::par::Parallelism;
    use crate::xc::Model;
    use std::sync::atomic::{AtomicU64, Ordering};

    fn grid(n: usize) -> GridGeometry {
        GridGeometry::new([0.0; 3], [[0.3, 0.0, 0.0], [0.0, 0.3, 0.0], [0.0, 0.0, 0.3]], [n; 3]).unwrap()
    }

    fn estimate(own: u64, kernels: &[(usize, u64)]) -> FileEstimate {
        FileEstimate { own, kernels: kernels.iter().map(|&(n, b)| (grid(n), b)).collect(), what: "a test".into() }
    }

    #[test]
    fn files_wait_until_they_fit_and_never_exceed_the_budget() {
        let engine = Engine::new(vec![Model::from_name("lsda").unwrap()], EngineParams::default());
        let budget = MemoryBudget::given(100 * MIB);
        let ledger = Ledger::new(&engine, &budget);
        // Four files of 30 MiB on one shared 20 MiB kernel: three at a time would need 110 MiB.
        let e = estimate(30 * MIB, &[(10, 20 * MIB)]);
        let (in_flight, most) = (AtomicU64::new(0), AtomicU64::new(0));
        Parallelism::Rayon.map(8, |_| {
            let _t = ledger.admit(&e);
            let now = in_flight.fetch_add(1, Ordering::SeqCst) + 1;
            most.fetch_max(now, Ordering::SeqCst);
            std::thread::sleep(std::time::Duration::from_millis(20));
            in_flight.fetch_sub(1, Ordering::SeqCst);
        });
        assert!(most.load(Ordering::SeqCst) <= 2);
        assert!(ledger.running.lock().unwrap().is_empty());

        // Too big alone: a message with the need, the grid and the budget.
        let big = estimate(90 * MIB, &[(10, 20 * MIB)]);
        let msg = ledger.check("huge.cube", &big).unwrap_err();
        assert!(msg.starts_with("huge.cube: needs about 110 MiB for a test, more than the memory budget of 100 MiB (as given)"), "{msg}");
        assert!(ledger.check("ok.cube", &e).is_ok());
        assert!(ledger.kernels_fit(&[&e, &e]));
        assert!(!ledger.kernels_fit(&[&e, &estimate(30 * MIB, &[(12, 60 * MIB)])]));
    }

    #[test]
    fn cached_kernels_nobody_needs_make_room() {
        let engine = Engine::new(vec![Model::from_name("lsda").unwrap()], EngineParams::default());
        let g = grid(20);
        engine.solver(&g, Parallelism::Sequential).unwrap();
        let kernel = HartreeSolver::kernel_bytes(&g, &engine.params().hartree, 1).1;
        // Room for the file or the old kernel, not both.
        let budget = MemoryBudget::given(2 * MIB + kernel / 2);
        let ledger = Ledger::new(&engine, &budget);
        let _t = ledger.admit(&estimate(2 * MIB, &[]));
        assert!(engine.cached_solvers().is_empty());
        // A kernel a file needs stays.
        let engine = Engine::new(vec![Model::from_name("lsda").unwrap()], EngineParams::default());
        engine.solver(&g, Parallelism::Sequential).unwrap();
        let ledger = Ledger::new(&engine, &budget);
        let _t = ledger.admit(&FileEstimate { own: 2 * MIB, kernels: vec![(g.clone(), kernel)], what: String::new() });
        assert_eq!(engine.cached_solvers().len(), 1);
    }
}
