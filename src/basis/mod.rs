//! Contracted Gaussian basis sets and molecular orbitals from molden files: evaluation of
//! orbitals and their gradients anywhere, analytic overlaps, and exact Hartree self-energies
//! ([`coulomb`]).
//!
//! A shell on centre A with angular momentum l, exponents α_p (bohr⁻²) and contraction
//! coefficients d_p spans χ_abc(r) = x^a y^b z^c Σ_p d_p N_l(α_p) e^{−α_p r²} (x, y, z relative
//! to A, a + b + c = l), where N_l(α)² = (4α)^l (2α/π)^{3/2} / (2l−1)!! normalises
//! x^l e^{−αr²} ("contraction coefficients refer to normalised primitives"). The contraction is
//! then renormalised so that χ_l00 has unit norm (common practice; it changes nothing for
//! writers that already normalise it). The file's basis functions are the normalised Cartesian
//! components or real solid harmonics described in [`angular`]. A molden scale factor s
//! multiplies exponents by s² (the convention of Gaussian basis-set input, which the format
//! follows; from memory; writers put 1.0).
//!
//! Molecular orbitals are φ_i = Σ_μ C_μi φ_μ with the file's coefficients, coefficients the
//! file leaves out being zero. Internally everything runs on the Cartesian components χ: an
//! orbital's coefficients are carried over once per orbital with the shells' matrices T.
//!
//! Units: bohr and hartree; positions in Ångström are converted with
//! [`BOHR_PER_ANGSTROM`](crate::grid::BOHR_PER_ANGSTROM).

pub mod aim;
pub mod angular;
pub mod boys;
pub mod convention;
pub mod coulomb;
mod eval;
pub mod fchk;
pub(crate) mod hermite;
mod orbitals;
mod overlap;
#[cfg(test)]
mod tests;
#[cfg(test)]
mod wavefunction_tests;

use std::fmt;
use std::path::{Path, PathBuf};

use sixray_parsers::LengthUnit;
use sixray_parsers::molden::{MoldenError, MoldenFile, MoldenFlag, ShellType, read_molden};

use crate::grid::BOHR_PER_ANGSTROM;

pub use convention::{BasisConvention, Convention, Orthonormality};
use convention::{CartesianScale, HarmonicSigns, PrimitiveScale};
pub use eval::OrbitalValues;
pub use orbitals::{MolecularOrbitals, Orbital, OrbitalSpin};

/// Highest angular momentum supported (i).
pub const MAX_L: u32 = 6;

/// A basis set or orbital set that cannot be built: where and why.
#[derive(Debug, thiserror::Error)]
pub enum BasisError {
    /// The file could not be read.
    #[error(transparent)]
    Read(#[from] MoldenError),
    /// The data are readable but unusable. Displays as `PATH:LINE: message`.
    #[error("{}{message}", Location(path.as_deref(), *line))]
    Invalid {
        /// The file, if the data came from one.
        path: Option<PathBuf>,
        /// 1-based line, if one applies.
        line: Option<usize>,
        /// What is wrong, in the form "expected …, found …" where that fits.
        message: String,
    },
}

impl BasisError {
    pub(crate) fn at(path: &Path, line: Option<usize>, message: impl Into<String>) -> Self {
        BasisError::Invalid {
            path: Some(path.to_path_buf()),
            line,
            message: message.into(),
        }
    }

    fn plain(message: impl Into<String>) -> Self {
        BasisError::Invalid {
            path: None,
            line: None,
            message: message.into(),
        }
    }
}

/// `PATH:LINE: `, `PATH: ` or nothing.
struct Location<'a>(Option<&'a Path>, Option<usize>);

impl fmt::Display for Location<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match (self.0, self.1) {
            (Some(p), Some(l)) => write!(f, "{}:{l}: ", p.display()),
            (Some(p), None) => write!(f, "{}: ", p.display()),
            _ => Ok(()),
        }
    }
}

