//! Self-interaction diagnostics of Gaussian-basis orbitals (molden, fchk, wfn and wfx files).
//!
//! For each occupied spin-orbital φ_i with f_i electrons:
//!
//! - J_i = f_i² J[|φ_i|²] exactly, from electron-repulsion integrals over the basis
//!   ([`crate::basis::coulomb`]);
//! - E_x and E_c of every model by quadrature on an atom-centred grid ([`crate::molgrid`]), with
//!   n = f φ², |∇n|² = 4f²φ²|∇φ|² and τ the von Weizsäcker value, all from analytic values and
//!   gradients of φ.
//!
//! Error bars: J carries the bound on what integral screening skipped; every grid quadrature
//! twice the difference between the chosen grid level and the next coarser one (the coarsest
//! level is compared with the next finer). For smooth integrands the difference alone already
//! overestimates the error about threefold; the factor two is for integrands with a kink on an
//! orbital's nodal surfaces (B88 exchange, whose x = |∇n|/n^{4/3} diverges there), where the
//! angular quadrature converges only as 1/n² and unevenly. Two levels can agree to the last
//! bit by accident, so every bar has a floor, relative to the value: for J the rounding of its
//! integral sum (4 n_c² ε, n_c Cartesian components), for grid
//! integrals the rounding of an N-point sum (N ε) plus the grid's relative error on the
//! orbital's norm (the one grid integral whose exact value, cᵀSc, is known); both plus
//! 2 |cᵀSc − 1|, what the printed coefficients leave open (J scales as the norm² squared).
//!
//! Checks, as on the grid path: a file is refused when an orbital's norm over the basis, an
//! energy or an error bar is not a finite number, or J is not positive or LSDA exchange not
//! negative (an empty orbital), naming the file, the orbital's line and label and the quantity
//! (files whose orbitals are not orthonormal, or with nuclei closer than
//! [`MIN_NUCLEAR_DISTANCE`], are refused on reading, see [`crate::basis`]); an orbital is flagged
//! `norm-off` when the grid's ∫n is off f·cᵀSc by more than the grid path's 1 % (the grid
//! misses part of the orbital, its functionals with it), and `under-resolved` when the grid
//! part of some model's bar of δ exceeds the tolerance. Occupations and spins come from the file: in a
//! restricted file an orbital with two electrons stands for two spin-orbitals of one electron,
//! one with at most one electron for a single α spin-orbital, and one in between for two
//! spin-orbitals sharing its electrons. Natural orbitals (fractional occupations f_i) of a
//! restricted file are always two spin-orbitals of f_i/2 electrons each: n_i = (f_i/2)|φ_i|²
//! per spin, and δ_i keeps its meaning (zero for the exact functional, whose E_xc of a
//! fractional one-electron density is −J, the ensemble result).

use crate::basis::coulomb::{CoulombParams, self_energies_with};
use crate::basis::{Atom, BasisConvention, BasisError, BasisSet, MIN_NUCLEAR_DISTANCE, MolecularOrbitals, OrbitalSpin, distance};
use crate::diagnostics::{
    Engine, Flag, GridOrbital, InputCheck, Kind, ModelEnergies, ModelErrors, OrbitalErrors, OrbitalReport, OrbitalSet, Spin, weighted_sum,
};
use crate::trust::NORM_LIMIT;
use crate::localize::{ChannelLocalization, LocalizeParams, boys, rotate};
use crate::grid::{GridGeometry, Nucleus};
use crate::molgrid::{GridAtom, GridLevel, MolecularGrid};
use crate::memory::estimate::{FileEstimate, grid_estimate};
use crate::par::Parallelism;
use crate::xc::slater::XAlpha;
use crate::xc::{Family, Functional, Part};
use std::collections::HashMap;
use std::path::Path;
use std::sync::Arc;

/// Settings of the basis-set path.
#[derive(Clone, Debug, PartialEq)]
pub struct MolecularParams {
    /// Atom-centred grid for the exchange–correlation integrals.
    pub grid: GridLevel,
    /// Instead of the exact path, sample the orbitals on a uniform grid of this spacing (bohr)
    /// and send them through the grid-file path, as if a program had written cube files: for
    /// measuring what a grid file costs in accuracy.
    pub uniform_spacing: Option<f64>,
    /// How far the uniform grid reaches beyond every atom, bohr.
    pub uniform_margin: f64,
}

