//! Round trips of small synthetic cube texts: what is written is what comes back.

use std::io::Write;
use std::path::Path;

use crate::common::{SRC, gzip, parse, parse_with_buffer};
use sixray_parsers::{
    CubeAtom, LengthUnit, ReadParams, parse_cube_header, read_cube, read_cube_header,
};

/// Values written six per line: (i+1)/8 with alternating sign.
fn eighths(n: usize) -> (String, Vec<f64>) {
    let values: Vec<f64> = (0..n)
        .map(|i| (i + 1) as f64 * 0.125 * if i % 2 == 0 { 1.0 } else { -1.0 })
        .collect();
    let mut text = String::new();
    for (i, v) in values.iter().enumerate() {
        text.push_str(&format!(" {v:12.5E}"));
        if i % 6 == 5 {
            text.push('\n');
        }
    }
    text.push('\n');
    (text, values)
}

fn single_orbital_text() -> (String, Vec<f64>) {
    let (data, values) = eighths(2 * 3 * 4);
    let text = format!(
        "Synthetic single orbital\n free text  with  spaces \n\
         \x20   2   -1.000000   -2.000000   -3.000000\n\
         \x20   2    0.500000    0.000000    0.000000\n\
         \x20   3    0.000000    0.400000    0.000000\n\
         \x20   4    0.000000    0.000000    0.250000\n\
         \x20   8    8.000000    0.000000    0.000000    0.221665\n\
         \x20   1    0.000000    0.000000    1.430901   -0.886659\n{data}"
    );
    (text, values)
}

#[test]
fn single_orbital() {
    let (text, values) = single_orbital_text();
    let cube = parse(text.as_bytes()).expect("valid text");
    let h = &cube.header;
    assert_eq!(
        h.comments,
        [
            "Synthetic single orbital".to_string(),
            " free text  with  spaces ".to_string()
        ]
    );
    assert_eq!(h.origin, [-1.0, -2.0, -3.0]);
    assert_eq!(h.shape(), [2, 3, 4]);
    assert_eq!(h.axes[0].step, [0.5, 0.0, 0.0]);
    assert_eq!(h.axes[1].step, [0.0, 0.4, 0.0]);
    assert_eq!(h.axes[2].step, [0.0, 0.0, 0.25]);
    assert_eq!(h.unit, LengthUnit::Bohr);
    assert_eq!(
        h.atoms,
        vec![
            CubeAtom {
                atomic_number: 8,
                charge: 8.0,
                position: [0.0, 0.0, 0.221665]
            },
            CubeAtom {
                atomic_number: 1,
                charge: 0.0,
                position: [0.0, 1.430901, -0.886659]
            },
        ]
    );
    assert_eq!(h.orbital_ids, None);
    assert_eq!(h.values_per_point, 1);
    assert_eq!(h.data_start_line, 9);
    assert_eq!(h.point_count(), Some(24));
    assert_eq!(h.value_count(), Some(24));
    assert_eq!(cube.fields, vec![values.clone()]);
    // Third axis fastest: point [1, 2, 3] is value (1*3 + 2)*4 + 3 = 23.
    assert_eq!(cube.get(0, [1, 2, 3]), Some(values[23]));
    assert_eq!(cube.get(0, [0, 1, 0]), Some(values[4]));
    assert_eq!(cube.get(0, [1, 0, 0]), Some(values[12]));
    assert_eq!(cube.get(0, [2, 0, 0]), None);
    assert_eq!(cube.get(1, [0, 0, 0]), None);
}

#[test]
fn file_on_disk_matches_in_memory() {
    let (text, _) = single_orbital_text();
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("grid.cube");
    std::fs::write(&path, &text).expect("write");
    let from_disk = read_cube(&path, &ReadParams::default()).expect("valid file");
    assert_eq!(from_disk, parse(text.as_bytes()).expect("valid text"));
    assert_eq!(
        read_cube_header(&path).expect("valid header"),
        from_disk.header
    );
}

fn multi_orbital_text(index_lines: &str) -> (String, Vec<Vec<f64>>) {
    // 2 x 1 x 3 points, 12 orbitals; value of orbital k at point p is 100p + k + 0.5.
    let (points, m) = (6, 12);
    let mut fields = vec![Vec::new(); m];
    let mut data = String::new();
    let mut written = 0;
    for p in 0..points {
        for (k, field) in fields.iter_mut().enumerate() {
            let v = (100 * p + k) as f64 + 0.5;
            field.push(v);
            data.push_str(&format!(" {v:.1}"));
            written += 1;
            if written % 7 == 0 {
                data.push('\n');
            }
        }
    }
    let text = format!(
        "several orbitals\n\n\
         \x20  -1    0.000000    0.000000    0.000000    1\n\
         \x20   2    0.200000    0.000000    0.000000\n\
         \x20   1    0.000000    0.200000    0.000000\n\
         \x20   3    0.000000    0.000000    0.200000\n\
         \x20   6    6.000000    0.000000    0.000000    0.000000\n{index_lines}{data}\n"
    );
    (text, fields)
}

