//! Which reader a file needs, from its content rather than its name.

use crate::cube::error::excerpt;
use crate::cube::number::parse_token;
use crate::cube::open_text;
use crate::fields::integer_text;
use std::io::{BufRead, Read};
use std::path::Path;

/// The kinds of file the crate reads, and what is left over.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum FileFormat {
    /// A volumetric cube grid: line 3 is an integer atom count and three numbers (the origin,
    /// optionally followed by the values per point), lines 4 to 6 an integer and three numbers.
    Cube,
    /// A molden file: its first non-blank line is the `[Molden Format]` tag.
    Molden,
    /// A Gaussian formatted checkpoint: line 3 is a section header (name in columns 1–40,
    /// then `I`, `R`, `C`, `H` or `L` and a value or `N=` and a count).
    Fchk,
    /// An AIMPAC wavefunction file: line 2 starts `GAUSSIAN` and names the counts of
    /// `MOL ORBITALS`, `PRIMITIVES` and `NUCLEI`.
    Wfn,
    /// An AIM extended wavefunction file: its first non-blank line is a tag `<Name>`.
    Wfx,
    /// None of these; `start` describes the first non-blank line (a quoted excerpt, or
    /// `an empty file`) for messages such as "not a file sixray reads (…); it starts with …".
    Unknown {
        /// Description of how the file starts.
        start: String,
    },
}

impl FileFormat {
    /// The formats recognised, as a message lists them.
    pub const READ: &'static str = "cube, molden, fchk, wfn, wfx";

    /// Short lower-case name (`cube`, `molden`, `fchk`, `wfn`, `wfx`, `unknown`).
    pub fn name(&self) -> &'static str {
        match self {
            FileFormat::Cube => "cube",
            FileFormat::Molden => "molden",
            FileFormat::Fchk => "fchk",
            FileFormat::Wfn => "wfn",
            FileFormat::Wfx => "wfx",
            FileFormat::Unknown { .. } => "unknown",
        }
    }
}

/// Lines looked at before deciding (a cube's header needs six).
const SNIFF_LINES: usize = 6;

/// Bytes looked at before deciding.
const SNIFF_BYTES: u64 = 64 * 1024;

/// The format of `path` (plain or gzip), from its first lines (see [`FileFormat`] for what
/// each needs); [`FileFormat::Unknown`] when none fits. Only I/O errors are errors.
pub fn sniff_format(path: &Path) -> std::io::Result<FileFormat> {
    let (reader, _) = open_text(path)?;
    let mut reader = Read::take(reader, SNIFF_BYTES);
    let mut lines: Vec<Vec<u8>> = Vec::new();
    for _ in 0..SNIFF_LINES {
        let mut line = Vec::new();
        if reader.read_until(b'\n', &mut line)? == 0 {
            break;
        }
        while matches!(line.last(), Some(b'\n' | b'\r')) {
            line.pop();
        }
        lines.push(line);
    }
    Ok(sniff_lines(&lines))
}

/// Blank-separated words of a line.
fn words(line: &[u8]) -> Vec<&[u8]> {
    line.split(|b| b.is_ascii_whitespace()).filter(|w| !w.is_empty()).collect()
}

fn is_int(w: &[u8]) -> bool {
    integer_text(w).is_ok()
}

fn is_number(w: &[u8]) -> bool {
    parse_token(w).is_ok()
}

/// An integer and three numbers (and, on a cube's line 3, optionally one more integer).
fn count_and_vector(line: &[u8], extra: bool) -> bool {
    let w = words(line);
    let n = w.len();
    (n == 4 || (extra && n == 5 && is_int(w[4])))
        && is_int(w[0])
        && w[1..4].iter().all(|t| is_number(t))
}

/// Decides from the first lines (terminators removed).
pub(crate) fn sniff_lines(lines: &[Vec<u8>]) -> FileFormat {
    let Some(first) = lines.iter().find(|l| !l.trim_ascii().is_empty()) else {
        return FileFormat::Unknown { start: "an empty file".to_string() };
    };
    let first = first.trim_ascii();
    if first.to_ascii_lowercase().starts_with(b"[molden format]") {
        return FileFormat::Molden;
    }
    if first.starts_with(b"<") && first.ends_with(b">") && first.len() > 2 {
        return FileFormat::Wfx;
    }
    let line = |k: usize| lines.get(k).map(Vec::as_slice);
    if let Some(second) = line(1) {
        let has = |s: &[u8]| second.windows(s.len()).any(|w| w == s);
        if second.trim_ascii_start().starts_with(b"GAUSSIAN")
            && has(b"MOL ORBITALS")
            && has(b"PRIMITIVES")
            && has(b"NUCLEI")
        {
            return FileFormat::Wfn;
        }
    }
    if line(2).is_some_and(fchk_header) {
        return FileFormat::Fchk;
    }
    // A cube: line 3 decides; lines 4 to 6 must agree where present (a truncated cube is
    // still a cube, for its reader to report).
    if line(2).is_some_and(|l| count_and_vector(l, true)) && (3..6).all(|k| line(k).is_none_or(|l| count_and_vector(l, false))) {
        return FileFormat::Cube;
    }
    FileFormat::Unknown { start: excerpt(first) }
}

/// An fchk section header: a name in columns 1–40, then a type letter and a value or `N=`
/// and a count.
fn fchk_header(line: &[u8]) -> bool {
    let (Some(name), Some(rest)) = (line.get(..40), line.get(40..)) else { return false };
    let w = words(rest);
    let typed = w.first().is_some_and(|t| matches!(*t, b"I" | b"R" | b"C" | b"H" | b"L"));
    let shape = w.len() == 2 || (w.len() == 3 && w[1] == b"N=" && is_int(w[2]));
    !name.trim_ascii().is_empty() && typed && shape
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sniff(text: &str) -> FileFormat {
        let lines: Vec<Vec<u8>> = text.lines().take(SNIFF_LINES).map(|l| l.as_bytes().to_vec()).collect();
        sniff_lines(&lines)
    }

    #[test]
    fn headers_decide() {
        let fchk = "t\nSP RHF STO-3G\nNumber of atoms                            I                3\n";
        assert_eq!(sniff(fchk), FileFormat::Fchk);
        let wfn = " t\nGAUSSIAN              5 MOL ORBITALS     21 PRIMITIVES        3 NUCLEI\n";
        assert_eq!(sniff(wfn), FileFormat::Wfn);
        assert_eq!(sniff("\n<Title>\nx\n</Title>\n"), FileFormat::Wfx);
        let cube = "c1\nc2\n  2 0.0 0.0 0.0\n 3 0.1 0 0\n 3 0 0.1 0\n 3 0 0 0.1\n";
        assert_eq!(sniff(cube), FileFormat::Cube);
        assert_eq!(sniff("c1\nc2\n  -2 0.0 0.0 0.0 1\n"), FileFormat::Cube);
    }

    #[test]
    fn anything_else_is_described() {
        assert_eq!(sniff(""), FileFormat::Unknown { start: "an empty file".into() });
        assert_eq!(sniff("  \nhello world\n"), FileFormat::Unknown { start: "\"hello world\"".into() });
        // A cube header with a broken step line is no cube.
        let broken = "c1\nc2\n  2 0.0 0.0 0.0\n 3 0.1 0\n";
        assert!(matches!(sniff(broken), FileFormat::Unknown { .. }));
    }
}
