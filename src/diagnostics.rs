//! Per-orbital self-interaction diagnostics.
//!
//! For an occupied spin-orbital with density `n_i = f_i |φ_i|²` (atomic units throughout):
//!
//! ```text
//! J_i      = ½ ∬ n_i(r) n_i(r') / |r − r'|          Hartree self-repulsion
//! E_xc,i   = E_x[n_i, 0] + E_c[n_i, 0]              per model, fully spin-polarised
//! δ_i      = J_i + E_xc,i                          one-electron self-interaction error
//! c_i      = −E_x,i / J_i                           cancellation ratio (1 for exact exchange)
//! α*_i     = (2/3) J_i / (−E_x,i^LSDA)              the Xα value that would cancel J_i exactly
//! PZ       = −Σ_i g_i δ_i                           Perdew–Zunger correction of the calculation
//! ```
//!
//! where `g_i` is the number of spin-orbitals a record stands for (2 for a restricted spatial
//! orbital). The exact functional has δ_i = 0 for every one-electron density.

use crate::cusp::{self, CuspModel};
use crate::gradient::{GradientParams, gradient_squared};
use crate::grid::{GridGeometry, Nucleus};
use crate::input::KindOrigin;
use crate::par::Parallelism;
use crate::memory::{MemoryBudget, OutOfMemory};
use crate::poisson::{HartreeParams, HartreeSolver, PoissonError};
use crate::xc::slater::XAlpha;
use crate::xc::{DENSITY_FLOOR, Family, Functional, Model, Part, XcPoint};
use serde::{Deserialize, Serialize};
use std::collections::HashMap;
use std::sync::{Arc, Mutex};
use thiserror::Error;

/// Which spin-orbitals a grid of orbital values stands for.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Spin {
    /// A spatial orbital of a closed-shell calculation: two spin-orbitals, one per spin.
    Restricted,
    /// A spin-up orbital of an unrestricted calculation.
    Alpha,
    /// A spin-down orbital of an unrestricted calculation.
    Beta,
}

impl Spin {
    /// Spin-orbitals the record stands for (its weight in sums over occupied spin-orbitals).
    pub fn spin_orbitals(self) -> u32 {
        match self {
            Spin::Restricted => 2,
            Spin::Alpha | Spin::Beta => 1,
        }
    }

    /// Lower-case name used in reports.
    pub fn as_str(self) -> &'static str {
        match self {
            Spin::Restricted => "restricted",
            Spin::Alpha => "alpha",
            Spin::Beta => "beta",
        }
    }
}

/// What the values of a grid orbital are.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum Kind {
    /// Orbital amplitudes φ_i, 1/bohr^{3/2}; the density is f_i φ_i².
    #[default]
    Amplitude,
    /// Orbital densities |φ_i|², electrons/bohr³ per unit occupation.
    Density,
}

impl Kind {
    /// The name used in reports and options.
    pub fn as_str(self) -> &'static str {
        match self {
            Kind::Amplitude => "amplitude",
            Kind::Density => "density",
        }
    }
}

/// One spin-orbital on a grid, ready for analysis.
#[derive(Clone, Debug)]
pub struct GridOrbital {
    /// The file it came from, as given.
    pub source: String,
    /// A label unique within the calculation (file stem, plus the orbital index for files that
    /// hold several orbitals).
    pub label: String,
    /// Spin of the orbital.
    pub spin: Spin,
    /// Electrons in the spin-orbital, f_i (1 for a fully occupied one).
    pub occupation: f64,
    /// Where the values are.
    pub geometry: Arc<GridGeometry>,
    /// Nuclei listed in the file, bohr.
    pub nuclei: Arc<[Nucleus]>,
    /// What `values` are.
    pub kind: Kind,
    /// Who settled `kind`, and on what evidence (`None`: the caller, without evidence; the
    /// `kind-suspicious` check then weighs the values itself).
    pub kind_origin: Option<KindOrigin>,
    /// φ_i (amplitudes, 1/bohr^{3/2}) or |φ_i|² (densities, 1/bohr³) at every grid point, as read.
    pub values: Vec<f64>,
}

impl GridOrbital {
    /// One fully occupied α spin-orbital with `value(r)` (r in bohr) at every point of
    /// `geometry`, amplitudes or densities as `kind` says, labelled (and sourced) `label`: for
    /// analytic orbitals in tests, benchmarks and library use.
    pub fn sampled(label: &str, geometry: GridGeometry, nuclei: Vec<Nucleus>, kind: Kind, value: impl Fn([f64; 3]) -> f64) -> GridOrbital {
        GridOrbital {
            source: label.to_string(),
            label: label.to_string(),
            spin: Spin::Alpha,
            occupation: 1.0,
            values: geometry.sample(value),
            geometry: Arc::new(geometry),
            nuclei: Arc::from(nuclei),
            kind,
            kind_origin: None,
        }
    }

    /// n_i = f_i φ_i² (or f_i times the density values) at every grid point, electrons/bohr³.
    pub fn density(&self) -> Vec<f64> {
        self.values.iter().map(|&v| self.density_at(v)).collect()
    }

    /// [`GridOrbital::density`], or an error where its memory cannot be had.
    pub fn try_density(&self) -> Result<Vec<f64>, OutOfMemory> {
        crate::memory::try_collect(self.values.len(), self.values.iter().map(|&v| self.density_at(v)), "the orbital density")
    }

    /// The density of one stored value.
    fn density_at(&self, v: f64) -> f64 {
        match self.kind {
            Kind::Amplitude => self.occupation * v * v,
            Kind::Density => self.occupation * v,
        }
    }

