//! Header of a cube file: read line by line, each line split into fields with nom.

use std::io::{BufRead, ErrorKind};
use std::path::Path;

use super::{
    CubeAtom, CubeAxis, CubeError, CubeErrorKind, CubeHeader, LengthUnit, MAX_ATOMS,
    MAX_HEADER_LINE_BYTES, MAX_ORBITALS, MAX_VALUES_PER_POINT,
};
use crate::fields::{Fields, LineErrors};

/// A parsed header and the number of bytes it occupied in the (decompressed) input.
pub(crate) struct ParsedHeader {
    pub header: CubeHeader,
    pub bytes: u64,
}

/// Reads the header from `reader`, leaving it positioned at the first data line.
pub(crate) fn parse_header<R: BufRead>(
    reader: &mut R,
    src: &Path,
) -> Result<ParsedHeader, CubeError> {
    let mut lines = Lines {
        reader,
        src,
        line: 0,
        bytes: 0,
    };

    let (_, first) = lines.next("the first comment line")?;
    let (_, second) = lines.next("the second comment line")?;
    let comments = [comment_text(&first), comment_text(&second)];

    // Line 3: atom count, origin, optional values-per-point count.
    let (no, text) = lines.next("the line with the atom count and origin")?;
    let mut f = Fields::new(src, no, &text);
    let atom_count = f.int("the atom count")?;
    let origin = [
        f.float("origin x")?,
        f.float("origin y")?,
        f.float("origin z")?,
    ];
    let nval = f.opt_int("the number of values per point")?;
    f.finish("the origin")?;
    if atom_count.unsigned_abs() > MAX_ATOMS {
        return Err(f.bad_count(
            format!("atom count (expected at most {MAX_ATOMS} in absolute value)"),
            atom_count,
        ));
    }
    let atom_line = no;

    // Lines 4-6: axes. The sign of the point counts selects the length unit.
    let mut axes = [CubeAxis {
        points: 0,
        step: [0.0; 3],
    }; 3];
    let mut first_sign = 0i64;
    for (k, axis) in axes.iter_mut().enumerate() {
        let (no, text) = lines.next(&format!("the line of axis {}", k + 1))?;
        let mut f = Fields::new(src, no, &text);
        let count = f.int(&format!("the point count of axis {}", k + 1))?;
        let step = [f.float("step x")?, f.float("step y")?, f.float("step z")?];
        f.finish("the step vector")?;
        if count == 0 {
            return Err(f.bad_count(
                format!("point count of axis {} (expected non-zero)", k + 1),
                count,
            ));
        }
        if k == 0 {
            first_sign = count.signum();
        } else if count.signum() != first_sign {
            return Err(f.error(CubeErrorKind::MixedUnits));
        }
        let points = usize::try_from(count.unsigned_abs()).map_err(|_| {
            f.bad_count(
                format!(
                    "point count of axis {} (expected one addressable on this machine)",
                    k + 1
                ),
                count,
            )
        })?;
        *axis = CubeAxis { points, step };
    }
    let unit = if first_sign > 0 {
        LengthUnit::Bohr
    } else {
        LengthUnit::Angstrom
    };

    // Atom lines. The count was bounded above, so the vector growth is bounded too.
    let n_atoms = atom_count.unsigned_abs();
    let mut atoms = Vec::new();
    for a in 1..=n_atoms {
        let (no, text) = lines.next(&format!("atom line {a} of {n_atoms}"))?;
        let mut f = Fields::new(src, no, &text);
        let z = f.int("the atomic number")?;
        let atomic_number = i32::try_from(z)
            .map_err(|_| f.bad_count("atomic number (expected a 32-bit integer)".to_string(), z))?;
        let charge = f.float("the nuclear charge")?;
        let position = [f.float("atom x")?, f.float("atom y")?, f.float("atom z")?];
        f.finish("the atom position")?;
        atoms.push(CubeAtom {
            atomic_number,
            charge,
            position,
        });
    }

    // A negative atom count announces an orbital-index list; its length is then the number of
    // values per point. The optional count on line 3 is then ignored: writers leave it at 1
    // (so does the shared water sample, samples/water/occupied.cube.gz).
    let (orbital_ids, values_per_point) = if atom_count < 0 {
        let ids = read_orbital_list(&mut lines)?;
        let m = ids.len();
        (Some(ids), m)
    } else {
        let n = nval.unwrap_or(1);
        if !(1..=MAX_VALUES_PER_POINT as i64).contains(&n) {
            let what = format!("number of values per point (expected 1 to {MAX_VALUES_PER_POINT})");
            return Err(CubeError::new(
                src,
                Some(atom_line),
                CubeErrorKind::BadCount { what, value: n },
            ));
        }
        // In range 1..=MAX_VALUES_PER_POINT, so the conversion cannot fail.
        (None, usize::try_from(n).unwrap_or(1))
    };

    let header = CubeHeader {
        comments,
        origin,
        axes,
        unit,
        atoms,
        orbital_ids,
        values_per_point,
        data_start_line: lines.line + 1,
    };
    Ok(ParsedHeader {
        header,
        bytes: lines.bytes,
    })
}

