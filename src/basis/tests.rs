//! Unit tests of the basis path: normalisation, integrals against closed forms, the fast
//! Coulomb engine against plain integrals, gradients against differences, thread independence.

use super::coulomb::{CoulombParams, eri_shells, self_energies, self_energies_with};
use super::*;
use crate::par::Parallelism;
use std::f64::consts::PI;

/// Tiny deterministic generator for test coefficients.
struct Lcg(u64);
impl Lcg {
    fn next(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((self.0 >> 11) as f64 / (1u64 << 53) as f64) * 2.0 - 1.0
    }
}

fn s_shell(centre: [f64; 3], a: f64) -> Shell {
    Shell::new(centre, 0, false, vec![a], &[1.0], 0).expect("valid shell")
}

/// A small mixed basis on three centres: contracted s, p, d (both kinds), f, g.
fn mixed_basis(spherical: bool) -> BasisSet {
    let a = [0.1, -0.2, 0.05];
    let b = [1.3, 0.4, -0.7];
    let c = [-0.6, 1.1, 0.9];
    let shells = vec![
        Shell::new(a, 0, false, vec![12.0, 2.1, 0.45], &[0.2, 0.5, 0.4], 0).unwrap(),
        Shell::new(a, 1, false, vec![3.0, 0.6], &[0.4, 0.7], 0).unwrap(),
        Shell::new(a, 2, spherical, vec![1.7, 0.5], &[0.6, 0.5], 0).unwrap(),
        Shell::new(b, 0, false, vec![0.9], &[1.0], 1).unwrap(),
        Shell::new(b, 3, spherical, vec![0.8], &[1.0], 1).unwrap(),
        Shell::new(c, 1, false, vec![1.1], &[1.0], 2).unwrap(),
        Shell::new(c, 4, spherical, vec![1.1], &[1.0], 2).unwrap(),
    ];
    BasisSet::new(Vec::new(), shells)
}

/// A small basis with h and i shells (contracted h, uncontracted i) on two centres, and an s and
/// a p shell so that mixed pairs occur.
fn high_basis(spherical: bool) -> BasisSet {
    let a = [0.1, -0.2, 0.05];
    let b = [1.0, 0.5, -0.6];
    let shells = vec![
        Shell::new(a, 0, false, vec![2.1, 0.45], &[0.5, 0.4], 0).unwrap(),
        Shell::new(b, 1, false, vec![0.9], &[1.0], 1).unwrap(),
        Shell::new(a, 5, spherical, vec![1.6, 0.5], &[0.6, 0.5], 0).unwrap(),
        Shell::new(b, 6, spherical, vec![0.9], &[1.0], 1).unwrap(),
    ];
    BasisSet::new(Vec::new(), shells)
}

fn random_orbitals(basis: &BasisSet, count: usize, seed: u64) -> Vec<Vec<f64>> {
    let mut rng = Lcg(seed);
    let s = basis.overlap_matrix();
    (0..count)
        .map(|_| {
            let mut c: Vec<f64> = (0..basis.function_count()).map(|_| rng.next()).collect();
            let norm = basis.norm_squared(&s, &c).sqrt();
            c.iter_mut().for_each(|x| *x /= norm);
            c
        })
        .collect()
}

#[test]
fn normalised_primitives_have_unit_overlap() {
    for l in 0..=MAX_L {
        for spherical in [false, true] {
            for a in [0.07, 1.0, 350.0] {
                let shell = Shell::new([0.3, -0.1, 2.0], l, spherical, vec![a], &[1.0], 0).unwrap();
                let basis = BasisSet::new(Vec::new(), vec![shell]);
                let s = basis.overlap_matrix();
                let n = basis.function_count();
                for i in 0..n {
                    assert!(
                        (s[i * n + i] - 1.0).abs() < 1e-13,
                        "l={l} sph={spherical} a={a} {i}: {}",
                        s[i * n + i]
                    );
                    if spherical || l < 2 {
                        for j in 0..n {
                            if i != j {
                                assert!(s[i * n + j].abs() < 1e-13);
                            }
                        }
                    }
                }
            }
        }
    }
}

