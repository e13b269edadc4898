//! Basis sets and orbitals of Gaussian formatted checkpoint files.
//!
//! Conventions of the format (the component orders as iodata documents them for fchk files:
//! theochem/iodata, `iodata/formats/fchk.py`, `CONVENTIONS`; the g and h orders agree with
//! the AIMPAC type numbers Gaussian writes for the same shells in `he_spdfgh_orbital.wfn`):
//!
//! - shell type 0 s, 1 p, −1 sp (an s and a p shell sharing exponents; the p coefficients are
//!   `P(S=P) Contraction coefficients`), +l Cartesian, −l pure (l ≥ 2);
//! - contraction coefficients refer to normalised primitives; the contraction is renormalised
//!   as in [`Shell::new`] (a no-op for normalised contractions);
//! - Cartesian functions are normalised one by one, in the order d: xx, yy, zz, xy, xz, yz;
//!   f: xxx, yyy, zzz, xyy, xxy, xxz, xzz, yzz, yyz, xyz; g and above: the reverse of the
//!   alphabetical order (g: zzzz, yzzz, yyzz, …, xxxy, xxxx);
//! - pure functions are the normalised real solid harmonics in the order m = 0, +1, −1, +2,
//!   −2, … with the signs of [`angular::solid_harmonic`] (the same as molden files).
//!
//! Orbitals: `Alpha MO coefficients` (orbital-major, one row of basis-function coefficients per
//! orbital) with `Alpha Orbital Energies`, and the `Beta` pair when present (unrestricted).
//! The file carries no occupations; they follow from the electron counts in aufbau order:
//!
//! - unrestricted: the first N_α α and the first N_β β spin-orbitals hold one electron;
//! - restricted (closed shell or restricted open shell): the first N_β spatial orbitals hold
//!   two electrons and the next N_α − N_β one. Singly occupied orbitals of a restricted open-
//!   shell file stay [`OrbitalSpin::Restricted`] with occupation 1, which the analysis reads as
//!   one α spin-orbital (see `crate::molecular`), so the doubly occupied ones keep their α and
//!   β spin-orbitals identical as the calculation made them;
//! - a real array whose name contains "natural" and "occup" (any case) with one value per
//!   orbital replaces these occupations (natural orbitals).
//!
//! Effective core potentials: with `ECP-` sections, or nuclear charges between 0 and the atomic
//! number (ghost atoms carry 0), the file describes valence electrons only; [`Provenance::ecp`] says so and
//! [`Provenance::nuclear_charges`] holds the charges as written (valence charges).

use std::path::Path;

use sixray_parsers::fchk::{FchkError, FchkFile, read_fchk};

use super::{
    Atom, BasisError, BasisSet, MAX_L, MolecularOrbitals, Orbital, OrbitalSpin, Shell, angular, contraction_norm2,
    primitive_norm,
};

/// What the conversion learnt about the file beyond the basis set and orbitals.
#[derive(Debug, Clone, PartialEq)]
pub struct Provenance {
    /// Whether core electrons are replaced by effective core potentials: the orbitals are the
    /// valence orbitals, and the nuclear charges are valence charges.
    pub ecp: bool,
    /// Nuclear charges as written (electrons; valence charges when `ecp`), one per atom.
    pub nuclear_charges: Vec<f64>,
    /// Spin multiplicity 2S + 1 as written, if written.
    pub multiplicity: Option<i64>,
    /// Whether the occupations are natural-orbital occupations read from the file rather than
    /// aufbau occupations from the electron counts.
    pub natural_orbitals: bool,
}

/// Reads a formatted checkpoint file (plain or gzip) and builds its basis set and orbitals.
pub fn read(path: &Path) -> Result<(BasisSet, MolecularOrbitals, Provenance), BasisError> {
    let file = read_fchk(path)?;
    from_fchk(&file)
}

impl From<FchkError> for BasisError {
    fn from(e: FchkError) -> Self {
        BasisError::Invalid { path: Some(e.path.clone()), line: e.line, message: e.kind.to_string() }
    }
}

