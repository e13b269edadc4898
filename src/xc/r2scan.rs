//! r²SCAN meta-GGA exchange and correlation (J. W. Furness, A. D. Kaplan, J. Ning, J. P. Perdew
//! and J. Sun, J. Phys. Chem. Lett. 11, 8208 (2020); erratum J. Phys. Chem. Lett. 11, 9248
//! (2020)).
//!
//! SCAN (see [`super::scan`]) with two regularisations and the gradient expansion restored:
//! the iso-orbital indicator is `ᾱ = (τ − τ_W)/(τ_unif + ητ_W)` (spin-resolved for correlation,
//! `τ_unif d_s(ζ) + ητ_W`), η = 10⁻³, and the switching functions are the polynomials
//! `f(ᾱ) = Σ_{i=0}^{7} c_i ᾱ^i` for ᾱ ≤ 2.5 (the SCAN form `−d e^{c₂/(1−ᾱ)}` above), with the
//! coefficients of the rSCAN construction (A. P. Bartók and J. R. Yates, J. Chem. Phys. 150,
//! 161101 (2019)).
//!
//! Exchange: `F_x = {h₁ˣ(x) + f_x(ᾱ)[h₀ˣ − h₁ˣ(x)]} g_x(p)` with
//! `x = (C_η C₂ₓ e^{−p²/d_{p2}⁴} + μ_AK) p`, `C_η = 20/27 + 5η/3`,
//! `C₂ₓ = (h₀ˣ − 1) Σ i c_iˣ ≈ −0.162742` (so that F_x = 1 + μ_AK p + … for slowly varying
//! densities), d_{p2} = 0.361; h₁ˣ, g_x, h₀ˣ, k₁, a₁ as in SCAN.
//!
//! Correlation: `ε_c = ε_c¹ + f_c(ᾱ)(ε_c⁰ − ε_c¹)`, ε_c⁰ as in SCAN, and
//! `ε_c¹ = ε_c^{LSDA} + γφ³ ln{1 + w₁[1 − (1 + 4(At² − Δy))^{−1/4}]}` with the correction
//! `Δy = Δf_c2/(27γ d_s φ³ w₁) {20 r_s [G_c ∂ε_c^{LDA0}/∂r_s − ∂ε_c^{LSDA}/∂r_s]
//! − 45η [G_c ε_c^{LDA0} − ε_c^{LSDA}]} p e^{−p²/d_{p2}⁴}`, `Δf_c2 = Σ i c_iᶜ`, which cancels the
//! second-order gradient term that f_c'(1) ≠ 0 would otherwise add. Input conditioning and the
//! PW92 digits are those of SCAN correlation.

use super::pw92;
use super::scan::{
    self, C2C, C2X, DC, DX, Eps1Parts, GAMMA, H0X, MU_AK, SpinInput, eps_lda0, eps0, gc_zeta, gx, h1x, meta_exchange,
};
use super::{Family, Functional, Part, XcPoint};

/// Density threshold (electrons/bohr³) of r²SCAN exchange in the reference implementation (its
/// per-functional default, libxc 7.0.0 source; correlation uses
/// [`scan::SCAN_DENSITY_THRESHOLD`]); the conditioning is described in [`super::scan`].
pub const R2SCAN_X_DENSITY_THRESHOLD: f64 = 1e-11;

/// η of the regularised ᾱ.
const ETA: f64 = 1e-3;
/// d_{p2} of the damping e^{−p²/d_{p2}⁴}.
const DP2: f64 = 0.361;
/// Polynomial f_x(ᾱ) coefficients c₀…c₇ (rSCAN, Bartók and Yates 2019; digits from memory,
/// checked by the tests and the reference point values).
const CX: [f64; 8] =
    [1.0, -0.667, -0.4445555, -0.663086601049, 1.451297044490, -0.887998041597, 0.234528941479, -0.023185843322];
/// Polynomial f_c(ᾱ) coefficients c₀…c₇ (as for f_x).
const CC: [f64; 8] =
    [1.0, -0.64, -0.4352, -1.535685604549, 3.061560252175, -1.915710236206, 0.516884468372, -0.051848879792];

/// f(ᾱ): the degree-7 polynomial up to ᾱ = 2.5, −d e^{c₂/(1−ᾱ)} beyond.
fn switch(alpha: f64, c: &[f64; 8], c2: f64, d: f64) -> f64 {
    if alpha <= 2.5 { c.iter().rev().fold(0.0, |acc, &ci| acc * alpha + ci) } else { -d * (c2 / (1.0 - alpha)).exp() }
}

