//! What a molden file's numbers mean, decided from the file itself.
//!
//! The format fixes the layout but programs differ in what they write into it:
//!
//! - **contraction coefficients** d_p either multiply normalised primitives N_l(α_p) x^l e^{−α_p r²}
//!   (the format's definition) or plain ones x^l e^{−α_p r²}, the normalisation already folded in;
//! - the contracted function is either **renormalised** to unit norm by the reader, or taken as
//!   the contraction gives it (basis-set libraries print coefficients whose contraction is
//!   normalised only to their printed digits, and some programs use them unchanged);
//! - **Cartesian components** x^a y^b z^c of d and higher shells are each normalised on their
//!   own (the format's definition), or all share the radial normalisation of x^l (so xy has
//!   norm² 1/3 of xx's), or all share the one that gives the mixed component with the smallest
//!   norm unit norm: norm² ∝ (2a−1)!!(2b−1)!!(2c−1)!! (xy unit, xx norm² 3), or are each
//!   normalised and then all scaled by √((2l−1)!!) (every d component norm² 3);
//! - **real solid harmonics** carry the standard signs, or, for the m = ±3 components of f and g
//!   shells and m = ±4 of g shells, the opposite sign (from memory: written that way by a
//!   widely used program).
//!
//! Nothing in the file says which, and a title naming the writer is only a hint. The evidence
//! is the orbitals themselves: the occupied orbitals of a calculation are orthonormal, so with
//! the right convention CᵀSC = I (S the analytic overlap matrix of the basis as read). Every
//! convention that can matter for the file's shells is tried; the one with the smallest
//! max |CᵀSC − I| is taken, preferring the hinted (then the format's own) convention among those
//! that fit equally well; a file that no convention makes orthonormal within
//! [`ORTHONORMALITY_TOLERANCE`] (or what its printed digits allow, at most
//! [`MAX_ORTHONORMALITY_TOLERANCE`]) is refused, naming the worst orbital or pair. Rescaling each
//! orbital to unit norm would hide a wrong basis, so it is never done.

use std::fmt;
use std::path::Path;

use sixray_parsers::molden::MoldenFile;

use super::fchk::Provenance;
use super::orbitals::{MolecularOrbitals, OrbitalSpin};
use super::{BasisError, BasisSet};

/// Largest accepted max |CᵀSC − I| of the occupied orbitals when the printed digits allow
/// better: converged orbitals printed with ten decimals are orthonormal to about 1e-9.
pub const ORTHONORMALITY_TOLERANCE: f64 = 1e-6;

/// Largest accepted max |CᵀSC − I| however few digits a file prints: a wrong reading of the
/// real-world files is off by 6e-3 at the least (ammonia from ORCA and Psi4 read as the format
/// defines it: a 1s norm of 0.994), sixty times more. Within it a norm moves J by at most 2e-4
/// relative, which the error bars of the exact path carry (see `molecular`).
pub const MAX_ORTHONORMALITY_TOLERANCE: f64 = 1e-4;

/// What contraction coefficients multiply.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum PrimitiveScale {
    /// Normalised primitives N_l(α) x^l e^{−αr²} (the format's definition).
    Normalised,
    /// Plain primitives x^l e^{−αr²}: the normalisation is in the coefficients.
    Plain,
}

/// How Cartesian components of d and higher shells are normalised.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum CartesianScale {
    /// Each component on its own (the format's definition).
    EachComponent,
    /// All with the normalisation of x^l: norm² (2a−1)!!(2b−1)!!(2c−1)!!/(2l−1)!!.
    LikeAxis,
    /// All with norm² (2a−1)!!(2b−1)!!(2c−1)!! (xy, xyz unit).
    LikeMixed,
    /// Each normalised on its own, then all scaled by √((2l−1)!!) (d: every component norm²
    /// 3; seen for d shells, taken to extend the same way to f and beyond).
    Uniform,
}