/// One contracted shell, normalised (see the module header).
#[derive(Debug, Clone, PartialEq)]
pub struct Shell {
    /// Centre, bohr.
    pub centre: [f64; 3],
    /// Angular momentum.
    pub l: u32,
    /// Whether its functions are real solid harmonics (2l+1 of them) rather than Cartesian
    /// components ((l+1)(l+2)/2); always false for s and p.
    pub spherical: bool,
    /// Exponents α_p, bohr⁻² (scale factor applied).
    pub exponents: Vec<f64>,
    /// Index of the atom the shell sits on (position in [`BasisSet::atoms`]).
    pub atom: usize,
    /// Coefficients of the plain primitives x^a y^b z^c e^{−α_p r²}: d_p N_l(α_p) times the
    /// contraction's renormalisation.
    pub(crate) raw: Vec<f64>,
    /// T (functions × Cartesian components, row-major), see [`angular`].
    pub(crate) to_cartesian: Vec<f64>,
}

impl Shell {
    /// A shell from exponents (bohr⁻², > 0) and contraction coefficients of normalised
    /// primitives. Errors for l above [`MAX_L`] (i), mismatched or empty lists, non-positive exponents or a
    /// contraction of zero norm.
    pub fn new(
        centre: [f64; 3],
        l: u32,
        spherical: bool,
        exponents: Vec<f64>,
        coefficients: &[f64],
        atom: usize,
    ) -> Result<Shell, BasisError> {
        convention_shell(&Convention::MOLDEN, centre, l, spherical, exponents, coefficients, atom)
    }

    /// A shell from its parts as a reader has decided them: `raw`, the coefficients of the plain
    /// primitives x^l e^{−α_p r²} of the radial part R (any normalisation: nothing is rescaled
    /// here), and `rows`, the matrix T (functions × internal Cartesian components, row-major)
    /// with φ_j = Σ_k T_jk χ_k, χ_abc = x^a y^b z^c R. For file conventions other than the
    /// molden one (other component orders, normalisations, signs; uncontracted primitives).
    /// `spherical` only describes the shell in reports. Errors for l above [`MAX_L`], empty or
    /// mismatched lists, non-positive exponents, or non-finite numbers.
    pub fn from_parts(
        centre: [f64; 3],
        l: u32,
        spherical: bool,
        exponents: Vec<f64>,
        raw: Vec<f64>,
        rows: Vec<f64>,
        atom: usize,
    ) -> Result<Shell, BasisError> {
        if l > MAX_L {
            return Err(BasisError::plain(format!(
                "expected a shell of angular momentum at most {MAX_L}, found {l}"
            )));
        }
        if exponents.is_empty() || exponents.len() != raw.len() {
            return Err(BasisError::plain(format!(
                "expected as many contraction coefficients as exponents (at least one), found {} and {}",
                raw.len(),
                exponents.len()
            )));
        }
        if let Some(a) = exponents.iter().find(|a| !(a.is_finite() && **a > 0.0)) {
            return Err(BasisError::plain(format!("expected positive exponents, found {a}")));
        }
        if let Some(c) = raw.iter().chain(&rows).find(|c| !c.is_finite()) {
            return Err(BasisError::plain(format!("expected finite coefficients, found {c}")));
        }
        let nc = angular::cartesian_count(l);
        if rows.is_empty() || rows.len() % nc != 0 {
            return Err(BasisError::plain(format!(
                "expected whole rows of {nc} Cartesian components, found {} numbers",
                rows.len()
            )));
        }
        Ok(Shell { centre, l, spherical: spherical && l >= 2, exponents, atom, raw, to_cartesian: rows })
    }

    /// Number of basis functions (2l+1 spherical, (l+1)(l+2)/2 Cartesian in the molden
    /// convention; the rows of T in general).
    pub fn function_count(&self) -> usize {
        self.to_cartesian.len() / angular::cartesian_count(self.l)
    }

    /// Number of Cartesian components used internally.
    pub fn cartesian_count(&self) -> usize {
        angular::cartesian_count(self.l)
    }