/// Finest uniform spacing accepted, bohr: 0.1 bohr over a 20-bohr box is 8·10⁶ points per
/// orbital, and the free-space Coulomb solver pads that eightfold.
pub const MIN_UNIFORM_SPACING: f64 = 0.1;

impl Default for MolecularParams {
    fn default() -> Self {
        // 8 bohr: valence orbitals of neutral molecules hold less than 1e-6 of their charge
        // beyond it (anions need more).
        MolecularParams { grid: GridLevel::default(), uniform_spacing: None, uniform_margin: 8.0 }
    }
}

/// Label and orbital energy (hartree, where the file gives one) of each occupied spin-orbital
/// report a molden file yields, in report order; cheap (no integrals).
pub fn occupied_orbitals(path: &Path) -> Result<Vec<(String, Option<f64>)>, BasisError> {
    let orbitals = crate::basis::read_orbitals(path)?;
    Ok(occupied(&orbitals, &crate::input::stem(path)).into_iter().map(|o| (o.label, o.energy)).collect())
}

/// What a basis-set file says about occupations, for the failure of a file without occupied
/// orbitals: `the file lists N orbital(s), none occupied: …`, or why it lists none
/// ([`crate::basis::why_no_orbitals`]).
pub fn occupation_summary(path: &Path) -> Result<String, BasisError> {
    let orbitals = crate::basis::read_orbitals(path)?;
    let all = &orbitals.orbitals;
    if all.is_empty() {
        return crate::basis::why_no_orbitals(path);
    }
    let given: Vec<f64> = all.iter().filter_map(|o| o.occupation).collect();
    let detail = if given.is_empty() {
        "the file gives no occupations (no `Occup=` lines)".to_string()
    } else if given.len() < all.len() {
        format!("{} give no occupation, the largest given is {}", all.len() - given.len(), given.iter().copied().fold(f64::MIN, f64::max))
    } else if given.iter().all(|&f| f == 0.0) {
        "every `Occup=` is 0".to_string()
    } else {
        format!("the largest `Occup=` is {:e}", given.iter().copied().fold(f64::MIN, f64::max))
    };
    Ok(format!("the file lists {} orbital(s), none occupied: {detail}", all.len()))
}

/// Error bar of a grid integral per unit of its change from the neighbouring level (module docs).
const GRID_BAR_FACTOR: f64 = 2.0;

/// Rounding floor of exact J per (Cartesian component)², relative to |J|: J sums n_c⁴/8
/// distinct integrals, whose rounding errors add up like a random walk to √(n_c⁴/8) ε ≈
/// 0.35 n_c² ε of the terms' magnitudes, and these can exceed |J| tenfold where an orbital's
/// coefficients of both signs cancel: 4 n_c² ε. Water in cc-pVTZ (n_c = 65): 3.8e-12 relative,
/// against at most 1.5e-13 found from libcint (shared reference set, lithium hydride; PySCF 2.14).
const J_ROUNDING_PER_COMPONENT2: f64 = 4.0 * f64::EPSILON;

/// Points per evaluation pass when sampling on a uniform grid (bounds the gradients the basis
/// evaluator returns alongside the values: 32 bytes per point and orbital).
const SAMPLING_CHUNK: usize = 1 << 20;

/// Orbitals evaluated per pass over the grid (bounds memory: four values per point each).
const ORBITAL_BATCH: usize = 8;

/// An occupied orbital as diagnosed: coefficients, energy (hartree), spin, electrons per
/// spin-orbital and label.
struct Occupied {
    coefficients: Vec<f64>,
    energy: Option<f64>,
    spin: Spin,
    occupation: f64,
    label: String,
    /// Line of the file where the orbital starts (`None` for orbitals formed here).
    line: Option<usize>,
}