impl CartesianScale {
    /// The file's function x^a y^b z^c (`e` = [a, b, c]) as a multiple of the same component
    /// normalised on its own.
    pub fn factor(self, e: [u32; 3]) -> f64 {
        use super::angular::odd_double_factorial;
        // norm² of x^a y^b z^c relative to the component normalised on its own is w/(2l−1)!!.
        let w: f64 = e.iter().map(|&k| odd_double_factorial(k)).product();
        let l = e.iter().sum();
        match self {
            CartesianScale::EachComponent => 1.0,
            CartesianScale::LikeAxis => (w / odd_double_factorial(l)).sqrt(),
            CartesianScale::LikeMixed => w.sqrt(),
            CartesianScale::Uniform => odd_double_factorial(l).sqrt(),
        }
    }
}

/// Sign convention of real solid harmonics.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum HarmonicSigns {
    /// The standard real solid harmonics (see [`super::angular`]).
    Standard,
    /// Opposite sign for f±3, g±3 and g±4.
    FlippedHighM,
}

/// One reading of a molden file's numbers.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct Convention {
    /// What the contraction coefficients multiply.
    pub primitives: PrimitiveScale,
    /// Whether the contracted function is renormalised to unit norm.
    pub renormalised: bool,
    /// Normalisation of Cartesian components.
    pub cartesian: CartesianScale,
    /// Signs of real solid harmonics.
    pub signs: HarmonicSigns,
}

impl Convention {
    /// The format's own definition.
    pub const MOLDEN: Convention = Convention {
        primitives: PrimitiveScale::Normalised,
        renormalised: true,
        cartesian: CartesianScale::EachComponent,
        signs: HarmonicSigns::Standard,
    };

    /// Short stable name for reports, e.g. `normalised-primitives+renormalised`: the parts that
    /// differ from nothing are all listed, joined by `+`.
    pub fn name(&self) -> String {
        let mut parts = vec![match self.primitives {
            PrimitiveScale::Normalised => "normalised-primitives",
            PrimitiveScale::Plain => "plain-primitives",
        }];
        if self.renormalised {
            parts.push("renormalised");
        }
        parts.push(match self.cartesian {
            CartesianScale::EachComponent => "cartesian-each",
            CartesianScale::LikeAxis => "cartesian-like-axis",
            CartesianScale::LikeMixed => "cartesian-like-mixed",
            CartesianScale::Uniform => "cartesian-uniform",
        });
        if self.signs == HarmonicSigns::FlippedHighM {
            parts.push("flipped-m3-m4");
        }
        parts.join("+")
    }
}

impl fmt::Display for Convention {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.name())
    }
}

/// How orthonormal a set of orbitals is over a basis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Orthonormality {
    /// max |CᵀSC − I| over pairs of orbitals within one spin channel, dimensionless.
    pub max_deviation: f64,
    /// What the file's printed coefficient digits alone can account for (first-order bound).
    pub digit_bound: f64,
    /// Orbitals checked.
    pub orbitals: usize,
    /// The pair with the largest deviation (positions in the orbital list; equal for a norm)
    /// and its ⟨φ_i|φ_j⟩; `None` when no orbital was checked.
    pub worst: Option<(usize, usize, f64)>,
}

impl Orthonormality {
    /// The accepted deviation: [`ORTHONORMALITY_TOLERANCE`], or the digit bound where larger, at
    /// most [`MAX_ORTHONORMALITY_TOLERANCE`].
    pub fn tolerance(&self) -> f64 {
        ORTHONORMALITY_TOLERANCE.max(self.digit_bound).min(MAX_ORTHONORMALITY_TOLERANCE)
    }

