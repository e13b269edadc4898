//! Perdew–Wang 1992 local correlation (J. P. Perdew and Y. Wang, Phys. Rev. B 45, 13244 (1992)).
//!
//! `ε_c(r_s, ζ) = ε₀ + α_c f(ζ)/f''(0) (1 − ζ⁴) + (ε₁ − ε₀) f(ζ) ζ⁴`, where ε₀, ε₁ and −α_c share
//! the form `G(r_s) = −2A(1 + α₁r_s) ln[1 + 1/(2A(β₁r_s^{1/2} + β₂r_s + β₃r_s^{3/2} + β₄r_s²))]`
//! with the parameters of the paper's Table I, `f(ζ) = [(1+ζ)^{4/3} + (1−ζ)^{4/3} − 2]/(2^{4/3} − 2)`
//! and `r_s = (3/4πn)^{1/3}`.
//!
//! Two parameter sets are in use and both are here: [`Pw92Params::Published`] has the paper's
//! printed digits (A = 0.031091, 0.015545, 0.016887; f''(0) = 1.709921) and is the `pw92`
//! functional; [`Pw92Params::Refined`] carries the A values and f''(0) to more digits
//! (A = 0.0310907, 0.01554535, 0.0168869; f''(0) = 8/(9(2^{4/3} − 2))), the form that the PBE,
//! SCAN and r2SCAN correlation functionals are built on in the reference implementation
//! (common practice).

use super::{DENSITY_FLOOR, Family, Functional, Part, XcPoint};
use std::f64::consts::PI;

/// One row of Table I: A, α₁, β₁, β₂, β₃, β₄.
struct GParams {
    a: f64,
    alpha1: f64,
    beta: [f64; 4],
}

/// Which digits of the PW92 parameters to use.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Pw92Params {
    /// The digits printed in the paper.
    Published,
    /// A and f''(0) to more digits, as used inside PBE/SCAN/r2SCAN correlation.
    Refined,
}

const ALPHA1: [f64; 3] = [0.21370, 0.20548, 0.11125];
const BETAS: [[f64; 4]; 3] =
    [[7.5957, 3.5876, 1.6382, 0.49294], [14.1189, 6.1977, 3.3662, 0.62517], [10.357, 3.6231, 0.88026, 0.49671]];

impl Pw92Params {
    /// Parameters of ε₀, ε₁ and −α_c (the spin stiffness enters with a minus sign), and f''(0).
    fn rows(self) -> ([GParams; 3], f64) {
        let (a, fz20) = match self {
            Pw92Params::Published => ([0.031091, 0.015545, 0.016887], 1.709921),
            Pw92Params::Refined => ([0.0310907, 0.01554535, 0.0168869], 8.0 / (9.0 * F_ZETA_DENOMINATOR)),
        };
        let row = |i: usize| GParams { a: a[i], alpha1: ALPHA1[i], beta: BETAS[i] };
        ([row(0), row(1), row(2)], fz20)
    }
}

fn g(p: &GParams, rs: f64) -> f64 {
    let srs = rs.sqrt();
    let den = 2.0 * p.a * (p.beta[0] * srs + p.beta[1] * rs + p.beta[2] * rs * srs + p.beta[3] * rs * rs);
    // ln_1p keeps the far tail (large r_s, small 1/den) accurate.
    -2.0 * p.a * (1.0 + p.alpha1 * rs) * (1.0 / den).ln_1p()
}

/// 2^{4/3} − 2, the denominator of f(ζ).
const F_ZETA_DENOMINATOR: f64 = 0.519_842_099_789_746_4;

/// dG/dr_s, hartree/bohr.
fn g_slope(p: &GParams, rs: f64) -> f64 {
    let srs = rs.sqrt();
    let q = p.beta[0] * srs + p.beta[1] * rs + p.beta[2] * rs * srs + p.beta[3] * rs * rs;
    let dq = 0.5 * p.beta[0] / srs + p.beta[1] + 1.5 * p.beta[2] * srs + 2.0 * p.beta[3] * rs;
    -2.0 * p.a * p.alpha1 * (1.0 / (2.0 * p.a * q)).ln_1p() + (1.0 + p.alpha1 * rs) * dq / (q * (q + 1.0 / (2.0 * p.a)))
}

