//! Checks of whole-density grid files: electron count, nuclei, box and orbital sum.
//!
//! For a total density ρ on a grid of longest step h and cell volume V (atomic units):
//!
//! ```text
//! N      = V Σ_p ρ(p)                                          electrons on the grid
//! nuclei = local maxima of ρ above a density floor, each refined below the grid step by
//!          fitting ln ρ(p) = c − 2Z|p − R| + g·(p − R) [+ (p − R)ᵀQ(p − R)] (see `cusp`)
//! Z      = −ρ̄′(0) / 2ρ̄(0)       Kato's cusp condition, resolved when Z·h ≤ 0.5 (common practice)
//! N_out  ≈ Σ_faces Σ_p ρ(p) λ(p) V/h⊥,   λ = h⊥ / ln(ρ_inner / ρ_face)   electrons beyond the box
//! Δρ     = Σ_i g_i f_i |φ_i|² − ρ                               orbital sum against the density
//! ```
//!
//! The maxima are matched to the atoms the file lists; whatever does not fit — an atom without a
//! maximum, a maximum without an atom, a shifted position, a cusp charge far from the atomic
//! number, a grid too coarse for the cusp, density cut off by the box, negative density, an
//! orbital sum that is not the density — becomes a [`Flag`]. A flag is information about the
//! file, not an error.

mod cusp;
mod files;
mod orbitals;
pub mod render;

pub use files::{DensityGrid, FileInspection, InspectError, inspect_file, load_density};
pub use orbitals::{OrbitalFile, OrbitalSum, OrbitalSumBuilder};

use crate::grid::{GridGeometry, Nucleus};
use crate::par::Parallelism;
use serde::Serialize;
use std::fmt;

/// Thresholds of the checks; the defaults are justified beside each field.
#[derive(Clone, Debug, PartialEq)]
pub struct InspectParams {
    /// Local maxima below this density are not taken for nuclei, e/bohr³. Default 0.1: the
    /// density at a nucleus is at least about that of the hydrogen atom, 1/π ≈ 0.32 (textbook),
    /// and the nearest point of a 0.3 bohr grid still sees e^{−2·0.26} of it (0.19); the tail of
    /// a density, and the non-nuclear maxima of some metal clusters, lie far below.
    pub density_floor: f64,
    /// Radius of the fit window around a maximum, in longest grid steps. Default 2: the first
    /// shells of neighbours (33 points on a cubic grid), enough for the 11 + 3 parameters of the
    /// second-order fit while staying inside the core of a first-row atom at 0.15 bohr.
    pub fit_steps: f64,
    /// Largest Z·h (h: longest grid step, bohr) at which a cusp counts as resolved. Default 0.5:
    /// there the plain grid sum of a hydrogenic 1s density is within −0.3 %/+1.1 % of one
    /// electron, whatever the nucleus's offset from the grid points (lattice sum, checked in
    /// the tests), and the cusp charge of an analytic two-shell atom within 0.5 %. At
    /// Z·h = 1.2 (oxygen on a 0.15 bohr grid) the same sum errs by up to +31 %.
    pub max_zh: f64,
    /// Largest distance at which a density maximum is taken for a listed atom, bohr; it is
    /// further capped at half the distance to the atom's nearest listed neighbour, so that no
    /// maximum can be claimed by two atoms. Default 1.0: beyond that it is another atom (the
    /// shortest bond, H–H, is 1.4 bohr), not the same one shifted.
    pub match_radius: f64,
    /// Largest distance between a matched maximum and its listed atom before the atom counts
    /// as shifted, bohr. Default 0.1: heavy atoms are located within 0.003 bohr, hydrogens of
    /// Gaussian-basis densities (which have no cusp within the tightest basis function, so
    /// the fitted kink wanders with the window) within 0.051 bohr (shared reference set, PySCF
    /// 2.14, 0.15 bohr grids); the neighbours' density moves the hydrogens of an invented
    /// molecule by up to 0.04 bohr on a 0.2 bohr grid.
    pub shift_tolerance: f64,
    /// Largest relative difference |Z_est − Z| / Z for a resolved cusp. Default 0.3: on the
    /// shared reference set the resolved estimates lie 4–17 % below Z for hydrogens (no
    /// basis-set cusp, and the neighbours' density rising across the window) and 5 % below for
    /// lithium (the screened core bends ln ρ inside the window); 30 % still tells H from He and
    /// Li from Be, not heavier neighbours apart.
    pub charge_tolerance: f64,
    /// Electrons estimated beyond the box faces above which the box counts as too small.
    /// Default 0.01 e: a hundredth of an electron missing changes the norm and Coulomb energy
    /// of a diffuse orbital by about a per cent.
    pub outside_tolerance: f64,
    /// Negative values below −negative_tolerance × (largest value) are flagged. Default 1e-6:
    /// far above the round-off of a density evaluated from orbitals (~1e-16 of the peak) and
    /// far below the negative lobes of an orbital amplitude passed by mistake (~0.1).
    pub negative_tolerance: f64,
    /// Relative precision of the stored values: half a unit in the last printed digit. Default
    /// 5e-6 (a mantissa with five decimals, `1.23456E-03`, as the shared files have).
    pub value_precision: f64,
}

