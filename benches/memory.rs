//! Peak memory of `sixray rank` on synthetic orbital cubes of growing size, measured (the
//! maximum resident set size `/usr/bin/time -v` reports) beside the estimate the scheduler uses
//! (`sixray::memory::estimate`). Run with `cargo bench --bench memory`; sizes with
//! `SIXRAY_BENCH_SIZES=64,128` (points per axis, 0.2 bohr steps), threads 1 and 2.

#[path = "common/synthetic.rs"]
mod synthetic;

use sixray::diagnostics::{Engine, EngineParams};
use sixray::input::LoadParams;
use sixray::memory::estimate::estimate_file;
use sixray::xc::Model;
use std::path::Path;
use std::process::Command;

const TIME: &str = "/usr/bin/time";

/// Peak resident memory of `sixray rank FILE args…`, bytes.
fn peak(file: &Path, args: &[&str]) -> Option<u64> {
    let out = Command::new(TIME)
        .arg("-v")
        .arg(env!("CARGO_BIN_EXE_sixray"))
        .arg("rank")
        .arg(file)
        .args(args)
        .args(["--memory", "1T", "--format", "json", "--output", "/dev/null"])
        .output()
        .ok()?;
    let text = String::from_utf8_lossy(&out.stderr);
    if !out.status.success() {
        eprintln!("sixray failed: {text}");
        return None;
    }
    let line = text.lines().find(|l| l.contains("Maximum resident set size"))?;
    let kib: u64 = line.rsplit(':').next()?.trim().parse().ok()?;
    Some(kib * 1024)
}

fn main() {
    if !Path::new(TIME).exists() {
        println!("skipping: {TIME} not found (install GNU time)");
        return;
    }
    let sizes: Vec<usize> = std::env::var("SIXRAY_BENCH_SIZES")
        .ok()
        .map(|s| s.split(',').filter_map(|x| x.trim().parse().ok()).collect())
        .unwrap_or_else(|| vec![64, 96, 128, 160, 200]);
    let dir = tempfile::tempdir().expect("temporary directory");
    let mib = |b: u64| b as f64 / (1u64 << 20) as f64;
    // The process without a grid: a 16³ file.
    let tiny = dir.path().join("tiny.cube.gz");
    synthetic::write_orbital_cube(&tiny, [16; 3], 0.2).expect("write cube");
    if let Some(base) = peak(&tiny, &["-j", "1"]) {
        println!("baseline (16³ grid, 1 thread): {:.0} MiB", mib(base));
    }
    println!("{:>6} {:<22} {:>7} {:>12} {:>12} {:>8}", "grid", "models", "threads", "estimate MiB", "measured MiB", "ratio");
    for &n in &sizes {
        let file = dir.path().join(format!("orbital_{n}.cube.gz"));
        synthetic::write_orbital_cube(&file, [n; 3], 0.2).expect("write cube");
        for (label, models) in [("lsda, error bars", vec!["lsda"]), ("lsda pbe scan, bars", vec!["lsda", "pbe", "scan"])] {
            for threads in [1, 2] {
                let engine = Engine::new(models.iter().map(|m| Model::from_name(m).expect("model")).collect(), EngineParams::default());
                let estimate = estimate_file(&file, &LoadParams::default(), &engine, threads).expect("estimate").total();
                let mut args = vec!["-j".to_string(), threads.to_string()];
                for m in &models {
                    args.extend(["--model".to_string(), m.to_string()]);
                }
                let args: Vec<&str> = args.iter().map(String::as_str).collect();
                let Some(measured) = peak(&file, &args) else { continue };
                println!(
                    "{:>6} {:<22} {:>7} {:>12.0} {:>12.0} {:>8.2}",
                    format!("{n}³"),
                    label,
                    threads,
                    mib(estimate),
                    mib(measured),
                    measured as f64 / estimate as f64
                );
            }
        }
    }
}
