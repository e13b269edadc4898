//! The eight sub-lattices of every second grid point, and how far results on them scatter.
//!
//! Sub-lattice `(a, b, c)` holds the points `(2i + a, 2j + b, 2k + c)`: a grid of spacing 2h
//! shifted by `a·a0 + b·a1 + c·a2`. All eight are trimmed to the common shape `⌊n/2⌋` per axis
//! (dropping at most the outermost layer, where the density has decayed), so that they share one
//! Coulomb kernel.

use super::Spreads;
use crate::cusp;
use crate::diagnostics::{CuspModels, DiagnosticsError, Engine, GridOrbital, GridSums};
use crate::grid::GridGeometry;
use crate::memory::OutOfMemory;
use crate::par::Parallelism;
use std::sync::Arc;

/// Sub-lattices need at least this many points per axis to say anything.
const MIN_COARSE_POINTS: usize = 8;

/// Sub-lattice `offset` of `o`, or `None` if the grid is too small to coarsen (an error where
/// its memory cannot be had).
fn sublattice(o: &GridOrbital, offset: [usize; 3]) -> Option<Result<GridOrbital, OutOfMemory>> {
    let g = &o.geometry;
    let shape = g.shape.map(|n| n / 2);
    if shape.iter().any(|&n| n < MIN_COARSE_POINTS) {
        return None;
    }
    let [_, n1, n2] = g.shape;
    let geometry = GridGeometry::new(g.point(offset), g.axes.map(|a| a.map(|x| 2.0 * x)), shape).ok()?;
    let rows = (0..shape[0]).flat_map(|i| (0..shape[1]).map(move |j| ((2 * i + offset[0]) * n1 + 2 * j + offset[1]) * n2 + offset[2]));
    let values = rows.flat_map(|row| (0..shape[2]).map(move |k| o.values[row + 2 * k]));
    let values = crate::memory::try_collect(geometry.len(), values, "a sub-lattice of the orbital");
    // Field by field: `..o.clone()` would copy the whole grid's values only to drop them.
    Some(values.map(|values| GridOrbital {
        source: o.source.clone(),
        label: o.label.clone(),
        spin: o.spin,
        occupation: o.occupation,
        geometry: Arc::new(geometry),
        nuclei: o.nuclei.clone(),
        kind: o.kind,
        kind_origin: o.kind_origin.clone(),
        values,
    }))
}

