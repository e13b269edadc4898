//! Reader for AIMPAC wavefunction (`.wfn`) files, plain or gzip-compressed: uncontracted
//! Cartesian Gaussian primitives and the orbitals' coefficients over them.
//!
//! Layout as accepted here (the fixed-column layout of the AIMPAC programs, as Gaussian and
//! PySCF's `tools/wfn_format.py` write it):
//!
//! - line 1: a title;
//! - line 2: `GAUSSIAN  n MOL ORBITALS  m PRIMITIVES  k NUCLEI` (integers may run into the
//!   words before them);
//! - k nucleus lines: `LABEL INDEX (CENTRE i) X Y Z CHARGE = Q`;
//! - `CENTRE ASSIGNMENTS` lines (one centre per primitive), then `TYPE ASSIGNMENTS` lines (one
//!   type number per primitive): after the 20-column keyword, integers three columns wide,
//!   which run together above 99 and are read by column;
//! - `EXPONENTS` lines (one per primitive, Fortran `D` exponents);
//! - per orbital a line `MO n … OCC NO = f  ORB. ENERGY = e` and m coefficients;
//! - `END DATA`, then optionally a line with `ENERGY =` and `VIRIAL(-V/T) =` (or `=` after
//!   `THE VIRIAL(-V/T)`); anything after that line (determinant lists of CI writers) is ignored.
//!
//! Numbers printed without a blank between them (`0.1D+01-0.2D+01`) are split at the sign.
//! Nothing here knows physics: positions are bohr by the format, coefficients multiply the
//! unnormalised primitives, type numbers come back as written.

use std::path::{Path, PathBuf};

use crate::cube::error::excerpt;
use crate::cube::number::{NumberError, parse_token};
use crate::fields::integer_text;
use crate::text::{
    TextError, TextErrorKind, blank_line, end_line, most_words, number_words, read_text, refuse_gzip,
    split_lines, text_error,
};

text_error! {
    /// A failure to read an AIMPAC wavefunction file: where it happened and what went wrong.
    WfnError
}

/// A whole wfn file, as written.
#[derive(Debug, Clone, PartialEq)]
pub struct WfnFile {
    /// The file it was read from (or the name given to [`parse_wfn`]).
    pub source: PathBuf,
    /// Line 1, trimmed.
    pub title: String,
    /// Nucleus lines, in file order.
    pub nuclei: Vec<WfnNucleus>,
    /// Centre of each primitive (1-based nucleus number, as written).
    pub centres: Vec<i64>,
    /// AIMPAC type number of each primitive (1 s, 2–4 p, 5–10 d, 11–20 f, 21–35 g, 36–56 h).
    pub types: Vec<i64>,
    /// Exponent of each primitive, bohr⁻² by the format.
    pub exponents: Vec<f64>,
    /// Orbitals, in file order.
    pub orbitals: Vec<WfnOrbital>,
    /// `ENERGY =` value of the line after `END DATA` (hartree by the format), if present.
    pub energy: Option<f64>,
    /// `VIRIAL(-V/T)` value of that line, if present.
    pub virial: Option<f64>,
}

/// One nucleus line.
#[derive(Debug, Clone, PartialEq)]
pub struct WfnNucleus {
    /// Label (element symbol), as written.
    pub label: String,
    /// Number inside `(CENTRE i)`.
    pub centre: i64,
    /// Position (bohr by the format).
    pub position: [f64; 3],
    /// `CHARGE =` value.
    pub charge: f64,
    /// 1-based line.
    pub line: usize,
}

/// One orbital.
#[derive(Debug, Clone, PartialEq)]
pub struct WfnOrbital {
    /// The number after `MO`, as written (unrestricted writers number β orbitals on from the
    /// basis size, so numbers may jump).
    pub number: i64,
    /// `OCC NO =` value.
    pub occupation: f64,
    /// `ORB. ENERGY =` value (hartree by the format).
    pub energy: f64,
    /// One coefficient per primitive.
    pub coefficients: Vec<f64>,
    /// 1-based line of the `MO` line.
    pub line: usize,
}

