//! The molden reader: real files (shared reference set and the project's own test data),
//! the variations real writers produce, errors with file and line, and no panics on mutated
//! input.

use std::io::Write;
use std::path::{Path, PathBuf};

use crate::common::gzip;
use sixray_parsers::{
    LengthUnit, MoldenErrorKind, MoldenFile, MoldenFlag, MoldenSpin, ShellType, parse_molden, read_molden,
};

const SRC: &str = "synthetic.molden";

fn parse(text: &str) -> Result<MoldenFile, sixray_parsers::MoldenError> {
    parse_molden(text.as_bytes(), Path::new(SRC))
}

/// Number of basis functions a `[GTO]` block list implies, for the given spherical d/f/g.
fn function_count(m: &MoldenFile, spherical: bool) -> usize {
    let per = |t: ShellType| match (t, spherical) {
        (ShellType::Sp, _) => 4,
        (t, true) => 2 * t.angular_momentum().expect("not sp") as usize + 1,
        (t, false) => {
            let l = t.angular_momentum().expect("not sp") as usize;
            (l + 1) * (l + 2) / 2
        }
    };
    m.basis.iter().flat_map(|a| &a.shells).map(|s| per(s.shell_type)).sum()
}

fn shared_molden_files() -> Option<Vec<PathBuf>> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../shared/reference");
    if !dir.is_dir() {
        let _ = writeln!(
            std::io::stderr(),
            "skipped: shared data set not found at {}",
            dir.display()
        );
        return None;
    }
    let mut out: Vec<PathBuf> = std::fs::read_dir(&dir)
        .expect("readable directory")
        .flatten()
        .map(|e| e.path().join("orbitals.molden"))
        .filter(|p| p.is_file())
        .collect();
    out.sort();
    Some(out)
}

// reference: PySCF 2.14 molden writer, shared reference set (../shared/reference/*/orbitals.molden)
#[test]
fn shared_reference_files() {
    let Some(files) = shared_molden_files() else { return };
    assert!(files.len() >= 6, "{files:?}");
    for path in files {
        let m = read_molden(&path).unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(m.atoms_unit, Some(LengthUnit::Bohr), "{}", path.display());
        assert_eq!(m.atoms.len(), m.basis.len());
        let flags: Vec<MoldenFlag> = m.flags.iter().map(|f| f.0).collect();
        assert_eq!(flags, [MoldenFlag::D5, MoldenFlag::F7, MoldenFlag::G9]);
        // PySCF writes every MO with one coefficient per basis function, in order.
        let nao = function_count(&m, true);
        assert!(!m.orbitals.is_empty());
        for o in &m.orbitals {
            assert_eq!(o.coefficients.len(), nao, "{}:{}", path.display(), o.line);
            assert!(o.coefficients.iter().enumerate().all(|(k, &(i, _))| i == k + 1));
            assert!(o.energy.is_some() && o.occupation.is_some() && o.spin.is_some());
            assert_eq!(o.symmetry.as_deref(), Some("A"));
        }
        // A restricted file holds nao MOs of one spin; an unrestricted one nao of each.
        let betas = m.orbitals.iter().filter(|o| o.spin == Some(MoldenSpin::Beta)).count();
        assert!(betas == 0 || betas == nao);
        assert_eq!(m.orbitals.len(), nao + betas);
    }
}

