//! Perdew–Wang 1992 local correlation (J. P. Perdew and Y. Wang, Phys. Rev. B 45, 13244 (1992)).
//!
//! `ε_c(r_s, ζ) = ε₀ + α_c f(ζ)/f''(0) (1 − ζ⁴) + (ε₁ − ε₀) f(ζ) ζ⁴`, where ε₀, ε₁ and −α_c share
//! the form `G(r_s) = −2A(1 + α₁r_s) ln[1 + 1/(2A(β₁r_s^{1/2} + β₂r_s + β₃r_s^{3/2} + β₄r_s²))]`
//! with the parameters of the paper's Table I, `f(ζ) = [(1+ζ)^{4/3} + (1−ζ)^{4/3} − 2]/(2^{4/3} − 2)`
//! and `r_s = (3/4πn)^{1/3}`. The constants are the paper's published digits (f''(0) = 1.709921),
//! the variant that reference libraries call the original PW92 parametrisation.

use super::{DENSITY_FLOOR, Family, Functional, Part, XcPoint};
use std::f64::consts::PI;

/// One row of Table I: A, α₁, β₁, β₂, β₃, β₄.
struct GParams {
    a: f64,
    alpha1: f64,
    beta: [f64; 4],
}

const UNPOLARIZED: GParams = GParams { a: 0.031091, alpha1: 0.21370, beta: [7.5957, 3.5876, 1.6382, 0.49294] };
const POLARIZED: GParams = GParams { a: 0.015545, alpha1: 0.20548, beta: [14.1189, 6.1977, 3.3662, 0.62517] };
/// Parameters of −α_c (the spin stiffness enters with a minus sign).
const STIFFNESS: GParams = GParams { a: 0.016887, alpha1: 0.11125, beta: [10.357, 3.6231, 0.88026, 0.49671] };
/// f''(0) as published.
const FZ20: f64 = 1.709921;

fn g(p: &GParams, rs: f64) -> f64 {
    let srs = rs.sqrt();
    let den = 2.0 * p.a * (p.beta[0] * srs + p.beta[1] * rs + p.beta[2] * rs * srs + p.beta[3] * rs * rs);
    // ln_1p keeps the far tail (large r_s, small 1/den) accurate.
    -2.0 * p.a * (1.0 + p.alpha1 * rs) * (1.0 / den).ln_1p()
}

/// Spin-interpolation function f(ζ).
pub(crate) fn f_zeta(zeta: f64) -> f64 {
    let c = |x: f64| if x > 0.0 { x * x.cbrt() } else { 0.0 };
    (c(1.0 + zeta) + c(1.0 - zeta) - 2.0) / (2.0f64.powf(4.0 / 3.0) - 2.0)
}

/// Correlation energy per electron ε_c(r_s, ζ), hartree.
pub fn epsilon(rs: f64, zeta: f64) -> f64 {
    let e0 = g(&UNPOLARIZED, rs);
    let e1 = g(&POLARIZED, rs);
    let alpha_c = -g(&STIFFNESS, rs);
    let f = f_zeta(zeta);
    let z4 = zeta.powi(4);
    e0 + alpha_c * f / FZ20 * (1.0 - z4) + (e1 - e0) * f * z4
}

/// PW92 correlation.
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
        let n = p.rho[0] + p.rho[1];
        if n <= DENSITY_FLOOR {
            return 0.0;
        }
        let rs = (3.0 / (4.0 * PI * n)).cbrt();
        let zeta = ((p.rho[0] - p.rho[1]) / n).clamp(-1.0, 1.0);
        n * epsilon(rs, zeta)
    }
    fn citation(&self) -> &'static str {
        "J. P. Perdew and Y. Wang, Phys. Rev. B 45, 13244 (1992)"
    }
}
