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
use crate::memory::{OutOfMemory, try_filled};
use crate::par::Parallelism;
use ndarray::{Array3, ArrayViewMut2, ArrayViewMut3, Axis};
use rustfft::num_complex::Complex64;
use std::f64::consts::PI;
use std::sync::Mutex;

use super::fft3::{BLOCK, PaddedFft3, transform_columns};

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
/// `K̂ = DFT[erf(|R|/σ)/|R|] + FT[erfc(r/σ)/r](k)/w`, with w the cell volume. The long-range
/// samples are symmetrised, `(f(d) + f(−d))/2` with `−d` taken index by index modulo `m`: that
/// changes only displacements with a component at an axis's Nyquist index `m/2`, which never
/// occur between two grid points (`m ≥ 2n − 1`), and makes the transform real.
///
/// Memory: the spectrum itself and two rows more, nothing of the padded grid's size besides.
/// A real sequence that is even, `g(−d) = g(d)`, has first-axis slabs whose two-dimensional
/// transforms satisfy `S_{−i0} = conj(S_{i0})`; so only the slabs `i0 ≤ m0/2` are transformed
/// (over the last two axes, their rows generated on the fly), their real and imaginary parts
/// stored as two rows each in the output's own buffer, and each first-axis column rebuilt from
/// them, transformed and written back in place as the real spectrum.
pub(crate) fn spectrum(geometry: &GridGeometry, m: [usize; 3], sigma: f64, par: Parallelism) -> Result<Array3<f64>, OutOfMemory> {
    let axes = geometry.axes;
    let fft = PaddedFft3::new(m);
    let h2 = m[2] / 2 + 1;
    let half = m[0] / 2 + 1;
    let slab = m[1] * h2;
    let mut buf = try_filled(2 * half * slab, 0.0f64, "the Coulomb kernel")?;

    // The symmetrised long-range kernel at index `i` (the mirror only where some axis sits at
    // its Nyquist index; elsewhere f(−d) is bitwise f(d), the products merely negated).
    let value = |i: [usize; 3]| {
        let at = |i: [usize; 3]| {
            let r = displacement(&axes, [0, 1, 2].map(|a| signed(i[a], m[a])));
            long_range(dot(&r, &r).sqrt(), sigma)
        };
        let v = at(i);
        if (0..3).any(|a| 2 * i[a] == m[a]) { 0.5 * (v + at([0, 1, 2].map(|a| (m[a] - i[a]) % m[a]))) } else { v }
    };
    let scratch_len = fft.first_axis().get_inplace_scratch_len().max(fft.middle_axis().get_inplace_scratch_len());
    let failure: Mutex<Option<OutOfMemory>> = Mutex::new(None);
    // Slabs i0 ≤ m0/2: rows along the last axis, then the middle axis; re and im as two rows.
    let chunks = buf.chunks_mut(2 * slab).enumerate().collect::<Vec<_>>();
    par.for_each_init(
        chunks,
        || match try_filled(slab, Complex64::default(), "a slab of the Coulomb kernel") {
            Ok(s) => Some((s, fft.last_axis().make_input_vec(), fft.last_axis().make_scratch_vec(), vec![Complex64::default(); BLOCK * m[1]], vec![Complex64::default(); scratch_len])),
            Err(e) => {
                *failure.lock().unwrap_or_else(|p| p.into_inner()) = Some(e);
                None
            }
        },
        |state, (i0, rows)| {
            let Some((spec, real, r2c_scratch, lines, scratch)) = state else { return };
            for i1 in 0..m[1] {
                real.iter_mut().enumerate().for_each(|(i2, v)| *v = value([i0, i1, i2]));
                fft.last_axis().process_with_scratch(real, &mut spec[i1 * h2..(i1 + 1) * h2], r2c_scratch).expect("buffer lengths come from the plan");
            }
            let mut view = ArrayViewMut2::from_shape((m[1], h2), &mut spec[..]).expect("slab shape");
            transform_columns(&mut view, m[1], fft.middle_axis(), lines, scratch);
            let (re, im) = rows.split_at_mut(slab);
            for ((r, i), v) in re.iter_mut().zip(im.iter_mut()).zip(spec.iter()) {
                *r = v.re;
                *i = v.im;
            }
        },
    );
    if let Some(e) = failure.into_inner().unwrap_or_else(|p| p.into_inner()) {
        return Err(e);
    }

    // First axis, column by column in place: S_{i0} for i0 < half as stored, conj(S_{m0−i0})
    // above; the real part of the transform plus the short-range spectrum goes to rows 0..m0.
    let dual = geometry.dual_axes();
    let inv_w = 1.0 / geometry.voxel_volume();
    let mut grid = ArrayViewMut3::from_shape((2 * half, m[1], h2), &mut buf[..]).expect("kernel buffer shape");
    let planes = grid.axis_iter_mut(Axis(1)).enumerate().collect::<Vec<_>>();
    par.for_each_init(
        planes,
        || (vec![Complex64::default(); BLOCK * m[0]], vec![Complex64::default(); scratch_len]),
        |(lines, scratch), (k1, mut plane)| {
            let mut c0 = 0;
            while c0 < h2 {
                let width = BLOCK.min(h2 - c0);
                let columns = &mut lines[..width * m[0]];
                for (b, col) in columns.chunks_mut(m[0]).enumerate() {
                    for i0 in 0..half.min(m[0]) {
                        col[i0] = Complex64::new(plane[[2 * i0, c0 + b]], plane[[2 * i0 + 1, c0 + b]]);
                    }
                    for i0 in half..m[0] {
                        col[i0] = col[m[0] - i0].conj();
                    }
                }
                fft.first_axis().process_with_scratch(columns, scratch);
                for (b, col) in columns.chunks(m[0]).enumerate() {
                    let k2 = c0 + b;
                    for (k0, x) in col.iter().enumerate() {
                        let k_sq = wave_number_sq(&dual, m, [signed(k0, m[0]), signed(k1, m[1]), k2 as isize]);
                        plane[[k0, k2]] = x.re + short_range_spectrum(k_sq, sigma) * inv_w;
                    }
                }
                c0 += width;
            }
        },
    );
    buf.truncate(m[0] * slab);
    Ok(Array3::from_shape_vec((m[0], m[1], h2), buf).expect("the first m0 rows"))
}

