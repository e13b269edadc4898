//! Free-space Coulomb energies of densities on a uniform grid.
//!
//! For densities `a`, `b` sampled on a grid with cell volume `w`,
//!
//! ```text
//! C[a, b] = ∬ a(r) b(r') / |r − r'| d³r d³r'  ≈  w² Σ_i Σ_j a_i K(i − j) b_j ,
//! J[n]    = ½ C[n, n]                          (Hartree self-repulsion, hartree)
//! ```
//!
//! with the lattice kernel `K` of [`kernel`]: the long-range part of a Gaussian split of 1/r
//! sampled in real space, the singular short-range part applied through its analytic Fourier
//! transform. The boundary conditions are those of an isolated system (no periodic images): the
//! grid is zero-padded to at least `2n − 1` points per axis so that the circular convolution of
//! the FFT equals the aperiodic one. By Parseval, `C = (w²/M) Σ_k K̂(k) Re[â(k) b̂*(k)]` with M the
//! number of padded points, so one forward transform per density suffices and no potential is
//! ever formed. The kernel spectrum depends only on the grid's steps and shape: build one
//! [`HartreeSolver`] per grid and reuse it for every density on that grid.
//!
//! Memory (8-byte values; `P = m0·m1·(m2/2+1)` half-spectrum points, about 4 per grid point):
//! the kernel spectrum holds `8P` bytes for the solver's life, and its set-up nothing of that
//! size besides (see [`kernel`]); a density's transform is consumed a few planes at a time
//! ([`fft3::PaddedFft3::plane_blocks`]), so `J` holds the rows' transforms along the last axis
//! (16 bytes per grid point, about) and a few planes per thread, never a whole spectrum.
//! [`HartreeSolver::kernel_bytes`] and [`HartreeSolver::transform_bytes`] say how much.
//!
//! Accuracy: for a density that is resolved by the grid (negligible Fourier content beyond the
//! grid's Nyquist frequency) and negligible at the box faces, J is exact to near machine
//! precision; the only approximations are the sampling itself and `exp(−π²σ²/4h²) ≈ 2e−10` of
//! aliasing in the long-range kernel (σ = 3h by default). Densities with cusps (1s-like orbitals)
//! are not band-limited and converge with grid spacing instead.
//!
//! [`direct`] is the slow exact reference: the same lattice kernel, summed pair by pair.

pub mod direct;
pub mod fft3;
pub(crate) mod kernel;

use crate::grid::GridGeometry;
use crate::memory::OutOfMemory;
use crate::par::Parallelism;
use fft3::PaddedFft3;
use ndarray::{Array3, ArrayView3, Axis};
use rustfft::num_complex::Complex64;
use std::ops::Range;
use thiserror::Error;

/// Settings of the free-space Coulomb solver.
#[derive(Clone, Debug, PartialEq)]
pub struct HartreeParams {
    /// Width σ of the Gaussian split as a multiple of the longest grid step (dimensionless).
    /// Larger values reduce aliasing of the smooth part (error ≈ exp(−π²f²/4)) at no cost.
    pub split_factor: f64,
}

impl Default for HartreeParams {
    fn default() -> Self {
        HartreeParams { split_factor: 3.0 }
    }
}

/// Misuse of a solver.
#[derive(Debug, Error, Clone, PartialEq)]
pub enum PoissonError {
    /// The density does not have one value per grid point.
    #[error("density has {found} values but the grid has {expected} points")]
    LengthMismatch {
        /// Points of the solver's grid.
        expected: usize,
        /// Values passed in.
        found: usize,
    },
    /// A buffer of the solver could not be allocated.
    #[error(transparent)]
    OutOfMemory(#[from] OutOfMemory),
}

/// Planned free-space Coulomb solver for one grid (steps and shape; the origin is irrelevant).
pub struct HartreeSolver {
    geometry: GridGeometry,
    sigma: f64,
    fft: PaddedFft3,
    /// Real kernel spectrum on the padded grid, half spectrum, 1/bohr.
    kernel: Array3<f64>,
}

impl HartreeSolver {
    /// Plans the transforms and computes the kernel spectrum (the expensive step: one FFT of the
    /// padded grid); fails only when its memory cannot be had.
    pub fn new(geometry: &GridGeometry, params: &HartreeParams, par: Parallelism) -> Result<Self, PoissonError> {
        let sigma = params.split_factor * geometry.max_step();
        let m = Self::padded_shape_for(geometry, params);
        let kernel = kernel::spectrum(geometry, m, sigma, par)?;
        Ok(HartreeSolver { geometry: geometry.clone(), sigma, fft: PaddedFft3::new(m), kernel })
    }