    /// The worst pair in words, for errors: `orbital 1 (line 83): ⟨φ|φ⟩ = 0` or `orbitals 1 and
    /// 3 (lines 83 and 145): ⟨φ_i|φ_j⟩ = 3.1e-1` (orbitals named by their number within their
    /// spin channel and their spin in unrestricted files).
    pub fn worst_pair(&self, orbitals: &MolecularOrbitals) -> Option<String> {
        let (i, j, value) = self.worst?;
        let (a, b) = (orbitals.orbitals.get(i)?, orbitals.orbitals.get(j)?);
        let name = |o: &super::Orbital| match o.spin {
            OrbitalSpin::Restricted => o.index.to_string(),
            spin => format!("{} {}", spin.name(), o.index),
        };
        Some(if i == j {
            format!("orbital {} (line {}): ⟨φ|φ⟩ = {value:.3e}, expected 1", name(a), a.line)
        } else {
            format!("orbitals {} and {} (lines {} and {}): ⟨φ_i|φ_j⟩ = {value:.3e}, expected 0", name(b), name(a), b.line, a.line)
        })
    }

    /// Whether the deviation is within [`Orthonormality::tolerance`] (false for NaN).
    pub fn holds(&self) -> bool {
        self.max_deviation <= self.tolerance()
    }
}

/// The convention a file was read with and the evidence for it.
#[derive(Debug, Clone, PartialEq)]
pub struct BasisConvention {
    /// The file's format (`molden`, `fchk`, `wfn`, `wfx`).
    pub format: &'static str,
    /// The writing program named by the file, if any (a hint only).
    pub writer: Option<&'static str>,
    /// The convention used, as [`Convention::name`] or a fixed description for formats that
    /// define theirs.
    pub convention: String,
    /// Orthonormality of the orbitals checked (the occupied ones; all when none is occupied).
    pub check: Orthonormality,
    /// Other conventions that fitted as well (the file could not tell them apart, so the
    /// hinted or the format's own was taken).
    pub indistinguishable: usize,
    /// What fchk, wfn and wfx files tell beyond the basis (core potentials, nuclear charges);
    /// `None` for molden files.
    pub provenance: Option<Provenance>,
}

/// The fixed conventions of the formats that define theirs, as reported.
fn fixed_convention(format: &str) -> &'static str {
    match format {
        "fchk" => "gaussian-component-orders",
        _ => "aimpac-cartesian-primitives",
    }
}

/// The orbitals of an fchk, wfn or wfx file checked like a molden file's: their format defines
/// its conventions, so there is only one reading to test, and a file whose occupied orbitals are
/// not orthonormal under it is refused.
pub fn checked(
    path: &Path,
    format: &'static str,
    basis: BasisSet,
    orbitals: MolecularOrbitals,
    provenance: Provenance,
) -> Result<(BasisSet, MolecularOrbitals, BasisConvention), BasisError> {
    let check = orthonormality(&basis, &orbitals, &[]);
    if !check.holds() {
        return Err(BasisError::at(
            path,
            None,
            format!(
                "expected orthonormal occupied orbitals (max |CᵀSC − I| ≤ {:.0e}), found {}{}: the basis or the \
                 coefficients are not what the file's writer used",
                check.tolerance(),
                deviation(check.max_deviation),
                check.worst_pair(&orbitals).map_or(String::new(), |w| format!(" ({w})"))
            ),
        ));
    }
    let convention = fixed_convention(format).to_string();
    Ok((basis, orbitals, BasisConvention { format, writer: None, convention, check, indistinguishable: 0, provenance: Some(provenance) }))
}

/// Orthonormality of `orbitals` over `basis`: the occupied orbitals of each spin channel
/// (restricted: one channel), or every orbital where none is occupied. `resolution[i]` is how
/// much the writer's rounding may have changed any coefficient of orbital i (absolute; zero
/// where unknown).
pub fn orthonormality(basis: &BasisSet, orbitals: &MolecularOrbitals, resolution: &[f64]) -> Orthonormality {
    let any_occupied = orbitals.orbitals.iter().any(|o| o.is_occupied());
    orthonormality_of(basis, orbitals, resolution, !any_occupied)
}

