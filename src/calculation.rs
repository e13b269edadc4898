//! Running orbital files through the engine: one calculation for `rank`, many for `batch`.
//!
//! Grid files (cube) go through the grid path ([`Engine::analyse`]); Gaussian-basis files
//! (molden, recognised by their first line) through the exact path of [`crate::molecular`].
//!
//! The unit of work is a file (one or several orbitals). A file that cannot be read or analysed
//! is recorded as a failure and the others go on. Memory stays bounded: with at least as many
//! files as threads, files run in parallel and each one sequentially (at most one file's grids
//! per thread); with fewer, files run one after the other and each uses every thread. Under a
//! memory budget, files start only when their estimated peak fits (see [`run_files`]). Results
//! do not depend on which: every sum has a fixed order.

use crate::cache::{ResultCache, file_digest, settings_fingerprint};
use crate::diagnostics::{Engine, GridOrbital, OrbitalReport, OrbitalSet, Ranking};
use crate::localize::{ChannelLocalization, LocalizeParams, localize_grid_orbitals};
use crate::grid::GridGeometry;
use crate::input::{LoadParams, geometry_of, load_cube, orbital_labels};
use crate::molecular::{
    MolecularParams, analyse_molden, analyse_molden_localized, occupation_summary, occupied_orbitals, sample_molden,
};
use crate::memory::estimate::{self, FileEstimate, estimate_file};
use crate::memory::ledger::Ledger;
use crate::par::Parallelism;
use crate::progress::{Progress, Silent};
use sixray_parsers::cube::read_cube_header;
use sixray_parsers::{FileFormat, sniff_format};
use std::path::{Path, PathBuf};

/// A file to analyse, and how.
#[derive(Clone, Debug, PartialEq)]
pub struct FileJob {
    /// Name of the calculation the file belongs to (for progress and reports; may be empty).
    pub calculation: String,
    /// The orbital file (cube grid or molden basis file).
    pub path: PathBuf,
    /// How to read it.
    pub load: LoadParams,
}

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
    /// Ranked reports of every orbital that could be analysed; no totals while a file failed.
    pub ranking: Ranking,
    /// Files that could not, in input order.
    pub failures: Vec<FileFailure>,
    /// For localized orbitals: how each spin channel's localization went (empty otherwise).
    pub localization: Vec<LocalizationSummary>,
    /// Files given that hold the same bytes as an earlier file of the calculation, and so were
    /// analysed once, as that one (empty when every file is distinct).
    pub duplicates: Vec<DuplicateFile>,
}

/// A file left out of a calculation because an earlier file of it has the same bytes (the same
/// path spelled otherwise, overlapping patterns, a copy under another name).
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct DuplicateFile {
    /// The file left out, as given.
    pub source: String,
    /// The earlier file with the same bytes, analysed in its place, as given.
    pub same_as: String,
}

impl DuplicateFile {
    /// The note for people: `SOURCE: same content as SAME_AS; analysed once`.
    pub fn note(&self) -> String {
        format!("{}: same content as {}; analysed once", self.source, self.same_as)
    }
}

/// `files` without those whose bytes an earlier one has (in order, the first of each content
/// kept), and the ones left out. Only files of equal size are hashed (BLAKE3, as the cache
/// does); a file that cannot be read is kept, to fail later with the full error.
pub fn distinct_files(files: &[PathBuf]) -> (Vec<PathBuf>, Vec<DuplicateFile>) {
    let sizes: Vec<Option<u64>> = files.iter().map(|f| std::fs::metadata(f).ok().map(|m| m.len())).collect();
    let shares_size = |i: usize| sizes[i].is_some() && sizes.iter().enumerate().any(|(j, s)| j != i && *s == sizes[i]);
    let digests = Parallelism::Rayon.map(files.len(), |i| if shares_size(i) { file_digest(&files[i]).ok() } else { None });
    let mut kept: Vec<usize> = Vec::new();
    let mut duplicates = Vec::new();
    for (i, f) in files.iter().enumerate() {
        match digests[i].and_then(|d| kept.iter().find(|&&k| digests[k] == Some(d))) {
            Some(&k) => {
                duplicates.push(DuplicateFile { source: f.display().to_string(), same_as: files[k].display().to_string() })
            }
            None => kept.push(i),
        }
    }
    (kept.into_iter().map(|i| files[i].clone()).collect(), duplicates)
}