    /// |∇n_i|² at every grid point, electrons²/bohr⁸. From amplitudes as `4f²φ²|∇φ|²`: φ is
    /// linear through nodal surfaces and decays half as fast as n, so its finite differences are
    /// far more accurate than those of n itself.
    pub fn density_gradient_squared(&self, params: &GradientParams, par: Parallelism) -> Result<Vec<f64>, OutOfMemory> {
        let f = self.occupation;
        let mut g = gradient_squared(&self.geometry, &self.values, params, par)?;
        match self.kind {
            Kind::Amplitude => g.iter_mut().zip(&self.values).for_each(|(g, v)| *g *= 4.0 * f * f * v * v),
            Kind::Density => g.iter_mut().for_each(|g| *g *= f * f),
        }
        Ok(g)
    }
}

/// One model's self-energies of one orbital, hartree.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct ModelEnergies {
    /// E_x[n_i, 0], hartree.
    pub exchange: f64,
    /// E_c[n_i, 0] (0 for exchange-only models), hartree.
    pub correlation: f64,
    /// δ_i = J_i + E_x + E_c, hartree.
    pub self_interaction: f64,
    /// −E_x / J_i (dimensionless).
    pub cancellation: f64,
}

/// Everything computed for one spin-orbital.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct OrbitalReport {
    /// The file it came from.
    pub source: String,
    /// Label, unique within the calculation.
    pub label: String,
    /// Spin of the record.
    pub spin: Spin,
    /// Electrons in the spin-orbital.
    pub occupation: f64,
    /// ∫ n_i, electrons (should equal the occupation; less means the box cuts the orbital off).
    pub norm: f64,
    /// J_i, hartree.
    pub hartree: f64,
    /// LSDA exchange self-energy, hartree (the basis of `optimal_alpha`).
    pub lsda_exchange: f64,
    /// α*_i (dimensionless).
    pub optimal_alpha: f64,
    /// Per model, in the engine's model order.
    pub models: Vec<ModelEnergies>,
    /// Estimated charge outside the grid's box, electrons.
    pub lost_charge: f64,
    /// Error bars of the energies (`None` when not computed).
    pub errors: Option<OrbitalErrors>,
    /// Reasons not to trust the numbers; empty when all is well.
    pub flags: Vec<Flag>,
    /// What the cusp correction changed (`None` when none was applied).
    pub cusp_correction: Option<CuspCorrection>,
    /// What the tail correction added (`None` when it is off).
    #[serde(default)]
    pub tail_correction: Option<TailCorrection>,
    /// The orbital energy the file gives, hartree (basis-set files; `None` for grid files).
    #[serde(default)]
    pub energy: Option<f64>,
    /// Which orbitals these are: as the file gives them, or Foster–Boys localized.
    #[serde(default)]
    pub set: OrbitalSet,
    /// How the basis-set file was read and checked (`None` for grid files).
    #[serde(default)]
    pub input: Option<InputCheck>,
    /// What the values were read as (amplitudes for basis-set files).
    #[serde(default)]
    pub kind: Option<Kind>,
    /// Who settled `kind`, and on what evidence (`None` where the caller gave it without).
    #[serde(default)]
    pub kind_origin: Option<KindOrigin>,
}

/// Where a number sits in an orbital record, named as in the JSON report: `group`, then the
/// model's name where the number is one model's, then `name` (`hartree`,
/// `models.lsda.self_interaction`, `errors.models.pbe.exchange`, `cusp_correction.hartree`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Quantity {
    /// The enclosing object's path (`""` at the top of the record, `models`, `errors.models`...).
    pub group: &'static str,
    /// Which model, by its position in the record's model order, if the number is one model's.
    pub model: Option<usize>,
    /// The number's own key.
    pub name: &'static str,
}

impl Quantity {
    /// The dotted name, with the model's name from `models` (in the record's model order).
    pub fn path(&self, models: &[&str]) -> String {
        let model = self.model.map(|m| models.get(m).map_or_else(|| format!("model {}", m + 1), |n| n.to_string()));
        [Some(self.group.to_string()), model, Some(self.name.to_string())]
            .into_iter()
            .flatten()
            .filter(|p| !p.is_empty())
            .collect::<Vec<_>>()
            .join(".")
    }
}