#[test]
fn contracted_shells_are_normalised_whatever_the_coefficients() {
    // Coefficients scaled by 7 describe the same normalised function.
    let a = Shell::new([0.0; 3], 2, true, vec![3.0, 0.7], &[0.3, 0.8], 0).unwrap();
    let b = Shell::new([0.0; 3], 2, true, vec![3.0, 0.7], &[2.1, 5.6], 0).unwrap();
    for (x, y) in a.primitive_coefficients().iter().zip(b.primitive_coefficients()) {
        assert!((x - y).abs() < 1e-14 * x.abs());
    }
}

/// textbook: for unnormalised s primitives e^{−a|r−A|²}, …, p = a + b, q = c + d,
/// (ab|cd) = 2π^{5/2}/(pq√(p+q)) K_AB K_CD F_0(pq/(p+q) |P−Q|²), K_AB = e^{−ab/p |A−B|²};
/// at coincident centres (K = 1, F_0(0) = 1) it is 2π^{5/2}/(pq√(p+q)). The shells here are
/// normalised, so the closed form is multiplied by N_a N_b N_c N_d, N_x = (2x/π)^{3/4}.
#[test]
fn ssss_matches_closed_form() {
    let norm = |x: f64| (2.0 * x / PI).powf(0.75);
    let exps = [0.3, 1.7, 0.9, 5.0];
    let coincident = [0.2, -0.4, 0.1];
    let basis = BasisSet::new(Vec::new(), exps.iter().map(|&e| s_shell(coincident, e)).collect());
    let got = eri_shells(&basis, [0, 1, 2, 3])[0];
    let (p, q) = (exps[0] + exps[1], exps[2] + exps[3]);
    let want = exps.iter().map(|&e| norm(e)).product::<f64>() * 2.0 * PI.powf(2.5) / (p * q * (p + q).sqrt());
    assert!(((got - want) / want).abs() < 1e-14, "{got} vs {want}");

    let centres = [[0.0, 0.0, 0.0], [0.5, 0.2, -0.3], [1.5, -0.7, 0.4], [-0.8, 0.9, 1.2]];
    let basis = BasisSet::new(
        Vec::new(),
        exps.iter().zip(centres).map(|(&e, c)| s_shell(c, e)).collect(),
    );
    let got = eri_shells(&basis, [0, 1, 2, 3])[0];
    let centre = |x: f64, a: [f64; 3], y: f64, b: [f64; 3]| [0, 1, 2].map(|d| (x * a[d] + y * b[d]) / (x + y));
    let dist2 = |a: [f64; 3], b: [f64; 3]| (0..3).map(|d| (a[d] - b[d]).powi(2)).sum::<f64>();
    let (pc, qc) = (
        centre(exps[0], centres[0], exps[1], centres[1]),
        centre(exps[2], centres[2], exps[3], centres[3]),
    );
    let kab = (-exps[0] * exps[1] / p * dist2(centres[0], centres[1])).exp();
    let kcd = (-exps[2] * exps[3] / q * dist2(centres[2], centres[3])).exp();
    let t = p * q / (p + q) * dist2(pc, qc);
    let f0 = 0.5 * (PI / t).sqrt() * libm::erf(t.sqrt());
    let want =
        exps.iter().map(|&e| norm(e)).product::<f64>() * 2.0 * PI.powf(2.5) / (p * q * (p + q).sqrt()) * kab * kcd * f0;
    assert!(((got - want) / want).abs() < 1e-13, "{got} vs {want}");
}

/// textbook: ∂/∂A_x e^{−a|r−A|²} = 2a (x − A_x) e^{−a|r−A|²}, so (p_x s|ss) of unnormalised
/// primitives is (1/2a) ∂(ss|ss)/∂A_x; checked by central differences of the s integral.
#[test]
fn p_integral_is_the_derivative_of_the_s_integral() {
    let exps = [0.8, 1.3, 0.6, 2.2];
    let centres = [[0.1, 0.2, -0.1], [0.7, -0.3, 0.4], [-0.5, 0.6, 1.0], [0.9, 1.1, -0.6]];
    let ssss = |a: [f64; 3]| {
        let mut c = centres;
        c[0] = a;
        let b = BasisSet::new(Vec::new(), exps.iter().zip(c).map(|(&e, x)| s_shell(x, e)).collect());
        eri_shells(&b, [0, 1, 2, 3])[0]
    };
    let mut shells: Vec<Shell> = exps.iter().zip(centres).map(|(&e, x)| s_shell(x, e)).collect();
    shells[0] = Shell::new(centres[0], 1, false, vec![exps[0]], &[1.0], 0).unwrap();
    let basis = BasisSet::new(Vec::new(), shells);
    let psss = eri_shells(&basis, [0, 1, 2, 3]);
    // Normalised p over normalised s of the same exponent: N_1/N_0 = 2√a.
    let ratio = 2.0 * exps[0].sqrt();
    let h = 1e-4;
    for d in 0..3 {
        let (mut plus, mut minus) = (centres[0], centres[0]);
        plus[d] += h;
        minus[d] -= h;
        let deriv = (ssss(plus) - ssss(minus)) / (2.0 * h);
        let want = ratio * deriv / (2.0 * exps[0]);
        assert!((psss[d] - want).abs() < 1e-8, "axis {d}: {} vs {want}", psss[d]);
    }
}

