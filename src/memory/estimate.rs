//! The peak memory of one file, from its header, before anything of its size is allocated.
//!
//! Grid path (cube files, and basis-set files sampled on a uniform grid), with `N` grid points,
//! `v` orbitals in the file, 8-byte values, `P = m0·m1·(m2/2+1)` points of the Coulomb solver's
//! padded half spectrum (about 4N), and `w` threads working on the file:
//!
//! ```text
//! file      = 8Nv                                   every orbital of the file, as read
//!           + max(sums(N, w), bars)                 one orbital at a time
//! sums(N,w) = 8N                                    its density
//!           + max(8N·cusp + T(N, w), 8N·gga)        J (the density less its cusps, the
//!                                                   transform's rows and planes), then |∇n|²
//! T(N, w)   ≈ 16N + w·(4·16·m0·m1)                  rows along the last axis + 4 planes a thread
//! bars      = 8N(1 + gga) + min(8, w)·(8N/8 + sums(N/8, 1))   the eight sub-lattices, min(8, w) at once
//! kernels   = 8P (full grid) + 8P/8 (sub-lattices)  shared by every file on the same grids
//! ```
//!
//! `cusp` is 1 where the cusp correction is on and the file lists nuclei, `gga` where some model
//! reads the gradient; `bars` only with error bars. The kernels are counted once per grid, for
//! the life of their cache entry; their set-up holds nothing else of their size. Basis-set
//! files on the exact path need the atom-centred grid's points (32 bytes each), the values and
//! gradients of a batch of orbitals there (32 bytes per point and orbital), and the Hermite
//! densities of the Coulomb integrals (at most 1 GiB, by their own batching).
//!
//! The figures are what the code allocates, read off it (`diagnostics::Engine::analyse`,
//! `poisson`, `trust::sublattice`, `cusp::hartree`); the README's *Memory* section compares them
//! with measured peaks.

use crate::diagnostics::Engine;
use crate::grid::GridGeometry;
use crate::input::{LoadParams, geometry_of};
use crate::poisson::HartreeSolver;
use crate::xc::Family;
use sixray_parsers::cube::read_cube_header;
use sixray_parsers::{FileFormat, sniff_format};
use std::path::Path;

/// Bytes of one value.
const VALUE: u64 = 8;
/// Sub-lattices of the error bars ([`crate::trust`]), and the fewest points per axis they need.
const SUBLATTICES: u64 = 8;
const MIN_COARSE_POINTS: usize = 8;

/// What one file will need.
#[derive(Clone, Debug, PartialEq)]
pub struct FileEstimate {
    /// Bytes at the file's peak besides the Coulomb kernels.
    pub own: u64,
    /// The Coulomb kernels it uses, with their grids (shared by files on the same grids),
    /// bytes.
    pub kernels: Vec<(GridGeometry, u64)>,
    /// What the need comes from, for messages (`a 400×400×400 grid`).
    pub what: String,
}

impl FileEstimate {
    /// Everything the file needs when it runs alone, bytes.
    pub fn total(&self) -> u64 {
        self.own + self.kernels.iter().map(|(_, b)| b).sum::<u64>()
    }
}

/// The grid-path estimate for `orbitals` orbitals on `geometry` (`nuclei`: the file lists
/// some), with `workers` threads on the file.
pub fn grid_estimate(geometry: &GridGeometry, orbitals: usize, nuclei: bool, engine: &Engine, workers: usize) -> FileEstimate {
    let params = engine.params();
    let workers = workers.max(1);
    let gga = engine.models().iter().any(|m| m.family() >= Family::Gga);
    let cusp = params.cusp_correction && nuclei;
    let points = geometry.len() as u64;
    let sums = |g: &GridGeometry, w: usize| {
        let n = g.len() as u64;
        let transform = HartreeSolver::transform_bytes(g, &params.hartree, w);
        VALUE * n + (VALUE * n * u64::from(cusp) + transform).max(VALUE * n * u64::from(gga))
    };
    let mut per_orbital = sums(geometry, workers);
    let (_, kernel) = HartreeSolver::kernel_bytes(geometry, &params.hartree, workers);
    let mut kernels = vec![(geometry.clone(), kernel)];
    if let Some(coarse) = params.trust.error_bars.then(|| coarse_lattice(geometry)).flatten() {
        let concurrent = SUBLATTICES.min(workers as u64);
        let one = VALUE * coarse.len() as u64 + sums(&coarse, 1);
        per_orbital = per_orbital.max(VALUE * points * (1 + u64::from(gga)) + concurrent * one);
        kernels.push((coarse.clone(), HartreeSolver::kernel_bytes(&coarse, &params.hartree, 1).1));
    }
    let [a, b, c] = geometry.shape;
    let what = if orbitals > 1 { format!("{orbitals} orbitals on a {a}×{b}×{c} grid") } else { format!("a {a}×{b}×{c} grid") };
    FileEstimate { own: VALUE * points * orbitals as u64 + per_orbital, kernels, what }
}

