//! Helpers shared by the integration tests: synthetic cube texts, gzip, parsing shortcuts.
#![allow(dead_code)]

use std::io::{BufReader, Write};
use std::path::Path;

use sixray_parsers::{CubeError, CubeFile, ReadParams, parse_cube};

/// Name given to in-memory inputs; appears in error messages.
pub const SRC: &str = "synthetic.cube";

/// Parses in-memory text with its true length as the size limit.
pub fn parse(text: &[u8]) -> Result<CubeFile, CubeError> {
    parse_cube(
        text,
        Path::new(SRC),
        Some(text.len() as u64),
        &ReadParams::default(),
    )
}

/// Same, through a reader whose buffer holds only `capacity` bytes, so that numbers are cut
/// by buffer boundaries.
pub fn parse_with_buffer(text: &[u8], capacity: usize) -> Result<CubeFile, CubeError> {
    let reader = BufReader::with_capacity(capacity, text);
    parse_cube(
        reader,
        Path::new(SRC),
        Some(text.len() as u64),
        &ReadParams::default(),
    )
}

/// One gzip member holding `bytes`.
pub fn gzip(bytes: &[u8]) -> Vec<u8> {
    let mut enc = flate2::write::GzEncoder::new(Vec::new(), flate2::Compression::default());
    enc.write_all(bytes).expect("gzip into memory");
    enc.finish().expect("gzip into memory")
}

/// `v` in the fixed-width `%13.5E` style (common practice among cube writers): ` -4.92822E-08`.
pub fn fortran_e(v: f64) -> String {
    let s = format!("{v:.5E}");
    let (mantissa, exp) = s
        .split_once('E')
        .expect("Rust's {:E} always has an exponent");
    let exp: i32 = exp.parse().expect("integer exponent");
    let sign = if exp < 0 { '-' } else { '+' };
    format!("{:>13}", format!("{mantissa}E{sign}{:02}", exp.abs()))
}

/// Deterministic, varied test values (signs and magnitudes over ten decades).
pub fn synthetic_value(i: usize) -> f64 {
    let x = i as f64;
    (x * 0.377).sin() * 10f64.powi(-((i % 11) as i32))
}

/// Tiny deterministic pseudo-random generator (xorshift64*) for the robustness tests.
pub struct Rng(pub u64);

impl Rng {
    pub fn next(&mut self) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }

    pub fn below(&mut self, n: usize) -> usize {
        (self.next() % n as u64) as usize
    }

    /// `seed` with one to four random edits (a byte replaced, inserted or deleted), the bytes
    /// mostly from `alphabet` (characters the format gives meaning to) and sometimes any byte.
    pub fn mutate(&mut self, seed: &[u8], alphabet: &[u8]) -> Vec<u8> {
        let mut bytes = seed.to_vec();
        for _ in 0..1 + self.below(4) {
            let at = self.below(bytes.len() + 1);
            let b = if self.below(4) == 0 { self.next() as u8 } else { alphabet[self.below(alphabet.len())] };
            match self.below(3) {
                0 if at < bytes.len() => bytes[at] = b,
                1 => bytes.insert(at, b),
                _ if at < bytes.len() => {
                    bytes.remove(at);
                }
                _ => {}
            }
        }
        bytes
    }
}
