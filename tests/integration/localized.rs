//! Localized orbitals through the real binary: `rank --orbitals` on grid and basis-set files,
//! workflows with `orbitals: both`, and the grid path against the shared reference.

use serde_json::Value;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};
use std::process::Output;

use crate::common::shared_dir;
use crate::common::{number, sixray};

fn json(o: &Output) -> Value {
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    serde_json::from_slice(&o.stdout).unwrap_or_else(|e| panic!("{e}: {}", String::from_utf8_lossy(&o.stdout)))
}

/// Two normalised Gaussian amplitudes g_± (exponent `a`, centres ±`d` on x) rotated by 45°,
/// (g₊ ± g₋)/√2, as two cube files on one grid (step `h`, `points` per axis). The Gaussians barely
/// overlap, so the pair is orthonormal to ~e^{−2ad²}. Invented data for these tests.
fn mixed_pair(dir: &Path, a: f64, d: f64, h: f64, points: [usize; 3]) -> [PathBuf; 2] {
    let origin = points.map(|n| -(n as f64 - 1.0) * h / 2.0);
    let g = |x: f64, y: f64, z: f64, c: f64| (2.0 * a / std::f64::consts::PI).powf(0.75) * (-a * ((x - c).powi(2) + y * y + z * z)).exp();
    [1.0, -1.0].map(|sign| {
        let mut s = String::from("mixed pair\ninvented test orbital\n");
        let _ = writeln!(s, "{:5}{:12.6}{:12.6}{:12.6}", 0, origin[0], origin[1], origin[2]);
        for x in 0..3 {
            let mut v = [0.0; 3];
            v[x] = h;
            let _ = writeln!(s, "{:5}{:12.6}{:12.6}{:12.6}", points[x], v[0], v[1], v[2]);
        }
        for i in 0..points[0] {
            for j in 0..points[1] {
                for k in 0..points[2] {
                    let (x, y, z) = (origin[0] + i as f64 * h, origin[1] + j as f64 * h, origin[2] + k as f64 * h);
                    let v = (g(x, y, z, d) + sign * g(x, y, z, -d)) / std::f64::consts::SQRT_2;
                    let _ = write!(s, "{:14.6E}", v);
                    if k % 6 == 5 {
                        s.push('\n');
                    }
                }
                s.push('\n');
            }
        }
        let path = dir.join(if sign > 0.0 { "plus.cube" } else { "minus.cube" });
        std::fs::write(&path, s).unwrap();
        path
    })
}

// J of a normalised Gaussian density (2a/π)^{3/2} e^{−2ar²} is √(2a/2π) = √(a/π) (textbook
// closed form for an s Gaussian of exponent 2a).
#[test]
fn localizing_a_45_degree_mix_recovers_the_two_gaussians() {
    let dir = tempfile::tempdir().unwrap();
    let (a, d) = (1.0, 2.5);
    let files = mixed_pair(dir.path(), a, d, 0.2, [71, 41, 41]);
    let args = |set: &'static str| {
        vec!["rank", "-f", "json", "--no-cusp-correction", "--orbitals", set, files[0].to_str().unwrap(), files[1].to_str().unwrap()]
    };
    let canonical = json(&sixray(&args("canonical"), dir.path()));
    let localized = json(&sixray(&args("localized"), dir.path()));
    let exact = (a / std::f64::consts::PI).sqrt();
    for o in canonical["orbitals"].as_array().unwrap() {
        // Each mixed orbital spreads over both centres: far less self-repulsion.
        assert!(number(&o["hartree"]) < 0.75 * exact, "{o}");
        assert_eq!(o["set"], "canonical");
    }
    let orbitals = localized["orbitals"].as_array().unwrap();
    assert_eq!(orbitals.len(), 2);
    for o in orbitals {
        assert_eq!(o["set"], "localized");
        assert!(o["label"].as_str().unwrap().starts_with("loc#"), "{o}");
        let j = number(&o["hartree"]);
        assert!((j - exact).abs() < 1e-6 * exact + number(&o["errors"]["hartree"]), "J {j} vs {exact}");
    }
    let l = &localized["localization"][0];
    assert_eq!(l["orbitals"], 2);
    assert_eq!(l["converged"], true);
    // L rises from 0 (both dipoles at the origin) to 2d² (each orbital on its centre).
    assert!(number(&l["initial_functional"]).abs() < 1e-8, "{l}");
    assert!((number(&l["functional"]) - 2.0 * d * d).abs() < 1e-6, "{l}");
}

