//! fchk, wfn and wfx readers: synthetic texts with every feature, errors with their lines,
//! robustness (every truncation, random byte flips: only Ok or Err, never a panic; accepted
//! input internally consistent), and the real files of the shared set (skipped with a notice
//! when `../shared` is absent).

use std::path::{Path, PathBuf};

use crate::common::{Rng, gzip};
use sixray_parsers::{
    FchkFile, FchkValue, FileFormat, TextErrorKind, WfnFile, WfxFile, WfxSpin, parse_fchk, parse_wfn, parse_wfx,
    read_fchk, read_wfn, read_wfx, sniff_format,
};

fn fchk_array(name: &str, kind: char, values: &[&str], per_line: usize) -> String {
    let mut s = format!("{name:<40}   {kind}   N={:>12}\n", values.len());
    for chunk in values.chunks(per_line) {
        for v in chunk {
            s.push_str(&format!("{v:>16}"));
        }
        s.push('\n');
    }
    s
}

/// A small fchk text: scalars, integer, real and text arrays, a repeated name, D exponents.
fn fchk_seed() -> String {
    let mut s = String::from("seed title\nSP        RHF                                                         STO-3G\n");
    s.push_str(&format!("{:<40}   I     {:>12}\n", "Number of atoms", 2));
    s.push_str(&format!("{:<40}   R     {:>22}\n", "Total Energy", "-1.11675930739643E+00"));
    s.push_str(&fchk_array("Atomic numbers", 'I', &["1", "1"], 6));
    s.push_str(&fchk_array("Route", 'C', &["#P HF/STO-3G"], 5).replace("    #P HF/STO-3G", "#P HF/STO-3G"));
    s.push_str(&format!("{:<40}   I     {:>12}\n", "Force Field", 0));
    s.push_str(&fchk_array("Current cartesian coordinates", 'R', &["0.0", "0.0", "0.7D+00", "0.0", "0.0", "-7.0E-01"], 5));
    s.push_str(&format!("{:<40}   I     {:>12}\n", "Force Field", 0));
    s.push_str(&fchk_array("Shell types", 'I', &["0", "0"], 6));
    s
}

const WFN_SEED: &str = " H2 seed
GAUSSIAN              2 MOL ORBITALS      3 PRIMITIVES        2 NUCLEI
  H    1    (CENTRE  1)   0.00000000  0.00000000  0.70000000  CHARGE =  1.0
  H    2    (CENTRE  2)   0.00000000  0.00000000 -0.70000000  CHARGE =  1.0
CENTRE ASSIGNMENTS    1  1  2
TYPE ASSIGNMENTS      1  4  1
EXPONENTS  0.3425251D+01 0.6239137D+00 0.3425251D+01
MO    1     MO 0.0        OCC NO =    1.0000000  ORB. ENERGY =   -0.578203
  0.12345678D+01-0.23456789D+00  0.12345678D+01
MO    3     MO 0.0        OCC NO =    1.0000000  ORB. ENERGY =   -0.678203
  0.12345678D+01  0.23456789D+00
  0.12345678D+01
END DATA
 TOTAL ENERGY =       -1.116759307396 THE VIRIAL(-V/T)=   2.00000000
";

const WFX_SEED: &str = "<Title>
 H2 seed
</Title>
<Keywords>
GTO
</Keywords>
<Number of Nuclei>
2
</Number of Nuclei>
<Number of Primitives>
3
</Number of Primitives>
<Number of Occupied Molecular Orbitals>
2
</Number of Occupied Molecular Orbitals>
<Nuclear Names>
 H1
 H2
</Nuclear Names>
<Atomic Numbers>
1
1
</Atomic Numbers>
<Nuclear Charges>
 1.0E+00 1.0E+00
</Nuclear Charges>
<Nuclear Cartesian Coordinates>
 0.0 0.0 0.7
 0.0 0.0 -0.7
</Nuclear Cartesian Coordinates>
<Electronic Spin Multiplicity>
 3
</Electronic Spin Multiplicity>
<Primitive Centers>
 1 1 2
</Primitive Centers>
<Primitive Types>
 1 4 1
</Primitive Types>
<Primitive Exponents>
 3.425251E+00 6.239137E-01 3.425251E+00
</Primitive Exponents>
<Molecular Orbital Occupation Numbers>
 1.0
 1.0
