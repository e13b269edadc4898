//! Slater's local exchange with an adjustable α (the Xα model).
//!
//! `e_x = −(9/4) α (3/4π)^{1/3} (n↑^{4/3} + n↓^{4/3})`, hartree/bohr³. α = 2/3 is the exchange of
//! the uniform electron gas (LSDA exchange, Dirac 1930); α = 1 is Slater's original value
//! (Slater, Phys. Rev. 81, 385 (1951)).

use super::{DENSITY_FLOOR, Family, Functional, Part, XcPoint};
use std::f64::consts::PI;

/// Xα exchange with the given α (dimensionless).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct XAlpha {
    /// The Xα scaling parameter; 2/3 gives LSDA exchange.
    pub alpha: f64,
}

/// α of LSDA exchange.
pub const LSDA_ALPHA: f64 = 2.0 / 3.0;

impl XAlpha {
    /// LSDA (Dirac) exchange, α = 2/3.
    pub fn lsda() -> Self {
        XAlpha { alpha: LSDA_ALPHA }
    }

    /// `−(9/4) α (3/4π)^{1/3}`: energy per volume of one spin channel divided by n_σ^{4/3}.
    pub fn prefactor(&self) -> f64 {
        -2.25 * self.alpha * (3.0 / (4.0 * PI)).cbrt()
    }
}

impl Functional for XAlpha {
    fn id(&self) -> String {
        if self.alpha == LSDA_ALPHA { "lsda".into() } else { format!("xalpha({})", self.alpha) }
    }
    fn part(&self) -> Part {
        Part::Exchange
    }
    fn family(&self) -> Family {
        Family::Lda
    }
    fn energy_density(&self, p: &XcPoint) -> f64 {
        let spin = |n: f64| if n > DENSITY_FLOOR { n * n.cbrt() } else { 0.0 };
        self.prefactor() * (spin(p.rho[0]) + spin(p.rho[1]))
    }
    fn citation(&self) -> &'static str {
        "J. C. Slater, Phys. Rev. 81, 385 (1951); α = 2/3: P. A. M. Dirac, Proc. Camb. Phil. Soc. 26, 376 (1930)"
    }
}