/// Gaussian's Cartesian component order for angular momentum `l` (see the module header).
pub fn gaussian_cartesian_order(l: u32) -> Vec<[u32; 3]> {
    let parse = super::angular::components_named;
    match l {
        0 => vec![[0, 0, 0]],
        1 => parse(&["x", "y", "z"]),
        2 => parse(&["xx", "yy", "zz", "xy", "xz", "yz"]),
        3 => parse(&["xxx", "yyy", "zzz", "xyy", "xxy", "xxz", "xzz", "yzz", "yyz", "xyz"]),
        // The internal order is the alphabetical one (a, then b descending).
        _ => angular::cartesian_components(l).into_iter().rev().collect(),
    }
}

/// Rows of T selecting the Cartesian components `order`, each normalised on its own.
pub(crate) fn cartesian_rows(l: u32, order: &[[u32; 3]]) -> Vec<f64> {
    let nc = angular::cartesian_count(l);
    let mut t = vec![0.0; order.len() * nc];
    for (j, &e) in order.iter().enumerate() {
        t[j * nc + angular::cartesian_index(e)] = 1.0 / angular::component_overlap(e, e).sqrt();
    }
    t
}

/// A contracted shell in Gaussian's conventions.
fn gaussian_shell(
    centre: [f64; 3],
    l: u32,
    pure: bool,
    exponents: Vec<f64>,
    coefficients: &[f64],
    atom: usize,
) -> Result<Shell, BasisError> {
    if l > MAX_L {
        return Err(BasisError::plain(format!("expected a shell of angular momentum at most {MAX_L}, found {l}")));
    }
    if exponents.len() != coefficients.len() || exponents.iter().any(|a| !(a.is_finite() && *a > 0.0)) {
        return Err(BasisError::plain("expected positive exponents, one per contraction coefficient"));
    }
    // As in Shell::new: normalised primitives, then the contraction renormalised.
    let mut raw: Vec<f64> = exponents.iter().zip(coefficients).map(|(&a, &d)| d * primitive_norm(l, a)).collect();
    let norm2 = contraction_norm2(l, &exponents, &raw);
    if !(norm2.is_finite() && norm2 > 0.0) {
        return Err(BasisError::plain(format!("expected a contraction of non-zero norm, found norm² {norm2:e}")));
    }
    raw.iter_mut().for_each(|r| *r /= norm2.sqrt());
    let rows = if pure && l >= 2 {
        angular::transformation(l, true)
            .ok_or_else(|| BasisError::plain(format!("no solid harmonics for l = {l}")))?
    } else {
        cartesian_rows(l, &gaussian_cartesian_order(l))
    };
    Shell::from_parts(centre, l, pure, exponents, raw, rows, atom)
}

