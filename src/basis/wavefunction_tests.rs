//! fchk, wfn and wfx files of the shared real-world set through the basis engine: the same
//! calculation written both ways gives the same exact J, occupied orbitals are orthonormal in
//! the overlap metric, occupations and core-potential flags follow the files' headers.
//! Skipped with a notice when `../shared` is absent.

use std::path::{Path, PathBuf};

use sixray_parsers::{FileFormat, sniff_format};

use super::fchk::Provenance;
use super::{BasisSet, MolecularOrbitals, OrbitalSpin, aim, coulomb, fchk};
use crate::par::Parallelism;

fn real_world(test: &str) -> Option<PathBuf> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../shared/real-world");
    if dir.is_dir() {
        Some(dir)
    } else {
        use std::io::Write;
        let _ = writeln!(std::io::stderr(), "skipping {test}: shared real-world files not found at {}", dir.display());
        None
    }
}

fn load(path: &Path) -> (BasisSet, MolecularOrbitals, Provenance) {
    let read = match sniff_format(path).expect("readable") {
        FileFormat::Fchk => fchk::read(path),
        FileFormat::Wfn => aim::read_wfn_file(path),
        FileFormat::Wfx => aim::read_wfx_file(path),
        other => panic!("{}: not an orbital file: {other:?}", path.display()),
    };
    let (basis, orbitals, provenance) = read.unwrap_or_else(|e| panic!("{e}"));
    // The dispatching reader gives the same.
    let (b, o, c) = super::read_any(path).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!((&b, &o, c.provenance.as_ref()), (&basis, &orbitals, Some(&provenance)));
    (basis, orbitals, provenance)
}

/// Exact J of each occupied orbital (of |φ|², occupation aside), in file order.
fn occupied_j(basis: &BasisSet, orbitals: &MolecularOrbitals) -> Vec<f64> {
    let c: Vec<&[f64]> = orbitals.occupied().map(|o| o.coefficients.as_slice()).collect();
    coulomb::self_energies(basis, &c, Parallelism::Sequential)
}

/// max |CᵀSC − I| over the occupied orbitals of each spin channel.
fn orthonormality_error(basis: &BasisSet, orbitals: &MolecularOrbitals) -> f64 {
    super::convention::orthonormality(basis, orbitals, &[]).max_deviation
}

fn occupations(orbitals: &MolecularOrbitals, spin: OrbitalSpin) -> Vec<f64> {
    orbitals.occupied().filter(|o| o.spin == spin).map(|o| o.occupation.unwrap_or(0.0)).collect()
}

/// The same calculation as fchk and wfn: J per occupied orbital and orbital energies.
///
/// The wfn writer prints exponents to seven significant digits (`0.1307093D+03` for the fchk's
/// `1.30709321E+02`), a relative rounding of up to 5e-7, next to coefficients computed for the
/// exact exponents (its orbitals are normalised only to ~1e-7: max |CᵀSC − I| below). J of a
/// Gaussian scales as α^{1/2}, so J agrees to 5e-7 relative at worst (the brief's 1e-8 is below
/// what the wfn's digits carry); a wrong component order, normalisation or sign would move it
/// by percents. Orbital energies agree to the wfn's six printed decimals.
fn fchk_and_wfn_agree(fchk_name: &str, wfn_name: &str, test: &str) {
    let Some(dir) = real_world(test) else { return };
    let (bf, of, _) = load(&dir.join(fchk_name));
    let (bw, ow, _) = load(&dir.join(wfn_name));
    let jf = occupied_j(&bf, &of);
    let jw = occupied_j(&bw, &ow);
    let tolerance = 5e-7;
    assert_eq!(jf.len(), jw.len());
    assert!(!jf.is_empty());
    for k in 0..jf.len() {
        let rel = (jf[k] - jw[k]).abs() / jf[k].abs();
        eprintln!("{fchk_name} orbital {}: J fchk {:.12} wfn {:.12} relative {rel:.2e} (tolerance {tolerance:.2e})", k + 1, jf[k], jw[k]);
        assert!(rel < tolerance, "orbital {}: {} vs {}", k + 1, jf[k], jw[k]);
    }
    for (a, b) in of.occupied().zip(ow.occupied()) {
        assert!((a.energy.unwrap_or(f64::NAN) - b.energy.unwrap_or(f64::NAN)).abs() < 5.1e-7);
        assert_eq!(a.occupation, b.occupation);
    }
}

#[test]
fn water_fchk_and_wfn_agree() {
    fchk_and_wfn_agree("h2o_sto3g.fchk", "h2o_sto3g.wfn", "water_fchk_and_wfn_agree");
}

#[test]
fn helium_spdfgh_fchk_and_wfn_agree() {
    fchk_and_wfn_agree("he_spdfgh_orbital.fchk", "he_spdfgh_orbital.wfn", "helium_spdfgh_fchk_and_wfn_agree");
}