impl OrbitalReport {
    /// Every number the reports show of this record, with where it sits (energies in hartree).
    pub fn numbers(&self) -> Vec<(Quantity, f64)> {
        let q = |group, model, name| Quantity { group, model, name };
        let mut out = vec![(q("", None, "occupation"), self.occupation), (q("", None, "norm"), self.norm)];
        out.extend(self.energy.map(|e| (q("", None, "energy"), e)));
        out.push((q("", None, "lost_charge"), self.lost_charge));
        out.push((q("", None, "hartree"), self.hartree));
        out.push((q("", None, "optimal_alpha"), self.optimal_alpha));
        for (m, e) in self.models.iter().enumerate() {
            let at = |name| q("models", Some(m), name);
            out.extend([(at("exchange"), e.exchange), (at("correlation"), e.correlation)]);
            out.extend([(at("self_interaction"), e.self_interaction), (at("cancellation"), e.cancellation)]);
        }
        if let Some(errors) = &self.errors {
            out.push((q("errors", None, "hartree"), errors.hartree));
            for (m, e) in errors.models.iter().enumerate() {
                let at = |name| q("errors.models", Some(m), name);
                out.extend([(at("exchange"), e.exchange), (at("correlation"), e.correlation), (at("self_interaction"), e.self_interaction)]);
            }
        }
        let changes = |group: &'static str, models: &[(f64, f64)]| -> Vec<(Quantity, f64)> {
            let at = |m, name| q(group, Some(m), name);
            models.iter().enumerate().flat_map(|(m, d)| [(at(m, "exchange"), d.0), (at(m, "correlation"), d.1)]).collect()
        };
        if let Some(c) = &self.cusp_correction {
            out.extend(c.hartree.map(|h| (q("cusp_correction", None, "hartree"), h)));
            out.extend(changes("cusp_correction.models", &c.models));
        }
        if let Some(t) = &self.tail_correction {
            out.extend([(q("tail_correction", None, "lost_charge"), t.lost_charge), (q("tail_correction", None, "hartree"), t.hartree)]);
            out.extend(changes("tail_correction.models", &t.models));
        }
        if let Some(c) = &self.input {
            out.extend([(q("input", None, "orthonormality"), c.orthonormality), (q("input", None, "tolerance"), c.tolerance)]);
        }
        if let Some(e) = self.kind_origin.as_ref().and_then(|k| k.evidence) {
            let at = |name| q("kind_evidence", None, name);
            out.extend([(at("integral"), e.integral), (at("square_integral"), e.square_integral)]);
            out.extend([(at("negative_share"), e.negative_share), (at("nuclear_charge"), e.nuclear_charge)]);
        }
        out
    }

    /// The numbers of the record that are infinite or NaN, which are no results.
    pub fn non_finite(&self) -> Vec<(Quantity, f64)> {
        self.numbers().into_iter().filter(|(_, v)| !v.is_finite()).collect()
    }
}

/// Why a number that is not finite is no result, for the reports: `not a finite number (NaN)`.
pub fn non_finite_reason(value: f64) -> String {
    format!("not a finite number ({value})")
}

/// How a basis-set file's numbers were read, and the evidence that the reading is right: the
/// same for every orbital of the file.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct InputCheck {
    /// File format: `molden`, `fchk`, `wfn` or `wfx`.
    pub format: String,
    /// The program the file names as its writer, if any (a hint only).
    pub writer: Option<String>,
    /// The convention its numbers were read with (see `basis::convention`).
    pub convention: String,
    /// max |CᵀSC − I| over the file's occupied orbitals, per spin channel (dimensionless).
    pub orthonormality: f64,
    /// The largest deviation accepted for this file (1e-6, or what its printed digits allow).
    pub tolerance: f64,
    /// Whether effective core potentials replace the core electrons: the orbitals are the
    /// valence orbitals only (fchk, wfn, wfx files that say so).
    #[serde(default)]
    pub core_potentials: bool,
}

/// Canonical orbitals (as the program wrote them) or localized ones formed from them.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum OrbitalSet {
    /// As in the files.
    #[default]
    Canonical,
    /// Foster–Boys localized within each spin channel ([`crate::localize`]).
    Localized,
    /// Natural orbitals of a correlated calculation, with fractional occupations as the file
    /// gives them.
    Natural,
}

impl OrbitalSet {
    /// `canonical`, `localized` or `natural`.
    pub fn as_str(self) -> &'static str {
        match self {
            OrbitalSet::Canonical => "canonical",
            OrbitalSet::Localized => "localized",
            OrbitalSet::Natural => "natural",
        }
    }
}

/// Error bars of one orbital's energies: non-negative, hartree.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct OrbitalErrors {
    /// Of J.
    pub hartree: f64,
    /// Per model, in the engine's model order.
    pub models: Vec<ModelErrors>,
}

/// Error bars of one model's energies: non-negative, hartree.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct ModelErrors {
    /// Of E_x.
    pub exchange: f64,
    /// Of E_c.
    pub correlation: f64,
    /// Of δ = J + E_x + E_c (not the sum of the others: the parts' errors partly cancel).
    pub self_interaction: f64,
}

/// Why an orbital's numbers may not be trustworthy.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Flag {
    /// The grid does not resolve the orbital (a cusp at a nucleus, usually a core): an error bar
    /// of J or of some model's δ exceeds the tolerance.
    UnderResolved,
    /// Noticeable charge lies outside the box.
    TruncatedBox,
    /// The norm (with the charge lost outside the box) is off the occupation by over 1 %.
    NormOff,
    /// The values look like densities given as amplitudes, or the reverse.
    KindSuspicious,
    /// Some number of the record came out infinite or NaN: that number is not a result (reports
    /// show it as not one; see [`OrbitalReport::non_finite`]). Set by [`Ranking::new`].
    NotFinite,
}

impl Flag {
    /// The name used in reports.
    pub fn as_str(self) -> &'static str {
        match self {
            Flag::UnderResolved => "under-resolved",
            Flag::TruncatedBox => "truncated-box",
            Flag::NormOff => "norm-off",
            Flag::KindSuspicious => "kind-suspicious",
            Flag::NotFinite => "not-finite",
        }
    }
}

