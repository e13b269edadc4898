//! Faulty Gaussian-basis files through the real binary: each fault a file of orbitals can carry
//! (non-finite, huge or zero coefficients, a missing `[5d]` flag, primitive normalisation baked
//! into the coefficients, too few printed digits, coinciding nuclei, a cut-off `[MO]` block, no
//! `[MO]` section, no occupied orbital; the analogous faults of fchk, wfn and wfx files) is
//! refused with the file, the line and what is wrong, read correctly, or flagged, never
//! reported as an `ok` number. Valid files get error bars that are never exactly zero.
//!
//! The molden faults are edits of the project's own `tests/data/basis/spherical.molden` (PySCF
//! 2.14, three orthonormal occupied α orbitals over 69 spherical s–g functions on three atoms);
//! the other formats' are edits of `../shared/real-world` files and skip without them.

use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::Output;

use crate::common::{number, shared_dir, sixray, stderr};

fn data(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/data/basis").join(name)
}

/// The test file's lines.
fn spherical() -> Vec<String> {
    std::fs::read_to_string(data("spherical.molden")).expect("test file").lines().map(str::to_string).collect()
}

/// Writes `lines` as `name` in `dir` (each line ended), returning its path.
fn write(dir: &Path, name: &str, lines: &[String]) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, lines.iter().map(|l| format!("{l}\n")).collect::<String>()).expect("write");
    path
}

/// `rank -f json -m lsda -m pbe --grid-level coarse FILE` in the file's directory.
fn rank(file: &Path) -> Output {
    let name = file.file_name().and_then(|n| n.to_str()).expect("file name");
    sixray(&["rank", "-f", "json", "-m", "lsda", "-m", "pbe", "--grid-level", "coarse", name], file.parent().expect("dir"))
}

/// The report of a run that must succeed.
fn report(o: &Output) -> Value {
    assert_eq!(o.status.code(), Some(0), "{}", stderr(o));
    serde_json::from_slice(&o.stdout).unwrap_or_else(|e| panic!("{e}: {}", stderr(o)))
}

/// The message of a run that must refuse its one file (exit 2: bad input), checked to contain
/// every part of `want`.
fn refused(o: &Output, want: &[&str]) -> String {
    let e = stderr(o);
    assert_eq!(o.status.code(), Some(2), "{e}");
    for w in want {
        assert!(e.contains(w), "expected {w:?} in: {e}");
    }
    e
}

/// The orbitals of a report, ordered by label.
fn orbitals(report: &Value) -> Vec<Value> {
    let mut o = report["orbitals"].as_array().expect("orbitals").clone();
    o.sort_by(|a, b| a["label"].as_str().cmp(&b["label"].as_str()));
    o
}

/// Line index (0-based) of the first coefficient of the first orbital.
fn first_coefficient(lines: &[String]) -> usize {
    lines.iter().position(|l| l.trim_start().starts_with("Occup=")).expect("an orbital") + 1
}

/// Non-finite coefficients stop the reader at their line; huge ones (whose squares overflow, or
/// whose printed digits would excuse any deviation) and an all-zero orbital are refused by the
/// orthonormality check, naming the orbital. Before, 1e300 gave `norm inf, J NaN` and flag `ok`.
#[test]
fn non_finite_huge_and_zero_coefficients_are_refused() {
    let dir = tempfile::tempdir().expect("tempdir");
    let lines = spherical();
    let k = first_coefficient(&lines);
    for (value, want) in [
        ("NaN", vec!["nan.molden:83:", "expected a finite number, found \"NaN\""]),
        ("inf", vec!["inf.molden:83:", "expected a finite number, found \"inf\""]),
        ("1e300", vec!["1e300.molden:", "found at best infinite", "orbital 1 (line 79): ⟨φ|φ⟩ = inf"]),
        ("1e160", vec!["1e160.molden:", "found at best infinite", "orbital 1 (line 79)"]),
        ("1e3", vec!["1e3.molden:", "orbital 1 (line 79): ⟨φ|φ⟩ = 5.216e4, expected 1"]),
    ] {
        let mut edited = lines.clone();
        edited[k] = format!("   1  {value}");
        let name = format!("{}.molden", value.to_lowercase());
        refused(&rank(&write(dir.path(), &name, &edited)), &want);
    }
    let mut zero = lines.clone();
    for line in zero.iter_mut().skip(k).take_while(|l| !l.trim_start().starts_with("Sym=")) {
        let index = line.split_whitespace().next().expect("index").to_string();
        *line = format!("   {index}  0.0");
    }
    refused(&rank(&write(dir.path(), "zero.molden", &zero)), &["zero.molden:", "orbital 1 (line 79): ⟨φ|φ⟩ = 0.000e0, expected 1"]);
}

