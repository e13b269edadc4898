//! Lee–Yang–Parr correlation (C. Lee, W. Yang and R. G. Parr, Phys. Rev. B 37, 785 (1988)), in
//! the gradient-only form of B. Miehlich, A. Savin, H. Stoll and H. Preuss, Chem. Phys. Lett.
//! 157, 200 (1989), which removes the Laplacian by partial integration.
//!
//! With n = n↑ + n↓, `Z = 1/(1 + d n^{−1/3})`, `ω = e^{−c n^{−1/3}} Z n^{−11/3}`,
//! `δ = (c + dZ) n^{−1/3}`, `C_F = (3/10)(3π²)^{2/3}` and σ = σ↑↑ + 2σ↑↓ + σ↓↓ = |∇n|²:
//!
//! `e_c = −4a Z n↑n↓/n − ab ω { n↑n↓ [ 2^{11/3} C_F (n↑^{8/3} + n↓^{8/3}) + (47/18 − 7δ/18) σ
//!        − (5/2 − δ/18)(σ↑↑ + σ↓↓) − ((δ − 11)/9)(n↑σ↑↑ + n↓σ↓↓)/n ]
//!        − (2/3) n² σ + (2/3 n² − n↑²) σ↓↓ + (2/3 n² − n↓²) σ↑↑ }`,
//!
//! a = 0.04918, b = 0.132, c = 0.2533, d = 0.349 (Lee, Yang and Parr's values).
//! The last line of the brace equals `−(4/3) n² σ↑↓ − n↑² σ↓↓ − n↓² σ↑↑` and is evaluated in that
//! form: it avoids cancelling the (2/3) n² terms, and every term of e_c then carries n↑n↓, σ↑↓ or
//! the other channel's gradient. So for a fully spin-polarised density (n, 0) the functional is
//! exactly zero, as LYP was built to be (zero correlation for any fully polarised density, e.g.
//! the hydrogen atom; common practice): the one-electron self-correlation of LYP vanishes.
//!
//! Thresholds: a spin channel at or below [`DENSITY_FLOOR`] is treated as empty, which makes the
//! point fully polarised (or empty) and its energy zero. In the far tail ω underflows to an exact
//! zero through e^{−c n^{−1/3}} before n^{−11/3} (≤ 10¹¹⁰ above the floor) can overflow.
//!
//! The reference values (libxc 7.0.0 via PySCF 2.14, analytic.json) of fully polarised inputs are
//! not zero but ~10⁻¹⁵ hartree/bohr³ per point and up to ~10⁻¹² hartree for the radial
//! self-energies: they are reproduced (to ~10⁻⁴ relative) by this formula with n↓ raised to
//! ≈ 10⁻¹⁴, i.e. they are an artefact of that chain's density floor, and the exact zero is kept.

use super::{DENSITY_FLOOR, Family, Functional, Part, XcPoint};

// Colle and Salvetti's a, b, c, d (fitted to the helium atom), as used by Lee, Yang and Parr;
// atomic units.
const A: f64 = 0.04918;
const B: f64 = 0.132;
const C: f64 = 0.2533;
const D: f64 = 0.349;
/// 2^{11/3} C_F with C_F = (3/10)(3π²)^{2/3}, the Thomas–Fermi kinetic constant.
const TWO_11_3_CF: f64 = 36.462_398_978_764_77;

/// LYP correlation (Miehlich et al. form), energy per volume in hartree/bohr³.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Lyp;

impl Functional for Lyp {
    fn id(&self) -> String {
        "lyp".into()
    }
    fn part(&self) -> Part {
        Part::Correlation
    }
    fn family(&self) -> Family {
        Family::Gga
    }
    fn energy_density(&self, p: &XcPoint) -> f64 {
        let up = p.rho[0] > DENSITY_FLOOR;
        let down = p.rho[1] > DENSITY_FLOOR;
        if !(up && down) {
            // Fully polarised (or empty): every term of the formula carries n↑n↓, σ↑↓ or the
            // empty channel's gradient, so the energy is exactly zero.
            return 0.0;
        }
        let [na, nb] = p.rho;
        let [saa, sab, sbb] = p.sigma;
        let n = na + nb;
        let n13inv = 1.0 / n.cbrt();
        let z = 1.0 / (1.0 + D * n13inv);
        let omega = (-C * n13inv).exp() * z * n13inv.powi(11);
        let delta = (C + D * z) * n13inv;
        let sigma = saa + 2.0 * sab + sbb;
        let nanb = na * nb;
        let ca = na.cbrt();
        let cb = nb.cbrt();
        let local = TWO_11_3_CF * (na * na * ca * ca + nb * nb * cb * cb);
        let mixed = local + (47.0 - 7.0 * delta) / 18.0 * sigma
            - (2.5 - delta / 18.0) * (saa + sbb)
            - (delta - 11.0) / 9.0 * (na * saa + nb * sbb) / n;
        let cross = -(4.0 / 3.0) * n * n * sab - na * na * sbb - nb * nb * saa;
        -4.0 * A * z * nanb / n - A * B * omega * (nanb * mixed + cross)
    }
    fn citation(&self) -> &'static str {
        "C. Lee, W. Yang and R. G. Parr, Phys. Rev. B 37, 785 (1988); \
         B. Miehlich, A. Savin, H. Stoll and H. Preuss, Chem. Phys. Lett. 157, 200 (1989)"
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    fn e(rho: [f64; 2], sigma: [f64; 3]) -> f64 {
        Lyp.energy_density(&XcPoint { rho, sigma, tau: [0.0; 2] })
    }