/// A result that cannot be trusted.
#[derive(Debug, Error, Clone, PartialEq)]
pub enum DiagnosticsError {
    /// An energy came out infinite or NaN (values so large that squaring overflows, say).
    #[error("{quantity} is not a finite number; are the grid values sensible?")]
    NonFinite {
        /// Which quantity.
        quantity: String,
    },
    /// The density is zero everywhere, so no ratio to J exists.
    #[error("the orbital density is zero everywhere (norm {norm:e})")]
    Empty {
        /// ∫ n_i, electrons.
        norm: f64,
    },
    /// The orbital's values do not match its grid, or the Coulomb solver's memory could not be
    /// had.
    #[error(transparent)]
    Poisson(#[from] crate::poisson::PoissonError),
    /// A grid-sized buffer could not be allocated.
    #[error(transparent)]
    OutOfMemory(#[from] OutOfMemory),
}

/// Settings of the engine.
#[derive(Clone, Debug, PartialEq)]
pub struct EngineParams {
    /// Settings of the Coulomb solver.
    pub hartree: HartreeParams,
    /// Settings of the density gradient (for gradient-corrected and meta-GGA models).
    pub gradient: GradientParams,
    /// Most Coulomb solvers (one per distinct grid) kept at once; each holds a kernel spectrum
    /// of about 4 bytes per padded grid point (error bars use a second, coarser grid per grid).
    pub solver_cache: usize,
    /// Error bars and checks.
    pub trust: crate::trust::TrustParams,
    /// Correct grid sums for the cusps at the nuclei the files list.
    pub cusp_correction: bool,
    /// Add the estimated tail beyond the box to J and every functional (off by default: the
    /// estimate extrapolates the two outermost layers; see [`crate::trust`]).
    pub tail_correction: bool,
}

impl Default for EngineParams {
    fn default() -> Self {
        EngineParams {
            hartree: HartreeParams::default(),
            gradient: GradientParams::default(),
            solver_cache: 8,
            trust: crate::trust::TrustParams::default(),
            cusp_correction: true,
            tail_correction: false,
        }
    }
}

/// Computes orbital reports for a fixed list of models, reusing Coulomb kernels between orbitals
/// on the same grid. Safe to share between threads.
pub struct Engine {
    models: Vec<Model>,
    params: EngineParams,
    solvers: Mutex<Vec<(GridGeometry, SolverCell)>>,
    /// Not part of the settings: it changes which files run together, never a number.
    memory: Option<MemoryBudget>,
}

/// A solver built at most once, by whichever thread asks first.
type SolverCell = Arc<Mutex<Option<Arc<HartreeSolver>>>>;

impl Engine {
    /// An engine evaluating `models` in this order.
    pub fn new(models: Vec<Model>, params: EngineParams) -> Self {
        Engine { models, params, solvers: Mutex::new(Vec::new()), memory: None }
    }

    /// The models, in report order.
    pub fn models(&self) -> &[Model] {
        &self.models
    }

    /// The engine's settings.
    pub fn params(&self) -> &EngineParams {
        &self.params
    }

    /// The Coulomb solver for `geometry`, built on first use (once, even if several threads
    /// ask); fails only when the kernel's memory cannot be had (then a later call tries again).
    pub fn solver(&self, geometry: &GridGeometry, par: Parallelism) -> Result<Arc<HartreeSolver>, PoissonError> {
        let cell = {
            let mut cache = self.solvers.lock().unwrap_or_else(|e| e.into_inner());
            match cache.iter().find(|(g, _)| g.same_lattice(geometry)) {
                Some((_, cell)) => cell.clone(),
                None => {
                    let cell = SolverCell::default();
                    cache.push((geometry.clone(), cell.clone()));
                    if cache.len() > self.params.solver_cache.max(1) {
                        cache.remove(0);
                    }
                    cell
                }
            }
        };
        // Whoever comes first builds; the others wait on the cell, not on the whole cache.
        let mut slot = cell.lock().unwrap_or_else(|e| e.into_inner());
        if let Some(solver) = slot.as_ref() {
            return Ok(solver.clone());
        }
        let solver = Arc::new(HartreeSolver::new(geometry, &self.params.hartree, par)?);
        *slot = Some(solver.clone());
        Ok(solver)
    }

    /// The grids whose Coulomb solvers are cached (built or being built).
    pub fn cached_solvers(&self) -> Vec<GridGeometry> {
        self.solvers.lock().unwrap_or_else(|e| e.into_inner()).iter().map(|(g, _)| g.clone()).collect()
    }

    /// Drops the cached solvers of the grids `keep` rejects (their memory goes once no
    /// calculation holds them any more).
    pub fn release_solvers(&self, keep: impl Fn(&GridGeometry) -> bool) {
        self.solvers.lock().unwrap_or_else(|e| e.into_inner()).retain(|(g, _)| keep(g));
    }

    /// This engine with a memory budget for the files run through it ([`crate::calculation`]).
    pub fn with_memory_budget(mut self, budget: Option<MemoryBudget>) -> Self {
        self.memory = budget;
        self
    }

    /// The memory budget of the files run through this engine, if any.
    pub fn memory_budget(&self) -> Option<&MemoryBudget> {
        self.memory.as_ref()
    }

    /// Grid sums of one orbital: norm, J and each model's energies, with the cusp models
    /// `cusps` says. With `detail`, the uncorrected J is computed as well (one more transform),
    /// to report the correction's size.
    pub(crate) fn grid_sums(&self, orbital: &GridOrbital, par: Parallelism, cusps: CuspModels, detail: bool) -> Result<GridSums, DiagnosticsError> {
        let w = orbital.geometry.voxel_volume();
        let rho = orbital.try_density()?;
        let norm = w * par.chunked_sum(rho.len(), |r| rho[r].iter().sum());
        let refine_xc = matches!(cusps, CuspModels::Fitted);
        let cusps: Vec<CuspModel> = match cusps {
            CuspModels::Off => Vec::new(),
            CuspModels::Fitted => orbital.nuclei.iter().filter_map(|n| CuspModel::fit(orbital, n)).collect(),
            CuspModels::SplitJ(given) => given.to_vec(),
        };
        let plain_hartree = || self.solver(&orbital.geometry, par)?.self_energy(&rho, par);
        let (hartree, plain) = if cusps.is_empty() {
            (plain_hartree()?, None)
        } else {
            let corrected = cusp::hartree(self, &orbital.geometry, &rho, &cusps, par)?;
            (corrected, if detail { Some(plain_hartree()?) } else { None })
        };

        // Gradients only when some model reads them; τ of one orbital follows from them.
        let needs_gradient = self.models.iter().any(|m| m.family() >= Family::Gga);
        let grad_sq = needs_gradient.then(|| orbital.density_gradient_squared(&self.params.gradient, par)).transpose()?;
        // Each distinct functional is integrated once, however many models share it.
        let mut cache: HashMap<(Part, String), f64> = HashMap::new();
        let mut energy = |f: &dyn Functional| -> f64 {
            *cache.entry((f.part(), f.id())).or_insert_with(|| w * grid_sum(f, &rho, grad_sq.as_deref(), par))
        };
        let mut lsda_exchange = energy(&XAlpha::lsda());
        let mut models: Vec<(f64, f64)> = self
            .models
            .iter()
            .map(|m| (energy(m.exchange.as_ref()), m.correlation.as_deref().map_or(0.0, &mut energy)))
            .collect();
        let correction = (!cusps.is_empty() && refine_xc).then(|| {
            // Subtract the grid's error near the cusps; LSDA exchange (for α*) likewise.
            let mut with_lsda = self.models.clone();
            with_lsda.push(Model::from_name("lsda-x").expect("built-in"));
            let mut deviations = cusp::xc_deviation(&cusps, orbital, &rho, grad_sq.as_deref(), &with_lsda, par);
            lsda_exchange -= deviations.pop().expect("the LSDA entry").0;
            let applied = CuspCorrection {
                nuclei: cusps.len(),
                hartree: plain.map(|p| hartree - p),
                models: deviations.iter().map(|&(dx, dc)| (-dx, -dc)).collect(),
            };
            for (m, (dx, dc)) in models.iter_mut().zip(deviations) {
                m.0 -= dx;
                m.1 -= dc;
            }
            applied
        });
        let refined = if correction.is_some() { cusps } else { Vec::new() };
        Ok(GridSums { norm, hartree, lsda_exchange, models, rho, grad_sq, cusp: correction, refined })
    }

    /// Analyses one spin-orbital: its energies and, unless switched off, their error bars and
    /// flags (see [`crate::trust`]).
    pub fn analyse(&self, orbital: &GridOrbital, par: Parallelism) -> Result<OrbitalReport, DiagnosticsError> {
        let cusps = if self.params.cusp_correction { CuspModels::Fitted } else { CuspModels::Off };
        let sums = self.grid_sums(orbital, par, cusps, true)?;
        let tail = (self.params.tail_correction || self.params.trust.error_bars).then(|| crate::trust::Tail::estimate(self, orbital, &sums));
        let (mut hartree, mut lsda_exchange, mut energies) = (sums.hartree, sums.lsda_exchange, sums.models.clone());
        // The tail's deviation is grid minus complete: subtract it.
        let tail_correction = tail.as_ref().filter(|_| self.params.tail_correction).map(|t| {
            hartree -= t.deviation.hartree;
            lsda_exchange -= t.lsda_exchange;
            for (e, d) in energies.iter_mut().zip(&t.deviation.models) {
                e.0 -= d.0;
                e.1 -= d.1;
            }
            TailCorrection {
                lost_charge: t.lost_charge,
                hartree: -t.deviation.hartree,
                models: t.deviation.models.iter().map(|d| (-d.0, -d.1)).collect(),
            }
        });
        let models = energies
            .iter()
            .map(|&(exchange, correlation)| ModelEnergies {
                exchange,
                correlation,
                self_interaction: hartree + exchange + correlation,
                cancellation: -exchange / hartree,
            })
            .collect::<Vec<_>>();
        let mut report = OrbitalReport {
            source: orbital.source.clone(),
            label: orbital.label.clone(),
            spin: orbital.spin,
            occupation: orbital.occupation,
            norm: sums.norm,
            hartree,
            lsda_exchange,
            optimal_alpha: (2.0 / 3.0) * hartree / -lsda_exchange,
            models,
            lost_charge: 0.0,
            errors: None,
            flags: Vec::new(),
            cusp_correction: sums.cusp.clone(),
            tail_correction,
            energy: None,
            set: OrbitalSet::Canonical,
            input: None,
            kind: Some(orbital.kind),
            kind_origin: orbital.kind_origin.clone(),
        };
        check_finite(&report, &self.models)?;
        if let Some(tail) = tail.as_ref().filter(|_| self.params.trust.error_bars) {
            crate::trust::assess(self, orbital, &sums, &mut report, tail, self.params.tail_correction, par)?;
        }
        Ok(report)
    }
}

/// Which cusp models [`Engine::grid_sums`] uses.
pub(crate) enum CuspModels<'a> {
    /// None: plain grid sums.
    Off,
    /// Fitted to the orbital at each listed nucleus; J and the functionals corrected.
    Fitted,
    /// These (fitted on the whole grid of which the orbital is a sub-lattice); J split with
    /// them, the functionals left plain.
    SplitJ(&'a [CuspModel]),
}

/// Plain grid sums of one orbital, with the density and |∇n|² they came from.
pub(crate) struct GridSums {
    /// ∫ n, electrons.
    pub norm: f64,
    /// J, hartree.
    pub hartree: f64,
    /// LSDA exchange, hartree.
    pub lsda_exchange: f64,
    /// Per model: exchange and correlation, hartree.
    pub models: Vec<(f64, f64)>,
    /// n at every grid point.
    pub rho: Vec<f64>,
    /// |∇n|² at every grid point, where some model needs it.
    pub grad_sq: Option<Vec<f64>>,
    /// The cusp correction applied, if any.
    pub cusp: Option<CuspCorrection>,
    /// The cusp models whose windows the functionals were refined in (empty without).
    pub refined: Vec<CuspModel>,
}

/// What the cusp correction changed in one orbital's energies (corrected minus plain), hartree.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct CuspCorrection {
    /// Nuclei at which the orbital has a cusp model.
    pub nuclei: usize,
    /// Change of J (`None` where the plain value was not computed).
    pub hartree: Option<f64>,
    /// Per model: change of exchange and of correlation.
    pub models: Vec<(f64, f64)>,
}

/// What the tail correction added to one orbital's energies (complete minus grid), hartree.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct TailCorrection {
    /// Estimated charge beyond the box, electrons.
    pub lost_charge: f64,
    /// Added to J.
    pub hartree: f64,
    /// Per model: added to exchange and to correlation.
    pub models: Vec<(f64, f64)>,
}

