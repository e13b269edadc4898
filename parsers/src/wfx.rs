//! Reader for AIM extended wavefunction (`.wfx`) files, plain or gzip-compressed: uncontracted
//! Cartesian Gaussian primitives and the orbitals' coefficients over them, in tagged sections.
//!
//! Layout as accepted here: every tag stands alone on its line, `<Name>` opening and
//! `</Name>` closing a section (names compared with runs of blanks collapsed, as real writers
//! put two blanks in one of the pair). A section holds either data lines or other sections,
//! never both; `<Molecular Orbital Primitive Coefficients>` holds one `<MO Number>` section per
//! orbital, each followed by that orbital's coefficients. Sections used here:
//!
//! - counts: `<Number of Nuclei>`, `<Number of Primitives>`,
//!   `<Number of Occupied Molecular Orbitals>`; `<Electronic Spin Multiplicity>`, `<Net Charge>`,
//!   `<Number of Electrons>`, `<Number of Alpha Electrons>`, `<Number of Beta Electrons>` (optional);
//! - nuclei: `<Nuclear Names>`, `<Atomic Numbers>`, `<Nuclear Charges>`,
//!   `<Nuclear Cartesian Coordinates>` (bohr by the format);
//! - primitives: `<Primitive Centers>`, `<Primitive Types>`, `<Primitive Exponents>`;
//! - orbitals: `<Molecular Orbital Occupation Numbers>`, `<Molecular Orbital Energies>`,
//!   `<Molecular Orbital Spin Types>` (`Alpha`, `Beta`, `Alpha and Beta`),
//!   `<Molecular Orbital Primitive Coefficients>`;
//! - `<Title>`, `<Keywords>`, `<Model>`, `<Energy = T + Vne + Vee + Vnn>`, `<Virial Ratio (-V/T)>`.
//!
//! Other sections are checked for balance and skipped. Nothing here knows physics: numbers as
//! written, coefficients of unnormalised primitives, type numbers as written.

use std::path::{Path, PathBuf};

use crate::cube::error::{FOUND_EXCERPT_CHARS, excerpt};
use crate::cube::number::{NumberError, parse_token};
use crate::text::{
    TextError, TextErrorKind, blank_line, end_line, read_text, refuse_gzip, split_lines, text_error,
};

text_error! {
    /// A failure to read an AIM extended wavefunction file: where it happened and what went wrong.
    WfxError
}

/// Spin written for an orbital in `<Molecular Orbital Spin Types>`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum WfxSpin {
    /// `Alpha`.
    Alpha,
    /// `Beta`.
    Beta,
    /// `Alpha and Beta` (a spatial orbital of a restricted calculation).
    AlphaAndBeta,
}

/// A whole wfx file, as written.
#[derive(Debug, Clone, PartialEq)]
pub struct WfxFile {
    /// The file it was read from (or the name given to [`parse_wfx`]).
    pub source: PathBuf,
    /// `<Title>` lines joined with `\n`, trimmed (`None` without the section).
    pub title: Option<String>,
    /// `<Keywords>` text, trimmed (`GTO` for Gaussian primitives).
    pub keywords: Option<String>,
    /// `<Model>` text, trimmed.
    pub model: Option<String>,
    /// `<Net Charge>`, electrons.
    pub net_charge: Option<f64>,
    /// `<Number of Electrons>`.
    pub electrons: Option<f64>,
    /// `<Number of Alpha Electrons>`.
    pub alpha_electrons: Option<f64>,
    /// `<Number of Beta Electrons>`.
    pub beta_electrons: Option<f64>,
    /// `<Electronic Spin Multiplicity>`.
    pub multiplicity: Option<i64>,
    /// `<Nuclear Names>`, one per nucleus (may be empty if the section is absent).
    pub nuclear_names: Vec<String>,
    /// `<Atomic Numbers>`, one per nucleus.
    pub atomic_numbers: Vec<i64>,
    /// `<Nuclear Charges>`, one per nucleus (differ from the atomic numbers with core potentials).
    pub nuclear_charges: Vec<f64>,
    /// `<Nuclear Cartesian Coordinates>`, one triple per nucleus (bohr by the format).
    pub coordinates: Vec<[f64; 3]>,
    /// 1-based line of the `<Nuclear Cartesian Coordinates>` tag.
    pub coordinates_line: Option<usize>,
    /// `<Primitive Centers>`: 1-based nucleus of each primitive.
    pub centres: Vec<i64>,
    /// `<Primitive Types>`: AIMPAC type number of each primitive (as in wfn files).
    pub types: Vec<i64>,
    /// `<Primitive Exponents>`, bohr⁻² by the format.
    pub exponents: Vec<f64>,
    /// Orbitals in file order.
    pub orbitals: Vec<WfxOrbital>,
    /// `<Energy = T + Vne + Vee + Vnn>`, hartree by the format.
    pub energy: Option<f64>,
    /// `<Virial Ratio (-V/T)>`.
    pub virial: Option<f64>,
}