    /// Coefficients of the plain primitives x^a y^b z^c e^{−α_p r²} of the component χ_l00
    /// (normalisation included).
    pub fn primitive_coefficients(&self) -> &[f64] {
        &self.raw
    }
}

/// N_l(α): normalises x^l e^{−α r²}.
pub(crate) fn primitive_norm(l: u32, a: f64) -> f64 {
    ((4.0 * a).powi(l as i32) * (2.0 * a / std::f64::consts::PI).powf(1.5) / angular::odd_double_factorial(l)).sqrt()
}

/// ⟨χ_l00|χ_l00⟩ for plain-primitive coefficients `raw`.
pub(crate) fn contraction_norm2(l: u32, exponents: &[f64], raw: &[f64]) -> f64 {
    let df = angular::odd_double_factorial(l);
    let mut sum = 0.0;
    for (&ap, &rp) in exponents.iter().zip(raw) {
        for (&aq, &rq) in exponents.iter().zip(raw) {
            let g = ap + aq;
            sum += rp * rq * df / (2.0 * g).powi(l as i32) * (std::f64::consts::PI / g).powf(1.5);
        }
    }
    sum
}

/// A molden shell read under `convention` (see [`convention`]); [`Shell::new`] is the format's
/// own convention. Errors for l above [`MAX_L`] (i), mismatched or empty lists, non-positive
/// exponents or a contraction of zero norm.
fn convention_shell(
    convention: &Convention,
    centre: [f64; 3],
    l: u32,
    spherical: bool,
    exponents: Vec<f64>,
    coefficients: &[f64],
    atom: usize,
) -> Result<Shell, BasisError> {
    if l > MAX_L {
        return Err(BasisError::plain(format!("expected a shell of angular momentum at most {MAX_L} (i), found {l}")));
    }
    if exponents.is_empty() || exponents.len() != coefficients.len() {
        return Err(BasisError::plain(format!(
            "expected as many contraction coefficients as exponents (at least one), found {} and {}",
            coefficients.len(),
            exponents.len()
        )));
    }
    let spherical = spherical && l >= 2;
    let mut rows = angular::transformation(l, spherical)
        .ok_or_else(|| BasisError::plain(format!("no component order for l = {l}")))?;
    let mut raw: Vec<f64> = match convention.primitives {
        PrimitiveScale::Normalised => exponents.iter().zip(coefficients).map(|(&a, &d)| d * primitive_norm(l, a)).collect(),
        PrimitiveScale::Plain => coefficients.to_vec(),
    };
    // Non-positive exponents are from_parts' to report; a zero norm would divide here first.
    let valid_exponents = exponents.iter().all(|a| a.is_finite() && *a > 0.0);
    if convention.renormalised && valid_exponents {
        let norm2 = contraction_norm2(l, &exponents, &raw);
        if !(norm2.is_finite() && norm2 > 0.0) {
            return Err(BasisError::plain(format!("expected a contraction of non-zero norm, found norm² {norm2:e}")));
        }
        let scale = 1.0 / norm2.sqrt();
        raw.iter_mut().for_each(|r| *r *= scale);
    }
    let nc = angular::cartesian_count(l);
    if spherical {
        if convention.signs == HarmonicSigns::FlippedHighM && (l == 3 || l == 4) {
            for (j, m) in angular::molden_m_order(l).into_iter().enumerate() {
                if m.unsigned_abs() >= 3 {
                    rows[j * nc..(j + 1) * nc].iter_mut().for_each(|t| *t = -*t);
                }
            }
        }
    } else if l >= 2 && convention.cartesian != CartesianScale::EachComponent {
        let order = angular::molden_cartesian_order(l)
            .ok_or_else(|| BasisError::plain(format!("no Cartesian component order for l = {l}")))?;
        for (j, e) in order.into_iter().enumerate() {
            let factor = convention.cartesian.factor(e);
            rows[j * nc..(j + 1) * nc].iter_mut().for_each(|t| *t *= factor);
        }
    }
    Shell::from_parts(centre, l, spherical, exponents, raw, rows, atom)
}

