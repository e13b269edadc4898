//! Exchange–correlation functionals and the models built from them.
//!
//! Every functional is written once for general spin-resolved input (an [`XcPoint`]) and returns
//! the energy density per volume `e(r) = n(r)·ε(r)` in hartree/bohr³, so that
//! `E = ∫ e(r) d³r`. The self-interaction path evaluates them on the fully spin-polarised density
//! of one orbital, `(n↑, n↓) = (n_i, 0)`; see [`XcPoint::polarized`].
//!
//! Adding a functional: write a type implementing [`Functional`] in its own file here, test it
//! against the shared point values, and name the models that use it in [`model`].

pub mod model;
pub mod pw92;
pub mod slater;

pub use model::{Model, ModelError};

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

/// Whether a functional models exchange or correlation.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
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
}

/// Densities below this (electrons/bohr³) contribute nothing: far below any integral's round-off,
/// and it keeps powers and logarithms away from 0/0 (common practice in grid codes).
pub const DENSITY_FLOOR: f64 = 1e-30;
