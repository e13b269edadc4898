//! The orbitals of a calculation against its total density.
//!
//! ```text
//! S(p)   = Σ_i g_i f_i |φ_i(p)|²      g_i = 2 for a restricted orbital, 1 for alpha or beta
//! Δ(p)   = S(p) − ρ(p)
//! ∫|Δ|   = V Σ_p |Δ(p)|,              max |Δ| over the grid points
//! ```
//!
//! Values printed with relative precision ε carry a rounding error of at most ε|φ| per
//! amplitude, so |Δ(p)| ≤ (2ε S(p) + ε ρ(p)) to first order (ε S(p) for files of orbital
//! densities). That bound, at every point and integrated, is what the difference is held to.

use super::{Flag, FlagKind, InspectParams};
use crate::diagnostics::{GridOrbital, Kind};
use crate::grid::{GridGeometry, Nucleus};
use crate::par::Parallelism;
use serde::Serialize;

/// Header numbers of two files describing the same grid agree to this, bohr: the shared files
/// print six decimals (rounding 5e-7); ten times that allows for other writers' rounding.
const HEADER_TOLERANCE: f64 = 1e-5;

/// Differences are allowed this many times the rounding bound: rounding errors of independent
/// values rarely line up, so the bound is seldom approached, and a factor of two keeps a file
/// whose printed digits we slightly misjudge from being flagged.
const BOUND_FACTOR: f64 = 2.0;

/// One orbital file in the sum.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct OrbitalFile {
    /// The file, as given.
    pub source: String,
    /// Orbitals it holds.
    pub orbitals: usize,
    /// `restricted`, `alpha` or `beta`.
    pub spin: &'static str,
    /// Spin-orbitals each of its orbitals stands for (g_i).
    pub weight: u32,
}

/// The orbital sum compared with the density.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct OrbitalSum {
    /// The files summed, in the order given.
    pub files: Vec<OrbitalFile>,
    /// ∫S, electrons.
    pub electrons: f64,
    /// ∫|S − ρ|, electrons.
    pub integrated_abs_difference: f64,
    /// What rounding of the printed values allows for ∫|S − ρ| (times the safety factor 2),
    /// electrons.
    pub integrated_tolerance: f64,
    /// Largest |S − ρ| on the grid, e/bohr³.
    pub max_abs_difference: f64,
    /// Where it is, bohr.
    pub max_at: [f64; 3],
    /// ρ there, e/bohr³.
    pub density_at_max: f64,
    /// Largest ratio of |S − ρ| to its rounding bound over the grid (flagged above 2).
    pub max_bound_ratio: f64,
}

/// Accumulates S file by file, so that only one file's orbitals are in memory at a time.
#[derive(Clone, Debug)]
pub struct OrbitalSumBuilder {
    geometry: GridGeometry,
    atoms: Vec<Nucleus>,
    sum: Vec<f64>,
    /// Σ g_i f_i φ_i² times its relative rounding (2ε for amplitudes, ε for densities).
    rounding: Vec<f64>,
    files: Vec<OrbitalFile>,
    flags: Vec<Flag>,
    /// A file was on another grid and left out.
    incomplete: bool,
}

impl OrbitalSumBuilder {
    /// An empty sum on the grid of the density, whose file lists `atoms`.
    pub fn new(geometry: &GridGeometry, atoms: &[Nucleus]) -> Self {
        OrbitalSumBuilder {
            geometry: geometry.clone(),
            atoms: atoms.to_vec(),
            sum: vec![0.0; geometry.len()],
            rounding: vec![0.0; geometry.len()],
            files: Vec::new(),
            flags: Vec::new(),
            incomplete: false,
        }
    }