</Molecular Orbital Occupation Numbers>
<Molecular Orbital Energies>
 -0.5
 -0.4
</Molecular Orbital Energies>
<Molecular Orbital Spin Types>
 Alpha
 Alpha and Beta
</Molecular Orbital Spin Types>
<Molecular Orbital Primitive Coefficients>
<MO Number>
1
</MO Number>
 1.0 -0.5 1.0
<MO Number>
2
</MO Number>
 1.0
 0.5 -1.0
</Molecular Orbital Primitive Coefficients>
<Energy = T + Vne + Vee + Vnn>
 -1.1
</Energy  = T + Vne + Vee + Vnn>
";

fn fchk(text: &[u8]) -> Result<FchkFile, sixray_parsers::FchkError> {
    parse_fchk(text, Path::new("seed.fchk"))
}

fn wfn(text: &[u8]) -> Result<WfnFile, sixray_parsers::WfnError> {
    parse_wfn(text, Path::new("seed.wfn"))
}

fn wfx(text: &[u8]) -> Result<WfxFile, sixray_parsers::WfxError> {
    parse_wfx(text, Path::new("seed.wfx"))
}

#[test]
fn fchk_seed_reads_as_written() {
    let f = fchk(fchk_seed().as_bytes()).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(f.title, "seed title");
    assert_eq!(f.calculation, ["SP", "RHF", "STO-3G"]);
    assert_eq!(f.int("Number of atoms").unwrap(), Some(2));
    assert_eq!(f.real("Total Energy").unwrap(), Some(-1.11675930739643));
    assert_eq!(f.ints("Atomic numbers").unwrap().map(|(v, _)| v.to_vec()), Some(vec![1, 1]));
    let (coords, line) = f.reals("Current cartesian coordinates").unwrap().expect("present");
    assert_eq!(coords, [0.0, 0.0, 0.7, 0.0, 0.0, -0.7]);
    assert_eq!(line, 10);
    assert_eq!(f.get("Route").map(|s| &s.value), Some(&FchkValue::Text("#P HF/STO-3G".into())));
    assert_eq!(f.sections.iter().filter(|s| s.name == "Force Field").count(), 2);
    // Asking for the wrong type names the section's line.
    let e = f.ints("Total Energy").expect_err("a real scalar").to_string();
    assert!(e.starts_with("seed.fchk:4:"), "{e}");
    assert!(!f.has_ecp_sections());
}

#[test]
fn fchk_errors_name_the_line() {
    let seed = fchk_seed();
    // Too few values before the next header.
    let short = seed.replace("           1           1\n", "           1\n");
    let short = short.replace(&format!("{:>16}{:>16}\n", "1", "1"), &format!("{:>16}\n", "1"));
    let e = fchk(short.as_bytes()).expect_err("short array");
    // Line 7 holds the next header where the second value should be.
    assert_eq!(e.line, Some(7), "{e}");
    assert!(e.to_string().contains("1 more values of array \"Atomic numbers\""), "{e}");
    // A count larger than the file can hold is refused before allocating.
    let huge = seed.replace("N=           2\n", "N=  9000000000\n");
    let e = fchk(huge.as_bytes()).expect_err("absurd count");
    assert!(matches!(e.kind, TextErrorKind::BadCount { value: 9_000_000_000, .. }), "{e}");
    let e = fchk(b"title\ncalc\nnot a header\n").expect_err("no header");
    assert_eq!(e.line, Some(3));
    assert!(e.to_string().contains("expected a section header"), "{e}");
}

#[test]
fn wfn_seed_reads_as_written() {
    let w = wfn(WFN_SEED.as_bytes()).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(w.title, "H2 seed");
    assert_eq!(w.nuclei.len(), 2);
    assert_eq!(w.nuclei[1].position, [0.0, 0.0, -0.7]);
    assert_eq!(w.nuclei[1].charge, 1.0);
    assert_eq!(w.nuclei[1].centre, 2);
    assert_eq!(w.centres, [1, 1, 2]);
    assert_eq!(w.types, [1, 4, 1]);
    assert_eq!(w.exponents, [3.425251, 0.6239137, 3.425251]);
    // Numbers run together are split at the sign.
    assert_eq!(w.orbitals[0].coefficients, [1.2345678, -0.23456789, 1.2345678]);
    assert_eq!(w.orbitals[1].number, 3);
    assert_eq!(w.orbitals[1].energy, -0.678203);
    assert_eq!(w.orbitals[1].line, 10);
    assert_eq!(w.energy, Some(-1.116759307396));
    assert_eq!(w.virial, Some(2.0));
}

