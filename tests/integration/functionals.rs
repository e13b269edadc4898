//! Functionals against libxc 7.0.0 (through PySCF 2.14): point values and self-energies of
//! analytic one-electron densities, from `../shared/reference/analytic.json`.

use crate::common::analytic;
use approx::{assert_relative_eq, relative_eq};
use sixray::quadrature::{radial_rule, spherical_self_energy};
use sixray::xc::{Functional, Part, XcPoint, catalogue};
use std::f64::consts::PI;
use std::sync::Arc;

/// The functional whose values `analytic.json` stores under `key` (`<id>_x` or `<id>_c`).
fn functional(key: &str) -> Arc<dyn Functional> {
    catalogue()
        .into_iter()
        .find(|f| reference_key(f.as_ref()) == key)
        .unwrap_or_else(|| panic!("no functional for reference key {key}"))
}

fn reference_key(f: &dyn Functional) -> String {
    format!("{}_{}", f.id(), if f.part() == Part::Exchange { "x" } else { "c" })
}

/// A spherical density: r (bohr) ↦ (n, dn/dr).
type Radial = Box<dyn Fn(f64) -> (f64, f64)>;

fn num(v: &serde_json::Value, key: &str) -> f64 {
    v[key].as_f64().unwrap_or_else(|| panic!("reference value `{key}` missing"))
}

/// Point values against libxc.
fn check_point_values(key: &str) {
    // reference: libxc 7.0.0 via PySCF 2.14, analytic.json point_values (e = n·ε per volume)
    let Some(data) = analytic(&format!("point values of {key}")) else { return };
    let points = data["point_values"]["points"].as_array().expect("points");
    assert!(points.len() >= 5);
    let f = functional(key);
    for p in points {
        let (ga, gb) = (num(p, "grad_up_x"), num(p, "grad_down_x"));
        let input = XcPoint {
            rho: [num(p, "rho_up"), num(p, "rho_down")],
            sigma: [ga * ga, ga * gb, gb * gb],
            tau: [num(p, "tau_up"), num(p, "tau_down")],
        };
        let (got, want) = (f.energy_density(&input), num(p, key));
        assert!(relative_eq!(got, want, max_relative = 1e-9, epsilon = 1e-12), "{key} at {input:?}: {got:e} vs {want:e}");
    }
}

/// Self-energies of the analytic densities by the reference's own radial rule.
fn check_radial_self_energies(key: &str) {
    // reference: libxc 7.0.0 via PySCF 2.14, analytic.json densities (4000-point radial
    // Gauss–Legendre, r = r_max t³); we integrate our functional with the same rule, so the
    // comparison isolates the functional.
    let Some(data) = analytic(&format!("radial self-energies of {key}")) else { return };
    let f = functional(key);
    for d in data["densities"].as_array().expect("densities") {
        let (density, r_max) = radial_density(d);
        let got = spherical_self_energy(f.as_ref(), &density, &radial_rule(4000, r_max));
        let want = num(d, key);
        assert!(relative_eq!(got, want, max_relative = 1e-9, epsilon = 1e-13), "{key} {}: {got} vs {want}", d["kind"]);
    }
}

/// n(r) and dn/dr of an analytic.json density, and the radial extent its reference used.
fn radial_density(d: &serde_json::Value) -> (Radial, f64) {
    match d["kind"].as_str() {
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
    }
}

/// Point-value and radial tests for each functional, named after its reference key.
macro_rules! functional_tests {
    ($($key:ident),* $(,)?) => {
        mod point_values {
            $( #[test] fn $key() { super::check_point_values(stringify!($key)); } )*
        }
        mod radial_self_energies {
            $( #[test] fn $key() { super::check_radial_self_energies(stringify!($key)); } )*
        }
        #[test]
        fn every_catalogued_functional_is_tested() {
            let tested = [$(stringify!($key)),*];
            for f in catalogue() {
                assert!(tested.contains(&reference_key(f.as_ref()).as_str()), "{} untested", f.id());
            }
        }
    };
}

functional_tests!(lsda_x, b88_x, pbe_x, pw91_x, scan_x, r2scan_x, pw92_c, vwn5_c, pbe_c, lyp_c, scan_c, r2scan_c);

/// Functionals of the density alone, checked on grids here.
const LOCAL: [&str; 2] = ["lsda_x", "pw92_c"];

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
    let e = LOCAL
        .iter()
        .map(|k| functional(k))
        .map(|f| w * n.iter().map(|&v| f.energy_density(&XcPoint::polarized(v, 0.0, 0.0))).sum::<f64>())
        .collect();
    (j, e)
}

#[test]
fn grid_sums_reproduce_analytic_self_energies() {
    // reference: libxc 7.0.0 via PySCF 2.14, analytic.json densities; J analytic (√(a/2π), 5ζ/16).
    let Some(data) = analytic("grid_sums_reproduce_analytic_self_energies") else { return };
    let densities = data["densities"].as_array().expect("densities");
    for d in densities {
        let keys = LOCAL;
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
