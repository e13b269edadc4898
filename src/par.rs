//! Explicit parallelism.
//!
//! Every routine that may run in parallel takes a [`Parallelism`] argument instead of deciding for
//! itself, so that callers control nesting (a batch of orbitals runs orbitals in parallel and each
//! orbital sequentially, which bounds memory) and tests can pin the sequential path. Results never
//! depend on the choice: reductions split the work into fixed-size chunks and add the chunk sums in
//! index order, whatever the number of threads.

use rayon::prelude::*;
use std::ops::Range;

/// How a routine may use threads.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum Parallelism {
    /// Run on the calling thread only.
    #[default]
    Sequential,
    /// Spread the work over the current rayon thread pool.
    Rayon,
}

/// Number of elements per chunk in [`chunked_sum`]; fixed so that sums are reproducible.
pub const SUM_CHUNK: usize = 1 << 14;

impl Parallelism {
    /// Calls `f(&mut state, item)` for every item, with one `state` from `init` per worker.
    pub fn for_each_init<I, T, S, INIT, F>(self, items: I, init: INIT, f: F)
    where
        I: IntoParallelIterator<Item = T> + IntoIterator<Item = T>,
        T: Send,
        INIT: Fn() -> S + Send + Sync,
        F: Fn(&mut S, T) + Send + Sync,
    {
        match self {
            Parallelism::Sequential => {
                let mut state = init();
                for item in items {
                    f(&mut state, item);
                }
            }
            Parallelism::Rayon => items.into_par_iter().for_each_init(init, f),
        }
    }

    /// Sum of `term(range)` over consecutive ranges of [`SUM_CHUNK`] indices covering `0..len`,
    /// added in index order (bitwise identical for both variants).
    pub fn chunked_sum<F>(self, len: usize, term: F) -> f64
    where
        F: Fn(Range<usize>) -> f64 + Send + Sync,
    {
        let range = |c: usize| c * SUM_CHUNK..((c + 1) * SUM_CHUNK).min(len);
        self.map(len.div_ceil(SUM_CHUNK), |c| term(range(c))).iter().sum()
    }

    /// `[f(0), f(1), …, f(count − 1)]`, computed in parallel or not.
    pub fn map<F, R>(self, count: usize, f: F) -> Vec<R>
    where
        F: Fn(usize) -> R + Send + Sync,
        R: Send,
    {
        match self {
            Parallelism::Sequential => (0..count).map(f).collect(),
            Parallelism::Rayon => (0..count).into_par_iter().map(f).collect(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn chunked_sum_is_identical_in_both_modes() {
        let values: Vec<f64> = (0..100_003).map(|i| ((i as f64) * 0.37).sin() * 1e-3).collect();
        let term = |r: Range<usize>| values[r].iter().sum::<f64>();
        let a = Parallelism::Sequential.chunked_sum(values.len(), term);
        let b = Parallelism::Rayon.chunked_sum(values.len(), term);
        assert_eq!(a.to_bits(), b.to_bits());
        let plain: f64 = values.iter().sum();
        assert!((a - plain).abs() < 1e-12);
    }
}