#[test]
fn wfn_assignments_are_read_by_column() {
    // Centres above 99 fill their three columns and touch the next number.
    let mut text = String::from(" t\nGAUSSIAN              0 MOL ORBITALS      3 PRIMITIVES      101 NUCLEI\n");
    for k in 1..=101 {
        text.push_str(&format!("  H  {k:3}    (CENTRE{k:3})   0.00000000  0.00000000  0.00000000  CHARGE =  1.0\n"));
    }
    text.push_str("CENTRE ASSIGNMENTS  100101  1\nTYPE ASSIGNMENTS      1  1  1\nEXPONENTS  0.1D+01 0.1D+01 0.1D+01\nEND DATA\n");
    let w = wfn(text.as_bytes()).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(w.centres, [100, 101, 1]);
    assert_eq!(w.nuclei[100].centre, 101);
    assert_eq!((w.energy, w.virial), (None, None));
}

#[test]
fn wfn_errors_name_the_line() {
    let e = wfn(WFN_SEED.replace("  0.12345678D+01\nEND", "END").as_bytes()).expect_err("short orbital");
    assert_eq!(e.line, Some(12), "{e}");
    assert!(e.to_string().contains("1 more coefficients of orbital 3"), "{e}");
    // Keywords that overlap ("OCC NORB. ENERGY") are an error, not a slice out of order.
    let e = wfn(WFN_SEED.replace("OCC NO =    1.0000000  ORB.", "OCC NORB.").as_bytes()).expect_err("overlap");
    assert_eq!(e.line, Some(8), "{e}");
    let e = wfn(WFN_SEED.replace("2 NUCLEI", "999999 NUCLEI").as_bytes()).expect_err("absurd count");
    assert!(matches!(e.kind, TextErrorKind::BadCount { value: 999_999, .. }), "{e}");
    let e = wfn(WFN_SEED.replace("TYPE ASSIGNMENTS      1  4  1", "TYPE ASSIGNMENTS      1  x  1").as_bytes())
        .expect_err("bad type");
    assert_eq!(e.line, Some(6), "{e}");
}

#[test]
fn wfx_seed_reads_as_written() {
    let w = wfx(WFX_SEED.as_bytes()).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(w.title.as_deref(), Some("H2 seed"));
    assert_eq!(w.nuclear_names, ["H1", "H2"]);
    assert_eq!(w.coordinates, [[0.0, 0.0, 0.7], [0.0, 0.0, -0.7]]);
    assert_eq!(w.multiplicity, Some(3));
    assert_eq!(w.types, [1, 4, 1]);
    assert_eq!(w.orbitals.len(), 2);
    assert_eq!(w.orbitals[0].spin, WfxSpin::Alpha);
    assert_eq!(w.orbitals[1].spin, WfxSpin::AlphaAndBeta);
    assert_eq!(w.orbitals[1].coefficients, [1.0, 0.5, -1.0]);
    assert_eq!(w.orbitals[1].energy, -0.4);
    // The closing tag's doubled blank does not matter.
    assert_eq!(w.energy, Some(-1.1));
}

#[test]
fn wfx_errors_name_the_line() {
    let e = wfx(WFX_SEED.replace("</Number of Nuclei>\n", "").as_bytes()).expect_err("unclosed");
    assert_eq!(e.line, Some(9), "{e}");
    assert!(e.to_string().contains("</Number of Nuclei> (opened on line 7)"), "{e}");
    let e = wfx(WFX_SEED.replace("</Keywords>", "</Keyword>").as_bytes()).expect_err("mismatched");
    assert_eq!(e.line, Some(6), "{e}");
    let e = wfx(WFX_SEED.replace(" 0.5 -1.0\n", " 0.5\n").as_bytes()).expect_err("short orbital");
    assert!(e.to_string().contains("3 coefficients"), "{e}");
    let e = wfx(WFX_SEED.replace(" Alpha and Beta", " Gamma").as_bytes()).expect_err("spin");
    assert!(e.to_string().contains("Alpha, Beta or Alpha and Beta"), "{e}");
}

// --- robustness ---------------------------------------------------------------------------

