//! Exchange–correlation functionals and the models built from them.
//!
//! Every functional is written once for general spin-resolved input (an [`XcPoint`]) and returns
//! the energy density per volume `e(r) = n(r)·ε(r)` in hartree/bohr³, so that
//! `E = ∫ e(r) d³r`. The self-interaction path evaluates them on the fully spin-polarised density
//! of one orbital, `(n↑, n↓) = (n_i, 0)`; see [`XcPoint::polarized`].
//!
//! Adding a functional: write a type implementing [`Functional`] in its own file here, list it in
//! [`catalogue`] (the tests then check it against the shared reference values), and name the
//! models that use it in [`model`].

pub mod b88;
pub mod lyp;
pub mod model;
pub mod pbe;
pub mod pw91;
pub mod pw92;
pub mod r2scan;
pub mod scan;
pub mod slater;
pub mod vwn;

pub use model::{Model, ModelError};

use std::sync::Arc;

/// Every functional sixray implements (Xα appears as LSDA exchange, α = 2/3), exchange first.
/// `id()` is unique within each [`Part`]; user-defined models name functionals by it.
pub fn catalogue() -> Vec<Arc<dyn Functional>> {
    vec![
        Arc::new(slater::XAlpha::lsda()),
        Arc::new(b88::B88),
        Arc::new(pbe::PbeExchange),
        Arc::new(pw91::Pw91Exchange),
        Arc::new(scan::ScanExchange),
        Arc::new(r2scan::R2scanExchange),
        Arc::new(pw92::Pw92),
        Arc::new(vwn::Vwn5),
        Arc::new(pbe::PbeCorrelation),
        Arc::new(lyp::Lyp),
        Arc::new(scan::ScanCorrelation),
        Arc::new(r2scan::R2scanCorrelation),
    ]
}

/// The functional of `part` named `id`, if sixray has it.
pub fn find(part: Part, id: &str) -> Option<Arc<dyn Functional>> {
    catalogue().into_iter().find(|f| f.part() == part && f.id() == id)
}

/// Density input at one point, atomic units. Index 0 is spin up, 1 spin down.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct XcPoint {
    /// Spin densities n↑, n↓, electrons/bohr³.
    pub rho: [f64; 2],
    /// Contracted gradients ∇n↑·∇n↑, ∇n↑·∇n↓, ∇n↓·∇n↓, electrons²/bohr⁸.
    pub sigma: [f64; 3],
    /// Kinetic energy densities τ↑, τ↓ (τ = ½ Σ_i |∇φ_i|²), hartree/bohr³.
    pub tau: [f64; 2],
}

impl XcPoint {
    /// The fully spin-polarised input `(n, 0)` with `|∇n|² = grad_sq` and `τ↑ = tau`.
    pub fn polarized(n: f64, grad_sq: f64, tau: f64) -> Self {
        XcPoint { rho: [n, 0.0], sigma: [grad_sq, 0.0, 0.0], tau: [tau, 0.0] }
    }
}

/// Which ingredients a functional reads.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum Family {
    /// Local (spin) density only.
    Lda,
    /// Density and its gradient.
    Gga,
    /// Density, gradient and kinetic energy density.
    MetaGga,
}

impl Family {
    /// The trade's name of the family.
    pub fn label(self) -> &'static str {
        match self {
            Family::Lda => "LDA",
            Family::Gga => "GGA",
            Family::MetaGga => "meta-GGA",
        }
    }
}

/// Whether a functional models exchange or correlation.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Part {
    /// Exchange.
    Exchange,
    /// Correlation.
    Correlation,
}

/// An exchange or correlation energy functional.
pub trait Functional: Send + Sync + std::fmt::Debug {
    /// Short name, e.g. `pw92`, as used in model definitions.
    fn id(&self) -> String;
    /// Exchange or correlation.
    fn part(&self) -> Part;
    /// Ingredients read.
    fn family(&self) -> Family;
    /// Energy per volume at one point, hartree/bohr³ (zero where the density vanishes).
    fn energy_density(&self, p: &XcPoint) -> f64;
    /// Literature reference.
    fn citation(&self) -> &'static str;

    /// Σ_k e(points[k]), hartree/bohr³. One virtual call per batch: this default body is compiled
    /// for each implementation, so the per-point calls inside are static and inlined.
    fn sum_energy_density(&self, points: &[XcPoint]) -> f64 {
        points.iter().map(|p| self.energy_density(p)).sum()
    }

    /// Σ_k w_k e(points[k]) (weights in bohr³ give hartree), dispatched like
    /// [`Functional::sum_energy_density`].
    fn sum_weighted_energy_density(&self, points: &[XcPoint], weights: &[f64]) -> f64 {
        points.iter().zip(weights).map(|(p, w)| w * self.energy_density(p)).sum()
    }
}

/// Densities below this (electrons/bohr³) contribute nothing: far below any integral's round-off,
/// and it keeps powers and logarithms away from 0/0 (common practice in grid codes).
pub const DENSITY_FLOOR: f64 = 1e-30;

/// Exchange of a spin-polarised point from an exchange functional of unpolarised densities, by
/// the exact spin-scaling relation `E_x[n↑, n↓] = ½ E_x[2n↑] + ½ E_x[2n↓]` (Oliver and Perdew
/// 1979; common practice). `unpolarized(n, σ, τ)` is the energy per volume of the unpolarised
/// density n with |∇n|² = σ and kinetic energy density τ; channels below [`DENSITY_FLOOR`]
/// contribute nothing.
pub fn spin_scaled_exchange(p: &XcPoint, unpolarized: impl Fn(f64, f64, f64) -> f64) -> f64 {
    let channel = |n: f64, sigma: f64, tau: f64| {
        if n > DENSITY_FLOOR { 0.5 * unpolarized(2.0 * n, 4.0 * sigma, 2.0 * tau) } else { 0.0 }
    };
    channel(p.rho[0], p.sigma[0], p.tau[0]) + channel(p.rho[1], p.sigma[2], p.tau[1])
}

/// LDA exchange energy per volume of an unpolarised density, `−(3/4)(3/π)^{1/3} n^{4/3}`,
/// hartree/bohr³ (Dirac 1930).
pub fn lda_exchange_unpolarized(n: f64) -> f64 {
    -0.75 * (3.0 / std::f64::consts::PI).cbrt() * n * n.cbrt()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spin_scaling_reproduces_lsda_exchange() {
        let lsda = slater::XAlpha::lsda();
        for rho in [[0.3, 0.0], [0.2, 0.05], [1e-3, 1e-3]] {
            let p = XcPoint { rho, ..XcPoint::default() };
            let scaled = spin_scaled_exchange(&p, |n, _, _| lda_exchange_unpolarized(n));
            assert!((scaled - lsda.energy_density(&p)).abs() < 1e-15 * scaled.abs());
        }
    }

    #[test]
    fn catalogue_ids_are_unique_per_part() {
        let all = catalogue();
        for (i, a) in all.iter().enumerate() {
            for b in &all[i + 1..] {
                assert!(a.part() != b.part() || a.id() != b.id(), "{}", a.id());
            }
        }
        assert!(find(Part::Correlation, "pw92").is_some());
        assert!(find(Part::Exchange, "pw92").is_none());
    }
}