    /// The brace of the module header written term by term as printed.
    fn as_printed(na: f64, nb: f64, saa: f64, sab: f64, sbb: f64) -> f64 {
        let n = na + nb;
        let m = n.powf(-1.0 / 3.0);
        let z = 1.0 / (1.0 + D * m);
        let omega = (-C * m).exp() * z * n.powf(-11.0 / 3.0);
        let delta = (C + D * z) * m;
        let cf = 0.3 * (3.0 * PI * PI).powf(2.0 / 3.0);
        let s = saa + 2.0 * sab + sbb;
        let brace = na * nb
            * (2.0f64.powf(11.0 / 3.0) * cf * (na.powf(8.0 / 3.0) + nb.powf(8.0 / 3.0))
                + (47.0 / 18.0 - 7.0 / 18.0 * delta) * s
                - (2.5 - delta / 18.0) * (saa + sbb)
                - (delta - 11.0) / 9.0 * (na / n * saa + nb / n * sbb))
            - 2.0 / 3.0 * n * n * s
            + (2.0 / 3.0 * n * n - na * na) * sbb
            + (2.0 / 3.0 * n * n - nb * nb) * saa;
        -4.0 * A * z * na * nb / n - A * B * omega * brace
    }

    #[test]
    fn constant_and_rearrangement() {
        assert!((TWO_11_3_CF / (2.0f64.powf(11.0 / 3.0) * 0.3 * (3.0 * PI * PI).powf(2.0 / 3.0)) - 1.0).abs() < 1e-15);
        for (rho, sigma) in [
            ([0.3, 0.1], [0.02, 0.02 / 3.0, 0.02 / 9.0]),
            ([2.0, 2.0], [3.0, 3.0, 3.0]),
            ([0.01, 0.04], [1e-4, -2e-5, 3e-3]),
        ] {
            let want = as_printed(rho[0], rho[1], sigma[0], sigma[1], sigma[2]);
            assert!((e(rho, sigma) - want).abs() < 1e-13 * want.abs(), "{rho:?}");
        }
    }

    #[test]
    fn vanishes_for_fully_polarised_densities() {
        // LYP has no same-spin correlation, so a one-electron (fully polarised) density has zero
        // correlation energy (Lee, Yang and Parr 1988; common practice).
        for n in [1e-29, 1e-6, 0.1, 1.0, 1e4] {
            for s in [0.0, 1e-3, 1.0, 1e30] {
                assert_eq!(e([n, 0.0], [s, 0.0, 0.0]), 0.0);
                assert_eq!(e([0.0, n], [0.0, 0.0, s]), 0.0);
            }
        }
        // …while the same total density shared between the spins does correlate.
        assert!(e([0.5, 0.5], [0.1, 0.1, 0.1]) < 0.0);
    }

    #[test]
    fn spin_symmetric() {
        let (x, y) = (e([0.3, 0.1], [0.02, 0.004, 0.003]), e([0.1, 0.3], [0.003, 0.004, 0.02]));
        assert!((x - y).abs() < 1e-15 * x.abs());
    }

    #[test]
    fn uniform_limit_is_the_colle_salvetti_local_term() {
        // σ → 0 for the unpolarised gas the formula reduces to
        // e = −a n Z (1 + b C_F e^{−c n^{−1/3}}), the local part of Lee, Yang and Parr (1988).
        for n in [1e-3f64, 0.1, 1.0, 10.0] {
            let m = n.powf(-1.0 / 3.0);
            let cf = 0.3 * (3.0 * PI * PI).powf(2.0 / 3.0);
            let want = -A * n / (1.0 + D * m) * (1.0 + B * cf * (-C * m).exp());
            let got = e([0.5 * n, 0.5 * n], [0.0; 3]);
            assert!((got - want).abs() < 1e-14 * want.abs(), "n={n}: {got} vs {want}");
        }
    }

    #[test]
    fn finite_in_the_limits() {
        for n in [2e-30, 1e-20, 1e-8, 1.0, 1e8] {
            for s in [0.0, 1.0, 1e10, 1e60] {
                let v = e([0.6 * n, 0.4 * n], [s, 0.5 * s, s]);
                assert!(v.is_finite(), "n={n} σ={s}: {v}");
            }
        }
        assert_eq!(e([0.0, 0.0], [0.0; 3]), 0.0);
        assert_eq!(e([1e-31, 1e-31], [1.0, 1.0, 1.0]), 0.0);
    }
}
