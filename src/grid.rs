//! Uniform grids in atomic units.
//!
//! A grid is an origin, three step vectors (not necessarily orthogonal) and a point count per
//! axis. Point `(i0, i1, i2)` lies at `origin + i0·a0 + i1·a1 + i2·a2`; values are stored with the
//! first axis slowest, index `(i0·n1 + i1)·n2 + i2`, as grid files write them. Every length is in
//! bohr; conversion from Ångström happens once, where a file's header is read.

use thiserror::Error;

/// Bohr per Ångström (CODATA 2018: a0 = 0.529177210903 Å; common practice).
pub const BOHR_PER_ANGSTROM: f64 = 1.0 / 0.529_177_210_903;

/// A geometry that cannot carry a grid.
#[derive(Debug, Error, Clone, PartialEq)]
pub enum GridError {
    /// An axis has no points.
    #[error("axis {axis} has no points")]
    EmptyAxis {
        /// Axis index, 0-based.
        axis: usize,
    },
    /// The step vectors are linearly dependent or not finite, so a cell has no volume.
    #[error("the step vectors span no volume (cell volume {volume:e} bohr³)")]
    Degenerate {
        /// Signed cell volume, bohr³.
        volume: f64,
    },
}

/// Where the points of a uniform grid are.
#[derive(Clone, Debug, PartialEq)]
pub struct GridGeometry {
    /// Position of point (0, 0, 0), bohr.
    pub origin: [f64; 3],
    /// Step vector between neighbouring points along each axis, bohr (`axes[a]` is axis `a`).
    pub axes: [[f64; 3]; 3],
    /// Number of points along each axis.
    pub shape: [usize; 3],
}

/// A nucleus listed in a grid file.
#[derive(Clone, Debug, PartialEq)]
pub struct Nucleus {
    /// Atomic number Z.
    pub atomic_number: i32,
    /// Charge as written in the file (writers often put 0 or the valence charge), e.
    pub charge: f64,
    /// Position, bohr.
    pub position: [f64; 3],
}

impl GridGeometry {
    /// A checked geometry: every axis has points and the cell has a finite, non-zero volume.
    pub fn new(origin: [f64; 3], axes: [[f64; 3]; 3], shape: [usize; 3]) -> Result<Self, GridError> {
        if let Some(axis) = shape.iter().position(|&n| n == 0) {
            return Err(GridError::EmptyAxis { axis });
        }
        let volume = det(&axes);
        let scale = axes.iter().map(norm).product::<f64>();
        // A cell flatter than ~1e-12 of its edge product is numerically degenerate.
        if !volume.is_finite() || volume.abs() <= 1e-12 * scale {
            return Err(GridError::Degenerate { volume });
        }
        Ok(GridGeometry { origin, axes, shape })
    }

    /// A grid with the given steps, centred on `centre`, whose box contains the sphere of
    /// `radius` (bohr) around it: the fewest points along each axis for which the faces lie at least
    /// `radius` from the centre.
    pub fn around(axes: [[f64; 3]; 3], centre: [f64; 3], radius: f64) -> Result<Self, GridError> {
        let spacing = GridGeometry::new([0.0; 3], axes, [1; 3])?.plane_spacings();
        let shape = [0, 1, 2].map(|a| (2.0 * radius / spacing[a]).ceil() as usize + 1);
        let mut origin = centre;
        for a in 0..3 {
            for k in 0..3 {
                origin[k] -= 0.5 * (shape[a] - 1) as f64 * axes[a][k];
            }
        }
        GridGeometry::new(origin, axes, shape)
    }

    /// `f` evaluated at every point, in storage order (first axis slowest).
    pub fn sample(&self, f: impl Fn([f64; 3]) -> f64) -> Vec<f64> {
        let mut out = Vec::with_capacity(self.len());
        for i0 in 0..self.shape[0] {
            for i1 in 0..self.shape[1] {
                for i2 in 0..self.shape[2] {
                    out.push(f(self.point([i0, i1, i2])));
                }
            }
        }
        out
    }

    /// Total number of points.
    pub fn len(&self) -> usize {
        self.shape.iter().product()
    }

    /// Always false: a checked geometry has at least one point per axis.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }

