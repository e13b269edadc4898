//! Values and gradients of basis functions and orbitals at arbitrary points.
//!
//! For χ = P(x, y, z) R(r²), P = x^a y^b z^c and R = Σ_p r_p e^{−α_p r²}:
//! ∇χ = R ∇P + P R′ (x, y, z) with R′ = Σ_p (−2α_p) r_p e^{−α_p r²} — exact, no differencing.
//! A shell is skipped at points beyond its extent, where every component and its gradient is
//! below [`NEGLIGIBLE`] (in absolute value, bohr^{-3/2} and bohr^{-5/2}); such values are
//! returned as 0.
//!
//! Points are processed in chunks of [`CHUNK`]; chunks run in parallel under
//! [`Parallelism::Rayon`] and each point's result is computed the same way either way.

use super::{BasisSet, Shell};
use crate::par::Parallelism;

/// Value below which a shell's contributions are dropped (see the module header).
pub const NEGLIGIBLE: f64 = 1e-20;
/// Points per chunk.
pub const CHUNK: usize = 128;

/// Values and gradients of one orbital at a list of points.
#[derive(Debug, Clone, PartialEq)]
pub struct OrbitalValues {
    /// φ(r_k), bohr^{-3/2}.
    pub values: Vec<f64>,
    /// ∇φ(r_k), bohr^{-5/2}.
    pub gradients: Vec<[f64; 3]>,
}

impl Shell {
    /// Squared radius (bohr²) beyond which every component and gradient of the shell is below
    /// [`NEGLIGIBLE`]; bounds |P| ≤ r^l, |∇P| ≤ l r^{l−1} and the spherical rows of T by their
    /// largest absolute sum.
    pub fn extent_squared(&self) -> f64 {
        let nc = self.cartesian_count();
        let tmax = self
            .to_cartesian
            .chunks(nc)
            .map(|row| row.iter().map(|t| t.abs()).sum::<f64>())
            .fold(0.0f64, f64::max);
        let l = self.l as i32;
        let bound = |r: f64| -> f64 {
            self.exponents
                .iter()
                .zip(&self.raw)
                .map(|(&a, &c)| {
                    let poly = r.powi(l) * (1.0 + 2.0 * a * r) + f64::from(self.l) * r.powi((l - 1).max(0));
                    c.abs() * poly * (-a * r * r).exp()
                })
                .sum::<f64>()
                * tmax
        };
        // Start past the maximum of the slowest primitive's r^l e^{−α r²}, then walk out.
        let amin = self.exponents.iter().copied().fold(f64::INFINITY, f64::min);
        let mut r = (f64::from(self.l.max(1)) / (2.0 * amin)).sqrt();
        while bound(r) > NEGLIGIBLE {
            r += 0.25 / amin.sqrt();
        }
        r * r
    }
}

/// One orbital's values and gradients for one chunk of points.
type OutputSlices<'a> = (&'a mut [f64], &'a mut [[f64; 3]]);

/// Per-shell data for evaluation.
struct Prepared<'a> {
    shell: &'a Shell,
    extent2: f64,
    comps: Vec<[u32; 3]>,
}

fn prepare(basis: &BasisSet) -> Vec<Prepared<'_>> {
    basis
        .shells
        .iter()
        .map(|s| Prepared {
            shell: s,
            extent2: s.extent_squared(),
            comps: super::angular::cartesian_components(s.l),
        })
        .collect()
}

/// Cartesian components χ_k and ∇χ_k of all shells at one point, into `val`/`grad` (length
/// [`BasisSet::cartesian_count`]; zero where a shell is out of range).
fn cartesian_at(basis: &BasisSet, prepared: &[Prepared], r: [f64; 3], val: &mut [f64], grad: &mut [[f64; 3]]) {
    let offs = basis.cartesian_offsets();
    for (k, p) in prepared.iter().enumerate() {
        let range = offs[k]..offs[k + 1];
        let s = p.shell;
        let d = [r[0] - s.centre[0], r[1] - s.centre[1], r[2] - s.centre[2]];
        let r2 = d[0] * d[0] + d[1] * d[1] + d[2] * d[2];
        if r2 > p.extent2 {
            val[range.clone()].fill(0.0);
            grad[range].fill([0.0; 3]);
            continue;
        }
        let (mut rad, mut drad) = (0.0, 0.0);
        for (&a, &c) in s.exponents.iter().zip(&s.raw) {
            let e = c * (-a * r2).exp();
            rad += e;
            drad -= 2.0 * a * e;
        }
        // Powers 0..=l of each coordinate (values need l, gradients l − 1).
        let l = s.l as usize;
        let mut pw = [[1.0f64; super::MAX_L as usize + 1]; 3];
        for (axis, pa) in pw.iter_mut().enumerate() {
            for n in 1..=l {
                pa[n] = pa[n - 1] * d[axis];
            }
        }
        for ((e, v), g) in p
            .comps
            .iter()
            .zip(&mut val[range.clone()])
            .zip(&mut grad[range.clone()])
        {
            let [a, b, c] = e.map(|x| x as usize);
            let poly = pw[0][a] * pw[1][b] * pw[2][c];
            let dp = [
                if a > 0 {
                    a as f64 * pw[0][a - 1] * pw[1][b] * pw[2][c]
                } else {
                    0.0
                },
                if b > 0 {
                    b as f64 * pw[0][a] * pw[1][b - 1] * pw[2][c]
                } else {
                    0.0
                },
                if c > 0 {
                    c as f64 * pw[0][a] * pw[1][b] * pw[2][c - 1]
                } else {
                    0.0
                },
            ];
            *v = poly * rad;
            *g = [0, 1, 2].map(|x| dp[x] * rad + poly * drad * d[x]);
        }
    }
}

