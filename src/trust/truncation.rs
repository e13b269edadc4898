//! What lies beyond the box: the tail of the orbital past each face.
//!
//! Outside the box the density keeps decaying roughly exponentially along the face normal. From
//! the face layer's sum N₀ and the next layer's N₁ (plane spacing d), the decay length is
//! λ = d / ln(N₁/N₀), and the charge beyond the face, past the half cell the face layer already
//! counts, is `(w N₀ / d) λ e^{−d/2λ}`. Every functional's tail follows the same way from its
//! energy-density sums over the two layers. J misses the tail's interaction with the rest,
//! about `lost · q / R` with q the charge in the box and R the distance from the density's
//! centroid to the face. Layers that do not decay outward (the box cuts through the orbital)
//! are taken to decay no faster than a ratio of 1.05 per layer, which makes the estimate large,
//! as it should be.

use super::Deviation;
use crate::diagnostics::{Engine, GridOrbital, GridSums};
use crate::grid::dot;
use crate::xc::slater::XAlpha;
use crate::xc::{DENSITY_FLOOR, Functional, XcPoint};

/// Slowest decay assumed per layer outward.
const MIN_DECAY_RATIO: f64 = 1.05;

/// The tail beyond the box.
#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Tail {
    /// Charge beyond the faces, electrons.
    pub lost_charge: f64,
    /// What the grid values miss (grid minus complete), hartree.
    pub deviation: Deviation,
    /// The same for LSDA exchange (the basis of α*), hartree.
    pub lsda_exchange: f64,
}

/// Beyond-the-face part of a quantity whose face-layer sum is `q0` and next-layer sum `q1`.
fn beyond(q0: f64, q1: f64, d: f64) -> f64 {
    if q0 == 0.0 || q0.signum() != q1.signum() && q1 != 0.0 {
        return 0.0;
    }
    let ratio = if q1 == 0.0 { MIN_DECAY_RATIO } else { (q1 / q0).max(MIN_DECAY_RATIO) };
    let lambda = d / ratio.ln();
    q0 / d * lambda * (-d / (2.0 * lambda)).exp()
}

impl Tail {
    /// Estimates the tail of `o` from the grid sums' density and gradient.
    pub(crate) fn estimate(engine: &Engine, o: &GridOrbital, sums: &GridSums) -> Tail {
        let g = &o.geometry;
        let w = g.voxel_volume();
        let rho = &sums.rho;
        let shape = g.shape;
        let [_, n1, n2] = shape;
        let index = |i: [usize; 3]| (i[0] * n1 + i[1]) * n2 + i[2];
        // Energy density of one functional at one point.
        let energy = |f: &dyn Functional, k: usize| -> f64 {
            let n = rho[k];
            if n <= DENSITY_FLOOR {
                return 0.0;
            }
            let s = sums.grad_sq.as_ref().map_or(0.0, |s| s[k]);
            f.energy_density(&XcPoint::polarized(n, s, s / (8.0 * n)))
        };
        // Centroid of the density, for the distance to each face.
        let mut centroid = [0.0; 3];
        for (k, &n) in rho.iter().enumerate() {
            let p = g.point([k / (n1 * n2), (k / n2) % n1, k % n2]);
            for x in 0..3 {
                centroid[x] += n * p[x];
            }
        }
        let total: f64 = rho.iter().sum();
        if total > 0.0 {
            centroid = centroid.map(|c| c / total);
        }
        let dual = g.dual_axes();
        let spacing = g.plane_spacings();
        let models = engine.models();
        let mut tail = Tail { lost_charge: 0.0, deviation: Deviation::zero(models.len()), lsda_exchange: 0.0 };
        let lsda = XAlpha::lsda();

        for axis in 0..3 {
            if shape[axis] < 2 {
                continue;
            }
            let d = spacing[axis];
            for (face, inner) in [(0, 1), (shape[axis] - 1, shape[axis] - 2)] {
                // The points of one layer normal to `axis`.
                let layer = |at: usize| {
                    let (a, b) = ((axis + 1) % 3, (axis + 2) % 3);
                    (0..shape[a]).flat_map(move |i| {
                        (0..shape[b]).map(move |j| {
                            let mut idx = [0; 3];
                            idx[axis] = at;
                            idx[a] = i;
                            idx[b] = j;
                            idx
                        })
                    })
                };
                let sum = |at: usize, q: &dyn Fn(usize) -> f64| -> f64 { w * layer(at).map(|i| q(index(i))).sum::<f64>() };
                let lost = beyond(sum(face, &|k| rho[k]), sum(inner, &|k| rho[k]), d);
                tail.lost_charge += lost;
                // Distance from the centroid to the face plane, along the face normal.
                let on_face = g.point({
                    let mut i = [0; 3];
                    i[axis] = face;
                    i
                });
                let normal = dual[axis].map(|x| x * spacing[axis]);
                let rel = [0, 1, 2].map(|x| on_face[x] - centroid[x]);
                let reach = dot(&rel, &normal).abs().max(d);
                tail.deviation.hartree -= lost * w * total / reach;
                let part = |f: &dyn Functional| beyond(sum(face, &|k| energy(f, k)), sum(inner, &|k| energy(f, k)), d);
                tail.lsda_exchange -= part(&lsda);
                for (m, model) in models.iter().enumerate() {
                    tail.deviation.models[m].0 -= part(model.exchange.as_ref());
                    if let Some(c) = &model.correlation {
                        tail.deviation.models[m].1 -= part(c.as_ref());
                    }
                }
            }
        }
        tail
    }
}

#[cfg(test)]
mod tests {
    use super::beyond;

    #[test]
    fn exponential_tails_are_recovered() {
        // Layers of an exponential e^{−κx} at x = 0, d: the tail past x = d/2 is ∫ e^{−κx} dx.
        let (kappa, d) = (1.3f64, 0.2f64);
        let (q0, q1) = (d * (-kappa * 0.0f64).exp(), d * (-kappa * -d).exp());
        let want = (-kappa * d / 2.0).exp() / kappa;
        assert!((beyond(q0, q1, d) - want).abs() < 1e-12, "{} vs {want}", beyond(q0, q1, d));
        assert_eq!(beyond(0.0, 1.0, d), 0.0);
        // A layer that grows outward counts as a slowly decaying one: a large estimate.
        assert!(beyond(1.0, 0.5, d) > 10.0 * d);
    }
}