/// An atom of the basis set's molecule.
#[derive(Debug, Clone, PartialEq)]
pub struct Atom {
    /// Label as written.
    pub label: String,
    /// Atomic number.
    pub atomic_number: u32,
    /// Position, bohr.
    pub position: [f64; 3],
    /// Whether it is a ghost: a centre of basis functions without a nucleus (atomic number 0,
    /// or a nuclear charge of 0 as written).
    pub ghost: bool,
    /// 1-based line of the file that gives its position, where the format has one.
    pub line: Option<usize>,
}

/// Closest two nuclei may be, bohr: fourteen times shorter than the shortest bond there is (H₂,
/// 1.4 bohr; common practice), so two nuclei closer than this are one atom written twice or a
/// wrong geometry. Ghost atoms (no nucleus) may sit anywhere, coinciding ones included.
pub const MIN_NUCLEAR_DISTANCE: f64 = 0.1;

/// Distance between two points, bohr.
pub(crate) fn distance(a: [f64; 3], b: [f64; 3]) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2) + (a[2] - b[2]).powi(2)).sqrt()
}

/// A basis set: atoms and shells in the file's order. Function μ of the set is function
/// `μ − first` of the shell that holds it (see [`BasisSet::shell_offsets`]).
#[derive(Debug, Clone, PartialEq)]
pub struct BasisSet {
    /// Atoms, in the order of the file's `[Atoms]` section.
    pub atoms: Vec<Atom>,
    /// Shells, in the file's order.
    pub shells: Vec<Shell>,
    offsets: Vec<usize>,
    cart_offsets: Vec<usize>,
}

/// Whether d, f and g shells are spherical, from the flag sections as written.
///
/// h and i shells follow g: there are no flags of their own (PySCF 2.14's `molden.header`
/// writes `[5d] [7f] [9g]` for spherical shells of any l, and IOData's reader takes `[9g]` to
/// cover h "as PSI4 and ORCA write them"; theochem/iodata, `iodata/formats/molden.py`).
fn spherical_flags(m: &MoldenFile) -> Result<[bool; 3], BasisError> {
    // Per l = 2, 3, 4: the setting and the line that made it.
    let mut set: [Option<(bool, usize)>; 3] = [None; 3];
    for &(flag, line) in &m.flags {
        let settings: &[(usize, bool)] = match flag {
            MoldenFlag::D5 | MoldenFlag::D5F7 => &[(0, true), (1, true)],
            MoldenFlag::D5F10 => &[(0, true), (1, false)],
            MoldenFlag::F7 => &[(1, true)],
            MoldenFlag::G9 => &[(2, true)],
            MoldenFlag::D6 => &[(0, false)],
            MoldenFlag::F10 => &[(1, false)],
            MoldenFlag::G15 => &[(2, false)],
        };
        for &(k, spherical) in settings {
            match set[k] {
                Some((s, first)) if s != spherical => {
                    let letter = ["d", "f", "g"][k];
                    return Err(BasisError::at(
                        &m.source,
                        Some(line),
                        format!(
                            "expected flags that agree on the {letter} shells, found this one contradicting line {first}"
                        ),
                    ));
                }
                Some(_) => {}
                None => set[k] = Some((spherical, line)),
            }
        }
    }
    Ok(set.map(|s| s.is_some_and(|(v, _)| v)))
}

impl BasisSet {
    /// A basis set from shells built in code (atoms optional: pass an empty list).
    pub fn new(atoms: Vec<Atom>, shells: Vec<Shell>) -> BasisSet {
        let mut offsets = Vec::with_capacity(shells.len() + 1);
        let mut cart_offsets = Vec::with_capacity(shells.len() + 1);
        let (mut n, mut c) = (0, 0);
        for s in &shells {
            offsets.push(n);
            cart_offsets.push(c);
            n += s.function_count();
            c += s.cartesian_count();
        }
        offsets.push(n);
        cart_offsets.push(c);
        BasisSet {
            atoms,
            shells,
            offsets,
            cart_offsets,
        }
    }

