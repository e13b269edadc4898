//! Reader for the "molden" text interchange format: atoms, a contracted Gaussian basis and
//! molecular-orbital coefficients, plain or gzip-compressed.
//!
//! Layout as accepted here (section names in brackets at the start of a line, any case,
//! optionally followed by text such as a unit):
//!
//! - `[Atoms] (AU)` or `[Atoms] (Angs)` (parentheses optional; `AU`/`Bohr` or
//!   `Angs`/`Angstrom`): one line per atom, `LABEL INDEX ATOMIC_NUMBER X Y Z`; the unit is
//!   reported, never applied.
//! - `[GTO]`: per atom a line `INDEX [0]`, then its shells, each a line `TYPE NPRIM [SCALE]`
//!   (TYPE one of `s p d f g h i sp`, any case) followed by NPRIM lines
//!   `EXPONENT COEFFICIENT` (`sp` shells: `EXPONENT S_COEFFICIENT P_COEFFICIENT`). Blank lines
//!   between atoms are optional.
//! - Flag sections without content that switch shells between Cartesian and spherical
//!   components: `[5D]`, `[5D7F]`, `[5D10F]`, `[7F]`, `[9G]` and the explicit Cartesian
//!   `[6D]`, `[10F]`, `[15G]`; recorded as written, in file order.
//! - `[MO]` (may appear more than once; later ones append): per orbital the key lines
//!   `Sym=`, `Ene=`, `Spin=`, `Occup=` (any order, each optional, unknown keys ignored), then
//!   coefficient lines `INDEX VALUE` (a sign may follow the index without a space). A key line
//!   after coefficient lines starts the next orbital. Coefficients left out are the caller's to
//!   take as zero, with one exception decided here: a file that ends inside an orbital listing
//!   coefficients 1…m in order, when every other orbital lists the same 1…K in order and m < K,
//!   was cut off, and is an error at its last line.
//! - `[Title]`: the following lines are kept as the title. Every other section
//!   (`[Molden Format]`, `[Charge]`, `[GEOMETRIES]`, `[STO]` …) is skipped.
//!
//! Numbers may use Fortran `D` exponents. Line ends may be LF or CRLF. Nothing here knows
//! physics: numbers come back exactly as written, and which shells are spherical, what the
//! unit means and whether indices agree is for the caller to decide.

mod error;

use std::io::Read;
use std::path::{Path, PathBuf};

use nom::bytes::complete::{take_till, take_while1};
use nom::character::complete::{char, digit1, space0};
use nom::combinator::{all_consuming, rest};
use nom::sequence::{delimited, preceded};
use nom::{IResult, Parser};

use crate::cube::error::excerpt;
use crate::fields::{Fields, LineErrors, integer_text};
use crate::cube::{GZIP_MAGIC, LengthUnit, open_text};
pub use error::{MoldenError, MoldenErrorKind};

/// Largest accepted text size (after decompression), in bytes; the whole text is held in memory.
pub const MAX_MOLDEN_BYTES: u64 = 1 << 32;

/// A whole molden file, as written.
#[derive(Debug, Clone, PartialEq)]
pub struct MoldenFile {
    /// The file it was read from (or the name given to [`parse_molden`]).
    pub source: PathBuf,
    /// Lines of the `[Title]` section, joined with `\n` (`None` without a title section).
    pub title: Option<String>,
    /// Unit written on the `[Atoms]` line (`None` if none was written).
    pub atoms_unit: Option<LengthUnit>,
    /// 1-based line of the `[Atoms]` section header.
    pub atoms_line: usize,
    /// Atom lines, in file order.
    pub atoms: Vec<MoldenAtom>,
    /// 1-based line of the `[GTO]` section header.
    pub gto_line: usize,
    /// Basis-set blocks of `[GTO]`, one per atom line `INDEX 0`, in file order.
    pub basis: Vec<MoldenBasisAtom>,
    /// Cartesian/spherical flag sections with their 1-based lines, in file order.
    pub flags: Vec<(MoldenFlag, usize)>,
    /// Orbitals of all `[MO]` sections, in file order.
    pub orbitals: Vec<MoldenOrbital>,
    /// 1-based lines of the `[MO]` section headers, in file order (empty: the file has none).
    pub mo_lines: Vec<usize>,
}

