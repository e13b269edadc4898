use super::*;
use std::f64::consts::PI;

/// Deterministic pseudo-random values in [−0.5, 0.5) (a small LCG; no test dependency needed).
fn noise(len: usize, seed: u64) -> Vec<f64> {
    let mut s = seed.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
    (0..len)
        .map(|_| {
            s = s.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
            (s >> 11) as f64 / (1u64 << 53) as f64 - 0.5
        })
        .collect()
}

fn sheared_axes(h: f64) -> [[f64; 3]; 3] {
    [[h, 0.0, 0.0], [0.3 * h, 0.95 * h, 0.0], [0.2 * h, -0.25 * h, 0.9 * h]]
}

fn dist(r: [f64; 3], c: [f64; 3]) -> f64 {
    ((r[0] - c[0]).powi(2) + (r[1] - c[1]).powi(2) + (r[2] - c[2]).powi(2)).sqrt()
}

#[test]
fn fft_path_equals_direct_sum_on_tiny_grids() {
    let grids = [
        GridGeometry::new([0.0; 3], [[0.3, 0.0, 0.0], [0.0, 0.25, 0.0], [0.0, 0.0, 0.2]], [4, 5, 3]).unwrap(),
        GridGeometry::new([1.0, -2.0, 0.5], sheared_axes(0.3), [3, 4, 4]).unwrap(),
        GridGeometry::new([0.0; 3], [[0.5, 0.0, 0.0], [0.0, 0.5, 0.0], [0.0, 0.0, 0.5]], [1, 6, 2]).unwrap(),
    ];
    for (gi, g) in grids.iter().enumerate() {
        let solver = HartreeSolver::new(g, &HartreeParams::default(), Parallelism::Sequential).unwrap();
        // Rough, sign-changing data: the identity must hold for any input, not just smooth ones.
        let a = noise(g.len(), 1 + gi as u64);
        let b = noise(g.len(), 100 + gi as u64);
        let direct_ab = direct::interaction(&solver, &a, &b);
        let direct_aa = direct::interaction(&solver, &a, &a);
        for par in [Parallelism::Sequential, Parallelism::Rayon] {
            let fft_ab = solver.interaction(&a, &b, par).unwrap();
            let fft_j = solver.self_energy(&a, par).unwrap();
            // Round-off of an M-point transform grows like ε·log₂M relative to the largest
            // possible term (Σ|a|·w)²/h.
            let scale = a.iter().map(|x| x.abs()).sum::<f64>().powi(2) * g.voxel_volume().powi(2) / g.max_step();
            let points = solver.padded_shape().iter().product::<usize>() as f64;
            let tol = 64.0 * f64::EPSILON * points.log2() * scale;
            assert!((fft_ab - direct_ab).abs() < tol, "grid {gi}: {fft_ab} vs {direct_ab} (tol {tol:e})");
            assert!((2.0 * fft_j - direct_aa).abs() < tol, "grid {gi}: {} vs {direct_aa}", 2.0 * fft_j);
        }
    }
}

#[test]
fn two_gaussians_interact_as_erf_over_distance() {
    // Normalised Gaussians with exponents α, β at distance R: C = erf(√(αβ/(α+β)) R)/R
    // (textbook result for Gaussian charge distributions).
    let (alpha, beta): (f64, f64) = (2.0, 0.8);
    let (ca, cb) = ([-1.1, 0.4, 0.3], [1.2, -0.5, 0.9]);
    let r = dist(ca, cb);
    let want = libm::erf((alpha * beta / (alpha + beta)).sqrt() * r) / r;
    let g = GridGeometry::around(sheared_axes(0.22), [0.0; 3], 9.5).unwrap();
    let gauss = |e: f64, c: [f64; 3]| g.sample(|p| (e / PI).powf(1.5) * (-e * dist(p, c).powi(2)).exp());
    let solver = HartreeSolver::new(&g, &HartreeParams::default(), Parallelism::Rayon).unwrap();
    let c = solver.interaction(&gauss(alpha, ca), &gauss(beta, cb), Parallelism::Rayon).unwrap();
    assert!(((c - want) / want).abs() < 1e-8, "{c} vs {want}");
}