/// Without its `[5d]` flag the file's d shells read as Cartesian: every orbital is short of
/// coefficients (taken as zero) and not normalised under any convention (the norm 0.62 `ok` of
/// before).
#[test]
fn a_missing_spherical_flag_is_refused() {
    let dir = tempfile::tempdir().expect("tempdir");
    let lines: Vec<String> = spherical().into_iter().filter(|l| !l.trim().eq_ignore_ascii_case("[5d]")).collect();
    let e = refused(&rank(&write(dir.path(), "no5d.molden", &lines)), &["no5d.molden:", "under some molden convention", "expected 1"]);
    assert!(e.contains("orbital 1 (line") || e.contains("orbital 2 (line") || e.contains("orbital 3 (line"), "{e}");
}

/// Normalisation of the primitives, textbook: N_l(α)² = (4α)^l (2α/π)^{3/2} / (2l−1)!!.
fn primitive_norm(l: u32, a: f64) -> f64 {
    let double_factorial: f64 = (1..=l).map(|k| (2 * k - 1) as f64).product();
    ((4.0 * a).powi(l as i32) * (2.0 * a / std::f64::consts::PI).powf(1.5) / double_factorial).sqrt()
}

/// Contraction coefficients with the primitives' normalisation baked in (what some writers put
/// in the format; read literally, norms 0.97 and 0.70) are recognised from the orbitals and give
/// the file's numbers: J to rounding, the functionals on the same grid to rounding.
#[test]
fn baked_in_primitive_normalisation_is_read_as_written() {
    let dir = tempfile::tempdir().expect("tempdir");
    let lines = spherical();
    let (gto, mo) = (lines.iter().position(|l| l == "[GTO]").expect("[GTO]"), lines.iter().position(|l| l == "[MO]").expect("[MO]"));
    let mut baked = lines.clone();
    // The shell being read: its l and how many of its primitive lines are still to come.
    let (mut l, mut left) = (0, 0);
    for line in &mut baked[gto + 1..mo] {
        let fields: Vec<&str> = line.split_whitespace().collect();
        match fields.as_slice() {
            [a, c] if left > 0 => {
                let (a, c): (f64, f64) = (a.parse().expect("exponent"), c.parse().expect("coefficient"));
                *line = format!("  {a:e}  {:.15e}", c * primitive_norm(l, a));
                left -= 1;
            }
            [shell, count, _] => {
                l = "spdfg".find(*shell).expect("an s to g shell") as u32;
                left = count.parse().expect("primitive count");
            }
            _ => {}
        }
    }
    let original = orbitals(&report(&rank(&write(dir.path(), "original.molden", &lines))));
    let read = report(&rank(&write(dir.path(), "baked.molden", &baked)));
    let baked = orbitals(&read);
    assert_eq!(baked.len(), 3);
    for (a, b) in original.iter().zip(&baked) {
        assert!(b["input"]["convention"].as_str().expect("convention").starts_with("plain-primitives"), "{}", b["input"]);
        assert!(b["flags"].as_array().expect("flags").is_empty(), "{b}");
        // Identities up to the 15 printed digits of the baked coefficients: 1e-12 relative.
        for q in ["hartree", "optimal_alpha", "norm"] {
            let (x, y) = (number(&a[q]), number(&b[q]));
            assert!((x - y).abs() <= 1e-12 * x.abs(), "{q}: {x} vs {y}");
        }
        for m in ["lsda", "pbe"] {
            let (x, y) = (number(&a["models"][m]["self_interaction"]), number(&b["models"][m]["self_interaction"]));
            assert!((x - y).abs() <= 1e-12 * number(&a["hartree"]), "{m}: {x} vs {y}");
        }
    }
}

/// Coefficients printed to two decimals cannot show orthonormality to better than 1e-2: the
/// digits' allowance is capped (1e-4), so such a file is refused instead of excused.
#[test]
fn too_few_printed_digits_are_no_excuse() {
    let dir = tempfile::tempdir().expect("tempdir");
    let mut lines = spherical();
    let k = first_coefficient(&lines);
    for line in lines.iter_mut().skip(k) {
        let fields: Vec<&str> = line.split_whitespace().collect();
        if let [index, value] = fields.as_slice() {
            if let Ok(v) = value.parse::<f64>() {
                *line = format!("   {index}  {v:.2}");
            }
        }
    }
    refused(&rank(&write(dir.path(), "rounded.molden", &lines)), &["rounded.molden:", "expected orthonormal occupied orbitals"]);
}

