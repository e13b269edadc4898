//! Which reader a file needs, from its content rather than its name.

use crate::cube::open_text;
use std::io::{BufRead, Read};
use std::path::Path;

/// The kinds of file the crate reads.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum FileFormat {
    /// A volumetric cube grid (its first line is free text, so this is also the fallback).
    Cube,
    /// A molden file: Gaussian basis and molecular-orbital coefficients.
    Molden,
}

/// Lines looked at before deciding (molden files open with their section tag; a cube file's
/// first two lines are comments).
const SNIFF_LINES: usize = 4;

/// The format of `path` (plain or gzip): [`FileFormat::Molden`] when its first non-blank line
/// is the `[Molden Format]` tag (any case), [`FileFormat::Cube`] otherwise.
pub fn sniff_format(path: &Path) -> std::io::Result<FileFormat> {
    let (reader, _) = open_text(path)?;
    let mut line = Vec::new();
    let mut reader = Read::take(reader, 64 * 1024);
    for _ in 0..SNIFF_LINES {
        line.clear();
        if reader.read_until(b'\n', &mut line)? == 0 {
            break;
        }
        let text = String::from_utf8_lossy(&line);
        let text = text.trim();
        if text.is_empty() {
            continue;
        }
        return Ok(if text.to_ascii_lowercase().starts_with("[molden format]") { FileFormat::Molden } else { FileFormat::Cube });
    }
    Ok(FileFormat::Cube)
}