/// Σ_points e(n_i, 0) over the grid, hartree/bohr³, with `grad_sq` = |∇n_i|² where the
/// functional needs it and τ the von Weizsäcker value |∇n|²/8n of a single real orbital, from the
/// same gradient so that the iso-orbital indicator of meta-GGAs is exactly zero.
pub(crate) fn grid_sum(f: &dyn Functional, rho: &[f64], grad_sq: Option<&[f64]>, par: Parallelism) -> f64 {
    weighted_sum(f, rho, grad_sq, None, par)
}

/// [`grid_sum`] with a weight per point (bohr³; the sum is then an energy, hartree), or none.
pub(crate) fn weighted_sum(f: &dyn Functional, rho: &[f64], grad_sq: Option<&[f64]>, weights: Option<&[f64]>, par: Parallelism) -> f64 {
    let gradients = grad_sq.filter(|_| f.family() >= Family::Gga);
    par.chunked_sum(rho.len(), |range| {
        // One buffer per chunk, one virtual call per chunk; points without density are skipped.
        let mut points = Vec::with_capacity(range.len());
        let mut w = Vec::with_capacity(if weights.is_some() { range.len() } else { 0 });
        for k in range {
            let n = rho[k];
            if n <= DENSITY_FLOOR {
                continue;
            }
            let sigma = gradients.map_or(0.0, |g| g[k]);
            points.push(XcPoint::polarized(n, sigma, sigma / (8.0 * n)));
            if let Some(weights) = weights {
                w.push(weights[k]);
            }
        }
        if weights.is_some() { f.sum_weighted_energy_density(&points, &w) } else { f.sum_energy_density(&points) }
    })
}

