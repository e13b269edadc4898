//! `sixray batch` end to end: the demo workflow, a set with a corrupt file, invalid workflows, and
//! an interrupted run resumed from the cache.

use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};
use crate::common::{sixray, stderr};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn read_json(path: &Path) -> Value {
    serde_json::from_slice(&std::fs::read(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))).unwrap()
}

/// A workflow in `dir` over copies of the demo samples (so the test owns its inputs).
fn workflow_over_samples(dir: &Path, extra: &str) -> PathBuf {
    for set in ["water", "hydroxide", "lithium_hydride", "hydroxyl_radical"] {
        let to = dir.join("grids").join(set);
        std::fs::create_dir_all(&to).unwrap();
        for e in std::fs::read_dir(root().join("samples").join(set)).unwrap() {
            let e = e.unwrap();
            std::fs::copy(e.path(), to.join(e.file_name())).unwrap();
        }
    }
    let yaml = format!(
        "calculations:\n\
         \x20 - name: water\n    files: [grids/water/*.gz]\n    tags: [neutral]\n\
         \x20 - name: hydroxide\n    files: [grids/hydroxide/*.gz]\n    tags: [anion]\n\
         \x20 - name: lithium hydride\n    files: [grids/lithium_hydride/*.gz]\n    tags: [neutral]\n\
         \x20 - name: hydroxyl radical\n    files: [grids/hydroxyl_radical/*.gz]\n    tags: [neutral, radical]\n\
         models: [lsda, pbe, xalpha=0.75]\n\
         report:\n  dir: out\n  worst: 5\n{extra}"
    );
    let path = dir.join("set.yaml");
    std::fs::write(&path, yaml).unwrap();
    path
}

#[test]
fn demo_workflow_reports_agree_with_rank() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("reports");
    let wf = root().join("workflows/samples.yaml");
    let run = sixray(&["batch", wf.to_str().unwrap(), "--out", out.to_str().unwrap(), "--quiet"], dir.path());
    assert_eq!(run.status.code(), Some(0), "{}", stderr(&run));
    assert!(stderr(&run).is_empty(), "--quiet: {}", stderr(&run));
    let summary: Value = serde_json::from_slice(&run.stdout).unwrap();
    assert_eq!(summary["status"], "ok");

    let report = read_json(&out.join("report.json"));
    let calcs = report["calculations"].as_array().unwrap();
    // Six calculations, water's localized orbitals a seventh.
    assert_eq!(calcs.len(), 7);
    assert!(calcs.iter().all(|c| c["status"] == "ok"));
    let localized = calcs.iter().find(|c| c["name"] == "water (localized)").expect("water's localized set");
    assert_eq!(localized["orbitals"].as_array().unwrap().len(), 5);
    assert!(localized["orbitals"].as_array().unwrap().iter().all(|o| o["set"] == "localized"));
    assert_eq!(localized["localization"][0]["converged"], true);
    let models: Vec<String> = report["models"].as_array().unwrap().iter().map(|m| m["name"].as_str().unwrap().into()).collect();
    assert!(models.contains(&"slater-vwn5".to_string()), "custom model listed: {models:?}");

    // The same orbitals through `rank` give the same numbers.
    let water = calcs.iter().find(|c| c["name"] == "water").unwrap();
    let mut args = vec!["rank".to_string(), "-f".into(), "json".into(), root().join("samples/basis/water.molden.gz").display().to_string()];
    for m in &models {
        if m != "slater-vwn5" {
            args.extend(["-m".into(), m.clone()]);
        }
    }
    let rank = sixray(&args.iter().map(String::as_str).collect::<Vec<_>>(), dir.path());
    let rank: Value = serde_json::from_slice(&rank.stdout).unwrap();
    for (a, b) in water["orbitals"].as_array().unwrap().iter().zip(rank["orbitals"].as_array().unwrap()) {
        assert_eq!(a["label"], b["label"]);
        assert_eq!(a["hartree"], b["hartree"]);
        assert_eq!(a["models"]["pbe"], b["models"]["pbe"]);
    }
    // Every calculation's Perdew–Zunger correction is there, and the summary covers the set.
    assert_eq!(report["summary"]["completed"], 7);
    let radical = calcs.iter().find(|c| c["name"] == "hydroxyl radical").unwrap();
    assert_eq!(radical["spin_orbitals"], 9);
    assert!(radical["totals"]["lsda"]["perdew_zunger"].is_f64());
    assert_eq!(report["summary"]["worst"].as_array().unwrap().len(), 10);
    assert!(report["summary"]["tags"]["radical"]["models"]["lsda"]["mean_abs_self_interaction"].is_f64());

    // CSV: one row per calculation, orbital and model.
    let csv = std::fs::read_to_string(out.join("orbitals.csv")).unwrap();
    let records: usize = calcs.iter().map(|c| c["orbitals"].as_array().unwrap().len()).sum();
    assert_eq!(csv.lines().count(), 1 + records * models.len());
    assert!(csv.starts_with("calculation,status,tags,rank,source,label,spin,"));

    let md = std::fs::read_to_string(out.join("report.md")).unwrap();
    for section in ["## Models across the set", "## Perdew–Zunger correction per calculation", "## By tag", "worst orbitals", "### hydroxyl radical (oxygen, neutral, radical)"] {
        assert!(md.contains(section), "{section}");
    }
    // The report says which corrections the values carry.
    assert!(md.contains("Grid files: cusp correction on; tail correction off."), "{md}");
    assert_eq!((&report["summary"]["cusp_correction"], &report["summary"]["tail_correction"]), (&Value::Bool(true), &Value::Bool(false)));
}

