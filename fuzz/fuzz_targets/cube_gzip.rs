//! Cube files through the path-taking readers: the input as a file (gzip-compressed bytes
//! are decompressed, so damaged streams reach the decoder) and, for text, compressed with
//! gzip, which must read exactly as the text from memory.
#![no_main]

use std::io::Read;
use std::path::Path;

use libfuzzer_sys::fuzz_target;
use sixray_fuzz::{check_error, gzip, scratch_file};
use sixray_parsers::{ReadParams, parse_cube, read_cube, read_cube_header};

/// The two bytes that open every gzip member.
const GZIP_MAGIC: [u8; 2] = [0x1f, 0x8b];

fuzz_target!(|data: &[u8]| {
    let params = ReadParams::default();
    let raw = scratch_file("input.cube", data);
    let from_file = read_cube(&raw, &params);
    let compressed = data.starts_with(&GZIP_MAGIC);
    // Lines are counted in the text the reader saw: for gzip input, what decompresses.
    let text = if compressed { gunzip_prefix(data) } else { data.to_vec() };
    if let Err(e) = &from_file {
        check_error(&raw, e.line, e, &text);
    }
    if let Err(e) = read_cube_header(&raw) {
        check_error(&raw, e.line, &e, &text);
    }
    if compressed {
        return;
    }
    let memory = parse_cube(data, Path::new("memory.cube"), Some(data.len() as u64), &params);
    let packed = scratch_file("input.cube.gz", &gzip(data));
    let unpacked = read_cube(&packed, &params);
    match (&memory, &from_file, &unpacked) {
        (Ok(a), Ok(b), Ok(c)) => assert!(a == b && a == c, "file or gzip changed the values"),
        (Err(a), Err(b), Err(_)) => {
            // The file has the memory's size limit, so it fails the same way; the gzip limit
            // (compressed size times deflate's largest expansion) is looser and may let the
            // reader go on to a later error.
            assert_eq!((a.line, a.kind.to_string()), (b.line, b.kind.to_string()));
        }
        (a, b, c) => panic!("file or gzip changed the outcome: {a:?} / {b:?} / {c:?}"),
    }
});

/// What decompresses of `data` before the first error of the stream.
fn gunzip_prefix(data: &[u8]) -> Vec<u8> {
    let mut text = Vec::new();
    let _ = flate2::read::MultiGzDecoder::new(data).read_to_end(&mut text);
    text
}