/// Why the totals of a calculation of `files` files, `failed` of which failed, are withheld.
pub fn files_failed(failed: usize, files: usize) -> String {
    format!("{failed} of {files} files failed")
}

/// Which orbitals of a calculation are analysed.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum OrbitalSets {
    /// The orbitals as the files give them.
    #[default]
    Canonical,
    /// Foster–Boys localized orbitals formed from them.
    Localized,
    /// Both, as two rankings.
    Both,
}

impl OrbitalSets {
    /// Whether the canonical set is analysed.
    pub fn canonical(self) -> bool {
        self != OrbitalSets::Localized
    }

    /// Whether the localized set is analysed.
    pub fn localized(self) -> bool {
        self != OrbitalSets::Canonical
    }
}

/// One spin channel's localization.
#[derive(Clone, Debug, PartialEq)]
pub struct LocalizationSummary {
    /// The files whose orbitals were rotated into each other.
    pub source: String,
    /// The channel and the optimiser's result (L before and after, bohr²; sweeps; convergence).
    pub channel: ChannelLocalization,
}

/// The orbitals of one file, from the cache where possible, computed (and cached) otherwise;
/// `progress` hears when the file starts, and how it ended.
pub fn analyse_file(
    job: &FileJob,
    engine: &Engine,
    par: Parallelism,
    cache: Option<&ResultCache>,
    progress: &dyn Progress,
) -> Result<Vec<OrbitalReport>, FileFailure> {
    progress.file_started(job);
    let result = analyse_file_quietly(job, engine, par, cache, progress);
    match &result {
        Ok((reports, cached)) => progress.file_done(job, reports.len(), *cached),
        Err(f) => progress.file_failed(job, &f.error),
    }
    result.map(|(reports, _)| reports)
}

/// [`analyse_file`] without the start and end events; also returns how many came from the cache.
fn analyse_file_quietly(
    job: &FileJob,
    engine: &Engine,
    par: Parallelism,
    cache: Option<&ResultCache>,
    progress: &dyn Progress,
) -> Result<(Vec<OrbitalReport>, usize), FileFailure> {
    let path = &job.path;
    let fail = |error: String| FileFailure { source: path.display().to_string(), error };
    let format = sniff_format(path).map_err(|e| fail(format!("{}: {e}", path.display())))?;
    if let FileFormat::Unknown { start } = &format {
        return Err(fail(unknown_format(path, start)));
    }
    let spin = job.load.spin_for(path);
    // Cache keys need the orbital labels (from the header or the orbital list) and the digest.
    let keys = match cache {
        Some(_) => {
            let labels = match format {
                FileFormat::Cube => orbital_labels(path, &read_cube_header(path).map_err(|e| fail(e.to_string()))?),
                _ => occupied_orbitals(path).map_err(|e| fail(e.to_string()))?.into_iter().map(|(label, _)| label).collect(),
            };
            let digest = file_digest(path).map_err(|e| fail(format!("{}: {e}", path.display())))?;
            let settings = settings_fingerprint(&job.load, spin, engine.models(), engine.params());
            let keys: Vec<String> = (0..labels.len()).map(|k| ResultCache::key(&digest, k, &settings)).collect();
            Some((keys, labels))
        }
        None => None,
    };
    let mut cached: Vec<Option<OrbitalReport>> = match (&keys, cache) {
        (Some((keys, labels)), Some(cache)) => keys
            .iter()
            .zip(labels)
            .map(|(k, label)| {
                cache.get(k).map(|mut r| {
                    // Content-addressed: the same bytes may sit under another name now.
                    r.source = path.display().to_string();
                    r.label = label.clone();
                    r
                })
            })
            .collect(),
        _ => Vec::new(),
    };
    let from_cache = cached.iter().filter(|c| c.is_some()).count();
    if !cached.is_empty() && from_cache == cached.len() {
        return Ok((cached.into_iter().flatten().collect(), from_cache));
    }
    let store = |k: usize, r: &OrbitalReport| {
        if let (Some((keys, _)), Some(cache)) = (&keys, cache) {
            if let Err(e) = cache.put(&keys[k], r) {
                progress.warning(&format!("could not write a cache entry for {} ({}): {e}", path.display(), r.label));
            }
        }
    };

    let reports = match format {
        FileFormat::Cube => {
            let orbitals = load_cube(path, &job.load).map_err(|e| fail(e.to_string()))?;
            cached.resize(orbitals.len(), None);
            let mut reports = Vec::with_capacity(orbitals.len());
            for (k, (orbital, hit)) in orbitals.iter().zip(cached).enumerate() {
                let report = match hit {
                    Some(r) => r,
                    None => {
                        let r = engine.analyse(orbital, par).map_err(|e| fail(format!("{} ({}): {e}", path.display(), orbital.label)))?;
                        store(k, &r);
                        r
                    }
                };
                reports.push(report);
            }
            reports
        }
        // The exact path treats every orbital of the file in one pass over the integrals, so a
        // partial cache hit still recomputes the file; the hits are kept as they were.
        _ => {
            let computed = analyse_basis_file(path, &job.load.molecular, engine, par).map_err(fail)?;
            cached.resize(computed.len(), None);
            computed
                .into_iter()
                .zip(cached)
                .enumerate()
                .map(|(k, (r, hit))| {
                    hit.unwrap_or_else(|| {
                        store(k, &r);
                        r
                    })
                })
                .collect()
        }
    };
    if reports.is_empty() {
        return Err(fail(no_occupied(path, format)));
    }
    Ok((reports, from_cache))
}

