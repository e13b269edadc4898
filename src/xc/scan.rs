//! SCAN meta-GGA exchange and correlation (J. Sun, A. Ruzsinszky and J. P. Perdew, Phys. Rev.
//! Lett. 115, 036402 (2015), with its supplementary material).
//!
//! Exchange, from the unpolarised form by exact spin scaling:
//! `e_x = e_x^LDA(n) F_x(p, α)`, `F_x = {h₁ˣ(p, α) + f_x(α)[h₀ˣ − h₁ˣ(p, α)]} g_x(p)`, with
//! `p = |∇n|²/[4(3π²)^{2/3} n^{8/3}]`, `α = (τ − τ_W)/τ_unif`, `τ_W = |∇n|²/8n`,
//! `τ_unif = (3/10)(3π²)^{2/3} n^{5/3}`, `h₁ˣ = 1 + k₁ − k₁/(1 + x/k₁)`,
//! `x = μ_AK p [1 + (b₄p/μ_AK) e^{−|b₄|p/μ_AK}] + [b₁p + b₂(1 − α) e^{−b₃(1−α)²}]²`,
//! `f_x(α) = e^{−c₁ₓα/(1−α)}` (α < 1), `−dₓ e^{c₂ₓ/(1−α)}` (α > 1), `g_x = 1 − e^{−a₁/p^{1/4}}`.
//!
//! Correlation: `ε_c = ε_c¹ + f_c(α)(ε_c⁰ − ε_c¹)` with the spin-resolved
//! `α = (τ − τ_W)/[τ_unif d_s(ζ)]`, `d_s = [(1+ζ)^{5/3} + (1−ζ)^{5/3}]/2`, τ and τ_W of the total
//! density;
//! `ε_c¹ = ε_c^{LSDA} + γφ³ ln{1 + w₁[1 − (1 + 4At²)^{−1/4}]}`, `w₁ = e^{−ε_c^{LSDA}/γφ³} − 1`,
//! `A = β(r_s)/γw₁`, `β(r_s) = β₀(1 + 0.1r_s)/(1 + 0.1778r_s)`, `γ = (1 − ln 2)/π²`,
//! `t² = (3π²/16)^{2/3} p/(φ² r_s)`, `φ = [(1+ζ)^{2/3} + (1−ζ)^{2/3}]/2`;
//! `ε_c⁰ = {ε_c^{LDA0} + b₁c ln[1 + w₀(1 − (1 + 4χ_∞p)^{−1/4})]} G_c(ζ)`,
//! `ε_c^{LDA0} = −b₁c/(1 + b₂c r_s^{1/2} + b₃c r_s)`, `w₀ = e^{−ε_c^{LDA0}/b₁c} − 1`,
//! `G_c = [1 − 2.363(d_x(ζ) − 1)](1 − ζ¹²)`, `d_x = [(1+ζ)^{4/3} + (1−ζ)^{4/3}]/2`;
//! `f_c` as `f_x` with c₁c, c₂c, d_c. ε_c^{LSDA} is PW92 with the refined digits
//! ([`Pw92Params::Refined`]).
//!
//! Digits as in the reference implementation (libxc 7.0.0; found by agreement with its point
//! values to ~1e-15): β₀ = 0.06672455060314922 (PBE's β to more digits; the paper prints
//! 0.066725), the G_c coefficient 2.363 (the paper prints 2.3631), and
//! χ_∞ = (3π²/16)^{2/3} β(∞)/(c_x − f₀) with β(∞) = 0.066725·0.1/0.1778,
//! c_x = −(3/4π)(9π/4)^{1/3} and f₀ = −0.9 (the supplement prints 0.128026).
//!
//! Input conditioning (shared with r²SCAN), as in the reference implementation: a point whose
//! total density is below the functional's density threshold is skipped; each spin density is
//! raised to at least that threshold, τ_σ to at least [`TAU_FLOOR`], and σ_σσ is lowered to
//! 8n_στ_σ (so τ_σ ≥ τ_W,σ, and α ≥ 0 in exchange); exchange channels at the threshold contribute
//! nothing; and the energy per particle so obtained is multiplied by the actual density. For a
//! fully polarised one-electron density this leaves a correlation energy of order 10⁻¹¹ Eh
//! instead of exactly zero, as in the reference (which these floors reproduce to ~1e-18 Eh).