    /// Volume of one grid cell (the quadrature weight of a point), bohr³.
    pub fn voxel_volume(&self) -> f64 {
        det(&self.axes).abs()
    }

    /// Position of point `index`, bohr.
    pub fn point(&self, index: [usize; 3]) -> [f64; 3] {
        let mut r = self.origin;
        for (a, &i) in self.axes.iter().zip(&index) {
            for k in 0..3 {
                r[k] += i as f64 * a[k];
            }
        }
        r
    }

    /// Dual basis `b` with `axes[i] · b[j] = δ_ij`, 1/bohr (reciprocal vectors without the 2π).
    pub fn dual_axes(&self) -> [[f64; 3]; 3] {
        let a = &self.axes;
        let v = det(a);
        [cross(&a[1], &a[2]), cross(&a[2], &a[0]), cross(&a[0], &a[1])].map(|c| c.map(|x| x / v))
    }

    /// Spacing between neighbouring lattice planes normal to each dual vector, bohr; equals the
    /// step length on orthogonal grids and is shorter on sheared ones.
    pub fn plane_spacings(&self) -> [f64; 3] {
        self.dual_axes().map(|b| 1.0 / norm(&b))
    }

    /// Length of the longest step vector, bohr.
    pub fn max_step(&self) -> f64 {
        self.axes.iter().map(norm).fold(0.0, f64::max)
    }

    /// True when both grids have the same steps and shape (they may differ in origin), so that
    /// one Poisson kernel serves both.
    pub fn same_lattice(&self, other: &GridGeometry) -> bool {
        self.axes == other.axes && self.shape == other.shape
    }
}

/// Determinant of the matrix whose rows are `m[0..3]`.
pub(crate) fn det(m: &[[f64; 3]; 3]) -> f64 {
    let c = cross(&m[1], &m[2]);
    dot(&m[0], &c)
}

pub fn dot(a: &[f64; 3], b: &[f64; 3]) -> f64 {
    a[0] * b[0] + a[1] * b[1] + a[2] * b[2]
}

pub(crate) fn cross(a: &[f64; 3], b: &[f64; 3]) -> [f64; 3] {
    [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]]
}

pub(crate) fn norm(a: &[f64; 3]) -> f64 {
    dot(a, a).sqrt()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sheared() -> GridGeometry {
        GridGeometry::new([0.0; 3], [[0.2, 0.0, 0.0], [0.05, 0.2, 0.0], [0.03, -0.04, 0.25]], [4, 5, 6])
            .unwrap()
    }

    #[test]
    fn dual_axes_are_dual() {
        let g = sheared();
        let b = g.dual_axes();
        for (i, a) in g.axes.iter().enumerate() {
            for (j, b) in b.iter().enumerate() {
                let want = if i == j { 1.0 } else { 0.0 };
                assert!((dot(a, b) - want).abs() < 1e-12);
            }
        }
        assert!((g.voxel_volume() - 0.2 * 0.2 * 0.25).abs() < 1e-15);
        // Plane spacing never exceeds the step length.
        for (s, a) in g.plane_spacings().iter().zip(&g.axes) {
            assert!(*s <= norm(a) + 1e-15);
        }
    }

    #[test]
    fn rejects_degenerate_cells() {
        let flat = [[0.1, 0.0, 0.0], [0.0, 0.1, 0.0], [0.1, 0.1, 0.0]];
        assert!(matches!(GridGeometry::new([0.0; 3], flat, [2, 2, 2]), Err(GridError::Degenerate { .. })));
        let ok = [[0.1, 0.0, 0.0], [0.0, 0.1, 0.0], [0.0, 0.0, 0.1]];
        assert_eq!(GridGeometry::new([0.0; 3], ok, [2, 0, 2]), Err(GridError::EmptyAxis { axis: 1 }));
    }

    #[test]
    fn points_follow_the_axes() {
        let g = sheared();
        let p = g.point([1, 2, 3]);
        let want = [0.2 + 0.1 + 0.09, 0.4 - 0.12, 0.75];
        for k in 0..3 {
            assert!((p[k] - want[k]).abs() < 1e-14);
        }
    }
}
