//! Reader for Gaussian formatted checkpoint (`.fchk`) files, plain or gzip-compressed.
//!
//! Layout as accepted here (the format as Gaussian writes it; columns from its output):
//!
//! - line 1: a title; line 2: the calculation type, method and basis (blank-separated words);
//! - then sections, each opened by a header line whose first 40 columns hold the name and
//!   whose remaining fields are a type letter (`I` integer, `R` real, `C`/`H` text, `L`
//!   logical) and either a value (scalars) or `N=` and a count (arrays);
//! - an `I` or `R` array's values follow on the next lines, blank-separated, as many as the
//!   count says (any number per line); text and logical arrays run until the next header line.
//!
//! Numbers may use Fortran `D` exponents. Line ends may be LF or CRLF. Sections are kept
//! generically in file order (names may repeat); [`FchkFile`] has typed look-ups by name. Nothing here knows
//! physics: values come back as written (bohr and hartree by the format, not checked).

use std::path::{Path, PathBuf};

use crate::cube::error::excerpt;
use crate::fields::Fields;
use crate::text::{
    TextError, TextErrorKind, blank_line, end_line, most_words, read_text, refuse_gzip,
    split_lines, text_error,
};

text_error! {
    /// A failure to read a formatted checkpoint file: where it happened and what went wrong.
    FchkError
}

/// Columns holding a section's name.
const NAME_COLUMNS: usize = 40;

/// A whole formatted checkpoint file, as written.
#[derive(Debug, Clone, PartialEq)]
pub struct FchkFile {
    /// The file it was read from (or the name given to [`parse_fchk`]).
    pub source: PathBuf,
    /// Line 1, trailing blanks removed.
    pub title: String,
    /// Line 2 (calculation type, method, basis), split into its blank-separated words.
    pub calculation: Vec<String>,
    /// Sections in file order.
    pub sections: Vec<FchkSection>,
}

/// One section: a named scalar or array.
#[derive(Debug, Clone, PartialEq)]
pub struct FchkSection {
    /// Name, trailing blanks removed (e.g. `Shell types`).
    pub name: String,
    /// Value as written.
    pub value: FchkValue,
    /// 1-based line of the header.
    pub line: usize,
}

/// A section's value.
#[derive(Debug, Clone, PartialEq)]
pub enum FchkValue {
    /// `I` scalar.
    Int(i64),
    /// `R` scalar.
    Real(f64),
    /// `I` array.
    Ints(Vec<i64>),
    /// `R` array.
    Reals(Vec<f64>),
    /// `C`, `H` or `L` scalar or array: the text after the type letter (scalars) or the data
    /// lines joined with `\n` (arrays), as written.
    Text(String),
}

impl FchkValue {
    fn kind(&self) -> &'static str {
        match self {
            FchkValue::Int(_) => "an integer scalar (I)",
            FchkValue::Real(_) => "a real scalar (R)",
            FchkValue::Ints(_) => "an integer array (I N=)",
            FchkValue::Reals(_) => "a real array (R N=)",
            FchkValue::Text(_) => "a text or logical section (C, H or L)",
        }
    }
}

impl FchkFile {
    /// The first section called `name` (exact, after trailing blanks), if any. Names may
    /// repeat (Gaussian writes e.g. `Force Field` twice in optimisation files).
    pub fn get(&self, name: &str) -> Option<&FchkSection> {
        self.sections.iter().find(|s| s.name == name)
    }

    /// Whether some section's name starts with `ECP-` (Gaussian writes its effective core
    /// potentials in such sections).
    pub fn has_ecp_sections(&self) -> bool {
        self.sections.iter().any(|s| s.name.starts_with("ECP-"))
    }

    fn wrong_type(&self, s: &FchkSection, wanted: &str) -> FchkError {
        FchkError::syntax_at(
            &self.source,
            s.line,
            format!("{wanted} for section \"{}\"", s.name),
            s.value.kind().to_string(),
        )
    }

    /// An integer scalar: `None` if absent; an error naming its line if it is of another type.
    pub fn int(&self, name: &str) -> Result<Option<i64>, FchkError> {
        match self.get(name) {
            None => Ok(None),
            Some(FchkSection { value: FchkValue::Int(v), .. }) => Ok(Some(*v)),
            Some(s) => Err(self.wrong_type(s, "an integer scalar (I)")),
        }
    }