// reference: PySCF 2.14 molden writer, shared reference set, water (cc-pVTZ): values as written
#[test]
fn shared_water_values_as_written() {
    let Some(files) = shared_molden_files() else { return };
    let Some(path) = files.iter().find(|p| p.parent().is_some_and(|d| d.ends_with("water"))) else {
        panic!("water missing from the shared reference set");
    };
    let m = read_molden(path).expect("water reads");
    assert_eq!(m.atoms[1].label, "H");
    assert_eq!((m.atoms[1].index, m.atoms[1].atomic_number), (2, 1));
    assert_eq!(m.atoms[1].position, [0.0, 1.43090062152066, -0.88665949764593]);
    let o = &m.basis[0];
    assert_eq!((o.atom, o.shells.len()), (1, 10));
    let s = &o.shells[0];
    assert_eq!(
        (s.shell_type, s.scale, s.primitives.len(), s.line),
        (ShellType::S, Some(1.0), 8, 9)
    );
    assert_eq!(s.primitives[0].exponent, 15330.0);
    assert_eq!(s.primitives[0].coefficient, 0.00052019830712555);
    assert_eq!(o.shells[9].shell_type, ShellType::F);
    assert_eq!(function_count(&m, true), 58);
    let mo = &m.orbitals[0];
    assert_eq!((mo.energy, mo.occupation, mo.line), (Some(-18.59084459), Some(2.0), 83));
    assert_eq!(mo.coefficients[0], (1, 0.95827758317447));
}

/// The project's own PySCF-written files with g shells, spherical and Cartesian.
#[test]
fn project_test_data() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../tests/data/basis");
    for (name, flags, spherical) in [
        ("spherical", [MoldenFlag::D5, MoldenFlag::F7, MoldenFlag::G9], true),
        ("cartesian", [MoldenFlag::D6, MoldenFlag::F10, MoldenFlag::G15], false),
    ] {
        let m = read_molden(&dir.join(format!("{name}.molden"))).unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(m.flags.iter().map(|f| f.0).collect::<Vec<_>>(), flags);
        assert!(
            m.basis
                .iter()
                .flat_map(|a| &a.shells)
                .any(|s| s.shell_type == ShellType::G)
        );
        let nao = function_count(&m, spherical);
        assert_eq!(nao, if spherical { 69 } else { 88 });
        assert!(m.orbitals.iter().all(|o| o.coefficients.len() == nao));
    }
}

/// A file with the variations real writers produce.
pub(crate) const VARIED: &str = "\
[Molden Format]
[Title]
 water fragment, hand written

[Atoms] Angs
O1  1  8  0.0  0.0  0.1173
H   2  1  0.0  0.7572  -0.4692D0
[Charge] (Mulliken)
 -0.6
 0.6
[GTO]
  1 0
 S 2 1.00
   1.0D+02  0.5
   1.0D+01  0.6
 sp 1 1.00
   0.5 0.7 0.8
 d    1
   0.8    1.0
  2 0

 s    1 1.00
   0.3 1.0
[5D7F]
[9g]

[MO]
 Sym=   1a1 
 Ene= -2.0D1
 Spin= alpha
 Occup= 2.0
 1  0.5
 2 -0.25D0
 5-0.125

 Ene= 0.5
   3  1.0
 Sym=
 Spin= Beta
 Occup= 0.0
 Foo= ignored
  4  1.0E-3
[Unknown]
 anything [at all]
";

#[test]
fn real_world_variations() {
    let m = parse(&VARIED.replace('\n', "\r\n")).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(m.title.as_deref(), Some(" water fragment, hand written"));
    assert_eq!(m.atoms_unit, Some(LengthUnit::Angstrom));
    assert_eq!(m.atoms_line, 5);
    assert_eq!(m.atoms[0].label, "O1");
    assert_eq!(m.atoms[1].position, [0.0, 0.7572, -0.4692]);
    assert_eq!(m.basis.len(), 2);
    let shells = &m.basis[0].shells;
    assert_eq!(
        shells.iter().map(|s| s.shell_type).collect::<Vec<_>>(),
        [ShellType::S, ShellType::Sp, ShellType::D]
    );
    assert_eq!(shells[0].primitives[0].exponent, 100.0);
    assert_eq!(shells[1].primitives[0].coefficient_p, Some(0.8));
    assert_eq!(shells[2].scale, None);
    assert_eq!(m.basis[1].atom, 2);
    assert_eq!(m.basis[1].shells[0].line, 22);
    assert_eq!(m.flags, [(MoldenFlag::D5F7, 24), (MoldenFlag::G9, 25)]);
    assert_eq!(m.orbitals.len(), 3);
    let o = &m.orbitals;
    assert_eq!(o[0].symmetry.as_deref(), Some("1a1"));
    assert_eq!(
        (o[0].energy, o[0].spin, o[0].occupation),
        (Some(-20.0), Some(MoldenSpin::Alpha), Some(2.0))
    );
    assert_eq!(o[0].coefficients, [(1, 0.5), (2, -0.25), (5, -0.125)]);
    assert_eq!(o[0].coefficient_lines, [32, 33, 34]);
    assert_eq!(
        (o[1].symmetry.as_deref(), o[1].energy, o[1].spin, o[1].occupation),
        (None, Some(0.5), None, None)
    );
    assert_eq!(o[1].line, 36);
    assert_eq!((o[2].symmetry.as_deref(), o[2].spin), (None, Some(MoldenSpin::Beta)));
    assert_eq!(o[2].coefficients, [(4, 1.0e-3)]);
}

