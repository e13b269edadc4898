//! Perdew–Burke–Ernzerhof (PBE) exchange and correlation (J. P. Perdew, K. Burke and
//! M. Ernzerhof, Phys. Rev. Lett. 77, 3865 (1996); erratum Phys. Rev. Lett. 78, 1396 (1997)).
//!
//! Exchange (eq. 14): `e_x(n, σ) = e_x^{LDA}(n) F_x(s)` for an unpolarised density, with
//! `s = |∇n| / (2 k_F n)`, `k_F = (3π² n)^{1/3}` and `F_x(s) = 1 + κ − κ/(1 + μ s²/κ)`,
//! κ = 0.804, μ = β π²/3; spin-resolved by exact spin scaling.
//!
//! Correlation (eqs. 3, 4, 7, 8): `e_c = n [ε_c^{unif}(r_s, ζ) + H(r_s, ζ, t)]` with
//! `H = γ φ³ ln[1 + (β/γ) t² (1 + A t²)/(1 + A t² + A² t⁴)]`,
//! `A = (β/γ) / (exp(−ε_c^{unif}/(γ φ³)) − 1)`, `φ = [(1+ζ)^{2/3} + (1−ζ)^{2/3}]/2`,
//! `t = |∇n| / (2 φ k_s n)`, `k_s = (4 k_F/π)^{1/2}`, `γ = (1 − ln 2)/π²`,
//! β = 0.06672455060314922, and ε_c^{unif} the PW92 correlation with the refined parameter
//! digits ([`Pw92Params::Refined`]), as the reference implementation builds PBE.
//!
//! Threshold: as in the reference implementation, correlation is evaluated with each spin
//! density raised to at least [`CORRELATION_SPIN_DENSITY_THRESHOLD`] (10⁻¹² bohr⁻³), which keeps
//! ζ short of ±1 where the derivatives of φ(ζ) diverge, and points whose total density is below
//! it contribute nothing. ε_c of the adjusted densities is weighted by the true density n, so
//! the threshold adds no electrons. At a fully polarised point the adjustment changes e_c by a
//! relative amount of order (10⁻¹²/n)^{2/3} (4·10⁻⁶ at n = 10⁻³), far above the agreement
//! sought with the reference implementation, so it is kept.

use super::pw92::{self, Pw92Params};
use super::{DENSITY_FLOOR, Family, Functional, Part, XcPoint, lda_exchange_unpolarized, spin_scaled_exchange};
use std::f64::consts::{LN_2, PI};

/// β of the PBE correlation gradient term (the high-density second-order gradient coefficient),
/// dimensionless. The paper prints 0.066725; these longer digits are the reference
/// implementation's (reference: libxc 7.0.0 via PySCF 2.14, analytic.json, agreement to 1e-13).
pub const BETA: f64 = 0.06672455060314922;
/// κ of PBE exchange (from the Lieb–Oxford bound), dimensionless.
pub const KAPPA: f64 = 0.804;

/// Spin densities below this (bohr⁻³) are raised to it in PBE correlation, and total densities
/// below it give zero correlation. reference: libxc 7.0.0 via PySCF 2.14, analytic.json point
/// values — the fully polarised points are reproduced to 1e-13 with 10⁻¹² and miss by over 1e-9
/// with 10⁻¹³ or 10⁻¹¹.
pub const CORRELATION_SPIN_DENSITY_THRESHOLD: f64 = 1e-12;
// The total-density test against this threshold then also enforces the common floor.
const _: () = assert!(CORRELATION_SPIN_DENSITY_THRESHOLD > DENSITY_FLOOR);

/// μ = β π²/3 of PBE exchange (cancels the correlation gradient term at small s), dimensionless.
fn mu() -> f64 {
    BETA * PI * PI / 3.0
}

/// γ = (1 − ln 2)/π², dimensionless.
fn gamma() -> f64 {
    (1.0 - LN_2) / (PI * PI)
}