/// Every real-world fchk, wfn and wfx file that holds a calculation (all but the broken wfx).
const READABLE: [&str; 13] = [
    "h2o_sto3g.fchk",
    "ch3_rohf_sto3g_g03.fchk",
    "li_h_3-21G_hf_g09.fchk",
    "monosilicic_acid_hf_lan.fchk",
    "o2_cc_pvtz_pure.fchk",
    "water_ccpvdz_pure_hf_g03.fchk",
    "h2o_sto3g.wfn",
    "o2_uhf.wfn",
    "h2_ub3lyp_ccpvtz.wfx",
    "lih_cation_rohf.wfx",
    "lih_cation_uhf.wfx",
    "he_spdfgh_orbital.wfn",
    "he_spdfgh_orbital.fchk",
];

#[test]
fn occupied_orbitals_are_orthonormal() {
    let Some(dir) = real_world("occupied_orbitals_are_orthonormal") else { return };
    for name in READABLE {
        let (basis, orbitals, _) = load(&dir.join(name));
        let err = orthonormality_error(&basis, &orbitals);
        eprintln!("{name}: max |C^T S C - I| = {err:.2e}");
        // Files print coefficients to 8–16 digits; 1e-6 leaves room for the shortest.
        assert!(err < 1e-6, "{name}: {err:e}");
    }
}

#[test]
fn occupations_follow_the_headers() {
    let Some(dir) = real_world("occupations_follow_the_headers") else { return };
    // reference: each file's own header (electron counts, multiplicity, title).
    let (_, o, p) = load(&dir.join("ch3_rohf_sto3g_g03.fchk"));
    assert!(o.restricted);
    assert_eq!(occupations(&o, OrbitalSpin::Restricted), [2.0, 2.0, 2.0, 2.0, 1.0]);
    assert_eq!(p.multiplicity, Some(2));
    let (_, o, _) = load(&dir.join("li_h_3-21G_hf_g09.fchk"));
    assert!(!o.restricted);
    assert_eq!(occupations(&o, OrbitalSpin::Alpha), [1.0, 1.0]);
    assert_eq!(occupations(&o, OrbitalSpin::Beta), [1.0]);
    let (_, o, _) = load(&dir.join("o2_uhf.wfn"));
    assert!(!o.restricted);
    assert_eq!(occupations(&o, OrbitalSpin::Alpha).len(), 9);
    assert_eq!(occupations(&o, OrbitalSpin::Beta).len(), 7);
    let (_, o, p) = load(&dir.join("lih_cation_rohf.wfx"));
    assert!(o.restricted);
    assert_eq!(occupations(&o, OrbitalSpin::Restricted), [2.0, 1.0]);
    assert_eq!(p.multiplicity, Some(2));
    let (_, o, _) = load(&dir.join("lih_cation_uhf.wfx"));
    assert!(!o.restricted);
    assert_eq!(occupations(&o, OrbitalSpin::Alpha), [1.0, 1.0]);
    assert_eq!(occupations(&o, OrbitalSpin::Beta), [1.0]);
    let (_, o, _) = load(&dir.join("h2_ub3lyp_ccpvtz.wfx"));
    assert_eq!(occupations(&o, OrbitalSpin::Alpha), [1.0]);
    assert_eq!(occupations(&o, OrbitalSpin::Beta), [1.0]);
}

#[test]
fn core_potentials_are_flagged() {
    let Some(dir) = real_world("core_potentials_are_flagged") else { return };
    // reference: the file's header: Si (Z = 14) with nuclear charge 4, 40 valence electrons.
    let (basis, o, p) = load(&dir.join("monosilicic_acid_hf_lan.fchk"));
    assert!(p.ecp);
    assert_eq!(basis.atoms[0].atomic_number, 14);
    assert_eq!(p.nuclear_charges[0], 4.0);
    assert_eq!(o.occupied().map(|o| o.occupation.unwrap_or(0.0)).sum::<f64>(), 40.0);
    let (_, _, p) = load(&dir.join("h2o_sto3g.fchk"));
    assert!(!p.ecp);
}

#[test]
fn broken_wfx_is_refused_with_its_line() {
    let Some(dir) = real_world("broken_wfx_is_refused_with_its_line") else { return };
    // The file leaves <Number of Nuclei> (line 4) unclosed; line 7 opens another section.
    let e = aim::read_wfx_file(&dir.join("h2o_error.wfx")).expect_err("broken on purpose").to_string();
    assert!(e.contains("h2o_error.wfx:7:"), "{e}");
    assert!(e.contains("</Number of Nuclei>") && e.contains("line 4"), "{e}");
}