/// The lattice of the error bars' sub-lattices (every second point, shape `⌊n/2⌋`), or `None`
/// where the grid is too small to have them.
fn coarse_lattice(g: &GridGeometry) -> Option<GridGeometry> {
    let shape = g.shape.map(|n| n / 2);
    if shape.iter().any(|&n| n < MIN_COARSE_POINTS) {
        return None;
    }
    GridGeometry::new(g.origin, g.axes.map(|a| a.map(|x| 2.0 * x)), shape).ok()
}

/// The estimate for the file at `path` read as `load` says, with `workers` threads on it; an
/// error (the reader's) where its header cannot be read, which the file's own run will report
/// in full.
pub fn estimate_file(path: &Path, load: &LoadParams, engine: &Engine, workers: usize) -> Result<FileEstimate, String> {
    match sniff_format(path).map_err(|e| e.to_string())? {
        FileFormat::Cube => {
            let header = read_cube_header(path).map_err(|e| e.to_string())?;
            let (geometry, nuclei) = geometry_of(&header).map_err(|e| e.to_string())?;
            Ok(grid_estimate(&geometry, header.values_per_point, !nuclei.is_empty(), engine, workers))
        }
        FileFormat::Unknown { start } => Err(start),
        _ => crate::molecular::memory_estimate(path, &load.molecular, engine, workers).map_err(|e| e.to_string()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diagnostics::EngineParams;
    use crate::trust::TrustParams;
    use crate::xc::Model;

    fn engine(models: &[&str], error_bars: bool) -> Engine {
        let params = EngineParams { trust: TrustParams { error_bars, ..TrustParams::default() }, ..EngineParams::default() };
        Engine::new(models.iter().map(|m| Model::from_name(m).unwrap()).collect(), params)
    }

    fn cube(n: usize) -> GridGeometry {
        let h = 0.2;
        GridGeometry::new([0.0; 3], [[h, 0.0, 0.0], [0.0, h, 0.0], [0.0, 0.0, h]], [n; 3]).unwrap()
    }

    #[test]
    fn the_estimate_follows_the_formula() {
        // 100³ points pad to 200³ (2n − 1 = 199 → 200, 7-smooth): P = 200·200·101.
        let g = cube(100);
        let (n, p) = (1_000_000u64, 200 * 200 * 101u64);
        let e = grid_estimate(&g, 1, false, &engine(&["lsda"], false), 1);
        assert_eq!(e.kernels.len(), 1);
        // The kept kernel 8P and two rows more while it is built, and one worker's slab of
        // complex values, first-axis columns and last-axis row.
        let slab = 200 * 101;
        assert_eq!(e.kernels[0].1, 8 * p + 2 * 8 * slab + 16 * slab + 16 * 16 * 200 + 24 * 200);
        // values + density + transform (16 bytes per row point and 4 planes of 200²).
        let transform = 16 * 100 * 100 * 101 + (4 * 200 * 200 + 16 * 200) * 16;
        assert_eq!(e.own, 8 * n + 8 * n + transform);
        assert_eq!(e.what, "a 100×100×100 grid");

        // Gradients, cusps and error bars only add; more threads add planes and sub-lattices.
        let full = grid_estimate(&g, 3, true, &engine(&["pbe"], true), 2);
        assert_eq!(full.kernels.len(), 2);
        assert!(full.own > e.own + 2 * 8 * n && full.total() > full.own);
        assert!(grid_estimate(&g, 3, true, &engine(&["pbe"], true), 1).own < full.own);
        assert_eq!(full.what, "3 orbitals on a 100×100×100 grid");
        // A grid too small for sub-lattices has no coarse kernel.
        assert_eq!(grid_estimate(&cube(15), 1, true, &engine(&["lsda"], true), 1).kernels.len(), 1);
    }
}