/// Σ i c_i = f'(1).
fn slope_at_one(c: &[f64; 8]) -> f64 {
    c.iter().enumerate().map(|(i, &ci)| i as f64 * ci).sum()
}

/// r²SCAN exchange enhancement F_x(p, α) (α the unregularised SCAN indicator).
fn r2scan_fx(p: f64, alpha: f64) -> f64 {
    // τ_W/τ_unif = 5p/3, so ᾱ = α/(1 + 5ηp/3).
    let alpha_bar = alpha / (1.0 + ETA * 5.0 / 3.0 * p);
    let c_eta = 20.0 / 27.0 + ETA * 5.0 / 3.0;
    let c2x = (H0X - 1.0) * slope_at_one(&CX);
    let x = (c_eta * c2x * (-(p * p) / DP2.powi(4)).exp() + MU_AK) * p;
    let h1 = h1x(x);
    (h1 + switch(alpha_bar, &CX, C2X, DX) * (H0X - h1)) * gx(p)
}

/// ∂ε_c^{LDA0}/∂r_s, hartree/bohr.
fn eps_lda0_slope(rs: f64) -> f64 {
    let den = 1.0 + scan::B2C * rs.sqrt() + scan::B3C * rs;
    scan::B1C * (0.5 * scan::B2C / rs.sqrt() + scan::B3C) / (den * den)
}

/// r²SCAN exchange.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct R2scanExchange;

impl Functional for R2scanExchange {
    fn id(&self) -> String {
        "r2scan".into()
    }
    fn part(&self) -> Part {
        Part::Exchange
    }
    fn family(&self) -> Family {
        Family::MetaGga
    }
    fn energy_density(&self, p: &XcPoint) -> f64 {
        meta_exchange(p, R2SCAN_X_DENSITY_THRESHOLD, r2scan_fx)
    }
    fn citation(&self) -> &'static str {
        "J. W. Furness, A. D. Kaplan, J. Ning, J. P. Perdew and J. Sun, J. Phys. Chem. Lett. 11, 8208 (2020); \
         erratum 11, 9248 (2020)"
    }
}

/// r²SCAN correlation.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct R2scanCorrelation;

impl Functional for R2scanCorrelation {
    fn id(&self) -> String {
        "r2scan".into()
    }
    fn part(&self) -> Part {
        Part::Correlation
    }
    fn family(&self) -> Family {
        Family::MetaGga
    }
    fn energy_density(&self, p: &XcPoint) -> f64 {
        let Some(s) = SpinInput::new(p) else {
            return 0.0;
        };
        let e = Eps1Parts::new(&s);
        let ds = s.spin_mean(5);
        let gc = gc_zeta(&s);
        let lda0 = eps_lda0(s.rs);
        let bracket = 20.0 * s.rs * (gc * eps_lda0_slope(s.rs) - pw92::epsilon_slope(pw92::Pw92Params::Refined, s.rs, s.zeta))
            - 45.0 * ETA * (gc * lda0 - e.lsda);
        let dy = slope_at_one(&CC) / (27.0 * GAMMA * ds * e.phi3 * e.w1)
            * bracket
            * s.p
            * (-(s.p * s.p) / DP2.powi(4)).exp();
        let eps1 = e.eps1(e.a(s.rs) * e.t2 - dy);
        let alpha_bar = s.tau_excess / (s.tau_unif * ds + ETA * s.tau_w);
        s.energy_density(eps1 + switch(alpha_bar, &CC, C2C, DC) * (eps0(&s) - eps1))
    }
    fn citation(&self) -> &'static str {
        "J. W. Furness, A. D. Kaplan, J. Ning, J. P. Perdew and J. Sun, J. Phys. Chem. Lett. 11, 8208 (2020); \
         erratum 11, 9248 (2020)"
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::xc::scan::checks::*;
    use crate::xc::scan::{SCAN_DENSITY_THRESHOLD, ScanExchange};

    #[test]
    fn uniform_gas_limits() {
        // Common practice: r²SCAN reduces to LSDA for the uniform gas; Σc_i = f(1) is 0 only to
        // the ~1e-12 of the printed coefficients.
        exchange_uniform_limit(&R2scanExchange, R2SCAN_X_DENSITY_THRESHOLD, 1e-12);
        correlation_uniform_limit(&R2scanCorrelation, 1e-13);
    }

