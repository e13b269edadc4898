//! Exchange–correlation near the nuclei by local refinement.
//!
//! With the cusps split off, what is left of an orbital near nucleus A is smooth enough to
//! interpolate from the grid points:
//!
//! ```text
//! φ ≈ Σ_B a_B e^{−Z_B r_B} + I[u],      u = φ − Σ_B a_B e^{−Z_B r_B}  (on the grid points)
//! ```
//!
//! (for density files the same with n/f and a_B² e^{−2Z_B r_B}), where I is the product of
//! piecewise Lagrange interpolants of order [`INTERPOLATION_ORDER`] along the grid axes. Inside a
//! smooth window W_A (1 within 4h of A, 0 beyond 8h) the grid sum is replaced by an atom-centred
//! quadrature of this reconstruction, with its exact value and gradient:
//!
//! ```text
//! ΔE_A = Σ_grid w W_A e(n, |∇n|²) − ∫ W_A e(n_rec, |∇n_rec|²)
//! ```
//!
//! is the grid's error near A (grid minus refined); subtracting it from the grid sum corrects
//! it. Unlike an error estimated on the cusp function alone, this sees the orbital's own shape
//! within a grid step of the nucleus, where a valence orbital's radial node bends it away from
//! the cusp. Overlapping windows are harmless: where both apply, the reconstruction and the
//! grid describe the same smooth density, and the grid sum of a smooth windowed density is
//! accurate.

use super::{CuspModel, WINDOW_INNER_STEPS, WINDOW_OUTER_STEPS, distance, index_box, window};
use crate::diagnostics::{Kind, GridOrbital, weighted_sum};
use crate::grid::dot;
use crate::molgrid::{angular_rule, rotate, shell_rotation};
use crate::par::Parallelism;
use crate::quadrature::radial_rule;
use crate::xc::Functional;

/// Points per axis of the interpolant of the smooth remainder (even; 6 is fifth order).
const INTERPOLATION_ORDER: usize = 6;
/// Radial points of the atom-centred quadrature.
const RADIAL_POINTS: usize = 60;
/// Order of the angular product rule (Gauss–Legendre in cos θ × 2n-point trapezoid in φ), turned
/// by a different rotation on every radial shell (as on the molecular grids).
const ANGULAR_ORDER: usize = 14;

/// Lagrange weights and their derivatives at `s` for the nodes `first, first + 1, …`.
fn lagrange(s: f64, first: f64) -> ([f64; INTERPOLATION_ORDER], [f64; INTERPOLATION_ORDER]) {
    let x: [f64; INTERPOLATION_ORDER] = std::array::from_fn(|k| first + k as f64);
    let mut value = [0.0; INTERPOLATION_ORDER];
    let mut slope = [0.0; INTERPOLATION_ORDER];
    for k in 0..INTERPOLATION_ORDER {
        let mut l = 1.0;
        for m in (0..INTERPOLATION_ORDER).filter(|&m| m != k) {
            l *= (s - x[m]) / (x[k] - x[m]);
        }
        value[k] = l;
        let mut d = 0.0;
        for m in (0..INTERPOLATION_ORDER).filter(|&m| m != k) {
            let mut p = 1.0 / (x[k] - x[m]);
            for q in (0..INTERPOLATION_ORDER).filter(|&q| q != k && q != m) {
                p *= (s - x[q]) / (x[k] - x[q]);
            }
            d += p;
        }
        slope[k] = d;
    }
    (value, slope)
}

/// The orbital near one nucleus: cusp functions plus the interpolated remainder.
struct Reconstruction<'a> {
    orbital: &'a GridOrbital,
    cusps: &'a [CuspModel],
    /// First grid index of the local box along each axis, and its shape.
    low: [usize; 3],
    shape: [usize; 3],
    /// The remainder u on the local box, k fastest.
    remainder: Vec<f64>,
}

impl<'a> Reconstruction<'a> {
    /// `None` where the grid has too few points around `centre` for the interpolant.
    fn new(orbital: &'a GridOrbital, cusps: &'a [CuspModel], centre: [f64; 3], radius: f64) -> Option<Self> {
        let g = &orbital.geometry;
        let [(l0, h0), (l1, h1), (l2, h2)] = index_box(g, centre, radius + INTERPOLATION_ORDER as f64 * g.max_step());
        let (low, shape) = ([l0, l1, l2], [h0 - l0 + 1, h1 - l1 + 1, h2 - l2 + 1]);
        if shape.iter().any(|&n| n < INTERPOLATION_ORDER) {
            return None;
        }
        let [_, n1, n2] = g.shape;
        let mut remainder = Vec::with_capacity(shape.iter().product());
        for i in l0..=h0 {
            for j in l1..=h1 {
                for k in l2..=h2 {
                    let p = g.point([i, j, k]);
                    let cusp: f64 = cusps.iter().map(|c| cusp_value(orbital.kind, c, distance(p, c.position)).0).sum();
                    remainder.push(orbital.values[(i * n1 + j) * n2 + k] - cusp);
                }
            }
        }
        Some(Reconstruction { orbital, cusps, low, shape, remainder })
    }