impl Default for InspectParams {
    fn default() -> Self {
        InspectParams {
            density_floor: 0.1,
            fit_steps: 2.0,
            max_zh: 0.5,
            match_radius: 1.0,
            shift_tolerance: 0.1,
            charge_tolerance: 0.3,
            outside_tolerance: 0.01,
            negative_tolerance: 1e-6,
            value_precision: 5e-6,
        }
    }
}

/// What a flag is about.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum FlagKind {
    /// A listed atom has no density maximum near it (wrong geometry, wrong file, or an atom the
    /// density does not hold).
    MissingAtom,
    /// A density maximum has no listed atom near it (an atom missing from the list, or the file
    /// belongs to another molecule).
    ExtraMaximum,
    /// A matched maximum lies further from its atom than the tolerance.
    ShiftedAtom,
    /// A resolved cusp gives a charge far from the listed atomic number.
    WrongElement,
    /// The grid is too coarse to resolve the cusps of some elements.
    CuspUnresolved,
    /// The box cuts off density.
    BoxCut,
    /// The density has clearly negative values (not a density?).
    NegativeDensity,
    /// The orbital sum differs from the density.
    OrbitalSum,
    /// An orbital file does not fit the density file (grid or atoms).
    OrbitalFile,
}

impl FlagKind {
    /// Short name, as in reports.
    pub fn as_str(self) -> &'static str {
        match self {
            FlagKind::MissingAtom => "missing-atom",
            FlagKind::ExtraMaximum => "extra-maximum",
            FlagKind::ShiftedAtom => "shifted-atom",
            FlagKind::WrongElement => "wrong-element",
            FlagKind::CuspUnresolved => "cusp-unresolved",
            FlagKind::BoxCut => "box-cut",
            FlagKind::NegativeDensity => "negative-density",
            FlagKind::OrbitalSum => "orbital-sum",
            FlagKind::OrbitalFile => "orbital-file",
        }
    }
}

/// One finding, displayed as `kind: message`.
#[derive(Clone, Debug, PartialEq)]
pub struct Flag {
    /// What it is about.
    pub kind: FlagKind,
    /// What was found, with numbers in bohr and electrons.
    pub message: String,
}

impl fmt::Display for Flag {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}: {}", self.kind.as_str(), self.message)
    }
}

impl Serialize for Flag {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        s.collect_str(self)
    }
}

/// The grid a density lives on.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct GridSummary {
    /// Points along each axis.
    pub shape: [usize; 3],
    /// Position of the first point, bohr.
    pub origin: [f64; 3],
    /// Length of the longest step vector, bohr (the h of Z·h).
    pub step: f64,
    /// Volume of one cell, bohr³.
    pub cell_volume: f64,
}

/// An atom as the file lists it, and the density maximum matched to it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ListedAtom {
    /// Atomic number (0 or less: a dummy or ghost atom, not checked).
    pub atomic_number: i32,
    /// Element symbol ("X" for dummies and unknown numbers).
    pub symbol: &'static str,
    /// The file's charge column, e (often 0, or the valence charge).
    pub charge_column: f64,
    /// Position, bohr.
    pub position: [f64; 3],
    /// Index into [`Inspection::nuclei`] of the matched maximum.
    pub nucleus: Option<usize>,
    /// Distance to the matched maximum, bohr.
    pub distance: Option<f64>,
}