    #[test]
    fn polynomials_join_the_scan_tails_smoothly() {
        // The rSCAN polynomials match −d e^{c₂/(1−ᾱ)} at ᾱ = 2.5 in value, slope and curvature
        // (Bartók and Yates 2019), start at 1 and vanish at ᾱ = 1.
        for (c, c2, d) in [(&CX, C2X, DX), (&CC, C2C, DC)] {
            let poly = |a: f64| switch(a, c, c2, d);
            let tail = |a: f64| -d * (c2 / (1.0 - a)).exp();
            let h = 1e-4;
            let (a, b) = (2.5 - 2.0 * h, 2.5 + 2.0 * h);
            let slope = |f: &dyn Fn(f64) -> f64, x: f64| (f(x + h) - f(x - h)) / (2.0 * h);
            let curv = |f: &dyn Fn(f64) -> f64, x: f64| (f(x + h) - 2.0 * f(x) + f(x - h)) / (h * h);
            assert!((poly(2.5) - tail(2.5)).abs() < 1e-9);
            assert!((slope(&poly, a) - slope(&tail, b)).abs() < 1e-3);
            assert!((curv(&poly, a) - curv(&tail, b)).abs() < 1e-2);
            assert!(poly(0.0) == 1.0 && poly(1.0).abs() < 1e-11);
        }
    }

    #[test]
    fn exchange_restores_the_second_order_gradient_expansion() {
        // Published C₂ₓ ≈ −0.162742 (Furness et al. 2020; value from memory). With the
        // gradient-expansion α = 1 − (20/27)p (after integration by parts; Furness et al. 2020),
        // F_x = 1 + μ_AK p + O(p²); without the C_η C₂ₓ term the slope would be ≈ 0.244.
        assert!(((H0X - 1.0) * slope_at_one(&CX) + 0.162742).abs() < 1e-6);
        for p in [1e-5, 1e-4] {
            let slope = (r2scan_fx(p, 1.0 - 20.0 / 27.0 * p) - 1.0) / p;
            assert!((slope - MU_AK).abs() < 1e-3 * MU_AK, "p={p}: {slope}");
        }
    }

    #[test]
    fn single_orbital_exchange_is_that_of_scan() {
        // τ = τ_W gives α = ᾱ = 0 and f(0) = 1 in both, so F_x = h₀ˣ g_x(p) in both (the
        // regularisation keeps SCAN's single-orbital limit); only the density floors differ.
        for (n, g) in [(0.1, 0.5), (1e-3, 4.0), (3.0, 0.01), (1e-6, 50.0)] {
            let pt = point([n, 0.0], g, 1.0);
            let floors = (n + SCAN_DENSITY_THRESHOLD) / (n + R2SCAN_X_DENSITY_THRESHOLD);
            let (r2, s) = (R2scanExchange.energy_density(&pt), ScanExchange.energy_density(&pt));
            assert!((r2 / s / floors - 1.0).abs() < 1e-13, "n={n}: {r2} vs {s}");
        }
    }

    #[test]
    fn hydrogen_atom_exchange_is_minus_five_sixteenths() {
        // Kept from SCAN's single-orbital norm; reference −0.3124985 (libxc 7.0.0 via PySCF
        // 2.14, analytic.json).
        let e = hydrogen(&R2scanExchange, 1.0);
        assert!((e + 5.0 / 16.0).abs() < 3e-6, "{e}");
    }

    #[test]
    fn exchange_channels_at_the_threshold_contribute_nothing() {
        // The reference implementation's r²SCAN exchange threshold, 1e-11 electrons/bohr³.
        let pt = point([5e-12, 0.0], 1.0, 1.5);
        assert_eq!(R2scanExchange.energy_density(&pt), 0.0);
        assert!(ScanExchange.energy_density(&pt) < 0.0);
    }

    #[test]
    fn one_electron_correlation() {
        one_electron_correlation_vanishes(&R2scanCorrelation);
    }

    #[test]
    fn finite_for_tiny_densities_and_huge_gradients() {
        finite_everywhere(&R2scanExchange);
        finite_everywhere(&R2scanCorrelation);
    }

    #[test]
    fn lda0_slope_matches_a_finite_difference() {
        let h = 1e-6;
        let fd = (eps_lda0(1.0 + h) - eps_lda0(1.0 - h)) / (2.0 * h);
        assert!((eps_lda0_slope(1.0) - fd).abs() < 1e-9);
    }
}