    /// Whether `p` lies in the cells of the grid's points (half a step beyond the outer
    /// points): outside, there are no data to rebuild from, and no grid sum to compare with.
    fn inside(&self, p: [f64; 3]) -> bool {
        let g = &self.orbital.geometry;
        let dual = g.dual_axes();
        let rel = [0, 1, 2].map(|x| p[x] - g.origin[x]);
        (0..3).all(|a| {
            let s = dot(&dual[a], &rel);
            s >= -0.5 && s <= g.shape[a] as f64 - 0.5
        })
    }

    /// The reconstructed values (φ, or n/f for density files) and gradient at `p`.
    fn at(&self, p: [f64; 3]) -> (f64, [f64; 3]) {
        let g = &self.orbital.geometry;
        let dual = g.dual_axes();
        let rel = [0, 1, 2].map(|x| p[x] - g.origin[x]);
        // Fractional local index and the interpolation nodes along each axis (shifted inward at
        // the box faces so that every stencil is whole).
        let mut first = [0usize; 3];
        let mut weights = [([0.0; INTERPOLATION_ORDER], [0.0; INTERPOLATION_ORDER]); 3];
        for a in 0..3 {
            let s = dot(&dual[a], &rel) - self.low[a] as f64;
            let start = (s.floor() as i64 - (INTERPOLATION_ORDER as i64 / 2 - 1)).clamp(0, self.shape[a].saturating_sub(INTERPOLATION_ORDER) as i64);
            first[a] = start as usize;
            weights[a] = lagrange(s, start as f64);
        }
        let [_, m1, m2] = self.shape;
        let (mut value, mut d) = (0.0, [0.0; 3]);
        for (i, (vi, si)) in weights[0].0.iter().zip(&weights[0].1).enumerate() {
            for (j, (vj, sj)) in weights[1].0.iter().zip(&weights[1].1).enumerate() {
                let row = ((first[0] + i) * m1 + first[1] + j) * m2 + first[2];
                for (k, (vk, sk)) in weights[2].0.iter().zip(&weights[2].1).enumerate() {
                    let u = self.remainder[row + k];
                    value += vi * vj * vk * u;
                    d[0] += si * vj * vk * u;
                    d[1] += vi * sj * vk * u;
                    d[2] += vi * vj * sk * u;
                }
            }
        }
        let mut gradient = [0, 1, 2].map(|x| d[0] * dual[0][x] + d[1] * dual[1][x] + d[2] * dual[2][x]);
        for c in self.cusps {
            let r = distance(p, c.position);
            let (v, slope) = cusp_value(self.orbital.kind, c, r);
            value += v;
            if r > 0.0 {
                for x in 0..3 {
                    gradient[x] += slope * (p[x] - c.position[x]) / r;
                }
            }
        }
        (value, gradient)
    }

    /// Density n (electrons/bohr³) and |∇n|² at `p`.
    fn density(&self, p: [f64; 3]) -> (f64, f64) {
        let f = self.orbital.occupation;
        let (v, g) = self.at(p);
        match self.orbital.kind {
            Kind::Amplitude => (f * v * v, (2.0 * f * v).powi(2) * dot(&g, &g)),
            Kind::Density => (f * v, f * f * dot(&g, &g)),
        }
    }
}

/// The cusp function of model `c` at distance `r` for values of `kind`, and its radial slope.
fn cusp_value(kind: Kind, c: &CuspModel, r: f64) -> (f64, f64) {
    let (coefficient, exponent) = match kind {
        Kind::Amplitude => (c.amplitude, c.z),
        Kind::Density => (c.amplitude * c.amplitude, 2.0 * c.z),
    };
    let v = coefficient * (-exponent * r).exp();
    (v, -exponent * v)
}

