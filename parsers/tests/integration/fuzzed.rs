//! Inputs the fuzz targets (`fuzz/`) found mishandled, each reduced to its point, with the
//! original input kept as a seed under `fuzz/seeds/TARGET/`.

use std::path::Path;

use crate::common::{parse, parse_with_buffer};
use sixray_parsers::cube::FOUND_EXCERPT_CHARS;
use sixray_parsers::{CubeErrorKind, TextErrorKind, parse_fchk, parse_wfn, parse_wfx};

/// A 1×1×2 cube followed by one value too many.
const TRAILING: &str = "c1\nc2\n 1 0.0 0.0 0.0\n 1 0.1 0 0\n 1 0 0.1 0\n 2 0 0 0.1\n 1 1.0 0 0 0\n 1.0 2.0 220.0\n";

#[test]
fn trailing_value_is_quoted_whole_whatever_the_buffer() {
    // fuzz target cube: a buffer refill inside the extra value cut the quoted excerpt.
    let whole = parse(TRAILING.as_bytes()).expect_err("one value too many");
    assert!(matches!(&whole.kind, CubeErrorKind::TrailingData { found } if found == "\"220.0\""), "{whole}");
    for capacity in 1..=TRAILING.len() {
        let e = parse_with_buffer(TRAILING.as_bytes(), capacity).expect_err("one value too many");
        assert_eq!(e.to_string(), whole.to_string(), "buffer of {capacity} bytes");
    }
}

#[test]
fn an_empty_file_ends_on_line_one() {
    // fuzz targets fchk and wfn: the end of an empty file was reported on line 0.
    let src = Path::new("empty");
    let fchk = parse_fchk(b"", src).expect_err("no title");
    let wfn = parse_wfn(b"", src).expect_err("no title");
    for (line, kind, shown) in [(fchk.line, &fchk.kind, fchk.to_string()), (wfn.line, &wfn.kind, wfn.to_string())] {
        assert_eq!(line, Some(1), "{shown}");
        assert!(matches!(kind, TextErrorKind::UnexpectedEnd { .. }), "{shown}");
        assert!(shown.starts_with("empty:1: unexpected end of file"), "{shown}");
    }
    // Where lines exist, the end is on the last one.
    assert_eq!(parse_fchk(b"title only\n", src).expect_err("no calculation line").line, Some(1));
    assert_eq!(parse_wfn(b"title\n\n", src).expect_err("no header").line, Some(2));
}

#[test]
fn a_long_section_name_is_shortened_in_messages() {
    // fuzz target wfx: an unclosed tag of 1000 characters was quoted whole in the message.
    let name = "N".repeat(1000);
    let src = Path::new("long.wfx");
    let unclosed = format!("<Title>\nt\n</Title>\n<{name}>\n1\n");
    let mismatched = format!("<{name}>\n1\n</Other>\n");
    let data_after = format!("<{name}>\n1\n<Inner>\n");
    let sections_then_data = format!("<{name}>\n<Inner>\n1\n</Inner>\n1\n");
    for text in [unclosed, mismatched, data_after, sections_then_data] {
        let e = parse_wfx(text.as_bytes(), src).expect_err("malformed");
        let shown = e.to_string();
        assert!(shown.len() < 300, "{} bytes: {shown}", shown.len());
        assert!(shown.contains(&format!("{}…", "N".repeat(FOUND_EXCERPT_CHARS))), "{shown}");
    }
}