use super::pw92::{self, Pw92Params};
use super::{DENSITY_FLOOR, Family, Functional, Part, XcPoint, lda_exchange_unpolarized};

/// (3π²)^{2/3}, dimensionless.
pub(crate) const KF2: f64 = 9.570780000627304;
/// μ_AK = 10/81, the second-order gradient coefficient of exchange.
pub(crate) const MU_AK: f64 = 10.0 / 81.0;
/// k₁ of h₁ˣ.
const K1: f64 = 0.065;
/// h₀ˣ, the single-orbital exchange enhancement.
pub(crate) const H0X: f64 = 1.174;
/// a₁ of g_x.
const A1: f64 = 4.9479;
const C1X: f64 = 0.667;
/// c₂ₓ, dₓ of f_x(α > 1).
pub(crate) const C2X: f64 = 0.8;
pub(crate) const DX: f64 = 1.24;
/// b₂ = (5913/405000)^{1/2}.
const B2X: f64 = 0.12083045973594572;
/// b₁ = (511/13500)/(2b₂).
const B1X: f64 = 0.15663207743548518;
const B3X: f64 = 0.5;
/// b₄ = μ_AK²/k₁ − 1606/18225 − b₁².
const B4X: f64 = 0.12183151020599578;

/// b₁c, b₂c, b₃c of ε_c^{LDA0}.
pub(crate) const B1C: f64 = 0.0285764;
pub(crate) const B2C: f64 = 0.0889;
pub(crate) const B3C: f64 = 0.125541;
/// χ_∞ of g_∞(p) = (1 + 4χ_∞p)^{−1/4} (definition in the module docs).
const CHI_INF: f64 = 0.12802585262625815;
/// The coefficient of G_c(ζ).
const GC_COEF: f64 = 2.363;
const C1C: f64 = 0.64;
/// c₂c, d_c of f_c(α > 1).
pub(crate) const C2C: f64 = 1.5;
pub(crate) const DC: f64 = 0.7;
/// β₀ of β(r_s).
const BETA0: f64 = 0.06672455060314922;
/// γ = (1 − ln 2)/π² of PBE-type correlation.
pub(crate) const GAMMA: f64 = 0.0310906908696549;
/// (3π²/16)^{2/3} = t² φ² r_s / p.
const T2_FACTOR: f64 = 1.5073033983379012;

/// Density threshold (electrons/bohr³) of SCAN exchange and correlation and r²SCAN correlation in
/// the reference implementation (its per-functional default, libxc 7.0.0 source); see the module
/// docs.
pub const SCAN_DENSITY_THRESHOLD: f64 = 1e-15;
/// Lower bound on τ_σ, hartree/bohr³ (the reference implementation's default τ threshold; value
/// from memory, it moves the one-electron correlation residue by ~1e-5 relative only).
pub const TAU_FLOOR: f64 = 1e-20;

/// A point's spin-resolved input after the reference implementation's conditioning (module
/// docs), and the factor that turns its energy per volume into that of the actual density.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Conditioned {
    /// n↑, n↓, each at least the threshold, electrons/bohr³.
    pub rho: [f64; 2],
    /// σ↑↑, σ↑↓, σ↓↓ with σ_σσ ≤ 8n_στ_σ and |σ↑↓| ≤ (σ↑↑ + σ↓↓)/2, electrons²/bohr⁸.
    pub sigma: [f64; 3],
    /// τ↑, τ↓, each at least [`TAU_FLOOR`], hartree/bohr³.
    pub tau: [f64; 2],
    /// (n↑ + n↓)_actual / (n↑ + n↓)_conditioned.
    pub scale: f64,
}

