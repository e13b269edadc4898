//! Basis sets and orbitals of AIM wavefunction files (`.wfn`, `.wfx`): uncontracted Cartesian
//! Gaussian primitives, each with its own centre, type and exponent.
//!
//! A primitive of type k on centre A with exponent α is x^a y^b z^c e^{−αr²} (relative to A,
//! unnormalised), where (a, b, c) follows the AIMPAC type numbers as PySCF 2.14 lists them in
//! `pyscf/tools/wfn_format.py`: 1 s; 2–4 x, y, z; 5–10 xx, yy, zz, xy, xz, yz; 11–20 xxx, yyy,
//! zzz, xxy, xxz, yyz, xyy, xzz, yzz, xyz; 21–35 xxxx, yyyy, zzzz, xxxy, xxxz, xyyy, yyyz, xzzz,
//! yzzz, xxyy, xxzz, yyzz, xxyz, xyyz, xyzz; 36–56 zzzzz, yzzzz, yyzzz, yyyzz, yyyyz, yyyyy,
//! xzzzz, xyzzz, xyyzz, xyyyz, xyyyy, xxzzz, xxyzz, xxyyz, xxyyy, xxxzz, xxxyz, xxxyy, xxxxz,
//! xxxxy, xxxxx. The orbitals' coefficients multiply these plain primitives.
//!
//! Primitives with the same centre, exponent and l become one shell with `raw = [1]`, so its
//! internal component χ_abc is the plain primitive itself and each primitive is the unit row
//! selecting its component (see [`Shell::from_parts`]). The basis functions are the primitives
//! grouped that way, shell after shell in order of first appearance; within a shell, in file
//! order.
//!
//! Spins and occupations:
//!
//! - wfx: `Alpha and Beta` orbitals are spatial orbitals of a restricted calculation; a file
//!   with any `Beta` orbital is unrestricted (its `Alpha`/`Beta` orbitals are spin-orbitals);
//!   otherwise `Alpha` orbitals of a restricted open-shell file stay restricted orbitals with
//!   their occupation (1 for the singly occupied ones, read by the analysis as one α
//!   spin-orbital, see `crate::molecular`);
//! - wfn has no spin labels: a file whose occupations are all at most 1 and whose orbital list
//!   restarts once (the orbital number jumps, as unrestricted writers number β orbitals on from
//!   the basis size, or the orbital energy falls) is unrestricted, α before the restart and β
//!   after; any other file is restricted.
//!
//! Atomic numbers: wfx files write them; for wfn files they come from the element symbol of
//! the label, or the nuclear charge rounded when the label is no symbol. Nuclear charges between
//! 0 and the atomic number mean effective core potentials ([`Provenance::ecp`]; ghost atoms
//! carry 0).

use std::path::Path;

use sixray_parsers::wfn::{WfnError, WfnFile, read_wfn};
use sixray_parsers::wfx::{WfxError, WfxFile, WfxSpin, read_wfx};

use super::fchk::Provenance;
use super::{Atom, BasisError, BasisSet, MolecularOrbitals, Orbital, OrbitalSpin, Shell, angular};

/// The Cartesian exponents of AIMPAC type number `k` (1 to 56), `None` outside.
pub fn aimpac_type(k: i64) -> Option<[u32; 3]> {
    const NAMES: [&str; 35] = [
        "", "x", "y", "z", "xx", "yy", "zz", "xy", "xz", "yz", "xxx", "yyy", "zzz", "xxy", "xxz", "yyz", "xyy", "xzz",
        "yzz", "xyz", "xxxx", "yyyy", "zzzz", "xxxy", "xxxz", "xyyy", "yyyz", "xzzz", "yzzz", "xxyy", "xxzz", "yyzz",
        "xxyz", "xyyz", "xyzz",
    ];
    let k = usize::try_from(k).ok()?.checked_sub(1)?;
    if let Some(name) = NAMES.get(k) {
        let count = |c: char| name.chars().filter(|&x| x == c).count() as u32;
        return Some([count('x'), count('y'), count('z')]);
    }
    // 36–56: the h components in reverse alphabetical order (the list in the module header).
    let h = angular::cartesian_components(5);
    h.len().checked_sub(1 + (k - NAMES.len())).and_then(|i| h.get(i)).copied()
}

/// Reads a wfn file (plain or gzip) and builds its basis set and orbitals.
pub fn read_wfn_file(path: &Path) -> Result<(BasisSet, MolecularOrbitals, Provenance), BasisError> {
    from_wfn(&read_wfn(path)?)
}

/// Reads a wfx file (plain or gzip) and builds its basis set and orbitals.
pub fn read_wfx_file(path: &Path) -> Result<(BasisSet, MolecularOrbitals, Provenance), BasisError> {
    from_wfx(&read_wfx(path)?)
}

impl From<WfnError> for BasisError {
    fn from(e: WfnError) -> Self {
        BasisError::Invalid { path: Some(e.path.clone()), line: e.line, message: e.kind.to_string() }
    }
}

impl From<WfxError> for BasisError {
    fn from(e: WfxError) -> Self {
        BasisError::Invalid { path: Some(e.path.clone()), line: e.line, message: e.kind.to_string() }
    }
}

