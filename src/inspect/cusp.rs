//! Position and charge of a nucleus from the density grid points around a density maximum.
//!
//! Near a nucleus of charge Z at R the density behaves as
//!
//! ```text
//! ln ρ(p) = c − 2Z·|u| + g·u + uᵀQu + O(|u|³),      u = p − R,
//! ```
//!
//! where −2Z|u| is the cusp of the spherical average (Kato's theorem, Z = −ρ̄′(0) / 2ρ̄(0);
//! common practice), g·u the p-like part a bonded atom has, which averages out over a sphere,
//! and Q the second-order terms. For a fixed R the model is linear in (c, Z, g, Q), so those
//! follow by weighted least squares; R itself minimises that fit's residual (Nelder–Mead over
//! three coordinates, since the residual has a kink wherever R crosses a grid point).
//!
//! Two fits are made (see `super::refine`): the second-order model locates R, the first-order
//! one (Q = 0) gives Z. For a hydrogenic density ρ ∝ e^{−2Z|r−R|} both are exact and return Z
//! and R to round-off on any grid.

/// Order of the log-density model.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Order {
    /// c − 2Z|u| + g·u: the cusp and the p-like part, both first order in |u|.
    First,
    /// Plus the symmetric quadratic form uᵀQu.
    Second,
}

impl Order {
    fn columns(self) -> usize {
        match self {
            Order::First => 5,
            Order::Second => 11,
        }
    }
}

/// One grid point of the fit window.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Sample {
    /// Position, bohr.
    pub position: [f64; 3],
    /// ln ρ at it.
    pub log_density: f64,
    /// Least-squares weight.
    pub weight: f64,
}

/// Outcome of a fit.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct CuspFit {
    /// Nuclear position, bohr.
    pub position: [f64; 3],
    /// Cusp charge Z, e.
    pub charge: f64,
    /// Density at the nucleus, e^c, e/bohr³.
    pub peak: f64,
    /// Root-mean-square weighted residual of ln ρ.
    pub rms: f64,
}

/// Fits the model of `order` to `samples`, searching R within `reach` (bohr, per Cartesian
/// coordinate) of `start` from an initial simplex of edge `step` (bohr). `None` when the samples
/// cannot determine the parameters or the best R lies at the edge of that box (the window then
/// holds no cusp).
pub(crate) fn fit(samples: &[Sample], order: Order, start: [f64; 3], step: f64, reach: f64) -> Option<CuspFit> {
    if samples.len() < order.columns() + 3 {
        return None;
    }
    let outside = |r: &[f64; 3]| (0..3).any(|k| (r[k] - start[k]).abs() > reach);
    let residual = |r: &[f64; 3]| {
        if outside(r) {
            return f64::INFINITY;
        }
        solve(samples, order, *r).map_or(f64::INFINITY, |s| s.1)
    };
    // 1e-9 of a grid step: far below any position that matters, reached in ~100 evaluations.
    let best = nelder_mead(residual, start, step, 1e-9 * step, 4000);
    if (0..3).any(|k| (best[k] - start[k]).abs() > 0.999 * reach) {
        return None;
    }
    let (params, rss) = solve(samples, order, best)?;
    let wsum: f64 = samples.iter().map(|s| s.weight).sum();
    let fit = CuspFit { position: best, charge: params[1], peak: params[0].exp(), rms: (rss / wsum).sqrt() };
    (fit.charge.is_finite() && fit.peak.is_finite()).then_some(fit)
}

/// Linear least squares at fixed R: the parameters (c, Z, …) and the weighted residual sum.
fn solve(samples: &[Sample], order: Order, r: [f64; 3]) -> Option<(Vec<f64>, f64)> {
    let n = order.columns();
    let m = samples.len();
    let mut a = vec![0.0; m * n];
    let mut b = vec![0.0; m];
    for (i, s) in samples.iter().enumerate() {
        let u = [s.position[0] - r[0], s.position[1] - r[1], s.position[2] - r[2]];
        let d = (u[0] * u[0] + u[1] * u[1] + u[2] * u[2]).sqrt();
        let w = s.weight.sqrt();
        let row = &mut a[i * n..(i + 1) * n];
        row[0] = w;
        row[1] = -2.0 * d * w;
        row[2..5].copy_from_slice(&u.map(|x| x * w));
        if order == Order::Second {
            row[5] = u[0] * u[0] * w;
            row[6] = u[1] * u[1] * w;
            row[7] = u[2] * u[2] * w;
            row[8] = u[0] * u[1] * w;
            row[9] = u[0] * u[2] * w;
            row[10] = u[1] * u[2] * w;
        }
        b[i] = s.log_density * w;
    }
    least_squares(&mut a, &mut b, m, n)
}