/// A density maximum taken for a nucleus.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct NucleusEstimate {
    /// Refined position, bohr (the grid point's when no fit succeeded).
    pub position: [f64; 3],
    /// Indices of the grid point holding the maximum.
    pub grid_point: [usize; 3],
    /// Density at that grid point, e/bohr³.
    pub grid_density: f64,
    /// Nuclear charge from the cusp by Kato's condition, e; `None` when the fit failed.
    pub charge_estimate: Option<f64>,
    /// Z·h with Z the matched atom's atomic number (else the estimate) and h the longest step.
    pub zh: Option<f64>,
    /// Whether Z·h is within [`InspectParams::max_zh`], so that the estimate means something.
    pub resolved: bool,
    /// Index into [`Inspection::atoms`] of the matched atom.
    pub atom: Option<usize>,
}

/// Density near the faces of the box.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BoxEdge {
    /// Largest density on the six faces, e/bohr³.
    pub max_face_density: f64,
    /// Electrons beyond the faces, extrapolating each face point outwards with the decay
    /// between it and its inner neighbour (decay lengths capped at 3 bohr).
    pub outside_estimate: f64,
}

/// Everything [`inspect_density`] found.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Inspection {
    /// The grid.
    pub grid: GridSummary,
    /// ∫ρ as the grid sum times the cell volume, electrons.
    pub electrons: f64,
    /// Sum of the listed atomic numbers (the electron count of the neutral molecule), e.
    pub nuclear_charge: i64,
    /// The atoms the file lists, in file order.
    pub atoms: Vec<ListedAtom>,
    /// Density maxima taken for nuclei, in grid order.
    pub nuclei: Vec<NucleusEstimate>,
    /// Density at the box faces.
    #[serde(rename = "box")]
    pub box_edge: BoxEdge,
    /// Smallest value on the grid, e/bohr³.
    pub min_density: f64,
    /// Largest value on the grid, e/bohr³.
    pub max_density: f64,
    /// Findings, in a fixed order; empty when all is well.
    pub flags: Vec<Flag>,
}

/// Decay lengths beyond the box are capped here, bohr: a density decays as e^{−2√(2I) r} for
/// ionisation energy I (common practice), and 3 bohr corresponds to I ≈ 0.014 Eh (0.38 eV),
/// below the binding of nearly any bound electron. Faces where the density does not fall
/// outwards get this length too.
const MAX_DECAY_LENGTH: f64 = 3.0;

/// Checks a total density `values` (e/bohr³, in the storage order of `geometry`) against the
/// `atoms` its file lists.
pub fn inspect_density(
    geometry: &GridGeometry,
    values: &[f64],
    atoms: &[Nucleus],
    params: &InspectParams,
    par: Parallelism,
) -> Result<Inspection, InspectError> {
    if values.len() != geometry.len() {
        return Err(InspectError::Size { expected: geometry.len(), found: values.len() });
    }
    let h = geometry.max_step();
    let electrons = geometry.voxel_volume() * par.chunked_sum(values.len(), |r| values[r].iter().sum());
    let min_density = values.iter().copied().fold(f64::INFINITY, f64::min);
    let max_density = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let maxima = local_maxima(geometry, values, params.density_floor, par);
    let mut nuclei = par.map(maxima.len(), |k| refine(geometry, values, maxima[k], params));
    let mut listed: Vec<ListedAtom> = atoms
        .iter()
        .map(|a| ListedAtom {
            atomic_number: a.atomic_number,
            symbol: symbol(a.atomic_number),
            charge_column: a.charge,
            position: a.position,
            nucleus: None,
            distance: None,
        })
        .collect();
    match_atoms(&mut listed, &mut nuclei, params);
    for n in &mut nuclei {
        let z = match n.atom {
            Some(a) => Some(f64::from(listed[a].atomic_number)),
            None => n.charge_estimate.map(|z| z.max(1.0)),
        };
        n.zh = z.map(|z| z * h);
        n.resolved = n.zh.is_some_and(|zh| zh <= params.max_zh);
    }
    let box_edge = box_edge(geometry, values);
    let mut inspection = Inspection {
        grid: GridSummary {
            shape: geometry.shape,
            origin: geometry.origin,
            step: h,
            cell_volume: geometry.voxel_volume(),
        },
        electrons,
        nuclear_charge: listed.iter().map(|a| i64::from(a.atomic_number.max(0))).sum(),
        atoms: listed,
        nuclei,
        box_edge,
        min_density,
        max_density,
        flags: Vec::new(),
    };
    inspection.flags = density_flags(&inspection, geometry, params);
    Ok(inspection)
}