/// The failure message for a file of no known format; `start` describes its first line.
fn unknown_format(path: &Path, start: &str) -> String {
    format!("{}: not a file sixray reads ({}); it starts with {start}", path.display(), FileFormat::READ)
}

/// The failure of a file that yields no orbital to analyse, with what the file says about
/// occupations where it can tell.
fn no_occupied(path: &Path, format: FileFormat) -> String {
    let detail = match format {
        FileFormat::Cube => "the file holds no orbital values".to_string(),
        _ => occupation_summary(path).unwrap_or_else(|e| e.to_string()),
    };
    format!("{}: no occupied orbitals: {detail}; nothing to analyse", path.display())
}

/// Every occupied orbital of a Gaussian-basis file: exactly, or through the grid path on a
/// uniform grid when `params` asks for one. Errors name the file (and line where known).
fn analyse_basis_file(path: &Path, params: &MolecularParams, engine: &Engine, par: Parallelism) -> Result<Vec<OrbitalReport>, String> {
    let Some(spacing) = params.uniform_spacing else {
        return analyse_molden(path, engine, params, par).map_err(|e| e.to_string());
    };
    let energies = occupied_orbitals(path).map_err(|e| e.to_string())?;
    let orbitals = sample_molden(path, spacing, params.uniform_margin, par).map_err(|e| e.to_string())?;
    orbitals
        .iter()
        .zip(energies)
        .map(|(orbital, (_, energy))| {
            let mut r = engine.analyse(orbital, par).map_err(|e| format!("{} ({}): {e}", path.display(), orbital.label))?;
            r.energy = energy;
            Ok(r)
        })
        .collect()
}