/// The occupied spin-orbitals of a file, with the occupation conventions of the module docs.
fn occupied(orbitals: &MolecularOrbitals, stem: &str) -> Vec<Occupied> {
    orbitals
        .orbitals
        .iter()
        .filter(|o| o.is_occupied())
        .map(|o| {
            let f = o.occupation.unwrap_or(0.0);
            let (spin, occupation, suffix) = match o.spin {
                // A restricted natural orbital holds f/2 electrons of each spin, however few.
                OrbitalSpin::Restricted if f > 1.0 || orbitals.natural => (Spin::Restricted, (f / 2.0).min(1.0), ""),
                OrbitalSpin::Restricted => (Spin::Alpha, f, ""),
                OrbitalSpin::Alpha => (Spin::Alpha, f.min(1.0), "a"),
                OrbitalSpin::Beta => (Spin::Beta, f.min(1.0), "b"),
            };
            Occupied {
                coefficients: o.coefficients.clone(),
                energy: o.energy,
                spin,
                occupation,
                label: format!("{stem}#{}{suffix}", o.index),
                line: Some(o.line),
            }
        })
        .collect()
}

/// The centres of the atom-centred grid: every atom, except a ghost within
/// [`MIN_NUCLEAR_DISTANCE`] of a nucleus or of a ghost kept before it (Becke's cells need
/// distinct centres; the grid around the other centre covers the ghost's functions, and nuclei
/// that close are refused on reading).
fn grid_atoms(basis: &BasisSet) -> Vec<GridAtom> {
    let mut kept: Vec<&Atom> = Vec::with_capacity(basis.atoms.len());
    for a in &basis.atoms {
        let near = |b: &&Atom| distance(a.position, b.position) < MIN_NUCLEAR_DISTANCE;
        if a.ghost && (basis.atoms.iter().filter(|b| !b.ghost).any(|b| near(&b)) || kept.iter().any(near)) {
            continue;
        }
        kept.push(a);
    }
    kept.iter().map(|a| GridAtom { position: a.position, atomic_number: a.atomic_number as i32 }).collect()
}

/// Grid points and weights of the molecule of `basis`.
fn grid_of(basis: &BasisSet, level: GridLevel) -> MolecularGrid {
    MolecularGrid::new(&grid_atoms(basis), level)
}

/// Per orbital: ∫n, and each distinct functional's integral, on one grid.
fn grid_integrals(
    basis: &BasisSet,
    orbitals: &[Occupied],
    functionals: &[std::sync::Arc<dyn Functional>],
    grid: &MolecularGrid,
    par: Parallelism,
) -> Vec<(f64, Vec<f64>)> {
    let needs_gradient = functionals.iter().any(|f| f.family() >= Family::Gga);
    let mut out = Vec::with_capacity(orbitals.len());
    for batch in orbitals.chunks(ORBITAL_BATCH) {
        let coefficients: Vec<&[f64]> = batch.iter().map(|o| o.coefficients.as_slice()).collect();
        let values = basis.orbital_values(&coefficients, &grid.points, par);
        for (o, v) in batch.iter().zip(values) {
            let f = o.occupation;
            let rho: Vec<f64> = v.values.iter().map(|p| f * p * p).collect();
            let grad_sq: Option<Vec<f64>> = needs_gradient.then(|| {
                v.values.iter().zip(&v.gradients).map(|(p, g)| 4.0 * f * f * p * p * (g[0] * g[0] + g[1] * g[1] + g[2] * g[2])).collect()
            });
            let norm = par.chunked_sum(rho.len(), |r| r.map(|k| grid.weights[k] * rho[k]).sum());
            let energies = functionals
                .iter()
                .map(|fu| weighted_sum(fu.as_ref(), &rho, grad_sq.as_deref(), Some(&grid.weights), par))
                .collect();
            out.push((norm, energies));
        }
    }
    out
}

/// Analyses every occupied orbital of a molden file with the engine's models (its Coulomb and
/// cusp settings do not apply: J is exact).
pub fn analyse_molden(path: &Path, engine: &Engine, params: &MolecularParams, par: Parallelism) -> Result<Vec<OrbitalReport>, BasisError> {
    let (basis, orbitals, convention) = crate::basis::read_any(path)?;
    let occupied = occupied(&orbitals, &crate::input::stem(path));
    let mut reports = analyse_occupied(path, &basis, &occupied, &convention, engine, params, par)?;
    if orbitals.natural {
        reports.iter_mut().for_each(|r| r.set = OrbitalSet::Natural);
    }
    Ok(reports)
}