/// One line of `[Atoms]`.
#[derive(Debug, Clone, PartialEq)]
pub struct MoldenAtom {
    /// Label (usually the element symbol), as written.
    pub label: String,
    /// Sequence number, as written (`[GTO]` refers to atoms by it).
    pub index: i64,
    /// Atomic number, as written.
    pub atomic_number: i64,
    /// Position, in [`MoldenFile::atoms_unit`].
    pub position: [f64; 3],
    /// 1-based line.
    pub line: usize,
}

/// Shell type letters of `[GTO]`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum ShellType {
    /// `s`, angular momentum 0.
    S,
    /// `p`, 1.
    P,
    /// `d`, 2.
    D,
    /// `f`, 3.
    F,
    /// `g`, 4.
    G,
    /// `h`, 5.
    H,
    /// `i`, 6.
    I,
    /// `sp`: an s and a p shell sharing exponents (two coefficient columns).
    Sp,
}

impl ShellType {
    /// Angular momentum of the shell (`None` for `sp`, which has two).
    pub fn angular_momentum(self) -> Option<u32> {
        match self {
            ShellType::S => Some(0),
            ShellType::P => Some(1),
            ShellType::D => Some(2),
            ShellType::F => Some(3),
            ShellType::G => Some(4),
            ShellType::H => Some(5),
            ShellType::I => Some(6),
            ShellType::Sp => None,
        }
    }

    /// The letters as the format writes them (lower case).
    pub fn letters(self) -> &'static str {
        match self {
            ShellType::S => "s",
            ShellType::P => "p",
            ShellType::D => "d",
            ShellType::F => "f",
            ShellType::G => "g",
            ShellType::H => "h",
            ShellType::I => "i",
            ShellType::Sp => "sp",
        }
    }

    fn from_letters(s: &[u8]) -> Option<Self> {
        const ALL: [ShellType; 8] = [
            ShellType::S,
            ShellType::P,
            ShellType::D,
            ShellType::F,
            ShellType::G,
            ShellType::H,
            ShellType::I,
            ShellType::Sp,
        ];
        ALL.into_iter()
            .find(|t| t.letters().as_bytes().eq_ignore_ascii_case(s))
    }
}

/// One primitive line of a shell, as written.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MoldenPrimitive {
    /// Exponent (unscaled; see [`MoldenShell::scale`]).
    pub exponent: f64,
    /// Contraction coefficient (of the s part, for `sp` shells).
    pub coefficient: f64,
    /// Second coefficient column: the p part of an `sp` shell (`None` otherwise).
    pub coefficient_p: Option<f64>,
}

/// One shell of `[GTO]`.
#[derive(Debug, Clone, PartialEq)]
pub struct MoldenShell {
    /// Shell type.
    pub shell_type: ShellType,
    /// Scale factor written after the primitive count (`None` if absent).
    pub scale: Option<f64>,
    /// Primitives in file order; primitive `k` is on line `line + 1 + k`.
    pub primitives: Vec<MoldenPrimitive>,
    /// 1-based line of the shell header.
    pub line: usize,
}

/// The shells of one atom in `[GTO]`.
#[derive(Debug, Clone, PartialEq)]
pub struct MoldenBasisAtom {
    /// Atom sequence number, as written (refers to [`MoldenAtom::index`]).
    pub atom: i64,
    /// Shells in file order.
    pub shells: Vec<MoldenShell>,
    /// 1-based line of the `INDEX 0` line.
    pub line: usize,
}

/// Flag sections that select Cartesian or spherical components, as written.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum MoldenFlag {
    /// `[5D]`: spherical d and f.
    D5,
    /// `[5D7F]`: spherical d and f.
    D5F7,
    /// `[5D10F]`: spherical d, Cartesian f.
    D5F10,
    /// `[7F]`: spherical f (d stays Cartesian).
    F7,
    /// `[9G]`: spherical g.
    G9,
    /// `[6D]`: Cartesian d (the default, written explicitly).
    D6,
    /// `[10F]`: Cartesian f (the default).
    F10,
    /// `[15G]`: Cartesian g (the default).
    G15,
}