/// Every energy of `r` finite, J positive and LSDA exchange negative (shared with the exact
/// path, [`crate::molecular`]).
pub(crate) fn check_finite(r: &OrbitalReport, models: &[Model]) -> Result<(), DiagnosticsError> {
    let bad = |q: &str| Err(DiagnosticsError::NonFinite { quantity: q.to_string() });
    for (q, v) in [("norm", r.norm), ("Hartree self-repulsion", r.hartree), ("LSDA exchange", r.lsda_exchange)] {
        if !v.is_finite() {
            return bad(q);
        }
    }
    if !(r.hartree > 0.0 && r.lsda_exchange < 0.0) {
        return Err(DiagnosticsError::Empty { norm: r.norm });
    }
    for (m, e) in models.iter().zip(&r.models) {
        if !(e.exchange.is_finite() && e.correlation.is_finite()) {
            return bad(&format!("the {} exchange-correlation energy", m.name));
        }
    }
    Ok(())
}

/// Totals of one model over a calculation.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ModelTotals {
    /// Perdew–Zunger correction −Σ g_i δ_i, hartree.
    pub perdew_zunger: f64,
    /// Mean cancellation ratio over occupied spin-orbitals, Σ g_i c_i / Σ g_i (dimensionless).
    pub mean_cancellation: f64,
}

/// The reports of one calculation, ranked, with per-model totals.
#[derive(Clone, Debug, PartialEq)]
pub struct Ranking {
    /// Index of the model that orders the orbitals.
    pub rank_by: usize,
    /// Orbital reports, worst first: decreasing |δ_i| under the ranking model; records without
    /// a finite δ under it last, in input order.
    pub orbitals: Vec<OrbitalReport>,
    /// Per model, in the engine's model order: the totals, or why there are none (a sum that
    /// misses some orbital is not the calculation's: records without a finite δ or −E_x/J under
    /// the model, or, set by [`Ranking::withhold_totals`], files that failed).
    pub totals: Vec<Result<ModelTotals, String>>,
    /// Occupied spin-orbitals counted (Σ g_i).
    pub spin_orbitals: u32,
}

/// The beginning of every reason a total is withheld for.
const INCOMPLETE_PREFIX: &str = "incomplete: ";