    /// The basis set of a parsed molden file: positions to bohr, shells normalised, d/f/g
    /// Cartesian or spherical as its flags say (Cartesian without flags), h and i spherical
    /// under `[9G]` (Cartesian h and i are refused: the format defines no order for them), `sp`
    /// shells split into an s and a p shell. Errors name the file and line.
    pub fn from_molden(m: &MoldenFile) -> Result<BasisSet, BasisError> {
        Self::from_molden_with(m, &Convention::MOLDEN)
    }

    /// [`BasisSet::from_molden`] with the file's numbers read under `convention` (see
    /// [`convention`]).
    pub fn from_molden_with(m: &MoldenFile, convention: &Convention) -> Result<BasisSet, BasisError> {
        let path = &m.source;
        let scale = match m.atoms_unit {
            Some(LengthUnit::Bohr) => 1.0,
            Some(LengthUnit::Angstrom) => BOHR_PER_ANGSTROM,
            None => {
                return Err(BasisError::at(
                    path,
                    Some(m.atoms_line),
                    "expected the unit of [Atoms] ((AU) or (Angs)), found none",
                ));
            }
        };
        let mut atoms = Vec::with_capacity(m.atoms.len());
        for a in &m.atoms {
            let z = u32::try_from(a.atomic_number)
                .ok()
                .filter(|&z| z <= 200)
                .ok_or_else(|| {
                    BasisError::at(
                        path,
                        Some(a.line),
                        format!("expected an atomic number from 0 to 200, found {}", a.atomic_number),
                    )
                })?;
            if let Some(first) = m.atoms.iter().find(|b| b.index == a.index && b.line < a.line) {
                return Err(BasisError::at(
                    path,
                    Some(a.line),
                    format!(
                        "expected a new atom sequence number, found {} again (line {})",
                        a.index, first.line
                    ),
                ));
            }
            atoms.push(Atom {
                label: a.label.clone(),
                atomic_number: z,
                position: a.position.map(|x| x * scale),
                ghost: z == 0,
                line: Some(a.line),
            });
        }
        check_nuclei(path, &atoms)?;
        let spherical = spherical_flags(m)?;
        let mut shells = Vec::new();
        for (k, block) in m.basis.iter().enumerate() {
            let Some(atom) = m.atoms.iter().position(|a| a.index == block.atom) else {
                return Err(BasisError::at(
                    path,
                    Some(block.line),
                    format!(
                        "expected the sequence number of an atom in [Atoms], found {}",
                        block.atom
                    ),
                ));
            };
            if let Some(first) = m.basis[..k].iter().find(|b| b.atom == block.atom) {
                return Err(BasisError::at(
                    path,
                    Some(block.line),
                    format!(
                        "expected one [GTO] block per atom, found atom {} again (line {})",
                        block.atom, first.line
                    ),
                ));
            }
            let centre = atoms[atom].position;
            for s in &block.shells {
                let factor = match s.scale {
                    Some(f) if !(f.is_finite() && f > 0.0) => {
                        return Err(BasisError::at(
                            path,
                            Some(s.line),
                            format!("expected a positive scale factor, found {f}"),
                        ));
                    }
                    Some(f) => f * f,
                    None => 1.0,
                };
                for (k, p) in s.primitives.iter().enumerate() {
                    if p.exponent <= 0.0 {
                        return Err(BasisError::at(
                            path,
                            Some(s.line + 1 + k),
                            format!("expected a positive exponent, found {}", p.exponent),
                        ));
                    }
                }
                let exponents: Vec<f64> = s.primitives.iter().map(|p| p.exponent * factor).collect();
                let parts: Vec<(u32, Vec<f64>)> = match s.shell_type {
                    ShellType::Sp => vec![
                        (0, s.primitives.iter().map(|p| p.coefficient).collect()),
                        (1, s.primitives.iter().map(|p| p.coefficient_p.unwrap_or(0.0)).collect()),
                    ],
                    t => {
                        let l = t.angular_momentum().unwrap_or(0);
                        if l > MAX_L {
                            return Err(BasisError::at(
                                path,
                                Some(s.line),
                                format!(
                                    "expected a shell of type s, p, sp, d, f, g, h or i, found {}",
                                    t.letters()
                                ),
                            ));
                        }
                        if l > 4 && !spherical[2] {
                            return Err(BasisError::at(
                                path,
                                Some(s.line),
                                format!(
                                    "expected spherical {} functions (flag [9G]): the format defines no Cartesian order above g",
                                    t.letters()
                                ),
                            ));
                        }
                        vec![(l, s.primitives.iter().map(|p| p.coefficient).collect())]
                    }
                };
                for (l, coefficients) in parts {
                    // h and i follow g (see `spherical_flags`).
                    let sph = l >= 2 && spherical[(l as usize).min(4) - 2];
                    let shell = convention_shell(convention, centre, l, sph, exponents.clone(), &coefficients, atom)
                        .map_err(|e| match e {
                            BasisError::Invalid { message, .. } => BasisError::at(path, Some(s.line), message),
                            other => other,
                        })?;
                    shells.push(shell);
                }
            }
        }
        Ok(BasisSet::new(atoms, shells))
    }