impl Conditioned {
    /// `None` where the total density is below `threshold` (or [`DENSITY_FLOOR`]).
    pub(crate) fn new(p: &XcPoint, threshold: f64) -> Option<Self> {
        let total = p.rho[0] + p.rho[1];
        // Written to be false for NaN as well.
        if !(total >= threshold && total > DENSITY_FLOOR) {
            return None;
        }
        let rho = [p.rho[0].max(threshold), p.rho[1].max(threshold)];
        let tau = [p.tau[0].max(TAU_FLOOR), p.tau[1].max(TAU_FLOOR)];
        let saa = p.sigma[0].max(0.0).min(8.0 * rho[0] * tau[0]);
        let sbb = p.sigma[2].max(0.0).min(8.0 * rho[1] * tau[1]);
        let mean = 0.5 * (saa + sbb);
        let sab = p.sigma[1].max(-mean).min(mean);
        Some(Conditioned { rho, sigma: [saa, sab, sbb], tau, scale: total / (rho[0] + rho[1]) })
    }
}

/// SCAN-type exchange energy per volume of a spin-resolved point, hartree/bohr³, by exact spin
/// scaling: Σ_σ ½ e_x^LDA(2n_σ) F(p_σ, α_σ) with p and α of the density 2n_σ, after the
/// conditioning with `threshold`. `enhancement(p, α)` is the unpolarised F_x.
pub(crate) fn meta_exchange(p: &XcPoint, threshold: f64, enhancement: impl Fn(f64, f64) -> f64) -> f64 {
    let Some(c) = Conditioned::new(p, threshold) else {
        return 0.0;
    };
    let channel = |n_spin: f64, sigma_spin: f64, tau_spin: f64| {
        if n_spin <= threshold {
            return 0.0;
        }
        let (n, sigma, tau) = (2.0 * n_spin, 4.0 * sigma_spin, 2.0 * tau_spin);
        let n13 = n.cbrt();
        let n53 = n * n13 * n13;
        let p = sigma / (4.0 * KF2 * n53 * n);
        let alpha = (tau - sigma / (8.0 * n)) / (0.3 * KF2 * n53);
        0.5 * lda_exchange_unpolarized(n) * enhancement(p, alpha)
    };
    (channel(c.rho[0], c.sigma[0], c.tau[0]) + channel(c.rho[1], c.sigma[2], c.tau[1])) * c.scale
}

/// SCAN interpolation f(α): e^{−c₁α/(1−α)} for α < 1, −d e^{c₂/(1−α)} for α > 1; both sides
/// tend to 0 at α = 1.
fn scan_switch(alpha: f64, c1: f64, c2: f64, d: f64) -> f64 {
    if alpha < 1.0 {
        (-c1 * alpha / (1.0 - alpha)).exp()
    } else if alpha > 1.0 {
        -d * (c2 / (1.0 - alpha)).exp()
    } else {
        0.0
    }
}

/// g_x(p) = 1 − exp(−a₁/p^{1/4}); 1 at p = 0. `exp_m1` keeps large p (small a₁/p^{1/4}) exact.
pub(crate) fn gx(p: f64) -> f64 {
    if p > 0.0 { -(-A1 / p.sqrt().sqrt()).exp_m1() } else { 1.0 }
}

/// h₁ˣ(x) = 1 + k₁ − k₁/(1 + x/k₁).
pub(crate) fn h1x(x: f64) -> f64 {
    1.0 + K1 - K1 / (1.0 + x / K1)
}

/// SCAN exchange enhancement factor F_x(p, α) of an unpolarised density.
fn scan_fx(p: f64, alpha: f64) -> f64 {
    let oma = 1.0 - alpha;
    let y = B1X * p + B2X * oma * (-B3X * oma * oma).exp();
    let x = MU_AK * p * (1.0 + B4X * p / MU_AK * (-B4X.abs() * p / MU_AK).exp()) + y * y;
    let h1 = h1x(x);
    (h1 + scan_switch(alpha, C1X, C2X, DX) * (H0X - h1)) * gx(p)
}