    /// Adds the orbitals of one file (as [`crate::input::load_cube`] returns them), whose values
    /// carry relative precision `precision`. A file on another grid is left out and flagged (the
    /// comparison is then not made); one listing other atoms is flagged and added.
    pub fn add(&mut self, source: &str, orbitals: &[GridOrbital], precision: f64) {
        let Some(first) = orbitals.first() else { return };
        if !same_grid(&first.geometry, &self.geometry) || orbitals.iter().any(|o| o.values.len() != self.sum.len()) {
            self.flags.push(Flag {
                kind: FlagKind::OrbitalFile,
                message: format!(
                    "{source} is on another grid ({:?} points from {:?} bohr) than the density ({:?} from {:?}); \
                     the orbital sum is not compared",
                    first.geometry.shape, first.geometry.origin, self.geometry.shape, self.geometry.origin
                ),
            });
            self.incomplete = true;
            return;
        }
        if !same_atoms(&first.nuclei, &self.atoms) {
            self.flags.push(Flag {
                kind: FlagKind::OrbitalFile,
                message: format!("{source} lists other atoms than the density file"),
            });
        }
        for o in orbitals {
            let g = f64::from(o.spin.spin_orbitals());
            let n = o.density();
            let relative = match o.kind {
                Kind::Amplitude => 2.0 * precision,
                Kind::Density => precision,
            };
            for ((s, r), v) in self.sum.iter_mut().zip(&mut self.rounding).zip(&n) {
                *s += g * v;
                *r += relative * g * v.abs();
            }
        }
        self.files.push(OrbitalFile {
            source: source.to_string(),
            orbitals: orbitals.len(),
            spin: first.spin.as_str(),
            weight: first.spin.spin_orbitals(),
        });
    }

    /// Compares the sum with `density` (the values of the density file, on the grid given to
    /// [`OrbitalSumBuilder::new`]). The sum is `None` when a file was on another grid or none
    /// was added; the flags say why and what differs.
    pub fn finish(self, density: &[f64], params: &InspectParams, par: Parallelism) -> (Option<OrbitalSum>, Vec<Flag>) {
        let flags = self.flags;
        if self.incomplete || self.files.is_empty() || density.len() != self.sum.len() {
            return (None, flags);
        }
        let volume = self.geometry.voxel_volume();
        let (sum, rounding) = (&self.sum, &self.rounding);
        let bound = |p: usize| rounding[p] + params.value_precision * density[p].abs();
        let electrons = volume * par.chunked_sum(sum.len(), |r| sum[r].iter().sum());
        let integrated = volume * par.chunked_sum(sum.len(), |r| r.map(|p| (sum[p] - density[p]).abs()).sum());
        let tolerance = BOUND_FACTOR * volume * par.chunked_sum(sum.len(), |r| r.map(bound).sum());
        let mut worst = 0;
        let mut ratio: f64 = 0.0;
        for p in 0..sum.len() {
            let d = (sum[p] - density[p]).abs();
            if d > (sum[worst] - density[worst]).abs() {
                worst = p;
            }
            // A difference at a point whose bound is zero (both values exactly zero) is exact.
            let b = bound(p);
            if d > 0.0 {
                ratio = ratio.max(if b > 0.0 { d / b } else { f64::INFINITY });
            }
        }
        let [n1, n2] = [self.geometry.shape[1], self.geometry.shape[2]];
        let at = self.geometry.point([worst / (n1 * n2), (worst / n2) % n1, worst % n2]);
        let result = OrbitalSum {
            files: self.files,
            electrons,
            integrated_abs_difference: integrated,
            integrated_tolerance: tolerance,
            max_abs_difference: (sum[worst] - density[worst]).abs(),
            max_at: at,
            density_at_max: density[worst],
            max_bound_ratio: ratio,
        };
        let mut flags = flags;
        if integrated > tolerance || ratio > BOUND_FACTOR {
            flags.push(Flag {
                kind: FlagKind::OrbitalSum,
                message: format!(
                    "the orbitals hold {:.4} electrons; ∫|Σ g|φ|² − ρ| = {:.3e} e (rounding allows {:.1e}), largest \
                     |Δρ| = {:.3e} e/bohr³ at ({:.3}, {:.3}, {:.3}) bohr where ρ = {:.3e}; up to {:.1} times the \
                     rounding bound at a point (allowed: {BOUND_FACTOR})",
                    electrons,
                    integrated,
                    tolerance,
                    result.max_abs_difference,
                    at[0],
                    at[1],
                    at[2],
                    result.density_at_max,
                    ratio,
                ),
            });
        }
        (Some(result), flags)
    }
}

fn close(a: &[f64; 3], b: &[f64; 3]) -> bool {
    a.iter().zip(b).all(|(x, y)| (x - y).abs() <= HEADER_TOLERANCE)
}

fn same_grid(a: &GridGeometry, b: &GridGeometry) -> bool {
    a.shape == b.shape && close(&a.origin, &b.origin) && (0..3).all(|k| close(&a.axes[k], &b.axes[k]))
}

fn same_atoms(a: &[Nucleus], b: &[Nucleus]) -> bool {
    a.len() == b.len() && a.iter().zip(b).all(|(x, y)| x.atomic_number == y.atomic_number && close(&x.position, &y.position))
}
