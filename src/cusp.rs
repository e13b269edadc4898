//! Cusps at nuclei: a model fitted to the grid values, and the corrections it makes possible.
//!
//! Near a nucleus A of charge Z an orbital behaves like `φ ≈ a e^{−Z|r − R_A|}` plus terms that
//! vanish at R_A (Kato's cusp condition; common practice), so its density carries the cusp
//!
//! ```text
//! m_A(r) = f a² e^{−2Z|r − R_A|}      (f the occupation; q_A = f a² π/Z³ electrons)
//! ```
//!
//! `a` is fitted by least squares to the grid values within two steps of the nucleus, weighted by
//! the cusp function e^{−Z|r − R_A|} itself, beside a remainder that is linear and quadratic in
//! r − R_A *without* a constant term: the remainder then
//! vanishes at R_A, so `n − m_A` has no first-order cusp there and the model takes the whole
//! value at the nucleus, as Kato's condition requires. Orbitals without s character at A get
//! a ≈ 0 and no model; so do densities that the same fit with a constant in place of the cusp
//! describes clearly better (nothing cusp-like in the data).
//!
//! **Hartree energy**, split exactly with M = Σ_A m_A and the smooth remainder n − M:
//!
//! ```text
//! J[n] = J_grid[n − M] + Σ_grid w (n − M) V_M + J[M],     J[M] = ½ Σ_AB C[m_A, m_B]
//! ```
//!
//! where V_M is the analytic potential of M, `½C[m_A, m_A] = q_A² 5Z/16`, and the cross terms
//! `C[m_A, m_B]` are radial integrals of m_A against the spherical average of m_B's potential.
//! Only smooth functions meet the grid.
//!
//! **Exchange–correlation**: within a smooth window about each nucleus (1 within 4h, 0 beyond
//! 8h) the grid sum is replaced by an atom-centred quadrature of the orbital rebuilt from the
//! cusp functions and an interpolant of the smooth remainder (module `refine`). The window's
//! points still count with weight 1 − W, so the total is exact in the limit of fine grids.

use crate::diagnostics::{Engine, GridOrbital, Kind};
use crate::grid::{GridGeometry, Nucleus, dot};
use crate::par::Parallelism;
use crate::quadrature::{gauss_legendre, radial_rule};
use crate::xc::Functional;
use std::f64::consts::PI;

/// Points within this many grid steps of the nucleus decide whether the data show a cusp.
const EVIDENCE_STEPS: f64 = 3.01;
/// Points within this many grid steps of the nucleus enter the fit.
const FIT_STEPS: f64 = 2.01;
/// The window is 1 within this many steps of the nucleus…
const WINDOW_INNER_STEPS: f64 = 4.0;
/// …and 0 beyond this many.
const WINDOW_OUTER_STEPS: f64 = 8.0;
/// No cusp model is made where, within [`EVIDENCE_STEPS`], the same fit with a constant in place of
/// the cusp leaves less than 1/this of the cusp fit's residual: the data are then smooth at the
/// nucleus. Hydrogenic cusps fit the cusp form exactly (ratio ≈ 0) and the s-like orbitals of the
/// shared reference set give at most 1.1; Gaussians e^{−wr²} centred on a nucleus give 5 to 10⁶
/// (below 1 only for w = 2 on a Z = 1 nucleus at 0.25 bohr, narrower than that cusp itself).
const CUSP_EVIDENCE: f64 = 2.0;
/// Models holding fewer electrons than this are left out (no s character at the nucleus).
const MIN_MODEL_CHARGE: f64 = 1e-8;
/// Radial quadrature points for the exact integrals.
const RADIAL_POINTS: usize = 800;

