//! Molecular orbitals of a molden file: coefficients over the basis functions, spin,
//! occupation, energy and symmetry label.
//!
//! Spin: a file with any `Spin= Beta` orbital is unrestricted (each orbital one spin-orbital,
//! occupation at most 1); otherwise it is restricted (each orbital a spatial orbital,
//! occupation up to 2), whatever the `Spin= Alpha` lines say. A file with fractional
//! occupations holds natural orbitals. Orbitals are numbered from 1
//! within their spin channel in file order (restricted: one channel).

use sixray_parsers::molden::{MoldenFile, MoldenSpin};

use super::{BasisError, BasisSet};

/// Spin of an orbital.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum OrbitalSpin {
    /// A spatial orbital of a restricted calculation (holds up to two electrons).
    Restricted,
    /// An α spin-orbital of an unrestricted calculation.
    Alpha,
    /// A β spin-orbital of an unrestricted calculation.
    Beta,
}

impl OrbitalSpin {
    /// `restricted`, `alpha` or `beta`.
    pub fn name(self) -> &'static str {
        match self {
            OrbitalSpin::Restricted => "restricted",
            OrbitalSpin::Alpha => "alpha",
            OrbitalSpin::Beta => "beta",
        }
    }
}

/// One molecular orbital.
#[derive(Debug, Clone, PartialEq)]
pub struct Orbital {
    /// Spin.
    pub spin: OrbitalSpin,
    /// 1-based position within its spin channel, in file order.
    pub index: usize,
    /// Electrons in the orbital as written (`None` if the file gives none).
    pub occupation: Option<f64>,
    /// Orbital energy as written (hartree by the format), if given.
    pub energy: Option<f64>,
    /// Symmetry label as written, if given.
    pub symmetry: Option<String>,
    /// Coefficients over the basis functions (length [`BasisSet::function_count`]).
    pub coefficients: Vec<f64>,
    /// 1-based line of the file where the orbital starts.
    pub line: usize,
}

impl Orbital {
    /// Whether it holds electrons (occupation above 1e-8, the usual cut for "occupied").
    pub fn is_occupied(&self) -> bool {
        self.occupation.is_some_and(|f| f > 1e-8)
    }
}

/// The orbitals of one file.
#[derive(Debug, Clone, PartialEq)]
pub struct MolecularOrbitals {
    /// Orbitals in file order.
    pub orbitals: Vec<Orbital>,
    /// Whether the file is restricted (no `Spin= Beta` orbital).
    pub restricted: bool,
    /// Whether these are natural orbitals of a correlated calculation: some occupation is
    /// fractional (further than [`FRACTIONAL`] from 0, 1 and 2), or the file says so.
    pub natural: bool,
}

/// How far from a whole number an occupation must be to count as fractional: writers print
/// occupations to six or more decimals, and natural-orbital occupations of correlated
/// calculations differ from whole numbers by 1e-5 and more.
pub const FRACTIONAL: f64 = 1e-6;

/// Whether any occupation in `occupations` is fractional (see [`FRACTIONAL`]).
pub fn any_fractional(occupations: impl IntoIterator<Item = f64>) -> bool {
    occupations.into_iter().any(|f| (f - f.round()).abs() > FRACTIONAL)
}

impl MolecularOrbitals {
    /// The orbitals of a parsed file over `basis` (built from the same file). Errors name the
    /// file and line: coefficient indices beyond the basis or repeated, negative occupations,
    /// or spin-orbitals with more than one electron.
    pub fn from_molden(m: &MoldenFile, basis: &BasisSet) -> Result<MolecularOrbitals, BasisError> {
        let n = basis.function_count();
        let restricted = !m.orbitals.iter().any(|o| o.spin == Some(MoldenSpin::Beta));
        let mut counts = [0usize; 2];
        let mut orbitals = Vec::with_capacity(m.orbitals.len());
        for o in &m.orbitals {
            let err = |line: usize, message: String| BasisError::at(&m.source, Some(line), message);
            let mut c = vec![0.0; n];
            let mut seen = vec![false; n];
            for (&(index, value), &line) in o.coefficients.iter().zip(&o.coefficient_lines) {
                if index == 0 || index > n {
                    return Err(err(
                        line,
                        format!("expected a coefficient index from 1 to {n} (the basis functions), found {index}"),
                    ));
                }
                if std::mem::replace(&mut seen[index - 1], true) {
                    return Err(err(
                        line,
                        format!("expected each coefficient index once per orbital, found {index} again"),
                    ));
                }
                c[index - 1] = value;
            }
            let spin = match (restricted, o.spin) {
                (true, _) => OrbitalSpin::Restricted,
                (false, Some(MoldenSpin::Beta)) => OrbitalSpin::Beta,
                (false, _) => OrbitalSpin::Alpha,
            };
            if let Some(f) = o.occupation {
                let most = if restricted { 2.0 } else { 1.0 };
                // Writers round occupations; allow the last printed digits.
                if !(-1e-6..=most + 1e-6).contains(&f) {
                    let what = if restricted {
                        "a spatial orbital"
                    } else {
                        "a spin-orbital of an unrestricted file"
                    };
                    return Err(err(
                        o.line,
                        format!("expected an occupation from 0 to {most} for {what}, found {f}"),
                    ));
                }
            }
            let channel = usize::from(spin == OrbitalSpin::Beta);
            counts[channel] += 1;
            orbitals.push(Orbital {
                spin,
                index: counts[channel],
                occupation: o.occupation,
                energy: o.energy,
                symmetry: o.symmetry.clone(),
                coefficients: c,
                line: o.line,
            });
        }
        let natural = any_fractional(orbitals.iter().filter_map(|o| o.occupation));
        Ok(MolecularOrbitals { orbitals, restricted, natural })
    }

    /// The occupied orbitals, in file order.
    pub fn occupied(&self) -> impl Iterator<Item = &Orbital> {
        self.orbitals.iter().filter(|o| o.is_occupied())
    }
}
