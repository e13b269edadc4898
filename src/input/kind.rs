//! What a grid file's values are, decided from the values, and whether its grid can give a
//! number at all.
//!
//! Three readings of one field of values v on a grid of cell volume V (atomic units):
//!
//! ```text
//! amplitude φ_i         ∫v² dV ≈ 1 (a normalised orbital), usually changes sign
//! orbital density       v ≥ 0, ∫v dV ≈ occupation ≤ 2 (f|φ|², restricted: up to 2)
//! total density         v ≥ 0, ∫v dV ≈ N electrons > 2, near Σ Z of the listed nuclei (± ion charge)
//! ```
//!
//! [`decide`] takes the reading whose norm is nearest its expected value (distances are |ln|
//! of the ratio, so 0.5 and 2 are equally far from 1); a sign change settles it for amplitudes.
//! When two readings fit about equally well (a nodeless orbital whose ∫v happens to be near the
//! nuclear charge, a density whose ∫v² happens to be near 1), the preferred kind — the one the
//! user gave, otherwise what the cube's title lines say — decides. Titles are only a hint: the
//! data overrule them.

use crate::diagnostics::Kind;
use crate::grid::{GridGeometry, Nucleus};
use serde::{Deserialize, Serialize};

/// Share of ∫|v| dV carried by negative values above which the values change sign, so that they
/// can only be amplitudes. 1e-4: densities evaluated from orbitals are non-negative up to
/// round-off (~1e-16 of the peak), and the reference densities of `../shared` have no negative
/// value at all; the smallest negative share of an orbital seen in the bundled samples and the
/// shared reference is 3.4e-3 (the inner lobe of a 2s-like orbital), 34 times above this.
pub const NEGATIVE_SHARE: f64 = 1e-4;

/// Most electrons one orbital's density holds, with the grid's quadrature error: a spatial
/// orbital holds at most 2 (a restricted orbital given as 2|φ|²), and 5 % covers the norm
/// errors of resolved orbitals on grids as coarse as the bundled 0.25 bohr samples (their
/// valence orbitals integrate within 1 %). More electrons than this is a many-electron density.
pub const MAX_ORBITAL_ELECTRONS: f64 = 2.1;

/// Two readings whose |ln| distances differ by less than this are a tie, decided by the
/// preferred kind: ln 1.25, since cores on the bundled 0.25 bohr grids integrate to 0.81
/// instead of 1 (∫φ² of an oxygen 1s), so norms closer than 25 % do not tell kinds apart.
pub const AMBIGUITY: f64 = 0.223;

/// Largest ion charge considered when matching ∫v to the electrons of the listed nuclei (ions
/// beyond ±2 are rare among the molecules this tool is for; a total density that matches none
/// of these counts is still recognised by having more electrons than any orbital).
pub const MAX_ION_CHARGE: i32 = 2;

/// Longest grid step (bohr) at which a grid file can give any number. The valence density of a
/// first-row molecule falls by e about every 0.5 bohr (n ~ e^{−2√(2I) r} with I ≈ 0.5 Eh; a
/// textbook estimate, from memory), and bonds are 1.4 (H–H) to about 3 bohr long. At a 1 bohr
/// step the density changes about sevenfold between neighbouring points, and the sub-lattices of
/// every second point on which the error bars are estimated (2 bohr) are coarser than any bond:
/// beyond it neither the number nor its error bar means anything. Below it, numbers come with
/// error bars that say how far to trust them (the bundled samples use 0.25 bohr, the shared
/// reference 0.15 bohr, the basis-set path's `--grid` at least 0.1 bohr).
pub const MAX_STEP: f64 = 1.0;

/// What the cube's two title lines say the values are (a hint only).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum TitleHint {
    /// A word `density` (e.g. "Electron density from Total SCF Density", "Electron density in
    /// real space").
    Density,
    /// Orbital words and no `density` ("MO", "orbital", "amplitude", "wavefunction"; e.g.
    /// "Orbital value in real space", "hydroxide orbital 1").
    Amplitude,
}

impl TitleHint {
    /// The hint of two title lines, if they give one.
    pub fn from_titles(titles: &[String]) -> Option<TitleHint> {
        let words: Vec<String> = titles
            .iter()
            .flat_map(|t| t.split(|c: char| !c.is_ascii_alphanumeric()).map(str::to_ascii_lowercase).collect::<Vec<_>>())
            .collect();
        let has = |f: &dyn Fn(&str) -> bool| words.iter().any(|w| f(w));
        if has(&|w| w.starts_with("densit")) {
            Some(TitleHint::Density)
        } else if has(&|w| {
            matches!(w, "mo" | "mos" | "orbital" | "orbitals" | "amplitude" | "amplitudes" | "wavefunction" | "homo" | "lumo")
        }) {
            Some(TitleHint::Amplitude)
        } else {
            None
        }
    }