/// The fitted cusp of one orbital at one nucleus.
#[derive(Clone, Debug, PartialEq)]
pub struct CuspModel {
    /// Nucleus position, bohr.
    pub position: [f64; 3],
    /// Nuclear charge Z (the atomic number).
    pub z: f64,
    /// a: the s-like amplitude at the nucleus, 1/bohr^{3/2}.
    pub amplitude: f64,
    /// Electrons in the model, q = f a² π/Z³.
    pub charge: f64,
}

/// C^∞ step from 1 (r ≤ r1) to 0 (r ≥ r2).
fn window(r: f64, r1: f64, r2: f64) -> f64 {
    if r <= r1 {
        return 1.0;
    }
    if r >= r2 {
        return 0.0;
    }
    let t = (r - r1) / (r2 - r1);
    let (a, b) = ((-1.0 / t).exp(), (-1.0 / (1.0 - t)).exp());
    b / (a + b)
}

/// Solves the small dense system `m x = v` by elimination with partial pivoting.
fn solve(mut m: Vec<Vec<f64>>, mut v: Vec<f64>) -> Option<Vec<f64>> {
    let n = v.len();
    for c in 0..n {
        let p = (c..n).max_by(|&a, &b| m[a][c].abs().total_cmp(&m[b][c].abs()))?;
        if m[p][c].abs() < 1e-300 {
            return None;
        }
        m.swap(c, p);
        v.swap(c, p);
        let pivot_row = m[c].clone();
        for r in 0..n {
            if r != c {
                let f = m[r][c] / pivot_row[c];
                for (x, p) in m[r].iter_mut().zip(&pivot_row) {
                    *x -= f * p;
                }
                v[r] -= f * v[c];
            }
        }
    }
    Some((0..n).map(|i| v[i] / m[i][i]).collect())
}

/// Rows (weight, basis, value) of the weighted least-squares fit of `o` near `centre`: basis
/// e^{−κr} (or a constant, with `smooth`) and the linear and quadratic terms in units of h,
/// weighted by e^{−κr}, over the points within `radius`.
fn fit_rows(o: &GridOrbital, centre: [f64; 3], kappa: f64, radius: f64, smooth: bool) -> Vec<(f64, [f64; 10], f64)> {
    let g = &o.geometry;
    let h = g.max_step();
    let [(l0, h0), (l1, h1), (l2, h2)] = index_box(g, centre, radius);
    let [_, n1, n2] = g.shape;
    let mut rows = Vec::new();
    for i in l0..=h0 {
        for j in l1..=h1 {
            for k in l2..=h2 {
                let p = g.point([i, j, k]);
                let d = [0, 1, 2].map(|x| (p[x] - centre[x]) / h);
                let r = dot(&d, &d).sqrt() * h;
                if r > radius {
                    continue;
                }
                let e = (-kappa * r).exp();
                let first = if smooth { 1.0 } else { e };
                let basis = [first, d[0], d[1], d[2], d[0] * d[0], d[1] * d[1], d[2] * d[2], d[0] * d[1], d[0] * d[2], d[1] * d[2]];
                rows.push((e, basis, o.values[(i * n1 + j) * n2 + k]));
            }
        }
    }
    rows
}

/// Weighted least squares over rows (weight, basis, value): the coefficients and the weighted
/// sum of squared residuals.
fn least_squares(rows: &[(f64, [f64; 10], f64)]) -> Option<(Vec<f64>, f64)> {
    let mut ata = vec![vec![0.0; 10]; 10];
    let mut atb = vec![0.0; 10];
    for (w, b, y) in rows {
        for i in 0..10 {
            atb[i] += w * b[i] * y;
            for j in 0..10 {
                ata[i][j] += w * b[i] * b[j];
            }
        }
    }
    let x = solve(ata, atb)?;
    let residual = rows.iter().map(|(w, b, y)| w * (b.iter().zip(&x).map(|(b, x)| b * x).sum::<f64>() - y).powi(2)).sum();
    Some((x, residual))
}

