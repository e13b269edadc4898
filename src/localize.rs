//! Foster–Boys localization of a set of orthonormal orbitals.
//!
//! Maximises `L = Σ_i |⟨φ_i|r|φ_i⟩|²` over unitary (here real orthogonal) rotations of the set
//! (J. M. Foster and S. F. Boys, Rev. Mod. Phys. 32, 300 (1960)), by Jacobi sweeps of pairwise
//! rotations. For a pair (i, j) rotated by θ, with d_i = ⟨i|r|i⟩ and d_ij = ⟨i|r|j⟩,
//!
//! ```text
//! L(θ) = L(0) + A (1 − cos 4θ) + B sin 4θ,   A = |d_ij|² − ¼|d_i − d_j|²,   B = d_ij·(d_i − d_j)
//! ```
//!
//! (common practice), maximal at 4θ = atan2(B, −A) with gain A + √(A² + B²) ≥ 0. Sweeps over all
//! pairs repeat until no pair gains more than the tolerance. L depends on the origin of r only
//! through a constant, since Σ_i d_i is invariant under rotations; the reported value uses the
//! dipole matrices as given.
//!
//! Only the dipole matrices enter, so the same optimiser serves orbitals on grids (matrices by
//! quadrature) and in Gaussian basis sets (matrices from dipole integrals).

/// Settings of the optimiser.
#[derive(Clone, Debug, PartialEq)]
pub struct LocalizeParams {
    /// Stop when no pair rotation gains more than this in L, bohr².
    pub tolerance: f64,
    /// Give up after this many sweeps.
    pub max_sweeps: usize,
    /// Rotate a pair even where L has zero slope in its direction (|B| below `flat_slope`),
    /// taking the pair's best angle. Canonical orbitals of different
    /// symmetry sit at such points (a saddle of L: B vanishes by symmetry although rotating
    /// gains); with `false`, those pairs are left alone, orbitals of different symmetry never
    /// mix, and the result is the symmetry-preserving stationary point that a gradient-driven
    /// optimiser started from canonical orbitals stops at, instead of the larger maximum.
    pub escape_saddle_points: bool,
    /// Slope |B| (bohr²) below which a pair counts as having none, for
    /// `escape_saddle_points: false`. The default suits exact dipole integrals (round-off of
    /// symmetry-forbidden slopes ~1e-16 bohr² times L); grid quadrature raises it to at least
    /// [`GRID_FLAT_SLOPE`].
    pub flat_slope: f64,
}

/// Smallest `flat_slope` for dipole matrices from grid files: on the shared reference's water
/// cubes (0.15 bohr, six digits) symmetry-forbidden slopes come out up to ~1e-9 bohr², so
/// 1e-9 lets the optimiser break the symmetry and 1e-8 does not; 1e-7 leaves a margin.
pub const GRID_FLAT_SLOPE: f64 = 1e-7;

impl Default for LocalizeParams {
    fn default() -> Self {
        LocalizeParams { tolerance: 1e-10, max_sweeps: 500, escape_saddle_points: true, flat_slope: 1e-10 }
    }
}

/// The result of a localization.
#[derive(Clone, Debug, PartialEq)]
pub struct Localization {
    /// Orthogonal rotation, row-major n × n: localized orbital k = Σ_i `rotation[i][k]` φ_i.
    pub rotation: Vec<Vec<f64>>,
    /// The final value of L = Σ_i |⟨φ_i|r|φ_i⟩|², bohr².
    pub functional: f64,
    /// L of the orbitals as given, bohr².
    pub initial_functional: f64,
    /// Sweeps made.
    pub sweeps: usize,
    /// Whether the tolerance was reached.
    pub converged: bool,
}

/// L for dipole matrices `d[x][i][j]`.
fn functional(d: &[Vec<Vec<f64>>; 3]) -> f64 {
    let n = d[0].len();
    (0..n).map(|i| d.iter().map(|m| m[i][i] * m[i][i]).sum::<f64>()).sum()
}