/// Runs every job, in parallel where that keeps memory bounded; results in job order.
///
/// Under the engine's memory budget ([`Engine::memory_budget`]) each file's peak is estimated
/// from its header first ([`crate::memory::estimate`]): a file that cannot fit fails alone with
/// a message saying what it needs, and files start only when they fit beside those in flight
/// ([`crate::memory::ledger`]); a file run alone uses fewer threads where that makes it fit.
pub fn run_files(
    jobs: &[FileJob],
    engine: &Engine,
    cache: Option<&ResultCache>,
    progress: &dyn Progress,
) -> Vec<Result<Vec<OrbitalReport>, FileFailure>> {
    let run = |job: &FileJob, par: Parallelism| analyse_file(job, engine, par, cache, progress);
    let threads = rayon::current_num_threads();
    let parallel = threads > 1 && jobs.len() >= threads;
    let Some(budget) = engine.memory_budget() else {
        if parallel {
            prepare_solvers(jobs, engine);
            return Parallelism::Rayon.map(jobs.len(), |i| run(&jobs[i], Parallelism::Sequential));
        }
        return jobs.iter().map(|j| run(j, Parallelism::Rayon)).collect();
    };
    let ledger = Ledger::new(engine, budget);
    // A header that cannot be read has no estimate: its file fails at once with the full error.
    let estimate = |job: &FileJob, workers: usize| estimate_file(&job.path, &job.load, engine, workers).ok();
    let too_big = |job: &FileJob, message: String| {
        progress.file_started(job);
        progress.file_failed(job, &message);
        Err(FileFailure { source: job.path.display().to_string(), error: message })
    };
    let source = |job: &FileJob| job.path.display().to_string();
    if parallel {
        let estimates: Vec<Option<FileEstimate>> = jobs.iter().map(|j| estimate(j, 1)).collect();
        if ledger.kernels_fit(&estimates.iter().flatten().collect::<Vec<_>>()) {
            prepare_solvers(jobs, engine);
        }
        Parallelism::Rayon.map(jobs.len(), |i| match &estimates[i] {
            None => run(&jobs[i], Parallelism::Sequential),
            Some(e) => match ledger.check(&source(&jobs[i]), e) {
                Err(message) => too_big(&jobs[i], message),
                Ok(()) => {
                    let _place = ledger.admit(e);
                    run(&jobs[i], Parallelism::Sequential)
                }
            },
        })
    } else {
        jobs.iter()
            .map(|job| {
                let Some(all) = estimate(job, threads) else { return run(job, Parallelism::Rayon) };
                if ledger.check("", &all).is_ok() {
                    let _place = ledger.admit(&all);
                    return run(job, Parallelism::Rayon);
                }
                // One thread holds fewer sub-lattices and planes at once.
                let Some(one) = estimate(job, 1) else { return run(job, Parallelism::Sequential) };
                match ledger.check(&source(job), &one) {
                    Err(message) => too_big(job, message),
                    Ok(()) => {
                        let _place = ledger.admit(&one);
                        run(job, Parallelism::Sequential)
                    }
                }
            })
            .collect()
    }
}

/// The cube grids among `files` and whether any of them is a basis-set file: a uniform-grid
/// spacing (`rank --grid`, a workflow's `uniform_grid:`) samples basis-set files and leaves cube
/// grids as they are. Files whose format cannot be read count as neither; they fail later with
/// the full error.
pub fn cube_files(files: &[PathBuf]) -> (Vec<&Path>, bool) {
    let mut cubes = Vec::new();
    let mut basis = false;
    for f in files {
        match sniff_format(f) {
            Ok(FileFormat::Cube) => cubes.push(f.as_path()),
            Ok(FileFormat::Molden | FileFormat::Fchk | FileFormat::Wfn | FileFormat::Wfx) => basis = true,
            _ => {}
        }
    }
    (cubes, basis)
}

/// Orbital reports the jobs will yield, from grid headers and basis-file orbital lists (a file
/// that cannot be read counts as one; it will fail later with the full error).
pub fn count_orbitals(jobs: &[FileJob]) -> usize {
    jobs.iter()
        .map(|j| match sniff_format(&j.path) {
            Ok(FileFormat::Molden | FileFormat::Fchk | FileFormat::Wfn | FileFormat::Wfx) => {
                occupied_orbitals(&j.path).map_or(1, |o| o.len())
            }
            _ => read_cube_header(&j.path).map_or(1, |h| h.values_per_point),
        })
        .sum()
}

