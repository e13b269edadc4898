//! McMurchie–Davidson building blocks: Hermite expansion coefficients of Gaussian products
//! and Hermite Coulomb integrals (McMurchie and Davidson, J. Comput. Phys. 26, 218 (1978);
//! notation of Helgaker, Jørgensen and Olsen 2000, sections 9.5 and 9.9).
//!
//! For primitives x_A^i e^{−a x_A²} and x_B^j e^{−b x_B²} (one direction), p = a + b,
//! P = (aA + bB)/p, μ = ab/p:
//!
//!   x_A^i x_B^j e^{−a x_A²} e^{−b x_B²} = Σ_t E^{ij}_t Λ_t(x_P),  Λ_t = (∂/∂P)^t e^{−p x_P²},
//!
//! E^{00}_0 = e^{−μ X_AB²}, E^{i+1,j}_t = E^{ij}_{t−1}/2p + X_PA E^{ij}_t + (t+1) E^{ij}_{t+1}
//! (and the same in j with X_PB). The overlap in one direction is E^{ij}_0 √(π/p).
//!
//! Hermite Coulomb integrals, ρ = pq/(p+q), R_PQ = P − Q, T = ρ R_PQ²:
//! R^n_{000} = (−2ρ)^n F_n(T), R^n_{t+1,u,v} = t R^{n+1}_{t−1,u,v} + X_PQ R^{n+1}_{t,u,v}
//! (and in u, v with Y_PQ, Z_PQ); the electron-repulsion integral of two Hermite Gaussians is
//! (Λ_tuv|Λ_τνφ) = 2π^{5/2}/(pq√(p+q)) (−1)^{τ+ν+φ} R^0_{t+τ,u+ν,v+φ}.

use super::boys::{MAX_ORDER, boys};

/// E^{ij}_t of one direction for i ≤ la, j ≤ lb, t ≤ la + lb, at `(i·(lb+1) + j)·(la+lb+1) + t`.
pub(crate) fn e_table(la: usize, lb: usize, p: f64, xpa: f64, xpb: f64, e00: f64, out: &mut Vec<f64>) {
    let w = la + lb + 1;
    let idx = |i: usize, j: usize, t: usize| (i * (lb + 1) + j) * w + t;
    out.clear();
    out.resize((la + 1) * (lb + 1) * w, 0.0);
    out[0] = e00;
    let inv2p = 0.5 / p;
    // Value of E^{ij}_t, zero outside 0 ≤ t ≤ i + j.
    let get = |out: &Vec<f64>, i: usize, j: usize, t: isize| -> f64 {
        if t < 0 || t as usize > i + j {
            0.0
        } else {
            out[idx(i, j, t as usize)]
        }
    };
    for i in 0..la {
        for t in 0..=i + 1 {
            let ti = t as isize;
            let v = inv2p * get(out, i, 0, ti - 1) + xpa * get(out, i, 0, ti) + (t + 1) as f64 * get(out, i, 0, ti + 1);
            out[idx(i + 1, 0, t)] = v;
        }
    }
    for j in 0..lb {
        for i in 0..=la {
            for t in 0..=i + j + 1 {
                let ti = t as isize;
                let v =
                    inv2p * get(out, i, j, ti - 1) + xpb * get(out, i, j, ti) + (t + 1) as f64 * get(out, i, j, ti + 1);
                out[idx(i, j + 1, t)] = v;
            }
        }
    }
}

/// The three one-direction tables of a primitive pair, with p and P.
pub(crate) struct PairExpansion {
    pub p: f64,
    pub centre: [f64; 3],
    pub la: usize,
    pub lb: usize,
    pub e: [Vec<f64>; 3],
}

impl PairExpansion {
    pub fn new() -> Self {
        Self {
            p: 0.0,
            centre: [0.0; 3],
            la: 0,
            lb: 0,
            e: [Vec::new(), Vec::new(), Vec::new()],
        }
    }

    /// Fills the tables for exponents `a`, `b` at centres `ca`, `cb`; returns e^{−μ R_AB²}.
    pub fn fill(&mut self, la: usize, lb: usize, a: f64, ca: [f64; 3], b: f64, cb: [f64; 3]) -> f64 {
        let p = a + b;
        let mu = a * b / p;
        self.p = p;
        self.la = la;
        self.lb = lb;
        let mut k_ab = 1.0;
        for d in 0..3 {
            let xab = ca[d] - cb[d];
            let pc = (a * ca[d] + b * cb[d]) / p;
            self.centre[d] = pc;
            let e00 = (-mu * xab * xab).exp();
            k_ab *= e00;
            e_table(la, lb, p, pc - ca[d], pc - cb[d], e00, &mut self.e[d]);
        }
        k_ab
    }

    /// E^{ij}_t of direction `d`.
    #[inline]
    pub fn get(&self, d: usize, i: usize, j: usize, t: usize) -> f64 {
        self.e[d][(i * (self.lb + 1) + j) * (self.la + self.lb + 1) + t]
    }
}

/// Scratch space for [`hermite_coulomb`].
pub(crate) struct RScratch {
    cur: Vec<f64>,
    next: Vec<f64>,
    f: [f64; MAX_ORDER + 1],
}

impl RScratch {
    pub fn new() -> Self {
        Self {
            cur: Vec::new(),
            next: Vec::new(),
            f: [0.0; MAX_ORDER + 1],
        }
    }
}

/// R^0_{tuv} for t + u + v ≤ `l`, in a dense cube with stride s = l + 1 at `(t·s + u)·s + v`
/// (entries with t + u + v > l are unspecified).
pub(crate) fn hermite_coulomb(l: usize, rho: f64, pq: [f64; 3], s: &mut RScratch) -> &[f64] {
    let r2 = pq[0] * pq[0] + pq[1] * pq[1] + pq[2] * pq[2];
    boys(l, rho * r2, &mut s.f);
    let stride = l + 1;
    let size = stride * stride * stride;
    if s.cur.len() < size {
        s.cur.resize(size, 0.0);
        s.next.resize(size, 0.0);
    }
    let m2r = -2.0 * rho;
    let mut scale = m2r.powi(l as i32);
    s.cur[0] = scale * s.f[l];
    let idx = |t: usize, u: usize, v: usize| (t * stride + u) * stride + v;
    for n in (0..l).rev() {
        scale /= m2r;
        let k = l - n;
        let (cur, next) = (&s.cur, &mut s.next);
        next[0] = scale * s.f[n];
        for t in 0..=k {
            for u in 0..=k - t {
                for v in 0..=k - t - u {
                    let value = if t > 0 {
                        let lower = if t >= 2 {
                            (t - 1) as f64 * cur[idx(t - 2, u, v)]
                        } else {
                            0.0
                        };
                        lower + pq[0] * cur[idx(t - 1, u, v)]
                    } else if u > 0 {
                        let lower = if u >= 2 {
                            (u - 1) as f64 * cur[idx(0, u - 2, v)]
                        } else {
                            0.0
                        };
                        lower + pq[1] * cur[idx(0, u - 1, v)]
                    } else if v > 0 {
                        let lower = if v >= 2 {
                            (v - 1) as f64 * cur[idx(0, 0, v - 2)]
                        } else {
                            0.0
                        };
                        lower + pq[2] * cur[idx(0, 0, v - 1)]
                    } else {
                        continue;
                    };
                    next[idx(t, u, v)] = value;
                }
            }
        }
        std::mem::swap(&mut s.cur, &mut s.next);
    }
    &s.cur[..size]
}