/// The ingredients of SCAN-type correlation at one point (after [`Conditioned`]).
#[derive(Clone, Copy, Debug)]
pub(crate) struct SpinInput {
    /// Conditioned total density n, electrons/bohr³.
    pub n: f64,
    /// Spin polarisation ζ.
    pub zeta: f64,
    /// Wigner–Seitz radius r_s, bohr.
    pub rs: f64,
    /// p = |∇n|²/[4(3π²)^{2/3} n^{8/3}] of the total density.
    pub p: f64,
    /// τ − τ_W of the total density, hartree/bohr³.
    pub tau_excess: f64,
    /// τ_W = |∇n|²/8n of the total density, hartree/bohr³.
    pub tau_w: f64,
    /// (3/10)(3π²)^{2/3} n^{5/3}, hartree/bohr³ (times d_s(ζ) it is τ_unif of the spin gas).
    pub tau_unif: f64,
    /// Actual over conditioned total density.
    pub scale: f64,
}

impl SpinInput {
    /// `None` where the total density is below the threshold.
    pub(crate) fn new(pt: &XcPoint) -> Option<Self> {
        let c = Conditioned::new(pt, SCAN_DENSITY_THRESHOLD)?;
        let n = c.rho[0] + c.rho[1];
        let sigma = (c.sigma[0] + 2.0 * c.sigma[1] + c.sigma[2]).max(0.0);
        let n13 = n.cbrt();
        let n53 = n * n13 * n13;
        let tau_w = sigma / (8.0 * n);
        Some(SpinInput {
            n,
            zeta: ((c.rho[0] - c.rho[1]) / n).clamp(-1.0, 1.0),
            rs: pw92::wigner_seitz_radius(n),
            p: sigma / (4.0 * KF2 * n53 * n),
            tau_excess: c.tau[0] + c.tau[1] - tau_w,
            tau_w,
            tau_unif: 0.3 * KF2 * n53,
            scale: c.scale,
        })
    }

    /// [(1+ζ)^k + (1−ζ)^k]/2 with k = `thirds`/3: φ (2), d_x (4), d_s (5).
    pub(crate) fn spin_mean(&self, thirds: i32) -> f64 {
        let pw = |x: f64| if x > 0.0 { x.cbrt().powi(thirds) } else { 0.0 };
        0.5 * (pw(1.0 + self.zeta) + pw(1.0 - self.zeta))
    }

    /// Energy per volume from the energy per particle ε (hartree) of the conditioned input.
    pub(crate) fn energy_density(&self, eps: f64) -> f64 {
        self.n * self.scale * eps
    }
}

/// β(r_s) = β₀(1 + 0.1r_s)/(1 + 0.1778r_s).
pub(crate) fn beta_rs(rs: f64) -> f64 {
    BETA0 * (1.0 + 0.1 * rs) / (1.0 + 0.1778 * rs)
}

/// Pieces of ε_c¹: ε_c^{LSDA} (hartree), w₁, φ³ and t².
pub(crate) struct Eps1Parts {
    pub lsda: f64,
    pub w1: f64,
    pub phi3: f64,
    pub t2: f64,
}

impl Eps1Parts {
    pub(crate) fn new(s: &SpinInput) -> Self {
        let lsda = pw92::epsilon(Pw92Params::Refined, s.rs, s.zeta);
        let phi = s.spin_mean(2);
        let phi3 = phi * phi * phi;
        // exp_m1: w₁ ≈ −ε/γφ³ is small in the low-density tail.
        let w1 = (-lsda / (GAMMA * phi3)).exp_m1();
        Eps1Parts { lsda, w1, phi3, t2: T2_FACTOR * s.p / (phi * phi * s.rs) }
    }

    /// A = β(r_s)/(γw₁).
    pub(crate) fn a(&self, rs: f64) -> f64 {
        beta_rs(rs) / (GAMMA * self.w1)
    }

    /// ε_c¹ = ε_c^{LSDA} + γφ³ ln{1 + w₁[1 − (1 + 4y)^{−1/4}]}, hartree (y = At² in SCAN).
    pub(crate) fn eps1(&self, y: f64) -> f64 {
        let g = 1.0 / (1.0 + 4.0 * y).sqrt().sqrt();
        self.lsda + GAMMA * self.phi3 * (self.w1 * (1.0 - g)).ln_1p()
    }
}

