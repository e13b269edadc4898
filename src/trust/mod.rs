//! Error bars and sanity checks for grid results.
//!
//! Every energy Q (J, each model's E_x, E_c and δ) gets a non-negative error bar, the sum of
//! three estimates of what the grid misses and a floor; the values themselves are not changed
//! here (the cusp and tail corrections, where on, were applied before):
//!
//! ```text
//! σ_Q = max_k |Q_k(2h) − Q(h)| / 4       registration: the eight sub-lattices of every second point
//!     + 2 |ΔQ_cusp|                      cusps: what the cusp correction would change (see `cusp`)
//!     + |Q_tail|                         box: the tail beyond the faces (see `truncation`);
//!                                          half of it where the tail correction added it
//!     + ε |Q|                            what none of the above models
//! ```
//!
//! Registration: the fine-grid sum of a local quantity is the mean of its sums over the eight
//! sub-lattices of spacing 2h; how far those scatter measures how much the result depends on
//! where features (cusps, nodal surfaces) sit relative to the points. The fine grid's own error
//! is the same effect one level down; for a cusp, whose Fourier transform falls as k⁻⁴, it is
//! about 2⁴ = 16 times smaller, and on the shared reference orbitals 16–26 times. Dividing by 4
//! keeps a margin for orbitals that are not yet in that asymptotic regime. Registration alone
//! misses cusps that sit symmetrically between sub-lattice points (all eight see them alike),
//! hence the cusp term, doubled because it is a first-order model; and it cannot see charge
//! beyond the box, hence the tail term. With the cusp correction applied, the cusp term is a
//! quarter of the correction instead, and the functionals are compared on the sub-lattices by
//! their grid sums outside the refined windows and J is split with the whole grid's cusp
//! models (see `sublattice`).
//!
//! The last term covers errors the others do not model: integrands that are not smooth on
//! nodal surfaces (gradient-corrected exchange most of all), and whatever differs between the grid
//! and a fine reference quadrature. ε is 0.1 % for J and local functionals and 0.3 % for
//! gradient-corrected and meta-GGA ones (for δ, the sum over its parts): the largest errors seen
//! on resolved orbitals of the shared reference set, so it is calibrated there, not derived.
//!
//! Checks, each a [`Flag`]: the grid-dependent part (registration and cusps) of the error bar of
//! J or of some model's δ above the tolerance (under-resolved), charge lost beyond the box above 1e-3 of the occupation or a tail error of J
//! above the tolerance (truncated box), a norm (with the lost charge) off the occupation by more
//! than 1 % (norm off), and a kind given by the user that the values clearly contradict (kind
//! suspicious; see `input::decide`).
//!
//! On the shared reference set (PySCF 2.14 orbitals on 0.15 bohr grids against exact integrals
//! and libxc on a fine Becke grid) these bars bracket the reference for the share of orbitals and
//! models the README states, and stay below 1 % of J for orbitals the grid resolves.

mod sublattice;
mod truncation;

pub(crate) use truncation::Tail;

use crate::cusp::{self, CuspModel};
use crate::diagnostics::{DiagnosticsError, Engine, Flag, GridOrbital, GridSums, ModelErrors, OrbitalErrors, OrbitalReport};
use crate::input::{self, KindEvidence};
use crate::par::Parallelism;
use crate::xc::{Family, Functional};

/// Settings of error bars and checks.
#[derive(Clone, Debug, PartialEq)]
pub struct TrustParams {
    /// Compute error bars and flags (about doubles the cost of an orbital).
    pub error_bars: bool,
    /// Largest acceptable error bar of J and of each model's δ, hartree (default 1.6 mEh, about
    /// 1 kcal/mol, the accuracy chemists usually ask of an energy).
    pub tolerance: f64,
}

impl Default for TrustParams {
    fn default() -> Self {
        TrustParams { error_bars: true, tolerance: 1.6e-3 }
    }
}

