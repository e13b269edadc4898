//! A cusp model at each nucleus, and what the grid makes of it.
//!
//! Near a nucleus A of charge Z an orbital behaves like `φ ≈ a e^{−Z|r − R_A|}` plus p-like terms
//! that vanish at R_A (Kato's cusp condition; common practice), so its density carries the cusp
//! `m(r) = f a² e^{−2Z|r − R_A|}`. `a` is fitted to the grid values within two steps of the nucleus
//! by least squares with a linear p-like part, so an orbital without s character at A gets
//! a ≈ 0 and no model. The model is then evaluated on the orbital's own grid points, with the same
//! finite-difference gradients, and compared with its exact radial integrals; a smooth window
//! (1 within 4h of the nucleus, 0 beyond 8h) confines the comparison to the cusp region, where
//! the grid's error arises:
//!
//! ```text
//! ΔE = Σ_grid w·W·e(m) − ∫ W e(m) 4πr² dr              every functional
//! ΔJ ≈ (Σ_grid w·W·m − ∫ W m 4πr² dr) · v(R_A)         first order, v the orbital's potential at R_A
//! ```

use super::Deviation;
use crate::diagnostics::{Engine, GridOrbital, GridSums, Kind};
use crate::grid::{GridGeometry, Nucleus, dot};
use crate::par::Parallelism;
use crate::quadrature::radial_rule;
use crate::xc::{DENSITY_FLOOR, Family, Functional, Part, XcPoint};
use std::collections::HashMap;
use std::sync::Arc;

/// Points within this many grid steps of the nucleus enter the fit.
const FIT_STEPS: f64 = 2.01;
/// The window is 1 within this many steps of the nucleus…
const WINDOW_INNER_STEPS: f64 = 4.0;
/// …and 0 beyond this many.
const WINDOW_OUTER_STEPS: f64 = 8.0;
/// Models holding fewer electrons than this are left out (no s character at the nucleus).
const MIN_MODEL_CHARGE: f64 = 1e-8;
/// Radial quadrature points for the exact integrals.
const RADIAL_POINTS: usize = 600;
/// Average of 1/r over a cube of unit edge centred on the origin (textbook value, quoted from
/// memory: ∫ over [−½, ½]³ of d³r/|r| ≈ 2.3800772).
const CUBE_MEAN_INVERSE_DISTANCE: f64 = 2.380_077_2;

/// The fitted cusp of one orbital at one nucleus.
#[derive(Clone, Debug, PartialEq)]
pub(super) struct CuspModel {
    position: [f64; 3],
    z: f64,
    /// a: the s-like amplitude at the nucleus, 1/bohr^{3/2}.
    amplitude: f64,
}

/// Smooth step from 1 (r ≤ r1) to 0 (r ≥ r2), twice continuously differentiable.
fn window(r: f64, r1: f64, r2: f64) -> f64 {
    if r <= r1 {
        1.0
    } else if r >= r2 {
        0.0
    } else {
        let t = (r - r1) / (r2 - r1);
        1.0 - t * t * t * (10.0 - 15.0 * t + 6.0 * t * t)
    }
}

/// Solves the 4×4 system `m x = v` by elimination with partial pivoting; `None` if singular.
fn solve4(mut m: [[f64; 4]; 4], mut v: [f64; 4]) -> Option<[f64; 4]> {
    for c in 0..4 {
        let p = (c..4).max_by(|&a, &b| m[a][c].abs().total_cmp(&m[b][c].abs()))?;
        if m[p][c].abs() < 1e-300 {
            return None;
        }
        m.swap(c, p);
        v.swap(c, p);
        let pivot_row = m[c];
        for r in 0..4 {
            if r != c {
                let f = m[r][c] / pivot_row[c];
                for (x, p) in m[r].iter_mut().zip(&pivot_row) {
                    *x -= f * p;
                }
                v[r] -= f * v[c];
            }
        }
    }
    Some([0, 1, 2, 3].map(|i| v[i] / m[i][i]))
}