    /// The kind the hint prefers.
    pub fn kind(self) -> Kind {
        match self {
            TitleHint::Density => Kind::Density,
            TitleHint::Amplitude => Kind::Amplitude,
        }
    }
}

/// Integrals of one field of grid values that tell the readings apart.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct KindEvidence {
    /// ∫v dV (electrons, if the values are a density).
    pub integral: f64,
    /// ∫v² dV (electrons, if the values are amplitudes).
    pub square_integral: f64,
    /// Share of ∫|v| dV carried by negative values (0 for any density), dimensionless.
    pub negative_share: f64,
    /// Σ Z of the atoms the file lists (Z > 0), electrons of the neutral molecule.
    pub nuclear_charge: f64,
    /// Σ of the file's charge column where it differs from Σ Z (valence charges of
    /// pseudopotential atoms), electrons of the neutral molecule's valence.
    pub charge_column: Option<f64>,
    /// What the title lines say.
    pub title: Option<TitleHint>,
}

impl KindEvidence {
    /// The evidence of `values` on `geometry`, with the listed `nuclei` and the title `hint`.
    /// Sums run in storage order (reproducible).
    pub fn of(values: &[f64], geometry: &GridGeometry, nuclei: &[Nucleus], title: Option<TitleHint>) -> KindEvidence {
        let w = geometry.voxel_volume();
        let (mut sum, mut squares, mut negative, mut absolute) = (0.0, 0.0, 0.0, 0.0);
        for &v in values {
            sum += v;
            squares += v * v;
            absolute += v.abs();
            if v < 0.0 {
                negative -= v;
            }
        }
        let atoms = nuclei.iter().filter(|n| n.atomic_number > 0);
        let nuclear_charge: f64 = atoms.clone().map(|n| n.atomic_number as f64).sum();
        let column: f64 = atoms.map(|n| n.charge).sum();
        KindEvidence {
            integral: w * sum,
            square_integral: w * squares,
            negative_share: if absolute > 0.0 { negative / absolute } else { 0.0 },
            nuclear_charge,
            charge_column: (column > 0.0 && (column - nuclear_charge).abs() > 0.5).then_some(column),
            title,
        }
    }
}

/// What a field of values is, by the evidence.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Verdict {
    /// Orbital amplitudes φ.
    Amplitude,
    /// One orbital's density.
    OrbitalDensity,
    /// A many-electron (total) density: not one orbital.
    TotalDensity,
}

impl Verdict {
    /// The kind a one-orbital verdict reads the values as (`None` for a total density).
    pub fn kind(self) -> Option<Kind> {
        match self {
            Verdict::Amplitude => Some(Kind::Amplitude),
            Verdict::OrbitalDensity => Some(Kind::Density),
            Verdict::TotalDensity => None,
        }
    }
}

/// The verdict, and whether the data alone settle it (no tie left to the preferred kind).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Decision {
    /// What the values are.
    pub verdict: Verdict,
    /// False when another reading fitted within [`AMBIGUITY`] and the preference decided.
    pub clear: bool,
}

/// |ln x| for a positive norm, infinity otherwise (a reading that cannot hold).
fn distance(x: f64) -> f64 {
    if x > 0.0 && x.is_finite() { x.ln().abs() } else { f64::INFINITY }
}

