//! Exact Hartree self-energies of orbital densities over a Gaussian basis.
//!
//! For an orbital φ_i = Σ_μ c_μ φ_μ with density matrix D_i = c_i c_iᵀ,
//!
//!   J_i = ½ ∬ |φ_i(r)|² |φ_i(r′)|² / |r − r′| = ½ Σ_{μνλσ} (μν|λσ) D_i,μν D_i,λσ  (hartree),
//!
//! the self-energy of the normalised density n_i = |φ_i|² (one electron; multiply by f² for an
//! orbital holding f electrons).
//!
//! Method (McMurchie–Davidson, see [`super::hermite`]): the shells are first merged per centre
//! and angular momentum over their distinct exponents, each orbital carrying its own coefficient
//! on every primitive component (the orbital is a sum of primitives whatever the contraction;
//! generally contracted sets, which molden files write as one shell per contraction over the
//! same primitives, then cost what their primitives cost). Below, "shell" means such a merged
//! shell. Every pair of shells A ≤ B and every pair of their primitives p becomes a charge distribution expanded in Hermite Gaussians about
//! P, with the orbital's density folded in once:
//!
//!   ρ^i_p = Σ_tuv D^{i,p}_tuv Λ_tuv,  D^{i,p}_tuv = w_AB Σ_{μ∈A, ν∈B} c_μ c_ν E^{μν}_tuv,
//!
//! (w_AB = 2 for A ≠ B, 1 for A = B: the pairs (A, B) and (B, A) are equal), so that
//! J_i = ½ Σ_{p, q} (ρ^i_p|ρ^i_q) with
//! (ρ_p|ρ_q) = 2π^{5/2}/(pq√(p+q)) Σ_tuv Σ_τνφ D_tuv (−1)^{τ+ν+φ} R_{t+τ,u+ν,v+φ} D_τνφ.
//! The sum runs over shell pairs X ≤ Y (factor 2 off the diagonal): with the two symmetric
//! pairs, this is the eightfold permutational symmetry of (μν|λσ). All orbitals are done in
//! one pass over the integrals.
//!
//! Screening (Cauchy–Schwarz): the Coulomb energy is a positive-definite inner product, so
//! |(ρ^i_X|ρ^i_Y)| ≤ B^i_X B^i_Y with B^i_X = (ρ^i_X|ρ^i_X)^{1/2}, the density of shell pair X
//! summed over its primitive pairs. Pair-pairs with max_i B^i_X B^i_Y below
//! [`CoulombParams::screening`] are skipped, and the sum of the skipped bounds is reported per
//! orbital. Primitive pairs with e^{−μ R_AB²} < 1e-30 are dropped (their densities are below
//! about 1e-20 for any basis).
//!
//! Parallel over shell pairs X, each task summing its row Y ≥ X in a fixed order; the rows are
//! added in order of X, so results do not depend on the thread count. The Hermite densities of
//! all pairs are held at once (16 bytes per orbital, primitive pair and Hermite index); orbitals
//! go through in batches that keep them under 1 GiB.

use std::f64::consts::PI;

use super::BasisSet;
use super::angular::cartesian_components;
use super::hermite::{PairExpansion, RScratch, hermite_coulomb};
use crate::par::Parallelism;

/// Primitive pairs with e^{−μ R_AB²} below this are dropped.
const PAIR_CUTOFF: f64 = 1e-30;

/// Settings of [`self_energies_with`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CoulombParams {
    /// Cauchy–Schwarz threshold, hartree: shell-pair pairs whose bound is below it are skipped.
    pub screening: f64,
}

impl Default for CoulombParams {
    /// 1e-15 Eh: even a million skipped pair-pairs stay below 1e-9 Eh.
    fn default() -> Self {
        Self { screening: 1e-15 }
    }
}

/// Result of [`self_energies_with`].
#[derive(Debug, Clone, PartialEq)]
pub struct SelfEnergies {
    /// J_i per orbital, hartree.
    pub hartree: Vec<f64>,
    /// Upper bound on |what screening left out| per orbital, hartree.
    pub screening_bound: Vec<f64>,
    /// Shell-pair pairs computed and skipped (for reports and benchmarks; of the last batch
    /// when the orbitals went through in several).
    pub pair_pairs: (usize, usize),
}