/// The basis set, orbitals and provenance of a parsed file. Errors name the file and the
/// line of the section at fault.
pub fn from_fchk(f: &FchkFile) -> Result<(BasisSet, MolecularOrbitals, Provenance), BasisError> {
    let path = f.source.as_path();
    let missing = |name: &str| BasisError::at(path, None, format!("expected a section \"{name}\", found none"));
    let ints = |name: &str| f.ints(name)?.ok_or_else(|| missing(name));
    let reals = |name: &str| f.reals(name)?.ok_or_else(|| missing(name));
    let int = |name: &str| f.int(name)?.ok_or_else(|| missing(name));
    let line_of = |name: &str| f.get(name).map(|s| s.line);
    let length = |name: &str, found: usize, expected: usize, why: &str| -> Result<(), BasisError> {
        if found == expected {
            Ok(())
        } else {
            Err(BasisError::at(path, line_of(name), format!("expected {expected} values in \"{name}\" ({why}), found {found}")))
        }
    };

    // Atoms.
    let (numbers, numbers_line) = ints("Atomic numbers")?;
    let (coords, coords_line) = reals("Current cartesian coordinates")?;
    length("Current cartesian coordinates", coords.len(), 3 * numbers.len(), "three per atom")?;
    let nuclear_charges: Vec<f64> = match f.reals("Nuclear charges")? {
        Some((q, _)) => {
            length("Nuclear charges", q.len(), numbers.len(), "one per atom")?;
            q.to_vec()
        }
        None => numbers.iter().map(|&z| z as f64).collect(),
    };
    let mut atoms = Vec::with_capacity(numbers.len());
    for (k, &z) in numbers.iter().enumerate() {
        let z = u32::try_from(z).ok().filter(|&z| z <= 200).ok_or_else(|| {
            BasisError::at(path, Some(numbers_line), format!("expected atomic numbers from 0 to 200, found {z}"))
        })?;
        let position = [coords[3 * k], coords[3 * k + 1], coords[3 * k + 2]];
        let ghost = z == 0 || nuclear_charges[k].abs() < 1e-6;
        let label = crate::inspect::symbol(z as i32).to_string();
        atoms.push(Atom { label, atomic_number: z, position, ghost, line: Some(coords_line) });
    }
    let ecp = f.has_ecp_sections() || numbers.iter().zip(&nuclear_charges).any(|(&z, &q)| valence_charge(z as f64, q));

    // Shells.
    let (types, types_line) = ints("Shell types")?;
    let (counts, _) = ints("Number of primitives per shell")?;
    let (owners, _) = ints("Shell to atom map")?;
    let (exponents, _) = reals("Primitive exponents")?;
    let (coefficients, _) = reals("Contraction coefficients")?;
    length("Number of primitives per shell", counts.len(), types.len(), "one per shell")?;
    length("Shell to atom map", owners.len(), types.len(), "one per shell")?;
    let mut total = 0usize;
    for &n in counts {
        let n = usize::try_from(n).ok().filter(|&n| n >= 1).ok_or_else(|| {
            BasisError::at(path, line_of("Number of primitives per shell"), format!("expected primitive counts of 1 or more, found {n}"))
        })?;
        total = total.saturating_add(n);
    }
    length("Primitive exponents", exponents.len(), total, "the sum of the primitives per shell")?;
    length("Contraction coefficients", coefficients.len(), total, "the sum of the primitives per shell")?;
    let sp = match f.reals("P(S=P) Contraction coefficients")? {
        Some((c, _)) => {
            length("P(S=P) Contraction coefficients", c.len(), total, "the sum of the primitives per shell")?;
            Some(c)
        }
        None => None,
    };
    let mut shells = Vec::new();
    let mut start = 0usize;
    for (k, ((&t, &n), &owner)) in types.iter().zip(counts).zip(owners).enumerate() {
        let n = n as usize;
        let range = start..start + n;
        start += n;
        let atom = usize::try_from(owner)
            .ok()
            .and_then(|a| a.checked_sub(1))
            .filter(|&a| a < atoms.len())
            .ok_or_else(|| {
                BasisError::at(
                    path,
                    line_of("Shell to atom map"),
                    format!("expected atom numbers from 1 to {}, found {owner} (shell {})", atoms.len(), k + 1),
                )
            })?;
        let centre = atoms[atom].position;
        let at_shell = |e: BasisError| match e {
            BasisError::Invalid { message, .. } => {
                BasisError::at(path, Some(types_line), format!("shell {} (type {t}): {message}", k + 1))
            }
            other => other,
        };
        let alphas = exponents[range.clone()].to_vec();
        if t == -1 {
            let Some(sp) = sp else {
                return Err(BasisError::at(
                    path,
                    Some(types_line),
                    format!("expected a section \"P(S=P) Contraction coefficients\" for the sp shell {}, found none", k + 1),
                ));
            };
            shells.push(gaussian_shell(centre, 0, false, alphas.clone(), &coefficients[range.clone()], atom).map_err(at_shell)?);
            shells.push(gaussian_shell(centre, 1, false, alphas, &sp[range], atom).map_err(at_shell)?);
        } else {
            let l = u32::try_from(t.unsigned_abs()).unwrap_or(u32::MAX);
            shells.push(gaussian_shell(centre, l, t < 0, alphas, &coefficients[range], atom).map_err(at_shell)?);
        }
    }
    let basis = BasisSet::new(atoms, shells);
    let n = basis.function_count();
    if let Some(declared) = f.int("Number of basis functions")? {
        if declared != n as i64 {
            return Err(BasisError::at(
                path,
                line_of("Number of basis functions"),
                format!("expected {n} basis functions (what the shells hold), found {declared}"),
            ));
        }
    }

    // Orbitals.
    let n_alpha = int("Number of alpha electrons")?;
    let n_beta = int("Number of beta electrons")?;
    let channels: Vec<(OrbitalSpin, &str, &str)> = if f.get("Beta MO coefficients").is_some() {
        vec![
            (OrbitalSpin::Alpha, "Alpha Orbital Energies", "Alpha MO coefficients"),
            (OrbitalSpin::Beta, "Beta Orbital Energies", "Beta MO coefficients"),
        ]
    } else {
        vec![(OrbitalSpin::Restricted, "Alpha Orbital Energies", "Alpha MO coefficients")]
    };
    let restricted = channels.len() == 1;
    let mut orbitals = Vec::new();
    let mut natural_orbitals = false;
    for (spin, energies_name, coefficients_name) in channels {
        let (energies, _) = reals(energies_name)?;
        let (c, c_line) = reals(coefficients_name)?;
        let count = energies.len();
        length(coefficients_name, c.len(), count.saturating_mul(n), "orbitals times basis functions")?;
        let natural = natural_occupations(f, count)?;
        let occupations: Vec<f64> = match (&natural, spin) {
            (Some(occ), OrbitalSpin::Restricted) => occ.clone(),
            (_, OrbitalSpin::Restricted) => aufbau_restricted(n_alpha, n_beta, count),
            (_, OrbitalSpin::Alpha) => aufbau(n_alpha, count),
            (_, OrbitalSpin::Beta) => aufbau(n_beta, count),
        };
        natural_orbitals |= natural.is_some() && restricted;
        let most = if restricted { 2.0 } else { 1.0 };
        let filled: f64 = occupations.iter().sum();
        let electrons = match spin {
            OrbitalSpin::Restricted => n_alpha + n_beta,
            OrbitalSpin::Alpha => n_alpha,
            OrbitalSpin::Beta => n_beta,
        };
        if n_alpha < 0 || n_beta < 0 || n_alpha < n_beta || (natural.is_none() && filled != electrons as f64) {
            return Err(BasisError::at(
                path,
                line_of("Number of alpha electrons"),
                format!(
                    "expected electron counts with 0 ≤ N_beta ≤ N_alpha that the {count} {} orbitals can hold, found N_alpha = {n_alpha}, N_beta = {n_beta}",
                    spin.name()
                ),
            ));
        }
        if let Some(f) = occupations.iter().find(|f| !(-1e-6..=most + 1e-6).contains(*f)) {
            return Err(BasisError::at(path, None, format!("expected natural-orbital occupations from 0 to {most}, found {f}")));
        }
        for (k, (&e, &occ)) in energies.iter().zip(&occupations).enumerate() {
            orbitals.push(Orbital {
                spin,
                index: k + 1,
                occupation: Some(occ),
                energy: Some(e),
                symmetry: None,
                coefficients: c[k * n..(k + 1) * n].to_vec(),
                line: c_line,
            });
        }
    }
    let provenance = Provenance { ecp, nuclear_charges, multiplicity: f.int("Multiplicity")?, natural_orbitals };
    Ok((basis, MolecularOrbitals { orbitals, restricted, natural: natural_orbitals }, provenance))
}