impl MoldenFlag {
    fn from_name(name: &[u8]) -> Option<Self> {
        const ALL: [(&str, MoldenFlag); 8] = [
            ("5d", MoldenFlag::D5),
            ("5d7f", MoldenFlag::D5F7),
            ("5d10f", MoldenFlag::D5F10),
            ("7f", MoldenFlag::F7),
            ("9g", MoldenFlag::G9),
            ("6d", MoldenFlag::D6),
            ("10f", MoldenFlag::F10),
            ("15g", MoldenFlag::G15),
        ];
        ALL.into_iter()
            .find(|(n, _)| n.as_bytes().eq_ignore_ascii_case(name))
            .map(|(_, f)| f)
    }
}

/// Spin written on a `Spin=` line.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum MoldenSpin {
    /// `Alpha`.
    Alpha,
    /// `Beta`.
    Beta,
}

/// One orbital of `[MO]`, as written.
#[derive(Debug, Clone, PartialEq)]
pub struct MoldenOrbital {
    /// `Sym=` text, trimmed (`None` if absent or empty).
    pub symmetry: Option<String>,
    /// `Ene=` value (`None` if absent), in whatever unit the writer used (hartree by the format).
    pub energy: Option<f64>,
    /// `Spin=` value (`None` if absent).
    pub spin: Option<MoldenSpin>,
    /// `Occup=` value (`None` if absent).
    pub occupation: Option<f64>,
    /// Coefficient lines as `(index, value)`, in file order (indices 1-based as written).
    pub coefficients: Vec<(usize, f64)>,
    /// 1-based line where the orbital starts.
    pub line: usize,
    /// 1-based line of each coefficient, parallel to `coefficients`.
    pub coefficient_lines: Vec<usize>,
    /// Largest half unit in the last written digit among the coefficients (absolute): how
    /// much the writer's rounding may have changed any of them.
    pub coefficient_resolution: f64,
}

/// Reads a molden file, gzip-compressed or not (recognised by its first two bytes, not its
/// name). The text is held in memory whole; at most [`MAX_MOLDEN_BYTES`] are accepted.
pub fn read_molden(path: &Path) -> Result<MoldenFile, MoldenError> {
    let io = |e| MoldenError::new(path, None, MoldenErrorKind::Io(e));
    let (reader, _) = open_text(path).map_err(io)?;
    let mut bytes = Vec::new();
    reader
        .take(MAX_MOLDEN_BYTES + 1)
        .read_to_end(&mut bytes)
        .map_err(io)?;
    if bytes.len() as u64 > MAX_MOLDEN_BYTES {
        let kind = MoldenErrorKind::TooLarge {
            limit: MAX_MOLDEN_BYTES,
        };
        return Err(MoldenError::new(path, None, kind));
    }
    parse_molden(&bytes, path)
}

/// Parses uncompressed molden text; `source` names it in errors.
pub fn parse_molden(text: &[u8], source: &Path) -> Result<MoldenFile, MoldenError> {
    if text.starts_with(&GZIP_MAGIC) {
        return Err(MoldenError::new(
            source,
            Some(1),
            MoldenErrorKind::Compressed,
        ));
    }
    Parser_ {
        src: source,
        lines: split_lines(text),
        at: 0,
    }
    .file()
}

/// Lines of `text` without their terminators (LF, or CRLF).
fn split_lines(text: &[u8]) -> Vec<&[u8]> {
    let mut lines: Vec<&[u8]> = text
        .split(|&b| b == b'\n')
        .map(|l| l.strip_suffix(b"\r").unwrap_or(l))
        .collect();
    // A final line terminator does not start another line.
    if text.ends_with(b"\n") {
        lines.pop();
    }
    lines
}

fn is_blank(b: u8) -> bool {
    b == b' ' || b == b'\t' || b == b'\r' || b == 0x0b || b == 0x0c
}

fn blank_line(line: &[u8]) -> bool {
    line.iter().all(|&b| is_blank(b))
}

