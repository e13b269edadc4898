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

use crate::par::Parallelism;
use ndarray::{Array3, ArrayView3, ArrayViewMut2, Axis};
use realfft::{RealFftPlanner, RealToComplex};
use rustfft::num_complex::Complex64;
use rustfft::{Fft, FftPlanner};
use std::sync::Arc;

/// Columns gathered at once from a strided axis (16 complex values = four cache lines).
const BLOCK: usize = 16;

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
}

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
fn transform_columns(
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