/// Analyses every orbital in `files` as one calculation and ranks them by model `rank_by`.
/// Files with the same bytes are analysed once ([`distinct_files`]); while any file fails, the
/// totals are withheld.
pub fn analyse_files(files: &[PathBuf], load: &LoadParams, engine: &Engine, rank_by: usize) -> Outcome {
    let (files, duplicates) = distinct_files(files);
    let jobs: Vec<FileJob> =
        files.iter().map(|p| FileJob { calculation: String::new(), path: p.clone(), load: load.clone() }).collect();
    let (orbitals, failures) = split(run_files(&jobs, engine, None, &Silent));
    let mut ranking = Ranking::new(orbitals, rank_by);
    if !failures.is_empty() {
        ranking.withhold_totals(&files_failed(failures.len(), files.len()));
    }
    Outcome { ranking, failures, localization: Vec::new(), duplicates }
}

/// The Foster–Boys localized orbitals of one calculation, ranked by model `rank_by`: each
/// basis-set file localized on its own (its coefficients rotated, then the exact path, or the
/// uniform grid when `load` asks for one), and the grid files together, per spin channel, on
/// their shared grid. A grid file that cannot be read leaves the grid files unlocalized (a
/// rotation of an incomplete set is not the localization of the calculation): it is reported as
/// a failure, as is the whole grid set. Files with the same bytes are analysed once; while any
/// file fails (or is left unlocalized), the totals are withheld.
pub fn analyse_localized(
    files: &[PathBuf],
    load: &LoadParams,
    engine: &Engine,
    localize: &LocalizeParams,
    rank_by: usize,
    par: Parallelism,
) -> Outcome {
    let (files, duplicates) = distinct_files(files);
    let mut reports = Vec::new();
    let mut failures = Vec::new();
    let mut localization = Vec::new();
    let mut grid_orbitals: Vec<GridOrbital> = Vec::new();
    let mut grid_files: Vec<&PathBuf> = Vec::new();
    let mut grid_complete = true;
    type Localized = (Vec<OrbitalReport>, Vec<ChannelLocalization>);
    let localize_on_grid = |orbitals: Vec<GridOrbital>, source: &str| -> Result<Localized, String> {
        // The canonical orbitals and their localized copies, then each one through the engine.
        if let (Some(budget), Some(first)) = (engine.memory_budget(), orbitals.first()) {
            let need = estimate::grid_estimate(&first.geometry, 2 * orbitals.len(), !first.nuclei.is_empty(), engine, rayon::current_num_threads());
            Ledger::new(engine, budget).check(source, &need)?;
        }
        let (localized, channels) = localize_grid_orbitals(&orbitals, localize).map_err(|e| format!("{source}: {e}"))?;
        let mut reports = Vec::with_capacity(localized.len());
        for o in &localized {
            let mut r = engine.analyse(o, par).map_err(|e| format!("{source} ({}): {e}", o.label))?;
            r.set = OrbitalSet::Localized;
            reports.push(r);
        }
        Ok((reports, channels))
    };
    for path in &files {
        let fail = |error: String| FileFailure { source: path.display().to_string(), error };
        match sniff_format(path) {
            Err(e) => {
                failures.push(fail(format!("{}: {e}", path.display())));
                grid_complete = false;
            }
            Ok(FileFormat::Molden | FileFormat::Fchk | FileFormat::Wfn | FileFormat::Wfx) => {
                let source = path.display().to_string();
                let fits = || match (engine.memory_budget(), estimate_file(path, load, engine, rayon::current_num_threads())) {
                    (Some(budget), Ok(need)) => Ledger::new(engine, budget).check(&source, &need),
                    _ => Ok(()),
                };
                let result = fits().and_then(|()| match load.molecular.uniform_spacing {
                    None => analyse_molden_localized(path, engine, &load.molecular, localize, par).map_err(|e| e.to_string()),
                    Some(h) => sample_molden(path, h, load.molecular.uniform_margin, par)
                        .map_err(|e| e.to_string())
                        .and_then(|orbitals| localize_on_grid(orbitals, &source)),
                });
                match result {
                    Ok((r, _)) if r.is_empty() => failures.push(fail(no_occupied(path, FileFormat::Molden))),
                    Ok((r, channels)) => {
                        reports.extend(r);
                        localization.extend(channels.into_iter().map(|channel| LocalizationSummary { source: source.clone(), channel }));
                    }
                    Err(e) => failures.push(fail(e)),
                }
            }
            Ok(FileFormat::Unknown { start }) => {
                failures.push(fail(unknown_format(path, &start)));
            }
            Ok(FileFormat::Cube) => match load_cube(path, load) {
                Ok(o) => {
                    grid_orbitals.extend(o);
                    grid_files.push(path);
                }
                Err(e) => {
                    failures.push(fail(e.to_string()));
                    grid_complete = false;
                }
            },
        }
    }
    // Files without orbitals in the result: each that failed, and the grid files of a grid set
    // that could not be localized.
    let mut failed_files = failures.len();
    if !grid_orbitals.is_empty() {
        let source = grid_files.iter().map(|p| p.display().to_string()).collect::<Vec<_>>().join(" + ");
        let result = if grid_complete {
            localize_on_grid(grid_orbitals, &source)
        } else {
            Err("not localized: every grid file of the calculation is needed".to_string())
        };
        match result {
            Ok((r, channels)) => {
                reports.extend(r);
                localization.extend(channels.into_iter().map(|channel| LocalizationSummary { source: source.clone(), channel }));
            }
            Err(error) => {
                failed_files += grid_files.len();
                failures.push(FileFailure { source, error });
            }
        }
    }
    let mut ranking = Ranking::new(reports, rank_by);
    if !failures.is_empty() {
        ranking.withhold_totals(&files_failed(failed_files, files.len()));
    }
    Outcome { ranking, failures, localization, duplicates }
}