/// `q/(1 + q)` for q ≥ 0 without inf/inf when q overflows.
fn saturating_ratio(q: f64) -> f64 {
    if q <= 1.0 { q / (1.0 + q) } else { 1.0 / (1.0 + 1.0 / q) }
}

/// PBE exchange enhancement factor F_x(s) at reduced gradient s (dimensionless).
fn exchange_enhancement(s2: f64) -> f64 {
    // 1 + κ − κ/(1 + μs²/κ) = 1 + κ·q/(1 + q) with q = μs²/κ, free of the κ − κ cancellation.
    1.0 + KAPPA * saturating_ratio(mu() * s2 / KAPPA)
}

/// PBE exchange energy per volume of an unpolarised density n (bohr⁻³) with |∇n|² = sigma
/// (bohr⁻⁸), hartree/bohr³. Callers guarantee n above the density floor.
fn exchange_unpolarized(n: f64, sigma: f64) -> f64 {
    let kf = (3.0 * PI * PI * n).cbrt();
    let s2 = sigma.max(0.0) / (4.0 * kf * kf * n * n);
    lda_exchange_unpolarized(n) * exchange_enhancement(s2)
}

/// PBE exchange, a GGA.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct PbeExchange;

impl Functional for PbeExchange {
    fn id(&self) -> String {
        "pbe".into()
    }
    fn part(&self) -> Part {
        Part::Exchange
    }
    fn family(&self) -> Family {
        Family::Gga
    }
    /// Exchange energy per volume, hartree/bohr³; channels below the density floor give 0.
    fn energy_density(&self, p: &XcPoint) -> f64 {
        spin_scaled_exchange(p, |n, sigma, _| exchange_unpolarized(n, sigma))
    }
    fn citation(&self) -> &'static str {
        "J. P. Perdew, K. Burke and M. Ernzerhof, Phys. Rev. Lett. 77, 3865 (1996); 78, 1396(E) (1997)"
    }
}

/// Spin-scaling factor φ(ζ) = [(1+ζ)^{2/3} + (1−ζ)^{2/3}]/2, with (1 ± ζ) ≤ 0 contributing 0.
fn phi(zeta: f64) -> f64 {
    let c = |x: f64| if x > 0.0 { x.cbrt() * x.cbrt() } else { 0.0 };
    0.5 * (c(1.0 + zeta) + c(1.0 - zeta))
}

/// PBE gradient correction H (hartree per electron) at uniform-gas correlation `eps_unif`
/// (hartree), spin factor φ and squared reduced gradient t².
fn gradient_correction(eps_unif: f64, phi: f64, t2: f64) -> f64 {
    let (beta, gamma) = (BETA, gamma());
    let phi3 = phi * phi * phi;
    // expm1: exact as ε_unif → 0 in the low-density tail, where A grows like 1/|ε_unif|.
    let a = beta / gamma / (-eps_unif / (gamma * phi3)).exp_m1();
    let u = a * t2;
    // (β/γ) t² (1 + u)/(1 + u + u²); for u > 1 the same divided through by u², so that u² and
    // t² cannot overflow (y → β/(γA) as t → ∞).
    let y = if u <= 1.0 {
        beta / gamma * t2 * (1.0 + u) / (1.0 + u + u * u)
    } else {
        let v = 1.0 / u;
        beta / gamma / a * (1.0 + v) / (1.0 + v + v * v)
    };
    gamma * phi3 * y.ln_1p()
}

/// PBE correlation energy per electron (hartree) of spin densities n↑, n↓ (bohr⁻³, positive)
/// with |∇n|² = sigma (bohr⁻⁸) for the total density.
fn epsilon_c(up: f64, down: f64, sigma: f64) -> f64 {
    let n = up + down;
    let zeta = ((up - down) / n).clamp(-1.0, 1.0);
    let eps_unif = pw92::epsilon(Pw92Params::Refined, pw92::wigner_seitz_radius(n), zeta);
    let phi = phi(zeta);
    let kf = (3.0 * PI * PI * n).cbrt();
    let ks2 = 4.0 * kf / PI;
    // t² = |∇n|²/(2φ k_s n)²; a slightly negative σ from round-off counts as zero.
    let t2 = sigma.max(0.0) / (4.0 * phi * phi * ks2 * n * n);
    eps_unif + gradient_correction(eps_unif, phi, t2)
}