/// ε_c^{LDA0}(r_s) = −b₁c/(1 + b₂c r_s^{1/2} + b₃c r_s), hartree.
pub(crate) fn eps_lda0(rs: f64) -> f64 {
    -B1C / (1.0 + B2C * rs.sqrt() + B3C * rs)
}

/// G_c(ζ) = [1 − 2.363(d_x − 1)](1 − ζ¹²).
pub(crate) fn gc_zeta(s: &SpinInput) -> f64 {
    (1.0 - GC_COEF * (s.spin_mean(4) - 1.0)) * (1.0 - s.zeta.powi(12))
}

/// ε_c⁰ = {ε_c^{LDA0} + b₁c ln[1 + w₀(1 − g_∞(p))]} G_c(ζ), hartree.
pub(crate) fn eps0(s: &SpinInput) -> f64 {
    let lda0 = eps_lda0(s.rs);
    let w0 = (-lda0 / B1C).exp_m1();
    let ginf = 1.0 / (1.0 + 4.0 * CHI_INF * s.p).sqrt().sqrt();
    (lda0 + B1C * (w0 * (1.0 - ginf)).ln_1p()) * gc_zeta(s)
}

/// SCAN exchange.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct ScanExchange;

impl Functional for ScanExchange {
    fn id(&self) -> String {
        "scan".into()
    }
    fn part(&self) -> Part {
        Part::Exchange
    }
    fn family(&self) -> Family {
        Family::MetaGga
    }
    fn energy_density(&self, p: &XcPoint) -> f64 {
        meta_exchange(p, SCAN_DENSITY_THRESHOLD, scan_fx)
    }
    fn citation(&self) -> &'static str {
        "J. Sun, A. Ruzsinszky and J. P. Perdew, Phys. Rev. Lett. 115, 036402 (2015)"
    }
}

/// SCAN correlation.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct ScanCorrelation;

impl Functional for ScanCorrelation {
    fn id(&self) -> String {
        "scan".into()
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
        let eps1 = e.eps1(e.a(s.rs) * e.t2);
        let alpha = s.tau_excess / (s.tau_unif * s.spin_mean(5));
        s.energy_density(eps1 + scan_switch(alpha, C1C, C2C, DC) * (eps0(&s) - eps1))
    }
    fn citation(&self) -> &'static str {
        "J. Sun, A. Ruzsinszky and J. P. Perdew, Phys. Rev. Lett. 115, 036402 (2015)"
    }
}

/// Shared checks of the SCAN-family tests (also used by r²SCAN's).
#[cfg(test)]
pub(crate) mod checks {
    use super::*;
    use crate::quadrature::{radial_rule, spherical_self_energy};
    use std::f64::consts::PI;

    /// Spin-resolved point with parallel gradients ∇n_σ = n_σ g x̂ and τ_σ = `t` τ_W,σ
    /// (t = 1 is one orbital per spin).
    pub fn point(rho: [f64; 2], g: f64, t: f64) -> XcPoint {
        let ga = rho[0] * g;
        let gb = rho[1] * g;
        let tw = |gs: f64, n: f64| {
            if n > 0.0 { t * gs * gs / (8.0 * n) } else { 0.0 }
        };
        XcPoint { rho, sigma: [ga * ga, ga * gb, gb * gb], tau: [tw(ga, rho[0]), tw(gb, rho[1])] }
    }

    /// Uniform spin gas: σ = 0 and τ_σ = (3/10)(6π²)^{2/3} n_σ^{5/3}, so α = ᾱ = 1.
    pub fn uniform(rho: [f64; 2]) -> XcPoint {
        let tu = |n: f64| 0.3 * (6.0 * PI * PI).cbrt().powi(2) * n * n.cbrt().powi(2);
        XcPoint { rho, sigma: [0.0; 3], tau: [tu(rho[0]), tu(rho[1])] }
    }