/// textbook: J of the normalised Gaussian density (a/π)^{3/2} e^{−a r²} is √(a/2π); it is |φ|²
/// of the normalised s Gaussian with exponent a/2.
#[test]
fn gaussian_density_self_energy() {
    for a in [0.5, 1.0, 3.0, 40.0] {
        let basis = BasisSet::new(Vec::new(), vec![s_shell([0.4, 0.0, -1.0], a / 2.0)]);
        let j = self_energies(&basis, &[&[1.0]], Parallelism::Sequential)[0];
        let want = (a / (2.0 * PI)).sqrt();
        assert!((j - want).abs() < 1e-14 * want, "a={a}: {j} vs {want}");
    }
}

/// The fast engine against the plain contraction ½ Σ (μν|λσ) c_μ c_ν c_λ c_σ over every
/// shell quartet, on a basis with every shell type to g and one with an h shell, Cartesian and
/// spherical. (The i shell is left out: the plain integrals over Cartesian (ii|ii) take
/// minutes; the comparison with PySCF in tests/integration/basis.rs covers i.)
#[test]
fn engine_matches_plain_integrals() {
    // One primitive in the h shell: the plain quartet loop costs 16 times less than with two.
    let with_h = |s: bool| {
        let mut shells = high_basis(s).shells[..2].to_vec();
        shells.push(Shell::new([0.1, -0.2, 0.05], 5, s, vec![0.8], &[1.0], 0).unwrap());
        BasisSet::new(Vec::new(), shells)
    };
    for (spherical, basis) in [true, false].into_iter().flat_map(|s| [(s, mixed_basis(s)), (s, with_h(s))]) {
        let orbitals = random_orbitals(&basis, 3, 11);
        let refs: Vec<&[f64]> = orbitals.iter().map(|c| c.as_slice()).collect();
        let params = CoulombParams { screening: 0.0 };
        let fast = self_energies_with(&basis, &refs, params, Parallelism::Sequential);
        let ns = basis.shells.len();
        let off = basis.shell_offsets();
        let mut plain = vec![0.0; orbitals.len()];
        // Unique quartets a ≤ b, c ≤ d, (a, b) ≤ (c, d), each standing for its images.
        for a in 0..ns {
            for b in a..ns {
                for c in 0..ns {
                    for d in c..ns {
                        if (c, d) < (a, b) {
                            continue;
                        }
                        let images = [a != b, c != d, (a, b) != (c, d)]
                            .iter()
                            .map(|&x| if x { 2.0 } else { 1.0 })
                            .product::<f64>();
                        let eri = eri_shells(&basis, [a, b, c, d]);
                        let dims = [a, b, c, d].map(|k| basis.shells[k].function_count());
                        for (o, coef) in orbitals.iter().enumerate() {
                            let mut idx = 0;
                            for i in 0..dims[0] {
                                for j in 0..dims[1] {
                                    for k in 0..dims[2] {
                                        for l in 0..dims[3] {
                                            plain[o] += 0.5
                                                * images
                                                * eri[idx]
                                                * coef[off[a] + i]
                                                * coef[off[b] + j]
                                                * coef[off[c] + k]
                                                * coef[off[d] + l];
                                            idx += 1;
                                        }
                                    }
                                }
                            }
                        }
                    }
                }
            }
        }
        for (f, p) in fast.hartree.iter().zip(&plain) {
            assert!((f - p).abs() < 1e-12, "spherical={spherical}: {f} vs {p}");
        }
        assert_eq!(fast.pair_pairs.1, 0);
    }
}