/// Two nuclei at one position (an atom written twice) or closer than 0.1 bohr are refused with
/// the file, the line and both atoms (before: every value NaN, flag `ok`); a ghost atom (atomic
/// number 0) on top of an atom is no nucleus and changes nothing.
#[test]
fn coinciding_nuclei_are_refused_and_coinciding_ghosts_are_not() {
    let dir = tempfile::tempdir().expect("tempdir");
    let lines = spherical();
    let atoms = lines.iter().position(|l| l.starts_with("[Atoms]")).expect("[Atoms]");
    let h = lines[atoms + 2].split_whitespace().skip(3).collect::<Vec<_>>().join("  ");
    let with = |extra: &str| {
        let mut l = lines.clone();
        l.insert(atoms + 4, extra.to_string());
        l
    };
    refused(
        &rank(&write(dir.path(), "twice.molden", &with(&format!("H  4  1  {h}")))),
        &["twice.molden:7: expected nuclei at least 0.1 bohr apart, found atom 2 (H, line 5) and atom 4 (H, line 7) at the same position"],
    );
    let x: f64 = lines[atoms + 2].split_whitespace().nth(3).expect("x").parse().expect("x");
    let near = format!("H  4  1  {}  {}", x + 0.05, lines[atoms + 2].split_whitespace().skip(4).collect::<Vec<_>>().join("  "));
    refused(&rank(&write(dir.path(), "near.molden", &with(&near))), &["near.molden:7:", "atom 2 (H, line 5) and atom 4 (H, line 7) 5.000e-2 bohr apart"]);

    let original = orbitals(&report(&rank(&write(dir.path(), "original.molden", &lines))));
    let ghost = orbitals(&report(&rank(&write(dir.path(), "ghost.molden", &with(&format!("X  4  0  {h}"))))));
    for (a, b) in original.iter().zip(&ghost) {
        // The same grid (the ghost's centre coincides with the hydrogen's), the same numbers.
        for q in ["hartree", "norm", "models", "errors", "flags"] {
            assert_eq!(a[q], b[q], "{q}");
        }
    }
}

/// A molden file cut off inside its last orbital's coefficients is refused at the cut (before:
/// the orbital kept with zeros, or dropped); cut between orbitals, it reads the orbitals before.
#[test]
fn a_file_cut_inside_an_mo_block_is_refused() {
    let dir = tempfile::tempdir().expect("tempdir");
    let lines = spherical();
    let cut = &lines[..lines.len() - 20];
    refused(
        &rank(&write(dir.path(), "cut.molden", cut)),
        &[&format!("cut.molden:{}: unexpected end of file: expected coefficients 50 to 69 of the orbital starting on line 225", cut.len())],
    );
    let last = lines.iter().rposition(|l| l.trim_start().starts_with("Sym=")).expect("last orbital");
    let two = orbitals(&report(&rank(&write(dir.path(), "two.molden", &lines[..last]))));
    assert_eq!(two.len(), 2);
}

/// No `[MO]` section, an empty one, or no occupied orbital: exit 2 with what the file lacks
/// (before: exit 0 and zero records).
#[test]
fn files_without_occupied_orbitals_say_why() {
    let dir = tempfile::tempdir().expect("tempdir");
    let lines = spherical();
    let mo = lines.iter().position(|l| l == "[MO]").expect("[MO]");
    refused(&rank(&write(dir.path(), "nomo.molden", &lines[..mo])), &["nomo.molden: no occupied orbitals: the file has no [MO] section"]);
    refused(&rank(&write(dir.path(), "empty.molden", &lines[..=mo])), &["empty.molden: no occupied orbitals: its [MO] section (line 78) lists no orbitals"]);
    let empty: Vec<String> = lines.iter().map(|l| if l.contains("Occup=") { " Occup= 0.00000".to_string() } else { l.clone() }).collect();
    refused(&rank(&write(dir.path(), "none.molden", &empty)), &["none.molden: no occupied orbitals: the file lists 3 orbital(s), none occupied: every `Occup=` is 0"]);
}

