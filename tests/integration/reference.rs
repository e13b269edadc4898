//! Real quantum-chemistry output: every orbital cube file of `../shared/reference/<molecule>/`
//! through the grid path, against `reference.json`.
//!
//! reference: PySCF 2.14 (exact Gaussian-integral J, `hartree_self`) and libxc 7.0.0 on a level-8
//! Becke grid (`lsda_x`, `pw92_c`), shared reference set; cubes at 0.15 bohr, five printed digits.
//!
//! Tolerances, by what a 0.15 bohr grid can resolve:
//! - orbitals whose grid norm is within 5e-4 of one electron (no cusp the grid misses; p-like and
//!   diffuse orbitals): J, E_x and E_c within 0.25 %. Their observed errors are below 0.11 %. The
//!   norm is only a symptom: water's 2a1 has a norm within 8e-4 and an E_x off by 0.46 %.
//! - other valence orbitals (2s-like, with a cusp at a heavy nucleus): within 8 %.
//! - core orbitals (orbital energy below −5 Eh, 1s of a first-row atom): the cusp spans about one
//!   grid step, so the plain sum is far off (+99 % when a nucleus sits on a grid point, −6 % when
//!   it lies between points). Checked: within 110 %, and the error has the sign of the norm's
//!   error (over-weighted peak: both too large; missed peak: both too small).
//!
//! Run with `--nocapture` to print the per-orbital table recorded in the README.

use crate::common::shared_dir;
use sixray::diagnostics::{Engine, EngineParams, Spin};
use sixray::input::{LoadParams, SpinRule, load_cube};
use sixray::par::Parallelism;
use sixray::xc::Model;
use std::path::Path;

struct Row {
    molecule: String,
    file: String,
    energy: f64,
    norm: f64,
    errors: [f64; 3],
}

fn num(v: &serde_json::Value, key: &str) -> f64 {
    v[key].as_f64().unwrap_or_else(|| panic!("reference value `{key}` missing in {v}"))
}

fn molecule_rows(dir: &Path, engine: &Engine) -> Vec<Row> {
    let text = std::fs::read_to_string(dir.join("reference.json")).expect("reference.json");
    let reference: serde_json::Value = serde_json::from_str(&text).expect("reference.json parses");
    let molecule = dir.file_name().unwrap().to_string_lossy().into_owned();
    let mut rows = Vec::new();
    for o in reference["orbitals"].as_array().expect("orbitals") {
        let file = o["file"].as_str().expect("file");
        let spin = match o["spin"].as_str() {
            Some("alpha") => Spin::Alpha,
            Some("beta") => Spin::Beta,
            _ => Spin::Restricted,
        };
        // One electron per spin-orbital: reference.json's `occupation` is that of the spatial
        // orbital, while its energies are of n_i = |φ_i|².
        let load = LoadParams { spin: SpinRule::Fixed(spin), ..LoadParams::default() };
        let orbitals = load_cube(&dir.join(file), &load).unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(orbitals.len(), 1, "{file}");
        let r = engine.analyse(&orbitals[0], Parallelism::Rayon).unwrap_or_else(|e| panic!("{file}: {e}"));
        let rel = |got: f64, want: f64| (got - want) / want;
        let lsda = r.models[0];
        rows.push(Row {
            molecule: molecule.clone(),
            file: file.to_string(),
            energy: num(o, "orbital_energy"),
            norm: r.norm,
            errors: [
                rel(r.hartree, num(o, "hartree_self")),
                rel(lsda.exchange, num(o, "lsda_x")),
                rel(lsda.correlation, num(o, "pw92_c")),
            ],
        });
    }
    rows
}

#[test]
fn grid_self_energies_against_gaussian_integral_reference() {
    let Some(shared) = shared_dir("grid_self_energies_against_gaussian_integral_reference") else { return };
    let mut dirs: Vec<_> = std::fs::read_dir(shared.join("reference"))
        .expect("reference dir")
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.join("reference.json").is_file())
        .collect();
    dirs.sort();
    assert!(dirs.len() >= 5, "expected the shared molecules, found {dirs:?}");
    let engine = Engine::new(vec![Model::from_name("lsda").unwrap()], EngineParams::default());

    println!("| molecule | orbital | ε (Eh) | norm | J error | E_x (LSDA) error | E_c (PW92) error |");
    println!("|:--|:--|--:|--:|--:|--:|--:|");
    let mut failures = Vec::new();
    for dir in &dirs {
        for row in molecule_rows(dir, &engine) {
            let [j, x, c] = row.errors;
            println!(
                "| {} | {} | {:.3} | {:.5} | {:+.3} % | {:+.3} % | {:+.3} % |",
                row.molecule,
                row.file.trim_end_matches(".cube.gz"),
                row.energy,
                row.norm,
                100.0 * j,
                100.0 * x,
                100.0 * c
            );
            let resolved = (row.norm - 1.0).abs() < 5e-4;
            let core = row.energy < -5.0;
            let ok = if resolved {
                row.errors.iter().all(|e| e.abs() < 2.5e-3)
            } else if core {
                let sign = (row.norm - 1.0).signum();
                row.errors.iter().all(|e| e.abs() < 1.1 && e.signum() == sign)
            } else {
                row.errors.iter().all(|e| e.abs() < 0.08)
            };
            if !ok {
                failures.push(format!("{}/{}: norm {:.5}, errors {:?}", row.molecule, row.file, row.norm, row.errors));
            }
        }
    }
    assert!(failures.is_empty(), "outside tolerance:\n{}", failures.join("\n"));
}