/// Boys-localizes the orbitals whose dipole matrices (x, y, z components, each symmetric
/// n × n, bohr) are `dipoles`.
///
/// # Panics
/// If the three matrices are not square and of one size (a caller bug).
pub fn boys(dipoles: &[Vec<Vec<f64>>; 3], params: &LocalizeParams) -> Localization {
    let n = dipoles[0].len();
    assert!(dipoles.iter().all(|m| m.len() == n && m.iter().all(|row| row.len() == n)), "square dipole matrices of one size");
    let mut d = dipoles.clone();
    let mut u: Vec<Vec<f64>> = (0..n).map(|i| (0..n).map(|j| if i == j { 1.0 } else { 0.0 }).collect()).collect();
    let initial = functional(&d);
    let mut sweeps = 0;
    let mut converged = n < 2;
    while !converged && sweeps < params.max_sweeps {
        sweeps += 1;
        let mut largest_gain: f64 = 0.0;
        for i in 0..n {
            for j in i + 1..n {
                let (mut a, mut b) = (0.0, 0.0);
                for m in &d {
                    let diff = m[i][i] - m[j][j];
                    a += m[i][j] * m[i][j] - 0.25 * diff * diff;
                    b += m[i][j] * diff;
                }
                let gain = a + (a * a + b * b).sqrt();
                if gain <= params.tolerance * 1e-3 || (!params.escape_saddle_points && b.abs() <= params.flat_slope) {
                    continue;
                }
                largest_gain = largest_gain.max(gain);
                let theta = 0.25 * b.atan2(-a);
                let (s, c) = theta.sin_cos();
                // Rotate rows and columns i, j of each dipole matrix, and columns of u.
                for m in d.iter_mut() {
                    for row in m.iter_mut() {
                        let (x, y) = (row[i], row[j]);
                        row[i] = c * x + s * y;
                        row[j] = -s * x + c * y;
                    }
                    let (ri, rj) = (m[i].clone(), m[j].clone());
                    for k in 0..n {
                        m[i][k] = c * ri[k] + s * rj[k];
                        m[j][k] = -s * ri[k] + c * rj[k];
                    }
                }
                for row in u.iter_mut() {
                    let (x, y) = (row[i], row[j]);
                    row[i] = c * x + s * y;
                    row[j] = -s * x + c * y;
                }
            }
        }
        converged = largest_gain <= params.tolerance;
    }
    Localization { rotation: u, functional: functional(&d), initial_functional: initial, sweeps, converged }
}

/// Applies a rotation to orbital data stored as one vector per orbital: localized orbital k =
/// Σ_i `rotation[i][k]` × `orbitals[i]`.
pub fn rotate(orbitals: &[Vec<f64>], rotation: &[Vec<f64>]) -> Vec<Vec<f64>> {
    let n = orbitals.len();
    let len = orbitals.first().map_or(0, Vec::len);
    (0..n)
        .map(|k| {
            let mut out = vec![0.0; len];
            for (i, orb) in orbitals.iter().enumerate() {
                let c = rotation[i][k];
                if c != 0.0 {
                    out.iter_mut().zip(orb).for_each(|(o, v)| *o += c * v);
                }
            }
            out
        })
        .collect()
}

/// Why a set of grid orbitals cannot be localized.
#[derive(Debug, thiserror::Error, Clone, PartialEq)]
pub enum LocalizeError {
    /// Localization rotates amplitudes; densities cannot be rotated.
    #[error("{label}: orbitals given as densities cannot be localized (rotations act on amplitudes; use --kind amplitude files)")]
    Densities {
        /// The first such orbital.
        label: String,
    },
    /// The orbitals of one spin channel must share a grid.
    #[error("{label} is on another grid than {first}; the orbitals of a spin channel must share one to be localized")]
    Grids {
        /// The orbital that differs.
        label: String,
        /// The first orbital of its channel.
        first: String,
    },
    /// Orbitals with different occupations are not rotated into each other.
    #[error("{label} has occupation {occupation}, {first} has {other}; localization mixes orbitals of one occupation only")]
    Occupations {
        /// The orbital that differs.
        label: String,
        /// Its occupation.
        occupation: f64,
        /// The first orbital of its channel.
        first: String,
        /// That one's occupation.
        other: f64,
    },
}

/// The localization of one spin channel.
#[derive(Clone, Debug, PartialEq)]
pub struct ChannelLocalization {
    /// The spin channel.
    pub spin: crate::diagnostics::Spin,
    /// Orbitals localized.
    pub orbitals: usize,
    /// The optimiser's result (the rotation, L before and after, sweeps).
    pub result: Localization,
}

