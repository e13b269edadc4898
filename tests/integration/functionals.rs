//! Functionals against libxc 7.0.0 (through PySCF 2.14): point values and self-energies of
//! analytic one-electron densities, from `../shared/reference/analytic.json`.

use crate::common::analytic;
use approx::{assert_relative_eq, relative_eq};
use sixray::quadrature::{radial_rule, spherical_self_energy};
use sixray::xc::pw92::Pw92;
use sixray::xc::slater::XAlpha;
use sixray::xc::{Functional, XcPoint};
use std::f64::consts::PI;

/// The functionals implemented so far, keyed as in the reference file.
fn implemented() -> Vec<(&'static str, Box<dyn Functional>)> {
    vec![("lsda_x", Box::new(XAlpha::lsda())), ("pw92_c", Box::new(Pw92))]
}

/// A spherical density: r (bohr) ↦ (n, dn/dr).
type Radial = Box<dyn Fn(f64) -> (f64, f64)>;

fn num(v: &serde_json::Value, key: &str) -> f64 {
    v[key].as_f64().unwrap_or_else(|| panic!("reference value `{key}` missing"))
}

#[test]
fn point_values_match_libxc() {
    // reference: libxc 7.0.0 via PySCF 2.14, analytic.json point_values (e = n·ε per volume)
    let Some(data) = analytic("point_values_match_libxc") else { return };
    let points = data["point_values"]["points"].as_array().expect("points");
    assert!(points.len() >= 5);
    for (key, f) in implemented() {
        for p in points {
            let (ga, gb) = (num(p, "grad_up_x"), num(p, "grad_down_x"));
            let input = XcPoint {
                rho: [num(p, "rho_up"), num(p, "rho_down")],
                sigma: [ga * ga, ga * gb, gb * gb],
                tau: [num(p, "tau_up"), num(p, "tau_down")],
            };
            let (got, want) = (f.energy_density(&input), num(p, key));
            assert!(relative_eq!(got, want, max_relative = 1e-10, epsilon = 1e-14), "{key} at {input:?}: {got:e} vs {want:e}");
        }
    }
}

#[test]
fn self_energies_of_analytic_densities_match_libxc_radial_quadrature() {
    // reference: libxc 7.0.0 via PySCF 2.14, analytic.json densities (4000-point radial
    // Gauss–Legendre, r = r_max t³); we integrate our functionals with the same rule.
    let Some(data) = analytic("self_energies_of_analytic_densities") else { return };
    for d in data["densities"].as_array().expect("densities") {
        let (density, r_max): (Radial, f64) = match d["kind"].as_str() {
            Some("hydrogenic_1s") => {
                let z = num(d, "zeta");
                (Box::new(move |r: f64| {
                    let n = z.powi(3) / PI * (-2.0 * z * r).exp();
                    (n, -2.0 * z * n)
                }), 40.0 / z)
            }
            Some("gaussian") => {
                let a = num(d, "exponent");
                (Box::new(move |r: f64| {
                    let n = (a / PI).powf(1.5) * (-a * r * r).exp();
                    (n, -2.0 * a * r * n)
                }), 30.0 / a.sqrt())
            }
            other => panic!("unknown density kind {other:?}"),
        };
        let rule = radial_rule(4000, r_max);
        for (key, f) in implemented() {
            let got = spherical_self_energy(f.as_ref(), &density, &rule);
            let want = num(d, key);
            assert!(relative_eq!(got, want, max_relative = 1e-10, epsilon = 1e-14), "{key} {}: {got} vs {want}", d["kind"]);
        }
    }
}

/// The functionals and J of a spherical density sampled on a cubic grid of spacing `h` centred
/// at `offset` (in units of h) from a grid point.
fn grid_energies(density: &dyn Fn(f64) -> f64, h: f64, radius: f64, offset: f64) -> (f64, Vec<f64>) {
    use sixray::grid::GridGeometry;
    use sixray::par::Parallelism;
    use sixray::poisson::{HartreeParams, HartreeSolver};
    let axes = [[h, 0.0, 0.0], [0.0, h, 0.0], [0.0, 0.0, h]];
    let c = [offset * h, 0.5 * offset * h, 0.25 * offset * h];
    let g = GridGeometry::around(axes, [0.0; 3], radius).unwrap();
    let n = g.sample(|r| density(((r[0] - c[0]).powi(2) + (r[1] - c[1]).powi(2) + (r[2] - c[2]).powi(2)).sqrt()));
    let j = HartreeSolver::new(&g, &HartreeParams::default(), Parallelism::Rayon)
        .self_energy(&n, Parallelism::Rayon)
        .unwrap();
    let w = g.voxel_volume();
    let e = implemented()
        .iter()
        .map(|(_, f)| w * n.iter().map(|&v| f.energy_density(&XcPoint::polarized(v, 0.0, 0.0))).sum::<f64>())
        .collect();
    (j, e)
}

#[test]
fn grid_sums_reproduce_analytic_self_energies() {
    // reference: libxc 7.0.0 via PySCF 2.14, analytic.json densities; J analytic (√(a/2π), 5ζ/16).
    let Some(data) = analytic("grid_sums_reproduce_analytic_self_energies") else { return };
    let densities = data["densities"].as_array().expect("densities");
    for d in densities {
        let keys: Vec<_> = implemented().iter().map(|(k, _)| *k).collect();
        match d["kind"].as_str() {
            Some("gaussian") => {
                // Smooth and resolved (Fourier content e^{−k²/4a} below e^{−35} beyond the
                // grid's Nyquist frequency π/h): the grid sum is spectrally accurate.
                let a = num(d, "exponent");
                let h = 0.25 / a.sqrt();
                let f = move |r: f64| (a / PI).powf(1.5) * (-a * r * r).exp();
                let (j, e) = grid_energies(&f, h, (40.0 / a).sqrt(), 0.37);
                assert_relative_eq!(j, num(d, "hartree_self"), max_relative = 1e-9);
                for (k, v) in keys.iter().zip(&e) {
                    assert!(relative_eq!(*v, num(d, k), max_relative = 1e-6), "a={a}: {k} {v} vs {}", num(d, k));
                }
            }
            Some("hydrogenic_1s") if num(d, "zeta") == 2.0 => {
                // A cusp: the error must shrink as the grid is refined (nucleus mid-cell).
                let z = 2.0f64;
                let f = move |r: f64| z.powi(3) / PI * (-2.0 * z * r).exp();
                let mut prev: Option<Vec<f64>> = None;
                for h in [0.2, 0.1] {
                    let (j, e) = grid_energies(&f, h, 8.0, 1.0);
                    let mut errs = vec![(j / num(d, "hartree_self") - 1.0).abs()];
                    errs.extend(keys.iter().zip(&e).map(|(k, v)| (v / num(d, k) - 1.0).abs()));
                    if let Some(p) = &prev {
                        assert!(errs.iter().zip(p).all(|(e, p)| e < p), "h={h}: {errs:?} after {p:?}");
                        assert!(errs.iter().all(|e| *e < 2e-3), "h={h}: {errs:?}");
                    }
                    prev = Some(errs);
                }
            }
            _ => {}
        }
    }
}