/// Per functional of `functionals`, the grid sum Σ w W e(n, |∇n|²) over the window about
/// `centre` whose radii are set by `step` (the window's unit length, bohr: the step of the grid
/// the correction was made on), hartree. `rho` and `grad_sq` are what the grid sums used.
pub(crate) fn windowed_grid_sums(
    centre: [f64; 3],
    step: f64,
    orbital: &GridOrbital,
    rho: &[f64],
    grad_sq: Option<&[f64]>,
    functionals: &[&dyn Functional],
    par: Parallelism,
) -> Vec<f64> {
    let g = &orbital.geometry;
    let (r1, r2) = (WINDOW_INNER_STEPS * step, WINDOW_OUTER_STEPS * step);
    let [(l0, h0), (l1, h1), (l2, h2)] = index_box(g, centre, r2);
    let [_, n1, n2] = g.shape;
    let (mut grid_rho, mut grid_sigma, mut grid_weights) = (Vec::new(), Vec::new(), Vec::new());
    for i in l0..=h0 {
        for j in l1..=h1 {
            for k in l2..=h2 {
                let w = window(distance(g.point([i, j, k]), centre), r1, r2);
                if w > 0.0 {
                    let idx = (i * n1 + j) * n2 + k;
                    grid_rho.push(rho[idx]);
                    grid_sigma.push(grad_sq.map_or(0.0, |s| s[idx]));
                    grid_weights.push(w * g.voxel_volume());
                }
            }
        }
    }
    let sigma = grad_sq.is_some().then_some(&grid_sigma[..]);
    functionals.iter().map(|f| weighted_sum(*f, &grid_rho, sigma, Some(&grid_weights), par)).collect()
}

