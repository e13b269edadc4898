//! Slow exact reference for the FFT solver: the same lattice kernel, summed pair by pair.
//!
//! `C[a, b] = w² Σ_i Σ_j a_i K(i − j) b_j` with `K(d) = erf(|R_d|/σ)/|R_d| + K_sr(d)`, where the
//! short-range lattice kernel `K_sr(d) = (1/M) Σ_k S(k) cos(2π k·d/M)` is synthesised from its
//! spectrum by an explicit (slow) inverse DFT over the padded grid. Cost O(N² + D·M) for N points,
//! D = (2n−1)³ displacements and M padded points: use on tiny grids only. Nothing here shares code
//! with the FFT path except the two kernel formulas and the padded shape.

use super::kernel::{displacement, long_range, short_range_spectrum, signed, wave_number_sq};
use super::HartreeSolver;
use crate::grid::dot;
use std::f64::consts::PI;

/// Lattice kernel `K(d)` for every displacement `|d_a| < n_a`, 1/bohr, indexed by `d + n − 1`.
fn lattice_kernel(solver: &HartreeSolver) -> (Vec<f64>, [usize; 3]) {
    let g = solver.geometry();
    let (n, m, sigma) = (g.shape, solver.padded_shape(), solver.split_width());
    let dual = g.dual_axes();
    let inv_w = 1.0 / g.voxel_volume();
    // Short-range spectrum on the full padded grid; a frequency outside the stored half
    // spectrum (k2 > m2/2) takes the value of its mirror image, as the FFT path implies.
    let mut spectrum = Vec::with_capacity(m.iter().product());
    for k0 in 0..m[0] {
        for k1 in 0..m[1] {
            for k2 in 0..m[2] {
                let k = if 2 * k2 > m[2] { [(m[0] - k0) % m[0], (m[1] - k1) % m[1], m[2] - k2] } else { [k0, k1, k2] };
                let f = [signed(k[0], m[0]), signed(k[1], m[1]), k[2] as isize];
                spectrum.push(([k0, k1, k2], short_range_spectrum(wave_number_sq(&dual, m, f), sigma) * inv_w));
            }
        }
    }
    let span = n.map(|x| 2 * x - 1);
    let total = (m[0] * m[1] * m[2]) as f64;
    let mut out = Vec::with_capacity(span.iter().product());
    for d0 in 0..span[0] {
        for d1 in 0..span[1] {
            for d2 in 0..span[2] {
                let d = [d0 as isize - n[0] as isize + 1, d1 as isize - n[1] as isize + 1, d2 as isize - n[2] as isize + 1];
                let sr: f64 = spectrum
                    .iter()
                    .map(|(k, s)| {
                        let phase = (0..3).map(|a| k[a] as f64 * d[a] as f64 / m[a] as f64).sum::<f64>();
                        s * (2.0 * PI * phase).cos()
                    })
                    .sum::<f64>()
                    / total;
                let r = displacement(&g.axes, d);
                out.push(long_range(dot(&r, &r).sqrt(), sigma) + sr);
            }
        }
    }
    (out, span)
}

/// `∬ a(r) b(r')/|r − r'|` by the direct double sum with the solver's lattice kernel, hartree.
///
/// # Panics
/// If `a` or `b` does not have one value per grid point (this is a test reference).
pub fn interaction(solver: &HartreeSolver, a: &[f64], b: &[f64]) -> f64 {
    let g = solver.geometry();
    let n = g.shape;
    assert!(a.len() == g.len() && b.len() == g.len(), "one value per grid point");
    let (kernel, span) = lattice_kernel(solver);
    let index = |i: usize| [i / (n[1] * n[2]), (i / n[2]) % n[1], i % n[2]];
    let mut s = 0.0;
    for (i, &ai) in a.iter().enumerate() {
        let p = index(i);
        for (j, &bj) in b.iter().enumerate() {
            let q = index(j);
            let d = [0, 1, 2].map(|x| p[x] + n[x] - 1 - q[x]);
            s += ai * kernel[(d[0] * span[1] + d[1]) * span[2] + d[2]] * bj;
        }
    }
    let w = g.voxel_volume();
    w * w * s
}