/// Whether nuclear charge `q` of an atom with atomic number `z` is a valence charge: above 0
/// (ghost atoms carry 0) and below z.
pub(crate) fn valence_charge(z: f64, q: f64) -> bool {
    q > 1e-6 && q < z - 1e-6
}

/// One electron in each of the first `n` of `count` spin-orbitals.
fn aufbau(n: i64, count: usize) -> Vec<f64> {
    (0..count).map(|k| if (k as i64) < n { 1.0 } else { 0.0 }).collect()
}

/// Two electrons in each of the first N_β spatial orbitals, one in each of the next N_α − N_β.
fn aufbau_restricted(n_alpha: i64, n_beta: i64, count: usize) -> Vec<f64> {
    (0..count)
        .map(|k| {
            let k = k as i64;
            f64::from(u8::from(k < n_alpha)) + f64::from(u8::from(k < n_beta))
        })
        .collect()
}

/// Natural-orbital occupations: a real array named so (see the module header) with one value
/// per orbital.
fn natural_occupations(f: &FchkFile, count: usize) -> Result<Option<Vec<f64>>, BasisError> {
    for s in &f.sections {
        let name = s.name.to_ascii_lowercase();
        if name.contains("natural") && name.contains("occup") {
            if let Some((v, line)) = f.reals(&s.name)? {
                if v.len() != count {
                    return Err(BasisError::at(
                        &f.source,
                        Some(line),
                        format!("expected {count} natural-orbital occupations (one per orbital), found {}", v.len()),
                    ));
                }
                return Ok(Some(v.to_vec()));
            }
        }
    }
    Ok(None)
}
