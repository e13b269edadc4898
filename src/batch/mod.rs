//! The batch runner: every calculation of a workflow, ranked, with set-wide reports.
//!
//! All files of all calculations are scheduled together (see [`crate::calculation`] for the
//! bounded-memory strategy). A file that fails fails its calculation, which then gets no totals;
//! every other calculation completes. Finished orbitals go to a content-addressed cache in the report directory as they
//! finish, so an interrupted run resumes where it stopped and gives the same reports. A
//! calculation's total-density file, if it names one, is checked against the atoms it lists and
//! against the calculation's orbitals (see [`crate::inspect`]).

pub mod summary;
pub mod workflow;

use crate::cache::ResultCache;
use crate::calculation::{FileFailure, FileJob, Outcome, analyse_localized, count_orbitals, files_failed, run_files, split};
use std::path::PathBuf;
use crate::inspect::{FileInspection, InspectParams, inspect_file};
use crate::memory::MemoryBudget;
use crate::par::Parallelism;
use crate::diagnostics::{Engine, EngineParams, Ranking};
use crate::progress::Progress;
pub use workflow::{ReportFormat, Workflow, WorkflowError};

/// How a batch runs.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct BatchParams {
    /// Recompute everything, ignoring cached results (fresh results still refresh the cache).
    pub fresh: bool,
    /// Engine settings.
    pub engine: EngineParams,
    /// How much memory the files may use at once (`None`: no limit is applied).
    pub memory: Option<MemoryBudget>,
}

/// One calculation's results.
#[derive(Clone, Debug, PartialEq)]
pub struct CalculationResult {
    /// The user's label.
    pub name: String,
    /// The user's tags.
    pub tags: Vec<String>,
    /// Its orbitals, ranked, with totals (incomplete if a file failed), and its failed files; the
    /// calculation has failed if there are any.
    pub outcome: Outcome,
    /// The check of its total-density file (and of its orbitals against it), if it has one.
    pub density: Option<FileInspection>,
}

impl CalculationResult {
    /// True when every file was analysed.
    pub fn is_ok(&self) -> bool {
        self.outcome.failures.is_empty()
    }
}

/// Directory of the result cache inside a report directory.
pub const CACHE_DIR: &str = ".sixray-cache";

/// Runs every calculation of `workflow`.
pub fn run(workflow: &Workflow, params: &BatchParams, progress: &dyn Progress) -> Vec<CalculationResult> {
    let engine = Engine::new(
        workflow.models.clone(),
        EngineParams {
            trust: workflow.trust.clone(),
            cusp_correction: workflow.cusp_correction,
            tail_correction: workflow.tail_correction,
            ..params.engine.clone()
        },
    )
    .with_memory_budget(params.memory.clone());
    let cache = if workflow.cache {
        match ResultCache::open(&workflow.report.dir.join(CACHE_DIR), !params.fresh) {
            Ok(c) => Some(c),
            Err(e) => {
                progress.warning(&format!("running without a result cache: {}: {e}", workflow.report.dir.display()));
                None
            }
        }
    } else {
        None
    };
    let jobs = jobs(workflow);
    let mut results = run_files(&jobs, &engine, cache.as_ref(), progress).into_iter();
    let mut out = Vec::new();
    for c in &workflow.calculations {
        if c.orbitals.canonical() {
            let (orbitals, mut failures) = split(results.by_ref().take(c.files.len()).collect());
            let density = c.density.as_ref().and_then(|path| {
                match inspect_file(path, &c.files, &c.load, &InspectParams::default(), Parallelism::Rayon) {
                    Ok(i) => Some(i),
                    Err(e) => {
                        failures.push(FileFailure { source: path.display().to_string(), error: e.to_string() });
                        None
                    }
                }
            });
            let mut ranking = Ranking::new(orbitals, workflow.rank_by);
            if !failures.is_empty() {
                ranking.withhold_totals(&files_failed(failures.len(), c.files.len() + usize::from(c.density.is_some())));
            }
            out.push(CalculationResult {
                name: c.name.clone(),
                tags: c.tags.clone(),
                outcome: Outcome { ranking, failures, localization: Vec::new(), duplicates: c.duplicates.clone() },
                density,
            });
        }
        if c.orbitals.localized() {
            // Localization mixes the orbitals of all the calculation's files, so it runs as one
            // unit of work (not cached: a rotation is cheap beside the integrals it feeds).
            let name = localized_name(&c.name);
            let job = FileJob { calculation: name.clone(), path: PathBuf::from(format!("{} file(s), localized", c.files.len())), load: c.load.clone() };
            progress.file_started(&job);
            let outcome = Outcome {
                duplicates: c.duplicates.clone(),
                ..analyse_localized(&c.files, &c.load, &engine, &c.localize, workflow.rank_by, Parallelism::Rayon)
            };
            match outcome.failures.first() {
                Some(f) => progress.file_failed(&job, &f.error),
                None => progress.file_done(&job, outcome.ranking.orbitals.len(), 0),
            }
            out.push(CalculationResult { name, tags: c.tags.clone(), outcome, density: None });
        }
    }
    out
}

/// The name under which a calculation's localized orbitals are reported.
pub fn localized_name(name: &str) -> String {
    format!("{name} (localized)")
}

/// Orbital reports a run of `workflow` will produce (for progress totals): every file's orbitals
/// once per orbital set analysed.
pub fn expected_orbitals(workflow: &Workflow) -> usize {
    workflow
        .calculations
        .iter()
        .map(|c| count_orbitals(&calculation_jobs(c)) * (usize::from(c.orbitals.canonical()) + usize::from(c.orbitals.localized())))
        .sum()
}

/// Every file of the workflow whose canonical orbitals are analysed, as a job, calculation by
/// calculation.
pub fn jobs(workflow: &Workflow) -> Vec<FileJob> {
    workflow
        .calculations
        .iter()
        .filter(|c| c.orbitals.canonical())
        .flat_map(calculation_jobs)
        .collect()
}

/// One calculation's files as jobs.
fn calculation_jobs(c: &workflow::CalculationPlan) -> Vec<FileJob> {
    c.files.iter().map(|f| FileJob { calculation: c.name.clone(), path: f.clone(), load: c.load.clone() }).collect()
}
