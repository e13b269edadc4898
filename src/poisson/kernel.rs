//! The Coulomb kernel of the free-space solver, split at a Gaussian width σ.
//!
//! `1/r = erf(r/σ)/r + erfc(r/σ)/r`. The long-range part is smooth, so it is sampled in real space
//! at every lattice displacement of the zero-padded grid and its discrete convolution with a
//! resolved density is an accurate (trapezoid-rule) quadrature of the continuous one. The
//! short-range part carries the 1/r singularity; it is applied through its analytic Fourier
//! transform `4π/k² · (1 − exp(−k²σ²/4))` (finite at k = 0, where it equals πσ²), which treats the
//! density as band-limited instead of sampling the singular kernel. This is the Gaussian splitting
//! of the Coulomb operator familiar from Ewald sums (common practice).

use crate::grid::{GridGeometry, dot};
use crate::par::Parallelism;
use ndarray::{Array3, Axis};
use std::f64::consts::PI;

use super::fft3::PaddedFft3;

/// Long-range part `erf(r/σ)/r` of the Coulomb kernel, 1/bohr (`2/(σ√π)` at r = 0).
pub(crate) fn long_range(r: f64, sigma: f64) -> f64 {
    if r == 0.0 { 2.0 / (sigma * PI.sqrt()) } else { libm::erf(r / sigma) / r }
}

/// Fourier transform of the short-range part `erfc(r/σ)/r` at |k|² = `k2` (1/bohr²), bohr².
pub(crate) fn short_range_spectrum(k2: f64, sigma: f64) -> f64 {
    let x = 0.25 * k2 * sigma * sigma;
    // expm1 keeps 1 − e^{−x} accurate for small x.
    if x == 0.0 { PI * sigma * sigma } else { 4.0 * PI / k2 * (-(-x).exp_m1()) }
}

/// Index `i` of a periodic axis of length `m` as a signed offset in `(−m/2, m/2]`.
pub(crate) fn signed(i: usize, m: usize) -> isize {
    if 2 * i <= m { i as isize } else { i as isize - m as isize }
}

/// Cartesian vector of the lattice displacement `d` (in grid steps), bohr.
pub(crate) fn displacement(axes: &[[f64; 3]; 3], d: [isize; 3]) -> [f64; 3] {
    let mut r = [0.0; 3];
    for (a, &da) in axes.iter().zip(&d) {
        for k in 0..3 {
            r[k] += da as f64 * a[k];
        }
    }
    r
}

/// |k|² of the frequency with signed indices `f` on a padded grid of shape `m`, 1/bohr².
pub(crate) fn wave_number_sq(dual: &[[f64; 3]; 3], m: [usize; 3], f: [isize; 3]) -> f64 {
    let mut k = [0.0; 3];
    for a in 0..3 {
        let c = 2.0 * PI * f[a] as f64 / m[a] as f64;
        for x in 0..3 {
            k[x] += c * dual[a][x];
        }
    }
    dot(&k, &k)
}

/// Smallest integer ≥ `n` with no prime factor above 7 (fast FFT lengths).
pub(crate) fn next_smooth(n: usize) -> usize {
    let mut m = n.max(1);
    loop {
        let mut r = m;
        for p in [2, 3, 5, 7] {
            while r % p == 0 {
                r /= p;
            }
        }
        if r == 1 {
            return m;
        }
        m += 1;
    }
}

/// Padded length of an axis with `n` points: at least `2n − 1`, so that every displacement
/// between two grid points maps to its own padded index (Hockney's zero padding), and long
/// enough that the periodic images of the short-range kernel lie beyond 6σ (erfc(6) ≈ 2e−17).
pub(crate) fn padded_len(n: usize, plane_spacing: f64, sigma: f64) -> usize {
    let images = n - 1 + (6.0 * sigma / plane_spacing).ceil() as usize;
    next_smooth((2 * n - 1).max(images))
}