/// PBE correlation, a GGA.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct PbeCorrelation;

impl Functional for PbeCorrelation {
    fn id(&self) -> String {
        "pbe".into()
    }
    fn part(&self) -> Part {
        Part::Correlation
    }
    fn family(&self) -> Family {
        Family::Gga
    }
    /// Correlation energy per volume, hartree/bohr³; zero where n↑ + n↓ is below
    /// [`CORRELATION_SPIN_DENSITY_THRESHOLD`] (see the module docs for the spin densities).
    fn energy_density(&self, p: &XcPoint) -> f64 {
        let n = p.rho[0] + p.rho[1];
        if n < CORRELATION_SPIN_DENSITY_THRESHOLD {
            return 0.0;
        }
        let up = p.rho[0].max(CORRELATION_SPIN_DENSITY_THRESHOLD);
        let down = p.rho[1].max(CORRELATION_SPIN_DENSITY_THRESHOLD);
        let sigma = p.sigma[0] + 2.0 * p.sigma[1] + p.sigma[2];
        n * epsilon_c(up, down, sigma)
    }
    fn citation(&self) -> &'static str {
        "J. P. Perdew, K. Burke and M. Ernzerhof, Phys. Rev. Lett. 77, 3865 (1996); 78, 1396(E) (1997)"
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::xc::slater::XAlpha;

    fn rel(a: f64, b: f64) -> f64 {
        ((a - b) / b).abs()
    }

    #[test]
    fn exchange_uniform_limit_and_gradient_coefficient() {
        // F_x(0) = 1 and F_x = 1 + μ s² + O(s⁴) with μ = βπ²/3 ≈ 0.21951 (PBE 1996, eq. 14 and
        // the text after it).
        let lsda = XAlpha::lsda();
        for rho in [[0.3, 0.0], [0.2, 0.05], [1e-20, 0.0]] {
            let p = XcPoint { rho, ..XcPoint::default() };
            assert!(rel(PbeExchange.energy_density(&p), lsda.energy_density(&p)) < 1e-14);
        }
        assert!((mu() - 0.21951).abs() < 1e-5);
        let s2 = 1e-8;
        assert!(rel((exchange_enhancement(s2) - 1.0) / s2, mu()) < 1e-6);
    }

    #[test]
    fn exchange_respects_lieb_oxford_bound_and_spin_scaling() {
        // F_x → 1 + κ as s → ∞ (PBE 1996, eq. 14), also where s² overflows.
        for s2 in [1e6, 1e300, f64::INFINITY] {
            let f = exchange_enhancement(s2);
            assert!(f <= 1.0 + KAPPA && f > 1.0 + KAPPA - 1e-5, "s²={s2}: {f}");
        }
        // Exact spin scaling (Oliver and Perdew 1979): channels add.
        let p = XcPoint { rho: [0.3, 0.1], sigma: [0.02, 0.005, 0.004], tau: [0.0; 2] };
        let up = XcPoint { rho: [0.3, 0.0], sigma: [0.02, 0.0, 0.0], tau: [0.0; 2] };
        let down = XcPoint { rho: [0.0, 0.1], sigma: [0.0, 0.0, 0.004], tau: [0.0; 2] };
        let sum = PbeExchange.energy_density(&up) + PbeExchange.energy_density(&down);
        assert!(rel(PbeExchange.energy_density(&p), sum) < 1e-15);
        // Common practice: zero and sub-floor densities give 0, tiny ones stay finite.
        assert_eq!(PbeExchange.energy_density(&XcPoint::default()), 0.0);
        assert_eq!(PbeExchange.energy_density(&XcPoint::polarized(1e-31, 1.0, 0.0)), 0.0);
        for (n, g) in [(1e-29, 1e-20), (1e-25, 1.0), (1e-3, 1e300)] {
            let e = PbeExchange.energy_density(&XcPoint::polarized(n, g, 0.0));
            assert!(e.is_finite() && e < 0.0, "n={n} σ={g}: {e}");
        }
    }

