//! Three-dimensional real-to-complex FFT of a zero-padded array.
//!
//! Convention (unnormalised forward transform, as in RustFFT):
//! `X[k0, k1, k2] = Σ_j x[j0, j1, j2] · exp(−2πi Σ_a k_a j_a / M_a)`, for `k2 ≤ M2/2` only (the
//! other half follows from Hermitian symmetry). The input has shape `n` and is zero-padded to the
//! transform shape `m ≥ n`; lines that are known to be all zero are skipped, which saves about
//! half the work when `m = 2n`.
//!
//! Order of work: the last (contiguous) axis by real-to-complex transforms, then the middle axis
//! inside each slab while it is in cache, then the first axis. Strided axes are processed in
//! blocks of [`BLOCK`] neighbouring columns gathered into a contiguous buffer.
//!
//! [`PaddedFft3::plane_blocks`] does the same transforms in another order of delivery: the rows
//! along the last axis first (held for the unpadded rows only, about two grids of memory), then,
//! a few `k2` planes at a time, the middle and first axes of those planes, which it hands to the
//! caller and forgets. A whole half spectrum (eight grids of memory for `m = 2n`) is never held.

use crate::memory::{OutOfMemory, try_filled};
use crate::par::Parallelism;
use ndarray::{Array3, ArrayView3, ArrayViewMut2, Axis};
use std::ops::Range;
use std::sync::Mutex;
use realfft::{RealFftPlanner, RealToComplex};
use rustfft::num_complex::Complex64;
use rustfft::{Fft, FftPlanner};
use std::sync::Arc;

/// Columns gathered at once from a strided axis (16 complex values = four cache lines).
pub(crate) const BLOCK: usize = 16;

/// `k2` planes [`PaddedFft3::plane_blocks`] delivers at once: four neighbouring complex values
/// (one cache line) are read together from each row's transform. Fixed, so that sums over
/// blocks have one order whatever the threads.
pub const PLANE_BLOCK: usize = 4;

/// A planned transform for one padded shape; plan once, reuse for every array of that shape.
pub struct PaddedFft3 {
    m: [usize; 3],
    r2c: Arc<dyn RealToComplex<f64>>,
    c1: Arc<dyn Fft<f64>>,
    c0: Arc<dyn Fft<f64>>,
}

impl PaddedFft3 {
    /// Plans transforms of shape `m` (each at least 1).
    pub fn new(m: [usize; 3]) -> Self {
        let r2c = RealFftPlanner::<f64>::new().plan_fft_forward(m[2]);
        let mut planner = FftPlanner::<f64>::new();
        let c1 = planner.plan_fft_forward(m[1]);
        let c0 = planner.plan_fft_forward(m[0]);
        PaddedFft3 { m, r2c, c1, c0 }
    }

    /// The transform shape.
    pub fn shape(&self) -> [usize; 3] {
        self.m
    }

    /// Shape of the half spectrum: `[m0, m1, m2/2 + 1]`.
    pub fn spectrum_shape(&self) -> [usize; 3] {
        [self.m[0], self.m[1], self.m[2] / 2 + 1]
    }

    /// Half spectrum of `input` (shape `n ≤ m` per axis) zero-padded to the transform shape.
    ///
    /// # Panics
    /// If the input is larger than the transform along some axis (a caller bug, not an input error).
    pub fn forward(&self, input: ArrayView3<f64>, par: Parallelism) -> Array3<Complex64> {
        let n = [input.shape()[0], input.shape()[1], input.shape()[2]];
        assert!(n.iter().zip(&self.m).all(|(n, m)| n <= m), "input {n:?} larger than transform {:?}", self.m);
        let [m0, m1, h2] = self.spectrum_shape();
        let mut out = Array3::<Complex64>::zeros((m0, m1, h2));

        // Last axis, then the middle one, slab by slab (slabs i0 ≥ n0 stay zero).
        let slabs = out.axis_iter_mut(Axis(0)).take(n[0]).enumerate().collect::<Vec<_>>();
        par.for_each_init(
            slabs,
            || SlabScratch::new(self),
            |s, (i0, mut slab)| {
                for i1 in 0..n[1] {
                    s.real[..n[2]].iter_mut().zip(input.slice(ndarray::s![i0, i1, ..])).for_each(|(d, &v)| *d = v);
                    s.real[n[2]..].fill(0.0);
                    let row = slab.row_mut(i1).into_slice().expect("spectrum rows are contiguous");
                    self.r2c
                        .process_with_scratch(&mut s.real, row, &mut s.r2c_scratch)
                        .expect("buffer lengths come from the plan");
                }
                transform_columns(&mut slab, n[1], self.c1.as_ref(), &mut s.lines, &mut s.fft_scratch);
            },
        );

        // First axis: for each i1, the plane (k0, k2) with rows i0 ≥ n0 known to be zero.
        let planes = out.axis_iter_mut(Axis(1)).collect::<Vec<_>>();
        par.for_each_init(
            planes,
            || SlabScratch::new(self),
            |s, mut plane| transform_columns(&mut plane, n[0], self.c0.as_ref(), &mut s.lines, &mut s.fft_scratch),
        );
        out
    }

