//! Inputs the fuzz targets (`fuzz/`) found mishandled, each reduced to its point, with the
//! original input kept as a seed under `fuzz/seeds/TARGET/`.

use std::path::Path;

use crate::common::{parse, parse_with_buffer};
use sixray_parsers::{CubeErrorKind, TextErrorKind, parse_fchk, parse_wfn};

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
