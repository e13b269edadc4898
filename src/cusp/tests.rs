use super::*;

fn on_grid(h: f64, radius: f64, nuclei: Vec<Nucleus>, kind: Kind, value: impl Fn([f64; 3]) -> f64) -> GridOrbital {
    let g = GridGeometry::around([[h, 0.0, 0.0], [0.0, h, 0.0], [0.0, 0.0, h]], [0.0; 3], radius).unwrap();
    GridOrbital::sampled("t", g, nuclei, kind, value)
}

fn nucleus(z: i32, position: [f64; 3]) -> Nucleus {
    Nucleus { atomic_number: z, charge: z as f64, position }
}

#[test]
fn fit_recovers_the_cusp_amplitude_beside_a_smooth_remainder() {
    let z = 3.0f64;
    let c = [0.031, -0.052, 0.017];
    let a = (z.powi(3) / PI).sqrt();
    // A 1s cusp plus a smooth, nodeless remainder that vanishes at the nucleus to first order
    // in the spherical average (a p-like part and a quadratic part), as Kato's condition allows.
    let o = on_grid(0.15, 3.0, vec![nucleus(3, c)], Kind::Amplitude, |p| {
        let d = [p[0] - c[0], p[1] - c[1], p[2] - c[2]];
        a * (-z * distance(p, c)).exp() + 0.3 * d[2] + 0.2 * d[0] * d[1]
    });
    let m = CuspModel::fit(&o, &o.nuclei[0]).unwrap();
    assert!((m.amplitude - a).abs() < 1e-3 * a, "{} vs {a}", m.amplitude);
    // The same as densities.
    let d = GridOrbital { values: o.geometry.sample(|p| a * a * (-2.0 * z * distance(p, c)).exp()), kind: Kind::Density, ..o.clone() };
    assert!((CuspModel::fit(&d, &d.nuclei[0]).unwrap().amplitude - a).abs() < 1e-6 * a);
    // A 2p-like orbital (z e^{−r}, normalised to about one electron) has no s character at the
    // nucleus: at most a negligible model.
    let p = GridOrbital { values: o.geometry.sample(|r| (r[2] - c[2]) * (-distance(r, c)).exp() / PI.sqrt()), ..o.clone() };
    assert!(CuspModel::fit(&p, &p.nuclei[0]).is_none_or(|m| m.charge < 1e-5), "{:?}", CuspModel::fit(&p, &p.nuclei[0]));
    // Ghost atoms (Z = 0) get none either.
    assert!(CuspModel::fit(&o, &nucleus(0, c)).is_none());
}

#[test]
fn model_potential_obeys_gauss_and_its_limits() {
    let m = CuspModel { position: [0.0; 3], z: 2.0, amplitude: 1.0, charge: 0.7 };
    // v(0) = qZ and v(r) → q/r far away (textbook potential of a hydrogenic density).
    assert!((m.potential(0.0) - 0.7 * 2.0).abs() < 1e-12);
    assert!((m.potential(1e-9) - 0.7 * 2.0).abs() < 1e-8);
    assert!((m.potential(30.0) - 0.7 / 30.0).abs() < 1e-12);
    // Gauss: v(r) = Q(r)/r + ∫_r^∞ 4πs n(s) ds, integrated numerically.
    let r = 0.4;
    let (x, w) = gauss_legendre(400);
    let inner: f64 = x.iter().zip(&w).map(|(&x, &w)| {
        let s = 0.5 * r * (x + 1.0);
        0.5 * r * w * 4.0 * PI * s * s * m.density(s)
    }).sum();
    let outer: f64 = x.iter().zip(&w).map(|(&x, &w)| {
        let s = r + 0.5 * (20.0 - r) * (x + 1.0);
        0.5 * (20.0 - r) * w * 4.0 * PI * s * m.density(s)
    }).sum();
    assert!((m.potential(r) - (inner / r + outer)).abs() < 1e-12, "{} vs {}", m.potential(r), inner / r + outer);
}

#[test]
fn interaction_of_two_models_matches_a_direct_quadrature() {
    let a = CuspModel { position: [0.0, 0.0, 0.0], z: 1.0, amplitude: 1.0, charge: 0.8 };
    let b = CuspModel { position: [0.0, 0.0, 1.3], z: 3.0, amplitude: 1.0, charge: 0.4 };
    // Direct: ∫ m_A(r) v_B(|r − R_B|) d³r in spherical coordinates about A (independent of the
    // shell-average identity used in `interaction`).
    let (x, w) = gauss_legendre(300);
    let mut direct = 0.0;
    for (&xr, &wr) in x.iter().zip(&w) {
        let t = 0.5 * (xr + 1.0);
        let r = 30.0 * t * t;
        let dr = 30.0 * t * wr;
        for (&c, &wc) in x.iter().zip(&w) {
            let d = (r * r + 1.3 * 1.3 - 2.0 * r * 1.3 * c).max(0.0).sqrt();
            direct += 2.0 * PI * r * r * dr * wc * a.density(r) * b.potential(d);
        }
    }
    let (ab, ba) = (a.interaction(&b), b.interaction(&a));
    assert!((ab - ba).abs() < 1e-9 * ab.abs(), "{ab} vs {ba}");
    assert!((ab - direct).abs() < 1e-6 * direct.abs(), "{ab} vs {direct}");
    // Far apart: point charges.
    let far = CuspModel { position: [0.0, 0.0, 25.0], ..b.clone() };
    assert!((a.interaction(&far) - 0.8 * 0.4 / 25.0).abs() < 1e-10);
}

#[test]
fn window_is_a_smooth_step() {
    assert_eq!(window(0.5, 1.0, 2.0), 1.0);
    assert_eq!(window(2.5, 1.0, 2.0), 0.0);
    assert!((window(1.5, 1.0, 2.0) - 0.5).abs() < 1e-15);
    let (near_in, near_out) = (window(1.1, 1.0, 2.0), window(1.9, 1.0, 2.0));
    assert!(near_in < 1.0 && near_in > 1.0 - 1e-3 && near_out > 0.0 && near_out < 1e-3, "{near_in} {near_out}");
}

#[test]
fn smooth_densities_at_a_nucleus_get_no_model() {
    // A Gaussian centred on a listed nucleus has no cusp: the data must not be given one.
    for z in [1, 3, 8] {
        let c = [0.02, -0.01, 0.03];
        let o = on_grid(0.15, 4.0, vec![nucleus(z, c)], Kind::Amplitude, |p| (-0.5 * distance(p, c).powi(2)).exp());
        assert!(CuspModel::fit(&o, &o.nuclei[0]).is_none(), "Z={z}");
    }
    // Real cusps, even barely resolved ones, are found.
    for (z, h) in [(1.0f64, 0.15), (3.0, 0.15), (8.0, 0.15), (8.0, 0.25)] {
        let c = [0.3 * h, -0.2 * h, 0.1 * h];
        let o = on_grid(h, 12.0 / z, vec![nucleus(z as i32, c)], Kind::Amplitude, |p| (z.powi(3) / PI).sqrt() * (-z * distance(p, c)).exp());
        assert!(CuspModel::fit(&o, &o.nuclei[0]).is_some(), "Z={z} h={h}");
    }
}


