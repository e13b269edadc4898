//! Memory: a grid too large for the memory at hand fails its own file with a message saying what
//! it needs, every other file completes and the reports are written; the budget option; an
//! allocation that fails despite the estimate is an error, not an abort.
//!
//! The limit is an address-space limit (`ulimit -v`, set by `sh` for the one command), which
//! this machine's sandbox honours where cgroups cannot be set; under it allocation fails instead
//! of the process being killed, so both the estimate and the fallible allocation are seen.

#[path = "../../benches/common/synthetic.rs"]
mod synthetic;

use super::common::{number, stderr, stdout};
use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use std::sync::OnceLock;

/// Address space the limited runs get: room for the small files, not for a 400³ grid (about
/// 5 GiB with its Coulomb kernel).
const LIMIT_KIB: u64 = 3 << 20;

/// `sixray args…` in `dir` under an address-space limit of `kib` KiB.
fn sixray_limited(kib: u64, args: &[&str], dir: &Path) -> Output {
    Command::new("sh")
        .arg("-c")
        .arg(format!("ulimit -v {kib} && exec \"$0\" \"$@\""))
        .arg(env!("CARGO_BIN_EXE_sixray"))
        .args(args)
        .current_dir(dir)
        .output()
        .expect("run sixray under sh")
}

/// A directory with a 400³ orbital file (`huge.cube.gz`, 0.2 bohr steps: a 80-bohr box) and two
/// small ones (`small_1`, `small_2`, 40³ and 42³), copied from files written once per test run.
fn files() -> tempfile::TempDir {
    static WRITTEN: OnceLock<PathBuf> = OnceLock::new();
    let source = WRITTEN.get_or_init(|| {
        let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join("memory-tests");
        std::fs::create_dir_all(&dir).expect("test directory");
        synthetic::write_orbital_cube(&dir.join("huge.cube.gz"), [400; 3], 0.2).expect("write huge cube");
        // Two grids of their own: files of the same content would be analysed once.
        for (k, n) in [(1, 40), (2, 42)] {
            synthetic::write_orbital_cube(&dir.join(format!("small_{k}.cube.gz")), [n; 3], 0.2).expect("write cube");
        }
        dir
    });
    let dir = tempfile::tempdir().expect("temporary directory");
    for name in ["huge.cube.gz", "small_1.cube.gz", "small_2.cube.gz"] {
        std::fs::copy(source.join(name), dir.path().join(name)).expect("copy test file");
    }
    dir
}

fn json(text: &str) -> serde_json::Value {
    serde_json::from_str(text).unwrap_or_else(|e| panic!("{e}: {text}"))
}

/// The report's sources of analysed orbitals, and of failures with their messages.
fn sources(report: &serde_json::Value) -> (Vec<String>, Vec<(String, String)>) {
    let orbitals = report["orbitals"].as_array().expect("orbitals").iter().map(|o| o["source"].as_str().unwrap().to_string()).collect();
    let failures = report["failures"]
        .as_array()
        .expect("failures")
        .iter()
        .map(|f| (f["source"].as_str().unwrap().to_string(), f["error"].as_str().unwrap().to_string()))
        .collect();
    (orbitals, failures)
}

#[test]
fn a_grid_too_large_for_the_limit_fails_alone_with_what_it_needs() {
    let dir = files();
    let args = ["rank", "small_1.cube.gz", "huge.cube.gz", "small_2.cube.gz", "--format", "json"];
    let out = sixray_limited(LIMIT_KIB, &args, dir.path());
    // Before: the kernel set-up's allocation aborted the process (SIGABRT, nothing written).
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    let err = stderr(&out);
    assert!(err.contains("huge.cube.gz: needs about"), "{err}");
    assert!(err.contains("for a 400×400×400 grid, more than the memory budget of"), "{err}");
    assert!(err.contains("(the address-space limit (ulimit -v) of 3.00 GiB, less a margin)"), "{err}");
    assert!(err.contains("--memory"), "{err}");
    let (orbitals, failures) = sources(&json(&stdout(&out)));
    assert_eq!(orbitals.len(), 2);
    assert!(orbitals.iter().all(|s| s.starts_with("small_")), "{orbitals:?}");
    assert_eq!(failures.len(), 1);
    assert_eq!(failures[0].0, "huge.cube.gz");
    let estimate = failures[0].1.split("needs about ").nth(1).unwrap();
    // The estimate is in GiB and above the limit (4–8 GiB for this grid; see the README).
    assert!(estimate.contains("GiB"), "{estimate}");
}