/// Reads a wfn file, gzip-compressed or not (recognised by its first two bytes, not its name).
pub fn read_wfn(path: &Path) -> Result<WfnFile, WfnError> {
    let bytes = read_text(path)?;
    parse_wfn(&bytes, path)
}

/// Columns of the keyword before the integers of the assignment lines.
const ASSIGNMENT_KEYWORD: usize = 20;

/// Width of one integer on the assignment lines.
const ASSIGNMENT_WIDTH: usize = 3;

/// Case-sensitive position of `needle` in `hay`.
fn find(hay: &[u8], needle: &[u8]) -> Option<usize> {
    hay.windows(needle.len()).position(|w| w == needle)
}

/// Parses uncompressed wfn text; `source` names it in errors.
pub fn parse_wfn(text: &[u8], source: &Path) -> Result<WfnFile, WfnError> {
    refuse_gzip::<WfnError>(text, source)?;
    Reader { src: source, lines: split_lines(text), at: 0, bytes: text.len() }.file()
}

struct Reader<'a> {
    src: &'a Path,
    lines: Vec<&'a [u8]>,
    /// Index of the next line (0-based; its number is `at + 1`).
    at: usize,
    bytes: usize,
}

impl<'a> Reader<'a> {
    fn syntax(&self, line: usize, expected: impl Into<String>, found: String) -> WfnError {
        WfnError::syntax_at(self.src, line, expected, found)
    }

    /// The next line, or an end-of-file error saying what was expected.
    fn next(&mut self, expected: &str) -> Result<(usize, &'a [u8]), WfnError> {
        match self.lines.get(self.at) {
            Some(&l) => {
                self.at += 1;
                Ok((self.at, l))
            }
            None => Err(WfnError::new(
                self.src,
                Some(end_line(&self.lines)),
                TextErrorKind::UnexpectedEnd { expected: expected.to_string() },
            )),
        }
    }

    /// The next non-blank line.
    fn next_content(&mut self, expected: &str) -> Result<(usize, &'a [u8]), WfnError> {
        loop {
            let (no, l) = self.next(expected)?;
            if !blank_line(l) {
                return Ok((no, l));
            }
        }
    }

    fn number(&self, no: usize, tok: &[u8], what: &str) -> Result<f64, WfnError> {
        parse_token(tok).map_err(|e| match e {
            NumberError::NotFinite => {
                WfnError::new(self.src, Some(no), TextErrorKind::NotFinite { found: excerpt(tok) })
            }
            NumberError::Syntax => self.syntax(no, format!("{what} (a number)"), excerpt(tok)),
        })
    }

    /// The integer written just before `keyword` on the header line.
    fn count_before(&self, no: usize, line: &[u8], keyword: &str) -> Result<i64, WfnError> {
        let expected = format!("the count before \"{keyword}\"");
        let Some(pos) = find(line, keyword.as_bytes()) else {
            return Err(self.syntax(
                no,
                format!("a header line \"GAUSSIAN n MOL ORBITALS m PRIMITIVES k NUCLEI\" ({keyword} is missing)"),
                excerpt(line),
            ));
        };
        let head = line[..pos].trim_ascii_end();
        let digits = head.len() - head.iter().rev().take_while(|b| b.is_ascii_digit()).count();
        let text = &head[digits..];
        std::str::from_utf8(text)
            .ok()
            .and_then(|s| s.parse::<i64>().ok())
            .ok_or_else(|| self.syntax(no, expected, excerpt(head)))
    }

    /// Checks a count from the header line against what the file can hold.
    fn bounded(&self, no: usize, value: i64, what: &str, room: usize) -> Result<usize, WfnError> {
        if value < 0 || value as u64 > room as u64 {
            return Err(WfnError::new(
                self.src,
                Some(no),
                TextErrorKind::BadCount {
                    what: format!("{what} (expected 0 to {room}, what the file can hold)"),
                    value,
                },
            ));
        }
        Ok(value as usize)
    }