    /// Bytes [`PaddedFft3::plane_blocks`] holds at once for `inputs` inputs of shape `n` with
    /// `workers` threads: the row transforms, and each worker's planes and scratch.
    pub fn plane_block_bytes(&self, n: [usize; 3], inputs: usize, workers: usize) -> u64 {
        let complex = std::mem::size_of::<Complex64>() as u64;
        let [m0, m1, h2] = self.spectrum_shape().map(|x| x as u64);
        let rows = (n[0] * n[1]) as u64 * h2 * complex * inputs as u64;
        let per_worker = (PLANE_BLOCK as u64 * m0 * m1 * inputs as u64 + BLOCK as u64 * m0.max(m1)) * complex;
        rows + workers.max(1) as u64 * per_worker
    }

    /// The half spectra of `inputs` (each of shape `n ≤ m` per axis, all alike, zero-padded to
    /// the transform shape), handed to `f` a block of at most [`PLANE_BLOCK`] `k2` planes at a
    /// time: `f(k2s, planes)` gets, per input, an array `[k2 − k2s.start, k0, k1]`. Returns the
    /// results of `f` in block order. The values are bitwise those of [`PaddedFft3::forward`]
    /// (the same one-dimensional transforms of the same data); memory is the rows' transforms
    /// along the last axis plus one block per worker ([`PaddedFft3::plane_block_bytes`]).
    ///
    /// # Panics
    /// If the inputs differ in shape or one is larger than the transform (caller bugs).
    pub fn plane_blocks<R, F>(&self, inputs: &[ArrayView3<f64>], par: Parallelism, f: F) -> Result<Vec<R>, OutOfMemory>
    where
        R: Send,
        F: Fn(Range<usize>, &[ArrayView3<Complex64>]) -> R + Send + Sync,
    {
        let Some(first) = inputs.first() else { return Ok(Vec::new()) };
        let n = [first.shape()[0], first.shape()[1], first.shape()[2]];
        assert!(inputs.iter().all(|x| x.shape() == n), "inputs of one shape");
        assert!(n.iter().zip(&self.m).all(|(n, m)| n <= m), "input {n:?} larger than transform {:?}", self.m);
        let [m0, m1, h2] = self.spectrum_shape();
        let rows = inputs.iter().map(|x| self.row_transforms(*x, par)).collect::<Result<Vec<_>, _>>()?;

        let blocks: Vec<Range<usize>> = (0..h2).step_by(PLANE_BLOCK).map(|k| k..(k + PLANE_BLOCK).min(h2)).collect();
        let mut results: Vec<Option<R>> = blocks.iter().map(|_| None).collect();
        let failure: Mutex<Option<OutOfMemory>> = Mutex::new(None);
        let init = || -> Option<PlaneScratch> {
            let planes = (0..inputs.len())
                .map(|_| try_filled(PLANE_BLOCK * m0 * m1, Complex64::default(), "the planes of a Fourier transform"))
                .collect::<Result<Vec<_>, _>>()
                .map_err(|e| *failure.lock().unwrap_or_else(|p| p.into_inner()) = Some(e))
                .ok()?;
            let planes = planes.into_iter().map(|v| Array3::from_shape_vec((PLANE_BLOCK, m0, m1), v).expect("sized above")).collect();
            let scratch = self.c0.get_inplace_scratch_len().max(self.c1.get_inplace_scratch_len());
            Some((planes, vec![Complex64::default(); BLOCK * m0.max(m1)], vec![Complex64::default(); scratch]))
        };
        par.for_each_init(results.iter_mut().zip(&blocks).collect::<Vec<_>>(), init, |state, (slot, k2s)| {
            let Some((planes, lines, scratch)) = state else { return };
            let width = k2s.len();
            for (plane, rows) in planes.iter_mut().zip(&rows) {
                plane.fill(Complex64::default());
                for i0 in 0..n[0] {
                    for i1 in 0..n[1] {
                        let at = (i0 * n[1] + i1) * h2 + k2s.start;
                        for (b, &v) in rows[at..at + width].iter().enumerate() {
                            plane[[b, i0, i1]] = v;
                        }
                    }
                }
                for b in 0..width {
                    let mut p = plane.index_axis_mut(Axis(0), b);
                    // Middle axis: the rows i0 < n0 (contiguous, each zero beyond n1); then the
                    // first axis, whose rows i0 ≥ n0 are zero.
                    let flat = p.as_slice_mut().expect("planes are contiguous");
                    self.c1.process_with_scratch(&mut flat[..n[0] * m1], scratch);
                    transform_columns(&mut p, n[0], self.c0.as_ref(), lines, scratch);
                }
            }
            let views: Vec<ArrayView3<Complex64>> = planes.iter().map(|p| p.slice(ndarray::s![..width, .., ..])).collect();
            *slot = Some(f(k2s.clone(), &views));
        });
        if let Some(e) = failure.into_inner().unwrap_or_else(|p| p.into_inner()) {
            return Err(e);
        }
        Ok(results.into_iter().map(|r| r.expect("every block ran")).collect())
    }