impl Ranking {
    /// Ranks `orbitals` by |δ_i| of model `rank_by` (ties keep their input order). Records with
    /// a number that is not finite get the [`Flag::NotFinite`] flag; those without a finite δ
    /// under `rank_by` are not ranked as numbers but put last.
    pub fn new(mut orbitals: Vec<OrbitalReport>, rank_by: usize) -> Self {
        for o in &mut orbitals {
            if !o.non_finite().is_empty() && !o.flags.contains(&Flag::NotFinite) {
                o.flags.push(Flag::NotFinite);
            }
        }
        let key = |o: &OrbitalReport| o.models.get(rank_by).map_or(Some(0.0), |m| Some(m.self_interaction.abs()).filter(|d| d.is_finite()));
        // Finite before not, then decreasing |δ|.
        orbitals.sort_by(|a, b| match (key(a), key(b)) {
            (Some(x), Some(y)) => y.total_cmp(&x),
            (x, y) => y.is_some().cmp(&x.is_some()),
        });
        let model_count = orbitals.first().map_or(0, |o| o.models.len());
        let spin_orbitals: u32 = orbitals.iter().map(|o| o.spin.spin_orbitals()).sum();
        let weighted = |m: usize, q: fn(&ModelEnergies) -> f64| -> f64 {
            orbitals.iter().map(|o| o.spin.spin_orbitals() as f64 * q(&o.models[m])).sum()
        };
        let totals = (0..model_count)
            .map(|m| {
                let missing = orbitals.iter().filter(|o| !(o.models[m].self_interaction.is_finite() && o.models[m].cancellation.is_finite())).count();
                if missing > 0 {
                    let n = orbitals.len();
                    return Err(format!("{INCOMPLETE_PREFIX}{missing} of {n} orbital records without a finite δ under this model"));
                }
                Ok(ModelTotals {
                    perdew_zunger: -weighted(m, |e| e.self_interaction),
                    mean_cancellation: weighted(m, |e| e.cancellation) / spin_orbitals as f64,
                })
            })
            .collect();
        Ranking { rank_by, orbitals, totals, spin_orbitals }
    }