#[test]
fn gaussian_self_energy_is_exact_on_orthogonal_and_sheared_grids() {
    // Normalised Gaussian (a/π)^{3/2} exp(−a r²): J = √(a/2π) exactly (textbook result).
    for (a, h) in [(1.0, 0.25), (3.0, 0.15), (0.5, 0.3)] {
        let want = (a / (2.0 * PI)).sqrt();
        let radius = (40.0 / a).sqrt(); // density below e^{-40} at the box faces
        for axes in [[[h, 0.0, 0.0], [0.0, h, 0.0], [0.0, 0.0, h]], sheared_axes(h)] {
            // Off-centre on purpose: the maximum lies between grid points.
            let g = GridGeometry::around(axes, [0.0; 3], radius).unwrap();
            let c = [0.37 * h, -0.21 * h, 0.11 * h];
            let n = g.sample(|r| (a / PI).powf(1.5) * (-a * dist(r, c).powi(2)).exp());
            let solver = HartreeSolver::new(&g, &HartreeParams::default(), Parallelism::Rayon).unwrap();
            let j = solver.self_energy(&n, Parallelism::Rayon).unwrap();
            assert!(((j - want) / want).abs() < 1e-6, "a={a} h={h} axes={axes:?}: J={j} want {want}");
        }
    }
}

#[test]
fn hydrogenic_self_energy_converges_to_five_sixteenths_zeta() {
    // Hydrogenic 1s density ζ³/π exp(−2ζr): J = 5ζ/16 exactly (textbook result). The cusp is not
    // band-limited, so the error shrinks with the spacing instead of vanishing.
    let zeta: f64 = 2.0;
    let want = 5.0 * zeta / 16.0;
    let mut errors = Vec::new();
    for h in [0.3, 0.2, 0.1] {
        let axes = [[h, 0.0, 0.0], [0.0, h, 0.0], [0.0, 0.0, h]];
        let g = GridGeometry::around(axes, [0.0; 3], 8.0).unwrap();
        let c = [0.5 * h, 0.5 * h, 0.5 * h]; // nucleus in the middle of a cell
        let n = g.sample(|r| zeta.powi(3) / PI * (-2.0 * zeta * dist(r, c)).exp());
        let solver = HartreeSolver::new(&g, &HartreeParams::default(), Parallelism::Rayon).unwrap();
        let j = solver.self_energy(&n, Parallelism::Rayon).unwrap();
        errors.push(((j - want) / want).abs());
    }
    assert!(errors[0] > errors[1] && errors[1] > errors[2], "errors {errors:?}");
    assert!(errors[2] < 1e-3, "errors {errors:?}");
}

#[test]
fn length_mismatch_is_an_error() {
    let g = GridGeometry::new([0.0; 3], [[0.3, 0.0, 0.0], [0.0, 0.3, 0.0], [0.0, 0.0, 0.3]], [2, 2, 2]).unwrap();
    let solver = HartreeSolver::new(&g, &HartreeParams::default(), Parallelism::Sequential).unwrap();
    assert_eq!(
        solver.self_energy(&[1.0; 7], Parallelism::Sequential),
        Err(PoissonError::LengthMismatch { expected: 8, found: 7 })
    );
}

#[test]
fn results_do_not_depend_on_threads() {
    let g = GridGeometry::new([0.0; 3], sheared_axes(0.3), [9, 7, 8]).unwrap();
    let solver = HartreeSolver::new(&g, &HartreeParams::default(), Parallelism::Rayon).unwrap();
    let n = noise(g.len(), 7);
    let a = solver.self_energy(&n, Parallelism::Sequential).unwrap();
    let b = solver.self_energy(&n, Parallelism::Rayon).unwrap();
    assert_eq!(a.to_bits(), b.to_bits());
}