/// Per functional of `functionals`, the grid's error within the window of cusp model `at`
/// (grid minus refined), hartree. `rho` and `grad_sq` are what the grid sums used.
pub(crate) fn deviation(
    cusps: &[CuspModel],
    at: usize,
    orbital: &GridOrbital,
    rho: &[f64],
    grad_sq: Option<&[f64]>,
    functionals: &[&dyn Functional],
    par: Parallelism,
) -> Vec<f64> {
    let g = &orbital.geometry;
    let centre = cusps[at].position;
    let h = g.max_step();
    let (r1, r2) = (WINDOW_INNER_STEPS * h, WINDOW_OUTER_STEPS * h);

    // The reconstruction on an atom-centred grid over the window (none on a grid too small for
    // the interpolant: no correction there).
    let Some(rebuilt) = Reconstruction::new(orbital, cusps, centre, r2) else {
        return vec![0.0; functionals.len()];
    };
    let angular = angular_rule(ANGULAR_ORDER);
    let radial = radial_rule(RADIAL_POINTS, r2);
    let shells: Vec<Vec<(f64, f64, f64)>> = par.map(radial.len(), |s| {
        let (r, wr) = radial[s];
        let rotation = shell_rotation(s);
        angular
            .iter()
            .filter_map(|&(u, wa)| {
                let u = rotate(&rotation, u);
                let p = [0, 1, 2].map(|x| centre[x] + r * u[x]);
                rebuilt.inside(p).then(|| {
                    let (n, sigma) = rebuilt.density(p);
                    (n, sigma, wr * wa / (4.0 * std::f64::consts::PI) * window(r, r1, r2))
                })
            })
            .collect()
    });
    let points: Vec<&(f64, f64, f64)> = shells.iter().flatten().collect();
    let fine_rho: Vec<f64> = points.iter().map(|p| p.0).collect();
    let fine_sigma: Vec<f64> = points.iter().map(|p| p.1).collect();
    let fine_weights: Vec<f64> = points.iter().map(|p| p.2).collect();

    let uses_gradient = grad_sq.is_some();
    let grid = windowed_grid_sums(centre, h, orbital, rho, grad_sq, functionals, par);
    functionals
        .iter()
        .zip(grid)
        .map(|(f, grid)| grid - weighted_sum(*f, &fine_rho, uses_gradient.then_some(&fine_sigma[..]), Some(&fine_weights), par))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::grid::{GridGeometry, Nucleus};
    use std::f64::consts::PI;

    #[test]
    fn lagrange_weights_are_exact_for_polynomials_below_the_order() {
        // Σ_k L_k(s) x_k^d = s^d and Σ_k L'_k(s) x_k^d = d s^{d−1} for d < order.
        for (s, first) in [(2.37, 0.0), (0.2, 0.0), (7.9, 5.0)] {
            let (l, dl) = lagrange(s, first);
            for d in 0..INTERPOLATION_ORDER as i32 {
                let x = |k: usize| (first + k as f64).powi(d);
                let value: f64 = (0..INTERPOLATION_ORDER).map(|k| l[k] * x(k)).sum();
                let slope: f64 = (0..INTERPOLATION_ORDER).map(|k| dl[k] * x(k)).sum();
                let scale = (first + INTERPOLATION_ORDER as f64).powi(d);
                assert!((value - s.powi(d)).abs() < 1e-12 * scale, "d={d} s={s}: {value}");
                let want = if d == 0 { 0.0 } else { d as f64 * s.powi(d - 1) };
                assert!((slope - want).abs() < 1e-11 * scale, "d={d} s={s}: {slope} vs {want}");
            }
        }
    }

    #[test]
    fn reconstruction_restores_a_cusp_between_the_points() {
        // A Z = 8 cusp the grid cannot resolve (Zh = 1.2) on a smooth p-like background: the
        // reconstruction recovers value and gradient between the points (the fit finds a to
        // about 1e-6; a plain interpolant of the values would be off by tens of per cent).
        let (z, h) = (8.0f64, 0.15);
        let c = [0.37 * h, -0.21 * h, 0.13 * h];
        let a = (z.powi(3) / PI).sqrt();
        let exact = |p: [f64; 3]| {
            let d = [p[0] - c[0], p[1] - c[1], p[2] - c[2]];
            let r = dot(&d, &d).sqrt();
            let e = a * (-z * r).exp();
            let value = e + 0.3 * d[2] * (-0.5 * r * r).exp();
            let grad = [0, 1, 2].map(|x| {
                let cusp = if r > 0.0 { -z * e * d[x] / r } else { 0.0 };
                let smooth = 0.3 * (-0.5 * r * r).exp() * (if x == 2 { 1.0 } else { 0.0 } - d[2] * d[x]);
                cusp + smooth
            });
            (value, grad)
        };
        let g = GridGeometry::around([[h, 0.0, 0.0], [0.0, h, 0.0], [0.0, 0.0, h]], [0.0; 3], 3.0).unwrap();
        let o = GridOrbital::sampled("t", g, vec![Nucleus { atomic_number: 8, charge: 8.0, position: c }], Kind::Amplitude, |p| exact(p).0);
        let cusps = [CuspModel::fit(&o, &o.nuclei[0]).unwrap()];
        assert!((cusps[0].amplitude / a - 1.0).abs() < 1e-5, "{}", cusps[0].amplitude / a);
        let rebuilt = Reconstruction::new(&o, &cusps, c, 1.0).unwrap();
        for (r, u) in [(0.02, [1.0, 0.0, 0.0]), (0.07, [0.0, 0.6, 0.8]), (0.2, [0.48, -0.6, 0.64]), (0.5, [0.0, 0.0, -1.0])] {
            let p = [0, 1, 2].map(|x| c[x] + r * u[x]);
            let ((v, gr), (want, want_gr)) = (rebuilt.at(p), exact(p));
            let scale = exact(c).0;
            assert!((v - want).abs() < 1e-5 * scale, "r={r}: {v} vs {want}");
            let err = [0, 1, 2].map(|x| gr[x] - want_gr[x]);
            assert!(dot(&err, &err).sqrt() < 1e-5 * z * scale, "r={r}: {gr:?} vs {want_gr:?}");
        }
    }

    #[test]
    fn a_nucleus_at_the_edge_of_a_small_grid_is_handled() {
        // A cusp one step from a face of a 7³ grid: part of the window lies outside the box and
        // the interpolant barely fits. The correction must stay finite and modest, never panic;
        // on 5³ points there is no room for the interpolant and no correction.
        let h = 0.25;
        for (n, expect_correction) in [(7usize, true), (5, false)] {
            let g = GridGeometry::new([0.0; 3], [[h, 0.0, 0.0], [0.0, h, 0.0], [0.0, 0.0, h]], [n; 3]).unwrap();
            let c = [h, 0.5 * (n - 1) as f64 * h, 0.5 * (n - 1) as f64 * h];
            let nuclei = vec![Nucleus { atomic_number: 1, charge: 1.0, position: c }];
            let o = GridOrbital::sampled("t", g, nuclei, Kind::Amplitude, |p| (-super::distance(p, c)).exp());
            let cusps: Vec<CuspModel> = CuspModel::fit(&o, &o.nuclei[0]).into_iter().collect();
            if cusps.is_empty() {
                assert!(!expect_correction, "n = {n}: the cusp should be fitted");
                continue;
            }
            let rho = o.density();
            let lsda = crate::xc::slater::XAlpha::lsda();
            let d = deviation(&cusps, 0, &o, &rho, None, &[&lsda], Parallelism::Sequential);
            let plain = o.geometry.voxel_volume() * crate::diagnostics::grid_sum(&lsda, &rho, None, Parallelism::Sequential);
            assert!(d[0].is_finite() && d[0].abs() < 0.5 * plain.abs(), "n = {n}: {d:?} against {plain}");
            assert_eq!(d[0] != 0.0, expect_correction, "n = {n}: {d:?}");
        }
    }
}