#[test]
fn a_corrupt_file_fails_its_calculation_and_the_rest_is_reported() {
    let dir = tempfile::tempdir().unwrap();
    let wf = workflow_over_samples(dir.path(), "");
    // Replace one hydroxide orbital by a truncated plain-text copy of another file.
    let bad = dir.path().join("grids/hydroxide/orbital_003.cube.gz");
    std::fs::remove_file(&bad).unwrap();
    std::fs::write(dir.path().join("grids/hydroxide/orbital_003.cube.gz"), "comment\ncomment\n    2 0.0 0.0 0.0\n   10 0.1 0.0 0.0\n").unwrap();
    let run = sixray(&["batch", wf.to_str().unwrap()], dir.path());
    assert_eq!(run.status.code(), Some(1), "{}", stderr(&run));
    let err = stderr(&run);
    assert!(err.contains("calculation hydroxide failed") && err.contains("orbital_003.cube.gz:5"), "{err}");
    let report = read_json(&dir.path().join("out/report.json"));
    let status: Vec<(String, String)> = report["calculations"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| (c["name"].as_str().unwrap().into(), c["status"].as_str().unwrap().into()))
        .collect();
    assert_eq!(status.iter().filter(|(_, s)| s == "ok").count(), 3);
    let hydroxide = &report["calculations"][1];
    assert_eq!((hydroxide["name"].as_str(), hydroxide["status"].as_str()), (Some("hydroxide"), Some("failed")));
    assert!(hydroxide["error"].as_str().unwrap().contains("orbital_003.cube.gz:5"));
    // The hydroxide's good orbitals are kept, but not counted in the set statistics.
    assert_eq!(hydroxide["orbitals"].as_array().unwrap().len(), 4);
    assert_eq!(report["summary"]["failed"], 1);
    let md = std::fs::read_to_string(dir.path().join("out/report.md")).unwrap();
    assert!(md.contains("**Failed**"));
}

#[test]
fn an_invalid_workflow_is_refused_with_its_position_and_nothing_runs() {
    let dir = tempfile::tempdir().unwrap();
    let wf = workflow_over_samples(dir.path(), "options:\n  rank_by: lsdaa\n");
    let run = sixray(&["batch", wf.to_str().unwrap()], dir.path());
    assert_eq!(run.status.code(), Some(2));
    let err = stderr(&run);
    assert!(err.contains("set.yaml") && err.contains("unknown model `lsdaa`") && err.contains("line 19"), "{err}");
    assert!(!dir.path().join("out").exists(), "nothing may run");

    std::fs::write(&wf, "calculations:\n  - name: a\n    files: [grids/water/*.gz]\n   bad indent: [\nmodels: [lsda]\n").unwrap();
    let run = sixray(&["batch", wf.to_str().unwrap()], dir.path());
    assert_eq!(run.status.code(), Some(2));
    assert!(stderr(&run).contains("line 4 column"), "{}", stderr(&run));
}