/// Decides what `e` describes; `preferred` (the user's kind, else the title's) breaks ties.
pub fn decide(e: &KindEvidence, preferred: Option<Kind>) -> Decision {
    // Densities are never negative: a sign change makes them amplitudes whatever the norms.
    if e.negative_share > NEGATIVE_SHARE {
        return Decision { verdict: Verdict::Amplitude, clear: true };
    }
    let many = e.integral > MAX_ORBITAL_ELECTRONS;
    // The total reading: ∫v against the listed nuclei's electrons, ion charges up to ±2.
    let total = if many {
        let counts = std::iter::once(e.nuclear_charge).chain(e.charge_column);
        counts
            .flat_map(|n| (-MAX_ION_CHARGE..=MAX_ION_CHARGE).map(move |q| n - q as f64))
            .filter(|&n| n > MAX_ORBITAL_ELECTRONS)
            .map(|n| distance(e.integral / n))
            .fold(f64::INFINITY, f64::min)
    } else {
        f64::INFINITY
    };
    let mut readings = [
        (Verdict::Amplitude, distance(e.square_integral)),
        (Verdict::OrbitalDensity, if many { f64::INFINITY } else { distance(e.integral) }),
        (Verdict::TotalDensity, total),
    ];
    readings.sort_by(|a, b| a.1.total_cmp(&b.1));
    let [(best, d0), (second, d1), _] = readings;
    // Nothing fits within the orbital range either way: more electrons than one orbital holds,
    // not an amplitude's norm, is a many-electron density.
    if d0 > MAX_ORBITAL_ELECTRONS.ln() && many {
        return Decision { verdict: Verdict::TotalDensity, clear: true };
    }
    if d1 - d0 < AMBIGUITY {
        let prefers = |v: Verdict| {
            matches!((preferred, v), (Some(Kind::Amplitude), Verdict::Amplitude) | (Some(Kind::Density), Verdict::OrbitalDensity | Verdict::TotalDensity))
        };
        let verdict = if !prefers(best) && prefers(second) { second } else { best };
        return Decision { verdict, clear: false };
    }
    Decision { verdict: best, clear: true }
}

/// Whether `given` goes against what the data alone clearly say (the `kind-suspicious` flag):
/// a tie is no contradiction, and a total density contradicts either kind.
pub fn contradicts(given: Kind, e: &KindEvidence) -> bool {
    let d = decide(e, None);
    d.clear && d.verdict.kind() != Some(given)
}

/// Who settled a grid orbital's kind.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum KindSource {
    /// The user (`--kind`, or the workflow's `kind:`).
    Given,
    /// The values ([`decide`]).
    Detected,
    /// The program, which formed the values itself as amplitudes (orbitals of a basis-set file,
    /// localized orbitals).
    Computed,
}

impl KindSource {
    /// The name used in reports.
    pub fn as_str(self) -> &'static str {
        match self {
            KindSource::Given => "given",
            KindSource::Detected => "detected",
            KindSource::Computed => "computed",
        }
    }
}

/// How a grid orbital's kind was settled, and on what evidence.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct KindOrigin {
    /// Who settled it.
    pub source: KindSource,
    /// The integrals it rests on (grid files; `None` for computed values).
    pub evidence: Option<KindEvidence>,
    /// The given kind goes against what the data clearly say ([`contradicts`]).
    pub contradicted: bool,
}

impl KindOrigin {
    /// Values the program formed itself.
    pub fn computed() -> KindOrigin {
        KindOrigin { source: KindSource::Computed, evidence: None, contradicted: false }
    }
}

/// Why a grid cannot give a number: its longest step exceeds [`MAX_STEP`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TooCoarse {
    /// Longest step, bohr.
    pub step: f64,
    /// Points along each axis.
    pub shape: [usize; 3],
}

