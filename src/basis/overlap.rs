//! Analytic overlap integrals S_μν = ⟨φ_μ|φ_ν⟩ from Hermite expansion coefficients:
//! for primitives, S = E^{ax bx}_0 E^{ay by}_0 E^{az bz}_0 (π/p)^{3/2} (see [`super::hermite`]).

use super::BasisSet;
use super::angular::cartesian_components;
use super::hermite::PairExpansion;

impl BasisSet {
    /// The overlap matrix S (n × n, row-major, n = [`BasisSet::function_count`]), dimensionless.
    pub fn overlap_matrix(&self) -> Vec<f64> {
        let n = self.function_count();
        let mut s = vec![0.0; n * n];
        let mut pair = PairExpansion::new();
        for (i, a) in self.shells.iter().enumerate() {
            for (j, b) in self.shells.iter().enumerate().skip(i) {
                let (ca, cb) = (cartesian_components(a.l), cartesian_components(b.l));
                // Cartesian block ⟨χ_k|χ_m⟩.
                let mut cart = vec![0.0; ca.len() * cb.len()];
                for (&ea, &ra) in a.exponents.iter().zip(&a.raw) {
                    for (&eb, &rb) in b.exponents.iter().zip(&b.raw) {
                        pair.fill(a.l as usize, b.l as usize, ea, a.centre, eb, b.centre);
                        let f = ra * rb * (std::f64::consts::PI / pair.p).powf(1.5);
                        for (k, u) in ca.iter().enumerate() {
                            for (m, v) in cb.iter().enumerate() {
                                let e = (0..3)
                                    .map(|d| pair.get(d, u[d] as usize, v[d] as usize, 0))
                                    .product::<f64>();
                                cart[k * cb.len() + m] += f * e;
                            }
                        }
                    }
                }
                // Into the file's functions: T_a · cart · T_bᵀ.
                let (na, nb) = (a.function_count(), b.function_count());
                let (oa, ob) = (self.shell_offsets()[i], self.shell_offsets()[j]);
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
                        s[(oa + p) * n + ob + q] = v;
                        s[(ob + q) * n + oa + p] = v;
                    }
                }
            }
        }
        s
    }

    /// cᵀ S c for one orbital's coefficients (its norm², 1 for a normalised orbital).
    pub fn norm_squared(&self, overlap: &[f64], c: &[f64]) -> f64 {
        let n = self.function_count();
        (0..n)
            .map(|i| c[i] * (0..n).map(|j| overlap[i * n + j] * c[j]).sum::<f64>())
            .sum()
    }
}
