//! Format sniffing through a file (plain, and the same text gzip-compressed), and its
//! agreement with the readers: what a reader accepts is never called unknown.
#![no_main]

use std::path::Path;

use libfuzzer_sys::fuzz_target;
use sixray_fuzz::{gzip, scratch_file};
use sixray_parsers::cube::FOUND_EXCERPT_CHARS;
use sixray_parsers::{FileFormat, ReadParams, parse_cube, parse_wfn, parse_wfx, sniff_format};

/// The two bytes that open every gzip member.
const GZIP_MAGIC: [u8; 2] = [0x1f, 0x8b];

fuzz_target!(|data: &[u8]| {
    let sniffed = sniff_format(&scratch_file("input", data));
    if let Ok(FileFormat::Unknown { start }) = &sniffed {
        // A quoted excerpt (each character escaped to at most 10) or a phrase.
        assert!(!start.is_empty() && start.chars().count() <= FOUND_EXCERPT_CHARS * 10 + 3, "{start}");
    }
    if data.starts_with(&GZIP_MAGIC) {
        // A damaged gzip stream is an I/O error, the one kind sniffing reports.
        return;
    }
    let plain = sniffed.expect("sniffing a text file");
    let packed = sniff_format(&scratch_file("input.gz", &gzip(data))).expect("sniffing a file that exists");
    assert_eq!(plain, packed, "gzip changed the format");

    let src = Path::new("fuzz");
    let known = !matches!(plain, FileFormat::Unknown { .. });
    if parse_cube(data, src, Some(data.len() as u64), &ReadParams::default()).is_ok() {
        assert!(known, "an accepted cube sniffed as {plain:?}");
    }
    if parse_wfn(data, src).is_ok() {
        assert!(known, "an accepted wfn sniffed as {plain:?}");
    }
    if parse_wfx(data, src).is_ok() {
        assert_eq!(plain, FileFormat::Wfx, "an accepted wfx");
    }
});
