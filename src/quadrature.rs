//! One-dimensional quadrature rules and radial integrals of spherical densities.
//!
//! Used as exact references for grid results (spherical model densities, analytic test
//! densities) and for the cusp models' charges and Coulomb integrals.

use crate::xc::{Functional, XcPoint};
use std::f64::consts::PI;

/// Gauss–Legendre nodes and weights on [−1, 1] with `n ≥ 1` points (Newton iteration on P_n from the
/// Chebyshev-like initial guess; common practice). Exact for polynomials of degree < 2n.
pub fn gauss_legendre(n: usize) -> (Vec<f64>, Vec<f64>) {
    let mut x = vec![0.0; n];
    let mut w = vec![0.0; n];
    for i in 0..n.div_ceil(2) {
        let mut z = (PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
        let mut dp = 1.0;
        for _ in 0..100 {
            // P_n(z) (in p1) and P_{n−1}(z) (in p0) by the three-term recurrence.
            let (mut p0, mut p1) = (1.0, z);
            for k in 2..=n {
                let p2 = ((2 * k - 1) as f64 * z * p1 - (k - 1) as f64 * p0) / k as f64;
                p0 = p1;
                p1 = p2;
            }
            dp = n as f64 * (z * p1 - p0) / (z * z - 1.0);
            let dz = p1 / dp;
            z -= dz;
            if dz.abs() < 1e-15 {
                break;
            }
        }
        x[i] = -z;
        x[n - 1 - i] = z;
        w[i] = 2.0 / ((1.0 - z * z) * dp * dp);
        w[n - 1 - i] = w[i];
    }
    (x, w)
}

/// Radial points and weights for ∫₀^{r_max} g(r) 4πr² dr: Gauss–Legendre in t ∈ (0, 1) with
/// r = r_max·t³, which crowds points towards a cusp at the origin. Weights include 4πr² dr/dt.
pub fn radial_rule(n: usize, r_max: f64) -> Vec<(f64, f64)> {
    let (x, w) = gauss_legendre(n);
    x.iter()
        .zip(&w)
        .map(|(&x, &w)| {
            let t = 0.5 * (x + 1.0);
            let r = r_max * t * t * t;
            (r, 4.0 * PI * r * r * 3.0 * r_max * t * t * 0.5 * w)
        })
        .collect()
}

/// E[n, 0] of a spherical one-electron density by radial quadrature, hartree.
///
/// `density(r)` returns `(n(r), dn/dr)`; τ is the von Weizsäcker value |∇n|²/8n of a single
/// real orbital.
pub fn spherical_self_energy(f: &dyn Functional, density: impl Fn(f64) -> (f64, f64), rule: &[(f64, f64)]) -> f64 {
    rule.iter()
        .map(|&(r, w)| {
            let (n, dn) = density(r);
            let tau = if n > 0.0 { dn * dn / (8.0 * n) } else { 0.0 };
            w * f.energy_density(&XcPoint::polarized(n, dn * dn, tau))
        })
        .sum()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn gauss_legendre_integrates_polynomials_and_known_values() {
        for n in [1, 2, 5, 20, 101] {
            let (x, w) = gauss_legendre(n);
            assert!((w.iter().sum::<f64>() - 2.0).abs() < 1e-13);
            let deg = 2 * n - 1;
            let got: f64 = x.iter().zip(&w).map(|(x, w)| w * x.powi(deg as i32 - 1)).sum();
            let want = if (deg - 1) % 2 == 0 { 2.0 / deg as f64 } else { 0.0 };
            assert!((got - want).abs() < 1e-12, "n={n}");
        }
        // Two-point rule: ±1/√3 (textbook).
        let (x, _) = gauss_legendre(2);
        assert!((x[1] - 1.0 / 3f64.sqrt()).abs() < 1e-15);
    }

    #[test]
    fn radial_rule_normalises_a_hydrogenic_density() {
        let rule = radial_rule(400, 40.0);
        let norm: f64 = rule.iter().map(|&(r, w)| w * (-2.0 * r).exp() / PI).sum();
        assert!((norm - 1.0).abs() < 1e-12);
    }
}