/// The report form of how a file was read.
fn input_check(c: &BasisConvention) -> InputCheck {
    InputCheck {
        format: c.format.to_string(),
        writer: c.writer.map(str::to_string),
        convention: c.convention.clone(),
        orthonormality: c.check.max_deviation,
        tolerance: c.check.tolerance(),
        core_potentials: c.provenance.as_ref().is_some_and(|p| p.ecp),
    }
}

/// [`analyse_molden`] for the Foster–Boys localized orbitals of the file: within each spin
/// channel (orbitals of one occupation), dipole integrals over the basis, the rotation that
/// maximises Σ_i |⟨φ_i|r|φ_i⟩|², then the exact path on the rotated coefficients. Labels are
/// `STEM#locK` (with `a`/`b` for α/β channels); localized orbitals have no orbital energy.
pub fn analyse_molden_localized(
    path: &Path,
    engine: &Engine,
    params: &MolecularParams,
    localize: &LocalizeParams,
    par: Parallelism,
) -> Result<(Vec<OrbitalReport>, Vec<ChannelLocalization>), BasisError> {
    let (basis, orbitals, convention) = crate::basis::read_any(path)?;
    let stem = crate::input::stem(path);
    let canonical = occupied(&orbitals, &stem);
    let dipoles = basis.dipole_matrices();
    let n = basis.function_count();
    let mut localized = Vec::with_capacity(canonical.len());
    let mut channels = Vec::new();
    for spin in [Spin::Restricted, Spin::Alpha, Spin::Beta] {
        let channel: Vec<&Occupied> = canonical.iter().filter(|o| o.spin == spin).collect();
        let Some(first) = channel.first() else { continue };
        if let Some(o) = channel.iter().find(|o| o.occupation != first.occupation) {
            return Err(BasisError::Invalid {
                path: Some(path.to_path_buf()),
                line: None,
                message: format!(
                    "{} has {} electrons per spin-orbital, {} has {}; localization mixes orbitals of one occupation only",
                    o.label, o.occupation, first.label, first.occupation
                ),
            });
        }
        // ⟨φ_i|r|φ_j⟩ = c_iᵀ R c_j per direction.
        let half: Vec<[Vec<f64>; 3]> = channel
            .iter()
            .map(|o| dipoles.each_ref().map(|m| (0..n).map(|p| (0..n).map(|q| m[p * n + q] * o.coefficients[q]).sum()).collect()))
            .collect();
        let mo: [Vec<Vec<f64>>; 3] = [0, 1, 2].map(|x| {
            channel
                .iter()
                .map(|oi| half.iter().map(|h| oi.coefficients.iter().zip(&h[x]).map(|(c, r)| c * r).sum()).collect())
                .collect()
        });
        let result = boys(&mo, localize);
        let coefficients: Vec<Vec<f64>> = channel.iter().map(|o| o.coefficients.clone()).collect();
        let suffix = match spin {
            Spin::Restricted => "",
            Spin::Alpha => "a",
            Spin::Beta => "b",
        };
        for (k, c) in rotate(&coefficients, &result.rotation).into_iter().enumerate() {
            localized.push(Occupied {
                coefficients: c,
                energy: None,
                spin,
                occupation: first.occupation,
                label: format!("{stem}#loc{}{suffix}", k + 1),
                line: None,
            });
        }
        channels.push(ChannelLocalization { spin, orbitals: channel.len(), result });
    }
    let mut reports = analyse_occupied(path, &basis, &localized, &convention, engine, params, par)?;
    reports.iter_mut().for_each(|r| r.set = OrbitalSet::Localized);
    Ok((reports, channels))
}

