//! Batch throughput and runner overhead: `cargo bench --bench batch`.
//!
//! The test set is the shared reference set (`../shared/reference/*/orbital*.cube.gz`, 30 orbitals
//! of six molecules; skipped with a notice where absent) under three models (lsda, pbe, scan).
//! On one thread, so that the comparison is not blurred by scheduling:
//!
//! - per-orbital work: every file read and every orbital analysed, back to back;
//! - the batch: the same through the runner as `sixray batch --fresh` drives it (workflow check,
//!   orbital count, cache keys and writes, set statistics, three reports written);
//!
//! the overhead is their relative difference. Then the batch on all threads, for throughput.
//! Each figure is the best of two runs.

mod common;

use common::best;
use sixray::batch::summary::SetSummary;
use sixray::batch::{BatchParams, Workflow, jobs, run};
use sixray::calculation::count_orbitals;
use sixray::diagnostics::{Engine, EngineParams};
use sixray::input::load_cube;
use sixray::par::Parallelism;
use sixray::progress::Silent;
use sixray::report::batch::{BatchReport, write};
use std::path::{Path, PathBuf};


fn whole_batch(path: &Path) -> usize {
    let workflow = Workflow::load(path).expect("valid workflow");
    let total = count_orbitals(&jobs(&workflow));
    let results = run(&workflow, &BatchParams { fresh: true, ..BatchParams::default() }, &Silent);
    let summary = SetSummary::new(&results, workflow.models.len(), workflow.report.worst, workflow.trust.tolerance);
    write(&BatchReport { workflow: &workflow, results: &results, summary: &summary }).expect("reports written");
    assert_eq!(summary.failed, 0);
    total
}

fn main() {
    let shared = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../shared/reference");
    if !shared.is_dir() {
        println!("batch benchmark skipped: shared reference data not found at {}", shared.display());
        return;
    }
    let mut molecules: Vec<_> = std::fs::read_dir(&shared)
        .expect("reference dir")
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.join("reference.json").is_file())
        .collect();
    molecules.sort();
    let dir = tempfile::tempdir().expect("temporary directory");
    let mut yaml = String::from("calculations:\n");
    for m in &molecules {
        let name = m.file_name().expect("a name").to_string_lossy();
        yaml += &format!("  - name: {name}\n    files: ['{}/orbital*.cube.gz']\n", m.display());
    }
    yaml += &format!("models: [lsda, pbe, scan]\nreport:\n  dir: '{}'\n", dir.path().join("out").display());
    let wf = dir.path().join("reference.yaml");
    std::fs::write(&wf, yaml).expect("write workflow");

    let workflow = Workflow::load(&wf).expect("valid workflow");
    let one = rayon::ThreadPoolBuilder::new().num_threads(1).build().expect("pool");
    let (work, orbitals) = one.install(|| {
        best(2, || {
            let engine = Engine::new(workflow.models.clone(), EngineParams::default());
            let mut n = 0;
            for job in jobs(&workflow) {
                for o in load_cube(&job.path, &job.load).expect("readable") {
                    engine.analyse(&o, Parallelism::Sequential).expect("analysed");
                    n += 1;
                }
            }
            n
        })
    });
    let (batch, counted) = one.install(|| best(2, || whole_batch(&wf)));
    assert_eq!(orbitals, counted);
    let (parallel, _) = best(2, || whole_batch(&wf));

    let threads = rayon::current_num_threads();
    println!("sixray batch benchmark: {orbitals} orbitals of {} molecules, models lsda, pbe, scan\n", molecules.len());
    println!("{:<58} {:>10}", "measurement", "result");
    println!("{:<58} {:>8.2} s", "per-orbital work alone, 1 thread (read + analyse)", work.as_secs_f64());
    println!("{:<58} {:>8.2} s", "whole batch, 1 thread (--fresh, reports written)", batch.as_secs_f64());
    println!("{:<58} {:>8.1} %", "runner overhead beyond the per-orbital work", 100.0 * (batch.as_secs_f64() / work.as_secs_f64() - 1.0));
    println!(
        "{:<58} {:>8.2} s  ({:.1} orbitals/s)",
        format!("whole batch, {threads} threads"),
        parallel.as_secs_f64(),
        orbitals as f64 / parallel.as_secs_f64()
    );
}