#[test]
fn gzip_is_transparent() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("varied.molden.gz");
    std::fs::write(&path, gzip(VARIED.as_bytes())).expect("write");
    let packed = read_molden(&path).expect("gzip reads");
    let plain = parse(VARIED).expect("plain reads");
    assert_eq!(packed.orbitals, plain.orbitals);
    assert_eq!(packed.basis, plain.basis);
    let err = parse_molden(&gzip(VARIED.as_bytes()), Path::new(SRC)).expect_err("compressed bytes");
    assert!(matches!(err.kind, MoldenErrorKind::Compressed));
}

/// Replaces line `line` (1-based) of VARIED and returns the error message.
fn error_with(line: usize, text: &str) -> String {
    let mut lines: Vec<&str> = VARIED.lines().collect();
    lines[line - 1] = text;
    let joined = lines.join("\n");
    match parse(&joined) {
        Ok(_) => panic!("line {line} = {text:?} was accepted"),
        Err(e) => e.to_string(),
    }
}

#[test]
fn errors_name_file_line_and_expectation() {
    let cases: [(usize, &str, &str); 13] = [
        (
            5,
            "[Atoms] (furlongs)",
            "synthetic.molden:5: expected the unit after [Atoms]: (AU) or (Angs), found \"(furlongs)\"",
        ),
        (
            6,
            "O1  1  8  0.0  0.0",
            "synthetic.molden:6: expected z (a number), found end of line",
        ),
        (
            7,
            "H   2  1  0.0  0.7572  -0.4692X0",
            "synthetic.molden:7: expected z (a number), found \"-0.4692X0\"",
        ),
        (
            7,
            "H   2  1.5  0.0  0.7572  -0.4692",
            "synthetic.molden:7: expected the atomic number (an integer), found \"1.5\"",
        ),
        (
            13,
            " S 99 1.00",
            "synthetic.molden:13: bad number of primitives (expected 1 to 31, the lines left in the file), found 99",
        ),
        (
            13,
            " x 2 1.00",
            "synthetic.molden:13: expected a shell line (s, p, sp, d, f, g, h or i, then the primitive count), an atom line or a blank line, found \"x 2 1.00\"",
        ),
        (
            14,
            "   1.0D+02",
            "synthetic.molden:14: expected the contraction coefficient (a number), found end of line",
        ),
        (
            17,
            "   0.5 0.7",
            "synthetic.molden:17: expected the p contraction coefficient of the sp shell (a number), found end of line",
        ),
        (
            15,
            "   nan 0.6",
            "synthetic.molden:15: expected a finite number, found \"nan\"",
        ),
        (
            29,
            " Ene= minus one",
            "synthetic.molden:29: expected the orbital energy (a number), found \"minus\"",
        ),
        (
            30,
            " Spin= up",
            "synthetic.molden:30: expected Alpha or Beta after Spin=, found \"up\"",
        ),
        (
            32,
            " 1.5  0.5",
            "synthetic.molden:32: expected a coefficient line (index, then value) or an orbital's key line (Sym=, Ene=, Spin=, Occup=), found \"1.5  0.5\"",
        ),
        (
            34,
            " 0 0.5",
            "synthetic.molden:34: expected a coefficient index from 1 up, found \"0\"",
        ),
    ];
    for (line, text, want) in cases {
        let got = error_with(line, text);
        assert_eq!(got, want, "line {line} = {text:?}");
    }
}