/// Exact J and grid functionals of `occupied` orbitals of `basis` (reports name `path`), checked
/// like the grid path's results (see [`check_orbital`]). Errors name the file, the orbital and
/// the quantity that is not a finite number.
fn analyse_occupied(
    path: &Path,
    basis: &BasisSet,
    occupied: &[Occupied],
    convention: &BasisConvention,
    engine: &Engine,
    params: &MolecularParams,
    par: Parallelism,
) -> Result<Vec<OrbitalReport>, BasisError> {
    let input = input_check(convention);

    // Distinct functionals, LSDA exchange first (for α*).
    let mut functionals: Vec<Arc<dyn Functional>> = vec![Arc::new(XAlpha::lsda())];
    let mut index: HashMap<(Part, String), usize> = HashMap::from([((Part::Exchange, "lsda".to_string()), 0)]);
    for m in engine.models() {
        for f in std::iter::once(&m.exchange).chain(m.correlation.iter()) {
            index.entry((f.part(), f.id())).or_insert_with(|| {
                functionals.push(f.clone());
                functionals.len() - 1
            });
        }
    }
    let slot = |f: &Arc<dyn Functional>| index[&(f.part(), f.id())];

    let coefficients: Vec<&[f64]> = occupied.iter().map(|o| o.coefficients.as_slice()).collect();
    let coulomb = self_energies_with(basis, &coefficients, CoulombParams::default(), par);
    let grid = grid_of(basis, params.grid);
    let fine = grid_integrals(basis, occupied, &functionals, &grid, par);
    let error_bars = engine.params().trust.error_bars;
    // The neighbouring level for the error bars: the next coarser one, or for the coarsest the
    // next finer (an honest bar costs more there).
    let neighbour = match params.grid {
        GridLevel::Fine => GridLevel::Default,
        GridLevel::Default => GridLevel::Coarse,
        GridLevel::Coarse => GridLevel::Default,
    };
    let coarse = error_bars.then(|| grid_integrals(basis, occupied, &functionals, &grid_of(basis, neighbour), par));
    let overlap = basis.overlap_matrix();
    let j_rounding = J_ROUNDING_PER_COMPONENT2 * (basis.cartesian_count() as f64).powi(2);
    let tolerance = engine.params().trust.tolerance;

    let mut reports = Vec::with_capacity(occupied.len());
    for (k, o) in occupied.iter().enumerate() {
        let f = o.occupation;
        let hartree = f * f * coulomb.hartree[k];
        let (norm, energies) = &fine[k];
        // The orbital's norm² over the basis (1 within the orthonormality accepted on reading),
        // and the grid's relative error on f times it, the one grid integral known exactly.
        let exact_norm = basis.norm_squared(&overlap, &o.coefficients);
        let quadrature = (norm / (f * exact_norm) - 1.0).abs();
        let floors = Floors {
            // What rounding of the printed coefficients leaves open: J scales as the norm²
            // squared, LSDA exchange as its 4/3 power, correlation more slowly.
            coefficients: 2.0 * (exact_norm - 1.0).abs(),
            hartree: j_rounding,
            // Rounding of a sum of N terms of one sign: at most N ε of it (any order).
            grid: grid.len() as f64 * f64::EPSILON + quadrature,
        };
        let level_bar = |slot: usize| coarse.as_ref().map(|c| GRID_BAR_FACTOR * (c[k].1[slot] - energies[slot]).abs());
        let models: Vec<ModelEnergies> = engine
            .models()
            .iter()
            .map(|m| {
                let exchange = energies[slot(&m.exchange)];
                let correlation = m.correlation.as_ref().map_or(0.0, |c| energies[slot(c)]);
                ModelEnergies { exchange, correlation, self_interaction: hartree + exchange + correlation, cancellation: -exchange / hartree }
            })
            .collect();
        let hartree_bar = f * f * coulomb.screening_bound[k] + floors.hartree(hartree);
        let mut grid_part = 0.0f64;
        let errors = error_bars.then(|| OrbitalErrors {
            hartree: hartree_bar,
            models: engine
                .models()
                .iter()
                .zip(&models)
                .map(|(m, e)| {
                    let x = level_bar(slot(&m.exchange)).unwrap_or(0.0) + floors.grid(e.exchange);
                    let c = m.correlation.as_ref().map_or(0.0, |c| level_bar(slot(c)).unwrap_or(0.0) + floors.grid(e.correlation));
                    grid_part = grid_part.max(x + c);
                    ModelErrors { exchange: x, correlation: c, self_interaction: hartree_bar + x + c }
                })
                .collect(),
        });
        let lsda_exchange = energies[0];
        let mut flags = Vec::new();
        // As on the grid path: the grid-dependent part of a bar of δ above the tolerance (J has
        // none here), and a norm off by more than the grid path's limit.
        if error_bars && grid_part > tolerance {
            flags.push(Flag::UnderResolved);
        }
        if quadrature > NORM_LIMIT {
            flags.push(Flag::NormOff);
        }
        let report = OrbitalReport {
            source: path.display().to_string(),
            label: o.label.clone(),
            spin: o.spin,
            occupation: f,
            norm: *norm,
            hartree,
            lsda_exchange,
            optimal_alpha: (2.0 / 3.0) * hartree / -lsda_exchange,
            models,
            lost_charge: 0.0,
            errors,
            flags,
            cusp_correction: None,
            tail_correction: None,
            energy: o.energy,
            set: OrbitalSet::Canonical,
            input: Some(input.clone()),
            kind: Some(Kind::Amplitude),
            kind_origin: Some(crate::input::KindOrigin::computed()),
        };
        check_orbital(path, o, &report, engine, exact_norm)?;
        reports.push(report);
    }
    Ok(reports)
}