    #[test]
    fn correlation_uniform_limit_is_refined_pw92() {
        // H(t = 0) = 0, so σ → 0 gives the uniform-gas PW92 value (PBE 1996, eq. 3).
        for (rho, zeta) in [([0.3, 0.3], 0.0), ([0.3, 0.1], 0.5), ([2e-3, 1e-3], 1.0 / 3.0)] {
            let p = XcPoint { rho, ..XcPoint::default() };
            let n: f64 = rho[0] + rho[1];
            let want = n * pw92::epsilon(Pw92Params::Refined, pw92::wigner_seitz_radius(n), zeta);
            assert!(rel(PbeCorrelation.energy_density(&p), want) < 1e-14, "{rho:?}");
        }
    }

    #[test]
    fn correlation_gradient_expansion_and_large_gradient_limit() {
        // Small t: H = β φ³ t² + O(t⁴) (PBE 1996, condition (a) before eq. 4).
        let (eps, phi) = (-0.05, 0.8);
        let t2 = 1e-8;
        assert!(rel(gradient_correction(eps, phi, t2), BETA * phi.powi(3) * t2) < 1e-6);
        // Large t: H → −ε_unif, so correlation vanishes (PBE 1996, condition (b)); no overflow
        // even where u² = (A t²)² would.
        for t2 in [1e8, 1e200, 1e306] {
            let h = gradient_correction(eps, phi, t2);
            assert!(h.is_finite() && (h + eps).abs() < 1e-6 * eps.abs(), "t²={t2}: {h}");
        }
        // The same through the public path: a steep one-electron tail has ε_c → 0⁻.
        let (n, g) = (1e-6, 1e10);
        let e = PbeCorrelation.energy_density(&XcPoint::polarized(n, g, 0.0));
        assert!(e.is_finite() && e <= 0.0 && e > -1e-6 * n, "{e}");
    }

    #[test]
    fn correlation_thresholds_and_symmetry() {
        let c = PbeCorrelation;
        // Common practice: zero density gives zero, no NaN anywhere below or near the thresholds.
        assert_eq!(c.energy_density(&XcPoint::default()), 0.0);
        assert_eq!(c.energy_density(&XcPoint::polarized(0.9e-12, 1e-20, 0.0)), 0.0);
        for (n, g) in [(1.1e-12, 0.0), (1.1e-12, 1e-20), (1e-10, 1e-4), (1e6, 1e12), (1e-3, 1e300)] {
            let e = c.energy_density(&XcPoint::polarized(n, g, 0.0));
            assert!(e.is_finite() && e <= 0.0, "n={n} σ={g}: {e}");
        }
        // Spin densities below the threshold are raised to it, so ε_c of a fully polarised point
        // does not depend on how small n↓ is; e_c is ε_c weighted by the true n (module docs).
        let p0 = XcPoint { rho: [0.05, 0.0], sigma: [0.01, 0.0, 0.0], tau: [0.0; 2] };
        let p1 = XcPoint { rho: [0.05, 1e-14], ..p0 };
        assert!(rel(c.energy_density(&p0) / 0.05, c.energy_density(&p1) / (0.05 + 1e-14)) < 1e-15);
        // Correlation is symmetric under exchanging the spin labels (common practice).
        let a = XcPoint { rho: [0.3, 0.1], sigma: [0.02, 0.005, 0.004], tau: [0.0; 2] };
        let b = XcPoint { rho: [0.1, 0.3], sigma: [0.004, 0.005, 0.02], tau: [0.0; 2] };
        assert!(rel(c.energy_density(&a), c.energy_density(&b)) < 1e-15);
    }
}