/// Index range of grid points within `radius` of `centre` along each axis (clamped).
fn index_box(g: &GridGeometry, centre: [f64; 3], radius: f64) -> [(usize, usize); 3] {
    let dual = g.dual_axes();
    let spacing = g.plane_spacings();
    let rel = [0, 1, 2].map(|k| centre[k] - g.origin[k]);
    [0, 1, 2].map(|a| {
        let u = dot(&dual[a], &rel);
        let reach = radius / spacing[a] + 1.0;
        let lo = (u - reach).floor().max(0.0) as usize;
        let hi = ((u + reach).ceil().max(0.0) as usize).min(g.shape[a] - 1);
        (lo.min(hi), hi)
    })
}

fn distance(a: [f64; 3], b: [f64; 3]) -> f64 {
    let d = [a[0] - b[0], a[1] - b[1], a[2] - b[2]];
    dot(&d, &d).sqrt()
}

impl CuspModel {
    /// Fits the cusp of `o` at `nucleus`; `None` without s character there (or nothing to fit).
    pub(super) fn fit(o: &GridOrbital, nucleus: &Nucleus) -> Option<CuspModel> {
        let z = nucleus.atomic_number as f64;
        if z < 1.0 {
            return None;
        }
        let g = &o.geometry;
        let radius = FIT_STEPS * g.max_step();
        let [(l0, h0), (l1, h1), (l2, h2)] = index_box(g, nucleus.position, radius);
        // Amplitudes: φ ≈ a e^{−Zr} + (b·d) e^{−Zr}; densities: n ≈ c e^{−2Zr} + (b·d) e^{−2Zr}
        // (the s–p cross term), per unit occupation.
        let exponent = match o.kind {
            Kind::Amplitude => z,
            Kind::Density => 2.0 * z,
        };
        let (mut ata, mut atb, mut count) = ([[0.0; 4]; 4], [0.0; 4], 0);
        let [_, n1, n2] = g.shape;
        for i in l0..=h0 {
            for j in l1..=h1 {
                for k in l2..=h2 {
                    let p = g.point([i, j, k]);
                    let d = [p[0] - nucleus.position[0], p[1] - nucleus.position[1], p[2] - nucleus.position[2]];
                    let r = dot(&d, &d).sqrt();
                    if r > radius {
                        continue;
                    }
                    let e = (-exponent * r).exp();
                    let row = [e, d[0] * e, d[1] * e, d[2] * e];
                    let y = o.values[(i * n1 + j) * n2 + k];
                    for a in 0..4 {
                        atb[a] += row[a] * y;
                        for b in 0..4 {
                            ata[a][b] += row[a] * row[b];
                        }
                    }
                    count += 1;
                }
            }
        }
        if count < 8 {
            return None;
        }
        let coefficient = solve4(ata, atb)?[0];
        let amplitude = match o.kind {
            Kind::Amplitude => coefficient,
            Kind::Density => coefficient.max(0.0).sqrt(),
        };
        let charge = o.occupation * amplitude * amplitude * std::f64::consts::PI / (z * z * z);
        (charge.is_finite() && charge > MIN_MODEL_CHARGE).then_some(CuspModel { position: nucleus.position, z, amplitude })
    }