/// Registration spreads are divided by this (see the module docs).
const REGISTRATION_DIVISOR: f64 = 4.0;
/// Without cusp correction, what the correction would change is multiplied by this (a
/// first-order estimate).
const CUSP_FACTOR: f64 = 2.0;
/// With cusp correction, this fraction of each correction is taken as its uncertainty.
const CUSP_RESIDUAL: f64 = 0.25;
/// With the tail correction, this fraction of each tail correction is taken as its uncertainty:
/// the exponential-and-monopole model is first order; on the shared reference set it
/// over-estimates J's tail by a quarter (lithium hydride's 2σ, 0.01 electrons outside) to a
/// half (the hydrogen atom, 7e-4 electrons).
const TAIL_RESIDUAL: f64 = 0.5;
/// Relative error bar floors (see the module docs): J and local functionals…
const FLOOR_LOCAL: f64 = 1e-3;
/// …and functionals of the gradient.
const FLOOR_GRADIENT: f64 = 3e-3;
/// Lost charge, as a fraction of the occupation, above which the box counts as truncated.
const LOST_CHARGE_LIMIT: f64 = 1e-3;
/// Relative norm error above which the norm counts as off.
pub(crate) const NORM_LIMIT: f64 = 1e-2;

/// Signed estimates of one source of error: J, and each model's exchange and correlation.
#[derive(Clone, Debug, Default, PartialEq)]
pub(crate) struct Deviation {
    pub(crate) hartree: f64,
    pub(crate) models: Vec<(f64, f64)>,
}

impl Deviation {
    fn zero(models: usize) -> Self {
        Deviation { hartree: 0.0, models: vec![(0.0, 0.0); models] }
    }

    fn self_interaction(&self, m: usize) -> f64 {
        self.hartree + self.models[m].0 + self.models[m].1
    }

    /// For δ: the signed sum (errors of an uncorrected grid partly cancel), or with `separate`
    /// the sum of magnitudes (what is left after a correction need not cancel).
    fn self_interaction_bound(&self, m: usize, separate: bool) -> f64 {
        if separate { self.hartree.abs() + self.models[m].0.abs() + self.models[m].1.abs() } else { self.self_interaction(m) }
    }
}

/// The grid's error on the cusps of an uncorrected orbital: for every functional, what the
/// cusp correction would change; for J the first-order `δq · v(R_A)` on the cusp models.
fn uncorrected_cusp_error(engine: &Engine, orbital: &GridOrbital, sums: &GridSums, par: Parallelism) -> Deviation {
    let mut total = Deviation::zero(engine.models().len());
    let cusps: Vec<CuspModel> = orbital.nuclei.iter().filter_map(|n| CuspModel::fit(orbital, n)).collect();
    let g = &orbital.geometry;
    for model in &cusps {
        total.hartree += cusp::charge_deviation(model, g) * cusp::potential_at(g, &sums.rho, model.position);
    }
    if !cusps.is_empty() {
        total.models = cusp::xc_deviation(&cusps, orbital, &sums.rho, sums.grad_sq.as_deref(), engine.models(), par);
    }
    total
}