/// J_i = ½ (ii|ii) for each coefficient vector (over the basis functions), hartree, with
/// default screening.
///
/// # Panics
/// If a coefficient vector does not have one entry per basis function.
pub fn self_energies(basis: &BasisSet, coefficients: &[&[f64]], par: Parallelism) -> Vec<f64> {
    self_energies_with(basis, coefficients, CoulombParams::default(), par).hartree
}

/// One primitive pair's Hermite densities.
struct PrimPair {
    p: f64,
    centre: [f64; 3],
    l: usize,
    /// D_tuv for all orbitals, `[h · n + i]`.
    d: Vec<f64>,
    /// (−1)^{t+u+v} D_tuv, same layout.
    ds: Vec<f64>,
}

/// One shell pair: its primitive pairs and, per orbital, (ρ_X|ρ_X).
struct ShellPair {
    prims: Vec<PrimPair>,
    self_coulomb: Vec<f64>,
    bound: Vec<f64>,
}

/// Hermite index tables: for each L, the list of (t, u, v) with t+u+v ≤ L and the inverse map.
struct HermiteIndex {
    lists: Vec<Vec<[usize; 3]>>,
    /// For each L, `(t·(L+1) + u)·(L+1) + v → position in lists[L]`.
    lookup: Vec<Vec<usize>>,
    /// `offsets[l1][l]`: for the list of l1, `(t·(l+1) + u)·(l+1) + v` (positions in an R cube of
    /// order l ≥ l1).
    offsets: Vec<Vec<Vec<usize>>>,
}

impl HermiteIndex {
    fn new(max_pair: usize) -> Self {
        let max_total = 2 * max_pair;
        let mut lists = Vec::new();
        let mut lookup = Vec::new();
        for l in 0..=max_pair {
            let s = l + 1;
            let mut list = Vec::new();
            let mut map = vec![usize::MAX; s * s * s];
            for t in 0..=l {
                for u in 0..=l - t {
                    for v in 0..=l - t - u {
                        map[(t * s + u) * s + v] = list.len();
                        list.push([t, u, v]);
                    }
                }
            }
            lists.push(list);
            lookup.push(map);
        }
        let offsets = lists
            .iter()
            .map(|list| {
                (0..=max_total)
                    .map(|l| {
                        let s = l + 1;
                        list.iter().map(|&[t, u, v]| (t * s + u) * s + v).collect()
                    })
                    .collect()
            })
            .collect();
        Self { lists, lookup, offsets }
    }
}

/// Scratch reused across the quartets of one task.
struct Scratch {
    r: RScratch,
    tmp: Vec<f64>,
}

/// Adds `factor · (ρ_p|ρ_q)` for every orbital to `acc`.
fn pair_pair(
    p: &PrimPair,
    q: &PrimPair,
    n: usize,
    index: &HermiteIndex,
    factor: f64,
    s: &mut Scratch,
    acc: &mut [f64],
) {
    let (a, b) = (p.p, q.p);
    let rho = a * b / (a + b);
    let pq = [
        p.centre[0] - q.centre[0],
        p.centre[1] - q.centre[1],
        p.centre[2] - q.centre[2],
    ];
    let l = p.l + q.l;
    let r = hermite_coulomb(l, rho, pq, &mut s.r);
    let pref = factor * 2.0 * PI.powf(2.5) / (a * b * (a + b).sqrt());
    let o1 = &index.offsets[p.l][l];
    let o2 = &index.offsets[q.l][l];
    s.tmp.resize(n, 0.0);
    for (h1, &off1) in o1.iter().enumerate() {
        s.tmp.fill(0.0);
        for (h2, &off2) in o2.iter().enumerate() {
            let rv = r[off1 + off2];
            for (t, d) in s.tmp.iter_mut().zip(&q.ds[h2 * n..(h2 + 1) * n]) {
                *t += rv * d;
            }
        }
        for ((acc_i, &d), &t) in acc.iter_mut().zip(&p.d[h1 * n..(h1 + 1) * n]).zip(&s.tmp) {
            *acc_i += pref * d * t;
        }
    }
}