/// nom: `[NAME]` at the start of a line (after blanks); returns the name and the rest.
fn section_header(input: &[u8]) -> IResult<&[u8], &[u8]> {
    preceded(
        take_while1_or_none_blank,
        delimited(char('['), take_till(|b| b == b']' || b == b'['), char(']')),
    )
    .parse(input)
}

/// nom: leading blanks (possibly none).
fn take_while1_or_none_blank(input: &[u8]) -> IResult<&[u8], &[u8]> {
    nom::bytes::complete::take_while(is_blank).parse(input)
}

/// nom: `KEY=VALUE` with the key a run of letters; returns both (value untrimmed).
fn key_value(input: &[u8]) -> IResult<&[u8], (&[u8], &[u8])> {
    (
        preceded(
            space0,
            take_while1(|b: u8| b.is_ascii_alphabetic() || b == b'_'),
        ),
        preceded((space0, char('=')), rest),
    )
        .parse(input)
}

/// nom: a coefficient line's index, and whether blanks follow it.
fn coefficient_index(input: &[u8]) -> IResult<&[u8], (&[u8], &[u8])> {
    (
        preceded(take_while1_or_none_blank, digit1),
        take_while1_or_none_blank,
    )
        .parse(input)
}

/// nom: the unit text after `[Atoms]`: `(AU)`, `AU`, `(Angs)`, … (returns the word).
fn unit_word(input: &[u8]) -> IResult<&[u8], &[u8]> {
    let word = take_while1(|b: u8| b.is_ascii_alphabetic());
    let (input, _) = take_while1_or_none_blank(input)?;
    let (input, w) = nom::branch::alt((
        delimited(char('('), word, char(')')),
        take_while1(|b: u8| b.is_ascii_alphabetic()),
    ))
    .parse(input)?;
    let (input, _) = take_while1_or_none_blank(input)?;
    Ok((input, w))
}

fn length_unit(word: &[u8]) -> Option<LengthUnit> {
    let is = |s: &str| word.eq_ignore_ascii_case(s.as_bytes());
    if is("au") || is("bohr") {
        Some(LengthUnit::Bohr)
    } else if is("angs") || is("angstrom") || is("angstroms") {
        Some(LengthUnit::Angstrom)
    } else {
        None
    }
}

/// What a recognised section name means.
enum Section {
    Atoms,
    Gto,
    Mo,
    Title,
    Flag(MoldenFlag),
    Other,
}

fn classify(name: &[u8]) -> Section {
    let name = name.trim_ascii();
    let is = |s: &str| name.eq_ignore_ascii_case(s.as_bytes());
    if is("atoms") {
        Section::Atoms
    } else if is("gto") {
        Section::Gto
    } else if is("mo") {
        Section::Mo
    } else if is("title") {
        Section::Title
    } else if let Some(flag) = MoldenFlag::from_name(name) {
        Section::Flag(flag)
    } else {
        Section::Other
    }
}

/// Line cursor over the whole text.
struct Parser_<'a> {
    src: &'a Path,
    lines: Vec<&'a [u8]>,
    /// Index of the next line (0-based; its line number is `at + 1`).
    at: usize,
}

/// Partial results while reading.
#[derive(Default)]
struct Found {
    title: Option<String>,
    atoms: Option<(usize, Option<LengthUnit>, Vec<MoldenAtom>)>,
    gto: Option<(usize, Vec<MoldenBasisAtom>)>,
    flags: Vec<(MoldenFlag, usize)>,
    orbitals: Vec<MoldenOrbital>,
    mo_lines: Vec<usize>,
}

impl<'a> Parser_<'a> {
    fn err(&self, line: usize, kind: MoldenErrorKind) -> MoldenError {
        MoldenError::new(self.src, Some(line), kind)
    }

    fn syntax(&self, line: usize, expected: impl Into<String>, found: String) -> MoldenError {
        self.err(
            line,
            MoldenErrorKind::Syntax {
                expected: expected.into(),
                found,
            },
        )
    }

