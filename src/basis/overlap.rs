//! Analytic one-electron integrals from Hermite expansion coefficients (see [`super::hermite`]):
//! for primitives, the overlap S = E^{ax bx}_0 E^{ay by}_0 E^{az bz}_0 (π/p)^{3/2}, and the dipole
//! integrals, where one factor E_0 becomes E_1 + P E_0.

use super::BasisSet;
use super::angular::cartesian_components;
use super::hermite::PairExpansion;

impl BasisSet {
    /// The overlap matrix S (n × n, row-major, n = [`BasisSet::function_count`]), dimensionless.
    pub fn overlap_matrix(&self) -> Vec<f64> {
        let [s] = self.one_electron_matrices(|pair, u, v| {
            [(0..3).map(|d| pair.get(d, u[d] as usize, v[d] as usize, 0)).product::<f64>()]
        });
        s
    }

    /// The dipole matrices ⟨φ_μ|x|φ_ν⟩, ⟨φ_μ|y|φ_ν⟩, ⟨φ_μ|z|φ_ν⟩ (each n × n, row-major), bohr,
    /// with r measured from the coordinate origin of the file. Per direction x − P_x is the first
    /// Hermite function, so ⟨a|x|b⟩_x = (E^{ab}_1 + P_x E^{ab}_0)(π/p)^{1/2}.
    pub fn dipole_matrices(&self) -> [Vec<f64>; 3] {
        self.one_electron_matrices(|pair, u, v| {
            let e0: [f64; 3] = [0, 1, 2].map(|d| pair.get(d, u[d] as usize, v[d] as usize, 0));
            let e1: [f64; 3] = [0, 1, 2].map(|d| {
                // E_1 exists only for i + j ≥ 1 (the table stops at t = i + j).
                if u[d] + v[d] >= 1 { pair.get(d, u[d] as usize, v[d] as usize, 1) } else { 0.0 }
            });
            [0, 1, 2].map(|x| {
                (0..3).map(|d| if d == x { e1[d] + pair.centre[d] * e0[d] } else { e0[d] }).product::<f64>()
            })
        })
    }

    /// Symmetric one-electron matrices over the file's functions from `block`, which gives, for a
    /// primitive pair's Hermite tables and two Cartesian exponent triples, the K integrals of the
    /// normalised-primitive product divided by (π/p)^{3/2}.
    fn one_electron_matrices<const K: usize>(&self, block: impl Fn(&PairExpansion, [u32; 3], [u32; 3]) -> [f64; K]) -> [Vec<f64>; K] {
        let n = self.function_count();
        let mut out: [Vec<f64>; K] = std::array::from_fn(|_| vec![0.0; n * n]);
        let mut pair = PairExpansion::new();
        for (i, a) in self.shells.iter().enumerate() {
            for (j, b) in self.shells.iter().enumerate().skip(i) {
                let (ca, cb) = (cartesian_components(a.l), cartesian_components(b.l));
                // Cartesian blocks ⟨χ_k|·|χ_m⟩.
                let mut cart: [Vec<f64>; K] = std::array::from_fn(|_| vec![0.0; ca.len() * cb.len()]);
                for (&ea, &ra) in a.exponents.iter().zip(&a.raw) {
                    for (&eb, &rb) in b.exponents.iter().zip(&b.raw) {
                        pair.fill(a.l as usize, b.l as usize, ea, a.centre, eb, b.centre);
                        let f = ra * rb * (std::f64::consts::PI / pair.p).powf(1.5);
                        for (k, &u) in ca.iter().enumerate() {
                            for (m, &v) in cb.iter().enumerate() {
                                for (c, e) in cart.iter_mut().zip(block(&pair, u, v)) {
                                    c[k * cb.len() + m] += f * e;
                                }
                            }
                        }
                    }
                }
                // Into the file's functions: T_a · cart · T_bᵀ.
                let (na, nb) = (a.function_count(), b.function_count());
                let (oa, ob) = (self.shell_offsets()[i], self.shell_offsets()[j]);
                for (matrix, cart) in out.iter_mut().zip(&cart) {
                    for p in 0..na {
                        for q in 0..nb {
                            let mut v = 0.0;
                            for k in 0..ca.len() {
                                let tk = a.to_cartesian[p * ca.len() + k];
                                if tk == 0.0 {
                                    continue;
                                }
                                for m in 0..cb.len() {
                                    v += tk * cart[k * cb.len() + m] * b.to_cartesian[q * cb.len() + m];
                                }
                            }
                            matrix[(oa + p) * n + ob + q] = v;
                            matrix[(ob + q) * n + oa + p] = v;
                        }
                    }
                }
            }
        }
        out
    }

    /// cᵀ S c for one orbital's coefficients (its norm², 1 for a normalised orbital).
    pub fn norm_squared(&self, overlap: &[f64], c: &[f64]) -> f64 {
        let n = self.function_count();
        (0..n)
            .map(|i| c[i] * (0..n).map(|j| overlap[i * n + j] * c[j]).sum::<f64>())
            .sum()
    }
}