/// Reads the orbital count and the indices, which may wrap over several lines.
fn read_orbital_list<R: BufRead>(lines: &mut Lines<'_, R>) -> Result<Vec<i64>, CubeError> {
    let src = lines.src;
    let (no, text) = lines.next("the orbital count")?;
    let mut f = Fields::new(src, no, &text);
    let m = f.int("the orbital count")?;
    if !(1..=MAX_ORBITALS as i64).contains(&m) {
        return Err(f.bad_count(format!("orbital count (expected 1 to {MAX_ORBITALS})"), m));
    }
    let m = m.unsigned_abs();
    // Each index with the line it is on.
    let mut ids = Vec::new();
    take_ids(&mut f, &mut ids, m)?;
    while (ids.len() as u64) < m {
        let (no, text) = lines.next(&format!("orbital index {} of {m}", ids.len() + 1))?;
        let mut f = Fields::new(src, no, &text);
        take_ids(&mut f, &mut ids, m)?;
    }
    Ok(ids.into_iter().map(|(id, _)| id).collect())
}

/// Takes orbital indices (with their line) from one line until the list is complete or the line
/// ends. An index listed before is refused: which values would be that orbital's?
fn take_ids(f: &mut Fields<'_, CubeError>, ids: &mut Vec<(i64, usize)>, m: u64) -> Result<(), CubeError> {
    while (ids.len() as u64) < m {
        if f.at_end() {
            return Ok(());
        }
        let id = f.int(&format!("orbital index {} of {m}", ids.len() + 1))?;
        if let Some(&(_, first_line)) = ids.iter().find(|(k, _)| *k == id) {
            return Err(CubeError::new(f.src(), Some(f.line()), CubeErrorKind::RepeatedOrbital { index: id, first_line }));
        }
        ids.push((id, f.line()));
    }
    f.finish(&format!("the {m} orbital indices"))
}

/// Comment line as text; invalid UTF-8 is replaced rather than rejected (it is free text).
fn comment_text(line: &[u8]) -> String {
    String::from_utf8_lossy(line).into_owned()
}

/// Line source for the header: counts lines and bytes, bounds line length.
struct Lines<'a, R> {
    reader: &'a mut R,
    src: &'a Path,
    /// Number of lines read so far (= 1-based number of the last line read).
    line: usize,
    /// Bytes consumed so far, terminators included.
    bytes: u64,
}

impl<R: BufRead> Lines<'_, R> {
    /// Reads the next line without its LF or CRLF terminator; `expected` describes it for the
    /// error raised at end of input. Returns the line's 1-based number and its bytes.
    fn next(&mut self, expected: &str) -> Result<(usize, Vec<u8>), CubeError> {
        let number = self.line + 1;
        let mut buf = Vec::new();
        let mut any = false;
        loop {
            let avail = match self.reader.fill_buf() {
                Ok(a) => a,
                Err(e) if e.kind() == ErrorKind::Interrupted => continue,
                Err(e) => return Err(CubeError::new(self.src, Some(number), CubeErrorKind::Io(e))),
            };
            if avail.is_empty() {
                if !any {
                    let kind = CubeErrorKind::UnexpectedEnd {
                        expected: expected.to_string(),
                    };
                    return Err(CubeError::new(self.src, Some(number), kind));
                }
                break;
            }
            any = true;
            let (take, done) = match avail.iter().position(|&b| b == b'\n') {
                Some(i) => (i + 1, true),
                None => (avail.len(), false),
            };
            // Allow the terminator on top of the limit.
            if buf.len() + take > MAX_HEADER_LINE_BYTES + 2 {
                let kind = CubeErrorKind::LineTooLong {
                    limit: MAX_HEADER_LINE_BYTES,
                };
                return Err(CubeError::new(self.src, Some(number), kind));
            }
            buf.extend_from_slice(avail.get(..take).unwrap_or(avail));
            self.reader.consume(take);
            self.bytes += take as u64;
            if done {
                break;
            }
        }
        self.line = number;
        if buf.last() == Some(&b'\n') {
            buf.pop();
            if buf.last() == Some(&b'\r') {
                buf.pop();
            }
        }
        Ok((number, buf))
    }
}

/// Whitespace inside a header line: blanks and tabs (the terminator has been stripped).
fn is_blank(c: u8) -> bool {
    c == b' ' || c == b'\t'
}

/// Header errors name the cube file and line.
impl LineErrors for CubeError {
    fn is_blank(b: u8) -> bool {
        is_blank(b)
    }

    fn syntax(src: &Path, line: usize, expected: String, found: String) -> Self {
        CubeError::new(src, Some(line), CubeErrorKind::Syntax { expected, found })
    }

    fn not_finite(src: &Path, line: usize, found: String) -> Self {
        CubeError::new(src, Some(line), CubeErrorKind::NotFinite { found })
    }
}

impl Fields<'_, CubeError> {
    fn error(&self, kind: CubeErrorKind) -> CubeError {
        CubeError::new(self.src(), Some(self.line()), kind)
    }

    fn bad_count(&self, what: String, value: i64) -> CubeError {
        self.error(CubeErrorKind::BadCount { what, value })
    }
}