/// The shells of one centre and one l merged over their distinct exponents, with every
/// orbital's coefficient on each primitive component: a generally contracted set, written as
/// one shell per contraction over the same primitives, then costs what its primitives cost
/// rather than contractions² times more.
struct PrimitiveShell {
    centre: [f64; 3],
    l: u32,
    exponents: Vec<f64>,
    /// Σ over the merged shells of c_{i,k} · (plain-primitive coefficient of p):
    /// `[(p · n_cart + k) · n + i]` for primitive p, Cartesian component k, orbital i.
    coefficients: Vec<f64>,
}

/// Groups the shells by (centre, l) in order of first appearance; exponents equal to the bit
/// are one primitive. `cart[i]`: orbital i over the Cartesian components.
fn primitive_shells(basis: &BasisSet, cart: &[Vec<f64>]) -> Vec<PrimitiveShell> {
    let n = cart.len();
    let mut groups: Vec<(PrimitiveShell, Vec<usize>)> = Vec::new();
    for (k, sh) in basis.shells.iter().enumerate() {
        let key = |g: &PrimitiveShell| g.l == sh.l && g.centre.map(f64::to_bits) == sh.centre.map(f64::to_bits);
        let g = match groups.iter().position(|(g, _)| key(g)) {
            Some(g) => g,
            None => {
                let shell = PrimitiveShell { centre: sh.centre, l: sh.l, exponents: Vec::new(), coefficients: Vec::new() };
                groups.push((shell, Vec::new()));
                groups.len() - 1
            }
        };
        let (group, members) = &mut groups[g];
        members.push(k);
        for &e in &sh.exponents {
            if !group.exponents.iter().any(|x| x.to_bits() == e.to_bits()) {
                group.exponents.push(e);
            }
        }
    }
    let offsets = basis.cartesian_offsets();
    groups
        .into_iter()
        .map(|(mut group, members)| {
            let nc = cartesian_components(group.l).len();
            let mut c = vec![0.0; group.exponents.len() * nc * n];
            for k in members {
                let sh = &basis.shells[k];
                for (&e, &r) in sh.exponents.iter().zip(&sh.raw) {
                    let p = group.exponents.iter().position(|x| x.to_bits() == e.to_bits()).unwrap_or(0);
                    for comp in 0..nc {
                        for (i, orbital) in cart.iter().enumerate() {
                            c[(p * nc + comp) * n + i] += orbital[offsets[k] + comp] * r;
                        }
                    }
                }
            }
            group.coefficients = c;
            group
        })
        .collect()
}

