//! One calculation: the grid files of one quantum-chemistry run, analysed and ranked.
//!
//! A file that cannot be read or analysed is recorded as a failure and the others go on. Memory
//! stays bounded: with at least as many files as threads, files run in parallel and each one
//! sequentially (at most one file's grids per thread); with fewer, files run one after the other
//! and each uses every thread.

use crate::diagnostics::{Engine, OrbitalReport, Ranking};
use crate::grid::GridGeometry;
use crate::input::{LoadParams, geometry_of, load_cube};
use crate::par::Parallelism;
use std::path::PathBuf;

/// A file whose orbitals could not be analysed.
#[derive(Clone, Debug, PartialEq)]
pub struct FileFailure {
    /// The file, as given.
    pub source: String,
    /// What went wrong, naming the file and line where that is known.
    pub error: String,
}

/// Everything a calculation produced.
#[derive(Clone, Debug, PartialEq)]
pub struct Outcome {
    /// Ranked reports of every orbital that could be analysed.
    pub ranking: Ranking,
    /// Files that could not, in input order.
    pub failures: Vec<FileFailure>,
}

/// Analyses every orbital in `files` and ranks them by model `rank_by` of the engine.
pub fn analyse_files(files: &[PathBuf], load: &LoadParams, engine: &Engine, rank_by: usize) -> Outcome {
    let per_file = |path: &PathBuf, par: Parallelism| -> Result<Vec<OrbitalReport>, FileFailure> {
        let fail = |error: String| FileFailure { source: path.display().to_string(), error };
        let orbitals = load_cube(path, load).map_err(|e| fail(e.to_string()))?;
        orbitals
            .iter()
            .map(|o| engine.analyse(o, par).map_err(|e| fail(format!("{} ({}): {e}", path.display(), o.label))))
            .collect()
    };
    let threads = rayon::current_num_threads();
    let parallel_files = threads > 1 && files.len() >= threads;
    if parallel_files {
        prepare_solvers(files, engine);
    }
    let results = if parallel_files {
        Parallelism::Rayon.map(files.len(), |i| per_file(&files[i], Parallelism::Sequential))
    } else {
        files.iter().map(|f| per_file(f, Parallelism::Rayon)).collect()
    };
    let mut orbitals = Vec::new();
    let mut failures = Vec::new();
    for r in results {
        match r {
            Ok(o) => orbitals.extend(o),
            Err(f) => failures.push(f),
        }
    }
    Outcome { ranking: Ranking::new(orbitals, rank_by), failures }
}

/// Builds the Coulomb solvers of the files' grids up front with every thread, so that files
/// running in parallel do not wait on one sequential kernel build. Headers that cannot be read
/// are skipped here; their files fail later with the full error.
fn prepare_solvers(files: &[PathBuf], engine: &Engine) {
    let mut grids: Vec<GridGeometry> = Vec::new();
    for path in files {
        let Ok(header) = sixray_parsers::cube::read_cube_header(path) else { continue };
        let Ok((g, _)) = geometry_of(&header) else { continue };
        if !grids.iter().any(|k| k.same_lattice(&g)) {
            grids.push(g);
        }
    }
    if grids.len() <= engine.params().solver_cache {
        for g in &grids {
            engine.solver(g, Parallelism::Rayon);
        }
    }
}