#[test]
fn structural_errors() {
    let err = |t: &str| parse(t).expect_err("must fail").to_string();
    assert_eq!(
        err("[Molden Format]\n[GTO]\n"),
        "synthetic.molden: expected an [Atoms] section, found none in the file"
    );
    assert_eq!(
        err("[Atoms] AU\n[STO]\n"),
        "synthetic.molden: expected a [GTO] section (Gaussian basis; [STO] is not supported), found none in the file"
    );
    assert_eq!(
        err("[Atoms] AU\n[Atoms] AU\n"),
        "synthetic.molden:2: expected one [Atoms] section, found a second one (the first is on line 1)"
    );
    assert_eq!(
        err("hello\n[Atoms] AU\n"),
        "synthetic.molden:1: expected a section name in brackets such as [Molden Format] or [Atoms], found \"hello\""
    );
    assert_eq!(
        err("[Atoms] AU\n[GTO]\n s 1 1.0\n 1.0 1.0\n"),
        "synthetic.molden:3: expected an atom line of [GTO] (the atom's sequence number, then 0) before its shells, found \"s 1 1.0\""
    );
    assert_eq!(
        err("[Atoms] AU\n[GTO]\n1 0\n s 2 1.0\n 1.0 1.0\n[MO]\n"),
        "synthetic.molden:6: expected primitive 2 of 2 of the shell on line 4, found \"[MO]\""
    );
    assert_eq!(
        err("[Atoms] AU\n[GTO]\n[MO]\n Ene= 1.0\n"),
        "synthetic.molden:4: unexpected end of file: expected coefficient lines (index value) after the orbital's key lines"
    );
    assert_eq!(
        err("[Atoms] AU\n[GTO]\n[MO]\n 1 1.0\n"),
        "synthetic.molden:4: expected an orbital's key lines (Sym=, Ene=, Spin=, Occup=) before its coefficients, found \"1 1.0\""
    );
    assert_eq!(
        err("[Atoms] AU\n[GTO]\n[MO]\n Ene= 1.0\n Ene= 2.0\n 1 1.0\n"),
        "synthetic.molden:5: expected one Ene= line per orbital (the orbital starts on line 4), found \"2.0\""
    );
    assert_eq!(
        err("[Atoms] AU\n[5D]\n 1\n[GTO]\n"),
        "synthetic.molden:3: expected a section name in brackets after the flag [5D] (flags have no content), found \" 1\""
    );
    let missing = read_molden(Path::new("/nonexistent/x.molden")).expect_err("no such file");
    assert!(
        missing.to_string().starts_with("/nonexistent/x.molden: read failed:"),
        "{missing}"
    );
}

/// Three orbitals over three s functions, every coefficient written in order, as a writer that
/// prints all of them does; `last` replaces the third orbital's coefficient lines.
fn three_orbitals(last: &str) -> String {
    format!(
        "[Atoms] AU\nH 1 1 0.0 0.0 0.0\n[GTO]\n1 0\n s 1 1.0\n 1.0 1.0\n s 1 1.0\n 0.3 1.0\n s 1 1.0\n 0.1 1.0\n\
         [MO]\n Occup= 1.0\n 1 0.5\n 2 0.25\n 3 0.125\n Occup= 0.0\n 1 0.1\n 2 0.2\n 3 0.3\n Occup= 0.0\n{last}"
    )
}