#[test]
fn eri_permutational_symmetry() {
    let basis = mixed_basis(true);
    let q = [2usize, 4, 1, 6];
    let dims = q.map(|k| basis.shells[k].function_count());
    let abcd = eri_shells(&basis, q);
    let bacd = eri_shells(&basis, [q[1], q[0], q[2], q[3]]);
    let cdab = eri_shells(&basis, [q[2], q[3], q[0], q[1]]);
    let at = |v: &[f64], d: [usize; 4], i: [usize; 4]| v[((i[0] * d[1] + i[1]) * d[2] + i[2]) * d[3] + i[3]];
    let mut largest = 0.0f64;
    for i in 0..dims[0] {
        for j in 0..dims[1] {
            for k in 0..dims[2] {
                for l in 0..dims[3] {
                    let x = at(&abcd, dims, [i, j, k, l]);
                    largest = largest.max(x.abs());
                    let y = at(&bacd, [dims[1], dims[0], dims[2], dims[3]], [j, i, k, l]);
                    let z = at(&cdab, [dims[2], dims[3], dims[0], dims[1]], [k, l, i, j]);
                    assert!((x - y).abs() < 1e-13 && (x - z).abs() < 1e-13, "{x} {y} {z}");
                }
            }
        }
    }
    assert!(largest > 1e-3, "the quartet must not vanish");
}

#[test]
fn screening_bound_covers_what_it_skips() {
    let basis = mixed_basis(true);
    let orbitals = random_orbitals(&basis, 2, 5);
    let refs: Vec<&[f64]> = orbitals.iter().map(|c| c.as_slice()).collect();
    let exact = self_energies_with(&basis, &refs, CoulombParams { screening: 0.0 }, Parallelism::Sequential);
    let rough = self_energies_with(
        &basis,
        &refs,
        CoulombParams { screening: 1e-2 },
        Parallelism::Sequential,
    );
    assert!(rough.pair_pairs.1 > 0, "the threshold must skip something");
    for i in 0..2 {
        let diff = (exact.hartree[i] - rough.hartree[i]).abs();
        assert!(
            diff <= rough.screening_bound[i] * (1.0 + 1e-12) + 1e-15,
            "{diff} > {}",
            rough.screening_bound[i]
        );
    }
}

/// Orbitals going through in batches (to bound memory) give the same numbers.
#[test]
fn batches_change_nothing() {
    let basis = mixed_basis(false);
    let orbitals = random_orbitals(&basis, 5, 17);
    let refs: Vec<&[f64]> = orbitals.iter().map(|c| c.as_slice()).collect();
    let params = CoulombParams { screening: 0.0 };
    let one = super::coulomb::self_energies_in_batches(&basis, &refs, params, Parallelism::Sequential, 1 << 40);
    let many = super::coulomb::self_energies_in_batches(&basis, &refs, params, Parallelism::Sequential, 1);
    assert_eq!(one.hartree, many.hartree);
}

#[test]
fn results_do_not_depend_on_threads() {
    let basis = mixed_basis(true);
    let orbitals = random_orbitals(&basis, 3, 9);
    let refs: Vec<&[f64]> = orbitals.iter().map(|c| c.as_slice()).collect();
    let a = self_energies(&basis, &refs, Parallelism::Sequential);
    let b = self_energies(&basis, &refs, Parallelism::Rayon);
    assert_eq!(
        a.iter().map(|x| x.to_bits()).collect::<Vec<_>>(),
        b.iter().map(|x| x.to_bits()).collect::<Vec<_>>()
    );
    let points: Vec<[f64; 3]> = (0..1000)
        .map(|k| {
            [
                (k as f64 * 0.37).sin() * 3.0,
                (k as f64 * 0.11).cos() * 2.0,
                k as f64 * 0.004 - 2.0,
            ]
        })
        .collect();
    let x = basis.orbital_values(&refs, &points, Parallelism::Sequential);
    let y = basis.orbital_values(&refs, &points, Parallelism::Rayon);
    assert_eq!(x, y);
    let v = basis.values_and_gradients(&points, Parallelism::Sequential);
    let w = basis.values_and_gradients(&points, Parallelism::Rayon);
    assert_eq!(v, w);
}

