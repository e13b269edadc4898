//! Orbital files written by other quantum-chemistry programs (`../shared/real-world/`: ORCA,
//! Psi4, Molpro, Turbomole, CFOUR and Gaussian output from a public I/O library's test data):
//! each is read with an orthonormal occupied set or refused with a reason, and the same
//! molecule written by different programs gives the same J.

use crate::common::{number, shared_dir, sixray, stderr};
use sixray::basis::coulomb::self_energies;
use sixray::basis::{BasisSet, MolecularOrbitals, read_checked};
use sixray::par::Parallelism;
use std::path::Path;

fn occupied_hartree(basis: &BasisSet, orbitals: &MolecularOrbitals) -> Vec<f64> {
    let c: Vec<&[f64]> = orbitals.occupied().map(|o| o.coefficients.as_slice()).collect();
    self_energies(basis, &c, Parallelism::Sequential)
}

/// Every molden file is either read with max |CᵀSC − I| within its tolerance, or refused with a
/// message that names the file.
#[test]
fn every_molden_file_is_read_orthonormal_or_refused() {
    let Some(dir) = shared_dir("every_molden_file_is_read_orthonormal_or_refused") else { return };
    let mut files: Vec<_> = std::fs::read_dir(dir.join("real-world"))
        .expect("real-world folder")
        .map(|e| e.expect("entry").path())
        .filter(|p| p.extension().is_some_and(|x| x == "molden"))
        .collect();
    files.sort();
    assert!(!files.is_empty());
    for path in files {
        match read_checked(&path) {
            Ok((_, orbitals, c)) => {
                eprintln!(
                    "{}: {} ({:?}), max |CᵀSC − I| = {:.1e} over {} orbitals (tolerance {:.0e}; {} other conventions fit as well)",
                    path.file_name().unwrap().to_string_lossy(),
                    c.convention,
                    c.writer,
                    c.check.max_deviation,
                    c.check.orbitals,
                    c.check.tolerance(),
                    c.indistinguishable
                );
                assert!(c.check.holds(), "{}: {:e}", path.display(), c.check.max_deviation);
                assert!(c.check.max_deviation <= 1e-6, "{}: {:e}", path.display(), c.check.max_deviation);
                assert!(!orbitals.orbitals.is_empty());
            }
            Err(e) => {
                let e = e.to_string();
                assert!(e.contains(&*path.to_string_lossy()), "{e}");
                panic!("{}: refused: {e}", path.display());
            }
        }
    }
}

/// Ammonia in one basis at one geometry, written by four programs with four different
/// conventions (primitive normalisation in the coefficients; Cartesian d normalised each on
/// its own or all alike). reference: the files themselves (`nh3_*.molden`); the molecules
/// agree to the printed digits of the geometry.
#[test]
fn ammonia_from_four_programs_gives_one_set_of_j() {
    let Some(dir) = shared_dir("ammonia_from_four_programs_gives_one_set_of_j") else { return };
    let read = |name: &str| {
        let path = dir.join("real-world").join(name);
        read_checked(&path).unwrap_or_else(|e| panic!("{e}"))
    };
    let (b, o, _) = read("nh3_molpro2012.molden");
    let molpro = occupied_hartree(&b, &o);
    assert_eq!(molpro.len(), 5);
    for (name, tolerance) in [
        ("nh3_orca.molden", 1e-5),
        ("nh3_psi4.molden", 1e-5),
        // Turbomole's coefficients scatter around Molpro's by up to 1e-3 relative on the small
        // ones (same basis and geometry: the two calculations' own convergence), which moves
        // J of the valence orbitals by up to 1.9e-5 relative (ORCA's and Psi4's: 5e-6).
        ("nh3_turbomole.molden", 3e-5),
    ] {
        let (b, o, c) = read(name);
        let j = occupied_hartree(&b, &o);
        for (k, (a, m)) in j.iter().zip(&molpro).enumerate() {
            let rel = (a - m).abs() / m;
            eprintln!("{name} orbital {}: J {a:.10} vs Molpro {m:.10}, relative {rel:.1e} ({})", k + 1, c.convention);
            assert!(rel <= tolerance, "{name} orbital {}: {a} vs {m}", k + 1);
        }
    }
}

/// The same file read as the format defines it would be wrong: the convention matters. A guard
/// that the agreement above is not an accident of conventions that change nothing.
#[test]
fn the_format_convention_alone_would_not_fit_these_writers() {
    let Some(dir) = shared_dir("the_format_convention_alone_would_not_fit_these_writers") else { return };
    for name in ["nh3_orca.molden", "nh3_turbomole.molden", "h2o_ccpvdz_cfour.molden", "F.molden"] {
        let path = dir.join("real-world").join(name);
        let m = sixray_parsers::read_molden(&path).expect("reads");
        let b = BasisSet::from_molden(&m).expect("basis");
        let o = MolecularOrbitals::from_molden(&m, &b).expect("orbitals");
        let check = sixray::basis::convention::orthonormality(&b, &o, &[]);
        assert!(check.max_deviation > 1e-4, "{name}: {:e}", check.max_deviation);
        let (_, _, c) = read_checked(Path::new(&path)).expect("reads");
        assert_ne!(c.convention, sixray::basis::Convention::MOLDEN.name(), "{name}");
    }
}

/// The whole folder through `rank`, as a user would give it: every file is analysed, with an
/// orthonormal occupied set where it has a basis, or refused with exit 2 and a message naming it.
/// The files refused are exactly the ones that cannot give a number.
#[test]
fn every_real_world_file_is_analysed_or_refused_by_rank() {
    let Some(dir) = shared_dir("every_real_world_file_is_analysed_or_refused_by_rank") else { return };
    let tmp = tempfile::tempdir().unwrap();
    let mut files: Vec<_> =
        std::fs::read_dir(dir.join("real-world")).expect("real-world folder").map(|e| e.expect("entry").path()).collect();
    files.sort();
    // reference: the files themselves: broken on purpose, no occupied orbital (every Occup= 0),
    // or cube grids of 2.5–2.6 bohr steps.
    let refused = ["h2o_error.wfx", "h_donly_sph_cfour.molden", "h_fonly_cart_cfour.molden", "h_gonly_sph_cfour.molden", "cubegen_h2o_5points.cube", "cubegen_ch4_6points.cube"];
    for path in files {
        let name = path.file_name().unwrap().to_string_lossy().into_owned();
        let out = sixray(&["rank", "-f", "json", "--grid-level", "coarse", "--no-error-bars", path.to_str().unwrap()], tmp.path());
        if refused.contains(&name.as_str()) {
            assert_eq!(out.status.code(), Some(2), "{name} should be refused");
            assert!(stderr(&out).contains(&name), "{name}: {}", stderr(&out));
            continue;
        }
        assert_eq!(out.status.code(), Some(0), "{name}: {}", stderr(&out));
        let report: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
        let orbitals = report["orbitals"].as_array().expect("orbitals");
        assert!(!orbitals.is_empty(), "{name}");
        for o in orbitals {
            let dev = number(&o["input"]["orthonormality"]);
            assert!(dev <= 1e-6, "{name}: {dev:e}");
            assert!(number(&o["hartree"]) > 0.0 && number(&o["norm"]) > 0.99, "{name}: {o}");
        }
    }
}
