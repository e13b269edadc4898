//! Malformed inputs: each gives its own error kind, on the right 1-based line, without panicking
//! and (for impossible sizes) without reserving the memory first.

use std::path::Path;

use crate::common::{SRC, gzip, parse, parse_with_buffer};
use sixray_parsers::{
    CubeError, CubeErrorKind, ReadParams, parse_cube, read_cube, read_cube_header,
};

/// A valid 2x2x2 cube, one line per entry (line numbers are index + 1).
fn lines() -> Vec<String> {
    [
        "comment one",
        "comment two",
        "    1    0.000000    0.000000    0.000000",
        "    2    0.500000    0.000000    0.000000",
        "    2    0.000000    0.500000    0.000000",
        "    2    0.000000    0.000000    0.500000",
        "    1    1.000000    0.000000    0.000000    0.000000",
        "  1.0 2.0 3.0 4.0",
        "  5.0 6.0 7.0 8.0",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect()
}

fn join(lines: &[String]) -> String {
    lines.iter().map(|l| format!("{l}\n")).collect()
}

/// Text with line `n` (1-based) replaced.
fn with_line(n: usize, new: &str) -> String {
    let mut l = lines();
    l[n - 1] = new.to_string();
    join(&l)
}

fn fail(text: &str) -> CubeError {
    match parse(text.as_bytes()) {
        Ok(c) => panic!("accepted malformed text:\n{text}\n=> {c:?}"),
        Err(e) => e,
    }
}

#[test]
fn baseline_is_valid() {
    let cube = parse(join(&lines()).as_bytes()).expect("baseline must parse");
    assert_eq!(cube.fields[0], vec![1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0]);
}

#[test]
fn empty_file() {
    let e = fail("");
    assert_eq!(e.line, Some(1));
    assert!(
        matches!(&e.kind, CubeErrorKind::UnexpectedEnd { expected } if expected.contains("first comment")),
        "{e}"
    );
}

#[test]
fn truncated_header() {
    let text = join(&lines()[..5]);
    let e = fail(&text);
    assert_eq!(e.line, Some(6));
    assert!(
        matches!(&e.kind, CubeErrorKind::UnexpectedEnd { expected } if expected.contains("axis 3")),
        "{e}"
    );

    // Declares two atoms, has one.
    let mut l = lines();
    l[2] = "    2    0.0 0.0 0.0".into();
    l.truncate(7);
    let e = fail(&join(&l));
    assert_eq!(e.line, Some(8));
    assert!(
        matches!(&e.kind, CubeErrorKind::UnexpectedEnd { expected } if expected.contains("atom line 2 of 2")),
        "{e}"
    );

    // Blank lines only.
    let e = fail("\n\n");
    assert_eq!(e.line, Some(3));
    assert!(matches!(e.kind, CubeErrorKind::UnexpectedEnd { .. }), "{e}");
}

#[test]
fn truncated_data() {
    // Last line missing: 4 of 8 values, last value on line 8.
    let e = fail(&join(&lines()[..8]));
    assert_eq!(e.line, Some(8));
    assert!(
        matches!(
            e.kind,
            CubeErrorKind::TooFewValues {
                expected: 8,
                found: 4
            }
        ),
        "{e}"
    );

    // Cut inside the last line.
    let e = fail(&with_line(9, "  5.0 6.0"));
    assert_eq!(e.line, Some(9));
    assert!(
        matches!(
            e.kind,
            CubeErrorKind::TooFewValues {
                expected: 8,
                found: 6
            }
        ),
        "{e}"
    );

    // Cut inside a number: "6." is a complete value, so 6 values are found.
    let text = join(&lines());
    let cut = text.find("6.0").expect("baseline has 6.0") + 2;
    let e = fail(&text[..cut]);
    assert_eq!(e.line, Some(9));
    assert!(
        matches!(
            e.kind,
            CubeErrorKind::TooFewValues {
                expected: 8,
                found: 6
            }
        ),
        "{e}"
    );

    // No data at all, size unknown: reported at the line where data should start.
    let text = join(&lines()[..7]);
    let e = parse_cube(
        text.as_bytes(),
        Path::new(SRC),
        None,
        &ReadParams::default(),
    )
    .expect_err("no data");
    assert_eq!(e.line, Some(8));
    assert!(
        matches!(
            e.kind,
            CubeErrorKind::TooFewValues {
                expected: 8,
                found: 0
            }
        ),
        "{e}"
    );
    // Size known: the header is refused at once, since 0 bytes cannot hold 8 values.
    let e = fail(&text);
    assert_eq!(e.line, Some(6));
    assert!(
        matches!(
            e.kind,
            CubeErrorKind::TooLarge {
                claimed: 8,
                limit: 0,
                ..
            }
        ),
        "{e}"
    );
}

#[test]
fn non_numeric_value() {
    let e = fail(&with_line(9, "  5.0 abc 7.0 8.0"));
    assert_eq!(e.line, Some(9));
    match &e.kind {
        CubeErrorKind::Syntax { expected, found } => {
            assert!(expected.contains("value 6 of 8"), "{expected}");
            assert_eq!(found, "\"abc\"");
        }
        other => panic!("wrong kind {other:?}"),
    }
    // Two numbers glued together, Fortran-overflow stars, a comma decimal.
    for bad in ["5.0-6.0", "********", "5,0", "0x1F", "5.0e", "1.0D"] {
        let e = fail(&with_line(8, &format!("1.0 {bad} 3.0 4.0")));
        assert_eq!(e.line, Some(8), "{bad}");
        assert!(matches!(e.kind, CubeErrorKind::Syntax { .. }), "{bad}: {e}");
    }
}

#[test]
fn nan_and_infinity_in_data() {
    for bad in [
        "nan",
        "NaN",
        "-nan",
        "NAN",
        "inf",
        "-Inf",
        "+Infinity",
        "1e999",
        "-1.0D+400",
        "1.#INF",
        "-1.#IND",
        "NaNQ",
    ] {
        let e = fail(&with_line(9, &format!("  5.0 6.0 {bad} 8.0")));
        assert_eq!(e.line, Some(9), "{bad}");
        assert!(
            matches!(e.kind, CubeErrorKind::NotFinite { .. }),
            "{bad}: {e}"
        );
        // Same at the very end of the input, where the token is completed at end of file.
        let text = join(&lines());
        let text = format!("{}{bad}", text.trim_end().trim_end_matches("8.0"));
        let e = fail(&text);
        assert_eq!(e.line, Some(9), "{bad} at end");
        assert!(
            matches!(e.kind, CubeErrorKind::NotFinite { .. }),
            "{bad} at end: {e}"
        );
    }
}

#[test]
fn non_finite_in_header() {
    let e = fail(&with_line(3, "    1    0.0 inf 0.0"));
    assert_eq!(e.line, Some(3));
    assert!(matches!(e.kind, CubeErrorKind::NotFinite { .. }), "{e}");
    let e = fail(&with_line(7, "    1    NaN 0.0 0.0 0.0"));
    assert_eq!(e.line, Some(7));
    assert!(matches!(e.kind, CubeErrorKind::NotFinite { .. }), "{e}");
}

#[test]
fn zero_point_count() {
    let e = fail(&with_line(5, "    0    0.000000    0.500000    0.000000"));
    assert_eq!(e.line, Some(5));
    assert!(
        matches!(&e.kind, CubeErrorKind::BadCount { what, value: 0 } if what.contains("axis 2")),
        "{e}"
    );
}

#[test]
fn mixed_unit_signs() {
    let e = fail(&with_line(6, "   -2    0.000000    0.000000    0.500000"));
    assert_eq!(e.line, Some(6));
    assert!(matches!(e.kind, CubeErrorKind::MixedUnits), "{e}");
    let mut l = lines();
    l[3] = "   -2    0.5 0.0 0.0".into();
    let e = fail(&join(&l));
    assert_eq!(e.line, Some(5));
    assert!(matches!(e.kind, CubeErrorKind::MixedUnits), "{e}");
}

fn huge_claim_text() -> String {
    let mut l = lines();
    for n in 4..=6 {
        l[n - 1] = l[n - 1].replacen("    2", "100000", 1);
    }
    join(&l)
}

#[test]
fn header_claims_more_than_the_file_can_hold() {
    let text = huge_claim_text();
    assert!(text.len() < 1024);
    // No cap from max_values: only the byte count can stop it, and must do so before the
    // 8 PB reservation (which would report OutOfMemory instead).
    let params = ReadParams {
        max_values: u64::MAX,
    };
    let e = parse_cube(
        text.as_bytes(),
        Path::new(SRC),
        Some(text.len() as u64),
        &params,
    )
    .expect_err("impossible size");
    assert_eq!(e.line, Some(6));
    match &e.kind {
        CubeErrorKind::TooLarge {
            claimed,
            limit,
            why,
        } => {
            assert_eq!(*claimed, 1_000_000_000_000_000);
            assert!(*limit < 100, "{limit}");
            assert!(why.contains("input size"), "{why}");
        }
        other => panic!("wrong kind {other:?}"),
    }

    // Same through a file on disk.
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("huge.cube");
    std::fs::write(&path, &text).expect("write");
    let e = read_cube(&path, &params).expect_err("impossible size");
    assert!(matches!(e.kind, CubeErrorKind::TooLarge { .. }), "{e}");
    let e = read_cube_header(&path).expect_err("impossible size");
    assert!(matches!(e.kind, CubeErrorKind::TooLarge { .. }), "{e}");

    // Default cap: the configured maximum trips first, named for a user (no parameter names).
    let e = fail(&text);
    assert!(
        matches!(&e.kind, CubeErrorKind::TooLarge { why, .. } if why.contains("memory limit for one grid")),
        "{e}"
    );
    assert!(!e.to_string().contains("::"), "{e}");
}

#[test]
fn gzip_claim_bounded_by_compressed_size() {
    // 1000^3 values is below the default cap but far beyond what ~200 compressed bytes can
    // expand to (x1032).
    let mut l = lines();
    for n in 4..=6 {
        l[n - 1] = l[n - 1].replacen("    2", " 1000", 1);
    }
    let packed = gzip(join(&l).as_bytes());
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("huge.cube.gz");
    std::fs::write(&path, &packed).expect("write");
    let e = read_cube(&path, &ReadParams::default()).expect_err("impossible size");
    assert_eq!(e.line, Some(6));
    match &e.kind {
        CubeErrorKind::TooLarge { claimed, limit, .. } => {
            assert_eq!(*claimed, 1_000_000_000);
            assert!(*limit <= packed.len() as u64 * 1032 / 2, "{limit}");
        }
        other => panic!("wrong kind {other:?}"),
    }
}

#[test]
fn configured_cap() {
    let text = join(&lines());
    let params = ReadParams { max_values: 7 };
    let e = parse_cube(text.as_bytes(), Path::new(SRC), None, &params).expect_err("8 > 7");
    assert_eq!(e.line, Some(6));
    assert!(
        matches!(
            e.kind,
            CubeErrorKind::TooLarge {
                claimed: 8,
                limit: 7,
                ..
            }
        ),
        "{e}"
    );
    let params = ReadParams { max_values: 8 };
    assert!(parse_cube(text.as_bytes(), Path::new(SRC), None, &params).is_ok());
}

#[test]
fn count_product_overflow() {
    let mut l = lines();
    l[3] = "4294967296 0.5 0 0".into();
    l[4] = "4294967296 0 0.5 0".into();
    let e = parse_cube(
        join(&l).as_bytes(),
        Path::new(SRC),
        None,
        &ReadParams {
            max_values: u64::MAX,
        },
    )
    .expect_err("overflow");
    assert_eq!(e.line, Some(6));
    assert!(
        matches!(
            e.kind,
            CubeErrorKind::CountOverflow {
                counts: [4294967296, 4294967296, 2],
                values_per_point: 1
            }
        ),
        "{e}"
    );

    // An integer beyond 64 bits is a syntax error on its own line.
    let e = fail(&with_line(4, "99999999999999999999 0.5 0 0"));
    assert_eq!(e.line, Some(4));
    assert!(matches!(e.kind, CubeErrorKind::Syntax { .. }), "{e}");
}

#[test]
fn absurd_atom_count() {
    for count in ["2000000", "-2000000"] {
        let e = fail(&with_line(3, &format!("{count} 0.0 0.0 0.0")));
        assert_eq!(e.line, Some(3));
        assert!(matches!(e.kind, CubeErrorKind::BadCount { .. }), "{e}");
    }
}

#[test]
fn bad_values_per_point() {
    for (nval, kind_is_count) in [
        ("0", true),
        ("-3", true),
        ("2000000", true),
        ("x", false),
        ("1.5", false),
    ] {
        let e = fail(&with_line(3, &format!("    1 0.0 0.0 0.0 {nval}")));
        assert_eq!(e.line, Some(3), "{nval}");
        if kind_is_count {
            assert!(
                matches!(e.kind, CubeErrorKind::BadCount { .. }),
                "{nval}: {e}"
            );
        } else {
            assert!(
                matches!(&e.kind, CubeErrorKind::Syntax { expected, .. } if expected.contains("values per point")),
                "{e}"
            );
        }
    }
}

#[test]
fn bad_header_fields() {
    let e = fail(&with_line(3, "three 0.0 0.0 0.0"));
    assert_eq!(e.line, Some(3));
    assert!(
        matches!(&e.kind, CubeErrorKind::Syntax { expected, found } if expected.contains("atom count") && found == "\"three\""),
        "{e}"
    );

    let e = fail(&with_line(3, "    1 0.0 0.0"));
    assert!(
        matches!(&e.kind, CubeErrorKind::Syntax { expected, found } if expected.contains("origin z") && found == "end of line"),
        "{e}"
    );

    let e = fail(&with_line(4, "    2    0.5 0.0 0.0 extra"));
    assert_eq!(e.line, Some(4));
    assert!(
        matches!(&e.kind, CubeErrorKind::Syntax { expected, .. } if expected.contains("end of the line")),
        "{e}"
    );

    let e = fail(&with_line(5, "  2.0    0.0 0.5 0.0"));
    assert_eq!(e.line, Some(5));
    assert!(
        matches!(&e.kind, CubeErrorKind::Syntax { expected, .. } if expected.contains("point count of axis 2")),
        "{e}"
    );
}

#[test]
fn bad_atom_line() {
    let e = fail(&with_line(7, "    1    1.000000    0.000000    0.000000"));
    assert_eq!(e.line, Some(7));
    assert!(
        matches!(&e.kind, CubeErrorKind::Syntax { expected, found } if expected.contains("atom z") && found == "end of line"),
        "{e}"
    );

    let e = fail(&with_line(7, "    H    1.0 0.0 0.0 0.0"));
    assert_eq!(e.line, Some(7));
    assert!(
        matches!(&e.kind, CubeErrorKind::Syntax { expected, .. } if expected.contains("atomic number")),
        "{e}"
    );

    let e = fail(&with_line(7, "    1    one 0.0 0.0 0.0"));
    assert!(
        matches!(&e.kind, CubeErrorKind::Syntax { expected, .. } if expected.contains("nuclear charge")),
        "{e}"
    );

    let e = fail(&with_line(7, "    9999999999 1.0 0.0 0.0 0.0"));
    assert_eq!(e.line, Some(7));
    assert!(
        matches!(
            e.kind,
            CubeErrorKind::BadCount {
                value: 9999999999,
                ..
            }
        ),
        "{e}"
    );
}

/// The baseline with a negative atom count and `list` as the orbital lines.
fn with_orbital_list(list: &[&str]) -> String {
    let mut l = lines();
    l[2] = "   -1    0.0 0.0 0.0".into();
    for (k, s) in list.iter().enumerate() {
        l.insert(7 + k, s.to_string());
    }
    join(&l)
}

#[test]
fn orbital_list_too_short() {
    // Three announced, two given: the data line is taken for the third index.
    let e = fail(&with_orbital_list(&["    3    1    2"]));
    assert_eq!(e.line, Some(9));
    match &e.kind {
        CubeErrorKind::Syntax { expected, found } => {
            assert!(expected.contains("orbital index 3 of 3"), "{expected}");
            assert_eq!(found, "\"1.0\"");
        }
        other => panic!("wrong kind {other:?}"),
    }
    // The file ends inside the list.
    let mut l = lines();
    l[2] = "   -1    0.0 0.0 0.0".into();
    l.truncate(7);
    l.push("   12    1    2    3    4    5    6    7    8    9   10".into());
    let e = fail(&join(&l));
    assert_eq!(e.line, Some(9));
    assert!(
        matches!(&e.kind, CubeErrorKind::UnexpectedEnd { expected } if expected.contains("orbital index 11 of 12")),
        "{e}"
    );
}

#[test]
fn orbital_list_bad_counts_and_extras() {
    for (list, line) in [("    0", 8), ("   -2    1    2", 8), ("   2000000 1", 8)] {
        let e = fail(&with_orbital_list(&[list]));
        assert_eq!(e.line, Some(line), "{list}");
        assert!(
            matches!(e.kind, CubeErrorKind::BadCount { .. }),
            "{list}: {e}"
        );
    }
    let e = fail(&with_orbital_list(&["    1    1    2"]));
    assert_eq!(e.line, Some(8));
    assert!(
        matches!(&e.kind, CubeErrorKind::Syntax { expected, .. } if expected.contains("end of the line")),
        "{e}"
    );
    let e = fail(&with_orbital_list(&["    2", "    1  one"]));
    assert_eq!(e.line, Some(9));
    assert!(
        matches!(&e.kind, CubeErrorKind::Syntax { expected, found } if expected.contains("orbital index 2 of 2") && found == "\"one\""),
        "{e}"
    );
    // A valid list for comparison: one orbital, eight values.
    assert!(parse(with_orbital_list(&["    1    1"]).as_bytes()).is_ok());
}

#[test]
fn orbital_list_repeating_an_index() {
    // On one line, and across the lines of a wrapped list: the line of the repetition, and of
    // the first mention.
    for (list, repeated, line, first) in [(&["    2    3    3"][..], 3, 8, 8), (&["    3    4    5", "    4"][..], 4, 9, 8)] {
        let e = fail(&with_orbital_list(list));
        assert_eq!(e.line, Some(line), "{list:?}");
        match &e.kind {
            CubeErrorKind::RepeatedOrbital { index, first_line } => assert_eq!((*index, *first_line), (repeated, first)),
            other => panic!("wrong kind {other:?}"),
        }
        assert!(e.to_string().contains(&format!(":{line}: orbital index")) && e.to_string().contains("listed twice"), "{e}");
    }
}

#[test]
fn trailing_values() {
    let e = fail(&with_line(9, "  5.0 6.0 7.0 8.0 9.0"));
    assert_eq!(e.line, Some(9));
    assert!(
        matches!(&e.kind, CubeErrorKind::TrailingData { found } if found == "\"9.0\""),
        "{e}"
    );

    let e = fail(&format!("{}\n\n  END\n", join(&lines())));
    assert_eq!(e.line, Some(12));
    assert!(
        matches!(&e.kind, CubeErrorKind::TrailingData { found } if found == "\"END\""),
        "{e}"
    );
    assert!(
        e.to_string()
            .contains("more values than the header declares"),
        "{e}"
    );
}

#[test]
fn binary_garbage() {
    let e = fail("\u{0}\u{1}\u{2}\n\u{7f}\n\u{1b}PNG\r\n\u{0}\n");
    assert_eq!(e.line, Some(3));
    assert!(
        matches!(&e.kind, CubeErrorKind::Syntax { expected, .. } if expected.contains("atom count")),
        "{e}"
    );

    // Raw bytes, not valid UTF-8, no line feed for 2 MiB: refused at line 1, not buffered whole.
    let blob: Vec<u8> = (0..2u32 << 20)
        .map(|i| (i.wrapping_mul(2_654_435_761) >> 13) as u8 | 0x80)
        .collect();
    let e = parse(&blob).expect_err("garbage");
    assert_eq!(e.line, Some(1));
    assert!(matches!(e.kind, CubeErrorKind::LineTooLong { .. }), "{e}");

    // Invalid UTF-8 inside a number field is quoted, not a panic.
    let mut bytes = join(&lines()).into_bytes();
    let at = bytes
        .windows(3)
        .position(|w| w == b"6.0")
        .expect("baseline has 6.0");
    bytes[at + 1] = 0xff;
    let e = parse(&bytes).expect_err("garbage");
    assert_eq!(e.line, Some(9));
    assert!(
        matches!(&e.kind, CubeErrorKind::Syntax { found, .. } if found.contains('\u{fffd}')),
        "{e}"
    );
}

#[test]
fn compressed_bytes_given_to_parse_cube() {
    let packed = gzip(join(&lines()).as_bytes());
    let e = parse(&packed).expect_err("gzip is not text");
    assert!(matches!(e.kind, CubeErrorKind::Compressed), "{e}");
}

#[test]
fn corrupt_and_truncated_gzip() {
    let text = join(&lines());
    let packed = gzip(text.as_bytes());
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("bad.cube.gz");

    let mut corrupt = packed.clone();
    for b in corrupt.iter_mut().skip(12).take(8) {
        *b ^= 0x5a;
    }
    std::fs::write(&path, &corrupt).expect("write");
    let e = read_cube(&path, &ReadParams::default()).expect_err("corrupt");
    assert!(matches!(e.kind, CubeErrorKind::Io(_)), "{e}");

    std::fs::write(&path, &packed[..packed.len() - 12]).expect("write");
    let e = read_cube(&path, &ReadParams::default()).expect_err("truncated");
    assert!(
        matches!(
            e.kind,
            CubeErrorKind::Io(_) | CubeErrorKind::TooFewValues { .. }
        ),
        "{e}"
    );
}

#[test]
fn missing_file() {
    let e = read_cube(
        Path::new("/nonexistent/dir/none.cube"),
        &ReadParams::default(),
    )
    .expect_err("missing");
    assert_eq!(e.line, None);
    assert!(matches!(e.kind, CubeErrorKind::Io(_)));
    assert!(
        e.to_string()
            .starts_with("/nonexistent/dir/none.cube: read failed:"),
        "{e}"
    );
}

#[test]
fn display_names_file_line_expected_and_found() {
    let e = fail(&with_line(9, "  5.0 abc 7.0 8.0"));
    assert_eq!(
        e.to_string(),
        "synthetic.cube:9: expected value 6 of 8 (a number), found \"abc\""
    );

    let long = "x".repeat(100);
    let e = fail(&with_line(9, &format!("  5.0 {long} 7.0 8.0")));
    let CubeErrorKind::Syntax { found, .. } = &e.kind else {
        panic!("wrong kind {e:?}")
    };
    assert_eq!(found, &format!("\"{}…\"", "x".repeat(40)));

    let e = fail(&with_line(5, "    0    0.000000    0.500000    0.000000"));
    assert_eq!(
        e.to_string(),
        "synthetic.cube:5: bad point count of axis 2 (expected non-zero), found 0"
    );
}

#[test]
fn line_numbers_with_crlf_and_small_buffers() {
    let text = with_line(9, "  5.0 6.0 nan 8.0").replace('\n', "\r\n");
    for cap in [1, 2, 3, 5, 8, 13, 4096] {
        let e = parse_with_buffer(text.as_bytes(), cap).expect_err("nan");
        assert_eq!(e.line, Some(9), "capacity {cap}");
        assert!(
            matches!(e.kind, CubeErrorKind::NotFinite { .. }),
            "capacity {cap}: {e}"
        );
    }
    let text = format!(
        "{}\r\n 9.0\r\n",
        join(&lines()).replace('\n', "\r\n").trim_end()
    );
    for cap in [1, 2, 3, 5, 8, 13, 4096] {
        let e = parse_with_buffer(text.as_bytes(), cap).expect_err("trailing");
        assert_eq!(e.line, Some(10), "capacity {cap}");
        assert!(
            matches!(e.kind, CubeErrorKind::TrailingData { .. }),
            "capacity {cap}: {e}"
        );
    }
}