/// Adds error bars, the lost charge and flags to `report`; `tail` is the box's tail, already
/// added to the values when `tail_applied`.
pub(crate) fn assess(
    engine: &Engine,
    orbital: &GridOrbital,
    sums: &GridSums,
    report: &mut OrbitalReport,
    tail: &Tail,
    tail_applied: bool,
    par: Parallelism,
) -> Result<(), DiagnosticsError> {
    let models = engine.models().len();
    let registration = sublattice::spreads(engine, orbital, sums, par)?;
    let (cusp, cusp_factor) = match &sums.cusp {
        // Corrected: what remains is a fraction of the correction.
        Some(applied) => (
            Deviation { hartree: applied.hartree.unwrap_or(0.0), models: applied.models.clone() },
            CUSP_RESIDUAL,
        ),
        None if engine.params().cusp_correction => (Deviation::zero(models), 0.0),
        // Not corrected: the grid's error on the cusps, estimated on the models.
        None => (uncorrected_cusp_error(engine, orbital, sums, par), CUSP_FACTOR),
    };
    // Corrected: what remains is a fraction of the correction; otherwise all of it.
    let tail_factor = if tail_applied { TAIL_RESIDUAL } else { 1.0 };
    let bar = |reg: f64, cusp: f64, tail: f64, floor: f64| reg / REGISTRATION_DIVISOR + cusp_factor * cusp.abs() + tail_factor * tail.abs() + floor;
    let floor = |f: Option<&dyn Functional>, value: f64| {
        let rate = if f.is_some_and(|f| f.family() >= Family::Gga) { FLOOR_GRADIENT } else { FLOOR_LOCAL };
        rate * value.abs()
    };
    let hartree_floor = floor(None, report.hartree);
    let errors = OrbitalErrors {
        hartree: bar(registration.hartree, cusp.hartree, tail.deviation.hartree, hartree_floor),
        models: engine
            .models()
            .iter()
            .enumerate()
            .map(|(m, model)| {
                let e = &report.models[m];
                let x_floor = floor(Some(model.exchange.as_ref()), e.exchange);
                let c_floor = floor(model.correlation.as_deref(), e.correlation);
                ModelErrors {
                    exchange: bar(registration.models[m].0, cusp.models[m].0, tail.deviation.models[m].0, x_floor),
                    correlation: bar(registration.models[m].1, cusp.models[m].1, tail.deviation.models[m].1, c_floor),
                    self_interaction: bar(
                        registration.self_interaction[m],
                        cusp.self_interaction_bound(m, cusp_factor == CUSP_RESIDUAL),
                        tail.deviation.self_interaction(m),
                        hartree_floor + x_floor + c_floor,
                    ),
                }
            })
            .collect(),
    };

    let tolerance = engine.params().trust.tolerance;
    let f = orbital.occupation;
    let mut flags = Vec::new();
    // Resolution: the grid-dependent parts of the bars (the tail has its own flag, and the
    // residual is the same on any grid).
    let resolution = |reg: f64, cusp: f64| reg / REGISTRATION_DIVISOR + cusp_factor * cusp.abs();
    let worst_resolution = (0..models)
        .map(|m| resolution(registration.self_interaction[m], cusp.self_interaction_bound(m, cusp_factor == CUSP_RESIDUAL)))
        .fold(resolution(registration.hartree, cusp.hartree), f64::max);
    if worst_resolution > tolerance {
        flags.push(Flag::UnderResolved);
    }
    if tail.lost_charge > LOST_CHARGE_LIMIT * f || tail.deviation.hartree.abs() > tolerance {
        flags.push(Flag::TruncatedBox);
    }
    if ((report.norm + tail.lost_charge) / f - 1.0).abs() > NORM_LIMIT {
        flags.push(Flag::NormOff);
    }
    if kind_suspicious(orbital) {
        flags.push(Flag::KindSuspicious);
    }
    let finite = errors.hartree.is_finite()
        && errors.models.iter().all(|e| e.exchange.is_finite() && e.correlation.is_finite() && e.self_interaction.is_finite());
    if !finite {
        return Err(DiagnosticsError::NonFinite { quantity: "an error bar".into() });
    }
    report.errors = Some(errors);
    report.lost_charge = tail.lost_charge;
    report.flags = flags;
    Ok(())
}

/// The kind the values were read as goes against what they clearly are ([`input::contradicts`]):
/// only a kind someone gave can, a detected one is what the values say.
fn kind_suspicious(orbital: &GridOrbital) -> bool {
    match &orbital.kind_origin {
        Some(origin) => origin.contradicted,
        None => input::contradicts(orbital.kind, &KindEvidence::of(&orbital.values, &orbital.geometry, &orbital.nuclei, None)),
    }
}

/// Registration spreads, hartree: max_k |Q_k − Q| over the sub-lattices, per quantity.
#[derive(Clone, Debug, PartialEq)]
struct Spreads {
    hartree: f64,
    models: Vec<(f64, f64)>,
    self_interaction: Vec<f64>,
}