/// [`orthonormality`] of the occupied orbitals, or of all of them.
fn orthonormality_of(basis: &BasisSet, orbitals: &MolecularOrbitals, resolution: &[f64], all: bool) -> Orthonormality {
    let chosen: Vec<usize> = (0..orbitals.orbitals.len()).filter(|&i| all || orbitals.orbitals[i].is_occupied()).collect();
    let s = basis.overlap_matrix();
    let n = basis.function_count();
    // S c_i and its 1-norm (for the digit bound) per chosen orbital.
    let sc: Vec<Vec<f64>> = chosen
        .iter()
        .map(|&i| {
            let c = &orbitals.orbitals[i].coefficients;
            (0..n).map(|m| (0..n).map(|k| s[m * n + k] * c[k]).sum()).collect()
        })
        .collect();
    let l1: Vec<f64> = sc.iter().map(|v| v.iter().map(|x| x.abs()).sum()).collect();
    let mut max_deviation = 0.0f64;
    let mut worst = None;
    let mut digit_bound = 0.0f64;
    for (a, &i) in chosen.iter().enumerate() {
        for (b, &j) in chosen.iter().enumerate().take(a + 1) {
            let (oi, oj) = (&orbitals.orbitals[i], &orbitals.orbitals[j]);
            if channel(oi.spin) != channel(oj.spin) {
                continue;
            }
            let m: f64 = oi.coefficients.iter().zip(&sc[b]).map(|(x, y)| x * y).sum();
            let want = if a == b { 1.0 } else { 0.0 };
            let dev = (m - want).abs();
            // NaN must not pass as "no deviation"; the first NaN stays the worst.
            if !max_deviation.is_nan() && (dev.is_nan() || dev > max_deviation || worst.is_none()) {
                max_deviation = dev;
                worst = Some((i, j, m));
            }
            let ri = resolution.get(i).copied().unwrap_or(0.0);
            let rj = resolution.get(j).copied().unwrap_or(0.0);
            digit_bound = digit_bound.max(ri * l1[b] + rj * l1[a]);
        }
    }
    Orthonormality { max_deviation, digit_bound, orbitals: chosen.len(), worst }
}

/// A deviation for messages: `3.10e-2`, or `not a number`.
fn deviation(d: f64) -> String {
    if d.is_finite() { format!("{d:.2e}") } else if d.is_nan() { "not a number".to_string() } else { "infinite".to_string() }
}

fn channel(spin: OrbitalSpin) -> u8 {
    match spin {
        OrbitalSpin::Restricted | OrbitalSpin::Alpha => 0,
        OrbitalSpin::Beta => 1,
    }
}

/// The program a molden title or section names, lower-case matched (a hint only).
fn writer_hint(m: &MoldenFile) -> Option<&'static str> {
    let title = m.title.as_deref().unwrap_or("").to_ascii_lowercase();
    [("orca", "ORCA"), ("psi4", "Psi4"), ("turbomole", "Turbomole"), ("molpro", "Molpro"), ("cfour", "CFOUR"), ("pyscf", "PySCF")]
        .into_iter()
        .find(|(key, _)| title.contains(key))
        .map(|(_, name)| name)
}

