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
fn anything_else_is_a_cube_grid() {
    assert_eq!(sniff("water.molden", b"comment one\ncomment two\n 3 0.0 0.0 0.0\n"), FileFormat::Cube);
    // The tag only counts as a file's first non-blank line.
    assert_eq!(sniff("a.cube", b"title\n[Molden Format]\n"), FileFormat::Cube);
    assert_eq!(sniff("empty", b""), FileFormat::Cube);
}