/// Real spectrum `K̂` of the lattice kernel on the padded grid `m` (half spectrum, shape
/// `[m0, m1, m2/2+1]`), scaled so that `Σ_j w K(i − j) n_j` is the potential, 1/bohr.
///
/// `K̂ = DFT[erf(|R|/σ)/|R|] + FT[erfc(r/σ)/r](k)/w`, with w the cell volume. Only the real part of
/// the long-range transform is kept: that symmetrises the kernel on displacements that never
/// occur between two grid points and changes nothing else.
pub(crate) fn spectrum(geometry: &GridGeometry, m: [usize; 3], sigma: f64, par: Parallelism) -> Array3<f64> {
    let axes = geometry.axes;
    let mut lr = Array3::<f64>::zeros(m);
    let slabs = lr.axis_iter_mut(Axis(0)).enumerate().collect::<Vec<_>>();
    par.for_each_init(
        slabs,
        || (),
        |_, (i0, mut slab)| {
            for ((i1, i2), v) in slab.indexed_iter_mut() {
                let r = displacement(&axes, [signed(i0, m[0]), signed(i1, m[1]), signed(i2, m[2])]);
                *v = long_range(dot(&r, &r).sqrt(), sigma);
            }
        },
    );
    let lr_hat = PaddedFft3::new(m).forward(lr.view(), par);
    drop(lr);

    let dual = geometry.dual_axes();
    let inv_w = 1.0 / geometry.voxel_volume();
    let mut out = Array3::<f64>::zeros(lr_hat.dim());
    let slabs = out.axis_iter_mut(Axis(0)).zip(lr_hat.axis_iter(Axis(0))).enumerate().collect::<Vec<_>>();
    par.for_each_init(
        slabs,
        || (),
        |_, (k0, (mut slab, lr_slab))| {
            for ((k1, k2), v) in slab.indexed_iter_mut() {
                let f = [signed(k0, m[0]), signed(k1, m[1]), k2 as isize];
                let k_sq = wave_number_sq(&dual, m, f);
                *v = lr_slab[[k1, k2]].re + short_range_spectrum(k_sq, sigma) * inv_w;
            }
        },
    );
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn smooth_lengths() {
        assert_eq!(next_smooth(1), 1);
        assert_eq!(next_smooth(11), 12);
        assert_eq!(next_smooth(255), 256);
        assert_eq!(next_smooth(127), 128);
        assert_eq!(next_smooth(131), 135);
    }

    #[test]
    fn short_range_spectrum_transforms_back_to_erfc_over_r() {
        // Radial inverse transform f(r) = (1/2π²) ∫ F(k) sin(kr)/(kr) k² dk. The bare 4π/k² tail
        // transforms to 1/r, so integrate F − 4π/k² (which decays like a Gaussian) and add 1/r.
        let sigma = 0.7;
        for r in [0.3, 1.0, 2.5] {
            let (n, kmax) = (100_000, 60.0);
            let dk = kmax / n as f64;
            let s: f64 = (0..n)
                .map(|i| {
                    let k = (i as f64 + 0.5) * dk;
                    (short_range_spectrum(k * k, sigma) - 4.0 * PI / (k * k)) * (k * r).sin() / (k * r) * k * k * dk
                })
                .sum();
            let sr = s / (2.0 * PI * PI) + 1.0 / r;
            let want = libm::erfc(r / sigma) / r;
            assert!((sr - want).abs() < 1e-9, "r={r}: {sr} vs {want}");
            assert!((long_range(r, sigma) + want - 1.0 / r).abs() < 1e-15);
        }
        assert!((short_range_spectrum(1e-20, sigma) - PI * sigma * sigma).abs() < 1e-15);
        assert_eq!(short_range_spectrum(0.0, sigma), PI * sigma * sigma);
    }

    #[test]
    fn padding_separates_images() {
        assert_eq!(padded_len(128, 0.15, 0.45), 256);
        // Tiny grids pad further so that the short-range kernel does not wrap around.
        assert!(padded_len(4, 0.2, 0.6) >= 3 + 18);
    }
}