/// Linear index of grid point `i`.
fn index(shape: [usize; 3], i: [usize; 3]) -> usize {
    (i[0] * shape[1] + i[1]) * shape[2] + i[2]
}

/// Interior grid points at or above `floor` that no neighbour (of 26) exceeds and that exceed
/// the neighbours before them in storage order, so that a plateau counts once. In grid order.
fn local_maxima(geometry: &GridGeometry, values: &[f64], floor: f64, par: Parallelism) -> Vec<[usize; 3]> {
    let shape = geometry.shape;
    if shape.iter().any(|&n| n < 3) {
        return Vec::new();
    }
    let planes = par.map(shape[0] - 2, |p| {
        let i0 = p + 1;
        let mut found = Vec::new();
        for i1 in 1..shape[1] - 1 {
            for i2 in 1..shape[2] - 1 {
                let here = index(shape, [i0, i1, i2]);
                let v = values[here];
                // NaN compares as nothing and is skipped too.
                if v.partial_cmp(&floor).is_none_or(|o| o.is_lt()) {
                    continue;
                }
                let beaten = NEIGHBOURS.iter().any(|d| {
                    let j = [0, 1, 2].map(|a| [i0, i1, i2][a].wrapping_add_signed(d[a]));
                    let there = index(shape, j);
                    values[there] > v || (values[there] == v && there < here)
                });
                if !beaten {
                    found.push([i0, i1, i2]);
                }
            }
        }
        found
    });
    planes.into_iter().flatten().collect()
}

/// Offsets of the 26 neighbours of a grid point.
const NEIGHBOURS: [[isize; 3]; 26] = {
    let mut out = [[0; 3]; 26];
    let mut k = 0;
    let mut code = 0;
    while code < 27 {
        if code != 13 {
            out[k] = [code / 9 - 1, (code / 3) % 3 - 1, code % 3 - 1];
            k += 1;
        }
        code += 1;
    }
    out
};

/// Position and cusp charge of the nucleus at the grid maximum `m`.
///
/// Two fits over the grid points within `fit_steps` steps of a window centre: the second-order
/// model, weighted by ρ, places the nucleus (the quadratic terms absorb the curvature of a
/// bonded atom's density, which otherwise drags the kink towards the bond); the first-order
/// model, weighted by ρ², gives Z, its slope at the kink. A second-order fit would extrapolate
/// the slope to r = 0, where a Gaussian-basis density — which has no cusp below its tightest
/// function — flattens: for the hydrogens of the shared reference set it returns Z between 0.27
/// and 0.83 where the first-order fit returns 0.83–0.96. With five printed digits the noise in
/// ln ρ is uniform (≤ 5e-6), so the weights only favour the inner points, where each expansion
/// holds.
///
/// The window starts at the maximum and moves to the grid point nearest the fitted nucleus
/// until they agree: a hydrogen's maximum can lean a whole step into its bond.
fn refine(geometry: &GridGeometry, values: &[f64], m: [usize; 3], params: &InspectParams) -> NucleusEstimate {
    let h = geometry.max_step();
    let mut centre = m;
    let mut samples = window(geometry, values, centre, params.fit_steps * h);
    let mut place = None;
    // Three moves reach any nucleus within the window of the maximum; more would chase noise.
    for _ in 0..=3 {
        let start = place.map_or(geometry.point(centre), |f: cusp::CuspFit| f.position);
        // The nucleus lies within a step of its window centre; a best R at that limit means
        // the window holds no cusp and the fit is discarded.
        place = cusp::fit(&samples, cusp::Order::Second, start, 0.25 * h, h).or(place);
        let Some(next) = place.and_then(|f| nearest_point(geometry, f.position)) else { break };
        if next == centre {
            break;
        }
        centre = next;
        samples = window(geometry, values, centre, params.fit_steps * h);
    }
    let squared: Vec<_> = samples.iter().map(|s| cusp::Sample { weight: s.weight * s.weight, ..*s }).collect();
    let start = place.map_or(geometry.point(centre), |f| f.position);
    let charge = cusp::fit(&squared, cusp::Order::First, start, 0.25 * h, h);
    NucleusEstimate {
        position: place.or(charge).map_or(geometry.point(m), |f| f.position),
        grid_point: m,
        grid_density: values[index(geometry.shape, m)],
        charge_estimate: charge.map(|f| f.charge),
        zh: None,
        resolved: false,
        atom: None,
    }
}