    /// Withholds every total for `reason` (which says what is missing, without the `incomplete: `
    /// that every reason starts with), keeping any reason given before.
    pub fn withhold_totals(&mut self, reason: &str) {
        for t in &mut self.totals {
            let before = t.as_ref().err().map_or(String::new(), |r| format!("; {}", r.strip_prefix(INCOMPLETE_PREFIX).unwrap_or(r)));
            *t = Err(format!("{INCOMPLETE_PREFIX}{reason}{before}"));
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    fn gaussian_orbital(spin: Spin, exponent: f64, occupation: f64) -> GridOrbital {
        let h = 0.25;
        let geometry = GridGeometry::around([[h, 0.0, 0.0], [0.0, h, 0.0], [0.0, 0.0, h]], [0.0; 3], 6.0).unwrap();
        // Amplitude of the normalised Gaussian density (a/π)^{3/2} exp(−a r²).
        let norm = (exponent / PI).powf(0.75);
        let value = |r: [f64; 3]| norm * (-0.5 * exponent * (r[0] * r[0] + r[1] * r[1] + r[2] * r[2])).exp();
        GridOrbital { spin, occupation, ..GridOrbital::sampled(&format!("g{exponent}"), geometry, Vec::new(), Kind::Amplitude, value) }
    }

    fn engine(names: &[&str]) -> Engine {
        Engine::new(names.iter().map(|n| Model::from_name(n).unwrap()).collect(), EngineParams::default())
    }

    #[test]
    fn definitions_hold_for_a_gaussian() {
        let e = engine(&["lsda", "lsda-x", "slater", "xalpha=0.5"]);
        let r = e.analyse(&gaussian_orbital(Spin::Alpha, 1.0, 1.0), Parallelism::Rayon).unwrap();
        // J = √(a/2π) for a normalised Gaussian (textbook); LSDA exchange of the fully polarised
        // Gaussian density: −(3/2)(3/4π)^{1/3} ∫ n^{4/3} = −(3/2)(3/4π)^{1/3} (a/π)^{1/2} (3/4)^{3/2}
        // (a Gaussian integral worked by hand).
        let j = (1.0 / (2.0 * PI)).sqrt();
        let ex = -1.5 * (3.0 / (4.0 * PI)).cbrt() * (1.0 / PI).sqrt() * 0.75f64.powf(1.5);
        assert!((r.norm - 1.0).abs() < 1e-10);
        assert!((r.hartree - j).abs() < 1e-10);
        assert!((r.lsda_exchange - ex).abs() < 1e-9);
        let [lsda, lsda_x, slater, half] = [0, 1, 2, 3].map(|i| r.models[i]);
        assert_eq!(lsda.exchange, lsda_x.exchange);
        assert_eq!(lsda_x.correlation, 0.0);
        assert!(lsda.correlation < 0.0);
        assert!((slater.exchange - 1.5 * lsda_x.exchange).abs() < 1e-14);
        assert!((half.exchange - 0.75 * lsda_x.exchange).abs() < 1e-14);
        assert!((lsda.self_interaction - (r.hartree + lsda.exchange + lsda.correlation)).abs() < 1e-15);
        assert!((lsda_x.cancellation + lsda_x.exchange / r.hartree).abs() < 1e-15);
        // Xα with α* cancels J exactly.
        assert!((r.optimal_alpha * 1.5 * r.lsda_exchange + r.hartree).abs() < 1e-13);
    }

    #[test]
    fn occupation_scales_the_density() {
        let e = engine(&["lsda-x"]);
        let full = e.analyse(&gaussian_orbital(Spin::Alpha, 1.0, 1.0), Parallelism::Sequential).unwrap();
        let half = e.analyse(&gaussian_orbital(Spin::Alpha, 1.0, 0.5), Parallelism::Sequential).unwrap();
        assert!((half.norm - 0.5).abs() < 1e-10);
        assert!((half.hartree - 0.25 * full.hartree).abs() < 1e-12);
        assert!((half.models[0].exchange - 0.5f64.powf(4.0 / 3.0) * full.models[0].exchange).abs() < 1e-12);
    }

    #[test]
    fn ranking_orders_by_magnitude_and_counts_restricted_twice() {
        let e = engine(&["lsda-x", "lsda"]);
        let a = e.analyse(&gaussian_orbital(Spin::Restricted, 1.0, 1.0), Parallelism::Sequential).unwrap();
        let b = e.analyse(&gaussian_orbital(Spin::Beta, 3.0, 1.0), Parallelism::Sequential).unwrap();
        let ranking = Ranking::new(vec![a.clone(), b.clone()], 0);
        let d = |o: &OrbitalReport| o.models[0].self_interaction.abs();
        assert!(d(&ranking.orbitals[0]) >= d(&ranking.orbitals[1]));
        assert_eq!(ranking.spin_orbitals, 3);
        for m in 0..2 {
            let want = -(2.0 * a.models[m].self_interaction + b.models[m].self_interaction);
            let t = ranking.totals[m].as_ref().unwrap();
            assert!((t.perdew_zunger - want).abs() < 1e-15);
            let mean = (2.0 * a.models[m].cancellation + b.models[m].cancellation) / 3.0;
            assert!((t.mean_cancellation - mean).abs() < 1e-15);
        }
        // One solver for both orbitals' grid, one for the coarse sub-lattices of the error bars.
        assert_eq!(e.solvers.lock().unwrap().len(), 2);
    }

    #[test]
    fn numbers_that_are_not_finite_are_flagged_ranked_last_and_kept_out_of_the_totals() {
        let e = engine(&["lsda-x", "lsda"]);
        let good = |exponent| e.analyse(&gaussian_orbital(Spin::Alpha, exponent, 1.0), Parallelism::Sequential).unwrap();
        let (small, large) = (good(0.5), good(3.0));
        // A NaN δ under the second model only, and a NaN error bar: what a path without its own
        // guard could hand over.
        let mut bad = good(1.0);
        bad.models[1].self_interaction = f64::NAN;
        bad.errors.as_mut().unwrap().hartree = f64::INFINITY;
        let names = ["lsda-x", "lsda"];
        let paths: Vec<String> = bad.non_finite().iter().map(|(q, _)| q.path(&names)).collect();
        assert_eq!(paths, ["models.lsda.self_interaction", "errors.hartree"]);
        assert_eq!(non_finite_reason(f64::NAN), "not a finite number (NaN)");
        assert!(small.non_finite().is_empty() && small.numbers().len() > 10);

        // Under the first model the bad record has a finite δ and is ranked by it.
        let by_first = Ranking::new(vec![bad.clone(), small.clone(), large.clone()], 0);
        let d0 = |o: &OrbitalReport| o.models[0].self_interaction.abs();
        assert!(by_first.orbitals.windows(2).all(|w| d0(&w[0]) >= d0(&w[1])));
        let flagged: Vec<bool> = by_first.orbitals.iter().map(|o| o.flags.contains(&Flag::NotFinite)).collect();
        assert_eq!(flagged.iter().filter(|&&f| f).count(), 1);
        let t0 = by_first.totals[0].as_ref().unwrap();
        assert!((t0.perdew_zunger + bad.models[0].self_interaction + small.models[0].self_interaction + large.models[0].self_interaction).abs() < 1e-15);
        assert_eq!(by_first.totals[1], Err("incomplete: 1 of 3 orbital records without a finite δ under this model".to_string()));

        // Under the second, wherever it stood, it goes last; the others keep their order.
        for input in [vec![bad.clone(), small.clone(), large.clone()], vec![small.clone(), bad.clone(), large.clone()]] {
            let r = Ranking::new(input, 1);
            assert_eq!(r.orbitals.last().unwrap().label, bad.label);
            assert!(r.orbitals[0].models[1].self_interaction.abs() >= r.orbitals[1].models[1].self_interaction.abs());
            assert_eq!(r.orbitals.last().unwrap().flags.iter().filter(|f| **f == Flag::NotFinite).count(), 1);
        }
        // Ranking a ranked set again flags nothing twice; withholding keeps the earlier reason.
        let mut again = Ranking::new(by_first.orbitals.clone(), 0);
        assert_eq!(again.orbitals.iter().map(|o| o.flags.len()).sum::<usize>(), by_first.orbitals.iter().map(|o| o.flags.len()).sum::<usize>());
        again.withhold_totals("1 of 4 files failed");
        assert_eq!(again.totals[0], Err("incomplete: 1 of 4 files failed".to_string()));
        assert_eq!(
            again.totals[1],
            Err("incomplete: 1 of 4 files failed; 1 of 3 orbital records without a finite δ under this model".to_string())
        );
    }

    #[test]
    fn overflowing_values_are_reported_not_returned() {
        let e = engine(&["lsda"]);
        let mut o = gaussian_orbital(Spin::Alpha, 1.0, 1.0);
        o.values[100] = f64::INFINITY;
        assert!(matches!(e.analyse(&o, Parallelism::Sequential), Err(DiagnosticsError::NonFinite { .. })));
        o.values.fill(0.0);
        assert!(matches!(e.analyse(&o, Parallelism::Sequential), Err(DiagnosticsError::Empty { .. })));
    }
}