    /// E[n, 0] of the hydrogenic 1s density ζ³/π e^{−2ζr} (τ = τ_W), hartree.
    pub fn hydrogen(f: &dyn Functional, zeta: f64) -> f64 {
        let density = |r: f64| {
            let n = zeta.powi(3) / PI * (-2.0 * zeta * r).exp();
            (n, -2.0 * zeta * n)
        };
        spherical_self_energy(f, density, &radial_rule(4000, 40.0 / zeta))
    }

    /// The exchange of a uniform gas is LSDA exchange (F_x = 1 at p = 0, α = 1), times the
    /// factor n/(n↑' + n↓') of the spin-density floor at `threshold` (module docs).
    pub fn exchange_uniform_limit(f: &dyn Functional, threshold: f64, tol: f64) {
        let lsda = crate::xc::slater::XAlpha::lsda();
        for rho in [[0.3, 0.0], [0.2, 0.05], [1e-3, 1e-3], [40.0, 7.0], [1e-9, 0.0f64]] {
            let floor = (rho[0] + rho[1]) / (rho[0].max(threshold) + rho[1].max(threshold));
            let (got, want) = (f.energy_density(&uniform(rho)), floor * lsda.energy_density(&uniform(rho)));
            assert!(((got - want) / want).abs() < tol, "{rho:?}: {got} vs {want}");
        }
    }

    /// The correlation of a uniform gas is PW92 (refined digits): t = 0 and α = 1.
    pub fn correlation_uniform_limit(f: &dyn Functional, tol: f64) {
        for rho in [[0.3, 0.3], [0.2, 0.05], [1e-3, 2e-4], [40.0, 7.0], [1e-6, 1e-7]] {
            let n = rho[0] + rho[1];
            let zeta = (rho[0] - rho[1]) / n;
            let want = n * pw92::epsilon(Pw92Params::Refined, pw92::wigner_seitz_radius(n), zeta);
            let got = f.energy_density(&uniform(rho));
            assert!(((got - want) / want).abs() < tol, "{rho:?}: {got} vs {want}");
        }
    }

    /// One orbital (ζ = 1, τ = τ_W, so α = 0): correlation vanishes, up to the reference's
    /// spin-density floor (the integrated reference values are ~1e-11 Eh); with τ = 1.5τ_W it
    /// does not.
    pub fn one_electron_correlation_vanishes(f: &dyn Functional) {
        for n in [1e-4, 1e-2, 0.3, 10.0] {
            for g in [0.1, 2.0, 30.0] {
                let single = f.energy_density(&point([n, 0.0], g, 1.0));
                let not_single = f.energy_density(&point([n, 0.0], g, 1.5));
                // The floored n↓ leaves a residue of relative order n↓'/n times powers of p.
                let ok = not_single < 0.0 && single.abs() < 1e-6 * not_single.abs();
                assert!(ok, "n={n} g={g}: {single} {not_single}");
            }
        }
        for zeta in [0.5, 1.0, 2.0] {
            let e = hydrogen(f, zeta);
            assert!(e.abs() < 1e-10, "ζ={zeta}: {e}");
        }
    }

