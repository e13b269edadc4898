//! `sixray rank` and `sixray batch` on Gaussian-basis (molden) files, through the real binary in
//! temporary directories. The files are the project's own (tests/data/basis, written by PySCF
//! 2.14 with invented orbitals; see generate.py there), so these tests need no shared data.

use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use crate::common::{number, sixray, stderr};

fn data(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/data/basis").join(name)
}

fn json(o: &Output) -> Value {
    serde_json::from_slice(&o.stdout)
        .unwrap_or_else(|e| panic!("{e}: {}\n{}", String::from_utf8_lossy(&o.stdout), String::from_utf8_lossy(&o.stderr)))
}

/// `rank -f json` of `files` with `extra` arguments, in `dir`; must succeed.
fn rank(dir: &Path, files: &[&Path], extra: &[&str]) -> Value {
    let mut args = vec!["rank", "-f", "json", "-m", "lsda", "-m", "pbe"];
    args.extend_from_slice(extra);
    args.extend(files.iter().map(|f| f.to_str().unwrap()));
    let out = sixray(&args, dir);
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    json(&out)
}

/// The report's orbitals from `file`, ordered by label.
fn orbitals_of(report: &Value, file: &Path) -> Vec<Value> {
    let mut o: Vec<Value> = report["orbitals"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|o| o["source"].as_str() == file.to_str())
        .cloned()
        .collect();
    o.sort_by(|a, b| a["label"].as_str().cmp(&b["label"].as_str()));
    o
}

// reference: PySCF 2.14 / libcint, tests/data/basis/spherical.json (exact J of each orbital)
#[test]
fn rank_takes_basis_files_beside_grid_files() {
    let dir = tempfile::tempdir().unwrap();
    let molden = data("spherical.molden");
    let cube = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("samples/lithium_hydride/orbital_001.cube.gz");
    let report = rank(dir.path(), &[&molden, &cube], &["--grid-level", "coarse"]);
    let reference: Value = serde_json::from_str(&std::fs::read_to_string(data("spherical.json")).unwrap()).unwrap();
    let ours = orbitals_of(&report, &molden);
    assert_eq!(ours.len(), 3);
    for (o, r) in ours.iter().zip(reference["orbitals"].as_array().unwrap()) {
        let index = r["index"].as_u64().unwrap();
        assert_eq!(o["label"], format!("spherical#{index}"));
        // The file's orbitals are α spin, with energies −3, −2, −1 hartree.
        assert_eq!(o["spin"], "alpha");
        assert_eq!(number(&o["energy"]), index as f64 - 4.0);
        assert!((number(&o["hartree"]) - number(&r["hartree_self"])).abs() < 1e-8, "{o}");
        assert!((number(&o["norm"]) - 1.0).abs() < 1e-4, "{o}");
        assert!(number(&o["errors"]["models"]["pbe"]["exchange"]) > 0.0, "a grid quadrature has an error bar");
    }
    let grid = orbitals_of(&report, &cube);
    assert_eq!(grid.len(), 1);
    assert!(grid[0]["energy"].is_null(), "grid files carry no orbital energy");
}

#[test]
fn grid_levels_agree_within_their_error_bars() {
    let dir = tempfile::tempdir().unwrap();
    let molden = data("spherical.molden");
    let coarse = orbitals_of(&rank(dir.path(), &[&molden], &["--grid-level", "coarse"]), &molden);
    let default = orbitals_of(&rank(dir.path(), &[&molden], &[]), &molden);
    for (c, d) in coarse.iter().zip(&default) {
        assert_eq!(c["hartree"], d["hartree"], "J is exact at every level");
        for model in ["lsda", "pbe"] {
            let (xc, xd) = (number(&c["models"][model]["exchange"]), number(&d["models"][model]["exchange"]));
            let bar = number(&c["errors"]["models"][model]["exchange"]);
            assert!(xc != xd, "the levels are different grids");
            assert!((xc - xd).abs() <= bar, "{model} {}: coarse {xc} default {xd} bar {bar}", c["label"]);
        }
    }
}