impl BasisSet {
    /// Values and gradients of every basis function at every point: `values[k·n + μ]` and
    /// `gradients[k·n + μ]` for point k and function μ (n = [`BasisSet::function_count`]);
    /// points in bohr, values in bohr^{-3/2}, gradients in bohr^{-5/2}.
    pub fn values_and_gradients(&self, points: &[[f64; 3]], par: Parallelism) -> (Vec<f64>, Vec<[f64; 3]>) {
        let n = self.function_count();
        let nc = self.cartesian_count();
        let prepared = prepare(self);
        let chunks = par.map(points.len().div_ceil(CHUNK), |ci| {
            let pts = &points[ci * CHUNK..((ci + 1) * CHUNK).min(points.len())];
            let mut cv = vec![0.0; nc];
            let mut cg = vec![[0.0; 3]; nc];
            let mut vals = vec![0.0; pts.len() * n];
            let mut grads = vec![[0.0; 3]; pts.len() * n];
            for (k, &r) in pts.iter().enumerate() {
                cartesian_at(self, &prepared, r, &mut cv, &mut cg);
                for (si, s) in self.shells.iter().enumerate() {
                    let (f0, c0) = (self.shell_offsets()[si], self.cartesian_offsets()[si]);
                    let ncs = s.cartesian_count();
                    for j in 0..s.function_count() {
                        let row = &s.to_cartesian[j * ncs..(j + 1) * ncs];
                        let (mut v, mut g) = (0.0, [0.0; 3]);
                        for (t, (&x, gx)) in row.iter().zip(cv[c0..c0 + ncs].iter().zip(&cg[c0..c0 + ncs])) {
                            v += t * x;
                            for d in 0..3 {
                                g[d] += t * gx[d];
                            }
                        }
                        vals[k * n + f0 + j] = v;
                        grads[k * n + f0 + j] = g;
                    }
                }
            }
            (vals, grads)
        });
        let mut values = Vec::with_capacity(points.len() * n);
        let mut gradients = Vec::with_capacity(points.len() * n);
        for (v, g) in chunks {
            values.extend(v);
            gradients.extend(g);
        }
        (values, gradients)
    }

    /// Values and gradients of orbitals φ_i = Σ_μ C_μi φ_μ at every point; `coefficients[i]`
    /// holds orbital i's coefficients over the basis functions (length
    /// [`BasisSet::function_count`]). Points in bohr.
    ///
    /// # Panics
    /// If a coefficient vector has the wrong length (a programming error: vectors from
    /// [`MolecularOrbitals`](super::MolecularOrbitals) always fit their basis).
    pub fn orbital_values(&self, coefficients: &[&[f64]], points: &[[f64; 3]], par: Parallelism) -> Vec<OrbitalValues> {
        let n = self.function_count();
        assert!(
            coefficients.iter().all(|c| c.len() == n),
            "coefficient vectors must have one entry per basis function"
        );
        let nc = self.cartesian_count();
        let cart: Vec<Vec<f64>> = coefficients.iter().map(|c| self.to_cartesian(c)).collect();
        let prepared = prepare(self);
        let mut result: Vec<OrbitalValues> = cart
            .iter()
            .map(|_| OrbitalValues {
                values: vec![0.0; points.len()],
                gradients: vec![[0.0; 3]; points.len()],
            })
            .collect();
        // One work item per chunk of points: the chunk's points and its slice of every output.
        let mut items: Vec<(&[[f64; 3]], Vec<OutputSlices>)> = points
            .chunks(CHUNK)
            .map(|p| (p, Vec::with_capacity(cart.len())))
            .collect();
        for o in result.iter_mut() {
            for ((_, outs), (v, g)) in items
                .iter_mut()
                .zip(o.values.chunks_mut(CHUNK).zip(o.gradients.chunks_mut(CHUNK)))
            {
                outs.push((v, g));
            }
        }
        par.for_each_init(
            items,
            || (vec![0.0; nc], vec![[0.0; 3]; nc]),
            |(cv, cg), (pts, mut outs)| {
                for (k, &r) in pts.iter().enumerate() {
                    cartesian_at(self, &prepared, r, cv, cg);
                    for (c, (vals, grads)) in cart.iter().zip(outs.iter_mut()) {
                        let (mut v, mut g) = (0.0, [0.0; 3]);
                        for ((&ck, &x), gx) in c.iter().zip(cv.iter()).zip(cg.iter()) {
                            v += ck * x;
                            for d in 0..3 {
                                g[d] += ck * gx[d];
                            }
                        }
                        vals[k] = v;
                        grads[k] = g;
                    }
                }
            },
        );
        result
    }
}
