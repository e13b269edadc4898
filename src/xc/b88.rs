//! Becke 1988 gradient-corrected exchange (A. D. Becke, Phys. Rev. A 38, 3098 (1988)).
//!
//! Per spin channel, `e_xσ = −n_σ^{4/3} [C_x + β x_σ² / (1 + 6β x_σ sinh⁻¹ x_σ)]` with
//! `x_σ = |∇n_σ| / n_σ^{4/3}`, `C_x = (3/2)(3/4π)^{1/3}` (LSDA exchange per spin channel) and
//! β = 0.0042 hartree (the paper's fitted value); the 6 is the coefficient that gives the exact
//! `−1/(2r)` asymptote of the exchange energy density per electron (Becke's eq. 8).
//! Written here for the unpolarised density, `e_x(n, σ) = e_x^{LDA}(n) F(x)` with
//! `x = 2^{1/3} |∇n| / n^{4/3}` (the x_σ of each half-density) and
//! `F(x) = 1 + β x² / (C_x (1 + 6β x sinh⁻¹ x))`, and spin-resolved by exact spin scaling.

use super::{Family, Functional, Part, XcPoint, lda_exchange_unpolarized, spin_scaled_exchange};
use std::f64::consts::PI;

/// β of Becke's fit to atomic exchange energies, hartree (dimensionless in atomic units).
const BETA: f64 = 0.0042;

/// Enhancement factor over LSDA exchange at spin-channel reduced gradient x = |∇n_σ|/n_σ^{4/3}.
fn enhancement(x: f64) -> f64 {
    let cx = 1.5 * (3.0 / (4.0 * PI)).cbrt();
    // β x²/(1 + 6βx sinh⁻¹x), written as βx/(1/x + 6β sinh⁻¹x) for large x so that x² cannot
    // overflow (the correction then grows like x/ln x).
    let correction = if x <= 1.0 {
        BETA * x * x / (1.0 + 6.0 * BETA * x * x.asinh())
    } else {
        BETA * x / (1.0 / x + 6.0 * BETA * x.asinh())
    };
    1.0 + correction / cx
}

/// B88 exchange energy per volume of an unpolarised density n (bohr⁻³) with |∇n|² = sigma
/// (bohr⁻⁸), hartree/bohr³. Callers guarantee n above the density floor.
fn unpolarized(n: f64, sigma: f64) -> f64 {
    let x = 2f64.cbrt() * sigma.max(0.0).sqrt() / (n * n.cbrt());
    lda_exchange_unpolarized(n) * enhancement(x)
}

/// Becke 1988 (B88) exchange, a GGA.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct B88;

impl Functional for B88 {
    fn id(&self) -> String {
        "b88".into()
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
        "A. D. Becke, Phys. Rev. A 38, 3098 (1988)"
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::xc::slater::XAlpha;

    #[test]
    fn uniform_gas_limit_is_lsda_exchange() {
        // σ → 0 recovers LSDA exchange by construction (Becke 1988, eq. 8; common practice).
        let lsda = XAlpha::lsda();
        for rho in [[0.3, 0.0], [0.2, 0.05], [1e-20, 0.0]] {
            let p = XcPoint { rho, ..XcPoint::default() };
            let (b, l) = (B88.energy_density(&p), lsda.energy_density(&p));
            assert!(((b - l) / l).abs() < 1e-14, "{rho:?}: {b} vs {l}");
        }
    }

    #[test]
    fn small_gradient_expansion_has_coefficient_beta() {
        // e_xσ = −n_σ^{4/3}(C_x + β x²) + O(x⁴) (Becke 1988, eq. 8 expanded; common practice).
        let cx = 1.5 * (3.0 / (4.0 * PI)).cbrt();
        let x = 1e-3;
        assert!(((enhancement(x) - 1.0) * cx / (x * x) / BETA - 1.0).abs() < 1e-7);
    }

    #[test]
    fn asymptotic_energy_density_per_electron_approaches_minus_one_over_2r() {
        // For n = e^{−r}, e_x/n → −1/(2r) as r → ∞ (Becke 1988, the design condition of eq. 8);
        // the approach is logarithmic, ε·2r ≈ −1 + O(1/r) here, so check the trend and size.
        let dev = |r: f64| {
            let n = (-r).exp();
            (B88.energy_density(&XcPoint::polarized(n, n * n, 0.0)) / n * 2.0 * r + 1.0).abs()
        };
        assert!(dev(60.0) < dev(30.0) && dev(60.0) < 0.05, "{} {}", dev(30.0), dev(60.0));
    }

    #[test]
    fn spin_scaling_and_channel_additivity() {
        // Exact spin scaling (Oliver and Perdew 1979): E_x[n↑, n↓] = E_x[n↑, 0] + E_x[0, n↓].
        let p = XcPoint { rho: [0.3, 0.1], sigma: [0.02, 0.005, 0.004], tau: [0.0; 2] };
        let up = XcPoint { rho: [0.3, 0.0], sigma: [0.02, 0.0, 0.0], tau: [0.0; 2] };
        let down = XcPoint { rho: [0.0, 0.1], sigma: [0.0, 0.0, 0.004], tau: [0.0; 2] };
        let sum = B88.energy_density(&up) + B88.energy_density(&down);
        assert!((B88.energy_density(&p) - sum).abs() < 1e-15 * sum.abs());
        // An unpolarised point equals twice the channel of half the density.
        let unpol = XcPoint { rho: [0.25, 0.25], sigma: [0.01, 0.01, 0.01], tau: [0.0; 2] };
        let half = XcPoint::polarized(0.25, 0.01, 0.0);
        assert!((B88.energy_density(&unpol) - 2.0 * B88.energy_density(&half)).abs() < 1e-15);
    }

    #[test]
    fn zero_tiny_and_extreme_inputs_stay_finite() {
        // Common practice: no NaN from 0/0, zero below the density floor, finite far tail.
        assert_eq!(B88.energy_density(&XcPoint::default()), 0.0);
        assert_eq!(B88.energy_density(&XcPoint::polarized(1e-31, 1e-40, 0.0)), 0.0);
        for (n, g) in [(1e-29, 1e-20), (1e-25, 1.0), (1e-3, 1e300), (1e-12, 1e-24)] {
            let e = B88.energy_density(&XcPoint::polarized(n, g, 0.0));
            assert!(e.is_finite() && e < 0.0, "n={n} σ={g}: {e}");
        }
        // Large x: x² would overflow, the rewritten ratio must not; the correction grows like
        // x/(6 ln 2x) (Becke 1988, eq. 8 for large x).
        let x = 1e200f64;
        let want = x / (6.0 * (2.0 * x).ln());
        assert!(((enhancement(x) - 1.0) * 1.5 * (3.0 / (4.0 * PI)).cbrt() / want - 1.0).abs() < 1e-12);
    }
}