    /// The grid's signed errors on this cusp: J and each model's exchange and correlation.
    pub(super) fn deviation(&self, engine: &Engine, o: &GridOrbital, sums: &GridSums) -> Deviation {
        let g = &o.geometry;
        let h = g.max_step();
        let (r1, r2) = (WINDOW_INNER_STEPS * h, WINDOW_OUTER_STEPS * h);
        let (z, a, f) = (self.z, self.amplitude, o.occupation);

        // The model on the orbital's own points around the nucleus (margin for the stencils).
        let margin = (engine.params().gradient.stencil as f64) * h;
        let [(l0, h0), (l1, h1), (l2, h2)] = index_box(g, self.position, r2 + margin);
        let shape = [h0 - l0 + 1, h1 - l1 + 1, h2 - l2 + 1];
        let Ok(local) = GridGeometry::new(g.point([l0, l1, l2]), g.axes, shape) else {
            return Deviation::zero(engine.models().len());
        };
        let values = local.sample(|p| {
            let r = distance(p, self.position);
            match o.kind {
                Kind::Amplitude => a * (-z * r).exp(),
                Kind::Density => a * a * (-2.0 * z * r).exp(),
            }
        });
        let weights = local.sample(|p| window(distance(p, self.position), r1, r2));
        let model = GridOrbital { geometry: Arc::new(local), values, ..o.clone() };
        let m = model.density();
        let needs_gradient = engine.models().iter().any(|k| k.family() >= Family::Gga);
        let sigma = needs_gradient.then(|| model.density_gradient_squared(&engine.params().gradient, Parallelism::Sequential));
        let windowed: Vec<f64> = m.iter().zip(&weights).map(|(m, w)| m * w).collect();
        let w = g.voxel_volume();

        // Exact radial integrals of the windowed model, with its analytic gradient.
        let rule = radial_rule(RADIAL_POINTS, r2);
        let exact = |e: &dyn Fn(f64, f64) -> f64| -> f64 {
            rule.iter()
                .map(|&(r, wr)| {
                    let n = f * a * a * (-2.0 * z * r).exp();
                    wr * window(r, r1, r2) * e(n, (2.0 * z * n).powi(2))
                })
                .sum()
        };

        let mut cache: HashMap<(Part, String), f64> = HashMap::new();
        let mut error = |fu: &dyn Functional| -> f64 {
            *cache.entry((fu.part(), fu.id())).or_insert_with(|| {
                // Grid: Σ w·W·e over the model's points (the window multiplies e, not n).
                let grid: f64 = (0..m.len())
                    .filter(|&k| weights[k] > 0.0 && m[k] > DENSITY_FLOOR)
                    .map(|k| {
                        let s = sigma.as_ref().map_or(0.0, |s| s[k]);
                        weights[k] * fu.energy_density(&XcPoint::polarized(m[k], s, s / (8.0 * m[k])))
                    })
                    .sum::<f64>()
                    * w;
                let exact = exact(&|n, s| {
                    if n > DENSITY_FLOOR { fu.energy_density(&XcPoint::polarized(n, s, s / (8.0 * n))) } else { 0.0 }
                });
                grid - exact
            })
        };
        let models = engine
            .models()
            .iter()
            .map(|k| (error(k.exchange.as_ref()), k.correlation.as_deref().map_or(0.0, &mut error)))
            .collect();

        let q_grid = w * windowed.iter().sum::<f64>();
        let q_exact = exact(&|n, _| n);
        let hartree = (q_grid - q_exact) * potential_at(g, &sums.rho, self.position);
        Deviation { hartree, models }
    }
}