#[test]
fn the_grid_option_takes_basis_orbitals_through_the_grid_path() {
    let dir = tempfile::tempdir().unwrap();
    let molden = data("spherical.molden");
    let exact = orbitals_of(&rank(dir.path(), &[&molden], &[]), &molden);
    let sampled = orbitals_of(&rank(dir.path(), &[&molden], &["--grid", "0.2"]), &molden);
    assert_eq!(sampled.len(), exact.len());
    for (s, e) in sampled.iter().zip(&exact) {
        assert_eq!(s["label"], e["label"]);
        assert_eq!(s["energy"], e["energy"]);
        // A uniform grid is not exact, but its error bars must cover what it misses.
        let (js, je) = (number(&s["hartree"]), number(&e["hartree"]));
        assert!(js != je, "sampled J {js} is the exact one");
        let bar = number(&s["errors"]["hartree"]) + number(&e["errors"]["hartree"]);
        assert!((js - je).abs() <= bar, "{}: J {js} vs exact {je}, bars {bar}", s["label"]);
        for model in ["lsda", "pbe"] {
            let (xs, xe) = (number(&s["models"][model]["exchange"]), number(&e["models"][model]["exchange"]));
            let bar = number(&s["errors"]["models"][model]["exchange"]) + number(&e["errors"]["models"][model]["exchange"]);
            assert!((xs - xe).abs() <= bar, "{model} {}: E_x {xs} vs exact {xe}, bars {bar}", s["label"]);
        }
    }
    for bad in ["0", "-1", "0.01", "nan"] {
        let out = sixray(&["rank", &format!("--grid={bad}"), molden.to_str().unwrap()], dir.path());
        assert_eq!(out.status.code(), Some(2), "--grid {bad}");
        assert!(stderr(&out).contains("--grid"), "{}", stderr(&out));
    }
}

#[test]
fn a_broken_basis_file_names_its_line_and_the_others_are_still_ranked() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path();
    let text = std::fs::read_to_string(data("spherical.molden")).unwrap();
    // Line 10 is a primitive of the first shell; a word where its exponent belongs.
    let mut lines: Vec<&str> = text.lines().collect();
    assert!(lines[9].trim().starts_with("11720"), "{}", lines[9]);
    lines[9] = "   eleven  0.5";
    std::fs::write(p.join("broken.molden"), lines.join("\n")).unwrap();
    std::fs::copy(data("spherical.molden"), p.join("good.molden")).unwrap();
    let out = sixray(&["rank", "-f", "json", "--grid-level", "coarse", "good.molden", "broken.molden"], p);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("broken.molden:10"), "{}", stderr(&out));
    let v = json(&out);
    assert_eq!(v["orbitals"].as_array().unwrap().len(), 3);
    assert_eq!(v["failures"].as_array().unwrap().len(), 1);
}

#[test]
fn a_workflow_runs_basis_files_and_resumes_them_from_the_cache() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path();
    std::fs::copy(data("spherical.molden"), p.join("fragment.molden")).unwrap();
    std::fs::copy(data("cartesian.molden"), p.join("fragment-cartesian.molden")).unwrap();
    let yaml = "calculations:\n\
                \x20 - name: spherical\n    files: [fragment.molden]\n    grid_level: coarse\n\
                \x20 - name: cartesian\n    files: [fragment-cartesian.molden]\n    grid_level: coarse\n\
                models: [lsda, pbe]\n\
                report:\n  formats: [json]\n";
    std::fs::write(p.join("set.yaml"), yaml).unwrap();
    let read = || -> Value { serde_json::from_str(&std::fs::read_to_string(p.join("out/report.json")).unwrap()).unwrap() };
    let first = sixray(&["batch", "set.yaml", "--quiet", "--out", "out"], p);
    assert_eq!(first.status.code(), Some(0), "{}", stderr(&first));
    let a = read();
    let second = Command::new(env!("CARGO_BIN_EXE_sixray"))
        .args(["batch", "set.yaml", "--out", "out"])
        .current_dir(p)
        .env("NO_COLOR", "1")
        .output()
        .unwrap();
    assert_eq!(second.status.code(), Some(0), "{}", stderr(&second));
    assert!(stderr(&second).contains("from cache"), "{}", stderr(&second));
    let b = read();
    assert_eq!(a["calculations"], b["calculations"], "a cached run reports the same numbers");
    // The same orbitals as functions of space, in spherical and Cartesian components.
    let calcs = a["calculations"].as_array().unwrap();
    assert_eq!(calcs.len(), 2);
    let js: Vec<Vec<f64>> = calcs
        .iter()
        .map(|c| {
            let mut j: Vec<f64> = c["orbitals"].as_array().unwrap().iter().map(|o| number(&o["hartree"])).collect();
            j.sort_by(f64::total_cmp);
            j
        })
        .collect();
    assert_eq!(js[0].len(), 3);
    for (s, c) in js[0].iter().zip(&js[1]) {
        assert!((s - c).abs() < 1e-9, "{s} vs {c}");
    }

    std::fs::write(p.join("bad.yaml"), yaml.replace("grid_level: coarse\n  - name: cartesian", "uniform_grid: 0.01\n  - name: cartesian")).unwrap();
    let out = sixray(&["batch", "bad.yaml"], p);
    assert_eq!(out.status.code(), Some(2));
    let err = stderr(&out);
    assert!(err.contains("uniform_grid must be a spacing") && err.contains("bad.yaml") && err.contains("line 2"), "{err}");
}