/// A very diffuse orbital (one s function of exponent 1e-3 bohr⁻² on a hydrogen: most of its
/// charge beyond 14 bohr, where the coarse atom-centred grid ends) is exactly normalised over its basis,
/// so the file reads, but the grid misses most of it: flagged `norm-off`, its bars at least the
/// grid's error on the norm (before: flag `ok`).
#[test]
fn an_orbital_the_grid_misses_is_flagged() {
    let dir = tempfile::tempdir().expect("tempdir");
    let text = "[Molden Format]\n[Atoms] (AU)\nH 1 1 0.0 0.0 0.0\n[GTO]\n1 0\n s 1 1.00\n 1.0e-3 1.0\n\n[MO]\n Sym= A\n Ene= -0.1\n Spin= Alpha\n Occup= 1.0\n 1 1.0\n";
    let lines: Vec<String> = text.lines().map(str::to_string).collect();
    let o = orbitals(&report(&rank(&write(dir.path(), "diffuse.molden", &lines))));
    let norm = number(&o[0]["norm"]);
    assert!(norm < 0.99, "{norm}");
    let flags: Vec<&str> = o[0]["flags"].as_array().expect("flags").iter().filter_map(Value::as_str).collect();
    assert!(flags.contains(&"norm-off"), "{flags:?}");
    // textbook: J of a normalised s Gaussian of exponent a is √(a/π) (density exponent 2a).
    let j = (1e-3f64 / std::f64::consts::PI).sqrt();
    assert!((number(&o[0]["hartree"]) - j).abs() < 1e-12 * j, "{}", o[0]["hartree"]);
    let missed = 1.0 - norm;
    let x = number(&o[0]["models"]["lsda"]["exchange"]);
    assert!(number(&o[0]["errors"]["models"]["lsda"]["exchange"]) >= missed * x.abs(), "{}", o[0]["errors"]);
}

/// Every error bar of a valid file is positive: J's too (it was exactly 0.0 wherever screening
/// skipped nothing), at least its rounding floor and far below anything printed.
#[test]
fn error_bars_are_never_exactly_zero() {
    let dir = tempfile::tempdir().expect("tempdir");
    let o = orbitals(&report(&rank(&write(dir.path(), "valid.molden", &spherical()))));
    for orbital in &o {
        let e = &orbital["errors"];
        let j = number(&orbital["hartree"]);
        // The floor is 4 n_c² ε |J| with n_c the Cartesian components (well over 10 here), and
        // the J of this file agrees with libcint to 1e-14 (tests/data/basis/spherical.json).
        let bar = number(&e["hartree"]);
        assert!(bar >= 400.0 * f64::EPSILON * j && bar < 1e-9 * j, "J bar {bar} of J {j}");
        for m in ["lsda", "pbe"] {
            for q in ["exchange", "correlation", "self_interaction"] {
                assert!(number(&e["models"][m][q]) > 0.0, "{m} {q}: {e}");
            }
        }
    }
}

/// The same faults in the formats that define their conventions: a NaN or huge coefficient in a
/// wfx file, two nuclei at one position in fchk, wfn and wfx files.
#[test]
fn fchk_wfn_and_wfx_faults_are_refused() {
    let Some(shared) = shared_dir("fchk_wfn_and_wfx_faults_are_refused") else { return };
    let real = shared.join("real-world");
    let dir = tempfile::tempdir().expect("tempdir");
    let edit = |name: &str, from: &str, to: &str| {
        let text = std::fs::read_to_string(real.join(name)).expect("real-world file");
        assert!(text.contains(from), "{name} holds {from:?}");
        let path = dir.path().join(format!("edited_{name}"));
        std::fs::write(&path, text.replacen(from, to, 1)).expect("write");
        path
    };
    // reference: Gaussian's lih_cation_uhf.wfx (first coefficient of orbital 1, line 91).
    let first = "  1.94634618347642E-01";
    refused(&rank(&edit("lih_cation_uhf.wfx", first, "  NaN")), &["edited_lih_cation_uhf.wfx:91:", "expected a finite number"]);
    refused(&rank(&edit("lih_cation_uhf.wfx", first, "  1.0E+300")), &["edited_lih_cation_uhf.wfx:", "found infinite", "⟨φ|φ⟩ = inf"]);
    refused(
        &rank(&edit("lih_cation_uhf.wfx", "  0.00000000000000E+00   0.00000000000000E+00  -2.12594189000000E+00", "  0.00000000000000E+00   0.00000000000000E+00   7.08647297000000E-01")),
        &["edited_lih_cation_uhf.wfx:31: expected nuclei at least 0.1 bohr apart, found atom 1 (Li1) and atom 2 (H2) at the same position"],
    );
    // reference: Gaussian's h2o_sto3g.fchk and .wfn (atom 3 moved onto atom 2).
    refused(
        &rank(&edit("h2o_sto3g.fchk", "  0.00000000E+00 -4.92380519E+00  5.20496220E+00", "  0.00000000E+00 -2.58401495E+00  3.55136194E+00")),
        &["edited_h2o_sto3g.fchk:20: expected nuclei at least 0.1 bohr apart, found atom 2 (H) and atom 3 (H) at the same position"],
    );
    refused(
        &rank(&edit("h2o_sto3g.wfn", "-4.92380519  5.20496220", "-2.58401495  3.55136194")),
        &["edited_h2o_sto3g.wfn:5: expected nuclei at least 0.1 bohr apart, found atom 2 (H, line 4) and atom 3 (H, line 5) at the same position"],
    );
}