/// The Hermite densities of the pair of primitive shells (A, B) for all `n` orbitals.
fn shell_pair(
    shells: &[PrimitiveShell],
    ia: usize,
    ib: usize,
    n: usize,
    index: &HermiteIndex,
    s: &mut Scratch,
) -> ShellPair {
    let (a, b) = (&shells[ia], &shells[ib]);
    let (la, lb) = (a.l as usize, b.l as usize);
    let l = la + lb;
    let (ca, cb) = (cartesian_components(a.l), cartesian_components(b.l));
    let w = if ia == ib { 1.0 } else { 2.0 };
    let nh = index.lists[l].len();
    let s_l = l + 1;
    let lookup = &index.lookup[l];
    // w c_μ c_ν per component pair and orbital for the current primitive pair: [ka][kb][i].
    let mut cc = vec![0.0; ca.len() * cb.len() * n];
    let mut prims = Vec::new();
    let mut pair = PairExpansion::new();
    for (pa, &ea) in a.exponents.iter().enumerate() {
        // Within one shell, primitive pairs (p, q) and (q, p) are the same Gaussian product:
        // q ≥ p only, with both coefficient products folded into one density.
        let first = if ia == ib { pa } else { 0 };
        for (pb, &eb) in b.exponents.iter().enumerate().skip(first) {
            let k_ab = pair.fill(la, lb, ea, a.centre, eb, b.centre);
            if k_ab < PAIR_CUTOFF {
                continue;
            }
            let a_coef = &a.coefficients[pa * ca.len() * n..(pa + 1) * ca.len() * n];
            let b_coef = &b.coefficients[pb * cb.len() * n..(pb + 1) * cb.len() * n];
            let mirrored = ia == ib && pb != pa;
            for ka in 0..ca.len() {
                for kb in 0..cb.len() {
                    let dst = &mut cc[(ka * cb.len() + kb) * n..(ka * cb.len() + kb + 1) * n];
                    let (x, y) = (&a_coef[ka * n..(ka + 1) * n], &b_coef[kb * n..(kb + 1) * n]);
                    for ((d, &x), &y) in dst.iter_mut().zip(x).zip(y) {
                        *d = w * x * y;
                    }
                    if mirrored {
                        // (q, p): c_{q,ka} c_{p,kb}, with a and b the same shell.
                        let (x, y) = (&b_coef[ka * n..(ka + 1) * n], &a_coef[kb * n..(kb + 1) * n]);
                        for ((d, &x), &y) in dst.iter_mut().zip(x).zip(y) {
                            *d += w * x * y;
                        }
                    }
                }
            }
            let mut d = vec![0.0; nh * n];
            let mut any = false;
            for (ka, u) in ca.iter().enumerate() {
                for (kb, v) in cb.iter().enumerate() {
                    let coef = &cc[(ka * cb.len() + kb) * n..(ka * cb.len() + kb + 1) * n];
                    if coef.iter().all(|&x| x == 0.0) {
                        continue;
                    }
                    any = true;
                    let (ax, ay, az) = (u[0] as usize, u[1] as usize, u[2] as usize);
                    let (bx, by, bz) = (v[0] as usize, v[1] as usize, v[2] as usize);
                    for t in 0..=ax + bx {
                        let ex = pair.get(0, ax, bx, t);
                        for uu in 0..=ay + by {
                            let exy = ex * pair.get(1, ay, by, uu);
                            for vv in 0..=az + bz {
                                let e = exy * pair.get(2, az, bz, vv);
                                let h = lookup[(t * s_l + uu) * s_l + vv];
                                for (dst, &c) in d[h * n..(h + 1) * n].iter_mut().zip(coef) {
                                    *dst += e * c;
                                }
                            }
                        }
                    }
                }
            }
            if !any {
                continue;
            }
            let mut ds = d.clone();
            for (h, &[t, u, v]) in index.lists[l].iter().enumerate() {
                if (t + u + v) % 2 == 1 {
                    ds[h * n..(h + 1) * n].iter_mut().for_each(|x| *x = -*x);
                }
            }
            prims.push(PrimPair {
                p: pair.p,
                centre: pair.centre,
                l,
                d,
                ds,
            });
        }
    }
    let mut self_coulomb = vec![0.0; n];
    for p in &prims {
        for q in &prims {
            pair_pair(p, q, n, index, 1.0, s, &mut self_coulomb);
        }
    }
    let bound = self_coulomb.iter().map(|&x| x.max(0.0).sqrt()).collect();
    ShellPair {
        prims,
        self_coulomb,
        bound,
    }
}

/// J_i for each coefficient vector, with the given screening; see the module header.
///
/// # Panics
/// If a coefficient vector does not have one entry per basis function.
pub fn self_energies_with(
    basis: &BasisSet,
    coefficients: &[&[f64]],
    params: CoulombParams,
    par: Parallelism,
) -> SelfEnergies {
    self_energies_in_batches(basis, coefficients, params, par, MEMORY_BUDGET)
}

/// [`self_energies_with`] with the memory budget of a batch as a parameter, in bytes.
pub(crate) fn self_energies_in_batches(
    basis: &BasisSet,
    coefficients: &[&[f64]],
    params: CoulombParams,
    par: Parallelism,
    budget: usize,
) -> SelfEnergies {
    let nf = basis.function_count();
    assert!(
        coefficients.iter().all(|c| c.len() == nf),
        "coefficient vectors must have one entry per basis function"
    );
    let max_l = basis.shells.iter().map(|s| s.l as usize).max().unwrap_or(0);
    let index = HermiteIndex::new(2 * max_l);
    // Orbitals go through in batches that keep the Hermite densities under MEMORY_BUDGET (one
    // batch for small molecules).
    let per_orbital = hermite_bytes_per_orbital(basis, &index);
    let batch = (budget / per_orbital.max(1)).max(1);
    let mut total = SelfEnergies {
        hartree: Vec::with_capacity(coefficients.len()),
        screening_bound: Vec::with_capacity(coefficients.len()),
        pair_pairs: (0, 0),
    };
    for group in coefficients.chunks(batch) {
        let r = batch_self_energies(basis, group, &index, params, par);
        total.hartree.extend(r.hartree);
        total.screening_bound.extend(r.screening_bound);
        total.pair_pairs = r.pair_pairs;
    }
    total
}