    /// Number of basis functions.
    pub fn function_count(&self) -> usize {
        self.offsets[self.shells.len()]
    }

    /// Number of Cartesian components used internally.
    pub fn cartesian_count(&self) -> usize {
        self.cart_offsets[self.shells.len()]
    }

    /// First function of each shell, and the total at the end (length shells + 1).
    pub fn shell_offsets(&self) -> &[usize] {
        &self.offsets
    }

    pub(crate) fn cartesian_offsets(&self) -> &[usize] {
        &self.cart_offsets
    }

    /// Coefficients of one orbital over the internal Cartesian components, from its
    /// coefficients over the basis functions (length [`BasisSet::function_count`]).
    pub(crate) fn to_cartesian(&self, c: &[f64]) -> Vec<f64> {
        let mut out = vec![0.0; self.cartesian_count()];
        for (k, s) in self.shells.iter().enumerate() {
            let nc = s.cartesian_count();
            let src = &c[self.offsets[k]..self.offsets[k + 1]];
            let dst = &mut out[self.cart_offsets[k]..self.cart_offsets[k + 1]];
            for (j, &cj) in src.iter().enumerate() {
                for (d, t) in dst.iter_mut().zip(&s.to_cartesian[j * nc..(j + 1) * nc]) {
                    *d += cj * t;
                }
            }
        }
        out
    }
}

/// Refuses nuclei closer than [`MIN_NUCLEAR_DISTANCE`] (ghost atoms are no nuclei), naming both
/// atoms and their lines; the error is at the later atom's line (or its section's).
pub(crate) fn check_nuclei(path: &Path, atoms: &[Atom]) -> Result<(), BasisError> {
    for j in 0..atoms.len() {
        for i in 0..j {
            let d = distance(atoms[i].position, atoms[j].position);
            if !atoms[i].ghost && !atoms[j].ghost && (d.is_nan() || d < MIN_NUCLEAR_DISTANCE) {
                // Each atom's own line where the format gives one (not one section's for all).
                let own_lines = atoms[i].line != atoms[j].line;
                let name = |k: usize| {
                    let a = &atoms[k];
                    match a.line.filter(|_| own_lines) {
                        Some(line) => format!("atom {} ({}, line {line})", k + 1, a.label),
                        None => format!("atom {} ({})", k + 1, a.label),
                    }
                };
                return Err(BasisError::at(
                    path,
                    atoms[j].line,
                    format!(
                        "expected nuclei at least {MIN_NUCLEAR_DISTANCE} bohr apart, found {} and {} {} (the same atom \
                         twice, or a wrong geometry)",
                        name(i),
                        name(j),
                        if d == 0.0 { "at the same position".to_string() } else { format!("{d:.3e} bohr apart") }
                    ),
                ));
            }
        }
    }
    Ok(())
}