/// `Err` when `geometry` is too coarse to resolve any orbital (see [`MAX_STEP`]).
pub fn check_resolution(geometry: &GridGeometry) -> Result<(), TooCoarse> {
    let step = geometry.max_step();
    if step > MAX_STEP { Err(TooCoarse { step, shape: geometry.shape }) } else { Ok(()) }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diagnostics::GridOrbital;
    use std::f64::consts::PI;

    fn grid(h: f64, radius: f64) -> GridGeometry {
        GridGeometry::around([[h, 0.0, 0.0], [0.0, h, 0.0], [0.0, 0.0, h]], [0.0; 3], radius).unwrap()
    }

    fn nucleus(z: i32, position: [f64; 3]) -> Nucleus {
        Nucleus { atomic_number: z, charge: z as f64, position }
    }

    fn r(p: [f64; 3], c: [f64; 3]) -> f64 {
        ((p[0] - c[0]).powi(2) + (p[1] - c[1]).powi(2) + (p[2] - c[2]).powi(2)).sqrt()
    }

    /// Hydrogenic 1s amplitude of charge z at c: √(z³/π) e^{−z r} (textbook).
    fn s1(z: f64, c: [f64; 3]) -> impl Fn([f64; 3]) -> f64 {
        move |p| (z.powi(3) / PI).sqrt() * (-z * r(p, c)).exp()
    }

    /// Hydrogenic 2p_z amplitude of charge z: √(z⁵/32π) z_rel e^{−z r/2} (textbook).
    fn p2(z: f64) -> impl Fn([f64; 3]) -> f64 {
        move |p| (z.powi(5) / (32.0 * PI)).sqrt() * p[2] * (-z * r(p, [0.0; 3]) / 2.0).exp()
    }

    fn evidence(o: &GridOrbital, title: Option<TitleHint>) -> KindEvidence {
        KindEvidence::of(&o.values, &o.geometry, &o.nuclei, title)
    }

    #[test]
    fn hydrogenic_amplitudes_and_their_squares_are_told_apart() {
        let g = grid(0.2, 12.0);
        let h = vec![nucleus(1, [0.0; 3])];
        // 1s: nodeless, ∫φ = 8√π ≈ 14.2 (far from any orbital density), ∫φ² = 1.
        let amp = GridOrbital::sampled("1s", g.clone(), h.clone(), Kind::Amplitude, s1(1.0, [0.0; 3]));
        let e = evidence(&amp, None);
        assert!(e.negative_share == 0.0 && (e.integral - 8.0 * PI.sqrt()).abs() < 0.05, "{e:?}");
        assert_eq!(decide(&e, None), Decision { verdict: Verdict::Amplitude, clear: true });
        // Its square: ∫ = 1, ∫² = 1/8π.
        let dens = GridOrbital { values: amp.values.iter().map(|v| v * v).collect(), ..amp.clone() };
        assert_eq!(decide(&evidence(&dens, None), None), Decision { verdict: Verdict::OrbitalDensity, clear: true });
        // 2p: the sign settles it, whatever the title says.
        let p = GridOrbital::sampled("2p", g.clone(), h.clone(), Kind::Amplitude, p2(1.0));
        let e = evidence(&p, Some(TitleHint::Density));
        assert!((e.negative_share - 0.5).abs() < 1e-9, "{e:?}");
        assert_eq!(decide(&e, Some(Kind::Density)).verdict, Verdict::Amplitude);
        // Its square is a density, however the caller leans.
        let p_dens = GridOrbital { values: p.values.iter().map(|v| v * v).collect(), ..p.clone() };
        assert_eq!(decide(&evidence(&p_dens, None), Some(Kind::Amplitude)).verdict, Verdict::OrbitalDensity);
        // A restricted orbital given as 2|φ|² is still one orbital's density.
        let doubled = GridOrbital { values: dens.values.iter().map(|v| 2.0 * v).collect(), ..dens };
        assert_eq!(decide(&evidence(&doubled, None), None).verdict, Verdict::OrbitalDensity);
    }

    #[test]
    fn a_many_electron_sum_is_a_total_density() {
        // An invented "molecule": a Z = 3 nucleus with two electrons in a 1s of charge 2.7 and
        // one in a diffuse 1s of charge 0.7 (Li-like), and a proton with one electron: 4
        // electrons, Σ Z = 4.
        let g = grid(0.15, 14.0);
        let (a, b) = ([0.0, 0.0, -1.5], [0.0, 0.0, 1.5]);
        let nuclei = vec![nucleus(3, a), nucleus(1, b)];
        let (core, valence, hydrogen) = (s1(2.7, a), s1(0.7, a), s1(1.0, b));
        let rho = move |p: [f64; 3]| 2.0 * core(p).powi(2) + valence(p).powi(2) + hydrogen(p).powi(2);
        let total = GridOrbital::sampled("rho", g.clone(), nuclei.clone(), Kind::Density, rho);
        let e = evidence(&total, None);
        assert!((e.integral - 4.0).abs() < 0.02 && e.nuclear_charge == 4.0, "{e:?}");
        // ∫ρ² and ∫ρ both far from 1: the nuclei's electrons settle it — even for a caller who
        // says amplitudes.
        assert!(e.square_integral > 2.5, "{e:?}");
        assert_eq!(decide(&e, None), Decision { verdict: Verdict::TotalDensity, clear: true });
        assert_eq!(decide(&e, Some(Kind::Amplitude)).verdict, Verdict::TotalDensity);
        // An anion (one more electron than the nuclei) still matches; without listed atoms the
        // count is unknown, but 4 electrons are more than one orbital holds.
        let anion = KindEvidence { integral: 5.0, ..e };
        assert_eq!(decide(&anion, None).verdict, Verdict::TotalDensity);
        let unlisted = KindEvidence { nuclear_charge: 0.0, ..e };
        assert_eq!(decide(&unlisted, None).verdict, Verdict::TotalDensity);
        // The core orbital's amplitude is nodeless and integrates to 8√π/z^{3/2} = 3.2 (hydrogenic
        // 1s, z = 2.7), near the 3 electrons of a cation, but squares to one: a tie that the
        // better fit, or a preference, decides.
        let core_amp = GridOrbital::sampled("core", g, nuclei, Kind::Amplitude, s1(2.7, a));
        let e = evidence(&core_amp, None);
        assert!((e.integral - 3.2).abs() < 0.01 && e.negative_share == 0.0, "{e:?}");
        assert_eq!(decide(&e, None), Decision { verdict: Verdict::Amplitude, clear: false });
        assert_eq!(decide(&e, Some(Kind::Density)).verdict, Verdict::TotalDensity);
    }

    #[test]
    fn ties_go_to_the_preferred_kind_and_are_not_clear() {
        // Invented numbers: ∫v² = 1.05 (an amplitude?) and ∫v = 10.1 with Σ Z = 10 (a total
        // density?) are within the ambiguity of each other.
        let e = KindEvidence {
            integral: 10.1,
            square_integral: 1.05,
            negative_share: 0.0,
            nuclear_charge: 10.0,
            charge_column: None,
            title: None,
        };
        assert_eq!(decide(&e, None), Decision { verdict: Verdict::TotalDensity, clear: false });
        assert_eq!(decide(&e, Some(Kind::Density)), Decision { verdict: Verdict::TotalDensity, clear: false });
        assert_eq!(decide(&e, Some(Kind::Amplitude)), Decision { verdict: Verdict::Amplitude, clear: false });
        // A pseudopotential file: the charge column holds valence charges (8 of Σ Z = 36); only
        // they make ∫v = 8.02 a rival of the amplitude reading (∫v² = 1.1).
        let ecp = KindEvidence { integral: 8.02, square_integral: 1.1, nuclear_charge: 36.0, charge_column: Some(8.0), ..e };
        assert_eq!(decide(&ecp, None), Decision { verdict: Verdict::TotalDensity, clear: false });
        let all_electron = KindEvidence { charge_column: None, ..ecp };
        assert_eq!(decide(&all_electron, None), Decision { verdict: Verdict::Amplitude, clear: true });
        // Slight negative round-off below the threshold does not make a density an amplitude.
        let noisy = KindEvidence { integral: 1.0, square_integral: 0.05, negative_share: 1e-6, ..e };
        assert_eq!(decide(&noisy, None).verdict, Verdict::OrbitalDensity);
    }

    #[test]
    fn titles_hint() {
        let hint = |a: &str, b: &str| TitleHint::from_titles(&[a.to_string(), b.to_string()]);
        // The cube titles of the shared reference, the bundled samples and a cubegen density.
        assert_eq!(hint("Electron density in real space (e/Bohr^3)", "PySCF Version: 2.14.0"), Some(TitleHint::Density));
        assert_eq!(hint("Orbital value in real space (1/Bohr^3)", "PySCF Version: 2.14.0"), Some(TitleHint::Amplitude));
        assert_eq!(hint("hydroxide orbital 1", "PySCF Version: 2.14.0"), Some(TitleHint::Amplitude));
        assert_eq!(hint("water, LDA/cc-pVDZ, occupied orbitals", "values: orbital amplitudes, atomic units"), Some(TitleHint::Amplitude));
        assert_eq!(hint(" H2O_q+0 ub3lyp/cc-pvtz", " Electron density from Total SCF Density"), Some(TitleHint::Density));
        assert_eq!(hint("orbital 3 density", ""), Some(TitleHint::Density));
        assert_eq!(hint("MO=5", ""), Some(TitleHint::Amplitude));
        assert_eq!(hint("test", "a Gaussian"), None);
    }

    #[test]
    fn coarse_grids_are_refused_and_fine_ones_pass() {
        assert!(check_resolution(&grid(0.25, 4.0)).is_ok());
        assert!(check_resolution(&grid(MAX_STEP, 4.0)).is_ok());
        let coarse = GridGeometry::new([0.0; 3], [[2.485, 0.0, 0.0], [0.0, 2.485, 0.0], [0.0, 0.0, 2.485]], [5, 5, 5]).unwrap();
        assert_eq!(check_resolution(&coarse), Err(TooCoarse { step: 2.485, shape: [5, 5, 5] }));
        // Only one long axis is enough to be refused.
        let sheared = GridGeometry::new([0.0; 3], [[0.2, 0.0, 0.0], [0.0, 0.2, 0.0], [0.9, 0.0, 0.9]], [20, 20, 20]).unwrap();
        assert!(check_resolution(&sheared).is_err());
    }
}