#[test]
fn gradients_match_differences_and_orbitals_match_functions() {
    for (spherical, basis) in [true, false].into_iter().flat_map(|s| [(s, mixed_basis(s)), (s, high_basis(s))]) {
        let n = basis.function_count();
        let points = [[0.3, -0.2, 0.4], [1.0, 0.5, -0.5], [-0.7, 1.4, 0.8], [2.5, -1.0, 1.5]];
        let (v, g) = basis.values_and_gradients(&points, Parallelism::Sequential);
        let h = 1e-5;
        for (k, p) in points.iter().enumerate() {
            for d in 0..3 {
                let (mut a, mut b) = (*p, *p);
                a[d] += h;
                b[d] -= h;
                let (va, _) = basis.values_and_gradients(&[a], Parallelism::Sequential);
                let (vb, _) = basis.values_and_gradients(&[b], Parallelism::Sequential);
                for mu in 0..n {
                    let fd = (va[mu] - vb[mu]) / (2.0 * h);
                    let an = g[k * n + mu][d];
                    assert!(
                        (fd - an).abs() < 1e-7 * (1.0 + an.abs()),
                        "sph={spherical} point {k} fn {mu} axis {d}: {fd} vs {an}"
                    );
                }
            }
        }
        // An orbital is the coefficient-weighted sum of the functions.
        let orbitals = random_orbitals(&basis, 2, 3);
        let refs: Vec<&[f64]> = orbitals.iter().map(|c| c.as_slice()).collect();
        let phi = basis.orbital_values(&refs, &points, Parallelism::Sequential);
        for (o, c) in orbitals.iter().enumerate() {
            for k in 0..points.len() {
                let want: f64 = (0..n).map(|mu| c[mu] * v[k * n + mu]).sum();
                let wg: [f64; 3] = [0, 1, 2].map(|d| (0..n).map(|mu| c[mu] * g[k * n + mu][d]).sum());
                assert!((phi[o].values[k] - want).abs() < 1e-13);
                for (got, want) in phi[o].gradients[k].iter().zip(wg) {
                    assert!((got - want).abs() < 1e-12);
                }
            }
        }
    }
}

/// Normalisation through space: ∫|φ|² by a composite Gauss–Legendre product rule equals
/// cᵀSc = 1 for a random orbital with every shell type to g, so values and the analytic
/// overlap agree.
#[test]
fn orbital_norm_by_quadrature() {
    let (a, b) = ([0.1, -0.2, 0.05], [0.9, 0.4, -0.5]);
    let shells = vec![
        Shell::new(a, 0, false, vec![2.1, 0.45], &[0.5, 0.4], 0).unwrap(),
        Shell::new(a, 1, false, vec![1.5, 0.6], &[0.4, 0.7], 0).unwrap(),
        Shell::new(b, 2, true, vec![1.2, 0.5], &[0.6, 0.5], 1).unwrap(),
        Shell::new(a, 3, true, vec![0.8], &[1.0], 0).unwrap(),
        Shell::new(b, 4, true, vec![1.1, 0.6], &[0.5, 0.6], 1).unwrap(),
    ];
    let basis = BasisSet::new(Vec::new(), shells);
    let c = random_orbitals(&basis, 1, 21).remove(0);
    // 14 panels of 1 bohr on [−7, 7] per axis, 6 points each: beyond, every primitive is
    // below 1e-10 of its peak.
    let (x, w) = crate::quadrature::gauss_legendre(6);
    let mut nodes = Vec::new();
    for panel in 0..14 {
        let mid = -6.5 + panel as f64;
        for (xi, wi) in x.iter().zip(&w) {
            nodes.push((mid + 0.5 * xi, 0.5 * wi));
        }
    }
    let mut points = Vec::new();
    let mut weights = Vec::new();
    for &(xi, wi) in &nodes {
        for &(yj, wj) in &nodes {
            for &(zk, wk) in &nodes {
                points.push([xi, yj, zk]);
                weights.push(wi * wj * wk);
            }
        }
    }
    let phi = basis.orbital_values(&[&c], &points, Parallelism::Rayon);
    let norm: f64 = phi[0].values.iter().zip(&weights).map(|(v, w)| v * v * w).sum();
    assert!((norm - 1.0).abs() < 1e-8, "{norm}");
}