/// Index range of grid points within `radius` of `centre` along each axis (clamped).
fn index_box(g: &GridGeometry, centre: [f64; 3], radius: f64) -> [(usize, usize); 3] {
    let dual = g.dual_axes();
    let spacing = g.plane_spacings();
    let rel = [0, 1, 2].map(|k| centre[k] - g.origin[k]);
    [0, 1, 2].map(|a| {
        let u = dot(&dual[a], &rel);
        let reach = radius / spacing[a] + 1.0;
        let lo = (u - reach).floor().max(0.0) as usize;
        let hi = ((u + reach).ceil().max(0.0) as usize).min(g.shape[a] - 1);
        (lo.min(hi), hi)
    })
}

/// Distance between two points, bohr.
pub fn distance(a: [f64; 3], b: [f64; 3]) -> f64 {
    let d = [a[0] - b[0], a[1] - b[1], a[2] - b[2]];
    dot(&d, &d).sqrt()
}

impl CuspModel {
    /// Fits the cusp of `o` at `nucleus`; `None` without s character there (or nothing to fit).
    pub fn fit(o: &GridOrbital, nucleus: &Nucleus) -> Option<CuspModel> {
        let z = nucleus.atomic_number as f64;
        if z < 1.0 {
            return None;
        }
        let g = &o.geometry;
        let h = g.max_step();
        let radius = FIT_STEPS * h;
        // Amplitudes: φ ≈ a e^{−Zr} + remainder; densities: n/f ≈ c e^{−2Zr} + remainder. The
        // remainder (linear and quadratic, in units of h for conditioning) vanishes at R_A.
        let exponent = match o.kind {
            Kind::Amplitude => z,
            Kind::Density => 2.0 * z,
        };
        let rows = fit_rows(o, nucleus.position, exponent, radius, false);
        if rows.len() < 12 {
            return None;
        }
        let cusp = least_squares(&rows)?;
        // The data must show a cusp: over a wider region the same remainder with a constant in
        // place of the cusp must not fit clearly better (a density smooth at the nucleus).
        let wide = EVIDENCE_STEPS * h;
        let (with_cusp, smooth) = (
            least_squares(&fit_rows(o, nucleus.position, exponent, wide, false))?,
            least_squares(&fit_rows(o, nucleus.position, exponent, wide, true))?,
        );
        if with_cusp.1.is_nan() || with_cusp.1 >= CUSP_EVIDENCE * smooth.1 {
            return None;
        }
        let coefficient = cusp.0[0];
        let amplitude = match o.kind {
            Kind::Amplitude => coefficient,
            Kind::Density => coefficient.max(0.0).sqrt(),
        };
        let charge = o.occupation * amplitude * amplitude * PI / (z * z * z);
        (charge.is_finite() && charge > MIN_MODEL_CHARGE).then_some(CuspModel { position: nucleus.position, z, amplitude, charge })
    }

    /// The model density at distance `r` from the nucleus, electrons/bohr³.
    pub fn density(&self, r: f64) -> f64 {
        self.charge * self.z.powi(3) / PI * (-2.0 * self.z * r).exp()
    }

    /// The model's Coulomb potential at distance `r` from the nucleus, hartree/e.
    pub fn potential(&self, r: f64) -> f64 {
        let z = self.z;
        let e = (-2.0 * z * r).exp();
        // (1 − e^{−2Zr})/r loses digits for small r; its series starts 2Z − 2Z²r.
        let ratio = if z * r < 1e-4 { 2.0 * z - 2.0 * z * z * r } else { -(-2.0 * z * r).exp_m1() / r };
        self.charge * (ratio - z * e)
    }

    /// F(d) with F′(d) = d·v(d)/q, where v(d) = q[1/d − e^{−2Zd}(Z + 1/d)] is the potential: the
    /// antiderivative behind spherical averages of the potential.
    fn potential_moment(&self, d: f64) -> f64 {
        d + (-2.0 * self.z * d).exp() * (0.5 * d + 0.75 / self.z)
    }

