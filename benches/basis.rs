//! Gaussian-basis throughput: `cargo bench --bench basis` (release build, prints a table).
//!
//! 1. Exact Hartree self-energies J_i of every occupied orbital of the shared water reference
//!    (cc-pVTZ, 58 spherical functions, five orbitals, `../shared/reference/water/orbitals.molden`;
//!    skipped with a notice where absent), in one pass over the integrals, on one thread and on
//!    all threads; reading the file and building the basis are reported separately.
//! 2. Orbital values and gradients of the same five orbitals on 10⁶ points of a cube-like grid
//!    around the molecule (what a grid-based exchange–correlation step would ask for).
//!
//! 3. The whole basis-set path of `sixray rank` on the same file (exact J plus every
//!    functional of the reference files on the atom-centred grid) at each grid level, with error bars
//!    (a second, coarser grid) and without.
//!
//! 4. Exact J of all 15 occupied orbitals of CuH in cc-pVQZ (134 spherical functions, an h shell
//!    on Cu; RHF orbitals from PySCF 2.14, `benches/data/cuh_qz.molden.gz`, written by
//!    `benches/data/cuh_qz.py`), with the largest deviation from PySCF's libcint J.
//!
//! Each timing is the best of several runs.

mod common;

use common::best;
use std::io::Write;
use std::path::PathBuf;

use sixray::basis::coulomb::{CoulombParams, self_energies_with};
use sixray::basis::{self};
use sixray::diagnostics::{Engine, EngineParams};
use sixray::molecular::{MolecularParams, analyse_molden};
use sixray::molgrid::{GridAtom, GridLevel, MolecularGrid};
use sixray::par::Parallelism;
use sixray::xc::Model;

fn main() {
    metal_hydride();
    water();
}

/// Part 4 of the module header: CuH, cc-pVQZ.
fn metal_hydride() {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("benches/data");
    let (t, (basis, mos)) = best(3, || basis::read(&dir.join("cuh_qz.molden.gz")).expect("CuH reads"));
    let occupied: Vec<&[f64]> = mos.occupied().map(|o| o.coefficients.as_slice()).collect();
    let max_l = basis.shells.iter().map(|s| s.l).max().unwrap_or(0);
    let primitives: usize = basis.shells.iter().map(|s| s.exponents.len()).sum();
    println!(
        "sixray basis benchmark: CuH, cc-pVQZ ({} functions, {} shells, {primitives} primitives, l ≤ {max_l}), {} threads available\n",
        basis.function_count(),
        basis.shells.len(),
        rayon::current_num_threads()
    );
    println!("{:<58} {:>12}", "measurement", "result");
    println!("{:<58} {:>9.2} ms", "read molden file, build basis", t.as_secs_f64() * 1e3);
    // reference: PySCF 2.14.0 / libcint, benches/data/cuh_qz.py (cuh_qz.json)
    let reference: Vec<f64> = std::fs::read_to_string(dir.join("cuh_qz.json"))
        .ok()
        .and_then(|text| serde_json::from_str::<serde_json::Value>(&text).ok())
        .and_then(|v| v["hartree_self"].as_array().map(|a| a.iter().filter_map(|x| x.as_f64()).collect()))
        .unwrap_or_default();
    for (label, par, runs) in [("all threads", Parallelism::Rayon, 3), ("1 thread", Parallelism::Sequential, 1)] {
        let (t, r) = best(runs, || self_energies_with(&basis, &occupied, CoulombParams::default(), par));
        let worst = r
            .hartree
            .iter()
            .zip(&reference)
            .map(|(a, b)| ((a - b) / b).abs())
            .fold(0.0f64, f64::max);
        println!(
            "{:<58} {:>9.3} s  (max |ΔJ/J| vs PySCF {worst:.1e}; {} pair-pairs, {} screened)",
            format!("J of all {} occupied orbitals ({label})", occupied.len()),
            t.as_secs_f64(),
            r.pair_pairs.0,
            r.pair_pairs.1
        );
    }
    println!();
}