#[test]
fn bad_shells_are_refused() {
    let e = |r: Result<Shell, BasisError>| r.expect_err("must fail").to_string();
    assert_eq!(
        e(Shell::new([0.0; 3], 7, true, vec![1.0], &[1.0], 0)),
        "expected a shell of angular momentum at most 6 (i), found 7"
    );
    assert_eq!(
        e(Shell::new([0.0; 3], 0, false, vec![1.0, 2.0], &[1.0], 0)),
        "expected as many contraction coefficients as exponents (at least one), found 1 and 2"
    );
    assert_eq!(
        e(Shell::new([0.0; 3], 0, false, vec![-1.0], &[1.0], 0)),
        "expected positive exponents, found -1"
    );
    assert_eq!(
        e(Shell::new([0.0; 3], 1, false, vec![1.0], &[0.0], 0)),
        "expected a contraction of non-zero norm, found norm² 0e0"
    );
}

/// Dipole integrals against quadrature of φ_μ φ_ν r on a fine atom-centred grid, for every pair
/// of functions of the mixed basis (s to g, spherical and Cartesian, three centres) and of the
/// basis with h and i shells.
#[test]
fn dipole_integrals_match_quadrature() {
    use crate::molgrid::{GridAtom, GridLevel, MolecularGrid};
    for (spherical, basis) in [false, true].into_iter().flat_map(|s| [(s, mixed_basis(s)), (s, high_basis(s))]) {
        let n = basis.function_count();
        let centres = [[0.1, -0.2, 0.05], [1.3, 0.4, -0.7], [-0.6, 1.1, 0.9]];
        let atoms: Vec<GridAtom> = centres.iter().map(|&position| GridAtom { position, atomic_number: 6 }).collect();
        let grid = MolecularGrid::new(&atoms, GridLevel::Default);
        let unit: Vec<Vec<f64>> = (0..n).map(|i| (0..n).map(|j| if i == j { 1.0 } else { 0.0 }).collect()).collect();
        let refs: Vec<&[f64]> = unit.iter().map(Vec::as_slice).collect();
        let phi = basis.orbital_values(&refs, &grid.points, Parallelism::Rayon);
        let dipoles = basis.dipole_matrices();
        let s = basis.overlap_matrix();
        let mut worst: f64 = 0.0;
        for i in 0..n {
            for j in i..n {
                let products = || grid.weights.iter().zip(&phi[i].values).zip(&phi[j].values).map(|((w, a), b)| w * a * b);
                // The grid's own error, from the overlap it reproduces.
                let overlap: f64 = products().sum();
                assert!((overlap - s[i * n + j]).abs() < 1e-8, "S[{i},{j}]: {overlap} vs {}", s[i * n + j]);
                for (x, d) in dipoles.iter().enumerate() {
                    let q: f64 = products().zip(&grid.points).map(|(p, r)| p * r[x]).sum();
                    worst = worst.max((q - d[i * n + j]).abs());
                    assert!((q - d[i * n + j]).abs() < 1e-8, "r_{x}[{i},{j}] spherical={spherical}: {q} vs {}", d[i * n + j]);
                    assert_eq!(d[i * n + j], d[j * n + i]);
                }
            }
        }
        assert!(worst > 0.0);
    }
}

/// A normalised s function's dipole is its centre; a p_x function's transition dipole to the s
/// function on the same centre is ⟨s|x|p_x⟩ = 1/(2√a) for one exponent a (a Gaussian moment
/// integral, derived by hand).
#[test]
fn dipole_integrals_closed_forms() {
    let centre = [0.4, -1.2, 2.5];
    let a = 0.8;
    let basis = BasisSet::new(Vec::new(), vec![s_shell(centre, a), Shell::new(centre, 1, false, vec![a], &[1.0], 0).unwrap()]);
    let d = basis.dipole_matrices();
    let n = basis.function_count();
    for x in 0..3 {
        assert!((d[x][0] - centre[x]).abs() < 1e-14, "{}", d[x][0]);
        // Function 1 + x is p_x, p_y, p_z in the format's order.
        assert!((d[x][1 + x] - 0.5 / a.sqrt()).abs() < 1e-14, "{}", d[x][1 + x]);
        for (k, v) in d[x].iter().enumerate().take(n).skip(1) {
            if k != 1 + x {
                assert!(v.abs() < 1e-14);
            }
        }
    }
}