/// The molden files of the real-world set against PySCF 2.14's reading of them. PySCF takes
/// every file literally, in the format's own convention, so the comparison is with sixray's
/// literal reading (which `read_any` keeps for the files whose orbitals are orthonormal that
/// way, and replaces for the others: see `convention`).
#[test]
fn molden_files_match_pyscf() {
    let Some(dir) = real_world("molden_files_match_pyscf") else { return };
    // reference: PySCF 2.14 (molden.load, libcint J) via tools/real_world_reference.py,
    // tests/data/real_world_j.json.
    let json: serde_json::Value = serde_json::from_str(include_str!("../../tests/data/real_world_j.json")).expect("json");
    let files = json["files"].as_object().expect("files");
    for (name, rows) in files {
        let rows = rows.as_array().expect("rows");
        let file = sixray_parsers::read_molden(&dir.join(name)).unwrap_or_else(|e| panic!("{e}"));
        let basis = BasisSet::from_molden(&file).unwrap_or_else(|e| panic!("{e}"));
        let orbitals = MolecularOrbitals::from_molden(&file, &basis).unwrap_or_else(|e| panic!("{e}"));
        let occupied: Vec<_> = orbitals.occupied().collect();
        let j = occupied_j(&basis, &orbitals);
        assert_eq!(occupied.len(), rows.len(), "{name}");
        for (k, (o, row)) in occupied.iter().zip(rows).enumerate() {
            let reference = row["j"].as_f64().expect("j");
            let rel = (j[k] - reference).abs() / reference;
            eprintln!("{name} {}: {} J {:.10} PySCF {reference:.10} relative {rel:.1e}", k + 1, o.spin.name(), j[k]);
            // The same orbital in both readings (energy as written, spin channel).
            assert_eq!(o.energy, row["energy"].as_f64(), "{name} {}", k + 1);
            let spin = row["spin"].as_str().expect("spin");
            assert_eq!(o.spin.name(), spin, "{name} {}", k + 1);
            // Both programs' integrals are exact up to screening (sixray: below 1e-9 Eh,
            // coulomb::CoulombParams); 1e-9 relative also covers PySCF's direct-SCF cut-offs.
            assert!(rel < 1e-9, "{name} {}: {} vs {reference}", k + 1, j[k]);
        }
    }
}

#[test]
fn other_files_are_refused_by_name() {
    let Some(dir) = real_world("other_files_are_refused_by_name") else { return };
    let e = super::read_any(&dir.join("cubegen_h2o_5points.cube")).expect_err("a grid").to_string();
    assert!(e.contains("cubegen_h2o_5points.cube: expected a molden, fchk, wfn or wfx file, found a cube file"), "{e}");
}

/// Gaussian's Cartesian orders and normalisation for d to h, without the engine (which may not
/// take l = 5 yet): each function of the Cartesian shells of `he_spdfgh_orbital.fchk`, turned
/// into plain-primitive coefficients with `fchk`'s rows and normalisation, against the same
/// orbital's coefficients in `he_spdfgh_orbital.wfn` (AIMPAC types, plain primitives). The
/// orbital has only s, d and g parts; the f and h orders are checked through the positions.
#[test]
fn helium_spdfgh_conventions_match_the_wfn() {
    let Some(dir) = real_world("helium_spdfgh_conventions_match_the_wfn") else { return };
    let f = sixray_parsers::read_fchk(&dir.join("he_spdfgh_orbital.fchk")).unwrap_or_else(|e| panic!("{e}"));
    let w = sixray_parsers::read_wfn(&dir.join("he_spdfgh_orbital.wfn")).unwrap_or_else(|e| panic!("{e}"));
    let types = f.ints("Shell types").unwrap().expect("shell types").0;
    let exps = f.reals("Primitive exponents").unwrap().expect("exponents").0;
    let coefs = f.reals("Contraction coefficients").unwrap().expect("coefficients").0;
    let mo = f.reals("Alpha MO coefficients").unwrap().expect("orbitals").0;
    // reference: the file: six single-primitive Cartesian shells, l = 0 to 5.
    assert_eq!(types, [0, 1, 2, 3, 4, 5]);
    let mut first = 0;
    let mut compared = 0;
    for (l, (&a, &d)) in (0u32..).zip(exps.iter().zip(coefs)) {
        let n = super::primitive_norm(l, a) * d;
        let raw = n / super::contraction_norm2(l, &[a], &[n]).sqrt();
        let order = fchk::gaussian_cartesian_order(l);
        let rows = fchk::cartesian_rows(l, &order);
        let nc = super::angular::cartesian_count(l);
        for (j, e) in order.iter().enumerate() {
            let ours = mo[first + j] * rows[j * nc + super::angular::cartesian_index(*e)] * raw;
            let p = (0..w.types.len())
                .find(|&p| aim::aimpac_type(w.types[p]) == Some(*e) && w.exponents[p] == a)
                .unwrap_or_else(|| panic!("no primitive {e:?} with exponent {a}"));
            // Gaussian writes the wfn's primitives in its own function order (the file lists
            // f as types 11 12 13 17 14 15 18 19 16 20): the order is checked by position too.
            assert_eq!(p, first + j, "l = {l}, {e:?}");
            let theirs = w.orbitals[0].coefficients[p];
            // The wfn prints eight digits; 1e-6 relative (and 1e-12 for zeros) leaves room.
            assert!((ours - theirs).abs() <= 1e-6 * theirs.abs() + 1e-12, "l = {l}, {e:?}: {ours} vs {theirs}");
            compared += usize::from(theirs != 0.0);
        }
        first += order.len();
    }
    // The orbital is s + d + g (r², r⁴): its zero and non-zero components both checked.
    assert!(compared >= 10, "{compared}");
}