/// One orbital: its entries of the occupation, energy and spin lists and its coefficients.
#[derive(Debug, Clone, PartialEq)]
pub struct WfxOrbital {
    /// `<MO Number>` value, as written.
    pub number: i64,
    /// Occupation.
    pub occupation: f64,
    /// Orbital energy (hartree by the format).
    pub energy: f64,
    /// Spin type.
    pub spin: WfxSpin,
    /// One coefficient per primitive.
    pub coefficients: Vec<f64>,
    /// 1-based line of its `<MO Number>` tag.
    pub line: usize,
}

/// Reads a wfx file, gzip-compressed or not (recognised by its first two bytes, not its name).
pub fn read_wfx(path: &Path) -> Result<WfxFile, WfxError> {
    let bytes = read_text(path)?;
    parse_wfx(&bytes, path)
}

/// One section: its name, where it opens and closes, its data lines or child sections.
struct Element<'a> {
    name: String,
    open: usize,
    close: usize,
    /// (1-based line, text) of each non-blank data line.
    data: Vec<(usize, &'a [u8])>,
    children: Vec<Element<'a>>,
}

/// A tag line: `<Name>` (false) or `</Name>` (true), with the name's blanks collapsed.
fn tag(line: &[u8]) -> Option<(bool, String)> {
    let t = line.trim_ascii();
    let inner = t.strip_prefix(b"<")?.strip_suffix(b">")?;
    let (closing, inner) = match inner.strip_prefix(b"/") {
        Some(rest) => (true, rest),
        None => (false, inner),
    };
    let name = String::from_utf8_lossy(inner);
    let name: Vec<&str> = name.split_whitespace().collect();
    (!name.is_empty()).then(|| (closing, name.join(" ")))
}

/// A section name from the input as messages show it: control characters escaped, cut to
/// [`FOUND_EXCERPT_CHARS`] characters with an ellipsis.
fn shown(name: &str) -> String {
    let mut chars = name.chars();
    let mut out = String::new();
    for c in chars.by_ref().take(FOUND_EXCERPT_CHARS) {
        if c.is_control() {
            out.extend(c.escape_debug());
        } else {
            out.push(c);
        }
    }
    if chars.next().is_some() {
        out.push('…');
    }
    out
}

/// Parses uncompressed wfx text; `source` names it in errors.
pub fn parse_wfx(text: &[u8], source: &Path) -> Result<WfxFile, WfxError> {
    refuse_gzip::<WfxError>(text, source)?;
    let lines = split_lines(text);
    let root = tree(&lines, source)?;
    Sections { src: source, top: root }.file()
}