#[test]
fn multi_orbital_with_wrapped_index_list() {
    let ids: Vec<i64> = (3..15).collect();
    let layouts = [
        // Count then ten indices per line.
        "   12    3    4    5    6    7    8    9   10   11   12\n   13   14\n",
        // Count alone on its line, then indices wrapped irregularly, a blank line in between.
        "12\n3 4 5 6 7\n\n8 9 10\n11 12 13 14\n",
        // Everything on one line, tabs as separators.
        "12\t3\t4\t5\t6\t7\t8\t9\t10\t11\t12\t13\t14\n",
    ];
    for (layout, data_start) in layouts.iter().zip([10, 13, 9]) {
        let (text, fields) = multi_orbital_text(layout);
        let cube = parse(text.as_bytes()).unwrap_or_else(|e| panic!("{e}\n{text}"));
        let h = &cube.header;
        assert_eq!(h.orbital_ids.as_deref(), Some(&ids[..]));
        // The NVAL of 1 on line 3 is ignored when an orbital list is present.
        assert_eq!(h.values_per_point, 12);
        assert_eq!(h.comments[1], "");
        assert_eq!(h.data_start_line, data_start);
        assert_eq!(h.atoms.len(), 1);
        assert_eq!(cube.fields, fields);
        assert_eq!(cube.get(11, [1, 0, 2]), Some(511.5));
    }
}

#[test]
fn values_per_point_with_positive_atom_count() {
    let text = "nval three\nno atoms\n    0 0.0 0.0 0.0 3\n    1 1.0 0.0 0.0\n    2 0.0 1.0 0.0\n    2 0.0 0.0 1.0\n\
                0 1 2 10 11 12\n20 21 22 30 31 32\n";
    let cube = parse(text.as_bytes()).expect("valid text");
    assert_eq!(cube.header.orbital_ids, None);
    assert_eq!(cube.header.values_per_point, 3);
    assert!(cube.header.atoms.is_empty());
    assert_eq!(cube.header.data_start_line, 7);
    assert_eq!(
        cube.fields,
        vec![
            vec![0.0, 10.0, 20.0, 30.0],
            vec![1.0, 11.0, 21.0, 31.0],
            vec![2.0, 12.0, 22.0, 32.0]
        ]
    );
}

#[test]
fn angstrom_when_counts_are_negative() {
    let text = "angstrom grid\n\n    1   -2.5   -2.5   -2.5\n   -2    0.1    0.0    0.0\n   -2    0.0    0.1    0.0\n\
                \x20  -2    0.0    0.0    0.1\n    1    1.0    0.3   -0.2    0.7\n1 2 3 4 5 6 7 8\n";
    let cube = parse(text.as_bytes()).expect("valid text");
    let h = &cube.header;
    assert_eq!(h.unit, LengthUnit::Angstrom);
    assert_eq!(h.shape(), [2, 2, 2]);
    // Nothing converted: numbers exactly as written.
    assert_eq!(h.origin, [-2.5, -2.5, -2.5]);
    assert_eq!(h.axes[0].step, [0.1, 0.0, 0.0]);
    assert_eq!(h.atoms[0].position, [0.3, -0.2, 0.7]);
    assert_eq!(cube.fields[0], vec![1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0]);
}

#[test]
fn non_orthogonal_axes_kept_as_written() {
    let text = "skewed\ncell\n    1 0.0 0.0 0.0\n    2  0.30  0.10  0.00\n    2 -0.05  0.28  0.02\n    2  0.01  0.02  0.25\n\
                \x20   1 1.0 0.0 0.0 0.0\n1 2 3 4 5 6 7 8\n";
    let h = parse(text.as_bytes()).expect("valid text").header;
    assert_eq!(h.axes[0].step, [0.30, 0.10, 0.00]);
    assert_eq!(h.axes[1].step, [-0.05, 0.28, 0.02]);
    assert_eq!(h.axes[2].step, [0.01, 0.02, 0.25]);
}

fn spellings_text() -> (String, Vec<f64>) {
    let text = "spellings\nD exponents in the header too\n\
                \x20   1\t-1.0D+00  2.5d-01   0.0\n\
                \x20   2    0.5    0    0\n    2 0 0.5 0\n    4 0 0 0.5\n\
                \x20 1   1.0  0 0 0\n\
                1.0E-05 -1.23456e+00 0.5\n1e-300\t-0.0 .5 +2 3.\n1.5D-03 -2.5d+02 7.25E+2 0\n 1E5\n\
                \x20\x20 4.9E-324\n-7\n\n-1.25D0"
        .to_string();
    let values = vec![
        1.0e-5, -1.23456, 0.5, 1e-300, -0.0, 0.5, 2.0, 3.0, 1.5e-3, -250.0, 725.0, 0.0, 1e5,
        4.9e-324, -7.0, -1.25,
    ];
    (text, values)
}