fn consistent_fchk(f: &FchkFile) {
    for s in &f.sections {
        match &s.value {
            FchkValue::Real(v) => assert!(v.is_finite()),
            FchkValue::Reals(v) => assert!(v.iter().all(|x| x.is_finite())),
            _ => {}
        }
    }
}

fn consistent_wfn(w: &WfnFile) {
    let n = w.exponents.len();
    assert_eq!(w.centres.len(), n);
    assert_eq!(w.types.len(), n);
    assert!(w.orbitals.iter().all(|o| o.coefficients.len() == n && o.coefficients.iter().all(|c| c.is_finite())));
}

fn consistent_wfx(w: &WfxFile) {
    let n = w.exponents.len();
    assert_eq!(w.centres.len(), n);
    assert_eq!(w.types.len(), n);
    assert_eq!(w.atomic_numbers.len(), w.coordinates.len());
    assert!(w.orbitals.iter().all(|o| o.coefficients.len() == n && o.coefficients.iter().all(|c| c.is_finite())));
}

/// Every truncation and 5000 random mutations of `seed` through `check`; returns how many
/// mutated inputs were accepted.
fn mutate(seed: &[u8], rng_seed: u64, mut check: impl FnMut(&[u8]) -> bool) -> usize {
    for cut in 0..seed.len() {
        check(&seed[..cut]);
    }
    let alphabet = b"0123456789+-.eEdD<>/NOM= \t\r\n#\x00\xff\xc3";
    let mut rng = Rng(rng_seed);
    let mut accepted = 0;
    for _ in 0..5_000 {
        let bytes = rng.mutate(seed, alphabet);
        accepted += usize::from(check(&bytes));
    }
    accepted
}

#[test]
fn fchk_truncations_and_mutations() {
    let accepted = mutate(fchk_seed().as_bytes(), 0x1234_5678_9abc_def1, |b| {
        fchk(b).map(|f| consistent_fchk(&f)).is_ok()
    });
    assert!(accepted > 0);
}

#[test]
fn wfn_truncations_and_mutations() {
    let accepted = mutate(WFN_SEED.as_bytes(), 0x0fed_cba9_8765_4321, |b| wfn(b).map(|w| consistent_wfn(&w)).is_ok());
    assert!(accepted > 0);
}

#[test]
fn wfx_truncations_and_mutations() {
    let accepted = mutate(WFX_SEED.as_bytes(), 0x5555_aaaa_3333_cccc, |b| wfx(b).map(|w| consistent_wfx(&w)).is_ok());
    assert!(accepted > 0);
}

#[test]
fn gzip_input_reads_and_raw_gzip_is_refused() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("seed.wfn.gz");
    std::fs::write(&path, gzip(WFN_SEED.as_bytes())).expect("write");
    assert_eq!(read_wfn(&path).unwrap_or_else(|e| panic!("{e}")).orbitals.len(), 2);
    assert_eq!(sniff_format(&path).expect("sniff"), FileFormat::Wfn);
    let e = wfx(&gzip(WFX_SEED.as_bytes())).expect_err("compressed");
    assert!(matches!(e.kind, TextErrorKind::Compressed));
}

// --- real files ---------------------------------------------------------------------------

fn real_world() -> Option<PathBuf> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../shared/real-world");
    if dir.is_dir() {
        Some(dir)
    } else {
        use std::io::Write;
        let _ = writeln!(std::io::stderr(), "skipped: shared real-world files not found at {}", dir.display());
        None
    }
}

/// Independent reading of an fchk array: the lines after its header, split on whitespace,
/// parsed with `str::parse` (the real files use `E` exponents only).
fn independent_array(text: &str, name: &str) -> Vec<f64> {
    let lines: Vec<&str> = text.lines().collect();
    let at = lines.iter().position(|l| l.starts_with(name) && l[40..].contains("N=")).expect("section");
    let count: usize = lines[at].split_whitespace().last().and_then(|n| n.parse().ok()).expect("count");
    lines[at + 1..].iter().flat_map(|l| l.split_whitespace()).take(count).map(|t| t.parse::<f64>().expect("number")).collect()
}

