//! No input may panic the reader: truncations, byte flips, insertions and deletions of a valid
//! file must each give Ok or Err, and any Ok must be internally consistent. Cube and molden
//! readers alike.

use std::path::Path;

use crate::common::{Rng, gzip, parse, parse_with_buffer};
use crate::molden::VARIED as MOLDEN_SEED;
use sixray_parsers::{CubeFile, MoldenFile, ReadParams, ShellType, parse_molden, read_cube, read_molden};

/// A valid multi-orbital text with a wrapped index list, varied spellings and CRLF in places.
fn seed_text() -> Vec<u8> {
    let mut t =
        String::from("robustness seed\r\n\n   -2   -1.0  -1.0D0  -1.0   1\n    2  0.5 0.0 0.0\n");
    t.push_str("    3  0.0 0.5 0.0\n    2  0.0 0.0 0.5\n    8  8.0  0.0 0.0 0.1\n    1  1.0  0.0 0.7 -0.4\r\n");
    t.push_str("    3   10   11\n   12\n");
    let spellings = [
        "1.0E-05",
        "-1.23456e+00",
        "0.5",
        "1e-300",
        "-0.0",
        ".5",
        "+2",
        "3.",
        "1.5D-03",
        "-2.5d+02",
    ];
    for i in 0..36 {
        t.push_str(spellings[i % spellings.len()]);
        t.push_str(if i % 5 == 4 { "\n" } else { " " });
    }
    t.push('\n');
    t.into_bytes()
}

/// Checks what an accepted input returned: one full-length field per value per point.
fn consistent(cube: &CubeFile) {
    let h = &cube.header;
    let points = h.point_count().expect("accepted headers do not overflow");
    assert_eq!(cube.fields.len(), h.values_per_point);
    assert!(cube.fields.iter().all(|f| f.len() == points));
    assert!(cube.fields.iter().flatten().all(|v| v.is_finite()));
    if let Some(ids) = &h.orbital_ids {
        assert_eq!(ids.len(), h.values_per_point);
    }
}

fn check(bytes: &[u8]) {
    if let Ok(c) = parse(bytes) {
        consistent(&c);
    }
    // A tiny buffer exercises the code that joins numbers across refills.
    let small = parse_with_buffer(bytes, 7);
    if let Ok(c) = &small {
        consistent(c);
    }
    // Buffering must not change the outcome.
    assert_eq!(
        parse(bytes).is_ok(),
        small.is_ok(),
        "{:?}",
        String::from_utf8_lossy(bytes)
    );
}

#[test]
fn seed_is_valid() {
    let cube = parse(&seed_text()).expect("seed must parse");
    assert_eq!(cube.header.orbital_ids, Some(vec![10, 11, 12]));
    assert_eq!(cube.fields.len(), 3);
}

#[test]
fn every_truncation() {
    let seed = seed_text();
    for cut in 0..seed.len() {
        check(&seed[..cut]);
    }
}

#[test]
fn random_byte_flips_insertions_deletions() {
    let seed = seed_text();
    let alphabet = b"0123456789+-.eEdDnaiNfF \t\r\n#\x00\xff\xc3";
    let mut rng = Rng(0x9e37_79b9_7f4a_7c15);
    let mut accepted = 0;
    for _ in 0..20_000 {
        let bytes = rng.mutate(&seed, alphabet);
        check(&bytes);
        accepted += usize::from(parse(&bytes).is_ok());
    }
    // Some mutations are harmless (a digit changed): the mutated inputs must not all fail.
    assert!(accepted > 0);
}

#[test]
fn gzip_truncations_and_flips() {
    let packed = gzip(&seed_text());
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("t.cube.gz");
    let mut rng = Rng(12345);
    for cut in 0..packed.len() {
        std::fs::write(&path, &packed[..cut]).expect("write");
        if let Ok(c) = read_cube(&path, &ReadParams::default()) {
            consistent(&c);
        }
    }
    for _ in 0..500 {
        let mut bytes = packed.clone();
        let at = rng.below(bytes.len());
        bytes[at] ^= 1 << rng.below(8);
        std::fs::write(&path, &bytes).expect("write");
        if let Ok(c) = read_cube(&path, &ReadParams::default()) {
            consistent(&c);
        }
    }
}

// --- molden -----------------------------------------------------------------------------

/// Checks what an accepted input returned.
fn consistent_molden(m: &MoldenFile) {
    for s in m.basis.iter().flat_map(|a| &a.shells) {
        assert!(!s.primitives.is_empty());
        assert!(s.primitives.iter().all(|p| p.exponent.is_finite() && p.coefficient.is_finite()));
        assert_eq!(s.shell_type == ShellType::Sp, s.primitives.iter().all(|p| p.coefficient_p.is_some()));
    }
    for o in &m.orbitals {
        assert!(!o.coefficients.is_empty());
        assert_eq!(o.coefficients.len(), o.coefficient_lines.len());
        assert!(o.coefficients.iter().all(|&(i, v)| i >= 1 && v.is_finite()));
    }
}

#[test]
fn molden_every_truncation() {
    let seed = MOLDEN_SEED.as_bytes();
    for cut in 0..seed.len() {
        if let Ok(m) = parse_molden(&seed[..cut], Path::new("seed.molden")) {
            consistent_molden(&m);
        }
    }
}

#[test]
fn molden_random_byte_flips_insertions_deletions() {
    let seed = MOLDEN_SEED.as_bytes().to_vec();
    let alphabet = b"0123456789+-.eEdDsSpPfFgG[]()=AaUu \t\r\n#\x00\xff\xc3";
    let mut rng = Rng(0x2545_f491_4f6c_dd1d);
    let mut accepted = 0;
    for _ in 0..20_000 {
        let bytes = rng.mutate(&seed, alphabet);
        if let Ok(m) = parse_molden(&bytes, Path::new("seed.molden")) {
            consistent_molden(&m);
            accepted += 1;
        }
    }
    // Some mutations are harmless (a digit changed): the mutated inputs must not all fail.
    assert!(accepted > 0);
}

#[test]
fn molden_gzip_truncations_and_flips() {
    let packed = gzip(MOLDEN_SEED.as_bytes());
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("t.molden.gz");
    let mut rng = Rng(4242);
    for cut in 0..packed.len() {
        std::fs::write(&path, &packed[..cut]).expect("write");
        if let Ok(m) = read_molden(&path) {
            consistent_molden(&m);
        }
    }
    for _ in 0..500 {
        let mut bytes = packed.clone();
        let at = rng.below(bytes.len());
        bytes[at] ^= 1 << rng.below(8);
        std::fs::write(&path, &bytes).expect("write");
        if let Ok(m) = read_molden(&path) {
            consistent_molden(&m);
        }
    }
}