/// Largest deviation of each quantity on the sub-lattices from its value on the whole grid
/// (zero where the grid is too small to coarsen). Where the engine corrects cusps, J is split
/// with the whole grid's cusp models on every lattice, and of the functionals only what the grid
/// sums outside the refined windows is compared: the refined part comes from the whole grid
/// alike for every lattice.
///
/// Not the corrected sub-lattice sums, because at twice the spacing the correction's
/// interpolation no longer resolves a valence orbital near a heavy nucleus (on the shared
/// 0.15-bohr cubes its sub-lattice sums are off by 1–2 % where the whole grid's are within
/// 0.1 %): they would measure the coarse grid's failure, not the fine grid's sensitivity to where
/// features sit. The windows keep their whole-grid radii on the sub-lattices.
pub(super) fn spreads(engine: &Engine, o: &GridOrbital, sums: &GridSums, par: Parallelism) -> Result<Spreads, DiagnosticsError> {
    let models = sums.models.len();
    let step = o.geometry.max_step();
    // Plain grid sums outside the refined windows: the whole sum minus the windowed part.
    let outside = |orbital: &GridOrbital, g: &GridSums, plain: &[(f64, f64)], par: Parallelism| -> Vec<(f64, f64)> {
        if sums.refined.is_empty() {
            return plain.to_vec();
        }
        let inside = cusp::windowed_xc(&sums.refined, step, orbital, &g.rho, g.grad_sq.as_deref(), engine.models(), par);
        plain.iter().zip(inside).map(|(p, w)| (p.0 - w.0, p.1 - w.1)).collect()
    };
    // The whole grid's plain functional sums: the corrected ones minus what the correction
    // changed.
    let hartree = sums.hartree;
    let plain_models: Vec<(f64, f64)> = match &sums.cusp {
        None => sums.models.clone(),
        Some(applied) => sums.models.iter().zip(&applied.models).map(|(v, d)| (v.0 - d.0, v.1 - d.1)).collect(),
    };
    let fine_outside = outside(o, sums, &plain_models, par);
    // J on the sub-lattices is split with the whole grid's cusp models: refitted at 2h, a cusp
    // such as oxygen's (Z·h = 2.4) would rest on a single point.
    let models_for_j = || if sums.refined.is_empty() { CuspModels::Off } else { CuspModels::SplitJ(&sums.refined) };
    let offsets: Vec<[usize; 3]> = (0..8).map(|k| [k >> 2, (k >> 1) & 1, k & 1]).collect();
    // Sub-lattices run side by side, each on one thread, when the caller allows threads.
    let results = par.map(offsets.len(), |k| match sublattice(o, offsets[k]) {
        Some(Err(e)) => Err(e.into()),
        Some(Ok(sub)) => engine.grid_sums(&sub, Parallelism::Sequential, models_for_j(), false).map(|g| {
            let coarse_outside = outside(&sub, &g, &g.models, Parallelism::Sequential);
            Some((g.hartree, coarse_outside))
        }),
        None => Ok(None),
    });
    let mut s = Spreads { hartree: 0.0, models: vec![(0.0, 0.0); models], self_interaction: vec![0.0; models] };
    for r in results {
        let Some((coarse_hartree, coarse_models)) = r? else { continue };
        s.hartree = s.hartree.max((coarse_hartree - hartree).abs());
        for (m, (x, c)) in coarse_models.iter().zip(&fine_outside).enumerate() {
            s.models[m].0 = s.models[m].0.max((x.0 - c.0).abs());
            s.models[m].1 = s.models[m].1.max((x.1 - c.1).abs());
            let delta = coarse_hartree - hartree + x.0 - c.0 + x.1 - c.1;
            s.self_interaction[m] = s.self_interaction[m].max(delta.abs());
        }
    }
    Ok(s)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diagnostics::Kind;

    #[test]
    fn sublattices_partition_the_points() {
        let g = GridGeometry::new([0.1, 0.2, 0.3], [[0.2, 0.0, 0.0], [0.05, 0.2, 0.0], [0.0, 0.0, 0.25]], [17, 16, 18]).unwrap();
        let values: Vec<f64> = (0..g.len()).map(|i| i as f64).collect();
        let o = GridOrbital { values, ..GridOrbital::sampled("t", g.clone(), Vec::new(), Kind::Amplitude, |_| 0.0) };
        let mut seen = std::collections::HashSet::new();
        for k in 0..8 {
            let off = [k >> 2, (k >> 1) & 1, k & 1];
            let s = sublattice(&o, off).unwrap().unwrap();
            assert_eq!(s.geometry.shape, [8, 8, 9]);
            // Each value sits where its fine-grid point was.
            let [_, n1, n2] = g.shape;
            for (idx, &v) in s.values.iter().enumerate() {
                let fine = v as usize;
                let (i, j, l) = (fine / (n1 * n2), (fine / n2) % n1, fine % n2);
                let (ci, cj, cl) = (idx / (8 * 9), (idx / 9) % 8, idx % 9);
                let (p, q) = (g.point([i, j, l]), s.geometry.point([ci, cj, cl]));
                assert!((0..3).all(|x| (p[x] - q[x]).abs() < 1e-12));
                assert!(seen.insert(fine));
            }
        }
        // Only the dropped outermost layer of the odd axis is missing.
        assert_eq!(seen.len(), 16 * 16 * 18);
        let small = GridOrbital { geometry: Arc::new(GridGeometry::new([0.0; 3], g.axes, [15, 16, 18]).unwrap()), ..o };
        assert!(sublattice(&small, [0, 0, 0]).is_none());
    }
}