/// Bytes of Hermite densities one batch of orbitals may hold.
const MEMORY_BUDGET: usize = 1 << 30;

/// The Hermite densities take 16 bytes per orbital, primitive pair and Hermite index.
fn hermite_bytes_per_orbital(basis: &BasisSet, index: &HermiteIndex) -> usize {
    let shells = primitive_shells(basis, &[]);
    (0..shells.len())
        .flat_map(|a| (a..shells.len()).map(move |b| (a, b)))
        .map(|(a, b)| {
            let (x, y) = (&shells[a], &shells[b]);
            x.exponents.len() * y.exponents.len() * index.lists[(x.l + y.l) as usize].len() * 16
        })
        .sum()
}

/// Bytes of Hermite densities [`self_energies_with`] holds at once for `orbitals` orbitals.
pub(crate) fn hermite_peak_bytes(basis: &BasisSet, orbitals: usize) -> u64 {
    let max_l = basis.shells.iter().map(|s| s.l as usize).max().unwrap_or(0);
    let per_orbital = hermite_bytes_per_orbital(basis, &HermiteIndex::new(2 * max_l));
    (per_orbital * orbitals.min((MEMORY_BUDGET / per_orbital.max(1)).max(1))) as u64
}

fn batch_self_energies(
    basis: &BasisSet,
    coefficients: &[&[f64]],
    index: &HermiteIndex,
    params: CoulombParams,
    par: Parallelism,
) -> SelfEnergies {
    let n = coefficients.len();
    let cart: Vec<Vec<f64>> = coefficients.iter().map(|c| basis.to_cartesian(c)).collect();
    let shells = primitive_shells(basis, &cart);
    let ns = shells.len();
    let pairs_ab: Vec<(usize, usize)> = (0..ns).flat_map(|a| (a..ns).map(move |b| (a, b))).collect();
    let scratch = || Scratch {
        r: RScratch::new(),
        tmp: Vec::new(),
    };
    let pairs: Vec<ShellPair> = par.map(pairs_ab.len(), |k| {
        let (a, b) = pairs_ab[k];
        shell_pair(&shells, a, b, n, index, &mut scratch())
    });
    let rows = par.map(pairs.len(), |x| {
        let mut s = scratch();
        let mut acc = pairs[x].self_coulomb.clone();
        let mut skipped = vec![0.0; n];
        let mut counts = (1usize, 0usize);
        let bx = &pairs[x].bound;
        for y in x + 1..pairs.len() {
            let by = &pairs[y].bound;
            let largest = bx.iter().zip(by).map(|(a, b)| a * b).fold(0.0, f64::max);
            if largest < params.screening {
                for ((sk, a), b) in skipped.iter_mut().zip(bx).zip(by) {
                    *sk += 2.0 * a * b;
                }
                counts.1 += 1;
                continue;
            }
            counts.0 += 1;
            for p in &pairs[x].prims {
                for q in &pairs[y].prims {
                    pair_pair(p, q, n, index, 2.0, &mut s, &mut acc);
                }
            }
        }
        (acc, skipped, counts)
    });
    let mut hartree = vec![0.0; n];
    let mut screening_bound = vec![0.0; n];
    let mut pair_pairs = (0, 0);
    for (acc, skipped, counts) in rows {
        for i in 0..n {
            hartree[i] += 0.5 * acc[i];
            screening_bound[i] += 0.5 * skipped[i];
        }
        pair_pairs.0 += counts.0;
        pair_pairs.1 += counts.1;
    }
    SelfEnergies {
        hartree,
        screening_bound,
        pair_pairs,
    }
}