/// Conventions worth trying for `m`, most plausible first: the hinted writer's, then the
/// format's own, then the rest. Options that cannot change anything for the file's shells (no
/// Cartesian d or higher, no spherical f or g) are not varied.
fn candidates(writer: Option<&str>, has_cartesian: bool, has_signed: bool) -> Vec<Convention> {
    let mut out = Vec::new();
    let cart: &[CartesianScale] = if has_cartesian {
        &[CartesianScale::EachComponent, CartesianScale::LikeAxis, CartesianScale::LikeMixed, CartesianScale::Uniform]
    } else {
        &[CartesianScale::EachComponent]
    };
    let signs: &[HarmonicSigns] =
        if has_signed { &[HarmonicSigns::Standard, HarmonicSigns::FlippedHighM] } else { &[HarmonicSigns::Standard] };
    for primitives in [PrimitiveScale::Normalised, PrimitiveScale::Plain] {
        for renormalised in [true, false] {
            for &cartesian in cart {
                for &s in signs {
                    out.push(Convention { primitives, renormalised, cartesian, signs: s });
                }
            }
        }
    }
    // Hints: writers known (from the files themselves) to fold the primitive normalisation into
    // the coefficients, or to use the other sign convention, are tried that way first.
    let hinted = |c: &Convention| match writer {
        Some("ORCA") => c.primitives == PrimitiveScale::Plain && c.signs == HarmonicSigns::FlippedHighM,
        Some("Psi4") => c.primitives == PrimitiveScale::Plain,
        _ => *c == Convention::MOLDEN,
    };
    out.sort_by_key(|c| (!hinted(c), *c != Convention::MOLDEN));
    out
}

