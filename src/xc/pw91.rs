//! Perdew–Wang 1991 (PW91) gradient-corrected exchange (J. P. Perdew, J. A. Chevary,
//! S. H. Vosko, K. A. Jackson, M. R. Pederson, D. J. Singh and C. Fiolhais, Phys. Rev. B 46,
//! 6671 (1992), eq. 8).
//!
//! `e_x(n, σ) = e_x^{LDA}(n) F(s)` for an unpolarised density, with the reduced gradient
//! `s = |∇n| / (2 (3π²)^{1/3} n^{4/3})` and
//! `F(s) = [1 + a s sinh⁻¹(b s) + (c + d e^{−α s²}) s²] / [1 + a s sinh⁻¹(b s) + f s⁴]`,
//! a = 0.19645, b = 7.7956, c = 0.2743, d = −0.1508, f = 0.004, α = 100 (the printed digits);
//! spin-resolved by exact spin scaling.

use super::{Family, Functional, Part, XcPoint, lda_exchange_unpolarized, spin_scaled_exchange};
use std::f64::consts::PI;

const A: f64 = 0.19645;
const B: f64 = 7.7956;
const C: f64 = 0.2743;
const D: f64 = -0.1508;
const F: f64 = 0.004;
const ALPHA: f64 = 100.0;

/// Enhancement factor F(s) over LDA exchange at reduced gradient s (dimensionless).
fn enhancement(s: f64) -> f64 {
    let s2 = s * s;
    let gauss = C + D * (-ALPHA * s2).exp();
    let asinh_term = A * s * (B * s).asinh();
    if s <= 1.0 {
        (1.0 + asinh_term + gauss * s2) / (1.0 + asinh_term + F * s2 * s2)
    } else {
        // Numerator and denominator divided by s⁴, so that s⁴ cannot overflow; F → c/(f s²).
        let inv2 = 1.0 / s2;
        let inv4 = inv2 * inv2;
        let asinh_scaled = asinh_term * inv4;
        (inv4 + asinh_scaled + gauss * inv2) / (inv4 + asinh_scaled + F)
    }
}

/// PW91 exchange energy per volume of an unpolarised density n (bohr⁻³) with |∇n|² = sigma
/// (bohr⁻⁸), hartree/bohr³. Callers guarantee n above the density floor.
fn unpolarized(n: f64, sigma: f64) -> f64 {
    let s = sigma.max(0.0).sqrt() / (2.0 * (3.0 * PI * PI).cbrt() * n * n.cbrt());
    lda_exchange_unpolarized(n) * enhancement(s)
}

/// PW91 exchange, a GGA.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Pw91Exchange;

impl Functional for Pw91Exchange {
    fn id(&self) -> String {
        "pw91".into()
    }
    fn part(&self) -> Part {
        Part::Exchange
    }
    fn family(&self) -> Family {
        Family::Gga
    }
    /// Exchange energy per volume, hartree/bohr³; channels below the density floor give 0.
    fn energy_density(&self, p: &XcPoint) -> f64 {
        spin_scaled_exchange(p, |n, sigma, _| unpolarized(n, sigma))
    }
    fn citation(&self) -> &'static str {
        "J. P. Perdew, J. A. Chevary, S. H. Vosko, K. A. Jackson, M. R. Pederson, D. J. Singh and \
         C. Fiolhais, Phys. Rev. B 46, 6671 (1992)"
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::xc::slater::XAlpha;

    #[test]
    fn uniform_gas_limit_is_lsda_exchange() {
        // F(0) = 1 (Perdew et al. 1992, eq. 8; common practice).
        let lsda = XAlpha::lsda();
        for rho in [[0.3, 0.0], [0.2, 0.05], [1e-20, 0.0]] {
            let p = XcPoint { rho, ..XcPoint::default() };
            let (x, l) = (Pw91Exchange.energy_density(&p), lsda.energy_density(&p));
            assert!(((x - l) / l).abs() < 1e-14, "{rho:?}: {x} vs {l}");
        }
    }

    #[test]
    fn small_s_coefficient_and_branch_continuity() {
        // The a·s·sinh⁻¹(bs) terms cancel to O(s²), leaving F = 1 + (c + d) s² + O(s⁴) with
        // c + d = 0.1235 ≈ 10/81, the gradient-expansion coefficient the paper builds in
        // (Perdew et al. 1992, eq. 8 expanded).
        let s = 1e-4;
        assert!(((enhancement(s) - 1.0) / (s * s) - (C + D)).abs() < 1e-6);
        assert!((C + D - 10.0 / 81.0).abs() < 1e-4);
        // The two algebraic forms agree at the branch point s = 1.
        let below = enhancement(1.0);
        let above = enhancement(1.0 + 1e-15);
        assert!((below - above).abs() < 1e-14);
    }

    #[test]
    fn large_gradient_decay_and_finiteness() {
        // F → c/(f s²) as s → ∞ (eq. 8; the exchange energy density decays like n⁴/σ).
        for s in [1e4, 1e100] {
            let f = enhancement(s);
            assert!((f * F * s * s / C - 1.0).abs() < 1e-3, "s={s}: {f}");
        }
        // Where s² overflows F underflows to 0 rather than becoming NaN.
        assert_eq!(enhancement(1e200), 0.0);
        // Common practice: no NaN from zero or tiny densities; zero below the density floor.
        assert_eq!(Pw91Exchange.energy_density(&XcPoint::default()), 0.0);
        assert_eq!(Pw91Exchange.energy_density(&XcPoint::polarized(1e-31, 1.0, 0.0)), 0.0);
        for (n, g) in [(1e-29, 1e-20), (1e-25, 1.0), (1e-3, 1e300)] {
            let e = Pw91Exchange.energy_density(&XcPoint::polarized(n, g, 0.0));
            assert!(e.is_finite() && e <= 0.0, "n={n} σ={g}: {e}");
        }
    }

    #[test]
    fn spin_scaling_channel_additivity() {
        // Exact spin scaling (Oliver and Perdew 1979): E_x[n↑, n↓] = E_x[n↑, 0] + E_x[0, n↓].
        let p = XcPoint { rho: [0.3, 0.1], sigma: [0.02, 0.005, 0.004], tau: [0.0; 2] };
        let up = XcPoint { rho: [0.3, 0.0], sigma: [0.02, 0.0, 0.0], tau: [0.0; 2] };
        let down = XcPoint { rho: [0.0, 0.1], sigma: [0.0, 0.0, 0.004], tau: [0.0; 2] };
        let sum = Pw91Exchange.energy_density(&up) + Pw91Exchange.energy_density(&down);
        assert!((Pw91Exchange.energy_density(&p) - sum).abs() < 1e-15 * sum.abs());
    }
}