/// Relative error-bar floors of one orbital's energies on the exact path, dimensionless.
struct Floors {
    /// From the printed coefficients: twice the orbital's |cᵀSc − 1|.
    coefficients: f64,
    /// Rounding of exact J ([`J_ROUNDING_PER_COMPONENT2`] n_c²).
    hartree: f64,
    /// The grid: rounding of its sum, and its relative error on the orbital's norm.
    grid: f64,
}

impl Floors {
    /// Floor of J (hartree).
    fn hartree(&self, j: f64) -> f64 {
        (self.hartree + self.coefficients) * j.abs()
    }

    /// Floor of a grid integral of value `e` (hartree).
    fn grid(&self, e: f64) -> f64 {
        (self.grid + self.coefficients) * e.abs()
    }
}

/// The exact path's own checks of one orbital, as the grid path makes them
/// ([`crate::diagnostics`]): its norm over the basis, every energy and every error bar finite,
/// J positive and LSDA exchange negative. A failure refuses the file, naming the orbital (and
/// its line) and the quantity.
fn check_orbital(path: &Path, o: &Occupied, report: &OrbitalReport, engine: &Engine, exact_norm: f64) -> Result<(), BasisError> {
    let fail = |what: String| BasisError::at(path, o.line, format!("orbital {}: {what}", o.label));
    if !exact_norm.is_finite() {
        return Err(fail(format!("its norm ⟨φ|φ⟩ over the basis is not a finite number ({exact_norm})")));
    }
    crate::diagnostics::check_finite(report, engine.models()).map_err(|e| fail(e.to_string()))?;
    if let Some(e) = &report.errors {
        let bars = std::iter::once(e.hartree).chain(e.models.iter().flat_map(|m| [m.exchange, m.correlation, m.self_interaction]));
        if let Some(bar) = bars.into_iter().find(|b| !b.is_finite()) {
            return Err(fail(format!("an error bar is not a finite number ({bar})")));
        }
    }
    Ok(())
}