    /// A real scalar (an integer scalar is accepted and converted).
    pub fn real(&self, name: &str) -> Result<Option<f64>, FchkError> {
        match self.get(name) {
            None => Ok(None),
            Some(FchkSection { value: FchkValue::Real(v), .. }) => Ok(Some(*v)),
            Some(FchkSection { value: FchkValue::Int(v), .. }) => Ok(Some(*v as f64)),
            Some(s) => Err(self.wrong_type(s, "a real scalar (R)")),
        }
    }

    /// An integer array and its header line.
    pub fn ints(&self, name: &str) -> Result<Option<(&[i64], usize)>, FchkError> {
        match self.get(name) {
            None => Ok(None),
            Some(FchkSection { value: FchkValue::Ints(v), line, .. }) => Ok(Some((v, *line))),
            Some(s) => Err(self.wrong_type(s, "an integer array (I N=)")),
        }
    }

    /// A real array and its header line.
    pub fn reals(&self, name: &str) -> Result<Option<(&[f64], usize)>, FchkError> {
        match self.get(name) {
            None => Ok(None),
            Some(FchkSection { value: FchkValue::Reals(v), line, .. }) => Ok(Some((v, *line))),
            Some(s) => Err(self.wrong_type(s, "a real array (R N=)")),
        }
    }
}

/// Reads a formatted checkpoint file, gzip-compressed or not (recognised by its first two
/// bytes, not its name). The text is held in memory whole; at most
/// [`MAX_TEXT_BYTES`](crate::text::MAX_TEXT_BYTES) are accepted.
pub fn read_fchk(path: &Path) -> Result<FchkFile, FchkError> {
    let bytes = read_text(path)?;
    parse_fchk(&bytes, path)
}

/// A header line split into name, type letter and what follows it.
struct Header<'a> {
    name: String,
    kind: u8,
    rest: &'a [u8],
}

/// Splits a header line: name in the first 40 columns, then the type letter as the first
/// field after them. `None` if the line has no such shape.
fn header(line: &[u8]) -> Option<Header<'_>> {
    let name = line.get(..NAME_COLUMNS)?;
    let after = line.get(NAME_COLUMNS..)?;
    let start = after.iter().position(|&b| !crate::text::is_blank(b))?;
    let kind = *after.get(start)?;
    let rest = after.get(start + 1..)?;
    let name = String::from_utf8_lossy(name).trim_end().to_string();
    let separated = rest.first().is_some_and(|&b| crate::text::is_blank(b));
    (!name.is_empty() && matches!(kind, b'I' | b'R' | b'C' | b'H' | b'L') && separated)
        .then_some(Header { name, kind, rest })
}

/// Whether `line` is a section header (for the end of text arrays).
fn is_header(line: &[u8]) -> bool {
    header(line).is_some_and(|h| {
        let words: Vec<&[u8]> =
            h.rest.split(|&b| crate::text::is_blank(b)).filter(|w| !w.is_empty()).collect();
        words.len() == 1 || (words.len() == 2 && words[0] == b"N=")
    })
}