    /// Spherical average of this model's potential over the sphere of radius `r` about a point
    /// at distance `sep` from the nucleus, hartree/e (Newton's shell argument; common practice).
    fn shell_potential(&self, r: f64, sep: f64) -> f64 {
        if r == 0.0 {
            return self.potential(sep);
        }
        if sep == 0.0 {
            return self.potential(r);
        }
        self.charge * (self.potential_moment(sep + r) - self.potential_moment((sep - r).abs())) / (2.0 * r * sep)
    }

    /// Coulomb interaction C[m_A, m_B] of two models on different nuclei, hartree.
    pub fn interaction(&self, other: &CuspModel) -> f64 {
        let sep = distance(self.position, other.position);
        // m_A against the shell averages of m_B's potential; the integrand has a kink at r = sep,
        // so integrate [0, sep] and [sep, r_max] separately.
        let r_max = 40.0 / self.z;
        let (x, w) = gauss_legendre(RADIAL_POINTS / 2);
        let segment = |a: f64, b: f64| -> f64 {
            if b <= a {
                return 0.0;
            }
            x.iter()
                .zip(&w)
                .map(|(&x, &w)| {
                    let r = a + 0.5 * (b - a) * (x + 1.0);
                    0.5 * (b - a) * w * 4.0 * PI * r * r * self.density(r) * other.shell_potential(r, sep)
                })
                .sum::<f64>()
        };
        segment(0.0, sep.min(r_max)) + segment(sep.min(r_max), r_max)
    }
}

/// J of an orbital density `rho` on its grid with the cusps of `models` split off and handled
/// analytically (see the module docs), hartree.
pub(crate) fn hartree(engine: &Engine, g: &GridGeometry, rho: &[f64], models: &[CuspModel], par: Parallelism) -> Result<f64, crate::poisson::PoissonError> {
    let w = g.voxel_volume();
    let [_, n1, n2] = g.shape;
    let at = |k: usize| g.point([k / (n1 * n2), (k / n2) % n1, k % n2]);
    // Remainder n − M on the grid, and Σ w (n − M) V_M.
    let remainder = crate::memory::try_collect(
        rho.len(),
        rho.iter().enumerate().map(|(k, &n)| {
            let p = at(k);
            n - models.iter().map(|m| m.density(distance(p, m.position))).sum::<f64>()
        }),
        "the density less its cusps",
    )?;
    let cross = w * par.chunked_sum(remainder.len(), |range| {
        range.map(|k| {
            let p = at(k);
            remainder[k] * models.iter().map(|m| m.potential(distance(p, m.position))).sum::<f64>()
        })
        .sum()
    });
    let smooth = engine.solver(g, par)?.self_energy(&remainder, par)?;
    let mut exact = 0.0;
    for (i, a) in models.iter().enumerate() {
        exact += a.charge * a.charge * 5.0 * a.z / 16.0;
        exact += models[i + 1..].iter().map(|b| a.interaction(b)).sum::<f64>();
    }
    Ok(smooth + cross + exact)
}

/// Per model of `models`, (exchange, correlation) summed over the `cusps`: `per_cusp(at,
/// functionals)` gives the values at cusp `at` of each distinct functional, once however many
/// models share it.
fn sum_per_model(
    models: &[crate::xc::Model],
    cusps: usize,
    per_cusp: impl Fn(usize, &[&dyn Functional]) -> Vec<f64>,
) -> Vec<(f64, f64)> {
    fn slot<'f>(f: &'f dyn Functional, distinct: &mut Vec<&'f dyn Functional>) -> usize {
        distinct.iter().position(|d| d.part() == f.part() && d.id() == f.id()).unwrap_or_else(|| {
            distinct.push(f);
            distinct.len() - 1
        })
    }
    let mut distinct: Vec<&dyn Functional> = Vec::new();
    let slots: Vec<(usize, Option<usize>)> = models
        .iter()
        .map(|m| (slot(m.exchange.as_ref(), &mut distinct), m.correlation.as_deref().map(|c| slot(c, &mut distinct))))
        .collect();
    let mut values = vec![0.0; distinct.len()];
    for at in 0..cusps {
        for (v, d) in values.iter_mut().zip(per_cusp(at, &distinct)) {
            *v += d;
        }
    }
    slots.iter().map(|&(x, c)| (values[x], c.map_or(0.0, |c| values[c]))).collect()
}