/// Reads `m` under every plausible convention and keeps the one whose occupied orbitals are
/// orthonormal (module docs). Errors: the file's own read errors under the format's convention,
/// or, when no convention fits, one naming the file and the smallest deviation found.
pub fn detect(m: &MoldenFile) -> Result<(BasisSet, MolecularOrbitals, BasisConvention), BasisError> {
    let first = BasisSet::from_molden_with(m, &Convention::MOLDEN)?;
    let has_cartesian = first.shells.iter().any(|s| s.l >= 2 && !s.spherical);
    let has_signed = first.shells.iter().any(|s| s.spherical && (s.l == 3 || s.l == 4));
    let writer = writer_hint(m);
    let resolution: Vec<f64> = m.orbitals.iter().map(|o| o.coefficient_resolution).collect();
    let mut tried: Vec<(Convention, BasisSet, MolecularOrbitals, Orthonormality)> = Vec::new();
    for c in candidates(writer, has_cartesian, has_signed) {
        let basis = if c == Convention::MOLDEN { first.clone() } else { BasisSet::from_molden_with(m, &c)? };
        let orbitals = MolecularOrbitals::from_molden(m, &basis)?;
        let check = orthonormality(&basis, &orbitals, &resolution);
        tried.push((c, basis, orbitals, check));
    }
    let best = tried
        .iter()
        .map(|t| t.3.max_deviation)
        .filter(|d| !d.is_nan())
        .fold(f64::INFINITY, f64::min);
    if !tried.iter().any(|t| t.3.holds()) {
        // The closest reading's worst pair says where to look.
        let closest = tried.iter().find(|t| t.3.max_deviation == best).or(tried.first());
        let worst = closest.and_then(|t| t.3.worst_pair(&t.2)).map_or(String::new(), |w| format!("; {w}"));
        return Err(BasisError::at(
            &m.source,
            None,
            format!(
                "expected orthonormal occupied orbitals (max |CᵀSC − I| ≤ {:.0e}) under some molden convention, \
                 found at best {} over {} conventions tried{worst}: the basis or the coefficients are not what the \
                 file's writer used",
                ORTHONORMALITY_TOLERANCE,
                deviation(if tried.iter().all(|t| t.3.max_deviation.is_nan()) { f64::NAN } else { best }),
                tried.len()
            ),
        ));
    }
    // Equally good: within ten times the best or within the rounding of the printed digits.
    let as_good = |o: &Orthonormality, best: f64| o.holds() && o.max_deviation <= (10.0 * best).max(o.digit_bound);
    let mut tied: Vec<_> = tried.into_iter().filter(|t| as_good(&t.3, best)).collect();
    if tied.len() > 1 {
        // The unoccupied orbitals are orthonormal too (where the writer kept them whole): let
        // them separate what the occupied ones cannot, but never overrule them.
        let all: Vec<Orthonormality> =
            tied.iter().map(|t| orthonormality_of(&t.1, &t.2, &resolution, true)).collect();
        let best_all = all.iter().map(|o| o.max_deviation).filter(|d| !d.is_nan()).fold(f64::INFINITY, f64::min);
        if all.iter().any(|o| o.holds()) {
            let keep: Vec<bool> = all.iter().map(|o| as_good(o, best_all)).collect();
            let mut k = keep.iter();
            tied.retain(|_| *k.next().unwrap_or(&false));
        }
    }
    let indistinguishable = tied.len().saturating_sub(1);
    let Some((c, basis, orbitals, check)) = tied.into_iter().next() else {
        return Err(BasisError::at(&m.source, None, "no molden convention could be decided"));
    };
    Ok((basis, orbitals, BasisConvention { format: "molden", writer, convention: c.name(), check, indistinguishable, provenance: None }))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::basis::angular::{molden_cartesian_order, molden_m_order};
    use crate::basis::coulomb::self_energies;
    use crate::basis::primitive_norm;
    use crate::par::Parallelism;
    use sixray_parsers::molden::read_molden;
    use std::path::Path;

    /// A test file with its orbitals made orthonormal (Gram–Schmidt with the exact overlap), as a
    /// program's would be.
    fn orthonormal_file(name: &str) -> MoldenFile {
        let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/basis").join(name);
        let mut m = read_molden(&path).expect("test file reads");
        let basis = BasisSet::from_molden(&m).expect("basis");
        let orbitals = MolecularOrbitals::from_molden(&m, &basis).expect("orbitals");
        let s = basis.overlap_matrix();
        let n = basis.function_count();
        let dot = |a: &[f64], b: &[f64]| -> f64 { (0..n).map(|i| a[i] * (0..n).map(|j| s[i * n + j] * b[j]).sum::<f64>()).sum() };
        let mut done: Vec<Vec<f64>> = Vec::new();
        for o in &orbitals.orbitals {
            let mut c = o.coefficients.clone();
            for d in &done {
                let p = dot(d, &c);
                c.iter_mut().zip(d).for_each(|(x, y)| *x -= p * y);
            }
            let norm = dot(&c, &c).sqrt();
            c.iter_mut().for_each(|x| *x /= norm);
            done.push(c);
        }
        for (o, c) in m.orbitals.iter_mut().zip(&done) {
            o.coefficients = c.iter().enumerate().map(|(i, &v)| (i + 1, v)).collect();
            o.coefficient_lines = vec![o.line; c.len()];
            o.coefficient_resolution = 0.0;
        }
        m
    }

    /// `m` (read under the format's convention) rewritten as a writer with convention `c` would
    /// have written the same orbitals. A non-renormalising writer is given contractions of norm
    /// 1.3², compensated in its orbital coefficients.
    fn rewrite(m: &MoldenFile, c: &Convention) -> MoldenFile {
        let mut out = m.clone();
        let basis = BasisSet::from_molden(m).expect("basis");
        // Per basis function: the factor its coefficient is divided by.
        let mut factor: Vec<f64> = Vec::new();
        for block in &mut out.basis {
            for shell in &mut block.shells {
                let l = shell.shell_type.angular_momentum().expect("no sp shells in the test files");
                if c.primitives == PrimitiveScale::Plain {
                    shell.primitives.iter_mut().for_each(|p| p.coefficient *= primitive_norm(l, p.exponent));
                }
                let stretch = if c.renormalised { 1.0 } else { 1.3 };
                // A renormalising reader needs normalised contractions; the test files have them.
                shell.primitives.iter_mut().for_each(|p| p.coefficient *= stretch);
                let spherical = basis.shells[factor_shell(&basis, factor.len())].spherical;
                if spherical {
                    for m in molden_m_order(l) {
                        let flip = c.signs == HarmonicSigns::FlippedHighM && (l == 3 || l == 4) && m.unsigned_abs() >= 3;
                        factor.push(stretch * if flip { -1.0 } else { 1.0 });
                    }
                } else {
                    for e in molden_cartesian_order(l).expect("l ≤ 4") {
                        // s and p are the same under every Cartesian convention.
                        let f = if l >= 2 { c.cartesian.factor(e) } else { 1.0 };
                        factor.push(stretch * f);
                    }
                }
            }
        }
        for o in &mut out.orbitals {
            o.coefficients.iter_mut().for_each(|(i, v)| *v /= factor[*i - 1]);
        }
        out
    }

    /// The shell holding basis function `f`.
    fn factor_shell(basis: &BasisSet, f: usize) -> usize {
        basis.shell_offsets().iter().rposition(|&o| o <= f).expect("offsets start at 0").min(basis.shells.len() - 1)
    }

    fn hartree(basis: &BasisSet, orbitals: &MolecularOrbitals) -> Vec<f64> {
        let c: Vec<&[f64]> = orbitals.orbitals.iter().map(|o| o.coefficients.as_slice()).collect();
        self_energies(basis, &c, Parallelism::Sequential)
    }

    /// Every convention a writer might use is recognised from the orbitals alone, and the file
    /// then gives the same J as the format's own writing of the same orbitals.
    #[test]
    fn every_convention_is_recognised_and_gives_the_same_orbitals() {
        for (name, cartesian) in [("cartesian.molden", true), ("spherical.molden", false)] {
            let m = orthonormal_file(name);
            let (b0, o0, c0) = detect(&m).expect("the format's own convention fits");
            assert_eq!(c0.convention, Convention::MOLDEN.name(), "{name}");
            let want = hartree(&b0, &o0);
            for c in candidates(None, cartesian, !cartesian) {
                let written = rewrite(&m, &c);
                let (b, o, got) = detect(&written).unwrap_or_else(|e| panic!("{name} {c}: {e}"));
                assert_eq!(got.convention, c.name(), "{name}: written as {c}");
                assert!(got.check.max_deviation < 1e-12, "{name} {c}: {:e}", got.check.max_deviation);
                // Identities up to rounding: relative 1e-12 (a few hundred operations per value).
                for (a, b) in hartree(&b, &o).iter().zip(&want) {
                    assert!((a - b).abs() <= 1e-12 * b.abs(), "{name} {c}: J {a} vs {b}");
                }
            }
        }
    }

    /// Printed digits widen the accepted deviation up to a cap, never beyond it.
    #[test]
    fn the_digits_allowance_is_capped() {
        let with = |digit_bound: f64| Orthonormality { max_deviation: 0.0, digit_bound, orbitals: 1, worst: None }.tolerance();
        assert_eq!(with(0.0), ORTHONORMALITY_TOLERANCE);
        assert_eq!(with(3e-5), 3e-5);
        assert_eq!(with(0.1), MAX_ORTHONORMALITY_TOLERANCE);
        assert_eq!(with(f64::INFINITY), MAX_ORTHONORMALITY_TOLERANCE);
        let nan = Orthonormality { max_deviation: f64::NAN, digit_bound: f64::INFINITY, orbitals: 1, worst: None };
        assert!(!nan.holds());
    }

    /// Orbitals that are not orthonormal under any convention are refused, with the deviation.
    #[test]
    fn a_wrong_basis_is_refused() {
        let mut m = orthonormal_file("spherical.molden");
        // One exponent changed: the writer's basis is no longer the file's.
        m.basis[0].shells[2].primitives[0].exponent *= 1.5;
        let e = detect(&m).expect_err("no convention fits").to_string();
        assert!(e.contains("expected orthonormal occupied orbitals"), "{e}");
        assert!(e.contains("spherical.molden"), "{e}");
        // The worst pair named, with the line its orbital starts on.
        assert!(e.contains("(line 79)") || e.contains("(lines "), "{e}");
    }
}