/// The grid points within `radius` (bohr) of point `c` with positive density, weighted by ρ.
fn window(geometry: &GridGeometry, values: &[f64], c: [usize; 3], radius: f64) -> Vec<cusp::Sample> {
    let centre = geometry.point(c);
    let radius = radius * (1.0 + 1e-9);
    let reach = geometry.plane_spacings().map(|s| (radius / s).ceil() as isize);
    let mut samples = Vec::new();
    for d0 in -reach[0]..=reach[0] {
        for d1 in -reach[1]..=reach[1] {
            for d2 in -reach[2]..=reach[2] {
                let j = [c[0] as isize + d0, c[1] as isize + d1, c[2] as isize + d2];
                if (0..3).any(|a| j[a] < 0 || j[a] >= geometry.shape[a] as isize) {
                    continue;
                }
                let j = j.map(|x| x as usize);
                let p = geometry.point(j);
                let v = values[index(geometry.shape, j)];
                if distance(p, centre) <= radius && v > 0.0 {
                    samples.push(cusp::Sample { position: p, log_density: v.ln(), weight: v });
                }
            }
        }
    }
    samples
}

/// Fractional grid coordinates of `p`.
fn fractional(geometry: &GridGeometry, p: [f64; 3]) -> [f64; 3] {
    let b = geometry.dual_axes();
    let rel = [0, 1, 2].map(|k| p[k] - geometry.origin[k]);
    [0, 1, 2].map(|a| (0..3).map(|k| rel[k] * b[a][k]).sum::<f64>())
}

/// The grid point nearest `p` in grid coordinates, or `None` outside the grid.
fn nearest_point(geometry: &GridGeometry, p: [f64; 3]) -> Option<[usize; 3]> {
    let t = fractional(geometry, p).map(f64::round);
    let inside = (0..3).all(|a| t[a] >= 0.0 && t[a] <= (geometry.shape[a] - 1) as f64);
    inside.then(|| t.map(|x| x as usize))
}

fn distance(a: [f64; 3], b: [f64; 3]) -> f64 {
    (0..3).map(|k| (a[k] - b[k]).powi(2)).sum::<f64>().sqrt()
}

/// Match radius of each listed atom: `params.match_radius`, capped at half the distance to
/// its nearest real neighbour; `None` for dummies.
fn match_radii(atoms: &[ListedAtom], params: &InspectParams) -> Vec<Option<f64>> {
    atoms
        .iter()
        .enumerate()
        .map(|(i, a)| {
            (a.atomic_number > 0).then(|| {
                atoms
                    .iter()
                    .enumerate()
                    .filter(|(j, b)| *j != i && b.atomic_number > 0)
                    .map(|(_, b)| 0.5 * distance(a.position, b.position))
                    .fold(params.match_radius, f64::min)
            })
        })
        .collect()
}

/// Pairs atoms and maxima, closest pairs first, each within the atom's match radius.
fn match_atoms(atoms: &mut [ListedAtom], nuclei: &mut [NucleusEstimate], params: &InspectParams) {
    let radii = match_radii(atoms, params);
    let mut pairs = Vec::new();
    for (a, atom) in atoms.iter().enumerate() {
        let Some(radius) = radii[a] else { continue };
        for (k, n) in nuclei.iter().enumerate() {
            let d = distance(atom.position, n.position);
            if d <= radius {
                pairs.push((d, a, k));
            }
        }
    }
    pairs.sort_by(|x, y| x.0.total_cmp(&y.0).then(x.1.cmp(&y.1)).then(x.2.cmp(&y.2)));
    for (d, a, k) in pairs {
        if atoms[a].nucleus.is_none() && nuclei[k].atom.is_none() {
            atoms[a].nucleus = Some(k);
            atoms[a].distance = Some(d);
            nuclei[k].atom = Some(a);
        }
    }
}

