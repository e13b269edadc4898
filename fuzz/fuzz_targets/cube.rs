//! Cube text from memory: the whole reader and the header reader, through a large buffer
//! and through a 7-byte one (numbers cut by refills), which must agree exactly.
#![no_main]

use std::io::BufReader;
use std::path::Path;

use libfuzzer_sys::fuzz_target;
use sixray_fuzz::{check_error, check_finite, line_count};
use sixray_parsers::cube::{MAX_ATOMS, MAX_ORBITALS, MAX_VALUES_PER_POINT};
use sixray_parsers::{CubeFile, ReadParams, parse_cube, parse_cube_header};

const SOURCE: &str = "fuzz.cube";

fuzz_target!(|data: &[u8]| {
    let src = Path::new(SOURCE);
    let size = Some(data.len() as u64);
    let params = ReadParams::default();
    let whole = parse_cube(data, src, size, &params);
    let small = parse_cube(BufReader::with_capacity(7, data), src, size, &params);
    let header = parse_cube_header(&mut &data[..], src, size);
    match (&whole, &small) {
        (Ok(a), Ok(b)) => assert_eq!(a, b, "buffer size changed the values"),
        (Err(a), Err(b)) => assert_eq!(a.to_string(), b.to_string(), "buffer size changed the error"),
        (a, b) => panic!("buffer size changed the outcome: {a:?} / {b:?}"),
    }
    match &whole {
        Ok(cube) => {
            consistent(cube, data);
            let h = header.as_ref().expect("the header of an accepted cube is accepted alone");
            assert_eq!(h, &cube.header, "the header reader disagrees");
        }
        Err(e) => check_error(src, e.line, e, data),
    }
    if let Err(e) = &header {
        check_error(src, e.line, e, data);
    }
});

/// One full-length field per value per point, finite values, counts within the documented
/// limits, the data after the header.
fn consistent(cube: &CubeFile, text: &[u8]) {
    let h = &cube.header;
    let points = h.point_count().expect("accepted headers do not overflow");
    assert!(points >= 1 && h.values_per_point >= 1);
    assert_eq!(cube.fields.len(), h.values_per_point);
    assert!(cube.fields.iter().all(|f| f.len() == points));
    check_finite(cube.fields.iter().flatten(), "a grid value");
    check_finite(h.origin.iter().chain(h.axes.iter().flat_map(|a| &a.step)), "origin or step");
    check_finite(h.atoms.iter().flat_map(|a| a.position.iter().chain([&a.charge])), "an atom");
    assert!(h.atoms.len() as u64 <= MAX_ATOMS);
    assert!(h.values_per_point as u64 <= MAX_VALUES_PER_POINT.max(MAX_ORBITALS));
    if let Some(ids) = &h.orbital_ids {
        assert_eq!(ids.len(), h.values_per_point);
    }
    // Six header lines and one per atom come before the data.
    assert!(h.data_start_line > 6 + h.atoms.len());
    assert!(h.data_start_line <= line_count(text), "data start on line {} of {}", h.data_start_line, line_count(text));
}