/// What both formats provide, as the conversion needs it.
struct Primitives<'a> {
    path: &'a Path,
    /// Atoms (label, atomic number, position in bohr) and nuclear charges.
    atoms: Vec<Atom>,
    charges: Vec<f64>,
    centres: &'a [i64],
    types: &'a [i64],
    exponents: &'a [f64],
    /// Line to blame for bad primitives.
    line: Option<usize>,
}

/// One orbital as either format gives it.
struct RawOrbital<'a> {
    spin: OrbitalSpin,
    occupation: f64,
    energy: f64,
    coefficients: &'a [f64],
    line: usize,
}

/// The grouped basis set and, per primitive, its basis-function index.
fn group(p: &Primitives<'_>) -> Result<(BasisSet, Vec<usize>), BasisError> {
    // (centre index, exponent bits, l) → member primitives with their components.
    type Key = (usize, u64, u32);
    let mut keys: Vec<Key> = Vec::new();
    let mut members: Vec<Vec<(usize, [u32; 3])>> = Vec::new();
    let mut index = std::collections::HashMap::new();
    for (k, ((&c, &t), &a)) in p.centres.iter().zip(p.types).zip(p.exponents).enumerate() {
        let bad = |what: String| BasisError::at(p.path, p.line, format!("primitive {}: {what}", k + 1));
        let centre = usize::try_from(c)
            .ok()
            .and_then(|c| c.checked_sub(1))
            .filter(|&c| c < p.atoms.len())
            .ok_or_else(|| bad(format!("expected a centre from 1 to {}, found {c}", p.atoms.len())))?;
        let e = aimpac_type(t).ok_or_else(|| bad(format!("expected a type number from 1 to 56, found {t}")))?;
        if !(a.is_finite() && a > 0.0) {
            return Err(bad(format!("expected a positive exponent, found {a}")));
        }
        let key = (centre, a.to_bits(), e[0] + e[1] + e[2]);
        let slot = *index.entry(key).or_insert_with(|| {
            keys.push(key);
            members.push(Vec::new());
            keys.len() - 1
        });
        members[slot].push((k, e));
    }
    let mut shells = Vec::with_capacity(keys.len());
    let mut function_of = vec![0usize; p.exponents.len()];
    let mut next = 0;
    for (&(centre, bits, l), group) in keys.iter().zip(&members) {
        let nc = angular::cartesian_count(l);
        let mut rows = vec![0.0; group.len() * nc];
        for (j, &(k, e)) in group.iter().enumerate() {
            // raw = [1]: the internal χ_abc is the plain primitive, selected by a unit row.
            rows[j * nc + angular::cartesian_index(e)] = 1.0;
            function_of[k] = next + j;
        }
        next += group.len();
        let shell = Shell::from_parts(p.atoms[centre].position, l, false, vec![f64::from_bits(bits)], vec![1.0], rows, centre)
            .map_err(|e| match e {
                BasisError::Invalid { message, .. } => BasisError::at(p.path, p.line, message),
                other => other,
            })?;
        shells.push(shell);
    }
    Ok((BasisSet::new(p.atoms.clone(), shells), function_of))
}

fn build(p: Primitives<'_>, raw: Vec<RawOrbital<'_>>, restricted: bool) -> Result<(BasisSet, MolecularOrbitals, Provenance), BasisError> {
    let (basis, function_of) = group(&p)?;
    let n = basis.function_count();
    let mut counts = [0usize; 2];
    let mut orbitals = Vec::with_capacity(raw.len());
    for o in raw {
        let most = if restricted { 2.0 } else { 1.0 };
        // Writers round occupations; allow the last printed digits.
        if !(-1e-6..=most + 1e-6).contains(&o.occupation) {
            return Err(BasisError::at(
                p.path,
                Some(o.line),
                format!("expected an occupation from 0 to {most} for a {} orbital, found {}", o.spin.name(), o.occupation),
            ));
        }
        if o.coefficients.len() != function_of.len() {
            return Err(BasisError::at(
                p.path,
                Some(o.line),
                format!("expected {} coefficients (one per primitive), found {}", function_of.len(), o.coefficients.len()),
            ));
        }
        let mut c = vec![0.0; n];
        for (&v, &mu) in o.coefficients.iter().zip(&function_of) {
            c[mu] = v;
        }
        let channel = usize::from(o.spin == OrbitalSpin::Beta);
        counts[channel] += 1;
        orbitals.push(Orbital {
            spin: o.spin,
            index: counts[channel],
            occupation: Some(o.occupation),
            energy: Some(o.energy),
            symmetry: None,
            coefficients: c,
            line: o.line,
        });
    }
    let ecp = p.atoms.iter().zip(&p.charges).any(|(a, &q)| super::fchk::valence_charge(f64::from(a.atomic_number), q));
    // Correlated programs write natural orbitals with their fractional occupations.
    let natural = super::orbitals::any_fractional(orbitals.iter().filter_map(|o| o.occupation));
    let provenance = Provenance { ecp, nuclear_charges: p.charges, multiplicity: None, natural_orbitals: natural };
    Ok((basis, MolecularOrbitals { orbitals, restricted, natural }, provenance))
}