/// Electron-repulsion integrals (μν|λσ) over the basis functions of four shells, hartree:
/// `out[((μ·n_ν + ν)·n_λ + λ)·n_σ + σ]` with μ, ν, λ, σ local to shells `s[0]`, …, `s[3]`.
/// Straightforward and slow; for tests and small checks.
pub fn eri_shells(basis: &BasisSet, s: [usize; 4]) -> Vec<f64> {
    let sh = s.map(|k| &basis.shells[k]);
    let comps = sh.map(|x| cartesian_components(x.l));
    let nc = comps.each_ref().map(|c| c.len());
    let mut cart = vec![0.0; nc[0] * nc[1] * nc[2] * nc[3]];
    let (mut bra, mut ket) = (PairExpansion::new(), PairExpansion::new());
    let mut scratch = RScratch::new();
    let l = sh.iter().map(|x| x.l as usize).sum::<usize>();
    let st = l + 1;
    for (&e0, &r0) in sh[0].exponents.iter().zip(&sh[0].raw) {
        for (&e1, &r1) in sh[1].exponents.iter().zip(&sh[1].raw) {
            bra.fill(sh[0].l as usize, sh[1].l as usize, e0, sh[0].centre, e1, sh[1].centre);
            for (&e2, &r2) in sh[2].exponents.iter().zip(&sh[2].raw) {
                for (&e3, &r3) in sh[3].exponents.iter().zip(&sh[3].raw) {
                    ket.fill(sh[2].l as usize, sh[3].l as usize, e2, sh[2].centre, e3, sh[3].centre);
                    let (p, q) = (bra.p, ket.p);
                    let pq = [0, 1, 2].map(|d| bra.centre[d] - ket.centre[d]);
                    let r = hermite_coulomb(l, p * q / (p + q), pq, &mut scratch);
                    let pref = r0 * r1 * r2 * r3 * 2.0 * PI.powf(2.5) / (p * q * (p + q).sqrt());
                    for (k0, u0) in comps[0].iter().enumerate() {
                        for (k1, u1) in comps[1].iter().enumerate() {
                            for (k2, u2) in comps[2].iter().enumerate() {
                                for (k3, u3) in comps[3].iter().enumerate() {
                                    let mut sum = 0.0;
                                    let ab = [0, 1, 2].map(|d| (u0[d] + u1[d]) as usize);
                                    let cd = [0, 1, 2].map(|d| (u2[d] + u3[d]) as usize);
                                    for t in 0..=ab[0] {
                                        for u in 0..=ab[1] {
                                            for v in 0..=ab[2] {
                                                let e1v = bra.get(0, u0[0] as usize, u1[0] as usize, t)
                                                    * bra.get(1, u0[1] as usize, u1[1] as usize, u)
                                                    * bra.get(2, u0[2] as usize, u1[2] as usize, v);
                                                for tt in 0..=cd[0] {
                                                    for uu in 0..=cd[1] {
                                                        for vv in 0..=cd[2] {
                                                            let sign = if (tt + uu + vv) % 2 == 0 { 1.0 } else { -1.0 };
                                                            let e2v = ket.get(0, u2[0] as usize, u3[0] as usize, tt)
                                                                * ket.get(1, u2[1] as usize, u3[1] as usize, uu)
                                                                * ket.get(2, u2[2] as usize, u3[2] as usize, vv);
                                                            sum += e1v
                                                                * sign
                                                                * e2v
                                                                * r[((t + tt) * st + u + uu) * st + v + vv];
                                                        }
                                                    }
                                                }
                                            }
                                        }
                                    }
                                    cart[((k0 * nc[1] + k1) * nc[2] + k2) * nc[3] + k3] += pref * sum;
                                }
                            }
                        }
                    }
                }
            }
        }
    }
    // Into the file's functions, one index at a time.
    let nf = sh.map(|x| x.function_count());
    let mut cur = cart;
    let mut dims = nc;
    for axis in 0..4 {
        let t = &sh[axis].to_cartesian;
        let mut next_dims = dims;
        next_dims[axis] = nf[axis];
        let mut next = vec![0.0; next_dims.iter().product()];
        let strides = |d: [usize; 4]| [d[1] * d[2] * d[3], d[2] * d[3], d[3], 1];
        let (so, sn) = (strides(dims), strides(next_dims));
        for (idx, v) in next.iter_mut().enumerate() {
            let mut k = [0usize; 4];
            let mut rest = idx;
            for d in 0..4 {
                k[d] = rest / sn[d];
                rest %= sn[d];
            }
            let j = k[axis];
            let mut acc = 0.0;
            for m in 0..dims[axis] {
                let mut kk = k;
                kk[axis] = m;
                let src = (0..4).map(|d| kk[d] * so[d]).sum::<usize>();
                acc += t[j * dims[axis] + m] * cur[src];
            }
            *v = acc;
        }
        cur = next;
        dims = next_dims;
    }
    cur
}
