//! Telling cube grids from molden files by content.

use crate::common::gzip;
use sixray_parsers::{FileFormat, sniff_format};

fn sniff(name: &str, bytes: &[u8]) -> FileFormat {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join(name);
    std::fs::write(&path, bytes).unwrap();
    sniff_format(&path).unwrap()
}

#[test]
fn molden_tag_decides_whatever_the_name_or_compression() {
    let molden = b"\n  [MOLDEN FORMAT]\n[Atoms] AU\n";
    assert_eq!(sniff("orbitals.txt", molden), FileFormat::Molden);
    assert_eq!(sniff("orbitals.cube", &gzip(b"[Molden Format]\n")), FileFormat::Molden);
}

#[test]
fn cube_headers_are_recognised_by_their_numbers() {
    let header = b"comment one\ncomment two\n 3 0.0 0.0 0.0\n 10 0.2 0 0\n 10 0 0.2 0\n 10 0 0 0.2\n";
    assert_eq!(sniff("water.molden", header), FileFormat::Cube);
    // Truncated after line 3: still a cube, for the cube reader to report what is missing.
    assert_eq!(sniff("water.molden", b"comment one\ncomment two\n 3 0.0 0.0 0.0\n"), FileFormat::Cube);
    assert_eq!(sniff("a.txt", &gzip(header)), FileFormat::Cube);
}

#[test]
fn orbital_formats_are_recognised_by_content() {
    let fchk = b"water\nSP        RHF      STO-3G\nNumber of atoms                            I                3\n";
    assert_eq!(sniff("water.cube", fchk), FileFormat::Fchk);
    let wfn = b" water\nGAUSSIAN              5 MOL ORBITALS     21 PRIMITIVES        3 NUCLEI\n";
    assert_eq!(sniff("water.fchk", &gzip(wfn)), FileFormat::Wfn);
    assert_eq!(sniff("water.wfn", b"<Title>\nwater\n</Title>\n"), FileFormat::Wfx);
}

#[test]
fn anything_else_is_unknown_with_its_first_line() {
    // The tag only counts as a file's first non-blank line.
    assert_eq!(
        sniff("a.cube", b"title\n[Molden Format]\n"),
        FileFormat::Unknown { start: "\"title\"".into() }
    );
    assert_eq!(sniff("empty", b""), FileFormat::Unknown { start: "an empty file".into() });
    let broken = b"comment one\ncomment two\n 3 0.0 0.0 0.0\n 10 0.2 0\n";
    assert!(matches!(sniff("broken.cube", broken), FileFormat::Unknown { .. }));
}