/// Atomic number of an element symbol (any case), if it is one.
fn atomic_number_of(label: &str) -> Option<u32> {
    // Labels may carry a number ("O1"); the symbol is the leading letters.
    let letters: String = label.chars().take_while(|c| c.is_ascii_alphabetic()).collect();
    (1..=118).find(|&z| crate::inspect::symbol(z).eq_ignore_ascii_case(&letters)).map(|z| z as u32)
}

/// The basis set, orbitals and provenance of a parsed wfn file.
pub fn from_wfn(w: &WfnFile) -> Result<(BasisSet, MolecularOrbitals, Provenance), BasisError> {
    let mut atoms = Vec::with_capacity(w.nuclei.len());
    for nucleus in &w.nuclei {
        let z = atomic_number_of(&nucleus.label)
            .or_else(|| (nucleus.charge >= 0.0 && nucleus.charge <= 200.0).then(|| nucleus.charge.round() as u32))
            .ok_or_else(|| {
                BasisError::at(&w.source, Some(nucleus.line), format!("expected an element symbol or a charge from 0 to 200, found {}", nucleus.label))
            })?;
        let ghost = z == 0 || nucleus.charge.abs() < 1e-6;
        atoms.push(Atom { label: nucleus.label.clone(), atomic_number: z, position: nucleus.position, ghost, line: Some(nucleus.line) });
    }
    let charges = w.nuclei.iter().map(|n| n.charge).collect();
    let line = w.nuclei.last().map_or(Some(2), |n| Some(n.line + 1));
    let p = Primitives { path: &w.source, atoms, charges, centres: &w.centres, types: &w.types, exponents: &w.exponents, line };
    // Unrestricted: occupations at most 1 and one restart of the orbital list.
    let single = w.orbitals.iter().all(|o| o.occupation <= 1.0 + 1e-6);
    let restarts: Vec<usize> = (1..w.orbitals.len())
        .filter(|&k| {
            let (a, b) = (&w.orbitals[k - 1], &w.orbitals[k]);
            b.number != a.number + 1 || b.energy < a.energy
        })
        .collect();
    let split = match restarts.as_slice() {
        [k] if single => Some(*k),
        _ => None,
    };
    let raw = w
        .orbitals
        .iter()
        .enumerate()
        .map(|(k, o)| RawOrbital {
            spin: match split {
                None => OrbitalSpin::Restricted,
                Some(s) if k < s => OrbitalSpin::Alpha,
                Some(_) => OrbitalSpin::Beta,
            },
            occupation: o.occupation,
            energy: o.energy,
            coefficients: &o.coefficients,
            line: o.line,
        })
        .collect();
    build(p, raw, split.is_none())
}

/// The basis set, orbitals and provenance of a parsed wfx file.
pub fn from_wfx(w: &WfxFile) -> Result<(BasisSet, MolecularOrbitals, Provenance), BasisError> {
    let mut atoms = Vec::with_capacity(w.atomic_numbers.len());
    for (k, (&z, &position)) in w.atomic_numbers.iter().zip(&w.coordinates).enumerate() {
        let z = u32::try_from(z).ok().filter(|&z| z <= 200).ok_or_else(|| {
            BasisError::at(&w.source, None, format!("expected atomic numbers from 0 to 200, found {z}"))
        })?;
        let label = w.nuclear_names.get(k).cloned().unwrap_or_else(|| crate::inspect::symbol(z as i32).to_string());
        let ghost = z == 0 || w.nuclear_charges.get(k).is_some_and(|q| q.abs() < 1e-6);
        atoms.push(Atom { label, atomic_number: z, position, ghost, line: w.coordinates_line });
    }
    let p = Primitives {
        path: &w.source,
        atoms,
        charges: w.nuclear_charges.clone(),
        centres: &w.centres,
        types: &w.types,
        exponents: &w.exponents,
        line: None,
    };
    let unrestricted = w.orbitals.iter().any(|o| o.spin == WfxSpin::Beta);
    let mut raw = Vec::with_capacity(w.orbitals.len());
    for o in &w.orbitals {
        let spin = match (unrestricted, o.spin) {
            (false, _) => OrbitalSpin::Restricted,
            (true, WfxSpin::Alpha) => OrbitalSpin::Alpha,
            (true, WfxSpin::Beta) => OrbitalSpin::Beta,
            (true, WfxSpin::AlphaAndBeta) => {
                return Err(BasisError::at(
                    &w.source,
                    Some(o.line),
                    format!("expected Alpha or Beta for orbital {} of a file with Beta orbitals, found Alpha and Beta", o.number),
                ));
            }
        };
        raw.push(RawOrbital { spin, occupation: o.occupation, energy: o.energy, coefficients: &o.coefficients, line: o.line });
    }
    let (basis, orbitals, mut provenance) = build(p, raw, !unrestricted)?;
    provenance.multiplicity = w.multiplicity;
    Ok((basis, orbitals, provenance))
}