/// Orbital reports (in job order) and failures of a set of file results.
pub fn split(results: Vec<Result<Vec<OrbitalReport>, FileFailure>>) -> (Vec<OrbitalReport>, Vec<FileFailure>) {
    let mut orbitals = Vec::new();
    let mut failures = Vec::new();
    for r in results {
        match r {
            Ok(o) => orbitals.extend(o),
            Err(f) => failures.push(f),
        }
    }
    (orbitals, failures)
}

/// Builds the Coulomb solvers of the files' grids up front with every thread, so that files
/// running in parallel do not wait on one sequential kernel build. Headers that cannot be read
/// are skipped here; their files fail later with the full error.
fn prepare_solvers(jobs: &[FileJob], engine: &Engine) {
    let mut grids: Vec<GridGeometry> = Vec::new();
    for job in jobs {
        let Ok(header) = read_cube_header(&job.path) else { continue };
        let Ok((g, _)) = geometry_of(&header) else { continue };
        if !grids.iter().any(|k| k.same_lattice(&g)) {
            grids.push(g);
        }
    }
    if grids.len() <= engine.params().solver_cache {
        for g in &grids {
            // A kernel that does not fit fails its files later, with their names.
            let _ = engine.solver(g, Parallelism::Rayon);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn files_with_the_same_bytes_are_kept_once_and_noted() {
        let dir = tempfile::tempdir().unwrap();
        let p = |name: &str| dir.path().join(name);
        // Same size, other bytes; the same bytes under another name; the same file by another
        // path; a file that cannot be read (kept: it fails later with the full error).
        for (name, text) in [("a", "orbital A"), ("b", "orbital B"), ("c", "orbital A")] {
            std::fs::write(p(name), text).unwrap();
        }
        let again = dir.path().join(".").join("a");
        let files = [p("a"), p("b"), p("c"), again.clone(), p("missing"), p("missing")];
        let (kept, left_out) = distinct_files(&files);
        assert_eq!(kept, [p("a"), p("b"), p("missing"), p("missing")]);
        let shown = |f: &Path| f.display().to_string();
        assert_eq!(
            left_out,
            [
                DuplicateFile { source: shown(&p("c")), same_as: shown(&p("a")) },
                DuplicateFile { source: shown(&again), same_as: shown(&p("a")) },
            ]
        );
        assert_eq!(left_out[0].note(), format!("{}: same content as {}; analysed once", shown(&p("c")), shown(&p("a"))));
    }
}