    /// Zero and tiny densities, huge reduced gradients, τ below τ_W and τ = 0: finite values (the
    /// sign is not fixed: SCAN-type correlation may be positive where α > 1 and s is large).
    pub fn finite_everywhere(f: &dyn Functional) {
        assert_eq!(f.energy_density(&XcPoint::default()), 0.0);
        assert_eq!(f.energy_density(&XcPoint::polarized(1e-31, 1e-40, 1e-40)), 0.0);
        for n in [1e-25, 1e-16, 1e-12, 1e-6, 1e-2, 1.0, 1e3, 1e6] {
            for g in [0.0, 1e-8, 1.0, 1e3, 1e8, 1e15] {
                for t in [0.0, 0.5, 1.0, 1.5, 10.0, 1e6] {
                    for rho in [[n, 0.0], [n, n], [n, 0.1 * n], [0.0, n]] {
                        let e = f.energy_density(&point(rho, g, t));
                        assert!(e.is_finite(), "{} {rho:?} g={g} t={t}: {e}", f.id());
                    }
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::checks::*;
    use super::*;
    use std::f64::consts::PI;

    #[test]
    fn constants_match_their_definitions() {
        let close = |a: f64, b: f64| (a - b).abs() <= 4.0 * f64::EPSILON * b.abs();
        assert!(close(KF2, (3.0 * PI * PI).cbrt().powi(2)));
        assert!(close(B2X, (5913.0f64 / 405000.0).sqrt()));
        assert!(close(B1X, 511.0 / 13500.0 / (2.0 * B2X)));
        assert!(close(B4X, MU_AK * MU_AK / K1 - 1606.0 / 18225.0 - B1X * B1X));
        assert!(close(GAMMA, (1.0 - 2f64.ln()) / (PI * PI)));
        assert!(close(T2_FACTOR, (3.0 * PI * PI / 16.0).cbrt().powi(2)));
        let cx = -0.75 / PI * (2.25 * PI).cbrt();
        assert!(close(CHI_INF, T2_FACTOR * 0.066725 * 0.1 / 0.1778 / (cx + 0.9)));
        // The supplement of Sun et al. (2015) prints χ_∞ = 0.128026 and b₄ = 0.1218.
        assert!((CHI_INF - 0.128026).abs() < 5e-7 && (B4X - 0.1218).abs() < 5e-5);
    }

    #[test]
    fn uniform_gas_limits() {
        // Common practice: SCAN reduces to LSDA for the uniform gas (exact constraint).
        exchange_uniform_limit(&ScanExchange, SCAN_DENSITY_THRESHOLD, 1e-14);
        correlation_uniform_limit(&ScanCorrelation, 1e-13);
    }

    #[test]
    fn hydrogen_atom_exchange_is_minus_five_sixteenths() {
        // SCAN is normed to the hydrogen-atom exchange energy −5/16 Eh (Sun et al. 2015); the
        // reference gives −0.3124985 (libxc 7.0.0 via PySCF 2.14, analytic.json). E_x scales
        // linearly with ζ.
        for zeta in [1.0, 2.0, 0.5] {
            let e = hydrogen(&ScanExchange, zeta) / zeta;
            assert!((e + 5.0 / 16.0).abs() < 3e-6, "ζ={zeta}: {e}");
        }
    }

    #[test]
    fn one_orbital_exchange_is_h0x_times_gx() {
        // α = 0 (τ = τ_W) removes the α-dependence: F_x = h₀ˣ g_x(p) (Sun et al. 2015).
        for (n, g) in [(0.1, 0.5), (1e-3, 4.0), (3.0, 0.01)] {
            let pt = point([n, 0.0], g, 1.0);
            let p = 4.0 * pt.sigma[0] / (4.0 * KF2 * (2.0 * n).powf(8.0 / 3.0));
            let floor = n / (n + SCAN_DENSITY_THRESHOLD);
            let want = floor * 0.5 * lda_exchange_unpolarized(2.0 * n) * H0X * gx(p);
            let got = ScanExchange.energy_density(&pt);
            assert!(((got - want) / want).abs() < 1e-12, "{got} vs {want}");
        }
    }

    #[test]
    fn one_electron_correlation() {
        one_electron_correlation_vanishes(&ScanCorrelation);
    }

    #[test]
    fn finite_for_tiny_densities_and_huge_gradients() {
        finite_everywhere(&ScanExchange);
        finite_everywhere(&ScanCorrelation);
    }

    #[test]
    fn large_gradient_exchange_vanishes_as_p_to_the_minus_quarter() {
        // g_x ~ a₁ p^{−1/4} for p → ∞ (Sun et al. 2015): F_x p^{1/4} tends to a constant.
        let f = |p: f64| scan_fx(p, 0.5) * p.sqrt().sqrt();
        let (a, b) = (f(1e16), f(1e20));
        assert!(((a - b) / b).abs() < 1e-3 && a > 0.0, "{a} {b}");
    }
}