/// Parses uncompressed fchk text; `source` names it in errors.
pub fn parse_fchk(text: &[u8], source: &Path) -> Result<FchkFile, FchkError> {
    refuse_gzip::<FchkError>(text, source)?;
    let lines = split_lines(text);
    let end = |expected: &str| {
        FchkError::new(
            source,
            Some(end_line(&lines)),
            TextErrorKind::UnexpectedEnd { expected: expected.to_string() },
        )
    };
    let title = lines.first().ok_or_else(|| end("the title line"))?;
    let title = String::from_utf8_lossy(title).trim_end().to_string();
    let calc = lines.get(1).ok_or_else(|| end("the calculation line (type, method, basis)"))?;
    let calculation: Vec<String> = calc
        .split(|&b| crate::text::is_blank(b))
        .filter(|w| !w.is_empty())
        .map(|w| String::from_utf8_lossy(w).into_owned())
        .collect();
    // Bytes left after each line, for bounding array counts before allocating.
    let mut left = Vec::with_capacity(lines.len() + 1);
    let mut acc = 0usize;
    for l in lines.iter().rev() {
        left.push(acc);
        acc += l.len() + 1;
    }
    left.reverse();

    let mut sections: Vec<FchkSection> = Vec::new();
    let mut at = 2;
    while let Some(&line) = lines.get(at) {
        at += 1;
        let no = at;
        if blank_line(line) {
            continue;
        }
        let h = header(line).ok_or_else(|| {
            FchkError::syntax_at(
                source,
                no,
                "a section header (a name in columns 1-40, then I, R, C, H or L and a value or N= and a count)",
                excerpt(line),
            )
        })?;
        let mut f = Fields::<FchkError>::new(source, no, h.rest);
        let array = {
            let mut probe = Fields::<FchkError>::new(source, no, h.rest);
            probe.token() == Some(b"N=")
        };
        let value = if array {
            f.word("N=")?;
            let count = f.int("the array length after N=")?;
            f.finish("the array length")?;
            let room = most_words(left.get(no - 1).copied().unwrap_or(0));
            if count < 0 || count as u64 > room as u64 {
                return Err(FchkError::new(
                    source,
                    Some(no),
                    TextErrorKind::BadCount {
                        what: format!(
                            "length of array \"{}\" (expected 0 to {room}, what the rest of the file can hold)",
                            h.name
                        ),
                        value: count,
                    },
                ));
            }
            let count = count as usize;
            match h.kind {
                b'I' => FchkValue::Ints(read_array(&lines, &mut at, count, &h.name, no, source, |f| {
                    f.int("an integer of the array")
                })?),
                b'R' => FchkValue::Reals(read_array(&lines, &mut at, count, &h.name, no, source, |f| {
                    f.float("a number of the array")
                })?),
                _ => {
                    let mut data = Vec::new();
                    while let Some(&l) = lines.get(at) {
                        if is_header(l) {
                            break;
                        }
                        data.push(String::from_utf8_lossy(l).trim_end().to_string());
                        at += 1;
                    }
                    FchkValue::Text(data.join("\n"))
                }
            }
        } else {
            match h.kind {
                b'I' => {
                    let v = f.int("the integer value")?;
                    f.finish("the value")?;
                    FchkValue::Int(v)
                }
                b'R' => {
                    let v = f.float("the real value")?;
                    f.finish("the value")?;
                    FchkValue::Real(v)
                }
                _ => FchkValue::Text(String::from_utf8_lossy(h.rest).trim().to_string()),
            }
        };
        sections.push(FchkSection { name: h.name, value, line: no });
    }
    Ok(FchkFile { source: source.to_path_buf(), title, calculation, sections })
}

/// Reads `count` values of an array from the lines after its header (`at` moves past them).
fn read_array<T>(
    lines: &[&[u8]],
    at: &mut usize,
    count: usize,
    name: &str,
    header_line: usize,
    source: &Path,
    mut value: impl FnMut(&mut Fields<'_, FchkError>) -> Result<T, FchkError>,
) -> Result<Vec<T>, FchkError> {
    // `count` is bounded by the bytes left, so this reservation is backed by the input.
    let mut out = Vec::with_capacity(count);
    while out.len() < count {
        let Some(&line) = lines.get(*at) else {
            return Err(FchkError::new(
                source,
                Some(end_line(lines)),
                TextErrorKind::UnexpectedEnd {
                    expected: format!(
                        "{} more values of array \"{name}\" (line {header_line} declares {count})",
                        count - out.len()
                    ),
                },
            ));
        };
        *at += 1;
        let mut f = Fields::new(source, *at, line);
        if f.at_end() || header(line).is_some() && !line.first().is_some_and(|&b| crate::text::is_blank(b)) {
            return Err(FchkError::syntax_at(
                source,
                *at,
                format!(
                    "{} more values of array \"{name}\" (line {header_line} declares {count})",
                    count - out.len()
                ),
                excerpt(line),
            ));
        }
        while !f.at_end() {
            if out.len() == count {
                let extra = f.token().unwrap_or_default();
                return Err(FchkError::syntax_at(
                    source,
                    *at,
                    format!("the end of array \"{name}\" after its {count} values (line {header_line})"),
                    excerpt(extra),
                ));
            }
            out.push(value(&mut f)?);
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn headers() {
        let h = header(b"Number of atoms                            I                3").expect("header");
        assert_eq!(h.name, "Number of atoms");
        assert_eq!(h.kind, b'I');
        assert!(header(b"  8.00000000E+00  1.00000000E+00  1.00000000E+00").is_none());
        assert!(is_header(b"Shell types                                I   N=           4"));
    }
}