/// Builds the section tree, checking that every tag is closed in order.
fn tree<'a>(lines: &[&'a [u8]], src: &Path) -> Result<Vec<Element<'a>>, WfxError> {
    let mut stack: Vec<Element<'a>> = Vec::new();
    let mut top: Vec<Element<'a>> = Vec::new();
    for (i, &line) in lines.iter().enumerate() {
        let no = i + 1;
        if blank_line(line) {
            continue;
        }
        match tag(line) {
            Some((false, name)) => {
                if let Some(parent) = stack.last() {
                    if !parent.data.is_empty() {
                        return Err(WfxError::syntax_at(
                            src,
                            no,
                            format!("</{}> (opened on line {}) after its data", shown(&parent.name), parent.open),
                            excerpt(line.trim_ascii()),
                        ));
                    }
                }
                stack.push(Element { name, open: no, close: 0, data: Vec::new(), children: Vec::new() });
            }
            Some((true, name)) => {
                let Some(mut done) = stack.pop() else {
                    return Err(WfxError::syntax_at(
                        src,
                        no,
                        "an opening tag <Name> (no section is open)",
                        excerpt(line.trim_ascii()),
                    ));
                };
                if done.name != name {
                    return Err(WfxError::syntax_at(
                        src,
                        no,
                        format!("</{}> (opened on line {})", shown(&done.name), done.open),
                        excerpt(line.trim_ascii()),
                    ));
                }
                done.close = no;
                match stack.last_mut() {
                    Some(parent) => parent.children.push(done),
                    None => top.push(done),
                }
            }
            None => match stack.last_mut() {
                // Data lines between an orbital's <MO Number> section and the next belong to it.
                Some(open) if open.children.is_empty() || open.name == COEFFICIENTS => {
                    if let Some(mo) = open.children.last_mut().filter(|_| open.name == COEFFICIENTS) {
                        mo.data.push((no, line));
                    } else {
                        open.data.push((no, line));
                    }
                }
                Some(open) => {
                    return Err(WfxError::syntax_at(
                        src,
                        no,
                        format!("a tag inside <{}> (opened on line {}), which holds sections", shown(&open.name), open.open),
                        excerpt(line.trim_ascii()),
                    ));
                }
                None => {
                    return Err(WfxError::syntax_at(
                        src,
                        no,
                        "an opening tag <Name> (data outside any section)",
                        excerpt(line.trim_ascii()),
                    ));
                }
            },
        }
    }
    if let Some(open) = stack.last() {
        return Err(WfxError::new(
            src,
            Some(end_line(lines)),
            TextErrorKind::UnexpectedEnd { expected: format!("</{}> (opened on line {})", shown(&open.name), open.open) },
        ));
    }
    Ok(top)
}

const COEFFICIENTS: &str = "Molecular Orbital Primitive Coefficients";

struct Sections<'a> {
    src: &'a Path,
    top: Vec<Element<'a>>,
}