    /// Shape of the zero-padded transform grid a solver for `geometry` uses.
    pub fn padded_shape_for(geometry: &GridGeometry, params: &HartreeParams) -> [usize; 3] {
        let sigma = params.split_factor * geometry.max_step();
        let spacing = geometry.plane_spacings();
        [0, 1, 2].map(|a| kernel::padded_len(geometry.shape[a], spacing[a], sigma))
    }

    /// Bytes a solver for `geometry` holds (its kernel spectrum), and the most its set-up holds
    /// at once with `workers` threads, `(kept, set-up peak)`.
    pub fn kernel_bytes(geometry: &GridGeometry, params: &HartreeParams, workers: usize) -> (u64, u64) {
        let m = Self::padded_shape_for(geometry, params);
        let kept = (m[0] * m[1] * (m[2] / 2 + 1)) as u64 * 8;
        (kept, kernel::spectrum_bytes(m, workers))
    }

    /// Bytes [`HartreeSolver::self_energy`] holds at once for a density on `geometry` with
    /// `workers` threads (twice that, about, for [`HartreeSolver::interaction`]).
    pub fn transform_bytes(geometry: &GridGeometry, params: &HartreeParams, workers: usize) -> u64 {
        PaddedFft3::new(Self::padded_shape_for(geometry, params)).plane_block_bytes(geometry.shape, 1, workers)
    }

    /// The grid this solver was built for.
    pub fn geometry(&self) -> &GridGeometry {
        &self.geometry
    }

    /// Shape of the zero-padded transform grid.
    pub fn padded_shape(&self) -> [usize; 3] {
        self.fft.shape()
    }

    /// Width σ of the Gaussian split, bohr.
    pub fn split_width(&self) -> f64 {
        self.sigma
    }

    /// Hartree self-repulsion `J[n] = ½ ∬ n(r) n(r')/|r − r'|` of a density given per grid point
    /// (electrons/bohr³), hartree.
    pub fn self_energy(&self, density: &[f64], par: Parallelism) -> Result<f64, PoissonError> {
        let view = self.view(density)?;
        let sums = self.fft.plane_blocks(&[view], par, |k2s, planes| self.block_sum(k2s, &planes[0], &planes[0]))?;
        Ok(0.5 * self.finish(&sums))
    }

    /// Coulomb interaction `∬ a(r) b(r')/|r − r'|` of two densities on the grid, hartree.
    pub fn interaction(&self, a: &[f64], b: &[f64], par: Parallelism) -> Result<f64, PoissonError> {
        let (va, vb) = (self.view(a)?, self.view(b)?);
        let sums = self.fft.plane_blocks(&[va, vb], par, |k2s, planes| self.block_sum(k2s, &planes[0], &planes[1]))?;
        Ok(self.finish(&sums))
    }

    fn view<'a>(&self, density: &'a [f64]) -> Result<ArrayView3<'a, f64>, PoissonError> {
        let expected = self.geometry.len();
        if density.len() != expected {
            return Err(PoissonError::LengthMismatch { expected, found: density.len() });
        }
        Ok(ArrayView3::from_shape(self.geometry.shape, density).expect("length checked above"))
    }

    /// `Σ_k K̂ Re(â b̂*)` over the planes `k2s` of the half spectrum (`a`, `b` indexed
    /// `[k2 − k2s.start, k0, k1]`), each plane counted for its mirror image too where it has one
    /// (`0 < k2 < m2/2`).
    fn block_sum(&self, k2s: Range<usize>, a: &ArrayView3<Complex64>, b: &ArrayView3<Complex64>) -> f64 {
        let m = self.fft.shape();
        let kernel = self.kernel.as_slice().expect("the kernel is contiguous");
        let h2 = m[2] / 2 + 1;
        let mut s = 0.0;
        for (p, k2) in k2s.enumerate() {
            let weight = if k2 == 0 || 2 * k2 == m[2] { 1.0 } else { 2.0 };
            let (pa, pb) = (a.index_axis(Axis(0), p), b.index_axis(Axis(0), p));
            let (pa, pb) = (pa.as_slice().expect("planes are contiguous"), pb.as_slice().expect("planes are contiguous"));
            // Plane points in (k0, k1) order; the kernel's value of each is h2 apart.
            let plane: f64 = pa.iter().zip(pb).zip(kernel[k2..].iter().step_by(h2)).map(|((x, y), k)| k * (x.re * y.re + x.im * y.im)).sum();
            s += weight * plane;
        }
        s
    }

    /// `(w²/M)` times the block sums, added in block order (fixed, whatever the threads).
    fn finish(&self, sums: &[f64]) -> f64 {
        let m = self.fft.shape();
        let w = self.geometry.voxel_volume();
        let total_points = (m[0] * m[1] * m[2]) as f64;
        w * w / total_points * sums.iter().sum::<f64>()
    }
}

#[cfg(test)]
mod tests;
