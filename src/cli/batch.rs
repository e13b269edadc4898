//! `sixray batch`: a workflow file in, set-wide reports out.

use super::{Status, in_pool, uniform_grid_scope};
use super::progress::Display;
use anyhow::{Context, anyhow};
use clap::Args;
use serde_json::json;
use sixray::batch::summary::SetSummary;
use sixray::batch::{BatchParams, CACHE_DIR, Workflow, expected_orbitals, run};
use sixray::memory::MemoryBudget;
use sixray::report::atomic::{check_dir, remove_stale_temporaries};
use sixray::report::set;
use sixray::report::batch::{BatchReport, write};
use sixray::report::html::ReportDate;
use std::path::PathBuf;

#[derive(Debug, Args)]
pub struct BatchArgs {
    /// Workflow file (YAML): the test set, the models and the reports.
    #[arg(value_name = "WORKFLOW")]
    workflow: PathBuf,

    /// Recompute every orbital, ignoring results cached by earlier runs.
    #[arg(long)]
    fresh: bool,

    /// Write the reports to DIR instead of the workflow's report directory.
    #[arg(long, value_name = "DIR")]
    out: Option<PathBuf>,

    /// No progress messages.
    #[arg(short, long)]
    quiet: bool,

    /// Date shown in report.html (default: the newest modification date among the workflow
    /// file and its grid files, so that a rerun writes the same bytes).
    #[arg(long, value_name = "YYYY-MM-DD")]
    date: Option<ReportDate>,

    /// Memory the files may use at once, e.g. 8G or 500M (default: options.memory, else the
    /// job's or the machine's limit less a margin); a file that cannot fit fails alone.
    #[arg(long, value_name = "SIZE", value_parser = sixray::memory::parse_size)]
    memory: Option<u64>,
}

/// Checks the workflow (exit 2 if it is invalid), then runs it in a pool of `threads` (or the
/// workflow's own setting, or all cores).
pub fn run_batch(args: BatchArgs, threads: Option<usize>) -> anyhow::Result<Status> {
    let mut workflow = match Workflow::load(&args.workflow) {
        Ok(w) => w,
        Err(e) => {
            eprintln!("sixray: error: invalid workflow: {e}");
            return Ok(Status::BadInput);
        }
    };
    if let Some(dir) = args.out {
        workflow.report.dir = dir;
    }
    workflow.report.date = args.date;
    for c in &workflow.calculations {
        for d in &c.duplicates {
            eprintln!("sixray: warning: calculation {}: {} has the same content as {}; analysed once, as {}", c.name, d.source, d.same_as, d.same_as);
        }
    }
    for c in workflow.calculations.iter().filter(|c| c.load.molecular.uniform_spacing.is_some()) {
        match uniform_grid_scope("uniform_grid", &c.files) {
            Ok(Some(warning)) => eprintln!("sixray: warning: calculation {}: {warning}", c.name),
            Ok(None) => {}
            Err(e) => {
                eprintln!("sixray: error: invalid workflow: {}: calculation {}: {e}", args.workflow.display(), c.name);
                return Ok(Status::BadInput);
            }
        }
    }
    prepare_report_dir(&workflow)?;
    let display = Display::new(expected_orbitals(&workflow), args.quiet);
    let given = args.memory.or(workflow.memory).map(MemoryBudget::given);
    let results = in_pool(threads.or(workflow.threads), || {
        let memory = given.or_else(|| MemoryBudget::detect(rayon::current_num_threads()));
        if let (Some(b), false) = (&memory, args.quiet) {
            eprintln!("sixray: memory budget {b}");
        }
        Ok(run(&workflow, &BatchParams { fresh: args.fresh, memory, ..BatchParams::default() }, &display))
    })?;
    display.finish();

    let summary = SetSummary::new(&results, workflow.models.len(), workflow.report.worst, workflow.trust.tolerance);
    let report = BatchReport { workflow: &workflow, results: &results, summary: &summary };
    let written = write(&report).with_context(|| format!("writing reports to {}", workflow.report.dir.display()))?;
    for c in &results {
        for w in c.outcome.ranking.orbitals.iter().filter_map(sixray::report::kind_warning) {
            eprintln!("sixray: warning: calculation {}: {w} (the workflow's `kind:`)", c.name);
        }
        let r = sixray::report::Report { models: &workflow.models, outcome: &c.outcome, top: None };
        for w in sixray::report::non_finite_warnings(&r) {
            eprintln!("sixray: warning: calculation {}: {w}", c.name);
        }
    }
    for c in results.iter().filter(|c| !c.is_ok()) {
        for f in &c.outcome.failures {
            eprintln!("sixray: error: calculation {} failed: {}", c.name, f.error);
        }
    }
    let reports: serde_json::Map<_, _> =
        written.iter().map(|(f, p)| (format!("{f:?}").to_lowercase(), json!(p.display().to_string()))).collect();
    let status = if summary.failed == 0 { "ok" } else { "partial" };
    println!("{}", json!({"status": status, "completed": summary.completed, "failed": summary.failed, "reports": reports}));
    Ok(if summary.failed == 0 { Status::Success } else { Status::Partial })
}

/// Before any input is read: the report directory, and the result cache inside it, must take
/// new files (checked by writing one); temporary files that killed runs left there go; a report
/// set that a killed run left mixed is pointed out (this run replaces it whole).
fn prepare_report_dir(workflow: &Workflow) -> anyhow::Result<()> {
    let dir = &workflow.report.dir;
    check_dir(dir).map_err(|e| anyhow!("{e} (the report directory; nothing was run)"))?;
    remove_stale_temporaries(dir);
    if workflow.cache {
        let cache = dir.join(CACHE_DIR);
        check_dir(&cache).map_err(|e| {
            anyhow!("{e} (the result cache; `cache: false` under the workflow's `options:` runs without one; nothing was run)")
        })?;
        remove_stale_temporaries(&cache);
    }
    if let Some(mixed) = set::check(dir) {
        eprintln!(
            "sixray: warning: the reports in {} are not one set: {mixed} (a run was stopped while writing them, or they were changed since); this run writes them anew",
            dir.display()
        );
    }
    Ok(())
}