    /// The real-to-complex transforms of the rows of `input` along the last axis, zero-padded
    /// to `m2`: `[n0, n1, m2/2 + 1]`, flat.
    fn row_transforms(&self, input: ArrayView3<f64>, par: Parallelism) -> Result<Vec<Complex64>, OutOfMemory> {
        let [n0, n1, n2] = [input.shape()[0], input.shape()[1], input.shape()[2]];
        let h2 = self.m[2] / 2 + 1;
        let mut rows = try_filled(n0 * n1 * h2, Complex64::default(), "the row transforms of a Fourier transform")?;
        let slabs = rows.chunks_mut(n1 * h2).enumerate().collect::<Vec<_>>();
        par.for_each_init(
            slabs,
            || (self.r2c.make_input_vec(), self.r2c.make_scratch_vec()),
            |(real, r2c_scratch), (i0, slab)| {
                for (i1, row) in slab.chunks_mut(h2).enumerate() {
                    real[..n2].iter_mut().zip(input.slice(ndarray::s![i0, i1, ..])).for_each(|(d, &v)| *d = v);
                    real[n2..].fill(0.0);
                    self.r2c.process_with_scratch(real, row, r2c_scratch).expect("buffer lengths come from the plan");
                }
            },
        );
        Ok(rows)
    }

    /// The first-axis plan (for the kernel, which builds its own spectrum).
    pub(crate) fn first_axis(&self) -> &dyn Fft<f64> {
        self.c0.as_ref()
    }

    /// The middle-axis plan.
    pub(crate) fn middle_axis(&self) -> &dyn Fft<f64> {
        self.c1.as_ref()
    }

    /// The last-axis (real-to-complex) plan.
    pub(crate) fn last_axis(&self) -> &dyn RealToComplex<f64> {
        self.r2c.as_ref()
    }
}

/// One worker's buffers of [`PaddedFft3::plane_blocks`]: a block of planes per input, the
/// gathered columns and the transforms' scratch.
type PlaneScratch = (Vec<Array3<Complex64>>, Vec<Complex64>, Vec<Complex64>);

/// Per-worker buffers.
struct SlabScratch {
    real: Vec<f64>,
    r2c_scratch: Vec<Complex64>,
    lines: Vec<Complex64>,
    fft_scratch: Vec<Complex64>,
}

impl SlabScratch {
    fn new(plan: &PaddedFft3) -> Self {
        let longest = plan.m[0].max(plan.m[1]);
        let scratch = plan.c0.get_inplace_scratch_len().max(plan.c1.get_inplace_scratch_len());
        SlabScratch {
            real: plan.r2c.make_input_vec(),
            r2c_scratch: plan.r2c.make_scratch_vec(),
            lines: vec![Complex64::default(); BLOCK * longest],
            fft_scratch: vec![Complex64::default(); scratch],
        }
    }
}