/// Largest face density and the electrons extrapolated beyond the faces (see [`BoxEdge`]).
fn box_edge(geometry: &GridGeometry, values: &[f64]) -> BoxEdge {
    let shape = geometry.shape;
    let spacing = geometry.plane_spacings();
    let mut max_face_density = f64::NEG_INFINITY;
    let mut outside = 0.0;
    for axis in 0..3 {
        let (u, w) = ((axis + 1) % 3, (axis + 2) % 3);
        let area = geometry.voxel_volume() / spacing[axis];
        let last = shape[axis] - 1;
        for (face, inner) in [(0, 1.min(last)), (last, last.saturating_sub(1))] {
            for iu in 0..shape[u] {
                for iw in 0..shape[w] {
                    let mut i = [0; 3];
                    i[axis] = face;
                    i[u] = iu;
                    i[w] = iw;
                    let at_face = values[index(shape, i)];
                    i[axis] = inner;
                    let within = values[index(shape, i)];
                    max_face_density = max_face_density.max(at_face);
                    if at_face > 0.0 {
                        let decay = if within > at_face { spacing[axis] / (within / at_face).ln() } else { MAX_DECAY_LENGTH };
                        outside += at_face * decay.min(MAX_DECAY_LENGTH) * area;
                    }
                }
            }
            if last == 0 {
                break;
            }
        }
    }
    BoxEdge { max_face_density, outside_estimate: outside }
}

fn fmt_position(p: [f64; 3]) -> String {
    format!("({:.3}, {:.3}, {:.3})", p[0], p[1], p[2])
}

fn atom_name(i: usize, a: &ListedAtom) -> String {
    format!("atom {} ({} at {} bohr)", i + 1, a.symbol, fmt_position(a.position))
}

/// The flags of a density inspection, in a fixed order.
fn density_flags(ins: &Inspection, geometry: &GridGeometry, params: &InspectParams) -> Vec<Flag> {
    let mut flags = Vec::new();
    let mut flag = |kind, message: String| flags.push(Flag { kind, message });
    let radii = match_radii(&ins.atoms, params);
    for (i, a) in ins.atoms.iter().enumerate() {
        if let (None, Some(radius)) = (a.nucleus, radii[i]) {
            let where_ = if inside_box(geometry, a.position) {
                format!("has no density maximum above {} e/bohr³ within {radius:.2} bohr", params.density_floor)
            } else {
                "lies outside the grid box".to_string()
            };
            flag(FlagKind::MissingAtom, format!("{} {where_}", atom_name(i, a)));
        }
    }
    for n in &ins.nuclei {
        if n.atom.is_none() {
            let z = n.charge_estimate.map_or("no cusp fit".to_string(), |z| format!("cusp charge {z:.2}"));
            flag(
                FlagKind::ExtraMaximum,
                format!(
                    "density maximum at {} bohr (ρ = {:.3} e/bohr³, {z}) has no listed atom near it",
                    fmt_position(n.position),
                    n.grid_density
                ),
            );
        }
    }
    for (i, a) in ins.atoms.iter().enumerate() {
        if let Some(d) = a.distance.filter(|&d| d > params.shift_tolerance) {
            flag(
                FlagKind::ShiftedAtom,
                format!(
                    "{}: the density maximum lies {d:.3} bohr away (tolerance {} bohr)",
                    atom_name(i, a),
                    params.shift_tolerance
                ),
            );
        }
    }
    for (i, a) in ins.atoms.iter().enumerate() {
        let Some(n) = a.nucleus.map(|k| &ins.nuclei[k]) else { continue };
        let z = f64::from(a.atomic_number);
        match n.charge_estimate {
            Some(est) if n.resolved && (est - z).abs() > params.charge_tolerance * z => flag(
                FlagKind::WrongElement,
                format!(
                    "{}: cusp charge {est:.2} where the listed element has Z = {} (tolerance ±{:.0} %)",
                    atom_name(i, a),
                    a.atomic_number,
                    100.0 * params.charge_tolerance
                ),
            ),
            None if n.resolved => flag(
                FlagKind::WrongElement,
                format!("{}: the density maximum has no cusp the fit can follow", atom_name(i, a)),
            ),
            _ => {}
        }
    }
    // One flag for all unresolved cusps, element by element.
    let mut unresolved: Vec<(i32, f64)> = Vec::new();
    for n in ins.nuclei.iter().filter(|n| !n.resolved) {
        let z = match n.atom {
            Some(a) => ins.atoms[a].atomic_number,
            None => n.charge_estimate.map_or(0, |z| z.round().max(1.0) as i32),
        };
        if let (false, Some(zh)) = (unresolved.iter().any(|u| u.0 == z), n.zh) {
            unresolved.push((z, zh));
        }
    }
    if !unresolved.is_empty() {
        unresolved.sort_by_key(|u| u.0);
        let list: Vec<String> = unresolved.iter().map(|(z, zh)| format!("{} (Z·h = {zh:.2})", symbol(*z))).collect();
        flag(
            FlagKind::CuspUnresolved,
            format!(
                "the grid step {:.4} bohr is too coarse for the nuclear cusps of {} (resolved for Z·h ≤ {}); their charge \
                 estimates are not checked and grid sums of their core densities are unreliable",
                ins.grid.step,
                list.join(", "),
                params.max_zh
            ),
        );
    }
    if ins.box_edge.outside_estimate > params.outside_tolerance {
        flag(
            FlagKind::BoxCut,
            format!(
                "about {:.3} electrons lie beyond the box faces (face density up to {:.2e} e/bohr³; tolerance {} e)",
                ins.box_edge.outside_estimate, ins.box_edge.max_face_density, params.outside_tolerance
            ),
        );
    }
    if ins.min_density < -params.negative_tolerance * ins.max_density.max(0.0) {
        flag(
            FlagKind::NegativeDensity,
            format!(
                "values down to {:.3e} e/bohr³ against a largest value of {:.3e}: is this a density?",
                ins.min_density, ins.max_density
            ),
        );
    }
    flags
}

