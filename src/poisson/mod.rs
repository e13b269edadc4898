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
use crate::par::Parallelism;
use fft3::PaddedFft3;
use ndarray::{Array3, ArrayView3, Axis};
use rustfft::num_complex::Complex64;
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
    /// padded grid).
    pub fn new(geometry: &GridGeometry, params: &HartreeParams, par: Parallelism) -> Self {
        let sigma = params.split_factor * geometry.max_step();
        let spacing = geometry.plane_spacings();
        let m = [0, 1, 2].map(|a| kernel::padded_len(geometry.shape[a], spacing[a], sigma));
        let kernel = kernel::spectrum(geometry, m, sigma, par);
        HartreeSolver { geometry: geometry.clone(), sigma, fft: PaddedFft3::new(m), kernel }
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
        let spec = self.spectrum(density, par)?;
        Ok(0.5 * self.contract(&spec, &spec, par))
    }

    /// Coulomb interaction `∬ a(r) b(r')/|r − r'|` of two densities on the grid, hartree.
    pub fn interaction(&self, a: &[f64], b: &[f64], par: Parallelism) -> Result<f64, PoissonError> {
        let sa = self.spectrum(a, par)?;
        let sb = self.spectrum(b, par)?;
        Ok(self.contract(&sa, &sb, par))
    }

    fn spectrum(&self, density: &[f64], par: Parallelism) -> Result<Array3<Complex64>, PoissonError> {
        let expected = self.geometry.len();
        if density.len() != expected {
            return Err(PoissonError::LengthMismatch { expected, found: density.len() });
        }
        let view = ArrayView3::from_shape(self.geometry.shape, density).expect("length checked above");
        Ok(self.fft.forward(view, par))
    }

    /// `(w²/M) Σ_k K̂ Re(â b̂*)` over the full spectrum, from the half spectrum: frequencies with
    /// `0 < k2 < m2/2` stand for themselves and their mirror images.
    fn contract(
        &self,
        a: &Array3<Complex64>,
        b: &Array3<Complex64>,
        par: Parallelism,
    ) -> f64 {
        let m = self.fft.shape();
        let h2 = m[2] / 2 + 1;
        let weight = |k2: usize| if k2 == 0 || 2 * k2 == m[2] { 1.0 } else { 2.0 };
        let slab_sum = |k0: usize| {
            let (ka, kb, kk) = (a.index_axis(Axis(0), k0), b.index_axis(Axis(0), k0), self.kernel.index_axis(Axis(0), k0));
            let mut s = 0.0;
            for k1 in 0..m[1] {
                for k2 in 0..h2 {
                    let (x, y) = (ka[[k1, k2]], kb[[k1, k2]]);
                    s += weight(k2) * kk[[k1, k2]] * (x.re * y.re + x.im * y.im);
                }
            }
            s
        };
        // One term per slab keeps the sum order fixed whatever the threads.
        let sums = par.map(m[0], slab_sum);
        let w = self.geometry.voxel_volume();
        let total_points = (m[0] * m[1] * m[2]) as f64;
        w * w / total_points * sums.iter().sum::<f64>()
    }
}

#[cfg(test)]
mod tests;