/// In-place transform of every column of `view` (rows = transform axis), where rows `nonzero..`
/// are known to be zero on entry.
pub(crate) fn transform_columns(
    view: &mut ArrayViewMut2<Complex64>,
    nonzero: usize,
    fft: &dyn Fft<f64>,
    lines: &mut [Complex64],
    scratch: &mut [Complex64],
) {
    let (rows, cols) = view.dim();
    debug_assert_eq!(rows, fft.len());
    let mut c0 = 0;
    while c0 < cols {
        let width = BLOCK.min(cols - c0);
        let buf = &mut lines[..width * rows];
        buf.fill(Complex64::default());
        for r in 0..nonzero {
            for b in 0..width {
                buf[b * rows + r] = view[[r, c0 + b]];
            }
        }
        fft.process_with_scratch(buf, scratch);
        for r in 0..rows {
            for b in 0..width {
                view[[r, c0 + b]] = buf[b * rows + r];
            }
        }
        c0 += width;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    /// Slow exact DFT of the zero-padded input at one frequency.
    fn dft_at(x: &Array3<f64>, m: [usize; 3], k: [usize; 3]) -> Complex64 {
        let mut s = Complex64::default();
        for ((j0, j1, j2), &v) in x.indexed_iter() {
            let phase = -2.0
                * PI
                * (k[0] as f64 * j0 as f64 / m[0] as f64
                    + k[1] as f64 * j1 as f64 / m[1] as f64
                    + k[2] as f64 * j2 as f64 / m[2] as f64);
            s += Complex64::from_polar(v, phase);
        }
        s
    }

    #[test]
    fn matches_slow_dft_on_padded_odd_and_even_shapes() {
        for (n, m) in [([3, 4, 5], [6, 7, 10]), ([2, 2, 2], [2, 3, 4]), ([5, 1, 3], [9, 2, 5])] {
            let x = Array3::from_shape_fn(n, |(a, b, c)| ((a * 7 + b * 3 + c) as f64 * 0.61).sin() + 0.1 * a as f64);
            let plan = PaddedFft3::new(m);
            for par in [Parallelism::Sequential, Parallelism::Rayon] {
                let spec = plan.forward(x.view(), par);
                assert_eq!(spec.dim(), (m[0], m[1], m[2] / 2 + 1));
                for ((k0, k1, k2), got) in spec.indexed_iter() {
                    let want = dft_at(&x, m, [k0, k1, k2]);
                    let tol = 1e-12 * (n.iter().product::<usize>() as f64);
                    assert!((got - want).norm() < tol, "{n:?}->{m:?} at {k0},{k1},{k2}: {got} vs {want}");
                }
            }
        }
    }

    #[test]
    fn plane_blocks_deliver_the_forward_spectrum_bitwise() {
        for (n, m) in [([3, 4, 5], [6, 7, 10]), ([5, 1, 3], [9, 2, 5]), ([4, 6, 20], [8, 12, 41])] {
            let x = Array3::from_shape_fn(n, |(a, b, c)| ((a * 5 + b * 3 + c) as f64 * 0.37).cos() - 0.2 * b as f64);
            let y = x.mapv(|v| v * v - 0.1);
            let plan = PaddedFft3::new(m);
            let (fx, fy) = (plan.forward(x.view(), Parallelism::Sequential), plan.forward(y.view(), Parallelism::Sequential));
            for par in [Parallelism::Sequential, Parallelism::Rayon] {
                let seen = plan
                    .plane_blocks(&[x.view(), y.view()], par, |k2s, planes| {
                        for (p, k2) in k2s.clone().enumerate() {
                            for k0 in 0..m[0] {
                                for k1 in 0..m[1] {
                                    assert_eq!(planes[0][[p, k0, k1]], fx[[k0, k1, k2]], "{n:?} at {k0},{k1},{k2}");
                                    assert_eq!(planes[1][[p, k0, k1]], fy[[k0, k1, k2]]);
                                }
                            }
                        }
                        k2s
                    })
                    .unwrap();
                // Every plane once, in order.
                assert_eq!(seen.into_iter().flatten().collect::<Vec<_>>(), (0..m[2] / 2 + 1).collect::<Vec<_>>());
            }
        }
    }

    #[test]
    fn wide_columns_cross_several_blocks() {
        // More than BLOCK columns in the half spectrum exercises the block loop's tail.
        let n = [3, 2, 40];
        let m = [4, 3, 41];
        let x = Array3::from_shape_fn(n, |(a, b, c)| (a as f64 - b as f64) * 0.3 + (c as f64 * 0.2).cos());
        let spec = PaddedFft3::new(m).forward(x.view(), Parallelism::Sequential);
        for k in [[0, 0, 0], [1, 2, 17], [3, 1, 20], [2, 0, 16]] {
            let got = spec[[k[0], k[1], k[2]]];
            assert!((got - dft_at(&x, m, k)).norm() < 1e-10);
        }
    }
}