/// Spin-interpolation function f(ζ), with (1 ± ζ) ≤ 0 contributing 0.
pub fn f_zeta(zeta: f64) -> f64 {
    let c = |x: f64| if x > 0.0 { x * x.cbrt() } else { 0.0 };
    (c(1.0 + zeta) + c(1.0 - zeta) - 2.0) / F_ZETA_DENOMINATOR
}

/// Wigner–Seitz radius r_s = (3/4πn)^{1/3} of a density n (electrons/bohr³), bohr.
pub fn wigner_seitz_radius(n: f64) -> f64 {
    (3.0 / (4.0 * PI * n)).cbrt()
}

/// Correlation energy per electron ε_c(r_s, ζ), hartree.
pub fn epsilon(params: Pw92Params, rs: f64, zeta: f64) -> f64 {
    let ([unpolarized, polarized, stiffness], fz20) = params.rows();
    let e0 = g(&unpolarized, rs);
    let e1 = g(&polarized, rs);
    let alpha_c = -g(&stiffness, rs);
    let f = f_zeta(zeta);
    let z4 = zeta.powi(4);
    e0 + alpha_c * f / fz20 * (1.0 - z4) + (e1 - e0) * f * z4
}

/// ∂ε_c/∂r_s at fixed ζ, hartree/bohr.
pub fn epsilon_slope(params: Pw92Params, rs: f64, zeta: f64) -> f64 {
    let ([unpolarized, polarized, stiffness], fz20) = params.rows();
    let (d0, d1, dm) = (g_slope(&unpolarized, rs), g_slope(&polarized, rs), g_slope(&stiffness, rs));
    let f = f_zeta(zeta);
    let z4 = zeta.powi(4);
    d0 - dm * f / fz20 * (1.0 - z4) + (d1 - d0) * f * z4
}

/// Total density and relative spin polarisation ζ ∈ [−1, 1] of a point.
pub fn density_and_zeta(p: &XcPoint) -> (f64, f64) {
    let n = p.rho[0] + p.rho[1];
    (n, ((p.rho[0] - p.rho[1]) / n).clamp(-1.0, 1.0))
}

/// PW92 correlation with the published parameters.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Pw92;

impl Functional for Pw92 {
    fn id(&self) -> String {
        "pw92".into()
    }
    fn part(&self) -> Part {
        Part::Correlation
    }
    fn family(&self) -> Family {
        Family::Lda
    }
    fn energy_density(&self, p: &XcPoint) -> f64 {
        let (n, zeta) = density_and_zeta(p);
        if n <= DENSITY_FLOOR {
            return 0.0;
        }
        n * epsilon(Pw92Params::Published, wigner_seitz_radius(n), zeta)
    }
    fn citation(&self) -> &'static str {
        "J. P. Perdew and Y. Wang, Phys. Rev. B 45, 13244 (1992)"
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn slope_matches_a_finite_difference() {
        for params in [Pw92Params::Published, Pw92Params::Refined] {
            for rs in [0.05, 1.0, 7.0, 300.0] {
                for zeta in [0.0, 0.4, 1.0] {
                    let h = 1e-5 * rs;
                    let fd = (epsilon(params, rs + h, zeta) - epsilon(params, rs - h, zeta)) / (2.0 * h);
                    let got = epsilon_slope(params, rs, zeta);
                    assert!(((got - fd) / fd).abs() < 1e-7, "rs={rs} ζ={zeta}: {got} vs {fd}");
                }
            }
        }
    }

    #[test]
    fn parameter_sets_differ_only_slightly() {
        for rs in [0.1, 1.0, 10.0] {
            for zeta in [0.0, 0.5, 1.0] {
                let (a, b) = (epsilon(Pw92Params::Published, rs, zeta), epsilon(Pw92Params::Refined, rs, zeta));
                assert!(a != b && ((a - b) / a).abs() < 1e-4, "rs={rs} ζ={zeta}: {a} {b}");
            }
        }
        // f''(0) of the refined set is the exact second derivative of f at ζ = 0.
        let h = 1e-4;
        let fpp = (f_zeta(h) - 2.0 * f_zeta(0.0) + f_zeta(-h)) / (h * h);
        assert!((fpp - Pw92Params::Refined.rows().1).abs() < 1e-6);
        assert_eq!(F_ZETA_DENOMINATOR, 2.0f64.powf(4.0 / 3.0) - 2.0);
    }
}