    /// The next line if it does not start a section.
    fn content_line(&mut self) -> Option<(usize, &'a [u8])> {
        let line = *self.lines.get(self.at)?;
        if section_header(line).is_ok() {
            return None;
        }
        self.at += 1;
        Some((self.at, line))
    }

    fn file(mut self) -> Result<MoldenFile, MoldenError> {
        let mut found = Found::default();
        // Text before the first section is tolerated only if blank.
        while let Some((no, line)) = self.content_line() {
            if !blank_line(line) {
                return Err(self.syntax(
                    no,
                    "a section name in brackets such as [Molden Format] or [Atoms]",
                    excerpt(line),
                ));
            }
        }
        while let Some(&line) = self.lines.get(self.at) {
            self.at += 1;
            let no = self.at;
            let (after, name) = section_header(line)
                .map_err(|_| self.syntax(no, "a section name in brackets", excerpt(line)))?;
            match classify(name) {
                Section::Atoms => {
                    if let Some((first, ..)) = &found.atoms {
                        return Err(self.duplicate("[Atoms] section", no, *first));
                    }
                    let unit = self.atoms_unit(no, after)?;
                    let atoms = self.atoms()?;
                    found.atoms = Some((no, unit, atoms));
                }
                Section::Gto => {
                    if let Some((first, _)) = &found.gto {
                        return Err(self.duplicate("[GTO] section", no, *first));
                    }
                    found.gto = Some((no, self.gto()?));
                }
                Section::Mo => {
                    found.mo_lines.push(no);
                    self.orbitals(no, &mut found.orbitals)?;
                }
                Section::Title => {
                    let mut lines = Vec::new();
                    while let Some((_, l)) = self.content_line() {
                        lines.push(String::from_utf8_lossy(l).trim_end().to_string());
                    }
                    while lines.last().is_some_and(|l| l.is_empty()) {
                        lines.pop();
                    }
                    found.title = Some(lines.join("\n"));
                }
                Section::Flag(flag) => {
                    found.flags.push((flag, no));
                    self.skip_blank_only(name)?;
                }
                Section::Other => while self.content_line().is_some() {},
            }
        }
        let missing = |what: &str| {
            MoldenError::new(
                self.src,
                None,
                MoldenErrorKind::Missing {
                    what: what.to_string(),
                },
            )
        };
        let (atoms_line, atoms_unit, atoms) =
            found.atoms.ok_or_else(|| missing("an [Atoms] section"))?;
        let (gto_line, basis) = found
            .gto
            .ok_or_else(|| missing("a [GTO] section (Gaussian basis; [STO] is not supported)"))?;
        Ok(MoldenFile {
            source: self.src.to_path_buf(),
            title: found.title,
            atoms_unit,
            atoms_line,
            atoms,
            gto_line,
            basis,
            flags: found.flags,
            orbitals: found.orbitals,
            mo_lines: found.mo_lines,
        })
    }

    fn duplicate(&self, what: &str, line: usize, first_line: usize) -> MoldenError {
        self.err(
            line,
            MoldenErrorKind::Duplicate {
                what: what.to_string(),
                first_line,
            },
        )
    }

    /// Flag sections have no content: only blank lines may follow before the next section.
    fn skip_blank_only(&mut self, name: &[u8]) -> Result<(), MoldenError> {
        while let Some((no, line)) = self.content_line() {
            if !blank_line(line) {
                let name = String::from_utf8_lossy(name);
                return Err(self.syntax(
                    no,
                    format!(
                        "a section name in brackets after the flag [{name}] (flags have no content)"
                    ),
                    excerpt(line),
                ));
            }
        }
        Ok(())
    }

    fn atoms_unit(&self, no: usize, after: &[u8]) -> Result<Option<LengthUnit>, MoldenError> {
        if blank_line(after) {
            return Ok(None);
        }
        let expected = "the unit after [Atoms]: (AU) or (Angs)";
        match all_consuming(unit_word).parse(after) {
            Ok((_, word)) => length_unit(word)
                .map(Some)
                .ok_or_else(|| self.syntax(no, expected, excerpt(after.trim_ascii()))),
            Err(_) => Err(self.syntax(no, expected, excerpt(after.trim_ascii()))),
        }
    }