/// A file cut off inside its last orbital is an error at the last line read, naming the orbital
/// and what is missing, whether or not the cut leaves a final line end.
#[test]
fn a_file_cut_inside_an_orbital_is_refused() {
    let want = "synthetic.molden:22: unexpected end of file: expected coefficients 3 to 3 of the orbital starting on line 20 \
                (every other orbital of the file lists 3; the file is cut off)";
    for last in [" 1 0.7\n 2 0.8\n", " 1 0.7\n 2 0.8", " 1 0.7\n 2 0.8\n\n"] {
        let e = parse(&three_orbitals(last)).expect_err("cut off").to_string();
        assert_eq!(e, want, "{last:?}");
    }
    // The whole orbital present: no error.
    let m = parse(&three_orbitals(" 1 0.7\n 2 0.8\n 3 0.9\n")).expect("complete");
    assert_eq!(m.orbitals.len(), 3);
    assert_eq!(m.mo_lines, [11]);
}

/// A short last orbital is not a truncation where the file's indexing allows left-out zeros: it
/// skips an index, the other orbitals do not all list every coefficient, or a section follows.
#[test]
fn left_out_zero_coefficients_are_not_a_truncation() {
    for last in [" 1 0.7\n 3 0.8\n", " 2 0.7\n", " 1 0.7\n 2 0.8\n[Title]\n end of data\n"] {
        let m = parse(&three_orbitals(last)).unwrap_or_else(|e| panic!("{last:?}: {e}"));
        assert_eq!(m.orbitals.len(), 3, "{last:?}");
    }
    // The second orbital lists only its non-zero coefficients: the writer leaves zeros out.
    let sparse = three_orbitals(" 1 0.7\n 2 0.8\n").replace(" 1 0.1\n 2 0.2\n 3 0.3\n", " 1 0.1\n 3 0.3\n");
    let m = parse(&sparse).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(m.orbitals[2].coefficients, [(1, 0.7), (2, 0.8)]);
    // A lone orbital gives no context to judge by.
    let lone = "[Atoms] AU\nH 1 1 0.0 0.0 0.0\n[GTO]\n1 0\n s 1 1.0\n 1.0 1.0\n[MO]\n Occup= 1.0\n 1 1.0\n";
    assert_eq!(parse(lone).expect("lone orbital").orbitals.len(), 1);
}

// reference: PySCF 2.14 molden writer, shared reference set (water/orbitals.molden, which lists
// all 58 coefficients of every orbital)
/// The shared water file cut at every line inside its last orbital is refused at the cut; cut
/// right after a complete orbital it reads (with the orbitals before the cut).
#[test]
fn the_shared_water_file_cut_inside_an_orbital() {
    let Some(files) = shared_molden_files() else { return };
    let Some(path) = files.iter().find(|p| p.parent().is_some_and(|d| d.ends_with("water"))) else { return };
    let text = std::fs::read_to_string(path).expect("readable");
    let lines: Vec<&str> = text.lines().collect();
    let whole = parse(&text).expect("whole file");
    let last = whole.orbitals.last().expect("orbitals");
    let first_coefficient = last.coefficient_lines[0];
    for cut in first_coefficient..lines.len() {
        let e = parse(&lines[..cut].join("\n")).expect_err("cut inside the last orbital").to_string();
        let want = format!("synthetic.molden:{cut}: unexpected end of file: expected coefficients {} to 58 of the orbital starting on line {}", cut - first_coefficient + 2, last.line);
        assert!(e.starts_with(&want), "cut after line {cut}: {e}");
    }
    let before = parse(&lines[..last.line - 1].join("\n")).expect("cut between orbitals");
    assert_eq!(before.orbitals.len(), whole.orbitals.len() - 1);
}

/// `mo_lines` tells a file without orbitals from one with an empty `[MO]` section.
#[test]
fn mo_sections_are_recorded() {
    let base = "[Atoms] AU\nH 1 1 0.0 0.0 0.0\n[GTO]\n1 0\n s 1 1.0\n 1.0 1.0\n";
    assert!(parse(base).expect("no [MO]").mo_lines.is_empty());
    let empty = parse(&format!("{base}[MO]\n")).expect("empty [MO]");
    assert_eq!((empty.mo_lines.as_slice(), empty.orbitals.len()), (&[7][..], 0));
}