/// Solves min ‖A x − b‖ for the row-major m×n matrix `a` (m ≥ n) by Householder QR, which
/// overwrites `a` and `b`. Returns x and the residual sum of squares, or `None` when a column is
/// (numerically) dependent on the others.
fn least_squares(a: &mut [f64], b: &mut [f64], m: usize, n: usize) -> Option<(Vec<f64>, f64)> {
    let scale = a.iter().fold(0.0_f64, |s, x| s.max(x.abs()));
    for k in 0..n {
        let norm = (k..m).map(|i| a[i * n + k].powi(2)).sum::<f64>().sqrt();
        // Relative to the largest entry: below this the column adds nothing but round-off.
        if norm <= 1e-12 * scale {
            return None;
        }
        let alpha = if a[k * n + k] > 0.0 { -norm } else { norm };
        // v = column k below the diagonal minus alpha·e_k; H = I − 2vvᵀ/vᵀv.
        let mut v: Vec<f64> = (k..m).map(|i| a[i * n + k]).collect();
        v[0] -= alpha;
        let vv: f64 = v.iter().map(|x| x * x).sum();
        if vv == 0.0 {
            continue;
        }
        for j in k..n {
            let dot: f64 = (k..m).map(|i| v[i - k] * a[i * n + j]).sum();
            let f = 2.0 * dot / vv;
            for i in k..m {
                a[i * n + j] -= f * v[i - k];
            }
        }
        let dot: f64 = (k..m).map(|i| v[i - k] * b[i]).sum();
        let f = 2.0 * dot / vv;
        for i in k..m {
            b[i] -= f * v[i - k];
        }
    }
    let mut x = vec![0.0; n];
    for k in (0..n).rev() {
        let s: f64 = (k + 1..n).map(|j| a[k * n + j] * x[j]).sum();
        x[k] = (b[k] - s) / a[k * n + k];
    }
    let rss = b[n..].iter().map(|x| x * x).sum();
    x.iter().all(|v| v.is_finite()).then_some((x, rss))
}

/// Minimises `f` over three coordinates by the Nelder–Mead simplex method (standard
/// coefficients: reflection 1, expansion 2, contraction ½, shrink ½), from a simplex of edge
/// `step` at `start`, until every vertex lies within `tolerance` of the best or after
/// `max_evaluations`.
fn nelder_mead(f: impl Fn(&[f64; 3]) -> f64, start: [f64; 3], step: f64, tolerance: f64, max_evaluations: usize) -> [f64; 3] {
    let mut simplex: Vec<([f64; 3], f64)> = (0..4)
        .map(|k| {
            let mut x = start;
            if k > 0 {
                x[k - 1] += step;
            }
            (x, f(&x))
        })
        .collect();
    let mut evaluations = 4;
    let along = |from: &[f64; 3], to: &[f64; 3], t: f64| [0, 1, 2].map(|k| from[k] + t * (to[k] - from[k]));
    while evaluations < max_evaluations {
        simplex.sort_by(|a, b| a.1.total_cmp(&b.1));
        let best = simplex[0].0;
        let size = simplex[1..]
            .iter()
            .map(|(x, _)| (0..3).map(|k| (x[k] - best[k]).abs()).fold(0.0, f64::max))
            .fold(0.0, f64::max);
        if size <= tolerance {
            break;
        }
        let centroid = [0, 1, 2].map(|k| simplex[..3].iter().map(|(x, _)| x[k]).sum::<f64>() / 3.0);
        let (worst, f_worst) = simplex[3];
        let reflected = along(&centroid, &worst, -1.0);
        let f_reflected = f(&reflected);
        evaluations += 1;
        if f_reflected < simplex[0].1 {
            let expanded = along(&centroid, &worst, -2.0);
            let f_expanded = f(&expanded);
            evaluations += 1;
            simplex[3] = if f_expanded < f_reflected { (expanded, f_expanded) } else { (reflected, f_reflected) };
        } else if f_reflected < simplex[2].1 {
            simplex[3] = (reflected, f_reflected);
        } else {
            let (towards, f_towards) = if f_reflected < f_worst { (reflected, f_reflected) } else { (worst, f_worst) };
            let contracted = along(&centroid, &towards, 0.5);
            let f_contracted = f(&contracted);
            evaluations += 1;
            if f_contracted < f_towards {
                simplex[3] = (contracted, f_contracted);
            } else {
                for v in simplex.iter_mut().skip(1) {
                    v.0 = along(&best, &v.0, 0.5);
                    v.1 = f(&v.0);
                }
                evaluations += 3;
            }
        }
    }
    simplex.sort_by(|a, b| a.1.total_cmp(&b.1));
    simplex[0].0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn least_squares_recovers_an_exact_line() {
        // y = 2 + 3x at five points.
        let xs = [0.0, 1.0, 2.0, 3.0, 4.0];
        let mut a: Vec<f64> = xs.iter().flat_map(|&x| [1.0, x]).collect();
        let mut b: Vec<f64> = xs.iter().map(|x| 2.0 + 3.0 * x).collect();
        let (x, rss) = least_squares(&mut a, &mut b, 5, 2).unwrap();
        assert!((x[0] - 2.0).abs() < 1e-12 && (x[1] - 3.0).abs() < 1e-12 && rss < 1e-20, "{x:?} {rss}");
        // A repeated column cannot be solved.
        let mut a: Vec<f64> = xs.iter().flat_map(|&x| [x, x]).collect();
        let mut b = xs.to_vec();
        assert!(least_squares(&mut a, &mut b, 5, 2).is_none());
    }

    #[test]
    fn nelder_mead_finds_a_kinked_minimum() {
        let target = [0.3, -0.2, 0.05];
        let f = |x: &[f64; 3]| (0..3).map(|k| (x[k] - target[k]).abs() * (k + 1) as f64).sum::<f64>();
        let x = nelder_mead(f, [0.0; 3], 0.1, 1e-12, 10_000);
        for k in 0..3 {
            assert!((x[k] - target[k]).abs() < 1e-9, "{x:?}");
        }
    }
}