/// The occupied orbitals of a molden file sampled on a uniform grid of `spacing` bohr that
/// reaches `margin` bohr beyond every atom, as grid orbitals (amplitudes) for the grid path.
pub fn sample_molden(path: &Path, spacing: f64, margin: f64, par: Parallelism) -> Result<Vec<GridOrbital>, BasisError> {
    if !(spacing.is_finite() && spacing >= MIN_UNIFORM_SPACING && margin.is_finite() && margin >= 0.0) {
        return Err(BasisError::Invalid {
            path: Some(path.to_path_buf()),
            line: None,
            message: format!("a uniform grid needs a spacing of at least {MIN_UNIFORM_SPACING} bohr and a non-negative margin, got {spacing} and {margin}"),
        });
    }
    let (basis, orbitals, _) = crate::basis::read_any(path)?;
    let stem = crate::input::stem(path);
    let occupied = occupied(&orbitals, &stem);
    let geometry = uniform_grid(path, &basis, spacing, margin)?;
    let shape = geometry.shape;
    // Points in storage order (k fastest), made and evaluated a slab at a time so that memory
    // holds the values and one slab's points and gradients, not the whole grid's.
    let slab = shape[1] * shape[2];
    let slabs_per_chunk = (SAMPLING_CHUNK / slab).max(1);
    let nuclei: Arc<[Nucleus]> = basis
        .atoms
        .iter()
        .map(|a| Nucleus { atomic_number: a.atomic_number as i32, charge: a.atomic_number as f64, position: a.position })
        .collect::<Vec<_>>()
        .into();
    let geometry = Arc::new(geometry);
    let mut out = Vec::with_capacity(occupied.len());
    for batch in occupied.chunks(ORBITAL_BATCH) {
        let coefficients: Vec<&[f64]> = batch.iter().map(|o| o.coefficients.as_slice()).collect();
        let mut values: Vec<Vec<f64>> = batch.iter().map(|_| Vec::with_capacity(geometry.len())).collect();
        for first in (0..shape[0]).step_by(slabs_per_chunk) {
            let points: Vec<[f64; 3]> = (first..(first + slabs_per_chunk).min(shape[0]))
                .flat_map(|i| (0..shape[1]).flat_map(move |j| (0..shape[2]).map(move |k| [i, j, k])))
                .map(|ijk| geometry.point(ijk))
                .collect();
            for (v, chunk) in values.iter_mut().zip(basis.orbital_values(&coefficients, &points, par)) {
                v.extend(chunk.values);
            }
        }
        for (o, values) in batch.iter().zip(values) {
            out.push(GridOrbital {
                source: path.display().to_string(),
                label: o.label.clone(),
                spin: o.spin,
                occupation: o.occupation,
                geometry: geometry.clone(),
                nuclei: nuclei.clone(),
                kind: Kind::Amplitude,
                kind_origin: Some(crate::input::KindOrigin::computed()),
                values,
            });
        }
    }
    Ok(out)
}

/// The uniform grid of `spacing` bohr that reaches `margin` bohr beyond every atom of `basis`.
fn uniform_grid(path: &Path, basis: &BasisSet, spacing: f64, margin: f64) -> Result<GridGeometry, BasisError> {
    let (mut lo, mut hi) = ([f64::INFINITY; 3], [f64::NEG_INFINITY; 3]);
    for a in &basis.atoms {
        for x in 0..3 {
            lo[x] = lo[x].min(a.position[x] - margin);
            hi[x] = hi[x].max(a.position[x] + margin);
        }
    }
    let shape = [0, 1, 2].map(|x| ((hi[x] - lo[x]) / spacing).ceil() as usize + 1);
    let axes = [[spacing, 0.0, 0.0], [0.0, spacing, 0.0], [0.0, 0.0, spacing]];
    GridGeometry::new(lo, axes, shape)
        .map_err(|e| BasisError::Invalid { path: Some(path.to_path_buf()), line: None, message: format!("no uniform grid: {e}") })
}