/// Bytes [`spectrum`] holds at once with `workers` threads: the spectrum (two rows more while it
/// is built) and each worker's slab.
pub(crate) fn spectrum_bytes(m: [usize; 3], workers: usize) -> u64 {
    let h2 = (m[2] / 2 + 1) as u64;
    let slab = m[1] as u64 * h2;
    let own = 2 * (m[0] / 2 + 1) as u64 * slab * 8;
    own + workers.max(1) as u64 * (slab * 16 + (BLOCK * m[0].max(m[1])) as u64 * 16 + m[2] as u64 * 24)
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

    /// The kernel as first written: the whole padded grid sampled, transformed, the real part
    /// kept (twice the memory of the padded grid at once; the reference for [`spectrum`]).
    fn spectrum_whole(geometry: &GridGeometry, m: [usize; 3], sigma: f64) -> Array3<f64> {
        let axes = geometry.axes;
        let lr = Array3::from_shape_fn(m, |(i0, i1, i2)| {
            let r = displacement(&axes, [signed(i0, m[0]), signed(i1, m[1]), signed(i2, m[2])]);
            long_range(dot(&r, &r).sqrt(), sigma)
        });
        let lr_hat = PaddedFft3::new(m).forward(lr.view(), Parallelism::Sequential);
        let dual = geometry.dual_axes();
        let inv_w = 1.0 / geometry.voxel_volume();
        Array3::from_shape_fn(lr_hat.dim(), |(k0, k1, k2)| {
            let k_sq = wave_number_sq(&dual, m, [signed(k0, m[0]), signed(k1, m[1]), k2 as isize]);
            lr_hat[[k0, k1, k2]].re + short_range_spectrum(k_sq, sigma) * inv_w
        })
    }

    #[test]
    fn half_the_slabs_give_the_whole_grid_transform() {
        // Odd and even lengths on every axis, orthogonal and sheared steps.
        let sheared = [[0.3, 0.0, 0.0], [0.09, 0.285, 0.0], [0.06, -0.075, 0.27]];
        let orthogonal = [[0.3, 0.0, 0.0], [0.0, 0.25, 0.0], [0.0, 0.0, 0.2]];
        for axes in [orthogonal, sheared] {
            for m in [[8, 9, 10], [7, 6, 5], [12, 12, 12], [1, 4, 3]] {
                let g = GridGeometry::new([0.0; 3], axes, m.map(|x: usize| x.div_ceil(2))).unwrap();
                let sigma = 3.0 * g.max_step();
                let want = spectrum_whole(&g, m, sigma);
                let largest = want.iter().fold(0.0f64, |a, v| a.max(v.abs()));
                for par in [Parallelism::Sequential, Parallelism::Rayon] {
                    let got = spectrum(&g, m, sigma, par).unwrap();
                    assert_eq!(got.dim(), want.dim());
                    // Round-off of an M-point transform: ε·log₂M times the largest term, with a
                    // margin of 64.
                    let tol = 64.0 * f64::EPSILON * (m.iter().product::<usize>() as f64).log2() * largest;
                    for ((k, a), b) in got.indexed_iter().zip(want.iter()) {
                        assert!((a - b).abs() <= tol, "{m:?} {axes:?} at {k:?}: {a} vs {b}");
                    }
                }
            }
        }
    }

    #[test]
    fn padding_separates_images() {
        assert_eq!(padded_len(128, 0.15, 0.45), 256);
        // Tiny grids pad further so that the short-range kernel does not wrap around.
        assert!(padded_len(4, 0.2, 0.6) >= 3 + 18);
    }
}
