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