/// Whether `p` lies within the parallelepiped spanned by the grid points.
fn inside_box(geometry: &GridGeometry, p: [f64; 3]) -> bool {
    let t = fractional(geometry, p);
    (0..3).all(|a| (-1e-9..=(geometry.shape[a] - 1) as f64 + 1e-9).contains(&t[a]))
}

/// Element symbol of atomic number `z` ("X" outside 1–118; common practice).
pub fn symbol(z: i32) -> &'static str {
    const SYMBOLS: [&str; 118] = [
        "H", "He", "Li", "Be", "B", "C", "N", "O", "F", "Ne", "Na", "Mg", "Al", "Si", "P", "S", "Cl", "Ar", "K", "Ca",
        "Sc", "Ti", "V", "Cr", "Mn", "Fe", "Co", "Ni", "Cu", "Zn", "Ga", "Ge", "As", "Se", "Br", "Kr", "Rb", "Sr", "Y",
        "Zr", "Nb", "Mo", "Tc", "Ru", "Rh", "Pd", "Ag", "Cd", "In", "Sn", "Sb", "Te", "I", "Xe", "Cs", "Ba", "La", "Ce",
        "Pr", "Nd", "Pm", "Sm", "Eu", "Gd", "Tb", "Dy", "Ho", "Er", "Tm", "Yb", "Lu", "Hf", "Ta", "W", "Re", "Os", "Ir",
        "Pt", "Au", "Hg", "Tl", "Pb", "Bi", "Po", "At", "Rn", "Fr", "Ra", "Ac", "Th", "Pa", "U", "Np", "Pu", "Am", "Cm",
        "Bk", "Cf", "Es", "Fm", "Md", "No", "Lr", "Rf", "Db", "Sg", "Bh", "Hs", "Mt", "Ds", "Rg", "Cn", "Nh", "Fl", "Mc",
        "Lv", "Ts", "Og",
    ];
    usize::try_from(z).ok().and_then(|z| z.checked_sub(1)).and_then(|i| SYMBOLS.get(i)).copied().unwrap_or("X")
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    fn cubic(h: f64, centre: [f64; 3], radius: f64) -> GridGeometry {
        GridGeometry::around([[h, 0.0, 0.0], [0.0, h, 0.0], [0.0, 0.0, h]], centre, radius).unwrap()
    }

    #[test]
    fn neighbours_are_the_26_offsets() {
        let mut seen = std::collections::HashSet::new();
        for d in NEIGHBOURS {
            assert!(d.iter().all(|x| (-1..=1).contains(x)) && d != [0, 0, 0]);
            assert!(seen.insert(d));
        }
    }

    #[test]
    fn symbols_cover_the_table_and_nothing_else() {
        assert_eq!((symbol(1), symbol(8), symbol(26), symbol(118)), ("H", "O", "Fe", "Og"));
        assert_eq!((symbol(0), symbol(-3), symbol(119)), ("X", "X", "X"));
    }

    #[test]
    fn a_plateau_is_one_maximum() {
        let g = cubic(0.2, [0.0; 3], 0.6);
        let mut v = vec![0.0; g.len()];
        let s = g.shape;
        v[index(s, [3, 3, 3])] = 1.0;
        v[index(s, [3, 3, 4])] = 1.0;
        assert_eq!(local_maxima(&g, &v, 0.1, Parallelism::Sequential), vec![[3, 3, 3]]);
        // Below the floor: none.
        assert!(local_maxima(&g, &v, 2.0, Parallelism::Sequential).is_empty());
    }

    #[test]
    fn box_edge_extrapolates_an_exponential() {
        // ρ ∝ e^{−x/λ} along the first axis only. Beyond the far x face lie λ ρ(x_max) electrons
        // per unit area; towards the near x face and across the four side faces the density
        // does not fall, so those get the capped decay length. Each face point stands for a
        // cell face of 0.1 × 0.1 bohr².
        let lambda = 0.4;
        let g = GridGeometry::new([0.0; 3], [[0.1, 0.0, 0.0], [0.0, 0.1, 0.0], [0.0, 0.0, 0.1]], [31, 11, 11]).unwrap();
        let v = g.sample(|p| (-(p[0] - 1.0) / lambda).exp() * 1e-3);
        let e = box_edge(&g, &v);
        let far = 1e-3 * (-(3.0 - 1.0) / lambda).exp() * lambda * (11.0 * 11.0 * 0.01);
        let near = 1e-3 * (1.0 / lambda).exp() * MAX_DECAY_LENGTH * (11.0 * 11.0 * 0.01);
        // The four side faces see no decay across them (capped) over their whole area.
        let sides: f64 = {
            let mut s = 0.0;
            for i0 in 0..31 {
                let rho = 1e-3 * (-(i0 as f64 * 0.1 - 1.0) / lambda).exp();
                s += 4.0 * 11.0 * rho * MAX_DECAY_LENGTH * 0.01;
            }
            s
        };
        let want = far + near + sides;
        assert!((e.outside_estimate - want).abs() < 1e-12 * want, "{} vs {want}", e.outside_estimate);
        assert_eq!(e.max_face_density, 1e-3 * (1.0 / lambda).exp());
    }

    #[test]
    fn a_hydrogenic_atom_on_a_coarse_grid() {
        // Z = 2 off the grid points: exact position and charge (the model is exact here).
        let r0 = [0.031, -0.047, 0.012];
        let g = cubic(0.25, [0.0; 3], 3.0);
        let v = g.sample(|p| 8.0 / PI * (-4.0 * distance(p, r0)).exp());
        let atoms = [Nucleus { atomic_number: 2, charge: 0.0, position: r0 }];
        let ins = inspect_density(&g, &v, &atoms, &InspectParams::default(), Parallelism::Sequential).unwrap();
        assert_eq!(ins.nuclei.len(), 1);
        let n = &ins.nuclei[0];
        assert!(distance(n.position, r0) < 1e-6, "{:?}", n.position);
        assert!((n.charge_estimate.unwrap() - 2.0).abs() < 1e-6);
        assert_eq!(n.atom, Some(0));
        assert!(n.resolved, "Z·h = 0.5");
        assert!(ins.flags.is_empty(), "{:?}", ins.flags);
        assert_eq!(ins.nuclear_charge, 2);
    }

    #[test]
    fn mismatched_values_are_an_error() {
        let g = cubic(0.5, [0.0; 3], 1.0);
        let err = inspect_density(&g, &[1.0; 3], &[], &InspectParams::default(), Parallelism::Sequential).unwrap_err();
        assert!(matches!(err, InspectError::Size { found: 3, .. }), "{err}");
    }
}