/// Reads any file with its own Gaussian basis (molden, fchk, wfn or wfx, told apart by content,
/// plain or gzip) and builds its basis set and orbitals, with how the file was read and the
/// evidence: the occupied orbitals must be orthonormal over the basis as read (see
/// [`convention`]; molden files are tried under every convention that could matter), or the
/// file is refused.
pub fn read_any(path: &Path) -> Result<(BasisSet, MolecularOrbitals, BasisConvention), BasisError> {
    match read_format(path)? {
        AsWritten::Molden(file) => convention::detect(&file),
        AsWritten::Defined(format, basis, orbitals, provenance) => convention::checked(path, format, basis, orbitals, provenance),
    }
}

/// The orbitals of any basis-set file as written, without deciding a molden file's convention
/// or checking orthonormality: for labels, occupations and counts, which no convention changes
/// (and which would otherwise cost the convention's overlap matrices again per use).
pub fn read_orbitals(path: &Path) -> Result<MolecularOrbitals, BasisError> {
    match read_format(path)? {
        AsWritten::Molden(file) => MolecularOrbitals::from_molden(&file, &BasisSet::from_molden(&file)?),
        AsWritten::Defined(_, _, orbitals, _) => Ok(orbitals),
    }
}

/// Why a basis-set file yields no orbitals at all, for its failure: `the file has no [MO]
/// section`, `its [MO] section (line 40) lists no orbitals` or `the file lists no orbitals`.
pub fn why_no_orbitals(path: &Path) -> Result<String, BasisError> {
    Ok(match read_format(path)? {
        AsWritten::Molden(file) => match file.mo_lines.as_slice() {
            [] => "the file has no [MO] section (no orbital coefficients)".to_string(),
            [line] => format!("its [MO] section (line {line}) lists no orbitals"),
            lines => format!("its [MO] sections (lines {}) list no orbitals", lines.iter().map(usize::to_string).collect::<Vec<_>>().join(", ")),
        },
        AsWritten::Defined(..) => "the file lists no orbitals".to_string(),
    })
}

/// A basis-set file read as its format is written: a molden file still to be interpreted, or a
/// format that defines its conventions, already converted.
enum AsWritten {
    Molden(sixray_parsers::molden::MoldenFile),
    Defined(&'static str, BasisSet, MolecularOrbitals, fchk::Provenance),
}

fn read_format(path: &Path) -> Result<AsWritten, BasisError> {
    use sixray_parsers::{FileFormat, sniff_format};
    let format = sniff_format(path).map_err(|e| BasisError::at(path, None, format!("read failed: {e}")))?;
    let (name, (basis, orbitals, provenance)) = match format {
        FileFormat::Molden => return Ok(AsWritten::Molden(read_molden(path)?)),
        FileFormat::Fchk => ("fchk", fchk::read(path)?),
        FileFormat::Wfn => ("wfn", aim::read_wfn_file(path)?),
        FileFormat::Wfx => ("wfx", aim::read_wfx_file(path)?),
        other => {
            return Err(BasisError::at(
                path,
                None,
                format!("expected a molden, fchk, wfn or wfx file, found a {} file", other.name()),
            ));
        }
    };
    check_nuclei(path, &basis.atoms)?;
    Ok(AsWritten::Defined(name, basis, orbitals, provenance))
}

/// Reads a molden file (plain or gzip) and builds its basis set and orbitals.
/// The convention is decided from the orbitals' orthonormality ([`convention`]); files no
/// convention fits are refused.
pub fn read(path: &Path) -> Result<(BasisSet, MolecularOrbitals), BasisError> {
    read_checked(path).map(|(b, o, _)| (b, o))
}

/// [`read`], with the convention used and its evidence (molden files only; [`read_any`] reads
/// every format).
pub fn read_checked(path: &Path) -> Result<(BasisSet, MolecularOrbitals, BasisConvention), BasisError> {
    let file = read_molden(path)?;
    convention::detect(&file)
}