#[test]
fn an_interrupted_run_resumes_from_the_cache_with_identical_reports() {
    let dir = tempfile::tempdir().unwrap();
    let wf = workflow_over_samples(dir.path(), "");
    let wf = wf.to_str().unwrap();
    // report.html too: its date is the inputs', which resuming does not change.
    let reports = ["report.md", "orbitals.csv", "report.json", "report.html"];

    // The reference: one uninterrupted run.
    let run = sixray(&["batch", wf, "--quiet", "--out", "whole"], dir.path());
    assert_eq!(run.status.code(), Some(0), "{}", stderr(&run));

    // The same workflow, killed (SIGKILL) once a few orbitals are cached, on one thread so that
    // there is time to do so.
    let mut child = Command::new(env!("CARGO_BIN_EXE_sixray"))
        .args(["batch", wf, "--quiet", "--out", "resumed", "-j", "1"])
        .current_dir(dir.path())
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let cache = dir.path().join("resumed/.sixray-cache");
    let start = Instant::now();
    let cached = || std::fs::read_dir(&cache).map_or(0, |d| d.filter(|e| e.as_ref().is_ok_and(|e| e.path().extension().is_some_and(|x| x == "json"))).count());
    while cached() < 3 {
        assert!(child.try_wait().unwrap().is_none(), "the run ended before it could be interrupted");
        assert!(start.elapsed() < Duration::from_secs(120), "no cache entries appeared");
        std::thread::sleep(Duration::from_millis(5));
    }
    child.kill().unwrap();
    child.wait().unwrap();
    let before = cached();
    assert!(before < 21, "interrupted before the end ({before} of 21 cached)");
    assert!(!dir.path().join("resumed/report.json").exists());

    let run = Command::new(env!("CARGO_BIN_EXE_sixray"))
        .args(["batch", wf, "--out", "resumed"])
        .current_dir(dir.path())
        .env("NO_COLOR", "1")
        .output()
        .unwrap();
    assert_eq!(run.status.code(), Some(0), "{}", stderr(&run));
    assert!(stderr(&run).contains("from cache"), "the resumed run reuses finished orbitals: {}", stderr(&run));
    for name in reports {
        let a = std::fs::read(dir.path().join("whole").join(name)).unwrap();
        let b = std::fs::read(dir.path().join("resumed").join(name)).unwrap();
        assert!(a == b, "{name} differs after resuming");
    }

    // --fresh recomputes everything (and gives the same reports again).
    let run = sixray(&["batch", wf, "--out", "resumed", "--fresh"], dir.path());
    assert!(!stderr(&run).contains("from cache"), "{}", stderr(&run));
    for name in reports {
        assert!(std::fs::read(dir.path().join("whole").join(name)).unwrap() == std::fs::read(dir.path().join("resumed").join(name)).unwrap());
    }
}

#[test]
fn density_files_are_checked_per_calculation() {
    // reference: PySCF 2.14 orbitals and total densities of the shared reference set.
    let Some(shared) = crate::common::shared_dir("density_files_are_checked_per_calculation") else { return };
    let dir = tempfile::tempdir().unwrap();
    let r = shared.join("reference");
    let yaml = format!(
        "calculations:\n\
         \x20 - name: water\n    files: ['{0}/water/orbital_*.cube.gz']\n    density: '{0}/water/density.cube.gz'\n\
         \x20 - name: water paired with the wrong density\n    files: ['{0}/water/orbital_*.cube.gz']\n    density: '{0}/lithium_hydride/density.cube.gz'\n\
         models: [lsda]\noptions:\n  error_bars: false\n",
        r.display()
    );
    std::fs::write(dir.path().join("set.yaml"), yaml).unwrap();
    let run = sixray(&["batch", "set.yaml", "--quiet"], dir.path());
    assert_eq!(run.status.code(), Some(0), "{}", stderr(&run));
    let report = read_json(&dir.path().join("report/report.json"));
    let good = &report["calculations"][0]["density_check"];
    let nuclei = good["nuclei"].as_array().unwrap();
    assert_eq!(nuclei.len(), 3, "O and both H found");
    assert!(nuclei.iter().all(|n| !n["atom"].is_null()));
    assert!(good["orbital_sum"]["integrated_abs_difference"].as_f64().unwrap() < 1e-3);
    // Water's orbitals against lithium hydride's density: on another grid, flagged, not fatal.
    let bad = &report["calculations"][1]["density_check"];
    let flags: Vec<&str> = bad["flags"].as_array().unwrap().iter().map(|f| f.as_str().unwrap()).collect();
    assert!(flags.iter().any(|f| f.starts_with("orbital-")), "{flags:?}");
    let md = std::fs::read_to_string(dir.path().join("report/report.md")).unwrap();
    assert!(md.contains("Density check") && md.contains("3 of 3 listed atoms found"), "{md}");

    // A density pattern must name one file.
    std::fs::write(dir.path().join("two.yaml"), format!("calculations:\n  - name: w\n    files: ['{0}/water/orbital_001.cube.gz']\n    density: '{0}/*/density.cube.gz'\nmodels: [lsda]\n", r.display())).unwrap();
    let run = sixray(&["batch", "two.yaml"], dir.path());
    assert_eq!(run.status.code(), Some(2));
    assert!(stderr(&run).contains("density must name one file"), "{}", stderr(&run));
}