    fn atoms(&mut self) -> Result<Vec<MoldenAtom>, MoldenError> {
        let mut atoms = Vec::new();
        while let Some((no, line)) = self.content_line() {
            if blank_line(line) {
                continue;
            }
            let mut f = Fields::new(self.src, no, line);
            let label = f.word("the atom label")?;
            let index = f.int("the atom's sequence number")?;
            let atomic_number = f.int("the atomic number")?;
            let position = [f.float("x")?, f.float("y")?, f.float("z")?];
            f.finish("the atom position")?;
            atoms.push(MoldenAtom {
                label,
                index,
                atomic_number,
                position,
                line: no,
            });
        }
        Ok(atoms)
    }

    fn gto(&mut self) -> Result<Vec<MoldenBasisAtom>, MoldenError> {
        let mut blocks: Vec<MoldenBasisAtom> = Vec::new();
        while let Some((no, line)) = self.content_line() {
            // Blank lines usually separate atoms but carry no meaning.
            if blank_line(line) {
                continue;
            }
            let first = Fields::<MoldenError>::new(self.src, no, line).token().unwrap_or_default();
            if integer_text(first).is_ok() {
                let mut f = Fields::new(self.src, no, line);
                let atom = f.int("the atom's sequence number")?;
                if !f.at_end() {
                    f.int("the second number of the atom line (0)")?;
                }
                f.finish("the atom line of [GTO]")?;
                blocks.push(MoldenBasisAtom {
                    atom,
                    shells: Vec::new(),
                    line: no,
                });
                continue;
            }
            let Some(shell_type) = ShellType::from_letters(first) else {
                let expected = if !blocks.is_empty() {
                    "a shell line (s, p, sp, d, f, g, h or i, then the primitive count), an atom line or a blank line"
                } else {
                    "an atom line of [GTO] (the atom's sequence number, then 0)"
                };
                return Err(self.syntax(no, expected, excerpt(line.trim_ascii())));
            };
            let Some(block) = blocks.last_mut() else {
                return Err(self.syntax(
                    no,
                    "an atom line of [GTO] (the atom's sequence number, then 0) before its shells",
                    excerpt(line.trim_ascii()),
                ));
            };
            let mut f = Fields::new(self.src, no, line);
            f.word("the shell type")?;
            let count = f.int("the number of primitives")?;
            let scale = if f.at_end() {
                None
            } else {
                Some(f.float("the scale factor")?)
            };
            f.finish("the shell line")?;
            // Decide the size before allocating: each primitive takes one of the lines left.
            let left = self.lines.len() - self.at;
            if count < 1 || count as u64 > left as u64 {
                return Err(self.err(
                    no,
                    MoldenErrorKind::BadCount {
                        what: format!(
                            "number of primitives (expected 1 to {left}, the lines left in the file)"
                        ),
                        value: count,
                    },
                ));
            }
            let count = count as usize;
            let mut primitives = Vec::with_capacity(count);
            for k in 0..count {
                let Some((pno, pline)) = self.content_line() else {
                    let expected =
                        format!("primitive {} of {count} of the shell on line {no}", k + 1);
                    return Err(match self.lines.get(self.at) {
                        Some(l) => self.syntax(self.at + 1, expected, excerpt(l)),
                        None => self.err(self.at, MoldenErrorKind::UnexpectedEnd { expected }),
                    });
                };
                let mut f = Fields::new(self.src, pno, pline);
                let exponent = f.float("the exponent")?;
                let coefficient = f.float("the contraction coefficient")?;
                let coefficient_p = if shell_type == ShellType::Sp {
                    Some(f.float("the p contraction coefficient of the sp shell")?)
                } else {
                    None
                };
                f.finish("the primitive")?;
                primitives.push(MoldenPrimitive {
                    exponent,
                    coefficient,
                    coefficient_p,
                });
            }
            block.shells.push(MoldenShell {
                shell_type,
                scale,
                primitives,
                line: no,
            });
        }
        Ok(blocks)
    }