#[test]
fn both_sets_of_a_basis_file_in_every_format() {
    let dir = tempfile::tempdir().unwrap();
    let molden = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/data/basis/spherical.molden");
    let m = molden.to_str().unwrap();
    let both = json(&sixray(&["rank", "-f", "json", "--grid-level", "coarse", "--orbitals", "both", m], dir.path()));
    let canonical = both["canonical"]["orbitals"].as_array().unwrap();
    let localized = both["localized"]["orbitals"].as_array().unwrap();
    assert_eq!((canonical.len(), localized.len()), (3, 3));
    assert!(localized.iter().all(|o| o["set"] == "localized" && o["energy"].is_null()));
    assert!(canonical.iter().all(|o| o["set"] == "canonical" && o["energy"].is_number()));
    let l = &both["localized"]["localization"][0];
    assert!(number(&l["functional"]) >= number(&l["initial_functional"]), "{l}");
    assert!(both["canonical"]["localization"].as_array().unwrap().is_empty());

    let csv = sixray(&["rank", "-f", "csv", "--grid-level", "coarse", "--orbitals", "both", m], dir.path());
    let text = String::from_utf8_lossy(&csv.stdout);
    assert_eq!(text.lines().filter(|l| l.starts_with("rank,")).count(), 1, "one header: {text}");
    let header: Vec<&str> = text.lines().next().unwrap().split(',').collect();
    let set = header.iter().position(|&c| c == "set").expect("a set column");
    let sets: Vec<&str> = text.lines().skip(1).map(|l| l.split(',').nth(set).unwrap()).collect();
    assert_eq!(sets.iter().filter(|&&s| s == "canonical").count(), 3);
    assert_eq!(sets.iter().filter(|&&s| s == "localized").count(), 3);

    let table = sixray(&["rank", "--grid-level", "coarse", "--orbitals", "both", m], dir.path());
    let text = String::from_utf8_lossy(&table.stdout);
    assert!(text.starts_with("Canonical orbitals") && text.contains("\nFoster–Boys localized orbitals\n"), "{text}");
    assert!(text.contains("L 0.") || text.contains("L "), "{text}");
}

#[test]
fn a_workflow_reports_localized_orbitals_as_their_own_calculation() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path();
    std::fs::copy(PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/data/basis/spherical.molden"), p.join("fragment.molden")).unwrap();
    let (a, d) = (1.0, 2.5);
    mixed_pair(p, a, d, 0.25, [57, 33, 33]);
    let yaml = "calculations:\n\
                \x20 - name: fragment\n    files: [fragment.molden]\n    grid_level: coarse\n    orbitals: both\n\
                \x20 - name: pair\n    files: [plus.cube, minus.cube]\n    orbitals: localized\n\
                models: [lsda]\n\
                report:\n  formats: [json, markdown]\n";
    std::fs::write(p.join("set.yaml"), yaml).unwrap();
    let run = sixray(&["batch", "set.yaml", "--quiet", "--out", "out"], p);
    assert_eq!(run.status.code(), Some(0), "{}", String::from_utf8_lossy(&run.stderr));
    let report: Value = serde_json::from_str(&std::fs::read_to_string(p.join("out/report.json")).unwrap()).unwrap();
    let names: Vec<&str> = report["calculations"].as_array().unwrap().iter().map(|c| c["name"].as_str().unwrap()).collect();
    assert_eq!(names, ["fragment", "fragment (localized)", "pair (localized)"]);
    let pair = &report["calculations"][2];
    assert_eq!(pair["localization"][0]["orbitals"], 2);
    for o in pair["orbitals"].as_array().unwrap() {
        assert_eq!(o["set"], "localized");
    }
    let md = std::fs::read_to_string(p.join("out/report.md")).unwrap();
    assert!(md.contains("Foster–Boys localization of 2 "), "{md}");
}

// reference: PySCF 2.14 Boys localization, libcint J and libxc 7.0.0 LSDA exchange (shared
// reference set, `boys_localized`), against the grid path on the same molecules' cube files
#[test]
fn grid_files_localize_like_the_reference_within_their_error_bars() {
    let Some(shared) = shared_dir("localized::grid_files_localize_like_the_reference_within_their_error_bars") else {
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    for molecule in ["lithium_hydride", "water"] {
        let base = shared.join("reference").join(molecule);
        let reference: Value = serde_json::from_str(&std::fs::read_to_string(base.join("reference.json")).unwrap()).unwrap();
        let mut files: Vec<String> = std::fs::read_dir(&base)
            .unwrap()
            .map(|e| e.unwrap().path())
            .filter(|p| p.file_name().unwrap().to_string_lossy().starts_with("orbital_"))
            .map(|p| p.display().to_string())
            .collect();
        files.sort();
        // The reference optimiser keeps symmetry (see basis::localized_orbitals_against_the_reference).
        let mut args = vec!["rank", "-f", "json", "--orbitals", "localized", "--keep-symmetry"];
        args.extend(files.iter().map(String::as_str));
        let ours = json(&sixray(&args, dir.path()));
        let mut got: Vec<(f64, f64, f64, f64)> = ours["orbitals"]
            .as_array()
            .unwrap()
            .iter()
            .map(|o| {
                (
                    number(&o["hartree"]),
                    number(&o["errors"]["hartree"]),
                    number(&o["models"]["lsda"]["exchange"]),
                    number(&o["errors"]["models"]["lsda"]["exchange"]),
                )
            })
            .collect();
        let mut want: Vec<(f64, f64)> = reference["boys_localized"]
            .as_array()
            .unwrap()
            .iter()
            .map(|e| (number(&e["hartree_self"]), number(&e["lsda_x"])))
            .collect();
        got.sort_by(|a, b| a.0.total_cmp(&b.0));
        want.sort_by(|a, b| a.0.total_cmp(&b.0));
        assert_eq!(got.len(), want.len(), "{molecule}");
        for (g, w) in got.iter().zip(&want) {
            assert!((g.0 - w.0).abs() <= g.1, "{molecule}: J {} ± {} vs reference {}", g.0, g.1, w.0);
            assert!((g.2 - w.1).abs() <= g.3, "{molecule}: E_x {} ± {} vs reference {}", g.2, g.3, w.1);
        }
    }
}