#[test]
fn varied_float_spellings_and_line_lengths() {
    // 2 x 2 x 4 = 16 points; the last value ends the file without a line break.
    let (text, values) = spellings_text();
    let cube = parse(text.as_bytes()).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(cube.header.origin, [-1.0, 0.25, 0.0]);
    assert_eq!(cube.fields[0].len(), 16);
    for (i, (got, want)) in cube.fields[0].iter().zip(&values).enumerate() {
        assert_eq!(got.to_bits(), want.to_bits(), "value {i}: {got} vs {want}");
    }
}

#[test]
fn every_buffer_size_gives_the_same_result() {
    // Small buffers cut numbers, CRLF pairs and header lines at every possible position.
    let inputs = [
        single_orbital_text().0,
        multi_orbital_text("12 3 4 5 6 7 8 9 10 11 12 13 14\n").0,
        spellings_text().0,
    ];
    for text in inputs {
        let whole = parse(text.as_bytes()).expect("valid text");
        let crlf = text.replace('\n', "\r\n");
        for cap in (1..=17).chain([64, 4096]) {
            assert_eq!(
                parse_with_buffer(text.as_bytes(), cap).expect("valid text"),
                whole,
                "capacity {cap}"
            );
            assert_eq!(
                parse_with_buffer(crlf.as_bytes(), cap).expect("valid text"),
                whole,
                "CRLF, capacity {cap}"
            );
        }
    }
}

#[test]
fn crlf_line_endings() {
    let (text, values) = single_orbital_text();
    let crlf = text.replace('\n', "\r\n");
    let cube = parse(crlf.as_bytes()).expect("valid text");
    assert_eq!(cube.header.comments[1], " free text  with  spaces ");
    assert_eq!(cube.header.data_start_line, 9);
    assert_eq!(cube.fields[0], values);
    assert_eq!(cube, parse(text.as_bytes()).expect("valid text"));
}

#[test]
fn gzip_detected_by_content_not_name() {
    let (text, _) = multi_orbital_text("12 3 4 5 6 7 8 9 10 11 12 13 14\n");
    let expected = parse(text.as_bytes()).expect("valid text");
    let dir = tempfile::tempdir().expect("tempdir");

    // Compressed, under a name without .gz.
    let packed = dir.path().join("packed.cube");
    std::fs::write(&packed, gzip(text.as_bytes())).expect("write");
    assert_eq!(
        read_cube(&packed, &ReadParams::default()).expect("valid gzip"),
        expected
    );
    assert_eq!(
        read_cube_header(&packed).expect("valid gzip"),
        expected.header
    );

    // Plain text under a .gz name.
    let plain = dir.path().join("plain.cube.gz");
    std::fs::write(&plain, &text).expect("write");
    assert_eq!(
        read_cube(&plain, &ReadParams::default()).expect("valid text"),
        expected
    );
}

#[test]
fn multi_member_gzip() {
    let (text, _) = single_orbital_text();
    let expected = parse(text.as_bytes()).expect("valid text");
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("members.cube.gz");
    // Split inside a number and inside the header: both members must be decoded.
    for cut in [20, 180, text.len() - 7] {
        let (a, b) = text.as_bytes().split_at(cut);
        let mut file = std::fs::File::create(&path).expect("create");
        file.write_all(&gzip(a)).expect("write");
        file.write_all(&gzip(b)).expect("write");
        drop(file);
        assert_eq!(
            read_cube(&path, &ReadParams::default()).expect("valid gzip"),
            expected,
            "cut at {cut}"
        );
    }
}

#[test]
fn empty_comments_zero_atoms_no_final_newline() {
    let text = "\n\n    0 0.0 0.0 0.0\n    1 1.0 0 0\n 1 0 1 0\n 1 0 0 1\n 42";
    let cube = parse(text.as_bytes()).expect("valid text");
    assert_eq!(cube.header.comments, [String::new(), String::new()]);
    assert!(cube.header.atoms.is_empty());
    assert_eq!(cube.fields, vec![vec![42.0]]);
}

#[test]
fn trailing_blank_space_is_fine() {
    let (text, values) = single_orbital_text();
    let padded = format!("{text}   \n\n\t\r\n  ");
    assert_eq!(
        parse(padded.as_bytes()).expect("valid text").fields[0],
        values
    );
}

#[test]
fn header_reader_stops_before_the_data() {
    // Garbage data: the header alone reads fine, the whole file does not.
    let (text, _) = single_orbital_text();
    let header_end = text.lines().take(8).map(|l| l.len() + 1).sum::<usize>();
    // Long enough to pass the size plausibility check (24 values need at least 47 bytes).
    let broken = format!("{}{}\n", &text[..header_end], "not numbers ".repeat(10));
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("broken.cube");
    std::fs::write(&path, &broken).expect("write");
    let header = read_cube_header(&path).expect("the header is fine");
    assert_eq!(header.data_start_line, 9);
    assert!(read_cube(&path, &ReadParams::default()).is_err());

    // parse_cube_header leaves the reader at the data.
    let mut reader = text.as_bytes();
    let h = parse_cube_header(&mut reader, Path::new(SRC), None).expect("valid header");
    assert_eq!(h.data_start_line, 9);
    assert!(reader.starts_with(b" "));
    assert_eq!(reader.len(), text.len() - header_end);
}