/// Boys-localizes grid orbitals (amplitudes) within each spin channel: dipole matrices by
/// quadrature on the shared grid, rotation, and the localized orbitals formed on the grid,
/// labelled `loc#k` per channel (`loc#ka`/`loc#kb` for alpha/beta). Channels of one orbital are
/// passed through unchanged.
pub fn localize_grid_orbitals(
    orbitals: &[crate::diagnostics::GridOrbital],
    params: &LocalizeParams,
) -> Result<(Vec<crate::diagnostics::GridOrbital>, Vec<ChannelLocalization>), LocalizeError> {
    use crate::diagnostics::{Kind, Spin};
    let mut out = Vec::new();
    let mut summaries = Vec::new();
    for spin in [Spin::Restricted, Spin::Alpha, Spin::Beta] {
        let channel: Vec<_> = orbitals.iter().filter(|o| o.spin == spin).collect();
        let Some(first) = channel.first() else { continue };
        for o in &channel {
            if o.kind != Kind::Amplitude {
                return Err(LocalizeError::Densities { label: o.label.clone() });
            }
            if !(o.geometry.same_lattice(&first.geometry) && o.geometry.origin == first.geometry.origin) {
                return Err(LocalizeError::Grids { label: o.label.clone(), first: first.label.clone() });
            }
            if o.occupation != first.occupation {
                return Err(LocalizeError::Occupations {
                    label: o.label.clone(),
                    occupation: o.occupation,
                    first: first.label.clone(),
                    other: first.occupation,
                });
            }
        }
        let g = &first.geometry;
        let w = g.voxel_volume();
        let coords: [Vec<f64>; 3] = [0, 1, 2].map(|x| g.sample(|p| p[x]));
        let n = channel.len();
        let dipoles = coords.map(|c| {
            let mut m = vec![vec![0.0; n]; n];
            for i in 0..n {
                for j in i..n {
                    let v = w * channel[i].values.iter().zip(&channel[j].values).zip(&c).map(|((a, b), x)| a * b * x).sum::<f64>();
                    m[i][j] = v;
                    m[j][i] = v;
                }
            }
            m
        });
        let result = boys(&dipoles, &LocalizeParams { flat_slope: params.flat_slope.max(GRID_FLAT_SLOPE), ..params.clone() });
        let values: Vec<Vec<f64>> = channel.iter().map(|o| o.values.clone()).collect();
        let suffix = match spin {
            Spin::Restricted => "",
            Spin::Alpha => "a",
            Spin::Beta => "b",
        };
        for (k, v) in rotate(&values, &result.rotation).into_iter().enumerate() {
            out.push(crate::diagnostics::GridOrbital {
                source: channel.iter().map(|o| o.source.as_str()).collect::<Vec<_>>().join(" + "),
                label: format!("loc#{}{suffix}", k + 1),
                values: v,
                kind_origin: Some(crate::input::KindOrigin::computed()),
                ..(*first).clone()
            });
        }
        summaries.push(ChannelLocalization { spin, orbitals: n, result });
    }
    Ok((out, summaries))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::grid::GridGeometry;
    use std::f64::consts::PI;

    /// Dipole matrices of `orbitals` on grid `g` by quadrature.
    fn dipoles(g: &GridGeometry, orbitals: &[Vec<f64>]) -> [Vec<Vec<f64>>; 3] {
        let w = g.voxel_volume();
        let coords: [Vec<f64>; 3] = [0, 1, 2].map(|x| g.sample(|p| p[x]));
        coords.map(|c| {
            orbitals
                .iter()
                .map(|a| orbitals.iter().map(|b| w * a.iter().zip(b).zip(&c).map(|((a, b), x)| a * b * x).sum::<f64>()).collect())
                .collect()
        })
    }

    #[test]
    fn a_45_degree_mix_of_two_separated_gaussians_is_undone() {
        // Two normalised Gaussian amplitudes 4 bohr apart (overlap e^{−8}·… ≈ 3e−4, nearly
        // orthogonal); their ±45° mixtures are delocalized; Boys must recover the Gaussians.
        let h = 0.25;
        let g = GridGeometry::around([[h, 0.0, 0.0], [0.0, h, 0.0], [0.0, 0.0, h]], [0.0; 3], 7.0).unwrap();
        let gauss = |c: f64| g.sample(move |p| (2.0 / PI).powf(0.75) * (-((p[0] - c).powi(2) + p[1] * p[1] + p[2] * p[2])).exp());
        let (a, b) = (gauss(-2.0), gauss(2.0));
        let r = std::f64::consts::FRAC_1_SQRT_2;
        let mixed = vec![
            a.iter().zip(&b).map(|(x, y)| r * (x + y)).collect::<Vec<_>>(),
            a.iter().zip(&b).map(|(x, y)| r * (x - y)).collect::<Vec<_>>(),
        ];
        let loc = boys(&dipoles(&g, &mixed), &LocalizeParams::default());
        assert!(loc.converged && loc.functional > loc.initial_functional);
        // Each localized orbital is ± one of the Gaussians.
        let out = rotate(&mixed, &loc.rotation);
        let w = g.voxel_volume();
        for o in &out {
            let overlap = |t: &Vec<f64>| (w * o.iter().zip(t).map(|(x, y)| x * y).sum::<f64>()).abs();
            let best = overlap(&a).max(overlap(&b));
            assert!(best > 1.0 - 1e-6, "overlap with a Gaussian {best}");
        }
        // L of the Gaussians: their centres at x = ±2 give 4 + 4.
        assert!((loc.functional - 8.0).abs() < 1e-6, "{}", loc.functional);
    }

    /// Two orbitals with equal centroids and a transition dipole: L has zero slope at the start
    /// (B = 0) but rotating by 45° gains (A = 1): a saddle. The default crosses it (L 0 → 2,
    /// the orbitals then centred at ±1 on x); keeping symmetry leaves it (L stays 0).
    #[test]
    fn saddle_points_are_crossed_unless_asked_not_to() {
        let zero = vec![vec![0.0; 2]; 2];
        let d = [vec![vec![0.0, 1.0], vec![1.0, 0.0]], zero.clone(), zero];
        let crossed = boys(&d, &LocalizeParams::default());
        assert!(crossed.converged && (crossed.functional - 2.0).abs() < 1e-12, "{crossed:?}");
        let kept = boys(&d, &LocalizeParams { escape_saddle_points: false, ..LocalizeParams::default() });
        assert!(kept.converged && kept.functional.abs() < 1e-15, "{kept:?}");
        assert_eq!(kept.rotation, vec![vec![1.0, 0.0], vec![0.0, 1.0]]);
    }

    #[test]
    fn rotation_stays_orthogonal_and_l_never_drops() {
        // Random symmetric dipole matrices of 6 orbitals.
        let mut s = 12345u64;
        let mut rnd = || {
            s = s.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
            (s >> 11) as f64 / (1u64 << 53) as f64 - 0.5
        };
        let n = 6;
        let d: [Vec<Vec<f64>>; 3] = [0, 1, 2].map(|_| {
            let upper: Vec<Vec<f64>> = (0..n).map(|i| (0..n).map(|j| if j >= i { rnd() } else { 0.0 }).collect()).collect();
            (0..n).map(|i| (0..n).map(|j| if j >= i { upper[i][j] } else { upper[j][i] }).collect()).collect::<Vec<Vec<f64>>>()
        });
        let loc = boys(&d, &LocalizeParams::default());
        assert!(loc.converged, "{} sweeps", loc.sweeps);
        assert!(loc.functional >= loc.initial_functional);
        for i in 0..n {
            for j in 0..n {
                let dotp: f64 = (0..n).map(|k| loc.rotation[k][i] * loc.rotation[k][j]).sum();
                assert!((dotp - if i == j { 1.0 } else { 0.0 }).abs() < 1e-12);
            }
        }
        // L recomputed from the rotated matrices equals the value reported.
        let rotated: [Vec<Vec<f64>>; 3] = d.clone().map(|m| {
            (0..n).map(|a| (0..n).map(|b| (0..n).flat_map(|i| (0..n).map(move |j| (i, j))).map(|(i, j)| loc.rotation[i][a] * m[i][j] * loc.rotation[j][b]).sum()).collect()).collect()
        });
        assert!((functional(&rotated) - loc.functional).abs() < 1e-10);
    }
}