/// What analysing the basis-set file at `path` with `workers` threads will need at its peak
/// (see [`crate::memory::estimate`]): on the exact path the atom-centred grid (32 bytes a point),
/// a batch of orbitals' values and gradients there (32 bytes a point and orbital) or the
/// Coulomb integrals' Hermite densities, whichever is more; on a uniform grid the sampled
/// orbitals and the grid path.
pub fn memory_estimate(path: &Path, params: &MolecularParams, engine: &Engine, workers: usize) -> Result<FileEstimate, BasisError> {
    let (basis, orbitals, _) = crate::basis::read_any(path)?;
    let count = occupied(&orbitals, &crate::input::stem(path)).len();
    let batch = ORBITAL_BATCH.min(count) as u64;
    let functions = basis.function_count() as u64;
    // Overlap and dipole matrices of the convention check and the localization, a few at once.
    let matrices = 4 * 8 * functions * functions;
    match params.uniform_spacing {
        Some(spacing) => {
            let geometry = uniform_grid(path, &basis, spacing, params.uniform_margin)?;
            let mut e = grid_estimate(&geometry, count, true, engine, workers);
            // While sampling: the sampled orbitals, and one pass's points and values with gradients.
            let pass = SAMPLING_CHUNK.max(geometry.shape[1] * geometry.shape[2]) as u64;
            let values = 8 * geometry.len() as u64 * count as u64;
            e.own = e.own.max(values + pass * (24 + 32 * batch)) + matrices;
            Ok(e)
        }
        None => {
            let atoms: Vec<GridAtom> =
                basis.atoms.iter().map(|a| GridAtom { position: a.position, atomic_number: a.atomic_number as i32 }).collect();
            let points = MolecularGrid::point_bound(&atoms, params.grid) as u64;
            // Points and weights; per orbital of a batch values and gradients; one density and |∇n|².
            let grid = points * (32 + 32 * batch + 16);
            let hermite = crate::basis::coulomb::hermite_peak_bytes(&basis, count);
            let what = format!("{points} atom-centred grid points and {functions} basis functions");
            Ok(FileEstimate { own: grid.max(hermite) + matrices, kernels: Vec::new(), what })
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diagnostics::EngineParams;
    use crate::xc::model::Model;

    /// A valid file in `dir`: one hydrogen with one normalised s function, occupied.
    fn hydrogen(dir: &Path) -> std::path::PathBuf {
        let path = dir.join("h.molden");
        let text = "[Molden Format]\n[Atoms] (AU)\nH 1 1 0.0 0.0 0.0\n[GTO]\n1 0\n s 1 1.00\n 1.0 1.0\n[MO]\n Occup= 1.0\n 1 1.0\n";
        std::fs::write(&path, text).expect("write");
        path
    }

    /// The hydrogen file analysed, then its report spoiled.
    #[test]
    fn non_finite_results_refuse_the_file_naming_the_orbital() {
        let dir = tempfile::tempdir().expect("tempdir");
        let path = hydrogen(dir.path());
        let engine = Engine::new(vec![Model::from_name("lsda").expect("lsda")], EngineParams::default());
        let params = MolecularParams { grid: GridLevel::Coarse, ..MolecularParams::default() };
        let reports = analyse_molden(&path, &engine, &params, Parallelism::Sequential).expect("a valid file");
        let o = Occupied { coefficients: vec![1.0], energy: None, spin: Spin::Alpha, occupation: 1.0, label: "h#1".into(), line: Some(8) };
        check_orbital(&path, &o, &reports[0], &engine, 1.0).expect("finite");

        let mut nan = reports[0].clone();
        nan.models[0].exchange = f64::NAN;
        let e = check_orbital(&path, &o, &nan, &engine, 1.0).expect_err("NaN exchange").to_string();
        assert!(e.starts_with(&format!("{}:8: orbital h#1: ", path.display())) && e.contains("not a finite number"), "{e}");
        let mut bar = reports[0].clone();
        bar.errors.as_mut().expect("bars").models[0].correlation = f64::INFINITY;
        let e = check_orbital(&path, &o, &bar, &engine, 1.0).expect_err("infinite bar").to_string();
        assert!(e.contains("orbital h#1: an error bar is not a finite number (inf)"), "{e}");
        let e = check_orbital(&path, &o, &reports[0], &engine, f64::NAN).expect_err("NaN norm").to_string();
        assert!(e.contains("norm ⟨φ|φ⟩ over the basis is not a finite number"), "{e}");
    }

    /// Every bar of the valid file is above zero, the J bar at its rounding floor (no screening
    /// skips anything for one s function).
    #[test]
    fn bars_have_floors() {
        let dir = tempfile::tempdir().expect("tempdir");
        let path = hydrogen(dir.path());
        let engine = Engine::new(vec![Model::from_name("pbe").expect("pbe")], EngineParams::default());
        let r = &analyse_molden(&path, &engine, &MolecularParams::default(), Parallelism::Sequential).expect("valid")[0];
        let e = r.errors.as_ref().expect("bars");
        // One Cartesian component: 4 ε |J| (the norm is exact for one normalised function, to rounding).
        let floor = J_ROUNDING_PER_COMPONENT2 * r.hartree;
        assert!(e.hartree >= floor && e.hartree < 2.0 * floor, "{} vs {floor}", e.hartree);
        assert!(e.models[0].exchange > 0.0 && e.models[0].correlation > 0.0, "{e:?}");
        assert!(r.flags.is_empty(), "{:?}", r.flags);
    }
}