/// Parts 1 to 3: the shared water reference.
fn water() {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../shared/reference/water/orbitals.molden");
    if !path.is_file() {
        let _ = writeln!(
            std::io::stderr(),
            "skipping the basis benchmark: {} not found",
            path.display()
        );
        return;
    }
    let threads = rayon::current_num_threads();
    println!("sixray basis benchmark: water, cc-pVTZ, {threads} threads available\n");
    println!("{:<58} {:>12}", "measurement", "result");
    let (t, (basis, mos)) = best(5, || basis::read(&path).expect("water reads"));
    let occupied: Vec<&[f64]> = mos.occupied().map(|o| o.coefficients.as_slice()).collect();
    println!(
        "{:<58} {:>9.2} ms",
        format!("read molden file, build basis ({} functions)", basis.function_count()),
        t.as_secs_f64() * 1e3
    );
    for (label, par) in [
        ("1 thread", Parallelism::Sequential),
        ("all threads", Parallelism::Rayon),
    ] {
        let (t, r) = best(5, || {
            self_energies_with(&basis, &occupied, CoulombParams::default(), par)
        });
        let js: Vec<String> = r.hartree.iter().map(|j| format!("{j:.6}")).collect();
        println!(
            "{:<58} {:>9.3} s  (J = {} Eh; {} pair-pairs, {} screened)",
            format!("J of all {} occupied orbitals ({label})", occupied.len()),
            t.as_secs_f64(),
            js.join(", "),
            r.pair_pairs.0,
            r.pair_pairs.1
        );
    }
    // 100³ points, 0.15 bohr apart, centred on the molecule.
    let n = 100;
    let points: Vec<[f64; 3]> = (0..n * n * n)
        .map(|k| [k / (n * n), k / n % n, k % n].map(|i| (i as f64 - (n as f64 - 1.0) / 2.0) * 0.15))
        .collect();
    for (label, par) in [
        ("1 thread", Parallelism::Sequential),
        ("all threads", Parallelism::Rayon),
    ] {
        let (t, _) = best(3, || basis.orbital_values(&occupied, &points, par));
        println!(
            "{:<58} {:>9.3} s  ({:.2} µs per point)",
            format!(
                "values + gradients of {} orbitals on 10⁶ points ({label})",
                occupied.len()
            ),
            t.as_secs_f64(),
            t.as_secs_f64() * 1e6 / points.len() as f64
        );
    }
    // Every functional of the shared reference files: LSDA, PW92, VWN5, B88, LYP, PBE, PW91,
    // SCAN and r²SCAN exchange and correlation.
    let models: Vec<Model> = ["lsda", "lsda-vwn5", "blyp", "pbe", "pw91-x", "scan", "r2scan"]
        .iter()
        .map(|m| Model::from_name(m).expect("built-in model"))
        .collect();
    let names: Vec<String> = models.iter().map(|m| m.name.clone()).collect();
    let atoms: Vec<GridAtom> = basis
        .atoms
        .iter()
        .map(|a| GridAtom { position: a.position, atomic_number: a.atomic_number as i32 })
        .collect();
    println!("\nmodels: {}", names.join(", "));
    for level in [GridLevel::Coarse, GridLevel::Default, GridLevel::Fine] {
        let points = MolecularGrid::new(&atoms, level).len();
        for error_bars in [false, true] {
            let mut params = EngineParams::default();
            params.trust.error_bars = error_bars;
            let engine = Engine::new(models.clone(), params);
            let molecular = MolecularParams { grid: level, ..MolecularParams::default() };
            let (t, _) = best(3, || analyse_molden(&path, &engine, &molecular, Parallelism::Rayon).expect("water analyses"));
            println!(
                "{:<58} {:>9.3} s",
                format!(
                    "{level:?} grid ({points} points), all orbitals{}",
                    if error_bars { ", error bars" } else { "" }
                ),
                t.as_secs_f64()
            );
        }
    }
}