#[test]
fn an_allocation_that_fails_despite_the_budget_fails_the_file_not_the_process() {
    let dir = files();
    // A budget far above the limit: the estimate lets the file start, its buffers do not fit.
    let args = ["rank", "huge.cube.gz", "small_1.cube.gz", "--format", "json", "--memory", "1T"];
    let out = sixray_limited(LIMIT_KIB, &args, dir.path());
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    let err = stderr(&out);
    assert!(err.contains("huge.cube.gz"), "{err}");
    assert!(err.contains("could not allocate"), "{err}");
    let (orbitals, failures) = sources(&json(&stdout(&out)));
    assert_eq!(orbitals, ["small_1.cube.gz"]);
    assert_eq!(failures.len(), 1);
    assert!(failures[0].1.contains("could not allocate"), "{}", failures[0].1);
}

#[test]
fn a_batch_with_one_huge_file_writes_every_other_result() {
    let dir = files();
    let workflow = "calculations:\n  - name: big\n    files: [huge.cube.gz]\n  - name: first\n    files: [small_1.cube.gz]\n  - name: second\n    files: [small_2.cube.gz]\nmodels: [lsda]\nreport:\n  dir: out\n  formats: [json, markdown]\n";
    std::fs::write(dir.path().join("set.yaml"), workflow).unwrap();
    let out = sixray_limited(LIMIT_KIB, &["batch", "set.yaml"], dir.path());
    assert_eq!(out.status.code(), Some(1), "{}", stderr(&out));
    let err = stderr(&out);
    assert!(err.contains("sixray: memory budget"), "the budget and its source are shown: {err}");
    assert!(err.contains("calculation big failed: huge.cube.gz: needs about"), "{err}");
    let line = json(stdout(&out).trim());
    assert_eq!((line["status"].as_str(), line["completed"].as_u64(), line["failed"].as_u64()), (Some("partial"), Some(2), Some(1)));
    let report = json(&std::fs::read_to_string(dir.path().join("out/report.json")).unwrap());
    let calculations = report["calculations"].as_array().expect("calculations");
    let by_name = |n: &str| calculations.iter().find(|c| c["name"] == n).unwrap_or_else(|| panic!("{n} in {report}"));
    for name in ["first", "second"] {
        let orbital = &by_name(name)["orbitals"][0];
        assert!(number(&orbital["hartree"]) > 0.0, "{name}: {orbital}");
    }
    assert!(by_name("big")["failures"][0]["error"].as_str().unwrap().contains("400×400×400"));
    assert!(std::fs::read_to_string(dir.path().join("out/report.md")).unwrap().contains("first"));
}

#[test]
fn the_budget_option_takes_a_size_with_its_unit() {
    let dir = tempfile::tempdir().unwrap();
    synthetic::write_orbital_cube(&dir.path().join("orbital.cube.gz"), [40; 3], 0.2).unwrap();
    let run = |args: &[&str]| super::common::sixray(args, dir.path());
    let bare = run(&["rank", "orbital.cube.gz", "--memory", "8000"]);
    assert_eq!(bare.status.code(), Some(2));
    assert!(stderr(&bare).contains("no unit"), "{}", stderr(&bare));
    // A budget too small for the file: it fails, with the budget as given.
    let small = run(&["rank", "orbital.cube.gz", "--memory", "1M", "--format", "json"]);
    assert_eq!(small.status.code(), Some(2));
    assert!(stderr(&small).contains("more than the memory budget of 1.00 MiB (as given)"), "{}", stderr(&small));
    let ok = run(&["rank", "orbital.cube.gz", "--memory", "2G", "--format", "json"]);
    assert!(ok.status.success(), "{}", stderr(&ok));
    // The workflow's option, and --memory above it.
    let workflow = "calculations:\n  - name: one\n    files: [orbital.cube.gz]\nmodels: [lsda]\nreport:\n  dir: out\n  formats: [json]\noptions:\n  memory: 1M\n";
    std::fs::write(dir.path().join("set.yaml"), workflow).unwrap();
    let tight = run(&["batch", "set.yaml", "--quiet"]);
    assert_eq!(tight.status.code(), Some(1), "{}", stderr(&tight));
    assert!(stderr(&tight).contains("memory budget of 1.00 MiB"), "{}", stderr(&tight));
    let wide = run(&["batch", "set.yaml", "--quiet", "--memory", "2G", "--fresh"]);
    assert!(wide.status.success(), "{}", stderr(&wide));
    std::fs::write(dir.path().join("bad.yaml"), workflow.replace("1M", "lots")).unwrap();
    let bad = run(&["batch", "bad.yaml"]);
    assert_eq!(bad.status.code(), Some(2));
    assert!(stderr(&bad).contains("memory: `lots` is not a size") && stderr(&bad).contains("line 9"), "{}", stderr(&bad));
}