/// Per model of `models`, the grid's error (exchange, correlation) near all the `cusps`, hartree
/// (grid minus refined; subtract it to correct; module `refine`). `rho` and `grad_sq` are what the
/// grid sums used.
pub(crate) fn xc_deviation(
    cusps: &[CuspModel],
    orbital: &GridOrbital,
    rho: &[f64],
    grad_sq: Option<&[f64]>,
    models: &[crate::xc::Model],
    par: Parallelism,
) -> Vec<(f64, f64)> {
    sum_per_model(models, cusps.len(), |at, functionals| refine::deviation(cusps, at, orbital, rho, grad_sq, functionals, par))
}

/// Per model of `models`, the grid sums (exchange, correlation) inside the windows that the
/// correction replaced: about each of `cusps`, with radii set by `step` (the step of the grid
/// the correction was made on, bohr), on the points of `orbital`, hartree.
pub(crate) fn windowed_xc(
    cusps: &[CuspModel],
    step: f64,
    orbital: &GridOrbital,
    rho: &[f64],
    grad_sq: Option<&[f64]>,
    models: &[crate::xc::Model],
    par: Parallelism,
) -> Vec<(f64, f64)> {
    sum_per_model(models, cusps.len(), |at, functionals| {
        refine::windowed_grid_sums(cusps[at].position, step, orbital, rho, grad_sq, functionals, par)
    })
}

/// Average of 1/r over a cube of unit edge centred on the origin (textbook value, quoted from
/// memory: ∫ over [−½, ½]³ of d³r/|r| ≈ 2.3800772).
const CUBE_MEAN_INVERSE_DISTANCE: f64 = 2.380_077_2;

/// The Coulomb potential of the density `rho` on grid `g` at `point`, hartree/e (direct sum; a
/// grid point on `point` contributes with the mean inverse distance over its cell).
pub(crate) fn potential_at(g: &GridGeometry, rho: &[f64], point: [f64; 3]) -> f64 {
    let w = g.voxel_volume();
    let edge = w.cbrt();
    let [_, n1, n2] = g.shape;
    let mut v = 0.0;
    for (idx, &n) in rho.iter().enumerate() {
        if n == 0.0 {
            continue;
        }
        let r = distance(g.point([idx / (n1 * n2), (idx / n2) % n1, idx % n2]), point);
        v += n * if r < 0.5 * edge { CUBE_MEAN_INVERSE_DISTANCE / edge } else { 1.0 / r };
    }
    w * v
}

/// The grid's signed error on the windowed model's charge, electrons (grid minus exact).
pub(crate) fn charge_deviation(model: &CuspModel, g: &GridGeometry) -> f64 {
    let h = g.max_step();
    let (r1, r2) = (WINDOW_INNER_STEPS * h, WINDOW_OUTER_STEPS * h);
    let [(l0, h0), (l1, h1), (l2, h2)] = index_box(g, model.position, r2);
    let mut grid = 0.0;
    for i in l0..=h0 {
        for j in l1..=h1 {
            for k in l2..=h2 {
                let r = distance(g.point([i, j, k]), model.position);
                grid += window(r, r1, r2) * model.density(r);
            }
        }
    }
    let exact: f64 = radial_rule(RADIAL_POINTS, r2).iter().map(|&(r, wr)| wr * window(r, r1, r2) * model.density(r)).sum();
    g.voxel_volume() * grid - exact
}

mod refine;

#[cfg(test)]
mod tests;