    fn orbitals(
        &mut self,
        section: usize,
        out: &mut Vec<MoldenOrbital>,
    ) -> Result<(), MoldenError> {
        let mut current: Option<MoldenOrbital> = None;
        let mut last_line = section;
        while let Some((no, line)) = self.content_line() {
            last_line = no;
            if blank_line(line) {
                continue;
            }
            if let Ok((_, (key, value))) = key_value(line) {
                let starts_new = current.as_ref().is_none_or(|o| !o.coefficients.is_empty());
                if starts_new {
                    if let Some(done) = current.take() {
                        out.push(done);
                    }
                    current = Some(MoldenOrbital {
                        symmetry: None,
                        energy: None,
                        spin: None,
                        occupation: None,
                        coefficients: Vec::new(),
                        line: no,
                        coefficient_lines: Vec::new(),
                        coefficient_resolution: 0.0,
                    });
                }
                let orbital = current.as_mut().expect("set just above");
                self.key(no, key, value, orbital)?;
                continue;
            }
            let Some(orbital) = current.as_mut() else {
                return Err(self.syntax(
                    no,
                    "an orbital's key lines (Sym=, Ene=, Spin=, Occup=) before its coefficients",
                    excerpt(line.trim_ascii()),
                ));
            };
            let (index, value, resolution) = self.coefficient(no, line)?;
            orbital.coefficients.push((index, value));
            orbital.coefficient_lines.push(no);
            orbital.coefficient_resolution = orbital.coefficient_resolution.max(resolution);
        }
        if let Some(done) = current {
            if done.coefficients.is_empty() {
                let expected =
                    "coefficient lines (index value) after the orbital's key lines".to_string();
                return Err(match self.lines.get(self.at) {
                    Some(l) => self.syntax(self.at + 1, expected, excerpt(l)),
                    None => self.err(last_line, MoldenErrorKind::UnexpectedEnd { expected }),
                });
            }
            if self.at >= self.lines.len() {
                if let Some(expected) = cut_off(out, &done) {
                    let line = done.coefficient_lines.last().copied().unwrap_or(last_line);
                    return Err(self.err(line, MoldenErrorKind::UnexpectedEnd { expected }));
                }
            }
            out.push(done);
        }
        Ok(())
    }

    fn key(
        &self,
        no: usize,
        key: &[u8],
        value: &[u8],
        o: &mut MoldenOrbital,
    ) -> Result<(), MoldenError> {
        let is = |s: &str| key.eq_ignore_ascii_case(s.as_bytes());
        let twice = || {
            self.syntax(
                no,
                format!(
                    "one {}= line per orbital (the orbital starts on line {})",
                    String::from_utf8_lossy(key),
                    o.line
                ),
                excerpt(value.trim_ascii()),
            )
        };
        let number = |what: &str| -> Result<f64, MoldenError> {
            let mut f = Fields::new(self.src, no, value);
            let v = f.float(what)?;
            f.finish(what)?;
            Ok(v)
        };
        if is("sym") {
            if o.symmetry.is_some() {
                return Err(twice());
            }
            let text = String::from_utf8_lossy(value.trim_ascii()).into_owned();
            o.symmetry = (!text.is_empty()).then_some(text);
        } else if is("ene") {
            if o.energy.is_some() {
                return Err(twice());
            }
            o.energy = Some(number("the orbital energy")?);
        } else if is("occup") {
            if o.occupation.is_some() {
                return Err(twice());
            }
            o.occupation = Some(number("the occupation")?);
        } else if is("spin") {
            if o.spin.is_some() {
                return Err(twice());
            }
            let word = value.trim_ascii();
            o.spin = Some(if word.eq_ignore_ascii_case(b"alpha") {
                MoldenSpin::Alpha
            } else if word.eq_ignore_ascii_case(b"beta") {
                MoldenSpin::Beta
            } else {
                return Err(self.syntax(no, "Alpha or Beta after Spin=", excerpt(word)));
            });
        }
        // Unknown keys are ignored: writers add their own.
        Ok(())
    }