    fn file(mut self) -> Result<WfnFile, WfnError> {
        let (_, title) = self.next("the title line")?;
        let title = String::from_utf8_lossy(title).trim().to_string();
        let (hno, head) = self.next("the line \"GAUSSIAN n MOL ORBITALS m PRIMITIVES k NUCLEI\"")?;
        if !head.trim_ascii_start().starts_with(b"GAUSSIAN") {
            return Err(self.syntax(
                hno,
                "\"GAUSSIAN n MOL ORBITALS m PRIMITIVES k NUCLEI\" (Gaussian primitives; Slater ones are not read)",
                excerpt(head.trim_ascii()),
            ));
        }
        let lines_left = self.lines.len() - self.at;
        let n_mo = self.count_before(hno, head, "MOL ORBITALS")?;
        let n_mo = self.bounded(hno, n_mo, "number of orbitals", lines_left)?;
        let n_prim = self.count_before(hno, head, "PRIMITIVES")?;
        let n_prim = self.bounded(hno, n_prim, "number of primitives", most_words(self.bytes))?;
        let n_nuc = self.count_before(hno, head, "NUCLEI")?;
        let n_nuc = self.bounded(hno, n_nuc, "number of nuclei", lines_left)?;

        let mut nuclei = Vec::with_capacity(n_nuc);
        for k in 0..n_nuc {
            let (no, line) = self.next_content(&format!("nucleus line {} of {n_nuc}", k + 1))?;
            nuclei.push(self.nucleus(no, line)?);
        }
        let centres = self.assignments(b"CENTRE ASSIGNMENTS", n_prim, "centre")?;
        let types = self.assignments(b"TYPE ASSIGNMENTS", n_prim, "type")?;
        let exponents = self.exponents(n_prim)?;
        let mut orbitals = Vec::with_capacity(n_mo);
        for k in 0..n_mo {
            orbitals.push(self.orbital(k, n_mo, n_prim)?);
        }
        let (eno, end) = self.next_content("END DATA")?;
        if !end.trim_ascii().starts_with(b"END DATA") {
            let expected = format!("END DATA after the {n_mo} orbitals of the header");
            return Err(self.syntax(eno, expected, excerpt(end.trim_ascii())));
        }
        let (energy, virial) = self.energy_line()?;
        Ok(WfnFile { source: self.src.to_path_buf(), title, nuclei, centres, types, exponents, orbitals, energy, virial })
    }

    fn nucleus(&self, no: usize, line: &[u8]) -> Result<WfnNucleus, WfnError> {
        let expected = "a nucleus line \"LABEL INDEX (CENTRE i) X Y Z CHARGE = Q\"";
        let bad = || self.syntax(no, expected, excerpt(line.trim_ascii()));
        let open = find(line, b"(CENTRE").ok_or_else(bad)?;
        let close = open + line[open..].iter().position(|&b| b == b')').ok_or_else(bad)?;
        let label = line[..open]
            .split(|&b| crate::text::is_blank(b))
            .find(|w| !w.is_empty())
            .map(|w| String::from_utf8_lossy(w).into_owned())
            .ok_or_else(bad)?;
        let inside = line[open + b"(CENTRE".len()..close].trim_ascii();
        let centre = integer_text(inside)
            .ok()
            .and_then(|(_, d)| std::str::from_utf8(d).ok()?.parse::<i64>().ok())
            .ok_or_else(|| self.syntax(no, "the centre number inside (CENTRE i)", excerpt(inside)))?;
        let charge_at = find(line, b"CHARGE").ok_or_else(bad)?;
        if charge_at < close {
            return Err(bad());
        }
        let coords: Vec<&[u8]> = number_words(&line[close + 1..charge_at]).collect();
        if coords.len() != 3 {
            return Err(self.syntax(
                no,
                "three coordinates between (CENTRE i) and CHARGE",
                format!("{} numbers", coords.len()),
            ));
        }
        let mut position = [0.0; 3];
        for (p, t) in position.iter_mut().zip(&coords) {
            *p = self.number(no, t, "a coordinate")?;
        }
        let charge = self.value_after(no, line, charge_at + b"CHARGE".len(), "the nuclear charge")?;
        Ok(WfnNucleus { label, centre, position, charge, line: no })
    }

