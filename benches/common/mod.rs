//! Helpers shared by the benchmarks (included with `mod common;`).

use std::time::{Duration, Instant};

/// The shortest of `runs` timings of `f`, and the value of its last run.
pub fn best<T>(runs: usize, mut f: impl FnMut() -> T) -> (Duration, T) {
    let mut out = None;
    let mut best = Duration::MAX;
    for _ in 0..runs {
        let t = Instant::now();
        let v = f();
        best = best.min(t.elapsed());
        out = Some(v);
    }
    (best, out.expect("at least one run"))
}