    fn coefficient(&self, no: usize, line: &[u8]) -> Result<(usize, f64, f64), MoldenError> {
        let expected = "a coefficient line (index, then value) or an orbital's key line (Sym=, Ene=, Spin=, Occup=)";
        let Ok((after, (digits, gap))) = coefficient_index(line) else {
            return Err(self.syntax(no, expected, excerpt(line.trim_ascii())));
        };
        // Without a blank, only a sign may follow the index ("12-0.5"); "10.5" is no index.
        if gap.is_empty() && !matches!(after.first(), Some(b'+' | b'-')) {
            return Err(self.syntax(no, expected, excerpt(line.trim_ascii())));
        }
        let index = std::str::from_utf8(digits)
            .ok()
            .and_then(|s| s.parse::<usize>().ok())
            .filter(|&i| i >= 1)
            .ok_or_else(|| self.syntax(no, "a coefficient index from 1 up", excerpt(digits)))?;
        let mut f = Fields::new(self.src, no, after);
        let (value, resolution) = f.float_with_resolution("the coefficient")?;
        f.finish("the coefficient")?;
        Ok((index, value, resolution))
    }
}

/// The coefficient count every orbital of `earlier` lists when each lists all of them in
/// order (indices 1, 2, …, K: a writer that prints every coefficient), `None` otherwise.
fn full_count(earlier: &[MoldenOrbital]) -> Option<usize> {
    let k = earlier.first()?.coefficients.len();
    let consecutive = |o: &MoldenOrbital| o.coefficients.iter().enumerate().all(|(i, &(index, _))| index == i + 1);
    earlier.iter().all(|o| o.coefficients.len() == k && consecutive(o)).then_some(k)
}

/// What is missing when `last`, the orbital the file ends in, was cut off: a file may leave
/// zero coefficients out, so a short orbital is a truncation only where the file's own
/// indexing shows it. Every earlier orbital lists the same K coefficients 1…K in order, and
/// `last` lists 1…m in order with m < K: the writer stopped (or the file was cut) inside it.
fn cut_off(earlier: &[MoldenOrbital], last: &MoldenOrbital) -> Option<String> {
    let k = full_count(earlier)?;
    let m = last.coefficients.len();
    let in_order = last.coefficients.iter().enumerate().all(|(i, &(index, _))| index == i + 1);
    (in_order && m < k).then(|| {
        format!(
            "coefficients {} to {k} of the orbital starting on line {} (every other orbital of the file lists {k}; the file is cut off)",
            m + 1,
            last.line
        )
    })
}

/// Molden errors name the file and line.
impl LineErrors for MoldenError {
    fn is_blank(b: u8) -> bool {
        is_blank(b)
    }

    fn syntax(src: &Path, line: usize, expected: String, found: String) -> Self {
        MoldenError::new(src, Some(line), MoldenErrorKind::Syntax { expected, found })
    }

    fn not_finite(src: &Path, line: usize, found: String) -> Self {
        MoldenError::new(src, Some(line), MoldenErrorKind::NotFinite { found })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn section_headers() {
        assert_eq!(
            section_header(b"[Atoms] (AU)"),
            Ok((&b" (AU)"[..], &b"Atoms"[..]))
        );
        assert_eq!(section_header(b"  [5D]").map(|(_, n)| n), Ok(&b"5D"[..]));
        assert!(section_header(b" 1 0.5").is_err());
        assert!(section_header(b"[Atoms").is_err());
    }

    #[test]
    fn units() {
        for (text, unit) in [
            (" (AU)", LengthUnit::Bohr),
            (" AU", LengthUnit::Bohr),
            (" (Angs)", LengthUnit::Angstrom),
            ("Angs", LengthUnit::Angstrom),
            (" (angstrom) ", LengthUnit::Angstrom),
        ] {
            let (_, w) = all_consuming(unit_word).parse(text.as_bytes()).expect(text);
            assert_eq!(length_unit(w), Some(unit), "{text}");
        }
    }

    #[test]
    fn lines_keep_numbering() {
        assert_eq!(
            split_lines(b"a\r\nb\n\nc"),
            vec![&b"a"[..], b"b", b"", b"c"]
        );
        assert_eq!(split_lines(b"a\n"), vec![&b"a"[..]]);
    }
}