// reference: PySCF 2.14 / libcint, tests/data/basis/natural.json (CISD natural orbitals of
// water in 6-31G: occupations and J of each unit-normalised orbital density)
#[test]
fn natural_orbitals_carry_their_fractional_occupations() {
    let dir = tempfile::tempdir().unwrap();
    let molden = data("natural.molden");
    let report = rank(dir.path(), &[&molden], &["--grid-level", "coarse", "--no-error-bars"]);
    let reference: Value = serde_json::from_str(&std::fs::read_to_string(data("natural.json")).unwrap()).unwrap();
    let reference = reference["orbitals"].as_array().unwrap();
    let ours = orbitals_of(&report, &molden);
    // Every orbital above the occupied cut (1e-8), each as two spin-orbitals of f/2 electrons.
    let occupied: Vec<&Value> = reference.iter().filter(|r| number(&r["occupation"]) > 1e-5).collect();
    assert_eq!(ours.len(), occupied.len(), "{report}");
    for r in occupied {
        let label = format!("natural#{}", r["index"]);
        let o = ours.iter().find(|o| o["label"] == label).unwrap_or_else(|| panic!("{label} missing"));
        assert_eq!(o["set"], "natural");
        assert_eq!(o["spin"], "restricted");
        // The file prints occupations to five decimals.
        let f = number(&o["occupation"]);
        assert!((2.0 * f - number(&r["occupation"])).abs() <= 5e-6, "{o}");
        // J of n_i = f|φ_i|² is f² J[|φ_i|²]: exact integrals on both sides.
        let want = f * f * number(&r["hartree_self_unit"]);
        assert!((number(&o["hartree"]) - want).abs() <= 1e-10 * want.max(1e-3), "{label}: {} vs {want}", o["hartree"]);
    }
}

/// The same water calculation as fchk and wfn, and an open-shell fchk, through `rank`; the
/// real files of ../shared/real-world (skipped with a notice when absent).
#[test]
fn rank_reads_fchk_and_wfn_files() {
    let Some(shared) = crate::common::shared_dir("rank_reads_fchk_and_wfn_files") else { return };
    let dir = tempfile::tempdir().unwrap();
    let real = shared.join("real-world");
    let (fchk, wfn, rohf) = (real.join("h2o_sto3g.fchk"), real.join("h2o_sto3g.wfn"), real.join("ch3_rohf_sto3g_g03.fchk"));
    let report = rank(dir.path(), &[&fchk, &wfn, &rohf], &["--grid-level", "coarse"]);
    let (a, b) = (orbitals_of(&report, &fchk), orbitals_of(&report, &wfn));
    assert_eq!((a.len(), b.len()), (5, 5));
    for (x, y) in a.iter().zip(&b) {
        // The wfn prints exponents to seven digits: J to 5e-7 relative (see
        // basis::wavefunction_tests::fchk_and_wfn_agree for the reason).
        let (jx, jy) = (number(&x["hartree"]), number(&y["hartree"]));
        assert!((jx - jy).abs() < 5e-7 * jx, "{x} {y}");
    }
    // reference: the file's header: 5 α and 4 β electrons, restricted open shell.
    assert_eq!(orbitals_of(&report, &rohf).len(), 5);
}