/// The Coulomb potential of the density `rho` on grid `g` at `point`, hartree/e (direct sum; a
/// grid point on `point` contributes with the mean inverse distance over its cell).
fn potential_at(g: &GridGeometry, rho: &[f64], point: [f64; 3]) -> f64 {
    let w = g.voxel_volume();
    let edge = w.cbrt();
    let [_, n1, n2] = g.shape;
    let mut v = 0.0;
    for (idx, &n) in rho.iter().enumerate() {
        if n == 0.0 {
            continue;
        }
        let p = g.point([idx / (n1 * n2), (idx / n2) % n1, idx % n2]);
        let r = distance(p, point);
        v += n * if r < 0.5 * edge { CUBE_MEAN_INVERSE_DISTANCE / edge } else { 1.0 / r };
    }
    w * v
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diagnostics::{EngineParams, Spin};
    use crate::xc::Model;
    use std::f64::consts::PI;

    fn hydrogenic(z: f64, h: f64, offset: [f64; 3]) -> GridOrbital {
        let g = GridGeometry::around([[h, 0.0, 0.0], [0.0, h, 0.0], [0.0, 0.0, h]], [0.0; 3], 12.0 / z).unwrap();
        let values = g.sample(|p| (z.powi(3) / PI).sqrt() * (-z * distance(p, offset)).exp());
        GridOrbital {
            source: "t".into(),
            label: "t".into(),
            spin: Spin::Alpha,
            occupation: 1.0,
            geometry: Arc::new(g),
            nuclei: Arc::from(vec![Nucleus { atomic_number: z as i32, charge: z, position: offset }]),
            kind: Kind::Amplitude,
            values,
        }
    }

    #[test]
    fn fit_recovers_the_amplitude_and_ignores_p_orbitals() {
        let o = hydrogenic(3.0, 0.15, [0.031, -0.052, 0.017]);
        let c = CuspModel::fit(&o, &o.nuclei[0]).unwrap();
        assert!((c.amplitude - (27.0 / PI).sqrt()).abs() < 1e-6 * c.amplitude, "{}", c.amplitude);
        // A 2p-like orbital (z e^{−r}) has no s character at the nucleus.
        let p = GridOrbital { values: o.geometry.sample(|r| r[2] * (-distance(r, [0.0; 3])).exp()), ..o.clone() };
        let at_origin = Nucleus { position: [0.0; 3], ..o.nuclei[0].clone() };
        assert!(CuspModel::fit(&p, &at_origin).is_none());
    }

    #[test]
    fn model_error_matches_the_grid_error_of_a_pure_cusp() {
        // For a hydrogenic density the model is the whole density, so its windowed grid error
        // must equal the plain grid sum's actual error (the smooth rest adds nothing).
        for (h, offset) in [(0.15, [0.07, 0.07, 0.07]), (0.15, [0.0, 0.0, 0.0]), (0.12, [0.031, -0.052, 0.017])] {
            let z = 3.0;
            let o = hydrogenic(z, h, offset);
            let engine = Engine::new(vec![Model::from_name("lsda").unwrap(), Model::from_name("pbe").unwrap()], EngineParams::default());
            let sums = engine.grid_sums(&o, Parallelism::Rayon).unwrap();
            let d = CuspModel::fit(&o, &o.nuclei[0]).unwrap().deviation(&engine, &o, &sums);
            let rule = radial_rule(4000, 40.0 / z);
            let exact = |fu: &dyn Functional| crate::quadrature::spherical_self_energy(fu, |r| {
                let n = z.powi(3) / PI * (-2.0 * z * r).exp();
                (n, -2.0 * z * n)
            }, &rule);
            for (k, m) in engine.models().iter().enumerate() {
                let actual_x = sums.models[k].0 - exact(m.exchange.as_ref());
                let actual_c = sums.models[k].1 - exact(m.correlation.as_deref().unwrap());
                assert!((d.models[k].0 - actual_x).abs() < 0.05 * actual_x.abs() + 1e-6, "h={h} {offset:?} {}: x {} vs {actual_x}", m.name, d.models[k].0);
                assert!((d.models[k].1 - actual_c).abs() < 0.05 * actual_c.abs() + 1e-6, "h={h} {offset:?} {}: c {} vs {actual_c}", m.name, d.models[k].1);
            }
            // J (first order): right sign and magnitude within a factor of two (textbook J = 5Z/16).
            let actual_j = sums.hartree - 5.0 * z / 16.0;
            assert!(d.hartree * actual_j > 0.0 && (d.hartree / actual_j - 1.0).abs() < 1.0, "h={h}: J {} vs {actual_j}", d.hartree);
        }
    }

    #[test]
    fn window_is_smooth_and_bounded() {
        assert_eq!(window(0.5, 1.0, 2.0), 1.0);
        assert_eq!(window(2.5, 1.0, 2.0), 0.0);
        assert!((window(1.5, 1.0, 2.0) - 0.5).abs() < 1e-15);
        assert!(window(1.0 + 1e-3, 1.0, 2.0) < 1.0 && window(1.0 + 1e-3, 1.0, 2.0) > 1.0 - 1e-7);
        assert!(window(2.0 - 1e-3, 1.0, 2.0) > 0.0 && window(2.0 - 1e-3, 1.0, 2.0) < 1e-7);
    }
}