    /// The number after an `=` that follows position `from` (blanks allowed around it).
    fn value_after(&self, no: usize, line: &[u8], from: usize, what: &str) -> Result<f64, WfnError> {
        let rest = line.get(from..).unwrap_or_default().trim_ascii_start();
        let Some(rest) = rest.strip_prefix(b"=") else {
            return Err(self.syntax(no, format!("= before {what}"), excerpt(rest)));
        };
        let tok = number_words(rest).next().unwrap_or_default();
        // Fixed columns may run the number into a following keyword ("-74.9THE VIRIAL").
        let cut = tok.iter().position(|b| b.is_ascii_alphabetic() && !matches!(b, b'E' | b'e' | b'D' | b'd'));
        let tok = &tok[..cut.unwrap_or(tok.len())];
        if tok.is_empty() {
            return Err(self.syntax(no, format!("{what} (a number)"), excerpt(rest)));
        }
        self.number(no, tok, what)
    }

    /// `count` integers from lines starting with `keyword`, read by column (see the module
    /// header) or, for lines that do not fit the columns, by blank-separated words.
    fn assignments(&mut self, keyword: &[u8], count: usize, what: &str) -> Result<Vec<i64>, WfnError> {
        let name = String::from_utf8_lossy(keyword).into_owned();
        let mut out = Vec::with_capacity(count.min(most_words(self.bytes)));
        while out.len() < count {
            let expected = format!("{name} lines with {} more {what} numbers", count - out.len());
            let (no, line) = self.next_content(&expected)?;
            let Some(body) = line.trim_ascii_start().strip_prefix(keyword) else {
                return Err(self.syntax(no, expected, excerpt(line.trim_ascii())));
            };
            let start = line.len() - body.len();
            let values = self.columns(line, start).unwrap_or_else(|| {
                body.split(|&b| crate::text::is_blank(b))
                    .filter(|w| !w.is_empty())
                    .map(|w| std::str::from_utf8(w).ok().and_then(|s| s.parse::<i64>().ok()).ok_or(w))
                    .collect()
            });
            if values.is_empty() {
                return Err(self.syntax(no, expected, "no numbers".to_string()));
            }
            for v in values {
                let v = v.map_err(|w| self.syntax(no, format!("a {what} number (an integer)"), excerpt(w)))?;
                if out.len() == count {
                    return Err(self.syntax(
                        no,
                        format!("{count} {what} numbers (the header's primitive count)"),
                        "more".to_string(),
                    ));
                }
                out.push(v);
            }
        }
        Ok(out)
    }