#[test]
fn real_fchk_files_match_an_independent_reading() {
    let Some(dir) = real_world() else { return };
    let mut seen = 0;
    for entry in std::fs::read_dir(&dir).expect("readable").flatten() {
        let path = entry.path();
        if path.extension().is_none_or(|e| e != "fchk") {
            continue;
        }
        assert_eq!(sniff_format(&path).expect("sniff"), FileFormat::Fchk, "{}", path.display());
        let f = read_fchk(&path).unwrap_or_else(|e| panic!("{e}"));
        let text = std::fs::read_to_string(&path).expect("text");
        for name in ["Atomic numbers", "Shell types", "Primitive exponents", "Alpha MO coefficients"] {
            let ours: Vec<f64> = match &f.get(name).expect(name).value {
                FchkValue::Ints(v) => v.iter().map(|&x| x as f64).collect(),
                FchkValue::Reals(v) => v.clone(),
                other => panic!("{name}: {other:?}"),
            };
            assert_eq!(ours, independent_array(&text, name), "{} {name}", path.display());
        }
        seen += 1;
    }
    assert_eq!(seen, 7);
}

#[test]
fn real_water_files() {
    let Some(dir) = real_world() else { return };
    // reference: the files' own text (h2o_sto3g.fchk lines 1–3 and 15–17; h2o_sto3g.wfn).
    let f = read_fchk(&dir.join("h2o_sto3g.fchk")).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(f.title, "H2O Optimization");
    assert_eq!(f.calculation, ["FOpt", "RHF", "STO-3G"]);
    assert_eq!(f.ints("Atomic numbers").unwrap().map(|(v, _)| v.to_vec()), Some(vec![8, 1, 1]));
    let w = read_wfn(&dir.join("h2o_sto3g.wfn")).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!((w.orbitals.len(), w.exponents.len(), w.nuclei.len()), (5, 21, 3));
    assert_eq!(w.nuclei[0].position, [-4.44734101, 3.39697999, 0.0]);
    assert_eq!(w.exponents[0], 130.7093);
    assert_eq!((w.orbitals[0].occupation, w.orbitals[0].energy), (2.0, -20.251576));
    assert_eq!(w.orbitals[4].coefficients[20], -0.33277355e-15);
    assert_eq!((w.energy, w.virial), (Some(-74.965901217080), Some(2.00600239)));
    // reference: o2_uhf.wfn numbers its β orbitals from 45.
    let w = read_wfn(&dir.join("o2_uhf.wfn")).unwrap_or_else(|e| panic!("{e}"));
    let numbers: Vec<i64> = w.orbitals.iter().map(|o| o.number).collect();
    assert_eq!(numbers, [1, 2, 3, 4, 5, 6, 7, 8, 9, 45, 46, 47, 48, 49, 50, 51]);
}

#[test]
fn real_wfx_files() {
    let Some(dir) = real_world() else { return };
    for name in ["h2_ub3lyp_ccpvtz.wfx", "lih_cation_rohf.wfx", "lih_cation_uhf.wfx"] {
        let path = dir.join(name);
        assert_eq!(sniff_format(&path).expect("sniff"), FileFormat::Wfx);
        consistent_wfx(&read_wfx(&path).unwrap_or_else(|e| panic!("{e}")));
    }
    // reference: lih_cation_rohf.wfx as written.
    let w = read_wfx(&dir.join("lih_cation_rohf.wfx")).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(w.orbitals.iter().map(|o| o.spin).collect::<Vec<_>>(), [WfxSpin::AlphaAndBeta, WfxSpin::Alpha]);
    assert_eq!(w.orbitals[1].coefficients[25], 9.76365474898696e-02);
    assert_eq!(w.energy, Some(-7.71189049617763));
    assert_eq!(w.model.as_deref(), Some("Restricted-Open HF"));
    // h2o_error.wfx leaves <Number of Nuclei> (line 4) unclosed.
    let e = read_wfx(&dir.join("h2o_error.wfx")).expect_err("broken on purpose");
    assert_eq!(e.line, Some(7), "{e}");
    assert!(e.to_string().contains("expected </Number of Nuclei> (opened on line 4)"), "{e}");
    for name in ["h2o_sto3g.wfn", "he_spdfgh_orbital.wfn", "o2_uhf.wfn"] {
        let path = dir.join(name);
        assert_eq!(sniff_format(&path).expect("sniff"), FileFormat::Wfn);
        consistent_wfn(&read_wfn(&path).unwrap_or_else(|e| panic!("{e}")));
    }
    for name in ["cubegen_h2o_5points.cube", "cubegen_ch4_6points.cube"] {
        assert_eq!(sniff_format(&dir.join(name)).expect("sniff"), FileFormat::Cube, "{name}");
    }
}