impl<'a> Sections<'a> {
    fn find(&self, name: &str) -> Result<Option<&Element<'a>>, WfxError> {
        let mut found = self.top.iter().filter(|e| e.name == name);
        let first = found.next();
        if let (Some(a), Some(b)) = (first, found.next()) {
            return Err(WfxError::new(
                self.src,
                Some(b.open),
                TextErrorKind::Duplicate { what: format!("<{name}> section"), first_line: a.open },
            ));
        }
        Ok(first)
    }

    fn require(&self, name: &str) -> Result<&Element<'a>, WfxError> {
        self.find(name)?.ok_or_else(|| {
            WfxError::new(self.src, None, TextErrorKind::Missing { what: format!("a <{name}> section") })
        })
    }

    fn number(&self, no: usize, tok: &[u8], what: &str) -> Result<f64, WfxError> {
        parse_token(tok).map_err(|e| match e {
            NumberError::NotFinite => WfxError::new(self.src, Some(no), TextErrorKind::NotFinite { found: excerpt(tok) }),
            NumberError::Syntax => WfxError::syntax_at(self.src, no, format!("{what} (a number)"), excerpt(tok)),
        })
    }

    fn integer(&self, no: usize, tok: &[u8], what: &str) -> Result<i64, WfxError> {
        std::str::from_utf8(tok)
            .ok()
            .and_then(|s| s.parse::<i64>().ok())
            .ok_or_else(|| WfxError::syntax_at(self.src, no, format!("{what} (an integer)"), excerpt(tok)))
    }

    /// Every blank-separated word of a section's data, with its line.
    fn words<'e>(e: &'e Element<'a>) -> impl Iterator<Item = (usize, &'a [u8])> + 'e {
        e.data.iter().flat_map(|&(no, l)| {
            l.split(|&b| crate::text::is_blank(b)).filter(|w| !w.is_empty()).map(move |w| (no, w))
        })
    }

    fn reals_of(&self, e: &Element<'a>, what: &str) -> Result<Vec<f64>, WfxError> {
        Self::words(e).map(|(no, w)| self.number(no, w, what)).collect()
    }

    fn ints_of(&self, e: &Element<'a>, what: &str) -> Result<Vec<i64>, WfxError> {
        Self::words(e).map(|(no, w)| self.integer(no, w, what)).collect()
    }

    fn reals(&self, name: &str) -> Result<Vec<f64>, WfxError> {
        let e = self.require(name)?;
        self.reals_of(e, &format!("a value of <{name}>"))
    }

    fn ints(&self, name: &str) -> Result<Vec<i64>, WfxError> {
        let e = self.require(name)?;
        self.ints_of(e, &format!("a value of <{name}>"))
    }

    /// A one-value section (`None` if absent).
    fn scalar<T>(
        &self,
        name: &str,
        parse: impl Fn(&Self, usize, &[u8], &str) -> Result<T, WfxError>,
    ) -> Result<Option<T>, WfxError> {
        let Some(e) = self.find(name)? else { return Ok(None) };
        let words: Vec<(usize, &[u8])> = Self::words(e).collect();
        match words.as_slice() {
            [(no, w)] => parse(self, *no, w, &format!("the value of <{name}>")).map(Some),
            _ => Err(WfxError::syntax_at(
                self.src,
                e.open,
                format!("one value in <{name}>"),
                format!("{} words", words.len()),
            )),
        }
    }

    fn text(&self, name: &str) -> Result<Option<String>, WfxError> {
        Ok(self.find(name)?.map(|e| {
            e.data.iter().map(|(_, l)| String::from_utf8_lossy(l).trim().to_string()).collect::<Vec<_>>().join("\n")
        }))
    }

    /// Checks that a list has one entry per item of a count section.
    fn count_check(&self, name: &str, found: usize, count: usize, count_name: &str) -> Result<(), WfxError> {
        if found == count {
            return Ok(());
        }
        let line = self.find(name)?.map(|e| e.open);
        Err(WfxError::new(
            self.src,
            line,
            TextErrorKind::Syntax {
                expected: format!("{count} entries in <{name}> (<{count_name}>)"),
                found: found.to_string(),
            },
        ))
    }

    fn count(&self, name: &str) -> Result<usize, WfxError> {
        let value = self.scalar(name, Self::integer)?.ok_or_else(|| {
            WfxError::new(self.src, None, TextErrorKind::Missing { what: format!("a <{name}> section") })
        })?;
        // Lists are checked against the count after they are read, so no allocation
        // follows from the count itself; it only has to be non-negative.
        usize::try_from(value).map_err(|_| {
            let line = self.find(name).ok().flatten().map(|e| e.open);
            WfxError::new(self.src, line, TextErrorKind::BadCount { what: format!("<{name}> (expected 0 or more)"), value })
        })
    }

    fn file(self) -> Result<WfxFile, WfxError> {
        let n_nuc = self.count("Number of Nuclei")?;
        let n_prim = self.count("Number of Primitives")?;
        let n_mo = self.count("Number of Occupied Molecular Orbitals")?;

        let nuclear_names: Vec<String> = match self.find("Nuclear Names")? {
            Some(e) => Self::words(e).map(|(_, w)| String::from_utf8_lossy(w).into_owned()).collect(),
            None => Vec::new(),
        };
        if !nuclear_names.is_empty() {
            self.count_check("Nuclear Names", nuclear_names.len(), n_nuc, "Number of Nuclei")?;
        }
        let atomic_numbers = self.ints("Atomic Numbers")?;
        self.count_check("Atomic Numbers", atomic_numbers.len(), n_nuc, "Number of Nuclei")?;
        let nuclear_charges = self.reals("Nuclear Charges")?;
        self.count_check("Nuclear Charges", nuclear_charges.len(), n_nuc, "Number of Nuclei")?;
        let flat = self.reals("Nuclear Cartesian Coordinates")?;
        self.count_check("Nuclear Cartesian Coordinates", flat.len(), 3 * n_nuc, "Number of Nuclei, times 3")?;
        let coordinates = flat.chunks_exact(3).map(|c| [c[0], c[1], c[2]]).collect();
        let coordinates_line = self.find("Nuclear Cartesian Coordinates")?.map(|e| e.open);

        let centres = self.ints("Primitive Centers")?;
        self.count_check("Primitive Centers", centres.len(), n_prim, "Number of Primitives")?;
        let types = self.ints("Primitive Types")?;
        self.count_check("Primitive Types", types.len(), n_prim, "Number of Primitives")?;
        let exponents = self.reals("Primitive Exponents")?;
        self.count_check("Primitive Exponents", exponents.len(), n_prim, "Number of Primitives")?;

        let occupations = self.reals("Molecular Orbital Occupation Numbers")?;
        self.count_check("Molecular Orbital Occupation Numbers", occupations.len(), n_mo, "Number of Occupied Molecular Orbitals")?;
        let energies = self.reals("Molecular Orbital Energies")?;
        self.count_check("Molecular Orbital Energies", energies.len(), n_mo, "Number of Occupied Molecular Orbitals")?;
        let spins_e = self.require("Molecular Orbital Spin Types")?;
        let mut spins = Vec::with_capacity(spins_e.data.len());
        for &(no, l) in &spins_e.data {
            let words: Vec<&str> = std::str::from_utf8(l).unwrap_or("").split_whitespace().collect();
            let spin = match words.as_slice() {
                ["Alpha"] => WfxSpin::Alpha,
                ["Beta"] => WfxSpin::Beta,
                ["Alpha", "and", "Beta"] => WfxSpin::AlphaAndBeta,
                _ => {
                    return Err(WfxError::syntax_at(self.src, no, "Alpha, Beta or Alpha and Beta", excerpt(l.trim_ascii())));
                }
            };
            spins.push(spin);
        }
        self.count_check("Molecular Orbital Spin Types", spins.len(), n_mo, "Number of Occupied Molecular Orbitals")?;

        let coeffs = self.require(COEFFICIENTS)?;
        if !coeffs.data.is_empty() {
            let (no, l) = coeffs.data[0];
            return Err(WfxError::syntax_at(self.src, no, "<MO Number> before the coefficients", excerpt(l.trim_ascii())));
        }
        self.count_check(COEFFICIENTS, coeffs.children.len(), n_mo, "Number of Occupied Molecular Orbitals")?;
        let mut orbitals = Vec::with_capacity(coeffs.children.len());
        for (k, mo) in coeffs.children.iter().enumerate() {
            if mo.name != "MO Number" || !mo.children.is_empty() {
                return Err(WfxError::syntax_at(
                    self.src,
                    mo.open,
                    format!("<MO Number> inside <{COEFFICIENTS}>"),
                    format!("<{}>", shown(&mo.name)),
                ));
            }
            // The tree put the orbital number and the coefficients after it in one list:
            // the first word is the number (on the lines before </MO Number>).
            let mut words = Self::words(mo);
            let Some((no, first)) = words.next().filter(|(no, _)| *no < mo.close) else {
                return Err(WfxError::syntax_at(self.src, mo.open, "the orbital number in <MO Number>", "nothing".into()));
            };
            let number = self.integer(no, first, "the orbital number")?;
            let mut coefficients = Vec::with_capacity(n_prim.min(mo.data.len().saturating_mul(64)));
            for (no, w) in words {
                if no < mo.close {
                    return Err(WfxError::syntax_at(self.src, no, "</MO Number> after the orbital number", excerpt(w)));
                }
                coefficients.push(self.number(no, w, "a coefficient")?);
            }
            if coefficients.len() != n_prim {
                return Err(WfxError::syntax_at(
                    self.src,
                    mo.open,
                    format!("{n_prim} coefficients (<Number of Primitives>) after <MO Number> {number}"),
                    coefficients.len().to_string(),
                ));
            }
            orbitals.push(WfxOrbital {
                number,
                occupation: occupations[k],
                energy: energies[k],
                spin: spins[k],
                coefficients,
                line: mo.open,
            });
        }
        Ok(WfxFile {
            source: self.src.to_path_buf(),
            title: self.text("Title")?,
            keywords: self.text("Keywords")?,
            model: self.text("Model")?,
            net_charge: self.scalar("Net Charge", Self::number)?,
            electrons: self.scalar("Number of Electrons", Self::number)?,
            alpha_electrons: self.scalar("Number of Alpha Electrons", Self::number)?,
            beta_electrons: self.scalar("Number of Beta Electrons", Self::number)?,
            multiplicity: self.scalar("Electronic Spin Multiplicity", Self::integer)?,
            nuclear_names,
            atomic_numbers,
            nuclear_charges,
            coordinates,
            coordinates_line,
            centres,
            types,
            exponents,
            orbitals,
            energy: self.scalar("Energy = T + Vne + Vee + Vnn", Self::number)?,
            virial: self.scalar("Virial Ratio (-V/T)", Self::number)?,
        })
    }
}