    /// Integers three columns wide from column 21, if the line fits that layout.
    fn columns<'l>(&self, line: &'l [u8], keyword_end: usize) -> Option<Vec<Result<i64, &'l [u8]>>> {
        if keyword_end > ASSIGNMENT_KEYWORD {
            return None;
        }
        let body = line.get(ASSIGNMENT_KEYWORD..)?;
        let body = body.trim_ascii_end();
        if body.is_empty() || body.len() % ASSIGNMENT_WIDTH != 0 {
            return None;
        }
        let values: Option<Vec<i64>> = body
            .chunks(ASSIGNMENT_WIDTH)
            .map(|c| std::str::from_utf8(c.trim_ascii()).ok()?.parse::<i64>().ok())
            .collect();
        values.map(|v| v.into_iter().map(Ok).collect())
    }

    fn exponents(&mut self, count: usize) -> Result<Vec<f64>, WfnError> {
        let mut out = Vec::with_capacity(count.min(most_words(self.bytes)));
        while out.len() < count {
            let expected = format!("EXPONENTS lines with {} more exponents", count - out.len());
            let (no, line) = self.next_content(&expected)?;
            let Some(body) = line.trim_ascii_start().strip_prefix(b"EXPONENTS") else {
                return Err(self.syntax(no, expected, excerpt(line.trim_ascii())));
            };
            for tok in number_words(body) {
                if out.len() == count {
                    return Err(self.syntax(no, format!("{count} exponents (the header's primitive count)"), excerpt(tok)));
                }
                out.push(self.number(no, tok, "an exponent")?);
            }
        }
        Ok(out)
    }

    fn orbital(&mut self, k: usize, n_mo: usize, n_prim: usize) -> Result<WfnOrbital, WfnError> {
        let expected = format!("the line \"MO n ... OCC NO = f ORB. ENERGY = e\" of orbital {} of {n_mo}", k + 1);
        let (no, line) = self.next_content(&expected)?;
        let Some(after) = line.trim_ascii_start().strip_prefix(b"MO") else {
            return Err(self.syntax(no, expected, excerpt(line.trim_ascii())));
        };
        let digits: Vec<u8> = after
            .iter()
            .skip_while(|&&b| crate::text::is_blank(b))
            .take_while(|b| b.is_ascii_digit())
            .copied()
            .collect();
        let number = std::str::from_utf8(&digits)
            .ok()
            .and_then(|s| s.parse::<i64>().ok())
            .ok_or_else(|| self.syntax(no, "the orbital number after MO", excerpt(after.trim_ascii())))?;
        let occ = find(line, b"OCC NO").ok_or_else(|| self.syntax(no, &expected, excerpt(line.trim_ascii())))?;
        let ene = find(line, b"ORB. ENERGY").ok_or_else(|| self.syntax(no, &expected, excerpt(line.trim_ascii())))?;
        if ene < occ {
            return Err(self.syntax(no, expected, excerpt(line.trim_ascii())));
        }
        let occupation = self.value_after(no, &line[..ene], occ + b"OCC NO".len(), "the occupation")?;
        let energy = self.value_after(no, line, ene + b"ORB. ENERGY".len(), "the orbital energy")?;
        let mut coefficients = Vec::with_capacity(n_prim);
        while coefficients.len() < n_prim {
            let expected = format!("{} more coefficients of orbital {number} (line {no})", n_prim - coefficients.len());
            let (cno, cline) = self.next_content(&expected)?;
            let first = cline.trim_ascii_start();
            if first.starts_with(b"MO") || first.starts_with(b"END DATA") {
                return Err(self.syntax(cno, expected, excerpt(first)));
            }
            for tok in number_words(cline) {
                if coefficients.len() == n_prim {
                    return Err(self.syntax(
                        cno,
                        format!("{n_prim} coefficients (the header's primitive count)"),
                        excerpt(tok),
                    ));
                }
                coefficients.push(self.number(cno, tok, "a coefficient")?);
            }
        }
        Ok(WfnOrbital { number, occupation, energy, coefficients, line: no })
    }

    fn energy_line(&mut self) -> Result<(Option<f64>, Option<f64>), WfnError> {
        let Some(&line) = self.lines[self.at..].iter().find(|l| !blank_line(l)) else {
            return Ok((None, None));
        };
        let no = self.at + 1 + self.lines[self.at..].iter().take_while(|l| blank_line(l)).count();
        let energy = match find(line, b"ENERGY") {
            Some(p) => Some(self.value_after(no, line, p + b"ENERGY".len(), "the total energy")?),
            None => None,
        };
        let virial = match find(line, b"VIRIAL(-V/T)") {
            Some(p) => Some(self.value_after(no, line, p + b"VIRIAL(-V/T)".len(), "the virial ratio")?),
            None => None,
        };
        Ok((energy, virial))
    }
}
